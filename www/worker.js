// The engine's home: a module Worker that owns the one WASM `Engine` instance, so parsing a feed or
// planning never blocks the page. The page talks to it only through engine-client.js.
//
// Protocol (structured-clone messages):
//   page → worker  { id, op, args }            op: load | remove | feeds | search | resolve | plan | sketch
//                                               | reach_window | pair_profile | places | matrix_setup | matrix_origin
//                                               | table_begin | table_add | table_finish
//                                               | interchange | interchange_pair | interchange_csv | connection_journey
//                                               | stepfree | stepfree_csv | accessibility_elements
//                                               | after_load | after_clear | compare | compare_csv
//   worker → page  { type: 'ready' }           once the WASM module is instantiated
//                  { type: 'init-failed', error }
//                  { type: 'progress', id, stage, fraction }   during `load`, `interchange`, `stepfree` and `compare`
//                  { type: 'result', id, ok: true, value }
//                  { type: 'result', id, ok: false, error, fatal }
// `error` is a plain object: a FeedIssue { file, line, field, value, message } when the engine
// threw one (a query error adds its detail: AmbiguousStop { text, candidates } or UnknownStop
// { text, suggestions }), else { message, name }. `fatal` is true when the WASM instance itself trapped (a
// Rust panic or out-of-memory); the page then replaces this worker and reloads its feeds.
// Every engine call is synchronous, so requests are answered strictly in order.

import init, { Engine } from './pkg/timeweave.js';

let engine = null;

const ready = init().then(
  () => {
    engine = new Engine();
    self.postMessage({ type: 'ready' });
  },
  (e) => {
    self.postMessage({ type: 'init-failed', error: describe(e) });
  },
);

self.onmessage = async (event) => {
  await ready;
  const { id, op, args } = event.data;
  try {
    if (!engine) throw new Error('the engine did not start');
    const value = plain(run(op, args || {}, id));
    self.postMessage({ type: 'result', id, ok: true, value });
  } catch (e) {
    const fatal = e instanceof WebAssembly.RuntimeError;
    self.postMessage({ type: 'result', id, ok: false, error: describe(e), fatal });
  }
};

function run(op, args, id) {
  switch (op) {
    case 'load': {
      let lastStage = '';
      let lastPost = 0;
      const progress = (stage, fraction) => {
        // Throttle the stream of progress calls, but always pass on a new stage.
        const now = performance.now();
        if (stage === lastStage && now - lastPost < 50) return;
        lastStage = stage;
        lastPost = now;
        self.postMessage({ type: 'progress', id, stage: String(stage), fraction: Number(fraction) });
      };
      const bytes = args.bytes instanceof Uint8Array ? args.bytes : new Uint8Array(args.bytes);
      return engine.load_feed(args.name, bytes, progress);
    }
    case 'remove':
      return engine.remove_feed(args.name);
    case 'feeds':
      return engine.feeds();
    case 'search':
      return engine.search_stops(args.text, args.limit);
    case 'resolve':
      return engine.resolve_stop(args.text);
    case 'plan':
      return engine.plan(args.query);
    case 'sketch':
      return engine.sketch();
    case 'reach_window':
      return engine.reach_window(args.from, args.query);
    case 'pair_profile':
      return engine.pair_profile(args.from, args.to, args.query);
    case 'places':
      return engine.places();
    case 'matrix_setup':
      return engine.matrix_setup(args.query, args.destinations ?? undefined, args.weights ?? undefined);
    case 'matrix_origin':
      return engine.matrix_origin(args.origin);
    case 'table_begin':
      return engine.table_begin(args.format, new Float64Array(args.percentiles));
    case 'table_add': {
      const r = args.rows;
      return engine.table_add(args.origin, r.to, r.min_s, r.percentiles_s, r.share_within_cutoff, r.departures_reached);
    }
    case 'table_finish':
      return engine.table_finish();
    case 'interchange': {
      const progress = counted(id, 'stations');
      return engine.interchange(args.query, progress);
    }
    case 'interchange_pair':
      return engine.interchange_pair(args.arr_route_id, args.arr_direction, args.dep_route_id, args.dep_direction);
    case 'interchange_csv':
      return engine.interchange_csv(args.query, args.table);
    case 'stepfree': {
      const progress = counted(id, 'origins');
      const alerts = args.alerts ? new Uint8Array(args.alerts) : undefined;
      return engine.stepfree(args.query, alerts, progress);
    }
    case 'stepfree_csv':
      return engine.stepfree_csv(args.table);
    case 'after_load': {
      const bytes = args.bytes instanceof Uint8Array ? args.bytes : new Uint8Array(args.bytes);
      return engine.after_load(args.name, bytes);
    }
    case 'after_clear':
      return engine.after_clear();
    case 'compare': {
      const progress = counted(id, 'origins');
      return engine.compare(args.query, progress);
    }
    case 'compare_csv':
      return engine.compare_csv(args.table);
    case 'accessibility_elements':
      return engine.accessibility_elements();
    case 'connection_journey':
      return engine.connection_journey(args.date, args.arr_event, args.dep_event);
    default:
      throw new Error(`unknown request "${op}"`);
  }
}

/** A progress callback for counted work ("12 of 40 stations"), posting at most every 50 ms. */
function counted(id, unit) {
  let lastPost = 0;
  return (done, total) => {
    const now = performance.now();
    if (done < total && now - lastPost < 50) return;
    lastPost = now;
    self.postMessage({ type: 'progress', id, stage: `${done} of ${total} ${unit}`, fraction: total ? done / total : 0 });
  };
}

/** Turns Maps into plain objects and BigInts into numbers, so the page reads one shape. */
function plain(v) {
  if (v === null || v === undefined) return null;
  if (typeof v === 'bigint') return Number(v);
  if (v instanceof Map) {
    const o = {};
    for (const [k, x] of v) o[String(k)] = plain(x);
    return o;
  }
  if (Array.isArray(v)) return v.map(plain);
  if (ArrayBuffer.isView(v)) return v;
  if (typeof v === 'object') {
    const o = {};
    for (const k of Object.keys(v)) o[k] = plain(v[k]);
    return o;
  }
  return v;
}

/** Reduces whatever the engine threw to a FeedIssue-like plain object. */
function describe(e) {
  if (e instanceof Error) {
    return { message: e.message || String(e), name: e.name || 'Error' };
  }
  if (typeof e === 'string') {
    try {
      const parsed = JSON.parse(e);
      if (parsed && typeof parsed === 'object') return issue(parsed);
    } catch { /* not JSON: a plain message */ }
    return { message: e };
  }
  if (e && typeof e === 'object') return issue(plain(e));
  return { message: String(e) };
}

function issue(o) {
  const pick = (k) => (o[k] === undefined ? null : o[k]);
  const out = {
    file: pick('file'),
    line: pick('line'),
    field: pick('field'),
    value: pick('value'),
    message: o.message != null ? String(o.message) : JSON.stringify(o),
  };
  // A query error's typed detail (AmbiguousStop, UnknownStop, …) travels with it.
  for (const k of ['AmbiguousStop', 'UnknownStop']) if (o[k] !== undefined) out[k] = o[k];
  return out;
}
