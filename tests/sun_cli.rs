//! Black-box checks of `sunward sun`: the --json keys are exactly the documented ones and
//! the values agree with the SPA report's worked example (NREL/TP-560-34302, Table A5.1:
//! apparent zenith 50.11162°, azimuth 194.34024°); the series writes the documented
//! header and one row per step.

use assert_cmd::Command;

fn sun(args: &[&str]) -> std::process::Output {
    Command::cargo_bin("sunward")
        .unwrap()
        .arg("sun")
        .args(args)
        .output()
        .unwrap()
}

#[test]
fn json_keys_are_exactly_the_documented_ones() {
    let out = sun(&[
        "--lat",
        "39.742476",
        "--lon",
        "-105.1786",
        "--time",
        "2003-10-17T19:30:30Z",
        "--elevation-m",
        "1830.14",
        "--pressure-hpa",
        "820",
        "--temperature-c",
        "11",
        "--delta-t-s",
        "67",
        "--json",
        "--tilt-deg",
        "30",
        "--panel-azimuth-deg",
        "170",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let mut keys: Vec<&str> = v.as_object().unwrap().keys().map(String::as_str).collect();
    keys.sort_unstable();
    let mut want = vec![
        "zenith_deg",
        "azimuth_deg",
        "elevation_deg",
        "apparent_zenith_deg",
        "extraterrestrial_w_m2",
        "airmass",
        "ghi_w_m2",
        "dni_w_m2",
        "dhi_w_m2",
        "sunrise",
        "transit",
        "sunset",
        "poa_w_m2",
    ];
    want.sort_unstable();
    assert_eq!(keys, want);
    assert!((v["apparent_zenith_deg"].as_f64().unwrap() - 50.11162).abs() < 0.5e-5);
    assert!((v["azimuth_deg"].as_f64().unwrap() - 194.34024).abs() < 0.5e-5);
}

#[test]
fn polar_night_reports_null_rise_and_set() {
    let out = sun(&[
        "--lat",
        "78.2",
        "--lon",
        "15.6",
        "--time",
        "2025-12-21T11:00:00Z",
        "--json",
    ]);
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert!(v["sunrise"].is_null() && v["sunset"].is_null());
    assert!(v.get("poa_w_m2").is_none());
    assert_eq!(v["ghi_w_m2"].as_f64(), Some(0.0));
}

#[test]
fn series_writes_header_and_rows_and_bad_input_exits_2() {
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("s.csv");
    let out = sun(&[
        "--lat",
        "-33.9",
        "--lon",
        "18.4",
        "--from",
        "2031-03-01",
        "--to",
        "2031-03-02",
        "--step-min",
        "30",
        "-o",
        f.to_str().unwrap(),
    ]);
    assert!(out.status.success());
    let text = std::fs::read_to_string(&f).unwrap();
    let mut lines = text.lines();
    assert_eq!(
        lines.next().unwrap(),
        "time_utc,apparent_zenith_deg,azimuth_deg,ghi_w_m2,dni_w_m2,dhi_w_m2,poa_w_m2"
    );
    assert_eq!(lines.count(), 96);
    let bad = sun(&[
        "--lat",
        "95",
        "--lon",
        "0",
        "--time",
        "2031-03-01T00:00:00Z",
    ]);
    assert_eq!(bad.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&bad.stderr).contains("latitude"));
}

/// Dates outside the SPA's years (−2000 to 6000, NREL/TP-560-34302 abstract) and a ΔT
/// beyond ±8000 s are refused with the option named (exit 2); the ends are accepted.
#[test]
fn dates_and_delta_t_outside_the_spa_are_refused() {
    let base = ["--lat", "45", "--lon", "0"];
    let run = |extra: &[&str]| {
        let args: Vec<&str> = base.iter().chain(extra).copied().collect();
        sun(&args)
    };
    let late = run(&["--time", "6001-01-01T00:00:00Z"]);
    assert_eq!(late.status.code(), Some(2));
    let msg = String::from_utf8_lossy(&late.stderr);
    assert!(msg.contains("--time") && msg.contains("6001"), "{msg}");
    let series = run(&["--from", "1990-01-01", "--to", "7000-01-01", "-o", "x.csv"]);
    assert_eq!(series.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&series.stderr).contains("--to"));
    let dt = run(&["--time", "2027-01-01T00:00:00Z", "--delta-t-s", "1e9"]);
    assert_eq!(dt.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&dt.stderr).contains("--delta-t-s"));
    assert!(run(&["--time", "6000-06-01T12:00:00Z", "--json"])
        .status
        .success());
}
