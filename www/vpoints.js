// vpoints.js: the virtual-points panel. For every to-virtual-points step of
// the recipe on screen it shows the core's drawing of the step's geometry
// (vpt_geometry_svg) and, after a run, each point's consistency over
// frequency (vpt_consistency_svg) with the report's verdict. A form adds a
// point to a step (new or existing) from the component's DOF lists as the
// core read them (the file's card summary), and "Propose groups" asks the
// core which channels and impacts lie nearest each origin within a radius
// (vpt_propose_groups). The form edits the one recipe in place (editRecipe):
// there is no second copy of the recipe. Nothing here computes anything.
const VP = { key: null, timer: null, job: 0, proposal: null, wantStep: null };

function vpSteps() {
  const r = R.json || R.lastJson;
  return (r?.steps || []).filter((s) => s && s.op === 'to-virtual-points');
}
// The file a recipe component reads, as loaded in the workspace.
function vpFileOf(comp) {
  const c = (R.json || R.lastJson)?.components?.[comp];
  if (!c || typeof c.file !== 'string') return null;
  const base = c.file.replace(/^.*[\\/]/, '');
  return S.files.find((f) => f.name === base && f.summary) || null;
}
// Loaded files a step can take as its geometry: our layout, or a UFF with nodes.
function vpGeometryFiles() {
  return S.files.filter((f) => f.summary && (f.summary.geometry || f.summary.uff?.geometry)).map((f) => f.name);
}
// The report of step `id` in the last run, when there is one.
function vpReportOf(id) {
  return (S.results?.report?.steps || []).find((s) => s.id === id && Array.isArray(s.virtual_points)) || null;
}
function scheduleVpoints() {
  clearTimeout(VP.timer);
  VP.timer = setTimeout(renderVpoints, 200);
}
// An SVG the core drew, placed inline: parsed as SVG (never as HTML), any
// script or foreign content removed, named for assistive technology and
// described by the core's summary.
function inlineSvg(drawing, name, descId) {
  const doc = new DOMParser().parseFromString(drawing.svg, 'image/svg+xml');
  const svg = doc.documentElement;
  if (!svg || svg.nodeName !== 'svg' || doc.getElementsByTagName('parsererror').length) return el('div', { class: 'error-box' }, 'the drawing could not be read');
  for (const bad of [...svg.querySelectorAll('script, foreignObject')]) bad.remove();
  const node = document.importNode(svg, true);
  node.setAttribute('role', 'img');
  node.setAttribute('aria-label', name);
  node.setAttribute('aria-describedby', descId);
  node.setAttribute('focusable', 'false');
  node.classList.add('vp-svg');
  return node;
}
function vpDescribed(drawing, name, id) {
  return el('figure', { class: 'vp-figure' },
    inlineSvg(drawing, name, id),
    el('figcaption', { id, class: 'help' }, drawing.summary));
}
function vpVerdict(p) {
  const n = (v) => (v === null || v === undefined ? 'n/a' : fmt(v, 4));
  const hz = (v) => (v === null || v === undefined ? '' : ` at ${fmt(v)} Hz`);
  return el('p', { class: 'vp-verdict ' + (p.status === 'pass' ? 'good' : 'bad'), 'data-point': p.name, 'data-status': p.status },
    el('strong', {}, `${p.name}: ${p.status === 'pass' ? 'pass' : p.status === 'flag' ? 'flag' : p.status}`),
    ` — sensor consistency worst ${n(p.worst_sensor_consistency)}${hz(p.worst_sensor_consistency_hz)}, ` +
    `impact consistency worst ${n(p.worst_impact_consistency)}${hz(p.worst_impact_consistency_hz)}; threshold ${n(p.threshold)}` +
    ` (${p.sensors.length} channels, ${p.impacts.length} impacts)`);
}
async function renderVpoints() {
  const box = $('vp-steps');
  if (!box || !VOCAB) return;
  renderVpForm();
  const steps = vpSteps();
  const err = errorNow();
  const key = JSON.stringify([R.text, S.filesEpoch, S.results ? S.resultsJson?.length : 0, !!S.stale, steps.map((s) => s.id)]);
  if (key === VP.key) return;
  VP.key = key;
  const job = ++VP.job;
  $('vp-panel').dataset.state = 'drawing';
  const blocks = [];
  for (const st of steps) {
    const b = el('article', { class: 'vp-step', 'data-step': st.id },
      el('h3', {}, `step ${st.id}: ${(st.points || []).length} virtual point(s) of ${st.from}`));
    if (err || !R.json) {
      b.append(el('p', { class: 'muted' }, 'The recipe as it stands is not read by the core: the geometry is drawn once it is.'));
    } else if (!(st.points || []).length) {
      b.append(el('p', { class: 'muted' }, 'No point yet: add one with the form below.'));
    } else {
      try {
        const d = await Bridge.callJson('vpt_geometry_svg', [R.text, st.id], 'drawing the virtual points');
        b.append(vpDescribed(d, `geometry of step ${st.id}: origins, sensor arrows and impact arrows in three views`, `vp-geo-desc-${st.id}`));
      } catch (e) { b.append(errorBox(e)); }
    }
    const rep = vpReportOf(st.id);
    if (rep) {
      if (S.stale) b.append(el('p', { class: 'warn' }, '⚠ consistency from an earlier run: the recipe or the files changed since (' + S.stale.reason + ')'));
      for (const p of rep.virtual_points) b.append(vpVerdict(p));
      try {
        const w = Math.max(480, Math.min(900, (box.clientWidth || 800) - 20));
        const ds = await Bridge.callJson('vpt_consistency_svg', [st.id, w, 300], 'drawing the consistency');
        ds.forEach((d, k) => b.append(vpDescribed(d, `consistency of virtual point ${rep.virtual_points[k]?.name} over frequency`, `vp-cons-desc-${st.id}-${k}`)));
      } catch (e) { b.append(errorBox(e)); }
    } else if (S.results) {
      b.append(el('p', { class: 'muted' }, 'The last run has no report of this step: run the recipe for its consistency.'));
    }
    blocks.push(b);
  }
  if (job !== VP.job) return;
  clear(box);
  if (!blocks.length) box.append(el('p', { class: 'muted' }, 'The recipe has no to-virtual-points step: add a point below to start one.'));
  box.append(...blocks);
  $('vp-panel').dataset.state = 'drawn';
}

// ---------- the form ----------
function vpOptions(select, values, keep) {
  const was = keep ?? select.value;
  clear(select);
  for (const v of values) select.append(el('option', { value: v }, v));
  if (values.includes(was)) select.value = was;
}
function renderVpForm() {
  const r = R.json || R.lastJson;
  const steps = vpSteps().map((s) => s.id);
  vpOptions($('vp-step'), [...steps, '(new step)'], steps.includes(VP.wantStep) ? VP.wantStep : undefined);
  if (steps.includes(VP.wantStep)) VP.wantStep = null;
  const newStep = $('vp-step').value === '(new step)';
  $('vp-new-id').disabled = !newStep;
  const comps = Object.keys(r?.components || {});
  const st = vpSteps().find((s) => s.id === $('vp-step').value);
  vpOptions($('vp-from'), comps, st?.from);
  $('vp-from').disabled = !newStep;
  const geos = vpGeometryFiles();
  vpOptions($('vp-geometry'), geos, typeof st?.geometry === 'string' ? st.geometry.replace(/^.*[\\/]/, '') : undefined);
  $('vp-geometry').disabled = !newStep;
  const f = vpFileOf($('vp-from').value);
  const set = f?.summary?.sets?.[0];
  const chosen = (id) => new Set([...$(id).selectedOptions].map((o) => o.value));
  const fill = (id, dofs) => {
    const keep = chosen(id);
    const sel = $(id);
    if (JSON.stringify([...sel.options].map((o) => o.value)) === JSON.stringify(dofs)) return;
    clear(sel);
    for (const d of dofs) sel.append(el('option', { value: d, selected: keep.has(d) }, d));
  };
  fill('vp-sensors', set?.outputs || []);
  fill('vp-impacts', set?.inputs || []);
  $('vp-form-note').textContent = !comps.length ? 'The recipe has no component yet: load files and start a recipe first.'
    : !f ? `The file of component ${$('vp-from').value} is not loaded: its DOFs cannot be listed.`
    : !geos.length ? 'No geometry file is loaded: drop a “# mortise-geometry 1” file or a Universal File with nodes.'
    : `${set.outputs.length} output DOFs and ${set.inputs.length} input DOFs of ${f.name}, as the core read them.`;
}
function vpNumber(id) {
  const t = $(id).value.trim();
  return t === '' ? NaN : Number(t);
}
function addVpoint() {
  const newStep = $('vp-step').value === '(new step)';
  const id = newStep ? $('vp-new-id').value.trim() : $('vp-step').value;
  const name = $('vp-name').value.trim();
  const origin = ['vp-ox', 'vp-oy', 'vp-oz'].map(vpNumber);
  const sensors = [...$('vp-sensors').selectedOptions].map((o) => o.value);
  const impacts = [...$('vp-impacts').selectedOptions].map((o) => o.value);
  const from = $('vp-from').value, geometry = $('vp-geometry').value;
  const missing = [!id && 'a step id', !name && 'a point name', origin.some((v) => !Number.isFinite(v)) && 'an origin of three numbers',
    !from && 'a component', !geometry && 'a geometry file', !sensors.length && 'sensor channels', !impacts.length && 'impacts'].filter(Boolean);
  if (missing.length) { status('to add a point, give ' + missing.join(', '), 'fail'); return; }
  const ok = editRecipe((r) => {
    r.steps = r.steps || [];
    let st = r.steps.find((s) => s.id === id);
    if (st && st.op !== 'to-virtual-points') { status(`step ${id} is a ${st.op} step: choose another id`, 'fail'); return false; }
    if (!st) {
      st = { id, op: 'to-virtual-points', from, geometry, points: [] };
      r.steps.push(st);
      r.outputs = r.outputs || [];
      if (!r.outputs.includes(id)) r.outputs.push(id);
    }
    st.points = (st.points || []).filter((p) => p.name !== name);
    st.points.push({ name, origin, sensors, impacts });
    return true;
  });
  if (ok) {
    if (newStep) VP.wantStep = id;
    status(`point ${name} written into step ${id} of the recipe`);
    scheduleVpoints();
  }
}
function vpOrigins() {
  // one origin a line: "name: x, y, z"
  const out = [];
  for (const [k, line] of $('vp-origins').value.split('\n').entries()) {
    if (!line.trim()) continue;
    const m = line.match(/^\s*([^:]+):\s*(.+)$/);
    const xyz = m ? m[2].split(/[,\s]+/).filter(Boolean).map(Number) : [];
    if (!m || xyz.length !== 3) throw new Error(`origins, line ${k + 1}: write “name: x, y, z”`);
    out.push({ name: m[1].trim(), origin: xyz });
  }
  return out;
}
async function proposeGroups() {
  const box = $('vp-proposal');
  clear(box);
  let origins;
  try { origins = vpOrigins(); } catch (e) { box.append(errorBox(e)); return; }
  await settleRecipe();
  try {
    const p = await Bridge.callJson('vpt_propose_groups', [R.text, $('vp-from').value, $('vp-geometry').value,
      JSON.stringify({ origins, radius: vpNumber('vp-radius') })], 'grouping channels and impacts');
    VP.proposal = p;
    const list = el('ul', { class: 'vp-groups' });
    for (const g of p.groups) {
      list.append(el('li', { 'data-group': g.name },
        `${g.name} at (${g.origin.join(', ')}) ${p.unit}: ${g.sensors.length} channel(s), ${g.impacts.length} impact(s) `,
        el('button', { class: 'btn small', type: 'button', onclick: () => useGroup(g) }, `Use ${g.name}`)));
    }
    box.append(list);
    for (const [what, list] of [['channels outside the radius of every origin', p.outside_sensors], ['impacts outside the radius of every origin', p.outside_impacts],
      ['channels the geometry does not locate', p.not_located_sensors], ['impacts the geometry does not locate', p.not_located_impacts]]) {
      if (list.length) box.append(el('p', { class: 'help' }, `${what}: ${list.join(' ')}`));
    }
  } catch (e) { box.append(errorBox(e)); }
}
function useGroup(g) {
  $('vp-name').value = g.name;
  ['vp-ox', 'vp-oy', 'vp-oz'].forEach((id, k) => { $(id).value = String(g.origin[k]); });
  for (const [id, dofs] of [['vp-sensors', g.sensors], ['vp-impacts', g.impacts]]) {
    for (const o of $(id).options) o.selected = dofs.includes(o.value);
  }
  status(`the form holds group ${g.name}: check it, then add the point`);
}
function wireVpoints() {
  $('vp-form').addEventListener('submit', (e) => e.preventDefault());
  $('vp-add').addEventListener('click', addVpoint);
  $('vp-propose').addEventListener('click', proposeGroups);
  for (const id of ['vp-step', 'vp-from', 'vp-geometry']) $(id).addEventListener('change', renderVpForm);
}
if (document.readyState === 'loading') document.addEventListener('DOMContentLoaded', wireVpoints); else wireVpoints();
