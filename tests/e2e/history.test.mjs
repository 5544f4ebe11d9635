// Run history on the page, from file://: each run is listed with its recipe,
// time, duration and headline; two runs are compared side by side, their
// curves overlaid and the level difference drawn by the core. Reference:
// halving the blocked forces halves the sound pressure of a linear system, a
// level change of 20·log10(1/2) = −6.0206 dB at every line (ISO 80000-3
// level of a field quantity).
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { open, shot, pasteRecipe } from './helpers.mjs';

test('two runs are kept, listed, compared side by side and differenced in dB', async () => {
  const s = await open();
  try {
    const p = s.page;
    await p.click('#demo-btn');
    await p.waitForFunction(() => /demo loaded/.test(document.getElementById('status-text').textContent), null, { timeout: 60000 });
    const idle = () => p.waitForFunction(() => !document.body.dataset.state.startsWith('busy') && /done in/.test(document.getElementById('status-text').textContent), null, { timeout: 60000 });
    await p.click('#run-btn');
    await idle();
    assert.equal(await p.$$eval('#history tr[data-run]', (r) => r.length), 1);
    // the second run halves the compressor's blocked forces
    const text = await p.inputValue('#recipe-text');
    const halved = text
      .replace('"steps": [', '"steps": [\n    { "id": "half_forces", "op": "scale", "from": "forces", "factor": 0.5 },')
      .replace('"excitation": "forces"', '"excitation": "half_forces"');
    assert.notEqual(halved, text);
    await pasteRecipe(p, halved);
    await p.click('#run-btn');
    await idle();
    const rows = await p.$$eval('#history tr[data-run]', (r) => r.map((x) => [...x.cells].map((c) => c.textContent)));
    assert.equal(rows.length, 2);
    assert.match(rows[0][1], /run 2 \(shown\)/);
    assert.match(rows[1][1], /^run 1$/);
    for (const r of rows) {
      assert.match(r[3], /^\d+\.\d\d s$/, 'the duration');
      assert.match(r[5], /dB\(A\)/, 'the headline');
    }
    // a failed run joins the list with its error; the results stay
    await pasteRecipe(p, halved.replace('"op": "paths"', '"op": "pathz"'));
    await p.click('#run-btn');
    await p.waitForFunction(() => /the run failed/.test(document.getElementById('status-text').textContent), null, { timeout: 60000 });
    await p.waitForFunction(() => document.querySelectorAll('#history tr[data-run]').length === 3);
    assert.match(await p.textContent('#history tr[data-run="3"]'), /failed: .*pathz/);
    assert.equal(await p.$eval('#history tr[data-run="3"] input', (c) => c.disabled), true);
    // compare run 1 (baseline) with run 2 by keyboard-reachable checkboxes
    await p.check('#history tr[data-run="1"] input');
    await p.check('#history tr[data-run="2"] input');
    assert.match(await p.textContent('#compare-btn'), /Compare run 1 with run 2/);
    const before = await p.evaluate(() => document.body.dataset.plotted);
    await p.click('#compare-btn');
    await p.waitForFunction((b) => document.body.dataset.plotted !== b, before, { timeout: 30000 });
    assert.equal(await p.$eval('#plot-kind', (e) => e.value), 'difference');
    const cols = await p.$$eval('#compare-box .compare-col', (c) => c.map((x) => x.dataset.run));
    assert.deepEqual(cols, ['1', '2']);
    assert.match(await p.textContent('#compare-box [data-run="2"] .recipe-diff'), /half_forces/);
    // the level difference, read by the core at several lines: −6.0206 dB
    const spec = await p.$eval('#plot-wrap', (w) => w.dataset.spec);
    assert.match(spec, /"baseline"/);
    // the FRF seat_to_anchor does not depend on the forces (0 dB); every
    // response does (−6.0206 dB)
    let worst = 0, n = 0;
    const seen = new Set();
    for (const f of [30, 58, 116, 174, 232, 400]) {
      const probes = await p.evaluate(async ([sp, fr]) => JSON.parse(await Bridge.call('probe', [sp, fr])), [spec, f]);
      for (const q of probes) {
        if (!Number.isFinite(q.level_db)) continue;
        const want = /^run 2: seat_to_anchor/.test(q.label) ? 0 : 20 * Math.log10(0.5);
        seen.add(q.label.split(':')[1].trim());
        worst = Math.max(worst, Math.abs(q.level_db - want));
        n++;
      }
    }
    console.log(`# measure run difference after halving the forces: ${n} readings of ${[...seen].join(', ')}, worst error ${worst.toExponential(2)} dB`);
    assert.ok(seen.has('bedroom') && seen.has('seat_to_anchor') && seen.size === 4, [...seen].join());
    assert.ok(n >= 12 && worst < 1e-9, `${n} ${worst}`);
    await shot(p, '62-history-difference');
    // the overlay: both runs' curves in the level view
    await p.selectOption('#plot-kind', 'bode');
    await p.waitForFunction(() => JSON.parse(document.getElementById('plot-wrap').dataset.spec || '{}').kind === 'bode');
    const sel = JSON.parse(await p.$eval('#plot-wrap', (w) => w.dataset.spec)).series.map((x) => x.label);
    assert.ok(sel.some((l) => /^run 1: /.test(l)) && sel.some((l) => /^run 2: /.test(l)), sel.join('|'));
    await shot(p, '63-history-overlay');
    // the recipe of run 1 comes back into the text (after asking)
    await p.click('#history tr[data-run="1"] button');
    await p.click('#ask-ok');
    await p.waitForFunction((t) => document.getElementById('recipe-text').value === t, text);
    assert.deepEqual(s.foreign(), []);
  } finally { await s.close(); }
});
