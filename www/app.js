// app.js: the page's DOM and state. Every number shown comes from the core
// (through bridge.js); this file only moves bytes, keeps the workspace, and
// maps pointer pixels to axis values with the frames the core returns.
// All text from files is inserted with textContent (never innerHTML).
'use strict';
(() => {
  const $ = (id) => document.getElementById(id);
  const T0 = performance.now();
  const timings = { ready_ms: null, last_run_ms: null, last_plot_ms: null };
  window.mortiseTimings = timings;

  // ---------- state ----------
  const S = {
    files: [],        // { name, bytes, options, summary, error, format }
    bundle: null,     // { name, bytes, info }
    asm: { parts: {}, joints: [], stages: [], outputs: '' },
    recipeText: '',
    results: null,    // { results: [SetSummary], report }
    resultsJson: null,
    plot: { kind: 'bode', db: true, xlog: true, xrange: null, sel: [] },
    includeRaw: {},
  };
  let restoring = false;
  let lastSvg = null, lastFrames = [], lastSpec = null;

  // ---------- small DOM helpers ----------
  function el(tag, attrs, ...kids) {
    const e = document.createElement(tag);
    for (const [k, v] of Object.entries(attrs || {})) {
      if (v === undefined || v === null || v === false) continue;
      if (k === 'class') e.className = v;
      else if (k.startsWith('on')) e.addEventListener(k.slice(2), v);
      else if (k === 'value') e.value = v;
      else if (k === 'checked') e.checked = !!v;
      else e.setAttribute(k, v === true ? '' : String(v));
    }
    for (const kid of kids.flat()) {
      if (kid === null || kid === undefined || kid === false) continue;
      e.append(kid instanceof Node ? kid : document.createTextNode(String(kid)));
    }
    return e;
  }
  function clear(node) { while (node.firstChild) node.removeChild(node.firstChild); }
  function status(text, mode) {
    $('status-text').textContent = text;
    $('status-dot').className = 'dot ' + (mode || 'ready');
    document.body.dataset.state = mode || 'ready';
  }
  function errorText(e) {
    if (!e) return '';
    if (e instanceof Error) return e.message;
    const where = [];
    if (e.file) where.push(e.file);
    if (e.location) {
      if ('line' in e.location) where.push('line ' + e.location.line);
      else if ('byte' in e.location) where.push('byte ' + e.location.byte);
    }
    if (e.field) where.push(e.field);
    return (where.length ? where.join(': ') + ': ' : '') + e.message;
  }
  function errorBox(e) {
    const box = el('div', { class: 'error-box', role: 'alert' });
    if (e && !(e instanceof Error)) {
      const where = [];
      if (e.file) where.push('file ' + e.file);
      if (e.location && 'line' in e.location) where.push('line ' + e.location.line);
      if (e.location && 'byte' in e.location) where.push('byte ' + e.location.byte);
      if (e.field) where.push('field: ' + e.field);
      if (where.length) box.append(el('div', { class: 'error-where' }, where.join(' · ')));
      box.append(el('div', {}, (e.kind ? e.kind + ' error: ' : '') + e.message));
    } else {
      box.append(el('div', {}, errorText(e)));
    }
    return box;
  }
  function fmt(v, digits) {
    if (v === null || v === undefined || Number.isNaN(v)) return '–';
    const a = Math.abs(v);
    if (a !== 0 && (a < 1e-3 || a >= 1e5)) return v.toExponential(digits ?? 3);
    return (+v.toPrecision(digits ?? 5)).toString();
  }
  function download(bytes, name, type) {
    const url = URL.createObjectURL(new Blob([bytes], { type }));
    const a = el('a', { href: url, download: name });
    document.body.append(a);
    a.click();
    a.remove();
    setTimeout(() => URL.revokeObjectURL(url), 5000);
  }
  const stem = (name) => name.replace(/^.*[\\/]/, '').replace(/\.[^.]*$/, '') || name;

  // ---------- autosave (IndexedDB) ----------
  const DB = 'mortise-workspace', STORE = 'kv';
  function db() {
    return new Promise((resolve, reject) => {
      const r = indexedDB.open(DB, 1);
      r.onupgradeneeded = () => r.result.createObjectStore(STORE);
      r.onsuccess = () => resolve(r.result);
      r.onerror = () => reject(r.error);
    });
  }
  async function idb(mode, fn) {
    const d = await db();
    return new Promise((resolve, reject) => {
      const tx = d.transaction(STORE, mode);
      const req = fn(tx.objectStore(STORE));
      tx.oncomplete = () => { d.close(); resolve(req && req.result); };
      tx.onerror = () => { d.close(); reject(tx.error); };
    });
  }
  let saveTimer = null;
  function autosave() {
    if (restoring) return;
    clearTimeout(saveTimer);
    saveTimer = setTimeout(async () => {
      const snap = {
        files: S.files.map((f) => ({ name: f.name, bytes: f.bytes, options: f.options })),
        bundle: S.bundle ? { name: S.bundle.name, bytes: S.bundle.bytes } : null,
        recipeText: $('recipe-text').value,
        resultsJson: S.resultsJson,
        asm: S.asm,
        plot: S.plot,
        includeRaw: S.includeRaw,
      };
      try {
        await idb('readwrite', (st) => st.put(snap, 'current'));
        document.body.dataset.saved = String(Date.now());
      } catch (e) {
        status('could not save the workspace in this browser: ' + errorText(e), 'fail');
      }
    }, 250);
  }

  // ---------- files ----------
  // Import options the current recipe gives a file (its column map and DOF
  // namespace), so a supplier CSV named in a recipe reads without the dialog.
  function recipeOptionsFor(name) {
    let r;
    try { r = JSON.parse($('recipe-text').value); } catch (_) { return null; }
    for (const [key, c] of Object.entries(r?.components || {})) {
      if (!c || !c.file || c.file.replace(/^.*[\\/]/, '') !== name) continue;
      const o = { ...(c.import || {}) };
      o.component = c.component || o.component || key;
      return o;
    }
    return null;
  }
  async function addFile(name, bytes, options) {
    const fmtName = await Bridge.call('detect_format', [name, bytes]).catch(() => null);
    if (/\.recipe\.json$/i.test(name) || fmtName === 'recipe') {
      $('recipe-text').value = new TextDecoder().decode(bytes);
      S.recipeText = $('recipe-text').value;
      // files already loaded that the recipe reads with other options: read them again
      for (const f of S.files) {
        const o = recipeOptionsFor(f.name);
        if (o && JSON.stringify(o) !== JSON.stringify(f.options)) { f.options = o; await loadEntry(f); }
      }
      autosave();
      return;
    }
    if (!options) options = recipeOptionsFor(name) || undefined;
    if (fmtName === 'bundle') return openBundle(name, bytes);
    let entry = S.files.find((f) => f.name === name);
    if (!entry) {
      entry = { name, bytes, options: options || {}, summary: null, error: null };
      S.files.push(entry);
    } else {
      entry.bytes = bytes;
      if (options) entry.options = options;
    }
    await loadEntry(entry);
    if (entry.error && /\.(csv|tsv|txt)$/i.test(name) && /column/i.test(entry.error.message || '') && !restoring) {
      openMapping(entry);
    }
  }
  async function loadEntry(entry) {
    try {
      entry.summary = await Bridge.callJson('load_file', [entry.name, entry.bytes, JSON.stringify(entry.options)], 'reading ' + entry.name);
      entry.error = null;
    } catch (e) {
      entry.summary = null;
      entry.error = e;
    }
    renderAll();
    autosave();
  }
  async function removeFile(name) {
    S.files = S.files.filter((f) => f.name !== name);
    await Bridge.call('forget_file', [name]);
    renderAll();
    autosave();
  }
  async function readFiles(list) {
    for (const f of list) {
      const bytes = new Uint8Array(await f.arrayBuffer());
      await addFile(f.name, bytes);
    }
    if (!(S.bundle && list.some((f) => f.name === S.bundle.name))) status(`${S.files.length} file(s) in the workspace`);
  }

  // ---------- cards ----------
  function setBlock(s) {
    const g = s.grid;
    const grid = `${g.lines} lines, ${fmt(g.f_min)}–${fmt(g.f_max)} Hz, ${g.spacing}` +
      (g.step ? (g.spacing === 'uniform' ? ` Δf = ${fmt(g.step)} Hz` : ` ratio ${fmt(g.step, 4)}`) : '');
    const qty = s.signal ? `${s.out_qty} spectrum (${s.signal}), ${s.out_unit}`
      : `${s.out_qty} / ${s.in_qty} (${s.out_unit} per ${s.in_unit})`;
    const dl = el('dl', { class: 'kv' },
      el('dt', {}, 'set'), el('dd', {}, s.name),
      el('dt', {}, 'kind'), el('dd', {}, s.signal ? 'spectrum' : s.kind),
      el('dt', {}, 'quantities'), el('dd', {}, qty),
      el('dt', {}, 'FRFs'), el('dd', {}, `${s.frfs} present` + (s.missing ? `, ${s.missing} missing` : '') + (s.coherence ? ', with coherence' : '')),
      el('dt', {}, 'outputs'), el('dd', { class: 'dofs' }, s.outputs.join('  ')),
      el('dt', {}, 'inputs'), el('dd', { class: 'dofs' }, s.inputs.join('  ')),
      el('dt', {}, 'grid'), el('dd', {}, grid),
      ...s.warnings.map((w) => el('dd', { class: 'warn' }, '⚠ ' + w)));
    return el('div', { class: 'set-block' }, dl, auditBlock(s.audit));
  }
  // The core's fitness audit of a set: a count line, then each flagged check
  // with its bands (pass / n/a checks are counted, not listed).
  function auditBlock(a) {
    if (!a) return null;
    const n = (st) => a.checks.filter((c) => c.status === st).length;
    const head = el('div', { class: 'audit-sum' }, `audit: ${n('pass')} passed, ${n('flag')} flagged, ${n('not-applicable')} not applicable`);
    const flags = a.checks.filter((c) => c.status === 'flag').map((c) => {
      const bands = (c.flagged || []).map((r) => r.first_band === r.last_band ? `${r.first_band} Hz` : `${r.first_band}–${r.last_band} Hz`).join(', ');
      return el('div', { class: 'audit-flag', 'data-check': c.check }, `⚑ ${c.check}: ${c.summary}` + (bands ? ` (bands ${bands})` : ''));
    });
    return el('div', { class: 'audit' }, head, ...flags);
  }
  function renderCards() {
    const box = $('cards');
    clear(box);
    for (const f of S.files) {
      const card = el('article', { class: 'card' + (f.error ? ' failed' : ''), 'data-file': f.name });
      const head = el('div', { class: 'card-head' },
        el('span', { class: 'card-name' }, f.name),
        f.summary ? el('span', { class: 'tag' }, f.summary.format) : el('span', { class: 'tag' }, 'not read'));
      if (/\.(csv|tsv|txt)$/i.test(f.name) && (!f.summary || f.summary.format === 'csv-mapped')) head.append(el('button', { class: 'btn small', onclick: () => openMapping(f) }, 'Map columns…'));
      head.append(el('button', { class: 'btn small', title: 'remove this file', onclick: () => removeFile(f.name) }, 'Remove'));
      card.append(head);
      if (f.error) card.append(errorBox(f.error));
      // refused because it is not the file an opened bundle was made from
      if (f.error && (S.bundle?.info?.inputs || []).some((inp) => inp.name === f.name) && /SHA-256/.test(errorText(f.error))) {
        card.append(el('div', { class: 'audit-flag', 'data-bundle-match': 'no' }, `⚑ not the file bundle ${S.bundle.name} was made from: refused`));
      }
      if (f.summary) {
        const s = f.summary;
        card.append(el('dl', { class: 'kv' },
          el('dt', {}, 'FRFs'), el('dd', {}, `${s.frfs} in ${s.sets.length} set(s), ${s.bytes} bytes`),
          el('dt', {}, 'SHA-256'), el('dd', { class: 'sha' }, s.sha256)));
        // a file named in an opened bundle: is it the very file the bundle was made from?
        const inBundle = (S.bundle?.info?.inputs || []).find((inp) => inp.name === f.name);
        if (inBundle && inBundle.sha256) {
          card.append(inBundle.sha256 === s.sha256
            ? el('div', { class: 'audit-sum', 'data-bundle-match': 'yes' }, `SHA-256 matches the file bundle ${S.bundle.name} was made from`)
            : el('div', { class: 'audit-flag', 'data-bundle-match': 'no' }, `⚑ SHA-256 differs from the file bundle ${S.bundle.name} was made from (${inBundle.sha256.slice(0, 16)}…): its results do not describe this file`));
        }
        for (const w of s.warnings) card.append(el('div', { class: 'warn' }, '⚠ ' + w));
        for (const set of s.sets) card.append(setBlock(set));
      }
      box.append(card);
    }
    if (S.bundle) {
      const info = S.bundle.info;
      for (const inp of info.inputs) {
        if (S.files.some((f) => f.name === inp.name)) continue;
        const card = el('article', { class: 'card withheld', 'data-file': inp.name },
          el('div', { class: 'card-head' }, el('span', { class: 'card-name' }, inp.name),
            el('span', { class: 'tag' }, inp.format), el('span', { class: 'tag' }, 'from bundle ' + S.bundle.name)),
          el('dl', { class: 'kv' }, el('dt', {}, 'SHA-256'), el('dd', { class: 'sha' }, inp.sha256)),
          inp.withheld ? el('div', { class: 'warn' }, 'raw data withheld by the sender; drop the original file here to re-run (its SHA-256 must match)') : null,
          ...inp.sets.map(setBlock));
        box.append(card);
      }
    }
  }

  // ---------- assembly panel ----------
  function loadedSets() {
    const out = [];
    for (const f of S.files) {
      if (!f.summary) continue;
      f.summary.sets.forEach((s, k) => {
        const ns = (s.outputs[0] || '').includes(':') ? s.outputs[0].slice(0, s.outputs[0].lastIndexOf(':')) : stem(f.name);
        const name = f.summary.sets.length > 1 ? `${stem(f.name)}.${k}` : stem(f.name);
        out.push({ id: s.id, name, file: f.name, k, ns, s, options: f.options });
      });
    }
    return out;
  }
  // "comp:node+Z" → "nodeZ": node label and direction, sign and component dropped.
  const nodeOf = (dof) => dof.slice(dof.lastIndexOf(':') + 1).replace(/[+-](?=[A-Z]+$)/, '');
  function renderAsm() {
    const sets = loadedSets();
    const parts = $('asm-parts');
    clear(parts);
    if (!sets.length) parts.append(el('span', { class: 'muted' }, 'no parts loaded yet'));
    for (const p of sets) {
      parts.append(el('label', {},
        el('input', { type: 'checkbox', checked: !!S.asm.parts[p.name], onchange: (e) => { S.asm.parts[p.name] = e.target.checked; renderAsm(); autosave(); } }),
        ` ${p.name} `, el('span', { class: 'muted' }, `(${p.s.signal ? 'spectrum' : p.s.kind}, ${p.s.outputs.length}×${p.s.inputs.length})`)));
    }
    const dofs = [];
    for (const p of sets) if (S.asm.parts[p.name]) for (const d of p.s.outputs) if (!dofs.includes(d)) dofs.push(d);
    const body = $('joints-body');
    clear(body);
    S.asm.joints.forEach((j, i) => {
      const sel = (key) => el('select', { onchange: (e) => { j[key] = e.target.value; autosave(); } },
        ...[...new Set([j[key], ...dofs])].filter(Boolean).map((d) => el('option', { value: d, selected: d === j[key] || null }, d)));
      const num = (key) => el('input', { type: 'number', step: 'any', value: j[key] ?? '', disabled: !needs(j.type, key) || null,
        oninput: (e) => { j[key] = e.target.value === '' ? null : Number(e.target.value); autosave(); } });
      const kinds = ['rigid', 'spring', 'damper', 'hysteretic', 'spring-damper', 'measured'];
      body.append(el('tr', {},
        el('td', {}, sel('a')), el('td', {}, sel('b')),
        el('td', {}, el('select', { onchange: (e) => { j.type = e.target.value; renderAsm(); autosave(); } },
          ...kinds.map((k) => el('option', { value: k, selected: k === j.type || null }, k)))),
        el('td', {}, num('k')), el('td', {}, num('c')), el('td', {}, num('eta')),
        el('td', {}, el('select', { disabled: j.type !== 'measured' || null, onchange: (e) => { j.stiffness = e.target.value; autosave(); } },
          el('option', { value: '' }, '—'), ...sets.map((p) => el('option', { value: p.name, selected: p.name === j.stiffness || null }, p.name)))),
        el('td', {}, el('button', { class: 'btn small', onclick: () => { S.asm.joints.splice(i, 1); renderAsm(); autosave(); } }, '✕'))));
    });
    const stages = $('stages');
    clear(stages);
    const names = sets.map((p) => p.name).concat(['assembly'], S.asm.stages.map((s) => s.id));
    S.asm.stages.forEach((st, i) => {
      const ops = { cascade: ['first', 'second'], respond: ['frf', 'excitation'], paths: ['frf', 'excitation'], sum: ['parts'] };
      const pick = (key) => el('select', { onchange: (e) => { st[key] = e.target.value; autosave(); } },
        el('option', { value: '' }, key + '…'), ...names.filter((n) => n !== st.id).map((n) => el('option', { value: n, selected: n === st[key] || null }, n)));
      stages.append(el('div', { class: 'stage' },
        el('input', { value: st.id, size: 10, oninput: (e) => { st.id = e.target.value; autosave(); } }),
        el('select', { onchange: (e) => { st.op = e.target.value; renderAsm(); autosave(); } },
          ...Object.keys(ops).map((o) => el('option', { value: o, selected: o === st.op || null }, o))),
        ...(st.op === 'sum' ? [el('input', { value: st.parts || '', placeholder: 'names, comma separated', oninput: (e) => { st.parts = e.target.value; autosave(); } })]
          : ops[st.op].map(pick)),
        el('button', { class: 'btn small', onclick: () => { S.asm.stages.splice(i, 1); renderAsm(); autosave(); } }, '✕')));
    });
    $('outputs-input').value = S.asm.outputs;
  }
  function needs(type, key) {
    return { spring: ['k'], damper: ['c'], hysteretic: ['k', 'eta'], 'spring-damper': ['k', 'c', 'eta'] }[type]?.includes(key) ?? false;
  }
  function suggestJoints() {
    const sets = loadedSets().filter((p) => S.asm.parts[p.name]);
    const have = new Set(S.asm.joints.map((j) => j.a + '|' + j.b));
    let added = 0;
    for (let i = 0; i < sets.length; i++) for (let k = i + 1; k < sets.length; k++) {
      for (const a of sets[i].s.outputs) for (const b of sets[k].s.outputs) {
        if (nodeOf(a) === nodeOf(b) && !have.has(a + '|' + b) && !have.has(b + '|' + a)) {
          S.asm.joints.push({ a, b, type: 'rigid', k: null, c: null, eta: null, stiffness: '' });
          have.add(a + '|' + b);
          added++;
        }
      }
    }
    status(added ? `${added} joint(s) suggested from matching node labels` : 'no matching node labels between the ticked parts');
    renderAsm();
    autosave();
  }
  function recipeFromPanel() {
    const sets = loadedSets();
    const components = {};
    for (const p of sets) {
      const c = { file: p.file, component: p.ns };
      if (p.s && p.k) c.set = p.k;
      if (p.options && Object.keys(p.options).length) c.import = p.options;
      components[p.name] = c;
    }
    const steps = [];
    const parts = sets.filter((p) => S.asm.parts[p.name]).map((p) => p.name);
    if (parts.length) {
      steps.push({ id: 'assembly', op: 'couple', parts, joints: S.asm.joints.map((j) => {
        const o = { a: j.a, b: j.b, type: j.type };
        for (const key of ['k', 'c', 'eta']) if (needs(j.type, key) && j[key] !== null && j[key] !== undefined) o[key] = j[key];
        if (j.type === 'measured' && j.stiffness) o.stiffness = j.stiffness;
        return o;
      }) });
    }
    for (const st of S.asm.stages) {
      const o = { id: st.id, op: st.op };
      if (st.op === 'cascade') { o.first = st.first; o.second = st.second; }
      else if (st.op === 'sum') o.parts = (st.parts || '').split(',').map((x) => x.trim()).filter(Boolean);
      else { o.frf = st.frf; o.excitation = st.excitation; }
      steps.push(o);
    }
    const outputs = S.asm.outputs.split(',').map((x) => x.trim()).filter(Boolean);
    if (!outputs.length && steps.length) outputs.push(steps[steps.length - 1].id);
    return { format: 'mortise-recipe', version: 1, title: 'assembly built on the page', components, steps, outputs };
  }

  // ---------- running ----------
  async function run() {
    const text = $('recipe-text').value;
    S.recipeText = text;
    $('run-error').hidden = true;
    $('run-btn').disabled = true;
    $('cancel-btn').disabled = false;
    $('run-progress').hidden = false;
    status('computing in the background…', 'busy');
    const t0 = performance.now();
    try {
      const r = await Bridge.callJson('run_recipe', [text], 'running the recipe');
      timings.last_run_ms = performance.now() - t0;
      S.results = r;
      S.resultsJson = await Bridge.call('results_json', []);
      S.plot.sel = defaultSelection(r.results);
      S.plot.xrange = null;
      renderResults();
      await drawPlot();
      status(`done in ${(timings.last_run_ms / 1000).toFixed(2)} s: ${r.results.length} result(s)`);
      autosave();
    } catch (e) {
      if (e.kind !== 'cancelled') {
        const box = $('run-error');
        clear(box);
        box.append(errorBox(e));
        box.hidden = false;
        status('the run failed', 'fail');
      } else {
        status('cancelled; the workspace is as it was');
      }
    } finally {
      $('run-btn').disabled = false;
      $('cancel-btn').disabled = true;
      $('run-progress').hidden = true;
      $('run-stage').textContent = '';
    }
  }
  function defaultSelection(results) {
    return results.slice(0, 4).map((r) => ({ set: r.id, out: 0, in: 0 }));
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
    for (const p of loadedSets()) add('supplier data', p.s);
    for (const inp of S.bundle?.info.inputs || []) for (const s of inp.sets) add('bundle inputs', s);
    return out;
  }
  function renderResults() {
    const sel = $('curve-select');
    clear(sel);
    const groups = {};
    for (const c of curveChoices()) {
      if (!groups[c.group]) { groups[c.group] = el('optgroup', { label: c.group }); sel.append(groups[c.group]); }
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
      const rows = (report.steps || []).map((st) => el('tr', {},
        el('td', {}, st.id), el('td', {}, st.op),
        el('td', {}, st.interface?.worst_condition != null
          ? `interface condition number up to ${fmt(st.interface.worst_condition)} at ${fmt(st.interface.worst_condition_hz)} Hz`
          : st.blocked?.worst_indicator_condition != null
            ? `indicator matrix condition number up to ${fmt(st.blocked.worst_indicator_condition)} at ${fmt(st.blocked.worst_indicator_condition_hz)} Hz` : ''),
        el('td', {}, [...new Set(st.warnings || [])].filter((w) => w !== report.caution).join('; '))));
      if (rows.length) rep.append(el('table', {}, el('tr', {}, el('th', {}, 'step'), el('th', {}, 'operation'), el('th', {}, 'conditioning'), el('th', {}, 'warnings')), ...rows));
      for (const v of report.variants || []) {
        const d = Object.entries(v.level_change_db || {}).map(([k, x]) => `${k}: ${x === null ? '–' : (x > 0 ? '+' : '') + fmt(x, 3) + ' dB'}`).join(', ');
        rep.append(el('div', {}, `variant “${v.name}”, change of the unweighted energy over all lines: ${d}`));
      }
    }
    renderBundleRaw();
  }
  function renderBundleRaw() {
    const box = $('bundle-raw');
    clear(box);
    for (const f of S.files) {
      if (!f.summary) continue;
      if (!(f.name in S.includeRaw)) S.includeRaw[f.name] = true;
      box.append(el('label', {}, el('input', { type: 'checkbox', 'data-raw': f.name, checked: S.includeRaw[f.name],
        onchange: (e) => { S.includeRaw[f.name] = e.target.checked; autosave(); } }), ' include raw FRFs of ', f.name));
    }
  }
  function plotSpec(width) {
    const w = Math.max(420, Math.min(1800, Math.round(width)));
    const h = Math.round(Math.max(320, Math.min(560, w * 0.48)));
    const base = { width: w, height: h, db: S.plot.db, x_log: S.plot.xlog, x_range: S.plot.xrange };
    if (S.plot.kind === 'condition') {
      const steps = (S.results?.report?.steps || []).filter((s) => Array.isArray(s.interface?.condition));
      const grid = S.results?.results?.[0]?.id;
      return { ...base, kind: 'lines', y_log: true, y_label: 'condition number of the interface matrix',
        lines: steps.map((s) => ({ label: `step ${s.id}`, x: [], y: s.interface.condition.map((v) => (v === null ? NaN : v)), x_from: grid })) };
    }
    if (S.plot.kind === 'bars') {
      // the run report's path ranking when there is one, else the chosen set's inputs
      const ranked = (S.results?.report?.steps || []).find((st) => st.ranking?.targets?.length);
      if (ranked) return { ...base, kind: 'bars', path_ranking: ranked.ranking.targets[0] };
      const first = S.plot.sel[0];
      return { ...base, kind: 'bars', ranking: first || null, y_label: '' };
    }
    return { ...base, kind: S.plot.kind, series: S.plot.sel };
  }
  let drawing = null;
  async function drawPlot() {
    const wrap = $('plot-wrap');
    if (!S.plot.sel.length && S.plot.kind !== 'condition') { $('plot-img').removeAttribute('src'); lastFrames = []; return; }
    const spec = plotSpec(wrap.clientWidth || 960);
    if (lastSpec && lastSpec.kind !== spec.kind) $('readout').textContent = '';
    const t0 = performance.now();
    const job = Bridge.callJson('plot_svg', [JSON.stringify(spec)], 'drawing');
    drawing = job;
    try {
      const r = await job;
      if (drawing !== job) return;
      lastSvg = r.svg; lastFrames = r.frames; lastSpec = spec;
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
  async function exportAs(kind) {
    try {
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
      const bytes = await Bridge.call('export_sets', [JSON.stringify(ids), kind], 'writing ' + kind);
      download(bytes, kind === 'uff' ? 'mortise-results.uff' : 'mortise-results.csv', kind === 'uff' ? 'text/plain' : 'text/csv');
    } catch (e) {
      status('export failed: ' + errorText(e), 'fail');
    }
  }
  async function saveBundle() {
    try {
      const loaded = new Set(S.files.filter((f) => f.summary).map((f) => f.name));
      const include = Object.fromEntries(Object.entries(S.includeRaw).filter(([n]) => loaded.has(n)));
      const opts = { created: new Date().toISOString(), include_raw: include, results_only: $('bundle-results-only').checked };
      const made = await Bridge.call('make_bundle', [$('recipe-text').value, JSON.stringify(opts)], 'writing the bundle');
      const info = JSON.parse(made.info);
      download(made.bytes, 'mortise-bundle.json', 'application/json');
      $('bundle-info').textContent = `bundle written: ${made.bytes.length} bytes. ${info.notice}`;
    } catch (e) {
      $('bundle-info').textContent = 'bundle failed: ' + errorText(e);
    }
  }
  async function openBundle(name, bytes) {
    try {
      const info = await Bridge.callJson('open_bundle', [name, bytes], 'opening ' + name);
      S.bundle = { name, bytes, info };
      if (info.recipe) $('recipe-text').value = JSON.stringify(info.recipe, null, 2);
      S.results = { results: info.results, report: info.report };
      S.resultsJson = await Bridge.call('results_json', []);
      if (!restoring) { S.plot.sel = defaultSelection(info.results); S.plot.xrange = null; }
      renderAll();
      await drawPlot();
      status(`bundle ${name} opened: ${info.results.length} result(s), made with mortise ${info.mortise_version}` + (info.created ? ` on ${info.created}` : '')
        + (info.missing.length ? `; to re-run, drop in again: ${info.missing.join(', ')}` : '; it runs as it is'));
      autosave();
    } catch (e) {
      S.files.push({ name, bytes, options: {}, summary: null, error: e });
      renderAll();
    }
  }

  // ---------- mapping dialog ----------
  // The form edits the core's ColumnMap (JSON shown below it, editable too);
  // every change asks the core for a preview of the first rows and the curve.
  let mapEntry = null, mapTimer = null, mapState = null;
  const QTYS = ['displacement', 'velocity', 'acceleration', 'force', 'pressure', 'volume-velocity', 'dimensionless'];
  function colText(c) { return c === null || c === undefined ? '' : String(c); }
  function colRef(t) { const v = String(t).trim(); return /^\d+$/.test(v) ? Number(v) : v; }
  function openMapping(entry) {
    mapEntry = entry;
    $('map-file').textContent = entry.name;
    $('map-component').value = entry.options.component || '';
    mapState = entry.options.column_map ? JSON.parse(JSON.stringify(entry.options.column_map)) : null;
    const box = $('map-fields');
    clear(box);
    box.append(el('div', { id: 'map-form', class: 'map-form-grid' }), el('div', { id: 'map-entries' }),
      el('details', {}, el('summary', {}, 'column map as JSON'),
        el('textarea', { id: 'map-json', rows: 10, spellcheck: 'false', style: 'width:100%;font:12px ui-monospace,monospace',
          oninput: (e) => { try { mapState = JSON.parse(e.target.value); renderMapForm(); schedulePreview(); } catch (_) { /* typing */ } } })));
    preview(true).then(() => renderMapForm());
    $('map-component').oninput = schedulePreview;
    $('map-dialog').showModal();
  }
  function field(label, input) { return el('label', {}, label, ' ', input); }
  function select(value, options, on) {
    return el('select', { onchange: (e) => on(e.target.value) },
      ...options.map(([v, t]) => el('option', { value: v, selected: v === value || null }, t)));
  }
  function renderMapForm() {
    const m = mapState;
    const box = $('map-form');
    clear(box);
    if (!m || typeof m !== 'object') return;
    m.entries = Array.isArray(m.entries) ? m.entries : [];
    const upd = (fn) => (v) => { fn(v); syncJson(); schedulePreview(); };

    box.append(...[
      field('delimiter', select(m.delimiter, [['auto', 'decide from the data'], ['comma', 'comma'], ['semicolon', 'semicolon'], ['tab', 'tab'], ['whitespace', 'spaces']], upd((v) => { m.delimiter = v; }))),
      field('lines before the data', el('input', { type: 'number', min: 0, value: m.skip_rows, oninput: (e) => upd((v) => { m.skip_rows = Number(v) || 0; })(e.target.value) })),
      field('column-name line', el('input', { type: 'number', min: 1, value: m.header_line ?? '', placeholder: 'last skipped line', oninput: (e) => upd((v) => { m.header_line = v === '' ? null : Number(v); })(e.target.value) })),
      el('label', {}, el('input', { type: 'checkbox', checked: m.decimal_comma, onchange: (e) => upd((v) => { m.decimal_comma = v; })(e.target.checked) }), ' decimal comma (0,25)'),
      field('frequency column', el('input', { value: colText(m.freq), oninput: (e) => upd((v) => { m.freq = colRef(v); })(e.target.value) })),
      field('frequency unit', select(m.freq_unit, [['hz', 'Hz'], ['k-hz', 'kHz'], ['rad-per-s', 'rad/s']], upd((v) => { m.freq_unit = v; }))),
      field('value unit', el('input', { value: m.unit, placeholder: 'e.g. g/N, mm/s/N, N/mm; empty = SI', oninput: (e) => upd((v) => { m.unit = v; })(e.target.value) })),
      field('output quantity', select(m.out_qty, QTYS.map((q) => [q, q]), upd((v) => { m.out_qty = v; }))),
      field('input quantity', select(m.in_qty, QTYS.map((q) => [q, q]), upd((v) => { m.in_qty = v; }))),
      field('spectrum', select(m.signal ?? '', [['', 'no: these are FRFs'], ['peak', 'peak'], ['rms', 'RMS'], ['autopower', 'autopower'], ['psd', 'PSD']], upd((v) => { m.signal = v || null; }))),
      field('magnitude', select(m.mag_scale?.scale || 'linear', [['linear', 'linear'], ['db', 'dB']], upd((v) => { m.mag_scale = v === 'db' ? { scale: 'db', reference: m.mag_scale?.reference ?? 1 } : { scale: 'linear' }; renderMapForm(); }))),
      m.mag_scale?.scale === 'db' ? field('dB reference (value unit)', el('input', { type: 'number', step: 'any', value: m.mag_scale.reference, oninput: (e) => upd((v) => { m.mag_scale.reference = Number(v); })(e.target.value) })) : null,
      field('phase unit', select(m.phase_unit, [['deg', 'degrees'], ['rad', 'radians']], upd((v) => { m.phase_unit = v; }))),
      el('label', {}, el('input', { type: 'checkbox', checked: m.conjugate, onchange: (e) => upd((v) => { m.conjugate = v; })(e.target.checked) }), ' supplier uses e^{−iωt} (conjugate the values)')].filter(Boolean));
    const ebox = $('map-entries');
    clear(ebox);
    ebox.append(el('h3', {}, 'FRFs in the file'));
    const forms = [['re-im', 're / im'], ['mag-phase', 'magnitude / phase'], ['real', 'one real value']];
    m.entries.forEach((en, i) => {
      const v = en.values;
      const cols = v.form === 're-im' ? ['re', 'im'] : v.form === 'mag-phase' ? ['mag', 'phase'] : ['value'];
      ebox.append(el('div', { class: 'stage' },
        el('input', { value: en.out_dof, size: 10, placeholder: 'output DOF', title: 'output DOF, e.g. A1+Z', oninput: (e) => upd((x) => { en.out_dof = x; })(e.target.value) }),
        el('input', { value: en.in_dof, size: 10, placeholder: 'input DOF', title: 'input DOF (ignored for spectra)', oninput: (e) => upd((x) => { en.in_dof = x; })(e.target.value) }),
        select(v.form, forms, upd((x) => { en.values = x === 're-im' ? { form: x, re: 2, im: 3 } : x === 'mag-phase' ? { form: x, mag: 2, phase: 3 } : { form: x, value: 2 }; renderMapForm(); })),
        ...cols.map((c) => el('input', { value: colText(v[c]), size: 4, title: c + ' column', placeholder: c, oninput: (e) => upd((x) => { v[c] = colRef(x); })(e.target.value) })),
        el('button', { class: 'btn small', type: 'button', onclick: () => { m.entries.splice(i, 1); renderMapForm(); syncJson(); schedulePreview(); } }, '✕')));
    });
    ebox.append(el('button', { class: 'btn small', type: 'button', onclick: () => {
      const n = m.entries.length;
      m.entries.push({ out_dof: `${n + 1}+Z`, in_dof: '1+Z', values: { form: 're-im', re: 2 + 2 * n, im: 3 + 2 * n }, coherence: null });
      renderMapForm(); syncJson(); schedulePreview();
    } }, 'Add an FRF'));
    syncJson();
  }
  function syncJson() { const t = $('map-json'); if (t && document.activeElement !== t) t.value = JSON.stringify(mapState, null, 2); }
  function mapOptions() {
    const o = {};
    const comp = $('map-component').value.trim();
    if (comp) o.component = comp;
    if (mapState) o.column_map = mapState;
    return o;
  }
  function schedulePreview() { clearTimeout(mapTimer); mapTimer = setTimeout(() => preview(false), 200); }
  async function preview(first) {
    const r = await Bridge.callJson('csv_preview', [mapEntry.name, mapEntry.bytes, JSON.stringify(mapOptions()), 20], 'previewing').catch((e) => ({ error: e }));
    if (first && !mapState && r.template) mapState = r.template;
    const tbl = $('map-table');
    clear(tbl);
    const p = r.preview;
    if (p) {
      const width = Math.max(p.header.length, ...p.rows.map((x) => x.cells.length));
      const vals = new Map(p.values.map((v) => [v.line, v]));
      const nE = Math.max(0, ...p.values.map((v) => v.entries.length));
      tbl.append(el('div', { class: 'muted' }, `delimiter: ${p.delimiter}; right of the bar: what the core reads from each row (SI)`),
        el('table', {},
          el('tr', {}, el('th', {}, 'line'), ...Array.from({ length: width }, (_, i) => el('th', {}, `${i + 1}` + (p.header[i] ? ` · ${p.header[i]}` : ''))),
            el('th', {}, '│ f (Hz)'), ...Array.from({ length: nE }, (_, i) => el('th', {}, `FRF ${i + 1} (re, im)`))),
          ...p.rows.map((row) => {
            const v = vals.get(row.line);
            return el('tr', {}, el('th', {}, row.line), ...Array.from({ length: width }, (_, i) => el('td', {}, row.cells[i] ?? '')),
              el('td', {}, v ? fmt(v.freq_hz) : ''), ...(v ? v.entries.map(([re, im]) => el('td', {}, `${fmt(re)}, ${fmt(im)}`)) : []));
          })));
      if (p.problem) tbl.append(el('div', { class: 'warn' }, p.problem));
    }
    const err = $('map-error');
    clear(err);
    err.hidden = !r.error;
    if (r.error) err.append(errorBox(r.error));
    const img = $('map-plot');
    if (r.svg) { img.src = URL.createObjectURL(new Blob([r.svg], { type: 'image/svg+xml' })); img.hidden = false; } else img.hidden = true;
    $('map-ok').disabled = !r.summary;
  }
  $('map-dialog').addEventListener('close', async () => {
    if ($('map-dialog').returnValue !== 'ok' || !mapEntry) return;
    mapEntry.options = mapOptions();
    await loadEntry(mapEntry);
  });

  // ---------- rendering all ----------
  function renderAll() {
    renderCards();
    renderAsm();
    renderResults();
  }

  // ---------- workspace restore / replay ----------
  async function replay() {
    for (const f of S.files) {
      try {
        f.summary = await Bridge.callJson('load_file', [f.name, f.bytes, JSON.stringify(f.options)], 'reading ' + f.name);
        f.error = null;
      } catch (e) { f.summary = null; f.error = e; }
    }
    if (S.bundle) {
      try { S.bundle.info = await Bridge.callJson('open_bundle', [S.bundle.name, S.bundle.bytes]); } catch (_) { S.bundle = null; }
    }
    if (S.resultsJson) {
      try { S.results = await Bridge.callJson('put_results', [S.resultsJson]); } catch (_) { S.results = null; S.resultsJson = null; }
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
      S.asm = snap.asm || S.asm;
      S.plot = snap.plot || S.plot;
      S.includeRaw = snap.includeRaw || {};
      $('recipe-text').value = snap.recipeText || '';
      await replay();
      renderAll();
      await drawPlot();
    } finally {
      restoring = false;
    }
    return true;
  }
  async function clearWorkspace() {
    await Bridge.call('clear_workspace', []);
    S.files = []; S.bundle = null; S.results = null; S.resultsJson = null;
    S.asm = { parts: {}, joints: [], stages: [], outputs: '' };
    S.plot = { kind: 'bode', db: true, xlog: true, xrange: null, sel: [] };
    S.includeRaw = {};
    $('recipe-text').value = '';
    lastSvg = null; lastFrames = []; lastSpec = null;
    $('plot-img').removeAttribute('src');
    $('readout').textContent = '';
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
    $('add-joint-btn').addEventListener('click', () => { S.asm.joints.push({ a: '', b: '', type: 'rigid', k: null, c: null, eta: null, stiffness: '' }); renderAsm(); autosave(); });
    $('add-stage-btn').addEventListener('click', () => { S.asm.stages.push({ id: 'stage' + (S.asm.stages.length + 1), op: 'cascade' }); renderAsm(); autosave(); });
    $('outputs-input').addEventListener('input', (e) => { S.asm.outputs = e.target.value; autosave(); });
    $('build-recipe-btn').addEventListener('click', () => { $('recipe-text').value = JSON.stringify(recipeFromPanel(), null, 2); autosave(); });
    $('recipe-text').addEventListener('input', autosave);
    $('run-btn').addEventListener('click', run);
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
    $('bundle-btn').addEventListener('click', saveBundle);
    let resizeTimer = null;
    window.addEventListener('resize', () => { clearTimeout(resizeTimer); resizeTimer = setTimeout(drawPlot, 200); });
    Bridge.onProgress(({ stage }) => { if (!$('run-progress').hidden) $('run-stage').textContent = stage; });
    Bridge.setReplay(replay);
    wirePlot();
  }

  async function main() {
    wire();
    renderAll();
    try {
      const version = await Bridge.start($('core-wasm').textContent, $('core-wasm').dataset.encoding, $('worker-src').textContent);
      $('core-version').textContent = 'core ' + version;
      const restored = await restore();
      timings.ready_ms = performance.now() - T0;
      status(restored ? `workspace restored: ${S.files.length} file(s)` : 'ready: add supplier files or load the demo');
    } catch (e) {
      status('the core could not start: ' + errorText(e), 'fail');
    }
  }
  main();
})();
