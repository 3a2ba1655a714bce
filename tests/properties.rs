//! Property tests (proptest, fixed seeds, few cases so the suite stays fast) of the
//! invariants a user relies on, over inputs drawn at random:
//!
//! - the season simulation keeps the state of charge in [0, 1], never books a negative
//!   consumption, and its energy ledger closes (generated − consumed − losses = Δstored,
//!   to 0.1 %, the bound DESIGN.md sets);
//! - no row of a planned route's profile breaks a tilt limit, enters a closed cell or
//!   jumps further than one step of the chosen connectivity;
//! - the runner's results do not depend on the number of rayon threads.
//!
//! A* against Dijkstra on random grids is tests/plan_astar.rs (seeded generator).

use chrono::{DateTime, Duration, NaiveDate, Utc};
use proptest::prelude::*;
use proptest::test_runner::{Config, RngSeed};

use sunward::battery::ambient::{Ambient, MonthlyClimate};
use sunward::battery::loads::{LoadSpec, Loads, Schedule};
use sunward::battery::pack::Pack;
use sunward::battery::params::PackParams;
use sunward::battery::thermal::{ThermalNode, ThermalParams};
use sunward::mission::resolve::Season;
use sunward::mission::runner::run_seasons;
use sunward::mission::sim::{simulate, DriveHours, EndCondition, Policy, SimSetup, SkySetup};
use sunward::plan::{
    plan_route, Blocked, CellFlags, Connectivity, Objective, Planner, Route, RoutePoint, TiltLimits,
};
use sunward::sun::irradiance::LinkeTurbidity;
use sunward::sun::panel::{CellTemperature, Mount, Panel};
use sunward::sun::position::Observer;
use sunward::sun::transposition::SkyModel;
use sunward::terrain::{Dem, GeoRef, Grid};
use sunward::vehicle::plan_model::RoverStepModel;
use sunward::vehicle::Rover;

fn config(cases: u32, seed: u64) -> Config {
    Config {
        cases,
        rng_seed: RngSeed::Fixed(seed),
        failure_persistence: None,
        ..Config::default()
    }
}

/// A gentle plane of 2 m cells rising `rise` metres per cell eastward.
fn plane(n: usize, rise: f32) -> Dem {
    let data = (0..n * n).map(|i| 100.0 + rise * (i % n) as f32).collect();
    Grid::from_vec(n, n, data, GeoRef::local(2.0))
}

fn point(label: &str, x: f64, y: f64) -> RoutePoint {
    RoutePoint {
        label: label.into(),
        x,
        y,
    }
}

fn route_across(dem: &Dem, rover: &Rover) -> Route {
    let flags = CellFlags::from_dem(dem);
    let model = RoverStepModel::new(rover);
    let p = Planner {
        dem,
        flags: &flags,
        model: &model,
        limits: TiltLimits::default(),
        connectivity: Connectivity::Sixteen,
        objective: Objective::ENERGY,
    };
    let far = dem.width() as f64 * 2.0 - 3.0;
    plan_route(&p, &[point("start", 3.0, -3.0), point("goal", far, -far)]).unwrap()
}

/// The battery, box, loads and air of one drawn case.
struct Stages {
    pack: Pack,
    thermal: ThermalNode,
    loads: Loads,
    ambient: Ambient,
    panel: Panel,
}

/// One drawn mission: site, date, pack, loads, climate and policy.
#[derive(Debug, Clone)]
struct Case {
    lat_deg: f64,
    lon_deg: f64,
    day: u32,
    capacity_wh: f64,
    initial_soc: f64,
    panel_m2: f64,
    load_w: f64,
    duty: f64,
    air_c: f64,
    swing_c: f64,
    heater_w: f64,
    daylight_only: bool,
    min_soc_to_drive: f64,
    resume_soc: f64,
    sleep: bool,
}

fn cases() -> impl Strategy<Value = Case> {
    (
        (-75.0..75.0f64, -30.0..30.0f64, 0u32..365),
        (300.0..3000.0f64, 0.3..1.0f64, 0.0..3.0f64),
        (0.0..40.0f64, 0.1..1.0f64),
        (-20.0..35.0f64, 0.0..12.0f64, 0.0..30.0f64),
        (any::<bool>(), 0.0..0.5f64, 0.5..0.95f64, any::<bool>()),
    )
        .prop_map(|(site, pack, load, air, policy)| Case {
            lat_deg: site.0,
            lon_deg: site.1,
            day: site.2,
            capacity_wh: pack.0,
            initial_soc: pack.1,
            panel_m2: pack.2,
            load_w: load.0,
            duty: load.1,
            air_c: air.0,
            swing_c: air.1,
            heater_w: air.2,
            daylight_only: policy.0,
            min_soc_to_drive: policy.1,
            resume_soc: policy.2,
            sleep: policy.3,
        })
}

fn stages(c: &Case) -> Stages {
    Stages {
        pack: Pack::new(&PackParams {
            capacity_wh: Some(c.capacity_wh),
            nominal_voltage_v: Some(25.6),
            ..PackParams::default()
        })
        .unwrap(),
        thermal: ThermalNode::new(&ThermalParams {
            heater_power_w: c.heater_w,
            ..ThermalParams::default()
        })
        .unwrap(),
        loads: Loads::new(vec![LoadSpec {
            name: "instrument".into(),
            power_w: c.load_w,
            duty: c.duty,
            schedule: Schedule::Always,
        }])
        .unwrap(),
        ambient: Ambient::Monthly(MonthlyClimate {
            mean_c: [c.air_c; 12],
            diurnal_swing_c: [c.swing_c; 12],
            peak_hour: 15.0,
        }),
        panel: Panel {
            area_m2: c.panel_m2,
            efficiency_stc: 0.2,
            temp_coeff_per_k: -0.004,
            soiling_loss: 0.02,
            mppt_efficiency: 0.97,
            wiring_efficiency: 0.98,
            cell_temperature: CellTemperature::default(),
        },
    }
}

fn setup<'a>(c: &Case, route: &'a Route, rover: &'a Rover, s: &'a Stages) -> SimSetup<'a> {
    let observer = Observer::new(c.lat_deg.to_radians(), c.lon_deg.to_radians(), 200.0).unwrap();
    SimSetup {
        route,
        rover,
        pack: &s.pack,
        initial_soc: c.initial_soc,
        thermal: &s.thermal,
        initial_box_temp_c: None,
        electronics_heat_share: 0.3,
        loads: &s.loads,
        panel: &s.panel,
        mount: Mount::BodyFixed {
            normal_body: [0.0, 0.0, 1.0],
        },
        sky: SkySetup {
            observer,
            delta_t_s: 69.0,
            linke: LinkeTurbidity::new([3.0; 12]).unwrap(),
            sky_model: SkyModel::HayDavies,
            albedo: 0.2,
            wind_m_s: 2.0,
            clearness_monthly: [1.0; 12],
            clearness_daily: None,
            weather: None,
        },
        horizon: None,
        ambient: &s.ambient,
        utc_offset_s: 0,
        policy: Policy {
            drive_hours: if c.daylight_only {
                DriveHours::Daylight
            } else {
                DriveHours::Always
            },
            min_soc_to_drive: c.min_soc_to_drive,
            resume_soc: c.resume_soc,
            deadline_s: 86_400.0,
            end: EndCondition::Deadline,
            sleep_outside_hours: c.sleep,
        },
        step_s: 60.0,
        stops: Vec::new(),
        holds: Vec::new(),
        start_local_h: 0.0,
        sun_steps: None,
    }
}

fn date(day: u32) -> NaiveDate {
    NaiveDate::from_ymd_opt(2031, 1, 1).unwrap() + Duration::days(day as i64)
}

fn midnight(day: u32) -> DateTime<Utc> {
    date(day).and_hms_opt(0, 0, 0).unwrap().and_utc()
}

proptest! {
    #![proptest_config(config(24, 20_310_621))]

    /// SOC in [0, 1] at every step; no negative consumption; the ledger closes to 0.1 %.
    #[test]
    fn soc_stays_in_bounds_and_the_ledger_closes(c in cases()) {
        let dem = plane(12, 0.1);
        let rover = Rover::default();
        let route = route_across(&dem, &rover);
        let s = stages(&c);
        let run = simulate(&setup(&c, &route, &rover, &s), midnight(c.day)).unwrap();
        for x in &run.samples {
            prop_assert!((0.0..=1.0).contains(&x.soc), "SOC {} at {}", x.soc, x.time);
            for (name, w) in [
                ("generated", x.generated_w),
                ("hotel", x.hotel_w),
                ("payload", x.payload_w),
                ("heater", x.heater_w),
                ("losses", x.losses_w),
                ("curtailed", x.curtailed_w),
            ] {
                prop_assert!(w >= 0.0 && w.is_finite(), "{name} {w} W at {}", x.time);
            }
        }
        prop_assert!((0.0..=1.0).contains(&run.min_soc.0));
        let l = &run.ledger;
        prop_assert!(
            l.relative_residual() < 1e-3,
            "residual {} Wh of generated {} Wh, consumed {} Wh, stored {} Wh",
            l.residual_wh(), l.generated_wh, l.consumed_wh(), l.stored_delta_wh
        );
        prop_assert!(run.distance_m <= route.summary.length_m * (1.0 + 1e-9));
    }
}

/// A random grid of 2 m cells: a 0.4 m-per-cell rise eastward plus bumps of up to 0.5 m,
/// and about 8 % of the cells closed.
fn grids() -> impl Strategy<Value = (usize, usize, Vec<f32>, Vec<bool>)> {
    (6usize..14, 5usize..12).prop_flat_map(|(w, h)| {
        (
            Just(w),
            Just(h),
            proptest::collection::vec(0.0..0.5f32, w * h),
            proptest::collection::vec(proptest::bool::weighted(0.08), w * h),
        )
    })
}

proptest! {
    #![proptest_config(config(48, 77_077))]

    /// Every row of a planned profile keeps the tilt limits, lies on an open cell and
    /// follows its predecessor by one step of the connectivity; distance never falls.
    #[test]
    fn no_route_step_breaks_a_constraint(
        (w, h, bumps, closed) in grids(),
        up_deg in 5.0..40.0f64,
        down_deg in 5.0..40.0f64,
        roll_deg in 5.0..40.0f64,
        sixteen in any::<bool>(),
        objective in 0usize..3,
    ) {
        let data: Vec<f32> = (0..w * h)
            .map(|i| 50.0 + 0.4 * (i % w) as f32 + bumps[i])
            .collect();
        let dem = Grid::from_vec(w, h, data, GeoRef::local(2.0));
        let mut flags = CellFlags::from_dem(&dem);
        let (start, goal) = (0, w * h - 1);
        for (i, &c) in closed.iter().enumerate() {
            if c && i != start && i != goal {
                flags.block(i, Blocked::KeepOut);
            }
        }
        let limits = TiltLimits {
            max_pitch_up_rad: up_deg.to_radians(),
            max_pitch_down_rad: down_deg.to_radians(),
            max_roll_rad: roll_deg.to_radians(),
        };
        let rover = Rover::default();
        let model = RoverStepModel::new(&rover);
        let p = Planner {
            dem: &dem,
            flags: &flags,
            model: &model,
            limits,
            connectivity: if sixteen { Connectivity::Sixteen } else { Connectivity::Eight },
            objective: [Objective::ENERGY, Objective::TIME, Objective::DISTANCE][objective],
        };
        let far = (w as f64 * 2.0 - 1.0, -(h as f64 * 2.0 - 1.0));
        let Ok(route) = plan_route(&p, &[point("start", 1.0, -1.0), point("goal", far.0, far.1)])
        else {
            return Ok(());
        };
        let rows = &route.profile;
        prop_assert_eq!((rows[0].col, rows[0].row), (0, 0));
        let last = rows.last().unwrap();
        prop_assert_eq!((last.col, last.row), (w - 1, h - 1));
        let eps = 1e-9;
        for pair in rows.windows(2) {
            let (a, b) = (&pair[0], &pair[1]);
            prop_assert!(flags.blocked(b.row * w + b.col).is_none(), "closed cell {:?}", (b.col, b.row));
            let (dc, dr) = (b.col.abs_diff(a.col), b.row.abs_diff(a.row));
            let king = dc <= 1 && dr <= 1 && dc + dr > 0;
            let knight = sixteen && ((dc, dr) == (1, 2) || (dc, dr) == (2, 1));
            prop_assert!(king || knight, "jump {:?} -> {:?}", (a.col, a.row), (b.col, b.row));
            prop_assert!(b.pitch_rad <= limits.max_pitch_up_rad + eps, "pitch {}", b.pitch_rad);
            prop_assert!(-b.pitch_rad <= limits.max_pitch_down_rad + eps, "pitch {}", b.pitch_rad);
            prop_assert!(b.roll_rad.abs() <= limits.max_roll_rad + eps, "roll {}", b.roll_rad);
            prop_assert!(b.distance_m > a.distance_m);
            prop_assert!(b.step_time_s > 0.0 && b.step_energy_j.is_finite());
        }
    }
}

proptest! {
    #![proptest_config(config(6, 4_242))]

    /// The same seasons on a pool of one thread and on a pool of two give equal results.
    #[test]
    fn results_do_not_depend_on_the_thread_count(c in cases(), gap in 30u32..150) {
        let dem = plane(10, 0.2);
        let rover = Rover::default();
        let route = route_across(&dem, &rover);
        let s = stages(&c);
        let set = setup(&c, &route, &rover, &s);
        let seasons: Vec<Season> = [c.day, (c.day + gap) % 365, (c.day + 2 * gap) % 365]
            .iter()
            .map(|&d| Season { name: format!("day {d}"), date: date(d) })
            .collect();
        let pool = |n| rayon::ThreadPoolBuilder::new().num_threads(n).build().unwrap();
        let one = pool(1).install(|| run_seasons(&set, &seasons).unwrap());
        let two = pool(2).install(|| run_seasons(&set, &seasons).unwrap());
        prop_assert_eq!(one.len(), 3);
        prop_assert!(one == two, "one thread and two threads disagree");
    }
}
