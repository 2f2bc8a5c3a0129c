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

/** createElement with text children only; `props.class`, `props.text`, attributes otherwise. */
export function el(tag, props = {}, ...children) {
  const e = document.createElement(tag);
  for (const [k, v] of Object.entries(props)) {
    if (v === undefined || v === null || v === false) continue;
    if (k === 'class') e.className = v;
    else if (k === 'text') e.textContent = String(v);
    else e.setAttribute(k, v === true ? '' : String(v));
  }
  for (const c of children) if (c !== null && c !== undefined && c !== false) e.append(c);
  return e;
}

/** An SVG element with attributes and optional text. */
export function node(tag, attrs = {}, text) {
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

/** Grows a rectangle about its centre so that its height/width ratio lies within [lo, hi]. */
function clampAspect(r, lo, hi) {
  const cx = r.x + r.w / 2;
  const cy = r.y + r.h / 2;
  let { w, h } = r;
  if (h / w < lo) h = w * lo;
  if (h / w > hi) w = h / hi;
  return { x: cx - w / 2, y: cy - h / 2, w, h };
}

/** Projected points of an itinerary: every leg's ends and the intermediate stops known to the sketch. */
function itineraryPoints(itin, proj, stopById) {
  const pts = [];
  for (const leg of itin.legs) {
    const a = placeXY(leg.start, proj, stopById);
    if (a) pts.push(a);
    for (const s of leg.calls || []) {
      const st = stopById.get(s.stop_id);
      if (st && Number.isFinite(st.lat)) pts.push(proj.xy(st.lat, st.lon));
    }
    const b = placeXY(leg.end, proj, stopById);
    if (b) pts.push(b);
  }
  return pts;
}

/**
 * Draws `data` (engine.sketch()) into `svg`, with `itinerary` (or null) on top. With
 * `fitJourney` the view is cropped to the itinerary and its surroundings; otherwise the whole
 * network is shown. `opts.fill(stopId)` gives a stop's colour (a view colouring stops by a
 * value), `opts.size(stopId)` a `{ r, fill, label }` circle drawn on top (a view sizing stops by a
 * value; r in CSS pixels) and `opts.describe` a sentence added to the description. Returns a one-line description
 * (also put in the SVG's <title>).
 */
export function drawSketch(svg, data, itinerary, fitJourney = true, opts = {}) {
  const title = svg.querySelector('title') || node('title', { id: 'sketch-title' });
  svg.replaceChildren(title);
  if (!data || !data.stops || !data.stops.length) {
    title.textContent = 'Network sketch: no timetable loaded.';
    svg.setAttribute('viewBox', `0 0 ${VIEW_W} 300`);
    return title.textContent;
  }
  const proj = projection(data);
  if (!proj) {
    title.textContent = 'Network sketch: the feeds have no usable coordinates.';
    return title.textContent;
  }
  const hasTrip = !!(itinerary && itinerary.legs && itinerary.legs.length);
  const stopById = new Map();
  for (const st of data.stops) stopById.set(st.id, st);

  let view = { x: 0, y: 0, w: proj.width, h: proj.height };
  if (hasTrip && fitJourney) {
    const pts = itineraryPoints(itinerary, proj, stopById);
    if (pts.length) {
      const xs = pts.map((p) => p[0]);
      const ys = pts.map((p) => p[1]);
      const x0 = Math.min(...xs);
      const y0 = Math.min(...ys);
      const w = Math.max(Math.max(...xs) - x0, 1);
      const h = Math.max(Math.max(...ys) - y0, 1);
      const pad = Math.max(w, h) * 0.18 + 0.03 * proj.width;
      view = { x: x0 - pad, y: y0 - pad, w: w + 2 * pad, h: h + 2 * pad };
    }
  }
  view = clampAspect(view, 0.45, 0.8);
  svg.setAttribute('viewBox', [view.x, view.y, view.w, view.h].map((v) => v.toFixed(1)).join(' '));
  // One CSS pixel in user units, so strokes and labels keep a readable size at any zoom and width.
  const px = view.w / Math.max(240, svg.clientWidth || 600);

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
  // Stops a view sizes by a value: drawn last, on top, never merged with a neighbour.
  const gSized = node('g', { class: 'sk-sized' });
  // Draw stops that would land on the same spot once: a station and its platforms only overdraw.
  const seen = new Set();
  for (const st of data.stops) {
    if (!Number.isFinite(st.lat) || !Number.isFinite(st.lon)) continue;
    const [x, y] = proj.xy(st.lat, st.lon);
    const size = opts.size ? opts.size(st.id) : null;
    if (size) {
      const c = node('circle', { cx: x.toFixed(1), cy: y.toFixed(1), r: (size.r * px).toFixed(2), class: 'sk-sized-stop', 'stroke-width': (1.5 * px).toFixed(2) });
      c.style.fill = size.fill;
      c.append(node('title', {}, size.label || st.name));
      gSized.append(c);
      continue;
    }
    const key = `${Math.round(x / (2 * px))}:${Math.round(y / (2 * px))}`;
    if (seen.has(key)) continue;
    seen.add(key);
    const fill = opts.fill ? opts.fill(st.id) : null;
    const c = node('circle', { cx: x.toFixed(1), cy: y.toFixed(1), r: ((fill ? 4.2 : 2.6) * px).toFixed(2), class: fill ? 'sk-stop sk-valued' : 'sk-stop', 'stroke-width': (1.2 * px).toFixed(2) });
    // A style, not the fill attribute: the stylesheet's fill for plain stops would win over it.
    if (fill) c.style.fill = fill;
    // `station` is true for a GTFS station (location_type 1); a string is a station's name.
    const extra = st.station === true ? ' (station)' : typeof st.station === 'string' && st.station !== st.name ? ` (${st.station})` : '';
    c.append(node('title', {}, `${st.name}${extra}`));
    gStops.append(c);
  }
  svg.append(gLines, gStops, gSized);

  let label = `Network sketch: ${data.stops.length} stops, ${(data.lines || []).length} lines.`;
  if (opts.describe) label += ` ${opts.describe}`;
  if (hasTrip) {
    svg.append(drawItinerary(itinerary, proj, stopById, px, view));
    const first = itinerary.legs[0].start;
    const last = itinerary.legs[itinerary.legs.length - 1].end;
    label += ` Chosen journey from ${first.name} to ${last.name} drawn on top${fitJourney ? ', view fitted to it' : ''}.`;
  }
  title.textContent = label;
  return label;
}

function placeXY(place, proj, stopById) {
  if (place && Number.isFinite(place.lat) && Number.isFinite(place.lon)) return proj.xy(place.lat, place.lon);
  const st = place && stopById.get(place.stop_id);
  return st ? proj.xy(st.lat, st.lon) : null;
}

function drawItinerary(itin, proj, stopById, px, view) {
  const g = node('g', { class: 'sk-trip' });
  const labels = node('g', { class: 'sk-labels' });
  const labelled = new Set();
  const boxes = [];
  const fs = 13 * px;
  const overlaps = (b) => boxes.some((o) => b.x < o.x + o.w && o.x < b.x + b.w && b.y < o.y + o.h && o.y < b.y + b.h);
  // Greedy placement: try four spots around the point; the journey's ends are always labelled,
  // other stops only where there is room (every stop keeps its name in a <title> tooltip).
  const addLabel = (place, xy, cls, must) => {
    if (!xy || !place || labelled.has(place.stop_id)) return;
    const text = String(place.name || place.stop_id || '');
    const w = text.length * fs * 0.64; // bold sans-serif runs about 0.6 em a character
    const h = fs * 1.1;
    const gap = 9 * px;
    const tries = [[gap, -gap * 0.6], [gap, gap + h * 0.7], [-gap - w, -gap * 0.6], [-gap - w, gap + h * 0.7]];
    let spot = null;
    for (const [dx, dy] of tries) {
      const b = { x: xy[0] + dx, y: xy[1] + dy - h, w, h };
      const inside = b.x >= view.x && b.x + b.w <= view.x + view.w && b.y >= view.y && b.y + b.h <= view.y + view.h;
      if (inside && !overlaps(b)) { spot = b; break; }
    }
    if (!spot) {
      if (!must) return;
      const leftwards = xy[0] > view.x + view.w * 0.6;
      spot = { x: leftwards ? xy[0] - gap - w : xy[0] + gap, y: xy[1] - gap * 0.6 - h, w, h };
    }
    labelled.add(place.stop_id);
    boxes.push(spot);
    labels.append(node('text', {
      x: spot.x.toFixed(1),
      y: (spot.y + h * 0.85).toFixed(1),
      'font-size': fs.toFixed(1),
      'stroke-width': (3.5 * px).toFixed(2),
      class: `sk-label ${cls}`,
    }, text));
  };

  const marks = [];
  for (const leg of itin.legs) {
    const a = placeXY(leg.start, proj, stopById);
    const b = placeXY(leg.end, proj, stopById);
    if (!a || !b) continue;
    const pts = [a];
    for (const s of leg.calls || []) {
      const st = stopById.get(s.stop_id);
      if (st && Number.isFinite(st.lat)) pts.push(proj.xy(st.lat, st.lon));
    }
    pts.push(b);
    if (leg.kind === 'ride') {
      const color = hexColor(leg.route && leg.route.color) || '#5c6670';
      g.append(node('polyline', { points: pointsAttr(pts), class: 'sk-trip-casing', 'stroke-width': (9 * px).toFixed(2) }));
      g.append(node('polyline', { points: pointsAttr(pts), stroke: color, class: 'sk-trip-ride', 'stroke-width': (4.5 * px).toFixed(2) }));
      marks.push([leg.start, a], [leg.end, b]);
    } else {
      g.append(node('polyline', { points: pointsAttr(pts), class: 'sk-trip-walk', 'stroke-width': (3 * px).toFixed(2), 'stroke-dasharray': `${(5 * px).toFixed(1)} ${(4 * px).toFixed(1)}` }));
    }
  }
  const startPlace = itin.legs[0].start;
  const endPlace = itin.legs[itin.legs.length - 1].end;
  const start = placeXY(startPlace, proj, stopById);
  const end = placeXY(endPlace, proj, stopById);
  if (start) {
    g.append(node('circle', { cx: start[0].toFixed(1), cy: start[1].toFixed(1), r: (7 * px).toFixed(2), class: 'sk-start', 'stroke-width': (3 * px).toFixed(2) }));
    addLabel(startPlace, start, 'sk-label-end', true);
  }
  if (end) {
    const r = 8 * px;
    const [x, y] = end;
    g.append(node('polygon', { points: pointsAttr([[x, y - r], [x + r, y], [x, y + r], [x - r, y]]), class: 'sk-end', 'stroke-width': (2 * px).toFixed(2) }));
    addLabel(endPlace, end, 'sk-label-end', true);
  }
  for (const [place, xy] of marks) addLabel(place, xy, 'sk-label-change', false);
  g.append(labels);
  return g;
}
