//! The `sunward` binary against a corpus of bad inputs, made in the test where possible:
//! truncated and corrupt rasters, wrong sample formats, giant declared sizes, no-data
//! everywhere, mission files with wrong types and impossible values, routes that cannot
//! start, goals that cannot be reached, seasons that cannot be driven, and the two
//! resource limits. Each case checks the exact message (or the verdict in summary.json)
//! and the exit code: 0 success, 1 infeasible under --fail-on-infeasible, 2 bad input.
//! The committed bad rasters of tests/data/bad are covered by tests/terrain_cli.rs.

use std::path::PathBuf;

use assert_cmd::Command;
use serde_json::Value;
use sunward::terrain::io::geotiff;
use sunward::terrain::{GeoRef, Grid};

/// A scratch folder; commands run inside it, so messages name files as given.
struct Scratch {
    dir: tempfile::TempDir,
}

impl Scratch {
    fn new() -> Scratch {
        Scratch {
            dir: tempfile::tempdir().unwrap(),
        }
    }

    fn path(&self, name: &str) -> PathBuf {
        self.dir.path().join(name)
    }

    fn write(&self, name: &str, bytes: impl AsRef<[u8]>) {
        std::fs::write(self.path(name), bytes).unwrap();
    }

    /// Runs `sunward ARGS` in the folder; returns (exit code, stderr).
    fn run(&self, args: &[&str]) -> (i32, String) {
        let out = Command::cargo_bin("sunward")
            .unwrap()
            .current_dir(self.dir.path())
            .args(args)
            .output()
            .unwrap();
        let err = String::from_utf8_lossy(&out.stderr).into_owned();
        assert!(!err.contains("panicked"), "{args:?}: {err}");
        (out.status.code().unwrap_or(-1), err)
    }

    fn summary(&self, out_dir: &str) -> Value {
        let text = std::fs::read_to_string(self.path(out_dir).join("summary.json")).unwrap();
        serde_json::from_str(&text).unwrap()
    }
}

/// `sunward ARGS` fails with exit code 2 and exactly the one-line message `want`.
fn check_refused(s: &Scratch, args: &[&str], want: &str) {
    let (code, err) = s.run(args);
    assert_eq!(code, 2, "{args:?}: {err}");
    assert_eq!(err.trim_end(), format!("error: {want}"), "{args:?}");
}

// ---------------------------------------------------------------------------------------
// Rasters

/// A valid 20 × 15 Float32 GeoTIFF (a tilted plane) from sunward's own writer.
fn plane_tif() -> Vec<u8> {
    let (w, h) = (20, 15);
    let data: Vec<f32> = (0..w * h).map(|i| 100.0 + (i % w) as f32).collect();
    let grid = Grid::from_vec(w, h, data, GeoRef::local(2.0));
    let mut bytes = Vec::new();
    geotiff::write(&mut bytes, &grid.georef, w, h, &[grid.data()]).unwrap();
    bytes
}

/// The byte offset of the value of IFD entry `tag` in a little-endian classic TIFF whose
/// IFD holds it (as sunward's writer lays it out).
fn entry_value_at(tif: &[u8], tag: u16) -> usize {
    let ifd = u32::from_le_bytes(tif[4..8].try_into().unwrap()) as usize;
    let n = u16::from_le_bytes([tif[ifd], tif[ifd + 1]]) as usize;
    (0..n)
        .map(|i| ifd + 2 + 12 * i)
        .find(|&e| u16::from_le_bytes([tif[e], tif[e + 1]]) == tag)
        .map(|e| e + 8)
        .expect("tag present")
}

#[test]
fn the_generated_geotiff_is_valid() {
    let s = Scratch::new();
    s.write("plane.tif", plane_tif());
    let (code, err) = s.run(&["terrain", "info", "plane.tif"]);
    assert_eq!(code, 0, "{err}");
}

#[test]
fn truncated_geotiffs_are_refused_at_every_cut() {
    let tif = plane_tif();
    let s = Scratch::new();
    let ifd = u32::from_le_bytes(tif[4..8].try_into().unwrap()) as usize;
    // Cut inside the header, inside the pixel data (the IFD, at the end, is lost) and
    // inside the IFD.
    let cases = [
        (
            3,
            "cut3.tif: not a readable GeoTIFF: the file ends before the data its header \
             declares (truncated or damaged). Fix: check that the file is complete and is \
             a TIFF (gdalinfo shows it)",
        ),
        (
            600,
            "cut600.tif: not a readable GeoTIFF: the file ends before the data its header \
             declares (truncated or damaged). Fix: check that the file is complete and is \
             a TIFF (gdalinfo shows it)",
        ),
        (
            ifd + 40,
            "cutifd.tif: not a readable GeoTIFF: the file ends before the data its header \
             declares (truncated or damaged). Fix: check that the file is complete and is \
             a TIFF (gdalinfo shows it)",
        ),
    ];
    for (i, (cut, want)) in cases.iter().enumerate() {
        let name = if i == 2 {
            "cutifd.tif".to_string()
        } else {
            format!("cut{cut}.tif")
        };
        s.write(&name, &tif[..*cut]);
        check_refused(&s, &["terrain", "info", &name], want);
    }
}

#[test]
fn corrupt_geotiffs_are_refused() {
    let s = Scratch::new();
    let mut tif = plane_tif();
    // The first-IFD offset points past the end of the file.
    tif[4..8].copy_from_slice(&0x7fff_fff0u32.to_le_bytes());
    s.write("far_ifd.tif", &tif);
    check_refused(
        &s,
        &["terrain", "info", "far_ifd.tif"],
        "far_ifd.tif: not a readable GeoTIFF: the file ends before the data its header \
         declares (truncated or damaged). Fix: check that the file is complete and is a \
         TIFF (gdalinfo shows it)",
    );
    // A height of 3 000 000 rows in strips of 15 rows needs 200 000 strips; the file
    // lists one.
    let mut tif = plane_tif();
    let at = entry_value_at(&tif, 257);
    tif[at..at + 4].copy_from_slice(&3_000_000u32.to_le_bytes());
    s.write("strips.tif", &tif);
    check_refused(
        &s,
        &["terrain", "info", "strips.tif"],
        "strips.tif: not a readable GeoTIFF: the header's sizes disagree with each other \
         (image size, samples per pixel, strip or tile counts). Fix: check that the file \
         is complete and is a TIFF (gdalinfo shows it)",
    );
    // Not a TIFF at all.
    s.write("text.tif", "elevation,100\n");
    check_refused(
        &s,
        &["terrain", "info", "text.tif"],
        "text.tif: not a readable GeoTIFF: format error: TIFF signature not found. Fix: \
         check that the file is complete and is a TIFF (gdalinfo shows it)",
    );
}

/// A small file whose header declares a larger image than its data blocks can hold, or
/// whose block lies past the end of the file: refused before the decoder allocates the
/// image (the 36 MB here; terabytes for `huge_dims.tif` once the cell limit is raised).
#[test]
fn data_blocks_too_small_for_the_header_are_refused_before_allocating() {
    let s = Scratch::new();
    let mut tif = plane_tif();
    for tag in [256, 257, 278] {
        let at = entry_value_at(&tif, tag);
        tif[at..at + 4].copy_from_slice(&3000u32.to_le_bytes());
    }
    s.write("small_blocks.tif", &tif);
    check_refused(
        &s,
        &["terrain", "info", "small_blocks.tif"],
        "small_blocks.tif: not a readable GeoTIFF: the data blocks are too small for the \
         image the header declares: 36000000 bytes of pixels, 1200 bytes stored \
         (uncompressed). Fix: check that the file is complete (was the download or copy cut \
         short?)",
    );
    let mut tif = plane_tif();
    let at = entry_value_at(&tif, 273);
    tif[at..at + 4].copy_from_slice(&5000u32.to_le_bytes());
    let len = tif.len();
    s.write("far_block.tif", &tif);
    check_refused(
        &s,
        &["terrain", "info", "far_block.tif"],
        &format!(
            "far_block.tif: not a readable GeoTIFF: the file ends before the data its header \
             declares: data block 1 of 1 (1200 bytes at offset 5000) lies past the end of the \
             {len}-byte file. Fix: check that the file is complete (was the download or copy \
             cut short?)"
        ),
    );
    let huge = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/data/bad/huge_dims.tif");
    let (code, err) = s.run(&[
        "terrain",
        "info",
        huge.to_str().unwrap(),
        "--max-cells",
        "2000000000000",
    ]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("4000000000000 bytes of pixels, 16 bytes stored (uncompressed)"),
        "{err}"
    );
}

#[test]
fn wrong_sample_formats_are_refused() {
    let s = Scratch::new();
    let mut tif = plane_tif();
    // SampleFormat 6: complex floating point.
    let at = entry_value_at(&tif, 339);
    tif[at..at + 2].copy_from_slice(&6u16.to_le_bytes());
    s.write("complex.tif", &tif);
    check_refused(
        &s,
        &["terrain", "info", "complex.tif"],
        "complex.tif: unsupported sample format: 32-bit complex floating point \
         (SampleFormat 6). Fix: convert with gdal_translate -ot Float32; sunward reads \
         Float32, Float64, Int16, UInt16, Int32 (and 8-bit, UInt32)",
    );
    s.write("rgb.png", png_bytes(2, 2, 8, 2, &[vec![0; 6], vec![0; 6]]));
    check_refused(
        &s,
        &["terrain", "info", "rgb.png", "--cell-m", "1"],
        "rgb.png: unsupported PNG pixel type Rgb at Eight bits: a heightmap is one grey \
         channel. Fix: save the heightmap as 16-bit greyscale",
    );
    s.write("grey_alpha.png", png_bytes(1, 1, 16, 4, &[vec![0; 4]]));
    check_refused(
        &s,
        &["terrain", "info", "grey_alpha.png", "--cell-m", "1"],
        "grey_alpha.png: unsupported PNG pixel type GrayscaleAlpha at Sixteen bits: a \
         heightmap is one grey channel. Fix: save the heightmap as 16-bit greyscale",
    );
    s.write(
        "words.asc",
        "ncols 2\nnrows 1\nxllcorner 0\nyllcorner 0\ncellsize 1\n12.5 high\n",
    );
    check_refused(
        &s,
        &["terrain", "info", "words.asc"],
        "words.asc: not a readable ESRI ASCII grid: line 6: \"high\" is not a number. Fix: \
         the header needs ncols, nrows, xllcorner (or xllcenter), yllcorner (or \
         yllcenter), cellsize and optionally NODATA_value, then nrows lines of ncols \
         numbers",
    );
}

/// A PNG from its parts (colour type `ctype`, one filter byte 0 per row), standard
/// library only: signature, IHDR, one stored-deflate IDAT, IEND (ISO/IEC 15948).
fn png_bytes(w: u32, h: u32, depth: u8, ctype: u8, rows: &[Vec<u8>]) -> Vec<u8> {
    let mut raw = Vec::new();
    for r in rows {
        raw.push(0);
        raw.extend_from_slice(r);
    }
    let mut ihdr = Vec::new();
    ihdr.extend_from_slice(&w.to_be_bytes());
    ihdr.extend_from_slice(&h.to_be_bytes());
    ihdr.extend_from_slice(&[depth, ctype, 0, 0, 0]);
    let mut out = b"\x89PNG\r\n\x1a\n".to_vec();
    for (kind, body) in [
        (*b"IHDR", ihdr),
        (*b"IDAT", zlib_stored(&raw)),
        (*b"IEND", Vec::new()),
    ] {
        out.extend_from_slice(&(body.len() as u32).to_be_bytes());
        let mut crc_input = kind.to_vec();
        crc_input.extend_from_slice(&body);
        out.extend_from_slice(&crc_input);
        out.extend_from_slice(&crc32(&crc_input).to_be_bytes());
    }
    out
}

/// A zlib stream (RFC 1950) of stored deflate blocks (RFC 1951 §3.2.4).
fn zlib_stored(data: &[u8]) -> Vec<u8> {
    let mut out = vec![0x78, 0x01];
    let chunks: Vec<&[u8]> = data.chunks(65_535).collect();
    let chunks = if chunks.is_empty() {
        vec![&[][..]]
    } else {
        chunks
    };
    for (i, c) in chunks.iter().enumerate() {
        out.push(u8::from(i + 1 == chunks.len()));
        let len = c.len() as u16;
        out.extend_from_slice(&len.to_le_bytes());
        out.extend_from_slice(&(!len).to_le_bytes());
        out.extend_from_slice(c);
    }
    let (mut a, mut b) = (1u32, 0u32);
    for &x in data {
        a = (a + x as u32) % 65_521;
        b = (b + a) % 65_521;
    }
    out.extend_from_slice(&((b << 16) | a).to_be_bytes());
    out
}

/// CRC-32 (ISO 3309, as PNG uses it).
fn crc32(data: &[u8]) -> u32 {
    let mut c = !0u32;
    for &x in data {
        c ^= x as u32;
        for _ in 0..8 {
            c = if c & 1 != 0 {
                0xedb8_8320 ^ (c >> 1)
            } else {
                c >> 1
            };
        }
    }
    !c
}

#[test]
fn the_generated_png_is_valid() {
    let s = Scratch::new();
    let rows: Vec<Vec<u8>> = (0..3u16)
        .map(|r| {
            (0..4u16)
                .flat_map(|c| (100 * r + c).to_be_bytes())
                .collect()
        })
        .collect();
    s.write("ok.png", png_bytes(4, 3, 16, 0, &rows));
    let out = Command::cargo_bin("sunward")
        .unwrap()
        .current_dir(s.dir.path())
        .args(["terrain", "info", "ok.png", "--cell-m", "1", "--json"])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(
        (v["width"].as_u64(), v["z_max_m"].as_f64()),
        (Some(4), Some(203.0))
    );
}

#[test]
fn giant_declared_sizes_are_refused_from_the_header() {
    let s = Scratch::new();
    s.write(
        "giant.png",
        png_bytes(100_000, 100_000, 16, 0, &[vec![0; 2]]),
    );
    check_refused(
        &s,
        &["terrain", "info", "giant.png", "--cell-m", "1"],
        "giant.png: the raster is 100000 x 100000 = 10000000000 cells, more than the limit \
         of 268435456 cells. Fix: crop or resample the raster, or raise the limit with \
         --max-cells (in a mission file: max_cells under [terrain])",
    );
    s.write(
        "giant.asc",
        "ncols 1000000\nnrows 1000000\nxllcorner 0\nyllcorner 0\ncellsize 1\n1\n",
    );
    check_refused(
        &s,
        &["terrain", "info", "giant.asc"],
        "giant.asc: the raster is 1000000 x 1000000 = 1000000000000 cells, more than the \
         limit of 268435456 cells. Fix: crop or resample the raster, or raise the limit \
         with --max-cells (in a mission file: max_cells under [terrain])",
    );
    // Width, height and rows per strip (one strip) all say 3 000 000.
    let mut tif = plane_tif();
    for tag in [256, 257, 278] {
        let at = entry_value_at(&tif, tag);
        tif[at..at + 4].copy_from_slice(&3_000_000u32.to_le_bytes());
    }
    s.write("giant.tif", &tif);
    check_refused(
        &s,
        &["terrain", "info", "giant.tif"],
        "giant.tif: the raster is 3000000 x 3000000 = 9000000000000 cells, more than the \
         limit of 268435456 cells. Fix: crop or resample the raster, or raise the limit \
         with --max-cells (in a mission file: max_cells under [terrain])",
    );
}

/// ESRI ASCII grid headers and values that once slipped through: ncols x nrows that
/// overflows a u64 (2^32 x 2^32 wrapped to 0 cells, under any limit), a corner that is not
/// a number, and a value finite as f64 but not as f32 (1e39 read as elevation inf).
#[test]
fn ascii_grid_overflows_and_non_finite_numbers() {
    let s = Scratch::new();
    s.write(
        "wrap.asc",
        "ncols 4294967296\nnrows 4294967296\nxllcorner 0\nyllcorner 0\ncellsize 1\n1\n",
    );
    check_refused(
        &s,
        &["terrain", "info", "wrap.asc"],
        "wrap.asc: the raster is 4294967296 x 4294967296 = 18446744073709551616 cells, more \
         than the limit of 268435456 cells. Fix: crop or resample the raster, or raise the \
         limit with --max-cells (in a mission file: max_cells under [terrain])",
    );
    s.write(
        "wide.asc",
        "ncols 99999999999\nnrows 99999999999\nxllcorner 0\nyllcorner 0\ncellsize 1\n1\n",
    );
    check_refused(
        &s,
        &["terrain", "info", "wide.asc"],
        "wide.asc: the raster is 99999999999 x 99999999999 = 9999999999800000000001 cells, \
         more than the limit of 268435456 cells. Fix: crop or resample the raster, or raise \
         the limit with --max-cells (in a mission file: max_cells under [terrain])",
    );
    let ascii = |x: &str, y: &str, cell: &str, values: &str| {
        format!("ncols 3\nnrows 2\nxllcorner {x}\nyllcorner {y}\ncellsize {cell}\n{values}")
    };
    s.write("nanx.asc", ascii("nan", "0", "1", "1 2 3\n4 5 6\n"));
    check_refused(
        &s,
        &["terrain", "info", "nanx.asc"],
        "nanx.asc: not a readable ESRI ASCII grid: line 3: xllcorner = nan is not a finite \
         map coordinate. Fix: give the lower-left corner (or centre) in the grid's map units",
    );
    s.write("infy.asc", ascii("0", "-inf", "1", "1 2 3\n4 5 6\n"));
    check_refused(
        &s,
        &["terrain", "info", "infy.asc"],
        "infy.asc: not a readable ESRI ASCII grid: line 4: yllcorner = -inf is not a finite \
         map coordinate. Fix: give the lower-left corner (or centre) in the grid's map units",
    );
    // A GeoTIFF whose tie point is not a number: refused by the checks every grid passes.
    let mut georef = GeoRef::local(1.0);
    georef.origin_x = f64::NAN;
    let grid = Grid::from_vec(4, 3, vec![1.0; 12], georef);
    let mut tif = Vec::new();
    geotiff::write(&mut tif, &grid.georef, 4, 3, &[grid.data()]).unwrap();
    s.write("nan_tie.tif", &tif);
    check_refused(
        &s,
        &["terrain", "info", "nan_tie.tif"],
        "nan_tie.tif: the grid's extent, x NaN to NaN and y -3 to 0, is not finite map \
         coordinates. Fix: check the corner coordinates in the header or the georeference \
         tags",
    );
    // 1e39 and -1e39 are beyond f32: no-data, as the GeoTIFF reader takes inf.
    s.write("big.asc", ascii("0", "0", "1", "1 1e39 3\n4 -1e39 6\n"));
    let out = Command::cargo_bin("sunward")
        .unwrap()
        .current_dir(s.dir.path())
        .args(["terrain", "info", "big.asc", "--json"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0));
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["nodata_cells"], 2);
    assert_eq!(v["z_max_m"], 6.0);
    assert_eq!(v["z_min_m"], 1.0);
}

#[test]
fn no_data_everywhere_is_refused_in_every_format() {
    let s = Scratch::new();
    s.write(
        "nan.asc",
        "ncols 3\nnrows 2\nxllcorner 0\nyllcorner 0\ncellsize 1\nnan nan nan\nNaN -nan nan\n",
    );
    let grid = Grid::from_vec(4, 3, vec![f32::NAN; 12], GeoRef::local(1.0));
    let mut tif = Vec::new();
    geotiff::write(&mut tif, &grid.georef, 4, 3, &[grid.data()]).unwrap();
    s.write("nan.tif", &tif);
    s.write("zero.png", png_bytes(4, 3, 16, 0, &vec![vec![0; 8]; 3]));
    for (args, cells) in [
        (vec!["nan.asc"], 6),
        (vec!["nan.tif"], 12),
        (vec!["zero.png", "--cell-m", "1", "--png-nodata", "0"], 12),
    ] {
        let mut all = vec!["terrain", "info"];
        all.extend(&args);
        check_refused(
            &s,
            &all,
            &format!(
                "{}: every one of the {cells} cells is no-data; there is no terrain to use. \
                 Fix: check the no-data value and the file's extent",
                args[0]
            ),
        );
    }
}

/// A geographic grid (a .prj in degrees) reaching past the pole, and a header whose cell
/// size no terrain has: refused after reading, before any analysis.
#[test]
fn impossible_georeferences_are_refused() {
    let s = Scratch::new();
    let grid = |corner: &str, cell: &str| {
        format!(
            "ncols 4\nnrows 3\nxllcorner 0\nyllcorner {corner}\ncellsize {cell}\n\
             1 2 3 4\n5 6 7 8\n9 10 11 12\n"
        )
    };
    s.write("pole.asc", grid("80", "5"));
    s.write("pole.prj", r#"GEOGCS["WGS 84",AUTHORITY["EPSG","4326"]]"#);
    check_refused(
        &s,
        &["terrain", "info", "pole.asc"],
        "pole.asc: the grid is geographic (degrees) but spans latitude 80 to 95 and \
         longitude 0 to 20, beyond ±90° and ±360°. Fix: check the georeference: a projected \
         grid needs its projected CRS (gdal_edit.py -a_srs EPSG:CODE)",
    );
    s.write("tiny.asc", grid("0", "1e-300"));
    check_refused(
        &s,
        &["terrain", "info", "tiny.asc"],
        "tiny.asc: cells of 1e-300 x 1e-300 m, outside 0.0001 m to 1000000 m. Fix: check \
         the cell size in the header or the georeference tags",
    );
}

#[test]
fn memory_budget_is_checked_before_the_planner_and_the_horizon_maps() {
    let s = Scratch::new();
    s.write("plane.tif", plane_tif());
    check_refused(
        &s,
        &[
            "route",
            "--terrain",
            "plane.tif",
            "--from",
            "3,-3",
            "--to",
            "35,-25",
            "--max-memory-mb",
            "0",
        ],
        "plane.tif: the route planner's arrays for 20 x 15 cells need about 1 MiB, more \
         than the memory budget of 0 MiB. Fix: raise the budget with --max-memory-mb (in a \
         mission file: max_memory_mb under [terrain]) if the machine has the memory, or \
         crop or resample the raster",
    );
    check_refused(
        &s,
        &[
            "terrain",
            "horizon",
            "plane.tif",
            "-o",
            "h.tif",
            "--max-memory-mb",
            "0",
        ],
        "plane.tif: the horizon maps for 20 x 15 cells need about 1 MiB, more than the \
         memory budget of 0 MiB. Fix: raise the budget with --max-memory-mb (in a mission \
         file: max_memory_mb under [terrain]) if the machine has the memory, or crop or \
         resample the raster",
    );
    assert!(!s.path("h.tif").exists(), "nothing written");
}

// ---------------------------------------------------------------------------------------
// Mission files

/// A 30 × 30 flat grid of 2 m cells at 100 m (x from 0 to 60, y from 0 to 60) with a
/// 60 m pillar on the cell of centre (11, 49): no step off it keeps a pitch limit.
fn terrain(s: &Scratch) {
    let n = 30;
    let mut text =
        format!("ncols {n}\nnrows {n}\nxllcorner 0\nyllcorner 0\ncellsize 2\nNODATA_value -9999\n");
    for r in 0..n {
        let row: Vec<&str> = (0..n)
            .map(|c| if (c, r) == (5, 5) { "160" } else { "100" })
            .collect();
        text += &row.join(" ");
        text += "\n";
    }
    s.write("dem.asc", text);
}

/// A small valid mission on [`terrain`]; cases replace one line of it.
const MISSION: &str = r#"[site]
lat_deg = 45.0
lon_deg = 5.0
[terrain]
file = "dem.asc"
[route]
start_m = [31.0, 49.0]
goal_m = [45.0, 15.0]
[rover]
[panels]
[battery]
[weather]
air_temp_mean_c = [1.0, 2.0, 5.0, 9.0, 13.0, 17.0, 20.0, 19.0, 15.0, 10.0, 5.0, 2.0]
air_temp_swing_c = [6.0, 6.0, 8.0, 9.0, 10.0, 10.0, 11.0, 10.0, 9.0, 8.0, 6.0, 6.0]
"#;

/// The mission with `from` (which must occur) replaced by `to`, written as `name`.
fn mission(s: &Scratch, name: &str, from: &str, to: &str) {
    assert!(MISSION.contains(from), "{from}");
    terrain(s);
    s.write(name, MISSION.replacen(from, to, 1));
}

#[test]
fn the_base_mission_checks_clean() {
    let s = Scratch::new();
    mission(&s, "m.toml", "", "");
    let (code, err) = s.run(&["check", "m.toml"]);
    assert_eq!(code, 0, "{err}");
}

/// Each mission problem: exit code 2 from both `check` and `run`, the one problem with
/// its line and column, and no summary.json.
#[test]
fn mission_files_with_wrong_types_and_impossible_values_are_refused() {
    let cases = [
        (
            "lat_deg = 45.0",
            "lat_deg = \"north\"",
            "m.toml:2:11: site.lat_deg: expected a number, got text. Fix: write it as a \
             number, e.g. `lat_deg = 1.0`",
        ),
        (
            "[rover]",
            "[rover]\nmass_kg = [120, 15]",
            "m.toml:10:11: rover.mass_kg: wrong type or value: invalid type: sequence, \
             expected f64. Fix: check `mass_kg` against the documentation of [rover]",
        ),
        (
            "[battery]",
            "[battery]\ncapacity_wh = -1200.0\nnominal_voltage_v = 25.6",
            "m.toml:12:15: battery.capacity_wh: got -1200, expected 1 to 1e7 Wh. Fix: use \
             the pack's rated energy and nominal voltage",
        ),
        (
            "[rover]",
            "[rover]\nmax_climb_deg = 95.0",
            "m.toml:10:17: rover.max_climb_deg: got 95, expected a number in (0, 90). Fix: \
             set `max_climb_deg` inside (0, 90), or leave it out for the documented default",
        ),
        (
            "goal_m = [45.0, 15.0]",
            "goal_m = [45.0, 15.0]\nmax_descent_deg = 0.0",
            "m.toml:9:19: route.max_descent_deg: got 0, expected a number in (0, 90). Fix: \
             set `max_descent_deg` inside (0, 90), or leave it out for the documented \
             default",
        ),
        (
            "[panels]",
            "[panels]\narea_sqm = 1.0",
            "m.toml:11:1: panels.area_sqm: unknown key. Fix: remove it; known keys here \
             are: `area_m2`, `efficiency_stc`, `temp_coeff_per_k`, `soiling_loss`, \
             `mppt_efficiency`, `wiring_efficiency`, `cell_temperature`, \
             `faiman_u0_w_m2_k`, `faiman_u1_w_s_m3_k`, `noct_c`, `mount`, `tilt_deg`, \
             `azimuth_deg`, `axis_yaw_deg`, `max_rotation_deg`",
        ),
        (
            "[rover]",
            "[rover]\nmax_speed_m_s = nan",
            "m.toml:10:17: rover.max_speed_m_s: got NaN, expected a finite number in (0, \
             20]. Fix: set `max_speed_m_s` inside (0, 20], or leave it out for the documented \
             default",
        ),
        // Keys whose bounds the sun or battery stage checks: a value that is not finite is
        // refused here with the documented range, never the limits of an f64.
        (
            "[panels]",
            "[panels]\narea_m2 = nan",
            "m.toml:11:11: panels.area_m2: got NaN, expected a finite number in [0, 1000]. \
             Fix: set `area_m2` inside [0, 1000], or leave it out for the documented default",
        ),
        (
            "[weather]",
            "[weather]\nair_temp_peak_h = inf",
            "m.toml:13:19: weather.air_temp_peak_h: got inf, expected a finite number in [0, \
             24]. Fix: set `air_temp_peak_h` inside [0, 24], or leave it out for the \
             documented default",
        ),
        (
            "[1.0, 2.0, 5.0,",
            "[1.0, 2.0, -inf,",
            "m.toml:13:19: weather.air_temp_mean_c: value -inf (at index 2) is not a finite \
             number in [-90, 60]. Fix: keep every value of `air_temp_mean_c` inside [-90, 60]",
        ),
        // A point takes exactly two numbers: a third one used to pass unread.
        (
            "[31.0, 49.0]",
            "[31.0, 49.0, 3.0]",
            "m.toml:7:11: route.start_m: expected a point [x, y] of two numbers, got an array \
             of 3 values. Fix: write it as a point [x, y] of two numbers, e.g. `start_m = \
             [100.0, 250.0]`",
        ),
        (
            "[31.0, 49.0]",
            "[31.0]",
            "m.toml:7:11: route.start_m: expected a point [x, y] of two numbers, got an array \
             of 1 value. Fix: write it as a point [x, y] of two numbers, e.g. `start_m = \
             [100.0, 250.0]`",
        ),
        (
            "goal_m = [45.0, 15.0]",
            "goal_m = [45.0, 15.0]\nwaypoints_m = [[40.0, 30.0], [1.0, 2.0, 3.0]]",
            "m.toml:9:30: route.waypoints_m[1]: expected a point [x, y] of two numbers, got \
             an array of 3 values. Fix: write waypoint 2 as [x, y] in the terrain's map \
             coordinates, metres, e.g. `waypoints_m = [[100.0, 250.0], [400.0, 300.0]]`",
        ),
        // A bad point is named by its index and column, and by the coordinate at fault.
        (
            "goal_m = [45.0, 15.0]",
            "goal_m = [45.0, 15.0]\nwaypoints_m = [[40.0, 30.0], [\"a\", 2.0]]",
            "m.toml:9:30: route.waypoints_m[1]: expected a point [x, y] of two numbers, got \
             text as x. Fix: write waypoint 2 as [x, y] in the terrain's map coordinates, \
             metres, e.g. `waypoints_m = [[100.0, 250.0], [400.0, 300.0]]`",
        ),
        (
            "goal_m = [45.0, 15.0]",
            "goal_m = [45.0, 15.0]\nwaypoints_m = [40.0, 30.0]",
            "m.toml:9:15: route.waypoints_m: expected an array of points [[x, y], ...], got 2 \
             numbers. Fix: give each point its own brackets, e.g. `waypoints_m = [[100.0, \
             250.0]]` for one",
        ),
        (
            "goal_m = [45.0, 15.0]",
            "goal_m = [45.0, 15.0]\nwaypoints_m = 4",
            "m.toml:9:15: route.waypoints_m: expected an array of points [[x, y], ...], got an \
             integer. Fix: write it as an array of points [[x, y], ...], e.g. \
             `waypoints_m = [[100.0, 250.0], [400.0, 300.0]]`",
        ),
        (
            "[31.0, 49.0]",
            "[31.0, false]",
            "m.toml:7:11: route.start_m: expected a point [x, y] of two numbers, got \
             true/false as y. Fix: write it as a point [x, y] of two numbers, e.g. `start_m = \
             [100.0, 250.0]`",
        ),
    ];
    for (from, to, want) in cases {
        let s = Scratch::new();
        mission(&s, "m.toml", from, to);
        let expected = format!("m.toml: the mission file has 1 problem(s):\n{want}");
        check_refused(&s, &["check", "m.toml"], &expected);
        check_refused(&s, &["run", "m.toml", "--out", "out"], &expected);
        assert!(!s.path("out/summary.json").exists());
    }
}

/// A mission whose terrain file is not a raster: `check`, `run` and `sweep` give the
/// raster's own error and the mission key that names the file, at its line and column.
#[test]
fn a_bad_terrain_file_is_traced_to_its_mission_key() {
    let s = Scratch::new();
    mission(&s, "m.toml", "[terrain]", "[terrain]");
    s.write("dem.asc", "not a grid at all\n");
    let want = "dem.asc: not a readable ESRI ASCII grid: line 1: unknown header key \"not\". \
                Fix: the header needs ncols, nrows, xllcorner (or xllcenter), yllcorner (or \
                yllcenter), cellsize and optionally NODATA_value, then nrows lines of ncols \
                numbers\n  (the file given as terrain.file at m.toml:5:8)";
    check_refused(&s, &["check", "m.toml"], want);
    check_refused(&s, &["run", "m.toml", "--out", "out"], want);
    let sweep = [
        "sweep",
        "m.toml",
        "--battery-wh",
        "300:400:100",
        "--out",
        "sw",
    ];
    check_refused(&s, &sweep, want);
    assert!(!s.path("out/summary.json").exists());
}

#[test]
fn mission_limits_name_the_mission_key() {
    let s = Scratch::new();
    mission(&s, "m.toml", "[terrain]", "[terrain]\nmax_cells = 100");
    check_refused(
        &s,
        &["run", "m.toml", "--out", "out"],
        "dem.asc: the raster is 30 x 30 = 900 cells, more than the limit of 100 cells. \
         Fix: crop or resample the raster, or raise the limit with --max-cells (in a \
         mission file: max_cells under [terrain])\n  (the file given as terrain.file at \
         m.toml:6:8)",
    );
    let s = Scratch::new();
    mission(&s, "m.toml", "[terrain]", "[terrain]\nmax_memory_mb = 0");
    check_refused(
        &s,
        &["check", "m.toml"],
        "m.toml: the mission file has 1 problem(s):\nm.toml:5:17: terrain.max_memory_mb: \
         got 0, expected a number in [1, 1073741824]. Fix: set `max_memory_mb` inside [1, \
         1073741824], or leave it out for the documented default",
    );
}

/// A memory budget that holds the planner's arrays and the horizon maps but not the
/// sun-aware label search: the fixed-route run goes ahead, `--planner sun-aware` is
/// refused before anything runs, naming the label search, the key and the fixes.
#[test]
fn the_sun_aware_label_search_counts_against_the_memory_budget() {
    let s = Scratch::new();
    mission(&s, "m.toml", "[terrain]", "[terrain]\nmax_memory_mb = 64");
    let (code, err) = s.run(&["run", "m.toml", "--out", "fixed", "-q"]);
    assert_eq!(code, 0, "{err}");
    let (code, err) = s.run(&["run", "m.toml", "--planner", "sun-aware", "--out", "aware"]);
    assert_eq!(code, 2, "{err}");
    for part in [
        "dem.asc: the route planner's arrays, the horizon maps and the sun-aware label search (",
        "more than the memory budget of 64 MiB. Fix: raise the budget with --max-memory-mb (in \
         a mission file: max_memory_mb under [terrain]) if the machine has the memory, or use \
         --planner fixed, or fewer seasons (--season)",
    ] {
        assert!(err.contains(part), "{err}");
    }
    assert!(!s.path("aware/summary.json").exists());
}

/// A step of a millisecond over a year: the time series alone would need terabytes, so
/// `check` and `run` refuse it before anything runs, naming the keys to change.
#[test]
fn a_time_series_over_the_memory_budget_is_refused_before_running() {
    let s = Scratch::new();
    mission(
        &s,
        "m.toml",
        "[battery]",
        "[policy]\ndeadline_days = 366.0\n[simulation]\nstep_s = 0.001\n[battery]",
    );
    let want = "m.toml: the time series of 4 season(s) of up to 31622400001 steps (366 days at \
                0.001 s) need about 23160938 MiB, more than the memory budget of 8192 MiB. \
                Fix: raise the budget with --max-memory-mb (in a mission file: max_memory_mb \
                under [terrain]) if the machine has the memory, or use a longer [simulation] \
                step_s, a shorter [policy] deadline_days or fewer seasons";
    check_refused(&s, &["check", "m.toml"], want);
    check_refused(&s, &["run", "m.toml", "--out", "out"], want);
    assert!(!s.path("out/summary.json").exists()); // A step of 1e-300 s: more steps than a u64 counts, still one clear message.
    let text = std::fs::read_to_string(s.path("m.toml")).unwrap();
    s.write(
        "tiny.toml",
        text.replace("step_s = 0.001", "step_s = 1e-300"),
    );
    let (code, err) = s.run(&["check", "tiny.toml"]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("up to 18446744073709551615 steps"), "{err}");
}

/// A start on top of a pillar: the route cannot be planned, so every season is
/// infeasible, stranded at the start by the tilt limits; exit 0, or 1 when asked.
#[test]
fn start_on_a_cliff_is_infeasible_for_tilt() {
    let s = Scratch::new();
    mission(
        &s,
        "m.toml",
        "start_m = [31.0, 49.0]",
        "start_m = [11.0, 49.0]",
    );
    let (code, err) = s.run(&["run", "m.toml", "--out", "out", "-q"]);
    assert_eq!(code, 0, "{err}");
    let v = s.summary("out");
    assert_eq!(v["feasible"], false);
    let detail = "no drivable route from the start to the goal: the way is closed by the \
                  downhill pitch limit (100 %), counting the steps out of the one cell the \
                  rover can reach (the start itself). The reachable cell nearest the goal \
                  is (11.00, 49.00), 48.1 m from it. Fix: relax the limit named first \
                  ([route] max_descent_deg), allow 16-connected steps ([route] connectivity \
                  = 16), or move the goal";
    for season in v["seasons"].as_array().unwrap() {
        assert_eq!(season["stranded"]["cause"], "tilt");
        assert_eq!(season["stranded"]["x"], 11.0);
        assert_eq!(season["stranded"]["detail"], detail);
    }
    let (code, _) = s.run(&[
        "run",
        "m.toml",
        "--out",
        "out",
        "-q",
        "--fail-on-infeasible",
    ]);
    assert_eq!(code, 1);
}

/// A goal inside the keep-out raster: `check` places the problem at `route.goal_m`; `run`
/// refuses it from the planner; exit code 2 and nothing written.
#[test]
fn goal_in_a_keep_out_is_refused() {
    let s = Scratch::new();
    mission(
        &s,
        "m.toml",
        "file = \"dem.asc\"",
        "file = \"dem.asc\"\nkeep_out = \"keep.asc\"",
    );
    // Cells with data are closed: a 5 × 5 block around the goal (45, 15).
    let n = 30;
    let mut text =
        format!("ncols {n}\nnrows {n}\nxllcorner 0\nyllcorner 0\ncellsize 2\nNODATA_value -9999\n");
    for r in 0..n {
        let row: Vec<&str> = (0..n)
            .map(|c| {
                if (20..25).contains(&r) && (20..25).contains(&c) {
                    "1"
                } else {
                    "-9999"
                }
            })
            .collect();
        text += &row.join(" ");
        text += "\n";
    }
    s.write("keep.asc", text);
    check_refused(
        &s,
        &["check", "m.toml"],
        "m.toml: the mission file has 1 problem(s):\nm.toml:9:10: route.goal_m: goal (45, \
         15) lies inside the keep-out area (a cell of terrain.keep_out with data). Fix: \
         move the point out of the keep-out area, or clear that cell of the mask",
    );
    check_refused(
        &s,
        &["run", "m.toml", "--out", "out"],
        "the goal (45, 15) lies on a cell blocked by the keep-out area. Fix: move the point",
    );
    assert!(!s.path("out/summary.json").exists());
}

/// 80° N on 21 December (the Sun at most 80 − 90 + 23.4 = −13.4° high: polar night)
/// with the default daylight-only driving: the rover never drives; the season is
/// infeasible with its reason; exit 1 under --fail-on-infeasible.
#[test]
fn polar_night_with_a_daylight_only_policy_never_drives() {
    let s = Scratch::new();
    mission(&s, "m.toml", "lat_deg = 45.0", "lat_deg = 80.0");
    let text = std::fs::read_to_string(s.path("m.toml")).unwrap();
    s.write(
        "m.toml",
        text + "[seasons]\nmode = \"dates\"\ndates = [\"2027-12-21\"]\n",
    );
    let (code, err) = s.run(&[
        "run",
        "m.toml",
        "--out",
        "out",
        "-q",
        "--fail-on-infeasible",
    ]);
    assert_eq!(code, 1, "{err}");
    let v = s.summary("out");
    let season = &v["seasons"][0];
    assert_eq!(season["feasible"], false);
    assert_eq!(season["arrival_time"], Value::Null);
    assert_eq!(season["energy_generated_wh"], 0.0);
    assert_eq!(
        season["reason"],
        "did not arrive: no driving hours in the whole run (under a daylight-only policy \
         this is polar night), 0 of 40 m driven"
    );
}

// ---------------------------------------------------------------------------------------
// Replaying the corpus without a fuzzer

/// Every file under `dir`, recursively, in name order.
fn files_under(dir: &std::path::Path, out: &mut Vec<PathBuf>) {
    let mut entries: Vec<PathBuf> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .collect();
    entries.sort();
    for p in entries {
        if p.is_dir() {
            files_under(&p, out);
        } else {
            out.push(p);
        }
    }
}

/// Every committed bad input (tests/data/bad/, with the inputs the fuzzers found under
/// tests/data/bad/fuzz/ when there are any) goes through the reader its extension names,
/// in process: each is refused with a message naming the file and giving a fix, except
/// the south-up grid, which is valid and read north-up. Mission files (.toml) go through
/// the checker and must get at least one problem.
#[test]
fn every_committed_bad_input_is_refused_without_a_panic() {
    use sunward::terrain::io::{read_dem, PngScale, ReadOptions};
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/data/bad");
    let mut files = Vec::new();
    files_under(&root, &mut files);
    let opts = ReadOptions {
        max_cells: 1 << 24,
        png: Some(PngScale {
            cell_m: 2.0,
            z_scale_m: 0.1,
            z_offset_m: 0.0,
            nodata_raw: Some(0),
        }),
        ..ReadOptions::default()
    };
    let mut rasters = 0;
    for f in files {
        let name = f.file_name().unwrap().to_string_lossy().into_owned();
        match f.extension().and_then(|e| e.to_str()) {
            Some("tif" | "asc" | "png") => {
                rasters += 1;
                let got = read_dem(&f, &opts);
                if name == "south_up.tif" {
                    assert!(got.is_ok(), "{name}: {:?}", got.err());
                    continue;
                }
                let e = got.expect_err(&name).to_string();
                assert!(e.contains(&name) && e.contains("Fix:"), "{name}: {e}");
            }
            Some("toml") => {
                let text = std::fs::read_to_string(&f).unwrap_or_default();
                let got = sunward::mission::check(&text, &root, &|_: &std::path::Path| true);
                assert!(!got.expect_err(&name).is_empty(), "{name}");
            }
            _ => {}
        }
    }
    assert!(
        rasters >= 11,
        "only {rasters} rasters under {}",
        root.display()
    );
}

// ---------------------------------------------------------------------------------------
// Inputs the fuzzers (fuzz/) turned up, kept in tests/data/bad/fuzz/ (README there).
// None crashed; each had a message that did not say what was wrong.

/// `sunward terrain info` on the kept input `name` (copied into a scratch folder) gives
/// exit code 2 and exactly `want` after the file name.
fn check_fuzz_found(name: &str, extra: &[&str], want: &str) {
    let s = Scratch::new();
    let kept = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/data/bad/fuzz");
    std::fs::copy(kept.join(name), s.path(name)).unwrap();
    let mut args = vec!["terrain", "info", name];
    args.extend(extra);
    check_refused(&s, &args, &format!("{name}: {want}"));
}

/// A BigTIFF header whose first-IFD offset is beyond what a seek can reach: the
/// operating system's "Invalid argument (os error 22)" came through as the message.
#[test]
fn fuzz_found_bigtiff_offset_beyond_addressable() {
    check_fuzz_found(
        "bigtiff_ifd_offset_beyond_addressable.tif",
        &[],
        "not a readable GeoTIFF: the file ends before the data its header declares \
         (truncated or damaged). Fix: check that the file is complete and is a TIFF \
         (gdalinfo shows it)",
    );
}

/// A ModelPixelScale of 3e-312 map units: read as a grid of 3e-312 m cells, whose slopes
/// are all 90°; now refused by the cell-size check.
#[test]
fn fuzz_found_denormal_pixel_height() {
    check_fuzz_found(
        "denormal_pixel_height.tif",
        &[],
        "cells of 420000.00036621094 x 3.14055377063e-312 m, outside 0.0001 m to 1000000 \
         m. Fix: check the cell size in the header or the georeference tags",
    );
}

/// A GDAL_NODATA tag of another TIFF type than ASCII: the message held the decoder's
/// debug dump (`List([])`).
#[test]
fn fuzz_found_nodata_tag_not_text() {
    check_fuzz_found(
        "nodata_tag_not_text.tif",
        &[],
        "not a readable GeoTIFF: the GDAL_NODATA tag (42113) is not text. Fix: set a \
         numeric no-data value with gdal_edit.py -a_nodata VALUE",
    );
}

/// A chunk before IHDR: the message held the decoder's debug dump of the chunk type.
#[test]
fn fuzz_found_png_chunk_before_header() {
    check_fuzz_found(
        "png_chunk_before_header.png",
        &["--cell-m", "1"],
        "not a readable PNG heightmap: the chunk sequence is damaged (a chunk out of place, \
         or a wrong chunk length). Fix: check that the file is a complete PNG",
    );
}

/// One byte that is not UTF-8 in a .asc: "reading failed: stream did not contain valid
/// UTF-8", with no fix.
#[test]
fn fuzz_found_ascii_grid_that_is_not_text() {
    check_fuzz_found(
        "not_text.asc",
        &[],
        "not a readable ESRI ASCII grid: byte 1 is not text (the file is not ASCII or \
         UTF-8). Fix: an ESRI ASCII grid is plain text; check that this is not a binary \
         raster with the wrong extension",
    );
}

// ---------------------------------------------------------------------------------------
// Flags

/// `sun --tilt-deg 200` once named the tilt in radians (3.49...) under a degree name, and
/// a panel azimuth up to ±1000 radians passed. Both are checked and named in degrees.
#[test]
fn panel_plane_flags_are_checked_and_named_in_degrees() {
    let s = Scratch::new();
    let at = [
        "sun",
        "--lat",
        "45",
        "--lon",
        "0",
        "--time",
        "2027-06-21T12:00:00Z",
    ];
    let with = |tilt: &str, az: &str| {
        let mut args = at.to_vec();
        args.extend(["--tilt-deg", tilt, "--panel-azimuth-deg", az]);
        args.into_iter().map(String::from).collect::<Vec<_>>()
    };
    let refused = [
        (
            with("200", "0"),
            "tilt_deg = 200: expected degrees from 0 (flat) to 180 (facing down). Fix: give \
             the panel tilt from horizontal in degrees (--tilt-deg)",
        ),
        (
            with("30", "1000"),
            "panel_azimuth_deg = 1000: expected degrees clockwise from north, -360 to 360. \
             Fix: give the azimuth the panel faces (--panel-azimuth-deg), e.g. 180 for south",
        ),
        (
            with("30", "-360.5"),
            "panel_azimuth_deg = -360.5: expected degrees clockwise from north, -360 to 360. \
             Fix: give the azimuth the panel faces (--panel-azimuth-deg), e.g. 180 for south",
        ),
    ];
    for (args, want) in refused {
        let args: Vec<&str> = args.iter().map(String::as_str).collect();
        check_refused(&s, &args, want);
    }
    for (tilt, az) in [("180", "-360"), ("0", "360"), ("90", "-90")] {
        let args = with(tilt, az);
        let args: Vec<&str> = args.iter().map(String::as_str).collect();
        let (code, err) = s.run(&args);
        assert_eq!(code, 0, "{args:?}: {err}");
    }
}

/// `size --json` on a mission no size can save (polar night, daylight-only driving) once
/// printed the plain-text sentence to stdout. It prints the documented object, with
/// `value` null and the reason, and exits 1.
#[test]
fn size_json_when_no_size_passes_is_still_json() {
    let s = Scratch::new();
    mission(&s, "m.toml", "lat_deg = 45.0", "lat_deg = 80.0");
    let text = std::fs::read_to_string(s.path("m.toml")).unwrap().replace(
        "[battery]",
        "[battery]\ncapacity_wh = 1000.0\nnominal_voltage_v = 25.6",
    );
    s.write(
        "m.toml",
        text + "[seasons]\nmode = \"dates\"\ndates = [\"2027-12-21\"]\n",
    );
    let out = Command::cargo_bin("sunward")
        .unwrap()
        .current_dir(s.dir.path())
        .args(["size", "m.toml", "--what", "battery", "--json", "-q"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(1));
    let v: Value = serde_json::from_slice(&out.stdout).expect("stdout is JSON");
    let mut keys: Vec<&str> = v.as_object().unwrap().keys().map(|k| k.as_str()).collect();
    keys.sort();
    assert_eq!(
        keys,
        [
            "binding_season",
            "binding_time",
            "cautions",
            "error",
            "failing_below",
            "failing_reason",
            "failing_season",
            "key",
            "margin",
            "min_soc",
            "mission_value",
            "simulations",
            "tolerance",
            "unit",
            "value"
        ]
    );
    assert_eq!(v["key"], "battery.capacity_wh");
    assert_eq!(v["value"], Value::Null);
    assert_eq!(v["failing_below"], 1e7);
    assert_eq!(
        v["failing_reason"],
        "did not arrive: no driving hours in the whole run (under a daylight-only policy \
         this is polar night), 0 of 40 m driven"
    );
    let error = v["error"].as_str().unwrap();
    assert!(
        error.starts_with("no battery.capacity_wh up to 10000000 Wh makes every season"),
        "{error}"
    );
}

// ---------------------------------------------------------------------------------------
// Points on the terrain's edge

/// A point exactly on the east or south edge of the terrain was refused as lying outside
/// an extent the message quoted as including it. The extent is closed: [`terrain`]'s
/// corners (0 or 60 in x and y) are accepted by `route` and by `check`; a point beyond
/// the edge is still refused.
#[test]
fn points_on_the_terrains_outer_edge_are_inside() {
    let s = Scratch::new();
    terrain(&s);
    for from in ["60,0", "0,0", "60,60", "0,60", "60,30", "30,0"] {
        let (code, err) = s.run(&[
            "route",
            "--terrain",
            "dem.asc",
            "--from",
            from,
            "--to",
            "31,49",
        ]);
        assert_eq!(code, 0, "--from {from}: {err}");
    }
    check_refused(
        &s,
        &[
            "route",
            "--terrain",
            "dem.asc",
            "--from",
            "60.5,0",
            "--to",
            "31,49",
        ],
        "the start (60.5, 0) lies outside the terrain, which covers x 0 .. 60 and y 0 .. 60 \
         (in the DEM's CRS units). Fix: give a point inside the terrain",
    );
    for start in ["[60.0, 0.0]", "[0.0, 0.0]", "[60.0, 60.0]"] {
        let s = Scratch::new();
        mission(&s, "m.toml", "[31.0, 49.0]", start);
        let (code, err) = s.run(&["check", "m.toml"]);
        assert_eq!(code, 0, "start_m = {start}: {err}");
    }
    let s = Scratch::new();
    mission(&s, "m.toml", "[31.0, 49.0]", "[60.0, -0.5]");
    check_refused(
        &s,
        &["check", "m.toml"],
        "m.toml: the mission file has 1 problem(s):\nm.toml:7:11: route.start_m: start (60, \
         -0.5) lies outside the terrain, which spans x 0 to 60 and y 0 to 60. Fix: give map \
         coordinates inside the terrain (see `sunward terrain info`)",
    );
}

// ---------------------------------------------------------------------------------------
// Output names

/// `terrain slope -o x.png` wrote a GeoTIFF into x.png and `terrain hillshade -o hs.tif`
/// a PNG into hs.tif; sunward could not read either back. An output whose extension is
/// not the format written is refused before any work, and nothing is written.
#[test]
fn terrain_outputs_must_be_named_for_the_format_written() {
    let s = Scratch::new();
    s.write("plane.tif", plane_tif());
    let cases: [(&[&str], &str); 6] = [
        (
            &["terrain", "slope", "plane.tif", "-o", "x.png"],
            "x.png: slope writes a GeoTIFF, but the name ends in .png. Fix: name the file .tif",
        ),
        (
            &["terrain", "aspect", "plane.tif", "-o", "aspect"],
            "aspect: aspect writes a GeoTIFF, but the name has no extension. Fix: name the \
             file .tif",
        ),
        (
            &["terrain", "roughness", "plane.tif", "-o", "r.asc"],
            "r.asc: roughness writes a GeoTIFF, but the name ends in .asc. Fix: name the file \
             .tif",
        ),
        (
            &["terrain", "hillshade", "plane.tif", "-o", "hs.tif"],
            "hs.tif: hillshade writes a PNG picture, but the name ends in .tif. Fix: name the \
             file .png",
        ),
        (
            &["terrain", "horizon", "plane.tif", "-o", "hz.png"],
            "hz.png: horizon writes a GeoTIFF, but the name ends in .png. Fix: name the file \
             .tif",
        ),
        (
            &["terrain", "synth", "--size", "16", "-o", "dem.png"],
            "dem.png: synth writes a GeoTIFF, but the name ends in .png. Fix: name the file \
             .tif",
        ),
    ];
    for (args, want) in cases {
        check_refused(&s, args, want);
        let out = args[args.len() - 1];
        assert!(!s.path(out).exists(), "{out} was written");
    }
    for (args, out) in [
        (
            &["terrain", "slope", "plane.tif", "-o", "S.TIFF"][..],
            "S.TIFF",
        ),
        (
            &["terrain", "hillshade", "plane.tif", "-o", "hs.PNG"][..],
            "hs.PNG",
        ),
    ] {
        let (code, err) = s.run(args);
        assert_eq!(code, 0, "{args:?}: {err}");
        assert!(s.path(out).exists());
    }
    let (code, err) = s.run(&["terrain", "info", "S.TIFF"]);
    assert_eq!(code, 0, "{err}");
}

// ---------------------------------------------------------------------------------------
// Weather files

/// A weather file's gap or empty cell once suggested "a linear gap fill", which no mission
/// key offers. The fix names only what the user can do in the file.
#[test]
fn weather_gaps_and_empty_cells_name_real_remedies() {
    let hours = |skip: &dyn Fn(u32) -> Option<&'static str>| {
        let mut text = String::from("time,ghi_w_m2\n");
        for h in 0..24 {
            if let Some(v) = skip(h) {
                text += &format!("2027-12-21T{h:02}:00:00Z,{v}\n");
            }
        }
        text
    };
    let cases = [
        (
            hours(&|h| (!(5..9).contains(&h)).then_some("0")),
            "w.csv: line 6: gap of 5 h after this line, the largest allowed is 2 x the median \
             step (1 h). Fix: give the missing records (nothing is filled in), or keep only \
             the records on one side of the gap if every season's run lies there",
        ),
        (
            hours(&|h| Some(if h == 3 { "" } else { "0" })),
            "w.csv: line 5: column 2 (ghi_w_m2): the value is missing. Fix: give the value, \
             or delete the row if the rows either side stay within 2 x the median step of \
             each other (nothing is filled in)",
        ),
    ];
    for (csv, want) in cases {
        let s = Scratch::new();
        mission(
            &s,
            "m.toml",
            "[weather]",
            "[weather]\nsky = \"csv\"\nfile = \"w.csv\"",
        );
        s.write("w.csv", csv);
        check_refused(&s, &["check", "m.toml"], want);
        assert!(!want.contains("gap fill"));
    }
}
