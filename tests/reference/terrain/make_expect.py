#!/usr/bin/python3
"""Read a raster back with GDAL's own Python bindings and write <name>.expect.json.

Usage: make_expect.py RASTER OUT_JSON WRITER_TEXT

Must run under the Debian system interpreter (/usr/bin/python3) that has
python3-gdal (osgeo.gdal) and python3-numpy; it uses nothing else.

JSON written (keys in this order):
  file           file name of the raster
  writer         who wrote the raster (text given on the command line)
  read_with      GDAL version that read it back
  width, height  raster size in pixels (columns, rows)
  origin_x       X of the upper-left CORNER of the upper-left pixel (GDAL
  origin_y       geotransform[0], [3]; for PixelIsPoint files GDAL has
                 already moved the tie point half a pixel up-left)
  pixel_width    geotransform[1]      (positive)
  pixel_height   -geotransform[5]     (positive; rows run north to south)
  epsg           EPSG code of the CRS if GDAL's CRS carries an EPSG authority
                 code, else null
  geographic     true if GDAL says the CRS is geographic (lat/lon degrees)
  nodata         band no-data value as a number; null if none; the string
                 "nan" if the no-data value is NaN
  data_type      GDAL data type name (Byte, Int16, UInt16, Int32, Float32, ...)
  area_or_point  GDAL metadata AREA_OR_POINT ("Area", "Point") or null
  compression    GDAL IMAGE_STRUCTURE COMPRESSION or null (uncompressed)
  block          [block_width, block_height] as GDAL reports it (a strip file
                 shows [width, rows_per_strip])
  geotransform   GDAL's six coefficients, unchanged
  values         the full band as a list of rows, north row first, each row
                 west to east; null where the cell equals nodata or is NaN.
                 Integers for integer types; for Float32 the exact float32
                 value written as the shortest decimal that reads back to the
                 same double (so float(text) cast to f32 is exact).
"""
import json
import math
import os
import sys

from osgeo import gdal

gdal.UseExceptions()


def main():
    path, out, writer = sys.argv[1], sys.argv[2], sys.argv[3]
    ds = gdal.Open(path)
    band = ds.GetRasterBand(1)
    gt = ds.GetGeoTransform(can_return_null=True)
    if gt is None:
        raise SystemExit(f"{path}: no geotransform")
    if gt[2] != 0.0 or gt[4] != 0.0 or gt[5] >= 0.0:
        raise SystemExit(f"{path}: not a north-up grid: {gt}")
    srs = ds.GetSpatialRef()
    epsg = None
    geographic = False
    if srs is not None:
        if srs.GetAuthorityName(None) == "EPSG":
            epsg = int(srs.GetAuthorityCode(None))
        geographic = bool(srs.IsGeographic())
    nd = band.GetNoDataValue()
    dtype = gdal.GetDataTypeName(band.DataType)
    is_int = dtype in ("Byte", "Int8", "Int16", "UInt16", "Int32", "UInt32",
                       "Int64", "UInt64")
    if nd is None:
        nodata = None
    elif math.isnan(nd):
        nodata = "nan"
    elif is_int:
        nodata = int(nd)
    else:
        nodata = float(nd)

    arr = band.ReadAsArray()
    rows = []
    for r in range(arr.shape[0]):
        row = []
        for v in arr[r]:
            if is_int:
                v = int(v)
                row.append(None if (nodata is not None and v == nodata) else v)
            else:
                v = float(v)
                if math.isnan(v) or (isinstance(nodata, float) and v == nodata):
                    row.append(None)
                else:
                    row.append(v)
        rows.append(row)

    istruct = ds.GetMetadata("IMAGE_STRUCTURE") or {}
    doc = {
        "file": os.path.basename(path),
        "writer": writer,
        "read_with": f"GDAL {gdal.__version__} Python bindings (osgeo.gdal, Debian python3-gdal)",
        "width": ds.RasterXSize,
        "height": ds.RasterYSize,
        "origin_x": gt[0],
        "origin_y": gt[3],
        "pixel_width": gt[1],
        "pixel_height": -gt[5],
        "epsg": epsg,
        "geographic": geographic,
        "nodata": nodata,
        "data_type": dtype,
        "area_or_point": ds.GetMetadataItem("AREA_OR_POINT"),
        "compression": istruct.get("COMPRESSION"),
        "block": list(band.GetBlockSize()),
        "geotransform": list(gt),
    }
    with open(out, "w", newline="\n") as f:
        # metadata pretty-printed, one raster row per line
        f.write("{\n")
        for k, v in doc.items():
            f.write(f"  {json.dumps(k)}: {json.dumps(v)},\n")
        f.write('  "values": [\n')
        f.write(",\n".join("    " + json.dumps(r) for r in rows))
        f.write("\n  ]\n}\n")
    json.load(open(out))  # must parse


if __name__ == "__main__":
    main()
