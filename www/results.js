// results.js: running the recipe, the results with their report and plots,
// the stale mark, and exports. A failed or cancelled run, and any change of
// the recipe or the files after a run, mark the shown results stale: a
// banner on the results, a label on the plot, and exports of stale results
// refused; a successful run clears the mark.

// ---------- running ----------
async function run() {
  $('run-error').hidden = true;
  $('run-btn').disabled = true;
  $('cancel-btn').disabled = false;
  $('run-progress').hidden = false;
  status('computing in the background…', 'busy');
  try {
    await settleRecipe(); // Run runs the text on screen, read by the core
    const text = R.text, epoch = S.filesEpoch;
    const t0 = performance.now();
    const { r, workers } = await runOnWorkers(text);
    timings.last_run_ms = performance.now() - t0;
    timings.last_run_workers = workers;
    S.results = r;
    S.resultsJson = await Bridge.call('results_json', []);
    S.plot.sel = defaultSelection(r.results);
    S.plot.xrange = null;
    if (text === R.text && epoch === S.filesEpoch) S.stale = null;
    else S.stale = { reason: 'the recipe or the files changed while this run was computing' };
    S.plot.compare = null;
    if (S.plot.kind === 'difference') S.plot.kind = 'bode';
    renderCompare();
    renderResults();
    await drawPlot();
    status(`done in ${(timings.last_run_ms / 1000).toFixed(2)} s: ${r.results.length} result(s)` + (workers > 1 ? ` (sweep on ${workers} workers)` : '') + (S.stale ? ' (already stale: the recipe changed meanwhile)' : ''));
    autosave();
  } catch (e) {
    if (e.kind !== 'cancelled') {
      const box = $('run-error');
      clear(box);
      box.append(errorBox(e));
      box.hidden = false;
      markStale('the last run failed (' + errorText(e) + ')');
      status('the run failed', 'fail');
    } else {
      markStale('the last run was cancelled');
      status('cancelled; the workspace is as it was');
    }
  } finally {
    if (!restoring) refreshHistory();
    $('run-btn').disabled = false;
    $('cancel-btn').disabled = true;
    $('run-progress').hidden = true;
    $('run-stage').textContent = '';
  }
}
// ---------- a sweep on several workers ----------
// With a sweep in the recipe and more than one worker asked (Limits), the
// core gathers the sweep's inputs as bytes (sweep_inputs); W extra workers
// each load their own copy (moved, not shared: no SharedArrayBuffer from
// file://) and compute one contiguous slice (sweep_slice, the function of
// `mortise sweep --shard K/N`), while this page's worker runs the rest of
// the recipe (run_recipe_begin); run_recipe_split folds the slices with the
// one merge and finishes the run. This file only schedules and moves bytes;
// a failed slice fails the run with its error (the first in slice order).
async function runOnWorkers(text) {
  const plan = await Bridge.callJson('sweep_plan', [text, $('limit-workers').value], 'planning the run');
  const W = Math.max(1, Math.min(plan.workers, plan.points));
  if (W < 2) return { r: await Bridge.callJson('run_recipe', [text], 'running the recipe'), workers: 1 };
  const started = Date.now();
  let inputs;
  try {
    inputs = await Bridge.call('sweep_inputs', [text], 'gathering the sweep\'s inputs');
  } catch (e) {
    // the recipe fails before its sweep: the run in one worker reports it (and records it)
    if (e.kind === 'cancelled') throw e;
    return { r: await Bridge.callJson('run_recipe', [text], 'running the recipe'), workers: 1 };
  }
  // each extra worker's own copy, made before any is moved away
  const copies = Array.from({ length: W }, (_, i) => (i === W - 1 ? inputs : inputs.slice()));
  await Bridge.extraWorkers(W);
  const done = [];
  const line = () => `sweep: ${plan.points} points on ${W} workers` + (done.length ? `, slice ${done.join(', ')} done` : ', started');
  // the rest of the recipe, in this page's worker meanwhile
  const rest = Bridge.call('run_recipe_begin', [text], 'running the recipe');
  $('run-stage').textContent = line();
  const one = async (k) => {
    const i = k - 1;
    try {
      if (limitsJson !== '{}') await Bridge.callExtra(i, 'set_limits', [limitsJson]);
      await Bridge.callExtra(i, 'load_sweep_inputs', [copies[i]], [copies[i].buffer]);
      const t = await Bridge.callExtra(i, 'sweep_slice', [text, k, W]);
      done.push(k);
      $('run-stage').textContent = line();
      return `{"ok":${t}}`;
    } catch (e) {
      if (e.kind === 'cancelled') throw e;
      done.push(`${k} failed`);
      const err = e && typeof e === 'object' && 'kind' in e ? e : { kind: 'internal', message: `sweep worker ${k}: ${e?.message || e}` };
      return `{"err":${JSON.stringify(err)}}`;
    }
  };
  const [parts] = await Promise.all([Promise.all(Array.from({ length: W }, (_, j) => one(j + 1))), rest]);
  $('run-stage').textContent = line();
  const r = await Bridge.callJson('run_recipe_split', [text, '[' + parts.join(',') + ']', started], 'running the recipe');
  return { r, workers: W };
}
function defaultSelection(results) {
  return results.slice(0, 4).map((r) => ({ set: r.id, out: 0, in: 0 }));
}

// ---------- the stale mark ----------
function markStale(reason) {
  if (!S.results) return;
  S.stale = { reason };
  renderStale();
  autosave();
}
function clearStale() {
  S.stale = null;
  renderStale();
  autosave();
}
const resultIds = () => new Set((S.results?.results || []).map((r) => r.id));
// Does the plot on screen draw results (curves of results, or the report's conditioning or ranking)?
function plotShowsResults() {
  if (!S.results) return false;
  if (S.plot.kind === 'condition') return true;
  if (S.plot.kind === 'bars' && (S.results.report?.steps || []).some((st) => st.ranking?.targets?.length)) return true;
  if (S.plot.kind === 'speed-map') return !!S.results.report?.sweep;
  const ids = resultIds();
  return S.plot.sel.some((x) => ids.has(x.set));
}
function renderStale() {
  const stale = !!(S.stale && S.results);
  $('results-panel').classList.toggle('stale', stale);
  $('results-panel').dataset.stale = stale ? 'yes' : 'no';
  const b = $('stale-banner');
  b.hidden = !stale;
  clear(b);
  if (stale) {
    b.append(el('strong', {}, 'STALE RESULTS. '),
      `These results are from an earlier run and do not match what is on screen: ${S.stale.reason}. ` +
      'The report, the plots and the result curves below are kept for comparison only; exporting them is refused until a run succeeds.');
  }
  $('plot-stale').hidden = !(stale && plotShowsResults());
  const g = document.querySelector('#curve-select optgroup[data-group="results"]');
  if (g) g.label = stale ? 'results (STALE: from an earlier run)' : 'results';
}

// ---------- results, report, plots ----------
function curveChoices() {
  const out = [];
  const add = (group, s) => {
    let n = 0;
    for (let i = 0; i < s.outputs.length; i++) for (let j = 0; j < s.inputs.length; j++) {
      if (n++ > 400) return;
      out.push({ group, set: s.id, name: s.name, out: i, in: j, text: `${s.name}: ${s.outputs[i]} / ${s.inputs[j]}` });
    }
  };
  for (const r of S.results?.results || []) add('results', r);
  const shown = new Set((S.results?.results || []).map((r) => r.id));
  for (const h of [...(S.history || [])].reverse()) {
    if (!h.curves_kept) continue;
    for (const r of h.results) if (!shown.has(r.id)) add(`run ${h.number} (${clock(h.started_ms)})`, r);
  }
  for (const p of loadedSets()) add('supplier data', p.s);
  for (const inp of S.bundle?.info.inputs || []) for (const s of inp.sets) add('bundle inputs', s);
  return out;
}
// What a step's report says about its conditioning (interface of a
// coupling, indicator matrix and validation of blocked forces).
function conditioning(st) {
  const out = [];
  const i = st.interface;
  if (i && i.worst_condition !== null && i.worst_condition !== undefined) {
    const cut = (i.truncated || []).filter((x) => x > 0).length;
    out.push(`interface condition number up to ${fmt(i.worst_condition)} at ${fmt(i.worst_condition_hz)} Hz` +
      (cut ? `; singular values dropped on ${cut} line(s)` : ''));
  }
  const b = st.blocked;
  if (b) {
    if (b.worst_indicator_condition !== null && b.worst_indicator_condition !== undefined) {
      out.push(`indicator matrix condition number up to ${fmt(b.worst_indicator_condition)} at ${fmt(b.worst_indicator_condition_hz)} Hz`);
    }
    if (b.validation && b.validation.worst_band_error_db !== null && b.validation.worst_band_error_db !== undefined) {
      out.push(`on-board validation at ${b.validation.dofs.join(', ')}: worst band error ${fmt(b.validation.worst_band_error_db, 3)} dB`);
    }
  }
  return out.join('; ');
}
function levelsText(st) {
  return (st.levels || []).map((l) => (l.error ? `${l.dof}: ${l.error}`
    : `${l.dof}: ${fmt(l.overall_db, 4)} ${l.reference}, weighting ${String(l.weighting).toUpperCase()}` +
      (l.overall_unweighted_db !== null && l.overall_unweighted_db !== l.overall_db ? ` (unweighted ${fmt(l.overall_unweighted_db, 4)})` : ''))).join('; ');
}
function renderResults() {
  scheduleVpoints();
  const sel = $('curve-select');
  clear(sel);
  const groups = {};
  for (const c of curveChoices()) {
    if (!groups[c.group]) { groups[c.group] = el('optgroup', { label: c.group, 'data-group': c.group }); sel.append(groups[c.group]); }
    const chosen = S.plot.sel.some((x) => x.set === c.set && x.out === c.out && x.in === c.in);
    groups[c.group].append(el('option', { value: JSON.stringify([c.set, c.out, c.in]), 'data-name': c.name, selected: chosen || null }, c.text));
  }
  $('plot-kind').value = S.plot.kind;
  $('opt-db').checked = S.plot.db;
  $('opt-log').checked = S.plot.xlog;
  const rep = $('report');
  clear(rep);
  const report = S.results?.report;
  if (report) {
    if (report.title) rep.append(el('div', {}, el('strong', {}, report.title)));
    // the answer first: levels at the targets, strongest lines and paths, variants, audit flags
    if ((report.headline || []).length) {
      rep.append(el('div', { class: 'headline', id: 'headline' }, ...report.headline.map((h) => el('div', { class: /^\s/.test(h) ? 'sub' : '' }, h))));
    }
    const rows = (report.steps || []).map((st) => el('tr', { 'data-step': st.id },
      el('td', {}, st.id), el('td', {}, st.op),
      el('td', {}, conditioning(st)),
      el('td', {}, levelsText(st)),
      el('td', {}, [...(st.notes || []), ...(st.extras?.length ? [`also written: ${st.extras.join(', ')}`] : []),
        ...[...new Set(st.warnings || [])].filter((w) => w !== report.caution)].join('; '))));
    if (rows.length) {
      rep.append(el('table', {}, el('tr', {}, el('th', {}, 'step'), el('th', {}, 'operation'), el('th', {}, 'conditioning'),
        el('th', {}, 'levels'), el('th', {}, 'notes and warnings')), ...rows));
    }
    if ((report.notes || []).length) rep.append(el('div', { class: 'report-notes' }, 'How the recipe was read: ', el('ul', {}, ...report.notes.map((n) => el('li', {}, n)))));
    for (const v of report.variants || []) {
      const d = Object.entries(v.level_change_db || {}).map(([k, x]) => `${k}: ${x === null ? '–' : (x > 0 ? '+' : '') + fmt(x, 3) + ' dB'}`).join(', ');
      rep.append(el('div', {}, `variant “${v.name}”, change of the unweighted energy over all lines: ${d}`));
    }
  }
  renderBundleRaw();
  renderStale();
}
function plotSpec(width) {
  const w = Math.max(420, Math.min(1800, Math.round(width)));
  const h = Math.round(Math.max(320, Math.min(560, w * 0.48)));
  const base = { width: w, height: h, db: S.plot.db, x_log: S.plot.xlog, x_range: S.plot.xrange };
  if (S.plot.kind === 'condition') {
    const steps = S.results?.report?.steps || [];
    const grid = S.results?.results?.[0]?.id;
    const nan = (v) => (v === null ? NaN : v);
    const lines = [];
    for (const s of steps) {
      if (Array.isArray(s.interface?.condition)) lines.push({ label: `step ${s.id}: interface`, x: [], y: s.interface.condition.map(nan), x_from: grid });
      if (Array.isArray(s.blocked?.indicator_condition)) lines.push({ label: `step ${s.id}: indicator matrix`, x: [], y: s.blocked.indicator_condition.map(nan), x_from: grid });
    }
    return { ...base, kind: 'lines', y_log: true, y_label: 'condition number (2-norm)', lines };
  }
  if (S.plot.kind === 'bars') {
    // the run report's path ranking when there is one, else the chosen set's inputs
    const ranked = (S.results?.report?.steps || []).find((st) => st.ranking?.targets?.length);
    if (ranked) return { ...base, kind: 'bars', path_ranking: ranked.ranking.targets[0] };
    const first = S.plot.sel[0];
    return { ...base, kind: 'bars', ranking: first || null, y_label: '' };
  }
  if (S.plot.kind === 'speed-map') {
    // the run report's speed sweep, resolved into cells by the core
    const sweep = S.results?.report?.sweep;
    if (!sweep) throw new Error('the recipe has no speed sweep: add a "sweep" with "speed" and run it');
    return { ...base, kind: 'speed-map', sweep };
  }
  if (S.plot.kind === 'difference') {
    const c = S.plot.compare;
    if (!c) throw new Error('choose two runs in the run history and press Compare: this view draws the level difference between them');
    return { ...base, kind: 'difference', series: c.pairs.map((p) => p.b), baseline: c.pairs.map((p) => p.a) };
  }
  return { ...base, kind: S.plot.kind, series: S.plot.sel };
}
// ---------- the plot: resolved in the worker, drawn here by the core ----------
// The worker resolves what to draw against its sets (plot_data: curve data as
// Float64Arrays, transferred, and a small structured description). The page's
// own instance of the core (Bridge.draw(): the same module, for drawing only)
// keeps that data and draws it on the canvas. Zoom, pan, the read-outs and the
// dB / log switches redraw here, without the worker; the SVG export is the
// same drawing of the same data at the same size.
let drawing = null;
let kept = null; // what the drawing instance holds: { key, results, bundle, epoch }
let plotCount = 0;
let cursor = null; // the read-out: { freq } on a frequency axis, { nyquist: true } otherwise
timings.redraw_ms = [];
// drawing passes (see redraw): a pass's target time, the current drawing, a curve's cost
const PASS_MS = 12;
let passJob = 0, curveMs = 0.2;
timings.pass_ms = [];
const plotCore = () => Bridge.draw();

// everything but the view: a change here needs the worker
function dataKey(spec) {
  const { width, height, db, x_log, y_log, x_range, y_range, ...rest } = spec;
  if (spec.kind === 'bars') rest.x_range = x_range; // bars sum the lines inside the range
  return JSON.stringify(rest);
}
const keptFits = (key) => kept && kept.key === key && kept.results === S.results && kept.bundle === S.bundle && kept.epoch === S.filesEpoch;
const viewOf = (spec) => ({ db: spec.db, x_log: spec.x_log, y_log: !!spec.y_log, x_range: spec.x_range || null, y_range: null });

function clearPlot(message) {
  passJob++; // passes of a drawing still to come are dropped
  $('plot-canvas').hidden = true;
  $('cursor-line').hidden = true;
  $('cursor-dot').hidden = true;
  $('plot-legend').hidden = true;
  lastFrames = [];
  if (message !== undefined) $('readout').textContent = message;
}

async function drawPlot() {
  const wrap = $('plot-wrap');
  renderStale();
  if (!S.plot.sel.length && !['condition', 'difference', 'speed-map'].includes(S.plot.kind)) { clearPlot(); return; }
  let spec;
  try { spec = plotSpec(wrap.clientWidth || 960); } catch (e) { clearPlot('cannot draw: ' + errorText(e)); return; }
  if (lastSpec && lastSpec.kind !== spec.kind) { $('readout').textContent = ''; cursor = null; }
  // the core says which switches this view reads; the others are disabled, not silently ignored
  try {
    const c = JSON.parse(plotCore().plot_controls(JSON.stringify({ kind: spec.kind })));
    for (const [id, on] of [['opt-db', c.db], ['opt-log', c.x_log]]) {
      $(id).disabled = !on;
      $(id).closest('label').title = on ? '' : 'this view does not use it';
    }
  } catch (_) { /* the switches stay as they are */ }
  const t0 = performance.now();
  const key = dataKey(spec);
  if (!keptFits(key)) {
    const job = Bridge.call('plot_data', [spec], 'drawing');
    drawing = job;
    const mark = { key, results: S.results, bundle: S.bundle, epoch: S.filesEpoch };
    try {
      const parts = await job;
      if (drawing !== job) return;
      const t1 = performance.now();
      plotCore().plot_put(parts);
      timings.last_put_ms = performance.now() - t1;
      kept = mark;
      // the drawing in a task of its own: no main-thread task holds both
      await new Promise((res) => setTimeout(res, 0));
      if (drawing !== job) return;
    } catch (e) {
      if (drawing !== job) return;
      kept = null;
      clearPlot('cannot draw: ' + errorText(e));
      return;
    }
  }
  drawing = null;
  lastSpec = spec;
  await redraw();
  timings.last_plot_ms = performance.now() - t0;
}

// Draw the kept data with the view of lastSpec: the core draws, here, in
// passes (the frame and the first curves, then the next curves on the same
// canvas, the legend with the last), each a main-thread task of its own of
// about PASS_MS, so a redraw of many curves never holds the page; a new
// redraw drops what is left of the one before. Resolves when complete.
function redraw() {
  const spec = lastSpec, c = $('plot-canvas'), wrap = $('plot-wrap');
  const job = ++passJob;
  const view = viewOf(spec), dpr = window.devicePixelRatio || 1;
  let spent = 0;
  return new Promise((done) => {
    const pass = (from) => {
      if (job !== passJob) { done(); return; }
      const count = Math.max(1, Math.round(PASS_MS / curveMs));
      const t0 = performance.now();
      let r;
      try {
        r = plotCore().plot_draw(c, view, spec.width, spec.height, dpr, from, count);
      } catch (e) {
        clearPlot('cannot draw: ' + errorText(typeof e === 'string' ? parseCoreError(e) : e));
        done();
        return;
      }
      const ms = performance.now() - t0;
      spent += ms;
      timings.pass_ms.push(ms);
      if (timings.pass_ms.length > 500) timings.pass_ms.shift();
      // the cost of a curve, learnt from passes that drew a full count
      if (r.next != null) curveMs = Math.min(50, Math.max(0.005, ms / count));
      if (from === 0) {
        c.hidden = false;
        lastFrames = r.frames;
        wrap.dataset.spec = JSON.stringify(spec); // what is drawn, for tests and the curious
        if (r.frames[0]) wrap.dataset.xrange = JSON.stringify([r.frames[0].x_min, r.frames[0].x_max]);
        wrap.dataset.frames = JSON.stringify(r.frames); // panels in plot pixels, for tests
        if (!spec.x_range && r.frames[0]) wrap.dataset.fullrange = wrap.dataset.xrange;
        refreshReadout();
      }
      if (r.next != null) { setTimeout(() => pass(r.next), 0); return; }
      timings.redraw_ms.push(spent);
      if (timings.redraw_ms.length > 500) timings.redraw_ms.shift();
      renderLegend(r.legend);
      document.body.dataset.plotted = String(++plotCount);
      done();
    };
    pass(0);
  });
}
function parseCoreError(text) {
  try { return JSON.parse(text); } catch (_) { return { message: String(text) }; }
}

// The legend the core drew: when it has too many entries to name inside the
// plot, they are listed below it with the core's colours and dashes.
let legendKey = '', legendJob = 0;
function renderLegend(entries) {
  const box = $('plot-legend'), list = $('plot-legend-list');
  const listed = entries.length && entries.some((e) => !e.inside);
  box.hidden = !listed;
  if (!listed) { legendJob++; legendKey = ''; return; }
  // a zoom or a pan draws the same curves: the list stays (no relayout of 150 rows)
  const key = JSON.stringify(entries);
  if (key === legendKey && list.childElementCount === entries.length) return;
  legendKey = key;
  // built in a task of its own: a first drawing of many curves and the list's
  // rows never share one main-thread task
  clear(list);
  const job = ++legendJob;
  setTimeout(() => { if (job === legendJob) fillLegend(list, entries); }, 0);
}
function fillLegend(list, entries) {
  $('plot-legend-count').textContent = `${entries.length} curves`;
  const rows = document.createDocumentFragment();
  for (const e of entries) {
    const sw = el('span', { class: 'swatch', 'aria-hidden': 'true' });
    const [on, off] = e.dash;
    sw.style.background = e.hatched ? `repeating-linear-gradient(120deg, ${e.colour} 0 4px, #fff 4px 5px)`
      : on ? `repeating-linear-gradient(90deg, ${e.colour} 0 ${on}px, transparent ${on}px ${on + off}px)` : e.colour;
    rows.append(el('li', {}, sw, e.label));
  }
  list.append(rows);
}

// ---------- read-outs ----------
function readoutLines(p) {
  // the 95 % interval and reliability come with a curve whose set has an uncertainty
  const band = (q) => {
    if (!q.interval_95_db) return '';
    const [lo, hi] = q.interval_95_db;
    const end = (v) => (v === null || v === undefined ? '−∞' : fmt(v, 4));
    return `   95 %: ${end(lo)} to ${end(hi)} dB${q.reliable === false ? '   not reliable at this line' : ''}`;
  };
  return p.map((q) => `${q.label}\n   f = ${fmt(q.freq)} Hz   |H| = ${fmt(q.magnitude)} ${q.unit}   L = ${fmt(q.level_db, 4)} ${q.db_label}${band(q)}   φ = ${fmt(q.phase_deg, 4)}°   re ${fmt(q.re)}  im ${fmt(q.im)}`).join('\n');
}
const scaleOf = () => { const r = $('plot-canvas').getBoundingClientRect(); return lastSpec && r.width ? lastSpec.width / r.width : 1; };
// The read-out at frequency `freq` (the core snaps to the nearest line of each curve).
function readAt(freq) {
  const f = lastFrames.find((fr) => fr.x_is === 'frequency');
  if (!f) return;
  const p = plotCore().plot_read(freq);
  if (!p.length) return;
  cursor = { freq: p[0].freq };
  $('readout').textContent = readoutLines(p);
  const cl = $('cursor-line'), sc = scaleOf();
  const x = pxOf(f, p[0].freq);
  if (x < f.x0 - 0.5 || x > f.x1 + 0.5) { cl.hidden = true; return; }
  const top = lastFrames[0].y0 / sc, bottom = lastFrames[lastFrames.length - 1].y1 / sc;
  Object.assign(cl.style, { left: (x / sc) + 'px', top: top + 'px', height: (bottom - top) + 'px' });
  cl.hidden = false;
  $('plot-canvas').setAttribute('aria-valuetext', `${fmt(p[0].freq)} Hz`);
}
// Nyquist: the point nearest the pointer (x, y in plot pixels), with its frequency.
function readNearest(x, y) {
  const hit = plotCore().plot_nearest(x, y);
  const dot = $('cursor-dot');
  if (!hit) { dot.hidden = true; return; }
  cursor = { nyquist: true, freq: hit.probe.freq };
  $('readout').textContent = 'nearest point: ' + readoutLines([hit.probe]);
  const sc = scaleOf();
  Object.assign(dot.style, { left: (hit.x / sc) + 'px', top: (hit.y / sc) + 'px' });
  dot.hidden = false;
}
// After a redraw (zoom, pan, switches) the read-out follows the new frames.
function refreshReadout() {
  $('cursor-line').hidden = true;
  $('cursor-dot').hidden = true;
  if (!cursor || !lastFrames.length) return;
  if (lastFrames.some((fr) => fr.x_is === 'frequency')) readAt(cursor.freq);
  else cursor = null;
}

// pointer → axis value with the frames the core returned
function frameAt(ev) {
  const c = $('plot-canvas');
  const rect = c.getBoundingClientRect();
  if (!lastSpec || !rect.width || c.hidden) return null;
  const sx = lastSpec.width / rect.width;
  const x = (ev.clientX - rect.left) * sx, y = (ev.clientY - rect.top) * sx;
  const f = lastFrames.find((fr) => x >= fr.x0 && x <= fr.x1 && y >= fr.y0 - 2 && y <= fr.y1 + 2);
  if (!f) return null;
  const t = (x - f.x0) / (f.x1 - f.x0);
  const v = f.x_log ? 10 ** (Math.log10(f.x_min) + t * (Math.log10(f.x_max) - Math.log10(f.x_min))) : f.x_min + t * (f.x_max - f.x_min);
  return { f, v, x, y, scale: sx, rect };
}
function pxOf(f, v) {
  const t = f.x_log ? (Math.log10(v) - Math.log10(f.x_min)) / (Math.log10(f.x_max) - Math.log10(f.x_min)) : (v - f.x_min) / (f.x_max - f.x_min);
  return f.x0 + t * (f.x1 - f.x0);
}
// A range `k` times narrower (k < 1: wider) around `at`, in the axis's own scale;
// as wide as all data or wider: the full range (null).
function zoomRange(f, at, k) {
  const full = JSON.parse($('plot-wrap').dataset.fullrange || 'null');
  const [a, b] = f.x_log ? [Math.log10(f.x_min), Math.log10(f.x_max)] : [f.x_min, f.x_max];
  const c = f.x_log ? Math.log10(at) : at;
  const lo = c - (c - a) / k, hi = c + (b - c) / k;
  const r = f.x_log ? [10 ** lo, 10 ** hi] : [lo, hi];
  if (full && r[0] <= full[0] && r[1] >= full[1]) return null;
  return r;
}
// Move the range by `dt` of its width (the axis's own scale).
function panRange(f, dt) {
  return f.x_log
    ? [f.x_min * (f.x_max / f.x_min) ** dt, f.x_max * (f.x_max / f.x_min) ** dt]
    : [f.x_min + dt * (f.x_max - f.x_min), f.x_max + dt * (f.x_max - f.x_min)];
}
function setRange(r) {
  S.plot.xrange = r;
  drawPlot();
  autosave();
}
// Keys when the plot has the focus: ← → move the read-out line by line,
// + and − zoom around it, Shift+← → (or Page Up / Page Down) pan, 0 or Home the full range.
function plotKey(ev) {
  const f = lastFrames[0];
  if (!f || f.x_is === 'category') return;
  const mid = (f.x_log ? 10 ** ((Math.log10(f.x_min) + Math.log10(f.x_max)) / 2) : (f.x_min + f.x_max) / 2);
  const at = cursor && cursor.freq !== undefined && f.x_is === 'frequency' ? cursor.freq : mid;
  const k = ev.key;
  if ((k === 'ArrowLeft' || k === 'ArrowRight') && !ev.shiftKey) {
    if (f.x_is !== 'frequency') return;
    const dir = k === 'ArrowRight' ? 1 : -1;
    const next = cursor ? plotCore().plot_step(cursor.freq, dir) : at;
    if (next === undefined || next === null) { ev.preventDefault(); return; }
    const x = pxOf(f, next);
    if (x < f.x0 || x > f.x1) {
      cursor = { freq: next };
      setRange(panRange(f, (x - (x < f.x0 ? f.x0 : f.x1)) / (f.x1 - f.x0) + dir * 0.1));
    } else readAt(next);
  } else if (k === 'ArrowLeft' || k === 'ArrowRight' || k === 'PageUp' || k === 'PageDown') {
    setRange(panRange(f, (k === 'ArrowRight' || k === 'PageDown' ? 1 : -1) * 0.25));
  } else if (k === '+' || k === '=') {
    setRange(zoomRange(f, at, 2));
  } else if (k === '-' || k === '_') {
    setRange(zoomRange(f, at, 0.5));
  } else if (k === '0' || k === 'Home') {
    setRange(null);
  } else return;
  ev.preventDefault();
}
let drag = null;
function wirePlot() {
  const wrap = $('plot-wrap');
  wrap.addEventListener('mousemove', (ev) => {
    const hit = frameAt(ev);
    if (drag && hit) {
      const box = $('zoom-box');
      const x0 = Math.min(drag.clientX, ev.clientX) - wrap.getBoundingClientRect().left;
      box.hidden = drag.shift;
      Object.assign(box.style, { left: x0 + 'px', width: Math.abs(ev.clientX - drag.clientX) + 'px', top: (hit.f.y0 / hit.scale) + 'px', height: ((lastFrames[lastFrames.length - 1].y1 - hit.f.y0) / hit.scale) + 'px' });
    }
    if (!hit) return;
    try {
      if (hit.f.x_is === 'frequency') readAt(hit.v);
      else if (hit.f.x_is === 'real') readNearest(hit.x, hit.y);
    } catch (_) { /* the read-out is best effort while plots change */ }
  });
  wrap.addEventListener('mouseleave', () => { $('cursor-line').hidden = true; $('cursor-dot').hidden = true; });
  wrap.addEventListener('mousedown', (ev) => {
    const hit = frameAt(ev);
    if (!hit || hit.f.x_is === 'category') return;
    ev.preventDefault();
    $('plot-canvas').focus({ preventScroll: true });
    drag = { clientX: ev.clientX, v: hit.v, f: hit.f, shift: ev.shiftKey };
  });
  window.addEventListener('mouseup', (ev) => {
    if (!drag) return;
    const d = drag; drag = null;
    $('zoom-box').hidden = true;
    const hit = frameAt(ev);
    if (!hit || Math.abs(ev.clientX - d.clientX) < 4) return;
    const f = d.f;
    // pan: move the range by the drag distance; zoom: the dragged band
    setRange(d.shift ? panRange(f, (d.clientX - ev.clientX) * hit.scale / (f.x1 - f.x0)) : [Math.min(d.v, hit.v), Math.max(d.v, hit.v)]);
  });
  wrap.addEventListener('dblclick', () => setRange(null));
  $('plot-canvas').addEventListener('keydown', plotKey);
}
// ---------- exports ----------
// Why an export must not be written now (stale results), or null.
function staleRefusal(kind) {
  if (!(S.stale && S.results)) return null;
  const ids = resultIds();
  const hit = kind === 'svg' || kind === 'png' ? plotShowsResults() : S.plot.sel.some((x) => ids.has(x.set));
  return hit ? `Export refused: the results are stale (${S.stale.reason}). Run the recipe again to export them.` : null;
}
function exportNote(...kids) {
  const box = $('export-info');
  clear(box);
  box.append(...kids);
}
async function exportAs(kind) {
  try {
    const refused = staleRefusal(kind);
    if (refused) {
      exportNote(el('div', { class: 'error-box', role: 'alert', 'data-refused': kind }, refused));
      status('export refused: the results are stale', 'fail');
      return;
    }
    exportNote();
    if (kind === 'svg' || kind === 'png') {
      if (!lastSpec || $('plot-canvas').hidden) throw new Error('draw a plot first');
      // the core's SVG of exactly what the canvas shows: same data, view and size
      const svg = plotCore().plot_export_svg(viewOf(lastSpec), lastSpec.width, lastSpec.height);
      if (kind === 'svg') return download(svg, 'mortise-plot.svg', 'image/svg+xml');
      const img = new Image();
      img.src = URL.createObjectURL(new Blob([svg], { type: 'image/svg+xml' }));
      await img.decode();
      const c = document.createElement('canvas');
      c.width = lastSpec.width * 2; c.height = lastSpec.height * 2;
      const g = c.getContext('2d');
      g.scale(2, 2);
      g.drawImage(img, 0, 0, lastSpec.width, lastSpec.height);
      URL.revokeObjectURL(img.src);
      const blob = await new Promise((res) => c.toBlob(res, 'image/png'));
      return download(blob, 'mortise-plot.png', 'image/png');
    }
    const ids = [...new Set(S.plot.sel.map((s) => s.set))];
    if (!ids.length) throw new Error('choose at least one curve; its data set is exported');
    const ex = await Bridge.call('export_file', [JSON.stringify(ids), kind], 'writing ' + kind);
    const name = kind === 'uff' ? 'mortise-results.uff' : 'mortise-results.csv';
    download(ex.bytes, name, kind === 'uff' ? 'text/plain' : 'text/csv');
    nodeNumbersNote(JSON.parse(ex.node_numbers || '[]'), name);
  } catch (e) {
    status('export failed: ' + errorText(e), 'fail');
  }
}
// UFF needs integer nodes: the core numbers text labels and says how.
function nodeNumbersNote(table, file) {
  if (!table.length) return;
  const tableName = file.replace(/\.[^.]*$/, '') + '.node-numbers.json';
  exportNote(el('div', { class: 'node-numbers' },
    el('div', {}, `${file} numbers the text node labels (UFF nodes are integers): `,
      el('button', { class: 'btn small', id: 'node-numbers-btn', onclick: () => download(JSON.stringify(table, null, 2) + '\n', tableName, 'application/json') }, `download the table (${tableName})`)),
    el('details', {}, el('summary', {}, `${table.length} label(s) numbered`),
      el('table', {}, el('tr', {}, el('th', {}, 'component'), el('th', {}, 'node label'), el('th', {}, 'UFF node')),
        ...table.map((t) => el('tr', {}, el('td', {}, t.component), el('td', {}, t.node), el('td', {}, t.number)))))));
}
// ---------- listen ----------
// The core makes the sounds (one gain for all chosen curves); the page only
// plays them, starting quietly, and switches A/B at the same instant.
let listenUrls = [];
async function listen() {
  const box = $('listen-box');
  clear(box);
  box.hidden = false;
  for (const u of listenUrls) URL.revokeObjectURL(u);
  listenUrls = [];
  const refused = staleRefusal('wav');
  if (refused) { box.append(el('div', { class: 'error-box', role: 'alert' }, refused.replace('Export', 'Listening'))); return; }
  const curves = S.plot.sel.map((x) => [x.set, x.out]);
  if (!curves.length) { box.append(el('div', { class: 'error-box', role: 'alert' }, 'choose one or more sound-pressure spectra (e.g. the bedroom and its variants) to hear them')); return; }
  try {
    const r = await Bridge.call('listen_sounds', [JSON.stringify(curves), JSON.stringify({ seconds: 10 })], 'making the sound');
    const info = JSON.parse(r.info);
    const names = [...$('curve-select').selectedOptions].map((o) => o.textContent);
    box.append(el('p', { class: 'caution', role: 'note' }, info.caution));
    const s0 = info.sounds[0];
    box.dataset.fullScalePa = String(s0.full_scale_pa);
    box.append(el('p', { class: 'help' }, `Sample value 1.0 = ${s0.full_scale_pa.toExponential(3)} Pa for every sound here: to hear the predicted level, set the playback gain so that a full-scale sine plays at ${s0.full_scale_spl_db.toFixed(1)} dB SPL.`));
    const players = [];
    [...r.wavs].forEach((bytes, i) => {
      const url = URL.createObjectURL(new Blob([bytes], { type: 'audio/wav' }));
      listenUrls.push(url);
      const a = el('audio', { controls: true, src: url, 'aria-label': `sound of ${names[i] || 'curve ' + (i + 1)}` });
      a.volume = 0.2; // start quiet
      players.push(a);
      box.append(el('div', { class: 'listen-row', 'data-sound': i }, el('span', {}, names[i] || `curve ${i + 1}`), a,
        el('a', { href: url, download: `mortise-sound-${i + 1}.wav`, class: 'btn small' }, 'WAV')));
    });
    if (players.length > 1) {
      let on = 0;
      box.append(el('button', { class: 'btn', id: 'ab-btn', type: 'button', onclick: () => {
        const t = players[on].currentTime, playing = !players[on].paused;
        players[on].pause();
        on = (on + 1) % players.length;
        players[on].currentTime = t;
        if (playing) players[on].play();
        $('ab-btn').textContent = `switch (now: ${names[on] || on + 1})`;
      } }, `switch (now: ${names[0] || 1})`));
    }
  } catch (e) {
    box.append(errorBox(e));
  }
}
