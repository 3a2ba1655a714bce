#!/usr/bin/env bash
# Fills fuzz/corpus/<target>/ with the project's own small inputs as starting points.
# Run from anywhere; needs python3 (standard library only) for the two PNG seeds.
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
root="$here/.."
c="$here/corpus"
mkdir -p "$c/geotiff" "$c/png_heightmap" "$c/ascii_grid" "$c/mission"
cp "$root"/tests/reference/terrain/*.tif "$root"/tests/data/bad/*.tif "$c/geotiff/"
cp "$root"/tests/data/bad/*.asc "$c/ascii_grid/"
for f in plateau20x20.asc rand25x25_nodata.asc; do
  cp "$root/tests/reference/terrain/$f" "$c/ascii_grid/"
done
cp "$root"/missions/*.toml "$c/mission/"
python3 - "$c/png_heightmap" <<'PY'
import struct, sys, zlib
def png(path, w, h, depth, rows):
    def chunk(kind, body):
        return struct.pack(">I", len(body)) + kind + body + struct.pack(">I", zlib.crc32(kind + body))
    raw = b"".join(b"\0" + r for r in rows)
    ihdr = struct.pack(">IIBBBBB", w, h, depth, 0, 0, 0, 0)
    data = b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", ihdr) + chunk(b"IDAT", zlib.compress(raw)) + chunk(b"IEND", b"")
    open(path, "wb").write(data)
out = sys.argv[1]
png(f"{out}/g16.png", 4, 3, 16, [b"".join(struct.pack(">H", 1000 * r + 7 * c) for c in range(4)) for r in range(3)])
png(f"{out}/g8.png", 5, 2, 8, [bytes(range(r, r + 5)) for r in range(2)])
PY
echo "seeded $(ls "$c"/* | wc -l) files under $c"
