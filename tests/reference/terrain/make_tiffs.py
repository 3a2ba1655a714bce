#!/usr/bin/env python3
"""Seeded raster cases for the GeoTIFF reader reference set.

Usage:
  make_tiffs.py tifffile OUTDIR   write tf_*.tif with tifffile (GeoTIFF tags
                                  built by hand below)
  make_tiffs.py envi TMPDIR       write raw ENVI (.bin + .hdr) sources that
                                  make_reference.sh turns into gd_*.tif with
                                  gdal_translate

Needs numpy and tifffile (+ imagecodecs for LZW).  The pixel values of every
case come from numpy.random.default_rng with the seed given in CASES, so the
tifffile and the GDAL variants of one case hold the same numbers.

GeoTIFF tags written by the tifffile path:
  33550 ModelPixelScaleTag      DOUBLE[3]  (sx, sy, 0)
  33922 ModelTiepointTag        DOUBLE[6]  (0, 0, 0, X, Y, 0): raster (0,0) -> model (X,Y)
  34264 ModelTransformationTag  DOUBLE[16] (only case "f32_transform", instead of
                                the two tags above)
  34735 GeoKeyDirectoryTag      SHORT[]    GTModelTypeGeoKey (1024),
                                GTRasterTypeGeoKey (1025), then either
                                GeographicTypeGeoKey (2048) + GeogAngularUnitsGeoKey
                                (2054) or ProjectedCSTypeGeoKey (3072) +
                                ProjLinearUnitsGeoKey (3076)
  42113 GDAL_NODATA             ASCII      nodata as text, e.g. "-9999" or "nan"
"""
import os
import sys

import numpy as np

NAN = float("nan")

# name: dtype, (rows, cols), seed, nodata (None / number / NAN), geo
#   geo: epsg, ulx, uly (upper-left corner of upper-left pixel), px, py (> 0)
CASES = {
    "f32_strips": dict(dtype="float32", shape=(18, 24), seed=101, nodata=-9999.0,
                       epsg=32633, ulx=420000.0, uly=5010000.0, px=30.0, py=30.0),
    "f64_tiled_deflate": dict(dtype="float64", shape=(21, 37), seed=102, nodata=None,
                              epsg=32617, ulx=600000.5, uly=4300000.25, px=2.5, py=2.5),
    "i16_lzw_pred2": dict(dtype="int16", shape=(20, 30), seed=103, nodata=-32768,
                          epsg=25832, ulx=500000.0, uly=5600000.0, px=25.0, py=25.0),
    "u16": dict(dtype="uint16", shape=(12, 20), seed=104, nodata=None,
                epsg=32610, ulx=550000.0, uly=4180000.0, px=10.0, py=10.0),
    "i32": dict(dtype="int32", shape=(16, 16), seed=105, nodata=None,
                epsg=32633, ulx=400000.0, uly=5000000.0, px=1.0, py=1.0),
    "f32_transform": dict(dtype="float32", shape=(15, 20), seed=106, nodata=None,
                          epsg=32633, ulx=430000.0, uly=5020000.0, px=4.0, py=5.0),
    "f32_geographic": dict(dtype="float32", shape=(20, 24), seed=107, nodata=None,
                           epsg=4326, ulx=7.5, uly=46.0, px=0.00025, py=0.00025),
    "f32_nan": dict(dtype="float32", shape=(14, 18), seed=108, nodata=NAN,
                    epsg=32633, ulx=410000.0, uly=5030000.0, px=20.0, py=20.0),
    # extra reader cases (tifffile only)
    "f32_pixelispoint": dict(dtype="float32", shape=(10, 12), seed=109, nodata=None,
                             epsg=32633, ulx=440000.0, uly=5040000.0, px=10.0, py=10.0),
    "f32_bigendian": dict(dtype="float32", shape=(10, 12), seed=110, nodata=-9999.0,
                          epsg=32633, ulx=450000.0, uly=5050000.0, px=10.0, py=10.0),
    "f32_bigtiff": dict(dtype="float32", shape=(10, 12), seed=111, nodata=None,
                        epsg=32633, ulx=460000.0, uly=5060000.0, px=10.0, py=10.0),
    # extra (GDAL only): floating-point predictor
    "f32_deflate_pred3": dict(dtype="float32", shape=(16, 20), seed=112, nodata=None,
                              epsg=32633, ulx=470000.0, uly=5070000.0, px=15.0, py=15.0),
}

TIFFFILE_CASES = ["f32_strips", "f64_tiled_deflate", "i16_lzw_pred2", "u16", "i32",
                  "f32_transform", "f32_geographic", "f32_nan",
                  "f32_pixelispoint", "f32_bigendian", "f32_bigtiff"]
ENVI_CASES = ["f32_strips", "f64_tiled_deflate", "i16_lzw_pred2", "u16", "i32",
              "f32_geographic", "f32_nan", "f32_deflate_pred3"]


def case_array(name):
    c = CASES[name]
    rows, cols = c["shape"]
    rng = np.random.default_rng(c["seed"])
    dt = np.dtype(c["dtype"])
    r = np.arange(rows)[:, None]
    k = np.arange(cols)[None, :]
    if dt.kind == "f":
        # smooth ramp + ripple + noise, rounded so the decimal text is short
        a = (100.0 + 1.5 * k - 0.75 * r + 4.0 * np.sin(k / 3.0) * np.cos(r / 4.0)
             + rng.normal(0.0, 0.5, size=(rows, cols)))
        a = np.round(a, 4 if dt == np.float64 else 3).astype(dt)
    elif dt == np.int16:
        a = rng.integers(-500, 3001, size=(rows, cols)).astype(dt)
    elif dt == np.uint16:
        a = rng.integers(0, 65536, size=(rows, cols)).astype(dt)
        a[0, 0], a[0, 1], a[-1, -1] = 0, 65535, 40000          # extremes + > int16
    elif dt == np.int32:
        a = rng.integers(-100000, 3000001, size=(rows, cols)).astype(dt)
        a[0, 0], a[0, 1] = -2147483647, 2147483647
    else:
        raise ValueError(dt)
    nd = c["nodata"]
    if nd is not None:
        # no-data cells: a corner, an edge cell and a few random interior cells
        cells = [(0, cols - 1), (rows - 1, 0)]
        for _ in range(3):
            cells.append((int(rng.integers(1, rows - 1)), int(rng.integers(1, cols - 1))))
        for rr, cc in cells:
            a[rr, cc] = nd
    return a


def nodata_text(nd):
    if nd is None:
        return None
    if isinstance(nd, float) and np.isnan(nd):
        return "nan"
    if float(nd).is_integer():
        return str(int(nd))
    return repr(float(nd))


def geokeys(epsg, pixel_is_point=False):
    geographic = epsg == 4326
    keys = [(1024, 0, 1, 2 if geographic else 1),          # GTModelTypeGeoKey
            (1025, 0, 1, 2 if pixel_is_point else 1)]       # GTRasterTypeGeoKey
    if geographic:
        keys += [(2048, 0, 1, epsg),                        # GeographicTypeGeoKey
                 (2054, 0, 1, 9102)]                        # GeogAngularUnitsGeoKey
    else:
        keys += [(3072, 0, 1, epsg),                        # ProjectedCSTypeGeoKey
                 (3076, 0, 1, 9001)]                        # ProjLinearUnitsGeoKey
    out = [1, 1, 0, len(keys)]
    for k in sorted(keys):
        out += list(k)
    return out


def write_tifffile(outdir):
    import tifffile
    os.makedirs(outdir, exist_ok=True)
    for name in TIFFFILE_CASES:
        c = CASES[name]
        a = case_array(name)
        rows, cols = a.shape
        point = name == "f32_pixelispoint"
        tags = []
        if name == "f32_transform":
            m = [c["px"], 0.0, 0.0, c["ulx"],
                 0.0, -c["py"], 0.0, c["uly"],
                 0.0, 0.0, 0.0, 0.0,
                 0.0, 0.0, 0.0, 1.0]
            tags.append((34264, 12, 16, m, True))
        else:
            tx, ty = c["ulx"], c["uly"]
            if point:
                # PixelIsPoint: the tie point names the CENTRE of pixel (0,0)
                tx += 0.5 * c["px"]
                ty -= 0.5 * c["py"]
            tags.append((33550, 12, 3, (c["px"], c["py"], 0.0), True))
            tags.append((33922, 12, 6, (0.0, 0.0, 0.0, tx, ty, 0.0), True))
        gk = geokeys(c["epsg"], point)
        tags.append((34735, 3, len(gk), gk, True))
        ndt = nodata_text(c["nodata"])
        if ndt is not None:
            tags.append((42113, 2, 0, ndt, True))

        kw = dict(photometric="minisblack", metadata=None, software=False,
                  extratags=tags)
        if name == "f32_strips":
            kw.update(rowsperstrip=5)                        # 4 strips, last partial
        elif name == "f64_tiled_deflate":
            kw.update(tile=(16, 16), compression="zlib")     # partial edge tiles
        elif name == "i16_lzw_pred2":
            kw.update(rowsperstrip=8, compression="lzw", predictor=2)
        elif name == "u16":
            kw.update(rowsperstrip=rows)                     # one strip
        elif name == "i32":
            kw.update(rowsperstrip=4, compression="zlib")
        elif name == "f32_bigendian":
            kw.update(byteorder=">", rowsperstrip=3)
        elif name == "f32_bigtiff":
            kw.update(bigtiff=True, rowsperstrip=4)
        else:
            kw.update(rowsperstrip=4)
        tifffile.imwrite(os.path.join(outdir, f"tf_{name}.tif"), a, **kw)


ENVI_TYPES = {"uint8": 1, "int16": 2, "int32": 3, "float32": 4, "float64": 5, "uint16": 12}


def write_envi(tmpdir):
    """Raw little-endian sources for gdal_translate, one line of georef per case."""
    os.makedirs(tmpdir, exist_ok=True)
    with open(os.path.join(tmpdir, "cases.txt"), "w") as lst:
        for name in ENVI_CASES:
            c = CASES[name]
            a = case_array(name)
            rows, cols = a.shape
            a.astype(a.dtype.newbyteorder("<")).tofile(os.path.join(tmpdir, f"src_{name}.bin"))
            with open(os.path.join(tmpdir, f"src_{name}.hdr"), "w") as h:
                h.write("ENVI\n"
                        f"samples = {cols}\nlines = {rows}\nbands = 1\n"
                        "header offset = 0\nfile type = ENVI Standard\n"
                        f"data type = {ENVI_TYPES[a.dtype.name]}\n"
                        "interleave = bsq\nbyte order = 0\n")
            lrx = c["ulx"] + cols * c["px"]
            lry = c["uly"] - rows * c["py"]
            ndt = nodata_text(c["nodata"]) or "-"
            # name epsg ulx uly lrx lry nodata  (read by make_reference.sh)
            lst.write(f"{name} {c['epsg']} {c['ulx']!r} {c['uly']!r} {lrx!r} {lry!r} {ndt}\n")


if __name__ == "__main__":
    mode, out = sys.argv[1], sys.argv[2]
    {"tifffile": write_tifffile, "envi": write_envi}[mode](out)
