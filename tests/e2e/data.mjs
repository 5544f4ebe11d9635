// Small FRF files for the page tests, written in mortise's own CSV layout
// (see src/io/csv/native.rs, write_native). The numbers are a two-mass chain and a
// rigid mass, made up for these plumbing tests only.

function inv2(a, b, c, d) {
  // inverse of the complex 2×2 [[a, b], [c, d]]; entries as [re, im]
  const mul = (x, y) => [x[0] * y[0] - x[1] * y[1], x[0] * y[1] + x[1] * y[0]];
  const sub = (x, y) => [x[0] - y[0], x[1] - y[1]];
  const det = sub(mul(a, d), mul(b, c));
  const n = det[0] * det[0] + det[1] * det[1];
  const id = [det[0] / n, -det[1] / n];
  const neg = (x) => [-x[0], -x[1]];
  return [mul(d, id), mul(neg(b), id), mul(neg(c), id), mul(a, id)];
}

export const FREQS = Array.from({ length: 300 }, (_, i) => 2 + 2 * i);

function native(name, outputs, inputs, rows) {
  const lines = ['# mortise-frf 1', `# name: ${name}`, '# out-quantity: displacement', '# in-quantity: force', '# units: SI'];
  for (const o of outputs) lines.push(`# output: ${o}`);
  for (const i of inputs) lines.push(`# input: ${i}`);
  const head = ['freq_Hz'];
  for (const o of outputs) for (const i of inputs) head.push(`"re ${o}/${i}"`, `"im ${o}/${i}"`);
  lines.push(head.join(','));
  for (const r of rows) lines.push(r.map((v) => String(v)).join(','));
  return lines.join('\n') + '\n';
}

// Receptance of a two-mass chain: ground –k1– m1 –k2– m2, hysteretic loss η.
export function frameCsv(label2) {
  const [m1, m2, k1, k2, eta] = [2, 1, 1e5, 5e4, 0.02];
  const rows = FREQS.map((f) => {
    const w2 = (2 * Math.PI * f) ** 2;
    const kk = (k) => [k, k * eta];
    const a = [kk(k1 + k2)[0] - w2 * m1, kk(k1 + k2)[1]];
    const b = [-k2, -k2 * eta];
    const d = [k2 - w2 * m2, k2 * eta];
    const h = inv2(a, b, b, d);
    return [f, ...h.flatMap((x) => x)];
  });
  return native('frame', ['frame:1+Z', `frame:${label2 || '2'}+Z`], ['frame:1+Z', `frame:${label2 || '2'}+Z`], rows);
}

// Receptance of a rigid mass m: H = −1/(ω² m).
export function massCsv(m = 0.5, node = '7') {
  const rows = FREQS.map((f) => [f, -1 / ((2 * Math.PI * f) ** 2 * m), 0]);
  return native('mass', [`mass:${node}+Z`], [`mass:${node}+Z`], rows);
}

export const XSS_NODE = '<img src=x onerror=window.__xss=1>';
export function xssCsv() {
  const rows = FREQS.slice(0, 5).map((f) => [f, 1e-6, -1e-7]);
  return native('odd', [`odd:${XSS_NODE}+Z`], [`odd:${XSS_NODE}+Z`], rows);
}

// Our layout with a bad number on data line 4 (file line 11).
export function corruptCsv() {
  const text = massCsv().split('\n');
  const i = text.findIndex((l) => l.startsWith('freq_Hz')) + 4;
  text[i] = text[i].replace(/,[^,]*$/, ',abc');
  return { text: text.join('\n'), line: i + 1 };
}

export const RECIPE = {
  format: 'mortise-recipe', version: 1, title: 'two-mass chain carrying a mass',
  components: { frame: { file: 'frame.csv' }, mass: { file: 'mass.csv' } },
  steps: [{ id: 'assembly', op: 'couple', parts: ['frame', 'mass'], joints: [{ a: 'frame:2+Z', b: 'mass:7+Z', type: 'rigid' }] }],
  outputs: ['assembly'],
};

// Every number in a text, in order.
export function numbers(text) {
  return (text.match(/[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?/g) || []).map(Number);
}

// The complex values of a CSV in mortise's own layout: for each data row,
// the frequency then [re, im] pairs (header and comment lines skipped).
export function complexRows(text) {
  const rows = [];
  for (const line of text.split('\n')) {
    if (!/^[-+]?[0-9.]/.test(line)) continue;
    const v = line.split(',').map(Number);
    const pairs = [];
    for (let i = 1; i + 1 < v.length; i += 2) pairs.push([v[i], v[i + 1]]);
    rows.push({ f: v[0], pairs });
  }
  return rows;
}

// The values of the data rows of our CSV layout, frequency column left out.
export function dataValues(text) {
  return text.split('\n').filter((l) => /^\d/.test(l)).flatMap((l) => l.split(',').slice(1).filter((c) => c !== '').map(Number));
}

// Many curves for the plot's load tests: one output and `n` inputs of one
// set, `lines` lines from 1 Hz up in 1 Hz steps; entry j is the receptance
// of a single-DOF oscillator (m = 1 kg, k = (2π f_j)² with its resonance f_j
// spread over the band, 2 % viscous damping). Made up for these tests only.
export function manyCurvesCsv(n = 150, lines = 1000) {
  const ins = Array.from({ length: n }, (_, j) => `bench:${j + 1}+Z`);
  const head = ['# mortise-frf 1', '# name: bench', '# out-quantity: displacement', '# in-quantity: force', '# units: SI',
    '# output: bench:0+Z', ...ins.map((i) => `# input: ${i}`),
    ['freq_Hz', ...ins.flatMap((i) => [`"re bench:0+Z/${i}"`, `"im bench:0+Z/${i}"`])].join(',')];
  const rows = [];
  for (let l = 0; l < lines; l++) {
    const f = 1 + l, w = 2 * Math.PI * f;
    const row = [f];
    for (let j = 0; j < n; j++) {
      const wn = 2 * Math.PI * (5 + (lines - 10) * (j + 0.5) / n);
      const re = wn * wn - w * w, im = 2 * 0.02 * wn * w;
      const d = re * re + im * im;
      row.push((re / d).toPrecision(7), (-im / d).toPrecision(7));
    }
    rows.push(row.join(','));
  }
  return head.join('\n') + '\n' + rows.join('\n') + '\n';
}

// One curve of `lines` lines (1 Hz, then 0.1 Hz steps) at 1e-6 m/N
// (−120 dB re 1 m/N) with a single line at 1e-4 m/N (−80 dB) at index
// `peak`: the envelope test's needle.
export function peakCsv(lines = 100000, peak = 61803) {
  const head = ['# mortise-frf 1', '# name: needle', '# out-quantity: displacement', '# in-quantity: force', '# units: SI',
    '# output: needle:1+Z', '# input: needle:1+Z', 'freq_Hz,"re needle:1+Z/needle:1+Z","im needle:1+Z/needle:1+Z"'];
  const rows = new Array(lines);
  for (let l = 0; l < lines; l++) rows[l] = `${(1 + l / 10).toFixed(1)},${l === peak ? '1e-4' : '1e-6'},0`;
  return { text: head.join('\n') + '\n' + rows.join('\n') + '\n', freq: 1 + peak / 10 };
}
