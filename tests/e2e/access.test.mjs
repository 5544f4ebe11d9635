// Accessibility from file://: an axe-core scan (the open-source rule engine,
// run inside the page under test) of the main states finds no violation of
// serious or critical impact (WCAG 2.1 AA rules, 4.5:1 text contrast among
// them), and a keyboard-only session adds the demo, runs it and exports.
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { open, addFiles, shot, ROOT } from './helpers.mjs';

const AXE = readFileSync(join(ROOT, 'node_modules/axe-core/axe.min.js'), 'utf8');

async function violations(page) {
  await page.evaluate(AXE);
  return page.evaluate(async () => {
    const r = await axe.run(document, { runOnly: { type: 'tag', values: ['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa', 'best-practice'] }, resultTypes: ['violations'] });
    return r.violations.map((v) => ({ id: v.id, impact: v.impact, nodes: v.nodes.slice(0, 3).map((n) => n.target.join(' ')) }));
  });
}
const serious = (vs) => vs.filter((v) => v.impact === 'serious' || v.impact === 'critical');

// Press Tab until `selector` has the focus (at most `max` presses).
async function tabTo(page, selector, max = 120) {
  for (let i = 0; i < max; i++) {
    if (await page.evaluate((s) => document.activeElement && document.activeElement.matches(s), selector)) return i;
    await page.keyboard.press('Tab');
  }
  throw new Error(`${selector} not reached by ${max} presses of Tab`);
}

test('axe-core finds no serious or critical violation in the main states', async () => {
  const s = await open();
  try {
    const found = {};
    found.start = await violations(s.page);
    await s.page.click('#demo-btn');
    await s.page.waitForFunction(() => /demo loaded/.test(document.getElementById('status-text').textContent), null, { timeout: 60000 });
    await s.page.click('#run-btn');
    await s.page.waitForFunction(() => !!document.body.dataset.plotted && !document.body.dataset.state.startsWith('busy'), null, { timeout: 60000 });
    found.results = await violations(s.page);
    // switches a view does not read are disabled, as the core says
    await s.page.selectOption('#plot-kind', 'nyquist');
    await s.page.waitForFunction(() => document.getElementById('opt-db').disabled && document.getElementById('opt-log').disabled);
    await s.page.selectOption('#plot-kind', 'bode');
    await s.page.waitForFunction(() => !document.getElementById('opt-db').disabled && !document.getElementById('opt-log').disabled);
    // a layout no loaded file has (the demo's own wall CSV would be read by the map it already has)
    const other = readFileSync(join(ROOT, 'sample-frf/wall-accelerance.csv'), 'utf8').replace('freq_Hz,', 'frequency_Hz,');
    await addFiles(s.page, [{ name: 'supplier-wall.csv', data: Buffer.from(other) }]);
    await s.page.waitForSelector('#map-dialog[open]');
    await s.page.waitForSelector('#map-detected:not([hidden])');
    found.mapping = await violations(s.page);
    for (const [state, vs] of Object.entries(found)) {
      console.log(`# measure axe-core violations (${state}): ${vs.length} (${vs.map((v) => `${v.id}/${v.impact}`).join(', ') || 'none'})`);
      assert.deepEqual(serious(vs), [], `${state}: ${JSON.stringify(serious(vs))}`);
    }
  } finally { await s.close(); }
});

test('keyboard only: load the demo, run it, choose a curve and export it', async () => {
  const s = await open();
  try {
    const p = s.page;
    await p.evaluate(() => document.activeElement && document.activeElement.blur());
    await tabTo(p, '#demo-btn');
    await p.keyboard.press('Enter');
    await p.waitForFunction(() => /demo loaded/.test(document.getElementById('status-text').textContent), null, { timeout: 60000 });
    await tabTo(p, '#run-btn');
    await p.keyboard.press('Enter');
    await p.waitForFunction(() => !!document.body.dataset.plotted && !document.body.dataset.state.startsWith('busy'), null, { timeout: 60000 });
    assert.match(await p.textContent('#headline'), /room:bed/);
    // a result curve by keys, then the CSV export by keys
    await tabTo(p, '#curve-select');
    await p.keyboard.press('Home');
    await p.keyboard.press('ArrowDown');
    await tabTo(p, '[data-export=csv]');
    const [dl] = await Promise.all([p.waitForEvent('download'), p.keyboard.press('Enter')]);
    assert.match(readFileSync(await dl.path(), 'utf8'), /freq_Hz/);
    // the status line is announced
    assert.equal(await p.$eval('#status-text', (e) => e.closest('[aria-live]') !== null || e.getAttribute('aria-live') !== null), true);
    await shot(p, '50-keyboard-session');
  } finally { await s.close(); }
});
