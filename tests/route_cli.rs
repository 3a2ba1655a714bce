//! `sunward route` as a black box: the stable JSON keys, outputs that agree with each
//! other, and clear errors (exit code 2) for points outside the grid, unreachable goals
//! and bad rover files.

use std::path::PathBuf;

use assert_cmd::Command;
use serde_json::Value;

fn terrain() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("terrains/vardholm_plateau.tif")
}

fn route(args: &[&str]) -> std::process::Output {
    Command::cargo_bin("sunward")
        .unwrap()
        .arg("route")
        .arg("--terrain")
        .arg(terrain())
        .args(args)
        .output()
        .unwrap()
}

#[test]
fn json_geojson_and_profile_agree() {
    let dir = tempfile::tempdir().unwrap();
    let gj = dir.path().join("route.geojson");
    let csv = dir.path().join("profile.csv");
    let out = route(&[
        "--from",
        "300,300",
        "--to",
        "1500,1200",
        "--via",
        "900,600",
        "--json",
        "--out",
        gj.to_str().unwrap(),
        "--profile",
        csv.to_str().unwrap(),
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    let keys = [
        "length_m",
        "energy_wh",
        "duration_s",
        "max_pitch_deg",
        "max_roll_deg",
        "expanded_nodes",
        "objective",
        "cells",
    ];
    for k in keys {
        assert!(v.get(k).is_some(), "missing {k}");
    }
    assert_eq!(v["objective"], "energy");
    assert_eq!(v["rover"]["mass_kg"], 120.0, "default rover printed");
    // The default rover's limits (20°, 20°, 15°: src/vehicle/rover.rs) as given, not as
    // taken through radians (15° read 14.999999999999998 before).
    assert_eq!(
        v["limits"],
        serde_json::json!({"max_pitch_up_deg": 20.0, "max_pitch_down_deg": 20.0, "max_roll_deg": 15.0})
    );
    assert_eq!(
        v["rover"]["max_roll_deg"], 15.0,
        "the rover's own limits likewise"
    );
    let cells = v["cells"].as_array().unwrap();
    // Start and goal cells: map (300, 300) on 4 m cells with the origin at (0, 2048).
    assert_eq!(cells[0], serde_json::json!([75, 437]));
    assert_eq!(cells[cells.len() - 1], serde_json::json!([375, 212]));
    assert!(
        cells.contains(&serde_json::json!([225, 362])),
        "the waypoint's cell is on the route"
    );

    let text = std::fs::read_to_string(&csv).unwrap();
    let rows: Vec<Vec<f64>> = text
        .lines()
        .skip(1)
        .map(|l| l.split(',').map(|x| x.parse().unwrap()).collect())
        .collect();
    assert_eq!(rows.len(), cells.len());
    let energy: f64 = rows.iter().map(|r| r[7]).sum();
    let time: f64 = rows.iter().map(|r| r[8]).sum();
    // Each CSV row rounds its energy to 1e-6 Wh.
    assert!((energy - v["energy_wh"].as_f64().unwrap()).abs() < 1e-6 * rows.len() as f64);
    assert!((time - v["duration_s"].as_f64().unwrap()).abs() < 1e-2);
    assert!((rows.last().unwrap()[0] - v["length_m"].as_f64().unwrap()).abs() < 1e-2);
    let max_pitch = rows.iter().map(|r| r[4].abs()).fold(0.0, f64::max);
    assert!(max_pitch <= 20.0 + 1e-3, "pitch {max_pitch}");

    let g: Value = serde_json::from_str(&std::fs::read_to_string(&gj).unwrap()).unwrap();
    let f = &g["features"][0];
    assert_eq!(f["geometry"]["type"], "LineString");
    assert_eq!(
        f["geometry"]["coordinates"].as_array().unwrap().len(),
        cells.len()
    );
    assert_eq!(f["properties"]["length_m"], v["length_m"]);
}

#[test]
fn objectives_order_their_own_measure() {
    let run = |o: &str| -> Value {
        let out = route(&[
            "--from",
            "200,1800",
            "--to",
            "1800,300",
            "--json",
            "--objective",
            o,
        ]);
        assert!(out.status.success());
        serde_json::from_slice(&out.stdout).unwrap()
    };
    let (d, t, e) = (run("distance"), run("time"), run("energy"));
    let f = |v: &Value, k: &str| v[k].as_f64().unwrap();
    assert!(
        f(&d, "length_m") <= f(&t, "length_m") + 1e-6
            && f(&d, "length_m") <= f(&e, "length_m") + 1e-6
    );
    assert!(
        f(&t, "duration_s") <= f(&d, "duration_s") + 1e-6
            && f(&t, "duration_s") <= f(&e, "duration_s") + 1e-6
    );
    assert!(
        f(&e, "energy_wh") <= f(&d, "energy_wh") + 1e-9
            && f(&e, "energy_wh") <= f(&t, "energy_wh") + 1e-9
    );
}

#[test]
fn bad_points_limits_and_rovers_are_refused_with_exit_code_2() {
    let check = |args: &[&str], needle: &str| {
        let out = route(args);
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{err}");
        assert!(err.contains(needle), "expected {needle:?} in {err}");
        assert!(!err.contains("panicked"));
    };
    check(
        &["--from", "-5,100", "--to", "1900,1900"],
        "the start (-5, 100) lies outside the terrain",
    );
    check(
        &["--from", "100,100", "--to", "1900,3000"],
        "the goal (1900, 3000) lies outside",
    );
    check(
        &[
            "--from",
            "100,100",
            "--to",
            "1900,1900",
            "--max-pitch-deg",
            "3",
        ],
        "the way is closed by the uphill pitch limit",
    );
    check(
        &[
            "--from",
            "100,100",
            "--to",
            "1900,1900",
            "--max-pitch-deg",
            "95",
        ],
        "--max-pitch-deg = 95 is out of range",
    );
    check(&["--from", "100;100", "--to", "1900,1900"], "is not X,Y");
    let dir = tempfile::tempdir().unwrap();
    let rover = dir.path().join("rover.toml");
    std::fs::write(&rover, "mass_kg = -3\n").unwrap();
    check(
        &[
            "--from",
            "100,100",
            "--to",
            "1900,1900",
            "--rover",
            rover.to_str().unwrap(),
        ],
        "mass_kg",
    );
}

/// Soft soil closes a climb that firm ground allows, and the planner says so: on a plane
/// rising 8° to the north, the demo rover on firm ground drives up; on dry sand the
/// needed thrust exceeds what the soil gives (the vehicle model's traction limit,
/// from about 5° for this rover) and the message names the traction limit.
#[test]
fn traction_limit_closes_a_sandy_climb() {
    let dir = tempfile::tempdir().unwrap();
    let dem = dir.path().join("ramp.asc");
    let (n, cell) = (40usize, 2.0f64);
    let mut text = format!("ncols {n}\nnrows {n}\nxllcorner 0\nyllcorner 0\ncellsize {cell}\n");
    for r in 0..n {
        let z = (n - 1 - r) as f64 * cell * 8f64.to_radians().tan();
        text.push_str(&vec![format!("{z:.4}"); n].join(" "));
        text.push('\n');
    }
    std::fs::write(&dem, text).unwrap();
    let sand = dir.path().join("sand.toml");
    std::fs::write(&sand, "soil = \"dry-sand\"\n").unwrap();
    let run = |extra: &[&str]| {
        Command::cargo_bin("sunward")
            .unwrap()
            .args(["route", "--terrain"])
            .arg(&dem)
            .args(["--from", "40,5", "--to", "40,75"])
            .args(extra)
            .output()
            .unwrap()
    };
    assert!(run(&[]).status.success());
    let out = run(&["--rover", sand.to_str().unwrap()]);
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(
        err.contains("the way is closed by the traction limit"),
        "{err}"
    );
}

/// Unordered sites: the tour starts and ends at the start, visits every site once, and
/// says how the order was found (Held-Karp for up to 10 sites).
#[test]
fn site_tour_visits_every_site_and_returns() {
    let out = route(&[
        "--from",
        "220,260",
        "--site",
        "900,1500",
        "--site",
        "1700,400",
        "--site",
        "1500,1800",
        "--json",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    let visits: Vec<String> = v["site_order"]["visits"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| s.as_str().unwrap().to_string())
        .collect();
    assert_eq!(visits.len(), 5);
    assert_eq!(visits[0], "start");
    let mut middle = visits[1..4].to_vec();
    middle.sort();
    assert_eq!(middle, ["site 1", "site 2", "site 3"]);
    assert_eq!(v["site_order"]["method"], "held_karp");
    let cells = v["cells"].as_array().unwrap();
    assert_eq!(
        cells[0],
        cells[cells.len() - 1],
        "the tour returns to the start"
    );
}

/// Keep-out polygons (GeoJSON in the DEM's CRS): no route cell lies inside, and a start
/// inside one is refused with the reason.
#[test]
fn keep_out_areas_are_avoided() {
    let dir = tempfile::tempdir().unwrap();
    let ko = dir.path().join("keep_out.geojson");
    std::fs::write(
        &ko,
        r#"{"type":"FeatureCollection","features":[{"type":"Feature","properties":{},"geometry":
        {"type":"Polygon","coordinates":[[[600,400],[1400,400],[1400,1600],[600,1600],[600,400]]]}}]}"#,
    )
    .unwrap();
    let ko = ko.to_str().unwrap();
    let out = route(&[
        "--from",
        "220,260",
        "--to",
        "1820,1760",
        "--keep-out",
        ko,
        "--json",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    for c in v["cells"].as_array().unwrap() {
        // Cell centre in map metres (4 m cells, origin (0, 2048)).
        let x = c[0].as_f64().unwrap() * 4.0 + 2.0;
        let y = 2048.0 - c[1].as_f64().unwrap() * 4.0 - 2.0;
        assert!(
            !(x > 600.0 && x < 1400.0 && y > 400.0 && y < 1600.0),
            "cell {c} inside the keep-out"
        );
    }
    let out = route(&["--from", "1000,1000", "--to", "1820,1760", "--keep-out", ko]);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("blocked by the keep-out area"));
}

/// Longitude/latitude route points on a UTM grid (EPSG:32633) land in the cell that holds
/// their projection; on a local grid they are refused.
#[test]
fn lonlat_points_on_a_utm_grid() {
    use sunward::terrain::utm::{inverse, UtmZone};
    let dem = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/reference/terrain/tf_f32_transform.tif");
    let zone = UtmZone::from_epsg(32633).unwrap();
    let (lat, lon) = inverse(zone, 430_010.0, 5_019_987.5).unwrap();
    let ll = format!("{},{}", lon.to_degrees(), lat.to_degrees());
    let out = Command::cargo_bin("sunward")
        .unwrap()
        .args(["route", "--terrain"])
        .arg(&dem)
        .args([
            "--from-lonlat",
            &ll,
            "--to",
            "430070,5019940",
            "--json",
            "--max-pitch-deg",
            "60",
            "--max-roll-deg",
            "60",
        ])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    // 4 m x 5 m cells from (430000, 5020000): (430010, 5019987.5) is the centre of column
    // 2, row 2.
    assert_eq!(v["cells"][0], serde_json::json!([2, 2]));
    let out = route(&["--from-lonlat", "10,60", "--to", "1820,1760"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("neither geographic nor UTM"));
}
