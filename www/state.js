// state.js: the page's state and its autosave in IndexedDB. The recipe
// itself lives in recipe.js (R); results carry a stale mark (S.stale) from
// the moment they stop describing what is on screen until a run succeeds.
const S = {
  files: [],        // { name, bytes, options, summary, error, format }
  bundle: null,     // { name, bytes, info }
  results: null,    // { results: [SetSummary], report }
  resultsJson: null,
  stale: null,      // null, or { reason } when the shown results no longer match the recipe and files
  filesEpoch: 0,    // counts changes of the loaded files (a run compares it before and after)
  asmStep: null,    // id of the step whose parts and joints the assembly panel edits
  plot: { kind: 'bode', db: true, xlog: true, xrange: null, sel: [], compare: null },
  includeRaw: {},
  history: [],      // the core's run records (src/history.rs), newest last
  compareChoice: [], // run numbers ticked for a comparison
};
let restoring = false;
let lastFrames = [], lastSpec = null;

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
      recipeText: R.text,
      resultsJson: S.resultsJson,
      stale: S.stale,
      asmStep: S.asmStep,
      plot: S.plot,
      history: S.history,
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
