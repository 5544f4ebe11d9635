// ui.js: small DOM helpers shared by the page's modules, and the one
// confirmation dialog. Every number shown comes from the core (through
// bridge.js); the page's scripts only move bytes, keep the workspace, and map
// pointer pixels to axis values with the frames the core returns. All text
// from files is inserted with textContent (never innerHTML).
const $ = (id) => document.getElementById(id);
const T0 = performance.now();
const timings = { ready_ms: null, last_run_ms: null, last_plot_ms: null };
window.mortiseTimings = timings;

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
// The recipe entry a core error sits in, outer to inner (the core keeps its
// context innermost first and shows it outer to inner).
function contextPath(e) {
  return e && Array.isArray(e.context) && e.context.length ? [...e.context].reverse().join(' → ') : '';
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
  if (contextPath(e)) where.push(contextPath(e));
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
    if (contextPath(e)) box.append(el('div', { class: 'error-where error-path' }, 'in the recipe: ' + contextPath(e)));
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

// Ask before anything on screen is replaced or dropped. Resolves true only
// when the user presses the button that does it.
let asking = null;
function ask(message, yes, no) {
  const d = $('ask-dialog');
  if (asking) return Promise.resolve(false);
  $('ask-text').textContent = message;
  $('ask-ok').textContent = yes;
  $('ask-cancel').textContent = no;
  d.returnValue = '';
  asking = new Promise((resolve) => {
    d.addEventListener('close', () => { asking = null; resolve(d.returnValue === 'ok'); }, { once: true });
  });
  d.showModal();
  return asking;
}
