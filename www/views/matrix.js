// The "Many to many" view: a travel-time matrix over a window, its origins spread over Web
// Workers (one engine each, loaded with the page's feeds), with progress, an estimate of the time
// left and a cancel button. Rows are kept as typed arrays, one set per origin; the CSV and
// Parquet files are written by the engine's own table writer (the CLI's), on request.

import { windowQuery, download } from '../charts.js';

const $ = (id) => document.getElementById(id);

function ids(text) {
  return text.split(/[\s,]+/).map((s) => s.trim()).filter(Boolean);
}

export function initMatrixView({ client, say }) {
  const ui = {
    form: $('matrix-form'),
    error: $('m-error'),
    date: $('m-date'),
    run: $('m-run'),
    box: $('m-progress-box'),
    progress: $('m-progress'),
    text: $('m-progress-text'),
    cancel: $('m-cancel'),
    summary: $('m-summary'),
    csv: $('m-csv'),
    parquet: $('m-parquet'),
    caution: $('m-sf-caution'),
  };
  let twins = [];
  let cancelled = false;
  /** The last finished run: { query, percentiles, origins, rows: [origin, rows][] }. */
  let done = null;

  const fail = (text) => {
    ui.error.textContent = text;
    ui.error.hidden = false;
  };

  function stopTwins() {
    for (const t of twins) t.dispose();
    twins = [];
  }

  /** Place indices of ids; throws naming the first unknown one. */
  function placeIndices(list, places, what) {
    const byId = new Map();
    places.forEach((p, i) => byId.set(p.id, i));
    return list.map((id) => {
      const bare = id.includes(':') ? id.slice(id.indexOf(':') + 1) : id;
      const i = byId.get(bare);
      if (i === undefined) throw new Error(`${what}: no station or stop "${id}" (give stop or station ids)`);
      return i;
    });
  }

  ui.form.addEventListener('submit', async (ev) => {
    ev.preventDefault();
    ui.error.hidden = true;
    if (!client.feedNames.length) return fail('Load a timetable first.');
    let query;
    try {
      query = windowQuery('m', [5, 25, 50, 75, 95]);
    } catch (e) {
      return fail(e.message);
    }
    let places, origins, dests;
    try {
      places = await client.places();
      origins = ids($('m-origins').value);
      origins = origins.length ? placeIndices(origins, places, 'Origins') : places.map((_, i) => i);
      const d = ids($('m-dests').value);
      dests = d.length ? placeIndices(d, places, 'Destinations') : null;
      // Checked by the engine before any worker starts.
      await client.matrixSetup(query, dests, null);
    } catch (e) {
      return fail(e.message);
    }
    const n = Math.max(1, Math.min(Number($('m-workers').value) || navigator.hardwareConcurrency || 2, 32, origins.length));
    cancelled = false;
    done = null;
    ui.csv.disabled = ui.parquet.disabled = true;
    ui.run.disabled = true;
    ui.box.hidden = false;
    ui.progress.value = 0;
    ui.text.textContent = `Starting ${n} workers…`;
    ui.caution.hidden = query.step_free === 'off';
    const started = performance.now();
    const results = new Array(origins.length);
    let finished = 0;
    try {
      twins = await Promise.all(Array.from({ length: n }, () => client.twin()));
      await Promise.all(twins.map((t) => t.matrixSetup(query, dests, null)));
      const t0 = performance.now();
      let next = 0;
      await Promise.all(twins.map(async (t) => {
        while (!cancelled && next < origins.length) {
          const i = next++;
          results[i] = await t.matrixOrigin(origins[i]);
          finished++;
          const per = (performance.now() - t0) / finished;
          const left = Math.round((per * (origins.length - finished)) / 1000);
          ui.progress.value = finished / origins.length;
          ui.text.textContent = `${finished} of ${origins.length} origins, ${n} workers; about ${left} s left.`;
        }
      }));
    } catch (e) {
      if (!cancelled) fail(e.message);
    } finally {
      stopTwins();
      ui.run.disabled = false;
      ui.box.hidden = true;
    }
    if (cancelled || finished < origins.length) {
      ui.summary.textContent = 'Cancelled: nothing to download.';
      say('The matrix was cancelled.');
      return;
    }
    const rows = results.reduce((a, r) => a + r.to.length, 0);
    const secs = ((performance.now() - started) / 1000).toFixed(1);
    done = { query, origins, results };
    ui.summary.textContent = `${rows} pairs with a journey from ${origins.length} origins, ${query.window} on ${query.date}; computed in ${secs} s on ${n} workers.`;
    ui.csv.disabled = ui.parquet.disabled = false;
    say(`Matrix ready: ${rows} pairs.`);
  });

  ui.cancel.addEventListener('click', () => {
    cancelled = true;
    stopTwins();
  });

  async function save(format) {
    if (!done) return;
    ui.summary.textContent = `Writing the ${format.toUpperCase()} file…`;
    try {
      await client.tableBegin(format, done.query.percentiles);
      for (let i = 0; i < done.origins.length; i++) await client.tableAdd(done.origins[i], done.results[i]);
      const bytes = await client.tableFinish();
      download(`matrix-${done.query.date}.${format}`, [bytes], format === 'csv' ? 'text/csv' : 'application/vnd.apache.parquet');
      ui.summary.textContent = `${format.toUpperCase()} file written (${bytes.length} bytes).`;
    } catch (e) {
      fail(e.message);
    }
  }
  ui.csv.addEventListener('click', () => save('csv'));
  ui.parquet.addEventListener('click', () => save('parquet'));

  return {
    show(defaultDate) {
      if (!ui.date.value && defaultDate) ui.date.value = defaultDate;
    },
  };
}
