// The "Step-free audit" view: pairs of places over a window, standard against step-free; the
// elements that block most pairs and what fixing each would open, marked by rank on the sketch;
// lifts, ramps, stations and entrances set out of service from a list (or an alerts file) and
// what that costs; the completeness of the feed's accessibility data. The report prints on its
// own (a print style sheet) with the caution; the files are the CLI's, from the engine's writer.

import { drawSketch, el, node } from '../sketch.js';
import { sortableTable, download, numberOrNull, fmtMin, longRun } from '../charts.js';

const $ = (id) => document.getElementById(id);
// Okabe–Ito vermillion for blocking elements, ranked by number.
const RANK = '#d55e00';

export function initStepFreeView({ client, getSketch, say }) {
  const ui = {
    form: $('sf-form'),
    error: $('sf-error'),
    date: $('sf-date'),
    run: $('sf-run'),
    listField: $('sf-list-field'),
    outages: $('sf-outages'),
    box: $('sf-progress-box'),
    progress: $('sf-progress'),
    progressText: $('sf-progress-text'),
    cancel: $('sf-cancel'),
    summary: $('sf-summary'),
    elements: $('sf-elements'),
    sketch: $('sf-sketch'),
    legend: $('sf-sketch-legend'),
    outageSummary: $('sf-outage-summary'),
    pairsNote: $('sf-pairs-note'),
    pairs: $('sf-pairs'),
    completeness: $('sf-completeness'),
    print: $('sf-print'),
    csv: { pairs: $('sf-csv-pairs'), elements: $('sf-csv-elements'), completeness: $('sf-csv-completeness'), outages: $('sf-csv-outages') },
  };
  let last = null;
  let picks = [];

  const fail = (text) => {
    ui.error.textContent = text;
    ui.error.hidden = false;
  };
  const run = longRun(ui, client, { what: { done: 'audited', name: 'step-free audit' }, say, fail, onCancel: () => fillPicker() });
  const pairsMode = () => ui.form.querySelector('input[name="sf-pairs"]:checked').value;
  const sync = () => { ui.listField.hidden = pairsMode() !== 'list'; };
  ui.form.addEventListener('change', (e) => { if (e.target.name === 'sf-pairs') sync(); });
  sync();

  /** The outage picker: lifts and ramps first, then stations and entrances. */
  async function fillPicker() {
    try {
      picks = await client.accessibilityElements();
    } catch {
      picks = [];
    }
    ui.outages.replaceChildren(...picks.map((p, i) => el('label', {}, el('input', { type: 'checkbox', value: p.id, 'data-index': i }), ` ${p.kind}: ${p.kind === 'lift' || p.kind === 'ramp' ? p.station : p.name}`, el('span', { class: 'hint', text: ` (${p.id.replace(/^[a-z]+:/, '')})` }))));
    if (!picks.length) ui.outages.append(el('p', { class: 'hint', text: 'The loaded feeds have no lifts, ramps, stations or entrances.' }));
  }

  function query() {
    const q = { date: ui.date.value, window: `${$('sf-start').value}-${$('sf-end').value}`, lenient: $('sf-lenient').checked };
    if (!q.date) throw new Error('Choose a service date.');
    const step = numberOrNull($('sf-step'));
    if (step != null) q.step_min = step;
    const mode = pairsMode();
    if (mode === 'sample') {
      const n = numberOrNull($('sf-n'));
      if (n == null || !Number.isInteger(n) || n < 1) throw new Error('Sample: give a whole number of pairs, at least 1.');
      q.pairs = `sample:${n}`;
    } else if (mode === 'all') {
      q.pairs = 'all';
    } else {
      const lines = $('sf-list').value.split(/\r?\n/).map((l) => l.trim()).filter(Boolean);
      if (!lines.length) throw new Error('Pairs: give one pair per line, from id and to id separated by a comma.');
      q.pair_list = lines.map((l, i) => {
        const parts = l.split(',').map((x) => x.trim());
        if (parts.length !== 2 || !parts[0] || !parts[1]) throw new Error(`Pairs, line ${i + 1}: "${l}" is not "from id, to id".`);
        return parts;
      });
    }
    const seed = numberOrNull($('sf-seed'));
    if (seed != null) q.seed = seed;
    const speed = numberOrNull($('sf-speed'));
    if (speed != null) q.step_free_speed_mps = speed;
    const fix = numberOrNull($('sf-fix'));
    if (fix != null) q.fix_top = fix;
    q.outages = [
      ...[...ui.outages.querySelectorAll('input:checked')].map((c) => c.value),
      ...$('sf-outage-ids').value.split(',').map((x) => x.trim()).filter(Boolean),
    ];
    return q;
  }

  ui.form.addEventListener('submit', async (ev) => {
    ev.preventDefault();
    ui.error.hidden = true;
    if (!client.feedNames.length) return fail('Load a timetable first.');
    let q;
    try {
      q = query();
    } catch (e) {
      return fail(e.message);
    }
    const file = $('sf-alerts').files[0];
    const alerts = file ? new Uint8Array(await file.arrayBuffer()) : null;
    await run('Starting…', (onProgress) => client.stepfree(q, alerts, onProgress), (r, ms) => {
      last = { query: q, ms, ...r };
      show(last);
      say(ui.summary.textContent);
    });
  });

  const pct = (a, b) => (b ? `${((100 * a) / b).toFixed(1)} %` : '—');

  function show(res) {
    const { report: r, pairs, pairs_total: total, skipped } = res;
    const c = r.counts;
    ui.summary.textContent = `${c.pairs} pairs, ${r.date}, ${r.departures} departures ${r.window}, ${r.profile} step-free at ${r.step_free_speed_mps} m/s: ` +
      `${c.step_free} step-free (${pct(c.step_free, c.pairs)}), ${c.blocked} blocked (${pct(c.blocked, c.pairs)}), ${c.no_journey} with no journey; ` +
      `${c.explained} blocked pairs explained. Computed in ${(res.ms / 1000).toFixed(1)} s.` + (skipped.length ? ` Alerts skipped: ${skipped.join('; ')}.` : '');
    for (const b of Object.values(ui.csv)) b.disabled = false;
    ui.csv.outages.disabled = !r.outages.length;
    ui.print.disabled = false;
    // What to fix first.
    const ranked = r.elements.map((e, i) => ({ rank: i + 1, ...e }));
    ui.elements.replaceChildren(ranked.length ? sortableTable([
      { key: 'rank', label: 'Rank', num: true },
      { key: 'element_id', label: 'Element', show: (e) => `${e.element_kind} ${e.element_id}` },
      { key: 'name', label: 'Where' },
      { key: 'pairs_blocked', label: 'Pairs blocked', num: true },
      { key: 'pairs_unblocked_if_fixed', label: 'Opened if fixed', num: true, show: (e) => (e.pairs_unblocked_if_fixed == null ? 'not tried' : `${e.estimated ? '≈ ' : ''}${e.pairs_unblocked_if_fixed}`) },
    ], ranked, { caption: 'Elements on blocked pairs\' standard journeys that fail the step-free check, by pairs opened if fixed' }) : el('p', { class: 'hint', text: 'No blocked pair was explained: nothing to fix on these pairs.' }));
    drawRanks(ranked.slice(0, 10));
    // Outages.
    if (r.outages.length) {
      ui.outageSummary.textContent = `${r.outages.map((o) => `${o.element_kind} ${o.element_id} (${o.name}; ${o.source})`).join(', ')} out of service: ` +
        `${c.lost} of ${c.step_free} step-free pairs lose step-free access, ${c.slower} are slower.`;
    } else {
      ui.outageSummary.textContent = 'No element set out of service.';
    }
    // Pairs.
    const withOutages = r.outages.length > 0;
    ui.pairsNote.textContent = total > pairs.length
      ? `${pairs.length} of ${total} pairs shown, blocked and lost ones first; the CSV has them all. Times in minutes.`
      : `${total} pairs; times in minutes.`;
    const cols = [
      { key: 'from_stop_id', label: 'From' },
      { key: 'to_stop_id', label: 'To' },
      { key: 'standard_p50_s', label: 'Standard median (min)', num: true, show: (p) => fmtMin(p.standard_p50_s) },
      { key: 'stepfree_p50_s', label: 'Step-free median (min)', num: true, show: (p) => fmtMin(p.stepfree_p50_s) },
      { key: 'extra_p50_s', label: 'Extra (min)', num: true, show: (p) => fmtMin(p.extra_p50_s) },
      { key: 'status', label: 'Status', show: (p) => p.status.replace('_', '-') },
      { key: 'blocking', label: 'Blocking', show: (p) => p.blocking.join('; ') || '—' },
      ...(withOutages ? [{ key: 'outage_status', label: 'With outages', show: (p) => `${(p.outage_status || '').replace(/_/g, ' ')}${p.outage_blocking.length ? ` (${p.outage_blocking.join('; ')})` : ''}` }] : []),
    ];
    ui.pairs.replaceChildren(sortableTable(cols, pairs, { caption: 'Pairs, standard against step-free over the window' }));
    ui.completeness.replaceChildren(sortableTable([
      { key: 'scope', label: 'Scope' },
      { key: 'name', label: 'Name' },
      { key: 'stops_unknown', label: 'Stops unknown', num: true, show: (x) => `${x.stops_unknown} of ${x.stops} (${pct(x.stops_unknown, x.stops)})` },
      { key: 'trips_unknown', label: 'Trips unknown', num: true, show: (x) => `${x.trips_unknown} of ${x.trips} (${pct(x.trips_unknown, x.trips)})` },
      { key: 'pathways_unknown', label: 'Pathways unknown', num: true, show: (x) => (x.pathways == null ? '—' : `${x.pathways_unknown} of ${x.pathways}`) },
    ], r.completeness, { caption: 'Accessibility the feed leaves unknown, per feed, agency and route' }));
  }

  /** The sketch with the first ten elements' places marked by their rank. */
  function drawRanks(top) {
    const data = getSketch();
    const at = new Map(); // stop id → ranks
    for (const e of top) {
      let stop = null;
      if (e.element_kind === 'pathway') {
        const p = picks.find((x) => x.id === `pathway:${e.element_id}`);
        stop = p ? p.stop_id : null;
      } else if (e.element_kind !== 'route') {
        stop = e.element_id;
      }
      if (stop) at.set(stop, [...(at.get(stop) || []), e.rank]);
    }
    drawSketch(ui.sketch, data, null, false, {
      size: (id) => (at.has(id) ? { r: 9, fill: RANK, label: `ranks ${at.get(id).join(', ')} of what to fix first` } : null),
      describe: top.length
        ? `Places of the first ${top.length} elements to fix marked in vermillion: ${top.map((e) => `${e.rank}. ${e.element_kind} ${e.element_id}`).join('; ')}${top.some((e) => e.element_kind === 'route') ? ' (routes are not drawn)' : ''}.`
        : 'No element to mark.',
    });
    // Rank numbers beside the marks, from the circles drawn.
    for (const c of ui.sketch.querySelectorAll('circle.sk-sized-stop')) {
      const label = c.querySelector('title').textContent;
      const m = /ranks ([\d, ]+) of/.exec(label);
      if (!m) continue;
      const r = Number(c.getAttribute('r'));
      const t = node('text', { x: Number(c.getAttribute('cx')) + r * 1.3, y: Number(c.getAttribute('cy')) + r * 0.5, 'font-size': (r * 1.6).toFixed(1), 'stroke-width': (r * 0.35).toFixed(2), class: 'sk-rank' }, m[1]);
      c.after(t);
    }
    ui.legend.replaceChildren(el('span', { class: 'legend-title', text: 'Vermillion circles: where the elements to fix first are; the number is the rank.' }));
  }

  for (const [table, button] of Object.entries(ui.csv)) {
    button.addEventListener('click', async () => {
      if (!last) return;
      try {
        const bytes = await client.stepfreeCsv(table);
        download(`stepfree-${last.report.date}-${table}.csv`, [bytes], 'text/csv');
      } catch (e) {
        fail(e.message);
      }
    });
  }
  ui.print.addEventListener('click', () => window.print());

  fillPicker();
  return {
    show(defaultDate) {
      if (!ui.date.value && defaultDate) ui.date.value = defaultDate;
      fillPicker();
    },
  };
}
