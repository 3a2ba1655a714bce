#!/usr/bin/env python3
"""Write the corrupt / unsupported inputs for error tests into tests/data/bad/.

Usage: make_bad.py BADDIR VALID_TIFF

VALID_TIFF is a small GDAL-written GeoTIFF (make_reference.sh passes
gd_f32_strips.tif) whose first half becomes truncated.tif.  The files that need
GDAL (cint16.tif, rgb8.tif, all_nodata.tif, rotated.tif, south_up.tif) are made
by make_reference.sh itself.  Needs numpy only (plus the standard library).
"""
import os
import struct
import sys

import numpy as np


def truncated(baddir, valid):
    data = open(valid, "rb").read()
    with open(os.path.join(baddir, "truncated.tif"), "wb") as f:
        f.write(data[: len(data) // 2])


def garbage_after_magic(baddir):
    rng = np.random.default_rng(4242)
    body = rng.integers(0, 256, size=252, dtype=np.uint8).tobytes()
    with open(os.path.join(baddir, "garbage_after_magic.tif"), "wb") as f:
        f.write(b"II*\x00" + body)


def huge_dims(baddir):
    """Classic little-endian TIFF declaring a 1,000,000 x 1,000,000 Float32 image.

    One strip of RowsPerStrip = 1,000,000 whose StripByteCounts says 16 bytes
    (the 16 bytes are present); GeoTIFF tags are valid so only the size is
    absurd (4e12 bytes of pixels if believed).
    """
    W = H = 1_000_000
    SHORT, LONG, DOUBLE = 3, 4, 12
    scale = struct.pack("<3d", 1.0, 1.0, 0.0)
    tie = struct.pack("<6d", 0.0, 0.0, 0.0, 500000.0, 5000000.0, 0.0)
    keys = [1, 1, 0, 3, 1024, 0, 1, 1, 1025, 0, 1, 1, 3072, 0, 1, 32633]
    geokeys = struct.pack(f"<{len(keys)}H", *keys)
    pixels = struct.pack("<4f", 1.0, 2.0, 3.0, 4.0)

    entries = [  # tag, type, count, value-or-blob
        (256, LONG, 1, W),
        (257, LONG, 1, H),
        (258, SHORT, 1, 32),
        (259, SHORT, 1, 1),
        (262, SHORT, 1, 1),
        (273, LONG, 1, None),          # StripOffsets -> pixels blob (patched)
        (277, SHORT, 1, 1),
        (278, LONG, 1, H),
        (279, LONG, 1, len(pixels)),
        (284, SHORT, 1, 1),
        (339, SHORT, 1, 3),
        (33550, DOUBLE, 3, scale),
        (33922, DOUBLE, 6, tie),
        (34735, SHORT, len(keys), geokeys),
    ]
    ifd_off = 8
    ifd_len = 2 + 12 * len(entries) + 4
    blob_off = ifd_off + ifd_len
    blobs = b""
    packed = []
    for tag, typ, cnt, val in entries:
        if isinstance(val, bytes):
            off = blob_off + len(blobs)
            blobs += val
            if len(blobs) % 2:
                blobs += b"\0"
            packed.append(struct.pack("<HHII", tag, typ, cnt, off))
        elif val is None:
            packed.append(None)
        elif typ == SHORT:
            packed.append(struct.pack("<HHIHH", tag, typ, cnt, val, 0))
        else:
            packed.append(struct.pack("<HHII", tag, typ, cnt, val))
    pix_off = blob_off + len(blobs)
    packed = [p if p is not None else struct.pack("<HHII", 273, LONG, 1, pix_off)
              for p in packed]
    out = (b"II*\x00" + struct.pack("<I", ifd_off)
           + struct.pack("<H", len(entries)) + b"".join(packed) + struct.pack("<I", 0)
           + blobs + pixels)
    with open(os.path.join(baddir, "huge_dims.tif"), "wb") as f:
        f.write(out)


def asc_files(baddir):
    # every cell is no-data
    rows = ["-9999 " * 5 for _ in range(4)]
    with open(os.path.join(baddir, "all_nodata.asc"), "w", newline="\n") as f:
        f.write("ncols 5\nnrows 4\nxllcorner 500000\nyllcorner 5000000\n"
                "cellsize 10\nNODATA_value -9999\n")
        f.write("\n".join(r.strip() for r in rows) + "\n")
    # nrows is not a number and cellsize keyword is misspelt
    with open(os.path.join(baddir, "bad_header.asc"), "w", newline="\n") as f:
        f.write("ncols 4\nnrows three\nxllcorner 0\nyllcorner 0\ncelsize 10\n"
                "1 2 3 4\n5 6 7 8\n9 10 11 12\n")
    # header says 5 x 4 = 20 values; only 17 follow
    vals = [f"{100 + i}.5" for i in range(17)]
    with open(os.path.join(baddir, "short_data.asc"), "w", newline="\n") as f:
        f.write("ncols 5\nnrows 4\nxllcorner 0\nyllcorner 0\ncellsize 10\n"
                "NODATA_value -9999\n")
        f.write(" ".join(vals[0:5]) + "\n" + " ".join(vals[5:10]) + "\n"
                + " ".join(vals[10:15]) + "\n" + " ".join(vals[15:]) + "\n")


def main():
    baddir, valid = sys.argv[1], sys.argv[2]
    os.makedirs(baddir, exist_ok=True)
    truncated(baddir, valid)
    garbage_after_magic(baddir)
    huge_dims(baddir)
    asc_files(baddir)


if __name__ == "__main__":
    main()
