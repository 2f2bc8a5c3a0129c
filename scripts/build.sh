#!/usr/bin/env bash
# Builds the native binary, the WASM module and the demo feed zips into www/.
set -euo pipefail
cd "$(dirname "$0")/.."
scripts/setup.sh

cargo build --release -p timeweave-cli --bin timeweave
cargo build -p timeweave-wasm --lib --target wasm32-unknown-unknown --profile release-wasm
wasm-bindgen --target web --no-typescript --out-name timeweave --out-dir www/pkg target/wasm32-unknown-unknown/release-wasm/timeweave_wasm.wasm
# wasm-opt from npm's binaryen: Debian's (version 108) cannot parse what current rustc emits.
WASM_OPT=tests/browser/node_modules/.bin/wasm-opt
if [ -x "$WASM_OPT" ] && [ "${TIMEWEAVE_NO_WASM_OPT:-}" != 1 ]; then
  "$WASM_OPT" -Oz --enable-bulk-memory --enable-bulk-memory-opt --enable-nontrapping-float-to-int --enable-sign-ext --enable-mutable-globals --enable-reference-types --enable-multivalue --enable-gc www/pkg/timeweave_bg.wasm -o www/pkg/timeweave_bg.wasm.opt
  mv www/pkg/timeweave_bg.wasm.opt www/pkg/timeweave_bg.wasm
fi
echo "build: www/pkg/timeweave_bg.wasm is $(stat -c %s www/pkg/timeweave_bg.wasm) bytes"

# Demo city zips, built from the committed text files (entries at the zip root).
mkdir -p www/feeds
index='{"feeds":['
sep=''
for dir in demo-data/*/; do
  name=$(basename "$dir")
  [ -f "$dir/stops.txt" ] || continue
  python3 - "$dir" "www/feeds/$name.zip" <<'PY'
import sys, zipfile, pathlib
src, out = pathlib.Path(sys.argv[1]), sys.argv[2]
with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as z:
    for f in sorted(src.glob("*.txt")):
        info = zipfile.ZipInfo(f.name, date_time=(2026, 1, 1, 0, 0, 0))
        info.compress_type = zipfile.ZIP_DEFLATED
        z.writestr(info, f.read_bytes())
PY
  index="$index$sep{\"name\":\"$name\",\"url\":\"feeds/$name.zip\"}"
  sep=','
done
echo "$index]}" > www/feeds/index.json
