//! The terrain commands as a black box: outputs, stable JSON keys, and one clear error
//! with exit code 2 for every class of bad input.

use std::path::{Path, PathBuf};
use std::process::Command as StdCommand;

use assert_cmd::Command;
use serde_json::Value;
use sunward::terrain::io::{ascii, geotiff, read_dem, PngScale, ReadOptions};

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn data(rel: &str) -> PathBuf {
    root().join("tests/data").join(rel)
}

fn sunward() -> Command {
    Command::cargo_bin("sunward").unwrap()
}

/// Runs `sunward terrain info FILE`, expects exit code 2 and a message that names the
/// file and contains every `needle`.
fn check_refused(file: &Path, extra: &[&str], needles: &[&str]) {
    let out = sunward()
        .args(["terrain", "info"])
        .arg(file)
        .args(extra)
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{}: {err}", file.display());
    let name = file.file_name().unwrap().to_string_lossy();
    assert!(
        err.contains(name.as_ref()),
        "message does not name the file: {err}"
    );
    for n in needles {
        assert!(
            err.contains(n),
            "{}: expected {n:?} in: {err}",
            file.display()
        );
    }
    assert!(err.contains("Fix:"), "message gives no fix: {err}");
    assert!(!err.contains("panicked"), "{err}");
}

#[test]
fn bad_rasters_get_one_clear_error_each() {
    let cases: &[(&str, &[&str])] = &[
        ("bad/truncated.tif", &["ends before the data"]),
        ("bad/garbage_after_magic.tif", &["not a readable GeoTIFF"]),
        ("bad/cint16.tif", &["complex integer"]),
        ("bad/rgb8.tif", &["exactly one band"]),
        (
            "bad/huge_dims.tif",
            &["1000000 x 1000000", "more than the limit"],
        ),
        ("bad/rotated.tif", &["rotated"]),
        (
            "bad/all_nodata.tif",
            &["every one of the 20 cells is no-data"],
        ),
        (
            "bad/all_nodata.asc",
            &["every one of the 20 cells is no-data"],
        ),
        (
            "bad/bad_header.asc",
            &["line 2", "\"three\" is not a number"],
        ),
        (
            "bad/short_data.asc",
            &["found 17 values", "ncols x nrows = 20"],
        ),
    ];
    for (file, needles) in cases {
        check_refused(&data(file), &[], needles);
    }
}

#[test]
fn limits_unknown_formats_and_missing_files_are_refused() {
    let olinda = data("olinda_dem_utm25s.tif");
    check_refused(
        &olinda,
        &["--max-cells", "1000"],
        &["12321 cells", "--max-cells"],
    );
    let dir = tempfile::tempdir().unwrap();
    let txt = dir.path().join("heights.xyz");
    std::fs::write(&txt, "1 2 3").unwrap();
    check_refused(&txt, &[], &["unknown raster format"]);
    let out = sunward()
        .args(["terrain", "info", "no/such/dem.tif"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("no/such/dem.tif"));
}

/// A south-up grid is flipped to north-up. Check values from GDAL 3.6.2:
/// `gdallocationinfo -valonly -geoloc south_up.tif 420015 5009475` → 99.6050033569336
/// and `... 420100 5009800` → 92.2300033569336.
#[test]
fn south_up_grid_reads_north_up() {
    let dem = read_dem(&data("bad/south_up.tif"), &ReadOptions::default()).unwrap();
    let g = &dem.georef;
    assert_eq!((g.origin_x, g.origin_y), (420_000.0, 5_010_000.0));
    for (x, y, want) in [
        (420_015.0, 5_009_475.0, 99.6050033569336f64),
        (420_100.0, 5_009_800.0, 92.2300033569336),
    ] {
        let (px, py) = g.to_pixel(x, y);
        assert_eq!(dem.get(px as usize, py as usize), want as f32);
    }
}

#[test]
fn info_json_has_the_stable_keys() {
    let out = sunward()
        .args(["terrain", "info", "--json"])
        .arg(data("olinda_dem_utm25s.tif"))
        .output()
        .unwrap();
    assert!(out.status.success());
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    for key in [
        "width",
        "height",
        "cell_size_m",
        "crs",
        "z_min_m",
        "z_max_m",
        "z_mean_m",
        "nodata_cells",
        "slope_mean_deg",
        "slope_max_deg",
    ] {
        assert!(!v[key].is_null(), "missing {key}");
    }
    // Values from gdalinfo -json -stats (tests/reference/terrain/olinda.gdalinfo.json).
    assert_eq!(v["width"], 111);
    assert_eq!(v["z_min_m"], -1.0);
    assert_eq!(v["z_max_m"], 88.0);
    assert!((v["cell_size_m"].as_f64().unwrap() - 89.99406734945116).abs() < 1e-9);
}

fn tmp(dir: &tempfile::TempDir, name: &str) -> PathBuf {
    dir.path().join(name)
}

#[test]
fn slope_horizon_hillshade_and_synth_write_readable_outputs() {
    let dir = tempfile::tempdir().unwrap();
    let dem_path = data("olinda_dem_utm25s.tif");
    let dem = read_dem(&dem_path, &ReadOptions::default()).unwrap();

    let slope = tmp(&dir, "slope.tif");
    sunward()
        .args(["terrain", "slope"])
        .arg(&dem_path)
        .arg("-o")
        .arg(&slope)
        .assert()
        .success();
    let s = read_dem(&slope, &ReadOptions::default()).unwrap();
    assert_eq!((s.width(), s.height()), (111, 111));
    assert_eq!(s.georef.origin_x, dem.georef.origin_x);
    assert_eq!(s.georef.crs.geokeys, dem.georef.crs.geokeys);

    let hz = tmp(&dir, "horizon.tif");
    sunward()
        .args(["terrain", "horizon", "--sectors", "8"])
        .arg(&dem_path)
        .arg("-o")
        .arg(&hz)
        .assert()
        .success();
    assert!(std::fs::metadata(&hz).unwrap().len() > 111 * 111 * 8 * 4);

    let hs = tmp(&dir, "shade.png");
    sunward()
        .args(["terrain", "hillshade"])
        .arg(&dem_path)
        .arg("-o")
        .arg(&hs)
        .assert()
        .success();
    let png = read_dem(
        &hs,
        &ReadOptions {
            png: Some(PngScale {
                cell_m: 1.0,
                z_scale_m: 1.0,
                z_offset_m: 0.0,
                nodata_raw: None,
            }),
            ..ReadOptions::default()
        },
    )
    .unwrap();
    assert_eq!((png.width(), png.height()), (111, 111));

    let a = tmp(&dir, "a.tif");
    let b = tmp(&dir, "b.tif");
    for p in [&a, &b] {
        sunward()
            .args([
                "terrain", "synth", "--size", "64", "--cell-m", "3", "--seed", "9", "-o",
            ])
            .arg(p)
            .assert()
            .success();
    }
    assert_eq!(
        std::fs::read(&a).unwrap(),
        std::fs::read(&b).unwrap(),
        "synth is not deterministic"
    );
}

#[test]
fn outputs_never_overwrite_inputs_and_bad_parameters_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    let dem = tmp(&dir, "dem.tif");
    std::fs::copy(data("olinda_dem_utm25s.tif"), &dem).unwrap();
    let before = std::fs::read(&dem).unwrap();
    let out = sunward()
        .args(["terrain", "slope"])
        .arg(&dem)
        .arg("-o")
        .arg(&dem)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("refusing to overwrite an input"));
    assert_eq!(std::fs::read(&dem).unwrap(), before);

    // 0, 1 and 100 000 sectors: refused by the range 4 to 360, not by a later error.
    for n in ["0", "1", "100000"] {
        let out = sunward()
            .args(["terrain", "horizon", "--sectors", n])
            .arg(&dem)
            .arg("-o")
            .arg(tmp(&dir, "h.tif"))
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(2));
        let msg = String::from_utf8_lossy(&out.stderr);
        assert!(msg.contains("sectors from 4 to 360"), "{msg}");
    }
    let out = sunward()
        .args(["terrain", "slope"])
        .arg(&dem)
        .arg("-o")
        .arg(dir.path().join("missing/dir/s.tif"))
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("could not write"));
}

/// A 16-bit PNG heightmap: elevation = offset + scale × raw, cell size as given, and the
/// raw no-data value becomes no-data.
#[test]
fn png_heightmap_scale_offset_and_nodata() {
    let dir = tempfile::tempdir().unwrap();
    let p = tmp(&dir, "h.png");
    let raw: Vec<u16> = vec![0, 1000, 65535, 7, 500, 2000];
    let f = std::fs::File::create(&p).unwrap();
    sunward::terrain::io::png::write_gray16(f, 3, 2, &raw).unwrap();
    let scale = PngScale {
        cell_m: 0.5,
        z_scale_m: 0.01,
        z_offset_m: 100.0,
        nodata_raw: Some(7),
    };
    let dem = sunward::terrain::io::png::read(&p, &scale, 100).unwrap();
    assert_eq!(dem.get(1, 0), 110.0);
    assert!((dem.get(2, 0) - 755.35).abs() < 1e-3);
    assert!(dem.get(0, 1).is_nan());
    assert_eq!(dem.cell_size().dx_m, 0.5);
    let out = sunward()
        .args(["terrain", "info"])
        .arg(&p)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("--cell-m"));
    sunward()
        .args([
            "terrain",
            "info",
            "--cell-m",
            "0.5",
            "--z-scale",
            "0.01",
            "--png-nodata",
            "7",
        ])
        .arg(&p)
        .assert()
        .success();
}

/// Our GeoTIFF writer's output read back by GDAL (an independent reader): size,
/// geotransform, no-data, CRS and every value (through `gdal_translate -of AAIGrid`).
/// Runs where GDAL is installed; `.ci/run` installs it and sets
/// SUNWARD_REFERENCE_TOOLS=1, which makes a missing GDAL a failure instead of a skip.
#[test]
fn our_geotiff_reads_back_in_gdal() {
    let required = std::env::var("SUNWARD_REFERENCE_TOOLS").is_ok_and(|v| v == "1");
    let have = StdCommand::new("gdalinfo")
        .arg("--version")
        .output()
        .is_ok_and(|o| o.status.success());
    if !have {
        assert!(
            !required,
            "SUNWARD_REFERENCE_TOOLS=1 but gdalinfo is not installed"
        );
        eprintln!("NOT RUN: our_geotiff_reads_back_in_gdal needs GDAL (apt-get install gdal-bin)");
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let src = read_dem(&data("olinda_dem_utm25s.tif"), &ReadOptions::default()).unwrap();
    let mut dem = src.clone();
    dem.set(5, 7, f32::NAN);
    let out = tmp(&dir, "ours.tif");
    let mut f = std::fs::File::create(&out).unwrap();
    geotiff::write(
        &mut f,
        &dem.georef,
        dem.width(),
        dem.height(),
        &[dem.data()],
    )
    .unwrap();
    drop(f);
    let info = StdCommand::new("gdalinfo")
        .arg("-json")
        .arg(&out)
        .output()
        .unwrap();
    assert!(
        info.status.success(),
        "{}",
        String::from_utf8_lossy(&info.stderr)
    );
    let v: Value = serde_json::from_slice(&info.stdout).unwrap();
    assert_eq!(v["size"][0], 111);
    let gt: Vec<f64> = v["geoTransform"]
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect();
    assert_eq!(
        gt,
        vec![
            src.georef.origin_x,
            src.georef.pixel_width,
            0.0,
            src.georef.origin_y,
            0.0,
            -src.georef.pixel_height
        ]
    );
    assert_eq!(v["bands"][0]["noDataValue"], -9999.0);
    let wkt = v["coordinateSystem"]["wkt"].as_str().unwrap();
    assert!(wkt.contains("UTM Zone 25, Southern Hemisphere"), "{wkt}");
    let asc = tmp(&dir, "back.asc");
    let t = StdCommand::new("gdal_translate")
        .args(["-q", "-of", "AAIGrid"])
        .arg(&out)
        .arg(&asc)
        .output()
        .unwrap();
    assert!(t.status.success());
    let back = ascii::read(&asc, u64::MAX).unwrap();
    for (a, b) in dem.data().iter().zip(back.data()) {
        assert!(a == b || (a.is_nan() && b.is_nan()), "{a} vs {b}");
    }
}
