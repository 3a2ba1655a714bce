//! Mission simulation speed: a 30-day mission for four seasons at 10 s steps, route
//! already planned (the Vardholm survey mission with its deadline set to 30 days and the
//! run kept going after arrival), timed around `run_seasons` only. Target: under 2 s.

use std::path::Path;
use std::time::Instant;

use sunward::mission::prepare::{plan, sim_setup, Ground, Models};
use sunward::mission::runner::run_seasons;
use sunward::mission::sim::EndCondition;
use sunward::terrain::horizon;

fn main() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(root.join("missions/vardholm_survey.toml")).unwrap();
    let m =
        sunward::mission::check(&text, &root.join("missions"), &|p: &Path| p.is_file()).unwrap();
    // Start and goal only: the sites' payload stops are not part of this timing.
    let mut m = m;
    m.route.waypoints.clear();
    m.route.sites.clear();
    m.step_s = 10.0;
    m.policy.deadline_s = 30.0 * 86_400.0;
    m.policy.min_soc_to_drive = 0.0;
    m.policy.park_and_charge_to_soc = 0.0;
    m.start_local_h = 0.0;
    let ground = Ground::load(&m).unwrap();
    let planned = plan(&m, &ground).unwrap().unwrap();
    let horizons = horizon::horizon_map(&ground.dem, 32, &sunward::progress::Silent).unwrap();
    let models = Models::new(&m).unwrap();
    let mut setup = sim_setup(&m, &models, &planned, Some(&horizons));
    setup.policy.end = EndCondition::Deadline;
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
