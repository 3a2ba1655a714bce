//! The rover as the route planner's [`StepModel`]: [`Rover::step_cost`] per step, and the
//! bounds that keep the planner's A* exact (contract in [`crate::plan::cost`]).
//!
//! Bounds, for a straight displacement of horizontal length d and rise dz, with the
//! firm-ground wheel work W = m g (C_rr·d + dz):
//! - energy ≥ max(W/η_max, ρ·W) + P_hotel·√(d² + dz²)/v_max, where η_max is the best
//!   drive efficiency (the constant, or the largest entry of the efficiency table) and ρ
//!   the regen fraction. Soft soil only adds compaction resistance and slip (both raise
//!   the work of a push and lower the return of a brake), and speed never exceeds v_max.
//! - time ≥ √(d² + dz²)/v_max.
//! - energy ≥ ρ m g · dz for every step (k = ρ m g).
//!
//! W ↦ max(W/η, ρW) is convex, non-decreasing and positively homogeneous, so the energy
//! bound is subadditive; the Euclidean terms are norms. Turning energy is not part of a
//! step (it would only raise costs).
//!
//! # Units
//! Joules, seconds, metres.

use crate::plan::cost::{Blocked as PlanBlocked, Step, StepEnergy, StepModel};
use crate::vehicle::attitude::Attitude;
use crate::vehicle::rover::Rover;
use crate::vehicle::step::Blocked;

impl Rover {
    /// The highest battery-to-wheel efficiency the rover reaches.
    pub fn best_drive_efficiency(&self) -> f64 {
        match &self.efficiency_table {
            None => self.drive_efficiency,
            Some(t) => t.efficiency.iter().flatten().copied().fold(0.0, f64::max),
        }
    }

    fn plan_reason(&self, why: Blocked, step: &Step) -> PlanBlocked {
        match why {
            Blocked::TractionLimit => PlanBlocked::Traction,
            Blocked::SinkageLimit => PlanBlocked::Sinkage,
            Blocked::NoTerrain => PlanBlocked::NoData,
            Blocked::TiltLimit if step.pitch_rad > self.max_climb_rad => PlanBlocked::PitchUp,
            Blocked::TiltLimit if -step.pitch_rad > self.max_descent_rad => PlanBlocked::PitchDown,
            Blocked::TiltLimit => PlanBlocked::Roll,
        }
    }
}

impl StepModel for Rover {
    fn step(&self, step: &Step) -> Result<StepEnergy, PlanBlocked> {
        let attitude = Attitude {
            pitch_rad: step.pitch_rad,
            roll_rad: step.roll_rad,
        };
        let c = self.step_cost(step.d_m, step.dz_m, attitude);
        match c.blocked {
            None => Ok(StepEnergy {
                energy_j: c.total_energy_j(),
                time_s: c.time_s,
            }),
            Some(why) => Err(self.plan_reason(why, step)),
        }
    }

    fn energy_lower_bound_j(&self, d_m: f64, dz_m: f64) -> f64 {
        let w = self.weight_n() * (self.rolling_resistance * d_m + dz_m);
        let drive = if w > 0.0 {
            w / self.best_drive_efficiency()
        } else {
            self.regen_fraction * w
        };
        drive + self.hotel_power_w * d_m.hypot(dz_m) / self.max_speed_m_s
    }

    fn time_lower_bound_s(&self, d_m: f64, dz_m: f64) -> f64 {
        d_m.hypot(dz_m) / self.max_speed_m_s
    }

    fn regen_bound_j_per_m(&self) -> f64 {
        self.regen_fraction * self.weight_n()
    }
}
