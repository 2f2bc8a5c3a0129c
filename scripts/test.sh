#!/usr/bin/env bash
# Runs every test: Rust unit, integration and property tests, then the browser tests in
# headless Chromium against the real WASM build.
set -euo pipefail
cd "$(dirname "$0")/.."
scripts/build.sh
# The house rules first: formatting, and lints as errors (shared target dir, debug profile).
cargo fmt --all --check
cargo clippy --workspace --all-targets -- -D warnings
cargo test --profile ci --workspace
# The Python package: `pip install .` builds the native module with maturin (the `ci` profile, so
# the core compiled for the tests above is reused), then pytest, a real Dask LocalCluster included.
python3 -m pip install -q --disable-pip-version-check --no-build-isolation .
TIMEWEAVE_BIN="$PWD/target/release/timeweave" python3 -m pytest -q -p no:cacheprovider python/tests
if [ -d tests/browser ] && ls tests/browser/*.test.mjs >/dev/null 2>&1; then
  node --test --test-concurrency=1 tests/browser/
fi
