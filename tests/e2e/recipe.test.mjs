// The page's one recipe and its stale results, end to end from file://:
// the assembly panel and the recipe text are two views of one recipe (the
// demo's joints and steps show in the panel; an edit in either shows in the
// other; nothing on screen is replaced without asking), Run runs what they
// show (checked against `mortise run` on the same recipe text), and results
// that no longer match the screen are marked stale and not exported.
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { existsSync, readFileSync, writeFileSync, mkdtempSync, copyFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { execFileSync } from 'node:child_process';
import { open, addFiles, shot, ROOT, pageResults, pasteRecipe } from './helpers.mjs';
import { frameCsv, massCsv, RECIPE, complexRows } from './data.mjs';

const report = (k, v) => console.log(`# measure ${k}: ${v}`);
const DEMO = join(ROOT, 'sample-frf');
const DEMO_RECIPE = join(DEMO, 'heat-pump.recipe.json');
// Same rule as the CLI's file names for outputs (src/cli/run.rs, safe_name).
const safe = (n) => n.replace(/[^A-Za-z0-9._-]/g, '_');

function cli() {
  const bin = process.env.MORTISE_BIN || join(ROOT, 'target/release/mortise');
  assert.ok(existsSync(bin), `${bin} is missing: cargo build --release --bin mortise (build.sh does)`);
  return bin;
}
async function loadDemo(page) {
  await page.click('#demo-btn');
  await page.waitForFunction(() => /demo loaded/.test(document.getElementById('status-text').textContent), null, { timeout: 60000 });
  await synced(page);
}
// Wait until the panel and the text agree and the core has read the text.
async function synced(page) {
  await page.waitForFunction(() => document.getElementById('asm-panel').dataset.sync === 'same'
    && !/reading/.test(document.getElementById('recipe-state').textContent), null, { timeout: 20000 });
}
const recipeOnScreen = async (page) => JSON.parse(await page.inputValue('#recipe-text'));
async function jointRows(page) {
  return page.$$eval('#joints-body tr[data-joint]', (trs) => trs.map((tr) => {
    const v = (sel) => tr.querySelector(sel)?.value ?? null;
    return { a: v('select[data-key=a]'), b: v('select[data-key=b]'), type: v('select[data-key=type]'), stiffness: v('input[data-param=stiffness]'), k: v('input[data-param=k]') };
  }));
}
async function run(page) {
  const before = await page.evaluate(() => document.body.dataset.plotted || '');
  await page.click('#run-btn');
  await page.waitForFunction((b) => ((document.body.dataset.plotted || '') !== b && !document.body.dataset.state.startsWith('busy'))
    || document.querySelector('#run-error:not([hidden])'), before, { timeout: 120000 });
  return page.$eval('#run-error', (e) => (e.hidden ? '' : e.textContent));
}
// Worst relative difference |a − b| / max(|a|, |b|) over every complex value of two CSVs (same lines).
function worstDiff(name, pageCsv, cliCsv) {
  const p = complexRows(pageCsv), c = complexRows(cliCsv);
  assert.equal(p.length, c.length, name);
  assert.ok(c.length > 0, name);
  let worst = 0;
  for (let k = 0; k < c.length; k++) {
    assert.equal(p[k].f, c[k].f, `${name}: frequency line ${k}`);
    assert.equal(p[k].pairs.length, c[k].pairs.length, name);
    c[k].pairs.forEach(([br, bi], j) => {
      const [ar, ai] = p[k].pairs[j];
      const d = Math.hypot(ar - br, ai - bi);
      const m = Math.max(Math.hypot(ar, ai), Math.hypot(br, bi));
      if (d > 0) worst = Math.max(worst, d / m);
    });
  }
  return worst;
}
// No download within `ms`.
async function noDownload(page, click, ms = 1500) {
  const dl = page.waitForEvent('download', { timeout: ms }).then(() => true, () => false);
  await page.click(click);
  return !(await dl);
}

test("the demo's components, joints and steps show in the assembly panel, with the core's lists", async () => {
  const want = JSON.parse(readFileSync(DEMO_RECIPE, 'utf8'));
  const s = await open();
  try {
    await loadDemo(s.page);
    // the coupling step and its parts
    assert.equal(await s.page.inputValue('#couple-step'), 'mounted');
    const ticked = await s.page.$$eval('#asm-parts label', (ls) => ls.filter((l) => l.querySelector('input').checked).map((l) => l.dataset.part));
    assert.deepEqual(ticked.sort(), [...want.steps[0].parts].sort());
    const parts = await s.page.$$eval('#asm-parts label', (ls) => ls.map((l) => l.dataset.part));
    assert.deepEqual(parts.sort(), Object.keys(want.components).sort(), 'every component of the recipe is listed');
    // the eight joints, as the recipe writes them
    const rows = await jointRows(s.page);
    assert.deepEqual(rows.map((r) => ({ a: r.a, b: r.b, type: r.type, ...(r.stiffness ? { stiffness: r.stiffness } : {}) })),
      want.steps[0].joints);
    // every step with its operation and operands
    const steps = await s.page.$$eval('#stages .stage', (ds) => ds.map((d) => ({ id: d.dataset.step, op: d.querySelector('.step-op').value })));
    assert.deepEqual(steps, want.steps.map((st) => ({ id: st.id, op: st.op })));
    const resp = await s.page.$eval('#stages .stage[data-step=anchor_velocity]', (d) => [...d.querySelectorAll('[data-operand] input')].map((i) => i.value));
    assert.deepEqual(resp, ['seat_to_anchor', 'forces']);
    // the panel's lists are the core's: operations, joint types and which parameters each type takes
    const vocab = await s.page.evaluate(async () => JSON.parse(await Bridge.call('recipe_vocabulary', [])));
    assert.deepEqual(await s.page.$$eval('#add-stage-op option', (os) => os.map((o) => o.value)), vocab.operations.map((o) => o.name));
    assert.deepEqual(await s.page.$$eval('#joints-body tr[data-joint="0"] select[data-key=type] option', (os) => os.map((o) => o.value)),
      vocab.joint_types.map((t) => t.name));
    // the editors' shapes come from the core's parser, one for every operand it documents
    const info = await s.page.evaluate(async () => JSON.parse(await Bridge.call('recipe_editor_info', [])));
    for (const op of vocab.operations) assert.deepEqual(Object.keys(info.operations[op.name]).sort(), op.operands.map((o) => o.name).sort(), op.name);
    for (const t of vocab.joint_types) assert.deepEqual(Object.keys(info.joint_types[t.name]).sort(), t.params.map((p) => p[0]).sort(), t.name);
    assert.equal(info.operations.couple.joints, 'joints');
    assert.equal(info.joint_types.measured.stiffness, 'text');
    const heads = await s.page.$$eval('#joints-head th', (ths) => ths.map((t) => t.textContent));
    const params = [...new Set(vocab.joint_types.flatMap((t) => t.params.map((p) => p[0])))];
    assert.deepEqual(heads.slice(3, 3 + params.length), params);
    for (const t of vocab.joint_types) {
      // the rigid joints (rows 4..7) take a type change in the panel; each type enables exactly its parameters
      await s.page.selectOption('#joints-body tr[data-joint="4"] select[data-key=type]', t.name);
      await synced(s.page);
      const enabled = await s.page.$$eval('#joints-body tr[data-joint="4"] [data-param]', (xs) => xs.filter((x) => !x.disabled).map((x) => x.dataset.param));
      assert.deepEqual(enabled.sort(), t.params.map((p) => p[0]).sort(), t.name);
    }
    await s.page.selectOption('#joints-body tr[data-joint="4"] select[data-key=type]', 'rigid');
    await synced(s.page);
    assert.deepEqual((await recipeOnScreen(s.page)).steps[0].joints[4], want.steps[0].joints[4], 'back as it was');
    await shot(s.page, '20-demo-in-the-panel');
    assert.deepEqual(s.foreign(), []);
  } finally { await s.close(); }
});

test('a joint changed in the panel is what Run runs: the page equals `mortise run` on the recipe it shows', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'mortise-edited-'));
  const base = join(dir, 'as-shipped');
  execFileSync(cli(), ['run', DEMO_RECIPE, '-o', base]);
  const s = await open();
  try {
    await loadDemo(s.page);
    // the first isolator becomes a hysteretic spring in the panel
    const row = '#joints-body tr[data-joint="0"]';
    await s.page.selectOption(`${row} select[data-key=type]`, 'hysteretic');
    await s.page.fill(`${row} input[data-param=k]`, '250000');
    await s.page.fill(`${row} input[data-param=eta]`, '0.12');
    await synced(s.page);
    assert.match(await s.page.textContent('#recipe-state'), /The core reads this recipe/);
    const shown = await recipeOnScreen(s.page);
    const want = JSON.parse(readFileSync(DEMO_RECIPE, 'utf8'));
    assert.deepEqual(shown.steps[0].joints[0], { a: 'casing:101+Z', b: 'bracket:1+Z', type: 'hysteretic', k: 250000, eta: 0.12 });
    assert.deepEqual(shown.steps[0].joints.slice(1), want.steps[0].joints.slice(1), 'the other joints are as they were');
    assert.deepEqual({ ...shown, steps: shown.steps.slice(1) }, { ...want, steps: want.steps.slice(1) }, 'the rest of the recipe is as it was');
    assert.equal(await run(s.page), '', 'the run succeeds');
    assert.equal(await s.page.$eval('#stale-banner', (b) => b.hidden), true);
    assert.match(await s.page.textContent('#headline'), /room:bed/);
    await shot(s.page, '21-edited-joint-result');
    const got = await pageResults(s.page);

    // the CLI on the very text the page shows, beside copies of the demo files
    const work = join(dir, 'edited');
    execFileSync('mkdir', ['-p', work]);
    for (const n of ['unit-casing.uff', 'unit-blocked-forces.uff', 'isolator-stiffness.csv', 'brackets.uffb', 'wall-accelerance.csv', 'wall-to-bed-pressure.csv']) {
      copyFileSync(join(DEMO, n), join(work, n));
    }
    writeFileSync(join(work, 'recipe.json'), await s.page.inputValue('#recipe-text'));
    execFileSync(cli(), ['run', join(work, 'recipe.json'), '-o', join(work, 'out')]);
    assert.ok(got.size >= 4, `results compared: ${[...got.keys()]}`);
    let changed = 0;
    for (const [name, csv] of got) {
      const d = worstDiff(name, csv, readFileSync(join(work, 'out', safe(name) + '.csv'), 'utf8'));
      report(`edited demo ${name}: page vs CLI worst relative difference`, d);
      assert.ok(d <= 1e-9, `${name}: ${d}`);
      // and the edit took effect: the result differs from the demo as shipped
      const shipped = join(base, safe(name) + '.csv');
      if (existsSync(shipped)) changed = Math.max(changed, worstDiff(name, csv, readFileSync(shipped, 'utf8')));
    }
    report('edited demo vs demo as shipped, largest relative change', changed);
    assert.ok(changed > 1e-3, `the edited joint changes the results (${changed})`);

    // UFF export numbers the text node labels as `mortise run` does, and offers the table beside the file
    const bed = await s.page.$eval('#curve-select optgroup[data-group=results] option[data-name=bedroom]', (o) => o.value);
    await s.page.selectOption('#curve-select', bed);
    const [uff] = await Promise.all([s.page.waitForEvent('download'), s.page.click('[data-export=uff]')]);
    assert.equal(uff.suggestedFilename(), 'mortise-results.uff');
    await s.page.waitForSelector('#node-numbers-btn');
    const [tbl] = await Promise.all([s.page.waitForEvent('download'), s.page.click('#node-numbers-btn')]);
    const table = JSON.parse(readFileSync(await tbl.path(), 'utf8'));
    const cliReport = JSON.parse(readFileSync(join(work, 'out', 'report.json'), 'utf8'));
    assert.deepEqual(table, cliReport.uff_node_numbers.bedroom);
    assert.match(await s.page.textContent('#export-info'), /numbers the text node labels/);
    assert.deepEqual(s.foreign(), []);
  } finally { await s.close(); }
});

test('hand edits of the recipe text and panel edits meet in one recipe; nothing is replaced without asking', async () => {
  const s = await open();
  try {
    await addFiles(s.page, [{ name: 'frame.csv', data: frameCsv() }, { name: 'mass.csv', data: massCsv() }]);
    await pasteRecipe(s.page, JSON.stringify(RECIPE, null, 2));
    await synced(s.page);
    assert.deepEqual(await jointRows(s.page), [{ a: 'frame:2+Z', b: 'mass:7+Z', type: 'rigid', stiffness: '', k: '' }]);
    // a hand edit of the text shows in the panel
    const hand = structuredClone(RECIPE);
    hand.title = 'edited by hand';
    hand.steps[0].joints[0] = { a: 'frame:2+Z', b: 'mass:7+Z', k: 1e5 }; // no type: the core reads a spring
    await pasteRecipe(s.page, JSON.stringify(hand, null, 2));
    await synced(s.page);
    const rows = await jointRows(s.page);
    assert.equal(rows[0].type, 'spring');
    assert.equal(rows[0].k, '100000');
    assert.match(await s.page.textContent('#joints-body'), /type read from its parameters/);
    assert.match(await s.page.textContent('#recipe-state'), /read as 'spring' from k/);
    // then a panel edit: the hand edit stays, the panel's change joins it
    await s.page.fill('#joints-body tr[data-joint="0"] input[data-param=k]', '300000');
    await synced(s.page);
    let text = await recipeOnScreen(s.page);
    assert.equal(text.title, 'edited by hand', 'the hand edit is kept');
    assert.deepEqual(text.steps[0].joints[0], { a: 'frame:2+Z', b: 'mass:7+Z', k: 300000, type: 'spring' });
    assert.match(await s.page.textContent('#asm-sync'), /same recipe \(last change: the assembly panel\)/);
    const good = await s.page.inputValue('#recipe-text');

    // a hand edit the core cannot read yet: the panel says the text is newer and waits
    const broken = good.replace('"title": "edited by hand",', '"title": "half typed,');
    await pasteRecipe(s.page, broken);
    await s.page.waitForFunction(() => document.getElementById('asm-panel').dataset.sync === 'text-newer');
    await s.page.waitForFunction(() => /line \d+/.test(document.getElementById('recipe-state').textContent));
    assert.match(await s.page.textContent('#asm-sync'), /The recipe text is newer than this panel/);
    assert.equal(await s.page.$eval('#asm-body', (b) => b.inert), true, 'the panel takes no edits while it is behind');
    await shot(s.page, '22-text-newer-than-panel');
    // writing the panel's recipe back asks first; keeping leaves the text alone
    await s.page.click('#build-recipe-btn');
    await s.page.waitForSelector('#ask-dialog[open]');
    assert.match(await s.page.textContent('#ask-text'), /Replace it with the recipe the panel shows/);
    await shot(s.page, '23-asks-before-replacing');
    await s.page.click('#ask-cancel');
    assert.equal(await s.page.inputValue('#recipe-text'), broken, 'kept as typed');
    await s.page.click('#build-recipe-btn');
    await s.page.waitForSelector('#ask-dialog[open]');
    await s.page.click('#ask-ok');
    await synced(s.page);
    text = await recipeOnScreen(s.page);
    assert.deepEqual(text, JSON.parse(good), 'the panel recipe came back as it was');

    // a recipe file dropped on a page that holds a recipe asks before replacing it
    await s.page.setInputFiles('#file-input', { name: 'other.recipe.json', mimeType: 'application/json', buffer: Buffer.from(JSON.stringify(RECIPE)) });
    await s.page.waitForSelector('#ask-dialog[open]');
    await s.page.click('#ask-cancel');
    await s.page.waitForFunction(() => /kept the recipe on screen/.test(document.getElementById('status-text').textContent));
    assert.deepEqual(await recipeOnScreen(s.page), JSON.parse(good));
    assert.deepEqual(s.foreign(), []);
  } finally { await s.close(); }
});

test('a failed run marks the results stale, shows the error with its recipe path, and exports refuse stale results', async () => {
  const s = await open();
  try {
    await addFiles(s.page, [{ name: 'frame.csv', data: frameCsv() }, { name: 'mass.csv', data: massCsv() }]);
    await pasteRecipe(s.page, JSON.stringify(RECIPE, null, 2));
    assert.equal(await run(s.page), '');
    assert.equal(await s.page.$eval('#results-panel', (p) => p.dataset.stale), 'no');
    const [ok] = await Promise.all([s.page.waitForEvent('download'), s.page.click('[data-export=csv]')]);
    const fresh = readFileSync(await ok.path(), 'utf8');

    // the recipe changes after the run: the results on screen are stale at once
    const bad = structuredClone(RECIPE);
    bad.steps[0].joints[0].b = 'mass:9+Z';
    await pasteRecipe(s.page, JSON.stringify(bad, null, 2));
    await s.page.waitForSelector('#stale-banner:not([hidden])');
    assert.match(await s.page.textContent('#stale-banner'), /STALE RESULTS.*recipe text was edited after this run/);
    // the run fails: the error names its place in the recipe; the results stay stale
    const err = await run(s.page);
    assert.match(err, /in the recipe: steps\[0\] \(id 'assembly', op 'couple'\)/);
    assert.match(err, /mass:9\+Z/);
    assert.match(await s.page.textContent('#stale-banner'), /STALE RESULTS.*the last run failed/);
    assert.equal(await s.page.$eval('#plot-stale', (l) => l.hidden), false, 'the plot carries the label');
    assert.match(await s.page.textContent('#plot-stale'), /STALE/);
    assert.match(await s.page.$eval('#curve-select optgroup[data-group=results]', (g) => g.label), /STALE/);
    await shot(s.page, '24-stale-after-failed-run');
    // exports of stale results are refused, with the reason
    for (const kind of ['csv', 'uff', 'svg', 'png']) {
      assert.ok(await noDownload(s.page, `[data-export=${kind}]`), `${kind}: no file`);
      assert.match(await s.page.textContent('#export-info'), /Export refused: the results are stale/);
    }
    assert.ok(await noDownload(s.page, '#bundle-btn'), 'bundle: no file');
    assert.match(await s.page.textContent('#bundle-info'), /refused: the results are stale/);

    // fixed and run again: the mark goes, exports work and give the first run's numbers
    await pasteRecipe(s.page, JSON.stringify(RECIPE, null, 2));
    assert.equal(await run(s.page), '');
    assert.equal(await s.page.$eval('#stale-banner', (b) => b.hidden), true);
    assert.equal(await s.page.$eval('#plot-stale', (l) => l.hidden), true);
    const [again] = await Promise.all([s.page.waitForEvent('download'), s.page.click('[data-export=csv]')]);
    assert.equal(readFileSync(await again.path(), 'utf8'), fresh);
    // a change in the panel marks them stale too
    await s.page.selectOption('#joints-body tr[data-joint="0"] select[data-key=type]', 'spring');
    await s.page.waitForSelector('#stale-banner:not([hidden])');
    assert.match(await s.page.textContent('#stale-banner'), /assembly panel changed the recipe/);
    assert.deepEqual(s.foreign(), []);
  } finally { await s.close(); }
});

test('a cancelled run marks the results stale', async () => {
  const s = await open();
  try {
    await loadDemo(s.page);
    assert.equal(await run(s.page), '');
    const ms = await s.page.evaluate(() => window.mortiseTimings.last_run_ms);
    report('demo compute for the cancel test (ms)', ms.toFixed(0));
    // cancel while the core computes (the worker says so), not while the plot
    // is drawn after it; on a fast machine the click can land after the
    // compute ended (then the results are rightly fresh): try again, up to 5 times
    for (let attempt = 0; attempt < 5; attempt++) {
      await s.page.click('#run-btn');
      await s.page.waitForFunction(() => document.getElementById('run-stage').textContent === 'running the recipe', null, { timeout: 10000 });
      await s.page.click('#cancel-btn', { timeout: 2000 }).catch(() => {});
      await s.page.waitForFunction(() => !document.getElementById('run-btn').disabled, null, { timeout: 30000 });
      await s.page.waitForTimeout(500);
      const stale = await s.page.$eval('#stale-banner', (b) => !b.hidden);
      if (stale) break;
      report('cancel landed after the compute; attempt', attempt + 1);
    }
    await s.page.waitForSelector('#stale-banner:not([hidden])', { timeout: 20000 }).catch(async (e) => {
      throw new Error(`${e.message}; status: ${await s.page.textContent('#status-text')}; stale: ${await s.page.$eval('#results-panel', (p) => p.dataset.stale)}; results: ${await s.page.$$eval('#curve-select optgroup[data-group=results] option', (o) => o.length)}`);
    });
    assert.match(await s.page.textContent('#stale-banner'), /cancelled/);
    assert.ok(await noDownload(s.page, '[data-export=csv]'));
    // the workspace and the recipe are as they were, and a new run clears the mark
    assert.equal(await s.page.$$eval('.card:not(.failed)', (c) => c.length), 6);
    assert.equal(await run(s.page), '');
    assert.equal(await s.page.$eval('#stale-banner', (b) => b.hidden), true);
  } finally { await s.close(); }
});
