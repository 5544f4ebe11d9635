// WebAssembly against native: the coupling benchmark's case (60 + 48 DOFs,
// 12 rigid joints; src/assemble/bench_case.rs) coupled in the page's worker,
// in headless Chromium from the built single file, and natively by
// `cargo run --release --example bench_couple -- --rust-only --lines N` in the
// same run. Prints both times, the ratios (wasm is one thread: against native
// on one thread and on all), and whether the results are the same bits (the
// SHA-256 of the values); and the lines split over 2 of the page's workers.
// Asserts nothing but equal results.
// usage: node tools/wasm-bench.mjs [LINES] [PAGE.html]   (default 1600 lines, dist/mortise.html)
import { chromium } from 'playwright-core';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { execFileSync } from 'node:child_process';

const lines = Number(process.argv[2] || 1600);
if (!Number.isInteger(lines) || lines < 1) throw new Error(`lines: expected a positive whole number, got '${process.argv[2]}'`);
const page = resolve(process.argv[3] || 'dist/mortise.html');
const report = (k, v) => console.log(`# measure ${k}: ${v}`);

const dir = mkdtempSync(join(tmpdir(), 'mortise-wasm-bench-'));
const ctx = await chromium.launchPersistentContext(dir, {
  executablePath: '/usr/bin/chromium',
  args: ['--headless', '--no-sandbox', '--disable-gpu', '--no-first-run', '--disable-background-networking'],
});
const wasm = [];
const split = [];
const half = Math.ceil(lines / 2);
let digest = null;
try {
  const p = ctx.pages()[0] || await ctx.newPage();
  await p.goto(pathToFileURL(page).href);
  await p.waitForFunction(() => document.body.dataset.state === 'ready', null, { timeout: 60000 });
  for (let k = 0; k < 3; k++) {
    const r = await p.evaluate((n) => Bridge.call('bench_couple', [n]), lines);
    wasm.push(r.seconds);
    if (digest && digest !== r.digest) throw new Error('two runs in the page gave different results');
    digest = r.digest;
  }
  // the same number of lines split over 2 of the page's extra workers (each
  // couples half the lines of the case at once): what splitting one coupling's
  // lines across workers could gain (a throughput measure; the halves are
  // cases of their own, so no digest is compared)

  for (let k = 0; k < 3; k++) {
    const s = await p.evaluate(async (n) => {
      await Bridge.extraWorkers(2);
      // each worker times its coupling alone (the case is made before);
      // both start together, so the slower is the split's wall time
      const r = await Promise.all([0, 1].map((i) => Bridge.callExtra(i, 'bench_couple', [n])));
      return Math.max(...r.map((x) => x.seconds));
    }, half);
    split.push(s);
  }
} finally {
  await ctx.close();
  rmSync(dir, { recursive: true, force: true });
}
const out = execFileSync('cargo', ['run', '--release', '--quiet', '--example', 'bench_couple', '--', '--rust-only', '--lines', String(lines)], { encoding: 'utf8' });
const last = out.trim().split('\n').pop();
const native = JSON.parse(last);
const w = Math.min(...wasm);
report(`coupling ${lines} lines, wasm in the page's worker (1 thread, best of 3, s)`, w.toFixed(3));
report(`coupling ${lines} lines, native (1 thread, best of 3, s)`, native.serial_seconds.toFixed(3));
report(`coupling ${lines} lines, native (${native.threads} threads, best of 5, s)`, native.seconds.toFixed(3));
report(`coupling ${lines} lines split over 2 page workers (${half} lines each, best of 3, s)`, Math.min(...split).toFixed(3));
report('ratio wasm on 2 workers / native on 2 threads', (Math.min(...split) / native.seconds).toFixed(2));
report('ratio wasm / native, one thread each (target ≤ 2)', (w / native.serial_seconds).toFixed(2));
report(`ratio wasm / native on ${native.threads} threads`, (w / native.seconds).toFixed(2));
report('results: SHA-256 of the values, wasm and native', `${digest.slice(0, 16)}… ${digest === native.digest ? 'equal' : 'DIFFERENT ' + native.digest.slice(0, 16) + '…'}`);
if (digest !== native.digest) process.exit(1);
