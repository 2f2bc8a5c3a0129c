// Browser bench (issue 4): the real WASM build in real headless Debian Chromium, on a generated
// metro-size feed served by the real `timeweave serve --feed`.
//
// Measures zip → routable (fetch, `load_feed`, first `plan`, which builds the date's graph), memory
// (the WASM memory's size, `engine.memory_bytes()`, `performance.memory`,
// `performance.measureUserAgentSpecificMemory()` when it answers, and the peak RSS / PSS of the
// browser's processes read from /proc while the feed loads and while queries run), then the
// latency of `engine.plan` (standard next 1, next 3, step-free strict next 1) and
// `engine.reach` (one-to-all, 240 min) over the same random queries as the native bench
// (`bench-out/<feed>.queries.tsv`, written by `cargo bench --bench queries`), or, when that file is
// missing, over queries drawn here (fixed seed) between stops that appear in stop_times.txt.
//
// The engine runs on the bench page's main thread (the product runs it in a worker; the engine
// code is the same). The page is an empty document on the server's origin, answered by the test
// with COOP/COEP headers so that it is cross-origin isolated: that gives
// measureUserAgentSpecificMemory and 5 µs timer resolution. Everything else (module, WASM, feed)
// comes from the real server.
//
// Not a `*.test.mjs` file: the test command does not run it. Run: node tests/browser/bench/bench.mjs
// Environment: TIMEWEAVE_BENCH_FEED (default bench-out/metro-1.zip), TIMEWEAVE_BENCH_QUERIES
// (default 1000), TIMEWEAVE_BENCH_DATE (default 2026-12-02), TIMEWEAVE_BENCH_KINDS (comma-separated
// subset of plan1,plan3,strict,reach,reach_minutes,interchange,stepfree,snapshot; default all), TIMEWEAVE_BIN.
// `stepfree`: the step-free audit of a 500-pair sample, 07:00–08:00 (the page's view, one thread),
// three runs.
// `snapshot`: the same feed's snapshot (`timeweave snapshot`, 7 days from the date) fetched and
// loaded five times into a fresh engine, then a first plan and a kiosk board; the zip load above
// is the baseline in the same run.
// `interchange`: the audit of each station, 07:00–09:00, one at a time (what the page's
// Connections view runs for one station), after one audit of all stations to list them.

import { spawn, execFileSync } from 'node:child_process';
import { createServer } from 'node:net';
import fs from 'node:fs';
import path from 'node:path';
import zlib from 'node:zlib';
import { REPO, BIN, launchBrowser } from '../harness.mjs';

const FEED = path.resolve(REPO, process.env.TIMEWEAVE_BENCH_FEED || 'bench-out/metro-1.zip');
const N = Math.max(1, Number(process.env.TIMEWEAVE_BENCH_QUERIES || 1000));
const DATE = process.env.TIMEWEAVE_BENCH_DATE || '2026-12-02';
const OUT_DIR = path.join(REPO, 'bench-out');
const LIMIT_MIN = 240;
const KINDS = (process.env.TIMEWEAVE_BENCH_KINDS || 'plan1,plan3,strict,reach,reach_minutes,interchange,stepfree,snapshot').split(',');
const SNAPSHOT = path.join(OUT_DIR, `${path.basename(FEED, '.zip')}.twsnap`);

// ------------------------------------------------------------------ server and processes

function freePort() {
  return new Promise((resolve, reject) => {
    const srv = createServer();
    srv.on('error', reject);
    srv.listen(0, '127.0.0.1', () => {
      const { port } = srv.address();
      srv.close(() => resolve(port));
    });
  });
}

/** `timeweave serve --port <free> --feed FEED`; resolves once it prints the address. */
async function startServer() {
  const port = await freePort();
  const extra = fs.existsSync(SNAPSHOT) ? ['--feed', SNAPSHOT] : [];
  const child = spawn(BIN, ['serve', '--port', String(port), '--feed', FEED, ...extra], { cwd: REPO, stdio: ['ignore', 'pipe', 'pipe'] });
  let out = '';
  const url = await new Promise((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`server did not report listening within 20 s:\n${out}`)), 20000);
    child.stdout.on('data', (c) => {
      out += c;
      const m = /timeweave: serving .* at (http:\/\/127\.0\.0\.1:\d+\/)/.exec(out);
      if (m) {
        clearTimeout(timer);
        resolve(m[1]);
      }
    });
    child.stderr.on('data', (c) => { out += c; });
    child.on('exit', (code) => {
      clearTimeout(timer);
      reject(new Error(`server exited with ${code}:\n${out}`));
    });
  });
  return {
    url,
    origin: new URL(url).origin,
    stop: () => new Promise((resolve) => {
      if (child.exitCode !== null) return resolve();
      child.once('exit', resolve);
      child.kill('SIGTERM');
    }),
  };
}

/** Pids of all descendants of `root` (the browser's processes, started by this node process). */
function descendants(root) {
  const parent = new Map();
  for (const name of fs.readdirSync('/proc')) {
    if (!/^\d+$/.test(name)) continue;
    try {
      const stat = fs.readFileSync(`/proc/${name}/stat`, 'utf8');
      // Field 4 (ppid) follows the parenthesised command, which may contain spaces.
      const ppid = Number(stat.slice(stat.lastIndexOf(')') + 2).split(' ')[1]);
      parent.set(Number(name), ppid);
    } catch { /* gone */ }
  }
  const out = [];
  for (const [pid] of parent) {
    for (let p = parent.get(pid), guard = 0; p && guard < 64; p = parent.get(p), guard++) {
      if (p === root) {
        out.push(pid);
        break;
      }
    }
  }
  return out;
}

function kb(text, key) {
  const m = new RegExp(`^${key}:\\s+(\\d+) kB`, 'm').exec(text);
  return m ? Number(m[1]) * 1024 : 0;
}

/** RSS, PSS and peak RSS (VmHWM) of every browser process, plus which one is the renderer. */
function browserMemory() {
  let rss = 0;
  let pss = 0;
  let hwmSum = 0;
  let renderer = { hwm: 0, rss: 0 };
  for (const pid of descendants(process.pid)) {
    try {
      const cmd = fs.readFileSync(`/proc/${pid}/cmdline`, 'utf8');
      if (!cmd.includes('chrom')) continue;
      const status = fs.readFileSync(`/proc/${pid}/status`, 'utf8');
      const r = kb(status, 'VmRSS');
      const h = kb(status, 'VmHWM');
      rss += r;
      hwmSum += h;
      try {
        pss += kb(fs.readFileSync(`/proc/${pid}/smaps_rollup`, 'utf8'), 'Pss');
      } catch { pss += r; }
      if (cmd.includes('--type=renderer') && !cmd.includes('--top-chrome-webui') && h > renderer.hwm) renderer = { hwm: h, rss: r };
    } catch { /* gone */ }
  }
  return { rss, pss, hwmSum, renderer };
}

/** Samples browserMemory every `ms` until stopped; keeps the peaks. */
function sampler(ms = 100) {
  const peak = { rss: 0, pss: 0, samples: 0 };
  const tick = () => {
    const m = browserMemory();
    peak.rss = Math.max(peak.rss, m.rss);
    peak.pss = Math.max(peak.pss, m.pss);
    peak.samples++;
  };
  tick();
  const timer = setInterval(tick, ms);
  return { stop: () => { clearInterval(timer); tick(); return peak; } };
}

// ------------------------------------------------------------------ queries

/** Entries of a zip archive (PKWARE APPNOTE.TXT §4.3: end record → central directory → data). */
function unzipEntry(buf, wanted) {
  let eocd = buf.length - 22;
  while (eocd >= 0 && buf.readUInt32LE(eocd) !== 0x06054b50) eocd--;
  if (eocd < 0) throw new Error(`${FEED}: no zip end record`);
  let p = buf.readUInt32LE(eocd + 16);
  const count = buf.readUInt16LE(eocd + 10);
  for (let i = 0; i < count; i++) {
    const method = buf.readUInt16LE(p + 10);
    const size = buf.readUInt32LE(p + 20);
    const nameLen = buf.readUInt16LE(p + 28);
    const extraLen = buf.readUInt16LE(p + 30);
    const commentLen = buf.readUInt16LE(p + 32);
    const local = buf.readUInt32LE(p + 42);
    const name = buf.toString('utf8', p + 46, p + 46 + nameLen);
    if (name === wanted || name.endsWith(`/${wanted}`)) {
      const start = local + 30 + buf.readUInt16LE(local + 26) + buf.readUInt16LE(local + 28);
      const data = buf.subarray(start, start + size);
      return method === 0 ? data : zlib.inflateRawSync(data);
    }
    p += 46 + nameLen + extraLen + commentLen;
  }
  throw new Error(`${FEED}: no ${wanted}`);
}

/** SplitMix64 in BigInt: the same sequence as the native bench's generator. */
function splitmix(seed) {
  let s = BigInt.asUintN(64, seed);
  const M = (1n << 64n) - 1n;
  return (n) => {
    s = (s + 0x9e3779b97f4a7c15n) & M;
    let z = s;
    z = ((z ^ (z >> 30n)) * 0xbf58476d1ce4e5b9n) & M;
    z = ((z ^ (z >> 27n)) * 0x94d049bb133111ebn) & M;
    z ^= z >> 31n;
    return Number(z % BigInt(n));
  };
}

function loadQueries() {
  const tsv = FEED.replace(/\.zip$/, '.queries.tsv');
  if (fs.existsSync(tsv)) {
    const rows = fs.readFileSync(tsv, 'utf8').split('\n').filter(Boolean).map((l) => {
      const [from, to, time] = l.split('\t');
      return { from, to, time };
    });
    return { queries: rows.slice(0, N), source: `${path.relative(REPO, tsv)} (the native bench's queries)` };
  }
  const zip = fs.readFileSync(FEED);
  const text = unzipEntry(zip, 'stop_times.txt').toString('utf8');
  const header = text.slice(0, text.indexOf('\n')).replace(/^\uFEFF/, '').trim().split(',');
  const col = header.indexOf('stop_id');
  const ids = new Set();
  let start = text.indexOf('\n') + 1;
  while (start < text.length) {
    let end = text.indexOf('\n', start);
    if (end < 0) end = text.length;
    const f = text.slice(start, end).split(',');
    if (f.length > col) ids.add(f[col].trim());
    start = end + 1;
  }
  const stops = [...ids].filter(Boolean).sort();
  const below = splitmix(0x71734_2026n);
  const queries = [];
  while (queries.length < N) {
    const from = stops[below(stops.length)];
    const to = stops[below(stops.length)];
    if (from === to) continue;
    const minute = 360 + below(16 * 60 + 1);
    queries.push({ from, to, time: `${String(Math.floor(minute / 60)).padStart(2, '0')}:${String(minute % 60).padStart(2, '0')}` });
  }
  return { queries, source: `drawn here from the ${stops.length} stops in stop_times.txt (no native queries file)` };
}

// ------------------------------------------------------------------ the bench

function stats(samples) {
  const v = [...samples].sort((a, b) => a - b);
  if (!v.length) return { median: NaN, p95: NaN };
  const rank = (q) => v[Math.min(v.length, Math.max(1, Math.ceil(q * v.length))) - 1];
  return { median: rank(0.5), p95: rank(0.95) };
}

const fmtMs = (x) => (x >= 100 ? x.toFixed(0) : x >= 10 ? x.toFixed(1) : x >= 1 ? x.toFixed(2) : x.toFixed(3));
const fmtMB = (b) => (b ? `${(b / 1e6).toFixed(0)} MB` : 'n/a');

async function main() {
  if (!fs.existsSync(FEED)) {
    const preset = path.basename(FEED).replace(/-\d+\.zip$/, '');
    console.error(`bench: ${FEED} is missing; generating it (timeweave synth --preset ${preset} --seed 1)`);
    fs.mkdirSync(path.dirname(FEED), { recursive: true });
    execFileSync(BIN, ['synth', '--preset', preset, '--seed', '1', '--out', FEED], { stdio: 'inherit' });
  }
  if (KINDS.includes('snapshot')) {
    console.error(`bench: writing ${SNAPSHOT}`);
    execFileSync(BIN, ['snapshot', '--feed', FEED, '--from', DATE, '--days', '7', '--out', SNAPSHOT], { stdio: 'inherit' });
  }
  const { queries, source } = loadQueries();
  const feedName = path.basename(FEED);
  const server = await startServer();
  const browser = await launchBrowser();
  const result = { feed: feedName, zip_bytes: fs.statSync(FEED).size, date: DATE, queries: queries.length, query_source: source };
  try {
    const context = await browser.newContext({ serviceWorkers: 'block' });
    const page = await context.newPage();
    const errors = [];
    page.on('pageerror', (e) => errors.push(e.message));
    const benchUrl = `${server.origin}/bench-page/index.html`;
    await page.route(benchUrl, (route) => route.fulfill({
      status: 200,
      contentType: 'text/html; charset=utf-8',
      headers: { 'Cross-Origin-Opener-Policy': 'same-origin', 'Cross-Origin-Embedder-Policy': 'require-corp' },
      body: '<!doctype html><html lang="en"><head><meta charset="utf-8"><title>timeweave bench</title></head><body><p>bench</p></body></html>',
    }));
    await page.goto(benchUrl);
    result.browser = browser.version();
    result.cross_origin_isolated = await page.evaluate(() => self.crossOriginIsolated);

    const idle = browserMemory();
    const loadSampler = sampler(100);
    const load = await page.evaluate(async ({ feedUrl, feedName, first }) => {
      const t0 = performance.now();
      const mod = await import('/pkg/timeweave.js');
      const wasm = await mod.default();
      const engine = new mod.Engine();
      const t1 = performance.now();
      const res = await fetch(feedUrl);
      if (!res.ok) throw new Error(`GET ${feedUrl}: ${res.status}`);
      const bytes = new Uint8Array(await res.arrayBuffer());
      const t2 = performance.now();
      const stages = [];
      const report = engine.load_feed(feedName, bytes, (stage) => {
        if (!stages.length || stages[stages.length - 1].stage !== stage) stages.push({ stage, at: performance.now() });
      });
      const t3 = performance.now();
      const firstPlan = engine.plan(first);
      const t4 = performance.now();
      window.__bench = { mod, wasm, engine };
      return {
        init_ms: t1 - t0,
        fetch_ms: t2 - t1,
        load_ms: t3 - t2,
        first_plan_ms: t4 - t3,
        stages: stages.map((s, i) => ({ stage: s.stage, ms: (i + 1 < stages.length ? stages[i + 1].at : t3) - s.at })),
        report: { stops: report.stops, trips: report.trips, stop_events: report.stop_events, warnings_total: report.warnings_total },
        first_plan_journeys: firstPlan.journeys.length,
        wasm_memory_bytes: wasm.memory.buffer.byteLength,
        engine_memory_bytes: engine.memory_bytes(),
      };
    }, { feedUrl: `/feeds/${encodeURIComponent(feedName)}`, feedName: feedName.replace(/\.zip$/, ''), first: { ...queries[0], date: DATE, next: 1 } });
    const loadPeak = loadSampler.stop();
    Object.assign(result, load, { idle_rss: idle.rss, idle_pss: idle.pss, load_peak_rss: loadPeak.rss, load_peak_pss: loadPeak.pss, load_samples: loadPeak.samples });

    const kinds = [
      { key: 'plan1', label: '`plan` standard, next 1', call: 'plan', q: { next: 1 } },
      { key: 'plan3', label: '`plan` standard, next 3', call: 'plan', q: { next: 3 } },
      { key: 'strict', label: '`plan` step-free strict, next 1 (runs a standard search too, for step_free_extra_s)', call: 'plan', q: { next: 1, step_free: 'strict' } },
      { key: 'reach', label: `\`reach\` one-to-all, ${LIMIT_MIN} min (returns a list of every platform reached)`, call: 'reach' },
      { key: 'reach_minutes', label: `\`reach_minutes\` one-to-all, ${LIMIT_MIN} min (returns minutes per stop as a Uint32Array)`, call: 'reach_minutes' },
    ].filter((k) => KINDS.includes(k.key));
    const querySampler = sampler(250);
    result.kinds = [];
    for (const kind of kinds) {
      console.error(`bench: ${queries.length} × ${kind.key}`);
      const r = await page.evaluate(({ queries, date, kind, limit }) => {
        const { engine } = window.__bench;
        const times = [];
        let answered = 0;
        let failed = 0;
        let firstError = null;
        let items = 0;
        for (const q of queries) {
          const t = performance.now();
          let out;
          try {
            out = kind.call === 'plan'
              ? engine.plan({ from: q.from, to: q.to, date, time: q.time, ...kind.q })
              : engine[kind.call](q.from, date, q.time, false, limit);
          } catch (e) {
            failed++;
            firstError ??= `${q.from} → ${q.to} at ${q.time}: ${e && e.message ? e.message : JSON.stringify(e)}`;
          }
          times.push(performance.now() - t);
          if (out) {
            const n = kind.call === 'plan' ? out.journeys.length
              : kind.call === 'reach' ? out.length
              : out.reduce((k, m) => k + (m <= limit), 0);
            items += n;
            answered += n > 0 ? 1 : 0;
          }
        }
        return { times, answered, failed, firstError, items };
      }, { queries, date: DATE, kind: { key: kind.key, call: kind.call, q: kind.q || {} }, limit: LIMIT_MIN });
      result.kinds.push({ key: kind.key, label: kind.label, ...stats(r.times), answered: r.answered, failed: r.failed, first_error: r.firstError, mean_items: r.items / queries.length });
    }
    if (KINDS.includes('interchange')) {
      console.error('bench: interchange, every station one at a time');
      const r = await page.evaluate(({ date }) => {
        const { engine } = window.__bench;
        const window_ = '07:00-09:00';
        const t0 = performance.now();
        const all = engine.interchange({ station: 'all', date, window: window_ });
        const allMs = performance.now() - t0;
        const times = [];
        let busiest = { rows: -1 };
        for (const st of all.stations) {
          const t = performance.now();
          const one = engine.interchange({ station: st.station, date, window: window_ });
          const ms = performance.now() - t;
          times.push(ms);
          if (one.stations[0].connections > busiest.rows) busiest = { rows: one.stations[0].connections, station: st.station, ms };
        }
        return { times, allMs, stations: all.stations.length, busiest };
      }, { date: DATE });
      result.interchange = { ...stats(r.times), all_ms: r.allMs, stations: r.stations, busiest: r.busiest };
    }
    if (KINDS.includes('stepfree')) {
      console.error('bench: stepfree, a 500-pair sample');
      result.stepfree = await page.evaluate(({ date }) => {
        const { engine } = window.__bench;
        const times = [];
        let counts = null;
        for (let k = 0; k < 3; k++) {
          const t = performance.now();
          const r = engine.stepfree({ date, window: '07:00-08:00', pairs: 'sample:500' }, undefined, undefined);
          times.push(performance.now() - t);
          counts = r.report.counts;
        }
        return { times, counts };
      }, { date: DATE });
    }
    if (KINDS.includes('snapshot')) {
      console.error('bench: snapshot, five loads');
      result.snapshot = await page.evaluate(async ({ url, first, date }) => {
        const { mod } = window.__bench;
        const loads = [];
        let info = null;
        let routable = null;
        let board = null;
        for (let k = 0; k < 5; k++) {
          const t0 = performance.now();
          const bytes = new Uint8Array(await (await fetch(url)).arrayBuffer());
          const t1 = performance.now();
          const engine = new mod.Engine();
          info = engine.load_snapshot(bytes);
          const t2 = performance.now();
          loads.push({ fetch_ms: t1 - t0, load_ms: t2 - t1 });
          if (k === 4) {
            engine.plan(first);
            routable = performance.now() - t1;
            const t3 = performance.now();
            engine.board(first.from, [first.to], Date.parse(`${date}T07:00:00Z`));
            board = performance.now() - t3;
          }
          engine.free();
        }
        return { loads, bytes: info.bytes, routable_ms: routable, board_ms: board };
      }, { url: `/feeds/${encodeURIComponent(path.basename(SNAPSHOT))}`, first: { ...queries[0], date: DATE, next: 1 }, date: DATE });
    }
    const queryPeak = querySampler.stop();
    result.query_peak_rss = queryPeak.rss;
    result.query_peak_pss = queryPeak.pss;

    const after = await page.evaluate(async () => {
      const { wasm, engine } = window.__bench;
      const out = { wasm_memory_bytes: wasm.memory.buffer.byteLength, engine_memory_bytes: engine.memory_bytes() };
      if (performance.memory) {
        out.js_heap_used = performance.memory.usedJSHeapSize;
        out.js_heap_total = performance.memory.totalJSHeapSize;
      }
      if (self.crossOriginIsolated && performance.measureUserAgentSpecificMemory) {
        // It answers at the next garbage collection, which may take a while.
        const timeout = new Promise((resolve) => setTimeout(() => resolve(null), 30000));
        const m = await Promise.race([performance.measureUserAgentSpecificMemory().catch((e) => ({ error: String(e) })), timeout]);
        out.ua_memory = m ? (m.error ? m.error : m.bytes) : 'no answer within 30 s';
      } else {
        out.ua_memory = 'not available';
      }
      return out;
    });
    result.after = after;
    const end = browserMemory();
    result.renderer_hwm = end.renderer.hwm;
    result.hwm_sum = end.hwmSum;
    result.page_errors = errors;
    await context.close();
  } finally {
    await browser.close();
    await server.stop();
  }
  return result;
}

function table(r) {
  const routable = r.load_ms + r.first_plan_ms;
  const k = Object.fromEntries(r.kinds.map((x) => [x.key, x]));
  const peakBrowser = Math.max(r.load_peak_pss, r.query_peak_pss);
  const lines = [];
  lines.push('### Browser (`node tests/browser/bench/bench.mjs`)', '');
  lines.push(`${r.browser}, headless, no GPU; feed ${r.feed} (${(r.zip_bytes / 1e6).toFixed(1)} MB zip; ${r.report.stops} stops, ${r.report.trips} trips, ${r.report.stop_events} stop events); date ${r.date}; ${r.queries} queries from ${r.query_source}. Engine on the page's main thread; cross-origin isolated: ${r.cross_origin_isolated}.`);
  lines.push('', '**`plan` times include resolving the stop ids, itinerary building and serialisation to JS values** (serde-wasm-bindgen), not only the search; `reach` includes building and serialising the list of every platform reached.', '');
  lines.push('| what | median | p95 | answered | target (metro median) | |');
  lines.push('|---|---|---|---|---|---|');
  const row = (x, target, limit) => x && lines.push(`| ${x.label} | ${fmtMs(x.median)} ms | ${fmtMs(x.p95)} ms | ${x.answered}/${r.queries}${x.failed ? ` (${x.failed} threw)` : ''} | ${target} | ${limit == null ? '' : x.median <= limit ? 'met' : 'missed'} |`);
  row(k.plan1, 'earliest arrival with penalty ≤ 6 ms', 6);
  row(k.plan3, 'next 3 ≤ 10 ms', 10);
  row(k.strict, '—', null);
  row(k.reach, 'one-to-all ≤ 30 ms', 30);
  row(k.reach_minutes, 'one-to-all ≤ 30 ms', 30);
  if (r.interchange) {
    const x = r.interchange;
    lines.push(`| \`interchange\` one station, 07:00–09:00, each of ${x.stations} stations (summaries to JS, rows kept in the engine); busiest ${x.busiest.station}, ${x.busiest.rows} rows: ${fmtMs(x.busiest.ms)} ms; all stations at once ${(x.all_ms / 1000).toFixed(2)} s | ${fmtMs(x.median)} ms | ${fmtMs(x.p95)} ms | | one station ≤ 200 ms (the busiest) | ${x.busiest.ms <= 200 ? 'met' : 'missed'} |`);
  }
  if (r.stepfree) {
    const t = [...r.stepfree.times].sort((a, b) => a - b);
    const c = r.stepfree.counts;
    lines.push(`| \`stepfree\` a 500-pair sample, 07:00–08:00, one thread (${c.step_free} step-free, ${c.blocked} blocked, ${c.explained} explained; runs ${t.map((x) => (x / 1000).toFixed(2)).join(', ')} s) | ${(t[1] / 1000).toFixed(2)} s | | | ≤ 5 s | ${t[1] <= 5000 ? 'met' : 'missed'} |`);
  }
  if (r.snapshot) {
    const x = r.snapshot;
    const loads = x.loads.map((l) => l.load_ms).sort((a, b) => a - b);
    const med = loads[2];
    lines.push('', '| snapshot (7 days from the date) against the zip, same run | snapshot | zip (baseline) | target | |');
    lines.push('|---|---|---|---|---|');
    lines.push(`| size | ${(x.bytes / 1e6).toFixed(2)} MB | ${(r.zip_bytes / 1e6).toFixed(2)} MB | ≤ the zip | ${x.bytes <= r.zip_bytes ? 'met' : 'missed'} |`);
    lines.push(`| load into a fresh engine (\`load_snapshot\` / \`load_feed\`), median of 5 (runs ${loads.map(fmtMs).join(', ')} ms) | **${fmtMs(med)} ms** | ${fmtMs(r.load_ms)} ms | ≤ 300 ms | ${med <= 300 ? 'met' : 'missed'} |`);
    lines.push(`| load + first \`plan\` (builds the date's graph) | ${fmtMs(x.routable_ms)} ms | ${fmtMs(r.load_ms + r.first_plan_ms)} ms | | |`);
    lines.push(`| first kiosk \`board\` (departures + one destination, both profiles) | ${fmtMs(x.board_ms)} ms | | | |`);
  }
  lines.push('');
  lines.push('| zip → routable | figure | target | |');
  lines.push('|---|---|---|---|');
  lines.push(`| module init (import + instantiate WASM) | ${fmtMs(r.init_ms)} ms | | |`);
  lines.push(`| fetch zip from the local server | ${fmtMs(r.fetch_ms)} ms | | |`);
  lines.push(`| \`load_feed\` | ${(r.load_ms / 1000).toFixed(2)} s (${r.stages.map((s) => `${s.stage} ${(s.ms / 1000).toFixed(2)} s`).join(', ')}) | | |`);
  lines.push(`| first \`plan\` (builds the date's graph) | ${(r.first_plan_ms / 1000).toFixed(2)} s | | |`);
  lines.push(`| **zip → routable** (\`load_feed\` + first \`plan\`) | **${(routable / 1000).toFixed(2)} s** | ≤ 10 s | ${routable <= 10000 ? 'met' : 'missed'} |`);
  lines.push(`| peak browser memory (all Chromium processes, sum of PSS sampled every 100–250 ms) | ${fmtMB(peakBrowser)} (load ${fmtMB(r.load_peak_pss)}, queries ${fmtMB(r.query_peak_pss)}; sum of RSS ${fmtMB(Math.max(r.load_peak_rss, r.query_peak_rss))}; Chromium alone before the load ${fmtMB(r.idle_pss)} PSS) | < 1.5 GB | ${peakBrowser < 1.5e9 ? 'met' : 'missed'} |`);
  lines.push(`| peak RSS of the page's renderer process (VmHWM) | ${fmtMB(r.renderer_hwm)} | | |`);
  lines.push(`| WASM memory (\`memory.buffer.byteLength\`) after load / after queries | ${fmtMB(r.wasm_memory_bytes)} / ${fmtMB(r.after.wasm_memory_bytes)} | | |`);
  lines.push(`| \`engine.memory_bytes()\` (timetable stop-event arrays only) | ${fmtMB(r.after.engine_memory_bytes)} | | |`);
  lines.push(`| \`performance.memory\` JS heap used / total | ${r.after.js_heap_used ? `${fmtMB(r.after.js_heap_used)} / ${fmtMB(r.after.js_heap_total)}` : 'not available'} | | |`);
  lines.push(`| \`performance.measureUserAgentSpecificMemory()\` | ${typeof r.after.ua_memory === 'number' ? fmtMB(r.after.ua_memory) : r.after.ua_memory} | | |`);
  for (const x of r.kinds) if (x.first_error) lines.push('', `${x.key}: first error: ${x.first_error}`);
  if (r.page_errors.length) lines.push('', `page errors: ${r.page_errors.join('; ')}`);
  return lines.join('\n');
}

const r = await main();
fs.mkdirSync(OUT_DIR, { recursive: true });
fs.writeFileSync(path.join(OUT_DIR, 'browser.json'), JSON.stringify(r, null, 2));
const md = table(r);
fs.writeFileSync(path.join(OUT_DIR, 'browser.md'), `${md}\n`);
console.log(md);
