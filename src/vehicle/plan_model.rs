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
//! # Speed
//! The planner evaluates tens of millions of steps. On firm ground with a constant drive
//! efficiency and no power cap, [`RoverStepModel`] uses the closed form of
//! [`Rover::step_cost`] with every limit compared as a tangent (one arc tangent, for the
//! speed law, by [`crate::fastmath::atan`], one square root and one division per step);
//! elsewhere it calls `step_cost` itself. A test checks the two agree on random steps.
//!
//! # Units
//! Joules, seconds, metres.

use crate::plan::cost::{Blocked as PlanBlocked, Step, StepEnergy, StepModel, WheelBounds};
use crate::vehicle::attitude::Attitude;
use crate::vehicle::powertrain::SpeedLaw;
use crate::vehicle::rover::Rover;
use crate::vehicle::step::Blocked;

/// Constants of the firm-ground closed form, precomputed once per rover.
#[derive(Debug, Clone, Copy)]
struct Firm {
    weight_n: f64,
    crr: f64,
    /// 1 / drive efficiency.
    inv_eta: f64,
    rho: f64,
    hotel_w: f64,
    v_max: f64,
    /// The speed law's floor and 1 / its zero-speed pitch (0 and 0: constant speed).
    min_fraction: f64,
    inv_zero_speed_pitch: f64,
    mu: f64,
    tan_climb: f64,
    tan_descent: f64,
    tan_roll: f64,
    tan_side: f64,
    tan_forward: f64,
    tan_backward: f64,
}

impl Firm {
    fn of(r: &Rover) -> Option<Firm> {
        if r.soil.is_some() || r.efficiency_table.is_some() || r.max_drive_power_w.is_some() {
            return None;
        }
        let tip = r.tip_over();
        Some(Firm {
            weight_n: r.weight_n(),
            crr: r.rolling_resistance,
            inv_eta: 1.0 / r.drive_efficiency,
            rho: r.regen_fraction,
            hotel_w: r.hotel_power_w,
            v_max: r.max_speed_m_s,
            min_fraction: match r.speed_law {
                SpeedLaw::Constant => 1.0,
                SpeedLaw::Linear { min_fraction, .. } => min_fraction,
            },
            inv_zero_speed_pitch: match r.speed_law {
                SpeedLaw::Constant => 0.0,
                SpeedLaw::Linear {
                    zero_speed_pitch_rad,
                    ..
                } => 1.0 / zero_speed_pitch_rad,
            },
            mu: r.ground_friction,
            tan_climb: r.max_climb_rad.tan(),
            tan_descent: r.max_descent_rad.tan(),
            tan_roll: r.roll_limit_rad().tan(),
            tan_side: tip.sideways_rad.tan(),
            tan_forward: tip.forward_rad.tan(),
            tan_backward: tip.backward_rad.tan(),
        })
    }

    /// [`Rover::step_cost`] on firm ground, limits as tangents: pitch p = atan(s),
    /// tan(roll) = −t/√(1 + s²), tip-over lean tan = |s|·√(1 + tan² roll), traction
    /// |C_rr cos θ + sin θ| ≤ μ cos θ ⇔ |C_rr + s| ≤ μ.
    #[inline]
    fn step(&self, step: &Step) -> Result<StepEnergy, PlanBlocked> {
        let (s, t) = (step.slope, step.cross_slope);
        if s > self.tan_climb {
            return Err(PlanBlocked::PitchUp);
        }
        if -s > self.tan_descent {
            return Err(PlanBlocked::PitchDown);
        }
        // tan² roll = t²/(1 + s²) and lean² = s²(1 + tan² roll), compared multiplied out
        // by 1 + s² > 0 (no division).
        let (t2, c2) = (t * t, 1.0 + s * s);
        let lean_c2 = s * s * (c2 + t2);
        let edge = if s >= 0.0 {
            self.tan_backward
        } else {
            self.tan_forward
        };
        if t2 > self.tan_roll * self.tan_roll * c2
            || t2 >= self.tan_side * self.tan_side * c2
            || lean_c2 >= edge * edge * c2
        {
            return Err(PlanBlocked::Roll);
        }
        if (self.crr + s).abs() > self.mu {
            return Err(PlanBlocked::Traction);
        }
        let work = self.weight_n * (self.crr * step.d_m + step.dz_m);
        let drive = if work > 0.0 {
            work * self.inv_eta
        } else {
            self.rho * work
        };
        // SpeedLaw::speed_m_s with the division by the zero-speed pitch as a product
        // (the same to within an ulp; the test below compares).
        let speed = if self.inv_zero_speed_pitch == 0.0 {
            self.v_max
        } else {
            let f = 1.0 - crate::fastmath::atan(s).abs() * self.inv_zero_speed_pitch;
            self.v_max * f.max(self.min_fraction)
        };
        let time_s = step.length_m() / speed;
        Ok(StepEnergy {
            energy_j: drive + self.hotel_w * time_s,
            time_s,
        })
    }
}

/// The rover as the planner sees it: [`Rover::step_cost`] per step (or its firm-ground
/// closed form) plus the bounds of the module doc.
#[derive(Debug, Clone)]
pub struct RoverStepModel<'a> {
    rover: &'a Rover,
    firm: Option<Firm>,
    bounds: WheelBounds,
}

impl<'a> RoverStepModel<'a> {
    /// Precomputes what the planner's hot loop needs.
    pub fn new(rover: &'a Rover) -> RoverStepModel<'a> {
        RoverStepModel {
            rover,
            firm: Firm::of(rover),
            bounds: WheelBounds {
                weight_n: rover.weight_n(),
                crr: rover.rolling_resistance,
                eta: rover.best_drive_efficiency(),
                rho: rover.regen_fraction,
                hotel_w: rover.hotel_power_w,
                v_max: rover.max_speed_m_s,
            },
        }
    }

    /// The general path, [`Rover::step_cost`], whatever the rover (for tests).
    pub fn general_step(&self, step: &Step) -> Result<StepEnergy, PlanBlocked> {
        let attitude = Attitude {
            pitch_rad: step.pitch_rad(),
            roll_rad: step.roll_rad(),
        };
        let c = self.rover.step_cost(step.d_m, step.dz_m, attitude);
        match c.blocked {
            None => Ok(StepEnergy {
                energy_j: c.total_energy_j(),
                time_s: c.time_s,
            }),
            Some(why) => Err(self.rover.plan_reason(why, step)),
        }
    }
}

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
            Blocked::TiltLimit if step.pitch_rad() > self.max_climb_rad => PlanBlocked::PitchUp,
            Blocked::TiltLimit if -step.pitch_rad() > self.max_descent_rad => {
                PlanBlocked::PitchDown
            }
            Blocked::TiltLimit => PlanBlocked::Roll,
        }
    }
}

impl StepModel for RoverStepModel<'_> {
    // The planner's hot loop calls this at two sites (with and without bounds checks);
    // inlined at both, the result never goes through memory.
    #[inline(always)]
    fn step(&self, step: &Step) -> Result<StepEnergy, PlanBlocked> {
        match &self.firm {
            Some(f) => f.step(step),
            None => self.general_step(step),
        }
    }

    #[inline]
    fn energy_lower_bound_j(&self, d_m: f64, dz_m: f64) -> f64 {
        self.bounds.energy_j(d_m, dz_m)
    }

    #[inline]
    fn time_lower_bound_s(&self, d_m: f64, dz_m: f64) -> f64 {
        self.bounds.time_s(d_m, dz_m)
    }

    fn wheel_bounds(&self) -> Option<WheelBounds> {
        Some(self.bounds)
    }

    fn regen_bound_j_per_m(&self) -> f64 {
        self.rover.regen_fraction * self.rover.weight_n()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::terrain::synth::SplitMix64;

    /// The firm-ground closed form equals `Rover::step_cost` on random steps, limits
    /// included, for rovers with and without regen and with both speed laws.
    #[test]
    fn closed_form_equals_the_general_step_cost() {
        let rovers = [
            Rover::default(),
            Rover {
                regen_fraction: 0.4,
                speed_law: SpeedLaw::Constant,
                max_roll_rad: 0.6,
                roll_stability_fraction: 1.0,
                ..Rover::default()
            },
            Rover {
                ground_friction: 0.3,
                cg_height_m: 0.9,
                ..Rover::default()
            },
        ];
        let mut rng = SplitMix64::new(8);
        let mut blocked = [0usize; 2];
        for rover in &rovers {
            let m = RoverStepModel::new(rover);
            assert!(m.firm.is_some());
            for _ in 0..20_000 {
                let d = 1.0 + 4.0 * rng.next_f64();
                let s = (rng.next_f64() - 0.5) * 1.4;
                let step = Step {
                    d_m: d,
                    dz_m: s * d,
                    heading_rad: 0.0,
                    slope: s,
                    cross_slope: (rng.next_f64() - 0.5) * 1.2,
                    from: 0,
                    to: 1,
                };
                match (m.step(&step), m.general_step(&step)) {
                    (Ok(a), Ok(b)) => {
                        blocked[0] += 1;
                        assert!(
                            (a.energy_j - b.energy_j).abs() <= 1e-9 * b.energy_j.abs().max(1.0),
                            "{step:?}"
                        );
                        assert!((a.time_s - b.time_s).abs() <= 1e-12 * b.time_s);
                    }
                    (Err(a), Err(b)) => {
                        blocked[1] += 1;
                        assert_eq!(a, b, "{step:?}");
                    }
                    (a, b) => panic!("{step:?}: closed form {a:?}, general {b:?}"),
                }
            }
        }
        assert!(blocked[0] > 10_000 && blocked[1] > 10_000, "{blocked:?}");
    }
}
