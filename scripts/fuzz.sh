#!/usr/bin/env bash
# Runs each cargo-fuzz target (feed_zip, feed_csv, plan_query) for its share of MINUTES on one
# core, then reports crashes. cargo-fuzz needs nightly flags; RUSTC_BOOTSTRAP=1 lets the stable
# toolchain accept them. No sanitizer (the library has no unsafe code; ASan would only slow it);
# optimised with debug assertions and overflow checks on (-O -a), so arithmetic overflow panics.
# Seeds (tracked) are in fuzz/seeds/<target>; the growing corpus and crash inputs go to
# fuzz/corpus/<target> and fuzz/artifacts/<target> (ignored by git). Every crash input becomes a
# regression case in tests/bad_feeds.rs.
# Usage: scripts/fuzz.sh MINUTES [target...]
set -euo pipefail
cd "$(dirname "$0")/../fuzz"
minutes="${1:?usage: scripts/fuzz.sh MINUTES [target...]}"
shift || true
targets=("$@")
[ ${#targets[@]} -gt 0 ] || targets=(feed_zip feed_csv plan_query)
export RUSTC_BOOTSTRAP=1 CARGO_BUILD_JOBS=1
per=$(( minutes * 60 / ${#targets[@]} ))
for t in "${targets[@]}"; do
  cargo fuzz build -s none -O -a "$t"
done
status=0
for t in "${targets[@]}"; do
  mkdir -p "corpus/$t" "artifacts/$t"
  echo "== $t: ${per}s"
  # libFuzzer stops at the first crash of a target and leaves the input in artifacts/<target>/.
  if ! cargo fuzz run -s none -O -a "$t" "corpus/$t" "seeds/$t" -- -max_total_time="$per" \
      -max_len=262144 -rss_limit_mb=2048 -timeout=20 -print_final_stats=1 > "artifacts/$t.log" 2>&1; then
    status=1
  fi
  grep -E '^(stat::number_of_executed_units|stat::peak_rss_mb)|panicked at|SUMMARY|Test unit written' "artifacts/$t.log" || true
  if [ -n "$(ls -A "artifacts/$t" 2>/dev/null)" ]; then
    echo "!! $t crash inputs:"; ls -l "artifacts/$t"; status=1
  fi
done
exit $status
