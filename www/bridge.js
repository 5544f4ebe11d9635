// bridge.js: the only code that talks to the core's worker.
// Compiles the WebAssembly once, builds the worker from a Blob (glue + worker
// code, both carried inside this page), and turns messages into promises.
// cancel() terminates the worker and starts a fresh one; the page keeps the
// workspace and replays it through the replay hook.
// The same compiled module is also instantiated here, on the main thread, for
// drawing only (draw()): it receives plot data (typed arrays and a small
// description) from the worker, never files or recipes; every computation
// stays in the worker.
'use strict';
const Bridge = (() => {
  let module = null, workerUrl = null, worker = null, ready = null, drawCore = null;
  let nextId = 1;
  const pending = new Map();
  let progressCb = () => {};
  let replayHook = async () => {};
  // Closed while a restarted core is given the workspace back (cancel): a
  // call made meanwhile (a Run clicked at once) waits for the replay, so it
  // never meets a half-loaded workspace nor has its results replaced by the
  // replayed ones. The replay's own calls pass (send).
  let gate = Promise.resolve();

  function decodeBase64(text) {
    const clean = text.replace(/\s+/g, '');
    if (Uint8Array.fromBase64) return Uint8Array.fromBase64(clean);
    const bin = atob(clean);
    const out = new Uint8Array(bin.length);
    for (let i = 0; i < bin.length; i++) out[i] = bin.charCodeAt(i);
    return out;
  }

  // Inflate gzip bytes with the browser's DecompressionStream (no network involved).
  async function gunzip(bytes) {
    const stream = new Blob([bytes]).stream().pipeThrough(new DecompressionStream('gzip'));
    return new Uint8Array(await new Response(stream).arrayBuffer());
  }

  function spawn() {
    worker = new Worker(workerUrl);
    ready = new Promise((resolve, reject) => {
      worker.onmessage = (ev) => {
        const m = ev.data;
        if (m.type === 'ready') { resolve(m.version); return; }
        if (m.type === 'fatal') { reject(new Error(m.error)); return; }
        const p = pending.get(m.id);
        if (!p) return;
        if ('progress' in m) { progressCb({ id: m.id, stage: m.progress }); return; }
        if ('bytes' in m) { if (p.report) p.report(m.bytes); return; }
        pending.delete(m.id);
        if ('err' in m) p.reject(parseError(m.err)); else p.resolve(m.ok);
      };
      worker.onerror = (e) => reject(new Error('worker failed: ' + (e.message || 'unknown')));
    });
    worker.postMessage({ type: 'init', module });
    return ready;
  }

  function parseError(text) {
    try {
      const e = JSON.parse(text);
      if (e && typeof e === 'object' && 'message' in e) return e;
    } catch (_) { /* not JSON */ }
    return { kind: 'io', message: String(text) };
  }

  async function start(wasmBase64, encoding, workerSource) {
    let bytes = decodeBase64(wasmBase64);
    if (encoding === 'gzip') bytes = await gunzip(bytes);
    module = await WebAssembly.compile(bytes);
    // the page's own instance, for drawing (the glue is part of the page script)
    wasm_bindgen.initSync({ module });
    drawCore = wasm_bindgen;
    workerUrl = URL.createObjectURL(new Blob([workerSource], { type: 'text/javascript' }));
    return spawn();
  }

  // Call a core function in the worker. Byte arguments are copied (structured
  // clone), so the page keeps its own bytes for replays. `report`, when given,
  // receives { done, total } (bytes) while the core reads (load_file).
  async function call(fn, args, stage, report) {
    await gate;
    return send(fn, args, stage, report);
  }
  async function send(fn, args, stage, report) {
    await ready;
    const id = nextId++;
    return new Promise((resolve, reject) => {
      pending.set(id, { resolve, reject, fn, report });
      worker.postMessage({ id, fn, args: args || [], stage, report: !!report });
    });
  }

  async function callJson(fn, args, stage, report) {
    const text = await call(fn, args, stage, report);
    return JSON.parse(text);
  }

  // ---- extra workers: a sweep split over several workers (results.js) ----
  // Each holds its own workspace and core instance, started once from the
  // same compiled module and reused; a call's byte arguments may be
  // transferred (moved) instead of copied. cancel() and clearExtras() end them.
  const extras = [];
  function spawnExtra() {
    const x = { worker: new Worker(workerUrl), pending: new Map(), failed: null };
    x.ready = new Promise((resolve, reject) => {
      x.worker.onmessage = (ev) => {
        const m = ev.data;
        if (m.type === 'ready') { resolve(m.version); return; }
        if (m.type === 'fatal') { reject(new Error(m.error)); return; }
        const p = x.pending.get(m.id);
        if (!p || 'progress' in m || 'bytes' in m) return;
        x.pending.delete(m.id);
        if ('err' in m) p.reject(parseError(m.err)); else p.resolve(m.ok);
      };
      // a worker that stops (out of memory, a crash) fails every call it holds
      x.worker.onerror = (e) => {
        const err = { kind: 'internal', message: 'a sweep worker stopped: ' + (e.message || 'unknown') };
        x.failed = err;
        for (const [, p] of x.pending) p.reject(err);
        x.pending.clear();
        reject(new Error(err.message));
      };
    });
    x.worker.postMessage({ type: 'init', module });
    return x;
  }
  // Extra workers 1..n ready (started when missing or failed; kept for reuse).
  async function extraWorkers(n) {
    for (let i = 0; i < extras.length; i++) {
      if (extras[i].failed) { extras[i].worker.terminate(); extras[i] = spawnExtra(); }
    }
    while (extras.length < n) extras.push(spawnExtra());
    await Promise.all(extras.slice(0, n).map((x) => x.ready));
  }
  function callExtra(i, fn, args, transfer) {
    const x = extras[i];
    if (!x) return Promise.reject({ kind: 'internal', message: `no sweep worker ${i + 1}` });
    if (x.failed) return Promise.reject(x.failed);
    const id = nextId++;
    return new Promise((resolve, reject) => {
      x.pending.set(id, { resolve, reject });
      x.worker.postMessage({ id, fn, args: args || [], stage: fn }, transfer || []);
    });
  }
  function clearExtras() {
    for (const x of extras.splice(0)) {
      x.worker.terminate();
      for (const [, p] of x.pending) p.reject({ kind: 'cancelled', message: 'cancelled by the user' });
    }
  }

  async function cancel() {
    clearExtras();
    worker.terminate();
    for (const [, p] of pending) p.reject({ kind: 'cancelled', message: 'cancelled by the user' });
    pending.clear();
    let open;
    gate = new Promise((resolve) => { open = resolve; });
    try {
      await spawn();
      await replayHook(async (fn, args, stage) => JSON.parse(await send(fn, args, stage)));
    } finally { open(); }
  }

  return {
    start, call, callJson, cancel, decodeBase64, gunzip, extraWorkers, callExtra, clearExtras,
    extraCount() { return extras.length; },
    draw() { return drawCore; },
    onProgress(cb) { progressCb = cb; },
    setReplay(fn) { replayHook = fn; },
    busy() { return pending.size > 0 || extras.some((x) => x.pending.size > 0); },
  };
})();
