// Page side of the worker protocol (see worker.js for the message shapes).
//
// The client owns the worker's lifetime and the bytes of every feed that loaded successfully, in
// load order. That is what makes cancelling possible at all: engine calls are synchronous inside
// the worker, so the only way to stop a long load is to terminate the worker; a fresh worker is
// then started and the kept feeds are loaded into it again. The same path recovers from a WASM
// trap, so nothing already loaded is lost.

/** Rejection reason for requests cut short by `cancel()`. */
export class CancelledError extends Error {
  constructor() {
    super('cancelled');
    this.name = 'CancelledError';
  }
}

/** Rejection reason for an error the engine reported; `issue` is a FeedIssue-like object. */
export class EngineError extends Error {
  constructor(issue) {
    super(issue && issue.message ? issue.message : 'the engine reported an error');
    this.name = 'EngineError';
    this.issue = issue || { message: this.message };
  }
}

export class EngineClient {
  /**
   * @param {object} hooks
   * @param {(phase: 'restoring'|'restored', detail: {names: string[], failed?: object[]}) => void} [hooks.onRestart]
   *        told when a replacement worker reloads the kept feeds (after cancel or a trap)
   */
  constructor(hooks = {}) {
    this.hooks = hooks;
    this.worker = null;
    this.pending = new Map();
    this.nextId = 1;
    /** @type {{name: string, bytes: Uint8Array, report: object}[]} */
    this.kept = [];
    this.started = null;
  }

  /** Starts a worker; resolves once its WASM module is ready. */
  start() {
    const worker = new Worker(new URL('./worker.js', import.meta.url), { type: 'module', name: 'timeweave-engine' });
    this.worker = worker;
    this.started = new Promise((resolve, reject) => {
      worker.onmessage = (event) => {
        const msg = event.data;
        if (msg.type === 'ready') resolve();
        else if (msg.type === 'init-failed') reject(new EngineError(msg.error));
        else this.#dispatch(msg);
      };
      worker.onerror = (event) => {
        event.preventDefault();
        const err = new EngineError({ message: `the engine worker failed: ${event.message || 'could not load the engine script'}` });
        reject(err);
        this.#failAll(err);
      };
    });
    return this.started;
  }

  #dispatch(msg) {
    const p = this.pending.get(msg.id);
    if (!p) return;
    if (msg.type === 'progress') {
      if (p.onProgress) p.onProgress(msg.stage, msg.fraction);
      return;
    }
    this.pending.delete(msg.id);
    if (msg.ok) {
      p.resolve(msg.value);
    } else {
      p.reject(new EngineError(msg.error));
      if (msg.fatal) this.#recover();
    }
  }

  #failAll(err) {
    for (const p of this.pending.values()) p.reject(err);
    this.pending.clear();
  }

  #call(op, args, onProgress, transfer = []) {
    return this.started.then(
      () =>
        new Promise((resolve, reject) => {
          const id = this.nextId++;
          this.pending.set(id, { resolve, reject, onProgress });
          this.worker.postMessage({ id, op, args }, transfer);
        }),
    );
  }

  /** Names of the feeds loaded, in load order. */
  get feedNames() {
    return this.kept.map((k) => k.name);
  }

  /**
   * Loads one feed. The bytes are copied to the worker, and kept here once the load succeeded.
   * Rejects with EngineError (carrying the FeedIssue) or CancelledError.
   */
  async loadFeed(name, bytes, onProgress) {
    const report = await this.#call('load', { name, bytes }, onProgress);
    this.kept.push({ name, bytes, report });
    return report;
  }

  async removeFeed(name) {
    const removed = await this.#call('remove', { name });
    this.kept = this.kept.filter((k) => k.name !== name);
    return removed;
  }

  feeds() { return this.#call('feeds', {}); }
  searchStops(text, limit) { return this.#call('search', { text, limit }); }
  /** The one stop `text` names; rejects with EngineError (issue.AmbiguousStop / issue.UnknownStop) otherwise. */
  resolveStop(text) { return this.#call('resolve', { text }); }
  plan(query) { return this.#call('plan', { query }); }
  sketch() { return this.#call('sketch', {}); }
  /** Reach over a window: `query` holds WindowQuery fields (DEVELOPERS.md). */
  reachWindow(from, query) { return this.#call('reach_window', { from, query }); }
  pairProfile(from, to, query) { return this.#call('pair_profile', { from, to, query }); }
  places() { return this.#call('places', {}); }
  matrixSetup(query, destinations, weights) { return this.#call('matrix_setup', { query, destinations, weights }); }
  matrixOrigin(origin) { return this.#call('matrix_origin', { origin }); }
  tableBegin(format, percentiles) { return this.#call('table_begin', { format, percentiles }); }
  tableAdd(origin, rows) { return this.#call('table_add', { origin, rows }); }
  tableFinish() { return this.#call('table_finish', {}); }
  /** The interchange audit (InterchangeQuery fields); `onProgress(stage, fraction)` per station. */
  interchange(query, onProgress) { return this.#call('interchange', { query }, onProgress); }
  /** The rows of one route pair of the last one-station audit. */
  interchangePair(p) { return this.#call('interchange_pair', { arr_route_id: p.arr_route_id, arr_direction: p.arr_direction, dep_route_id: p.dep_route_id, dep_direction: p.dep_direction }); }
  /** One table of the audit as CSV bytes: 'rows', 'pairs' or 'stations'. */
  interchangeCsv(query, table) { return this.#call('interchange_csv', { query, table }); }
  /** The step-free audit (StepFreeQuery fields; `alerts`: bytes of a GTFS-Realtime file or null). */
  stepfree(query, alerts, onProgress) { return this.#call('stepfree', { query, alerts }, onProgress); }
  /** One file of the last step-free audit as CSV bytes: 'pairs', 'elements', 'completeness' or 'outages'. */
  stepfreeCsv(table) { return this.#call('stepfree_csv', { table }); }
  accessibilityElements() { return this.#call('accessibility_elements', {}); }
  /** The version after of a comparison: a feed loaded beside the others, never merged. */
  afterLoad(name, bytes) { return this.#call('after_load', { name, bytes }); }
  afterClear() { return this.#call('after_clear', {}); }
  /** Compares the loaded feeds (before) with the version after (CompareQuery fields). */
  compare(query, onProgress) { return this.#call('compare', { query }, onProgress); }
  /** One file of the last comparison as CSV bytes: 'pairs', 'stations', 'routes' or 'connections'. */
  compareCsv(table) { return this.#call('compare_csv', { table }); }
  connectionJourney(date, arrEvent, depEvent) { return this.#call('connection_journey', { date, arr_event: arrEvent, dep_event: depEvent }); }

  /** A second engine in its own worker with the same feeds (for work spread over cores). */
  async twin() {
    const c = new EngineClient();
    await c.start();
    for (const k of this.kept) await c.loadFeed(k.name, k.bytes);
    return c;
  }

  /** Stops the worker for good (a twin that is no longer needed). */
  dispose() {
    if (this.worker) this.worker.terminate();
    this.#failAll(new CancelledError());
    this.worker = null;
  }

  /**
   * Stops whatever the engine is doing: terminates the worker, rejects every open request with
   * CancelledError, starts a new worker and reloads the kept feeds into it.
   * @param {(name: string, stage: string, fraction: number) => void} [onProgress]
   */
  async cancel(onProgress) {
    await this.#replace(new CancelledError(), onProgress);
  }

  async #recover() {
    try {
      await this.#replace(new EngineError({ message: 'the engine stopped unexpectedly and was restarted' }));
    } catch (e) {
      console.error(e);
    }
  }

  async #replace(reason, onProgress) {
    if (this.worker) this.worker.terminate();
    this.#failAll(reason);
    const keep = this.kept;
    this.kept = [];
    if (this.hooks.onRestart) this.hooks.onRestart('restoring', { names: keep.map((k) => k.name) });
    await this.start();
    const failed = [];
    for (const k of keep) {
      try {
        await this.loadFeed(k.name, k.bytes, onProgress ? (s, f) => onProgress(k.name, s, f) : undefined);
      } catch (e) {
        // It loaded before, so this should not happen; report it rather than drop it silently.
        failed.push({ name: k.name, message: e.message });
      }
    }
    if (this.hooks.onRestart) this.hooks.onRestart('restored', { names: this.feedNames, failed });
  }
}
