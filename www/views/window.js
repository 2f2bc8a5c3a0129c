// The "Over a time window" view: reach from one stop over a window of departures (a sortable
// table, the sketch coloured by median minutes, a CSV download) and one pair's travel time at each
// departure (the saw-tooth chart). The engine runs in the page's worker; this module only asks.

import { StopCombobox, pickedStop } from '../combobox.js';
import { drawSketch } from '../sketch.js';
import { minuteColor, minuteLegend, fmtMin, drawSawTooth, sortableTable, csvText, download, windowQuery } from '../charts.js';

const $ = (id) => document.getElementById(id);

export function initWindowView({ client, getSketch, say }) {
  const ui = {
    form: $('window-form'),
    error: $('w-error'),
    date: $('w-date'),
    csv: $('w-csv'),
    summary: $('w-summary'),
    table: $('w-table'),
    sketch: $('w-sketch'),
    legend: $('w-legend'),
    pairText: $('w-pair-text'),
    saw: $('w-saw'),
    caution: $('w-sf-caution'),
  };
  const fromBox = new StopCombobox($('w-from'), $('w-from-list'), $('w-from-hint'), (t) => client.searchStops(t, 8));
  let last = null;
  let query = null;
  let fromId = null;

  const fail = (text) => {
    ui.error.textContent = text;
    ui.error.hidden = false;
  };

  function redraw() {
    const median = new Map();
    const pIdx = last ? last.percentiles.indexOf(50) : -1;
    if (last) {
      for (const p of last.places) median.set(p.stop_id, pIdx >= 0 ? p.percentiles_s[pIdx] : p.min_s);
      median.set(last.from.id, 0);
    }
    const what = pIdx >= 0 ? 'median' : 'shortest';
    drawSketch(ui.sketch, getSketch(), null, false, last ? {
      fill: (id) => minuteColor(median.has(id) && median.get(id) != null ? median.get(id) / 60 : null),
      describe: `Stops coloured by ${what} minutes from ${last.from.name} over ${last.window}; ${last.places.length} places reached.`,
    } : {});
    minuteLegend(ui.legend, last ? `${what[0].toUpperCase()}${what.slice(1)} travel time:` : 'Travel time:');
  }

  async function showPair(row) {
    ui.pairText.textContent = `Working out ${row.name} across the window…`;
    try {
      const prof = await client.pairProfile(fromId, row.stop_id, query);
      const text = drawSawTooth(ui.saw, prof);
      ui.pairText.textContent = text;
      $('w-pair-heading').focus();
    } catch (e) {
      ui.pairText.textContent = e.message;
    }
  }

  ui.form.addEventListener('submit', async (ev) => {
    ev.preventDefault();
    ui.error.hidden = true;
    if (!client.feedNames.length) return fail('Load a timetable first.');
    const text = $('w-from').value.trim();
    if (!text) return fail('Choose a stop to start from.');
    try {
      query = windowQuery('w', [50, 90]);
    } catch (e) {
      return fail(e.message);
    }
    try {
      fromId = await pickedStop(fromBox, client);
      say(`Computing reach over ${query.window}…`);
      last = await client.reachWindow(fromId, query);
    } catch (e) {
      return fail(e.message);
    }
    ui.caution.hidden = query.step_free === 'off';
    const pct = last.percentiles;
    const rows = last.places.map((p) => {
      const r = { stop_id: p.stop_id, name: p.name, min_s: p.min_s, share: p.share_within_cutoff, reached: p.departures_reached };
      pct.forEach((x, k) => { r[`p${k}`] = p.percentiles_s[k]; });
      return r;
    });
    const cols = [
      { key: 'name', label: 'Place', show: (r) => `${r.name} [${r.stop_id}]` },
      { key: 'min_s', label: 'Shortest (min)', num: true, show: (r) => fmtMin(r.min_s) },
      ...pct.map((x, k) => ({ key: `p${k}`, label: `p${x} (min)`, num: true, show: (r) => fmtMin(r[`p${k}`]) })),
      ...(last.cutoff_min != null ? [{ key: 'share', label: `Within ${last.cutoff_min} min`, num: true, show: (r) => `${Math.round(r.share * 100)} %` }] : []),
      { key: 'reached', label: 'Departures with a journey', num: true, show: (r) => `${r.reached} of ${last.departures}` },
    ];
    ui.table.replaceChildren(sortableTable(cols, rows, {
      caption: `Places reached from ${last.from.name} on ${last.date}, ${last.departures} departures ${last.window} every ${last.step_min} min`,
      onRow: showPair,
    }));
    ui.summary.textContent = `${last.places.length} places reached from ${last.from.name} at some departure; times in minutes.`;
    ui.csv.disabled = false;
    redraw();
    say(`${last.places.length} places reached over the window.`);
  });

  ui.csv.addEventListener('click', () => {
    if (!last) return;
    const head = ['stop_id', 'name', 'min_s', ...last.percentiles.map((p) => `p${String(p).replace('.', '_')}_s`), 'share_within_cutoff', 'departures_with_journey'];
    const rows = last.places.map((p) => [p.stop_id, p.name, p.min_s, ...p.percentiles_s.map((v) => (v == null ? '' : Math.round(v * 1000) / 1000)), p.share_within_cutoff ?? '', p.departures_reached]);
    download(`reach-${last.from.id}-${last.date}.csv`, [csvText(head, rows)], 'text/csv');
  });

  return {
    /** Called when the view is shown or the feeds change. */
    show(defaultDate) {
      if (!ui.date.value && defaultDate) ui.date.value = defaultDate;
      redraw();
    },
  };
}
