// timedata.js: recordings (time data) on their cards: the WAV channel
// description, the core's time view (drawn by the core as SVG, zoomed by
// asking it for another time range), the analysis choices and their
// results. Every list (analyses, windows, spectrum kinds, estimators,
// detrend) comes from the core's time_analysis_options; the window's
// corrections from time_window_corrections; nothing here computes.
let timeOptions = null;
async function timeVocabulary() {
  if (!timeOptions) timeOptions = await Bridge.callJson('time_analysis_options', []);
  return timeOptions;
}
// A WAV file the core refused for want of channel descriptions: a box to describe them.
function channelsBlock(f) {
  const lines = (f.options?.channels || []).join('\n');
  const id = 'chan-' + f.name.replace(/[^A-Za-z0-9_-]/g, '_');
  const ta = el('textarea', { id, rows: 3, cols: 44, spellcheck: 'false', 'data-channels': f.name }, lines);
  return el('div', { class: 'time-channels' },
    el('label', { for: id }, 'Channels, one per line (N=DOF QUANTITY FULL_SCALE UNIT):'), ta,
    el('button', { class: 'btn small', 'data-read-channels': f.name, onclick: async () => {
      f.options = { ...(f.options || {}), channels: ta.value.split('\n').map((l) => l.trim()).filter(Boolean) };
      await loadEntry(f);
    } }, 'Read with these channels'));
}
// A supplier's time CSV: its time map (JSON, the core's TimeColumnMap) typed on its card; the
// core reads the file through it into a recording, or names what it cannot map.
function timeMapBlock(f) {
  const id = 'tmap-' + f.name.replace(/[^A-Za-z0-9_-]/g, '_');
  const ta = el('textarea', { id, rows: 4, cols: 64, spellcheck: 'false', 'data-time-map': f.name }, f.options?.time_map ? JSON.stringify(f.options.time_map) : '');
  const msg = el('div', { class: 'help', role: 'status' });
  return el('details', { class: 'time-channels', open: !!f.options?.time_map },
    el('summary', {}, 'Read as time data through a time map…'),
    el('label', { for: id }, 'Time map (JSON): delimiter, skip_rows, header_line, unit_line, decimal_comma, time, time_unit (s or ms), channels [{column, dof, unit}]; columns by name or number:'), ta,
    el('button', { class: 'btn small', 'data-read-time-map': f.name, onclick: async () => {
      let map;
      try { map = JSON.parse(ta.value); } catch (e) { msg.textContent = 'the time map is not JSON: ' + e.message; return; }
      const { column_map: _drop, ...rest } = f.options || {};
      f.options = { ...rest, time_map: map };
      await loadEntry(f);
    } }, 'Read as time data'), msg);
}
function timeState(f) {
  if (!f.time) {
    const o = timeOptions || {};
    const d = o.defaults || {};
    const rec = f.summary.recording;
    // each impact / order field starts at the core's default (empty when it has none)
    const start = (fields) => Object.fromEntries((fields || []).map((x) => [x.key, x.default ?? '']));
    f.time = { range: null, out: null, err: null, req: { ...d, records: (o.records || ['welch'])[0],
      inputs: rec.channels.slice(0, 1).map((c) => c.dof), reference: '',
      impact: start(o.impact?.fields), orders: { ...start(o.orders?.fields), from: (o.orders?.speed || ['profile'])[0], speed: '', tach: rec.channels[0]?.dof || '' } } };
  }
  return f.time;
}
// Typed numbers as the core reads them: empty fields are left out (the core's default applies).
function numbersOf(obj, keys) {
  const q = {};
  for (const k of keys) { const v = obj[k]; if (v !== '' && v !== null && v !== undefined) q[k] = Number(v); }
  return q;
}
// The request as the core reads it: only the fields of the chosen analysis.
function timeRequest(t) {
  const r = t.req, o = timeOptions || {};
  if (r.analysis === 'orders') {
    const keys = (o.orders?.fields || []).filter((x) => !x.with || x.with === r.orders.from).map((x) => x.key);
    const q = numbersOf(r.orders, keys);
    if (r.orders.from === 'tach') q.tach = r.orders.tach; else q.speed = r.orders.speed;
    return { analysis: 'orders', orders: q };
  }
  if (r.records === 'impact') {
    const impact = numbersOf(r.impact, (o.impact?.fields || []).map((x) => x.key));
    const one = r.inputs.slice(0, 1);
    if (r.analysis === 'frf') return { analysis: 'frf', inputs: one, estimator: r.estimator, impact };
    return { analysis: 'spectrum', kind: (o.impact?.kinds || ['esd'])[0], inputs: one, impact };
  }
  const base = { analysis: r.analysis, window: r.window, segment: Number(r.segment), overlap: Number(r.overlap), detrend: r.detrend };
  if (r.analysis === 'frf') return { ...base, inputs: r.inputs, estimator: r.estimator };
  const q = { ...base, kind: r.kind };
  if (r.reference) q.reference = r.reference;
  return q;
}
// The result of an analysis on its card: how the record was cut (the core's words), the impact
// records with the reason each left-out one was refused, the speed sweep's tables.
function timeResultBlock(f, o) {
  const box = el('div', { class: 'audit-sum', 'data-time-result': o.file },
    `made ${o.file}: ${o.described}` + (o.notes.length ? '; ' + o.notes.join('; ') : ''));
  if (o.records?.length) {
    box.append(el('table', { class: 'time-records', 'data-time-records': o.file },
      el('caption', {}, `impact records: ${o.accepted} averaged, ${o.rejected} left out`),
      el('thead', {}, el('tr', {}, ['record', 'trigger (s)', 'peak force', 'verdict'].map((h) => el('th', { scope: 'col' }, h)))),
      el('tbody', {}, o.records.map((x, i) => el('tr', { 'data-record-rejected': x.rejected ? 'yes' : 'no' },
        el('td', {}, String(i + 1)), el('td', {}, fmt(x.trigger_s, 6)), el('td', {}, fmt(x.peak)),
        el('td', {}, x.rejected ? 'left out: ' + x.rejected : 'averaged'))))));
  }
  if (o.by_speed) {
    const text = JSON.stringify(o.by_speed, null, 1);
    const name = o.file.replace(/\.csv$/, '') + '.by-speed.json';
    const id = 'by-speed-' + o.file.replace(/[^A-Za-z0-9_-]/g, '_');
    box.append(el('div', { class: 'time-by-speed' },
      el('label', { for: id }, `order-by-speed table for a speed sweep's "orders" (rows [speed rev/s, re, im]):`),
      el('textarea', { id, rows: 6, cols: 60, readonly: true, spellcheck: 'false', 'data-by-speed': o.file }, text),
      el('button', { class: 'btn small', onclick: () => download(text + '\n', name, 'application/json') }, `download ${name}`)));
  }
  return box;
}
function recordingBlock(f) {
  const rec = f.summary.recording;
  const box = el('div', { class: 'recording', 'data-recording': f.name });
  box.append(el('dl', { class: 'kv' },
    el('dt', {}, 'kind'), el('dd', {}, `recording (${rec.format})`),
    el('dt', {}, 'sampling'), el('dd', {}, `${fmt(rec.sample_rate_hz)} Hz, ${rec.samples} samples, ${fmt(rec.duration_s)} s`),
    el('dt', {}, 'channels'), el('dd', { class: 'dofs' }, rec.channels.map((c) => `${c.dof} ${c.quantity} [${c.unit}] (${fmt(c.min)} to ${fmt(c.max)})`).join('; ')),
    el('dt', {}, 'held'), el('dd', {}, `${rec.held_bytes} bytes (the samples at 8 bytes each; a WAV or time CSV keeps its file too)`)),
    ...rec.notes.map((n) => el('div', { class: 'help' }, n)));
  if (!timeOptions) { timeVocabulary().then(() => renderCards()); return box; }
  const t = timeState(f);
  const view = el('figure', { class: 'time-view' });
  box.append(view, analysisForm(f, t));
  drawTimeView(f, view);
  if (t.err) box.append(errorBox(t.err));
  if (t.out) box.append(timeResultBlock(f, t.out));
  return box;
}
async function drawTimeView(f, fig) {
  const t = f.time;
  const width = Math.max(320, Math.min(1100, Math.round((fig.parentElement?.clientWidth || 700) - 20)));
  const height = 90 + 110 * f.summary.recording.channels.length;
  try {
    const range = t.range ? JSON.stringify(t.range) : '';
    // choices the core refuses: the view without blocks, and why
    let why = null;
    const d = await Bridge.callJson('time_view_svg', [f.name, range, JSON.stringify(timeRequest(t)), width, height])
      .catch(async (e) => { why = e; return Bridge.callJson('time_view_svg', [f.name, range, '', width, height]); });
    clear(fig);
    if (why) fig.append(el('div', { class: 'warn' }, 'no blocks shown: ' + errorText(why)));
    fig.append(el('img', { src: 'data:image/svg+xml;charset=utf-8,' + encodeURIComponent(d.svg), alt: d.summary, width: d.width, height: d.height, 'data-time-view': f.name }));
    const rec = f.summary.recording;
    const whole = [0, Math.max((rec.samples - 1) / rec.sample_rate_hz, 1 / rec.sample_rate_hz)];
    const [a, b] = t.range || whole;
    const zoom = (k) => { const c = (a + b) / 2, h = (b - a) / 2 * k; t.range = [c - h, c + h]; drawTimeView(f, fig); };
    const pan = (k) => { const s = (b - a) * k; t.range = [a + s, b + s]; drawTimeView(f, fig); };
    fig.append(el('figcaption', { class: 'time-zoom' },
      el('button', { class: 'btn small', onclick: () => zoom(0.5) }, 'Zoom in'),
      el('button', { class: 'btn small', onclick: () => zoom(2) }, 'Zoom out'),
      el('button', { class: 'btn small', 'aria-label': 'earlier', onclick: () => pan(-0.5) }, '◀'),
      el('button', { class: 'btn small', 'aria-label': 'later', onclick: () => pan(0.5) }, '▶'),
      el('button', { class: 'btn small', onclick: () => { t.range = null; drawTimeView(f, fig); } }, 'Whole record'),
      el('span', { class: 'help' }, ` ${fmt(a)} s to ${fmt(b)} s; shaded: the analysis blocks (impact records left out in red, dashed; hover for the reason)`)));
  } catch (e) {
    clear(fig);
    fig.append(errorBox(e));
  }
}
function analysisForm(f, t) {
  const o = timeOptions, r = t.req, rec = f.summary.recording;
  const uid = (k) => `time-${k}-` + f.name.replace(/[^A-Za-z0-9_-]/g, '_');
  const field = (key, label, control) => { control.id = uid(key); control.dataset.timeField = key; return el('label', { for: control.id, class: 'time-field' }, label + ' ', control); };
  const select = (key, values, label, obj = r) => field(key, label, el('select', { onchange: (ev) => { obj[key] = ev.target.value; refresh(); } },
    values.map((v) => el('option', { value: v, selected: String(obj[key]) === v }, v))));
  const number = (key, label, step, obj = r, prefix = '') => field(prefix + key, label, el('input', { type: 'number', step, value: obj[key], size: 7, onchange: (ev) => { obj[key] = ev.target.value; refresh(); } }));
  const corr = el('div', { class: 'help', 'data-window-corrections': '' });
  const form = el('div', { class: 'time-form' });
  // after the event: the control that fired it is not removed while it dispatches (change fires on blur)
  const refresh = () => { setTimeout(renderCards, 0); };
  const dofs = rec.channels.map((c) => c.dof);
  form.append(select('analysis', o.analyses, 'Analysis'));
  // the core's field list: label, unit, and the window a field is the parameter of
  const fieldsOf = (list, obj, prefix) => list.map((x) => number(x.key, `${x.label}${x.unit ? ` (${x.unit})` : ''}${x.window ? ` [window ${x.window}: ${x.parameter}]` : ''}`, 'any', obj, prefix));
  if (r.analysis === 'orders') {
    const q = r.orders;
    form.append(select('from', o.orders.speed, 'Speed from', q));
    if (q.from === 'tach') form.append(select('tach', dofs, 'Tachometer channel', q));
    else form.append(field('speed', `Speed profile (${o.orders.profile_form})`, el('input', { type: 'text', size: 24, value: q.speed, onchange: (ev) => { q.speed = ev.target.value; refresh(); } })));
    form.append(...fieldsOf(o.orders.fields.filter((x) => !x.with || x.with === q.from), q, 'orders-'));
  } else {
    form.append(select('records', o.records, 'Blocks'));
    const impact = r.records === 'impact';
    if (!impact) {
      const windowNames = o.windows.map((w) => w.example || w.name);
      if (!windowNames.includes(r.window)) windowNames.push(r.window);
      form.append(select('window', windowNames, 'Window'),
        field('window-text', 'or type', el('input', { type: 'text', size: 14, value: r.window, onchange: (ev) => { r.window = ev.target.value.trim(); refresh(); } })),
        number('segment', 'Block length (samples)', 1), number('overlap', 'Overlap (fraction)', 0.05), select('detrend', o.detrend, 'Detrend'));
    } else {
      form.append(select('trigger-channel', dofs, 'Triggered on (force channel)', { get 'trigger-channel'() { return r.inputs[0] || ''; }, set 'trigger-channel'(v) { r.inputs = [v]; } }),
        ...fieldsOf(o.impact.fields, r.impact, 'impact-'));
    }
    if (r.analysis === 'frf') {
      if (!impact) {
        const ins = el('fieldset', { class: 'time-inputs' }, el('legend', {}, 'Force (input) channels'),
          rec.channels.map((c) => el('label', {}, el('input', { type: 'checkbox', checked: r.inputs.includes(c.dof), 'data-input': c.dof, onchange: (ev) => {
            r.inputs = ev.target.checked ? [...r.inputs, c.dof] : r.inputs.filter((d) => d !== c.dof);
          } }), ' ' + c.dof)));
        form.append(ins);
      }
      form.append(select('estimator', o.estimators, 'Estimator'));
    } else if (impact) {
      form.append(el('span', { class: 'help' }, `spectrum: ${o.impact.kinds.join(', ')} (energy spectral density of the records)`));
    } else {
      form.append(select('kind', o.spectrum_kinds, 'Spectrum'));
      if (o.kinds_with_reference.includes(r.kind)) form.append(select('reference', ['', ...dofs], 'Reference channel'));
      else r.reference = '';
    }
    if (!impact) {
      Bridge.callJson('time_window_corrections', [r.window, Number(r.segment) || 0, rec.sample_rate_hz])
        .then((c) => { corr.textContent = `window ${r.window} on ${r.segment} samples: coherent gain ${fmt(c.coherent_gain, 6)}, ENBW ${fmt(c.enbw_bins, 6)} bins = ${fmt(c.enbw_hz)} Hz; amplitude correction ×${fmt(c.amplitude_correction, 6)}, energy correction ×${fmt(c.energy_correction, 6)}`; })
        .catch((e) => { corr.textContent = errorText(e); });
    }
  }
  form.append(el('button', { class: 'btn', 'data-time-run': f.name, onclick: () => runTimeAnalysis(f) }, 'Analyse'), corr);
  return form;
}
async function runTimeAnalysis(f) {
  const t = f.time;
  try {
    const r = await Bridge.call('time_analyse', [f.name, JSON.stringify(timeRequest(t))], 'analysing ' + f.name);
    const info = JSON.parse(r.info);
    t.out = info; t.err = null;
    // the result is a file of our CSV layout, already in the core's workspace: kept like a dropped file
    let entry = S.files.find((x) => x.name === info.file);
    if (!entry) { entry = { name: info.file, bytes: r.bytes, options: {}, summary: null, error: null }; S.files.push(entry); }
    entry.bytes = r.bytes; entry.summary = info.summary; entry.error = null;
    S.filesEpoch++;
    markStale(`the file ${info.file} was made after this run`);
    status(`${info.file}: ${info.summary.sets.length} set(s) from ${f.name}`);
  } catch (e) {
    t.err = e; t.out = null;
  }
  renderAll();
  autosave();
}
