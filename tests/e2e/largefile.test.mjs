// A large UFF file on the page, from file://: the worker reports the bytes
// the core has parsed, the page shows them as a progress bar ("reading NAME:
// 43 %") that rises before the file's card appears, and the page answers a
// click while the core parses (its main thread never waits for the worker).
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { open, shot } from './helpers.mjs';

const report = (k, v) => console.log(`# measure ${k}: ${v}`);

// Runs in the page: a dataset-58 file (ASCII, complex double, even grid) of
// `n` receptance-like datasets × `lines` lines, in the layout's columns
// (records 6-11 as in the public dataset 58 description; values in 20-column
// E fields, two complex points a line), about 81 bytes per two points.
function makeUff(n, points) {
  const I = (v, w) => String(v).padStart(w);
  const E = (v, w, d) => v.toExponential(d).toUpperCase().replace(/E([+-])(\d)$/, 'E$10$2').padStart(w);
  const A = (s, w) => ' ' + s.padEnd(w);
  const parts = [];
  for (let k = 0; k < n; k++) {
    const node = k + 1;
    const head = [
      '    -1', '    58',
      'bracket receptance', 'NONE', 'NONE', 'NONE', 'NONE',
      I(4, 5) + I(1, 10) + I(0, 5) + I(0, 10) + A('bracket', 10) + I(node, 10) + I(3, 4) + A('bracket', 10) + I(1, 10) + I(3, 4),
      I(6, 10) + I(points, 10) + I(1, 10) + E(0.5, 13, 5) + E(0.5, 13, 5) + E(0, 13, 5),
      I(18, 10) + I(0, 5) + I(0, 5) + I(0, 5) + A('Frequency', 20) + A('Hz', 20),
      I(8, 10) + I(1, 5) + I(0, 5) + I(0, 5) + A('Displacement', 20) + A('m', 20),
      I(13, 10) + I(0, 5) + I(1, 5) + I(0, 5) + A('Force', 20) + A('N', 20),
      I(0, 10) + I(0, 5) + I(0, 5) + I(0, 5) + A('NONE', 20) + A('NONE', 20),
    ];
    const rows = [];
    for (let p = 0; p < points; p += 2) {
      let row = '';
      for (const q of [p, p + 1]) {
        if (q >= points) break;
        // a single mode at 400 Hz, 2 % damping: 1 / (wr² - w² + 2i ζ wr w)
        const w = 2 * Math.PI * 0.5 * (q + 1), wr = 2 * Math.PI * 400, s = Math.sin(node * 0.01);
        const re = wr * wr - w * w, im = 2 * 0.02 * wr * w, d = re * re + im * im;
        row += E(s * re / d, 20, 11) + E(-s * im / d, 20, 11);
      }
      rows.push(row);
    }
    parts.push(head.join('\n') + '\n' + rows.join('\n') + '\n    -1\n');
  }
  return parts.join('');
}

test('a 30 MB UFF file: the progress bar rises before the card appears, and the page answers a click while the core parses', async () => {
  const b = await open();
  try {
    const { page } = b;
    // the generator is put into the page as a script (evaluated by the
    // browser's debugger protocol, not by the page)
    await page.evaluate(`window.__makeUff = ${makeUff.toString()}`);
    const size = await page.evaluate(({ n, points }) => {
      window.__uff = window.__makeUff(n, points);
      // every change of the bar, with whether the file's card is there yet
      window.__seen = [];
      new MutationObserver(() => {
        window.__seen.push({
          value: +document.getElementById('read-progress').value,
          label: document.getElementById('read-label').textContent,
          shown: !document.getElementById('read-box').hidden,
          card: !!document.querySelector('.card[data-file="bracket_large.uff"]'),
        });
      }).observe(document.getElementById('read-box'), { attributes: true, subtree: true, childList: true, characterData: true });
      // the messages to the page's workers that carry the file's bytes
      window.__crossings = 0;
      const post = Worker.prototype.postMessage;
      Worker.prototype.postMessage = function (msg, ...rest) {
        const args = (msg && Array.isArray(msg.args)) ? msg.args : [];
        if (args.some((a) => a instanceof Uint8Array && a.length === window.__uff.length)) window.__crossings++;
        return post.call(this, msg, ...rest);
      };
      return window.__uff.length;
    }, { n: 150, points: 5000 });
    report('file bytes', size);
    assert.ok(size > 29e6 && size < 32e6, `about 30 MB (${size})`);
    const t0 = Date.now();
    // dropped on the page as a file
    await page.evaluate(() => {
      const dt = new DataTransfer();
      dt.items.add(new File([window.__uff], 'bracket_large.uff'));
      document.dispatchEvent(new DragEvent('drop', { dataTransfer: dt, bubbles: true, cancelable: true }));
    });
    // while the bar shows a part read, a click opens the confirmation dialog
    await page.waitForFunction(() => {
      const v = +document.getElementById('read-progress').value;
      return !document.getElementById('read-box').hidden && v > 0 && v < 100;
    }, null, { timeout: 60000, polling: 5 });
    await page.click('#clear-btn');
    const during = await page.evaluate(() => ({
      dialog: document.getElementById('confirm-dialog').open,
      reading: !document.getElementById('read-box').hidden,
      value: +document.getElementById('read-progress').value,
      label: document.getElementById('read-label').textContent,
    }));
    report('bar at the click', `${during.value} % (${during.label})`);
    assert.ok(during.dialog, 'the click opened the dialog while the core parses');
    assert.ok(during.reading, 'the file was still being read when the click was answered');
    assert.match(during.label, /^reading bracket_large\.uff: \d+ %$/);
    await page.click('#confirm-dialog button[value=cancel]');
    await page.waitForSelector('.card[data-file="bracket_large.uff"]', { timeout: 120000 });
    report('drop to card (ms)', Date.now() - t0);
    const seen = await page.evaluate(() => window.__seen);
    const before = seen.filter((s) => s.shown && !s.card).map((s) => s.value);
    report('bar values before the card', before.join(' '));
    assert.ok(before.some((v) => v > 0 && v < 100), 'a value between 0 and 100 % shown');
    for (let k = 1; k < before.length; k++) assert.ok(before[k] >= before[k - 1], `the bar never goes back (${before.join(' ')})`);
    assert.ok(new Set(before).size >= 3, `the bar rises in steps (${before.join(' ')})`);
    assert.equal(await page.isHidden('#read-box'), true, 'the bar goes once the card is there');
    // the card: the core read every dataset into one set (150 FRFs)
    const text = await page.textContent('.card[data-file="bracket_large.uff"]');
    assert.match(text, /150 in 1 set\(s\)/);
    // the bytes went to the worker once (the core tells a bundle from a data
    // file and reads the data file in the same call): a copy of 30 MB on the
    // main thread each time they go
    assert.equal(await page.evaluate(() => window.__crossings), 1, "the file's bytes crossed to the worker once");
    assert.deepEqual(b.errors, []);
    assert.deepEqual(b.foreign(), []);
    await shot(page, 'largefile');
  } finally {
    await b.close();
  }
});
