// Hostile input on the page, from file://: the inputs that used to take
// gigabytes or minutes reach the core in its worker; the page stays
// responsive while they are read, and each refusal shows on its card (files)
// or under the recipe (runs) in plain words with its place.
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { open, addFiles, shot, ROOT, pasteRecipe } from './helpers.mjs';

const report = (k, v) => console.log(`# measure ${k}: ${v}`);

// Our CSV layout claiming 4,600 outputs and 4,600 inputs, with no data (about 100 kB).
function headerBomb(n = 4600) {
  const lines = ['# mortise-frf 1', '# name: bomb', '# out-quantity: displacement', '# in-quantity: force', '# units: SI'];
  for (let i = 0; i < n; i++) lines.push(`# output: p:${i}+Z`);
  for (let i = 0; i < n; i++) lines.push(`# input: p:${i}+Z`);
  return lines.join('\n') + '\n';
}

// The longest the main thread stays unresponsive while `work` runs: a timer
// ticking every 10 ms in the page records its largest gap.
async function worstGap(page, work) {
  await page.evaluate(() => {
    window.__gap = 0; let last = performance.now();
    window.__tick = setInterval(() => { const t = performance.now(); window.__gap = Math.max(window.__gap, t - last); last = t; }, 10);
  });
  await work();
  return page.evaluate(() => { clearInterval(window.__tick); return window.__gap; });
}

async function runRecipe(page, text) {
  await pasteRecipe(page, text);
  await page.waitForFunction(() => !/reading/.test(document.getElementById('recipe-state').textContent), null, { timeout: 20000 });
  await page.click('#run-btn');
  await page.waitForFunction(() => document.querySelector('#run-error:not([hidden])') || document.body.dataset.state === 'ready', null, { timeout: 60000 });
  await page.waitForFunction(() => !document.body.dataset.state.startsWith('busy'), null, { timeout: 60000 });
  return page.$eval('#run-error', (e) => (e.hidden ? '' : e.textContent));
}

test('hostile files are read in the worker: the page stays responsive and each error shows on its card', async () => {
  const s = await open();
  try {
    const casing = readFileSync(join(ROOT, 'sample-frf/unit-casing.uff'));
    const bom = Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), casing]);
    const crOnly = Buffer.from(casing.toString('latin1').replace(/\r?\n/g, '\r'), 'latin1');
    const gap = await worstGap(s.page, async () => {
      await addFiles(s.page, [
        { name: 'bomb.csv', data: headerBomb() },
        { name: 'bom.uff', data: bom },
        { name: 'cr-only.uff', data: crOnly },
      ]);
      await s.page.waitForFunction(() => document.querySelectorAll('.card').length === 3
        && [...document.querySelectorAll('.card')].every((c) => !/reading/.test(c.textContent)), null, { timeout: 30000 });
    });
    report('longest main-thread gap while reading hostile files (ms)', gap.toFixed(0));
    assert.ok(gap < 1000, `the page froze for ${gap} ms`);
    const card = (name) => s.page.$eval(`.card[data-file="${name}"]`, (c) => ({ failed: c.classList.contains('failed'), text: c.textContent }));
    const bomb = await card('bomb.csv');
    assert.ok(bomb.failed, 'the header bomb is refused');
    assert.match(bomb.text, /bomb\.csv/);
    assert.ok(bomb.text.length < 4000, `the error is short (${bomb.text.length} characters)`);
    assert.equal(await s.page.$eval('#map-dialog', (d) => d.open).catch(() => false), false, 'a broken file of our own layout opens no column-mapping dialog');
    for (const name of ['bom.uff', 'cr-only.uff']) {
      const c = await card(name);
      assert.ok(!c.failed, `${name}: ${c.text}`);
      assert.match(c.text, /uff58-ascii/, name);
    }
    await shot(s.page, '40-hostile-files');
    assert.deepEqual(s.foreign(), []);
  } finally { await s.close(); }
});

test('a recipe over the budget is refused on the page with its entry and the budget, without freezing', async () => {
  const s = await open();
  try {
    const beam = {
      model: 'beam', component: 'b', young: 2.1e11, second_moment: 1e-8, density: 7850, area: 1e-4,
      length: 5, elements: 10000, left: 'free', right: 'free', at: [0, 10000],
    };
    const recipe = (components, grid) => JSON.stringify({
      format: 'mortise-recipe', version: 1, title: 'hostile', ...(grid ? { grid } : {}),
      components, steps: [], outputs: Object.keys(components),
    }, null, 2);
    let err = '';
    const gap = await worstGap(s.page, async () => {
      err = await runRecipe(s.page, recipe({ b: { synth: beam } }, { from: 10, to: 100, step: 1 }));
    });
    report('longest main-thread gap while refusing a 10,000-element beam (ms)', gap.toFixed(0));
    assert.ok(gap < 1000, `the page froze for ${gap} ms`);
    assert.match(err, /components\.b/);
    assert.match(err, /budget/);
    // a step of 1e-300 Hz: the line count is named, never "empty"
    err = await runRecipe(s.page, recipe({ b: { synth: { ...beam, elements: 4, at: [0, 4] } } }, { from: 10, to: 100, step: 1e-300 }));
    assert.doesNotMatch(err, /empty/);
    assert.match(err, /lines/);
    await shot(s.page, '41-hostile-recipe');
    assert.deepEqual(s.foreign(), []);
  } finally { await s.close(); }
});
