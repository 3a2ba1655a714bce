//! The simulation fed a measured weather file: energy against a hand integral, half the
//! clear sky gives half the energy, and a file that does not cover a season is refused
//! with a message naming the file, its span, the season's dates and the fix.

mod common;
use common::parked_route;
use std::path::PathBuf;

use assert_cmd::Command;
use chrono::{DateTime, Duration, NaiveDate, Utc};
use serde_json::Value;
use sunward::battery::ambient::{Ambient, MonthlyClimate};
use sunward::battery::loads::Loads;
use sunward::battery::pack::Pack;
use sunward::battery::params::PackParams;
use sunward::battery::thermal::{ThermalNode, ThermalParams};
use sunward::mission::sim::{simulate, DriveHours, EndCondition, Policy, SimSetup, SkySetup};
use sunward::plan::Route;
use sunward::sun::climate::{parse_weather_csv, WeatherCsvOptions, WeatherSeries};
use sunward::sun::irradiance::{
    absolute_airmass, extraterrestrial_w_m2, ineichen_perez, relative_airmass, LinkeTurbidity,
};
use sunward::sun::panel::{CellTemperature, Mount, Panel};
use sunward::sun::position::{sun_position, Observer};
use sunward::sun::transposition::SkyModel;
use sunward::vehicle::Rover;

const DELTA_T_S: f64 = 69.0;

/// Output = area × efficiency × POA exactly: no temperature coefficient, soiling, MPPT
/// or wiring loss (so the air temperature has no effect on the energy).
fn ideal_panel() -> Panel {
    Panel {
        area_m2: 1.5,
        efficiency_stc: 0.2,
        temp_coeff_per_k: 0.0,
        soiling_loss: 0.0,
        mppt_efficiency: 1.0,
        wiring_efficiency: 1.0,
        cell_temperature: CellTemperature::default(),
    }
}

struct Stages {
    pack: Pack,
    thermal: ThermalNode,
    loads: Loads,
    ambient: Ambient,
}

fn stages() -> Stages {
    Stages {
        pack: Pack::new(&PackParams {
            capacity_wh: Some(2000.0),
            nominal_voltage_v: Some(25.6),
            ..PackParams::default()
        })
        .unwrap(),
        thermal: ThermalNode::new(&ThermalParams::default()).unwrap(),
        loads: Loads::new(Vec::new()).unwrap(),
        ambient: Ambient::Monthly(MonthlyClimate {
            mean_c: [20.0; 12],
            diurnal_swing_c: [0.0; 12],
            peak_hour: 15.0,
        }),
    }
}

fn observer() -> Observer {
    Observer::new(45f64.to_radians(), 0.0, 300.0).unwrap()
}

fn setup<'a>(
    route: &'a Route,
    rover: &'a Rover,
    s: &'a Stages,
    panel: &'a Panel,
    weather: Option<&'a WeatherSeries>,
) -> SimSetup<'a> {
    SimSetup {
        route,
        rover,
        pack: &s.pack,
        initial_soc: 0.5,
        thermal: &s.thermal,
        initial_box_temp_c: Some(20.0),
        electronics_heat_share: 0.0,
        loads: &s.loads,
        panel,
        // Horizontal panel: the plane of array is the horizontal, so POA = GHI for
        // every transposition model (beam·cos z + DHI).
        mount: Mount::BodyFixed {
            normal_body: [0.0, 0.0, 1.0],
        },
        sky: SkySetup {
            observer: observer(),
            delta_t_s: DELTA_T_S,
            linke: LinkeTurbidity::new([3.0; 12]).unwrap(),
            sky_model: SkyModel::Isotropic,
            albedo: 0.2,
            wind_m_s: 1.0,
            clearness_monthly: [1.0; 12],
            clearness_daily: None,
            weather,
        },
        horizon: None,
        ambient: &s.ambient,
        utc_offset_s: 0,
        policy: Policy {
            drive_hours: DriveHours::Always,
            min_soc_to_drive: 0.0,
            resume_soc: 0.0,
            deadline_s: 86_400.0,
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

fn midnight() -> DateTime<Utc> {
    NaiveDate::from_ymd_opt(2031, 6, 21)
        .unwrap()
        .and_hms_opt(0, 0, 0)
        .unwrap()
        .and_utc()
}

fn parse(text: &str) -> WeatherSeries {
    let obs = observer();
    parse_weather_csv(text, &WeatherCsvOptions::default(), |t| {
        sun_position(t, &obs, DELTA_T_S)
    })
    .unwrap()
}

/// Hourly GHI on 2031-06-21 (UTC) at 45° N, 0° E, zero outside 06:00–18:00; the sun is
/// up from about 04:20 to 19:40 UTC, so every nonzero record has the sun above the
/// horizon. The trapezoid integral of the hourly records (the simulation interpolates
/// linearly between records; its 60 s steps start on the hour, so the midpoint rule is
/// exact on each linear piece), by hand:
///
/// ```text
/// ∫GHI dt = Σ (g_i + g_{i+1})/2 · 1 h = sum of the interior values (ends are 0)
///         = 100 + 250 + 420 + 580 + 700 + 760 + 700 + 560 + 400 + 230 + 90
///         = 4790 Wh/m²
/// energy  = 4790 Wh/m² × 1.5 m² × 0.20 = 1437 Wh
/// ```
///
/// The panel has no temperature coefficient, so the file's air temperature (given,
/// 5 to 25 °C) cannot change the energy.
#[test]
fn parked_horizontal_panel_generates_the_hand_integral_of_ghi() {
    let day = [
        100.0, 250.0, 420.0, 580.0, 700.0, 760.0, 700.0, 560.0, 400.0, 230.0, 90.0,
    ];
    let mut text = String::from("# synthetic day\ntime,ghi_w_m2,temp_air_c\n");
    for h in 0..=24 {
        let ghi = if (7..=17).contains(&h) {
            day[h - 7]
        } else {
            0.0
        };
        let t = midnight() + Duration::hours(h as i64);
        let temp = 5.0 + 20.0 * (h as f64 / 24.0);
        text.push_str(&format!("{},{ghi},{temp}\n", t.to_rfc3339()));
    }
    let series = parse(&text);
    let rover = Rover::default();
    let route = parked_route(&rover);
    let s = stages();
    let panel = ideal_panel();
    let run = simulate(
        &setup(&route, &rover, &s, &panel, Some(&series)),
        midnight(),
    )
    .unwrap();
    let got = run.ledger.generated_wh;
    assert!((got - 1437.0).abs() < 1e-6 * 1437.0, "{got} Wh vs 1437 Wh");
}

/// The site's clear-sky GHI (sunward's own Ineichen-Perez, the model the clear-sky runs
/// use) halved, written every 5 minutes as a weather file, gives about half the energy
/// of the clear-sky run: the measured path and the clear-sky path agree on the sky they
/// share. Tolerance 1 % (the linear interpolation between 5-minute records of a curved
/// day; the Erbs split does not matter on a horizontal panel).
#[test]
fn half_the_clear_sky_ghi_gives_half_the_energy() {
    let obs = observer();
    let linke = LinkeTurbidity::new([3.0; 12]).unwrap();
    let mut text = String::from("time,ghi_w_m2\n");
    for k in 0..=(2 * 288) {
        let t = midnight() + Duration::minutes(5 * k);
        let sun = sun_position(t, &obs, DELTA_T_S);
        let ghi = relative_airmass(sun.apparent_zenith_rad).map_or(0.0, |am| {
            ineichen_perez(
                sun.apparent_zenith_rad,
                absolute_airmass(am, obs.pressure_hpa),
                linke.for_month(6),
                obs.elevation_m,
                extraterrestrial_w_m2(sun.earth_sun_distance_au),
            )
            .ghi_w_m2
        });
        text.push_str(&format!("{},{:.3}\n", t.to_rfc3339(), 0.5 * ghi));
    }
    let series = parse(&text);
    let rover = Rover::default();
    let route = parked_route(&rover);
    let s = stages();
    let panel = ideal_panel();
    let clear = simulate(&setup(&route, &rover, &s, &panel, None), midnight())
        .unwrap()
        .ledger
        .generated_wh;
    let half = simulate(
        &setup(&route, &rover, &s, &panel, Some(&series)),
        midnight(),
    )
    .unwrap()
    .ledger
    .generated_wh;
    assert!(clear > 2000.0, "{clear}");
    assert!(
        (half / clear - 0.5).abs() < 0.005,
        "{half} Wh vs half of {clear} Wh"
    );
}

/// A record that ends before the run does is refused by the simulation itself.
#[test]
fn simulation_refuses_a_record_shorter_than_the_run() {
    let mut text = String::from("time,ghi_w_m2\n");
    for h in 0..=12 {
        let t = midnight() + Duration::hours(h);
        text.push_str(&format!("{},0\n", t.to_rfc3339()));
    }
    let series = parse(&text);
    let rover = Rover::default();
    let route = parked_route(&rover);
    let s = stages();
    let panel = ideal_panel();
    let e = simulate(
        &setup(&route, &rover, &s, &panel, Some(&series)),
        midnight(),
    )
    .unwrap_err();
    assert!(e.to_string().contains("does not cover"), "{e}");
}

fn repo(p: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join(p)
}

/// The survey mission with a weather file in place of the clear sky, one season on
/// `date` with a deadline of `deadline_days`.
fn csv_mission(dir: &std::path::Path, weather: &str, date: &str, deadline_days: f64) -> PathBuf {
    let text = std::fs::read_to_string(repo("missions/vardholm_survey.toml")).unwrap();
    let terrain = repo("terrains/vardholm_plateau.tif");
    let text = text
        .replace(
            "\"../terrains/vardholm_plateau.tif\"",
            &format!("{:?}", terrain.display().to_string()),
        )
        .replace(
            "sky = \"clear_sky\"\nlinke_turbidity = 2.5",
            "sky = \"csv\"\nfile = \"weather.csv\"",
        )
        .replace(
            "deadline_days = 6.0",
            &format!("deadline_days = {deadline_days}"),
        )
        .replace(
            "mode = \"solstices_equinoxes\"\nyear = 2027",
            &format!("mode = \"dates\"\ndates = [\"{date}\"]"),
        );
    assert!(text.contains("sky = \"csv\"") && text.contains("mode = \"dates\""));
    std::fs::write(dir.join("weather.csv"), weather).unwrap();
    let path = dir.join("mission.toml");
    std::fs::write(&path, text).unwrap();
    path
}

/// Hourly naive local times (the site's +01:00) with a flat 300 W/m² of GHI whenever
/// it is from 06:00 to 20:00 local and 0 otherwise, and an air temperature of 8 °C.
fn june_weather(days: i64) -> String {
    let start = NaiveDate::from_ymd_opt(2027, 6, 20)
        .unwrap()
        .and_hms_opt(0, 0, 0)
        .unwrap();
    let mut text = String::from("time,ghi_w_m2,temp_air_c\n");
    for h in 0..=(24 * days) {
        let t = start + Duration::hours(h);
        let hour = h % 24;
        let ghi = if (6..=20).contains(&hour) { 300.0 } else { 0.0 };
        text.push_str(&format!("{},{ghi},8.0\n", t.format("%Y-%m-%d %H:%M")));
    }
    text
}

#[test]
fn run_with_a_weather_file_writes_a_verdict() {
    let dir = tempfile::tempdir().unwrap();
    let mission = csv_mission(dir.path(), &june_weather(4), "2027-06-21", 2.0);
    let check = Command::cargo_bin("sunward")
        .unwrap()
        .arg("check")
        .arg(&mission)
        .output()
        .unwrap();
    assert!(
        check.status.success(),
        "{}",
        String::from_utf8_lossy(&check.stderr)
    );
    assert!(String::from_utf8_lossy(&check.stdout).contains("a weather file"));
    let out = dir.path().join("out");
    let run = Command::cargo_bin("sunward")
        .unwrap()
        .args(["run", "-q", "--out"])
        .arg(&out)
        .arg(&mission)
        .output()
        .unwrap();
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let v: Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    let season = &v["seasons"][0];
    assert!(
        season["energy_generated_wh"].as_f64().unwrap() > 100.0,
        "{season}"
    );
    // A sweep of the same mission reads the weather file too, and its one-value case
    // has the run's verdict.
    let sw = dir.path().join("sweep");
    let sweep = Command::cargo_bin("sunward")
        .unwrap()
        .args(["sweep", "-q", "--vary", "battery.capacity_wh=2400", "--out"])
        .arg(&sw)
        .arg(&mission)
        .output()
        .unwrap();
    assert!(
        sweep.status.success(),
        "{}",
        String::from_utf8_lossy(&sweep.stderr)
    );
    let csv = std::fs::read_to_string(sw.join("sweep.csv")).unwrap();
    let row: Vec<&str> = csv.lines().nth(1).unwrap().split(',').collect();
    assert_eq!(row[2], season["feasible"].to_string(), "{csv}");
    let min_soc: f64 = row[5].parse().unwrap();
    assert!(
        (min_soc - season["min_soc"].as_f64().unwrap()).abs() < 1e-6,
        "{csv}"
    );
}

#[test]
fn a_weather_file_that_misses_the_season_is_a_clear_error() {
    let dir = tempfile::tempdir().unwrap();
    // The record runs 2027-06-20 00:00 to 06-22 00:00; the season starts on 06-21 at
    // 09:00 with a 6-day deadline, so it needs records to 06-27 09:00.
    let mission = csv_mission(dir.path(), &june_weather(2), "2027-06-21", 6.0);
    let run = Command::cargo_bin("sunward")
        .unwrap()
        .args(["run", "-q", "--out"])
        .arg(dir.path().join("out"))
        .arg(&mission)
        .output()
        .unwrap();
    assert_eq!(run.status.code(), Some(2));
    let err = String::from_utf8_lossy(&run.stderr);
    for want in [
        "weather.csv",
        "2027-06-20 00:00",
        "2027-06-22 00:00",
        "2027-06-21 09:00",
        "2027-06-27 09:00",
        "Fix:",
        "deadline_days",
    ] {
        assert!(err.contains(want), "missing {want:?} in: {err}");
    }
    assert!(!dir.path().join("out/summary.json").exists());
    // `check` reads the file too and refuses it for the same reason.
    let check = Command::cargo_bin("sunward")
        .unwrap()
        .arg("check")
        .arg(&mission)
        .output()
        .unwrap();
    assert_eq!(check.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&check.stderr).contains("2027-06-27 09:00"));
}

/// The file's temp_air_c column becomes the air temperature (linear between records,
/// naive times at the site's +01:00); without the column the monthly climate stays.
#[test]
fn air_temperature_comes_from_the_file_when_it_has_the_column() {
    use sunward::mission::prepare::Models;
    let dir = tempfile::tempdir().unwrap();
    let mut weather = String::from("time,ghi_w_m2,temp_air_c\n");
    let start = NaiveDate::from_ymd_opt(2027, 6, 20)
        .unwrap()
        .and_hms_opt(0, 0, 0)
        .unwrap();
    for h in 0..=(24 * 4) {
        let t = start + Duration::hours(h);
        weather.push_str(&format!(
            "{},0,{}\n",
            t.format("%Y-%m-%d %H:%M"),
            h as f64 * 0.5
        ));
    }
    let path = csv_mission(dir.path(), &weather, "2027-06-21", 2.0);
    let text = std::fs::read_to_string(&path).unwrap();
    let m = sunward::mission::check(&text, dir.path(), &|p: &std::path::Path| p.is_file()).unwrap();
    let models = Models::with_weather(&m, Some(&weather)).unwrap();
    // 2027-06-21 12:30 local = 11:30 UTC is 36.5 h after the first record: 18.25 °C.
    let t = NaiveDate::from_ymd_opt(2027, 6, 21)
        .unwrap()
        .and_hms_opt(11, 30, 0)
        .unwrap()
        .and_utc();
    let got = models.ambient.temp_c(t, 3600);
    assert!((got - 18.25).abs() < 1e-9, "{got}");
    let plain = weather
        .lines()
        .map(|l| l.rsplit_once(',').unwrap().0.to_string() + "\n")
        .collect::<String>();
    let models = Models::with_weather(&m, Some(&plain)).unwrap();
    assert!(matches!(models.ambient, Ambient::Monthly(_)));
    assert!(
        Models::new(&m).is_err(),
        "a csv mission needs the file's text"
    );
}

/// A per-day clear-sky index overrides the monthly factor on the days it covers, and the
/// monthly factor (here 1) holds after its end: over two days with the index [0.5] the
/// energy is half of the first day's clear-sky energy plus all of the second day's (a
/// linear panel on the isotropic sky, so the energy is linear in the factor).
#[test]
fn daily_clearness_overrides_the_month_on_its_days_only() {
    let rover = Rover::default();
    let route = parked_route(&rover);
    let s = stages();
    let panel = ideal_panel();
    let energy = |days: f64, daily: Option<&[f64]>| {
        let mut set = setup(&route, &rover, &s, &panel, None);
        set.policy.deadline_s = days * 86_400.0;
        set.sky.clearness_daily = daily;
        simulate(&set, midnight()).unwrap().ledger.generated_wh
    };
    let day0 = energy(1.0, None);
    let both = energy(2.0, None);
    let mixed = energy(2.0, Some(&[0.5]));
    assert!(day0 > 1000.0 && both > 1.9 * day0);
    let want = 0.5 * day0 + (both - day0);
    assert!((mixed - want).abs() < 1e-9 * want, "{mixed} vs {want}");
}
