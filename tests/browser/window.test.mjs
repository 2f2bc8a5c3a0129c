// The window views through the page, in Chromium with the real WASM engine: reach over a window
// (table, coloured sketch, saw-tooth with its text alternative, CSV download) must equal the native
// CLI's `reach --window --json`; the matrix in Web Workers must write the very file the CLI's
// `matrix` writes, and can be cancelled. No request leaves the page's origin.

import { test } from 'node:test';
import assert from 'node:assert/strict';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import * as h from './harness.mjs';

const s = h.suite();

const FEEDS = ['oskerveld-city', 'oskerveld-rail'].flatMap((f) => ['--feed', `www/feeds/${f}.zip`]);

test('reach over a window in the page equals the CLI, with sketch, saw-tooth and CSV', async () => {
  const native = await h.cli(['reach', ...FEEDS, '--from', 'ORR_QSF', '--date', '2026-12-02', '--window', '07:00-09:00', '--cutoff', '30', '--json']);
  assert.ok(native.places.length > 20, `${native.places.length} places`);

  const rec = await h.openPage(s.browser);
  const { page } = rec;
  await h.openApp(page, s.server.url);
  await h.loadDemo(page);
  await page.click('#tab-window');
  await page.waitForSelector('html[data-view="window"]');
  assert.equal(await page.isVisible('#view-window'), true);
  assert.equal(await page.isVisible('#main'), false, 'one view at a time');
  await h.chooseStop(page, '#w-from', 'Quistenford');
  await page.fill('#w-date', '2026-12-02');
  await page.fill('#w-cut', '30');
  await page.click('#window-form button[type="submit"]');
  await page.waitForSelector('#w-table table tbody tr');
  const rows = await page.$$eval('#w-table tbody tr', (trs) => trs.map((tr) => Array.from(tr.children).map((td) => td.textContent)));
  assert.equal(rows.length, native.places.length, 'one row per place reached');
  // Same places, same shortest and median minutes (the page shows minutes to one decimal).
  const byName = new Map(rows.map((r) => [r[0], r]));
  for (const p of native.places) {
    const r = byName.get(`${p.name} [${p.stop_id}]`);
    assert.ok(r, `row for ${p.stop_id}`);
    assert.equal(r[1], (p.min_s / 60).toFixed(1), `shortest to ${p.stop_id}`);
    assert.equal(r[2], p.percentiles_s[0] == null ? '—' : (p.percentiles_s[0] / 60).toFixed(1), `median to ${p.stop_id}`);
  }
  // Sorting by a header orders the rows by that column.
  await page.click('#w-table th:nth-child(2) button');
  await page.click('#w-table th:nth-child(2) button');
  const desc = await page.$$eval('#w-table tbody tr td:nth-child(2)', (tds) => tds.map((t) => Number(t.textContent)));
  assert.deepEqual(desc, [...desc].sort((a, b) => b - a), 'sorted descending by the shortest time');
  // The sketch colours the places reached and says so in its title; the legend names the classes.
  const coloured = await page.$$eval('#w-sketch circle.sk-valued', (cs) => cs.length);
  // (Stops drawn on one spot are drawn once, so a few places share a dot.)
  assert.ok(coloured >= 0.8 * native.places.length, `${coloured} coloured stops for ${native.places.length} places`);
  assert.match(await page.textContent('#w-sketch title'), /coloured by median minutes from Quistenford/);
  assert.match(await page.textContent('#w-legend'), /not reached/);
  // A row opens the pair across the window: 120 departures, text alternative with percentiles.
  await page.click('#w-table tbody tr:first-child');
  await page.waitForSelector('#w-saw path.saw');
  const alt = await page.textContent('#w-saw title');
  assert.match(alt, /for each of 120 departures, 07:00 to 08:59/);
  assert.match(alt, /50th percentile/);
  await h.shot(page, 'window-reach');
  // The CSV download lists every place reached.
  const [dl] = await Promise.all([page.waitForEvent('download'), page.click('#w-csv')]);
  const text = fs.readFileSync(await dl.path(), 'utf8');
  assert.equal(text.trim().split(/\r\n/).length, native.places.length + 1);
  assert.deepEqual(h.offOrigin(rec.requests, new URL(s.server.url).origin), []);
  assert.deepEqual(rec.errors, []);
  await rec.context.close();
});

test('the matrix in Web Workers writes the file the CLI writes, and can be cancelled', async () => {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'timeweave-matrix-'));
  const cliCsv = path.join(dir, 'cli.csv');
  const args = ['--date', '2026-12-02', '--window', '07:00-08:00', '--step', '2', '--percentiles', '50,90', '--cutoff', '40', '--origins', 'ORR_QSF,OCT_TPL,ORR_TLM', '--out', cliCsv];
  const { execFile } = await import('node:child_process');
  await new Promise((resolve, reject) => execFile(h.BIN, ['matrix', ...FEEDS, ...args], { cwd: h.REPO }, (e) => (e ? reject(e) : resolve())));

  const rec = await h.openPage(s.browser);
  const { page } = rec;
  await h.openApp(page, s.server.url);
  await h.loadDemo(page);
  await page.click('#tab-matrix');
  await page.waitForSelector('html[data-view="matrix"]');
  await page.fill('#m-date', '2026-12-02');
  await page.fill('#m-start', '07:00');
  await page.fill('#m-end', '08:00');
  await page.fill('#m-step', '2');
  await page.fill('#m-pct', '50,90');
  await page.fill('#m-cut', '40');
  await page.fill('#m-workers', '2');
  await page.fill('#m-origins', 'ORR_QSF, OCT_TPL\nORR_TLM');
  await page.click('#m-run');
  await page.waitForSelector('#m-csv:not([disabled])', { timeout: 60000 });
  assert.match(await page.textContent('#m-summary'), /from 3 origins.*on 2 workers/);
  for (const [button, ext] of [['#m-csv', 'csv'], ['#m-parquet', 'parquet']]) {
    const [dl] = await Promise.all([page.waitForEvent('download'), page.click(button)]);
    const bytes = fs.readFileSync(await dl.path());
    if (ext === 'csv') assert.equal(bytes.toString('utf8'), fs.readFileSync(cliCsv, 'utf8'), 'the same CSV as the CLI');
    else assert.equal(bytes.subarray(0, 4).toString(), 'PAR1', 'a Parquet file (magic bytes PAR1, Apache Parquet format)');
  }
  // Bad input is refused before any worker starts.
  await page.fill('#m-origins', 'ORR_QSF, NOPE');
  await page.click('#m-run');
  await page.waitForSelector('#m-error:not([hidden])');
  assert.match(await page.textContent('#m-error'), /no station or stop "NOPE"/);
  await page.fill('#m-pct', '50,101');
  await page.fill('#m-origins', '');
  await page.click('#m-run');
  await page.waitForFunction(() => /outside 0–100/.test(document.querySelector('#m-error').textContent));
  // All origins over the whole day at 1-minute steps, cancelled while the workers start.
  await page.fill('#m-pct', '');
  await page.fill('#m-step', '1');
  await page.fill('#m-start', '00:00');
  await page.fill('#m-end', '23:59');
  await page.click('#m-run');
  await page.waitForSelector('#m-progress-box:not([hidden])');
  await page.click('#m-cancel');
  await page.waitForFunction(() => /Cancelled/.test(document.querySelector('#m-summary').textContent), null, { timeout: 30000 });
  assert.equal(await page.isDisabled('#m-csv'), true, 'nothing to download after a cancel');
  assert.deepEqual(h.offOrigin(rec.requests, new URL(s.server.url).origin), []);
  assert.deepEqual(rec.errors.filter((e) => !/cancelled/.test(e)), []);
  await rec.context.close();
});
