// The demo scenario on the page equals the CLI: `mortise run` on
// sample-frf/heat-pump.recipe.json and the page's "Load demo" + Run give the
// same numbers for every requested output (relative difference ≤ 1e-12).
// Needs the demo files (./build.sh writes them with `mortise demo`) built
// into the page; without them this test fails, it does not skip.
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { existsSync, readFileSync, mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { execFileSync } from 'node:child_process';
import { open, shot, ROOT, pageResults } from './helpers.mjs';
import { complexRows } from './data.mjs';

const RECIPE = join(ROOT, 'sample-frf/heat-pump.recipe.json');
// Same rule as the CLI's file names for outputs (src/cli/run.rs, safe_name).
const safe = (n) => n.replace(/[^A-Za-z0-9._-]/g, '_');

test('demo assembly on the page equals the CLI', async () => {
  assert.ok(existsSync(RECIPE), `${RECIPE} is missing: run ./build.sh (mortise demo -o sample-frf) and tools/page.sh`);
  const bin = process.env.MORTISE_BIN || join(ROOT, 'target/release/mortise');
  assert.ok(existsSync(bin), `${bin} is missing`);
  const out = mkdtempSync(join(tmpdir(), 'mortise-demo-'));
  execFileSync(bin, ['run', RECIPE, '-o', out]);

  const s = await open();
  try {
    // the suppliers' files from sample-frf/ through the file input, the recipe first
    const names = ['heat-pump.recipe.json', 'unit-casing.uff', 'unit-blocked-forces.uff', 'isolator-stiffness.csv',
      'brackets.uffb', 'wall-accelerance.csv', 'wall-to-bed-pressure.csv'];
    await s.page.setInputFiles('#file-input', names.map((n) => ({ name: n, mimeType: 'application/octet-stream', buffer: readFileSync(join(ROOT, 'sample-frf', n)) })));
    await s.page.waitForFunction(() => /6 file\(s\) in the workspace/.test(document.getElementById('status-text').textContent), null, { timeout: 60000 });
    const failed = await s.page.$$eval('.card.failed', (cs) => cs.map((c) => c.textContent));
    assert.deepEqual(failed, [], 'every demo file reads');
    // the core's fitness audit shows on every FRF card, flags included
    // (the demo's wall test resolves its resonances with too few lines)
    const audits = await s.page.$$eval('.card .audit-sum', (xs) => xs.length);
    assert.ok(audits >= 5, `audit lines on the FRF cards: ${audits}`);
    const flags = await s.page.$$eval('.card .audit-flag', (xs) => xs.map((x) => x.dataset.check));
    assert.ok(flags.includes('grid'), `audit flags shown: ${flags}`);
    await shot(s.page, '10-demo-loaded');
    await s.page.evaluate(() => {
      window.__long = 0;
      new PerformanceObserver((l) => { for (const e of l.getEntries()) window.__long = Math.max(window.__long, e.duration); }).observe({ type: 'longtask' });
    });
    await s.page.click('#run-btn');
    await s.page.waitForFunction(() => document.body.dataset.plotted || document.querySelector('#run-error:not([hidden])'), null, { timeout: 120000 });
    assert.equal(await s.page.$eval('#run-error', (e) => (e.hidden ? '' : e.textContent)), '');
    const t = await s.page.evaluate(() => ({ ...window.mortiseTimings, longest: window.__long }));
    console.log(`# measure demo compute (ms): ${t.last_run_ms.toFixed(0)}`);
    console.log(`# measure demo plot (ms): ${t.last_plot_ms.toFixed(0)}`);
    console.log(`# measure longest main-thread task during the demo (ms): ${t.longest.toFixed(1)}`);
    await shot(s.page, '11-demo-result');
    // the answer is shown: A-weighted level at the bed, ranked anchor paths, the variant's change
    const head = await s.page.$eval('#headline', (e) => e.textContent);
    assert.match(head, /room:bed: [0-9.]+ dB\(A\)/);
    assert.match(head, /paths ranked at room:bed/);
    assert.match(head, /softer isolators/);
    // the suppliers' stated noise: the headline's 95 % interval, and the bedroom's curve
    // drawn with its band and pale unreliable lines, the read-out giving the interval
    assert.match(head, /95 % interval [0-9.]+–[0-9.]+ dB\(A\)/);
    await s.page.evaluate(() => {
      const sel = document.getElementById('curve-select');
      for (const o of sel.options) o.selected = o.dataset.name === 'bedroom';
      sel.dispatchEvent(new Event('change', { bubbles: true }));
    });
    await s.page.selectOption('#plot-kind', 'magnitude');
    await s.page.waitForTimeout(800);
    // the cursor on the strongest harmonic, 116 Hz (the lines between harmonics are empty)
    const cb = await s.page.$eval('#plot-canvas', (c) => { c.scrollIntoView({ block: 'center' }); const r = c.getBoundingClientRect(); return { x: r.x, y: r.y, scale: c.width / r.width }; });
    const f0 = (await s.page.$eval('#plot-wrap', (w) => JSON.parse(w.dataset.frames)))[0];
    const at116 = (Math.log10(116) - Math.log10(f0.x_min)) / (Math.log10(f0.x_max) - Math.log10(f0.x_min));
    await s.page.mouse.move(cb.x + (f0.x0 + at116 * (f0.x1 - f0.x0)) / cb.scale, cb.y + (f0.y0 + 30) / cb.scale);
    await s.page.waitForFunction(() => /95 %: /.test(document.getElementById('readout').textContent), null, { timeout: 20000 });
    assert.match(await s.page.textContent('#readout'), /95 %: [-0-9.−∞]+ to [-0-9.]+ dB/);
    await (await s.page.$('#plot-wrap')).screenshot({ path: join(ROOT, 'tests/e2e/artifacts/13-demo-band.png') });
    // the compressor's speed sweep: the loudest speed in the headline, the map drawn by the core
    assert.match(head, /speed sweep 'compressor speed'.*peaks at [0-9.]+ rev\/s/);
    assert.match(head, /43\.2 dB\(A\).*95 % interval.*loudest in the speed sweep 'compressor speed' at [0-9.]+ rev\/s/);
    await s.page.selectOption('#plot-kind', 'speed-map');
    await s.page.waitForTimeout(1000);
    assert.doesNotMatch(await s.page.textContent('#readout'), /cannot draw/);
    assert.equal(await s.page.$eval('#plot-canvas', (c) => c.hidden), false, 'the speed map is drawn');
    await (await s.page.$('#plot-wrap')).screenshot({ path: join(ROOT, 'tests/e2e/artifacts/14-demo-speed-map.png') });
    await s.page.selectOption('#plot-kind', 'bode');
    // the path ranking as bars (one-third-octave bands × anchor paths)
    await s.page.selectOption('#plot-kind', 'bars');
    await s.page.waitForTimeout(500);
    assert.doesNotMatch(await s.page.textContent('#readout'), /cannot draw/);
    await (await s.page.$('#plot-wrap')).screenshot({ path: join(ROOT, 'tests/e2e/artifacts/12-demo-path-ranking.png') });
    await s.page.selectOption('#plot-kind', 'bode');
    const got = await pageResults(s.page);
    assert.ok(got.size > 0, 'the demo produces results');
    for (const [name, csv] of got) {
      const pageRows = complexRows(csv);
      const cliRows = complexRows(readFileSync(join(out, safe(name) + '.csv'), 'utf8'));
      assert.equal(pageRows.length, cliRows.length, name);
      assert.ok(cliRows.length > 0, name);
      // relative difference of each complex value: |a − b| / max(|a|, |b|)
      let worst = 0;
      for (let k = 0; k < cliRows.length; k++) {
        assert.equal(pageRows[k].f, cliRows[k].f, `${name}: frequency line ${k}`);
        assert.equal(pageRows[k].pairs.length, cliRows[k].pairs.length, name);
        cliRows[k].pairs.forEach(([br, bi], j) => {
          const [ar, ai] = pageRows[k].pairs[j];
          const d = Math.hypot(ar - br, ai - bi);
          const m = Math.max(Math.hypot(ar, ai), Math.hypot(br, bi));
          if (d > 0) worst = Math.max(worst, d / m);
        });
      }
      console.log(`# measure ${name}: page vs CLI worst relative difference ${worst}`);
      assert.ok(worst <= 1e-12, `${name}: ${worst}`);
    }
    assert.deepEqual(s.foreign(), []);
  } finally { await s.close(); }
});

test('the demo button loads the same scenario the files hold', async () => {
  const s = await open();
  try {
    await s.page.click('#demo-btn');
    await s.page.waitForFunction(() => /demo loaded/.test(document.getElementById('status-text').textContent), null, { timeout: 60000 });
    assert.deepEqual(await s.page.$$eval('.card.failed', (cs) => cs.length), 0);
    // the cards show the same SHA-256 as the committed sample-frf files
    const { createHash } = await import('node:crypto');
    for (const n of ['unit-casing.uff', 'brackets.uffb', 'wall-accelerance.csv']) {
      const want = createHash('sha256').update(readFileSync(join(ROOT, 'sample-frf', n))).digest('hex');
      const text = await s.page.$eval(`[data-file="${n}"]`, (e) => e.textContent);
      assert.ok(text.includes(want), `${n}: SHA-256 ${want} on its card`);
    }
    assert.deepEqual(s.foreign(), []);
  } finally { await s.close(); }
});

test('a lowered budget makes the demo run fail with the budget message, and the page stays usable', async () => {
  const s = await open();
  try {
    await s.page.click('#demo-btn');
    await s.page.waitForFunction(() => /demo loaded/.test(document.getElementById('status-text').textContent), null, { timeout: 60000 });
    // 1 kB of data: the demo's first component already needs more
    await s.page.click('#limits-box summary');
    await s.page.fill('#limit-memory-gb', '0.000001');
    await s.page.click('#limits-btn');
    await s.page.waitForFunction(() => /in force: 1\.000e-6 GB|in force: 0\.000001000 GB/.test(document.getElementById('limits-state').textContent), null, { timeout: 30000 });
    const t0 = Date.now();
    await s.page.click('#run-btn');
    await s.page.waitForSelector('#run-error:not([hidden])', { timeout: 30000 });
    const msg = await s.page.$eval('#run-error', (e) => e.textContent);
    assert.match(msg, /the budget is 1 kB/);
    assert.match(msg, /components\./);
    assert.ok(Date.now() - t0 < 30000);
    // the page still answers: raising the budget back lets the run finish
    await s.page.fill('#limit-memory-gb', '2.147');
    await s.page.click('#limits-btn');
    await s.page.waitForFunction(() => /in force: 2\.147 GB/.test(document.getElementById('limits-state').textContent), null, { timeout: 30000 });
    await s.page.click('#run-btn');
    await s.page.waitForFunction(() => document.body.dataset.plotted || document.querySelector('#run-error:not([hidden])'), null, { timeout: 120000 });
    assert.equal(await s.page.$eval('#run-error', (e) => (e.hidden ? '' : e.textContent)), '');
  } finally { await s.close(); }
});
