// bundle.js: saving and opening bundles (the recipe, the inputs' provenance
// with or without their raw FRFs, the results and the report). Kept apart
// from the rest of the page: the bundle logic moves into a core module.
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
async function saveBundle() {
  try {
    const opts = { created: new Date().toISOString(), include_raw: S.includeRaw };
    const bytes = await Bridge.call('make_bundle', [$('recipe-text').value, JSON.stringify(opts)], 'writing the bundle');
    download(bytes, 'mortise-bundle.json', 'application/json');
    $('bundle-info').textContent = `bundle written: ${bytes.length} bytes`;
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
    status(`bundle ${name} opened: ${info.results.length} result(s), made with mortise ${info.mortise_version}` + (info.created ? ` on ${info.created}` : ''));
    autosave();
  } catch (e) {
    S.files.push({ name, bytes, options: {}, summary: null, error: e });
    renderAll();
  }
}
