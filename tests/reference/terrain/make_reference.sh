#!/usr/bin/env bash
# make_reference.sh - regenerate the terrain reference data of sunward from scratch.
#
# What it makes (all into this folder unless noted; see README.md here):
#   * synthetic input DEMs (ESRI ASCII grids) from seeded numpy  (gen_inputs.py)
#   * gdaldem slope / aspect / hillshade / roughness of each DEM, as ESRI ASCII grids
#   * Olinda DEM checks: gdalinfo -json -stats, gdaldem slope, gdallocationinfo samples
#   * GeoTIFFs written by tifffile (tf_*.tif, make_tiffs.py) and by gdal_translate
#     (gd_*.tif), each with <name>.expect.json read back by GDAL (make_expect.py)
#   * corrupt / unsupported inputs in ../../data/bad/ (make_bad.py + gdal_translate)
#     and GDAL's own reaction to each in bad_files.gdal.txt
#   * provenance.tsv  - every generated file and the exact command that made it
#   * versions.txt    - versions of every tool used
#   * verify_report.txt - independent numpy re-computation and tifffile
#     cross-reading of everything above (verify.py); the script fails if they
#     disagree beyond the tolerances stated in README.md
#
# Re-runnable: it first deletes everything it generates (never README.md or the
# scripts), then rebuilds. Output is deterministic for the same tool versions.
#
# Needs (Debian 12 "bookworm" + PyPI):
#   apt-get install -y gdal-bin          # gdaldem, gdal_translate, gdalinfo,
#                                        # gdallocationinfo; pulls python3-gdal
#   pip install numpy tifffile imagecodecs   # imagecodecs: LZW for tifffile
# Environment overrides:
#   PY=...      python with numpy + tifffile + imagecodecs   (default: python3)
#   GDALPY=...  python with osgeo.gdal (Debian python3-gdal)  (default: /usr/bin/python3)
# tests/data/olinda_dem_utm25s.tif must exist; if it is missing, run
#   make_reference.sh --fetch-olinda
# which takes it out of the Debian package r-cran-stars (apt-get download).
#
# Usage: bash tests/reference/terrain/make_reference.sh [--fetch-olinda]

set -euo pipefail
export LC_ALL=C
export GDAL_PAM_ENABLED=NO          # never leave .aux.xml side files behind

HERE=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
mkdir -p "$HERE/../../data"
DATA=$(cd "$HERE/../../data" && pwd)
BAD="$DATA/bad"
PY=${PY:-python3}
GDALPY=${GDALPY:-/usr/bin/python3}
OLINDA="$DATA/olinda_dem_utm25s.tif"
OLINDA_SHA256=6954774429a04c827c8330943ee43a176a29d52be2f220100f352894c4b9f173

TMP=$(mktemp -d)
trap 'rm -rf "$TMP"' EXIT

die() { echo "make_reference.sh: $*" >&2; exit 1; }

fetch_olinda() {
    (cd "$TMP" && apt-get download r-cran-stars >/dev/null)
    dpkg-deb -x "$TMP"/r-cran-stars_*.deb "$TMP/stars"
    cp "$TMP/stars/usr/lib/R/site-library/stars/tif/olinda_dem_utm25s.tif" "$OLINDA"
    echo "fetched $OLINDA from $(basename "$TMP"/r-cran-stars_*.deb)"
}

if [[ "${1:-}" == "--fetch-olinda" ]]; then fetch_olinda; fi

# ---- tool check ------------------------------------------------------------
for t in gdaldem gdal_translate gdalinfo gdallocationinfo sha256sum; do
    command -v "$t" >/dev/null || die "missing $t (apt-get install -y gdal-bin)"
done
"$PY" -c "import numpy, tifffile, imagecodecs" 2>/dev/null \
    || die "$PY lacks numpy/tifffile/imagecodecs (pip install numpy tifffile imagecodecs)"
"$GDALPY" -c "from osgeo import gdal" 2>/dev/null \
    || die "$GDALPY lacks osgeo.gdal (apt-get install -y python3-gdal)"
[[ -f "$OLINDA" ]] || die "$OLINDA missing: run with --fetch-olinda"
echo "$OLINDA_SHA256  $OLINDA" | sha256sum -c --quiet - \
    || die "$OLINDA is not the file from r-cran-stars 0.6-0-4"

cd "$HERE"

# ---- clean what we generate --------------------------------------------------
rm -f ./*.asc ./*.prj ./*.tif ./*.expect.json ./olinda.* \
      provenance.tsv versions.txt verify_report.txt bad_files.gdal.txt
mkdir -p "$BAD"
find "$BAD" -maxdepth 1 -type f ! -name README.md -delete

# ---- helpers -----------------------------------------------------------------
# note OUTPUT COMMAND...  : record in provenance.tsv which command made OUTPUT
note() { local out=$1; shift; printf '%s\t%s\n' "$out" "$*" >> "$HERE/provenance.tsv"; }

# run OUTPUT COMMAND... : run it and record it
run() { local out=$1; shift; note "$out" "$@"; "$@"; }

# to_asc IN.tif OUT.asc : GDAL GTiff -> ESRI ASCII grid, -9999 nodata if none
to_asc() {
    local in=$1 out=$2 nd=()
    gdalinfo "$in" | grep -q 'NoData Value=' || nd=(-a_nodata -9999)
    run "$out" gdal_translate -q -of AAIGrid "${nd[@]}" "$in" "$out"
    rm -f "${out%.asc}.prj"
}

# ---- versions ------------------------------------------------------------------
{
    echo "# tool versions used by make_reference.sh"
    gdalinfo --version
    dpkg-query -W -f='debian ${Package} ${Version}\n' gdal-bin libgdal32 python3-gdal python3-numpy
    echo "debian r-cran-stars 0.6-0-4 (source of tests/data/olinda_dem_utm25s.tif, sha256 $OLINDA_SHA256)"
    "$PY" -c 'import sys, numpy, tifffile, imagecodecs; print("python", sys.version.split()[0], "(PY) numpy", numpy.__version__, "tifffile", tifffile.__version__, "imagecodecs", imagecodecs.__version__)'
    "$GDALPY" -c 'import sys, numpy; from osgeo import gdal; print("python", sys.version.split()[0], "(GDALPY) numpy", numpy.__version__, "osgeo.gdal", gdal.__version__)'
} > versions.txt
GDALVER=$(gdalinfo --version | sed 's/,.*//')          # "GDAL 3.6.2"
TFVER=$("$PY" -c 'import tifffile, numpy; print("tifffile", tifffile.__version__, "+ numpy", numpy.__version__)')

# ---- 1. synthetic DEMs and gdaldem products ------------------------------------
run "rand40x30.asc rand25x25_nodata.asc plateau20x20.asc rect30x20.asc" \
    "$PY" gen_inputs.py .

for dem in rand40x30 rand25x25_nodata plateau20x20 rect30x20; do
    run "($dem.slope.tif)" gdaldem slope -q -alg Horn "$dem.asc" "$TMP/$dem.slope.tif"
    to_asc "$TMP/$dem.slope.tif" "$dem.slope.asc"
    run "($dem.slope_edges.tif)" gdaldem slope -q -alg Horn -compute_edges "$dem.asc" "$TMP/$dem.slope_edges.tif"
    to_asc "$TMP/$dem.slope_edges.tif" "$dem.slope_edges.asc"
    run "($dem.roughness.tif)" gdaldem roughness -q "$dem.asc" "$TMP/$dem.roughness.tif"
    to_asc "$TMP/$dem.roughness.tif" "$dem.roughness.asc"
    [[ $dem == rect30x20 ]] && continue       # non-square cells: slope only
    run "($dem.aspect.tif)" gdaldem aspect -q -alg Horn "$dem.asc" "$TMP/$dem.aspect.tif"
    to_asc "$TMP/$dem.aspect.tif" "$dem.aspect.asc"
    run "($dem.aspect_edges.tif)" gdaldem aspect -q -alg Horn -compute_edges "$dem.asc" "$TMP/$dem.aspect_edges.tif"
    to_asc "$TMP/$dem.aspect_edges.tif" "$dem.aspect_edges.asc"
    run "($dem.hillshade.tif)" gdaldem hillshade -q -alg Horn -az 315 -alt 45 "$dem.asc" "$TMP/$dem.hillshade.tif"
    to_asc "$TMP/$dem.hillshade.tif" "$dem.hillshade.asc"
done

# ---- 2. Olinda DEM (real data) -------------------------------------------------
OL_REL=../../data/olinda_dem_utm25s.tif              # relative: no machine paths in the JSON
note olinda.gdalinfo.json gdalinfo -json -stats "$OL_REL"
gdalinfo -json -stats "$OL_REL" > olinda.gdalinfo.json
run "(olinda.slope.tif)" gdaldem slope -q -alg Horn "$OL_REL" "$TMP/olinda.slope.tif"
to_asc "$TMP/olinda.slope.tif" olinda.slope.asc
run "(olinda.slope_edges.tif)" gdaldem slope -q -alg Horn -compute_edges "$OL_REL" "$TMP/olinda.slope_edges.tif"
to_asc "$TMP/olinda.slope_edges.tif" olinda.slope_edges.asc

# 21 pixels: 4 corners, centre, edge midpoints, and a scatter over the grid
SAMPLES="0,0 110,0 0,110 110,110 55,55 55,0 0,55 110,55 55,110 1,1 109,109 \
10,20 25,80 40,33 60,95 72,12 88,47 97,70 33,101 17,63 80,80"
note olinda.samples.csv "for each col,row: gdallocationinfo -valonly $OL_REL COL ROW"
{
    echo "col,row,value"
    for cr in $SAMPLES; do
        c=${cr%,*}; r=${cr#*,}
        echo "$c,$r,$(gdallocationinfo -valonly "$OL_REL" "$c" "$r")"
    done
} > olinda.samples.csv
run olinda.expect.json "$GDALPY" make_expect.py "$OL_REL" olinda.expect.json \
    "unknown writer; shipped as stars/tif/olinda_dem_utm25s.tif in Debian r-cran-stars 0.6-0-4"

# ---- 3. GeoTIFFs: tifffile writer ------------------------------------------------
run "tf_*.tif" "$PY" make_tiffs.py tifffile .
for f in tf_*.tif; do
    case=${f#tf_}; case=${case%.tif}
    run "${f%.tif}.expect.json" "$GDALPY" make_expect.py "$f" "${f%.tif}.expect.json" \
        "$TFVER, make_tiffs.py tifffile (case $case)"
done

# ---- 4. GeoTIFFs: GDAL writer (gdal_translate from raw ENVI sources) -------------
run "($TMP/envi/src_*.bin)" "$PY" make_tiffs.py envi "$TMP/envi"

# gd CASE TYPE CREATION-OPTIONS... : georeference from cases.txt written by make_tiffs.py
gd() {
    local name=$1 type=$2; shift 2
    local line epsg ulx uly lrx lry nd ndopt=()
    line=$(grep "^$name " "$TMP/envi/cases.txt") || die "no case $name"
    read -r _ epsg ulx uly lrx lry nd <<< "$line"
    [[ $nd != - ]] && ndopt=(-a_nodata "$nd")
    local cmd=(gdal_translate -q -of GTiff -ot "$type" -a_srs "EPSG:$epsg"
               -a_ullr "$ulx" "$uly" "$lrx" "$lry" "${ndopt[@]}" "$@"
               "src_$name.bin" "gd_$name.tif")
    note "gd_$name.tif" "(in the temporary ENVI folder) ${cmd[*]}"
    (cd "$TMP/envi" && "${cmd[@]}")
    mv "$TMP/envi/gd_$name.tif" .
    run "gd_$name.expect.json" "$GDALPY" make_expect.py "gd_$name.tif" "gd_$name.expect.json" \
        "$GDALVER: ${cmd[*]}"
}
gd f32_strips        Float32 -co TILED=NO -co COMPRESS=NONE -co BLOCKYSIZE=4
gd f64_tiled_deflate Float64 -co TILED=YES -co BLOCKXSIZE=16 -co BLOCKYSIZE=16 -co COMPRESS=DEFLATE
gd i16_lzw_pred2     Int16   -co COMPRESS=LZW -co PREDICTOR=2 -co BLOCKYSIZE=8
gd u16               UInt16  -co TILED=YES -co BLOCKXSIZE=16 -co BLOCKYSIZE=16 -co COMPRESS=NONE
gd i32               Int32   -co COMPRESS=DEFLATE -co BLOCKYSIZE=4
gd f32_geographic    Float32 -co COMPRESS=NONE
gd f32_nan           Float32 -co COMPRESS=NONE
gd f32_deflate_pred3 Float32 -co COMPRESS=DEFLATE -co PREDICTOR=3

# ---- 5. bad inputs ----------------------------------------------------------------
run "$BAD/{truncated,garbage_after_magic,huge_dims}.tif, $BAD/{all_nodata,bad_header,short_data}.asc" \
    "$PY" make_bad.py "$BAD" gd_f32_strips.tif
(
    cd "$TMP/envi"
    run "$BAD/cint16.tif" gdal_translate -q -of GTiff -ot CInt16 -a_srs EPSG:25832 \
        -a_ullr 500000 5600000 500750 5599500 src_i16_lzw_pred2.bin "$BAD/cint16.tif"
    run "$BAD/rgb8.tif" gdal_translate -q -of GTiff -ot Byte -scale 0 65535 0 255 \
        -b 1 -b 1 -b 1 -co PHOTOMETRIC=RGB -a_srs EPSG:32610 \
        -a_ullr 550000 4180000 550200 4179880 src_u16.bin "$BAD/rgb8.tif"
)
run "$BAD/all_nodata.tif" gdal_translate -q -of GTiff -ot Float32 -a_srs EPSG:32633 \
    "$BAD/all_nodata.asc" "$BAD/all_nodata.tif"
# not north-up: a 15 degree rotation, and a south-up grid (positive row step);
# GDAL writes both with ModelTransformationTag
cat > "$TMP/rotated.vrt" <<EOF
<VRTDataset rasterXSize="24" rasterYSize="18">
  <SRS>EPSG:32633</SRS>
  <GeoTransform>420000, 28.977774788953, 7.764571353075, 5010000, 7.764571353075, -28.977774788953</GeoTransform>
  <VRTRasterBand dataType="Float32" band="1">
    <SimpleSource><SourceFilename>$HERE/gd_f32_strips.tif</SourceFilename><SourceBand>1</SourceBand></SimpleSource>
  </VRTRasterBand>
</VRTDataset>
EOF
sed -e 's|<GeoTransform>.*</GeoTransform>|<GeoTransform>420000, 30, 0, 5009460, 0, 30</GeoTransform>|' \
    "$TMP/rotated.vrt" > "$TMP/south_up.vrt"
run "$BAD/rotated.tif" gdal_translate -q -of GTiff "$TMP/rotated.vrt" "$BAD/rotated.tif"
run "$BAD/south_up.tif" gdal_translate -q -of GTiff "$TMP/south_up.vrt" "$BAD/south_up.tif"

# GDAL's own reaction to each bad file
(
    cd "$BAD"
    for f in $(ls | grep -v README.md); do
        echo "=== gdalinfo -checksum $f"
        set +e
        out=$(gdalinfo -checksum "$f" 2>&1); rc=$?
        set -e
        grep -E -A2 '^GeoTransform' <<< "$out" | sed 's/^/  /' || true
        printf '%s\n' "$out" | grep -E '^(ERROR|Warning)|Size is|Type=|NoData|Checksum=|Origin|Pixel Size' \
            | sed 's/^/  /' | head -14
        echo "  exit code $rc"
    done
) > bad_files.gdal.txt

# make paths in provenance.tsv relative to this folder
sed -i -e "s|$HERE/||g" -e "s|$DATA/|../../data/|g" -e "s|$TMP/envi|TMP/envi|g" -e "s|$TMP/|TMP/|g" provenance.tsv

# ---- 6. independent checks ----------------------------------------------------------
"$PY" verify.py "$HERE" "$DATA" > verify_report.txt || { cat verify_report.txt; die "verify.py found disagreements"; }
tail -n 3 verify_report.txt
du -ch "$HERE" "$DATA" | tail -n 1
