//! Planner speed: corner-to-corner energy-optimal route with 25° tilt limits on the
//! seeded synthetic terrain (1 m cells) with the default rover, in process. Prints nodes expanded and
//! nanoseconds per expanded node. SUNWARD_BENCH_SIZE sets the grid size (default 4096).

use std::time::Instant;

use sunward::plan::{CellFlags, Connectivity, Objective, Planner, TiltLimits, Workspace};
use sunward::terrain::synth::{synthesize, SynthParams};
use sunward::vehicle::plan_model::RoverStepModel;
use sunward::vehicle::Rover;

fn main() {
    let size: usize = std::env::var("SUNWARD_BENCH_SIZE")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(4096);
    let dem = synthesize(&SynthParams {
        size,
        cell_m: 1.0,
        seed: 4,
        ..Default::default()
    })
    .unwrap();
    let flags = CellFlags::from_dem(&dem);
    let limit = 25f64.to_radians();
    // The default rover with 25° limits on pitch and roll.
    let rover = Rover {
        max_climb_rad: limit,
        max_descent_rad: limit,
        max_roll_rad: limit,
        roll_stability_fraction: 1.0,
        ..Rover::default()
    };
    let p = Planner {
        dem: &dem,
        flags: &flags,
        model: &RoverStepModel::new(&rover),
        limits: TiltLimits {
            max_pitch_up_rad: limit,
            max_pitch_down_rad: limit,
            max_roll_rad: limit,
        },
        connectivity: Connectivity::Eight,
        objective: Objective::ENERGY,
    };
    let mut ws = Workspace::default();
    let t = Instant::now();
    let r = p.search(0, dem.len() - 1, &mut ws);
    let secs = t.elapsed().as_secs_f64();
    match r {
        Ok(path) => println!(
            "route {size}x{size}: {secs:.2} s, {} cells on route, cost {:.1} Wh, {} expanded ({:.0} % of cells), {:.0} ns per expanded node",
            path.cells.len(),
            path.cost / 3600.0,
            path.expanded,
            100.0 * path.expanded as f64 / dem.len() as f64,
            secs * 1e9 / path.expanded as f64
        ),
        Err(u) => println!("route {size}x{size}: unreachable after {secs:.2} s: {u:?}"),
    }
}
