// assembly.js: the assembly panel, a second view of the one recipe
// (recipe.js). It draws the recipe's components, its steps with their
// operands, and the joints of one coupling step; every edit goes through
// editRecipe, which writes the recipe text. Operations, operands, joint types,
// their parameters and the shape of each value come from the core.

// Sets read from the loaded files.
function loadedSets() {
  const out = [];
  for (const f of S.files) {
    if (!f.summary) continue;
    f.summary.sets.forEach((s, k) => {
      const ns = (s.outputs[0] || '').includes(':') ? s.outputs[0].slice(0, s.outputs[0].lastIndexOf(':')) : stem(f.name);
      const several = f.summary.sets.length > 1;
      const name = several ? `${stem(f.name)}.${k}` : stem(f.name);
      out.push({ id: s.id, name, file: f.name, k, several, ns, s, options: f.options });
    });
  }
  return out;
}
// "comp:node+Z" → "nodeZ": node label and direction, sign and component dropped.
const nodeOf = (dof) => dof.slice(dof.lastIndexOf(':') + 1).replace(/[+-](?=[A-Z]+$)/, '');

// ---------- what the core says an operation or a joint takes ----------
const opInfo = (op) => VOCAB?.operations.find((o) => o.name === op) || null;
const opShapes = (op) => EDIT?.operations[op] || {};
const jointInfo = (type) => VOCAB?.joint_types.find((t) => t.name === type) || null;
// the operand holding a step's joints, if it has one
const jointsOperand = (op) => Object.entries(opShapes(op)).find(([, s]) => s === 'joints')?.[0] || null;
// the list of parts of an operation with joints (one list of names besides them)
function partsOperand(op) {
  const lists = Object.entries(opShapes(op)).filter(([, s]) => s === 'names');
  return jointsOperand(op) && lists.length === 1 ? lists[0][0] : null;
}
// the operation that joins a list of parts: the first that has both
const coupleOp = () => (VOCAB?.operations || []).map((o) => o.name).find((op) => jointsOperand(op) && partsOperand(op)) || null;
// every joint parameter the core knows, in its order
function paramNames() {
  const out = [];
  for (const t of VOCAB?.joint_types || []) for (const [p] of t.params) if (!out.includes(p)) out.push(p);
  return out;
}
const paramDocs = (p) => (VOCAB?.joint_types || []).flatMap((t) => t.params.filter((x) => x[0] === p).map((x) => `${t.name}: ${x[2]}`)).join('\n');

// ---------- the recipe's names ----------
function stepsOf(r) { if (!Array.isArray(r.steps)) r.steps = []; return r.steps; }
function componentsOf(r) {
  if (!r.components || typeof r.components !== 'object' || Array.isArray(r.components)) r.components = {};
  return r.components;
}
function namesIn(r) {
  const comps = r?.components && typeof r.components === 'object' ? Object.keys(r.components) : [];
  const ids = Array.isArray(r?.steps) ? r.steps.map((s) => s && s.id).filter((x) => typeof x === 'string') : [];
  return [...comps, ...ids];
}
function uniqueName(r, want) {
  const used = new Set(namesIn(r));
  if (!used.has(want)) return want;
  for (let i = 2; ; i++) if (!used.has(`${want}${i}`)) return `${want}${i}`;
}
// The loaded set a component reads, when its file is loaded.
function setOfComponent(r, name) {
  const c = r?.components?.[name];
  if (!c || typeof c.file !== 'string') return null;
  const base = c.file.replace(/^.*[\\/]/, '');
  const k = Number.isInteger(c.set) ? c.set : 0;
  return loadedSets().find((p) => p.file === base && p.k === k) || null;
}
// The components that read loaded set p; with `create`, a new one when none does.
function componentOf(r, p, create) {
  const comps = r?.components && typeof r.components === 'object' ? r.components : {};
  const name = Object.keys(comps).find((n) => setOfComponent(r, n)?.id === p.id);
  if (name || !create) return name || null;
  const fresh = uniqueName(r, p.name);
  const c = { file: p.file, component: p.ns };
  if (p.several) c.set = p.k;
  if (p.options && Object.keys(p.options).length) c.import = p.options;
  componentsOf(r)[fresh] = c;
  return fresh;
}
// The names a step's operands give (joints left out), and the loaded sets behind them.
function stepNames(st) {
  const jk = jointsOperand(st.op);
  const out = [];
  for (const o of opInfo(st.op)?.operands || []) {
    if (o.name === jk) continue;
    for (const n of [st[o.name]].flat()) if (typeof n === 'string' && !out.includes(n)) out.push(n);
  }
  return out;
}
const stepSets = (r, st) => stepNames(st).map((n) => setOfComponent(r, n)).filter(Boolean);
function joinSteps(r) {
  return (Array.isArray(r?.steps) ? r.steps : []).map((s, i) => ({ s, i })).filter(({ s }) => s && typeof s === 'object' && jointsOperand(s.op));
}
function currentJoinStep(r) {
  const all = joinSteps(r);
  return all.find(({ s }) => s.id === S.asmStep) || all[0] || null;
}
const splitNames = (t) => { const v = t.split(',').map((x) => x.trim()).filter(Boolean); return v.length ? v : undefined; };

// The type the core read for a joint written without one (from the last
// reading of the same joint: same DOFs and parameters).
function inferredType(si, jk, ji, j) {
  const c = R.read?.recipe?.steps?.[si]?.[jk]?.[ji];
  if (!c || c.a !== j.a || c.b !== j.b) return undefined;
  for (const [k, v] of Object.entries(j)) if (c[k] !== v) return undefined;
  return c.type;
}

// ---------- drawing ----------
function renderAsm() {
  renderRecipeState();
  if (!VOCAB || !EDIT) return;
  const r = R.json || R.lastJson || null;
  const sets = loadedSets();
  const dl = $('asm-names');
  clear(dl);
  for (const n of namesIn(r)) dl.append(el('option', { value: n }));
  const cur = currentJoinStep(r);
  const pick = $('couple-step');
  clear(pick);
  if (!cur) pick.append(el('option', { value: '' }, `none yet: ticking a part adds a ${coupleOp()} step`));
  for (const { s } of joinSteps(r)) pick.append(el('option', { value: s.id, selected: s === cur?.s || null }, `${s.id} (${s.op})`));
  renderParts(r, cur, sets);
  renderJoints(r, cur);
  renderSteps(r);
  const outs = $('outputs-input');
  if (document.activeElement !== outs) outs.value = Array.isArray(r?.outputs) ? r.outputs.join(', ') : r?.outputs === undefined ? '' : JSON.stringify(r.outputs);
  const vars = Array.isArray(r?.variants) ? r.variants : [];
  $('asm-variants').textContent = vars.length
    ? `What-if variants computed beside the recipe: ${vars.map((v) => (v && v.name) || '?').join(', ')} (edit them in the recipe text).` : '';
}
function renderParts(r, cur, sets) {
  const box = $('asm-parts');
  clear(box);
  const comps = r?.components && typeof r.components === 'object' ? r.components : {};
  const st = cur?.s;
  const key = st ? partsOperand(st.op) : null;
  const chosen = st && key && Array.isArray(st[key]) ? st[key] : [];
  const entries = [];
  for (const p of sets) {
    const names = Object.keys(comps).filter((n) => setOfComponent(r, n)?.id === p.id);
    if (names.length) for (const n of names) entries.push({ name: n, p });
    else entries.push({ name: null, p });
  }
  for (const n of Object.keys(comps)) if (!entries.some((e) => e.name === n)) entries.push({ name: n, p: null });
  if (!entries.length) box.append(el('span', { class: 'muted' }, 'no parts loaded yet'));
  const canTick = !st || !!key;
  for (const e of entries) {
    const c = e.name ? comps[e.name] : null;
    const what = e.p ? `${e.p.s.signal ? 'spectrum' : e.p.s.kind}, ${e.p.s.outputs.length}×${e.p.s.inputs.length}`
      : c && typeof c.file === 'string' ? `its file ${c.file} is not loaded` : 'not from a loaded file';
    box.append(el('label', { 'data-part': e.name || e.p.name, class: e.name ? 'in-recipe' : 'not-in-recipe' },
      el('input', { type: 'checkbox', checked: !!e.name && chosen.includes(e.name), disabled: !canTick || null,
        onchange: (ev) => tickPart(e, ev.target.checked, st?.id) }),
      ` ${e.name || e.p.name} `,
      el('span', { class: 'muted' }, `(${what})` + (e.name ? '' : ': not in the recipe yet'))));
  }
  if (st && !key) box.append(el('div', { class: 'muted' }, `A ${st.op} step names its sets in the step list below.`));
}
function tickPart(e, checked, stepId) {
  editRecipe((r) => {
    const name = e.name || componentOf(r, e.p, true);
    const steps = stepsOf(r);
    let st = steps.find((s) => s && s.id === stepId && jointsOperand(s.op));
    if (!st) {
      if (!checked) return undefined;
      const op = coupleOp();
      if (!op) return false;
      st = { id: uniqueName(r, 'assembly'), op, [partsOperand(op)]: [], [jointsOperand(op)]: [] };
      steps.unshift(st);
      if (!Array.isArray(r.outputs) || !r.outputs.length) r.outputs = [st.id];
      S.asmStep = st.id;
    }
    const key = partsOperand(st.op);
    if (!key) return false;
    const list = Array.isArray(st[key]) ? st[key] : [];
    st[key] = checked ? (list.includes(name) ? list : [...list, name]) : list.filter((x) => x !== name);
    return undefined;
  });
}
function renderJoints(r, cur) {
  const params = paramNames();
  const head = $('joints-head');
  clear(head);
  head.append(el('tr', {}, el('th', {}, 'DOF a'), el('th', {}, 'DOF b'), el('th', {}, 'joint'),
    ...params.map((p) => el('th', { title: paramDocs(p) }, p)), el('th', {}, el('span', { class: 'visually-hidden' }, 'delete'))));
  const body = $('joints-body');
  clear(body);
  if (!cur) return;
  const { s: st, i: si } = cur;
  const jk = jointsOperand(st.op);
  const joints = Array.isArray(st[jk]) ? st[jk] : [];
  const dofs = [];
  for (const p of stepSets(r, st)) for (const d of p.s.outputs) if (!dofs.includes(d)) dofs.push(d);
  joints.forEach((j, ji) => {
    if (!j || typeof j !== 'object') {
      body.append(el('tr', {}, el('td', { colspan: params.length + 4 }, `joints[${ji}]: ${JSON.stringify(j)} (edit it in the recipe text)`)));
      return;
    }
    const written = typeof j.type === 'string';
    const type = written ? j.type : inferredType(si, jk, ji, j);
    const info = jointInfo(type);
    const dofSel = (key) => el('select', { 'data-key': key, 'aria-label': `joint ${ji + 1}, DOF ${key}`, onchange: (e) => editJoint(si, ji, type, (x) => { x[key] = e.target.value; }, true) },
      ...(typeof j[key] === 'string' && j[key] ? [] : [el('option', { value: '' }, '—')]),
      ...[...new Set([j[key], ...dofs])].filter((d) => typeof d === 'string' && d).map((d) => el('option', { value: d, selected: d === j[key] || null }, d)));
    const typeSel = el('select', { 'data-key': 'type', 'aria-label': `joint ${ji + 1}, type`, title: info?.summary || '', onchange: (e) => setJointType(si, ji, type, e.target.value, st.id) },
      ...(info ? [] : [el('option', { value: '' }, type ? `${type} (unknown)` : '(no type written)')]),
      ...VOCAB.joint_types.map((t) => el('option', { value: t.name, selected: t.name === type || null, title: t.summary }, t.name)));
    body.append(el('tr', { 'data-joint': ji },
      el('td', {}, dofSel('a')), el('td', {}, dofSel('b')),
      el('td', {}, typeSel, written || !type ? null : el('div', { class: 'muted small' }, 'type read from its parameters')),
      ...params.map((p) => el('td', {}, paramInput(si, ji, j, type, info, p))),
      el('td', {}, el('button', { class: 'btn small', title: 'delete this joint', 'aria-label': `delete joint ${ji + 1} (${j.a || '?'} to ${j.b || '?'})`, onclick: () => editRecipe((rr) => { rr.steps[si][jk].splice(ji, 1); }) }, '✕'))));
  });
}
function paramInput(si, ji, j, type, info, p) {
  const takes = info?.params.find((x) => x[0] === p);
  const shape = EDIT.joint_types[type]?.[p] || Object.values(EDIT.joint_types).map((t) => t[p]).find(Boolean) || 'json';
  const v = j[p];
  const set = (val) => editJoint(si, ji, type, (x) => { if (val === undefined) delete x[p]; else x[p] = val; }, false);
  const attrs = {
    'data-param': p,
    'aria-label': `joint ${ji + 1}, ${p}`,
    // a parameter the type does not take stays editable while it holds a value, so it can be cleared
    disabled: (!takes && v === undefined) || null,
    class: !takes && v !== undefined ? 'invalid' : null,
    title: takes ? takes[2] : `${type || 'this joint'} takes no ${p}`,
    placeholder: takes ? (takes[1] ? 'required' : 'optional') : '',
  };
  if (shape === 'number' && (v === undefined || typeof v === 'number')) {
    return el('input', { ...attrs, type: 'number', step: 'any', value: v ?? '', oninput: (e) => set(e.target.value === '' ? undefined : Number(e.target.value)) });
  }
  if (shape === 'text' && (v === undefined || typeof v === 'string')) {
    return el('input', { ...attrs, list: 'asm-names', value: v ?? '', oninput: (e) => set(e.target.value === '' ? undefined : e.target.value) });
  }
  return jsonInput(attrs, v, set);
}
// An input holding any JSON value; text that is not JSON yet is not written.
function jsonInput(attrs, v, set) {
  return el('input', { ...attrs, value: v === undefined ? '' : JSON.stringify(v), oninput: (e) => {
    const t = e.target.value.trim();
    if (t === '') { e.target.classList.remove('invalid'); set(undefined); return; }
    try { const x = JSON.parse(t); e.target.classList.remove('invalid'); set(x); } catch (_) {
      e.target.classList.add('invalid');
      e.target.title = 'not JSON yet: not written into the recipe';
    }
  } });
}
// Edit joint ji of step si; a joint written without a type gets the type the panel shows.
function editJoint(si, ji, shown, fn, redraw) {
  return editRecipe((r) => {
    const st = r.steps?.[si];
    const jk = st && jointsOperand(st.op);
    const j = jk && Array.isArray(st[jk]) ? st[jk][ji] : null;
    if (!j || typeof j !== 'object') return false;
    if (typeof j.type !== 'string' && shown) j.type = shown;
    fn(j);
    return undefined;
  }, redraw);
}
// Parameter values a joint had under other types, to give back when its type returns.
const jointMemo = new Map();
function setJointType(si, ji, shown, type, stepId) {
  editJoint(si, ji, shown, (j) => {
    const key = `${stepId}|${ji}`;
    const memo = jointMemo.get(key) || {};
    const keep = jointInfo(type)?.params.map((x) => x[0]) || [];
    for (const p of paramNames()) {
      if (p in j) { memo[p] = j[p]; if (!keep.includes(p)) delete j[p]; }
    }
    for (const p of keep) if (!(p in j) && p in memo) j[p] = memo[p];
    j.type = type;
    jointMemo.set(key, memo);
  }, true);
}
function renderSteps(r) {
  const box = $('stages');
  clear(box);
  const steps = Array.isArray(r?.steps) ? r.steps : [];
  steps.forEach((st, si) => {
    if (!st || typeof st !== 'object') {
      box.append(el('div', { class: 'stage' }, `steps[${si}]: ${JSON.stringify(st)} (edit it in the recipe text)`));
      return;
    }
    const info = opInfo(st.op);
    const shapes = opShapes(st.op);
    const opSel = el('select', { class: 'step-op', 'aria-label': `step ${si + 1}, operation`, title: info?.summary || 'not an operation the core knows', onchange: (e) => changeOp(si, e.target.value) },
      ...(info ? [] : [el('option', { value: '' }, `${st.op ?? '(no op)'} (unknown)`)]),
      ...VOCAB.operations.map((o) => el('option', { value: o.name, selected: o.name === st.op || null, title: o.summary }, o.name)));
    const idIn = el('input', { class: 'step-id', 'aria-label': `step ${si + 1}, id`, value: typeof st.id === 'string' ? st.id : '', size: 12, title: 'step id',
      onchange: (e) => editRecipe((rr) => { if (S.asmStep === rr.steps[si].id) S.asmStep = e.target.value; rr.steps[si].id = e.target.value; }) });
    box.append(el('div', { class: 'stage asm-step', 'data-step': typeof st.id === 'string' ? st.id : '' },
      el('div', { class: 'step-head' }, el('span', { class: 'step-no' }, `${si + 1}.`), idIn, opSel,
        el('span', { class: 'muted step-summary' }, info?.summary || 'not an operation the core knows'),
        el('button', { class: 'btn small', title: 'delete this step', 'aria-label': `delete step ${si + 1} (${st.id || st.op || 'no id'})`, onclick: () => deleteStep(si) }, '✕')),
      el('div', { class: 'step-operands' }, ...(info?.operands || []).map((o) => operandField(si, st, o, shapes[o.name] || 'json'))),
      typeof st.note === 'string' ? el('div', { class: 'muted step-note' }, st.note) : null));
  });
  if (!steps.length) box.append(el('div', { class: 'muted' }, 'no steps yet'));
}
function operandField(si, st, o, shape) {
  const v = st[o.name];
  const label = (input) => el('label', { class: 'operand', title: o.doc, 'data-operand': o.name }, o.name + ' ', input);
  const ph = o.required ? 'required' : 'optional';
  if (shape === 'joints') {
    const n = Array.isArray(v) ? v.length : 0;
    return label(el('button', { class: 'btn small', onclick: () => { S.asmStep = st.id; renderAsm(); autosave(); $('joints-table').scrollIntoView({ block: 'nearest' }); } },
      `${n} joint(s): edit in the table above`));
  }
  const write = (val) => editRecipe((rr) => { const s = rr.steps[si]; if (val === undefined) delete s[o.name]; else s[o.name] = val; }, false);
  if (shape === 'number' && (v === undefined || typeof v === 'number')) {
    return label(el('input', { type: 'number', step: 'any', value: v ?? '', placeholder: ph, oninput: (e) => write(e.target.value === '' ? undefined : Number(e.target.value)) }));
  }
  if (shape === 'text' && (v === undefined || typeof v === 'string')) {
    return label(el('input', { list: 'asm-names', value: v ?? '', placeholder: ph, size: 14, oninput: (e) => write(e.target.value === '' ? undefined : e.target.value) }));
  }
  if (shape === 'names' && (v === undefined || (Array.isArray(v) && v.every((x) => typeof x === 'string')))) {
    return label(el('input', { value: (v || []).join(', '), placeholder: ph + ': names, comma separated', size: 26, oninput: (e) => write(splitNames(e.target.value)) }));
  }
  return label(jsonInput({ placeholder: ph + ' (JSON)', size: 26 }, v, write));
}
async function changeOp(si, op) {
  const st = R.json?.steps?.[si];
  if (!st) return;
  const keep = (opInfo(op)?.operands || []).map((o) => o.name);
  const dropped = (opInfo(st.op)?.operands || []).map((o) => o.name).filter((k) => k in st && !keep.includes(k));
  if (dropped.length && !(await ask(`As a ${op} step, step ${st.id} takes no ${dropped.join(', ')}. Change its operation and drop ${dropped.length === 1 ? 'that operand' : 'those operands'}?`, 'Change and drop', 'Keep the step'))) {
    renderAsm();
    return;
  }
  editRecipe((r) => { const s = r.steps[si]; s.op = op; for (const k of dropped) delete s[k]; });
}
async function deleteStep(si) {
  const st = R.json?.steps?.[si];
  if (!st) return;
  const jk = jointsOperand(st.op);
  const n = jk && Array.isArray(st[jk]) ? ` and its ${st[jk].length} joint(s)` : '';
  if (!(await ask(`Delete step ${st.id} (${st.op})${n} from the recipe?`, 'Delete the step', 'Keep it'))) return;
  editRecipe((r) => { r.steps.splice(si, 1); });
}
function addStep() {
  const op = $('add-stage-op').value;
  if (!op) return;
  editRecipe((r) => {
    const id = uniqueName(r, op.replace(/[^A-Za-z0-9_]/g, '_'));
    stepsOf(r).push({ id, op });
    if (jointsOperand(op)) S.asmStep = id;
  });
}
function addJoint() {
  const cur = currentJoinStep(R.json);
  if (!cur) { status('tick the parts to couple first: that makes the coupling step the joints belong to'); return; }
  editRecipe((r) => {
    const st = r.steps[cur.i];
    const jk = jointsOperand(st.op);
    if (!Array.isArray(st[jk])) st[jk] = [];
    st[jk].push({ a: '', b: '', type: EDIT.untyped_joint_type });
  });
}
// Pair DOFs of different parts of the coupling step that carry the same node
// label and direction.
function suggestJoints() {
  const r = R.json;
  const cur = currentJoinStep(r);
  if (!cur) { status('tick the parts to couple first'); return; }
  const sets = stepSets(r, cur.s);
  const jk = jointsOperand(cur.s.op);
  const have = new Set((Array.isArray(cur.s[jk]) ? cur.s[jk] : []).map((j) => j && j.a + '|' + j.b));
  const add = [];
  for (let i = 0; i < sets.length; i++) for (let k = i + 1; k < sets.length; k++) {
    for (const a of sets[i].s.outputs) for (const b of sets[k].s.outputs) {
      if (nodeOf(a) === nodeOf(b) && !have.has(a + '|' + b) && !have.has(b + '|' + a)) {
        add.push({ a, b, type: EDIT.untyped_joint_type });
        have.add(a + '|' + b);
      }
    }
  }
  status(add.length ? `${add.length} joint(s) suggested from matching node labels` : 'no matching node labels between the ticked parts');
  if (!add.length) return;
  editRecipe((rr) => {
    const st = rr.steps[cur.i];
    if (!Array.isArray(st[jk])) st[jk] = [];
    st[jk].push(...add);
  });
}

// ---------- the diagram (drawn by the core from the recipe text) ----------
// The core draws the recipe as SVG (assembly_diagram) and gives the box of
// every component, step and joint; the page puts the SVG in as markup (the
// core escapes every text of the recipe) and lays one button over each box,
// so a click or the keyboard picks the same thing in the panel. A recipe the
// core refuses shows the core's message instead of a picture.
const DG = { text: null, timer: null, job: 0, items: [], picked: null, current: 0 };
const itemKey = (it) => `${it.kind}|${it.id}`;
function scheduleDiagram() {
  if (!VOCAB) return;
  if (R.text === DG.text) return;
  $('asm-diagram').dataset.state = 'drawing';
  clearTimeout(DG.timer);
  DG.timer = setTimeout(drawDiagram, 150);
}
async function drawDiagram() {
  DG.timer = null;
  const text = R.text;
  const job = ++DG.job;
  let d = null, err = null;
  if (text.trim()) {
    try { d = await Bridge.callJson('assembly_diagram', [text], 'drawing the assembly'); } catch (e) { err = e; }
  }
  if (job !== DG.job || text !== R.text) return; // a newer text has its own drawing coming
  if (err && err.kind === 'cancelled') { DG.text = null; scheduleDiagram(); return; }
  DG.text = text;
  showDiagram(text.trim() ? d : null, err);
}
function showDiagram(d, err) {
  const box = $('asm-diagram'), frame = $('asm-diagram-frame'), note = $('asm-diagram-note');
  const hadFocus = frame.contains(document.activeElement) ? DG.items[DG.current] : null;
  clear(frame);
  clear(note);
  DG.items = [];
  if (err || !d) {
    box.dataset.state = err ? 'refused' : 'empty';
    note.append(err
      ? el('div', { class: 'error-box diagram-error' }, 'No diagram: the core cannot read this recipe as it stands. ' + errorText(err))
      : el('span', { class: 'muted' }, 'No recipe yet: its diagram appears here.'));
    return;
  }
  const doc = new DOMParser().parseFromString(d.svg, 'image/svg+xml');
  if (doc.documentElement.nodeName !== 'svg' || doc.querySelector('parsererror')) {
    box.dataset.state = 'refused';
    note.append(el('div', { class: 'error-box diagram-error' }, 'No diagram: the core’s drawing could not be read as SVG.'));
    return;
  }
  DG.items = d.items;
  const keys = d.items.map(itemKey);
  DG.current = Math.max(0, keys.indexOf(hadFocus ? itemKey(hadFocus) : DG.picked));
  const hits = el('div', { class: 'diagram-hits', role: 'toolbar', 'aria-orientation': 'vertical',
    'aria-label': 'parts, steps and joints of the diagram: the arrow keys move between them, Enter selects one in the panel' });
  d.items.forEach((it, k) => {
    const b = el('button', { type: 'button', class: 'diagram-hit' + (itemKey(it) === DG.picked ? ' picked' : ''),
      'data-kind': it.kind, 'data-id': it.id, 'data-step': it.step ?? null, 'data-index': it.index ?? null,
      tabindex: k === DG.current ? '0' : '-1', 'aria-label': it.label, title: it.label,
      onclick: () => { DG.current = k; pickDiagramItem(it); },
      onkeydown: (e) => diagramKey(e, k) });
    b.style.left = `${(100 * it.x) / d.width}%`;
    b.style.top = `${(100 * it.y) / d.height}%`;
    b.style.width = `${(100 * it.w) / d.width}%`;
    b.style.height = `${(100 * it.h) / d.height}%`;
    hits.append(b);
  });
  const pic = el('div', { class: 'diagram-pic', role: 'img', 'aria-label': d.summary });
  pic.append(document.importNode(doc.documentElement, true));
  const wrap = el('div', { class: 'diagram-wrap' }, pic, hits);
  wrap.style.width = `min(100%, ${d.width}px)`;
  frame.append(wrap);
  note.append(el('span', { class: 'muted' }, d.items.length
    ? 'Click a part, a step or a joint to select it in the panel below (in the diagram, the arrow keys move between them).'
    : 'Nothing to select yet.'));
  box.dataset.state = 'drawn';
  if (hadFocus) hits.children[DG.current]?.focus({ preventScroll: true });
}
function diagramKey(e, k) {
  const n = DG.items.length;
  const to = { ArrowDown: k + 1, ArrowRight: k + 1, ArrowUp: k - 1, ArrowLeft: k - 1, Home: 0, End: n - 1 }[e.key];
  if (to === undefined || !n) return;
  e.preventDefault();
  const buttons = document.querySelectorAll('#asm-diagram .diagram-hit');
  DG.current = Math.min(n - 1, Math.max(0, to));
  buttons.forEach((b, i) => b.setAttribute('tabindex', i === DG.current ? '0' : '-1'));
  buttons[DG.current].focus();
}
// Select a diagram item in the panel: a component's row in the parts, a
// step's row in the steps, a joint's row in the joints table (its step
// becoming the panel's coupling step, as choosing it above the table does).
function pickDiagramItem(it) {
  DG.picked = itemKey(it);
  document.querySelectorAll('#asm-diagram .diagram-hit').forEach((b) => b.classList.toggle('picked', b.dataset.kind === it.kind && b.dataset.id === it.id));
  if (it.kind === 'component') {
    const row = [...document.querySelectorAll('#asm-parts label[data-part]')].find((l) => l.dataset.part === it.id);
    focusPicked(row, row && row.querySelector('input:not([disabled])'), it);
    return;
  }
  const st = (Array.isArray(R.json?.steps) ? R.json.steps : []).find((s) => s && s.id === it.step);
  if (st && jointsOperand(st.op) && S.asmStep !== st.id) { S.asmStep = st.id; renderAsm(); autosave(); }
  if (it.kind === 'joint') {
    const row = document.querySelector(`#joints-body tr[data-joint="${it.index}"]`);
    focusPicked(row, row && row.querySelector('select, input:not([disabled]), button'), it);
  } else {
    const row = [...document.querySelectorAll('#stages .asm-step')].find((s) => s.dataset.step === it.id);
    focusPicked(row, row && row.querySelector('.step-id'), it);
  }
}
function focusPicked(row, control, it) {
  document.querySelectorAll('#asm-body .diagram-picked').forEach((x) => x.classList.remove('diagram-picked'));
  if (!row) { status(`${it.kind} ${it.id} has no row in the panel right now`); return; }
  row.classList.add('diagram-picked');
  row.scrollIntoView({ block: 'center' });
  const target = control || row;
  if (!control) target.setAttribute('tabindex', '-1');
  target.focus({ preventScroll: true });
}
