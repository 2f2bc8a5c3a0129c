// Schematic drawing of the loaded network in SVG, from the engine's `sketch()` value: stop
// coordinates and each line's points. No map tiles and no network access: an equirectangular
// projection, longitudes scaled by cos(mid latitude) so shapes are not stretched east–west, fitted
// into the element. The chosen itinerary is drawn last, on top. All feed text goes in through
// textContent (SVG <title>/<text>), never markup.

const NS = 'http://www.w3.org/2000/svg';
const VIEW_W = 1000;
const PAD = 40;

/** "#RRGGBB" (with or without '#') or null when the feed gave something else. */
export function hexColor(c) {
  if (typeof c !== 'string') return null;
  const m = /^#?([0-9a-fA-F]{6})$/.exec(c.trim());
  return m ? `#${m[1].toLowerCase()}` : null;
}

/** WCAG 2.1 relative luminance of "#rrggbb". */
export function luminance(hex) {
  const n = parseInt(hex.slice(1), 16);
  const ch = [(n >> 16) & 255, (n >> 8) & 255, n & 255].map((v) => {
    const s = v / 255;
    return s <= 0.03928 ? s / 12.92 : ((s + 0.055) / 1.055) ** 2.4;
  });
  return 0.2126 * ch[0] + 0.7152 * ch[1] + 0.0722 * ch[2];
}

/** WCAG 2.1 contrast ratio between two "#rrggbb" colours. */
export function contrast(a, b) {
  const [x, y] = [luminance(a), luminance(b)].sort((p, q) => q - p);
  return (x + 0.05) / (y + 0.05);
}

function node(tag, attrs = {}, text) {
  const e = document.createElementNS(NS, tag);
  for (const [k, v] of Object.entries(attrs)) e.setAttribute(k, String(v));
  if (text !== undefined) e.textContent = text;
  return e;
}

/** Builds the projection for the sketch's bounds; returns null when there is nothing to draw. */
function projection(data) {
  let { min_lat: s, max_lat: n, min_lon: w, max_lon: e } = data;
  if (![s, n, w, e].every(Number.isFinite)) return null;
  // A single stop or a line of stops along one axis still needs an area to draw in.
  const minSpan = 0.002;
  if (n - s < minSpan) { const c = (n + s) / 2; s = c - minSpan / 2; n = c + minSpan / 2; }
  if (e - w < minSpan) { const c = (e + w) / 2; w = c - minSpan / 2; e = c + minSpan / 2; }
  const k = Math.cos((((s + n) / 2) * Math.PI) / 180);
  const spanX = (e - w) * k;
  const spanY = n - s;
  const scale = (VIEW_W - 2 * PAD) / Math.max(spanX, spanY * 1.25);
  const width = VIEW_W;
  const height = Math.max(240, Math.round(spanY * scale + 2 * PAD));
  const offX = (width - spanX * scale) / 2;
  const offY = (height - spanY * scale) / 2;
  return {
    width,
    height,
    xy: (lat, lon) => [offX + (lon - w) * k * scale, offY + (n - lat) * scale],
  };
}

function pointsAttr(pts) {
  return pts.map(([x, y]) => `${x.toFixed(1)},${y.toFixed(1)}`).join(' ');
}

/**
 * Draws `data` (engine.sketch()) into `svg`, with `itinerary` (or null) on top.
 * `titleText` is a one-line description put in the SVG's <title>.
 */
export function drawSketch(svg, data, itinerary) {
  const title = svg.querySelector('title') || node('title', { id: 'sketch-title' });
  svg.replaceChildren(title);
  if (!data || !data.stops || !data.stops.length) {
    title.textContent = 'Network sketch: no timetable loaded.';
    svg.setAttribute('viewBox', `0 0 ${VIEW_W} 300`);
    return;
  }
  const proj = projection(data);
  if (!proj) {
    title.textContent = 'Network sketch: the feeds have no usable coordinates.';
    return;
  }
  svg.setAttribute('viewBox', `0 0 ${proj.width} ${proj.height}`);
  // One CSS pixel in user units, so strokes and labels keep a readable size at any width.
  const px = proj.width / Math.max(240, svg.clientWidth || 600);
  const stopById = new Map();
  for (const st of data.stops) stopById.set(st.id, st);

  const gLines = node('g', { class: 'sk-lines' });
  for (const line of data.lines || []) {
    const pts = (line.points || []).filter((p) => Number.isFinite(p[0]) && Number.isFinite(p[1]));
    if (pts.length < 2) continue;
    const color = hexColor(line.color) || '#5c6670';
    const pl = node('polyline', {
      points: pointsAttr(pts.map(([la, lo]) => proj.xy(la, lo))),
      stroke: color,
      'stroke-width': (3 * px).toFixed(2),
      class: 'sk-line',
    });
    pl.append(node('title', {}, line.short_name ? `Line ${line.short_name}` : 'Line'));
    gLines.append(pl);
  }

  const gStops = node('g', { class: 'sk-stops' });
  // Draw a station once, not once per platform: stops sharing a parent station and nearly the
  // same position would only overdraw each other.
  const seen = new Set();
  for (const st of data.stops) {
    if (!Number.isFinite(st.lat) || !Number.isFinite(st.lon)) continue;
    const [x, y] = proj.xy(st.lat, st.lon);
    const key = `${Math.round(x / (2 * px))}:${Math.round(y / (2 * px))}`;
    if (seen.has(key)) continue;
    seen.add(key);
    const c = node('circle', { cx: x.toFixed(1), cy: y.toFixed(1), r: (2.6 * px).toFixed(2), class: 'sk-stop', 'stroke-width': (1.2 * px).toFixed(2) });
    // `station` is true for a GTFS station (location_type 1); older engines sent its name.
    const extra = st.station === true ? ' (station)' : typeof st.station === 'string' && st.station !== st.name ? ` (${st.station})` : '';
    c.append(node('title', {}, `${st.name}${extra}`));
    gStops.append(c);
  }
  svg.append(gLines, gStops);

  let label = `Network sketch: ${seen.size} stop positions, ${(data.lines || []).length} lines.`;
  if (itinerary && itinerary.legs && itinerary.legs.length) {
    svg.append(drawItinerary(itinerary, proj, stopById, px));
    const first = itinerary.legs[0].from;
    const last = itinerary.legs[itinerary.legs.length - 1].to;
    label += ` Chosen journey from ${first.name} to ${last.name} drawn on top.`;
  }
  title.textContent = label;
}

function placeXY(place, proj, stopById) {
  if (place && Number.isFinite(place.lat) && Number.isFinite(place.lon)) return proj.xy(place.lat, place.lon);
  const st = place && stopById.get(place.stop_id);
  return st ? proj.xy(st.lat, st.lon) : null;
}

function drawItinerary(itin, proj, stopById, px) {
  const g = node('g', { class: 'sk-trip' });
  const labels = node('g', { class: 'sk-labels' });
  const labelled = new Set();
  const addLabel = (place, xy, cls) => {
    if (!xy || labelled.has(place.stop_id)) return;
    labelled.add(place.stop_id);
    // Labels near the right edge run leftwards so they stay inside the drawing.
    const leftwards = xy[0] > proj.width * 0.6;
    const t = node('text', {
      x: (xy[0] + (leftwards ? -9 : 9) * px).toFixed(1),
      y: (xy[1] - 7 * px).toFixed(1),
      'text-anchor': leftwards ? 'end' : 'start',
      'font-size': (13 * px).toFixed(1),
      'stroke-width': (3.5 * px).toFixed(2),
      class: `sk-label ${cls}`,
    }, place.name);
    labels.append(t);
  };

  for (const leg of itin.legs) {
    const a = placeXY(leg.from, proj, stopById);
    const b = placeXY(leg.to, proj, stopById);
    if (!a || !b) continue;
    const pts = [a];
    for (const s of leg.intermediate_stops || []) {
      const st = stopById.get(s.stop_id);
      if (st && Number.isFinite(st.lat)) pts.push(proj.xy(st.lat, st.lon));
    }
    pts.push(b);
    if (leg.kind === 'ride') {
      const color = hexColor(leg.route && leg.route.color) || '#5c6670';
      g.append(node('polyline', { points: pointsAttr(pts), class: 'sk-trip-casing', 'stroke-width': (9 * px).toFixed(2) }));
      g.append(node('polyline', { points: pointsAttr(pts), stroke: color, class: 'sk-trip-ride', 'stroke-width': (4.5 * px).toFixed(2) }));
      addLabel(leg.from, a, 'sk-label-board');
      addLabel(leg.to, b, 'sk-label-alight');
    } else {
      g.append(node('polyline', { points: pointsAttr(pts), class: 'sk-trip-walk', 'stroke-width': (3 * px).toFixed(2), 'stroke-dasharray': `${(5 * px).toFixed(1)} ${(4 * px).toFixed(1)}` }));
    }
  }
  const start = placeXY(itin.legs[0].from, proj, stopById);
  const endPlace = itin.legs[itin.legs.length - 1].to;
  const end = placeXY(endPlace, proj, stopById);
  if (start) {
    g.append(node('circle', { cx: start[0].toFixed(1), cy: start[1].toFixed(1), r: (7 * px).toFixed(2), class: 'sk-start', 'stroke-width': (3 * px).toFixed(2) }));
    addLabel(itin.legs[0].from, start, 'sk-label-end');
  }
  if (end) {
    const r = 8 * px;
    const [x, y] = end;
    g.append(node('polygon', { points: pointsAttr([[x, y - r], [x + r, y], [x, y + r], [x - r, y]]), class: 'sk-end', 'stroke-width': (2 * px).toFixed(2) }));
    addLabel(endPlace, end, 'sk-label-end');
  }
  g.append(labels);
  return g;
}
