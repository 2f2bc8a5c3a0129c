// The before-and-after view through the page, in Chromium with the real WASM engine: the demo
// city as loaded, against the same city without its ferry given as the version after; the page's
// files must be the ones the native CLI's `compare` writes for the same two versions, the sketch
// colours places by their change with a legend, and the places only the ferry served are named.
// No request leaves the origin.

import { test } from 'node:test';
import assert from 'node:assert/strict';
import fs from 'node:fs';
import path from 'node:path';
import { execFile } from 'node:child_process';
import { promisify } from 'node:util';
import * as h from './harness.mjs';

const s = h.suite('tw-cmp-');

/** The demo city's files without route `route`'s trips, as a zip. */
function cityWithout(route) {
  const src = path.join(h.REPO, 'demo-data', 'oskerveld-city');
  const files = {};
  for (const f of fs.readdirSync(src).filter((f) => f.endsWith('.txt'))) files[f] = fs.readFileSync(path.join(src, f), 'utf8');
  const gone = new Set();
  files['trips.txt'] = files['trips.txt'].split('\n').filter((l) => {
    if (!l.startsWith(`${route},`)) return true;
    gone.add(l.split(',')[2]);
    return false;
  }).join('\n');
  files['stop_times.txt'] = files['stop_times.txt'].split('\n').filter((l) => !gone.has(l.split(',')[0])).join('\n');
  return h.makeZip(files);
}

async function download(page, selector) {
  const [dl] = await Promise.all([page.waitForEvent('download'), page.click(selector)]);
  return fs.readFileSync(await dl.path(), 'utf8');
}

test('the demo without its ferry: the page writes the CLI files and names the places that lose service', async () => {
  const zip = cityWithout('F1');
  const afterZip = path.join(s.dir, 'oskerveld-city.zip');
  fs.writeFileSync(afterZip, zip);
  const out = path.join(s.dir, 'cli');
  const rail = 'www/feeds/oskerveld-rail.zip';
  await promisify(execFile)(h.BIN, ['compare', '--before', 'www/feeds/oskerveld-city.zip', '--before', rail, '--after', afterZip, '--after', rail, '--date', '2026-12-02', '--window', '07:00-09:00', '--out', out], { cwd: h.REPO });
  const cli = (name) => fs.readFileSync(path.join(out, name), 'utf8');

  const rec = await h.openPage(s.browser);
  const { page } = rec;
  await h.openApp(page, s.server.url);
  await h.loadDemo(page);
  await page.click('#tab-compare');
  await page.waitForSelector('html[data-view="compare"]');
  await page.fill('#cmp-date', '2026-12-02');
  // Without the version after, the form says what is missing.
  await page.click('#cmp-run');
  assert.match(await page.textContent('#cmp-error'), /Choose the feed files of the version after/);
  await page.setInputFiles('#cmp-after', [
    { name: 'oskerveld-city.zip', mimeType: 'application/zip', buffer: zip },
    { name: 'oskerveld-rail.zip', mimeType: 'application/zip', buffer: fs.readFileSync(path.join(h.REPO, rail)) },
  ]);
  await page.waitForFunction(() => document.querySelector('#cmp-after-list').textContent.startsWith('After:'));
  await page.click('#cmp-run');
  await page.waitForSelector('#cmp-csv-pairs:not([disabled])');
  const summary = await page.textContent('#cmp-summary');
  assert.match(summary, /% of pairs are more than 5 min slower/);
  assert.match(summary, /3 places lose all service/);
  for (const t of ['pairs', 'stations', 'routes']) assert.equal(await download(page, `#cmp-csv-${t}`), cli(`${t}.csv`), `${t}.csv`);
  // The sketch: places coloured by their change, the legend names the classes.
  assert.ok((await page.$$('#cmp-sketch circle.sk-valued')).length > 20);
  assert.match(await page.textContent('#cmp-sketch title'), /coloured by the median change/);
  assert.match(await page.textContent('#cmp-legend'), /over 10 min slower/);
  await h.shot(page, 'compare');
  assert.deepEqual(h.offOrigin(rec.requests, new URL(s.server.url).origin), []);
  assert.deepEqual(rec.errors, []);
  await rec.context.close();
});
