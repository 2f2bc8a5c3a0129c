// The "Connections" view: the interchange audit. For one station, a grid of arriving × leaving
// routes and directions coloured by the share of arrivals that connect within 10 minutes, the
// chosen cell's connections in a table and on a time line (arrivals above, departures below,
// near misses drawn dashed), and each made connection as the journey it is. For every station,
// the ranking by near misses and the sketch with stations sized by them. The tables download as
// the CLI's files, written by the engine's own table writer.

import { StopCombobox, pickedStop } from '../combobox.js';
import { drawSketch, el, node, contrast } from '../sketch.js';
import { sortableTable, download, numberOrNull, fmtMin } from '../charts.js';

const $ = (id) => document.getElementById(id);

// Five classes of the share made within 10 minutes, dark (few) to light (most), on the viridis
// palette (ordered for the common colour-vision deficiencies and in grey).
export const SHARE_CLASSES = [
  { upTo: 0.2, color: '#440154' },
  { upTo: 0.4, color: '#3b528b' },
  { upTo: 0.6, color: '#21918c' },
  { upTo: 0.8, color: '#5ec962' },
  { upTo: 1.0001, color: '#fde725' },
];
// Okabe–Ito colours: blue for arrivals, vermillion for near misses.
const ARRIVAL = '#0072b2';
const NEAR = '#d55e00';
const SIZED = '#e69f00';

const shareColor = (x) => SHARE_CLASSES.find((c) => x < c.upTo).color;
const inkOn = (bg) => (contrast(bg, '#000000') >= contrast(bg, '#ffffff') ? '#000000' : '#ffffff');
const pct = (x) => `${Math.round(x * 100)} %`;
const secs = (hms) => {
  const [h, m, s] = hms.split(':').map(Number);
  return h * 3600 + m * 60 + s;
};
const clock = (s) => `${String(Math.floor(s / 3600)).padStart(2, '0')}:${String(Math.floor(s / 60) % 60).padStart(2, '0')}`;
const direction = (d) => (/^\d+$/.test(d) ? `direction ${d}` : d ? `to ${d}` : 'no direction');

export function initInterchangeView({ client, getSketch, say }) {
  const ui = {
    form: $('ix-form'),
    error: $('ix-error'),
    date: $('ix-date'),
    run: $('ix-run'),
    stationField: $('ix-station-field'),
    box: $('ix-progress-box'),
    progress: $('ix-progress'),
    progressText: $('ix-progress-text'),
    cancel: $('ix-cancel'),
    summary: $('ix-summary'),
    table: $('ix-table'),
    journey: $('ix-journey'),
    grid: $('ix-grid'),
    gridPanel: $('ix-grid-panel'),
    gridLegend: $('ix-grid-legend'),
    linePanel: $('ix-line-panel'),
    line: $('ix-line'),
    lineText: $('ix-line-text'),
    sketchPanel: $('ix-sketch-panel'),
    sketch: $('ix-sketch'),
    sketchLegend: $('ix-sketch-legend'),
    csv: { rows: $('ix-csv-rows'), pairs: $('ix-csv-pairs'), stations: $('ix-csv-stations') },
  };
  const box = new StopCombobox($('ix-station'), $('ix-station-list'), $('ix-station-hint'), (t) => client.searchStops(t, 8));
  /** The last audit: { query, report }. */
  let last = null;
  let cancelled = false;

  const scope = () => ui.form.querySelector('input[name="ix-scope"]:checked').value;
  const fail = (text) => {
    ui.error.textContent = text;
    ui.error.hidden = false;
  };
  const syncScope = () => { ui.stationField.hidden = scope() === 'all'; };
  ui.form.addEventListener('change', (e) => {
    if (e.target.name === 'ix-scope') syncScope();
  });
  syncScope(); // a choice made while this module was loading

  function query(station) {
    const q = { station, date: ui.date.value, window: `${$('ix-start').value}-${$('ix-end').value}` };
    const near = numberOrNull($('ix-near'));
    const horizon = numberOrNull($('ix-horizon'));
    for (const [k, v, lo, hi] of [['near_miss_min', near, 0, 60], ['horizon_min', horizon, 1, 1440]]) {
      if (v == null) continue;
      if (!Number.isInteger(v) || v < lo || v > hi) throw new Error(`${k === 'near_miss_min' ? 'Near miss' : 'Horizon'}: give whole minutes, ${lo} to ${hi}.`);
      q[k] = v;
    }
    if (!q.date) throw new Error('Choose a service date.');
    return q;
  }

  async function audit(q) {
    ui.error.hidden = true;
    ui.journey.textContent = '';
    ui.run.disabled = true;
    const all = q.station === 'all';
    cancelled = false;
    if (all) {
      ui.box.hidden = false;
      ui.progress.value = 0;
      ui.progressText.textContent = 'Starting…';
    }
    const t0 = performance.now();
    try {
      const report = await client.interchange(q, (stage, fraction) => {
        ui.progress.value = fraction;
        ui.progressText.textContent = stage;
      });
      const ms = performance.now() - t0;
      last = { query: q, report, ms };
      for (const b of Object.values(ui.csv)) b.disabled = false;
      ui.csv.rows.disabled = !all && !(report.stations[0] && report.stations[0].connections);
      if (all) showNetwork(report);
      else showStation(report);
      say(ui.summary.textContent);
    } catch (e) {
      if (cancelled) {
        ui.summary.textContent = 'Cancelled: nothing audited.';
        say('The audit was cancelled.');
      } else {
        fail(e.message);
      }
    } finally {
      ui.run.disabled = false;
      ui.box.hidden = true;
    }
  }

  ui.form.addEventListener('submit', async (ev) => {
    ev.preventDefault();
    ui.error.hidden = true;
    if (!client.feedNames.length) return fail('Load a timetable first.');
    let station = 'all';
    if (scope() === 'station') {
      const text = $('ix-station').value.trim();
      if (!text) return fail('Choose a station.');
      try {
        station = await pickedStop(box, client);
      } catch (e) {
        return fail(e.message);
      }
    }
    let q;
    try {
      q = query(station);
    } catch (e) {
      return fail(e.message);
    }
    await audit(q);
  });

  ui.cancel.addEventListener('click', async () => {
    cancelled = true;
    ui.progressText.textContent = 'Cancelling…';
    await client.cancel();
  });

  // ------------------------------------------------------------ one station

  function showStation(r) {
    ui.gridPanel.hidden = ui.linePanel.hidden = false;
    ui.sketchPanel.hidden = true;
    const st = r.stations[0];
    const [from, to] = r.window;
    if (r.note || !st || !st.connections) {
      ui.summary.textContent = r.note || 'Nothing to audit.';
      ui.table.replaceChildren();
      ui.grid.replaceChildren();
      ui.gridLegend.replaceChildren();
      drawTimeline(r, null);
      return;
    }
    ui.summary.textContent =
      `${st.name}, ${r.date}, arrivals ${from.slice(0, 5)}–${to.slice(0, 5)}: ${st.arrivals} arrivals, ${st.connections} arrival × route pairs; ` +
      `${st.made} made (${pct(st.made / st.connections)}), ${st.none} none within ${r.horizon_min} min, ${st.not_possible} not possible; ` +
      `${st.near_misses} near misses (missed by at most ${r.near_miss_min} min); median wait ${fmtMin(st.median_wait_s)} min. Computed in ${Math.round(last.ms)} ms.`;
    drawGrid(r);
  }

  const key = (route, dir) => `${route}\u0001${dir}`;

  function drawGrid(r) {
    const arr = new Map();
    const dep = new Map();
    const cell = new Map();
    for (const p of r.pairs) {
      arr.set(key(p.arr_route_id, p.arr_direction), { route: p.arr_route_id, name: p.arr_route_name, dir: p.arr_direction });
      dep.set(key(p.dep_route_id, p.dep_direction), { route: p.dep_route_id, name: p.dep_route_name, dir: p.dep_direction });
      cell.set(`${key(p.arr_route_id, p.arr_direction)}\u0002${key(p.dep_route_id, p.dep_direction)}`, p);
    }
    const label = (l) => `${l.name || l.route}, ${direction(l.dir)}`;
    const table = el('table', { class: 'data ix-grid' });
    table.append(el('caption', { text: `Share of arrivals connecting within 10 min at ${r.stations[0].name}; rows arrive, columns leave` }));
    const head = el('tr', {}, el('th', { scope: 'col', text: 'Arriving ↓ / leaving →' }));
    for (const d of dep.values()) {
      head.append(el('th', { scope: 'col', 'aria-label': label(d) }, el('span', { class: 'ix-route', text: d.name || d.route }), el('span', { class: 'ix-dir', text: direction(d.dir) })));
    }
    table.append(el('thead', {}, head));
    const body = el('tbody');
    let first = null;
    for (const [ak, a] of arr) {
      const tr = el('tr', {}, el('th', { scope: 'row', 'aria-label': label(a) }, el('span', { class: 'ix-route', text: a.name || a.route }), ' ', el('span', { class: 'ix-dir', text: direction(a.dir) })));
      for (const [dk, d] of dep) {
        const p = cell.get(`${ak}\u0002${dk}`);
        if (!p) {
          tr.append(el('td', { class: 'ix-empty', text: '·', 'aria-label': 'no connection (the same route and direction)' }));
          continue;
        }
        const bg = shareColor(p.made_within_10);
        const b = el('button', {
          type: 'button',
          class: 'ix-cell',
          'aria-label': `${label(a)} to ${label(d)}: ${pct(p.made_within_10)} of ${p.arrivals} arrivals connect within 10 min, ${p.near_misses} near misses`,
        }, el('span', { text: pct(p.made_within_10) }), p.near_misses ? el('span', { class: 'ix-near', text: `${p.near_misses} near` }) : '');
        b.style.background = bg;
        b.style.color = inkOn(bg);
        b.addEventListener('click', () => choose(r, p, b));
        tr.append(el('td', {}, b));
        if (!first || p.near_misses > first[0].near_misses) first = [p, b];
      }
      body.append(tr);
    }
    table.append(body);
    ui.grid.replaceChildren(table);
    ui.gridLegend.replaceChildren(el('span', { class: 'legend-title', text: 'Made within 10 min:' }));
    let from = 0;
    for (const c of SHARE_CLASSES) {
      const sw = el('span', { class: 'swatch', 'aria-hidden': 'true' });
      sw.style.background = c.color;
      ui.gridLegend.append(el('span', { class: 'legend' }, sw, ` ${Math.round(from * 100)}–${Math.min(100, Math.round(c.upTo * 100))} %`));
      from = c.upTo;
    }
    if (first) choose(r, first[0], first[1], false);
  }

  async function choose(r, p, button, focus = true) {
    for (const b of ui.grid.querySelectorAll('.ix-cell[aria-pressed="true"]')) b.setAttribute('aria-pressed', 'false');
    button.setAttribute('aria-pressed', 'true');
    let rows;
    try {
      rows = await client.interchangePair(p);
    } catch (e) {
      return fail(e.message);
    }
    const cols = [
      { key: 'arrival', label: 'Arrives', show: (x) => x.arrival },
      { key: 'arr_trip_id', label: 'Arriving trip' },
      { key: 'status', label: 'Connection', show: (x) => (x.status === 'made' ? 'made' : x.status === 'none' ? 'none within the horizon' : 'not possible') },
      { key: 'departure', label: 'Leaves', show: (x) => x.departure || '—' },
      { key: 'dep_trip_id', label: 'Leaving trip', show: (x) => x.dep_trip_id || '—' },
      { key: 'change_s', label: 'Change (s)', num: true, show: (x) => (x.change_s == null ? '—' : String(x.change_s)) },
      { key: 'wait_s', label: 'Wait (min)', num: true, show: (x) => fmtMin(x.wait_s) },
      { key: 'missed_by_s', label: 'Missed by (s)', num: true, show: (x) => (x.missed_by_s == null ? '—' : `${x.missed_by_s}${x.near_miss ? ' (near)' : ''}`) },
    ];
    ui.table.replaceChildren(sortableTable(cols, rows, {
      caption: `${p.arr_route_name || p.arr_route_id} ${direction(p.arr_direction)} → ${p.dep_route_name || p.dep_route_id} ${direction(p.dep_direction)}: ${rows.length} arrivals; choose a made one to see it as a journey`,
      onRow: showJourney,
    }));
    drawTimeline(r, p, rows);
    if (focus) $('ix-line-heading').scrollIntoView({ block: 'nearest' });
  }

  async function showJourney(row) {
    if (row.status !== 'made') {
      ui.journey.textContent = `The ${row.arrival} arrival (${row.arr_trip_id}) has no connection to this route: ${row.status === 'none' ? 'nothing leaves with enough time within the horizon' : 'the change is not possible'}.`;
      return;
    }
    try {
      const it = await client.connectionJourney(last.query.date, row.arr_event, row.dep_event);
      const parts = it.legs.map((l) => {
        if (l.kind === 'ride') return `${l.route ? l.route.short_name || l.route.route_id : 'ride'} (${l.trip_id}) ${l.start.name} ${l.depart} → ${l.end.name} ${l.arrive}`;
        return `walk ${Math.ceil(l.duration_s / 60)} min to ${l.end.name}${l.end.platform_code ? ` (platform ${l.end.platform_code})` : ''}`;
      });
      const wait = it.legs[it.legs.length - 1].wait_before_s;
      ui.journey.textContent = `As a journey: ${parts.join('; ')}. Waiting before the second ride: ${Math.round(wait / 60)} min.`;
    } catch (e) {
      ui.journey.textContent = e.message;
    }
  }

  /** Arrivals of the pair's arriving route above, departures of its leaving route below. */
  function drawTimeline(r, p, rows = []) {
    const svg = ui.line;
    const W = 640, H = 200, L = 16, R = 16, yA = 62, yD = 142;
    svg.replaceChildren();
    const title = node('title', {});
    svg.append(title);
    if (!p) {
      title.textContent = 'Time line: nothing to draw.';
      ui.lineText.textContent = '';
      return;
    }
    const t0 = secs(r.window[0]);
    const t1 = secs(r.window[1]) + r.horizon_min * 60;
    const x = (t) => L + ((t - t0) / Math.max(1, t1 - t0)) * (W - L - R);
    // Hours and quarter hours.
    for (let t = Math.ceil(t0 / 900) * 900; t <= t1; t += 900) {
      const hour = t % 3600 === 0;
      svg.append(node('line', { x1: x(t), x2: x(t), y1: 30, y2: H - 30, class: hour ? 'grid grid-hour' : 'grid' }));
      if (hour || t1 - t0 <= 3 * 3600) svg.append(node('text', { x: x(t), y: H - 12, 'text-anchor': 'middle', class: 'axis' }, clock(t)));
    }
    const arrName = `${p.arr_route_name || p.arr_route_id} ${direction(p.arr_direction)}`;
    const depName = `${p.dep_route_name || p.dep_route_id} ${direction(p.dep_direction)}`;
    svg.append(node('text', { x: L, y: yA - 16, class: 'axis' }, `arrivals: ${arrName}`));
    svg.append(node('text', { x: L, y: yD + 26, class: 'axis' }, `departures: ${depName}`));
    const deps = r.departures.filter((d) => d.route_id === p.dep_route_id && d.direction === p.dep_direction);
    const near = [];
    for (const row of rows) {
      const a = secs(row.arrival);
      if (row.status === 'made') {
        svg.append(node('line', { x1: x(a), y1: yA + 6, x2: x(secs(row.departure)), y2: yD - 8, class: 'ix-made' }));
      }
      if (row.near_miss) {
        const missed = a + row.change_s - row.missed_by_s;
        const l = node('line', { x1: x(a), y1: yA + 6, x2: x(missed), y2: yD - 8, class: 'ix-missed', stroke: NEAR });
        l.append(node('title', {}, `${row.arrival} arrival missed the ${clock(missed)} departure by ${row.missed_by_s} s`));
        svg.append(l);
        near.push(`${row.arrival.slice(0, 5)} missed ${clock(missed)} by ${row.missed_by_s} s`);
      }
      const tri = node('polygon', { points: `${x(a) - 5},${yA - 6} ${x(a) + 5},${yA - 6} ${x(a)},${yA + 4}`, fill: ARRIVAL });
      tri.append(node('title', {}, `arrives ${row.arrival} (${row.arr_trip_id})`));
      svg.append(tri);
    }
    for (const d of deps) {
      const t = secs(d.departure);
      const bar = node('rect', { x: x(t) - 1.5, y: yD - 8, width: 3, height: 16, class: 'ix-dep' });
      bar.append(node('title', {}, `leaves ${d.departure} (${d.trip_id})`));
      svg.append(bar);
    }
    const made = rows.filter((x) => x.status === 'made').length;
    const text = `Time line ${clock(t0)}–${clock(t1)} at ${r.stations[0].name}: ${rows.length} arrivals of ${arrName} (triangles, top) and ${deps.length} departures of ${depName} (bars, bottom); ` +
      `${made} connections made (grey lines), ${near.length} near misses (dashed lines)${near.length ? `: ${near.slice(0, 8).join('; ')}${near.length > 8 ? '; …' : ''}` : ''}.`;
    title.textContent = text;
    ui.lineText.textContent = text;
  }

  // ------------------------------------------------------------ every station

  function showNetwork(r) {
    ui.gridPanel.hidden = ui.linePanel.hidden = true;
    ui.sketchPanel.hidden = false;
    const s = r.stations;
    const near = s.reduce((a, x) => a + x.near_misses, 0);
    ui.summary.textContent = r.note || `${s.length} stations, ${r.date}, arrivals ${r.window[0].slice(0, 5)}–${r.window[1].slice(0, 5)}: ${near} near misses in all. Ranked by near misses; choose a station to audit it. Computed in ${(last.ms / 1000).toFixed(1)} s.`;
    const cols = [
      { key: 'rank_near_misses', label: 'Rank', num: true },
      { key: 'name', label: 'Station', show: (x) => `${x.name} [${x.station}]` },
      { key: 'arrivals', label: 'Arrivals', num: true },
      { key: 'made_share', label: 'Made', num: true, show: (x) => (x.connections ? pct(x.made_share) : '—') },
      { key: 'near_misses', label: 'Near misses', num: true },
      { key: 'median_wait_s', label: 'Median wait (min)', num: true, show: (x) => fmtMin(x.median_wait_s) },
      { key: 'p90_wait_s', label: '90th pct wait (min)', num: true, show: (x) => fmtMin(x.p90_wait_s) },
      { key: 'rank_median_wait', label: 'Rank by wait', num: true },
    ];
    const rows = s.map((x) => ({ ...x, made_share: x.connections ? x.made / x.connections : null }));
    ui.table.replaceChildren(sortableTable(cols, rows, {
      caption: `Stations ranked by near misses (missed by at most ${r.near_miss_min} min)`,
      onRow: (x) => {
        ui.form.querySelector('input[name="ix-scope"][value="station"]').checked = true;
        ui.stationField.hidden = false;
        box.set(x.station, x.name);
        audit({ ...last.query, station: x.station });
      },
    }));
    const max = Math.max(1, ...s.map((x) => x.near_misses));
    const byId = new Map(s.map((x) => [x.station, x]));
    drawSketch(ui.sketch, getSketch(), null, false, {
      size: (id) => {
        const x = byId.get(id);
        if (!x) return null;
        return { r: 3 + 14 * Math.sqrt(x.near_misses / max), fill: SIZED, label: `${x.name}: ${x.near_misses} near misses, rank ${x.rank_near_misses}` };
      },
      describe: `Stations drawn as circles whose area grows with their near misses; most: ${s.slice(0, 3).map((x) => `${x.name} (${x.near_misses})`).join(', ')}.`,
    });
    ui.sketchLegend.replaceChildren(el('span', { class: 'legend-title', text: 'Near misses (circle area):' }));
    for (const n of [max, Math.round(max / 4)].filter((v, i, a) => v > 0 && a.indexOf(v) === i)) {
      const d = 2 * (3 + 14 * Math.sqrt(n / max));
      const sw = el('span', { class: 'ix-size', 'aria-hidden': 'true' });
      sw.style.width = sw.style.height = `${d}px`;
      sw.style.background = SIZED;
      ui.sketchLegend.append(el('span', { class: 'legend' }, sw, ` ${n}`));
    }
  }

  // ------------------------------------------------------------ downloads

  for (const [table, button] of Object.entries(ui.csv)) {
    button.addEventListener('click', async () => {
      if (!last) return;
      try {
        const bytes = await client.interchangeCsv(last.query, table);
        const name = last.query.station === 'all' ? 'all' : last.query.station.replace(/[^A-Za-z0-9_.-]+/g, '_');
        download(`connections-${name}-${last.query.date}${table === 'rows' ? '' : `.${table}`}.csv`, [bytes], 'text/csv');
      } catch (e) {
        fail(e.message);
      }
    });
  }

  return {
    show(defaultDate) {
      if (!ui.date.value && defaultDate) ui.date.value = defaultDate;
    },
  };
}
