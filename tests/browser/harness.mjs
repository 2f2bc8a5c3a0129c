// Shared helpers for the browser tests: the real `timeweave serve` binary, real headless Debian
// Chromium driven by playwright-core, a recorder of every request the page (and its worker)
// makes, and a tiny stored-entry zip writer so tests can build GTFS zips byte by byte.

import os from 'node:os';
import { before, after } from 'node:test';
import { spawn, execFile } from 'node:child_process';
import { createServer } from 'node:net';
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { promisify } from 'node:util';
import { chromium } from 'playwright-core';

export const REPO = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..');
export const BIN = process.env.TIMEWEAVE_BIN || path.join(REPO, 'target', 'release', 'timeweave');
export const ARTIFACTS = path.join(REPO, 'tests', 'browser', 'artifacts');
export const DESKTOP = { width: 1024, height: 768 };
export const PHONE = { width: 390, height: 844 };

const CHROMIUM_ARGS = [
  '--no-sandbox',
  '--disable-gpu',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
  '--no-first-run',
  '--disable-quic',
];

function freePort() {
  return new Promise((resolve, reject) => {
    const srv = createServer();
    srv.unref();
    srv.on('error', reject);
    srv.listen(0, '127.0.0.1', () => {
      const { port } = srv.address();
      srv.close(() => resolve(port));
    });
  });
}

/** Starts `timeweave serve --port <free port>` from the repo root; resolves once it listens. */
export async function startServer({ root } = {}) {
  if (!fs.existsSync(BIN)) {
    throw new Error(`${BIN} does not exist: build it (cargo build --release) or set TIMEWEAVE_BIN`);
  }
  const port = await freePort();
  const args = ['serve', '--port', String(port)];
  // TIMEWEAVE_SERVE_ROOT serves another copy of the page (e.g. an alternative WASM build).
  const served = root || process.env.TIMEWEAVE_SERVE_ROOT;
  if (served) args.push('--root', served);
  const child = spawn(BIN, args, { cwd: REPO, stdio: ['ignore', 'pipe', 'pipe'] });
  let out = '';
  const url = await new Promise((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`server did not report listening within 20 s; output:\n${out}`)), 20000);
    const onData = (chunk) => {
      out += chunk;
      const m = /timeweave: serving .* at (http:\/\/127\.0\.0\.1:(\d+)\/)/.exec(out);
      if (m) {
        clearTimeout(timer);
        resolve(m[1]);
      }
    };
    child.stdout.on('data', onData);
    child.stderr.on('data', (c) => { out += c; });
    child.on('exit', (code) => {
      clearTimeout(timer);
      reject(new Error(`server exited with ${code} before listening; output:\n${out}`));
    });
  });
  return {
    url,
    origin: new URL(url).origin,
    stop: () => new Promise((resolve) => {
      if (child.exitCode !== null) return resolve();
      child.once('exit', () => resolve());
      child.kill('SIGTERM');
    }),
  };
}

export function launchBrowser() {
  return chromium.launch({ executablePath: '/usr/bin/chromium', headless: true, args: CHROMIUM_ARGS });
}

/**
 * Opens a fresh context and page and records what happens in it.
 * @returns {{ context, page, requests: string[], dialogs: string[], errors: string[] }}
 */
export async function openPage(browser, { viewport = DESKTOP, serviceWorkers = 'block' } = {}) {
  const context = await browser.newContext({ viewport, serviceWorkers });
  const page = await context.newPage();
  const rec = { context, page, requests: [], dialogs: [], errors: [] };
  context.on('request', (r) => rec.requests.push(r.url()));
  page.on('dialog', (d) => {
    rec.dialogs.push(`${d.type()}: ${d.message()}`);
    d.dismiss().catch(() => {});
  });
  page.on('pageerror', (e) => rec.errors.push(`pageerror: ${e.message}`));
  page.on('console', (m) => {
    if (m.type() === 'error') rec.errors.push(`console: ${m.text()}`);
  });
  return rec;
}

/** Requests that went anywhere but `origin` (data: and blob: URLs never leave the machine). */
export function offOrigin(requests, origin) {
  return requests.filter((u) => !u.startsWith(`${origin}/`) && !u.startsWith('data:') && !u.startsWith('blob:'));
}

/** Opens `url` and waits until the worker reports the WASM engine ready. */
export async function openApp(page, url) {
  await page.goto(url);
  await waitEngine(page);
}

export async function waitEngine(page) {
  const h = await page.waitForSelector('html[data-engine="ready"], html[data-engine="failed"]', { timeout: 30000 });
  const state = await h.getAttribute('data-engine');
  if (state !== 'ready') {
    const why = await page.textContent('#feed-error').catch(() => '');
    throw new Error(`the engine did not start: ${why}`);
  }
}

/** Waits until no load is running and `n` feeds are listed. */
export async function waitFeeds(page, n, timeout = 60000) {
  await page.waitForSelector(`html[data-loading="no"][data-feeds="${n}"]`, { timeout });
}

export async function loadDemo(page) {
  await page.click('#load-demo');
  await waitFeeds(page, 2);
}

/** Number of plans the page has finished so far. */
export async function planCount(page) {
  return Number((await page.getAttribute('html', 'data-plans')) || 0);
}

/** Waits for the page to finish a plan after `before` earlier ones; returns its PlanResult. */
export async function waitPlan(page, before, timeout = 30000) {
  await page.waitForFunction((n) => Number(document.documentElement.dataset.plans || 0) > n, before, { timeout });
  return page.evaluate(() => window.__timeweaveLast);
}

/**
 * Chooses a stop in a combobox with the keyboard only: type, ArrowDown until an option whose
 * text contains `pick` is highlighted, Enter.
 */
export async function chooseStop(page, inputSel, typed, pick = typed) {
  await page.fill(inputSel, '');
  await page.focus(inputSel);
  await page.keyboard.type(typed, { delay: 15 });
  const listSel = `#${await page.getAttribute(inputSel, 'aria-controls')}`;
  await page.waitForFunction(
    ([sel, text]) => {
      const l = document.querySelector(sel);
      return l && !l.hidden && l.dataset.query === text && l.querySelector('[role="option"]');
    },
    [listSel, typed],
    { timeout: 10000 },
  );
  const texts = await page.$$eval(`${listSel} [role="option"]`, (os) => os.map((o) => o.textContent));
  const idx = texts.findIndex((t) => t.includes(pick));
  if (idx < 0) throw new Error(`no suggestion containing "${pick}" for "${typed}": ${JSON.stringify(texts)}`);
  for (let i = 0; i <= idx; i++) await page.keyboard.press('ArrowDown');
  await page.keyboard.press('Enter');
  return texts[idx];
}

/** Fills the form (stops by typed text) and submits; resolves to the PlanResult shown. */
export async function planViaForm(page, { from, fromPick, to, toPick, date, time, sf = 'off', n = '' }) {
  // Changing step-free re-runs a shown plan by itself: do it first and let that finish.
  await page.selectOption('#sf', sf);
  await page.waitForSelector('#plan:not([disabled])');
  await page.waitForTimeout(200);
  await page.waitForSelector('#plan:not([disabled])');
  await chooseStop(page, '#from', from, fromPick);
  await chooseStop(page, '#to', to, toPick);
  await page.fill('#date', date);
  await page.fill('#time', time);
  await page.fill('#n', String(n));
  const before = await planCount(page);
  await page.click('#plan');
  return waitPlan(page, before);
}

/** Query parameters the page put in its address. */
export async function addressQuery(page) {
  const hash = new URL(page.url()).hash.replace(/^#/, '');
  return Object.fromEntries(new URLSearchParams(hash));
}

/** Saves what the viewport shows; at phone width the whole single-column page. */
export async function shot(page, name) {
  fs.mkdirSync(ARTIFACTS, { recursive: true });
  const { width } = page.viewportSize();
  await page.screenshot({ path: path.join(ARTIFACTS, `${name}.png`), fullPage: width < 900 });
}

/** Runs the native CLI and parses its JSON output. */
export async function cli(args) {
  const { stdout } = await promisify(execFile)(BIN, args, { cwd: REPO, maxBuffer: 64 << 20 });
  return JSON.parse(stdout);
}

/** The parts of a PlanResult that must agree between CLI and page. */
export function journeyKey(result) {
  const n = (v) => (v === undefined ? null : v);
  return (result.journeys || []).map((it) => ({
    depart_s: it.depart_s,
    arrive_s: it.arrive_s,
    step_free: it.step_free,
    legs: (it.legs || []).map((l) => ({
      kind: l.kind,
      start: l.start && l.start.stop_id,
      end: l.end && l.end.stop_id,
      depart_s: l.depart_s,
      arrive_s: l.arrive_s,
      trip_id: n(l.trip_id),
      route: l.route ? l.route.route_id : null,
    })),
  }));
}

// ------------------------------------------------------------------ zip writer

const CRC_TABLE = (() => {
  const t = new Uint32Array(256);
  for (let n = 0; n < 256; n++) {
    let c = n;
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
    t[n] = c >>> 0;
  }
  return t;
})();

/** CRC-32 as used by zip (ISO 3309 polynomial, reflected). */
export function crc32(buf) {
  let c = 0xffffffff;
  for (const b of buf) c = CRC_TABLE[(c ^ b) & 0xff] ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}

/**
 * A zip archive of stored (uncompressed) entries, laid out per PKWARE APPNOTE.TXT §4.3:
 * local file headers with data, then the central directory, then the end record.
 * @param {Record<string, string|Buffer>} files name → content
 */
export function makeZip(files) {
  const locals = [];
  const centrals = [];
  let offset = 0;
  for (const [name, content] of Object.entries(files)) {
    const nameBuf = Buffer.from(name, 'utf8');
    const data = Buffer.isBuffer(content) ? content : Buffer.from(content, 'utf8');
    const crc = crc32(data);
    const local = Buffer.alloc(30);
    local.writeUInt32LE(0x04034b50, 0);
    local.writeUInt16LE(20, 4); // version needed
    local.writeUInt16LE(0x0800, 6); // UTF-8 names
    local.writeUInt16LE(0, 8); // stored
    local.writeUInt16LE(0, 10); // time
    local.writeUInt16LE(0x21, 12); // date 1980-01-01
    local.writeUInt32LE(crc, 14);
    local.writeUInt32LE(data.length, 18);
    local.writeUInt32LE(data.length, 22);
    local.writeUInt16LE(nameBuf.length, 26);
    local.writeUInt16LE(0, 28);
    locals.push(local, nameBuf, data);
    const central = Buffer.alloc(46);
    central.writeUInt32LE(0x02014b50, 0);
    central.writeUInt16LE(20, 4); // made by
    central.writeUInt16LE(20, 6); // needed
    central.writeUInt16LE(0x0800, 8);
    central.writeUInt16LE(0, 10);
    central.writeUInt16LE(0, 12);
    central.writeUInt16LE(0x21, 14);
    central.writeUInt32LE(crc, 16);
    central.writeUInt32LE(data.length, 20);
    central.writeUInt32LE(data.length, 24);
    central.writeUInt16LE(nameBuf.length, 28);
    central.writeUInt32LE(offset, 42);
    centrals.push(central, nameBuf);
    offset += local.length + nameBuf.length + data.length;
  }
  const cd = Buffer.concat(centrals);
  const end = Buffer.alloc(22);
  end.writeUInt32LE(0x06054b50, 0);
  const count = Object.keys(files).length;
  end.writeUInt16LE(count, 8);
  end.writeUInt16LE(count, 10);
  end.writeUInt32LE(cd.length, 12);
  end.writeUInt32LE(offset, 16);
  return Buffer.concat([...locals, cd, end]);
}

/** Picks files for the page's file input by name and bytes. */
export async function pickFiles(page, files) {
  await page.setInputFiles('#feed-files', files.map(([name, buffer]) => ({ name, mimeType: 'application/zip', buffer })));
}

/**
 * The shared setup of a test file: a server, a browser and (with `tmpPrefix`) a scratch folder,
 * started before its tests and stopped after them; read them from the returned object.
 */
export function suite(tmpPrefix) {
  const s = { server: null, browser: null, dir: null };
  before(async () => {
    s.server = await startServer();
    s.browser = await launchBrowser();
    if (tmpPrefix) s.dir = fs.mkdtempSync(path.join(os.tmpdir(), tmpPrefix));
  });
  after(async () => {
    if (s.browser) await s.browser.close();
    if (s.server) await s.server.stop();
    if (s.dir) fs.rmSync(s.dir, { recursive: true, force: true });
  });
  return s;
}
