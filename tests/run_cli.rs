//! `sunward run` end to end on the bundled survey mission: summer passes, winter fails
//! for the reason the physics gives (polar night: no light to recharge, the heater drains
//! the pack), outputs parse, and --fail-on-infeasible exits 1.

use std::path::PathBuf;

use assert_cmd::Command;
use serde_json::Value;

fn mission() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("missions/vardholm_survey.toml")
}

#[test]
fn survey_mission_summer_passes_winter_fails() {
    let dir = tempfile::tempdir().unwrap();
    let out = Command::cargo_bin("sunward")
        .unwrap()
        .arg("run")
        .arg(mission())
        .arg("--out")
        .arg(dir.path())
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: Value =
        serde_json::from_str(&std::fs::read_to_string(dir.path().join("summary.json")).unwrap())
            .unwrap();
    assert_eq!(v["schema_version"], 1);
    let seasons = v["seasons"].as_array().unwrap();
    assert_eq!(seasons.len(), 4);
    let by = |n: &str| {
        seasons
            .iter()
            .find(|s| s["name"].as_str().unwrap().starts_with(n))
            .unwrap()
    };
    assert_eq!(by("summer")["feasible"], true, "{}", by("summer")["reason"]);
    let winter = by("winter");
    assert_eq!(winter["feasible"], false);
    assert!(
        winter["energy_generated_wh"].as_f64().unwrap() < 1.0,
        "polar night: no light"
    );
    assert!(!winter["stranded"].is_null(), "{}", winter["reason"]);
    for name in [
        "daily-budget.csv",
        "route.geojson",
        "profile.csv",
        "seasons.png",
        "seasons.svg",
        "timeseries-summer-solstice.csv",
    ] {
        assert!(dir.path().join(name).is_file(), "missing {name}");
    }
    let png = std::fs::File::open(dir.path().join("season-summer-solstice.png")).unwrap();
    let info = png::Decoder::new(std::io::BufReader::new(png))
        .read_info()
        .unwrap()
        .info()
        .clone();
    assert_eq!((info.width, info.height), (1200, 650));
    let gj: geojson::GeoJson = std::fs::read_to_string(dir.path().join("route.geojson"))
        .unwrap()
        .parse()
        .unwrap();
    let geojson::GeoJson::FeatureCollection(fc) = gj else {
        panic!("a FeatureCollection")
    };
    let geom = fc.features[0].geometry.as_ref().unwrap();
    assert!(matches!(
        geom.value,
        geojson::GeometryValue::LineString { .. }
    ));
    let daily = std::fs::read_to_string(dir.path().join("daily-budget.csv")).unwrap();
    assert!(daily
        .lines()
        .next()
        .unwrap()
        .starts_with("season,date_local,generated_wh"));
    let failing = Command::cargo_bin("sunward")
        .unwrap()
        .arg("run")
        .arg(mission())
        .arg("--out")
        .arg(dir.path())
        .args(["--season", "winter", "--fail-on-infeasible"])
        .output()
        .unwrap();
    assert_eq!(failing.status.code(), Some(1));
}

#[test]
fn a_broken_mission_lists_its_problems_and_exits_2() {
    let dir = tempfile::tempdir().unwrap();
    let bad = dir.path().join("bad.toml");
    std::fs::write(&bad, "[site]\nname = \"x\"\nlat_deg = 123\n").unwrap();
    let out = Command::cargo_bin("sunward")
        .unwrap()
        .arg("run")
        .arg(&bad)
        .arg("--out")
        .arg(dir.path())
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("bad.toml:3:"), "{err}");
}

/// Unordered sites: the runner orders them itself (Held-Karp on the open path from the
/// last waypoint to the goal), so listing the survey sites in reverse plans the same
/// route length.
#[test]
fn site_order_in_the_file_does_not_matter() {
    let text = std::fs::read_to_string(mission()).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let terrain = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("terrains/vardholm_plateau.tif");
    let text = text.replace(
        "\"../terrains/vardholm_plateau.tif\"",
        &format!("{:?}", terrain.display().to_string()),
    );
    // Reverse the three [[route.sites]] blocks.
    let head_end = text.find("[[route.sites]]").unwrap();
    let tail_start = text.find("[rover]").unwrap();
    let mut blocks: Vec<&str> = text[head_end..tail_start]
        .split("[[route.sites]]")
        .filter(|b| !b.trim().is_empty())
        .collect();
    assert_eq!(blocks.len(), 3);
    blocks.reverse();
    let reversed = format!(
        "{}{}{}",
        &text[..head_end],
        blocks
            .iter()
            .map(|b| format!("[[route.sites]]{b}"))
            .collect::<String>(),
        &text[tail_start..]
    );
    let length = |body: &str, name: &str| -> f64 {
        let path = dir.path().join(name);
        std::fs::write(&path, body).unwrap();
        let out = dir.path().join(format!("{name}.out"));
        let run = Command::cargo_bin("sunward")
            .unwrap()
            .arg("run")
            .arg(&path)
            .arg("--out")
            .arg(&out)
            .arg("-q")
            .output()
            .unwrap();
        assert!(
            run.status.success(),
            "{}",
            String::from_utf8_lossy(&run.stderr)
        );
        let v: Value =
            serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap())
                .unwrap();
        v["inputs"]["route_length_m"].as_f64().unwrap()
    };
    let a = length(&text, "given.toml");
    let b = length(&reversed, "reversed.toml");
    assert!((a - b).abs() < 1e-6, "{a} vs {b}");
}

/// A route the rover cannot drive (climb and descent limits of 1° on rolling terrain)
/// gives a verdict, not a crash: every season infeasible, stranded at the start by the
/// tilt limits, with the planner's explanation.
#[test]
fn an_unplannable_route_is_infeasible_for_tilt() {
    let terrain = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("terrains/vardholm_plateau.tif");
    let text = std::fs::read_to_string(mission())
        .unwrap()
        .replace(
            "\"../terrains/vardholm_plateau.tif\"",
            &format!("{:?}", terrain.display().to_string()),
        )
        .replace("max_climb_deg = 18.0", "max_climb_deg = 1.0")
        .replace("max_descent_deg = 18.0", "max_descent_deg = 1.0");
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("steep.toml");
    std::fs::write(&path, text).unwrap();
    let out = Command::cargo_bin("sunward")
        .unwrap()
        .arg("run")
        .arg(&path)
        .arg("--out")
        .arg(dir.path())
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: Value =
        serde_json::from_str(&std::fs::read_to_string(dir.path().join("summary.json")).unwrap())
            .unwrap();
    assert_eq!(v["feasible"], false);
    for s in v["seasons"].as_array().unwrap() {
        assert_eq!(s["stranded"]["cause"], "tilt");
        assert!(
            s["reason"].as_str().unwrap().contains("the tilt limits"),
            "{}",
            s["reason"]
        );
        // Nothing was simulated: no lowest state of charge and no margin, rather than a
        // full pack's 100 % and a positive margin beside the infeasible verdict.
        assert!(s["min_soc"].is_null() && s["margin"].is_null(), "{s}");
    }
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(
        stdout.contains("no season is feasible") && !stdout.contains("100.0 %"),
        "{stdout}"
    );
    let html = std::fs::read_to_string(dir.path().join("report.html")).unwrap();
    assert!(
        !html.contains("100.0 %") && !html.contains("NaN"),
        "report shows a full pack"
    );
}

/// The bundled survey mission's text.
fn bundled_mission_text() -> String {
    std::fs::read_to_string(mission()).unwrap()
}

/// The absolute path of the bundled mission's terrain (for copies written elsewhere).
fn bundled_terrain() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("terrains/vardholm_plateau.tif")
}

/// The survey mission from base camp straight to the far station (no cairn, no sites),
/// with a two-day deadline: the shape `--planner sun-aware` plans.
fn direct_mission(dir: &std::path::Path) -> PathBuf {
    let (text, terrain) = (bundled_mission_text(), bundled_terrain());
    let mut keep = Vec::new();
    let mut skip = 0;
    for line in text.lines() {
        if line.starts_with("[[route.sites]]") {
            skip = 5;
        }
        if skip > 0 {
            skip -= 1;
            continue;
        }
        if line.starts_with("waypoints_m") {
            continue;
        }
        keep.push(match line {
            l if l.starts_with("file = ") => format!("file = {:?}", terrain.display().to_string()),
            l if l.starts_with("deadline_days") => "deadline_days = 2.0".to_string(),
            l => l.to_string(),
        });
    }
    let path = dir.join("direct.toml");
    std::fs::write(&path, keep.join("\n")).unwrap();
    path
}

/// `--planner sun-aware`: the spring run plans, replays and prints both planners'
/// verdicts side by side, and writes the season's sun-aware route.
#[test]
fn sun_aware_planner_runs_beside_the_fixed_route() {
    let dir = tempfile::tempdir().unwrap();
    let out = Command::cargo_bin("sunward")
        .unwrap()
        .arg("run")
        .arg(direct_mission(dir.path()))
        .args(["--planner", "sun-aware", "--season", "spring", "--out"])
        .arg(dir.path().join("out"))
        .output()
        .unwrap();
    let text =
        String::from_utf8_lossy(&out.stdout).to_string() + &String::from_utf8_lossy(&out.stderr);
    assert!(out.status.success(), "{text}");
    assert!(text.contains("fixed: FEASIBLE"), "{text}");
    assert!(text.contains("sun-aware: FEASIBLE"), "{text}");
    assert!(dir
        .path()
        .join("out/route-sun-aware-spring-equinox.geojson")
        .is_file());
    // The report shows both: summary.json's comparison, the season's two-planner chart
    // and the side-by-side table in report.html.
    let o = dir.path().join("out");
    let v: Value =
        serde_json::from_str(&std::fs::read_to_string(o.join("summary.json")).unwrap()).unwrap();
    let c = &v["planner_comparison"][0];
    assert_eq!(c["name"], "spring equinox");
    assert_eq!(c["fixed_route"]["feasible"], true);
    assert_eq!(c["sun_aware"]["planned"], true);
    assert!(c["sun_aware"]["holds"].is_array());
    assert_eq!(
        c["sun_aware"]["min_soc"].as_f64().unwrap(),
        v["seasons"][0]["min_soc"].as_f64().unwrap()
    );
    assert!(o.join("season-spring-equinox-planners.png").is_file());
    assert!(o.join("season-spring-equinox-planners.svg").is_file());
    let html = std::fs::read_to_string(o.join("report.html")).unwrap();
    assert!(html.contains("Fixed route and sun-aware plan"));
    assert!(html.contains("fixed route feasible / sun-aware plan feasible"));
}

/// The survey mission with its waypoint and one site (the tarn shore, with a 30-minute
/// payload run): the shape of a mission through waypoints and sites, small enough for a
/// debug-build test (the full mission's sun-aware run takes several minutes in a
/// release build).
fn one_site_mission(dir: &std::path::Path) -> PathBuf {
    let (text, terrain) = (bundled_mission_text(), bundled_terrain());
    let text = text.replace(
        "file = \"../terrains/vardholm_plateau.tif\"",
        &format!("file = {:?}", terrain.display().to_string()),
    );
    let a = text
        .find("[[route.sites]]\nname = \"lichen transect\"")
        .unwrap();
    let b = text.find("[[route.sites]]\nname = \"tarn shore\"").unwrap();
    let text = format!("{}{}", &text[..a], &text[b..]).replace(
        "y_m = 1600.0\npayload_min = 240.0",
        "y_m = 1600.0\npayload_min = 30.0",
    );
    assert!(text.contains("payload_min = 30.0") && !text.contains("lichen"));
    let path = dir.join("one-site.toml");
    std::fs::write(&path, text).unwrap();
    path
}

/// `--planner sun-aware` through a waypoint and a site: the summer run plans leg by leg
/// (waypoint, site, goal) with the site's payload run, replays, and prints both
/// planners' verdicts.
#[test]
fn sun_aware_planner_goes_through_waypoints_and_sites() {
    let dir = tempfile::tempdir().unwrap();
    let out = Command::cargo_bin("sunward")
        .unwrap()
        .arg("run")
        .arg(one_site_mission(dir.path()))
        .args([
            "--planner",
            "sun-aware",
            "--season",
            "summer",
            "--quiet",
            "--out",
        ])
        .arg(dir.path().join("out"))
        .output()
        .unwrap();
    let text =
        String::from_utf8_lossy(&out.stdout).to_string() + &String::from_utf8_lossy(&out.stderr);
    assert!(out.status.success(), "{text}");
    assert!(text.contains("fixed: FEASIBLE"), "{text}");
    assert!(text.contains("sun-aware: FEASIBLE"), "{text}");
    assert!(text.contains("1 payload run(s)"), "{text}");
    let v: Value = serde_json::from_str(
        &std::fs::read_to_string(dir.path().join("out/summary.json")).unwrap(),
    )
    .unwrap();
    let c = &v["planner_comparison"][0];
    assert_eq!(c["sun_aware"]["planned"], true);
    let legs = c["sun_aware"]["legs"].as_array().unwrap();
    let to: Vec<&str> = legs.iter().map(|l| l["to"].as_str().unwrap()).collect();
    assert_eq!(to.len(), 3, "{to:?}");
    assert_eq!(to[0], "waypoint 1");
    assert_eq!(to[1], "tarn shore");
    // The payload run lasts at least its payload time (30 minutes).
    let l = &legs[1];
    assert_eq!(l["payload_s"].as_f64().unwrap(), 1800.0, "{l}");
    let stay = l["done_s"].as_f64().unwrap() - l["arrival_s"].as_f64().unwrap();
    assert!(stay >= 1800.0, "{l}");
}

/// `--planner sun-aware` refuses a site in the goal's cell (the run ends on arrival, so
/// its payload run would never happen), before any season runs, naming the fix.
#[test]
fn sun_aware_planner_refuses_a_site_at_the_goal() {
    let dir = tempfile::tempdir().unwrap();
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    let terrain = root.join("terrains/vardholm_plateau.tif");
    let text = std::fs::read_to_string(mission())
        .unwrap()
        .replace("x_m = 1500.0\ny_m = 1600.0", "x_m = 1820.0\ny_m = 1760.0")
        .replace(
            "file = \"../terrains/vardholm_plateau.tif\"",
            &format!("file = {:?}", terrain.display().to_string()),
        );
    assert!(text.contains("x_m = 1820.0"));
    let path = dir.path().join("site-at-goal.toml");
    std::fs::write(&path, text).unwrap();
    let out = Command::cargo_bin("sunward")
        .unwrap()
        .arg("run")
        .arg(&path)
        .args(["--planner", "sun-aware", "--quiet", "--out"])
        .arg(dir.path().join("out"))
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("tarn shore"), "{err}");
    assert!(err.contains("another cell than the goal"), "{err}");
    assert!(err.contains("--planner fixed"), "{err}");
}

/// The bundled hillside mission (clearness sky, a 07:30 local start).
fn hillside() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("missions/tallowby_rows.toml")
}

/// Every entry of a folder with its bytes (folders as `<folder>`), sorted by name.
fn snapshot(dir: &std::path::Path) -> Vec<(String, Vec<u8>)> {
    let mut v: Vec<(String, Vec<u8>)> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| {
            let p = e.unwrap().path();
            let bytes = if p.is_dir() {
                b"<folder>".to_vec()
            } else {
                std::fs::read(&p).unwrap()
            };
            (p.file_name().unwrap().to_string_lossy().into_owned(), bytes)
        })
        .collect();
    v.sort();
    v
}

fn run_into(mission: &std::path::Path, out: &std::path::Path, args: &[&str]) -> (i32, String) {
    let o = Command::cargo_bin("sunward")
        .unwrap()
        .arg("run")
        .arg(mission)
        .arg("--out")
        .arg(out)
        .arg("-q")
        .args(args)
        .output()
        .unwrap();
    (
        o.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&o.stderr).into_owned(),
    )
}

/// A run that fails after its outputs are made (here: a folder where one of them goes)
/// leaves the previous run's whole output set byte-identical, and no staging folder.
/// The report of the good run names the sky source and model in plain words and its
/// start time as HH:MM.
#[test]
fn a_failing_run_leaves_the_previous_outputs_byte_identical() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("out");
    let (code, err) = run_into(&hillside(), &out, &["--season", "June"]);
    assert_eq!(code, 0, "{err}");
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(html.contains("07:30 local time, full pack"), "start time");
    assert!(
        html.contains("scaled by the monthly clearness index"),
        "sky source"
    );
    assert!(html.contains("(Perez et al. 1990)"), "sky model");
    assert!(!html.contains("Perez</td>") && !html.contains("HayDavies"));
    assert!(
        !html.contains("upper envelope"),
        "clear-sky caution on a clearness run"
    );
    std::fs::remove_file(out.join("seasons.png")).unwrap();
    std::fs::create_dir(out.join("seasons.png")).unwrap();
    let before = snapshot(&out);
    let (code, err) = run_into(&hillside(), &out, &["--season", "May"]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("seasons.png"), "{err}");
    assert!(
        snapshot(&out) == before,
        "the failed run changed the previous outputs"
    );
}

/// A route that cannot be planned after a good run: summary.json and report.html carry
/// the infeasible verdict, the previous run's time series, plots and route are removed
/// (they would not belong to it), a file of the user's stays, the rover is stranded at
/// the start, and the fix names the mission file's key.
#[test]
fn an_unplannable_run_replaces_the_whole_previous_set() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("out");
    let (code, err) = run_into(&hillside(), &out, &["--season", "June"]);
    assert_eq!(code, 0, "{err}");
    std::fs::write(out.join("notes.txt"), "mine").unwrap();
    let terrain = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("terrains/tallowby_hillside.tif");
    let text = std::fs::read_to_string(hillside())
        .unwrap()
        .replace(
            "\"../terrains/tallowby_hillside.tif\"",
            &format!("{:?}", terrain.display().to_string()),
        )
        .replace("max_climb_deg = 18.0", "max_climb_deg = 2.0");
    let steep = dir.path().join("steep.toml");
    std::fs::write(&steep, text).unwrap();
    let (code, err) = run_into(&steep, &out, &["--season", "June"]);
    assert_eq!(code, 0, "{err}");
    let names: Vec<String> = snapshot(&out).into_iter().map(|f| f.0).collect();
    assert_eq!(names, ["notes.txt", "report.html", "summary.json"]);
    let v: Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    let st = &v["seasons"][0]["stranded"];
    assert_eq!(
        (st["x"].as_f64(), st["y"].as_f64()),
        (Some(20.0), Some(20.0))
    );
    assert_eq!(st["cause"], "tilt");
    let detail = st["detail"].as_str().unwrap();
    assert!(detail.contains("([route] max_climb_deg)"), "{detail}");
    assert!(!detail.contains("--max-pitch-deg"), "{detail}");
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(html.contains("Infeasible: June."), "verdict");
    assert!(html.contains("The route cannot be planned"), "route line");
    assert!(html.contains("[route] max_climb_deg"), "reason");
}

/// `--monte-carlo` on a clearness mission without `clearness_sd` asks for that key only.
#[test]
fn monte_carlo_names_the_missing_clearness_sd() {
    let dir = tempfile::tempdir().unwrap();
    let (code, err) = run_into(
        &hillside(),
        dir.path(),
        &["--season", "June", "--monte-carlo", "5"],
    );
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("gives the monthly clearness means but no clearness_sd"),
        "{err}"
    );
    assert!(err.contains("Fix: add [weather] clearness_sd"), "{err}");
    assert!(!err.contains("set [weather] sky"), "{err}");
}
