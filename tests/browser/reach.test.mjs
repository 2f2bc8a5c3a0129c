// Reach (one-to-all) through the real WASM module in Chromium: the list form and the compact
// Uint32Array form must agree with each other and with the native CLI's `reach --json` on the
// demo city (the CLI is the other shell around the same core; the sweep itself is checked against
// petgraph in tests/petgraph_oracle.rs).

import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import * as h from './harness.mjs';

let server;
let browser;

before(async () => {
  server = await h.startServer();
  browser = await h.launchBrowser();
});

after(async () => {
  if (browser) await browser.close();
  if (server) await server.stop();
});

const FEEDS = ['oskerveld-city', 'oskerveld-rail'];
const QUERY = { from: 'Quistenford', date: '2026-12-02', time: '08:00', minutes: 45 };

test('reach and reach_minutes in WASM agree with the CLI', async () => {
  const cliArgs = ['reach', ...FEEDS.flatMap((f) => ['--feed', `www/feeds/${f}.zip`]), '--from', QUERY.from, '--date', QUERY.date, '--at', QUERY.time, '--minutes', String(QUERY.minutes), '--json'];
  const native = await h.cli(cliArgs);
  assert.ok(native.length > 10, `the demo query reaches more than a few platforms (${native.length})`);

  const rec = await h.openPage(browser);
  await h.openApp(rec.page, server.url);
  const got = await rec.page.evaluate(async ({ feeds, q }) => {
    const mod = await import('/pkg/timeweave.js');
    await mod.default();
    const engine = new mod.Engine();
    for (const f of feeds) {
      const bytes = new Uint8Array(await (await fetch(`/feeds/${f}.zip`)).arrayBuffer());
      engine.load_feed(f, bytes, () => {});
    }
    const list = engine.reach(q.from, q.date, q.time, false, q.minutes);
    const minutes = engine.reach_minutes(q.from, q.date, q.time, false, q.minutes);
    return { list, minutes: Array.from(minutes), isTyped: minutes instanceof Uint32Array, ids: engine.stop_ids() };
  }, { feeds: FEEDS, q: QUERY });

  assert.deepEqual(got.list, native, 'the WASM list equals the CLI list');
  assert.equal(got.isTyped, true, 'reach_minutes is a Uint32Array');
  assert.equal(got.minutes.length, got.ids.length, 'one entry per stop');
  for (const r of native) {
    const i = got.ids.indexOf(r.stop_id);
    assert.equal(got.minutes[i], r.minutes, `minutes to ${r.stop_id}`);
  }
  const reached = got.minutes.filter((m) => m <= QUERY.minutes).length;
  assert.ok(reached >= native.length, 'the compact form covers every platform of the list (and other stops)');
  await rec.page.context().close();
});
