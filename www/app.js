// app.js: drawing everything, restoring and clearing the workspace, the demo,
// and wiring the controls. The page's scripts share one scope (tools/inline.mjs
// joins them in the order it lists); this one runs last and starts the page.

function renderAll() {
  adoptRecipeText('the opened bundle');
  renderCards();
  renderAsm();
  renderResults();
  renderHistory();
}

// ---------- workspace restore / replay ----------
// ---------- limits (the core's budget; replayed into a new worker) ----------
let limitsJson = '{}';
async function applyLimits() {
  const ask = JSON.stringify({
    memory_bytes: Math.round(Number($('limit-memory-gb').value) * 1e9),
    work: Number($('limit-work').value),
  });
  try {
    const w = await Bridge.callJson('sweep_plan', ['', $('limit-workers').value], 'checking the workers');
    const l = await Bridge.callJson('set_limits', [ask], 'setting the limits');
    limitsJson = ask;
    $('limits-state').textContent = `in force: ${(l.memory_bytes / 1e9).toPrecision(4)} GB, ${l.work.toExponential(2)} operations, sweeps on up to ${w.workers} worker(s)`;
  } catch (e) {
    $('limits-state').textContent = 'not applied: ' + errorText(e);
  }
}
// callJson: the bridge's replay call (it passes the gate user calls wait at)
async function replay(callJson = Bridge.callJson) {
  if (limitsJson !== '{}') {
    try { await callJson('set_limits', [limitsJson]); } catch (_) { limitsJson = '{}'; }
  }
  for (const f of S.files) {
    try {
      f.summary = await callJson('load_file', [f.name, f.bytes, JSON.stringify(f.options)], 'reading ' + f.name);
      f.error = null;
    } catch (e) { f.summary = null; f.error = e; }
  }
  if (S.bundle) {
    try { S.bundle.info = await callJson('open_bundle', [S.bundle.name, S.bundle.bytes]); } catch (_) { S.bundle = null; }
  }
  if ((S.history || []).length) {
    try { S.history = await callJson('put_history', [JSON.stringify(S.history)]); } catch (_) { S.history = []; }
  }
  if (S.resultsJson) {
    try { S.results = await callJson('put_results', [S.resultsJson]); } catch (_) { S.results = null; S.resultsJson = null; }
  }
}
async function restore() {
  let snap = null;
  try { snap = await idb('readonly', (st) => st.get('current')); } catch (_) { snap = null; }
  if (!snap) return false;
  restoring = true;
  try {
    S.files = (snap.files || []).map((f) => ({ name: f.name, bytes: f.bytes, options: f.options || {}, summary: null, error: null }));
    S.bundle = snap.bundle ? { name: snap.bundle.name, bytes: snap.bundle.bytes, info: null } : null;
    S.resultsJson = snap.resultsJson || null;
    S.stale = snap.stale || null;
    S.asmStep = snap.asmStep || null;
    S.plot = snap.plot || S.plot;
    S.includeRaw = snap.includeRaw || {};
    S.history = snap.history || [];
    await replay();
    await setRecipeText(snap.recipeText || '', 'the saved workspace');
    renderAll();
    await refreshHistory();
    renderCompare();
    await drawPlot();
  } finally {
    restoring = false;
  }
  return true;
}
async function clearWorkspace() {
  await Bridge.call('clear_workspace', []);
  Bridge.clearExtras();
  S.files = []; S.bundle = null; S.results = null; S.resultsJson = null; S.stale = null; S.asmStep = null;
  S.plot = { kind: 'bode', db: true, xlog: true, xrange: null, sel: [], compare: null };
  S.includeRaw = {};
  S.history = []; S.compareChoice = [];
  renderCompare();
  renderHistory();
  await setRecipeText('', 'clearing the workspace');
  lastSpec = null;
  clearPlot();
  $('readout').textContent = '';
  exportNote();
  try { await idb('readwrite', (st) => st.delete('current')); } catch (_) { /* nothing stored */ }
  renderAll();
  status('workspace cleared');
}
async function loadDemo() {
  const demo = JSON.parse($('demo-files').textContent || '{"files":[]}');
  if (!demo.files.length) { status('this build carries no demo files (build.sh writes them to sample-frf/ first)', 'fail'); return; }
  status('loading the heat-pump demo…', 'busy');
  // the recipe first: it carries the column maps of the supplier CSVs
  const order = [...demo.files].sort((a, b) => /\.recipe\.json$/i.test(b.name) - /\.recipe\.json$/i.test(a.name));
  for (const f of order) {
    const raw = Bridge.decodeBase64(f.base64);
    await addFile(f.name, f.encoding === 'gzip' ? await Bridge.gunzip(raw) : raw);
  }
  status(`demo loaded: ${demo.files.length} file(s); press Run`);
}

// ---------- wiring ----------
function wire() {
  // sweeps on as many workers as the processor has cores, at most 4 (Limits)
  $('limit-workers').value = String(Math.max(1, Math.min(navigator.hardwareConcurrency || 1, 4)));
  $('file-input').addEventListener('change', async (e) => { await readFiles([...e.target.files]); e.target.value = ''; });
  document.addEventListener('dragover', (e) => { e.preventDefault(); document.body.classList.add('dragging'); });
  document.addEventListener('dragleave', (e) => { if (!e.relatedTarget) document.body.classList.remove('dragging'); });
  document.addEventListener('drop', async (e) => {
    e.preventDefault();
    document.body.classList.remove('dragging');
    if (e.dataTransfer?.files?.length) await readFiles([...e.dataTransfer.files]);
  });
  $('demo-btn').addEventListener('click', loadDemo);
  $('clear-btn').addEventListener('click', () => $('confirm-dialog').showModal());
  $('confirm-dialog').addEventListener('close', () => { if ($('confirm-dialog').returnValue === 'ok') clearWorkspace(); });
  $('suggest-btn').addEventListener('click', suggestJoints);
  $('add-joint-btn').addEventListener('click', addJoint);
  $('add-stage-btn').addEventListener('click', addStep);
  $('couple-step').addEventListener('change', (e) => { S.asmStep = e.target.value || null; renderAsm(); autosave(); });
  $('outputs-input').addEventListener('input', (e) => {
    editRecipe((r) => { r.outputs = splitNames(e.target.value) || []; }, false);
  });
  $('build-recipe-btn').addEventListener('click', writePanelRecipe);
  $('recipe-text').addEventListener('input', onRecipeInput);
  $('run-btn').addEventListener('click', run);
  $('limits-btn').addEventListener('click', applyLimits);
  $('cancel-btn').addEventListener('click', async () => {
    $('cancel-btn').disabled = true;
    status('cancelling: restarting the core…', 'busy');
    await Bridge.cancel();
    renderAll();
    await drawPlot();
  });
  $('curve-select').addEventListener('change', (e) => {
    S.plot.sel = [...e.target.selectedOptions].map((o) => { const [set, out, inp] = JSON.parse(o.value); return { set, out, in: inp }; });
    drawPlot(); autosave();
  });
  $('plot-kind').addEventListener('change', (e) => { S.plot.kind = e.target.value; S.plot.xrange = null; drawPlot(); autosave(); });
  $('opt-db').addEventListener('change', (e) => { S.plot.db = e.target.checked; drawPlot(); autosave(); });
  $('opt-log').addEventListener('change', (e) => { S.plot.xlog = e.target.checked; S.plot.xrange = null; drawPlot(); autosave(); });
  $('zoom-reset').addEventListener('click', () => { S.plot.xrange = null; drawPlot(); autosave(); });
  for (const b of document.querySelectorAll('[data-export]')) b.addEventListener('click', () => exportAs(b.dataset.export));
  $('listen-btn').addEventListener('click', listen);
  // a bundle of stale results would present them as the recipe's: refused like the other exports
  $('bundle-btn').addEventListener('click', () => {
    if (S.stale && S.results) {
      $('bundle-info').textContent = `bundle refused: the results are stale (${S.stale.reason}); run the recipe again first`;
      status('bundle refused: the results are stale', 'fail');
      return;
    }
    saveBundle();
  });
  let resizeTimer = null;
  window.addEventListener('resize', () => { clearTimeout(resizeTimer); resizeTimer = setTimeout(drawPlot, 200); });
  Bridge.onProgress(({ stage }) => { if (!$('run-progress').hidden) $('run-stage').textContent = stage; });
  Bridge.setReplay(replay);
  wirePlot();
}
// The "add a step" choice lists the core's operations.
function renderVocabularyLists() {
  const sel = $('add-stage-op');
  clear(sel);
  for (const o of VOCAB.operations) sel.append(el('option', { value: o.name, title: o.summary }, o.name));
  $('asm-rule').textContent = `Joints: ${VOCAB.inference_rule}.`;
}

async function main() {
  wire();
  try {
    const version = await Bridge.start($('core-wasm').textContent, $('core-wasm').dataset.encoding, $('worker-src').textContent);
    $('core-version').textContent = 'core ' + version;
    await loadRecipeVocabulary();
    renderVocabularyLists();
    renderAll();
    const restored = await restore();
    timings.ready_ms = performance.now() - T0;
    status(restored ? `workspace restored: ${S.files.length} file(s)` : 'ready: add supplier files or load the demo');
  } catch (e) {
    status('the core could not start: ' + errorText(e), 'fail');
  }
}
main();
