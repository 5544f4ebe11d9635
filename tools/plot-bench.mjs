// Plot benchmark: the main thread's longest task and the time per zoom step
// and per cursor move with 150 curves of 1,000 lines, against any build of
// the page (so a build before the canvas plot can be measured the same way).
// usage: node tools/plot-bench.mjs [PAGE.html]   (default dist/mortise.html)
// Prints `# measure ...` lines, with the core's redraw as a ratio to a plain Canvas 2D
// drawing of as many points measured in the same run; asserts nothing.
import { chromium } from 'playwright-core';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { manyCurvesCsv } from '../tests/e2e/data.mjs';

const page = resolve(process.argv[2] || 'dist/mortise.html');
const dir = mkdtempSync(join(tmpdir(), 'mortise-bench-'));
const ctx = await chromium.launchPersistentContext(dir, {
  executablePath: '/usr/bin/chromium', viewport: { width: 1480, height: 1000 },
  args: ['--headless', '--no-sandbox', '--disable-gpu', '--no-first-run', '--disable-background-networking'],
});
const report = (k, v) => console.log(`# measure ${k}: ${v}`);
const median = (v) => { const s = [...v].sort((a, b) => a - b); return s[Math.floor((s.length - 1) / 2)]; };
try {
  const p = ctx.pages()[0] || await ctx.newPage();
  await p.goto(pathToFileURL(page).href);
  await p.waitForFunction(() => document.body.dataset.state === 'ready', null, { timeout: 30000 });
  await p.setInputFiles('#file-input', [{ name: 'bench.csv', mimeType: 'text/plain', buffer: Buffer.from(manyCurvesCsv(150, 1000)) }]);
  await p.waitForFunction(() => document.querySelectorAll('#curve-select option').length >= 150, null, { timeout: 60000 });
  const values = await p.$$eval('#curve-select option', (os) => os.slice(0, 150).map((o) => o.value));
  await p.evaluate(() => {
    window.__tasks = [];
    new PerformanceObserver((l) => { for (const e of l.getEntries()) window.__tasks.push(e.duration); }).observe({ type: 'longtask' });
  });
  const plotted = () => p.evaluate(() => document.body.dataset.plotted || '');
  const waitPlot = (b) => p.waitForFunction((x) => (document.body.dataset.plotted || '') !== x, b, { timeout: 60000 });
  let before = await plotted();
  let t0 = Date.now();
  await p.selectOption('#curve-select', values);
  await waitPlot(before);
  report(`${page}: 150 curves drawn after choosing them (ms, wall)`, Date.now() - t0);
  await p.waitForTimeout(300);
  report(`${page}: longest main-thread task while drawing 150 curves (ms)`, Math.max(0, ...await p.evaluate(() => window.__tasks)).toFixed(0));
  await p.evaluate(() => { window.__tasks = []; });
  const box = await p.$eval('#plot-wrap', (w) => { w.scrollIntoView({ block: 'center' }); const r = w.getBoundingClientRect(); return { x: r.x, y: r.y, w: r.width, h: r.height }; });
  const y = box.y + box.h * 0.3;
  const steps = [];
  for (let i = 0; i < 20; i++) {
    // 10 zooms into the middle 60 %, then 10 pans by a tenth (shift-drag)
    const pan = i >= 10;
    const [a, b] = pan ? [box.x + box.w * 0.55, box.x + box.w * 0.45] : [box.x + box.w * 0.2, box.x + box.w * 0.8];
    before = await plotted();
    await p.mouse.move(a, y);
    if (pan) await p.keyboard.down('Shift');
    await p.mouse.down();
    await p.mouse.move(b, y, { steps: 2 });
    t0 = Date.now();
    await p.mouse.up();
    if (pan) await p.keyboard.up('Shift');
    await waitPlot(before);
    steps.push(Date.now() - t0);
  }
  report(`${page}: median time from mouse-up to the redrawn plot over 20 zoom and pan steps (ms, wall)`, median(steps));
  for (let i = 0; i < 50; i++) await p.mouse.move(box.x + box.w * (0.1 + 0.8 * i / 49), y);
  await p.waitForTimeout(500);
  report(`${page}: longest main-thread task over the 20 steps and 50 cursor moves (ms)`, Math.max(0, ...await p.evaluate(() => window.__tasks)).toFixed(0));
  const r = await p.evaluate(() => window.mortiseTimings.redraw_ms);
  if (r) report(`${page}: median redraw of the canvas by the core (ms)`, median(r.slice(1)).toFixed(1));
  // the reference, measured here in the same run: the plain Canvas 2D API stroking 150
  // polylines of 1,000 points each (1 px, one path a curve) on a canvas of the plot's
  // size, flushed by reading a pixel back; the core's redraw is timed the same way
  const ref = await p.evaluate(() => {
    const src = document.getElementById('plot-canvas');
    const c = document.createElement('canvas');
    c.width = src.width; c.height = src.height;
    const g = c.getContext('2d');
    const times = [];
    for (let rep = 0; rep < 7; rep++) {
      const t = performance.now();
      g.clearRect(0, 0, c.width, c.height);
      for (let k = 0; k < 150; k++) {
        g.beginPath();
        for (let i = 0; i < 1000; i++) {
          const x = 80 + (i / 999) * (c.width - 100);
          const y = c.height / 2 + (c.height / 3) * Math.sin(i * 0.02 + k) / (1 + 0.002 * i);
          if (i) g.lineTo(x, y); else g.moveTo(x, y);
        }
        g.strokeStyle = `hsl(${k * 37 % 360} 60% 40%)`;
        g.lineWidth = 1;
        g.stroke();
      }
      g.getImageData(0, 0, 1, 1);
      times.push(performance.now() - t);
    }
    return times.sort((a, b) => a - b)[3];
  });
  // a zoom key on the plot redraws the kept data at once (no worker): timed to the flushed canvas
  const core = await p.evaluate(() => {
    const c = document.getElementById('plot-canvas');
    const times = [];
    for (let rep = 0; rep < 7; rep++) {
      const t = performance.now();
      c.dispatchEvent(new KeyboardEvent('keydown', { key: rep % 2 ? '-' : '+', bubbles: true }));
      c.getContext('2d').getImageData(0, 0, 1, 1);
      times.push(performance.now() - t);
    }
    return times;
  });
  const coreMedian = median(core);
  report(`${page}: reference, plain Canvas 2D stroking 150 × 1,000 points (ms, median of 7)`, ref.toFixed(1));
  report(`${page}: the core's redraw of 150 curves (ms, median of 7) and its ratio to the reference`, `${coreMedian.toFixed(1)} (${(coreMedian / ref).toFixed(2)}×)`);
} finally { await ctx.close(); rmSync(dir, { recursive: true, force: true }); }
