// Bundle integrity on the page: the content SHA-256 the core computed is shown
// when a bundle is saved and when it is opened; a tampered bundle dropped on
// the page is refused on its card, naming the set. The reference for the
// content hash is Node's crypto (SHA-256, FIPS 180-4) over the bytes as the
// docs of src/io/bundle.rs define them.
// Run: ./build.sh && node --test tests/e2e/bundle.test.mjs
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { readFileSync } from 'node:fs';
import { createHash } from 'node:crypto';
import { open, addFiles, shot, pasteRecipe } from './helpers.mjs';
import { frameCsv, massCsv, RECIPE } from './data.mjs';

async function runRecipe(page) {
  const before = await page.evaluate(() => document.body.dataset.plotted || '');
  await page.click('#run-btn');
  await page.waitForFunction((b) => (document.body.dataset.plotted || '') !== b || document.querySelector('#run-error:not([hidden])'), before, { timeout: 60000 });
  assert.equal(await page.$eval('#run-error', (e) => (e.hidden ? '' : e.textContent)), '', 'the run must succeed');
}

async function saveDownload(page, click) {
  const [dl] = await Promise.all([page.waitForEvent('download'), page.click(click)]);
  return { name: dl.suggestedFilename(), bytes: readFileSync(await dl.path()) };
}

// The content SHA-256 as documented: the file's bytes with the value of the
// final "content_sha256" member replaced by 64 zeros.
function contentSha(bytes) {
  const text = bytes.toString('latin1');
  const m = /"content_sha256"\s*:\s*"([0-9a-f]{64})"\s*\}\s*$/.exec(text);
  assert.ok(m, 'the bundle ends with its content SHA-256');
  const at = m.index + m[0].indexOf(m[1]);
  const zeroed = Buffer.concat([bytes.subarray(0, at), Buffer.from('0'.repeat(64)), bytes.subarray(at + 64)]);
  return { recorded: m[1], computed: createHash('sha256').update(zeroed).digest('hex') };
}

async function dropBundle(page, name, bytes) {
  await page.setInputFiles('#file-input', { name, mimeType: 'application/json', buffer: bytes });
}

test('the content SHA-256 is shown when a bundle is saved and opened; a tampered bundle is refused on its card', async () => {
  const s = await open();
  let bundle, shown;
  try {
    await addFiles(s.page, [{ name: 'frame.csv', data: frameCsv() }, { name: 'mass.csv', data: massCsv() }]);
    await pasteRecipe(s.page, JSON.stringify(RECIPE, null, 2));
    await runRecipe(s.page);
    bundle = await saveDownload(s.page, '#bundle-btn');
    shown = await s.page.getAttribute('#bundle-info [data-bundle-content]', 'data-bundle-content');
  } finally { await s.close(); }
  const { recorded, computed } = contentSha(bundle.bytes);
  assert.equal(shown, computed, 'saved: the page shows the content SHA-256 (Node crypto reference)');
  assert.equal(recorded, computed);

  const s2 = await open();
  try {
    await dropBundle(s2.page, bundle.name, bundle.bytes);
    await s2.page.waitForSelector('#bundle-opened [data-bundle-content]', { timeout: 20000 });
    assert.equal(await s2.page.getAttribute('#bundle-opened [data-bundle-content]', 'data-bundle-content'), computed, 'opened: the same hash, checked');
    assert.match(await s2.page.textContent('#status-text'), new RegExp(`content SHA-256 ${computed.slice(0, 16)}… checked`));
    await shot(s2.page, 'bundle-opened-hash');
  } finally { await s2.close(); }

  // declined: with a recipe on screen the page asks first; "keep" leaves the
  // recipe, the files and the workspace as they were (the core told the
  // bytes a bundle and read nothing of them)
  const s4 = await open();
  try {
    await addFiles(s4.page, [{ name: 'frame.csv', data: frameCsv() }]);
    const mine = JSON.stringify(RECIPE, null, 2);
    await pasteRecipe(s4.page, mine);
    await dropBundle(s4.page, bundle.name, bundle.bytes);
    await s4.page.waitForSelector('#ask-dialog[open]', { timeout: 20000 });
    assert.match(await s4.page.textContent('#ask-text'), /replaces the recipe text/);
    await s4.page.click('#ask-cancel');
    await s4.page.waitForFunction(() => /not opened/.test(document.getElementById('status-text').textContent), null, { timeout: 20000 });
    assert.equal(await s4.page.$eval('#recipe-text', (e) => e.value), mine, 'the recipe on screen is kept');
    assert.equal(await s4.page.$('#bundle-opened [data-bundle-content]'), null, 'nothing was opened');
    assert.deepEqual(await s4.page.$$eval('.card[data-file]', (c) => c.map((e) => e.dataset.file)), ['frame.csv'], 'no card for the bundle');
    assert.deepEqual(s4.errors, []);
  } finally { await s4.close(); }

  // one digit of the first result's first value changed: still valid JSON
  const text = bundle.bytes.toString('utf8');
  const results = text.indexOf('"results": [');
  const name = /"name": "([^"]+)"/.exec(text.slice(results))[1];
  const data = text.indexOf('"data": [', results);
  const num = /\d\.(\d)/.exec(text.slice(data));
  const at = data + num.index + 2;
  const tampered = text.slice(0, at) + (num[1] === '9' ? '8' : String(Number(num[1]) + 1)) + text.slice(at + 1);
  assert.notEqual(tampered, text);
  const s3 = await open();
  try {
    await dropBundle(s3.page, 'tampered.json', Buffer.from(tampered));
    await s3.page.waitForSelector('.card.failed[data-file="tampered.json"]', { timeout: 20000 });
    const card = await s3.page.textContent('.card[data-file="tampered.json"]');
    assert.ok(card.includes(`set '${name}' in the bundle does not match its recorded SHA-256`), card);
    assert.match(card, /result 1 \(/);
    assert.doesNotMatch(card, /untagged|enum|serde/);
    assert.equal(await s3.page.$('#bundle-opened [data-bundle-content]'), null, 'nothing was opened');
    await shot(s3.page, 'bundle-tampered-refused');
  } finally { await s3.close(); }
});
