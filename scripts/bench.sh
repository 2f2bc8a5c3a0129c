#!/usr/bin/env bash
# Benchmarks (issue 4): the native search on generated metro and region feeds, side by side with
# petgraph's dijkstra and a plain Connection Scan (cargo bench --bench queries), the window analyses
# (cargo bench --bench window: profile vs 120 sweeps, the region matrix), the interchange audit
# (cargo bench --bench interchange: metro all stations all day, against the first version), the
# step-free audit (cargo bench --bench stepfree: region every pair, against both profiles alone), the
# comparison (cargo bench --bench compare: region against itself, against one matrix), then the WASM build
# in headless Chromium on the metro feed (tests/browser/bench/bench.mjs), and the Python package's
# Dask runner against one process (python/bench/cluster.py). Prints both Markdown
# tables and the machine they ran on. Takes several minutes; the feeds are generated into
# bench-out/ on first use.
#
#   TIMEWEAVE_SKIP_BUILD=1   skip scripts/build.sh (native binary + WASM already built)
#   TIMEWEAVE_BENCH_*        see benches/queries.rs and tests/browser/bench/bench.mjs
#   CARGO_JOBS               parallel jobs for cargo (default 1: a 2-core machine others build on)
set -euo pipefail
cd "$(dirname "$0")/.."

machine() {
  echo "### Machine"
  echo
  echo "| what | value |"
  echo "|---|---|"
  echo "| CPU | $(grep -m1 '^model name' /proc/cpuinfo | cut -d: -f2- | sed 's/^ *//') |"
  echo "| cores (nproc) | $(nproc) |"
  echo "| memory | $(awk '/^MemTotal/ { printf "%.1f GiB", $2 / 1048576 }' /proc/meminfo) |"
  echo "| kernel | $(uname -r) |"
  echo "| rustc | $(rustc --version) |"
  echo "| node | $(node --version) |"
  echo "| load average at start / end | $LOAD_START / $(cut -d' ' -f1-3 /proc/loadavg) |"
  echo "| date | $(date -u '+%Y-%m-%d %H:%M UTC') |"
}
LOAD_START=$(cut -d' ' -f1-3 /proc/loadavg)

if [ "${TIMEWEAVE_SKIP_BUILD:-}" != 1 ]; then
  scripts/build.sh
fi
mkdir -p bench-out

cargo bench -j "${CARGO_JOBS:-1}" --bench queries 2>&1 | tee bench-out/native.log
cargo bench -j "${CARGO_JOBS:-1}" --bench window 2>&1 | tee bench-out/window.log
cargo bench -j "${CARGO_JOBS:-1}" --bench interchange 2>&1 | tee bench-out/interchange.log
cargo bench -j "${CARGO_JOBS:-1}" --bench stepfree 2>&1 | tee bench-out/stepfree.log
cargo bench -j "${CARGO_JOBS:-1}" --bench compare 2>&1 | tee bench-out/compare.log

node tests/browser/bench/bench.mjs 2>&1 | tee bench-out/browser.log

python3 -m pip install -q --disable-pip-version-check --no-build-isolation .
python3 python/bench/cluster.py 2>&1 | tee bench-out/cluster.log

{
  echo
  echo "## timeweave benchmarks"
  echo
  machine
  echo
  cat bench-out/native.md
  echo
  cat bench-out/window.md
  echo
  cat bench-out/interchange.md
  echo
  cat bench-out/stepfree.md
  echo
  cat bench-out/compare.md
  echo
  cat bench-out/browser.md
  echo
  cat bench-out/cluster.md
} | tee bench-out/report.md
