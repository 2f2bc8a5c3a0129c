// The demo city end to end in real Chromium with the real WASM engine: load, plan with the
// keyboard, compare with the native CLI, reopen the address, phone layout, and no request
// leaving the page's origin.

import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import * as h from './harness.mjs';

let server;
let browser;
const recorders = [];
let firstUrl;
let firstKey;

// The designed journey: demo-data/README.md "Case B", standard search, Wednesday 2026-12-02 08:00.
const CASE_B = {
  from: 'OCT_TPL_A', fromPick: 'Tram Place', to: 'Tollimere', toPick: 'Tollimere',
  date: '2026-12-02', time: '08:00', n: 3,
};

before(async () => {
  server = await h.startServer();
  browser = await h.launchBrowser();
});

after(async () => {
  for (const r of recorders) await r.context.close().catch(() => {});
  if (browser) await browser.close();
  if (server) await server.stop();
});

async function fresh(viewport) {
  const rec = await h.openPage(browser, { viewport });
  recorders.push(rec);
  return rec;
}

test('the demo city loads and a journey is planned and shown', async () => {
  const { page, errors } = await fresh(h.DESKTOP);
  await h.openApp(page, server.url);
  await h.shot(page, 'desktop-empty');
  await h.loadDemo(page);

  const names = await page.$$eval('#feed-list .feed-name', (els) => els.map((e) => e.textContent));
  assert.deepEqual(names.sort(), ['oskerveld-city', 'oskerveld-rail']);
  // Row count of stops.txt per demo-data/README.md "Size": 48 city stops.
  const counts = await page.textContent('#feed-list');
  assert.match(counts, /48 stops/);

  const result = await h.planViaForm(page, CASE_B);
  assert.equal(result.nothing_found ?? null, null, JSON.stringify(result.nothing_found));
  assert.ok(result.journeys.length >= 1);
  const first = result.journeys[0];
  // demo-data/README.md Case B, standard: R1 R1_WKD_0_0754 from Oskerveld Central, arriving 08:34.
  assert.equal(first.arrive, '08:34');
  const rides = first.legs.filter((l) => l.kind === 'ride');
  assert.equal(rides.at(-1).trip_id, 'R1_WKD_0_0754');
  // ... and not step-free (stairs and a trip with wheelchair_accessible=2).
  assert.equal(first.step_free, 'no');

  // What the page shows matches what the engine returned.
  const items = await page.$$('#results > li');
  assert.equal(items.length, result.journeys.length);
  const summary = await page.textContent('#results > li:first-child');
  assert.ok(summary.includes(`${first.depart} → ${first.arrive}`), summary);
  assert.equal(await page.getAttribute('#results > li:first-child button', 'aria-pressed'), 'true');
  const detail = await page.textContent('#detail');
  assert.ok(detail.includes('Tollimere'), detail);
  assert.ok(detail.includes('R1'), detail);
  assert.ok(detail.includes('Not step-free'), detail);
  // The R1 chip carries the feed's colours (routes.txt route_color 6D1A47 / route_text_color FFFFFF).
  const chip = await page.$eval('#detail .chip-coloured', (c) => [getComputedStyle(c).backgroundColor, getComputedStyle(c).color, c.textContent]);
  assert.deepEqual(chip.slice(0, 2), ['rgb(109, 26, 71)', 'rgb(255, 255, 255)']);
  // The sketch draws the journey on top.
  assert.ok((await page.$$('#sketch .sk-trip-ride')).length >= 1);
  assert.ok((await page.$$('#sketch .sk-stop')).length > 20);

  // Intermediate stops are collapsible and open with the keyboard.
  const summaryEl = await page.$('#detail details.mids-box summary');
  if (summaryEl) {
    await summaryEl.focus();
    await page.keyboard.press('Enter');
    assert.equal(await page.$eval('#detail details.mids-box', (d) => d.open), true);
  }
  await h.shot(page, 'desktop-journey');

  firstUrl = page.url();
  firstKey = h.journeyKey(result);
  assert.deepEqual(errors, []);
});

test('the page and the native CLI give the same journeys', async () => {
  assert.ok(firstUrl, 'needs the first test');
  const q = Object.fromEntries(new URLSearchParams(new URL(firstUrl).hash.slice(1)));
  const cliResult = await h.cli([
    'plan', '--feed', 'demo-data/oskerveld-city', '--feed', 'demo-data/oskerveld-rail',
    '--from', q.from, '--to', q.to, '--date', q.date, '--at', q.time, '--next', q.n || '3', '--json',
  ]);
  // Reference: the native build of the same engine, reading the GTFS text folders instead of zips.
  assert.deepEqual(firstKey, h.journeyKey(cliResult));
});

test('the address keeps the query: reopening it gives the same result', async () => {
  assert.ok(firstUrl, 'needs the first test');
  const q = Object.fromEntries(new URLSearchParams(new URL(firstUrl).hash.slice(1)));
  assert.equal(q.date, CASE_B.date);
  assert.equal(q.time, CASE_B.time);
  assert.equal(q.sf, 'off');
  assert.equal(q.n, '3');
  assert.equal(q.src, 'demo');

  const { page } = await fresh(h.DESKTOP);
  await page.goto(firstUrl);
  await h.waitEngine(page);
  const result = await h.waitPlan(page, 0, 60000);
  assert.deepEqual(h.journeyKey(result), firstKey);
  assert.equal(await page.inputValue('#date'), CASE_B.date);
  assert.equal(await page.inputValue('#time'), CASE_B.time);
  assert.ok((await page.inputValue('#from')).includes('Tram Place'));

  // A reload of the same address runs it again.
  await page.reload();
  await h.waitEngine(page);
  const again = await h.waitPlan(page, 0, 60000);
  assert.deepEqual(h.journeyKey(again), firstKey);
});

test('the stop picker works by keyboard (combobox pattern)', async () => {
  const { page } = await fresh(h.DESKTOP);
  await h.openApp(page, server.url);
  await h.loadDemo(page);
  await page.focus('#from');
  await page.keyboard.type('velodr');
  // Under load each keystroke may get its own suggestions; wait for those of the whole text.
  await page.waitForFunction(() => document.getElementById('from-list').dataset.query === 'velodr');
  // WAI-ARIA Authoring Practices, combobox: aria-expanded reflects the popup.
  await page.waitForSelector('#from[aria-expanded="true"]');
  // Accent-insensitive search (DEVELOPERS.md WASM API): "velodr" finds "Vélodrome".
  assert.match(await page.textContent('#from-list'), /Vélodrome/);
  await page.keyboard.press('ArrowDown');
  const active = await page.getAttribute('#from', 'aria-activedescendant');
  assert.ok(active);
  assert.equal(await page.getAttribute(`#${active}`, 'aria-selected'), 'true');
  await page.keyboard.press('Escape');
  assert.equal(await page.getAttribute('#from', 'aria-expanded'), 'false');
  assert.equal(await page.inputValue('#from'), 'velodr');
  await page.keyboard.press('Escape');
  assert.equal(await page.inputValue('#from'), '');
  await page.keyboard.type('velo');
  await page.waitForFunction(() => document.getElementById('from-list').dataset.query === 'velo');
  await page.waitForSelector('#from[aria-expanded="true"]');
  await page.keyboard.press('ArrowDown');
  // New suggestions arriving keep the highlight on the same stop, so that
  // aria-activedescendant still names the selected option (WAI-ARIA combobox pattern).
  const before = await page.textContent(`#${await page.getAttribute('#from', 'aria-activedescendant')} .option-name`);
  await page.keyboard.type('d');
  await page.waitForFunction(() => document.getElementById('from-list').dataset.query === 'velod');
  const kept = await page.getAttribute('#from', 'aria-activedescendant');
  assert.ok(kept);
  assert.equal(await page.getAttribute(`#${kept}`, 'aria-selected'), 'true');
  assert.equal(await page.textContent(`#${kept} .option-name`), before);
  await page.keyboard.press('Enter');
  assert.equal(await page.getAttribute('#from', 'aria-expanded'), 'false');
  assert.match(await page.inputValue('#from'), /Vélodrome/);
});

test('phone width: single column, no sideways scrolling', async () => {
  assert.ok(firstUrl, 'needs the first test');
  const { page } = await fresh(h.PHONE);
  await page.goto(firstUrl);
  await h.waitEngine(page);
  await h.waitPlan(page, 0, 60000);
  const widths = await page.evaluate(() => [document.documentElement.scrollWidth, document.documentElement.clientWidth]);
  assert.ok(widths[0] <= widths[1], `page is ${widths[0]} px wide in a ${widths[1]} px viewport`);
  const cols = await page.$eval('.layout', (e) => getComputedStyle(e).gridTemplateColumns.split(' ').length);
  assert.equal(cols, 1);
  await h.shot(page, 'phone-journey');

  const desk = await fresh(h.DESKTOP);
  await desk.page.goto(firstUrl);
  await h.waitEngine(desk.page);
  await h.waitPlan(desk.page, 0, 60000);
  const deskCols = await desk.page.$eval('.layout', (e) => getComputedStyle(e).gridTemplateColumns.split(' ').length);
  assert.equal(deskCols, 2);
});

test('no request leaves the page origin', () => {
  // Rule: the page must run with no network after it has loaded; everything comes from the origin.
  const all = recorders.flatMap((r) => r.requests);
  assert.ok(all.length > 5, 'requests were recorded');
  assert.ok(all.some((u) => /\/pkg\/[^/]+_bg\.wasm$/.test(u)), 'the WASM module was fetched');
  assert.deepEqual(h.offOrigin(all, server.origin), []);
});
