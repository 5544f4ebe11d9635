import { chromium } from 'playwright-core';
import { resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { writeFileSync } from 'node:fs';
const path = resolve(process.argv[2]);
const browser = await chromium.launch({ executablePath: '/usr/bin/chromium', args: ['--headless', '--no-sandbox', '--disable-gpu'] });
const ctx = await browser.newContext();
const p = await ctx.newPage();
await p.goto(pathToFileURL(resolve(process.env.PAGE || 'dist/mortise.html')).href);
await p.waitForFunction(() => document.body.dataset.state === 'ready', null, { timeout: 60000 });
const cdp = await browser.newBrowserCDPSession();
const { targetInfos } = await cdp.send('Target.getTargets');
const w = targetInfos.find((t) => t.type === 'worker');
if (!w) { console.log(targetInfos.map((t) => t.type + ' ' + t.url)); process.exit(1); }
const { sessionId } = await cdp.send('Target.attachToTarget', { targetId: w.targetId, flatten: false });
let nextId = 1; const waiting = new Map();
cdp.on('Target.receivedMessageFromTarget', (ev) => {
  if (ev.sessionId !== sessionId) return;
  const m = JSON.parse(ev.message);
  if (m.id && waiting.has(m.id)) { waiting.get(m.id)(m); waiting.delete(m.id); }
});
const send = (method, params = {}) => new Promise((res) => { const id = nextId++; waiting.set(id, res); cdp.send('Target.sendMessageToTarget', { sessionId, message: JSON.stringify({ id, method, params }) }); });
await send('Profiler.enable');
await send('Profiler.setSamplingInterval', { interval: 500 });
await p.evaluate(() => { const i = document.createElement('input'); i.type = 'file'; i.id = 'probe'; document.body.append(i); });
await p.setInputFiles('#probe', path);
await send('Profiler.start');
const r = await p.evaluate(async () => {
  const f = document.getElementById('probe').files[0];
  const bytes = new Uint8Array(await f.arrayBuffer());
  const t1 = performance.now();
  await Bridge.callJson('load_file', [f.name, bytes, '{}'], 'x', () => {});
  return performance.now() - t1;
});
const prof = await send('Profiler.stop');
console.log('load ms', r);
const nodes = prof.result.profile.nodes;
const self = new Map();
const byId = new Map(nodes.map((n) => [n.id, n]));
const samples = prof.result.profile.samples; const deltas = prof.result.profile.timeDeltas;
const tot = new Map();
samples.forEach((id, k) => { const n = byId.get(id); const key = n.callFrame.functionName || '(anon)'; tot.set(key, (tot.get(key) || 0) + (deltas[k] || 0)); });
const all = [...tot.entries()].sort((a, b) => b[1] - a[1]).slice(0, 25);
for (const [k, v] of all) console.log((v / 1000).toFixed(1).padStart(8), 'ms', k.slice(0, 120));
await browser.close();
