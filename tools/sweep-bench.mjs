// A recipe's sweep on the page's workers against one worker, in headless
// Chromium from dist/mortise.html: the demo (its speed sweep of 71 speeds)
// and the demo with an isolator-scale sweep of POINTS points (each point a
// whole run). For each, REPEATS times: the run in one worker; the recipe
// without its sweep alone; and the split run with W sweep workers, in parts
// (gathering the inputs, the slices while the page's worker runs the rest
// of the recipe, folding). Prints milliseconds and the machine's load;
// asserts nothing (the e2e test checks the results are equal).
// usage: node tools/sweep-bench.mjs [POINTS] [REPEATS] [W]   (defaults 48, 3, 2)
import { loadavg, cpus } from 'node:os';
import { open } from '../tests/e2e/helpers.mjs';

const points = Number(process.argv[2] || 48);
const reps = Number(process.argv[3] || 3);
const W = Number(process.argv[4] || 2);
for (const [k, v] of [['POINTS', points], ['REPEATS', reps], ['W', W]]) {
  if (!Number.isInteger(v) || v < 1) throw new Error(`${k}: expected a positive whole number, got '${v}'`);
}
const s = await open();
try {
  const p = s.page;
  await p.click('#demo-btn');
  await p.waitForFunction(() => /demo loaded/.test(document.getElementById('status-text').textContent), null, { timeout: 60000 });
  const demo = await p.inputValue('#recipe-text');
  const iso = JSON.stringify({ ...JSON.parse(demo), sweep: { name: 'isolator scale', scale: 'isolator', from: 0.25, to: 4, steps: points, spacing: 'log' } });
  console.log(`# ${cpus().length} cores, load average ${loadavg().map((x) => x.toFixed(2)).join(' ')}`);
  for (const [name, text] of [['demo speed sweep (71 speeds)', demo], [`isolator scale (${points} points)`, iso]]) {
    for (let rep = 0; rep < reps; rep++) {
      const o = await p.evaluate(async ([text, W]) => {
        const t = () => performance.now();
        const o = {};
        let a = t(); await Bridge.call('run_recipe', [text]); o.one_worker = t() - a;
        a = t(); await Bridge.call('run_recipe_begin', [text]); o.rest_alone = t() - a;
        const a0 = t();
        const inputs = await Bridge.call('sweep_inputs', [text]); o.gather = t() - a0;
        const copies = Array.from({ length: W }, (_, i) => (i === W - 1 ? inputs : inputs.slice()));
        await Bridge.extraWorkers(W);
        const b = t();
        const rest = Bridge.call('run_recipe_begin', [text]).then(() => t() - b);
        const parts = await Promise.all(copies.map(async (c, i) => {
          await Bridge.callExtra(i, 'load_sweep_inputs', [c], [c.buffer]);
          return Bridge.callExtra(i, 'sweep_slice', [text, i + 1, W]);
        }));
        o.slices = t() - b;
        o.rest = await rest;
        const c = t();
        await Bridge.call('run_recipe_split', [text, '[' + parts.map((x) => `{"ok":${x}}`).join(',') + ']', Date.now()]);
        o.fold = t() - c;
        o.split = t() - a0;
        return o;
      }, [text, W]);
      console.log(`# measure ${name}, ${W} sweep workers: ` + Object.entries(o).map(([k, v]) => `${k} ${Math.round(v)} ms`).join(', ') + ` (load ${loadavg()[0].toFixed(2)})`);
    }
  }
} finally { await s.close(); }
