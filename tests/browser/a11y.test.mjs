// Accessibility audits of the page's main views with axe-core (rules tagged WCAG 2.0/2.1 A and
// AA), plus the structural checks axe leaves to people: language, landmarks, live region, labels,
// visible focus, and a CSP with no inline script or style.

import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import AxeBuilder from '@axe-core/playwright';
import * as h from './harness.mjs';

let server;
let browser;

before(async () => {
  server = await h.startServer();
  browser = await h.launchBrowser();
});

after(async () => {
  if (browser) await browser.close();
  if (server) await server.stop();
});

/** axe-core WCAG 2.1 AA rules: the violations of impact serious or critical. */
async function seriousViolations(page) {
  const results = await new AxeBuilder({ page }).withTags(['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa']).analyze();
  return results.violations
    .filter((v) => v.impact === 'serious' || v.impact === 'critical')
    .map((v) => `${v.id} (${v.impact}): ${v.help} — ${v.nodes.slice(0, 3).map((n) => n.target.join(' ')).join(' | ')}`);
}

test('axe-core WCAG 2.1 AA rules: no serious or critical violations in any view', async () => {
  for (const viewport of [h.DESKTOP, h.PHONE]) {
    const rec = await h.openPage(browser, { viewport });
    const { page } = rec;
    await h.openApp(page, server.url);
    assert.deepEqual(await seriousViolations(page), [], `empty page at ${viewport.width} px`);

    await h.loadDemo(page);
    await page.click('#feed-list details summary').catch(() => {});
    assert.deepEqual(await seriousViolations(page), [], `feeds loaded at ${viewport.width} px`);

    // demo-data/README.md Case B with strict step-free: walk paths, step-free notes and caution.
    await h.planViaForm(page, { from: 'OCT_TPL_A', fromPick: 'Tram Place', to: 'Tollimere', date: '2026-12-02', time: '08:00', sf: 'strict' });
    for (const d of await page.$$('#detail details')) await d.evaluate((e) => { e.open = true; });
    // An open suggestion list is part of the audit too.
    await page.focus('#to');
    await page.keyboard.press('End');
    await page.keyboard.press('Backspace');
    await page.waitForSelector('#to-list:not([hidden]) [role="option"]');
    await page.keyboard.press('ArrowDown');
    assert.deepEqual(await seriousViolations(page), [], `journey shown at ${viewport.width} px`);
    await page.keyboard.press('Escape');

    // demo-data/README.md Case C: the no-journey panel.
    await h.planViaForm(page, { from: 'OCT_TPL_A', fromPick: 'Tram Place', to: 'Mossgrave', date: '2026-12-02', time: '08:00', sf: 'strict' });
    assert.deepEqual(await seriousViolations(page), [], `no journey at ${viewport.width} px`);

    // The error panel.
    await h.pickFiles(page, [['broken.zip', Buffer.from('this is not a zip')]]);
    await page.waitForSelector('#feed-error:not([hidden])');
    await h.waitFeeds(page, 2);
    assert.deepEqual(await seriousViolations(page), [], `error shown at ${viewport.width} px`);
    await h.shot(page, `a11y-${viewport.width}`);
    // Every other view, as it first opens.
    for (const view of ['window', 'matrix', 'interchange', 'stepfree', 'compare']) {
      await page.click(`#tab-${view}`);
      await page.waitForSelector(`html[data-view="${view}"]`);
      assert.deepEqual(await seriousViolations(page), [], `${view} view at ${viewport.width} px`);
    }
    await rec.context.close();
  }
});

test('language, landmarks, live region, labelled controls, CSP', async () => {
  const { page, context } = await h.openPage(browser, { viewport: h.DESKTOP });
  await h.openApp(page, server.url);
  const facts = await page.evaluate(() => {
    const unlabelled = [...document.querySelectorAll('input, select, button, textarea')]
      .filter((e) => !(e.labels && e.labels.length) && !e.getAttribute('aria-label') && !e.getAttribute('aria-labelledby') && !e.textContent.trim())
      .map((e) => e.id || e.outerHTML.slice(0, 60));
    const csp = document.querySelector('meta[http-equiv="Content-Security-Policy"]');
    return {
      lang: document.documentElement.lang,
      landmarks: ['header', 'main', 'footer'].map((t) => document.querySelectorAll(t).length),
      live: document.querySelector('[role="status"][aria-live="polite"]') !== null,
      unlabelled,
      csp: csp && csp.getAttribute('content'),
      inlineScripts: [...document.scripts].filter((s) => !s.src).length,
      styleAttrs: document.querySelectorAll('[style]').length,
    };
  });
  // HTML Living Standard: lang attribute; WAI-ARIA landmark roles via header/main/footer.
  assert.equal(facts.lang, 'en');
  assert.deepEqual(facts.landmarks, [1, 1, 1]);
  assert.equal(facts.live, true);
  assert.deepEqual(facts.unlabelled, []);
  // The policy from the project brief, verbatim (CSP Level 3 directive syntax).
  assert.equal(facts.csp, "default-src 'self'; script-src 'self' 'wasm-unsafe-eval'; style-src 'self'; img-src 'self' data:; connect-src 'self'; worker-src 'self'; object-src 'none'; base-uri 'none'; form-action 'none'");
  assert.equal(facts.inlineScripts, 0);
  assert.equal(facts.styleAttrs, 0);

  // WCAG 2.1 SC 2.4.7 Focus Visible: the focused control draws an outline.
  await page.keyboard.press('Tab');
  await page.keyboard.press('Tab');
  const outline = await page.evaluate(() => {
    const s = getComputedStyle(document.activeElement);
    return { tag: document.activeElement.tagName, style: s.outlineStyle, width: parseFloat(s.outlineWidth) };
  });
  assert.notEqual(outline.style, 'none', JSON.stringify(outline));
  assert.ok(outline.width >= 2, JSON.stringify(outline));
  await context.close();
});
