// Bad input and cancelling: a clear error naming the file, and nothing already loaded is lost.

import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import * as h from './harness.mjs';

let server;
let browser;
let rec;
let baseline;

// demo-data/README.md Case A, standard search: Quistenford → Tollimere, 2026-12-02 08:00.
const CASE_A = { from: 'Quistenford', to: 'Tollimere', date: '2026-12-02', time: '08:00' };

before(async () => {
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

test('a file that is not a zip: error names the file, earlier feeds still answer', async () => {
  const { page } = rec;
  await h.pickFiles(page, [['timetable-notes.zip', Buffer.from('stop_id,stop_name\nnot,a zip at all\n')]]);
  await page.waitForSelector('#feed-error:not([hidden])');
  await h.waitFeeds(page, 2);
  const text = await page.textContent('#feed-error');
  assert.ok(text.includes('timetable-notes.zip'), text);
  // The message says what is wrong: a zip archive was expected (PKWARE APPNOTE: a zip starts with "PK").
  assert.match(text, /zip/i);
  assert.match(text, /Still loaded and usable: .*oskerveld-city/);
  assert.equal(await page.getAttribute('#feed-error', 'role'), 'alert');
  await h.shot(page, 'desktop-error-not-zip');
  await stillAnswers(page);
});

test('a zip without stops.txt: error names the file and stops.txt', async () => {
  const { page } = rec;
  // Required files per the GTFS Schedule reference: agency, routes, trips, stop_times, and stops
  // (stops.txt is required unless locations.geojson is given); this zip leaves stops.txt out.
  const zip = h.makeZip({
    'agency.txt': 'agency_id,agency_name,agency_url,agency_timezone\nA,Nowhere Lines,https://nowhere.example/,Etc/GMT-1\n',
    'routes.txt': 'route_id,agency_id,route_short_name,route_type\nR,A,9,3\n',
    'trips.txt': 'route_id,service_id,trip_id\nR,S,T\n',
    'stop_times.txt': 'trip_id,arrival_time,departure_time,stop_id,stop_sequence\nT,08:00:00,08:00:00,X,1\nT,08:05:00,08:05:00,Y,2\n',
    'calendar.txt': 'service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date\nS,1,1,1,1,1,1,1,20260101,20271231\n',
  });
  await h.pickFiles(page, [['no-stops.zip', zip]]);
  await page.waitForFunction(() => {
    const e = document.getElementById('feed-error');
    return !e.hidden && e.textContent.includes('no-stops.zip');
  });
  await h.waitFeeds(page, 2);
  const text = await page.textContent('#feed-error');
  assert.ok(text.includes('stops.txt'), text);
  await h.shot(page, 'desktop-error-no-stops');
  await stillAnswers(page);
});

test('a row with a bad value: error or warning names file, line and field', async () => {
  const { page } = rec;
  // GTFS Schedule reference, stops.txt: stop_lat is a latitude, -90..90.
  const zip = h.makeZip({
    'agency.txt': 'agency_id,agency_name,agency_url,agency_timezone\nA,Nowhere Lines,https://nowhere.example/,Etc/GMT-1\n',
    'stops.txt': 'stop_id,stop_name,stop_lat,stop_lon\nX,First,52.2,13.2\nY,Second,north,13.21\n',
    'routes.txt': 'route_id,agency_id,route_short_name,route_type\nR,A,9,3\n',
    'trips.txt': 'route_id,service_id,trip_id\nR,S,T\n',
    'stop_times.txt': 'trip_id,arrival_time,departure_time,stop_id,stop_sequence\nT,08:00:00,08:00:00,X,1\nT,08:05:00,08:05:00,Y,2\n',
    'calendar.txt': 'service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date\nS,1,1,1,1,1,1,1,20260101,20271231\n',
  });
  await h.pickFiles(page, [['bad-latitude.zip', zip]]);
  await page.waitForFunction(() => {
    const e = document.getElementById('feed-error');
    const list = document.getElementById('feed-list');
    return (!e.hidden && e.textContent.includes('bad-latitude.zip')) || list.textContent.includes('bad-latitude');
  });
  await page.waitForSelector('html[data-loading="no"]');
  const failed = await page.$eval('#feed-error', (e) => !e.hidden && e.textContent.includes('bad-latitude.zip'));
  let text;
  if (failed) {
    text = await page.textContent('#feed-error');
  } else {
    // Loaded with a warning instead: it must be listed under the feed.
    const feed = page.locator('#feed-list li.feed', { hasText: 'bad-latitude' });
    await feed.locator('summary').click();
    text = await feed.textContent();
    await page.click('#feed-list button[data-remove="bad-latitude"]');
    await h.waitFeeds(page, 2);
  }
  assert.ok(text.includes('stops.txt'), text);
  assert.match(text, /line 3/i, text); // header is line 1 (DEVELOPERS.md FeedIssue)
  assert.ok(text.includes('stop_lat'), text);
  assert.ok(text.includes('north'), text);
  await stillAnswers(page);
});

/** A valid but large feed (GTFS Schedule reference files), so that loading it takes a while. */
function bigFeed(trips = 48000, stopsPerTrip = 16) {
  const stops = ['stop_id,stop_name,stop_lat,stop_lon'];
  for (let i = 0; i < 400; i++) stops.push(`B${i},Bulk stop ${i},${(52.3 + (i % 20) * 0.002).toFixed(4)},${(13.3 + Math.floor(i / 20) * 0.003).toFixed(4)}`);
  const tripRows = ['route_id,service_id,trip_id'];
  const st = ['trip_id,arrival_time,departure_time,stop_id,stop_sequence'];
  const hms = (m) => `${String(Math.floor(m / 60)).padStart(2, '0')}:${String(m % 60).padStart(2, '0')}:00`;
  for (let t = 0; t < trips; t++) {
    tripRows.push(`BR,S,BT${t}`);
    const start = 300 + (t % 1000);
    for (let k = 0; k < stopsPerTrip; k++) {
      const time = hms(start + 2 * k);
      st.push(`BT${t},${time},${time},B${(t * 7 + k * 13) % 400},${k + 1}`);
    }
  }
  return h.makeZip({
    'agency.txt': 'agency_id,agency_name,agency_url,agency_timezone\nBA,Bulk Lines,https://bulk.example/,Etc/GMT-1\n',
    'stops.txt': `${stops.join('\n')}\n`,
    'routes.txt': 'route_id,agency_id,route_short_name,route_type\nBR,BA,B,3\n',
    'trips.txt': `${tripRows.join('\n')}\n`,
    'stop_times.txt': `${st.join('\n')}\n`,
    'calendar.txt': 'service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date\nS,1,1,1,1,1,1,1,20260101,20271231\n',
  });
}

test('cancelling a load restarts the engine and keeps the feeds loaded before', async () => {
  const { page } = rec;
  await h.pickFiles(page, [['bulk-feed.zip', bigFeed()]]);
  // Cancel as soon as the engine is inside the load (a stage from its progress callback): in the
  // page itself, since the load takes well under a second and a click sent from here could
  // land after it.
  const stage = await page.evaluate(
    () =>
      new Promise((resolve, reject) => {
        const until = performance.now() + 20000;
        const look = () => {
          const text = document.querySelector('#loads .load-stage')?.textContent || '';
          if (/unzipping|parsing|building/i.test(text)) {
            document.getElementById('cancel-load').click();
            resolve(text);
          } else if (performance.now() > until) {
            reject(new Error(`no load stage shown within 20 s (stage text: "${text}")`));
          } else {
            requestAnimationFrame(look);
          }
        };
        look();
      }),
  );
  await page.waitForSelector('html[data-loading="no"]', { timeout: 60000 });
  await h.shot(page, 'desktop-load-cancelled');
  await page.waitForFunction(() => /cancelled/.test(document.getElementById('status').textContent));
  const names = await page.$$eval('#feed-list .feed-name', (els) => els.map((e) => e.textContent).sort());
  assert.deepEqual(names, ['oskerveld-city', 'oskerveld-rail'], `after cancelling at stage "${stage}"`);
  assert.match(await page.textContent('#status'), /Still loaded: oskerveld-city, oskerveld-rail/);
  // The replacement engine has the earlier feeds again and answers as before.
  await stillAnswers(page);
  assert.deepEqual(rec.dialogs, []);
});
