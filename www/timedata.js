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
function timeState(f) {
  if (!f.time) {
    const d = timeOptions?.defaults || {};
    const rec = f.summary.recording;
    f.time = { range: null, req: { ...d, inputs: rec.channels.slice(0, 1).map((c) => c.dof), reference: '' }, out: null, err: null };
  }
  return f.time;
}
// The request as the core reads it: only the fields of the chosen analysis.
function timeRequest(t) {
  const r = t.req;
  const base = { analysis: r.analysis, window: r.window, segment: Number(r.segment), overlap: Number(r.overlap), detrend: r.detrend };
  if (r.analysis === 'frf') return { ...base, inputs: r.inputs, estimator: r.estimator };
  const q = { ...base, kind: r.kind };
  if (r.reference) q.reference = r.reference;
  return q;
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
  if (t.out) {
    const o = t.out;
    box.append(el('div', { class: 'audit-sum', 'data-time-result': o.file },
      `made ${o.file}: ${o.segments} block(s) of ${o.segment} samples (${o.overlap_samples} overlapping), Δf = ${fmt(o.df_hz)} Hz` +
      (o.notes.length ? '; ' + o.notes.join('; ') : '')));
  }
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
      el('span', { class: 'help' }, ` ${fmt(a)} s to ${fmt(b)} s; shaded: the analysis blocks`)));
  } catch (e) {
    clear(fig);
    fig.append(errorBox(e));
  }
}
function analysisForm(f, t) {
  const o = timeOptions, r = t.req, rec = f.summary.recording;
  const uid = (k) => `time-${k}-` + f.name.replace(/[^A-Za-z0-9_-]/g, '_');
  const field = (key, label, control) => { control.id = uid(key); control.dataset.timeField = key; return el('label', { for: control.id, class: 'time-field' }, label + ' ', control); };
  const select = (key, values, label) => field(key, label, el('select', { onchange: (ev) => { r[key] = ev.target.value; refresh(); } },
    values.map((v) => el('option', { value: v, selected: String(r[key]) === v }, v))));
  const number = (key, label, step) => field(key, label, el('input', { type: 'number', step, value: r[key], size: 7, onchange: (ev) => { r[key] = ev.target.value; refresh(); } }));
  const corr = el('div', { class: 'help', 'data-window-corrections': '' });
  const form = el('div', { class: 'time-form' });
  // after the event: the control that fired it is not removed while it dispatches (change fires on blur)
  const refresh = () => { setTimeout(renderCards, 0); };
  form.append(select('analysis', o.analyses, 'Analysis'));
  const windowNames = o.windows.map((w) => w.example || w.name);
  if (!windowNames.includes(r.window)) windowNames.push(r.window);
  form.append(select('window', windowNames, 'Window'),
    field('window-text', 'or type', el('input', { type: 'text', size: 14, value: r.window, onchange: (ev) => { r.window = ev.target.value.trim(); refresh(); } })),
    number('segment', 'Block length (samples)', 1), number('overlap', 'Overlap (fraction)', 0.05), select('detrend', o.detrend, 'Detrend'));
  if (r.analysis === 'frf') {
    const ins = el('fieldset', { class: 'time-inputs' }, el('legend', {}, 'Force (input) channels'),
      rec.channels.map((c) => el('label', {}, el('input', { type: 'checkbox', checked: r.inputs.includes(c.dof), 'data-input': c.dof, onchange: (ev) => {
        r.inputs = ev.target.checked ? [...r.inputs, c.dof] : r.inputs.filter((d) => d !== c.dof);
      } }), ' ' + c.dof)));
    form.append(ins, select('estimator', o.estimators, 'Estimator'));
  } else {
    form.append(select('kind', o.spectrum_kinds, 'Spectrum'));
    if (o.kinds_with_reference.includes(r.kind)) form.append(select('reference', ['', ...rec.channels.map((c) => c.dof)], 'Reference channel'));
    else r.reference = '';
  }
  form.append(el('button', { class: 'btn', 'data-time-run': f.name, onclick: () => runTimeAnalysis(f) }, 'Analyse'), corr);
  Bridge.callJson('time_window_corrections', [r.window, Number(r.segment) || 0, rec.sample_rate_hz])
    .then((c) => { corr.textContent = `window ${r.window} on ${r.segment} samples: coherent gain ${fmt(c.coherent_gain, 6)}, ENBW ${fmt(c.enbw_bins, 6)} bins = ${fmt(c.enbw_hz)} Hz; amplitude correction ×${fmt(c.amplitude_correction, 6)}, energy correction ×${fmt(c.energy_correction, 6)}`; })
    .catch((e) => { corr.textContent = errorText(e); });
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
