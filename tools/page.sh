#!/usr/bin/env bash
# Build the offline single-file page dist/mortise.html:
# core → wasm32 → wasm-bindgen (no-modules glue) → optional wasm-opt (npm binaryen only)
# → tools/inline.mjs inlines glue, worker, page scripts, CSS, wasm and the demo files.
set -euo pipefail
cd "$(dirname "$0")/.."
ROOT=$(pwd)
# the page carries every engine (coupling, identification, uncertainty, time data): 4 MiB at most
BUDGET=$((4 * 1024 * 1024))
WANT_BINDGEN=0.2.130

if ! wasm-bindgen --version 2>/dev/null | grep -q "$WANT_BINDGEN"; then
  echo "wasm-bindgen $WANT_BINDGEN is needed: cargo install wasm-bindgen-cli --version $WANT_BINDGEN --no-default-features" >&2
  exit 1
fi
cargo build --quiet --release --target wasm32-unknown-unknown --lib
mkdir -p target/page
wasm-bindgen --target no-modules --no-typescript --out-dir target/page \
  target/wasm32-unknown-unknown/release/mortise.wasm
WASM=target/page/mortise_bg.wasm
# Only the npm binaryen (Debian's older wasm-opt corrupts wasm-bindgen's externref table).
if [ -x node_modules/.bin/wasm-opt ]; then
  node_modules/.bin/wasm-opt -O --enable-simd --enable-reference-types --enable-bulk-memory --enable-nontrapping-float-to-int \
    --enable-sign-ext --enable-mutable-globals --enable-multivalue \
    "$WASM" -o target/page/mortise_opt.wasm
  WASM=target/page/mortise_opt.wasm
else
  echo "(no node_modules/.bin/wasm-opt: the wasm is not size-optimised; run npm ci for it)"
fi
node tools/inline.mjs www target/page/mortise.js "$WASM" sample-frf dist/mortise.html
SIZE=$(stat -c %s dist/mortise.html)
if [ "$SIZE" -gt "$BUDGET" ]; then
  echo "dist/mortise.html is $SIZE bytes, over the 4 MiB budget" >&2
  exit 1
fi
echo "page: $SIZE bytes"
echo "file://$ROOT/dist/mortise.html"
