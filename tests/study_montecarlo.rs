//! The weather Monte Carlo: its sampler against outside references (scipy's regularized
//! incomplete beta function, randomgen's xoshiro256**; values and script in
//! tests/reference/clearness_mc/, tolerances in its README), its statistics against the
//! analytic moments, and its reproducibility (same seed, same result; another seed,
//! another result; one thread or two, the same result); and with a vanishing spread it
//! gives the deterministic run's verdict.

mod common;
use chrono::NaiveDate;
use common::parked_route;
use sunward::battery::ambient::{Ambient, MonthlyClimate};
use sunward::battery::loads::{LoadSpec, Loads, Schedule};
use sunward::battery::pack::Pack;
use sunward::battery::params::PackParams;
use sunward::battery::thermal::{ThermalNode, ThermalParams};
use sunward::mission::resolve::Season;
use sunward::mission::runner::run_seasons;
use sunward::mission::sim::{DriveHours, EndCondition, Policy, SimSetup, SkySetup};
use sunward::plan::Route;
use sunward::progress::Silent;
use sunward::study::montecarlo::{monte_carlo, SeasonMonteCarlo};
use sunward::sun::clearness_mc::{DailyClearness, DayLaw, Xoshiro256};
use sunward::sun::irradiance::LinkeTurbidity;
use sunward::sun::panel::{CellTemperature, Mount, Panel};
use sunward::sun::position::Observer;
use sunward::sun::transposition::SkyModel;
use sunward::vehicle::Rover;

fn reference(name: &str) -> String {
    std::fs::read_to_string(format!(
        "{}/tests/reference/clearness_mc/{name}",
        env!("CARGO_MANIFEST_DIR")
    ))
    .unwrap()
}

fn rows(text: &str) -> Vec<Vec<f64>> {
    text.lines()
        .filter(|l| !l.starts_with('#'))
        .skip(1)
        .map(|l| l.split(',').map(|x| x.parse().unwrap()).collect())
        .collect()
}

#[test]
fn xoshiro_matches_randomgen() {
    let mut r = Xoshiro256::from_state([1, 2, 3, 4]);
    let text = reference("xoshiro.csv");
    let mut n = 0;
    for line in text.lines().filter(|l| !l.starts_with('#')).skip(1) {
        let want: u64 = line.split(',').nth(1).unwrap().parse().unwrap();
        assert_eq!(r.next_u64(), want, "output {n}");
        n += 1;
    }
    assert_eq!(n, 8);
}

/// 20 000 draws per case: the empirical CDF within 0.015 of scipy's I_x(α, β) at every
/// point (DKW bound, README), the mean within 4 standard errors, the variance within 5 %.
#[test]
fn beta_draws_match_the_incomplete_beta_function() {
    let cases = rows(&reference("beta_cdf.csv"));
    assert_eq!(cases.len(), 35);
    let n = 20_000;
    for (i, case) in cases.chunks(7).enumerate() {
        let (mu, sd) = (case[0][0], case[0][1]);
        let DayLaw::Beta { alpha, beta } = DayLaw::from_mean_sd(mu, sd, 1).unwrap() else {
            panic!("case {i}: not a Beta law")
        };
        assert!((alpha - case[0][2]).abs() < 1e-9 && (beta - case[0][3]).abs() < 1e-9);
        let mut rng = Xoshiro256::seeded(1000 + i as u64);
        let draws: Vec<f64> = (0..n).map(|_| rng.beta(alpha, beta)).collect();
        assert!(draws.iter().all(|x| (0.0..=1.0).contains(x)));
        for row in case {
            let (x, cdf) = (row[4], row[5]);
            let emp = draws.iter().filter(|&&d| d <= x).count() as f64 / n as f64;
            assert!(
                (emp - cdf).abs() < 0.015,
                "mean {mu} sd {sd} at {x}: empirical {emp:.4} vs I_x {cdf:.4}"
            );
        }
        let mean = draws.iter().sum::<f64>() / n as f64;
        let var = draws.iter().map(|d| (d - mean).powi(2)).sum::<f64>() / (n - 1) as f64;
        let want_var = case[0][6];
        assert!((want_var - sd * sd).abs() < 1e-12, "moments close exactly");
        assert!(
            (mean - mu).abs() < 4.0 * sd / (n as f64).sqrt(),
            "mean {mean} vs {mu}"
        );
        assert!(
            (var / want_var - 1.0).abs() < 0.05,
            "variance {var} vs {want_var}"
        );
    }
}

// ---------------------------------------------------------------------------------------
// A small mission: a rover parked (awake: 25 W hotel) for three days on flat ground at
// 45° N with a horizontal 1.5 m² panel and a 30 W load. Summer's margin depends on the
// weather; spring and winter strand whatever the draws.

struct World {
    route: Route,
    rover: Rover,
    pack: Pack,
    thermal: ThermalNode,
    loads: Loads,
    ambient: Ambient,
    panel: Panel,
}

fn world() -> World {
    let rover = Rover::default();
    World {
        route: parked_route(&rover),
        rover,
        pack: Pack::new(&PackParams {
            capacity_wh: Some(1500.0),
            nominal_voltage_v: Some(25.6),
            ..PackParams::default()
        })
        .unwrap(),
        thermal: ThermalNode::new(&ThermalParams::default()).unwrap(),
        loads: Loads::new(vec![LoadSpec {
            name: "logger".into(),
            power_w: 30.0,
            duty: 1.0,
            schedule: Schedule::Always,
        }])
        .unwrap(),
        ambient: Ambient::Monthly(MonthlyClimate {
            mean_c: [20.0; 12],
            diurnal_swing_c: [0.0; 12],
            peak_hour: 15.0,
        }),
        panel: Panel {
            area_m2: 1.5,
            efficiency_stc: 0.2,
            temp_coeff_per_k: 0.0,
            soiling_loss: 0.0,
            mppt_efficiency: 1.0,
            wiring_efficiency: 1.0,
            cell_temperature: CellTemperature::default(),
        },
    }
}

const MEANS: [f64; 12] = [
    0.3, 0.35, 0.45, 0.5, 0.55, 0.6, 0.6, 0.55, 0.5, 0.4, 0.3, 0.3,
];

fn setup(w: &World) -> SimSetup<'_> {
    SimSetup {
        route: &w.route,
        rover: &w.rover,
        pack: &w.pack,
        initial_soc: 0.6,
        thermal: &w.thermal,
        initial_box_temp_c: Some(20.0),
        electronics_heat_share: 0.0,
        loads: &w.loads,
        panel: &w.panel,
        mount: Mount::BodyFixed {
            normal_body: [0.0, 0.0, 1.0],
        },
        sky: SkySetup {
            observer: Observer::new(45f64.to_radians(), 0.0, 300.0).unwrap(),
            delta_t_s: 69.0,
            linke: LinkeTurbidity::new([3.0; 12]).unwrap(),
            sky_model: SkyModel::Isotropic,
            albedo: 0.2,
            wind_m_s: 1.0,
            clearness_monthly: MEANS,
            clearness_daily: None,
            weather: None,
        },
        horizon: None,
        ambient: &w.ambient,
        utc_offset_s: 0,
        policy: Policy {
            drive_hours: DriveHours::Always,
            min_soc_to_drive: 0.0,
            resume_soc: 0.0,
            deadline_s: 3.0 * 86_400.0,
            end: EndCondition::Deadline,
            sleep_outside_hours: true,
        },
        step_s: 60.0,
        stops: Vec::new(),
        holds: Vec::new(),
        start_local_h: 0.0,
        sun_steps: None,
    }
}

fn seasons() -> Vec<Season> {
    [("spring", 3, 20), ("summer", 6, 21), ("winter", 12, 21)]
        .iter()
        .map(|&(name, m, d)| Season {
            name: name.into(),
            date: NaiveDate::from_ymd_opt(2027, m, d).unwrap(),
        })
        .collect()
}

fn run_mc(w: &World, sd: f64, runs: usize, seed: u64) -> Vec<SeasonMonteCarlo> {
    let laws = DailyClearness::new(&MEANS, &[sd; 12]).unwrap();
    monte_carlo(&setup(w), &seasons(), &laws, runs, seed, &Silent).unwrap()
}

#[test]
fn same_seed_same_result_other_seed_other_result() {
    let w = world();
    let a = run_mc(&w, 0.2, 6, 11);
    let b = run_mc(&w, 0.2, 6, 11);
    let c = run_mc(&w, 0.2, 6, 12);
    assert_eq!(a, b);
    assert_ne!(a, c);
    // The draws spread the outcome: not every summer run ends alike.
    let summer = a[1].min_socs();
    assert!(
        summer.iter().any(|&x| (x - summer[0]).abs() > 1e-2),
        "{summer:?}"
    );
}

#[test]
fn thread_count_does_not_change_the_result() {
    let w = world();
    let on = |threads: usize| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(|| run_mc(&w, 0.2, 5, 3))
    };
    assert_eq!(on(1), on(2));
}

/// With sd → 0 every day's index is the month's mean, so each run is the deterministic
/// run with the monthly clearness: the same verdict and the same lowest state of charge.
/// The small mission has a feasible season (summer) and an infeasible one (winter) so
/// that both verdicts are checked.
#[test]
fn a_vanishing_spread_reproduces_the_deterministic_verdict() {
    let w = world();
    let det = run_seasons(&setup(&w), &seasons()).unwrap();
    let mc = run_mc(&w, 1e-6, 3, 5);
    let verdicts: Vec<bool> = det.iter().map(|r| r.summary.feasible).collect();
    assert!(
        verdicts.contains(&true) && verdicts.contains(&false),
        "{verdicts:?}"
    );
    for (d, m) in det.iter().zip(&mc) {
        let p = m.probability_complete();
        assert_eq!(
            p,
            if d.summary.feasible { 1.0 } else { 0.0 },
            "{}",
            d.season.name
        );
        for x in m.min_socs() {
            assert!(
                (x - d.summary.min_soc).abs() < 1e-4,
                "{} {x} vs {}",
                d.season.name,
                d.summary.min_soc
            );
        }
    }
}

// ---------------------------------------------------------------------------------------
// The command line.

use std::path::{Path, PathBuf};

use assert_cmd::Command;
use serde_json::Value;

fn repo(p: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join(p)
}

/// The survey mission under monthly clearness with a daily spread (`sd_line` replaces
/// the clear-sky line).
fn clearness_mission(dir: &Path, sd_line: &str) -> PathBuf {
    let text = std::fs::read_to_string(repo("missions/vardholm_survey.toml")).unwrap();
    let terrain = repo("terrains/vardholm_plateau.tif");
    let text = text
        .replace(
            "\"../terrains/vardholm_plateau.tif\"",
            &format!("{:?}", terrain.display().to_string()),
        )
        .replace(
            "sky = \"clear_sky\"",
            &format!(
                "sky = \"clearness\"\nclearness = [0.3, 0.4, 0.5, 0.55, 0.6, 0.6, 0.6, 0.55, \
                 0.5, 0.45, 0.35, 0.3]\n{sd_line}"
            ),
        );
    let path = dir.join("mission.toml");
    std::fs::write(&path, text).unwrap();
    path
}

fn run_cli(mission: &Path, out: &Path, extra: &[&str]) -> std::process::Output {
    Command::cargo_bin("sunward")
        .unwrap()
        .arg("run")
        .arg(mission)
        .arg("--out")
        .arg(out)
        .args(["--season", "summer"])
        .args(extra)
        .output()
        .unwrap()
}

fn summary(out: &Path) -> Value {
    serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap()
}

#[test]
fn run_monte_carlo_writes_its_summary_plot_and_report_section() {
    let dir = tempfile::tempdir().unwrap();
    let mission = clearness_mission(dir.path(), "clearness_sd = 0.2");
    let (a, b) = (dir.path().join("a"), dir.path().join("b"));
    let first = run_cli(&mission, &a, &["--monte-carlo", "4", "--seed", "9"]);
    assert!(
        first.status.success(),
        "{}",
        String::from_utf8_lossy(&first.stderr)
    );
    assert!(String::from_utf8_lossy(&first.stdout).contains("seed 9"));
    let again = run_cli(&mission, &b, &["-q", "--monte-carlo", "4", "--seed", "9"]);
    assert!(again.status.success());
    let (va, vb) = (summary(&a), summary(&b));
    // Existing keys stay as they are; monte_carlo is added.
    for key in [
        "schema_version",
        "feasible",
        "seasons",
        "inputs",
        "cautions",
    ] {
        assert!(va.get(key).is_some(), "{key}");
    }
    assert!(va["seasons"][0].get("min_soc").is_some());
    let mc = &va["monte_carlo"];
    assert_eq!(mc["runs"], 4);
    assert_eq!(mc["seed"], 9);
    assert!(mc["distribution"].as_str().unwrap().starts_with("beta"));
    assert!(mc["quantile_rule"].as_str().unwrap().contains("type 7"));
    let s = &mc["seasons"][0];
    assert_eq!(s["name"], va["seasons"][0]["name"]);
    let socs: Vec<f64> = s["min_socs"]
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect();
    assert_eq!(socs.len(), 4);
    let p = s["probability_complete"].as_f64().unwrap();
    assert!((0.0..=1.0).contains(&p));
    let (q05, q50, q95) = (
        s["min_soc_q05"].as_f64().unwrap(),
        s["min_soc_q50"].as_f64().unwrap(),
        s["min_soc_q95"].as_f64().unwrap(),
    );
    let lo = socs.iter().cloned().fold(f64::INFINITY, f64::min);
    let hi = socs.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
    assert!(lo <= q05 && q05 <= q50 && q50 <= q95 && q95 <= hi, "{s}");
    // Same seed, same Monte Carlo result, from the command line too.
    assert_eq!(va["monte_carlo"], vb["monte_carlo"]);
    for f in ["montecarlo.png", "montecarlo.svg"] {
        assert!(std::fs::metadata(a.join(f)).unwrap().len() > 1000, "{f}");
    }
    let html = std::fs::read_to_string(a.join("report.html")).unwrap();
    assert!(html.contains("sampled weather runs"));
    // Without --monte-carlo there is no monte_carlo key and no plot.
    let c = dir.path().join("c");
    assert!(run_cli(&mission, &c, &["-q"]).status.success());
    assert!(summary(&c).get("monte_carlo").is_none());
    assert!(!c.join("montecarlo.png").exists());
}

#[test]
fn monte_carlo_needs_the_monthly_statistics() {
    let dir = tempfile::tempdir().unwrap();
    let text = std::fs::read_to_string(repo("missions/vardholm_survey.toml")).unwrap();
    let terrain = repo("terrains/vardholm_plateau.tif");
    let text = text.replace(
        "\"../terrains/vardholm_plateau.tif\"",
        &format!("{:?}", terrain.display().to_string()),
    );
    let mission = dir.path().join("clear.toml");
    std::fs::write(&mission, text).unwrap();
    let out = run_cli(&mission, &dir.path().join("o"), &["--monte-carlo", "3"]);
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("clearness_sd") && err.contains("Fix:"),
        "{err}"
    );
}

#[test]
fn check_explains_a_spread_too_wide_for_a_beta_law() {
    let dir = tempfile::tempdir().unwrap();
    // December's mean is 0.3: mean·(1 − mean) = 0.21, so sd must stay below 0.458.
    let mission = clearness_mission(dir.path(), "clearness_sd = 0.47");
    let out = Command::cargo_bin("sunward")
        .unwrap()
        .arg("check")
        .arg(&mission)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("weather.clearness_sd"), "{err}");
    assert!(err.contains("Beta") && err.contains("below 0.458"), "{err}");
    let ok = clearness_mission(
        dir.path(),
        "clearness_sd = [0.1, 0.1, 0.1, 0.1, 0.1, 0.1, 0.1, 0.1, 0.1, 0.1, 0.1, 0.1]",
    );
    let out = Command::cargo_bin("sunward")
        .unwrap()
        .arg("check")
        .arg(&ok)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
}

#[test]
fn clearness_sd_only_applies_to_the_clearness_sky() {
    let dir = tempfile::tempdir().unwrap();
    let text = std::fs::read_to_string(repo("missions/vardholm_survey.toml")).unwrap();
    let terrain = repo("terrains/vardholm_plateau.tif");
    let text = text
        .replace(
            "\"../terrains/vardholm_plateau.tif\"",
            &format!("{:?}", terrain.display().to_string()),
        )
        .replace(
            "sky = \"clear_sky\"",
            "sky = \"clear_sky\"\nclearness_sd = 0.1",
        );
    let mission = dir.path().join("m.toml");
    std::fs::write(&mission, text).unwrap();
    let out = Command::cargo_bin("sunward")
        .unwrap()
        .arg("check")
        .arg(&mission)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("weather.clearness_sd") && err.contains("does not apply"),
        "{err}"
    );
}
