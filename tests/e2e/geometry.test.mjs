// A supplier's UFF with nodes (dataset 2411) before its FRFs: the card
// shows the core's three-view sketch with an arrow at each DOF of the FRFs.
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { open, addFiles, shot, ROOT } from './helpers.mjs';

// Dataset 2411: per node, record 1 (label, export and displacement systems, colour; 4I10)
// and record 2 (x, y, z; 3D25.16), here in metres.
function nodes2411(nodes) {
  const i10 = (v) => String(v).padStart(10);
  const d25 = (v) => v.toExponential(16).replace('e', 'E').padStart(25);
  const lines = ['    -1', '  2411'];
  for (const [id, x, y, z] of nodes) lines.push(i10(id) + i10(0) + i10(0) + i10(11), d25(x) + d25(y) + d25(z));
  lines.push('    -1');
  return lines.join('\n') + '\n';
}

test('a UFF with nodes shows its geometry on the card, with arrows at the DOFs', async () => {
  const s = await open();
  try {
    const casing = readFileSync(join(ROOT, 'sample-frf/unit-casing.uff'), 'latin1');
    const geo = nodes2411([[101, 0, 0, 0], [102, 0.6, 0, 0], [103, 0.6, 0.4, 0], [104, 0, 0.4, 0]]);
    await addFiles(s.page, [{ name: 'casing-with-nodes.uff', data: Buffer.from(geo + casing, 'latin1') }]);
    await s.page.waitForSelector('.card[data-file="casing-with-nodes.uff"] img.geometry', { timeout: 20000 });
    const alt = await s.page.$eval('.card[data-file="casing-with-nodes.uff"] img.geometry', (i) => i.alt);
    assert.match(alt, /4 nodes in three views/);
    const src = await s.page.$eval('.card[data-file="casing-with-nodes.uff"] img.geometry', (i) => i.getAttribute('src'));
    const svg = decodeURIComponent(src.slice(src.indexOf(',') + 1));
    // four nodes in each of three views; the Z arrows of the four DOFs show in the two side views
    assert.equal((svg.match(/<circle[^>]*r="2"/g) || []).length, 12);
    assert.equal((svg.match(/<line /g) || []).length, 8);
    await shot(s.page, '70-geometry-card');
  } finally { await s.close(); }
});
