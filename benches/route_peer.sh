#!/usr/bin/env bash
# Route planner against a general-purpose peer: scikit-image's route_through_array
# (fully connected, geometric) on the same 4096 x 4096 synthetic terrain (1 m cells),
# with a slope cost and the same 25 degree cut, both as whole processes from the file on
# disk. Prints both times, the ratio, and sunward's peak memory per cell.
#
# The machine is a shared VM whose speed drifts by tens of percent from minute to minute,
# so both sides run ROUNDS times (default 3), alternating, and the script prints the
# fastest and the median run of each and the ratio of both. Each timed process starts
# after a pause of PAUSE seconds (default 2), so that neither side starts while the
# kernel is still taking back the other's memory (without it sunward's runs right after
# the peer's were slower by about 8 %: benches/results/2026-12-03-route-search.txt).
#
# The peer is installed here, in a venv under target/, never as a project dependency.
# Usage: bash benches/route_peer.sh [SIZE] [ROUNDS]      (defaults 4096, 3)
set -euo pipefail
cd "$(dirname "$0")/.."
SIZE=${1:-4096}
ROUNDS=${2:-3}
PAUSE=${PAUSE:-2}
WORK=target/route-peer
VENV=$WORK/venv
mkdir -p "$WORK"
if [ ! -x "$VENV/bin/python" ]; then
    python3 -m venv "$VENV"
    "$VENV/bin/pip" install -q scikit-image tifffile numpy
fi
cargo build --release -q
BIN=target/release/sunward
DEM=$WORK/synth$SIZE.tif
[ -f "$DEM" ] || "$BIN" terrain synth --size "$SIZE" --cell-m 1 --seed 4 -o "$DEM" 2>/dev/null
cat > "$WORK/rover.toml" <<'TOML'
# The default rover with 25 degree limits on pitch and roll and no extra roll cap.
max_climb_deg = 25
max_descent_deg = 25
max_roll_deg = 25
roll_stability_fraction = 1.0
TOML
cat > "$WORK/peer.py" <<'PY'
import sys, time
import numpy as np, tifffile
from skimage.graph import route_through_array
t0 = time.perf_counter()
z = tifffile.imread(sys.argv[1]).astype(np.float64)
gy, gx = np.gradient(z, 1.0)              # 1 m cells
slope = np.degrees(np.arctan(np.hypot(gx, gy)))
cost = 1.0 + np.tan(np.radians(np.minimum(slope, 89.0)))
cost[slope > 25.0] = np.inf               # the same 25 degree cut
n = z.shape[0]
path, total = route_through_array(cost, (n - 1, 0), (0, n - 1), fully_connected=True, geometric=True)
print(f"peer: {len(path)} cells, cost {total:.1f}, {time.perf_counter() - t0:.2f} s inside python")
PY
EXTENT=$((SIZE))
FROM="0.5,0.5"
TO="$((EXTENT - 1)).5,$((EXTENT - 1)).5"
PEER_TS=()
OURS_TS=()
for r in $(seq "$ROUNDS"); do
    echo "== round $r of $ROUNDS: scikit-image route_through_array, $SIZE x $SIZE"
    sleep "$PAUSE"
    PEER_T=$( { /usr/bin/time -f "%e" "$VENV/bin/python" "$WORK/peer.py" "$DEM" >&2; } 2>&1 | tail -1 )
    echo "peer wall time: $PEER_T s"
    PEER_TS+=("$PEER_T")
    echo "== round $r of $ROUNDS: sunward route, $SIZE x $SIZE, energy objective"
    sleep "$PAUSE"
    OUT=$( { /usr/bin/time -f "%e %M" "$BIN" route --terrain "$DEM" --rover "$WORK/rover.toml" \
            --from "$FROM" --to "$TO" --objective energy --json > "$WORK/sunward.json"; } 2>&1 | tail -1 )
    echo "sunward wall time: ${OUT% *} s"
    OURS_TS+=("${OUT% *}")
    RSS_KB=${OUT#* }
done
python3 - "$WORK/sunward.json" "$RSS_KB" "$SIZE" "${PEER_TS[*]}" "${OURS_TS[*]}" <<'PY'
import json, statistics, sys
d = json.load(open(sys.argv[1]))
rss_kb, n = float(sys.argv[2]), int(sys.argv[3])
peer = [float(x) for x in sys.argv[4].split()]
ours = [float(x) for x in sys.argv[5].split()]
print(f"sunward: {len(d['cells'])} cells, {d['energy_wh']:.1f} Wh, {d['expanded_nodes']} expanded, "
      f"{statistics.median(ours) * 1e9 / d['expanded_nodes']:.0f} ns per expanded node "
      f"(median whole-process wall time over both threads' expansions)")
print(f"peer    runs: {peer}  fastest {min(peer):.2f} s, median {statistics.median(peer):.2f} s")
print(f"sunward runs: {ours}  fastest {min(ours):.2f} s, median {statistics.median(ours):.2f} s")
print(f"ratio peer/sunward: fastest {min(peer) / min(ours):.2f}x, median "
      f"{statistics.median(peer) / statistics.median(ours):.2f}x (target 8x)")
print(f"sunward peak memory: {rss_kb / 1024:.0f} MiB = {rss_kb * 1024 / (n * n):.1f} bytes per cell (target 24)")
PY
