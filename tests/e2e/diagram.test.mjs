// The assembly diagram, end to end from file://: the core draws the recipe on
// screen (components, joints with type and parameters, steps), the drawing
// follows every change of the recipe (a joint's type changed in the panel; a
// recipe the core refuses shows the core's message, never an old picture),
// and a click (or the keyboard) on a part, a step or a joint of the drawing
// selects it in the panel.
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { open, shot, ROOT, ARTIFACTS, pasteRecipe } from './helpers.mjs';

const report = (k, v) => console.log(`# measure ${k}: ${v}`);
const AXE = readFileSync(join(ROOT, 'node_modules/axe-core/axe.min.js'), 'utf8');
// axe-core (the open-source rule engine) in the page: WCAG 2.1 A/AA and best practice.
async function axeSerious(page) {
  await page.evaluate(AXE);
  const vs = await page.evaluate(async () => (await axe.run(document, { runOnly: { type: 'tag', values: ['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa', 'best-practice'] }, resultTypes: ['violations'] }))
    .violations.map((v) => ({ id: v.id, impact: v.impact, nodes: v.nodes.slice(0, 3).map((n) => n.target.join(' ')) })));
  return vs.filter((v) => v.impact === 'serious' || v.impact === 'critical');
}
const DEMO_RECIPE = JSON.parse(readFileSync(join(ROOT, 'sample-frf/heat-pump.recipe.json'), 'utf8'));

// Wait until the diagram shows the text on screen (drawn or refused).
async function drawn(page, state = 'drawn') {
  await page.waitForFunction((s) => document.getElementById('asm-diagram').dataset.state === s, state, { timeout: 20000 });
}
const diagramTexts = (page) => page.$$eval('#asm-diagram svg text', (ts) => ts.map((t) => t.textContent));

test('the diagram draws the demo, follows the recipe and selects in the panel', async () => {
  const s = await open();
  try {
    const p = s.page;
    await drawn(p, 'empty');
    assert.match(await p.textContent('#asm-diagram-note'), /No recipe yet/);
    await p.click('#demo-btn');
    await p.waitForFunction(() => /demo loaded/.test(document.getElementById('status-text').textContent), null, { timeout: 60000 });
    await drawn(p);

    // every component and every joint of the demo recipe, with its type
    let texts = await diagramTexts(p);
    const comps = Object.keys(DEMO_RECIPE.components);
    for (const c of comps) assert.ok(texts.includes(c), `component ${c}: ${texts}`);
    const couple = DEMO_RECIPE.steps.find((st) => Array.isArray(st.joints));
    for (const j of couple.joints) {
      assert.ok(texts.includes(j.a) && texts.includes(j.b), `${j.a} = ${j.b}`);
    }
    const types = couple.joints.map((j) => j.type);
    for (const t of new Set(types)) {
      const shown = texts.filter((x) => x === t || x.startsWith(t + ' ')).length;
      assert.equal(shown, types.filter((x) => x === t).length, `joints of type ${t}`);
    }
    assert.equal(texts.filter((x) => x === 'measured K(ω) from isolator').length, 4);
    DEMO_RECIPE.steps.forEach((st, i) => assert.ok(texts.includes(`${i + 1}. ${st.id}`), st.id));
    assert.equal(texts.filter((x) => x === 'output').length, DEMO_RECIPE.outputs.length);
    const hits = await p.$$eval('#asm-diagram .diagram-hit', (bs) => bs.map((b) => b.dataset.kind));
    assert.equal(hits.length, comps.length + DEMO_RECIPE.steps.length + couple.joints.length);
    report('diagram items (demo)', hits.length);
    // the accessible name of the picture is the core's summary
    assert.match(await p.getAttribute('#asm-diagram .diagram-pic', 'aria-label'), /6 component\(s\), 8 step\(s\), 8 joint\(s\)/);

    // each button lies on the box the core drew for its item (within 1.5 px)
    const worst = await p.evaluate(() => {
      let w = 0;
      for (const b of document.querySelectorAll('#asm-diagram .diagram-hit')) {
        const g = [...document.querySelectorAll('#asm-diagram svg g[data-kind]')]
          .find((x) => x.dataset.kind === b.dataset.kind && x.dataset.id === b.dataset.id);
        const r1 = b.getBoundingClientRect(), r2 = g.querySelector('rect').getBoundingClientRect();
        w = Math.max(w, Math.abs(r1.left - r2.left), Math.abs(r1.top - r2.top), Math.abs(r1.width - r2.width), Math.abs(r1.height - r2.height));
      }
      return w;
    });
    report('largest offset between a button and its drawn box, px', worst.toFixed(2));
    assert.ok(worst < 1.5, `${worst}`);
    // artefacts: the panel as it shows, and the whole drawing (the frame
    // unbounded, the sticky bar out of the way, for the picture only)
    await p.$eval('header.bar', (e) => { e.style.position = 'static'; });
    await p.locator('#asm-panel').screenshot({ path: join(ARTIFACTS, '80-assembly-panel.png') });
    await p.$eval('#asm-diagram-frame', (e) => { e.style.maxHeight = 'none'; });
    await p.locator('#asm-diagram-frame').screenshot({ path: join(ARTIFACTS, '81-assembly-diagram.png') });
    await p.$eval('#asm-diagram-frame', (e) => { e.style.maxHeight = ''; });
    await p.$eval('header.bar', (e) => { e.style.position = ''; });

    // a joint's type changed in the panel: rigid → spring. Without k the
    // core refuses the recipe, and the diagram says so instead of an old picture
    const row = '#joints-body tr[data-joint="4"]';
    assert.equal(await p.inputValue(`${row} select[data-key=type]`), 'rigid');
    const rigidBefore = texts.filter((x) => x === 'rigid').length;
    await p.selectOption(`${row} select[data-key=type]`, 'spring');
    await drawn(p, 'refused');
    assert.equal(await p.$$eval('#asm-diagram svg', (x) => x.length), 0);
    const refused = await p.textContent('#asm-diagram-note');
    assert.match(refused, /needs 'k'/);
    report('diagram message for a spring without k', refused);
    assert.deepEqual(await axeSerious(p), [], 'refused diagram');
    await p.fill(`${row} input[data-param=k]`, '2e8');
    await drawn(p);
    texts = await diagramTexts(p);
    assert.ok(texts.includes('spring k = 2.0e8 N/m'), texts.join(' | '));
    assert.equal(texts.filter((x) => x === 'rigid').length, rigidBefore - 1);

    // a click on a joint of the diagram focuses that joint's row in the panel
    await p.click('#asm-diagram .diagram-hit[data-kind=joint][data-index="6"]');
    let focus = await p.evaluate(() => ({ joint: document.activeElement.closest('tr')?.dataset.joint, picked: document.activeElement.closest('tr')?.classList.contains('diagram-picked') }));
    assert.deepEqual(focus, { joint: '6', picked: true });
    // a component: its row in the parts; a step: its row in the steps
    await p.click('#asm-diagram .diagram-hit[data-kind=component][data-id=wall]');
    assert.equal(await p.evaluate(() => document.activeElement.closest('label[data-part]')?.dataset.part), 'wall');
    await p.click('#asm-diagram .diagram-hit[data-kind=step][data-id=bedroom]');
    assert.equal(await p.evaluate(() => document.activeElement.closest('.asm-step')?.dataset.step), 'bedroom');

    assert.deepEqual(await axeSerious(p), [], 'diagram with a picked item');
    // the keyboard: one stop in the tab order, arrows between items, Enter picks
    await p.focus('#asm-diagram .diagram-hit[tabindex="0"]');
    await p.keyboard.press('Home');
    for (let i = 0; i < comps.length + 1; i++) await p.keyboard.press('ArrowDown');
    const at = await p.evaluate(() => ({ kind: document.activeElement.dataset.kind, id: document.activeElement.dataset.id }));
    assert.deepEqual(at, { kind: 'joint', id: 'mounted#0' });
    assert.equal(await p.$$eval('#asm-diagram .diagram-hit[tabindex="0"]', (x) => x.length), 1);
    await p.keyboard.press('Enter');
    assert.equal(await p.evaluate(() => document.activeElement.closest('tr')?.dataset.joint), '0');

    // text that is not JSON: the core's message, no picture
    const good = await p.inputValue('#recipe-text');
    await pasteRecipe(p, good.replace('"mounted"', '"mounted'));
    await drawn(p, 'refused');
    assert.match(await p.textContent('#asm-diagram-note'), /not a valid recipe/);
    assert.equal(await p.$$eval('#asm-diagram svg', (x) => x.length), 0);
    await pasteRecipe(p, good);
    await drawn(p);
    assert.ok((await diagramTexts(p)).includes('spring k = 2.0e8 N/m'));
    await shot(p, '82-assembly-diagram-page');
    assert.deepEqual(s.errors, []);
  } finally { await s.close(); }
});
