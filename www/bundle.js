// bundle.js: saving and opening bundles (the recipe, the inputs' provenance
// with or without their files' bytes, the results and the report). What is
// withheld, what results may travel and the notice of what a recipient could
// still infer are decided by the core (src/workspace.rs); this only asks and shows.
function renderBundleRaw() {
  renderOpenedBundle();
  const box = $('bundle-raw');
  clear(box);
  for (const f of S.files) {
    if (!f.summary) continue;
    if (!(f.name in S.includeRaw)) S.includeRaw[f.name] = true;
    box.append(el('label', {}, el('input', { type: 'checkbox', 'data-raw': f.name, checked: S.includeRaw[f.name],
      onchange: (e) => { S.includeRaw[f.name] = e.target.checked; autosave(); } }), ' include the raw data of ', f.name));
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
    const box = $('bundle-info');
    clear(box);
    box.append(el('div', {}, `bundle written: ${made.bytes.length} bytes. ${info.notice}`),
      contentHashLine('content SHA-256 (tell the recipient by another channel): ', info.content_sha256));
  } catch (e) {
    $('bundle-info').textContent = 'bundle failed: ' + errorText(e);
  }
}
// The content SHA-256 the core computed or checked (JS does no hashing).
function contentHashLine(label, sha) {
  return el('div', { class: 'bundle-hash' }, label, el('span', { class: 'sha', 'data-bundle-content': sha }, sha));
}
// What the core's checks of an opened bundle found: its content SHA-256
// (checked) or, for an earlier version, the note of what it could not check.
function renderOpenedBundle() {
  const box = $('bundle-opened');
  if (!box) return;
  clear(box);
  const info = S.bundle?.info;
  if (!info) return;
  box.append(info.content_sha256
    ? contentHashLine(`opened ${S.bundle.name}: every recorded SHA-256 checked; content SHA-256 `, info.content_sha256)
    : el('div', { class: 'bundle-hash' }, `opened ${S.bundle.name}: a version ${info.version} bundle, no content SHA-256 recorded`),
  ...(info.notes || []).map((n) => el('div', { class: 'warn', 'data-bundle-note': '' }, '⚠ ' + n)));
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
    if (!restoring) await refreshHistory();
    await drawPlot();
    status(`bundle ${name} opened: ${info.results.length} result(s), made with mortise ${info.mortise_version}` + (info.created ? ` on ${info.created}` : '')
      + (info.content_sha256 ? `, content SHA-256 ${info.content_sha256.slice(0, 16)}… checked` : `, version ${info.version}: no content SHA-256`)
      + (info.missing.length ? `; to re-run, drop in again: ${info.missing.join(', ')}` : '; it runs as it is'));
    autosave();
  } catch (e) {
    S.files.push({ name, bytes, options: {}, summary: null, error: e });
    renderAll();
  }
}
