// Browser end-to-end tests of dist/mortise.html opened from disk.
// Run: tools/page.sh && node --test tests/e2e/
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { statSync, readFileSync, mkdtempSync, writeFileSync, existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { execFileSync } from 'node:child_process';
import { open, addFiles, shot, PAGE, ROOT, pasteRecipe } from './helpers.mjs';
import { frameCsv, massCsv, xssCsv, corruptCsv, RECIPE, XSS_NODE, numbers } from './data.mjs';

const report = (k, v) => console.log(`# measure ${k}: ${v}`);

test('page fits the budget, starts offline and makes no request of its own', async () => {
  const size = statSync(PAGE).size;
  report('file size (bytes)', size);
  assert.ok(size < 4 * 1024 * 1024, `page is ${size} bytes`); // tools/page.sh BUDGET
  const html = readFileSync(PAGE, 'utf8');
  assert.match(html, /Content-Security-Policy" content="default-src 'none'; script-src 'sha256-[^']+' 'wasm-unsafe-eval'; worker-src blob:;/);
  assert.match(html, /connect-src 'none'/);
  const s = await open();
  try {
    report('time to ready (ms)', (await s.page.evaluate(() => window.mortiseTimings.ready_ms)).toFixed(0));
    // The CSP refuses a fetch from the page (what proves data cannot leave).
    const blocked = await s.page.evaluate(async () => {
      try { await fetch('https://example.invalid/x'); return false; } catch (_) { return true; }
    });
    assert.ok(blocked, 'fetch must be refused');
    assert.deepEqual(s.foreign(), [], 'no request other than the file itself, data: and blob:');
    assert.deepEqual(s.errors.filter((e) => !/example\.invalid|Content Security Policy|Failed to fetch/.test(e)), []);
    await shot(s.page, '01-empty');
  } finally { await s.close(); }
});

test('files become cards; markup in a DOF label stays text; a corrupt file shows its error and the rest stays', async () => {
  const s = await open();
  try {
    const bad = corruptCsv();
    await addFiles(s.page, [
      { name: 'frame.csv', data: frameCsv() },
      { name: 'odd.csv', data: xssCsv() },
      { name: 'broken.csv', data: bad.text },
    ]);
    await s.page.waitForSelector('.card[data-file="broken.csv"]');
    const cards = await s.page.$$eval('.card', (cs) => cs.map((c) => ({ file: c.dataset.file, failed: c.classList.contains('failed'), text: c.textContent })));
    assert.deepEqual(cards.map((c) => c.file), ['frame.csv', 'odd.csv', 'broken.csv']);
    const frame = cards[0];
    assert.ok(!frame.failed);
    assert.match(frame.text, /csv-mortise/);
    assert.match(frame.text, /receptance/);
    assert.match(frame.text, /frame:1\+Z/);
    assert.match(frame.text, /300 lines, 2–600 Hz, uniform Δf = 2 Hz/);
    assert.match(frame.text, /4 in 1 set/);
    const sha = (await import('node:crypto')).createHash('sha256').update(frameCsv()).digest('hex');
    assert.ok(frame.text.includes(sha), 'card shows the SHA-256 of the bytes');
    // markup shown as text, never parsed
    assert.ok(cards[1].text.includes(XSS_NODE));
    assert.equal(await s.page.$$eval('.card img', (x) => x.length), 0);
    assert.equal(await s.page.evaluate(() => window.__xss), undefined);
    // the corrupt file: its error with file and line, in place
    assert.ok(cards[2].failed);
    assert.match(cards[2].text, new RegExp(`file broken\\.csv · line ${bad.line}`));
    assert.match(cards[2].text, /abc/);
    assert.deepEqual(s.foreign(), []);
    await shot(s.page, '02-cards-and-error');
  } finally { await s.close(); }
});

test('reload restores the workspace from IndexedDB; clear asks first', async () => {
  const profile = mkdtempSync(join(tmpdir(), 'mortise-e2e-keep-'));
  let s = await open(profile);
  await addFiles(s.page, [{ name: 'frame.csv', data: frameCsv() }, { name: 'mass.csv', data: massCsv() }]);
  await pasteRecipe(s.page, JSON.stringify(RECIPE, null, 2));
  await s.page.waitForFunction(() => document.body.dataset.saved);
  await s.page.waitForTimeout(400);
  await s.close(true);
  s = await open(profile);
  try {
    const files = await s.page.$$eval('.card', (cs) => cs.map((c) => c.dataset.file));
    assert.deepEqual(files, ['frame.csv', 'mass.csv']);
    assert.equal(JSON.parse(await s.page.inputValue('#recipe-text')).title, RECIPE.title);
    assert.match(await s.page.textContent('#status-text'), /restored: 2 file/);
    // clearing: cancel keeps everything, confirm clears
    await s.page.click('#clear-btn');
    await s.page.click('#confirm-dialog button[value=cancel]');
    assert.equal(await s.page.$$eval('.card', (c) => c.length), 2);
    await s.page.click('#clear-btn');
    await s.page.click('#confirm-ok');
    await s.page.waitForFunction(() => document.querySelectorAll('.card').length === 0);
    assert.deepEqual(s.foreign(), []);
  } finally { await s.close(); }
});

async function runRecipe(page) {
  await page.evaluate(() => {
    window.__long = 0;
    new PerformanceObserver((l) => { for (const e of l.getEntries()) window.__long = Math.max(window.__long, e.duration); })
      .observe({ type: 'longtask', buffered: false });
  });
  const before = await page.evaluate(() => document.body.dataset.plotted || '');
  await page.click('#run-btn');
  await page.waitForFunction((b) => (document.body.dataset.plotted || '') !== b || document.querySelector('#run-error:not([hidden])'), before, { timeout: 60000 });
  const err = await page.$eval('#run-error', (e) => (e.hidden ? '' : e.textContent));
  assert.equal(err, '', 'the run must succeed');
  return page.evaluate(() => ({ ...window.mortiseTimings, longest_task_ms: window.__long }));
}

async function saveDownload(page, click) {
  const [dl] = await Promise.all([page.waitForEvent('download'), page.click(click)]);
  const p = await dl.path();
  return { name: dl.suggestedFilename(), bytes: readFileSync(p) };
}

function relDiff(a, b) {
  assert.equal(a.length, b.length, 'same count of numbers');
  let worst = 0;
  for (let i = 0; i < a.length; i++) {
    const d = Math.abs(a[i] - b[i]) / Math.max(Math.abs(a[i]), Math.abs(b[i]), 1e-300);
    if (a[i] !== b[i]) worst = Math.max(worst, d);
  }
  return worst;
}

function cli() {
  const bin = process.env.MORTISE_BIN || join(ROOT, 'target/release/mortise');
  assert.ok(existsSync(bin), `${bin} is missing: cargo build --release --bin mortise (build.sh does)`);
  return bin;
}

test('a recipe runs in the worker, plots, exports like the CLI; a bundle with a supplier withheld leaks nothing and runs again once the original is dropped in', async () => {
  const s = await open();
  let csvPage, bundle;
  try {
    await addFiles(s.page, [{ name: 'frame.csv', data: frameCsv() }, { name: 'mass.csv', data: massCsv() }]);
    await pasteRecipe(s.page, JSON.stringify(RECIPE, null, 2));
    const t = await runRecipe(s.page);
    report('small recipe compute (ms)', t.last_run_ms.toFixed(1));
    report('plot (ms)', t.last_plot_ms.toFixed(1));
    report('longest main-thread task during compute (ms)', t.longest_task_ms.toFixed(1));
    // drawn on the canvas by the core in the page (the worker resolved the data)
    assert.equal(await s.page.$eval('#plot-canvas', (c) => !c.hidden && c.width > 0), true);
    assert.match(await s.page.textContent('#report'), /interface condition number up to/);
    // cursor readout from the core
    const box = await s.page.$eval('#plot-canvas', (i) => { i.scrollIntoView({ block: 'center' }); const r = i.getBoundingClientRect(); return { x: r.x, y: r.y, w: r.width, h: r.height }; });
    await s.page.mouse.move(box.x + box.w * 0.5, box.y + box.h * 0.3);
    await s.page.waitForFunction(() => /f = .* Hz/.test(document.getElementById('readout').textContent), null, { timeout: 5000 });
    await shot(s.page, '03-result-plot');
    // zoom by dragging: the frequency range shrinks
    const full = JSON.parse(await s.page.$eval('#plot-wrap', (w) => w.dataset.xrange));
    const box2 = await s.page.$eval('#plot-canvas', (i) => { i.scrollIntoView({ block: 'center' }); const r = i.getBoundingClientRect(); return { x: r.x, y: r.y, w: r.width, h: r.height }; });
    Object.assign(box, box2);
    await s.page.mouse.move(box.x + box.w * 0.3, box.y + box.h * 0.3);
    await s.page.mouse.down();
    await s.page.mouse.move(box.x + box.w * 0.6, box.y + box.h * 0.3, { steps: 4 });
    await s.page.mouse.up();
    await s.page.waitForFunction((f) => { const r = JSON.parse(document.getElementById('plot-wrap').dataset.xrange); return r[0] > f[0] && r[1] < f[1]; }, full, { timeout: 5000 });
    await shot(s.page, '04-zoomed');
    for (const kind of ['re-im', 'nyquist', 'condition', 'bars']) {
      await s.page.selectOption('#plot-kind', kind);
      await s.page.waitForTimeout(300);
      assert.doesNotMatch(await s.page.textContent('#readout'), /cannot draw/, kind);
      if (kind === 'condition') await shot(s.page, '05-condition');
    }
    await s.page.selectOption('#plot-kind', 'bode');
    csvPage = await saveDownload(s.page, '[data-export=csv]');
    const uff = await saveDownload(s.page, '[data-export=uff]');
    assert.ok(uff.bytes.length > 1000);
    const svgFile = await saveDownload(s.page, '[data-export=svg]');
    assert.match(svgFile.bytes.toString(), /^<svg/);
    const png = await saveDownload(s.page, '[data-export=png]');
    assert.deepEqual([...png.bytes.subarray(0, 4)], [0x89, 0x50, 0x4e, 0x47]);
    // bundle without the frame supplier's raw data: the coupled result over
    // frame DOFs is left out, and the page says what could still be inferred
    await s.page.uncheck('[data-raw="frame.csv"]');
    bundle = await saveDownload(s.page, '#bundle-btn');
    const note = await s.page.textContent('#bundle-info');
    assert.match(note, /Withheld: frame\.csv/, note);
    assert.match(note, /left out: assembly/, note);
    assert.match(note, /infer/, note);
    assert.deepEqual(s.foreign(), []);
  } finally { await s.close(); }

  // The same recipe through the CLI gives the same numbers.
  const dir = mkdtempSync(join(tmpdir(), 'mortise-cli-'));
  writeFileSync(join(dir, 'frame.csv'), frameCsv());
  writeFileSync(join(dir, 'mass.csv'), massCsv());
  writeFileSync(join(dir, 'r.json'), JSON.stringify(RECIPE));
  execFileSync(cli(), ['run', join(dir, 'r.json'), '-o', join(dir, 'out')]);
  const csvCli = readFileSync(join(dir, 'out/assembly.csv'), 'utf8');
  const d = relDiff(numbers(csvPage.bytes.toString()), numbers(csvCli));
  report('page vs CLI worst relative difference', d);
  assert.ok(d <= 1e-12, `page and CLI differ by ${d}`);

  // Withheld data: frame.csv's bytes and values are not in the bundle;
  // mass.csv travels as its bytes; no result holds a frame DOF.
  const btext = bundle.bytes.toString();
  const b = JSON.parse(btext);
  const inputs = Object.fromEntries(b.inputs.map((i) => [i.name, i]));
  assert.equal(inputs['frame.csv'].data, undefined);
  assert.equal(inputs['frame.csv'].sets, undefined);
  assert.equal(Buffer.from(inputs['mass.csv'].data, 'base64').toString(), massCsv());
  assert.equal(b.results.length, 0, 'the coupled matrix over frame DOFs must not travel');
  const frameVals = frameCsv().split('\n').filter((l) => /^\d/.test(l)).slice(0, 40).flatMap((l) => l.split(',').slice(1, 3));
  const jsonNum = (t) => JSON.stringify(Number(t));
  assert.equal(frameVals.filter((v) => btext.includes(jsonNum(v))).length, 0, 'withheld values must not be in the bundle');
  assert.ok(!btext.includes(Buffer.from(frameCsv()).toString('base64')), 'withheld bytes must not be in the bundle');
  const sha = (await import('node:crypto')).createHash('sha256').update(frameCsv()).digest('hex');
  assert.ok(btext.includes(sha), 'the withheld input keeps its SHA-256');

  // Reopen the bundle in a fresh browser: it asks for the withheld file; an
  // edited one is refused by its SHA-256; the original makes it run, to the
  // same numbers.
  const s2 = await open();
  try {
    await s2.page.setInputFiles('#file-input', { name: bundle.name, mimeType: 'application/json', buffer: bundle.bytes });
    await s2.page.waitForFunction(() => /bundle .* opened/.test(document.getElementById('status-text').textContent), null, { timeout: 20000 })
      .catch(async (e) => { throw new Error(`${e.message}; status: ${await s2.page.textContent('#status-text')}; cards: ${await s2.page.textContent('#cards')}`); });
    assert.match(await s2.page.textContent('#status-text'), /drop in again: frame\.csv/);
    assert.match(await s2.page.textContent('#cards'), /raw data withheld by the sender/);
    await shot(s2.page, '06-bundle-reopened');
    const drop = (data) => s2.page.setInputFiles('#file-input', { name: 'frame.csv', mimeType: 'text/csv', buffer: Buffer.from(data) });
    await drop(frameCsv() + '\n');
    await s2.page.waitForSelector('[data-file="frame.csv"] [data-bundle-match="no"]');
    await drop(frameCsv());
    await s2.page.waitForSelector('[data-file="frame.csv"] [data-bundle-match="yes"]');
    await runRecipe(s2.page);
    const again = await saveDownload(s2.page, '[data-export=csv]');
    assert.equal(again.bytes.toString(), csvPage.bytes.toString(), 'the re-supplied bundle gives the same result');
    assert.deepEqual(s2.foreign(), []);
  } finally { await s2.close(); }
});

test('a bundle with every input opens in a fresh profile and runs again to the same numbers', async () => {
  const s = await open();
  let first, bundle;
  try {
    await addFiles(s.page, [{ name: 'frame.csv', data: frameCsv() }, { name: 'mass.csv', data: massCsv() }]);
    await pasteRecipe(s.page, JSON.stringify(RECIPE, null, 2));
    await runRecipe(s.page);
    first = await saveDownload(s.page, '[data-export=csv]');
    bundle = await saveDownload(s.page, '#bundle-btn');
    assert.match(await s.page.textContent('#bundle-info'), /Every input's raw data travels/);
  } finally { await s.close(); }
  const s2 = await open();
  try {
    await s2.page.setInputFiles('#file-input', { name: bundle.name, mimeType: 'application/json', buffer: bundle.bytes });
    await s2.page.waitForFunction(() => /bundle .* opened/.test(document.getElementById('status-text').textContent), null, { timeout: 20000 });
    assert.match(await s2.page.textContent('#status-text'), /it runs as it is/);
    await runRecipe(s2.page);
    const again = await saveDownload(s2.page, '[data-export=csv]');
    assert.equal(again.bytes.toString(), first.bytes.toString(), 'the bundle runs again to the same numbers');
    assert.deepEqual(s2.foreign(), []);
  } finally { await s2.close(); }
});

test('cancel stops a run, restarts the core and keeps the workspace', async () => {
  const s = await open();
  try {
    await addFiles(s.page, [{ name: 'frame.csv', data: frameCsv() }, { name: 'mass.csv', data: massCsv() }]);
    await pasteRecipe(s.page, JSON.stringify(RECIPE));
    await runRecipe(s.page);
    await s.page.click('#run-btn');
    await s.page.click('#cancel-btn', { timeout: 2000 }).catch(() => {});
    await s.page.waitForFunction(() => !document.getElementById('run-btn').disabled);
    // the workspace is still there and usable
    assert.equal(await s.page.$$eval('.card:not(.failed)', (c) => c.length), 2);
    await runRecipe(s.page);
  } finally { await s.close(); }
});

test('a supplier CSV opens the column-mapping dialog with a live preview', async () => {
  const s = await open();
  try {
    const rows = ['frequency [Hz];Re [mm/s/N];Im [mm/s/N]'];
    for (let f = 10; f <= 100; f += 10) rows.push(`${f};${(1 / f).toFixed(6).replace('.', ',')};${(0.5 / f).toFixed(6).replace('.', ',')}`);
    await addFiles(s.page, [{ name: 'supplier.csv', data: rows.join('\n') + '\n' }]);
    await s.page.waitForSelector('#map-dialog[open]');
    await s.page.waitForSelector('#map-table table');
    const fields = await s.page.$$('#map-fields input, #map-fields select');
    assert.ok(fields.length > 8);
    // fill the map through the JSON editor (the form shows the same object)
    await s.page.click('#map-fields details summary');
    const map = {
      delimiter: 'semicolon', skip_rows: 1, decimal_comma: true, freq: 1, unit: 'mm/s/N', out_qty: 'velocity', in_qty: 'force',
      entries: [{ out_dof: 'S1+Z', in_dof: 'S1+Z', values: { form: 're-im', re: 2, im: 3 } }],
    };
    await s.page.fill('#map-json', JSON.stringify(map));
    await s.page.waitForSelector('#map-plot:not([hidden])', { timeout: 10000 });
    await s.page.$eval('#map-plot', (e) => e.scrollIntoView({ block: 'end' }));
    await shot(s.page, '07-mapping-dialog');
    await s.page.click('#map-ok');
    await s.page.waitForFunction(() => { const c = document.querySelector('.card[data-file="supplier.csv"]'); return c && !c.classList.contains('failed'); });
    assert.match(await s.page.textContent('.card[data-file="supplier.csv"]'), /mobility/);
  } finally { await s.close(); }
});

test('a supplier CSV is mapped by detection alone: the dialog opens filled in from the file, with its reasons', async () => {
  const s = await open();
  try {
    const data = readFileSync(join(ROOT, 'sample-frf/wall-accelerance.csv'));
    await addFiles(s.page, [{ name: 'wall-accelerance.csv', data }]);
    await s.page.waitForSelector('#map-dialog[open]');
    await s.page.waitForSelector('#map-detected:not([hidden])');
    const why = await s.page.textContent('#map-detected');
    assert.match(why, /Filled in from the file/);
    assert.match(why, /values in g\/N/);
    assert.match(why, /16 FRF/);
    // the card speaks of the page's controls, never of command-line flags
    assert.doesNotMatch(await s.page.textContent('.card[data-file="wall-accelerance.csv"]'), /--[a-z]/);
    await s.page.waitForFunction(() => !document.getElementById('map-ok').disabled, null, { timeout: 10000 });
    await shot(s.page, '08-mapping-detected');
    await s.page.click('#map-ok');
    await s.page.waitForFunction(() => { const c = document.querySelector('.card[data-file="wall-accelerance.csv"]'); return c && !c.classList.contains('failed') && /accelerance/.test(c.textContent); }, null, { timeout: 20000 });
    const card = await s.page.textContent('.card[data-file="wall-accelerance.csv"]');
    assert.match(card, /16/);
    assert.match(card, /991 lines/);
  } finally { await s.close(); }
});

test('one map reads every file of the same layout; another layout asks again; an empty file is an error', async () => {
  const s = await open();
  try {
    const data = readFileSync(join(ROOT, 'sample-frf/wall-accelerance.csv'));
    // two files of one layout at once: one dialog, and its map reads both
    await addFiles(s.page, [{ name: 'wall-a.csv', data }, { name: 'wall-b.csv', data }]);
    await s.page.waitForSelector('#map-dialog[open]');
    assert.equal(await s.page.textContent('#map-file'), 'wall-a.csv');
    await s.page.waitForFunction(() => !document.getElementById('map-ok').disabled, null, { timeout: 10000 });
    await s.page.click('#map-ok');
    await s.page.waitForFunction(() => document.querySelectorAll('.card:not(.failed)').length === 2, null, { timeout: 20000 });
    assert.equal(await s.page.$eval('.card[data-file="wall-b.csv"] [data-mapped-like]', (e) => e.dataset.mappedLike), 'wall-a.csv');
    // a file of that layout added later is read at once, without the dialog
    await addFiles(s.page, [{ name: 'wall-c.csv', data }]);
    await s.page.waitForFunction(() => { const c = document.querySelector('.card[data-file="wall-c.csv"]'); return c && !c.classList.contains('failed'); }, null, { timeout: 20000 });
    assert.equal(await s.page.$('#map-dialog[open]'), null);
    const fr = (n) => s.page.$eval(`.card[data-file="${n}"]`, (c) => c.textContent.match(/(\d+) in \d+ set/)[1]);
    assert.equal(await fr('wall-c.csv'), await fr('wall-a.csv'));
    // each keeps its own component name
    assert.match(await s.page.textContent('.card[data-file="wall-c.csv"]'), /wall-c/);
    // the same columns in another order are another layout: the dialog asks
    const text = data.toString('latin1').split('\n');
    const swap = (l) => { const c = l.split(','); if (c.length > 3) [c[1], c[2]] = [c[2], c[1]]; return c.join(','); };
    await addFiles(s.page, [{ name: 'wall-d.csv', data: Buffer.from(text.map(swap).join('\n'), 'latin1') }]);
    await s.page.waitForSelector('#map-dialog[open]');
    assert.equal(await s.page.textContent('#map-file'), 'wall-d.csv');
    await s.page.click('#map-cancel');
    // an empty file: an error on its card, never the dialog
    await addFiles(s.page, [{ name: 'empty.csv', data: '' }]);
    await s.page.waitForSelector('.card[data-file="empty.csv"].failed');
    assert.match(await s.page.textContent('.card[data-file="empty.csv"]'), /empty/);
    assert.equal(await s.page.$('#map-dialog[open]'), null);
    await shot(s.page, '09-one-map-many-files');
  } finally { await s.close(); }
});

test('the assembly panel suggests joints by node label and writes a recipe that runs', async () => {
  const s = await open();
  try {
    await addFiles(s.page, [{ name: 'frame.csv', data: frameCsv() }, { name: 'mass.csv', data: massCsv(0.5, '2') }]);
    const n = await s.page.locator('#asm-parts input[type=checkbox]').count();
    assert.equal(n, 2);
    for (let i = 0; i < n; i++) await s.page.locator('#asm-parts input[type=checkbox]').nth(i).check();
    await s.page.click('#suggest-btn');
    const rows = await s.page.$$eval('#joints-body tr', (trs) => trs.map((tr) => [...tr.querySelectorAll('select')].slice(0, 3).map((x) => x.value)));
    assert.deepEqual(rows, [['frame:2+Z', 'mass:2+Z', 'rigid']]);
    // make it a flexible joint: spring-damper with k, c, η
    await s.page.selectOption('#joints-body tr select >> nth=2', 'spring-damper');
    const nums = s.page.locator('#joints-body tr input[type=number]');
    await nums.nth(0).fill('2e5');
    await nums.nth(1).fill('3');
    await nums.nth(2).fill('0.1');
    await s.page.click('#build-recipe-btn');
    const recipe = JSON.parse(await s.page.inputValue('#recipe-text'));
    assert.deepEqual(recipe.steps[0].joints, [{ a: 'frame:2+Z', b: 'mass:2+Z', type: 'spring-damper', k: 2e5, c: 3, eta: 0.1 }]);
    assert.deepEqual(recipe.outputs, ['assembly']);
    await runRecipe(s.page);
    assert.match(await s.page.textContent('#report'), /assembly/);
    await shot(s.page, '08-assembly-panel');
  } finally { await s.close(); }
});
