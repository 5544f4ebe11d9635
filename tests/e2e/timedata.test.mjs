// Time data on the page, from file://: a WAV written at test time by
// Python's wave module (tests/py/sine_wav.py: a sine of known amplitude and
// frequency, a force and a response) is dropped on the page, its channels
// described with their full scales; the core's time view draws with the
// analysis blocks; a flat-top linear (peak) spectrum made on the page reads
// the sine's amplitude within 0.01 dB at its line (Harris 1978: flat-top
// scalloping loss below 0.01 dB), read through the core's probe; an H1 FRF
// from two channels carries the coherence scipy.signal.coherence gives on
// the same samples; axe-core finds no serious or critical violation.
// Impact records: a hammer test made by tests/py/hammer_wav.py
// (scipy.signal.lsim of a single-DOF system, a double hit and an overload
// put in by construction) gives on the page the H1 the command line's
// `estimate --trigger` gives on the same file (1e-12 relative), with the two
// records left out and their reasons shown. Orders: a numpy run-up
// (tests/py/runup_by_speed.py) gives on the page the order-by-speed table
// `mortise orders --by-speed` writes, its order 2 within 0.1 dB of the
// amplitude it was made with.
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

let card = 'bench_wav';
const fid = (key) => `#time-${key}-${card}`;
async function choose(p, key, value) {
  await p.selectOption(fid(key), value);
  await p.waitForFunction(([s, v]) => document.querySelector(s)?.value === v, [fid(key), value]);
}
async function type(p, key, value) {
  await p.fill(fid(key), String(value));
  await p.dispatchEvent(fid(key), 'change');
  await p.waitForFunction(([s, v]) => document.querySelector(s)?.value === v, [fid(key), String(value)]);
}
async function analyse(p, file, rec = 'bench.wav') {
  await p.click(`[data-time-run="${rec}"]`);
  await p.waitForSelector(`[data-time-result="${file}"]`, { timeout: 60000 });
}
const cli = () => [process.env.MORTISE_BIN, join(ROOT, 'target/release/mortise'), join(ROOT, 'target/debug/mortise')].filter((b) => b && existsSync(b))[0];
// The numbers of a file in our CSV layout: one array of values per data row.
const csvRows = (text) => text.split('\n').filter((l) => l && !l.startsWith('#')).slice(1).map((l) => l.split(',').map(Number));
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

test('impact records on the page: the H1 of the command line, the double hit and the overload left out with their reasons', async () => {
  card = 'hammer_wav';
  const dir = mkdtempSync(join(tmpdir(), 'mortise-hammer-'));
  const wav = join(dir, 'hammer.wav');
  const ref = JSON.parse(execFileSync(python(), [join(ROOT, 'tests/py/hammer_wav.py'), wav], { encoding: 'utf8' }));
  const bin = cli();
  assert.ok(bin, 'the mortise binary (cargo build --bin mortise, or MORTISE_BIN)');
  const out = join(dir, 'cli.csv');
  execFileSync(bin, ['estimate', wav, '-o', out, '--input', ref.input, ...ref.channels.flatMap((c) => ['--channel', c]),
    '--trigger', String(ref.trigger), '--record-length', String(ref.record_length), '--pre-trigger', String(ref.pre_trigger),
    '--force-width', String(ref.force_width), '--decay', String(ref.decay)]);
  const want = csvRows(readFileSync(out, 'utf8'));
  const s = await open();
  try {
    const p = s.page;
    await addFiles(p, [{ name: 'hammer.wav', data: readFileSync(wav) }]);
    await p.waitForSelector('[data-channels="hammer.wav"]', { timeout: 20000 });
    await p.fill('[data-channels="hammer.wav"]', ref.channels.join('\n'));
    await p.click('[data-read-channels="hammer.wav"]');
    await p.waitForSelector('[data-recording="hammer.wav"] img[data-time-view="hammer.wav"]', { timeout: 30000 });
    await choose(p, 'analysis', 'frf');
    await choose(p, 'records', 'impact');
    await choose(p, 'trigger-channel', ref.input);
    await type(p, 'impact-trigger', ref.trigger);
    await type(p, 'impact-record_length', ref.record_length);
    await type(p, 'impact-pre_trigger', ref.pre_trigger);
    await type(p, 'impact-force_width', ref.force_width);
    await type(p, 'impact-decay', ref.decay);
    await choose(p, 'estimator', 'H1');
    // the time view: six records, the two left out marked
    await p.waitForFunction(() => /6 analysis block\(s\) of 2048 samples, 2 left out/.test(document.querySelector('img[data-time-view="hammer.wav"]')?.alt || ''), null, { timeout: 20000 });
    const svg = await p.getAttribute('img[data-time-view="hammer.wav"]', 'src');
    const titles = decodeURIComponent(svg);
    assert.match(titles, /left out: double hit/);
    assert.match(titles, /left out: overload on bracket:5\+Z/);
    await analyse(p, 'hammer.impact-h1.csv', 'hammer.wav');
    const verdicts = await p.$$eval('[data-time-records="hammer.impact-h1.csv"] tbody tr', (rs) => rs.map((r) => r.lastElementChild.textContent));
    console.log(`# measure impact records on the page: ${verdicts.join(' | ')}`);
    assert.equal(verdicts.length, ref.hits.length);
    ref.hits.forEach((h, i) => assert.ok(h.verdict === 'accepted' ? verdicts[i] === 'averaged' : verdicts[i].startsWith('left out: ' + h.verdict), `${h.at_s} s: ${verdicts[i]}`));
    assert.match(await p.textContent('[data-time-result="hammer.impact-h1.csv"]'), /4 of 6 impact record\(s\) averaged, 2 left out/);
    const sets = await setsOf(p, 'hammer.impact-h1.csv');
    assert.ok(sets.length >= 1, JSON.stringify(sets));
    const id = JSON.parse(sets[0][0])[0];
    const csv = await p.evaluate(async (i) => new TextDecoder().decode((await Bridge.call('export_file', [JSON.stringify([i]), 'csv'])).bytes), id);
    const got = csvRows(csv);
    assert.equal(got.length, want.length);
    let worst = 0;
    got.forEach((g, k) => {
      const w = want[k];
      assert.equal(g[0], w[0]);
      const d = Math.hypot(g[1] - w[1], g[2] - w[2]) / Math.hypot(w[1], w[2]);
      worst = Math.max(worst, d, Math.abs(g[3] - w[3]));
    });
    console.log(`# measure page impact H1 against mortise estimate --trigger: ${got.length} lines, worst relative difference ${worst.toExponential(2)}`);
    assert.ok(worst <= 1e-12, String(worst));
    await shot(p, 'timedata-impact');
    assert.deepEqual(await serious(p), []);
    assert.deepEqual(s.foreign(), []);
    assert.deepEqual(s.errors, []);
  } finally { await s.close(); }
});

test('orders on the page: the order-by-speed table of mortise orders --by-speed, within 0.1 dB of the made amplitude', async () => {
  card = 'runup_csv';
  const dir = mkdtempSync(join(tmpdir(), 'mortise-runup-'));
  const csvFile = join(dir, 'runup.csv');
  const ref = JSON.parse(execFileSync(python(), [join(ROOT, 'tests/py/runup_by_speed.py'), csvFile], { encoding: 'utf8' }));
  const bin = cli();
  assert.ok(bin, 'the mortise binary (cargo build --bin mortise, or MORTISE_BIN)');
  execFileSync(bin, ['orders', csvFile, '-o', join(dir, 'o2.csv'), '--order', '2', '--speed', ref.speed, '--by-speed', '2.5']);
  const want = JSON.parse(readFileSync(join(dir, 'o2.by-speed.json'), 'utf8'));
  const s = await open();
  try {
    const p = s.page;
    await addFiles(p, [{ name: 'runup.csv', data: readFileSync(csvFile) }]);
    await p.waitForSelector('[data-recording="runup.csv"] img[data-time-view="runup.csv"]', { timeout: 30000 });
    await choose(p, 'analysis', 'orders');
    await choose(p, 'from', 'profile');
    await type(p, 'speed', ref.speed);
    await type(p, 'orders-order', 2);
    await type(p, 'orders-by_speed', 2.5);
    await analyse(p, 'runup.order2.csv', 'runup.csv');
    const got = JSON.parse(await p.inputValue('[data-by-speed="runup.order2.csv"]'));
    // the same entries and speeds; values as the command line's within 1e-12 of each table's largest
    // amplitude (the page's wasm and the native build round the FFTs apart)
    assert.deepEqual(got.map((e) => [e.dof, e.order, e.by_speed.map((r) => r[0])]), want.map((e) => [e.dof, e.order, e.by_speed.map((r) => r[0])]));
    let apart = 0;
    got.forEach((e, i) => {
      const big = Math.max(...want[i].by_speed.map((r) => Math.hypot(r[1], r[2])));
      e.by_speed.forEach((r, k) => { const w = want[i].by_speed[k]; apart = Math.max(apart, Math.hypot(r[1] - w[1], r[2] - w[2]) / big); });
    });
    console.log(`# measure page order-by-speed table against mortise orders --by-speed: worst difference ${apart.toExponential(2)} of the largest amplitude`);
    assert.ok(apart <= 1e-12, String(apart));
    const fan = got.find((e) => e.dof === 'fan:1+Z');
    let worst = 0;
    for (const [sp, re, im] of fan.by_speed) {
      const i = ref.speeds.findIndex((v) => Math.abs(v - sp) < 1e-9);
      assert.ok(i >= 0, String(sp));
      worst = Math.max(worst, Math.abs(20 * Math.log10(Math.hypot(re, im) / Math.hypot(ref.re[i], ref.im[i]))));
    }
    console.log(`# measure page order-by-speed table: ${fan.by_speed.length} rows, worst ${worst.toFixed(4)} dB against the made amplitude`);
    assert.ok(worst < 0.1, String(worst));
    await shot(p, 'timedata-orders');
    assert.deepEqual(await serious(p), []);
    assert.deepEqual(s.foreign(), []);
    assert.deepEqual(s.errors, []);
  } finally { await s.close(); }
});

test('a supplier time CSV read through its time map on the page: samples and PSD as numpy and scipy.signal.welch give them', async () => {
  card = 'bench-run4_csv';
  const dir = mkdtempSync(join(tmpdir(), 'mortise-supplier-'));
  const csvFile = join(dir, 'bench-run4.csv');
  const ref = JSON.parse(execFileSync(python(), [join(ROOT, 'tests/py/supplier_time_csv.py'), csvFile], { encoding: 'utf8' }));
  const map = { delimiter: 'semicolon', skip_rows: 3, header_line: 2, unit_line: 3, decimal_comma: true, time: 'Zeit',
    channels: [{ column: 'Hammer', dof: 'rig:1+Z' }, { column: 'Beschl. 1', dof: 'rig:2+Z' }] };
  const s = await open();
  try {
    const p = s.page;
    await addFiles(p, [{ name: 'bench-run4.csv', data: readFileSync(csvFile) }]);
    await p.waitForSelector('[data-file="bench-run4.csv"]', { timeout: 20000 });
    // the core asks for an FRF column map (the dialog opens); this file is time data: cancel it
    await p.waitForSelector('#map-dialog[open]', { timeout: 20000 });
    await p.click('#map-cancel');
    await p.waitForFunction(() => !document.querySelector('#map-dialog')?.open);
    await p.click('[data-file="bench-run4.csv"] details.time-channels > summary');
    await p.fill('[data-time-map="bench-run4.csv"]', JSON.stringify(map));
    await p.click('[data-read-time-map="bench-run4.csv"]');
    await p.waitForSelector('[data-recording="bench-run4.csv"] img[data-time-view="bench-run4.csv"]', { timeout: 30000 });
    assert.match(await p.getAttribute('img[data-time-view="bench-run4.csv"]', 'alt'), /2 channel\(s\), 4096 samples at 2000 Hz/);
    assert.match(await p.textContent('[data-recording="bench-run4.csv"]'), /'Temp'/);
    await type(p, 'segment', 256);
    await type(p, 'overlap', 0.5);
    await choose(p, 'detrend', 'constant');
    await choose(p, 'kind', 'psd');
    await analyse(p, 'bench-run4.psd.csv', 'bench-run4.csv');
    const sets = await setsOf(p, 'bench-run4.psd.csv');
    const acc = sets.find(([, text]) => /rig:2\+Z/.test(text));
    assert.ok(acc, JSON.stringify(sets));
    const id = JSON.parse(acc[0])[0];
    const csv = await p.evaluate(async (i) => new TextDecoder().decode((await Bridge.call('export_file', [JSON.stringify([i]), 'csv'])).bytes), id);
    const rows = csvRows(csv);
    assert.equal(rows.length, ref.psd_acc.length);
    const top = Math.max(...ref.psd_acc);
    const worst = rows.reduce((m, r, k) => Math.max(m, Math.abs(r[1] - ref.psd_acc[k]) / top), 0);
    console.log(`# measure supplier time CSV on the page: PSD against scipy.signal.welch on numpy's reading, worst ${worst.toExponential(2)} of the largest line`);
    assert.ok(worst < 1e-10, String(worst));
    assert.deepEqual(await serious(p), []);
    assert.deepEqual(s.foreign(), []);
    assert.deepEqual(s.errors, []);
  } finally { await s.close(); }
});
