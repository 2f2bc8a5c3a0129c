// Stop identity in the page: two loaded feeds may share a stop_id (the GTFS Schedule reference
// scopes ids to one feed). A stop picked from the list keeps its feed (`feed:stop_id`), and text
// that fits several stops is not guessed: the form says which stops it fits and opens the list.

import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import * as h from './harness.mjs';

let server;
let browser;
let rec;

// A minimal valid feed (GTFS Schedule reference: agency, stops, routes, trips, stop_times,
// calendar) of an invented shuttle whose first stop has the demo rail feed's stop_id and name.
function annexFeed() {
  return h.makeZip({
    'agency.txt': 'agency_id,agency_name,agency_url,agency_timezone\nAX,Annex Shuttle,https://annex.example/,Etc/GMT-1\n',
    'stops.txt': 'stop_id,stop_name,stop_lat,stop_lon\nORR_QSF,Quistenford,52.30,13.30\nAX2,Annex Depot,52.31,13.31\n',
    'routes.txt': 'route_id,agency_id,route_short_name,route_long_name,route_type\nAXR,AX,A1,Annex loop,3\n',
    'trips.txt': 'route_id,service_id,trip_id\nAXR,ALL,AXT1\n',
    'stop_times.txt': 'trip_id,arrival_time,departure_time,stop_id,stop_sequence\nAXT1,08:10:00,08:10:00,ORR_QSF,1\nAXT1,08:20:00,08:20:00,AX2,2\n',
    'calendar.txt': 'service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date\nALL,1,1,1,1,1,1,1,20260101,20271231\n',
  });
}

before(async () => {
  server = await h.startServer();
  browser = await h.launchBrowser();
  rec = await h.openPage(browser, { viewport: h.DESKTOP });
  await h.openApp(rec.page, server.url);
  await h.loadDemo(rec.page);
  await h.pickFiles(rec.page, [['annex.zip', annexFeed()]]);
  await h.waitFeeds(rec.page, 3);
});

after(async () => {
  if (browser) await browser.close();
  if (server) await server.stop();
});

test('typed text that fits stops of two feeds is not guessed', async () => {
  const { page } = rec;
  await page.fill('#from', 'Quistenford');
  await h.chooseStop(page, '#to', 'Tollimere');
  await page.fill('#date', '2026-12-02');
  await page.fill('#time', '08:00');
  const before = await h.planCount(page);
  await page.click('#plan');
  await page.waitForSelector('#form-error:not([hidden])');
  const msg = await page.textContent('#form-error');
  assert.match(msg, /fits several stops/, msg);
  assert.ok(msg.includes('oskerveld-rail:ORR_QSF') && msg.includes('annex:ORR_QSF'), msg);
  assert.equal(await h.planCount(page), before, 'no plan ran on a guess');
});

test('a stop picked from the list keeps its feed through the plan and the address', async () => {
  const { page } = rec;
  const result = await h.planViaForm(page, { from: 'Quistenford', fromPick: 'feed oskerveld-rail', to: 'Tollimere', date: '2026-12-02', time: '08:00' });
  // demo-data/README.md Case A, standard: R1 from Quistenford, arriving 08:34.
  assert.equal(result.journeys[0].arrive, '08:34');
  assert.equal(result.journeys[0].legs[0].start.feed, 'oskerveld-rail');
  const q = await h.addressQuery(page);
  assert.equal(q.from, 'oskerveld-rail:ORR_QSF');

  const annex = await h.planViaForm(page, { from: 'Quistenford', fromPick: 'feed annex', to: 'Annex Depot', date: '2026-12-02', time: '08:00' });
  assert.equal(annex.journeys[0].legs[0].start.feed, 'annex');
  assert.equal(annex.journeys[0].arrive, '08:20');
});
