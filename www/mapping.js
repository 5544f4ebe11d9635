// mapping.js: the column-mapping dialog for supplier CSVs.
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
function select(value, options, label, on) {
  if (typeof label === 'function') { on = label; label = null; }
  return el('select', { 'aria-label': label, onchange: (e) => on(e.target.value) },
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
      el('input', { value: en.out_dof, size: 10, 'aria-label': `FRF ${i + 1}, output DOF`, placeholder: 'output DOF', title: 'output DOF, e.g. A1+Z', oninput: (e) => upd((x) => { en.out_dof = x; })(e.target.value) }),
      el('input', { value: en.in_dof, size: 10, 'aria-label': `FRF ${i + 1}, input DOF`, placeholder: 'input DOF', title: 'input DOF (ignored for spectra)', oninput: (e) => upd((x) => { en.in_dof = x; })(e.target.value) }),
      select(v.form, forms, `FRF ${i + 1}, value columns`, upd((x) => { en.values = x === 're-im' ? { form: x, re: 2, im: 3 } : x === 'mag-phase' ? { form: x, mag: 2, phase: 3 } : { form: x, value: 2 }; renderMapForm(); })),
      ...cols.map((c) => el('input', { value: colText(v[c]), size: 4, 'aria-label': `FRF ${i + 1}, ${c} column`, title: c + ' column', placeholder: c, oninput: (e) => upd((x) => { v[c] = colRef(x); })(e.target.value) })),
      el('button', { class: 'btn small', type: 'button', 'aria-label': `remove FRF ${i + 1} (${en.out_dof} / ${en.in_dof})`, onclick: () => { m.entries.splice(i, 1); renderMapForm(); syncJson(); schedulePreview(); } }, '✕')));
  });
  ebox.append(el('button', { class: 'btn small', type: 'button', onclick: () => {
    // a new row carries over the last row's input DOF and value form, in the next free columns
    const n = m.entries.length, last = m.entries[n - 1];
    const used = m.entries.flatMap((x) => Object.values(x.values || {})).filter((c) => typeof c === 'number');
    const next = Math.max(1, ...used) + 1;
    const form = last?.values?.form || 're-im';
    const values = form === 're-im' ? { form, re: next, im: next + 1 } : form === 'mag-phase' ? { form, mag: next, phase: next + 1 } : { form, value: next };
    m.entries.push({ out_dof: `${n + 1}+Z`, in_dof: last?.in_dof || '1+Z', values, coherence: null });
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
  // the dialog starts from the map the core detects from the file, with its reasons
  if (first && !mapState && r.detected) { mapState = r.detected.map; schedulePreview(); }
  if (first && !mapState && r.template) mapState = r.template;
  if (first) {
    const why = $('map-detected');
    clear(why);
    if (r.detected) why.append(el('strong', {}, 'Filled in from the file; check each line: '), el('ul', {}, ...r.detected.reasons.map((t) => el('li', {}, t))));
    else if (r.detect_error) why.append(el('strong', {}, 'Not detected from the file: '), r.detect_error.message);
    why.hidden = !(r.detected || r.detect_error);
  }
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
  mapEntry.mappedLike = null;
  await loadEntry(mapEntry);
  if (mapEntry.error) return;
  const others = await mapOthersLike(mapEntry);
  if (others.length) status(`${mapEntry.name} mapped; the same map read ${others.join(', ')} (same layout)`);
});
