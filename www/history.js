// history.js: the run history and the comparison of two runs. The core keeps
// each run (recipe text, start, duration, headline, results or error; see
// src/history.rs); this file shows the list, lets two runs be chosen, shows
// them side by side, overlays their curves and asks the core for the level
// difference (the plot kind "difference"). Curves are matched by the result's
// name and the DOF labels of the entry, nothing else.

async function refreshHistory() {
  try { S.history = await Bridge.callJson('run_history', []); } catch (_) { /* keep the list shown */ }
  renderHistory();
}
const runOf = (n) => (S.history || []).find((h) => h.number === n) || null;
const clock = (ms) => (Number.isFinite(ms) ? new Date(ms).toLocaleString() : '–');
const seconds = (ms) => (Number.isFinite(ms) ? `${(ms / 1000).toFixed(2)} s` : '–');
// the newest run whose results are the ones shown
const currentRun = () => {
  const first = S.results?.results?.[0]?.id || '';
  return (S.history || []).find((h) => h.results.some((r) => r.id === first)) || null;
};

function renderHistory() {
  const box = $('history');
  clear(box);
  const runs = [...(S.history || [])].reverse();
  $('history-count').textContent = runs.length ? ` (${runs.length})` : '';
  if (!runs.length) { box.append(el('p', { class: 'muted' }, 'No run yet: each run is listed here with its recipe, time and headline.')); return; }
  S.compareChoice = (S.compareChoice || []).filter((n) => runOf(n)?.curves_kept);
  const cur = currentRun();
  const rows = runs.map((h) => {
    const can = h.curves_kept && !h.error;
    const state = h.error ? `failed: ${h.error}` : (h.curves_kept ? `${h.results.length} result(s)` : 'curves not kept (run its recipe again to compare)');
    return el('tr', { 'data-run': h.number, class: h === cur ? 'current' : '' },
      el('td', {}, el('input', {
        type: 'checkbox', 'aria-label': `compare run ${h.number}`, disabled: !can,
        title: can ? 'choose two runs to compare' : 'this run has no curves to compare',
        checked: S.compareChoice.includes(h.number),
        onchange: (ev) => chooseForCompare(h.number, ev.target.checked),
      })),
      el('td', {}, `run ${h.number}` + (h === cur ? ' (shown)' : '')),
      el('td', {}, clock(h.started_ms)),
      el('td', {}, seconds(h.duration_ms)),
      el('td', {}, h.title || '–'),
      el('td', { class: 'history-headline' }, (h.headline || [])[0] || '–'),
      el('td', { class: h.error ? 'fail-text' : '' }, state, h.split ? el('div', { class: 'muted' }, h.split) : null),
      el('td', {}, el('button', {
        class: 'btn small', type: 'button', 'aria-label': `use this recipe: run ${h.number}'s, put in the recipe text`,
        onclick: () => recallRecipe(h.number),
      }, 'use this recipe')));
  });
  box.append(el('table', { class: 'history-table' },
    el('tr', {}, ...['compare', 'run', 'started', 'took', 'title', 'headline', 'outcome', ''].map((t) => el('th', {}, t))),
    ...rows));
  const [a, b] = S.compareChoice;
  box.append(el('div', { class: 'row' },
    el('button', {
      class: 'btn', id: 'compare-btn', type: 'button', disabled: S.compareChoice.length !== 2,
      onclick: () => compareRuns(Math.min(a, b), Math.max(a, b)),
    }, S.compareChoice.length === 2 ? `Compare run ${Math.min(a, b)} with run ${Math.max(a, b)}` : 'Compare two runs (tick two)'),
    S.plot.compare ? el('button', { class: 'btn', type: 'button', id: 'compare-end', onclick: endCompare }, 'End the comparison') : null));
}

function chooseForCompare(n, on) {
  let c = (S.compareChoice || []).filter((x) => x !== n);
  if (on) c = [...c, n].slice(-2);
  S.compareChoice = c;
  renderHistory();
}

async function recallRecipe(n) {
  const h = runOf(n);
  if (!h) return;
  if (R.text !== h.recipe_text && R.text.trim() && !(await ask(`Replace the recipe text with the recipe of run ${n}? The text on screen now is not kept.`, 'Replace the recipe text', 'Keep the text'))) return;
  await setRecipeText(h.recipe_text, `the recipe of run ${n}`);
  status(`the recipe of run ${n} is in the recipe text; Run computes it again`);
}

// The entries of run `to` that match `sel` (same result name, same output
// and input labels).
function matchEntry(x, to) {
  const from = (S.history || []).flatMap((h) => h.results).find((r) => r.id === x.set)
    || (S.results?.results || []).find((r) => r.id === x.set);
  if (!from) return null;
  const target = to.results.find((r) => r.name === from.name);
  if (!target) return null;
  const out = target.outputs.indexOf(from.outputs[x.out]);
  const inp = target.inputs.indexOf(from.inputs[x.in]);
  return out < 0 || inp < 0 ? null : { set: target.id, out, in: inp, name: target.name, text: `${from.outputs[x.out]} / ${from.inputs[x.in]}` };
}

function compareRuns(a, b) {
  const A = runOf(a), B = runOf(b);
  if (!A?.curves_kept || !B?.curves_kept) return;
  // the curves chosen now, else the first entry of each result both runs have
  let want = S.plot.sel.filter((x) => matchEntry(x, B) && matchEntry(x, A));
  if (!want.length) want = B.results.filter((r) => A.results.some((q) => q.name === r.name)).slice(0, 4).map((r) => ({ set: r.id, out: 0, in: 0 }));
  const pairs = [];
  for (const x of want) {
    const pa = matchEntry(x, A), pb = matchEntry(x, B);
    if (!pa || !pb || pairs.some((p) => p.b.set === pb.set && p.b.out === pb.out && p.b.in === pb.in)) continue;
    pairs.push({
      a: { set: pa.set, out: pa.out, in: pa.in, label: `run ${a}: ${pa.name}: ${pa.text}` },
      b: { set: pb.set, out: pb.out, in: pb.in, label: `run ${b}: ${pb.name}: ${pb.text}` },
    });
  }
  const box = $('compare-box');
  clear(box);
  box.hidden = false;
  if (!pairs.length) {
    box.append(el('div', { class: 'error-box', role: 'alert' }, `Runs ${a} and ${b} have no result of the same name and entry to compare.`));
    return;
  }
  S.plot.compare = { a, b, pairs };
  S.plot.sel = pairs.flatMap((p) => [p.a, p.b]);
  S.plot.kind = 'difference';
  S.plot.xrange = null;
  renderCompare();
  renderResults();
  drawPlot();
  autosave();
  status(`comparing run ${a} (baseline) with run ${b}: ${pairs.length} curve(s), level difference in dB`);
}

function endCompare() {
  S.plot.compare = null;
  $('compare-box').hidden = true;
  if (S.plot.kind === 'difference') S.plot.kind = 'bode';
  S.plot.sel = defaultSelection(S.results?.results || []);
  renderResults();
  renderHistory();
  drawPlot();
  autosave();
}

// the two runs side by side: when, how long, title, headline, and the recipe
// lines only one of them has
function renderCompare() {
  const c = S.plot.compare;
  const box = $('compare-box');
  clear(box);
  if (!c) { box.hidden = true; return; }
  const A = runOf(c.a), B = runOf(c.b);
  if (!A || !B) { box.hidden = true; return; }
  const lines = (t) => t.split('\n').map((l) => l.trim()).filter((l) => l && !/^[{}[\],]+$/.test(l));
  const la = lines(A.recipe_text), lb = lines(B.recipe_text);
  const onlyIn = (x, y) => x.filter((l) => !y.includes(l));
  const col = (h, other, role) => el('div', { class: 'compare-col', 'data-run': h.number },
    el('h3', {}, `${role}: run ${h.number}`),
    el('div', { class: 'muted' }, `${clock(h.started_ms)} · took ${seconds(h.duration_ms)}`),
    el('div', {}, h.title || ''),
    el('div', { class: 'headline' }, ...(h.headline || []).map((t) => el('div', { class: /^\s/.test(t) ? 'sub' : '' }, t))),
    el('details', {}, el('summary', {}, `recipe lines only in run ${h.number} (${onlyIn(lines(h.recipe_text), other).length})`),
      el('pre', { class: 'recipe-diff' }, onlyIn(lines(h.recipe_text), other).join('\n') || '(none)')));
  box.append(el('div', { class: 'compare-grid' }, col(A, lb, 'baseline'), col(B, la, 'compared')),
    el('p', { class: 'help' }, 'The view "difference between two runs" draws, for each curve, the compared run\'s level minus the baseline\'s, in dB; "level and phase" overlays the two runs\' curves.'));
}
