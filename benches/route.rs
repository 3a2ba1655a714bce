//! Planner speed: corner-to-corner energy-optimal route with 25° tilt limits on the
//! seeded synthetic terrain (1 m cells), in process. Prints nodes expanded and
//! nanoseconds per expanded node. SUNWARD_BENCH_SIZE sets the grid size (default 4096).

use std::time::Instant;

use sunward::plan::{
    Blocked, CellFlags, Connectivity, Objective, Planner, Step, StepEnergy, StepModel, TiltLimits,
    Workspace,
};
use sunward::terrain::synth::{synthesize, SynthParams};

/// The wheel-work model of DESIGN.md with 120 + 15 kg, Crr 0.08, η 0.7, no regen,
/// 25 W hotel, 0.5 m/s.
struct BenchRover;

const MG: f64 = 135.0 * 9.806_65;

impl StepModel for BenchRover {
    fn step(&self, s: &Step) -> Result<StepEnergy, Blocked> {
        let w = MG * (0.08 * s.d_m + s.dz_m);
        let t = s.d_m.hypot(s.dz_m) / 0.5;
        Ok(StepEnergy {
            energy_j: w.max(0.0) / 0.7 + 25.0 * t,
            time_s: t,
        })
    }
    fn energy_lower_bound_j(&self, d: f64, dz: f64) -> f64 {
        (MG * (0.08 * d + dz)).max(0.0) / 0.7 + 25.0 * d.hypot(dz) / 0.5
    }
    fn time_lower_bound_s(&self, d: f64, dz: f64) -> f64 {
        d.hypot(dz) / 0.5
    }
    fn regen_bound_j_per_m(&self) -> f64 {
        0.0
    }
}

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
    let p = Planner {
        dem: &dem,
        flags: &flags,
        model: &BenchRover,
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
