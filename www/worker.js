// The core's worker. Prepended by the wasm-bindgen glue (no-modules target),
// which defines the global `wasm_bindgen`. Messages:
//   { type: 'init', module }              -> { type: 'ready', version } | { type: 'fatal', error }
//   { id, fn, args, stage }               -> { id, progress: stage }, then { id, ok } | { id, err }
//   { id, fn, args, stage, report: true } -> the same, with { id, bytes: { done, total } } between:
//                                            the core calls a function given as the last argument
// Only functions the core exports are called; nothing here computes anything.
'use strict';
let core = null;
self.onmessage = (ev) => {
  const m = ev.data;
  if (m.type === 'init') {
    try {
      wasm_bindgen.initSync({ module: m.module });
      core = wasm_bindgen;
      self.postMessage({ type: 'ready', version: core.version() });
    } catch (e) {
      self.postMessage({ type: 'fatal', error: String(e && e.message || e) });
    }
    return;
  }
  if (!core) {
    self.postMessage({ id: m.id, err: JSON.stringify({ kind: 'io', message: 'the core is not initialised' }) });
    return;
  }
  const f = core[m.fn];
  if (typeof f !== 'function' || m.fn.startsWith('__') || m.fn === 'initSync') {
    self.postMessage({ id: m.id, err: JSON.stringify({ kind: 'usage', message: `no core function '${m.fn}'` }) });
    return;
  }
  self.postMessage({ id: m.id, progress: m.stage || m.fn });
  const t0 = performance.now();
  try {
    const args = (m.args || []).slice();
    if (m.report) args.push((done, total) => self.postMessage({ id: m.id, bytes: { done, total } }));
    const out = f(...args);
    const ms = performance.now() - t0;
    // bytes and plot arrays are transferred (moved), not copied
    const transfer = [];
    if (out instanceof Uint8Array) transfer.push(out.buffer);
    else if (out && typeof out === 'object') {
      for (const k of ['grids', 'arrays']) for (const a of (Array.isArray(out[k]) ? out[k] : [])) if (ArrayBuffer.isView(a)) transfer.push(a.buffer);
    }
    self.postMessage({ id: m.id, ok: out, ms }, transfer);
  } catch (e) {
    // The core throws its Error as JSON text; anything else (a trap) becomes one.
    const text = typeof e === 'string' ? e : JSON.stringify({ kind: 'numeric', message: 'the core stopped: ' + String(e && e.message || e) });
    self.postMessage({ id: m.id, err: text });
  }
};
