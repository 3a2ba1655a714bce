#!/usr/bin/env python3
"""Cross-check the generated reference data with tools other than the one that made it.

Usage: verify.py REFDIR DATADIR     (prints a report; exit status 1 on any failure)

It never changes a reference value; it only reads and compares.
  1. gdaldem outputs vs. an independent numpy re-computation of Horn's (1981)
     3x3 method, once in float32 arithmetic in the order GDAL 3.6 uses (should
     agree to the last float32 bit or so) and once in plain float64 (what a
     careful f64 implementation gets; the difference sets the tolerances in
     README.md).  The emulation also encodes the edge rule of -compute_edges and
     the no-data rule as observed (see README.md).
  2. every <name>.expect.json (read back by GDAL) vs. tifffile's own decoding
     of the same TIFF: pixel values, geo tags, EPSG GeoKey, GDAL_NODATA text.
  3. olinda.samples.csv and olinda.gdalinfo.json vs. tifffile + numpy.
  4. a worked, by-hand Horn slope for one interior pixel of rand40x30.
  5. the corrupt files in tests/data/bad/ really are what their README says.
Needs numpy, tifffile, imagecodecs.
"""
import csv
import glob
import json
import math
import os
import struct
import sys

import numpy as np
import tifffile

FAIL = []


def check(ok, msg):
    print(("ok    " if ok else "FAIL  ") + msg)
    if not ok:
        FAIL.append(msg)


# ---------------------------------------------------------------- ASCII grids
def read_asc(path):
    with open(path) as f:
        toks = f.read().split()
    hdr = {}
    i = 0
    while i < len(toks) and not _isnum(toks[i]):
        hdr[toks[i].lower()] = float(toks[i + 1])
        i += 2
    ncols, nrows = int(hdr["ncols"]), int(hdr["nrows"])
    vals = np.array([float(t) for t in toks[i:]], dtype=np.float64)
    assert vals.size == ncols * nrows, path
    z = vals.reshape(nrows, ncols)
    if "cellsize" in hdr:
        dx = dy = hdr["cellsize"]
    else:
        dx, dy = hdr["dx"], hdr["dy"]
    nd = hdr.get("nodata_value")
    valid = np.ones(z.shape, bool) if nd is None else (z != nd)
    return dict(z=z, valid=valid, dx=dx, dy=dy, nodata=nd, hdr=hdr)


def _isnum(t):
    try:
        float(t)
        return True
    except ValueError:
        return False


# ------------------------------------------------ Horn 3x3 emulation (numpy)
F = np.float32


def windows(z, valid, edges):
    """Yield (r, c, win) with win the 9 values a0..a8 (float32), or None for no-data.

    Window layout, rows north to south:   a0 a1 a2
                                          a3 a4 a5
                                          a6 a7 a8
    Without edges: border cells and cells whose window touches no-data -> None.
    With edges (gdaldem -compute_edges, GDAL 3.6 as observed):
      first row:  row above = 2*row0 - row1, column index clamped at the
                  corners (so a corner's missing column repeats its own column)
      last row:   row below = 2*rowN - rowN-1, columns clamped likewise
      other rows, first/last column: missing column = 2*col0 - col1 (resp. the
                  mirror at the east edge)
      an extrapolated value involving no-data is no-data; then every no-data
      neighbour is replaced by the centre value; a no-data centre -> None.
    """
    R, C = z.shape
    zf = z.astype(F)

    def val(r, c):
        return zf[r, c] if valid[r, c] else None

    def interp(a, b):
        if a is None or b is None:
            return None
        return F(F(2) * a - b)

    for r in range(R):
        for c in range(C):
            if not valid[r, c]:
                yield r, c, None
                continue
            border = r == 0 or c == 0 or r == R - 1 or c == C - 1
            if border and not edges:
                yield r, c, None
                continue
            if not border:
                w = [val(r + i, c + j) for i in (-1, 0, 1) for j in (-1, 0, 1)]
            elif r == 0 or r == R - 1:
                cols = [max(c - 1, 0), c, min(c + 1, C - 1)]
                if r == 0:
                    top = [interp(val(0, k), val(1, k)) for k in cols]
                    w = top + [val(0, k) for k in cols] + [val(1, k) for k in cols]
                else:
                    bot = [interp(val(R - 1, k), val(R - 2, k)) for k in cols]
                    w = [val(R - 2, k) for k in cols] + [val(R - 1, k) for k in cols] + bot
            elif c == 0:
                w = []
                for i in (-1, 0, 1):
                    w += [interp(val(r + i, 0), val(r + i, 1)), val(r + i, 0), val(r + i, 1)]
            else:  # c == C - 1
                w = []
                for i in (-1, 0, 1):
                    w += [val(r + i, C - 2), val(r + i, C - 1),
                          interp(val(r + i, C - 1), val(r + i, C - 2))]
            if any(v is None for v in w):
                if not edges:
                    yield r, c, None
                    continue
                w = [w[4] if v is None else v for v in w]
            yield r, c, w


def horn_sums(w, dtype):
    a = [dtype(v) for v in w]
    west = ((a[0] + a[3]) + a[3]) + a[6]
    east = ((a[2] + a[5]) + a[5]) + a[8]
    south = ((a[6] + a[7]) + a[7]) + a[8]
    north = ((a[0] + a[1]) + a[1]) + a[2]
    return dtype(west), dtype(east), dtype(south), dtype(north)


def slope_deg(w, ewres, nsres, dtype):
    west, east, south, north = horn_sums(w, dtype)
    dx = float(dtype(west - east)) / ewres
    dy = float(dtype(south - north)) / nsres
    return math.degrees(math.atan(math.sqrt(dx * dx + dy * dy) / 8.0))


def aspect_deg(w, dtype):
    """Azimuth (clockwise from north) of the downslope direction; None if flat."""
    west, east, south, north = horn_sums(w, dtype)
    dx = float(dtype(east - west))
    dy = float(dtype(south - north))
    if dx == 0 and dy == 0:
        return None
    a = math.degrees(math.atan2(dy, -dx))
    if dtype is F:
        a = float(F(a))
        a = float(F(450.0) - F(a)) if a > 90.0 else float(F(90.0) - F(a))
    else:
        a = 450.0 - a if a > 90.0 else 90.0 - a
    return 0.0 if a == 360.0 else a


def hillshade(w, ewres, nsres, az=315.0, alt=45.0, zf=1.0):
    west, east, south, north = horn_sums(w, np.float64)
    x = (west - east) / ewres
    y = (south - north) / nsres
    zs = zf / 8.0
    azr, altr = math.radians(az), math.radians(alt)
    cang = (math.sin(altr) - math.cos(altr) * zs * (y * math.cos(azr) - x * math.sin(azr))) \
        / math.sqrt(1.0 + zs * zs * (x * x + y * y))
    return 1.0 if cang <= 0.0 else 1.0 + 254.0 * cang


def compare_product(dem, product, gdal_asc, fn, tol32, report64=True):
    g = read_asc(gdal_asc)
    R, C = dem["z"].shape
    check(g["z"].shape == (R, C), f"{os.path.basename(gdal_asc)}: size {C}x{R}")
    edges = "_edges" in gdal_asc
    mask_ok = True
    d32 = d64 = 0.0
    where = None
    for r, c, w in windows(dem["z"], dem["valid"], edges):
        gv = g["z"][r, c] if g["valid"][r, c] else None
        ev = None if w is None else fn(w, F)
        if (gv is None) != (ev is None):
            if mask_ok:
                print(f"      first no-data mismatch at row {r} col {c}: gdal={gv} emu={ev}")
            mask_ok = False
            continue
        if gv is None:
            continue
        diff = abs(gv - ev)
        if product == "aspect":
            diff = min(diff, 360.0 - diff)
        if diff > d32:
            d32, where = diff, (r, c)
        e64 = fn(w, np.float64)
        diff64 = abs(gv - e64)
        if product == "aspect":
            diff64 = min(diff64, 360.0 - diff64)
        d64 = max(d64, diff64)
    n_nd = int((~g["valid"]).sum())
    check(mask_ok, f"{os.path.basename(gdal_asc)}: no-data pattern matches the emulation ({n_nd} no-data cells)")
    check(d32 <= tol32, f"{os.path.basename(gdal_asc)}: max |gdal - float32 emulation| = {d32:.3g}"
          f" (tol {tol32:g}) at {where}; max |gdal - float64| = {d64:.3g}")
    return d64


def terrain(ref):
    print("\n== 1. gdaldem products vs numpy re-computation of Horn's method")
    worst = {}
    for name in ["rand40x30", "rand25x25_nodata", "plateau20x20", "rect30x20"]:
        dem = read_asc(os.path.join(ref, f"{name}.asc"))
        ew, ns = dem["dx"], -dem["dy"]          # GDAL uses geotransform[1], [5]
        prods = [("slope", lambda w, t: slope_deg(w, ew, ns, t), 2e-5),
                 ("slope_edges", lambda w, t: slope_deg(w, ew, ns, t), 2e-5)]
        if name != "rect30x20":
            prods += [("aspect", aspect_deg, 2e-4), ("aspect_edges", aspect_deg, 2e-4),
                      ("hillshade", lambda w, t: hillshade(w, ew, ns), 1.0)]
        for prod, fn, tol in prods:
            base = prod.split("_")[0]
            d64 = compare_product(dem, base, os.path.join(ref, f"{name}.{prod}.asc"), fn, tol)
            worst[(name, prod)] = d64
    # Olinda slope (Float32 GeoTIFF input, integer-valued metres)
    z = tifffile.imread(os.path.join(ref, "../../data/olinda_dem_utm25s.tif")).astype(np.float64)
    with tifffile.TiffFile(os.path.join(ref, "../../data/olinda_dem_utm25s.tif")) as t:
        sx, sy = t.pages[0].tags["ModelPixelScaleTag"].value[:2]
    dem = dict(z=z, valid=np.ones(z.shape, bool), dx=sx, dy=sy)
    for prod in ["slope", "slope_edges"]:
        d64 = compare_product(dem, "slope", os.path.join(ref, f"olinda.{prod}.asc"),
                              lambda w, t: slope_deg(w, sx, -sy, t), 2e-5)
        worst[("olinda", prod)] = d64
    print("\n   max |gdal - float64 Horn| per product (basis of the README tolerances):")
    for k, v in worst.items():
        print(f"      {k[0]:18s} {k[1]:13s} {v:.3g}")

    # analytic: the plateau ramp falls 5 m per 10 m cell towards the east
    s = read_asc(os.path.join(ref, "plateau20x20.slope.asc"))["z"].tolist()
    a = read_asc(os.path.join(ref, "plateau20x20.aspect.asc"))["z"].tolist()
    exp = math.degrees(math.atan(0.5))
    check(abs(s[10][9] - exp) < 1e-5 and a[10][9] == 90.0,
          f"plateau ramp interior: slope {s[10][9]} vs atan(0.5) = {exp:.7f}, aspect {a[10][9]} vs 90")
    check(a[10][2] == -9999 and s[10][2] == 0.0,
          f"plateau flat terrace: slope {s[10][2]}, aspect {a[10][2]} (flat -> aspect no-data)")


def spot_check(ref):
    print("\n== 4. worked example: Horn slope by hand, rand40x30 row 12 col 17")
    dem = read_asc(os.path.join(ref, "rand40x30.asc"))
    z, cs = dem["z"], dem["dx"]
    r, c = 12, 17
    a, b, cc = z[r - 1, c - 1], z[r - 1, c], z[r - 1, c + 1]
    d, e, f = z[r, c - 1], z[r, c], z[r, c + 1]
    g, h, i = z[r + 1, c - 1], z[r + 1, c], z[r + 1, c + 1]
    print(f"      window (north row first):\n        {a:8.2f} {b:8.2f} {cc:8.2f}\n"
          f"        {d:8.2f} {e:8.2f} {f:8.2f}\n        {g:8.2f} {h:8.2f} {i:8.2f}")
    dzdx = ((cc + 2 * f + i) - (a + 2 * d + g)) / (8 * cs)
    dzdy = ((g + 2 * h + i) - (a + 2 * b + cc)) / (8 * cs)
    sl = math.degrees(math.atan(math.hypot(dzdx, dzdy)))
    print(f"      dz/dx = ((c+2f+i)-(a+2d+g))/(8*{cs:g}) = {dzdx:.9f}")
    print(f"      dz/dy = ((g+2h+i)-(a+2b+c))/(8*{cs:g}) = {dzdy:.9f}   (row axis, southwards)")
    print(f"      slope = atan(hypot) = {sl:.9f} deg")
    gv = float(read_asc(os.path.join(ref, "rand40x30.slope.asc"))["z"][r, c])
    check(abs(gv - sl) < 1e-4, f"gdaldem slope at (12,17) = {gv!r}, |diff| = {abs(gv - sl):.2e}")
    ga = float(read_asc(os.path.join(ref, "rand40x30.aspect.asc"))["z"][r, c])
    # downslope direction vector in (east, north) = (-dz/dx, +dz/dy_south)
    east, north = -dzdx, dzdy
    az = math.degrees(math.atan2(east, north)) % 360.0
    print(f"      aspect (downslope azimuth) = atan2(-dz/dx, dz/dy_south) = {az:.6f} deg")
    check(abs(ga - az) < 1e-3, f"gdaldem aspect at (12,17) = {ga!r}")


# ---------------------------------------------------------------- GeoTIFFs
def geokeys(page):
    t = page.tags.get(34735)
    if t is None:
        return {}
    v = list(t.value)
    out = {}
    for k in range(v[3]):
        key, loc, cnt, val = v[4 + 4 * k: 8 + 4 * k]
        if loc == 0:
            out[key] = val
    return out


def tiff_checks(ref):
    print("\n== 2. expect.json (GDAL) vs tifffile decoding of the same file")
    for ej in sorted(glob.glob(os.path.join(ref, "*.expect.json"))):
        e = json.load(open(ej))
        tif = os.path.join(ref, e["file"]) if not e["file"].startswith("olinda") \
            else os.path.join(ref, "../../data", e["file"])
        name = os.path.basename(ej)
        with tifffile.TiffFile(tif) as t:
            p = t.pages[0]
            arr = p.asarray()
            tags = p.tags
            gk = geokeys(p)
            ndtag = tags.get(42113)
            ndtext = ndtag.value.strip("\x00 ") if ndtag is not None else None
            # geo from the tags
            if 34264 in tags:
                m = tags[34264].value
                ox, oy, pw, ph = m[3], m[7], m[0], -m[5]
                how = "ModelTransformationTag"
            else:
                sc = tags[33550].value
                tp = tags[33922].value
                pw, ph = sc[0], sc[1]
                ox, oy = tp[3] - tp[0] * pw, tp[4] + tp[1] * ph
                how = "ModelPixelScale+ModelTiepoint"
            if gk.get(1025) == 2:       # PixelIsPoint: tie point is a pixel centre
                ox -= 0.5 * pw
                oy += 0.5 * ph
                how += " (PixelIsPoint, shifted half a pixel)"
        probs = []
        if (e["height"], e["width"]) != arr.shape:
            probs.append(f"shape {arr.shape}")
        for k, v in (("origin_x", ox), ("origin_y", oy), ("pixel_width", pw), ("pixel_height", ph)):
            if not math.isclose(e[k], v, rel_tol=1e-12, abs_tol=1e-12):
                probs.append(f"{k} {e[k]} vs tags {v}")
        code = gk.get(3072, gk.get(2048))
        code = None if code in (None, 32767) else code
        if code != e["epsg"]:
            probs.append(f"epsg {e['epsg']} vs GeoKey {code}")
        if (gk.get(1024) == 2) != e["geographic"]:
            probs.append("geographic flag vs GTModelTypeGeoKey")
        if ndtext is None:
            tnd = None
        elif ndtext.lower() == "nan":
            tnd = "nan"
        else:
            tnd = float(ndtext)
        if not (tnd == e["nodata"] or (tnd is not None and e["nodata"] not in (None, "nan")
                                        and float(e["nodata"]) == tnd)):
            probs.append(f"nodata {e['nodata']!r} vs GDAL_NODATA text {ndtext!r}")
        ev = e["values"]
        for r in range(arr.shape[0]):
            for c in range(arr.shape[1]):
                v = arr[r, c]
                isnd = (isinstance(v, (float, np.floating)) and math.isnan(v)) or \
                       (tnd not in (None, "nan") and float(v) == tnd)
                want = ev[r][c]
                if isnd:
                    if want is not None:
                        probs.append(f"({r},{c}) tifffile no-data, json {want}")
                elif want is None or float(v) != float(want):
                    probs.append(f"({r},{c}) tifffile {v!r}, json {want!r}")
                if len(probs) > 5:
                    break
        n_nd = sum(v is None for row in ev for v in row)
        check(not probs, f"{name}: {e['width']}x{e['height']} {e['data_type']} {how}, "
              f"epsg {e['epsg']}, nodata {e['nodata']!r} ({n_nd} cells), "
              f"compression {e['compression']}, block {e['block']}"
              + ("" if not probs else " :: " + "; ".join(probs[:6])))
        check(os.path.getsize(tif) < 50_000, f"{e['file']} is {os.path.getsize(tif)} bytes (< 50 kB)")
    # tifffile-written and GDAL-written variants of a case must hold the same numbers
    for tfj in sorted(glob.glob(os.path.join(ref, "tf_*.expect.json"))):
        gdj = tfj.replace("tf_", "gd_")
        if os.path.exists(gdj):
            a, b = json.load(open(tfj)), json.load(open(gdj))
            same = a["values"] == b["values"] and all(
                math.isclose(a[k], b[k], rel_tol=1e-12) for k in
                ("origin_x", "origin_y", "pixel_width", "pixel_height")) and a["epsg"] == b["epsg"]
            check(same, f"{os.path.basename(tfj)} and {os.path.basename(gdj)} describe the same grid")


def olinda(ref, data):
    print("\n== 3. Olinda DEM")
    path = os.path.join(data, "olinda_dem_utm25s.tif")
    z = tifffile.imread(path)
    bad = []
    n = 0
    with open(os.path.join(ref, "olinda.samples.csv")) as f:
        for row in csv.DictReader(f):
            n += 1
            c, r, v = int(row["col"]), int(row["row"]), float(row["value"])
            if float(z[r, c]) != v:
                bad.append((c, r, v, float(z[r, c])))
    check(not bad and n >= 20, f"olinda.samples.csv: {n} gdallocationinfo values equal tifffile's {bad[:3]}")
    info = json.load(open(os.path.join(ref, "olinda.gdalinfo.json")))
    b = info["bands"][0]
    md = b["metadata"][""]       # full precision; b["mean"] etc. are rounded to 3 decimals
    st = dict(mn=float(md["STATISTICS_MINIMUM"]), mx=float(md["STATISTICS_MAXIMUM"]),
              mean=float(md["STATISTICS_MEAN"]), sd=float(md["STATISTICS_STDDEV"]))
    zd = z.astype(np.float64)
    ok = (info["size"] == [z.shape[1], z.shape[0]] and st["mn"] == zd.min() and st["mx"] == zd.max()
          and math.isclose(st["mean"], zd.mean(), rel_tol=1e-12)
          and math.isclose(st["sd"], zd.std(), rel_tol=1e-12)
          and math.isclose(b["mean"], st["mean"], abs_tol=5e-4))
    check(ok, f"olinda.gdalinfo.json: size {info['size']}, min {st['mn']} max {st['mx']} "
          f"mean {st['mean']} stdDev {st['sd']} (population) match numpy")


def bad_files(data):
    print("\n== 5. tests/data/bad")
    bad = os.path.join(data, "bad")
    sz = lambda n: os.path.getsize(os.path.join(bad, n))
    with tifffile.TiffFile(os.path.join(bad, "huge_dims.tif")) as t:
        p = t.pages[0]
        check(p.shape == (1_000_000, 1_000_000) and sz("huge_dims.tif") < 1024,
              f"huge_dims.tif declares {p.shape}, file is {sz('huge_dims.tif')} bytes")
    full = sz("../../reference/terrain/gd_f32_strips.tif")
    check(sz("truncated.tif") == full // 2, f"truncated.tif is {sz('truncated.tif')} of {full} bytes")
    try:
        tifffile.imread(os.path.join(bad, "truncated.tif"))
        check(False, "truncated.tif should not decode")
    except Exception as ex:  # noqa: BLE001
        check(True, f"truncated.tif: tifffile refuses it ({type(ex).__name__})")
    with open(os.path.join(bad, "garbage_after_magic.tif"), "rb") as f:
        head = f.read(4)
    check(head == b"II*\x00", "garbage_after_magic.tif starts with the TIFF magic II*\\0")
    with tifffile.TiffFile(os.path.join(bad, "cint16.tif")) as t:
        p = t.pages[0]
        check(p.tags["SampleFormat"].value == 5 and p.bitspersample == 32,
              f"cint16.tif: SampleFormat {int(p.tags['SampleFormat'].value)} (5 = complex int), 16+16 bits")
    with tifffile.TiffFile(os.path.join(bad, "rgb8.tif")) as t:
        p = t.pages[0]
        check(p.samplesperpixel == 3 and p.bitspersample == 8 and p.photometric == 2,
              "rgb8.tif: 3 samples of 8 bits, photometric RGB")
    a = tifffile.imread(os.path.join(bad, "all_nodata.tif"))
    with tifffile.TiffFile(os.path.join(bad, "all_nodata.tif")) as t:
        nd = float(t.pages[0].tags[42113].value.strip("\x00"))
    check(bool(np.all(a == nd)), f"all_nodata.tif: every cell == GDAL_NODATA {nd}")
    for n in ["rotated.tif", "south_up.tif"]:
        with tifffile.TiffFile(os.path.join(bad, n)) as t:
            tg = t.pages[0].tags
            check(34264 in tg and 33550 not in tg,
                  f"{n}: ModelTransformationTag {tuple(round(x, 6) for x in tg[34264].value[:8])}")
    txt = open(os.path.join(bad, "short_data.asc")).read().split()
    check(len(txt) - 12 == 17, "short_data.asc: 17 values for a 5x4 header")


def main():
    ref, data = sys.argv[1], sys.argv[2]
    print("verify.py report (numpy %s, tifffile %s)" % (np.__version__, tifffile.__version__))
    terrain(ref)
    tiff_checks(ref)
    olinda(ref, data)
    spot_check(ref)
    bad_files(data)
    print(f"\n{len(FAIL)} failed")
    sys.exit(1 if FAIL else 0)


if __name__ == "__main__":
    main()
