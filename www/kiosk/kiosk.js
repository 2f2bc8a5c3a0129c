// The kiosk screen: loads the folder's snapshot into the WASM engine once, then redraws the board
// from the device clock every REFRESH_MS. No input is needed; a touch on a destination shows its
// journeys, and the board comes back by itself after IDLE_MS without a touch. Every failure is
// said on screen: the board is never left blank and never shows times the timetable does not cover.
import init, { Engine } from './pkg/timeweave.js';

/** Redraw period, ms: at least every 30 s, so a departure never shows more than half a minute stale. */
const REFRESH_MS = 20000;
/** Back to the board after this long without a touch, ms. */
const IDLE_MS = 60000;
/** How often the screen asks the server for a newer kiosk folder (when there is a network), ms. */
const UPDATE_MS = 3600000;

const el = (id) => document.getElementById(id);
const state = { engine: null, config: null, board: null, open: null, idle: null };

function node(tag, attrs = {}, ...kids) {
  const n = document.createElement(tag);
  for (const [k, v] of Object.entries(attrs)) {
    if (k === 'class') n.className = v;
    else if (k === 'style') n.style.cssText = v;
    else n.setAttribute(k, v);
  }
  for (const k of kids.flat()) if (k !== null && k !== undefined && k !== false) n.append(k.nodeType ? k : String(k));
  return n;
}

function say(text) {
  const a = el('alert');
  a.textContent = text || '';
  a.hidden = !text;
}

function fatal(text) {
  document.documentElement.dataset.kiosk = 'failed';
  say(`This screen cannot show departures: ${text}`);
  el('departures').hidden = true;
  el('journeys-section').hidden = true;
  const p = el('no-departures');
  p.hidden = false;
  p.className = 'fatal';
  p.textContent = 'Staff: write the kiosk folder again with `timeweave kiosk` and copy it whole.';
}

const STEP_FREE = { yes: 'step-free', no: 'not step-free', unknown: 'step-free not stated' };

function minutes(n) {
  return n === 0 ? 'now' : `in ${n} min`;
}

function departureCell(line) {
  return node('div', { class: 'deps' }, line.departures.map((d) => node('span', { class: 'dep' },
    node('strong', {}, d.time), ' ', node('span', { class: 'in' }, minutes(d.in_min)),
    node('span', { class: 'mark' }, [d.platform ? `platform ${d.platform}` : null, STEP_FREE[d.step_free]].filter(Boolean).join(', ')))));
}

function drawDepartures(b) {
  const body = el('departures').querySelector('tbody');
  body.replaceChildren(...b.lines.map((l) => node('tr', { 'data-route': l.route_id },
    node('td', { class: 'line' }, node('span', { class: 'swatch', style: `background:${l.color}`, 'aria-hidden': 'true' }), l.name),
    node('td', {}, l.headsign),
    node('td', { class: 'times' }, departureCell(l)))));
  el('no-departures').hidden = b.lines.length > 0 || b.coverage !== 'covered';
}

function span(it) {
  return `${it.depart} → ${it.arrive} (${Math.ceil(it.duration_s / 60)} min, ${it.rides} ${it.rides === 1 ? 'ride' : 'rides'})`;
}

/** The same, shorter, for the idle screen: times and minutes, the rides beneath. */
function brief(it, after = '') {
  return [`${it.depart} → ${it.arrive}`, node('span', { class: 'more' }, ` ${Math.ceil(it.duration_s / 60)} min, ${it.rides} ${it.rides === 1 ? 'ride' : 'rides'}${after}`)];
}

function extra(d) {
  if (d.step_free_extra_s === null || d.step_free_extra_s === undefined) return '';
  const m = Math.round(d.step_free_extra_s / 60);
  return m === 0 ? ', same arrival' : `, arrives ${m > 0 ? `${m} min later` : `${-m} min sooner`}`;
}

function drawDestinations(b) {
  el('journeys-section').hidden = b.destinations.length === 0;
  el('destinations').replaceChildren(...b.destinations.map((d) => {
    const btn = node('button', { class: 'dest', type: 'button', 'data-stop': d.stop_id },
      node('span', { class: 'to' }, `To ${d.name}`),
      node('span', { class: 'row' }, node('span', { class: 'label' }, 'Next'), d.standard[0] ? brief(d.standard[0]) : 'no journey found'),
      node('span', { class: 'row' }, node('span', { class: 'label' }, 'Step-free'),
        d.step_free[0] ? brief(d.step_free[0], extra(d)) : 'none the data confirms'));
    btn.addEventListener('click', () => openDetail(d.stop_id));
    return node('li', {}, btn);
  }));
}

function legText(l) {
  const at = l.start.platform_code ? ` (platform ${l.start.platform_code})` : '';
  if (l.kind === 'ride') {
    const r = l.route ? (l.route.short_name || l.route.long_name) : '';
    return `${l.depart} ${r}${l.headsign ? ` towards ${l.headsign}` : ''} from ${l.start.name}${at}; get off at ${l.end.name}, ${l.arrive}`;
  }
  const what = l.kind === 'walk' ? 'Walk' : 'Walk inside the station';
  return `${what} ${Math.ceil(l.duration_s / 60)} min to ${l.end.name}`;
}

function journeyList(title, its, none) {
  const it = its[0];
  return node('section', {}, node('h3', {}, title),
    it ? node('p', {}, span(it)) : node('p', {}, none),
    it ? node('ol', {}, it.legs.map((l) => node('li', {}, legText(l)))) : null);
}

function drawDetail() {
  const d = state.board && state.board.destinations.find((x) => x.stop_id === state.open);
  if (!d) return showBoard();
  el('detail-heading').textContent = `To ${d.name}`;
  el('detail-body').replaceChildren(node('div', { class: 'legs' },
    journeyList('Next journey', d.standard, 'No journey found.'),
    journeyList(`Step-free journey${extra(d)}`, d.step_free, 'None that the timetable data confirms as step-free.')));
}

function openDetail(stop) {
  state.open = stop;
  drawDetail();
  el('idle').hidden = true;
  el('detail').hidden = false;
  document.documentElement.dataset.view = 'detail';
  el('back').focus();
  touched();
}

function showBoard() {
  state.open = null;
  el('detail').hidden = true;
  el('idle').hidden = false;
  document.documentElement.dataset.view = 'board';
  clearTimeout(state.idle);
}

function touched() {
  clearTimeout(state.idle);
  if (state.open) state.idle = setTimeout(showBoard, IDLE_MS);
}

function coverage(b) {
  const left = Math.round((Date.parse(b.last_date) - Date.parse(b.today)) / 86400000);
  const soon = b.coverage === 'covered' && left <= 2
    ? ` It ends ${left === 0 ? 'today' : left === 1 ? 'tomorrow' : `in ${left} days`}: staff, please load a newer one.` : '';
  el('coverage').textContent = `Timetable on this screen: ${b.first_date} to ${b.last_date} (${b.timezone} time).${soon}`;
  document.documentElement.dataset.endsSoon = soon ? 'yes' : 'no';
  document.documentElement.dataset.coverage = b.coverage;
  if (b.coverage === 'run_out') {
    say(`The timetable on this screen ended on ${b.last_date}. No departure times are shown; please check with staff or the operator.`);
  } else if (b.coverage === 'not_yet') {
    say(`The timetable on this screen starts on ${b.first_date}. No departure times are shown yet.`);
  } else {
    say('');
  }
}

function draw() {
  const { engine, config } = state;
  let b;
  try {
    b = engine.board(config.stop, config.destinations, Date.now());
  } catch (e) {
    fatal(e.message || String(e));
    return;
  }
  state.board = b;
  el('clock').textContent = b.now;
  el('today').textContent = b.today;
  coverage(b);
  drawDepartures(b);
  drawDestinations(b);
  if (state.open) drawDetail();
  document.documentElement.dataset.drawn = String(Number(document.documentElement.dataset.drawn || 0) + 1);
}

/**
 * The service worker serves this folder offline. A new folder written over the old one on the
 * server (a newer timetable) is found by the worker's update check, hourly and at each start; once
 * the new worker has taken over, the screen reloads itself so it shows the new timetable. No
 * network: the checks fail quietly and the cached folder goes on.
 */
function watchForUpdates() {
  if (!('serviceWorker' in navigator)) return;
  // The first worker taking over a page it did not serve changes nothing on screen; any later one
  // brings a new folder.
  let controlled = Boolean(navigator.serviceWorker.controller);
  navigator.serviceWorker.addEventListener('controllerchange', () => {
    if (controlled) location.reload();
    controlled = true;
  });
  navigator.serviceWorker.register('sw.js').then((reg) => {
    if (reg) setInterval(() => reg.update().catch(() => {}), UPDATE_MS);
  }).catch(() => {});
}

async function fetchOk(url) {
  const r = await fetch(url);
  if (!r.ok) throw new Error(`${url}: the server answered ${r.status}`);
  return r;
}

async function start() {
  watchForUpdates();
  el('back').addEventListener('click', showBoard);
  for (const ev of ['pointerdown', 'keydown']) document.addEventListener(ev, touched);
  const times = {};
  try {
    state.config = await (await fetchOk('kiosk.json')).json();
  } catch (e) {
    fatal(`its settings (kiosk.json) cannot be read (${e.message}).`);
    return;
  }
  el('title').textContent = state.config.title;
  document.title = `${state.config.title}: departures`;
  try {
    let t = performance.now();
    const [bytes] = await Promise.all([fetchOk(state.config.snapshot).then((r) => r.arrayBuffer()), init()]);
    times.fetch_and_init_ms = performance.now() - t;
    t = performance.now();
    state.engine = new Engine();
    state.engine.load_snapshot(new Uint8Array(bytes));
    times.load_ms = performance.now() - t;
  } catch (e) {
    fatal(`its timetable file cannot be used: ${e.message || e}`);
    return;
  }
  const t = performance.now();
  draw();
  times.first_board_ms = performance.now() - t;
  window.kioskTimes = times;
  if (document.documentElement.dataset.kiosk !== 'failed') document.documentElement.dataset.kiosk = 'ready';
  setInterval(draw, REFRESH_MS);
}

start();
