// Time data on the page, from file://: a WAV written at test time by
// Python's wave module (tests/py/sine_wav.py: a sine of known amplitude and
// frequency, a force and a response) is dropped on the page, its channels
// described with their full scales; the core's time view draws with the
// analysis blocks; a flat-top linear (peak) spectrum made on the page reads
// the sine's amplitude within 0.01 dB at its line (Harris 1978: flat-top
// scalloping loss below 0.01 dB), read through the core's probe; an H1 FRF
// from two channels carries the coherence scipy.signal.coherence gives on
// the same samples; axe-core finds no serious or critical violation.
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { readFileSync, mkdtempSync, existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { execFileSync } from 'node:child_process';
import { open, addFiles, shot, ROOT } from './helpers.mjs';

const AXE = readFileSync(join(ROOT, 'node_modules/axe-core/axe.min.js'), 'utf8');
const python = () => process.env.MORTISE_PYTHON || (existsSync(join(ROOT, '.venv/bin/python')) ? join(ROOT, '.venv/bin/python') : 'python3');

async function serious(page) {
  await page.evaluate(AXE);
  const vs = await page.evaluate(async () => {
    const r = await axe.run(document, { runOnly: { type: 'tag', values: ['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa', 'best-practice'] }, resultTypes: ['violations'] });
    return r.violations.map((v) => ({ id: v.id, impact: v.impact, nodes: v.nodes.slice(0, 3).map((n) => n.target.join(' ')) }));
  });
  console.log(`# measure axe-core violations (time data): ${vs.length} (${vs.map((v) => `${v.id}/${v.impact}`).join(', ') || 'none'})`);
  return vs.filter((v) => v.impact === 'serious' || v.impact === 'critical');
}

const fid = (key) => `#time-${key}-bench_wav`;
async function choose(p, key, value) {
  await p.selectOption(fid(key), value);
  await p.waitForFunction(([s, v]) => document.querySelector(s)?.value === v, [fid(key), value]);
}
async function type(p, key, value) {
  await p.fill(fid(key), String(value));
  await p.dispatchEvent(fid(key), 'change');
  await p.waitForFunction(([s, v]) => document.querySelector(s)?.value === v, [fid(key), String(value)]);
}
async function analyse(p, file) {
  await p.click('[data-time-run="bench.wav"]');
  await p.waitForSelector(`[data-time-result="${file}"]`, { timeout: 60000 });
}
// The curve choices of a file's sets: [value, text].
async function setsOf(p, file) {
  return p.$$eval('#curve-select option', (os, f) => os.map((o) => [o.value, o.textContent]).filter(([v]) => JSON.parse(v)[0].startsWith(`file:${f}#`)), file);
}

test('a WAV becomes a recording: time view, flat-top amplitude within 0.01 dB, FRF with coherence', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'mortise-time-'));
  const wav = join(dir, 'bench.wav');
  const ref = JSON.parse(execFileSync(python(), [join(ROOT, 'tests/py/sine_wav.py'), wav], { encoding: 'utf8' }));
  const s = await open();
  try {
    const p = s.page;
    await addFiles(p, [{ name: 'bench.wav', data: readFileSync(wav) }]);
    // the core asks for the channels' descriptions (field "channels")
    await p.waitForSelector('[data-channels="bench.wav"]', { timeout: 20000 });
    await p.fill('[data-channels="bench.wav"]', '1=mic:1+X pressure 20 Pa\n2=rig:1+Z force 100 N\n3=rig:2+Z acceleration 50 m/s^2');
    await p.click('[data-read-channels="bench.wav"]');
    await p.waitForSelector('[data-recording="bench.wav"] img[data-time-view="bench.wav"]', { timeout: 30000 });
    await p.waitForFunction(() => { const i = document.querySelector('img[data-time-view]'); return i && i.complete && i.naturalWidth > 0; });
    const alt = await p.getAttribute('img[data-time-view]', 'alt');
    assert.match(alt, /3 channel\(s\), 65536 samples at 8192 Hz/);
    assert.match(alt, /analysis block\(s\) of 4096 samples/); // the core's default block length
    // a flat-top peak spectrum with the microphone as its phase reference
    await type(p, 'window-text', 'flat-top');
    await type(p, 'segment', 8192);
    await type(p, 'overlap', 0.5);
    await choose(p, 'kind', 'peak');
    await choose(p, 'reference', 'mic:1+X');
    await p.waitForFunction(() => /coherent gain/.test(document.querySelector('[data-window-corrections]')?.textContent || ''));
    const corr = await p.textContent('[data-window-corrections]');
    console.log(`# measure flat-top corrections shown: ${corr}`);
    await p.waitForFunction(() => /15 analysis block\(s\) of 8192/.test(document.querySelector('img[data-time-view]')?.alt || ''));
    await analyse(p, 'bench.peak.csv');
    const peak = await setsOf(p, 'bench.peak.csv');
    assert.ok(peak.length >= 3, JSON.stringify(peak));
    const mic = peak.find(([, text]) => /: mic:1\+X \//.test(text));
    assert.ok(mic, JSON.stringify(peak));
    const [set, out, inp] = JSON.parse(mic[0]);
    const spec = JSON.stringify({ kind: 'magnitude', db: false, series: [{ set, out, in: inp }] });
    const probes = await p.evaluate(async ([sp, fr]) => JSON.parse(await Bridge.call('probe', [sp, fr])), [spec, ref.f_sine]);
    const amp = probes[0].magnitude;
    console.log(`# measure probe line ${probes[0].freq} Hz, label ${probes[0].label}`);
    const db = 20 * Math.log10(amp / ref.amplitude_pa);
    console.log(`# measure flat-top peak of the ${ref.amplitude_pa} Pa sine at ${ref.f_sine} Hz on the page: ${amp} Pa, ${db.toExponential(3)} dB`);
    assert.ok(Math.abs(db) < 0.01, `${amp} Pa against ${ref.amplitude_pa} Pa`);
    await shot(p, 'timedata-spectrum');
    // an H1 FRF from the force to the response
    await choose(p, 'analysis', 'frf');
    await p.uncheck('[data-input="mic:1+X"]');
    await p.check('[data-input="rig:1+Z"]');
    await choose(p, 'window', 'hann');
    await type(p, 'segment', 1024);
    await choose(p, 'estimator', 'H1');
    await analyse(p, 'bench.h1.csv');
    const frf = await setsOf(p, 'bench.h1.csv');
    const acc = frf.find(([, text]) => /rig:2\+Z/.test(text));
    assert.ok(acc, JSON.stringify(frf));
    const id = JSON.parse(acc[0])[0];
    const csv = await p.evaluate(async (i) => new TextDecoder().decode((await Bridge.call('export_file', [JSON.stringify([i]), 'csv'])).bytes), id);
    const rows = csv.split('\n').filter((l) => l && !l.startsWith('#'));
    const head = rows[0].split(',');
    const c = head.findIndex((h) => /^"?coh rig:2\+Z/.test(h));
    assert.ok(c > 0, rows[0]);
    const coh = rows.slice(1).map((r) => Number(r.split(',')[c]));
    assert.equal(coh.length, ref.coherence_23.length);
    const worst = coh.reduce((m, v, k) => Math.max(m, Math.abs(v - ref.coherence_23[k])), 0);
    console.log(`# measure page H1 coherence against scipy.signal.coherence: ${coh.length} lines, worst difference ${worst.toExponential(2)}`);
    assert.ok(worst < 1e-9, String(worst));
    assert.match(await p.textContent('[data-file="bench.h1.csv"]'), /with coherence/);
    await shot(p, 'timedata-frf');
    assert.deepEqual(await serious(p), []);
    assert.deepEqual(s.foreign(), []);
    assert.deepEqual(s.errors, []);
  } finally { await s.close(); }
});
