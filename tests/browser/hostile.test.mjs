// Feed text is data: a feed whose names are HTML must show them literally and run nothing.

import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import * as h from './harness.mjs';

let server;
let browser;
let rec;

const STOP_A = '<img src=x onerror=alert(1)>';
const STOP_B = '"Quay" & <b>bold</b> \u2028 <svg onload=alert(2)>';
const ROUTE = '<i>7</i>';
const HEADSIGN = '<iframe src=javascript:alert(3)></iframe>';

// A minimal valid feed per the GTFS Schedule reference (agency, stops, routes, trips, stop_times,
// calendar), CSV quoting per RFC 4180. route_color = route_text_color on purpose: the page must
// still show a readable chip.
function hostileFeed() {
  const q = (s) => `"${s.replace(/"/g, '""')}"`;
  return h.makeZip({
    'agency.txt': `agency_id,agency_name,agency_url,agency_timezone\nHX,${q('<script>alert(4)</script> Lines')},https://hostile.example/,Etc/GMT-1\n`,
    'stops.txt': `stop_id,stop_name,stop_lat,stop_lon\nH1,${q(STOP_A)},52.1,13.1\nH2,${q(STOP_B)},52.101,13.112\n`,
    'routes.txt': `route_id,agency_id,route_short_name,route_long_name,route_type,route_color,route_text_color\nHR,HX,${q(ROUTE)},${q('<style>*{display:none}</style>')},3,FFFFFF,FFFFFF\n`,
    'trips.txt': `route_id,service_id,trip_id,trip_headsign\nHR,ALL,HT1,${q(HEADSIGN)}\n`,
    'stop_times.txt': 'trip_id,arrival_time,departure_time,stop_id,stop_sequence\nHT1,08:10:00,08:10:00,H1,1\nHT1,08:20:00,08:20:00,H2,2\n',
    'calendar.txt': 'service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date\nALL,1,1,1,1,1,1,1,20260101,20271231\n',
  });
}

before(async () => {
  server = await h.startServer();
  browser = await h.launchBrowser();
  rec = await h.openPage(browser, { viewport: h.DESKTOP });
  await h.openApp(rec.page, server.url);
});

after(async () => {
  if (browser) await browser.close();
  if (server) await server.stop();
});

test('a stop named like HTML appears literally and no script runs', async () => {
  const { page, dialogs } = rec;
  await h.pickFiles(page, [['hostile.zip', hostileFeed()]]);
  await h.waitFeeds(page, 1);

  await page.focus('#from');
  await page.keyboard.type('onerror');
  await page.waitForSelector('#from-list:not([hidden]) [role="option"]');
  assert.ok((await page.textContent('#from-list')).includes(STOP_A));
  await page.keyboard.press('ArrowDown');
  await page.keyboard.press('Enter');
  assert.equal(await page.inputValue('#from'), STOP_A);

  const result = await h.planViaForm(page, { from: 'onerror', fromPick: STOP_A, to: 'Quay', date: '2026-12-02', time: '08:00' });
  assert.equal(result.journeys.length >= 1, true, JSON.stringify(result.nothing_found));
  const detail = await page.textContent('#detail');
  assert.ok(detail.includes(STOP_A), detail);
  assert.ok(detail.includes('<b>bold</b>'), detail);
  assert.ok(detail.includes(ROUTE), detail);
  assert.ok(detail.includes(HEADSIGN), detail);
  assert.ok((await page.textContent('#results')).includes(ROUTE));

  // Nothing from the feed became an element (HTML Living Standard: text nodes are not parsed).
  const injected = await page.evaluate(() => ({
    img: document.querySelectorAll('img').length,
    iframe: document.querySelectorAll('iframe').length,
    b: document.querySelectorAll('#detail b, #results b').length,
    i: document.querySelectorAll('#detail i, #results i').length,
    script: document.querySelectorAll('body script').length,
    svgInDetail: document.querySelectorAll('#detail svg').length,
    styleEls: document.querySelectorAll('style').length,
  }));
  assert.deepEqual(injected, { img: 0, iframe: 0, b: 0, i: 0, script: 0, svgInDetail: 0, styleEls: 0 });
  // The sketch labels are SVG text nodes carrying the literal name.
  const labels = await page.$$eval('#sketch text', (ts) => ts.map((t) => t.textContent));
  assert.ok(labels.includes(STOP_A), JSON.stringify(labels));

  // White on white from the feed is replaced by a readable pair (WCAG 2.1 SC 1.4.3, 4.5:1).
  const chip = await page.$eval('#detail .chip', (c) => [getComputedStyle(c).backgroundColor, getComputedStyle(c).color]);
  assert.deepEqual(chip, ['rgb(255, 255, 255)', 'rgb(0, 0, 0)']);

  await page.waitForTimeout(300);
  assert.deepEqual(dialogs, []);
  assert.deepEqual(rec.errors, []);
  assert.deepEqual(h.offOrigin(rec.requests, server.origin), []);
  await h.shot(page, 'desktop-hostile-feed');
});
