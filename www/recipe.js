// recipe.js: the page's one recipe. The recipe text is the recipe: Run runs
// exactly the text on screen, and the assembly panel draws that text and
// edits it in place (a panel edit changes only the entries it touches;
// everything else stays as written). After every change the core reads the
// text (recipe_normalize): its refusal, with the recipe path of the entry,
// shows under the text, and its notes say how it read the recipe (joint
// types read from their parameters). While the text is not JSON the panel
// cannot draw it: the panel says the text is newer and waits, and nothing on
// screen is replaced without asking. The lists of operations, operands, joint
// types and their parameters come from the core (recipe_vocabulary,
// recipe_editor_info); none is kept here.
const R = {
  text: '',          // the recipe text on screen (what Run runs)
  json: null,        // the text as a JSON object, when it is one
  lastJson: null,    // the last JSON object the text held (drawn while the text is not JSON)
  by: '',            // who wrote the text last, in words
  typing: false,     // the text changed and the core has not read it yet
  redraw: false,     // redraw the panel once the core has read the text
  readText: null,    // the text `read` and `error` belong to
  read: null,        // the core's reading: { recipe, notes }
  error: null,       // the core's refusal
  pending: null,     // the read in progress
};
let VOCAB = null;    // recipe_vocabulary(): operations, joint types, inference rule, schema
let EDIT = null;     // recipe_editor_info(): empty recipe, a new joint's type, operand and parameter shapes
let readTimer = null;

async function loadRecipeVocabulary() {
  VOCAB = await Bridge.callJson('recipe_vocabulary', []);
  EDIT = await Bridge.callJson('recipe_editor_info', []);
}
function jsonObject(text) {
  try {
    const v = JSON.parse(text);
    return v && typeof v === 'object' && !Array.isArray(v) ? v : null;
  } catch (_) { return null; }
}
function takeText(text, by) {
  R.text = text;
  R.by = by;
  R.json = jsonObject(text);
  if (R.json) R.lastJson = R.json;
}
// The core's reading, when it is of the text on screen.
const readNow = () => (R.readText === R.text ? R.read : null);
const errorNow = () => (R.readText === R.text ? R.error : null);

// Ask the core how it reads the text now on screen.
function readRecipe() {
  clearTimeout(readTimer);
  readTimer = null;
  const text = R.text;
  const job = (async () => {
    if (!text.trim()) return { read: null, error: null };
    try {
      return { read: await Bridge.callJson('recipe_normalize', [text], 'reading the recipe'), error: null };
    } catch (e) { return { read: null, error: e }; }
  })();
  R.pending = job;
  return job.then(({ read, error }) => {
    if (R.pending === job) R.pending = null;
    if (text !== R.text) return undefined; // changed meanwhile: its own read follows
    if (error && error.kind === 'cancelled') return readRecipe(); // the core restarted: ask again
    R.readText = text;
    R.read = read;
    R.error = error;
    R.typing = false;
    if (R.redraw) { R.redraw = false; renderAsm(); } else renderRecipeState();
    return undefined;
  });
}
// Wait until the core has read the text on screen.
async function settleRecipe() {
  for (let i = 0; i < 8; i++) {
    if (R.pending) { await R.pending; continue; }
    if (readTimer || R.typing || R.readText !== R.text) { await readRecipe(); continue; }
    return;
  }
}
// The text changed by typing.
function onRecipeInput() {
  const text = $('recipe-text').value;
  if (text === R.text) return;
  takeText(text, 'you, in the recipe text');
  R.typing = true;
  R.redraw = true;
  markStale('the recipe text was edited after this run');
  renderRecipeState();
  clearTimeout(readTimer);
  readTimer = setTimeout(readRecipe, 300);
  autosave();
}
// Put a whole text in (a file, the saved workspace, the panel's last recipe).
function setRecipeText(text, by) {
  $('recipe-text').value = text;
  takeText(text, by);
  R.typing = true;
  R.redraw = true;
  renderRecipeState();
  return readRecipe();
}
// The textarea was filled by code outside this module (opening a bundle).
function adoptRecipeText(by) {
  const v = $('recipe-text').value;
  if (v !== R.text) setRecipeText(v, by);
}
// A recipe from a file replaces the one on screen only if the user agrees.
async function replaceRecipe(text, from) {
  if (!restoring && R.text.trim() && R.text !== text) {
    const ok = await ask(`Replace the recipe on screen with the one in ${from}? The recipe text now on screen would be lost (copy it first if you need it).`, `Use ${from}`, 'Keep mine');
    if (!ok) { status(`kept the recipe on screen; the recipe in ${from} was not used`); return false; }
  }
  if (R.text !== text) markStale(`the recipe was replaced by ${from} after this run`);
  await setRecipeText(text, from);
  autosave();
  return true;
}

// The panel may edit when it draws the text on screen: the text is JSON (or
// empty) and read since the last keystroke.
function panelLive() { return !R.typing && (R.json !== null || !R.text.trim()); }
// A panel edit: change a copy of the recipe's JSON and write it back as the
// text. `redraw` false keeps the panel's inputs (and the focus) in place.
function editRecipe(mutate, redraw = true) {
  if (!panelLive()) { renderRecipeState(); return false; }
  const base = R.json ? structuredClone(R.json) : { ...structuredClone(EDIT.empty_recipe), title: 'assembly built on the page' };
  if (mutate(base) === false) return false;
  const text = JSON.stringify(base, null, 2);
  $('recipe-text').value = text;
  takeText(text, 'the assembly panel');
  markStale('the assembly panel changed the recipe after this run');
  clearTimeout(readTimer);
  readTimer = setTimeout(readRecipe, 120);
  if (redraw) renderAsm(); else renderRecipeState();
  autosave();
  return true;
}
// "Write the panel's recipe into the text": starts a recipe from the loaded
// files when there is none; brings back the panel's recipe (asking first)
// when the text is no longer JSON; otherwise there is nothing to write.
async function writePanelRecipe() {
  await settleRecipe();
  if (!R.text.trim()) {
    editRecipe((r) => { for (const p of loadedSets()) componentOf(r, p, true); });
    status('recipe started with a component for every loaded set');
    return;
  }
  if (R.json) { status('the recipe text already holds the recipe the panel shows'); return; }
  if (!R.lastJson) { status('the panel has no recipe to write: the text has not been JSON yet', 'fail'); return; }
  const err = errorNow();
  const ok = await ask('The recipe text is not JSON' + (err ? ` (${errorText(err)})` : '') +
    '. Replace it with the recipe the panel shows? Everything typed since the text was last JSON would be lost.', 'Replace the text', 'Keep my text');
  if (!ok) { status('kept the recipe text as typed'); return; }
  markStale('the recipe text was replaced after this run');
  await setRecipeText(JSON.stringify(R.lastJson, null, 2), 'the assembly panel');
  autosave();
}

// Under the recipe text: how the core reads it. In the panel: which of the
// two is newer.
function renderRecipeState() {
  scheduleDiagram();
  scheduleVpoints();
  const box = $('recipe-state');
  const sync = $('asm-sync');
  clear(box);
  clear(sync);
  const live = panelLive();
  $('asm-body').inert = !live;
  $('asm-panel').classList.toggle('behind', !live);
  $('asm-panel').dataset.sync = !R.text.trim() ? 'empty' : !R.json ? 'text-newer' : R.typing ? 'reading' : 'same';
  if (!R.text.trim()) {
    box.append(el('div', { class: 'muted' }, 'No recipe yet: tick parts in the assembly panel, or load a recipe file or the demo.'));
    sync.append(el('div', { class: 'sync same' }, 'No recipe yet: ticking a part below starts one.'));
    return;
  }
  const err = errorNow(), read = readNow();
  if (R.typing || (!err && !read)) {
    box.append(el('div', { class: 'muted' }, 'reading the recipe text…'));
  } else if (err) {
    box.append(el('div', { class: 'state-head bad' }, 'The core cannot read this recipe as it stands, and Run would refuse it:'), errorBox(err));
  } else {
    const r = read.recipe;
    box.append(el('div', { class: 'state-head good' },
      `✓ The core reads this recipe: ${Object.keys(r.components).length} component(s), ${r.steps.length} step(s), outputs ${r.outputs.join(', ') || '(none)'}.`));
    if (read.notes.length) box.append(el('ul', { class: 'notes' }, ...read.notes.map((n) => el('li', {}, n))));
  }
  if (!R.json) {
    sync.append(el('div', { class: 'sync newer', role: 'alert' },
      'The recipe text is newer than this panel: it is not JSON as it stands' + (err ? ` (${errorText(err)})` : '') +
      '. The panel shows the recipe as it last was and waits. Fix the text, or press “Write the panel’s recipe into the text” (it asks before replacing your text).'));
  } else if (R.typing) {
    sync.append(el('div', { class: 'sync newer' }, 'The recipe text is newer than this panel: the core is reading it…'));
  } else {
    sync.append(el('div', { class: 'sync same' }, `This panel and the recipe text show the same recipe (last change: ${R.by}).` +
      (err ? ' The core refuses it as it stands: see the message under the recipe text.' : '')));
  }
}
