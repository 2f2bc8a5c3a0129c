// Step-free searches in the page, against the designed cases of demo-data/README.md
// ("Designed step-free cases", date Wednesday 2026-12-02), which demo-data/check_city.py
// recomputes with a search of its own.

import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import * as h from './harness.mjs';

let server;
let browser;
let rec;

const CAUTION = "Results reflect the feed's data, which may be incomplete or out of date. Confirm on site and with the operator; local codes and licensed practice prevail.";

before(async () => {
  server = await h.startServer();
  browser = await h.launchBrowser();
  rec = await h.openPage(browser, { viewport: h.DESKTOP });
  await h.openApp(rec.page, server.url);
  await h.loadDemo(rec.page);
});

after(async () => {
  if (browser) await browser.close();
  if (server) await server.stop();
});

const CASE_A = { from: 'Quistenford', to: 'Tollimere', date: '2026-12-02', time: '08:00' };

function rideTrips(it) {
  return it.legs.filter((l) => l.kind === 'ride').map((l) => l.trip_id);
}

test('case A: the step-free option changes the train (trip wheelchair_accessible)', async () => {
  const { page } = rec;
  const off = await h.planViaForm(page, { ...CASE_A, sf: 'off' });
  // demo-data/README.md Case A, standard: R1_WKD_0_0754 dep 08:03, arrives 08:34, status "no".
  assert.equal(off.journeys[0].arrive, '08:34');
  assert.deepEqual(rideTrips(off.journeys[0]), ['R1_WKD_0_0754']);
  assert.equal(off.journeys[0].step_free, 'no');
  assert.equal(await page.isVisible('#sf-notes'), false, 'no step-free notes on a standard search');

  const lenient = await h.planViaForm(page, { ...CASE_A, sf: 'lenient' });
  // demo-data/README.md Case A, lenient: R1_WKD_0_0824, arrives 09:04, +30 min (1800 s).
  assert.equal(lenient.journeys[0].arrive, '09:04');
  assert.deepEqual(rideTrips(lenient.journeys[0]), ['R1_WKD_0_0824']);
  assert.equal(lenient.step_free_extra_s, 1800);
  assert.equal(await page.textContent('#sf-extra'), 'The step-free journey arrives 30 min later than the standard one.');

  const strict = await h.planViaForm(page, { ...CASE_A, sf: 'strict' });
  // demo-data/README.md Case A, strict: R1_WKD_0_0854, arrives 09:34, +60 min (3600 s).
  assert.equal(strict.journeys[0].arrive, '09:34');
  assert.deepEqual(rideTrips(strict.journeys[0]), ['R1_WKD_0_0854']);
  assert.equal(strict.step_free_extra_s, 3600);
  assert.equal(strict.journeys[0].step_free, 'yes');
  assert.equal(await page.textContent('#sf-extra'), 'The step-free journey arrives 1 h 00 min later than the standard one.');
  // Project rule: the caution is shown with accessibility results.
  assert.ok((await page.textContent('#sf-notes')).includes(CAUTION));
  assert.equal(await page.isVisible('#sf-notes'), true);
  assert.match(await page.textContent('#results'), /Step-free/);
  await h.shot(page, 'desktop-step-free');
});

test('case B: strict step-free avoids the stairs-only entrance', async () => {
  const { page } = rec;
  const strict = await h.planViaForm(page, { from: 'OCT_TPL_A', fromPick: 'Tram Place', to: 'Tollimere', date: '2026-12-02', time: '08:00', sf: 'strict' });
  const it = strict.journeys[0];
  // demo-data/README.md Case B, strict: Coachyard Street entrance, ramp, gates, elevator; R1_WKD_0_0854 arrives 09:34.
  assert.equal(it.arrive, '09:34');
  const modes = it.legs.flatMap((l) => (l.pathways || []).map((p) => p.pathway_mode));
  assert.ok(modes.includes('elevator'), JSON.stringify(modes));
  assert.ok(!modes.includes('stairs') && !modes.includes('escalator'), JSON.stringify(modes));
  const detail = await page.textContent('#detail');
  assert.ok(detail.includes('lift'), 'the elevator is named in the walk path');
  assert.equal(strict.step_free_extra_s, 3600);
});

test('case C: no step-free journey to Mossgrave Halt, with the blocker named', async () => {
  const { page } = rec;
  const off = await h.planViaForm(page, { from: 'OCT_TPL_A', fromPick: 'Tram Place', to: 'Mossgrave', date: '2026-12-02', time: '08:00', sf: 'off' });
  assert.ok(off.journeys.length >= 1, 'demo-data/README.md Case C: a standard search finds a journey');
  const strict = await h.planViaForm(page, { from: 'OCT_TPL_A', fromPick: 'Tram Place', to: 'Mossgrave', date: '2026-12-02', time: '08:00', sf: 'strict' });
  // demo-data/README.md Case C: no step-free path (code "no_step_free_path").
  assert.equal(strict.journeys.length, 0);
  assert.equal(strict.nothing_found.code, 'no_step_free_path');
  assert.equal(await page.isVisible('#no-journey'), true);
  assert.ok((await page.textContent('#no-journey-message')).includes(strict.nothing_found.text));
  const blocked = strict.nothing_found.blocked_by || [];
  assert.ok(blocked.length >= 1, 'the blocker is listed');
  assert.ok(blocked.some((b) => /Mossgrave/.test(String(b.text))), JSON.stringify(blocked));
  assert.ok(blocked.every((b) => b.checks.length >= 1 && b.checks.every((c) => c.verdict !== 'yes')), JSON.stringify(blocked));
  const shown = await page.$$eval('#no-journey-list li', (lis) => lis.map((l) => l.textContent));
  assert.deepEqual(shown, blocked.map((b) => String(b.text)));
  assert.ok((await page.textContent('#sf-notes')).includes(CAUTION));
  await h.shot(page, 'desktop-no-journey');
});
