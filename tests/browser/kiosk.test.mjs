// The kiosk folder in real headless Chromium: written by the real `timeweave kiosk` (with the
// real WASM build), served by `timeweave serve --root`, its clock driven by Playwright's fake
// clock so every board is deterministic.
//
// Sources: the tz database as the browser's own ICU carries it (Intl.DateTimeFormat with
// timeZone 'CET', an implementation independent of the engine's chrono-tz) for the clock change;
// the GTFS Schedule reference (times from noon minus 12 h of the service day); axe-core for WCAG
// 2.1 AA and its color-contrast-enhanced rule for SC 1.4.6 (7:1); the Service Workers
// specification (a controlled page is served from the worker's cache with the network cut).

import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import AxeBuilder from '@axe-core/playwright';
import * as h from './harness.mjs';

const DEMO = ['--feed', path.join(h.REPO, 'demo-data/oskerveld-city'), '--feed', path.join(h.REPO, 'demo-data/oskerveld-rail')];
const WWW = path.join(h.REPO, 'www');
const s = { dir: null, server: null, browser: null };

async function run(args) {
  const { promisify } = await import('node:util');
  const { execFile } = await import('node:child_process');
  return promisify(execFile)(h.BIN, args, { cwd: h.REPO, maxBuffer: 16 << 20 });
}

/** A feed in zone CET whose Sunday trips leave A at GTFS times 01:30, 02:30, 03:00 and 03:30. */
function cetFeed(dir) {
  fs.mkdirSync(dir, { recursive: true });
  const files = {
    'agency.txt': 'agency_id,agency_name,agency_url,agency_timezone\nTA,Test Transit,https://transit.example/,CET\n',
    'routes.txt': 'route_id,agency_id,route_short_name,route_long_name,route_type\nR,TA,1,Test line,3\n',
    'stops.txt': 'stop_id,stop_name,stop_lat,stop_lon\nA,Aldgrove,50.0000,10.0000\nB,Birchmere,50.0100,10.0000\n',
    'calendar.txt': 'service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date\nSUN,0,0,0,0,0,0,1,20260101,20261231\n',
    'trips.txt': 'route_id,service_id,trip_id,trip_headsign\n' + ['0130', '0230', '0300', '0330'].map((t) => `R,SUN,T${t},Birchmere`).join('\n') + '\n',
    'stop_times.txt': 'trip_id,arrival_time,departure_time,stop_id,stop_sequence\n' + ['0130', '0230', '0300', '0330'].map((t) => {
      const hh = t.slice(0, 2);
      const mm = t.slice(2);
      const later = `${hh}:${String(Number(mm) + 10).padStart(2, '0')}:00`;
      return `T${t},${hh}:${mm}:00,${hh}:${mm}:00,A,1\nT${t},${later},${later},B,2`;
    }).join('\n') + '\n',
  };
  for (const [name, text] of Object.entries(files)) fs.writeFileSync(path.join(dir, name), text);
}

before(async () => {
  s.dir = fs.mkdtempSync(path.join(os.tmpdir(), 'timeweave-kiosk-'));
  const kiosk = (feeds, args, out) => run(['kiosk', ...feeds, ...args, '--www', WWW, '--out', path.join(s.dir, out)]);
  await kiosk(DEMO, ['--stop', 'ORR_CEN', '--destinations', 'OCT_WMD,ORR_VMJ', '--from', '2026-12-01', '--days', '7'], 'demo');
  cetFeed(path.join(s.dir, 'cet-feed'));
  await kiosk(['--feed', path.join(s.dir, 'cet-feed')], ['--stop', 'A', '--destinations', 'B', '--from', '2026-10-24', '--days', '3'], 'cet');
  // A damaged copy (one byte of the timetable changed) and one from another format version.
  for (const [name, change] of [['damaged', (b) => { b[Math.floor(b.length / 2)] ^= 1; }], ['old', (b) => { b.writeUInt32LE(0, 8); }]]) {
    fs.cpSync(path.join(s.dir, 'demo'), path.join(s.dir, name), { recursive: true });
    const f = path.join(s.dir, name, 'timetable.twsnap');
    const b = fs.readFileSync(f);
    change(b);
    fs.writeFileSync(f, b);
  }
  s.server = await h.startServer({ root: s.dir });
  s.browser = await h.launchBrowser();
}, { timeout: 180000 });

after(async () => {
  if (s.browser) await s.browser.close();
  if (s.server) await s.server.stop();
  if (s.dir) fs.rmSync(s.dir, { recursive: true, force: true });
});

async function openKiosk(folder, instant, opts = {}) {
  const rec = await h.openPage(s.browser, { viewport: { width: 1280, height: 800 }, ...opts });
  await rec.page.clock.install({ time: new Date(instant) });
  await rec.page.goto(`${s.server.url}${folder}/`);
  try {
    // The first load compiles the WASM module and, with service workers allowed, installs the
    // worker (which fetches every file again) at the same time: give it time on a loaded machine.
    await rec.page.waitForSelector('html[data-kiosk]', { state: 'attached', timeout: 60000 });
  } catch (e) {
    const state = await rec.page.evaluate(() => ({ ready: document.readyState, alert: document.getElementById('alert')?.textContent,
      sw: navigator.serviceWorker ? Boolean(navigator.serviceWorker.controller) : 'none' })).catch((x) => String(x));
    throw new Error(`${folder}: the kiosk did not start: ${e.message}\nstate ${JSON.stringify(state)}\nerrors ${JSON.stringify(rec.errors)}\nrequests ${JSON.stringify(rec.requests)}`);
  }
  return rec;
}

/** The board as shown: per row, line name, headsign and (time, minutes) of each departure. */
function shownBoard(page) {
  return page.$$eval('#departures tbody tr', (rows) => rows.map((r) => ({
    name: r.cells[0].textContent.trim(),
    headsign: r.cells[1].textContent.trim(),
    deps: [...r.querySelectorAll('.dep')].map((d) => [d.querySelector('strong').textContent, d.querySelector('.in').textContent]),
  })));
}

const inMin = (n) => (n === 0 ? 'now' : `in ${n} min`);

/**
 * Polls `fn` in the page from Node until it is true (the page's own timers run on the fake
 * clock, so waiting in the page could wait forever); fails after `ms`.
 */
async function until(page, fn, what, ms = 30000) {
  const end = Date.now() + ms;
  while (Date.now() < end) {
    if (await page.evaluate(fn).catch(() => false)) return;
    await new Promise((r) => setTimeout(r, 100));
  }
  throw new Error(`timed out after ${ms} ms waiting for ${what}`);
}

const controlled = (page) => until(page, () => Boolean(navigator.serviceWorker.controller), 'the service worker to control the page');

test('the kiosk shows the board the CLI computes, and keeps showing it with the network cut', { timeout: 120000 }, async () => {
  const at = '2026-12-02T07:00:00Z';
  const { page, context, requests, errors } = await openKiosk('demo', at, { serviceWorkers: 'allow' });
  assert.equal(await page.getAttribute('html', 'data-kiosk'), 'ready');
  const { stdout } = await run(['board', '--feed', path.join(s.dir, 'demo/timetable.twsnap'), '--stop', 'ORR_CEN', '--destinations', 'OCT_WMD,ORR_VMJ', '--at', at, '--json']);
  const cli = JSON.parse(stdout);
  const expected = cli.lines.map((l) => ({ name: l.name, headsign: l.headsign, deps: l.departures.map((d) => [d.time, inMin(d.in_min)]) }));
  assert.ok(expected.length >= 3, JSON.stringify(expected));
  assert.deepEqual(await shownBoard(page), expected);
  const dests = await page.$$eval('.dest', (b) => b.map((x) => x.textContent));
  assert.equal(dests.length, 2);
  const first = cli.destinations[0];
  assert.ok(dests[0].includes(`${first.standard[0].depart} → ${first.standard[0].arrive}`), dests[0]);
  assert.ok((await page.textContent('#caution')).includes('confirm on site and with the operator'));
  assert.ok((await page.textContent('#coverage')).includes('2026-12-01 to 2026-12-07'));
  // Once the service worker controls the page, cut the network and load again.
  await controlled(page);
  await context.setOffline(true);
  await page.reload();
  await page.waitForSelector('html[data-kiosk]', { timeout: 30000 });
  assert.equal(await page.getAttribute('html', 'data-kiosk'), 'ready', await page.textContent('#alert'));
  assert.ok(await page.evaluate(() => Boolean(navigator.serviceWorker.controller)), 'served by the service worker');
  assert.deepEqual((await shownBoard(page)).map((r) => r.name), expected.map((r) => r.name));
  assert.deepEqual(h.offOrigin(requests, s.server.origin), []);
  assert.deepEqual(errors, []);
  await h.shot(page, 'kiosk-board');
  await context.close();
});

test('the board redraws from the clock, and a touched destination goes back to the board after a minute', { timeout: 120000 }, async () => {
  const { page, context } = await openKiosk('demo', '2026-12-02T07:00:00Z');
  const drawn = Number(await page.getAttribute('html', 'data-drawn'));
  const before = await shownBoard(page);
  await page.clock.runFor(30_000);
  assert.ok(Number(await page.getAttribute('html', 'data-drawn')) > drawn, 'redrawn within 30 s');
  await page.clock.runFor(60_000 * 3);
  const later = await shownBoard(page);
  assert.notDeepEqual(later, before, 'three minutes on, the minutes have moved');
  await page.click('.dest[data-stop="OCT_WMD"]');
  assert.equal(await page.getAttribute('html', 'data-view'), 'detail');
  assert.ok((await page.textContent('#detail-heading')).includes('Wendmoor Depot'));
  assert.ok((await page.$$('#detail-body li')).length >= 2, 'the journey leg by leg');
  await h.shot(page, 'kiosk-detail');
  await page.clock.runFor(55_000);
  assert.equal(await page.getAttribute('html', 'data-view'), 'detail');
  await page.clock.runFor(10_000);
  assert.equal(await page.getAttribute('html', 'data-view'), 'board');
  assert.equal(await page.isVisible('#idle'), true);
  await context.close();
});

test('across the autumn clock change the board gives the times of the tz database', { timeout: 120000 }, async () => {
  // GTFS Schedule reference: times count from noon minus 12 h of the service day. On 2026-10-25
  // noon is CET (+1), so the origin is 2026-10-24T23:00Z (worked by hand). The browser's own tz
  // data says how each departure instant reads on a clock in zone CET.
  const origin = Date.parse('2026-10-24T23:00:00Z');
  const clock = new Intl.DateTimeFormat('en-GB', { timeZone: 'CET', hour: '2-digit', minute: '2-digit', hourCycle: 'h23' });
  const now = Date.parse('2026-10-25T00:20:00Z');
  const gtfs = [[1, 30], [2, 30], [3, 0], [3, 30]];
  const expected = gtfs.map(([hh, mm]) => {
    const at = origin + (hh * 3600 + mm * 60) * 1000;
    return [clock.format(at), inMin(Math.floor((at - now) / 60000))];
  });
  assert.deepEqual(expected.map((e) => e[0]), ['02:30', '02:30', '03:00', '03:30'], 'the browser agrees that 02:30 comes twice');
  const { page, context } = await openKiosk('cet', '2026-10-25T00:20:00Z');
  assert.equal(await page.textContent('#clock'), clock.format(now));
  // The board lists departures within 90 minutes, three per line.
  const within = (list) => list.filter(([, m]) => m === 'now' || Number(m.split(' ')[1]) <= 90).slice(0, 3);
  let shown = await shownBoard(page);
  assert.equal(shown.length, 1);
  assert.deepEqual(shown[0].deps, within(expected));
  // An hour on the clock reads 02:20 again (now CET): the first 02:30 has left.
  await page.clock.runFor(3600_000);
  const later = now + 3600_000;
  assert.equal(await page.textContent('#clock'), clock.format(later));
  assert.equal(clock.format(later), '02:20');
  const expectedLater = gtfs.map(([hh, mm]) => origin + (hh * 3600 + mm * 60) * 1000).filter((at) => at >= later)
    .map((at) => [clock.format(at), inMin(Math.floor((at - later) / 60000))]);
  shown = await shownBoard(page);
  assert.deepEqual(shown[0].deps, within(expectedLater));
  assert.equal(shown[0].deps.length, 3);
  await context.close();
});

test('a damaged, older or run-out timetable is said on screen, never a blank or stale board', { timeout: 120000 }, async () => {
  for (const [folder, words] of [['damaged', 'damaged'], ['old', 'format version 0']]) {
    const { page, context } = await openKiosk(folder, '2026-12-02T07:00:00Z');
    assert.equal(await page.getAttribute('html', 'data-kiosk'), 'failed');
    const alert = await page.textContent('#alert');
    assert.ok(alert.includes('cannot show departures') && alert.includes(words), alert);
    assert.equal(await page.isVisible('#alert'), true);
    assert.equal((await page.$$('#departures tbody tr')).length, 0);
    await context.close();
  }
  // Two days before the end the screen says so; after it, no times at all.
  let { page, context } = await openKiosk('demo', '2026-12-05T07:00:00Z');
  assert.equal(await page.getAttribute('html', 'data-ends-soon'), 'yes');
  assert.ok((await page.textContent('#coverage')).includes('It ends in 2 days'));
  await context.close();
  ({ page, context } = await openKiosk('demo', '2026-12-09T07:00:00Z'));
  assert.equal(await page.getAttribute('html', 'data-coverage'), 'run_out');
  assert.ok((await page.textContent('#alert')).includes('ended on 2026-12-07'));
  assert.equal((await page.$$('#departures tbody tr')).length, 0);
  assert.equal(await page.isVisible('.dest'), false);
  await context.close();
});

test('the kiosk passes axe-core WCAG 2.1 AA and the 7:1 contrast rule, board and detail', { timeout: 120000 }, async () => {
  const { page, context } = await openKiosk('demo', '2026-12-02T07:00:00Z');
  for (const view of ['board', 'detail']) {
    if (view === 'detail') await page.click('.dest');
    const aa = await new AxeBuilder({ page }).withTags(['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa']).analyze();
    const serious = aa.violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');
    assert.deepEqual(serious.map((v) => `${v.id}: ${v.nodes.map((n) => n.target).join(' ')}`), [], view);
    const aaa = await new AxeBuilder({ page }).withRules(['color-contrast-enhanced']).analyze();
    assert.deepEqual(aaa.violations.map((v) => `${v.id}: ${v.nodes.map((n) => `${n.target} ${n.any.map((a) => a.message).join()}`).join(' | ')}`), [], view);
    assert.ok(aaa.passes.length + aaa.incomplete.length > 0, 'the contrast rule ran');
  }
  await context.close();
});

test('the whole board and its caution fit one screen, landscape and portrait', { timeout: 120000 }, async () => {
  for (const viewport of [{ width: 1920, height: 1080 }, { width: 1080, height: 1920 }, { width: 1280, height: 800 }]) {
    const { page, context } = await openKiosk('demo', '2026-12-02T07:00:00Z', { viewport });
    const fit = await page.evaluate(() => {
      const c = document.getElementById('caution').getBoundingClientRect();
      return { scrolls: document.documentElement.scrollHeight > window.innerHeight, cautionIn: c.top >= 0 && c.bottom <= window.innerHeight };
    });
    assert.deepEqual(fit, { scrolls: false, cautionIn: true }, JSON.stringify(viewport));
    await h.shot(page, `kiosk-${viewport.width}x${viewport.height}`);
    await context.close();
  }
});

test('a newer kiosk folder on the server replaces the old one on screen by itself', { timeout: 120000 }, async () => {
  const folder = path.join(s.dir, 'update');
  const write = (days) => run(['kiosk', ...DEMO, '--stop', 'ORR_CEN', '--from', '2026-12-01', '--days', String(days), '--www', WWW, '--out', folder]);
  await write(5);
  const { page, context } = await openKiosk('update', '2026-12-02T07:00:00Z', { serviceWorkers: 'allow' });
  assert.ok((await page.textContent('#coverage')).includes('2026-12-01 to 2026-12-05'));
  await controlled(page);
  await write(7);
  // The hourly check, an hour on the fake clock: the new worker installs, takes over, the screen reloads.
  const reloaded = page.waitForEvent('load', { timeout: 30000 });
  await page.clock.runFor(3600_000);
  await reloaded;
  await until(page, () => document.getElementById('coverage').textContent.includes('2026-12-07'), 'the new timetable on screen');
  assert.equal(await page.getAttribute('html', 'data-kiosk'), 'ready');
  await context.close();
});
