#!/usr/bin/env bash
# Speed of `sunward sun --from --to --step-min 1 -o` (one year, 525,600 instants: SPA,
# Ineichen-Perez clear sky, Hay-Davies plane of array, CSV) against the same job in pvlib,
# each timed as a whole process. Prints both wall times and the ratio.
# Needs a Python with pvlib: set PYTHON (default: /tmp/sunvenv/bin/python; make it with
#   python3 -m venv /tmp/sunvenv && /tmp/sunvenv/bin/pip install pvlib==0.16.1).
set -euo pipefail
cd "$(dirname "$0")/.."
PYTHON=${PYTHON:-/tmp/sunvenv/bin/python}
LAT=47.8 LON=8.2 YEAR=2025 TILT=35 AZ=180
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
cargo build --release --quiet
now() { date +%s.%N; }
t0=$(now)
target/release/sunward sun --lat $LAT --lon $LON --from $YEAR-01-01 --to $YEAR-12-31 --step-min 1 \
  --tilt-deg $TILT --panel-azimuth-deg $AZ -o "$tmp/sunward.csv" 2>/dev/null
t1=$(now)
"$PYTHON" benches/sun_peer.py "$tmp/pvlib.csv" - $LAT $LON $YEAR $TILT $AZ
t2=$(now)
"$PYTHON" benches/sun_peer.py "$tmp/pvlib2.csv" "$tmp/sunward.csv" $LAT $LON $YEAR $TILT $AZ >"$tmp/agree.txt"
ours=$(echo "$t1 - $t0" | bc -l); peer=$(echo "$t2 - $t1" | bc -l)
printf 'sunward: %.3f s   pvlib: %.3f s   ratio (pvlib / sunward): %.1fx\n' "$ours" "$peer" "$(echo "$peer / $ours" | bc -l)"
cat "$tmp/agree.txt"
