// The step-free audit view through the page, in Chromium with the real WASM engine (one thread):
// its files must be the ones the native CLI's `stepfree` writes on all cores for the same pairs,
// outage and seed; the report carries the caution on screen and in print, marks the elements to
// fix first on the sketch, and refuses bad input with its reason. No request leaves the origin.

import { test } from 'node:test';
import assert from 'node:assert/strict';
import fs from 'node:fs';
import path from 'node:path';
import { execFile } from 'node:child_process';
import { promisify } from 'node:util';
import * as h from './harness.mjs';

const s = h.suite('tw-sf-');

const FEEDS = ['oskerveld-city', 'oskerveld-rail'].flatMap((f) => ['--feed', `www/feeds/${f}.zip`]);

async function native(extra) {
  const out = path.join(s.dir, `run-${Math.random().toString(36).slice(2)}`);
  await promisify(execFile)(h.BIN, ['stepfree', ...FEEDS, '--date', '2026-12-02', '--window', '07:00-08:00', '--pairs', 'sample:300', '--seed', '3', ...extra, '--out', out], { cwd: h.REPO });
  return (name) => fs.readFileSync(path.join(out, name), 'utf8');
}

async function download(page, selector) {
  const [dl] = await Promise.all([page.waitForEvent('download'), page.click(selector)]);
  return fs.readFileSync(await dl.path(), 'utf8');
}

test('the audit in the page writes the CLI files, with the outage of a lift and the caution in print', async () => {
  const plain = await native([]);
  const lift = await native(['--outage', 'pathway:PW_P1_ELEVATOR']);
  const rec = await h.openPage(s.browser);
  const { page } = rec;
  await h.openApp(page, s.server.url);
  await h.loadDemo(page);
  await page.click('#tab-stepfree');
  await page.waitForSelector('html[data-view="stepfree"]');
  assert.match(await page.textContent('#view-stepfree .caution-box'), /Results reflect the feed's data, which may be incomplete or out of date/);
  await page.fill('#sf-date', '2026-12-02');
  await page.fill('#sf-n', '300');
  await page.fill('#sf-seed', '3');
  await page.click('#sf-run');
  await page.waitForSelector('#sf-csv-pairs:not([disabled])');
  assert.match(await page.textContent('#sf-summary'), /^300 pairs, 2026-12-02, 60 departures/);
  for (const t of ['pairs', 'elements', 'completeness']) assert.equal(await download(page, `#sf-csv-${t}`), plain(`${t}.csv`), `${t}.csv`);
  // The elements to fix first are marked on the sketch by rank.
  assert.ok((await page.$$('#sf-sketch circle.sk-sized-stop')).length >= 1);
  assert.ok((await page.$$('#sf-sketch text.sk-rank')).length >= 1);
  assert.match(await page.textContent('#sf-sketch title'), /Places of the first \d+ elements to fix/);
  // The lift out of service, picked from the list.
  await page.check('#sf-outages input[value="pathway:PW_P1_ELEVATOR"]');
  await page.click('#sf-run');
  await page.waitForSelector('#sf-csv-outages:not([disabled])');
  assert.equal(await download(page, '#sf-csv-pairs'), lift('pairs.csv'));
  assert.equal(await download(page, '#sf-csv-outages'), lift('outages.csv'));
  assert.match(await page.textContent('#sf-outage-summary'), /pathway PW_P1_ELEVATOR .* out of service: \d+ of \d+ step-free pairs lose step-free access, \d+ are slower/);
  // The printed report: the caution and the tables, without the form.
  await page.emulateMedia({ media: 'print' });
  assert.equal(await page.isVisible('#sf-form'), false);
  assert.equal(await page.isVisible('#view-stepfree .report .caution-box'), true);
  assert.equal(await page.isVisible('#sf-elements table'), true);
  await page.emulateMedia({ media: 'screen' });
  await h.shot(page, 'stepfree-report');
  assert.deepEqual(h.offOrigin(rec.requests, new URL(s.server.url).origin), []);
  assert.deepEqual(rec.errors, []);
  await rec.context.close();
});

test('bad pairs and unknown outages are refused with their reason', async () => {
  const rec = await h.openPage(s.browser);
  const { page } = rec;
  await h.openApp(page, s.server.url);
  await h.loadDemo(page);
  await page.click('#tab-stepfree');
  await page.waitForSelector('html[data-view="stepfree"]');
  await page.fill('#sf-date', '2026-12-02');
  await page.check('input[name="sf-pairs"][value="list"]');
  await page.fill('#sf-list', 'ORR_QSF,ORR_CEN\nORR_QSF');
  await page.click('#sf-run');
  assert.match(await page.textContent('#sf-error'), /Pairs, line 2: "ORR_QSF" is not "from id, to id"/);
  await page.fill('#sf-list', 'ORR_QSF,ORR_CEN');
  await page.fill('#sf-outage-ids', 'PW_P1_ELEVATR');
  await page.click('#sf-run');
  await page.waitForFunction(() => !document.querySelector('#sf-error').hidden && document.querySelector('#sf-error').textContent.includes('did you mean'));
  assert.match(await page.textContent('#sf-error'), /pathway:PW_P1_ELEVATOR/);
  assert.deepEqual(rec.errors, []);
  await rec.context.close();
});
