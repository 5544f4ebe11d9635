// Inline the page into one self-contained HTML file.
// usage: node tools/inline.mjs WWW_DIR GLUE_JS WASM DEMO_DIR OUT_HTML
// Refuses JS containing "</script" or "<!--" (either would end or confuse the
// inline script element). The executed inline script's SHA-256 goes into the
// Content-Security-Policy, so no other script can run.
import { readFileSync, writeFileSync, existsSync, readdirSync, statSync, mkdirSync } from 'node:fs';
import { createHash } from 'node:crypto';
import { gzipSync } from 'node:zlib';
import { join, dirname } from 'node:path';

const [www, gluePath, wasmPath, demoDir, out] = process.argv.slice(2);
if (!out) {
  console.error('usage: node tools/inline.mjs WWW_DIR GLUE_JS WASM DEMO_DIR OUT_HTML');
  process.exit(2);
}
const read = (p) => readFileSync(p, 'utf8');
function safeJs(name, text) {
  for (const bad of ['</script', '<!--']) {
    if (text.toLowerCase().includes(bad)) {
      console.error(`refusing to inline ${name}: it contains "${bad}"`);
      process.exit(1);
    }
  }
  return text;
}
const html = read(join(www, 'index.html'));
const css = read(join(www, 'style.css'));
if (css.toLowerCase().includes('</style')) {
  console.error('refusing to inline style.css: it contains "</style"');
  process.exit(1);
}
const glue = safeJs('the wasm-bindgen glue', read(gluePath));
const workerSrc = safeJs('worker.js', glue + '\n' + read(join(www, 'worker.js')));
// The page's scripts share one scope, joined in this order inside one function
// (app.js last: it starts the page). Every other .js file of WWW_DIR must be
// listed, so none is left out by mistake.
const PAGE_SCRIPTS = ['ui.js', 'state.js', 'recipe.js', 'files.js', 'timedata.js', 'assembly.js', 'results.js', 'identify.js', 'vpoints.js', 'history.js', 'mapping.js', 'bundle.js', 'app.js'];
const unlisted = readdirSync(www).filter((n) => n.endsWith('.js') && !['bridge.js', 'worker.js', ...PAGE_SCRIPTS].includes(n));
if (unlisted.length) {
  console.error(`tools/inline.mjs: ${unlisted.join(', ')} not in PAGE_SCRIPTS`);
  process.exit(1);
}
// The glue also runs in the page itself: the main thread instantiates the
// module for drawing the plot (bridge.js), so the page script starts with it.
const pageJs = safeJs('the glue, bridge.js and the page scripts', glue + '\n' + read(join(www, 'bridge.js')) + "\n(() => {\n'use strict';\n" +
  PAGE_SCRIPTS.map((n) => `// ---- www/${n} ----\n` + read(join(www, n))).join('\n') + '\n})();\n');
// The wasm and the demo files travel gzip-compressed (the page inflates them
// with the browser's own DecompressionStream), which keeps the page small.
const gz = (b) => gzipSync(b, { level: 9 });
const wasmB64 = gz(readFileSync(wasmPath)).toString('base64');

// Demo files: every regular file of the demo folder, base64.
const demo = [];
if (demoDir && existsSync(demoDir)) {
  for (const name of readdirSync(demoDir).sort()) {
    const p = join(demoDir, name);
    if (statSync(p).isFile()) demo.push({ name, encoding: 'gzip', base64: gz(readFileSync(p)).toString('base64') });
  }
}
const demoJson = JSON.stringify({ files: demo }).replace(/</g, '\\u003c');

const hash = createHash('sha256').update(pageJs, 'utf8').digest('base64');
const csp = [
  "default-src 'none'",
  `script-src 'sha256-${hash}' 'wasm-unsafe-eval'`,
  'worker-src blob:',
  "style-src 'unsafe-inline'",
  'img-src data: blob:',
  "connect-src 'none'",
  "font-src 'none'",
  "frame-src 'none'",
  "base-uri 'none'",
  "form-action 'none'",
].join('; ');

const parts = {
  '<!--@CSP-->': `<meta http-equiv="Content-Security-Policy" content="${csp}">`,
  '<!--@STYLE-->': `<style>\n${css}</style>`,
  '<!--@DATA-->':
    `<script type="application/x-wasm-base64" id="core-wasm" data-encoding="gzip">${wasmB64}</script>\n` +
    `<script type="text/plain" id="worker-src">${workerSrc}</script>\n` +
    `<script type="application/json" id="demo-files">${demoJson}</script>`,
  '<!--@SCRIPT-->': `<script>${pageJs}</script>`,
};
let page = html;
for (const [k, v] of Object.entries(parts)) {
  if (!page.includes(k)) {
    console.error(`index.html lacks the placeholder ${k}`);
    process.exit(1);
  }
  page = page.replace(k, () => v);
}
mkdirSync(dirname(out), { recursive: true });
writeFileSync(out, page);
console.log(JSON.stringify({ bytes: Buffer.byteLength(page), wasm_bytes: readFileSync(wasmPath).length, demo_files: demo.length, script_sha256: hash }));
