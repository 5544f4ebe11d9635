// files.js: reading files into the workspace, and their cards.
// Import options the current recipe gives a file (its column map and DOF
// namespace), so a supplier CSV named in a recipe reads without the dialog.
function recipeOptionsFor(name) {
  const r = R.json;
  for (const [key, c] of Object.entries(r?.components || {})) {
    if (!c || typeof c.file !== 'string' || c.file.replace(/^.*[\\/]/, '') !== name) continue;
    const o = { ...(c.import || {}) };
    o.component = c.component || o.component || key;
    return o;
  }
  return null;
}
// Returns what the bytes were: 'recipe', 'bundle' (opened or declined) or
// 'data' (read onto a card, or refused there).
async function addFile(name, bytes, options) {
  if (/\.recipe\.json$/i.test(name)) {
    if (!(await replaceRecipe(new TextDecoder().decode(bytes), name))) return 'recipe';
    // files already loaded that the recipe reads with other options: read them again
    for (const f of S.files) {
      const o = recipeOptionsFor(f.name);
      if (o && JSON.stringify(o) !== JSON.stringify(f.options)) { f.options = o; await loadEntry(f); }
    }
    renderAsm();
    status(`recipe read from ${name}`);
    autosave();
    return 'recipe';
  }
  if (!options) options = recipeOptionsFor(name) || undefined;
  let entry = S.files.find((f) => f.name === name);
  // one call, so the bytes cross to the worker once: the core says whether
  // they are a bundle (not read), else reads them as a data file
  const read = await readBytes(name, bytes, options || (entry ? entry.options : {}), 'take_file');
  if (read.kind === 'bundle') {
    // a bundle brings its own recipe and results: ask before the recipe on screen goes
    if (!restoring && R.text.trim() && !(await ask(`Opening the bundle ${name} replaces the recipe text and the results on screen with the bundle's. Open it?`, 'Open the bundle', 'Keep my recipe'))) {
      status(`bundle ${name} not opened; the recipe on screen is kept`);
      return 'bundle';
    }
    await openBundle(name, bytes);
    adoptRecipeText('the bundle ' + name);
    // the bundle's results belong to the bundle's recipe: not stale
    if (S.bundle && S.bundle.bytes === bytes) clearStale();
    return 'bundle';
  }
  if (!entry) {
    entry = { name, bytes, options: options || {}, summary: null, error: null };
    S.files.push(entry);
  } else {
    entry.bytes = bytes;
    if (options) entry.options = options;
  }
  settleEntry(entry, read);
  // the core says when a file needs a column map (its error's field); any other error stays on the card
  if (entry.error && entry.error.field === 'column_map' && !restoring) {
    if (await mapLikeLoaded(entry)) return 'data';
    // one dialog at a time: a file waiting behind it is read when a map of its layout is confirmed
    if (!$('map-dialog').open) openMapping(entry);
  }
  return 'data';
}
// A map made for one file reads every file of the same layout (the core
// compares delimiter, column names and cells); each file keeps its own
// component name (its stem), and its card says whose map it took.
async function sameLayoutAs(entry, mapped) {
  if (!mapped.summary || !mapped.options?.column_map || mapped === entry) return false;
  const r = await Bridge.callJson('csv_same_layout', [mapped.bytes, entry.name, entry.bytes, JSON.stringify(mapped.options)]).catch(() => null);
  return !!r?.same;
}
async function takeMapOf(entry, mapped) {
  const before = entry.options;
  entry.options = { ...mapped.options, component: stem(entry.name) };
  await loadEntry(entry);
  if (entry.error) { entry.options = before; await loadEntry(entry); return false; }
  entry.mappedLike = mapped.name;
  renderCards();
  return true;
}
async function mapLikeLoaded(entry) {
  for (const f of S.files) {
    if (await sameLayoutAs(entry, f) && await takeMapOf(entry, f)) {
      status(`${entry.name}: the columns are laid out as in ${f.name}; read with its column map (check the card, or Map columns… to change it)`);
      return true;
    }
  }
  return false;
}
// After a map is confirmed for `mapped`: the other files still waiting for a
// map that have its layout read with it too. Returns their names.
async function mapOthersLike(mapped) {
  const done = [];
  for (const f of S.files) {
    if (f === mapped || !(f.error && f.error.field === 'column_map')) continue;
    if (await sameLayoutAs(f, mapped) && await takeMapOf(f, mapped)) done.push(f.name);
  }
  return done;
}
// The bar of the file being read: the core's count of bytes parsed (a
// large UFF file reports about every megabyte), as a percentage.
function readProgress(name, done, total) {
  const pct = total > 0 ? Math.min(100, Math.floor((100 * done) / total)) : 0;
  $('read-progress').value = pct;
  $('read-label').textContent = `reading ${name}: ${pct} %`;
}
// Read bytes in the worker with the bar shown: `fn` is load_file (the
// answer is the summary) or take_file (the answer says what the bytes are).
// Returns { kind: 'data', summary } or { kind: 'data', error }, or take_file's
// { kind: 'bundle' }.
async function readBytes(name, bytes, options, fn) {
  readProgress(name, 0, bytes.length);
  $('read-box').hidden = false;
  try {
    const r = await Bridge.callJson(fn, [name, bytes, JSON.stringify(options || {})], 'reading ' + name,
      ({ done, total }) => readProgress(name, done, total));
    return fn === 'take_file' ? r : { kind: 'data', summary: r };
  } catch (e) {
    return { kind: 'data', error: e };
  } finally {
    $('read-box').hidden = true;
  }
}
async function loadEntry(entry) {
  settleEntry(entry, await readBytes(entry.name, entry.bytes, entry.options, 'load_file'));
}
// A file's read: its card's summary or error; later runs are stale.
function settleEntry(entry, read) {
  entry.summary = read.summary || null;
  entry.error = read.error || null;
  S.filesEpoch++;
  markStale(`the file ${entry.name} was added or read again after this run`);
  renderAll();
  autosave();
}
async function removeFile(name) {
  S.files = S.files.filter((f) => f.name !== name);
  await Bridge.call('forget_file', [name]);
  S.filesEpoch++;
  markStale(`the file ${name} was removed after this run`);
  renderAll();
  autosave();
}
async function readFiles(list) {
  const kinds = [];
  for (const f of list) {
    const bytes = new Uint8Array(await f.arrayBuffer());
    kinds.push(await addFile(f.name, bytes));
  }
  // (a recipe alone, or a bundle opened or declined, says what became of it itself)
  if (kinds.includes('data') && !kinds.includes('bundle')) status(`${S.files.length} file(s) in the workspace`);
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
    if (/\.(csv|tsv|txt)$/i.test(f.name) && f.bytes.length && (!f.summary || f.summary.format === 'csv-mapped')) head.append(el('button', { class: 'btn small', onclick: () => openMapping(f) }, 'Map columns…'));
    head.append(el('button', { class: 'btn small', title: 'remove this file', 'aria-label': `remove ${f.name}`, onclick: () => removeFile(f.name) }, 'Remove'));
    card.append(head);
    if (f.error) card.append(errorBox(f.error));
    // a WAV file waits for its channels to be described (the core names the field)
    if (f.error && f.error.field === 'channels') card.append(channelsBlock(f));
    // a delimited file the core could not read as FRFs or as our time CSV: offer its time map
    if (f.error && f.error.field !== 'channels' && /\.(csv|tsv|txt)$/i.test(f.name)) card.append(timeMapBlock(f));
    if (f.mappedLike && f.summary) card.append(el('div', { class: 'help', 'data-mapped-like': f.mappedLike }, `columns read with the map of ${f.mappedLike} (same layout)`));
    // refused because it is not the file an opened bundle was made from
    if (f.error && (S.bundle?.info?.inputs || []).some((inp) => inp.name === f.name) && /SHA-256/.test(errorText(f.error))) {
      card.append(el('div', { class: 'audit-flag', 'data-bundle-match': 'no' }, `⚑ not the file bundle ${S.bundle.name} was made from: refused`));
    }
    if (f.summary) {
      const s = f.summary;
      // a geometry file (our layout): the core's count of rows and its unit
      if (s.geometry) card.append(el('div', { class: 'geometry-sum', 'data-geometry-rows': s.geometry.rows }, `geometry: ${s.geometry.rows} rows, unit ${s.geometry.unit}`));
      card.append(el('dl', { class: 'kv' },
        el('dt', {}, s.geometry ? 'size' : 'FRFs'), el('dd', {}, s.geometry ? `${s.bytes} bytes` : `${s.frfs} in ${s.sets.length} set(s), ${s.bytes} bytes`),
        el('dt', {}, 'SHA-256'), el('dd', { class: 'sha' }, s.sha256)));
      // a file named in an opened bundle: is it the very file the bundle was made from?
      const inBundle = (S.bundle?.info?.inputs || []).find((inp) => inp.name === f.name);
      if (inBundle && inBundle.sha256) {
        card.append(inBundle.sha256 === s.sha256
          ? el('div', { class: 'audit-sum', 'data-bundle-match': 'yes' }, `SHA-256 matches the file bundle ${S.bundle.name} was made from`)
          : el('div', { class: 'audit-flag', 'data-bundle-match': 'no' }, `⚑ SHA-256 differs from the file bundle ${S.bundle.name} was made from (${inBundle.sha256.slice(0, 16)}…): its results do not describe this file`));
      }
      for (const w of s.warnings) card.append(el('div', { class: 'warn' }, '⚠ ' + w));
      // the core's sketch of the file's geometry (an image: nothing in it runs)
      if (s.geometry_svg) {
        const g = s.uff?.geometry;
        card.append(el('img', { class: 'geometry', src: 'data:image/svg+xml;charset=utf-8,' + encodeURIComponent(s.geometry_svg),
          alt: `geometry of ${f.name}: ${g ? g.nodes : ''} nodes in three views, arrows at the DOFs of its FRFs` }));
      }
      // time data: the core's recording, its time view and analyses (timedata.js)
      if (s.recording) card.append(recordingBlock(f));
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
      // a recording carried in the bundle: its time view and analyses, as a
      // dropped file's (the entry keeps its choices between redraws)
      if (inp.recording) {
        S.bundle.recordings ||= {};
        const entry = S.bundle.recordings[inp.name] ||= { name: inp.name, fromBundle: true };
        entry.summary = { recording: inp.recording };
        card.append(recordingBlock(entry));
      }
      box.append(card);
    }
  }
}