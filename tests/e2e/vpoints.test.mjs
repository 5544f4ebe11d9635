// The virtual-points panel from file://: a rigid block's measured FRFs and
// its geometry file are loaded, a to-virtual-points step is added through
// the form (groups proposed by distance), the recipe runs, the panel shows
// the core's geometry drawing (sensor and impact arrows counted), the
// consistency plot and a "pass" verdict, and the page's virtual-point FRFs
// equal `mortise run` on the same recipe and files (max relative difference
// printed and asserted ≤ 1e-12). axe-core scans the panel.
//
// The data: tests/py/vpt_block.py (numpy: a rigid block on springs, its
// channels and impacts made by exact rigid-body kinematics, textbook), its
// JSON written here as our own CSV layout (src/io/csv/mod.rs docs), numbers
// in the shortest text that reads back to the same double (ECMAScript
// Number-to-String, as Python's repr).
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync, readdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { open, addFiles, shot, ROOT } from './helpers.mjs';

const AXE = readFileSync(join(ROOT, 'node_modules/axe-core/axe.min.js'), 'utf8');
const PY = process.env.MORTISE_PYTHON || join(ROOT, '.venv/bin/python');
const BIN = process.env.MORTISE_BIN || join(ROOT, 'target/release/mortise');

// One set of vpt.json as a `mortise-frf 1` block (line-major data: line, output, input).
function frfCsv(set, freqs) {
  const q = { accelerance: ['acceleration', 'force'] }[set.kind];
  assert.ok(q, `kind ${set.kind}`);
  const no = set.outputs.length, ni = set.inputs.length;
  const head = ['# mortise-frf 1', `# name: ${set.name}`, `# out-quantity: ${q[0]}`, `# in-quantity: ${q[1]}`, '# units: SI',
    ...set.outputs.map((d) => `# output: ${d}`), ...set.inputs.map((d) => `# input: ${d}`)];
  const cols = ['freq_Hz'];
  for (const o of set.outputs) for (const i of set.inputs) cols.push(`re ${o}/${i}`, `im ${o}/${i}`);
  const rows = freqs.map((f, k) => {
    const r = [String(f)];
    for (let a = 0; a < no; a++) for (let b = 0; b < ni; b++) {
      const n = (k * no + a) * ni + b;
      r.push(String(set.re[n]), String(set.im[n]));
    }
    return r.join(',');
  });
  return [...head, cols.join(','), ...rows].join('\n') + '\n';
}

// A CSV of our layout: column name → values.
function columns(text) {
  const lines = text.split(/\r?\n/).filter((l) => l && !l.startsWith('#'));
  const names = lines[0].split(',');
  const out = new Map(names.map((n) => [n, []]));
  for (const l of lines.slice(1)) l.split(',').forEach((c, k) => out.get(names[k]).push(Number(c)));
  return out;
}

test('virtual points on the page: geometry file, form, drawing, consistency, same numbers as the CLI', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'mortise-vpage-'));
  execFileSync(PY, [join(ROOT, 'tests/py/vpt_block.py'), dir]);
  const doc = JSON.parse(readFileSync(join(dir, 'vpt.json'), 'utf8'));
  const unitCsv = frfCsv(doc.unit.set, doc.freqs);
  writeFileSync(join(dir, 'unit.csv'), unitCsv);
  writeFileSync(join(dir, 'foot.geom.csv'), doc.geometry_unit);
  const s = await open();
  try {
    const page = s.page;
    await addFiles(page, [{ name: 'unit.csv', data: unitCsv }, { name: 'foot.geom.csv', data: doc.geometry_unit }]);
    // the geometry file is a card with the core's count of rows and its unit
    const geoCard = await page.waitForSelector('.card[data-file="foot.geom.csv"] [data-geometry-rows]');
    const geoText = await geoCard.textContent();
    const rows = doc.geometry_unit.split('\n').filter((l) => l.trim() && !l.startsWith('#') && !/^unit\s*,/.test(l)).length;
    console.log(`# measure geometry card: ${geoText}`);
    assert.equal(geoText, `geometry: ${rows} rows, unit mm`);
    // a recipe with a component for the loaded set
    await page.click('#build-recipe-btn');
    await page.waitForFunction(() => /"components"/.test(document.getElementById('recipe-text').value));
    // the form: a new step reading the component with the geometry file
    await page.waitForFunction(() => [...document.getElementById('vp-from').options].some((o) => o.value === 'unit'));
    await page.selectOption('#vp-step', '(new step)');
    await page.fill('#vp-new-id', 'foot');
    await page.selectOption('#vp-from', 'unit');
    await page.selectOption('#vp-geometry', 'foot.geom.csv');
    // groups proposed by distance around the block's reference point
    await page.fill('#vp-origins', 'bolt: 0, 0, 0');
    await page.fill('#vp-radius', '80');
    await page.click('#vp-propose');
    await page.waitForSelector('#vp-proposal li[data-group=bolt] button');
    await page.click('#vp-proposal li[data-group=bolt] button');
    const picked = await page.evaluate(() => ({
      sensors: [...document.getElementById('vp-sensors').selectedOptions].map((o) => o.value),
      impacts: [...document.getElementById('vp-impacts').selectedOptions].map((o) => o.value),
    }));
    console.log(`# measure proposed group bolt: ${picked.sensors.length} channels, ${picked.impacts.length} impacts`);
    // the block's three tri-axial sensors (9 channels) and nine impacts; the frame DOFs are not in the geometry
    assert.equal(picked.sensors.length, 9);
    assert.deepEqual(picked.impacts.slice().sort(), doc.impacts_unit.slice().sort());
    assert.ok(picked.sensors.every((d) => doc.sensors_unit.some((n) => d.startsWith(n + '+'))), picked.sensors.join(' '));
    await page.click('#vp-add');
    await page.waitForFunction(() => /"to-virtual-points"/.test(document.getElementById('recipe-text').value));
    const recipeText = await page.inputValue('#recipe-text');
    const recipe = JSON.parse(recipeText);
    const step = recipe.steps.find((st) => st.id === 'foot');
    assert.equal(step.geometry, 'foot.geom.csv');
    assert.ok(recipe.outputs.includes('foot'));
    // the drawing of the geometry, before any run
    await page.waitForSelector('#vp-steps [data-step=foot] svg.vp-svg', { timeout: 30000 });
    // run
    await page.click('#run-btn');
    await page.waitForFunction(() => /done in/.test(document.getElementById('status-text').textContent), null, { timeout: 60000 });
    await page.waitForSelector('#vp-steps [data-step=foot] .vp-verdict', { timeout: 30000 });
    await page.waitForFunction(() => document.querySelectorAll('#vp-steps [data-step=foot] svg.vp-svg').length >= 2, null, { timeout: 30000 });
    const drawn = await page.evaluate(() => {
      const svgs = [...document.querySelectorAll('#vp-steps [data-step=foot] svg.vp-svg')];
      const names = (svg, kind) => new Set([...svg.querySelectorAll(`g[data-kind=${kind}]`)].map((g) => g.dataset.name));
      const geo = svgs[0];
      return {
        sensors: names(geo, 'sensor').size, impacts: names(geo, 'impact').size, origins: names(geo, 'origin').size,
        geoLabel: geo.getAttribute('aria-label'), geoDesc: document.getElementById(geo.getAttribute('aria-describedby'))?.textContent || '',
        consLabel: svgs[1].getAttribute('aria-label'), consDesc: document.getElementById(svgs[1].getAttribute('aria-describedby'))?.textContent || '',
        consLines: svgs[1].querySelectorAll('polyline, path').length,
        verdict: document.querySelector('#vp-steps [data-step=foot] .vp-verdict').textContent,
        status: document.querySelector('#vp-steps [data-step=foot] .vp-verdict').dataset.status,
      };
    });
    console.log(`# measure geometry drawing: ${drawn.sensors} sensor arrows, ${drawn.impacts} impact arrows, ${drawn.origins} origin(s)`);
    console.log(`# measure verdict: ${drawn.verdict}`);
    assert.equal(drawn.sensors, 9);
    assert.equal(drawn.impacts, 9);
    assert.equal(drawn.origins, 1);
    assert.ok(drawn.geoLabel && drawn.geoDesc.length > 20, drawn.geoDesc);
    assert.match(drawn.consDesc, /Consistency of virtual point/);
    assert.ok(drawn.consLines >= 3);
    assert.equal(drawn.status, 'pass');
    assert.match(drawn.verdict, /pass/);
    // the page's virtual-point FRFs against `mortise run` on the same recipe and files
    const ids = await page.$$eval('#curve-select optgroup[data-group=results] option', (os) =>
      [...new Set(os.filter((o) => o.dataset.name === 'foot').map((o) => JSON.parse(o.value)[0]))]);
    assert.equal(ids.length, 1, `the result set of step foot: ${ids}`);
    const pageCsv = await page.evaluate(async (id) => new TextDecoder().decode((await Bridge.call('export_file', [JSON.stringify([id]), 'csv'])).bytes), ids[0]);
    writeFileSync(join(dir, 'page.recipe.json'), recipeText);
    const out = join(dir, 'out');
    execFileSync(BIN, ['run', join(dir, 'page.recipe.json'), '-o', out]);
    const cliName = readdirSync(out).find((n) => /^foot.*\.csv$/.test(n));
    assert.ok(cliName, readdirSync(out).join(', '));
    const a = columns(pageCsv), b = columns(readFileSync(join(out, cliName), 'utf8'));
    assert.deepEqual([...a.keys()], [...b.keys()]);
    assert.ok([...a.keys()].some((k) => /foot|bolt\+RX/.test(k)), [...a.keys()].slice(0, 5).join(' '));
    let worst = 0;
    for (const [name, va] of a) {
      if (name === 'freq_Hz') { assert.deepEqual(va, b.get(name)); continue; }
      const vb = b.get(name);
      const scale = Math.max(...vb.map(Math.abs), ...va.map(Math.abs));
      for (let k = 0; k < va.length; k++) if (scale > 0) worst = Math.max(worst, Math.abs(va[k] - vb[k]) / scale);
    }
    console.log(`# measure page vs mortise run, VP FRFs of step foot: max relative difference ${worst.toExponential(3)} over ${a.size - 1} columns`);
    assert.ok(worst <= 1e-12, `max relative difference ${worst}`);
    // accessibility of the panel
    await page.evaluate(AXE);
    const vs = await page.evaluate(async () => {
      const r = await axe.run('#vp-panel', { runOnly: { type: 'tag', values: ['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa', 'best-practice'] }, resultTypes: ['violations'] });
      return r.violations.map((v) => ({ id: v.id, impact: v.impact, nodes: v.nodes.slice(0, 3).map((n) => n.target.join(' ')) }));
    });
    console.log(`# measure axe-core violations (virtual-points panel): ${vs.length} (${vs.map((v) => `${v.id}/${v.impact}`).join(', ') || 'none'})`);
    assert.deepEqual(vs.filter((v) => v.impact === 'serious' || v.impact === 'critical'), []);
    // the page's sticky bar would cover part of a screenshot of one panel
    await page.evaluate(() => { document.querySelector('header.bar').style.position = 'static'; });
    await page.locator('#vp-panel').screenshot({ path: join(ROOT, 'tests/e2e/artifacts/vpoints-panel.png') });
    await shot(page, 'vpoints');
    assert.deepEqual(s.foreign(), []);
    assert.deepEqual(s.errors, []);
  } finally { await s.close(); }
});
