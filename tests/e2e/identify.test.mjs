// The modal-fit view from file://: a noisy 3-output × 2-input accelerance
// set made at test time by tests/py/identify_ref.py (numpy: six known modes,
// 1 % complex Gaussian noise, one driving point left out), fitted by an
// identify-modes step and synthesized by a regenerate step that fills the
// missing entry. The core's stabilization chart shows; a click on a stable
// pole and the keyboard list of stable poles write `pick` into the recipe
// text; re-running reports exactly the modes listed; measured and
// synthesized plot together, the filled entry named as synthesized; the
// page's result equals `mortise run` on the same recipe; axe-core finds no
// serious or critical violation in the view.
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { existsSync, readFileSync, writeFileSync, mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { execFileSync } from 'node:child_process';
import { open, addFiles, shot, ROOT, pasteRecipe } from './helpers.mjs';
import { complexRows } from './data.mjs';

const report = (k, v) => console.log(`# measure ${k}: ${v}`);
const AXE = readFileSync(join(ROOT, 'node_modules/axe-core/axe.min.js'), 'utf8');
// the modes the numpy reference (tests/py/identify_ref.py modal) builds the FRFs from; found within
// 1 % (the default frequency tolerance of stability, common practice)
const TRUE_HZ = [42.0, 77.0, 118.0, 118.0 * 1.02, 165.0, 212.0];

function cli() {
  const bins = [process.env.MORTISE_BIN, join(ROOT, 'target/release/mortise'), join(ROOT, 'target/debug/mortise')].filter(Boolean);
  const bin = bins.find((b) => existsSync(b));
  assert.ok(bin, `no mortise binary (${bins.join(', ')}): cargo build --release --bin mortise`);
  return bin;
}
function python() {
  const py = process.env.MORTISE_PYTHON || join(ROOT, '.venv/bin/python');
  assert.ok(existsSync(py), `${py} is missing: the Python venv (build.sh test makes it)`);
  return py;
}

// The reference's noisy accelerance as our CSV layout, entry p:1+Y / p:1+Y
// left out (a driving point nobody measured).
function measuredCsv() {
  const d = JSON.parse(execFileSync(python(), [join(ROOT, 'tests/py/identify_ref.py'), 'modal', '0.01', '7'], { maxBuffer: 1 << 28 }).toString());
  const outs = ['p:1+X', 'p:1+Y', 'p:1+Z'], ins = ['p:1+X', 'p:1+Y'];
  const skip = (o, i) => o === 1 && i === 1;
  const head = ['# mortise-frf 1', '# name: bracket', '# out-quantity: acceleration', '# in-quantity: force', '# units: SI',
    ...outs.map((o) => `# output: ${o}`), ...ins.map((i) => `# input: ${i}`), '# missing: 2 2 (p:1+Y / p:1+Y)'];
  const cols = ['freq_Hz'];
  for (let o = 0; o < 3; o++) for (let i = 0; i < 2; i++) if (!skip(o, i)) cols.push(`re ${outs[o]}/${ins[i]}`, `im ${outs[o]}/${ins[i]}`);
  const rows = d.freqs.map((f, k) => {
    const r = [f];
    for (let o = 0; o < 3; o++) for (let i = 0; i < 2; i++) if (!skip(o, i)) r.push(...d.noisy[(k * 3 + o) * 2 + i]);
    return r.join(',');
  });
  return [...head, cols.join(','), ...rows].join('\n') + '\n';
}
const RECIPE = {
  format: 'mortise-recipe', version: 1, title: 'bracket hammer test, modes fitted and FRFs cleaned',
  components: { bracket: { file: 'bracket-hammer.csv' } },
  steps: [
    { id: 'bracket-modes', op: 'identify-modes', from: 'bracket', band: [30, 250], max_order: 24 },
    { id: 'bracket-clean', op: 'regenerate', from: 'bracket-modes', fill_missing: true },
  ],
  outputs: ['bracket', 'bracket-clean'],
};

async function run(page) {
  const before = await page.evaluate(() => document.body.dataset.plotted || '');
  const drawn = await page.evaluate(() => document.getElementById('fit-panel').dataset.rendered || '');
  await page.click('#run-btn');
  await page.waitForFunction((b) => ((document.body.dataset.plotted || '') !== b && !document.body.dataset.state.startsWith('busy'))
    || document.querySelector('#run-error:not([hidden])'), before, { timeout: 180000 });
  const err = await page.$eval('#run-error', (e) => (e.hidden ? '' : e.textContent));
  assert.equal(err, '', 'the run failed');
  await page.waitForFunction((n) => document.querySelector('#fit-panel:not([hidden]) .fit-chart svg') && document.getElementById('fit-panel').dataset.stale === 'no'
    && (document.getElementById('fit-panel').dataset.rendered || '') !== n, drawn, { timeout: 30000 });
}
const modesOnScreen = (page) => page.$$eval('.fit-modes tr td:nth-child(2)', (tds) => tds.map((t) => Number(t.textContent)));
const pickOnScreen = async (page) => JSON.parse(await page.inputValue('#recipe-text')).steps[0].pick;
// The recipe was read by the core after an edit.
const readByCore = (page) => page.waitForFunction(() => /The core reads this recipe/.test(document.getElementById('recipe-state').textContent), null, { timeout: 20000 });
const near = (f, list, tol) => list.some((g) => Math.abs(g - f) <= tol);

// Worst relative difference |a − b| / max(|a|, |b|) over every complex value of two CSVs (same lines).
function worstDiff(pageCsv, cliCsv) {
  const p = complexRows(pageCsv), c = complexRows(cliCsv);
  assert.equal(p.length, c.length);
  assert.ok(c.length > 0);
  let worst = 0;
  for (let k = 0; k < c.length; k++) {
    assert.equal(p[k].f, c[k].f, `frequency line ${k}`);
    assert.equal(p[k].pairs.length, c[k].pairs.length);
    c[k].pairs.forEach(([br, bi], j) => {
      const [ar, ai] = p[k].pairs[j];
      const d = Math.hypot(ar - br, ai - bi);
      if (d > 0) worst = Math.max(worst, d / Math.max(Math.hypot(ar, ai), Math.hypot(br, bi)));
    });
  }
  return worst;
}

test('modal fit view: chart, choosing poles by click and by keys, quality, overlay, same numbers as the CLI', async () => {
  const csv = measuredCsv();
  const s = await open();
  try {
    const p = s.page;
    await addFiles(p, [{ name: 'bracket-hammer.csv', data: Buffer.from(csv) }]);
    await pasteRecipe(p, JSON.stringify(RECIPE, null, 2));
    await readByCore(p);
    await run(p);

    // ---- the core's chart with its summary, the quality tables
    const summary = await p.$eval('.fit-pic', (e) => e.getAttribute('aria-label'));
    assert.match(summary, /Stabilization chart, 30–250 Hz, model orders 1–24/);
    const auto = await modesOnScreen(p);
    report('modes chosen automatically (Hz)', auto.join(', '));
    assert.equal(auto.length, 6, `six modes: ${auto}`);
    for (const f of TRUE_HZ) assert.ok(near(f, auto, 0.01 * f), `${f} Hz found within 1 % (numpy reference)`);
    assert.equal(await p.$$eval('.fit-frfs tr[data-poor]', (r) => r.length), 5, 'one row per measured FRF');
    assert.equal(await p.$$eval('.fit-mac tr', (r) => r.length), 7, 'auto-MAC: a head row and six');
    assert.equal(await p.isChecked('.fit-auto'), true);
    const reasons = await p.textContent('.fit-reasons');
    assert.match(reasons, /stable in frequency, damping and vector at \d+ orders/);

    // ---- keyboard only: drop the 77 Hz mode from the list of stable poles
    const g77 = await p.$$eval('.fit-groups tr[data-freq]', (rs) => rs.map((r) => Number(r.dataset.freq)));
    const f77 = g77.find((f) => Math.abs(f - 77) < 0.77);
    assert.ok(f77, `a stable group at 77 Hz: ${g77}`);
    await p.focus('#recipe-text');
    let presses = 0;
    while (!(await p.evaluate((f) => document.activeElement?.matches(`.fit-toggle[data-freq="${f}"]`), f77))) {
      await p.keyboard.press('Tab');
      assert.ok(++presses < 400, 'the 77 Hz button is reached by Tab');
    }
    assert.equal(await p.evaluate(() => document.activeElement.textContent), 'drop');
    await p.keyboard.press('Enter');
    await p.waitForFunction(() => Array.isArray(JSON.parse(document.getElementById('recipe-text').value).steps[0].pick));
    let pick = await pickOnScreen(p);
    report('pick after dropping 77 Hz by keys', JSON.stringify(pick));
    assert.equal(pick.length, 5);
    assert.ok(!pick.some((c) => Math.abs(c.freq - 77) <= c.tol), 'no entry takes 77 Hz');
    assert.equal(await p.isChecked('.fit-auto'), false);
    await readByCore(p);
    await run(p);
    let modes = await modesOnScreen(p);
    assert.equal(modes.length, 5, `exactly the five listed: ${modes}`);
    for (const c of pick) assert.equal(modes.filter((f) => Math.abs(f - c.freq) <= c.tol).length, 1, `one mode for ${c.freq} ± ${c.tol}`);

    // ---- a click on a stable pole of the 77 Hz column adds it back
    const marks = JSON.parse(await p.$eval('.fit-chart', (e) => e.dataset.poles));
    const target = marks.filter((m) => m.class === 'stable' && Math.abs(m.freq - 77) < 0.77).sort((a, b) => b.order - a.order)[0];
    assert.ok(target, 'a stable pole at 77 Hz is drawn');
    const box = await p.$eval('.fit-pic svg', (e) => { e.scrollIntoView({ block: 'center' }); const r = e.getBoundingClientRect(); return { x: r.left, y: r.top, w: r.width, W: Number(e.getAttribute('width')) }; });
    const k = box.w / box.W;
    await p.mouse.click(box.x + (target.x + target.w / 2) * k, box.y + (target.y + target.h / 2) * k);
    await p.waitForFunction(() => JSON.parse(document.getElementById('recipe-text').value).steps[0].pick.length === 6, null, { timeout: 10000 })
      .catch(async (e) => { throw new Error(`${e.message}; status: ${await p.textContent('#status-text')}`); });
    pick = await pickOnScreen(p);
    report('pick after clicking the pole at order ' + target.order, JSON.stringify(pick));
    const added = pick.find((c) => Math.abs(c.freq - 77) < 1);
    assert.ok(added && Math.abs(added.freq - target.freq) <= 1e-4 * target.freq, `the clicked pole's frequency ${target.freq} is in pick: ${JSON.stringify(added)}`);
    await readByCore(p);
    await run(p);
    modes = await modesOnScreen(p);
    report('modes after the click (Hz)', modes.join(', '));
    assert.equal(modes.length, 6);
    for (const c of pick) assert.equal(modes.filter((f) => Math.abs(f - c.freq) <= c.tol).length, 1, `one mode for ${c.freq} ± ${c.tol}`);
    assert.equal(await p.$eval('.fit-reasons summary', (e) => e.textContent), 'why these modes (listed in “pick”)');

    // ---- measured and synthesized on the plot, the filled entry named
    await p.click('.fit-overlay-btn');
    await p.waitForFunction(() => JSON.parse(document.getElementById('plot-wrap').dataset.spec || '{}').series?.length === 11, null, { timeout: 30000 });
    const spec = JSON.parse(await p.$eval('#plot-wrap', (e) => e.dataset.spec));
    const labels = spec.series.map((x) => x.label);
    assert.equal(labels.filter((l) => /\(measured\)$/.test(l)).length, 5);
    assert.equal(labels.filter((l) => /\(synthesized\)$/.test(l)).length, 5);
    assert.deepEqual(labels.filter((l) => /SYNTHESIZED, not measured/.test(l)), ['bracket-clean: bracket:1+Y / bracket:1+Y (SYNTHESIZED, not measured: filled from the mode shapes)']);
    await p.waitForFunction(() => document.querySelectorAll('#plot-legend-list li').length > 0);
    assert.match(await p.textContent('#plot-legend-list'), /bracket:1\+Y \/ bracket:1\+Y \(SYNTHESIZED, not measured/);
    assert.match(await p.textContent('.fit-filled'), /bracket:1\+Y\/bracket:1\+Y/);

    // ---- the page's result against `mortise run` on the same recipe
    const text = await p.inputValue('#recipe-text');
    const dir = mkdtempSync(join(tmpdir(), 'mortise-fit-'));
    writeFileSync(join(dir, 'bracket-hammer.csv'), csv);
    writeFileSync(join(dir, 'fit.recipe.json'), text);
    execFileSync(cli(), ['run', join(dir, 'fit.recipe.json'), '-o', join(dir, 'out')]);
    const pageCsv = await p.evaluate(async () => {
      const opt = [...document.querySelectorAll('#curve-select optgroup[data-group=results] option')].find((o) => o.dataset.name === 'bracket-clean');
      const id = JSON.parse(opt.value)[0];
      return new TextDecoder().decode((await Bridge.call('export_file', [JSON.stringify([id]), 'csv'])).bytes);
    });
    const d = worstDiff(pageCsv, readFileSync(join(dir, 'out/bracket-clean.csv'), 'utf8'));
    report('bracket-clean: page vs `mortise run`, worst relative difference', d.toExponential(2));
    assert.ok(d <= 1e-10, `page and CLI differ by ${d}`); // one library, same recipe (DEVELOPERS.md invariants)
    const cliReport = JSON.parse(readFileSync(join(dir, 'out/report.json'), 'utf8'));
    const cliModes = cliReport.steps.find((x) => x.id === 'bracket-modes').identification.modes.map((m) => m.freq);
    const worstF = Math.max(...cliModes.map((f, i) => Math.abs(f - modes[i]) / f));
    report('mode frequencies: page table vs `mortise run` (table rounded to 6 digits), worst relative difference', worstF.toExponential(2));
    assert.ok(worstF <= 1e-5);

    // ---- "choose automatically" removes pick: the core's own choice again
    await p.check('.fit-auto');
    await p.waitForFunction(() => !('pick' in JSON.parse(document.getElementById('recipe-text').value).steps[0]));
    assert.match(await p.textContent('.fit-pick-now'), /no “pick”/);
    await readByCore(p);
    await run(p);
    assert.equal((await modesOnScreen(p)).length, 6);
    assert.equal(await p.$eval('.fit-reasons summary', (e) => e.textContent), 'why these modes (chosen automatically)');

    // ---- accessibility of the view
    await p.evaluate(AXE);
    const vs = await p.evaluate(async () => {
      const r = await axe.run(document.getElementById('fit-panel'), { runOnly: { type: 'tag', values: ['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa', 'best-practice'] }, resultTypes: ['violations'] });
      return r.violations.map((v) => ({ id: v.id, impact: v.impact, nodes: v.nodes.slice(0, 3).map((n) => n.target.join(' ')) }));
    });
    report('axe-core violations in the modal fit view', vs.map((v) => `${v.id}/${v.impact}`).join(', ') || 'none');
    assert.deepEqual(vs.filter((v) => v.impact === 'serious' || v.impact === 'critical'), []);
    await p.$eval('#fit-panel', (e) => e.scrollIntoView());
    await p.screenshot({ path: join(ROOT, 'tests/e2e/artifacts/60-modal-fit.png'), fullPage: false });
    await shot(p, '61-modal-fit-page');
    assert.deepEqual(s.foreign(), []);
    assert.deepEqual(s.errors, []);
  } finally { await s.close(); }
});

test('modal fit view: without a regenerate step the view offers one, then plots both', async () => {
  const csv = measuredCsv();
  const s = await open();
  try {
    const p = s.page;
    await addFiles(p, [{ name: 'bracket-hammer.csv', data: Buffer.from(csv) }]);
    const recipe = { ...RECIPE, steps: [RECIPE.steps[0]], outputs: ['bracket-modes'] };
    await pasteRecipe(p, JSON.stringify(recipe, null, 2));
    await readByCore(p);
    await run(p);
    assert.equal(await p.$('.fit-overlay-btn'), null);
    await p.click('.fit-add-regen');
    await p.waitForFunction(() => JSON.parse(document.getElementById('recipe-text').value).steps.length === 2);
    const r = JSON.parse(await p.inputValue('#recipe-text'));
    assert.deepEqual(r.steps[1], { id: 'bracket-modes-synth', op: 'regenerate', from: 'bracket-modes', fill_missing: true });
    assert.deepEqual(r.outputs, ['bracket-modes', 'bracket', 'bracket-modes-synth']);
    await readByCore(p);
    await run(p);
    await p.click('.fit-overlay-btn');
    await p.waitForFunction(() => JSON.parse(document.getElementById('plot-wrap').dataset.spec || '{}').series?.length === 11, null, { timeout: 30000 });
    report('curves plotted after adding the regenerate step', 11);
    assert.deepEqual(s.errors, []);
  } finally { await s.close(); }
});
