//! Terrain against the outside world: GDAL 3.6.2 (`gdaldem`, `gdalinfo`, its Python
//! bindings) and Python's tifffile. Every expected value here was made by
//! `tests/reference/terrain/make_reference.sh` (sources, versions and tolerances in that
//! folder's README.md); none is typed by hand.
//!
//! Each runner checks every case and reports all failures at once.

use std::path::{Path, PathBuf};

use serde_json::Value;
use sunward::terrain::io::{ascii, read_dem, ReadOptions};
use sunward::terrain::{hillshade, roughness, slope, CrsKind, Dem, Grid};

fn refdir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/reference/terrain")
}

fn read(path: &Path) -> Dem {
    read_dem(path, &ReadOptions::default()).unwrap_or_else(|e| panic!("{e}"))
}

/// An ESRI ASCII grid written by GDAL, read raw (no-data stays NaN).
fn read_asc(name: &str) -> Dem {
    ascii::read(&refdir().join(name), u64::MAX).unwrap_or_else(|e| panic!("{e}"))
}

fn report(failures: Vec<String>) {
    assert!(
        failures.is_empty(),
        "{} failures:\n{}",
        failures.len(),
        failures.join("\n")
    );
}

/// Compares `ours` with GDAL's grid where GDAL has a value; returns the failures.
fn compare(name: &str, ours: &Grid<f32>, gdal: &Dem, tol: f64, circular: bool) -> Vec<String> {
    let mut out = Vec::new();
    let mut compared = 0;
    for row in 0..gdal.height() {
        for col in 0..gdal.width() {
            let want = gdal.get(col, row) as f64;
            if want.is_nan() {
                continue;
            }
            compared += 1;
            let got = ours.get(col, row) as f64;
            let mut d = (got - want).abs();
            if circular {
                d = d.min(360.0 - d);
            }
            if d.is_nan() || d > tol {
                out.push(format!(
                    "{name} ({col},{row}): ours {got} gdal {want} (tol {tol})"
                ));
            }
        }
    }
    if compared == 0 {
        out.push(format!("{name}: nothing compared"));
    }
    out
}

fn degrees(g: &Grid<f32>) -> Grid<f32> {
    let data = g.data().iter().map(|v| v.to_degrees()).collect();
    Grid::from_vec(g.width(), g.height(), data, g.georef.clone())
}

/// Slope tolerances from the reference README (GDAL sums in Float32: the error grows
/// with elevation / cell size).
const SLOPE_CASES: &[(&str, f64)] = &[
    ("rand40x30", 2e-4),
    ("rand25x25_nodata", 2e-3),
    ("rect30x20", 1e-4),
    ("plateau20x20", 1e-5),
];

/// Horn slope equals `gdaldem slope -alg Horn` wherever GDAL gives a value.
#[test]
fn slope_matches_gdaldem() {
    let mut failures = Vec::new();
    for &(name, tol) in SLOPE_CASES {
        let dem = read(&refdir().join(format!("{name}.asc")));
        let ours = degrees(&slope::slope_map(&dem));
        failures.extend(compare(
            name,
            &ours,
            &read_asc(&format!("{name}.slope.asc")),
            tol,
            false,
        ));
    }
    report(failures);
}

/// At edge cells away from the corners, GDAL's `-compute_edges` extrapolates linearly,
/// as sunward does; so there the edge values agree too (grids without no-data).
#[test]
fn slope_at_edges_matches_gdaldem_compute_edges_off_the_corners() {
    let mut failures = Vec::new();
    for &(name, tol) in SLOPE_CASES.iter().filter(|c| c.0 != "rand25x25_nodata") {
        let dem = read(&refdir().join(format!("{name}.asc")));
        let ours = degrees(&slope::slope_map(&dem));
        let mut gdal = read_asc(&format!("{name}.slope_edges.asc"));
        let (w, h) = (gdal.width(), gdal.height());
        for (c, r) in [(0, 0), (w - 1, 0), (0, h - 1), (w - 1, h - 1)] {
            gdal.set(c, r, f32::NAN);
        }
        failures.extend(compare(name, &ours, &gdal, tol, false));
    }
    report(failures);
}

/// Aspect equals `gdaldem aspect` (square cells only: GDAL 3.6 ignores the cell size in
/// aspect), compared around the circle; where GDAL marks an interior cell flat, sunward
/// gives no aspect either.
#[test]
fn aspect_matches_gdaldem() {
    let mut failures = Vec::new();
    for name in ["rand40x30", "rand25x25_nodata", "plateau20x20"] {
        let dem = read(&refdir().join(format!("{name}.asc")));
        let ours = degrees(&slope::aspect_map(&dem));
        let gdal = read_asc(&format!("{name}.aspect.asc"));
        failures.extend(compare(name, &ours, &gdal, 0.05, true));
        let slope_gdal = read_asc(&format!("{name}.slope.asc"));
        for row in 0..dem.height() {
            for col in 0..dem.width() {
                let interior_valid = !slope_gdal.get(col, row).is_nan();
                if interior_valid && gdal.get(col, row).is_nan() && !ours.get(col, row).is_nan() {
                    failures.push(format!(
                        "{name} ({col},{row}): GDAL flat, ours {}",
                        ours.get(col, row)
                    ));
                }
            }
        }
    }
    report(failures);
}

/// Hillshade grey levels equal `gdaldem hillshade -az 315 -alt 45` within one level
/// (rounding of GDAL's Float32 sums).
#[test]
fn hillshade_matches_gdaldem() {
    let mut failures = Vec::new();
    for name in ["rand40x30", "rand25x25_nodata", "plateau20x20"] {
        let dem = read(&refdir().join(format!("{name}.asc")));
        let shade = hillshade::hillshade(&dem, 315f64.to_radians(), 45f64.to_radians());
        let grey = hillshade::to_grey(&shade);
        let ours = Grid::from_vec(
            dem.width(),
            dem.height(),
            grey.iter().map(|&g| g as f32).collect(),
            dem.georef.clone(),
        );
        let mut gdal = read_asc(&format!("{name}.hillshade.asc"));
        for v in gdal.data_mut() {
            if *v == 0.0 {
                *v = f32::NAN; // GDAL's no-data grey level
            }
        }
        failures.extend(compare(name, &ours, &gdal, 1.0, false));
    }
    report(failures);
}

/// Roughness (3 × 3 range, Wilson et al. 2007) equals `gdaldem roughness` where GDAL
/// gives a value (GDAL leaves edges and windows touching no-data empty).
#[test]
fn roughness_matches_gdaldem() {
    let mut failures = Vec::new();
    for name in ["rand40x30", "rand25x25_nodata", "plateau20x20", "rect30x20"] {
        let dem = read(&refdir().join(format!("{name}.asc")));
        let ours = roughness::roughness_map(&dem);
        failures.extend(compare(
            name,
            &ours,
            &read_asc(&format!("{name}.roughness.asc")),
            1e-3,
            false,
        ));
    }
    report(failures);
}

fn num(v: &Value, key: &str) -> f64 {
    v[key].as_f64().unwrap_or_else(|| panic!("{key} missing"))
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-9 * a.abs().max(b.abs()).max(1.0)
}

/// Checks one GeoTIFF against what GDAL read from it; returns the failures.
fn check_geotiff(expect_path: &Path) -> Vec<String> {
    let text = std::fs::read_to_string(expect_path).unwrap();
    let e: Value = serde_json::from_str(&text).unwrap();
    let file = e["file"].as_str().unwrap();
    let mut path = refdir().join(file);
    if !path.exists() {
        path = Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("tests/data")
            .join(file);
    }
    let dem = match read_dem(&path, &ReadOptions::default()) {
        Ok(d) => d,
        Err(err) => return vec![format!("{file}: {err}")],
    };
    let mut f = Vec::new();
    let g = &dem.georef;
    let mut want = |what: &str, ok: bool, detail: String| {
        if !ok {
            f.push(format!("{file}: {what}: {detail}"));
        }
    };
    want(
        "width",
        dem.width() as f64 == num(&e, "width"),
        format!("{}", dem.width()),
    );
    want(
        "height",
        dem.height() as f64 == num(&e, "height"),
        format!("{}", dem.height()),
    );
    for (k, v) in [
        ("origin_x", g.origin_x),
        ("origin_y", g.origin_y),
        ("pixel_width", g.pixel_width),
        ("pixel_height", g.pixel_height),
    ] {
        want(
            k,
            close(v, num(&e, k)),
            format!("ours {v} gdal {}", num(&e, k)),
        );
    }
    let epsg = e["epsg"].as_u64().map(|c| c as u32);
    want(
        "epsg",
        g.crs.epsg == epsg,
        format!("ours {:?} gdal {epsg:?}", g.crs.epsg),
    );
    let geographic = e["geographic"].as_bool().unwrap();
    want(
        "geographic",
        (g.crs.kind == CrsKind::Geographic) == geographic,
        format!("ours {:?}", g.crs.kind),
    );
    let nodata_ok = match &e["nodata"] {
        Value::Null => g.nodata.is_none(),
        Value::String(s) if s == "nan" => g.nodata.is_some_and(f64::is_nan),
        v => g.nodata == v.as_f64(),
    };
    want(
        "nodata",
        nodata_ok,
        format!("ours {:?} gdal {}", g.nodata, e["nodata"]),
    );
    let rows = e["values"].as_array().unwrap();
    let mut bad = 0;
    for (r, row) in rows.iter().enumerate() {
        for (c, v) in row.as_array().unwrap().iter().enumerate() {
            let got = dem.get(c, r);
            let ok = match v.as_f64() {
                None => got.is_nan(),
                Some(x) => got == x as f32,
            };
            bad += usize::from(!ok);
        }
    }
    want("values", bad == 0, format!("{bad} cells differ"));
    f
}

/// GeoTIFFs written by tifffile and by GDAL (Float32/Float64/Int16/UInt16/Int32; strips
/// and tiles; LZW, Deflate, predictors; PixelIsPoint; ModelTransformation; geographic;
/// big-endian; BigTIFF; NaN and -9999 no-data) read with the values and georeference
/// that GDAL's own reader gives.
#[test]
fn geotiffs_from_independent_writers_read_like_gdal() {
    let mut cases: Vec<PathBuf> = std::fs::read_dir(refdir())
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.to_string_lossy().ends_with(".expect.json"))
        .collect();
    cases.sort();
    assert!(
        cases.len() >= 15,
        "expected the reference set, found {}",
        cases.len()
    );
    let failures: Vec<String> = cases.iter().flat_map(|p| check_geotiff(p)).collect();
    report(failures);
}

/// The real Olinda DEM (Debian r-cran-stars, Apache-2.0, UTM 25S with no EPSG code):
/// size, geotransform and statistics as `gdalinfo -json -stats` gives them, pixel values
/// as `gdallocationinfo` gives them, and slope as `gdaldem slope`.
#[test]
fn olinda_reads_like_gdalinfo_and_slopes_like_gdaldem() {
    let data = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/olinda_dem_utm25s.tif");
    let dem = read(&data);
    let info: Value = serde_json::from_str(
        &std::fs::read_to_string(refdir().join("olinda.gdalinfo.json")).unwrap(),
    )
    .unwrap();
    let mut f = Vec::new();
    let size = &info["size"];
    if dem.width() as u64 != size[0].as_u64().unwrap()
        || dem.height() as u64 != size[1].as_u64().unwrap()
    {
        f.push(format!("size {} x {}", dem.width(), dem.height()));
    }
    let gt: Vec<f64> = info["geoTransform"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_f64().unwrap())
        .collect();
    let g = &dem.georef;
    for (name, ours, want) in [
        ("origin_x", g.origin_x, gt[0]),
        ("pixel_width", g.pixel_width, gt[1]),
        ("origin_y", g.origin_y, gt[3]),
        ("pixel_height", g.pixel_height, -gt[5]),
    ] {
        if !close(ours, want) {
            f.push(format!("{name}: ours {ours} gdal {want}"));
        }
    }
    if g.crs.epsg.is_some() || g.crs.kind != CrsKind::Projected {
        f.push(format!(
            "crs: ours {:?} {:?}, gdal: user-defined projected",
            g.crs.epsg, g.crs.kind
        ));
    }
    let cell = dem.cell_size();
    if !close(cell.dx_m, gt[1]) {
        f.push(format!("cell size {} m", cell.dx_m));
    }
    let meta = &info["bands"][0]["metadata"][""];
    let stat = |k: &str| meta[k].as_str().unwrap().parse::<f64>().unwrap();
    let (lo, hi, mean) = dem.stats().unwrap();
    if lo != stat("STATISTICS_MINIMUM") || hi != stat("STATISTICS_MAXIMUM") {
        f.push(format!("min/max {lo}/{hi}"));
    }
    if (mean - stat("STATISTICS_MEAN")).abs() > 1e-9 {
        f.push(format!("mean {mean} vs {}", stat("STATISTICS_MEAN")));
    }
    let samples = std::fs::read_to_string(refdir().join("olinda.samples.csv")).unwrap();
    for line in samples.lines().skip(1) {
        let v: Vec<f64> = line.split(',').map(|s| s.trim().parse().unwrap()).collect();
        let got = dem.get(v[0] as usize, v[1] as usize) as f64;
        if got != v[2] {
            f.push(format!(
                "pixel ({}, {}): ours {got} gdal {}",
                v[0], v[1], v[2]
            ));
        }
    }
    let ours = degrees(&slope::slope_map(&dem));
    f.extend(compare(
        "olinda slope",
        &ours,
        &read_asc("olinda.slope.asc"),
        1e-5,
        false,
    ));
    report(f);
}
