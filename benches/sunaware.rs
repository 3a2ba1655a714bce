//! Sun-aware planning speed: a 1024 x 1024 synthetic terrain (2 m cells, seed 1), a
//! 48-hour horizon at 60° N from local midnight near the equinox, a slow rover with a
//! small pack, so that the plan must wait for light. Timed around `plan_sun_aware` only
//! (the horizon map is made before). Target: under 60 s for each objective.
//!
//! `SUNWARD_BENCH_SIZE` sets another grid size, `SUNWARD_BENCH_BLOCK` the lattice block
//! (default 16 cells: a 64 x 64 lattice at 32 m).

use std::time::Instant;

use chrono::NaiveDate;
use sunward::battery::ambient::{Ambient, MonthlyClimate};
use sunward::battery::loads::Loads;
use sunward::battery::pack::Pack;
use sunward::battery::params::PackParams;
use sunward::battery::thermal::{ThermalNode, ThermalParams};
use sunward::mission::sim::{simulate, DriveHours, EndCondition, Policy, SimSetup, SkySetup};
use sunward::mission::sunaware::{plan_sun_aware, SunAwareObjective, SunAwareSettings};
use sunward::plan::{
    plan_route, CellFlags, Connectivity, Objective, Planner, RoutePoint, TiltLimits,
};
use sunward::sun::irradiance::LinkeTurbidity;
use sunward::sun::panel::{Mount, Panel};
use sunward::sun::position::Observer;
use sunward::sun::transposition::SkyModel;
use sunward::terrain::horizon::horizon_map;
use sunward::terrain::synth::{synthesize, SynthParams};
use sunward::vehicle::plan_model::RoverStepModel;
use sunward::vehicle::Rover;

/// CPU seconds this process has used (user + system, from /proc/self/stat; 0 where
/// there is no /proc): on a shared machine the wall time alone says little.
fn cpu_s() -> f64 {
    let stat = std::fs::read_to_string("/proc/self/stat").unwrap_or_default();
    let after = stat.rsplit(')').next().unwrap_or("");
    let f: Vec<f64> = after
        .split_whitespace()
        .map(|x| x.parse().unwrap_or(0.0))
        .collect();
    // Fields 14 and 15 of the line (utime, stime) are 12 and 13 after the ')'; clock
    // ticks of 1/100 s (the Linux default USER_HZ).
    (f.get(11).unwrap_or(&0.0) + f.get(12).unwrap_or(&0.0)) / 100.0
}

fn env(name: &str, default: usize) -> usize {
    std::env::var(name)
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(default)
}

fn main() {
    let size = env("SUNWARD_BENCH_SIZE", 1024);
    let block = env("SUNWARD_BENCH_BLOCK", 16);
    let cell_m = 2.0;
    let dem = synthesize(&SynthParams {
        size,
        cell_m,
        ..SynthParams::default()
    })
    .unwrap();
    let horizons = horizon_map(&dem, 32, &sunward::progress::Silent).unwrap();
    let flags = CellFlags::from_dem(&dem);
    let rover = Rover {
        max_speed_m_s: 0.2,
        ..Rover::default()
    };
    let model = RoverStepModel::new(&rover);
    let planner = Planner {
        dem: &dem,
        flags: &flags,
        model: &model,
        limits: TiltLimits::default(),
        connectivity: Connectivity::Eight,
        objective: Objective::ENERGY,
    };
    let extent = size as f64 * cell_m;
    let pt = |label: &str, f: f64| RoutePoint {
        label: label.into(),
        x: f * extent,
        y: f * extent,
    };
    let (from, to) = (pt("start", 0.1), pt("goal", 0.9));
    let route = plan_route(&planner, &[from.clone(), to.clone()]).unwrap();
    let pack = Pack::new(&PackParams {
        capacity_wh: Some(400.0),
        nominal_voltage_v: Some(25.6),
        ..PackParams::default()
    })
    .unwrap();
    let thermal = ThermalNode::new(&ThermalParams::default()).unwrap();
    let loads = Loads::new(Vec::new()).unwrap();
    let ambient = Ambient::Monthly(MonthlyClimate {
        mean_c: [12.0; 12],
        diurnal_swing_c: [6.0; 12],
        peak_hour: 15.0,
    });
    let panel = Panel {
        area_m2: 0.8,
        ..Panel::default()
    };
    let setup = SimSetup {
        route: &route,
        rover: &rover,
        pack: &pack,
        initial_soc: 0.6,
        thermal: &thermal,
        initial_box_temp_c: None,
        electronics_heat_share: 0.3,
        loads: &loads,
        panel: &panel,
        mount: Mount::BodyFixed {
            normal_body: [0.0, 0.0, 1.0],
        },
        sky: SkySetup {
            observer: Observer::new(60f64.to_radians(), 0.0, 100.0).unwrap(),
            delta_t_s: 69.0,
            linke: LinkeTurbidity::new([3.0; 12]).unwrap(),
            sky_model: SkyModel::HayDavies,
            albedo: 0.2,
            wind_m_s: 1.0,
            clearness_monthly: [1.0; 12],
            clearness_daily: None,
            weather: None,
        },
        horizon: Some(&horizons),
        ambient: &ambient,
        utc_offset_s: 0,
        policy: Policy {
            drive_hours: DriveHours::Daylight,
            min_soc_to_drive: 0.0,
            resume_soc: 0.0,
            deadline_s: 48.0 * 3600.0,
            end: EndCondition::Arrival,
            sleep_outside_hours: true,
        },
        step_s: 60.0,
        stops: Vec::new(),
        holds: Vec::new(),
        start_local_h: 0.0,
        sun_steps: None,
    };
    let t0 = NaiveDate::from_ymd_opt(2027, 9, 23)
        .unwrap()
        .and_hms_opt(0, 0, 0)
        .unwrap()
        .and_utc();
    let fixed = simulate(&setup, t0).unwrap();
    println!(
        "sunaware: {size}x{size} terrain, {block}-cell blocks, 48 h horizon; fixed route {:.0} m, \
         arrival {:?}, stranded {}",
        route.summary.length_m,
        fixed.arrival.map(|a| (a - t0).num_minutes() as f64 / 60.0),
        fixed.stranded.is_some()
    );
    for objective in [
        SunAwareObjective::EarliestArrival,
        SunAwareObjective::MostCharge,
    ] {
        let mut settings = SunAwareSettings {
            block_cells: block,
            objective,
            ..SunAwareSettings::default()
        };
        if let Some(eps) = std::env::var("SUNWARD_BENCH_EPS")
            .ok()
            .and_then(|v| v.parse().ok())
        {
            settings.soc_resolution = eps;
        }
        if let Some(b) = std::env::var("SUNWARD_BENCH_BUCKET_S")
            .ok()
            .and_then(|v| v.parse().ok())
        {
            settings.bucket_s = b;
        }
        let (t, c) = (Instant::now(), cpu_s());
        let plan = plan_sun_aware(&planner, &setup, &from, &to, t0, &settings);
        let secs = t.elapsed().as_secs_f64();
        let cpu = cpu_s() - c;
        match plan {
            Ok(p) => println!(
                "sunaware {objective:?}: {secs:.2} s wall, {cpu:.2} s CPU (target 60 s), {} \
                 labels expanded, {} made, {} dominated, refined {} ({} corridor nodes); \
                 arrival {:.2} h, final SOC {:.3}, {} holds, {:.0} m",
                p.stats.labels_expanded,
                p.stats.labels_created,
                p.stats.labels_dominated,
                p.stats.refined,
                p.stats.refine_nodes,
                p.arrival_s / 3600.0,
                p.final_soc,
                p.holds.len(),
                p.route.summary.length_m
            ),
            Err(e) => println!("sunaware {objective:?}: {secs:.2} s, no plan: {e}"),
        }
    }
}
