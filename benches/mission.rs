//! Mission simulation speed: a 30-day mission for four seasons at 10 s steps, route
//! already planned (the Vardholm survey mission with its deadline set to 30 days and the
//! run kept going after arrival), timed around `run_seasons` only. Target: under 2 s.

use std::path::Path;
use std::time::Instant;

use sunward::battery::ambient::Ambient;
use sunward::battery::pack::Pack;
use sunward::battery::thermal::ThermalNode;
use sunward::mission::resolve::Sky;
use sunward::mission::runner::run_seasons;
use sunward::mission::sim::{DriveHours, EndCondition, Policy, SimSetup, SkySetup};
use sunward::plan::{plan_route, CellFlags, Planner, RoutePoint};
use sunward::sun::position::{delta_t_model_s, Observer};
use sunward::terrain::{horizon, io::read_dem};
use sunward::vehicle::plan_model::RoverStepModel;

fn main() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(root.join("missions/vardholm_survey.toml")).unwrap();
    let m =
        sunward::mission::check(&text, &root.join("missions"), &|p: &Path| p.is_file()).unwrap();
    let dem = read_dem(&m.terrain.dem_path, &m.terrain.read).unwrap();
    let flags = CellFlags::from_dem(&dem);
    let model = RoverStepModel::new(&m.rover);
    let planner = Planner {
        dem: &dem,
        flags: &flags,
        model: &model,
        limits: m.route.tilt,
        connectivity: m.route.connectivity,
        objective: m.route.objective,
    };
    let pts: Vec<RoutePoint> = vec![m.route.start.point.clone(), m.route.goal.point.clone()];
    let route = plan_route(&planner, &pts).unwrap();
    let horizons = horizon::horizon_map(&dem, 32, &sunward::progress::Silent).unwrap();
    let pack = Pack::new(&m.battery).unwrap();
    let thermal = ThermalNode::new(&m.thermal).unwrap();
    let ambient = Ambient::Monthly(m.weather.climate.clone());
    let Sky::ClearSky(linke) = m.weather.sky else {
        panic!("clear sky expected")
    };
    let setup = SimSetup {
        route: &route,
        rover: &m.rover,
        pack: &pack,
        initial_soc: 1.0,
        thermal: &thermal,
        initial_box_temp_c: None,
        electronics_heat_share: 0.3,
        loads: &m.loads,
        panel: &m.panels.panel,
        mount: m.panels.mount,
        sky: SkySetup {
            observer: Observer::new(
                m.site.latitude_rad,
                m.site.longitude_rad,
                m.site.elevation_m,
            )
            .unwrap(),
            delta_t_s: delta_t_model_s(2027.5),
            linke,
            sky_model: m.weather.sky_model,
            albedo: m.weather.albedo,
            wind_m_s: m.weather.wind_m_s,
            clearness_monthly: [1.0; 12],
        },
        horizon: Some(&horizons),
        ambient: &ambient,
        utc_offset_s: 3600,
        policy: Policy {
            drive_hours: DriveHours::Daylight,
            min_soc_to_drive: 0.0,
            resume_soc: 0.0,
            deadline_s: 30.0 * 86_400.0,
            end: EndCondition::Deadline,
            sleep_outside_hours: true,
        },
        step_s: 10.0,
        stops: Vec::new(),
        holds: Vec::new(),
    };
    let t = Instant::now();
    let results = run_seasons(&setup, &m.seasons).unwrap();
    let secs = t.elapsed().as_secs_f64();
    let steps: usize = results.iter().map(|r| r.run.samples.len()).sum();
    println!(
        "mission: {} seasons x 30 days at 10 s = {steps} steps in {secs:.2} s (target 2 s), {:.0} ns per step",
        results.len(),
        secs * 1e9 / steps as f64
    );
}
