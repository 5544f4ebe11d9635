#!/usr/bin/env bash
# mortise build and test entry point.
#   ./build.sh        build the CLI and the offline page, run the demo scenario, print the page's URL
#   ./build.sh test   run every test: Rust unit and integration tests (with Python cross-checks),
#                     and the browser end-to-end tests against the built page
#   ./build.sh bench  benchmarks: coupling (Rust core against numpy and the machine's limit; the page's
#                     WebAssembly against native), the plot canvas (against plain Canvas 2D) and
#                     reading large UFF files (against pyuff; on the page against the CLI)
#
# On a fresh machine the first run installs what is missing, and only that: the wasm32 Rust target,
# the pinned wasm-bindgen CLI, the npm packages (playwright-core, binaryen's wasm-opt); `test` also
# makes the Python venv and installs Debian's Chromium. A second run finds them and starts building.
set -euo pipefail
cd "$(dirname "$0")"
ROOT=$(pwd)
WANT_BINDGEN=0.2.130

# ---- installs: each checks first, says what it does and how long it usually takes, and on failure
# ---- names the step and the command to run by hand, leaving nothing half-installed in the way.

fail_install() { # step, command to run by hand
  echo >&2
  echo "build.sh: installing $1 failed." >&2
  echo "  Run it by hand, then run ./build.sh again:" >&2
  echo "    $2" >&2
  exit 1
}

need_tool() { # tool, what provides it
  if ! command -v "$1" >/dev/null 2>&1; then
    echo "build.sh: '$1' is not on PATH; it comes with $2. Install it, then run ./build.sh again." >&2
    exit 1
  fi
}

ensure_wasm_target() {
  if rustup target list --installed 2>/dev/null | grep -qx wasm32-unknown-unknown; then return; fi
  echo "== installing the Rust target wasm32-unknown-unknown (rustup, about 10 s)"
  rustup target add wasm32-unknown-unknown || fail_install "the wasm32 target" \
    "rustup target add wasm32-unknown-unknown"
}

ensure_bindgen() {
  if wasm-bindgen --version 2>/dev/null | grep -q "$WANT_BINDGEN"; then return; fi
  echo "== installing the wasm-bindgen CLI $WANT_BINDGEN (cargo install, about 3-4 min on 2 cores)"
  # cargo install places the binary only when the build succeeded; a failed build leaves nothing.
  cargo install wasm-bindgen-cli --version "$WANT_BINDGEN" --no-default-features --force --quiet ||
    fail_install "the wasm-bindgen CLI" \
      "cargo install wasm-bindgen-cli --version $WANT_BINDGEN --no-default-features --force"
}

# Ready when every package the lock file names is installed at its locked
# version (by content, not file times: a worktree's fresh checkout of
# package-lock.json must not trigger a reinstall of shared node_modules).
node_ready() {
  [ -d node_modules/playwright-core ] && [ -f node_modules/.package-lock.json ] && node -e '
    const want = require("./package-lock.json").packages || {};
    const have = require("./node_modules/.package-lock.json").packages || {};
    for (const [k, v] of Object.entries(want)) {
      if (k === "" || v.optional) continue;
      if (!have[k] || have[k].version !== v.version) process.exit(1);
    }' 2>/dev/null
}

ensure_node_deps() {
  if node_ready; then return; fi
  need_tool node "Node.js (Debian package nodejs)"
  need_tool npm "npm (Debian package npm)"
  echo "== installing the npm packages (npm ci: playwright-core, binaryen's wasm-opt; about 20 s)"
  if ! npm ci --no-audit --no-fund --silent; then
    rm -rf node_modules
    fail_install "the npm packages" "npm ci"
  fi
}

venv_ready() {
  [ -x .venv/bin/python ] && .venv/bin/python -c 'import numpy, scipy, pyuff, control' 2>/dev/null
}

ensure_venv() {
  if ! venv_ready; then
    need_tool python3 "CPython 3 (Debian package python3, with python3-venv)"
    echo "== making the Python cross-check venv .venv (numpy, scipy, pyuff, python-control; about 40 s)"
    rm -rf .venv
    if ! { python3 -m venv .venv &&
      .venv/bin/pip install --quiet --disable-pip-version-check -r tests/py/requirements.txt; }; then
      rm -rf .venv
      fail_install "the Python venv" \
        "python3 -m venv .venv && .venv/bin/pip install -r tests/py/requirements.txt"
    fi
  fi
  export MORTISE_PYTHON="$ROOT/.venv/bin/python"
}

ensure_chromium() {
  if [ -x /usr/bin/chromium ]; then return; fi
  local cmd="apt-get update && apt-get install -y chromium chromium-driver"
  if [ "$(id -u)" -ne 0 ]; then
    echo "build.sh: the browser tests need Debian's Chromium at /usr/bin/chromium, and installing it" >&2
    echo "  needs root. Run this once, then run ./build.sh test again:" >&2
    echo "    sudo sh -c '$cmd'" >&2
    exit 1
  fi
  echo "== installing Chromium (Debian packages chromium and chromium-driver, about 1-2 min)"
  # apt-get unpacks and configures as one transaction; dpkg --configure -a finishes an interrupted one.
  if ! { DEBIAN_FRONTEND=noninteractive apt-get update -qq &&
    DEBIAN_FRONTEND=noninteractive apt-get install -y -qq chromium chromium-driver >/dev/null; }; then
    fail_install "Chromium" "$cmd"
  fi
}

# ---- the build itself

cli() {
  echo "== building the CLI (release)"
  cargo build --release --quiet --bin mortise
}

demo() { # the CLI to run it with (release for the build; the test build's own for tests)
  echo "== demo scenario: heat-pump outdoor unit on a timber-frame wall"
  "$1" demo -o sample-frf --check
  "$1" run sample-frf/heat-pump.recipe.json -o target/demo-out
}

T0=$(date +%s)
phase() { echo "== $* ($(($(date +%s) - T0)) s since start)"; }

page() {
  echo "== building the offline page"
  tools/page.sh
}

case "${1:-build}" in
  build)
    ensure_wasm_target
    ensure_bindgen
    ensure_node_deps
    cli
    demo ./target/release/mortise
    page
    echo
    echo "open: file://$ROOT/dist/mortise.html"
    ;;
  test)
    ensure_wasm_target
    ensure_bindgen
    ensure_node_deps
    ensure_venv
    ensure_chromium
    phase "cargo test"
    cargo test --quiet --all-targets
    cargo test --quiet --doc
    # The browser tests run the CLI the Rust tests just built (dev profile, optimised;
    # the same sources as the release binary), which saves a second, link-time-optimised build.
    export MORTISE_BIN="$ROOT/target/debug/mortise"
    phase "demo scenario and page"
    demo "$MORTISE_BIN"
    page
    phase "browser end-to-end tests"
    node --test tests/e2e/
    phase "all tests passed"
    ;;
  bench)
    ensure_venv
    echo "== coupling: Rust core against numpy (two versions) and the machine's limit"
    cargo run --release --quiet --example bench_couple
    ensure_wasm_target
    ensure_bindgen
    ensure_node_deps
    ensure_chromium
    page
    echo "== coupling: the page's WebAssembly (its worker, headless Chromium) against native"
    node tools/wasm-bench.mjs
    echo "== plot: 150 curves on the page's canvas against plain Canvas 2D"
    node tools/plot-bench.mjs
    echo "== large UFF files: mortise's read against pyuff (the first run writes 284 MB into target/bench-uff)"
    cargo run --release --quiet --example bench_uff
    echo "== large UFF files on the page (file input to card) against mortise inspect"
    node tools/uff-page-bench.mjs
    ;;
  *)
    echo "usage: ./build.sh [build|test|bench]" >&2
    exit 2
    ;;
esac
