#!/usr/bin/env bash
# mortise build and test entry point.
#   ./build.sh        build the CLI and the offline page, run the demo scenario, print the page's URL
#   ./build.sh test   run every test: Rust unit and integration tests (with Python cross-checks),
#                     and the browser end-to-end tests against the built page
#   ./build.sh bench  run the coupling benchmark (Rust core against a numpy reference)
set -euo pipefail
cd "$(dirname "$0")"
ROOT=$(pwd)

venv() {
  if [ ! -x .venv/bin/python ] || ! .venv/bin/python -c 'import numpy, scipy, pyuff, control' 2>/dev/null; then
    echo "== making the Python cross-check venv (.venv)"
    python3 -m venv .venv
    .venv/bin/pip install --quiet --disable-pip-version-check -r tests/py/requirements.txt
  fi
  export MORTISE_PYTHON="$ROOT/.venv/bin/python"
}

cli() {
  echo "== building the CLI (release)"
  cargo build --release --quiet --bin mortise
}

demo() {
  echo "== demo scenario: heat-pump outdoor unit on a timber-frame wall"
  ./target/release/mortise demo -o sample-frf --check
  ./target/release/mortise run sample-frf/heat-pump.recipe.json -o target/demo-out
}

page() {
  if [ -x tools/page.sh ]; then
    echo "== building the offline page"
    tools/page.sh
  else
    echo "tools/page.sh missing" >&2
    return 1
  fi
}

node_deps() {
  if [ -f package.json ] && [ ! -d node_modules/playwright-core ]; then
    echo "== installing node test dependencies"
    npm ci --no-audit --no-fund --silent
  fi
}

case "${1:-build}" in
  build)
    cli
    demo
    node_deps
    page
    echo
    echo "open: file://$ROOT/dist/mortise.html"
    ;;
  test)
    venv
    echo "== cargo test"
    cargo test --quiet --all-targets
    cargo test --quiet --doc
    cli
    demo
    node_deps
    page
    echo "== browser end-to-end tests"
    node --test tests/e2e/
    ;;
  bench)
    venv
    cargo run --release --quiet --example bench_couple
    ;;
  *)
    echo "usage: ./build.sh [build|test|bench]" >&2
    exit 2
    ;;
esac
