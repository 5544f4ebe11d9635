// identify.js: the modal-fit view. For each identify-modes step of the last
// run it shows the core's stabilization chart (stabilization_chart_marks:
// the SVG, its summary, the box of every pole's mark and the groups of
// stable poles), the fit's quality from the step's report (modes, per-FRF
// correlation and error, auto-MAC), and a way to plot the measured set and
// the regenerate step's result together. A click on a pole, or a button in
// the list of stable poles, asks the core for the step's new `pick`
// (identify_pick_toggle) and writes it into the recipe text through
// editRecipe (recipe.js: the one recipe; the core reads the text again).
// Nothing here computes: frequencies, classes, boxes and choices all come
// from the core; the page maps a click to the box the core gave.
// The view follows the results: it redraws when the report area is redrawn
// (results.js renderResults) and when the results are marked stale.
const FV = { results: null, width: 0, jobs: 0, count: 0, charts: {}, timer: null };

const fitSteps = () => (S.results?.report?.steps || []).filter((st) => st.op === 'identify-modes' && st.identification);
const recipeStep = (json, id) => (Array.isArray(json?.steps) ? json.steps : []).find((s) => s && s.id === id);
const pct = (v, d) => fmt(100 * v, d ?? 3) + ' %';

function scheduleFits() {
  clearTimeout(FV.timer);
  FV.timer = setTimeout(renderFits, 30);
}

// Redraw the view when the results changed; else update what the recipe says.
async function renderFits() {
  const panel = $('fit-panel');
  const steps = fitSteps();
  panel.hidden = !steps.length;
  if (!steps.length) { clear($('fit-views')); FV.results = null; return; }
  const width = Math.round(Math.max(360, Math.min(1100, ($('fit-views').clientWidth || 900) - 8)));
  if (FV.results !== S.results || Math.abs(FV.width - width) > 40) {
    FV.results = S.results;
    FV.width = width;
    const job = ++FV.jobs;
    const views = [];
    for (const st of steps) views.push(await fitView(st, width));
    if (job !== FV.jobs) return;
    clear($('fit-views'));
    $('fit-views').append(...views);
    panel.dataset.rendered = String(++FV.count);
  }
  renderFitRecipe();
  renderFitStale();
}

function renderFitStale() {
  const stale = !!(S.stale && S.results);
  $('fit-panel').dataset.stale = stale ? 'yes' : 'no';
  const b = $('fit-stale');
  b.hidden = !stale;
  b.textContent = stale ? `These charts and tables are from the last run, not from the recipe now on screen (${S.stale.reason}). Run again to fit with the recipe as it stands.` : '';
}

// What the recipe text says now about each step's choice of poles.
function renderFitRecipe() {
  for (const st of fitSteps()) {
    const box = document.querySelector(`.fit-view[data-step="${CSS.escape(st.id)}"]`);
    if (!box) continue;
    const rs = recipeStep(R.json, st.id);
    const auto = !rs || rs.pick === undefined || rs.pick === 'auto';
    const cb = box.querySelector('.fit-auto');
    cb.checked = auto;
    cb.disabled = !rs || !panelLive();
    const now = box.querySelector('.fit-pick-now');
    now.textContent = !rs ? `The recipe on screen has no step “${st.id}” any more.`
      : auto ? 'The recipe lets the core choose the modes (no “pick”).'
        : Array.isArray(rs.pick) ? `“pick” in the recipe: ${rs.pick.map((c) => `${c?.freq} ± ${c?.tol} Hz`).join(', ')}` +
          (st.identification.pick === 'list' && JSON.stringify(rs.pick) === JSON.stringify(FV.charts[st.id]?.ran) ? '.' : ' (run again to fit these).')
          : `“pick” in the recipe: ${JSON.stringify(rs.pick)}`;
  }
}

async function fitView(st, width) {
  const id = st.identification;
  const box = el('div', { class: 'fit-view', 'data-step': st.id });
  box.append(el('h3', {}, `Step “${st.id}”: ${id.modes.length} mode(s) of ${id.set}, ${fmt(id.band[0])}–${fmt(id.band[1])} Hz, orders 1–${id.max_order}`));
  const rs = recipeStep(R.json, st.id);
  FV.charts[st.id] = { ran: id.pick === 'list' && rs && Array.isArray(rs.pick) ? rs.pick : null };
  // ---- the chart
  let d = null, err = null;
  try {
    d = await Bridge.callJson('stabilization_chart_marks', [JSON.stringify(S.results.report), st.id, width, Math.round(Math.max(300, Math.min(520, width * 0.5)))], 'drawing the stabilization chart');
  } catch (e) { err = e; }
  const left = el('div', { class: 'fit-left' });
  const right = el('div', { class: 'fit-right' });
  box.append(el('div', { class: 'fit-cols' }, left, right));
  if (err || !d) {
    left.append(errorBox(err || new Error('no chart')));
  } else {
    left.append(chartBox(st, d));
  }
  // ---- how the poles are chosen
  const auto = el('input', { type: 'checkbox', class: 'fit-auto', id: `fit-auto-${st.id}`, onchange: (e) => setAuto(st, e.target.checked) });
  left.append(el('div', { class: 'row fit-choice' }, el('label', { for: `fit-auto-${st.id}` }, auto, ' choose the modes automatically (no “pick” in the recipe)')),
    el('p', { class: 'fit-pick-now help', 'aria-live': 'polite' }));
  const reasons = [...id.chosen.map((c) => `${fmt(c.freq, 5)} Hz chosen: ${c.reason}`), ...(id.refused || []).map((r) => `${fmt(r.freq, 5)} Hz not chosen: ${r.reason}`)];
  left.append(el('details', { class: 'fit-reasons' }, el('summary', {}, `why these modes (${id.pick === 'auto' ? 'chosen automatically' : 'listed in “pick”'})`),
    el('ul', {}, ...reasons.map((t) => el('li', {}, t)))));
  if (d) left.append(groupsTable(st, d.groups));
  // ---- quality beside the chart
  right.append(modesTable(id), fitsTable(id), macTable(id), overlayBox(st));
  return box;
}

// The chart: the core's SVG as markup (it escapes every text), its summary
// as the accessible name; a click is matched to the box of a mark.
function chartBox(st, d) {
  const doc = new DOMParser().parseFromString(d.svg, 'image/svg+xml');
  const pic = el('div', { class: 'fit-pic', role: 'img', 'aria-label': d.summary });
  if (doc.documentElement.nodeName === 'svg' && !doc.querySelector('parsererror')) pic.append(document.importNode(doc.documentElement, true));
  const tip = el('div', { class: 'fit-tip', hidden: true });
  const wrap = el('div', { class: 'fit-chart', 'data-step': st.id }, pic, tip);
  wrap.style.width = `min(100%, ${d.width}px)`;
  wrap.dataset.poles = JSON.stringify(d.poles); // the core's boxes, for tests and the curious
  const hit = (ev) => {
    const r = pic.getBoundingClientRect();
    if (!r.width) return null;
    const k = d.width / r.width;
    const x = (ev.clientX - r.left) * k, y = (ev.clientY - r.top) * k;
    let best = null, bd = Infinity;
    for (const m of d.poles) {
      if (x < m.x || x > m.x + m.w || y < m.y || y > m.y + m.h) continue;
      const dd = (x - m.x - m.w / 2) ** 2 + (y - m.y - m.h / 2) ** 2;
      if (dd < bd) { bd = dd; best = m; }
    }
    return best && { m: best, k };
  };
  pic.addEventListener('mousemove', (ev) => {
    const h = hit(ev);
    pic.style.cursor = h ? 'pointer' : '';
    tip.hidden = !h;
    if (!h) return;
    tip.textContent = poleText(h.m) + ' · click to choose or drop it';
    Object.assign(tip.style, { left: `${(h.m.x + h.m.w) / h.k + 6}px`, top: `${h.m.y / h.k}px` });
  });
  pic.addEventListener('mouseleave', () => { tip.hidden = true; });
  pic.addEventListener('click', (ev) => { const h = hit(ev); if (h) togglePole(st, h.m.order, h.m.index, poleText(h.m)); });
  return el('figure', { class: 'fit-figure' }, wrap,
    el('figcaption', { class: 'help' }, 'Click a pole to add its mode to “pick” or drop it; the list below does the same from the keyboard.'));
}
const poleText = (m) => `${fmt(m.freq, 5)} Hz, ζ = ${fmt(100 * m.zeta, 3)} %, order ${m.order}, ${m.words}${m.picked ? ', a mode was taken from it' : ''}`;

function groupsTable(st, groups) {
  const orders = (o) => (o.length > 1 ? `${o[0]}–${o[o.length - 1]} (${o.length})` : `${o[0]} (1)`);
  const rows = groups.map((g) => el('tr', { 'data-freq': g.freq },
    el('td', {}, fmt(g.freq, 5)), el('td', {}, fmt(100 * g.zeta, 3)), el('td', {}, orders(g.orders)),
    el('td', {}, g.picked ? 'chosen' : '–'),
    el('td', {}, el('button', { type: 'button', class: 'btn small fit-toggle', 'data-freq': g.freq,
      'aria-label': `${g.picked ? 'drop' : 'choose'} the mode at ${fmt(g.freq, 5)} Hz`,
      onclick: () => togglePole(st, g.order, g.index, `${fmt(g.freq, 5)} Hz`) }, g.picked ? 'drop' : 'choose'))));
  return el('div', { class: 'table-scroll fit-groups' },
    el('table', {}, el('caption', {}, `Stable poles of step “${st.id}” (stable in every criterion, grouped by frequency): choose or drop a mode`),
      el('tr', {}, el('th', { scope: 'col' }, 'frequency, Hz'), el('th', { scope: 'col' }, 'damping, %'), el('th', { scope: 'col' }, 'stable at orders'),
        el('th', { scope: 'col' }, 'last run'), el('th', { scope: 'col' }, 'pick')),
      ...rows));
}

function modesTable(id) {
  return el('div', { class: 'table-scroll' }, el('table', { class: 'fit-modes' },
    el('caption', {}, 'Identified modes'),
    el('tr', {}, ...['mode', 'frequency, Hz', 'damping, %', 'MPC', 'driving points differ by'].map((h) => el('th', { scope: 'col' }, h))),
    ...id.modes.map((m, k) => el('tr', {}, el('td', {}, k + 1), el('td', {}, fmt(m.freq, 6)), el('td', {}, fmt(100 * m.zeta, 4)),
      el('td', {}, fmt(m.mpc, 4)), el('td', {}, m.driving_point_mismatch === undefined ? '–' : pct(m.driving_point_mismatch, 2))))));
}

function fitsTable(id) {
  return el('div', { class: 'table-scroll' }, el('table', { class: 'fit-frfs' },
    el('caption', {}, 'Synthesized against measured, per FRF over the band (poor fits flagged)'),
    el('tr', {}, ...['FRF', 'correlation', 'relative error', 'fit'].map((h) => el('th', { scope: 'col' }, h))),
    ...id.fits.map((f) => el('tr', { class: f.poor ? 'poor' : null, 'data-poor': f.poor ? 'yes' : 'no' },
      el('td', {}, `${f.output} / ${f.input}`), el('td', {}, fmt(f.correlation, 5)), el('td', {}, pct(f.error, 3)),
      el('td', {}, f.poor ? '⚠ poor' : 'good')))));
}

function macTable(id) {
  const n = id.auto_mac.length;
  const heads = id.modes.map((m) => `${fmt(m.freq, 4)} Hz`);
  return el('div', { class: 'table-scroll' }, el('table', { class: 'fit-mac' },
    el('caption', {}, 'Auto-MAC of the mode shapes'),
    el('tr', {}, el('td', {}), ...heads.map((h) => el('th', { scope: 'col' }, h))),
    ...id.auto_mac.map((row, i) => el('tr', {}, el('th', { scope: 'row' }, heads[i] || String(i + 1)),
      ...row.slice(0, n).map((v, j) => {
        const c = el('td', { class: i === j ? 'diag' : null }, Number.isFinite(v) ? v.toFixed(3) : '–');
        if (i !== j) c.style.setProperty('--mac', String(Math.max(0, Math.min(1, v))));
        return c;
      })))));
}

// ---------- writing the choice into the recipe ----------
function editStep(stepId, mutate, reason) {
  let found = false;
  const ok = editRecipe((r) => {
    const s = recipeStep(r, stepId);
    if (!s || s.op !== 'identify-modes') return false;
    found = true;
    return mutate(s);
  });
  if (!ok) {
    status(found ? 'the recipe was not changed' : !panelLive() ? 'the recipe text is being edited or is not JSON: the pick waits (see under the recipe text)'
      : `the recipe on screen has no identify-modes step “${stepId}”`, 'fail');
    return false;
  }
  markStale(reason);
  renderFitRecipe();
  return true;
}
async function togglePole(st, order, index, what) {
  const rs = recipeStep(R.json, st.id);
  if (!rs || !panelLive()) { editStep(st.id, () => false, ''); return; }
  try {
    const r = await Bridge.callJson('identify_pick_toggle', [JSON.stringify(S.results.report), st.id, JSON.stringify(rs.pick ?? null), order, index], 'choosing a pole');
    if (editStep(st.id, (s) => { s.pick = r.pick; }, `the modal fit view changed “pick” of step ${st.id} after this run`)) {
      status(`${r.added ? 'added' : 'dropped'} the mode at ${what} in “pick” of step ${st.id}; run again to fit it`);
    }
  } catch (e) {
    status(`the pick of step ${st.id} was not changed: ${errorText(e)}`, 'fail');
  }
}
async function setAuto(st, on) {
  try {
    const list = on ? null : await Bridge.callJson('identify_pick_written', [JSON.stringify(S.results.report), st.id], 'writing the modes out');
    if (editStep(st.id, (s) => { if (on) delete s.pick; else s.pick = list; },
      `the modal fit view ${on ? 'removed' : 'wrote'} “pick” of step ${st.id} after this run`)) {
      status(on ? `step ${st.id}: the core chooses the modes (“pick” removed)` : `step ${st.id}: the modes of the last run are listed in “pick”; click poles to change them`);
    }
  } catch (e) {
    status(`the pick of step ${st.id} was not changed: ${errorText(e)}`, 'fail');
    renderFitRecipe();
  }
}

// ---------- measured and synthesized on the plot ----------
function overlayBox(st) {
  const box = el('div', { class: 'fit-overlay' });
  const id = st.identification;
  const steps = Array.isArray(R.json?.steps) ? R.json.steps : [];
  const regen = steps.find((s) => s && s.op === 'regenerate' && s.from === st.id);
  const from = recipeStep(R.json, st.id)?.from;
  const outputs = Array.isArray(R.json?.outputs) ? R.json.outputs : [];
  const byName = (n) => (S.results?.results || []).find((r) => r.name === n);
  if (!regen) {
    const missing = id.present.some((p) => !p) && id.model;
    box.append(el('p', { class: 'help' }, `The recipe has no regenerate step reading “${st.id}”: add one to synthesize the FRFs from the model${missing ? ' (filling the entries that were not measured)' : ''}, then run again.`),
      el('button', { type: 'button', class: 'btn fit-add-regen', onclick: () => {
        editRecipe((r) => {
          const names = new Set([...Object.keys(r.components || {}), ...(r.steps || []).map((s) => s && s.id)]);
          let name = `${st.id}-synth`;
          for (let k = 2; names.has(name); k++) name = `${st.id}-synth${k}`;
          r.steps = [...(r.steps || []), { id: name, op: 'regenerate', from: st.id, ...(missing ? { fill_missing: true } : {}) }];
          r.outputs = [...new Set([...(r.outputs || []), ...(from ? [from] : []), name])];
        });
        markStale(`a regenerate step for ${st.id} was added after this run`);
        status(`added a regenerate step reading ${st.id}; run again to plot it`);
      } }, 'Add a regenerate step'));
    return box;
  }
  const want = [from, regen.id].filter((n) => n && !outputs.includes(n));
  const m = byName(from), g = byName(regen.id);
  if (want.length || !m || !g) {
    box.append(el('p', { class: 'help' }, `To plot them together, the run's outputs must hold the measured set “${from}” and “${regen.id}”.`),
      el('button', { type: 'button', class: 'btn fit-add-outputs', disabled: !want.length || null, onclick: () => {
        editRecipe((r) => { r.outputs = [...new Set([...(r.outputs || []), ...want])]; });
        markStale(`outputs for the overlay of ${st.id} were added after this run`);
        status('outputs added; run again to plot them');
      } }, want.length ? `Add ${want.join(' and ')} to the outputs` : 'run again to plot them'));
    return box;
  }
  const filled = (S.results.report.steps.find((s) => s.id === regen.id)?.filled) || [];
  box.append(el('button', { type: 'button', class: 'btn primary fit-overlay-btn', onclick: () => overlay(st, m, g, filled) }, 'Plot measured and synthesized'),
    filled.length ? el('p', { class: 'help fit-filled' }, `Not measured, synthesized from the mode shapes: ${filled.map((f) => f.label).join(', ')}.`) : null);
  return box;
}
function overlay(st, m, g, filled) {
  const id = st.identification;
  const ni = id.inputs.length;
  const isFilled = (o, i) => filled.some((f) => f.output === o && f.input === i);
  const sel = [];
  for (let o = 0; o < Math.min(m.outputs.length, g.outputs.length); o++) {
    for (let i = 0; i < Math.min(m.inputs.length, g.inputs.length); i++) {
      const frf = `${g.outputs[o]} / ${g.inputs[i]}`;
      if (id.present[o * ni + i]) sel.push({ set: m.id, out: o, in: i, label: `${m.name}: ${frf} (measured)` });
      if (isFilled(o, i)) sel.push({ set: g.id, out: o, in: i, label: `${g.name}: ${frf} (SYNTHESIZED, not measured: filled from the mode shapes)` });
      else if (id.present[o * ni + i]) sel.push({ set: g.id, out: o, in: i, label: `${g.name}: ${frf} (synthesized)` });
    }
  }
  S.plot.sel = sel;
  if (!['bode', 'magnitude', 're-im', 'nyquist'].includes(S.plot.kind)) S.plot.kind = 'bode';
  S.plot.xrange = null;
  renderResults();
  drawPlot();
  autosave();
  status(`plotted ${sel.length} curves: measured and synthesized of step ${st.id}`);
  $('plot-wrap').scrollIntoView({ block: 'start' });
}

// ---------- following the results ----------
new MutationObserver(scheduleFits).observe($('report'), { childList: true });
new MutationObserver(() => { renderFitStale(); renderFitRecipe(); }).observe($('results-panel'), { attributes: true, attributeFilter: ['data-stale'] });
$('recipe-text').addEventListener('input', () => setTimeout(renderFitRecipe, 0));
window.addEventListener('resize', scheduleFits);
