// The "Before and after" view: the timetables loaded in the page are the version before; the
// version after is loaded here (one or more zips) into the same engine as a second timetable,
// never merged with the first. The comparison shows a headline, the sketch coloured by each
// place's median change (a diverging, colour-blind-safe scale: faster purple, slower orange),
// and the tables of places, routes, connections and pairs; its files are the CLI's.

import { drawSketch, el } from '../sketch.js';
import { sortableTable, download, numberOrNull, fmtMin, longRun } from '../charts.js';

const $ = (id) => document.getElementById(id);

// Seven classes of the change of median minutes, after the ColorBrewer PuOr scheme (diverging,
// readable with the common colour-vision deficiencies): faster is purple, slower orange.
export const CHANGE_CLASSES = [
  { upTo: -10, color: '#542788', label: 'over 10 min faster' },
  { upTo: -5, color: '#998ec3', label: '5–10 min faster' },
  { upTo: -1, color: '#d8daeb', label: '1–5 min faster' },
  { upTo: 1, color: '#f7f7f7', label: 'within a minute' },
  { upTo: 5, color: '#fee0b6', label: '1–5 min slower' },
  { upTo: 10, color: '#f1a340', label: '5–10 min slower' },
  { upTo: Infinity, color: '#b35806', label: 'over 10 min slower' },
];
const LOST = '#1a1a1a';

const changeColor = (min) => CHANGE_CLASSES.find((c) => min < c.upTo || (c.upTo === Infinity)).color;

export function initCompareView({ client, getSketch, say }) {
  const ui = {
    form: $('cmp-form'),
    error: $('cmp-error'),
    date: $('cmp-date'),
    afterDate: $('cmp-after-date'),
    files: $('cmp-after'),
    afterList: $('cmp-after-list'),
    run: $('cmp-run'),
    box: $('cmp-progress-box'),
    progress: $('cmp-progress'),
    progressText: $('cmp-progress-text'),
    cancel: $('cmp-cancel'),
    summary: $('cmp-summary'),
    sketch: $('cmp-sketch'),
    legend: $('cmp-legend'),
    stations: $('cmp-stations'),
    routes: $('cmp-routes'),
    connections: $('cmp-connections'),
    pairsNote: $('cmp-pairs-note'),
    pairs: $('cmp-pairs'),
    csv: { pairs: $('cmp-csv-pairs'), stations: $('cmp-csv-stations'), routes: $('cmp-csv-routes'), connections: $('cmp-csv-connections') },
  };
  /** The version after: [{ name, bytes }], kept here so a restarted engine can be given it again. */
  let after = [];
  let last = null;

  const fail = (text) => {
    ui.error.textContent = text;
    ui.error.hidden = false;
  };

  const run = longRun(ui, client, { what: { done: 'compared', name: 'comparison' }, say, fail });

  ui.files.addEventListener('change', async () => {
    after = await Promise.all([...ui.files.files].map(async (f) => ({ name: f.name.replace(/\.zip$/i, ''), bytes: new Uint8Array(await f.arrayBuffer()) })));
    ui.afterList.textContent = after.length ? `After: ${after.map((f) => f.name).join(', ')}` : 'No version after chosen yet.';
  });

  /** Loads the version after into the engine (again, after a restart); throws the feed's error. */
  async function loadAfter() {
    await client.afterClear();
    for (const f of after) await client.afterLoad(f.name, f.bytes);
  }

  ui.form.addEventListener('submit', async (ev) => {
    ev.preventDefault();
    ui.error.hidden = true;
    if (!client.feedNames.length) return fail('Load the timetables before the change first (they are the version before).');
    if (!after.length) return fail('Choose the feed files of the version after.');
    const q = { date: ui.date.value, window: `${$('cmp-start').value}-${$('cmp-end').value}` };
    if (!q.date) return fail('Choose a service date.');
    if (ui.afterDate.value) q.after_date = ui.afterDate.value;
    const n = numberOrNull($('cmp-n'));
    if ($('cmp-sample').checked) {
      if (n == null || !Number.isInteger(n) || n < 1) return fail('Sample: give a whole number of pairs, at least 1.');
      q.pairs = `sample:${n}`;
    }
    const cut = numberOrNull($('cmp-cut'));
    if (cut != null) q.cutoff_min = cut;
    await run('Loading the version after…', async (onProgress) => {
      await loadAfter();
      return client.compare(q, onProgress);
    }, (r, ms) => {
      last = { query: q, ms, ...r };
      show(last);
      say(ui.summary.textContent);
    });
  });

  function show(res) {
    const { report: r, pairs, pairs_total: total } = res;
    const c = r.counts;
    const lost = r.stations.filter((s) => s.service === 'lost');
    const gained = r.stations.filter((s) => s.service === 'gained');
    ui.summary.textContent = `${r.headline}. ${c.pairs} pairs, ${r.window}: ${c.unchanged} unchanged, ${c.slower} slower, ${c.faster} faster, ${c.lost} lost, ${c.gained} gained` +
      `${lost.length ? `; ${lost.length} places lose all service (${lost.map((s) => s.name).slice(0, 6).join(', ')}${lost.length > 6 ? ', …' : ''})` : ''}` +
      `${gained.length ? `; ${gained.length} gain service` : ''}. Computed in ${(res.ms / 1000).toFixed(1)} s.`;
    for (const b of Object.values(ui.csv)) b.disabled = false;
    // The sketch: places by their median change; places that lose all service in black.
    const byId = new Map(r.stations.map((s) => [s.station, s]));
    drawSketch(ui.sketch, getSketch(), null, false, {
      fill: (id) => {
        const s = byId.get(id);
        if (!s) return null;
        if (s.service === 'lost') return LOST;
        return s.median_change_s == null ? null : changeColor(s.median_change_s / 60);
      },
      describe: `Places coloured by the median change of their travel times, before to after (purple faster, orange slower); ${lost.length} places that lose all service in black.`,
    });
    ui.legend.replaceChildren(el('span', { class: 'legend-title', text: 'Median change:' }));
    for (const k of CHANGE_CLASSES) {
      const sw = el('span', { class: 'swatch', 'aria-hidden': 'true' });
      sw.style.background = k.color;
      ui.legend.append(el('span', { class: 'legend' }, sw, ` ${k.label}`));
    }
    const sw = el('span', { class: 'swatch', 'aria-hidden': 'true' });
    sw.style.background = LOST;
    ui.legend.append(el('span', { class: 'legend' }, sw, ' loses all service'));
    const mins = (s) => (s == null ? '—' : `${s >= 0 ? '+' : ''}${(s / 60).toFixed(1)}`);
    ui.stations.replaceChildren(sortableTable([
      { key: 'name', label: 'Place', show: (s) => `${s.name} [${s.station}]` },
      { key: 'median_change_s', label: 'Median change (min)', num: true, show: (s) => mins(s.median_change_s) },
      { key: 'opportunities_before', label: 'Opportunities before', num: true, show: (s) => s.opportunities_before.toFixed(1) },
      { key: 'opportunities_after', label: 'after', num: true, show: (s) => s.opportunities_after.toFixed(1) },
      { key: 'departures_before', label: 'Departures before', num: true },
      { key: 'departures_after', label: 'after', num: true },
      { key: 'service', label: 'Service' },
    ], r.stations, { caption: `Places: the median change to their destinations, opportunities within ${r.cutoff_min} min` }));
    ui.routes.replaceChildren(sortableTable([
      { key: 'name', label: 'Route', show: (x) => `${x.name} [${x.route_id}]` },
      { key: 'trips_before', label: 'Trips before', num: true },
      { key: 'trips_after', label: 'after', num: true },
      { key: 'first_before', label: 'First / last before', show: (x) => `${x.first_before || '—'} / ${x.last_before || '—'}` },
      { key: 'first_after', label: 'after', show: (x) => `${x.first_after || '—'} / ${x.last_after || '—'}` },
      { key: 'headway_before_s', label: 'Headway before (min)', num: true, show: (x) => fmtMin(x.headway_before_s) },
      { key: 'headway_after_s', label: 'after', num: true, show: (x) => fmtMin(x.headway_after_s) },
    ], r.routes, { caption: 'Routes: trips of the date, first and last trip start, headway in the window' }));
    ui.connections.replaceChildren(r.connections.length ? sortableTable([
      { key: 'station', label: 'Station' },
      { key: 'arrival', label: 'Arrives' },
      { key: 'arr_route_id', label: 'From route', show: (x) => `${x.arr_route_id} ${x.arr_direction}` },
      { key: 'dep_route_id', label: 'To route', show: (x) => `${x.dep_route_id} ${x.dep_direction}` },
      { key: 'change', label: 'Change', show: (x) => x.change.replace(/_/g, ' ') },
      { key: 'before_wait_s', label: 'Wait before (min)', num: true, show: (x) => fmtMin(x.before_wait_s) },
      { key: 'after_wait_s', label: 'after', num: true, show: (x) => fmtMin(x.after_wait_s) },
    ], r.connections.slice(0, 2000), { caption: `Connections whose status changed${r.connections.length > 2000 ? ` (2000 of ${r.connections.length}; the CSV has them all)` : ''}` }) : el('p', { class: 'hint', text: 'No connection changed its status.' }));
    ui.pairsNote.textContent = total > pairs.length ? `${pairs.length} of ${total} pairs shown, changed ones first; the CSV has them all.` : `${total} pairs.`;
    ui.pairs.replaceChildren(sortableTable([
      { key: 'from_stop_id', label: 'From' },
      { key: 'to_stop_id', label: 'To' },
      { key: 'before_p50_s', label: 'Median before (min)', num: true, show: (p) => fmtMin(p.before_p50_s) },
      { key: 'after_p50_s', label: 'after', num: true, show: (p) => fmtMin(p.after_p50_s) },
      { key: 'before_p90_s', label: '90th pct before', num: true, show: (p) => fmtMin(p.before_p90_s) },
      { key: 'after_p90_s', label: 'after', num: true, show: (p) => fmtMin(p.after_p90_s) },
      { key: 'status', label: 'Status', show: (p) => p.status.replace(/_/g, ' ') },
    ], pairs, { caption: 'Pairs, before and after' }));
  }

  for (const [table, button] of Object.entries(ui.csv)) {
    button.addEventListener('click', async () => {
      if (!last) return;
      try {
        const bytes = await client.compareCsv(table);
        download(`compare-${last.report.date}-${table}.csv`, [bytes], 'text/csv');
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
