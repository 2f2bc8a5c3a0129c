#!/usr/bin/env bash
# Installs what building, serving and testing need, skipping what is already there.
# Idempotent: safe to run on every build.
set -euo pipefail
cd "$(dirname "$0")/.."

WASM_BINDGEN_VERSION=$(sed -n 's/^wasm-bindgen = "=\(.*\)"/\1/p' Cargo.toml)
[ -n "$WASM_BINDGEN_VERSION" ] || { echo "setup: cannot read the wasm-bindgen pin from Cargo.toml" >&2; exit 1; }

if ! rustup target list --installed | grep -qx wasm32-unknown-unknown; then
  echo "setup: adding the wasm32-unknown-unknown target"
  rustup target add wasm32-unknown-unknown
fi

for component in rustfmt clippy; do
  if ! rustup component list --installed | grep -q "^$component"; then
    echo "setup: adding the $component component"
    rustup component add "$component"
  fi
done

if [ "$(wasm-bindgen --version 2>/dev/null | awk '{print $2}')" != "$WASM_BINDGEN_VERSION" ]; then
  echo "setup: installing wasm-bindgen-cli $WASM_BINDGEN_VERSION (takes a few minutes)"
  # Not --locked: its lock file pins a crate version the registry no longer serves.
  cargo install wasm-bindgen-cli --version "$WASM_BINDGEN_VERSION" --force
fi

need_apt=()
[ -x /usr/bin/chromium ] || need_apt+=(chromium)
if [ ${#need_apt[@]} -gt 0 ]; then
  echo "setup: installing ${need_apt[*]} from Debian"
  SUDO=""; [ "$(id -u)" = 0 ] || SUDO=sudo
  $SUDO apt-get update -qq || true
  DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y -qq "${need_apt[@]}"
fi

if [ -f tests/browser/package.json ] && { [ ! -d tests/browser/node_modules/playwright-core ] || [ ! -d tests/browser/node_modules/binaryen ]; }; then
  echo "setup: installing npm packages for the browser tests"
  (cd tests/browser && if [ -f package-lock.json ]; then npm ci --no-audit --no-fund; else npm install --no-audit --no-fund; fi)
fi

# The Python package's build and test dependencies (maturin, pyarrow, pandas, Dask, pytest),
# pinned in python/requirements.txt; pip skips what is already installed at that version.
if ! python3 -m pip install -q --disable-pip-version-check -r python/requirements.txt 2>/tmp/timeweave-pip.err; then
  cat /tmp/timeweave-pip.err >&2
  exit 1
fi
