// The page's entry: feed loading, the journey form, results, detail and sketch, and the wiring of
// the workbench's other views (views/*.js) to the same worker. All engine work happens
// in the worker (engine-client.js); this module only moves values between the form, the worker
// and the DOM. Feed text reaches the DOM only as text nodes (textContent / append(string)).
//
// The query lives in the address, as URLSearchParams in location.hash:
//   from, to (stop ids), date (YYYY-MM-DD), time (HH:MM), sf (off|strict|lenient),
//   walk (m), speed (m/s), pen (min per change), max (longest journey, min), n (journeys),
//   src (demo|own)
// Empty limit fields are left out and take the engine's defaults. Opening such an address runs
// the query once feeds are loaded. Decision: when the address holds a query and no feed is
// loaded, the page loads the bundled demo city by itself — unless src=own, meaning the link was
// made with feeds the user picked from disk; the page cannot fetch those, so it asks for them and
// runs the query once they are loaded.

import { EngineClient, CancelledError, EngineError } from './engine-client.js';
import { StopCombobox, labelFor } from './combobox.js';
import { drawSketch, hexColor, contrast, el } from './sketch.js';

const $ = (id) => document.getElementById(id);
const html = document.documentElement;

const ui = {
  status: $('status'),
  loadDemo: $('load-demo'),
  files: $('feed-files'),
  drop: $('dropzone'),
  loadsBox: $('loads-box'),
  loads: $('loads'),
  cancel: $('cancel-load'),
  feedError: $('feed-error'),
  feedList: $('feed-list'),
  noFeeds: $('no-feeds'),
  form: $('query-form'),
  formError: $('form-error'),
  date: $('date'),
  time: $('time'),
  sf: $('sf'),
  walk: $('walk'),
  speed: $('speed'),
  pen: $('pen'),
  max: $('max'),
  n: $('n'),
  plan: $('plan'),
  swap: $('swap'),
  resultsPanel: $('results-panel'),
  resultsEmpty: $('results-empty'),
  timeKey: $('time-key'),
  results: $('results'),
  sfNotes: $('sf-notes'),
  sfExtra: $('sf-extra'),
  noJourney: $('no-journey'),
  noJourneyMessage: $('no-journey-message'),
  noJourneyBlocking: $('no-journey-blocking'),
  noJourneyList: $('no-journey-list'),
  planWarnings: $('plan-warnings'),
  detail: $('detail'),
  detailHeading: $('detail-heading'),
  sketch: $('sketch'),
  sketchFit: $('sketch-fit'),
};

const state = {
  /** feed name → { report, source: 'demo'|'own', file } */
  feeds: new Map(),
  queue: [],
  running: false,
  generation: 0,
  pendingQuery: null,
  lastPlan: null,
  selected: -1,
  sketch: null,
  sketchFit: true,
  stopNames: new Map(),
  dateTouched: false,
  plans: 0,
};

// ---------------------------------------------------------------- small DOM helpers

function say(text) {
  // Re-set even when unchanged so screen readers announce a repeated message.
  ui.status.textContent = '';
  requestAnimationFrame(() => { ui.status.textContent = text; });
}

function minutes(s) {
  if (!Number.isFinite(s)) return '';
  const m = Math.round(s / 60);
  if (s > 0 && m === 0) return 'under 1 min';
  if (m < 60) return `${m} min`;
  const h = Math.floor(m / 60);
  return `${h} h ${String(m % 60).padStart(2, '0')} min`;
}

function isoDate(d) {
  if (!d) return null;
  const s = String(d);
  if (/^\d{8}$/.test(s)) return `${s.slice(0, 4)}-${s.slice(4, 6)}-${s.slice(6, 8)}`;
  return /^\d{4}-\d{2}-\d{2}$/.test(s) ? s : null;
}

function todayIso() {
  const d = new Date();
  return `${d.getFullYear()}-${String(d.getMonth() + 1).padStart(2, '0')}-${String(d.getDate()).padStart(2, '0')}`;
}

function plural(n, one, many) {
  return `${n} ${n === 1 ? one : many}`;
}

// ---------------------------------------------------------------- engine

const client = new EngineClient({
  onRestart(phase, detail) {
    if (phase === 'restoring' && detail.names.length) say(`Restarting the engine and reloading ${detail.names.join(', ')}…`);
    if (phase === 'restored') {
      if (detail.failed && detail.failed.length) {
        showFeedError(detail.failed[0].name, { message: `could not be reloaded: ${detail.failed[0].message}` });
      }
      syncFeedsFromClient();
      refreshSketch();
    }
  },
});

html.dataset.engine = 'starting';
client.start().then(
  () => {
    html.dataset.engine = 'ready';
    ui.loadDemo.disabled = false;
    startFromAddress();
  },
  (e) => {
    html.dataset.engine = 'failed';
    showFeedError('the engine', e.issue || { message: e.message });
    say('The engine could not start.');
  },
);

// ---------------------------------------------------------------- loading feeds

ui.loadDemo.disabled = true;
ui.loadDemo.addEventListener('click', () => loadDemo());
ui.files.addEventListener('change', () => {
  addFiles([...ui.files.files]);
  ui.files.value = '';
});
for (const type of ['dragenter', 'dragover']) {
  ui.drop.addEventListener(type, (e) => {
    e.preventDefault();
    ui.drop.classList.add('dropzone-over');
  });
}
for (const type of ['dragleave', 'drop']) {
  ui.drop.addEventListener(type, () => ui.drop.classList.remove('dropzone-over'));
}
ui.drop.addEventListener('drop', (e) => {
  e.preventDefault();
  addFiles([...(e.dataTransfer ? e.dataTransfer.files : [])]);
});
// Dropping a file anywhere else must not navigate away from the page (and lose what is loaded).
window.addEventListener('dragover', (e) => e.preventDefault());
window.addEventListener('drop', (e) => e.preventDefault());

ui.cancel.addEventListener('click', () => cancelLoads());

function feedNameFromFile(fileName) {
  return fileName.replace(/\.zip$/i, '') || fileName;
}

function isTaken(name) {
  return state.feeds.has(name) || state.queue.some((q) => q.name === name);
}

function addFiles(files) {
  for (const file of files) {
    const name = feedNameFromFile(file.name);
    if (isTaken(name)) {
      showFeedError(file.name, { message: `a feed named "${name}" is already loaded or loading; remove it first to load this file again` });
      continue;
    }
    enqueue({ name, file: file.name, source: 'own', bytes: () => file.arrayBuffer() });
  }
}

async function loadDemo() {
  let index;
  try {
    const res = await fetch('feeds/index.json');
    if (!res.ok) throw new Error(`the server answered ${res.status} for feeds/index.json`);
    index = await res.json();
  } catch (e) {
    showFeedError('feeds/index.json', { message: `the demo city's feed list could not be read: ${e.message}` });
    return;
  }
  const list = Array.isArray(index && index.feeds) ? index.feeds : [];
  let added = 0;
  for (const f of list) {
    if (!f || typeof f.url !== 'string') continue;
    const file = f.url.split('/').pop();
    const name = typeof f.name === 'string' && f.name ? f.name : feedNameFromFile(file);
    if (isTaken(name)) continue;
    added++;
    enqueue({
      name,
      file,
      source: 'demo',
      bytes: async () => {
        const res = await fetch(f.url);
        if (!res.ok) throw new EngineError({ file, message: `the server answered ${res.status} for ${f.url}` });
        return res.arrayBuffer();
      },
    });
  }
  if (!added) say(list.length ? 'The demo city is already loaded.' : 'The demo feed list is empty.');
}

function enqueue(item) {
  item.row = loadRow(item);
  state.queue.push(item);
  ui.loadsBox.hidden = false;
  if (!state.running) runQueue();
}

function loadRow(item) {
  const id = `load-${Math.random().toString(36).slice(2, 9)}`;
  const stage = el('span', { class: 'load-stage', id: `${id}-stage`, text: 'waiting' });
  const bar = el('progress', { max: '1', 'aria-labelledby': `${id}-name ${id}-stage` });
  const li = el('li', { class: 'load' }, el('span', { class: 'load-name', id: `${id}-name`, text: item.file }), stage, bar);
  ui.loads.append(li);
  return { li, stage, bar };
}

function setStage(row, stage, fraction) {
  const text = String(stage);
  row.stage.textContent = text.charAt(0).toUpperCase() + text.slice(1);
  if (Number.isFinite(fraction)) row.bar.value = Math.max(0, Math.min(1, fraction));
  else row.bar.removeAttribute('value');
}

async function runQueue() {
  state.running = true;
  html.dataset.loading = 'yes';
  const generation = state.generation;
  let loadedAny = false;
  while (state.queue.length && generation === state.generation) {
    const item = state.queue[0];
    try {
      setStage(item.row, 'reading', 0);
      const buf = await item.bytes();
      if (generation !== state.generation) break;
      const bytes = new Uint8Array(buf);
      setStage(item.row, 'reading', 0.02);
      const report = await client.loadFeed(item.name, bytes, (stage, fraction) => setStage(item.row, stage, fraction));
      state.feeds.set(item.name, { report, source: item.source, file: item.file });
      loadedAny = true;
      say(`Loaded ${item.file}: ${describeCounts(report)}.`);
    } catch (e) {
      if (e instanceof CancelledError || generation !== state.generation) break;
      const issue = e instanceof EngineError ? e.issue : { message: e.message || String(e) };
      showFeedError(item.file, issue);
    }
    item.row.li.remove();
    state.queue.shift();
  }
  if (generation !== state.generation) return; // cancelCalls finishes up
  state.running = false;
  html.dataset.loading = 'no';
  ui.loadsBox.hidden = true;
  renderFeeds();
  if (loadedAny) {
    suggestDate();
    await refreshSketch();
    runPendingQuery();
  }
}

async function cancelLoads() {
  state.generation++;
  const dropped = state.queue.map((q) => q.file);
  state.queue = [];
  ui.loads.replaceChildren();
  const row = loadRow({ file: 'Restoring loaded feeds' });
  setStage(row, 'restarting the engine', NaN);
  ui.cancel.disabled = true;
  try {
    await client.cancel((name, stage, fraction) => setStage(row, `${name}: ${stage}`, fraction));
  } catch (e) {
    showFeedError('the engine', { message: `could not be restarted: ${e.message}` });
  }
  ui.cancel.disabled = false;
  row.li.remove();
  ui.loadsBox.hidden = state.queue.length === 0;
  state.running = false;
  html.dataset.loading = 'no';
  syncFeedsFromClient();
  renderFeeds();
  await refreshSketch();
  if (state.queue.length) runQueue(); // files chosen while the engine was restarting
  say(`Loading cancelled${dropped.length ? ` (${dropped.join(', ')})` : ''}. ${state.feeds.size ? `Still loaded: ${[...state.feeds.keys()].join(', ')}.` : 'No feed is loaded.'}`);
}

/** After a worker restart, keep only the feeds the client holds again. */
function syncFeedsFromClient() {
  const names = new Set(client.feedNames);
  for (const name of [...state.feeds.keys()]) if (!names.has(name)) state.feeds.delete(name);
  for (const k of client.kept) {
    const entry = state.feeds.get(k.name);
    if (entry) entry.report = k.report;
  }
  renderFeeds();
}

function describeCounts(r) {
  const parts = [];
  if (Number.isFinite(r.stops)) parts.push(plural(r.stops, 'stop', 'stops'));
  if (Number.isFinite(r.routes)) parts.push(plural(r.routes, 'route', 'routes'));
  if (Number.isFinite(r.trips)) parts.push(plural(r.trips, 'trip', 'trips'));
  if (Number.isFinite(r.stop_events)) parts.push(plural(r.stop_events, 'stop event', 'stop events'));
  return parts.join(', ');
}

function issueText(w) {
  if (!w || typeof w !== 'object') return String(w);
  const where = [w.file, w.line != null ? `line ${w.line}` : null, w.field ? `field ${w.field}` : null].filter(Boolean).join(', ');
  const value = w.value != null && w.value !== '' ? ` (value "${w.value}")` : '';
  return `${where ? `${where}: ` : ''}${w.message || ''}${value}`;
}

function renderFeeds() {
  ui.feedList.replaceChildren();
  ui.noFeeds.hidden = state.feeds.size > 0;
  html.dataset.feeds = String(state.feeds.size);
  for (const [name, entry] of state.feeds) {
    const r = entry.report || {};
    const first = isoDate(r.first_date);
    const last = isoDate(r.last_date);
    const li = el('li', { class: 'feed' },
      el('div', { class: 'feed-head' },
        el('span', { class: 'feed-name', text: name }),
        el('button', { type: 'button', class: 'btn btn-small', 'data-remove': name, 'aria-label': `Remove ${name}`, text: 'Remove' })),
      el('p', { class: 'feed-counts', text: describeCounts(r) }),
      first || last ? el('p', { class: 'feed-dates', text: `Service dates ${first || '?'} to ${last || '?'}` }) : null);
    if (r.timezone) li.append(el('p', { class: 'feed-dates', text: `Time zone ${r.timezone}` }));
    const warnings = Array.isArray(r.warnings) ? r.warnings : [];
    const total = Number.isFinite(r.warnings_total) ? Math.max(r.warnings_total, warnings.length) : warnings.length;
    if (warnings.length) {
      const list = el('ul', { class: 'warn-list' });
      for (const w of warnings) list.append(el('li', { text: issueText(w) }));
      const label = total > warnings.length ? `${plural(total, 'warning', 'warnings')} (first ${warnings.length} listed)` : plural(total, 'warning', 'warnings');
      li.append(el('details', { class: 'feed-warnings' }, el('summary', { text: label }), list));
    } else {
      li.append(el('p', { class: 'feed-ok', text: 'No warnings.' }));
    }
    ui.feedList.append(li);
  }
}

ui.feedList.addEventListener('click', async (e) => {
  const btn = e.target.closest('button[data-remove]');
  if (!btn) return;
  const name = btn.dataset.remove;
  try {
    await client.removeFeed(name);
    state.feeds.delete(name);
    renderFeeds();
    await refreshSketch();
    say(`Removed ${name}.`);
  } catch (err) {
    showFeedError(name, { message: `could not be removed: ${err.message}` });
  }
});

function showFeedError(fileName, issue) {
  const box = ui.feedError;
  box.replaceChildren();
  box.hidden = false;
  box.append(el('p', { class: 'issue-title' }, el('strong', { text: `Could not load ${fileName}` })));
  box.append(el('p', { class: 'issue-message', text: issue.message || 'unknown error' }));
  const where = [
    issue.file ? `in ${issue.file}` : null,
    issue.line !== null && issue.line !== undefined ? `line ${issue.line}` : null,
    issue.field ? `field ${issue.field}` : null,
    issue.value !== null && issue.value !== undefined ? `value "${issue.value}"` : null,
  ].filter(Boolean);
  if (where.length) box.append(el('p', { class: 'issue-where', text: `Where: ${where.join(', ')}.` }));
  const still = [...state.feeds.keys()];
  box.append(el('p', { class: 'issue-kept', text: still.length ? `Still loaded and usable: ${still.join(', ')}.` : 'No feed is loaded.' }));
  const close = el('button', { type: 'button', class: 'btn btn-small', text: 'Dismiss' });
  close.addEventListener('click', () => { box.hidden = true; ui.files.focus(); });
  box.append(close);
}

function suggestDate() {
  if (state.dateTouched || (state.pendingQuery && state.pendingQuery.date)) return;
  let first = null;
  let last = null;
  for (const { report } of state.feeds.values()) {
    const f = isoDate(report && report.first_date);
    const l = isoDate(report && report.last_date);
    if (f && (!first || f < first)) first = f;
    if (l && (!last || l > last)) last = l;
  }
  const today = todayIso();
  const inRange = (!first || today >= first) && (!last || today <= last);
  ui.date.value = inRange || !first ? today : first;
  if (!ui.time.value) ui.time.value = '08:00';
}

ui.date.addEventListener('input', () => { state.dateTouched = true; });

async function refreshSketch() {
  try {
    state.sketch = client.feedNames.length ? await client.sketch() : null;
  } catch {
    state.sketch = null;
  }
  state.stopNames = new Map();
  if (state.sketch && Array.isArray(state.sketch.stops)) {
    for (const s of state.sketch.stops) state.stopNames.set(s.id, s.name);
  }
  redrawSketch();
}

function redrawSketch() {
  const itin = state.lastPlan && state.selected >= 0 ? (state.lastPlan.journeys || [])[state.selected] : null;
  ui.sketchFit.disabled = !itin;
  drawSketch(ui.sketch, state.sketch, itin || null, state.sketchFit);
}

ui.sketchFit.addEventListener('click', () => {
  state.sketchFit = !state.sketchFit;
  ui.sketchFit.setAttribute('aria-pressed', String(state.sketchFit));
  redrawSketch();
});

let resizeTimer = 0;
new ResizeObserver(() => {
  clearTimeout(resizeTimer);
  resizeTimer = setTimeout(redrawSketch, 150);
}).observe(ui.sketch);

// ---------------------------------------------------------------- the form

const searchStops = (text) => client.searchStops(text, 8);
const fromBox = new StopCombobox($('from'), $('from-list'), $('from-hint'), searchStops);
const toBox = new StopCombobox($('to'), $('to-list'), $('to-hint'), searchStops);

ui.swap.addEventListener('click', () => {
  const a = { id: fromBox.stopId, text: fromBox.input.value };
  const b = { id: toBox.stopId, text: toBox.input.value };
  fromBox.set(b.id, b.text);
  toBox.set(a.id, a.text);
  say('Origin and destination swapped.');
});

ui.sf.addEventListener('change', () => {
  if (state.lastPlan) ui.form.requestSubmit();
});

ui.form.addEventListener('submit', (e) => {
  e.preventDefault();
  planFromForm();
});

function numberOrNull(input) {
  const v = input.value.trim();
  if (v === '') return null;
  const n = Number(v);
  return Number.isFinite(n) ? n : NaN;
}

function formError(text, focus) {
  ui.formError.textContent = text;
  ui.formError.hidden = false;
  if (focus) focus.focus();
}

/** A stop's id as the engine reads it whatever feeds are loaded: `feed:stop_id`. */
const scopedId = (m) => `${m.feed}:${m.id}`;

/**
 * The stop a field names: the one picked from its list, else the one its text names without
 * doubt. Text that fits several stops is not guessed: the form says which, and the list opens.
 */
async function resolveStop(box, role) {
  if (box.stopId) return box.stopId;
  const text = box.text;
  if (!text) {
    formError(`Choose a stop to travel ${role}.`, box.input);
    return null;
  }
  try {
    const m = await client.resolveStop(text);
    box.set(scopedId(m), labelFor(m));
    return scopedId(m);
  } catch (e) {
    const issue = (e && e.issue) || {};
    if (issue.AmbiguousStop) {
      const names = (issue.AmbiguousStop.candidates || []).join('; ');
      formError(`"${text}" fits several stops (${role}): ${names}. Pick one from the list.`, box.input);
      box.input.dispatchEvent(new Event('input'));
    } else if (issue.UnknownStop) {
      const hint = (issue.UnknownStop.suggestions || []).length ? ` Did you mean: ${issue.UnknownStop.suggestions.join(', ')}?` : '';
      formError(`No stop matches "${text}" (${role}).${hint}`, box.input);
    } else {
      formError(`The stop "${text}" (${role}) could not be looked up: ${e.message || e}`, box.input);
    }
    return null;
  }
}

async function planFromForm() {
  ui.formError.hidden = true;
  if (!state.feeds.size) {
    formError('Load a timetable first: the demo city or your own GTFS zip.', ui.loadDemo);
    return;
  }
  const from = await resolveStop(fromBox, 'from');
  if (!from) return;
  const to = await resolveStop(toBox, 'to');
  if (!to) return;
  if (!/^\d{4}-\d{2}-\d{2}$/.test(ui.date.value)) return formError('Enter a service date.', ui.date);
  if (!/^\d{2}:\d{2}/.test(ui.time.value)) return formError('Enter a time to leave at.', ui.time);
  const limits = {
    walk: numberOrNull(ui.walk),
    speed: numberOrNull(ui.speed),
    pen: numberOrNull(ui.pen),
    max: numberOrNull(ui.max),
    n: numberOrNull(ui.n),
  };
  for (const [key, input] of [['walk', ui.walk], ['speed', ui.speed], ['pen', ui.pen], ['max', ui.max], ['n', ui.n]]) {
    const v = limits[key];
    if (v === null) continue;
    if (Number.isNaN(v) || v < Number(input.min) || v > Number(input.max)) {
      return formError(`${input.labels[0].textContent} must be a number from ${input.min} to ${input.max}.`, input);
    }
  }
  const q = {
    from,
    to,
    date: ui.date.value,
    time: ui.time.value.slice(0, 5),
    sf: ui.sf.value,
    ...limits,
  };
  writeAddress(q);
  await runPlan(q);
}

/** Form values → the engine's query object (missing limits take the engine's defaults). */
function engineQuery(q) {
  const query = { from: q.from, to: q.to, date: q.date, time: q.time, step_free: q.sf || 'off' };
  if (q.walk !== null && q.walk !== undefined) query.walk_limit_m = q.walk;
  if (q.speed !== null && q.speed !== undefined) query.walking_speed_mps = q.speed;
  if (q.pen !== null && q.pen !== undefined) query.change_penalty_s = Math.round(q.pen * 60);
  if (q.max !== null && q.max !== undefined) query.max_duration_s = Math.round(q.max * 60);
  if (q.n !== null && q.n !== undefined) query.next = Math.round(q.n);
  return query;
}

async function runPlan(q) {
  const query = engineQuery(q);
  ui.resultsPanel.setAttribute('aria-busy', 'true');
  ui.plan.disabled = true;
  say('Searching…');
  let result;
  try {
    result = await client.plan(query);
  } catch (e) {
    ui.resultsPanel.removeAttribute('aria-busy');
    ui.plan.disabled = false;
    if (e instanceof CancelledError) return;
    formError(`The search failed: ${e.message}`);
    say('The search failed.');
    return;
  }
  ui.resultsPanel.removeAttribute('aria-busy');
  ui.plan.disabled = false;
  state.lastPlan = result;
  window.__timeweaveLast = result;
  state.plans++;
  html.dataset.plans = String(state.plans);
  renderPlan(result, query);
}

// ---------------------------------------------------------------- the address

function writeAddress(q) {
  const p = new URLSearchParams();
  p.set('from', q.from);
  p.set('to', q.to);
  p.set('date', q.date);
  p.set('time', q.time);
  p.set('sf', q.sf);
  for (const k of ['walk', 'speed', 'pen', 'max', 'n']) if (q[k] !== null && q[k] !== undefined) p.set(k, String(q[k]));
  const own = [...state.feeds.values()].some((f) => f.source === 'own');
  p.set('src', own ? 'own' : 'demo');
  history.replaceState(null, '', `#${p.toString()}`);
}

function readAddress() {
  const raw = location.hash.replace(/^#/, '') || location.search.replace(/^\?/, '');
  const p = new URLSearchParams(raw);
  if (!p.get('from') || !p.get('to')) return null;
  const num = (k) => {
    const v = p.get(k);
    if (v === null || v.trim() === '') return null;
    const n = Number(v);
    return Number.isFinite(n) ? n : null;
  };
  const sf = ['off', 'strict', 'lenient'].includes(p.get('sf')) ? p.get('sf') : 'off';
  return {
    from: p.get('from'),
    to: p.get('to'),
    date: /^\d{4}-\d{2}-\d{2}$/.test(p.get('date') || '') ? p.get('date') : null,
    time: /^\d{2}:\d{2}$/.test(p.get('time') || '') ? p.get('time') : null,
    sf,
    walk: num('walk'),
    speed: num('speed'),
    pen: num('pen'),
    max: num('max'),
    n: num('n'),
    src: p.get('src') === 'own' ? 'own' : 'demo',
  };
}

function startFromAddress() {
  const q = readAddress();
  if (!q) return;
  state.pendingQuery = q;
  fillForm(q);
  if (q.src === 'own') {
    say('This link was made with feeds chosen from disk. Load the same GTFS files and the journey is planned.');
  } else if (!state.feeds.size) {
    say('Loading the demo city for the journey in this link…');
    loadDemo();
  }
}

function fillForm(q) {
  if (q.date) ui.date.value = q.date;
  if (q.time) ui.time.value = q.time;
  ui.sf.value = q.sf;
  ui.walk.value = q.walk ?? '';
  ui.speed.value = q.speed ?? '';
  ui.pen.value = q.pen ?? '';
  ui.max.value = q.max ?? '';
  ui.n.value = q.n ?? '';
}

/** A readable label for a stop id from the address (the sketch lists stations, not platforms). */
async function stopLabel(id) {
  try {
    const matches = (await client.searchStops(id, 5)) || [];
    const m = matches.find((x) => scopedId(x) === id || x.id === id);
    if (m) return labelFor(m);
  } catch { /* fall back below */ }
  return state.stopNames.get(id) || id;
}

async function runPendingQuery() {
  const q = state.pendingQuery;
  if (!q) return;
  state.pendingQuery = null;
  const [fromLabel, toLabel] = await Promise.all([stopLabel(q.from), stopLabel(q.to)]);
  fromBox.set(q.from, fromLabel);
  toBox.set(q.to, toLabel);
  fillForm(q);
  if (!q.date) ui.date.value = ui.date.value || todayIso();
  if (!q.time) ui.time.value = ui.time.value || '08:00';
  runPlan({ ...q, date: ui.date.value, time: ui.time.value.slice(0, 5) });
}

window.addEventListener('hashchange', () => {
  const q = readAddress();
  if (!q) return;
  state.pendingQuery = q;
  if (state.feeds.size && !state.running) runPendingQuery();
  else startFromAddress();
});

// ---------------------------------------------------------------- results

const STEP_FREE_WORDS = {
  yes: 'Step-free',
  no: 'Not step-free',
  unknown: 'Step-free not recorded',
};

function stepFreeBadge(status) {
  const s = STEP_FREE_WORDS[status] ? status : 'unknown';
  return el('span', { class: `sf-badge sf-${s}` }, el('span', { class: 'sf-icon', 'aria-hidden': 'true' }), STEP_FREE_WORDS[s]);
}

/** A route's chip: its short name in the feed's colours, or readable fallbacks (WCAG 1.4.3). */
function routeChip(route) {
  const label = route ? route.short_name || route.long_name || route.id || 'route' : 'route';
  const chip = el('span', { class: 'chip', text: label });
  const bg = hexColor(route && route.color);
  if (bg) {
    let fg = hexColor(route.text_color) || '#000000';
    if (contrast(bg, fg) < 4.5) fg = contrast(bg, '#000000') >= contrast(bg, '#ffffff') ? '#000000' : '#ffffff';
    chip.style.backgroundColor = bg;
    chip.style.color = fg;
    chip.classList.add('chip-coloured');
  }
  if (route && route.long_name && route.short_name) chip.title = route.long_name;
  return chip;
}

// Headings for the engine's codes; the sentences themselves come with the result (`text`).
const NOTHING_FOUND_WORDS = {
  no_service_on_date: 'No service on this date',
  outside_feed_dates: 'Date outside the feeds',
  no_step_free_path: 'No step-free path',
  no_connection: 'No connection',
};

function renderPlan(result, query) {
  const journeys = Array.isArray(result.journeys) ? result.journeys : [];
  ui.results.replaceChildren();
  ui.planWarnings.replaceChildren();
  ui.resultsEmpty.hidden = true;
  ui.formError.hidden = true;
  ui.timeKey.hidden = !journeys.length;

  const sfOn = query.step_free && query.step_free !== 'off';
  ui.sfNotes.hidden = !sfOn;
  ui.sfExtra.textContent = '';
  if (sfOn && Number.isFinite(result.step_free_extra_s)) {
    const extra = result.step_free_extra_s;
    ui.sfExtra.textContent = extra > 0
      ? `The step-free journey arrives ${minutes(extra)} later than the standard one.`
      : 'The step-free journey arrives no later than the standard one.';
  }

  const nf = result.nothing_found;
  ui.noJourney.hidden = !nf;
  if (nf) {
    ui.noJourneyMessage.replaceChildren(
      el('strong', { text: `${NOTHING_FOUND_WORDS[nf.code] || 'No journey'}: ` }),
      String(nf.text || 'no journey was found for this query.'),
    );
    const blocked = Array.isArray(nf.blocked_by) ? nf.blocked_by : [];
    ui.noJourneyBlocking.hidden = !blocked.length;
    ui.noJourneyList.replaceChildren(...blocked.map((b) => el('li', { text: String(b.text || '') })));
  }

  journeys.forEach((it, i) => ui.results.append(summaryItem(it, i)));
  for (const n of Array.isArray(result.notes) ? result.notes : []) {
    ui.planWarnings.append(el('li', { text: String(n.text || n.code || '') }));
  }

  // Bring the journeys into view unless their heading already is.
  const top = ui.resultsPanel.getBoundingClientRect().top;
  if (top < 0 || top > window.innerHeight - 120) ui.resultsPanel.scrollIntoView({ block: 'start' });

  if (journeys.length) {
    select(0, false);
    say(`${plural(journeys.length, 'journey', 'journeys')} found. First: ${journeys[0].depart} to ${journeys[0].arrive}.`);
  } else {
    state.selected = -1;
    renderDetail(null);
    redrawSketch();
    say(nf ? `No journey: ${nf.text || NOTHING_FOUND_WORDS[nf.code] || ''}` : 'No journey found.');
  }
}

/**
 * Where a journey's time goes, as a bar of its legs in order: each segment's length is its share
 * of the journey (waiting, a ride, walking). Told apart by pattern as well as shade (solid = on
 * board, stripes = walking, outline = waiting), so colour is never the only cue; the bar is
 * decorative and the same facts are written beside it.
 */
function timeBar(it) {
  const bar = el('span', { class: 'tbar', 'aria-hidden': 'true' });
  const span = Math.max(1, it.duration_s || 0);
  const seg = (kind, seconds, label) => {
    if (!(seconds > 0)) return;
    const s = el('span', { class: `tbar-seg tbar-${kind}`, text: label || '' });
    s.style.flexGrow = String(seconds / span);
    bar.append(s);
  };
  let t = it.depart_s;
  for (const leg of it.legs || []) {
    seg('wait', leg.depart_s - t);
    if (leg.kind === 'ride') seg('ride', leg.duration_s, leg.route ? leg.route.short_name || '' : '');
    else seg('walk', leg.duration_s);
    t = leg.arrive_s;
  }
  seg('wait', it.arrive_s - t);
  return bar;
}

function summaryItem(it, i) {
  const rides = (it.legs || []).filter((l) => l.kind === 'ride');
  const lines = rides.map((l) => (l.route ? l.route.short_name || l.route.long_name || '' : '')).filter(Boolean);
  const btn = el('button', { type: 'button', class: 'sum', 'aria-pressed': 'false', 'data-index': String(i) },
    el('span', { class: 'sum-times' },
      el('span', { class: 'sum-clock', text: `${it.depart} → ${it.arrive}` }),
      el('span', { class: 'sum-dur', text: minutes(it.duration_s) })),
    timeBar(it),
    el('span', { class: 'sum-facts' },
      el('span', { text: rides.length ? `${plural(rides.length, 'ride', 'rides')}: ${lines.join(', ')}` : 'walk only' }),
      el('span', { text: `${minutes(it.ride_s || 0) || '0 min'} on board` }),
      el('span', { text: `${minutes(it.walk_s || 0) || '0 min'} walking` }),
      el('span', { text: `${minutes(it.wait_s || 0) || '0 min'} waiting` }),
      stepFreeBadge(it.step_free)));
  btn.addEventListener('click', () => select(i, true));
  return el('li', {}, btn);
}

function select(i, moveFocus) {
  const itins = (state.lastPlan && state.lastPlan.journeys) || [];
  if (!itins[i]) return;
  state.selected = i;
  for (const b of ui.results.querySelectorAll('button.sum')) {
    b.setAttribute('aria-pressed', b.dataset.index === String(i) ? 'true' : 'false');
  }
  renderDetail(itins[i]);
  redrawSketch();
  if (moveFocus && window.matchMedia('(max-width: 899px)').matches) ui.detailHeading.focus();
}

// ---------------------------------------------------------------- detail

const PATHWAY_WORDS = {
  walkway: 'walkway',
  stairs: 'stairs',
  moving_sidewalk: 'moving walkway',
  escalator: 'escalator',
  elevator: 'lift',
  fare_gate: 'fare gate',
  exit_gate: 'exit gate',
};

// GTFS Schedule reference, routes.txt route_type.
const ROUTE_TYPES = {
  0: 'tram', 1: 'metro', 2: 'rail', 3: 'bus', 4: 'ferry', 5: 'cable tram', 6: 'aerial lift',
  7: 'funicular', 11: 'trolleybus', 12: 'monorail',
};

function modeWord(mode) {
  if (mode === null || mode === undefined) return '';
  if (typeof mode === 'number' || /^\d+$/.test(String(mode))) return ROUTE_TYPES[Number(mode)] || `route type ${mode}`;
  return String(mode).replace(/_/g, ' ');
}

function placeText(p) {
  if (!p) return '';
  let t = p.name || p.stop_id || '';
  if (p.station && p.station !== p.name) t += `, ${p.station}`;
  return t;
}

function platformText(p) {
  return p && p.platform_code ? `platform ${p.platform_code}` : '';
}

function renderDetail(it) {
  const box = ui.detail;
  box.replaceChildren();
  if (!it) {
    const none = state.lastPlan && !(state.lastPlan.journeys || []).length;
    box.append(el('p', { class: 'hint', text: none ? 'No journey to show: see the journeys panel for why.' : 'Choose a journey to see its legs.' }));
    return;
  }
  box.append(el('p', { class: 'detail-sum' },
    el('span', { class: 'detail-clock', text: `${it.depart} → ${it.arrive}` }),
    el('span', { text: `${minutes(it.duration_s)} · ${plural(it.rides ?? 0, 'ride', 'rides')} · ${minutes(it.walk_s || 0) || '0 min'} walking · ${minutes(it.wait_s || 0) || '0 min'} waiting` }),
    ' ', stepFreeBadge(it.step_free)));
  const ol = el('ol', { class: 'legs' });
  for (const leg of it.legs || []) {
    if (leg.wait_before_s > 0) {
      ol.append(el('li', { class: 'leg leg-wait' },
        el('span', { class: 'leg-time', text: '' }),
        el('div', { class: 'leg-body' }, el('p', { text: `Wait ${minutes(leg.wait_before_s)} at ${placeText(leg.start)}${platformText(leg.start) ? `, ${platformText(leg.start)}` : ''}` }))));
    }
    ol.append(legItem(leg));
  }
  box.append(ol);
}

function legItem(leg) {
  const body = el('div', { class: 'leg-body' });
  const li = el('li', { class: `leg leg-${leg.kind}` },
    el('span', { class: 'leg-time' }, el('span', { text: leg.depart }), el('span', { class: 'leg-time-end', text: leg.arrive })),
    body);

  if (leg.kind === 'ride') {
    const head = el('p', { class: 'leg-head' }, routeChip(leg.route), ' ');
    const mode = modeWord(leg.route && leg.route.mode);
    if (mode) head.append(el('span', { class: 'leg-mode', text: mode }), ' ');
    if (leg.headsign) head.append(el('span', { text: `towards ${leg.headsign}` }));
    body.append(head);
    body.append(el('p', {}, el('span', { class: 'leg-label', text: 'Board ' }), placeLine(leg.start, leg.depart)));
    const mids = Array.isArray(leg.calls) ? leg.calls : [];
    if (mids.length) {
      const list = el('ol', { class: 'mids' });
      for (const s of mids) list.append(el('li', {}, el('span', { class: 'mid-time', text: s.depart || s.arrive || '' }), ' ', s.name || s.stop_id));
      body.append(el('details', { class: 'mids-box' }, el('summary', { text: `${plural(mids.length, 'stop', 'stops')} on the way · ${minutes(leg.duration_s)} ride` }), list));
    } else {
      body.append(el('p', { class: 'hint', text: `Non-stop · ${minutes(leg.duration_s)} ride` }));
    }
    body.append(el('p', {}, el('span', { class: 'leg-label', text: 'Leave at ' }), placeLine(leg.end, leg.arrive)));
    if (leg.frequency_based) body.append(el('p', { class: 'hint', text: 'This service runs at a fixed headway; times are estimated from it.' }));
  } else {
    const verb = leg.kind === 'in_station' ? 'Change on foot' : 'Walk';
    const dist = Number.isFinite(leg.distance_m) ? `${Math.round(leg.distance_m)} m, ` : '';
    body.append(el('p', { class: 'leg-head' }, el('span', { class: 'walk-word', text: verb }), ` ${dist}${minutes(leg.duration_s)}`));
    body.append(el('p', {}, el('span', { class: 'leg-label', text: 'From ' }), placeLine(leg.start)));
    body.append(el('p', {}, el('span', { class: 'leg-label', text: 'To ' }), placeLine(leg.end)));
    const path = Array.isArray(leg.pathways) ? leg.pathways : [];
    if (path.length) {
      const list = el('ol', { class: 'path' });
      for (const step of path) {
        const words = PATHWAY_WORDS[step.pathway_mode] || modeWord(step.pathway_mode) || 'pathway';
        const ends = [step.from, step.to].filter(Boolean).join(' → ');
        list.append(el('li', {}, el('span', { class: `pw pw-${PATHWAY_WORDS[step.pathway_mode] ? step.pathway_mode : 'other'}`, text: words }), ends ? ` ${ends}` : ''));
      }
      body.append(el('details', { class: 'path-box', open: true }, el('summary', { text: `Route inside the station: ${plural(path.length, 'step', 'steps')}` }), list));
    }
  }

  const sf = leg.step_free || {};
  const sfLine = el('div', { class: 'leg-sf' }, stepFreeBadge(sf.status));
  const checks = Array.isArray(sf.checks) ? sf.checks : [];
  if (checks.length) {
    // Checks that stand in the way of a step-free journey are marked in words, not only coloured.
    sfLine.append(el('ul', { class: 'sf-reasons' }, ...checks.map((c) => (c.verdict !== 'yes'
      ? el('li', { class: 'sf-problem' }, el('strong', { text: c.verdict === 'no' ? 'Barrier: ' : 'Not recorded: ' }), String(c.text || ''))
      : el('li', { text: String(c.text || '') })))));
  }
  body.append(sfLine);
  return li;
}

function placeLine(p, time) {
  const span = el('span', { class: 'place' }, el('span', { class: 'place-name', text: placeText(p) }));
  const plat = platformText(p);
  if (plat) span.append(' ', el('span', { class: 'platform', text: plat }));
  if (time) span.append(el('span', { class: 'sr-only', text: ` at ${time}` }));
  return span;
}

// ---------------------------------------------------------------- the workbench's views

// The other views are modules of their own, loaded when first shown: the page starts with the
// modules the journeys need and no more requests at once.
const views = {
  journeys: { tab: $('tab-journeys'), panel: $('main'), view: null },
  window: {
    tab: $('tab-window'),
    panel: $('view-window'),
    load: async () => (await import('./views/window.js')).initWindowView({ client, getSketch: () => state.sketch, say }),
  },
  matrix: {
    tab: $('tab-matrix'),
    panel: $('view-matrix'),
    load: async () => (await import('./views/matrix.js')).initMatrixView({ client, say }),
  },
  interchange: {
    tab: $('tab-interchange'),
    panel: $('view-interchange'),
    load: async () => (await import('./views/interchange.js')).initInterchangeView({ client, getSketch: () => state.sketch, say }),
  },
  stepfree: {
    tab: $('tab-stepfree'),
    panel: $('view-stepfree'),
    load: async () => (await import('./views/stepfree.js')).initStepFreeView({ client, getSketch: () => state.sketch, say }),
  },
  compare: {
    tab: $('tab-compare'),
    panel: $('view-compare'),
    load: async () => (await import('./views/compare.js')).initCompareView({ client, getSketch: () => state.sketch, say }),
  },
};

async function showView(name, focus) {
  for (const [k, v] of Object.entries(views)) {
    const on = k === name;
    v.tab.setAttribute('aria-selected', String(on));
    v.tab.tabIndex = on ? 0 : -1;
    v.panel.hidden = !on;
  }
  if (focus) views[name].tab.focus();
  // The timetables panel lives in the journeys view; the other views use what it loaded.
  const v = views[name];
  if (v.load && !v.view) v.view = v.load();
  if (v.view) (await v.view).show(ui.date.value);
  html.dataset.view = name;
}

const order = Object.keys(views);
for (const [name, v] of Object.entries(views)) {
  v.tab.addEventListener('click', () => showView(name));
  v.tab.addEventListener('keydown', (e) => {
    const i = order.indexOf(name);
    const to = e.key === 'ArrowRight' ? order[(i + 1) % order.length] : e.key === 'ArrowLeft' ? order[(i + order.length - 1) % order.length] : null;
    if (to) {
      e.preventDefault();
      showView(to, true);
    }
  });
}
