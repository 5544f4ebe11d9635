// Listening on the page, from file://: the bedroom and its variant are
// made by the core at one gain, start quietly, switch A/B, and the page's
// WAV is the very file `mortise listen` writes at the same full scale.
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { readFileSync, mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { execFileSync } from 'node:child_process';
import { open, shot, ROOT } from './helpers.mjs';

const cli = () => process.env.MORTISE_BIN || join(ROOT, 'target/release/mortise');

test('the bedroom and its variant are heard at one gain, A/B, and the WAV equals the CLI\'s', async () => {
  const s = await open();
  try {
    const p = s.page;
    await p.click('#demo-btn');
    await p.waitForFunction(() => /demo loaded/.test(document.getElementById('status-text').textContent), null, { timeout: 60000 });
    await p.click('#run-btn');
    await p.waitForFunction(() => !!document.body.dataset.plotted && !document.body.dataset.state.startsWith('busy'), null, { timeout: 60000 });
    const pick = await p.$$eval('#curve-select optgroup[data-group=results] option', (os) =>
      os.filter((o) => o.dataset.name === 'bedroom' || o.dataset.name === 'bedroom [softer isolators]').map((o) => o.value));
    assert.equal(pick.length, 2);
    await p.selectOption('#curve-select', pick);
    await p.click('#listen-btn');
    await p.waitForSelector('#listen-box audio', { timeout: 30000 });
    assert.equal(await p.$$eval('#listen-box audio', (a) => a.length), 2);
    assert.deepEqual(await p.$$eval('#listen-box audio', (a) => a.map((x) => x.volume)), [0.2, 0.2]);
    assert.match(await p.textContent('#listen-box'), /low volume/);
    assert.match(await p.textContent('#listen-box'), /dB SPL/);
    await p.waitForSelector('#ab-btn');
    await shot(p, '60-listen');
    // the WAV of the bedroom, downloaded, against the CLI at the page's full scale
    const full = await p.$eval('#listen-box', (b) => b.dataset.fullScalePa);
    const [dl] = await Promise.all([p.waitForEvent('download'), p.click('#listen-box [data-sound="0"] a')]);
    const pageWav = readFileSync(await dl.path());
    const dir = mkdtempSync(join(tmpdir(), 'mortise-listen-'));
    execFileSync(cli(), ['run', join(ROOT, 'sample-frf/heat-pump.recipe.json'), '-o', join(dir, 'out')]);
    execFileSync(cli(), ['listen', join(dir, 'out/bedroom.csv'), '-o', join(dir, 'bed.wav'), '--seconds', '10', '--full-scale-pa', full]);
    const cliWav = readFileSync(join(dir, 'bed.wav'));
    assert.equal(pageWav.subarray(0, 4).toString(), 'RIFF');
    assert.equal(pageWav.length, cliWav.length);
    let worst = 0;
    for (let i = 58; i < cliWav.length; i += 4) worst = Math.max(worst, Math.abs(pageWav.readFloatLE(i) - cliWav.readFloatLE(i)));
    console.log(`# measure page vs CLI WAV, largest sample difference: ${worst}`);
    assert.ok(worst <= 1e-6, `${worst}`);
    assert.deepEqual(s.foreign(), []);
  } finally { await s.close(); }
});
