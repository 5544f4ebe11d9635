// Large UFF files on the page against the command line: the UFF benchmark's
// two files (target/bench-uff/, written by `cargo run --release --example
// bench_uff`: 500 responses × 2 references × 5,000 lines as ASCII, 203 MB, and
// as 58b, 81 MB) given to the page's file input in headless Chromium from the
// built single file, timed from the input to the file's card (the browser
// reading the file, the worker's WebAssembly parsing, grouping and hashing it,
// the card's summary and fitness audit, the card drawn); and the same file
// read by `mortise inspect` (read, load, summary and audit; the native
// binary, both cores) in the same run. Each page read is in a fresh browser
// profile (no earlier file held); best of 3 each. Prints the times and the
// ratios; asserts nothing but that every read gave its card, not refused.
// usage: node tools/uff-page-bench.mjs [PAGE.html]   (default dist/mortise.html)
import { chromium } from 'playwright-core';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { execFileSync } from 'node:child_process';

const page = resolve(process.argv[2] || 'dist/mortise.html');
const report = (k, v) => console.log(`# measure ${k}: ${v}`);
const REPS = 3;
const dir = resolve('target/bench-uff');
const files = [['ASCII', 'bracket_v1.uff'], ['58b', 'bracket_v1_58b.uff']];

// the files, written by the benchmark when missing (its own timing is not used here)
if (files.some(([, f]) => !existsSync(join(dir, f)))) {
  execFileSync('cargo', ['run', '--release', '--quiet', '--example', 'bench_uff', '--', '--rust-only'], { stdio: 'inherit' });
}
execFileSync('cargo', ['build', '--release', '--quiet', '--bin', 'mortise'], { stdio: 'inherit' });
const cli = resolve('target/release/mortise');

const best = (xs) => Math.min(...xs);
for (const [kind, name] of files) {
  const path = join(dir, name);
  const native = [];
  for (let k = 0; k < REPS; k++) {
    const t0 = process.hrtime.bigint();
    execFileSync(cli, ['inspect', path], { stdio: 'ignore' });
    native.push(Number(process.hrtime.bigint() - t0) / 1e9);
  }
  const inPage = [];
  for (let k = 0; k < REPS; k++) {
    const profile = mkdtempSync(join(tmpdir(), 'mortise-uff-bench-'));
    const ctx = await chromium.launchPersistentContext(profile, {
      executablePath: '/usr/bin/chromium',
      args: ['--headless', '--no-sandbox', '--disable-gpu', '--no-first-run', '--disable-background-networking'],
    });
    try {
      const p = ctx.pages()[0] || await ctx.newPage();
      await p.goto(pathToFileURL(page).href);
      await p.waitForFunction(() => document.body.dataset.state === 'ready', null, { timeout: 60000 });
      const t0 = Date.now();
      await p.setInputFiles('#file-input', path);
      await p.waitForSelector(`.card[data-file="${name}"]`, { timeout: 300000 });
      const t = (Date.now() - t0) / 1000;
      // a file the core refused gets a card too (class "failed"): not a read
      if (await p.$(`.card.failed[data-file="${name}"]`)) throw new Error(`${name}: the page refused the file`);
      inPage.push(t);
    } finally {
      await ctx.close();
      rmSync(profile, { recursive: true, force: true });
    }
  }
  report(`${kind} ${name}: mortise inspect, native (best of ${REPS}, s)`, best(native).toFixed(3));
  report(`${kind} ${name}: the page, file input to card (best of ${REPS}, s)`, best(inPage).toFixed(3));
  report(`${kind} ${name}: ratio page / native`, (best(inPage) / best(native)).toFixed(2));
}
