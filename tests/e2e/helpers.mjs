// Shared browser helpers for the page's end-to-end tests (playwright-core with
// the system chromium; no browser download).
import { chromium } from 'playwright-core';
import { mkdtempSync, mkdirSync, rmSync, existsSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, dirname, resolve } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

export const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '../..');
export const PAGE = join(ROOT, 'dist/mortise.html');
export const PAGE_URL = pathToFileURL(PAGE).href;
export const ARTIFACTS = join(ROOT, 'tests/e2e/artifacts');
mkdirSync(ARTIFACTS, { recursive: true });

const ARGS = ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
  '--disable-background-networking', '--disable-component-update', '--disable-sync'];

// Open the page in a fresh profile. Every request is recorded; `foreign()`
// lists those that are not the page itself, data: or blob:.
export async function open(profile) {
  if (!existsSync(PAGE)) throw new Error(`${PAGE} is missing: run tools/page.sh first`);
  const dir = profile || mkdtempSync(join(tmpdir(), 'mortise-e2e-'));
  const ctx = await chromium.launchPersistentContext(dir, {
    executablePath: '/usr/bin/chromium', args: ARGS, viewport: { width: 1360, height: 1000 }, acceptDownloads: true,
  });
  const requests = [];
  const errors = [];
  ctx.on('request', (r) => requests.push(r.url()));
  const page = ctx.pages()[0] || await ctx.newPage();
  page.on('pageerror', (e) => errors.push(String(e)));
  page.on('console', (m) => { if (m.type() === 'error') errors.push(m.text()); });
  try {
    await page.goto(PAGE_URL);
    await page.waitForFunction(() => document.body.dataset.state === 'ready' && window.mortiseTimings.ready_ms !== null, null, { timeout: 30000 });
  } catch (e) {
    // a page that does not start fails its test, and its browser is closed (else the test file never ends)
    const state = await page.evaluate(() => `state ${document.body.dataset.state}, status: ${document.getElementById('status')?.textContent}`).catch(() => 'no state');
    await ctx.close().catch(() => {});
    if (!profile) rmSync(dir, { recursive: true, force: true });
    throw new Error(`the page did not start (${state}; errors: ${errors.join(' | ') || 'none'}): ${e.message}`);
  }
  const foreign = () => requests.filter((u) => !(u === PAGE_URL || u.startsWith('data:') || u.startsWith('blob:')));
  return {
    ctx, page, dir, requests, errors, foreign,
    async close(keep) { await ctx.close(); if (!keep) rmSync(dir, { recursive: true, force: true }); },
  };
}

// Put files into the page through its file input.
export async function addFiles(page, files) {
  const before = await page.evaluate(() => document.querySelectorAll('.card').length);
  await page.setInputFiles('#file-input', files.map((f) => ({ name: f.name, mimeType: 'application/octet-stream', buffer: Buffer.from(f.data) })));
  await page.waitForFunction((n) => document.querySelectorAll('.card').length >= n, before + files.length, { timeout: 20000 }).catch(() => {});
}

export async function shot(page, name) {
  await page.evaluate(() => window.scrollTo(0, 0));
  await page.screenshot({ path: join(ARTIFACTS, name + '.png'), fullPage: true });
}

// Every result's CSV as the page exports it: name → text.
export async function pageResults(page) {
  const results = await page.$$eval('#curve-select optgroup[data-group=results] option', (os) => {
    const seen = new Map();
    for (const o of os) if (!seen.has(o.dataset.name)) seen.set(o.dataset.name, o.value);
    return [...seen.entries()];
  });
  const out = new Map();
  // Chromium drops a page's downloads after about ten in a row (its limit on
  // automatic downloads), so the button is pressed for two results and the
  // rest are asked of the same core call the button makes.
  let k = 0;
  for (const [name, value] of results) {
    await page.selectOption('#curve-select', value);
    if (k++ < 2) {
      const [dl] = await Promise.all([page.waitForEvent('download'), page.click('[data-export=csv]')]);
      out.set(name, readFileSync(await dl.path(), 'utf8'));
    } else {
      const set = JSON.parse(value)[0];
      out.set(name, await page.evaluate(async (id) => new TextDecoder().decode((await Bridge.call('export_file', [JSON.stringify([id]), 'csv'])).bytes), set));
    }
  }
  return out;
}

// Put text into the recipe box as a paste does: one value change, one input
// event. (Playwright's fill enters long text slowly: the demo recipe, 58 kB
// with its speed tables, took 50 s, while the page handles it in 0.1 s.)
export async function pasteRecipe(page, text) {
  await page.$eval('#recipe-text', (e, t) => {
    e.value = t;
    e.dispatchEvent(new Event('input', { bubbles: true }));
  }, text);
}
