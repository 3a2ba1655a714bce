#!/usr/bin/env python3
"""Write the synthetic input DEMs (ESRI ASCII grids) for the terrain reference set.

Usage: gen_inputs.py OUTDIR

Needs numpy only.  Every grid comes from numpy.random.default_rng with a fixed
seed, so re-running gives byte-identical files.  Elevations are rounded to
0.01 m and written with "%.2f" (the integer grid with "%d"), so the text in
the file *is* the elevation: no hidden precision.

Grids written (rows are north to south, as in the file format):

  rand40x30.asc          40 cols x 30 rows, 10 m square cells, no NODATA line
  rand25x25_nodata.asc   25 x 25, 5 m square cells, a few -9999 cells
                         (a corner, two edge cells, one isolated interior
                         cell and a 2x2 interior block)
  plateau20x20.asc       20 x 20, 10 m cells, integers: two flat terraces joined
                         by a straight ramp plus a small pit; exercises
                         flat-cell aspect and an integer (Int32) ASCII grid
  rect30x20.asc          30 x 20, NON-square cells 10 m (x) by 6 m (y), written
                         with the "dx"/"dy" header keywords that GDAL's AAIGrid
                         driver reads; slope only (see README)
"""
import os
import sys

import numpy as np

NODATA = -9999


def smooth_terrain(rng, ncols, nrows, cell_x, cell_y, base, n_bumps, noise):
    """Sum of Gaussian hills/hollows on a tilted plane, plus small noise."""
    x = (np.arange(ncols) + 0.5) * cell_x           # cell centres, west -> east
    y = (np.arange(nrows) + 0.5) * cell_y           # cell centres, north -> south
    xx, yy = np.meshgrid(x, y)
    width = ncols * cell_x
    height = nrows * cell_y
    tilt_x, tilt_y = rng.uniform(-0.15, 0.15, size=2)
    z = base + tilt_x * xx + tilt_y * yy
    for _ in range(n_bumps):
        cx = rng.uniform(0, width)
        cy = rng.uniform(0, height)
        amp = rng.uniform(-35.0, 45.0)
        sig = rng.uniform(0.12, 0.35) * max(width, height)
        z += amp * np.exp(-((xx - cx) ** 2 + (yy - cy) ** 2) / (2 * sig * sig))
    z += rng.normal(0.0, noise, size=z.shape)
    return np.round(z, 2)


def write_asc(path, z, xll, yll, cellsize=None, dx=None, dy=None,
              nodata=None, integer=False):
    nrows, ncols = z.shape
    lines = [f"ncols {ncols}", f"nrows {nrows}",
             f"xllcorner {xll}", f"yllcorner {yll}"]
    if cellsize is not None:
        lines.append(f"cellsize {cellsize}")
    else:
        lines.append(f"dx {dx}")
        lines.append(f"dy {dy}")
    if nodata is not None:
        lines.append(f"NODATA_value {nodata}")
    fmt = "%d" if integer else "%.2f"
    for row in z:
        vals = []
        for v in row:
            if nodata is not None and v == nodata:
                vals.append(str(nodata))
            else:
                vals.append(fmt % v)
        lines.append(" ".join(vals))
    with open(path, "w", newline="\n") as f:
        f.write("\n".join(lines) + "\n")


def main():
    out = sys.argv[1]
    os.makedirs(out, exist_ok=True)

    # 1. rand40x30: 40 columns, 30 rows, 10 m cells, no nodata.
    rng = np.random.default_rng(40_30)
    z = smooth_terrain(rng, 40, 30, 10.0, 10.0, base=250.0, n_bumps=7, noise=0.4)
    write_asc(os.path.join(out, "rand40x30.asc"), z, 500000, 4100000, cellsize=10)

    # 2. rand25x25_nodata: 25 x 25, 5 m cells, some -9999 cells.
    rng = np.random.default_rng(25_25)
    z = smooth_terrain(rng, 25, 25, 5.0, 5.0, base=1200.0, n_bumps=5, noise=0.2)
    holes = [(0, 0),            # upper-left corner
             (0, 9),            # top edge
             (14, 24),          # right edge
             (12, 12),          # isolated interior cell
             (18, 6), (18, 7), (19, 6), (19, 7)]   # 2x2 interior block
    for r, c in holes:
        z[r, c] = NODATA
    write_asc(os.path.join(out, "rand25x25_nodata.asc"), z, 350000, 5200000,
              cellsize=5, nodata=NODATA)

    # 3. plateau20x20: integer terraces and a ramp (deterministic, no rng).
    z = np.zeros((20, 20), dtype=np.int64)
    for r in range(20):
        for c in range(20):
            if c < 7:
                z[r, c] = 100                      # upper terrace (flat)
            elif c < 13:
                z[r, c] = 100 - 5 * (c - 6)        # ramp falling to the east
            else:
                z[r, c] = 70                       # lower terrace (flat)
    z[4, 3] = 97                                   # one-cell pit on the terrace
    z[15, 16] = 73                                 # one-cell knob on the floor
    write_asc(os.path.join(out, "plateau20x20.asc"), z, 1000, 2000,
              cellsize=10, integer=True)

    # 4. rect30x20: non-square cells, 10 m east-west by 6 m north-south.
    rng = np.random.default_rng(30_20)
    z = smooth_terrain(rng, 30, 20, 10.0, 6.0, base=40.0, n_bumps=5, noise=0.3)
    write_asc(os.path.join(out, "rect30x20.asc"), z, 600000, 4500000,
              dx=10, dy=6)


if __name__ == "__main__":
    main()
