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
    const r = await Bridge.callJson('run_recipe', [text], 'running the recipe');
    timings.last_run_ms = performance.now() - t0;
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
    status(`done in ${(timings.last_run_ms / 1000).toFixed(2)} s: ${r.results.length} result(s)` + (S.stale ? ' (already stale: the recipe changed meanwhile)' : ''));
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
  if (S.plot.kind === 'difference') {
    const c = S.plot.compare;
    if (!c) throw new Error('choose two runs in the run history and press Compare: this view draws the level difference between them');
    return { ...base, kind: 'difference', series: c.pairs.map((p) => p.b), baseline: c.pairs.map((p) => p.a) };
  }
  return { ...base, kind: S.plot.kind, series: S.plot.sel };
}
let drawing = null;
async function drawPlot() {
  const wrap = $('plot-wrap');
  renderStale();
  if (!S.plot.sel.length && S.plot.kind !== 'condition' && S.plot.kind !== 'difference') { $('plot-img').removeAttribute('src'); lastFrames = []; return; }
  let spec;
  try { spec = plotSpec(wrap.clientWidth || 960); } catch (e) { $('plot-img').removeAttribute('src'); lastFrames = []; $('readout').textContent = 'cannot draw: ' + errorText(e); return; }
  if (lastSpec && lastSpec.kind !== spec.kind) $('readout').textContent = '';
  // the core says which switches this view reads; the others are disabled, not silently ignored
  Bridge.callJson('plot_controls', [JSON.stringify({ kind: spec.kind })]).then((c) => {
    for (const [id, on] of [['opt-db', c.db], ['opt-log', c.x_log]]) {
      $(id).disabled = !on;
      $(id).closest('label').title = on ? '' : 'this view does not use it';
    }
  }, () => {});
  const t0 = performance.now();
  const job = Bridge.callJson('plot_svg', [JSON.stringify(spec)], 'drawing');
  drawing = job;
  try {
    const r = await job;
    if (drawing !== job) return;
    lastSvg = r.svg; lastFrames = r.frames; lastSpec = spec;
    wrap.dataset.spec = JSON.stringify(spec); // what is drawn, for tests and the curious
    const img = $('plot-img');
    const old = img.src;
    img.src = URL.createObjectURL(new Blob([r.svg], { type: 'image/svg+xml' }));
    if (old && old.startsWith('blob:')) setTimeout(() => URL.revokeObjectURL(old), 1000);
    await img.decode().catch(() => {});
    timings.last_plot_ms = performance.now() - t0;
    if (r.frames[0]) $('plot-wrap').dataset.xrange = JSON.stringify([r.frames[0].x_min, r.frames[0].x_max]);
    document.body.dataset.plotted = String(Date.now());
  } catch (e) {
    lastFrames = [];
    $('readout').textContent = 'cannot draw: ' + errorText(e);
  }
}

// pointer → axis value with the frames the core returned
function frameAt(ev) {
  const img = $('plot-img');
  const rect = img.getBoundingClientRect();
  if (!lastSpec || !rect.width) return null;
  const sx = lastSpec.width / rect.width;
  const x = (ev.clientX - rect.left) * sx, y = (ev.clientY - rect.top) * sx;
  const f = lastFrames.find((fr) => x >= fr.x0 && x <= fr.x1 && y >= fr.y0 - 2 && y <= fr.y1 + 2);
  if (!f) return null;
  const t = (x - f.x0) / (f.x1 - f.x0);
  const v = f.x_log ? 10 ** (Math.log10(f.x_min) + t * (Math.log10(f.x_max) - Math.log10(f.x_min))) : f.x_min + t * (f.x_max - f.x_min);
  return { f, v, x, scale: sx, rect };
}
function pxOf(f, v) {
  const t = f.x_log ? (Math.log10(v) - Math.log10(f.x_min)) / (Math.log10(f.x_max) - Math.log10(f.x_min)) : (v - f.x_min) / (f.x_max - f.x_min);
  return f.x0 + t * (f.x1 - f.x0);
}
let probing = false, drag = null;
function wirePlot() {
  const wrap = $('plot-wrap');
  wrap.addEventListener('mousemove', async (ev) => {
    const hit = frameAt(ev);
    if (drag && hit) {
      const box = $('zoom-box');
      const x0 = Math.min(drag.clientX, ev.clientX) - wrap.getBoundingClientRect().left;
      box.hidden = drag.shift;
      Object.assign(box.style, { left: x0 + 'px', width: Math.abs(ev.clientX - drag.clientX) + 'px', top: (hit.f.y0 / hit.scale) + 'px', height: ((lastFrames[lastFrames.length - 1].y1 - hit.f.y0) / hit.scale) + 'px' });
    }
    if (!hit || hit.f.x_is !== 'frequency' || probing) return;
    probing = true;
    try {
      const p = await Bridge.callJson('probe', [JSON.stringify(lastSpec), hit.v], 'reading values');
      const lines = p.map((q) => `${q.label}\n   f = ${fmt(q.freq)} Hz   |H| = ${fmt(q.magnitude)} ${q.unit}   L = ${fmt(q.level_db, 4)} ${q.db_label}   φ = ${fmt(q.phase_deg, 4)}°   re ${fmt(q.re)}  im ${fmt(q.im)}`);
      $('readout').textContent = lines.join('\n');
      if (p.length) {
        const cl = $('cursor-line');
        const top = lastFrames[0].y0 / hit.scale, bottom = lastFrames[lastFrames.length - 1].y1 / hit.scale;
        Object.assign(cl.style, { left: (pxOf(hit.f, p[0].freq) / hit.scale) + 'px', top: top + 'px', height: (bottom - top) + 'px' });
        cl.hidden = false;
      }
    } catch (_) { /* readout is best effort while plots change */ } finally { probing = false; }
  });
  wrap.addEventListener('mouseleave', () => { $('cursor-line').hidden = true; });
  wrap.addEventListener('mousedown', (ev) => {
    const hit = frameAt(ev);
    if (!hit || hit.f.x_is === 'category') return;
    ev.preventDefault();
    drag = { clientX: ev.clientX, v: hit.v, f: hit.f, shift: ev.shiftKey };
  });
  window.addEventListener('mouseup', (ev) => {
    if (!drag) return;
    const d = drag; drag = null;
    $('zoom-box').hidden = true;
    const hit = frameAt(ev);
    if (!hit || Math.abs(ev.clientX - d.clientX) < 4) return;
    const f = d.f;
    if (d.shift) {
      // pan: move the range by the drag distance, in the axis's own scale
      const dt = (d.clientX - ev.clientX) * hit.scale / (f.x1 - f.x0);
      S.plot.xrange = f.x_log
        ? [f.x_min * (f.x_max / f.x_min) ** dt, f.x_max * (f.x_max / f.x_min) ** dt]
        : [f.x_min + dt * (f.x_max - f.x_min), f.x_max + dt * (f.x_max - f.x_min)];
    } else {
      S.plot.xrange = [Math.min(d.v, hit.v), Math.max(d.v, hit.v)];
    }
    drawPlot();
    autosave();
  });
  wrap.addEventListener('dblclick', () => { S.plot.xrange = null; drawPlot(); autosave(); });
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
      if (!lastSvg) throw new Error('draw a plot first');
      if (kind === 'svg') return download(lastSvg, 'mortise-plot.svg', 'image/svg+xml');
      const img = new Image();
      img.src = URL.createObjectURL(new Blob([lastSvg], { type: 'image/svg+xml' }));
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
