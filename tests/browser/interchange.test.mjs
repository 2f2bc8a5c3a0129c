// The connections view through the page, in Chromium with the real WASM engine: one station's
// grid, time line, connections and journey, and every station's ranking and sketch, against the
// files the native CLI's `interchange` writes (the page's downloads must be the same bytes). No
// request leaves the page's origin.

import { test } from 'node:test';
import assert from 'node:assert/strict';
import fs from 'node:fs';
import path from 'node:path';
import { execFile } from 'node:child_process';
import { promisify } from 'node:util';
import * as h from './harness.mjs';

const s = h.suite('tw-ix-');

const FEEDS = ['oskerveld-city', 'oskerveld-rail'].flatMap((f) => ['--feed', `www/feeds/${f}.zip`]);

/** Runs `timeweave interchange` and returns the three files' texts. */
async function native(station, name) {
  const out = path.join(s.dir, `${name}.csv`);
  await promisify(execFile)(h.BIN, ['interchange', ...FEEDS, '--date', '2026-12-02', '--station', station, '--window', '07:00-09:00', '--out', out], { cwd: h.REPO });
  const read = (p) => fs.readFileSync(p, 'utf8');
  return { rows: read(out), pairs: read(path.join(s.dir, `${name}.pairs.csv`)), stations: read(path.join(s.dir, `${name}.stations.csv`)) };
}

/** Parses simple CSV (no quoted commas in these files) into objects. */
function records(text) {
  const [head, ...lines] = text.trim().split(/\r?\n/);
  const keys = head.split(',');
  return lines.map((l) => Object.fromEntries(l.split(',').map((v, i) => [keys[i], v])));
}

/** A page with the demo city loaded and the connections view shown. */
async function openView() {
  const rec = await h.openPage(s.browser);
  await h.openApp(rec.page, s.server.url);
  await h.loadDemo(rec.page);
  await rec.page.click('#tab-interchange');
  await rec.page.waitForSelector('html[data-view="interchange"]');
  return rec;
}

async function download(page, selector) {
  const [dl] = await Promise.all([page.waitForEvent('download'), page.click(selector)]);
  return fs.readFileSync(await dl.path(), 'utf8');
}

test('one station: the grid, time line, connections and downloads agree with the CLI', async () => {
  const cli = await native('ORR_CEN', 'cen');
  const pairs = records(cli.pairs);
  const rec = await openView();
  const { page } = rec;
  await h.chooseStop(page, '#ix-station', 'Oskerveld Central');
  await page.fill('#ix-date', '2026-12-02');
  await page.click('#ix-run');
  await page.waitForSelector('#ix-grid .ix-cell');
  await page.waitForSelector('#ix-table tbody tr');
  // One cell per route pair, each showing the CLI's share made within 10 min.
  const cells = await page.$$eval('#ix-grid .ix-cell', (bs) => bs.map((b) => b.getAttribute('aria-label')));
  assert.equal(cells.length, pairs.length);
  const shown = cells.map((c) => Number(/: (\d+) % of (\d+) arrivals/.exec(c)[1])).sort((a, b) => a - b);
  const expected = pairs.map((p) => Math.round(Number(p.made_within_10) * 100)).sort((a, b) => a - b);
  assert.deepEqual(shown, expected);
  // The cell with the most near misses is chosen first: its connections and time line.
  const most = pairs.reduce((a, p) => (Number(p.near_misses) > Number(a.near_misses) ? p : a));
  const chosen = await page.getAttribute('#ix-grid .ix-cell[aria-pressed="true"]', 'aria-label');
  assert.match(chosen, new RegExp(`, ${most.near_misses} near misses$`));
  const rows = await page.$$eval('#ix-table tbody tr', (trs) => trs.length);
  assert.equal(rows, Number(most.arrivals));
  const dashed = await page.$$eval('#ix-line line.ix-missed', (ls) => ls.length);
  assert.equal(dashed, Number(most.near_misses), 'one dashed line per near miss');
  assert.match(await page.textContent('#ix-line title'), new RegExp(`${most.near_misses} near misses \\(dashed lines\\)`));
  const summary = await page.textContent('#ix-summary');
  const ms = Number(/Computed in (\d+) ms/.exec(summary)[1]);
  console.log(`# one station (ORR_CEN, 07:00-09:00) audited in the page in ${ms} ms`);
  // A made connection opens as a journey of two rides.
  const made = await page.$$('#ix-table tbody tr');
  for (const tr of made) {
    if ((await tr.textContent()).includes('made')) {
      await tr.click();
      break;
    }
  }
  await page.waitForFunction(() => document.querySelector('#ix-journey').textContent.startsWith('As a journey:'));
  await h.shot(page, 'interchange-station');
  // The downloads are the CLI's files, byte for byte.
  assert.equal(await download(page, '#ix-csv-rows'), cli.rows);
  assert.equal(await download(page, '#ix-csv-pairs'), cli.pairs);
  assert.deepEqual(h.offOrigin(rec.requests, new URL(s.server.url).origin), []);
  assert.deepEqual(rec.errors, []);
  await rec.context.close();
});

test('every station: the ranking and the sketch sized by near misses agree with the CLI', async () => {
  const cli = await native('all', 'all');
  const stations = records(cli.stations);
  const rec = await openView();
  const { page } = rec;
  await page.check('input[name="ix-scope"][value="all"]');
  assert.equal(await page.isVisible('#ix-station'), false, 'no station to choose');
  await page.fill('#ix-date', '2026-12-02');
  await page.click('#ix-run');
  await page.waitForSelector('#ix-table tbody tr');
  const ranked = await page.$$eval('#ix-table tbody tr', (trs) => trs.map((tr) => [tr.children[1].textContent, Number(tr.children[4].textContent)]));
  assert.deepEqual(ranked, stations.map((s) => [`${s.name} [${s.station}]`, Number(s.near_misses)]));
  const sized = await page.$$eval('#ix-sketch circle.sk-sized-stop', (cs) => cs.map((c) => Number(c.getAttribute('r'))));
  assert.equal(sized.length, stations.length);
  assert.match(await page.textContent('#ix-sketch title'), /area grows with their near misses/);
  assert.equal(await download(page, '#ix-csv-stations'), cli.stations);
  // Bad input: a horizon of 0 is refused in the form, with its reason.
  await page.fill('#ix-horizon', '0');
  await page.click('#ix-run');
  assert.match(await page.textContent('#ix-error'), /Horizon: give whole minutes, 1 to 1440/);
  await h.shot(page, 'interchange-network');
  // Choosing a station in the ranking audits it.
  await page.fill('#ix-horizon', '');
  await page.click('#ix-table tbody tr:first-child');
  await page.waitForSelector('#ix-grid .ix-cell');
  assert.deepEqual(h.offOrigin(rec.requests, new URL(s.server.url).origin), []);
  assert.deepEqual(rec.errors, []);
  await rec.context.close();
});
