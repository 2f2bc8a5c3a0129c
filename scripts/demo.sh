#!/usr/bin/env bash
# The main job on the demo city: plans journeys with the CLI, then serves the page.
set -euo pipefail
cd "$(dirname "$0")/.."
scripts/build.sh
FEEDS=(--feed demo-data/oskerveld-city --feed demo-data/oskerveld-rail)
echo "== Standard journey, Quistenford → Tollimere, Wednesday 2026-12-02 08:00"
target/release/timeweave plan "${FEEDS[@]}" --from Quistenford --to Tollimere --date 2026-12-02 --at 08:00
echo
echo "== The same journey, step-free"
target/release/timeweave plan "${FEEDS[@]}" --from Quistenford --to Tollimere --date 2026-12-02 --at 08:00 --step-free --next 1
echo
echo "== A kiosk folder for Oskerveld Central (departures, and journeys to two destinations)"
target/release/timeweave kiosk "${FEEDS[@]}" --stop ORR_CEN --destinations OCT_WMD,ORR_VMJ --from 2026-12-02 --out target/demo-kiosk
echo "   serve it with: target/release/timeweave serve --root target/demo-kiosk --port 8090"
echo
PORT=${PORT:-8080}
echo "== Serving the page: open http://127.0.0.1:$PORT/ (Ctrl-C stops)"
exec target/release/timeweave serve --port "$PORT" --root www
