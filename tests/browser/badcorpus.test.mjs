// A sample of the Rust bad-feed corpus (tests/support/badfeeds.rs), loaded through the page next
// to the demo city: each fatal error names the zip and the GTFS file (and line and field where
// they apply); each warning is listed under its feed with file, line and field; the demo network
// answers as before. The zips and their expected outcomes are written by `cargo test --test
// bad_feeds` into target/tmp/bad-corpus (scripts/test.sh runs the Rust tests first).

import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import fs from 'node:fs';
import path from 'node:path';
import * as h from './harness.mjs';

const DIR = path.join(h.REPO, 'target', 'tmp', 'bad-corpus');
// Sample by name: fatal (archive, missing file, header, time zone) and warnings (time, position,
// duplicate id, pathway reference). Outcomes per DEVELOPERS.md Decisions and the GTFS Schedule
// reference, as recorded beside each case in badfeeds.rs.
const SAMPLE = [
  'not a zip',
  'missing stops.txt',
  'stop_times.txt without arrival_time column',
  'invalid agency_timezone',
  'arrival_time 25:61:00',
  'latitude 91',
  'duplicate stop_id',
  'pathway to a missing stop',
];

// demo-data/README.md Case A, standard search: Quistenford → Tollimere, 2026-12-02 08:00.
const CASE_A = { from: 'Quistenford', to: 'Tollimere', date: '2026-12-02', time: '08:00' };

let server;
let browser;
let rec;
let baseline;
let index;

before(async () => {
  const idx = path.join(DIR, 'index.json');
  if (!fs.existsSync(idx)) throw new Error(`${idx} is missing: run cargo test --test bad_feeds first`);
  index = JSON.parse(fs.readFileSync(idx, 'utf8'));
  server = await h.startServer();
  browser = await h.launchBrowser();
  rec = await h.openPage(browser, { viewport: h.DESKTOP });
  await h.openApp(rec.page, server.url);
  await h.loadDemo(rec.page);
  baseline = h.journeyKey(await h.planViaForm(rec.page, CASE_A));
  assert.ok(baseline.length >= 1);
});

after(async () => {
  if (browser) await browser.close();
  if (server) await server.stop();
});

async function stillAnswers(page) {
  assert.equal(await page.getAttribute('html', 'data-feeds'), '2');
  const names = await page.$$eval('#feed-list .feed-name', (els) => els.map((e) => e.textContent).sort());
  assert.deepEqual(names, ['oskerveld-city', 'oskerveld-rail']);
  const before = await h.planCount(page);
  await page.click('#plan');
  const again = await h.waitPlan(page, before);
  assert.deepEqual(h.journeyKey(again), baseline);
}

for (const name of SAMPLE) {
  test(`corpus feed "${name}": located message, demo still answers`, async () => {
    const entry = index.find((e) => e.name === name);
    assert.ok(entry, `corpus has no feed named ${name}`);
    const { page } = rec;
    const zipName = entry.zip;
    const stem = zipName.replace(/\.zip$/, '');
    await h.pickFiles(page, [[zipName, fs.readFileSync(path.join(DIR, zipName))]]);
    let text;
    if (entry.expect === 'fatal') {
      await page.waitForFunction((z) => {
        const e = document.getElementById('feed-error');
        return !e.hidden && e.textContent.includes(z);
      }, zipName);
      await h.waitFeeds(page, 2);
      text = await page.textContent('#feed-error');
    } else {
      await h.waitFeeds(page, 3);
      const feed = page.locator('#feed-list li.feed', { hasText: stem });
      await feed.locator('summary').click();
      text = await feed.textContent();
      await page.click(`#feed-list button[data-remove="${stem}"]`);
      await h.waitFeeds(page, 2);
    }
    if (entry.file) assert.ok(text.includes(entry.file), `expected ${entry.file} in: ${text}`);
    if (entry.line) assert.match(text, new RegExp(`line ${entry.line}\\b`), text);
    if (entry.field) assert.ok(text.includes(entry.field), `expected ${entry.field} in: ${text}`);
    await stillAnswers(page);
  });
}
