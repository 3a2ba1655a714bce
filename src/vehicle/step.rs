//! The cost of one straight step across the terrain: the vehicle model's answer to the
//! route planner and the mission simulation.
//!
//! # Method
//! For a step of horizontal length d and rise dz (path s = √(d² + dz²), grade
//! θ = atan2(dz, d)) with body attitude (pitch, roll):
//! 1. Forces along the path: grade and rolling resistance `m g (C_rr cos θ + sin θ)`,
//!    plus, on a named soil, the Bekker compaction resistance of every wheel, each
//!    carrying `m g cos θ / N` ([`crate::vehicle::traction`]).
//! 2. Traction: on firm ground `|F| ≤ μ m g cos θ`; on soil, the slip i at which the
//!    wheels' Janosi–Hanamoto thrust equals F, with `max_slip` as the traction limit
//!    (braking is checked against the same limit).
//! 3. Work at the wheel rims: `W = F s / (1 − i)` when pushing (slip makes the wheels
//!    turn further than the body moves), `W = F s` (negative) when braking. On firm
//!    ground this is `m g (C_rr d + dz)` exactly (DESIGN.md, "Physics core").
//! 4. Electrical energy `E = W / η` or `−ρ_regen |W|` ([`crate::vehicle::powertrain`]).
//! 5. Speed from the speed law at the body pitch, capped by `max_drive_power_w`;
//!    time `t = s / v`; hotel energy `P_hotel t`.
//! 6. Passability: tilt limits (climb, descent, roll capped by the stability fraction,
//!    static tip-over margin), the traction limit, and a sinkage limit (sinkage of a
//!    wheel reaching its radius, where the closed-form soil model no longer holds and
//!    the wheel is bulldozing).
//!
//! The function allocates nothing; it costs a handful of `powf`/`exp` calls, plus 48
//! thrust evaluations for the slip on soft soil.
//!
//! # Units
//! Metres, radians, joules, seconds, newtons, m/s.
//!
//! # Left out
//! Turning (see [`Rover::turn_energy_j`]), acceleration, and the change of attitude
//! within a step (the attitude given is used for the whole step).

use crate::vehicle::attitude::Attitude;
use crate::vehicle::powertrain::{electrical_energy_j, power_capped_speed_m_s};
use crate::vehicle::rover::Rover;
use crate::vehicle::traction::{
    compaction_resistance_n, grade_rolling_force_n, max_thrust_n, sinkage_m, slip_for_thrust,
    Contact, WheelGeom,
};

/// Why a step cannot be driven.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Blocked {
    /// The ground cannot give the thrust (or braking force) the step needs.
    TractionLimit,
    /// Pitch, roll or tip-over margin beyond the rover's limits.
    TiltLimit,
    /// Wheels sink to their radius: the soil model no longer holds; treat as stuck.
    SinkageLimit,
    /// The step's inputs are not finite (no-data terrain).
    NoTerrain,
}

impl Blocked {
    /// The short reason planners and reports print ("traction limit", ...).
    pub fn reason(self) -> &'static str {
        match self {
            Blocked::TractionLimit => "traction limit",
            Blocked::TiltLimit => "tilt limit",
            Blocked::SinkageLimit => "sinkage limit",
            Blocked::NoTerrain => "no terrain data",
        }
    }
}

impl std::fmt::Display for Blocked {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.reason())
    }
}

/// What one step costs.
///
/// # Units
/// Metres, joules, seconds, m/s, radians; slip dimensionless.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StepCost {
    /// Path length s along the ground, m.
    pub path_m: f64,
    /// Mechanical work at the wheel rims, J (negative when braking).
    pub work_j: f64,
    /// Electrical energy of the drive, J (negative = returned by regeneration).
    pub drive_energy_j: f64,
    /// Hotel energy drawn during the step, J.
    pub hotel_energy_j: f64,
    /// Driving time, s.
    pub time_s: f64,
    /// Ground speed, m/s.
    pub speed_m_s: f64,
    /// Body pitch used, rad (nose up positive).
    pub pitch_rad: f64,
    /// Body roll used, rad (left side up positive).
    pub roll_rad: f64,
    /// Wheel slip, [0, max_slip].
    pub slip: f64,
    /// Static wheel sinkage, m (0 on firm ground).
    pub sinkage_m: f64,
    /// None when the step can be driven; otherwise why not. The energy figures of a
    /// blocked step are not meaningful.
    pub blocked: Option<Blocked>,
}

impl StepCost {
    /// Drive plus hotel energy, J.
    pub fn total_energy_j(&self) -> f64 {
        self.drive_energy_j + self.hotel_energy_j
    }

    /// True when the step can be driven.
    pub fn passable(&self) -> bool {
        self.blocked.is_none()
    }
}

/// Forces and traction of a step, before energy and time.
struct Traction {
    force_n: f64,
    slip: f64,
    sinkage_m: f64,
    blocked: Option<Blocked>,
}

impl Rover {
    /// The cost of a straight step of horizontal length `d_m` and rise `dz_m` with the
    /// body at `attitude` (module doc). A step whose attitude is unknown can use
    /// [`Rover::step_cost_on_grade`].
    pub fn step_cost(&self, d_m: f64, dz_m: f64, attitude: Attitude) -> StepCost {
        let finite = d_m.is_finite() && dz_m.is_finite() && d_m >= 0.0;
        let finite = finite && attitude.pitch_rad.is_finite() && attitude.roll_rad.is_finite();
        if !finite {
            return blocked_step(attitude, Blocked::NoTerrain);
        }
        let path_m = d_m.hypot(dz_m);
        let grade_rad = dz_m.atan2(d_m);
        let tr = self.traction(grade_rad);
        let work_j = if tr.force_n > 0.0 {
            tr.force_n * path_m / (1.0 - tr.slip)
        } else {
            tr.force_n * path_m
        };
        let speed = self
            .speed_law
            .speed_m_s(self.max_speed_m_s, attitude.pitch_rad);
        let eta = self.efficiency_at(speed, tr.force_n);
        let speed_m_s = match self.max_drive_power_w {
            Some(p) => power_capped_speed_m_s(speed, tr.force_n, tr.slip, eta, p),
            None => speed,
        };
        let time_s = if path_m > 0.0 {
            path_m / speed_m_s
        } else {
            0.0
        };
        StepCost {
            path_m,
            work_j,
            drive_energy_j: electrical_energy_j(work_j, eta, self.regen_fraction),
            hotel_energy_j: self.hotel_power_w * time_s,
            time_s,
            speed_m_s,
            pitch_rad: attitude.pitch_rad,
            roll_rad: attitude.roll_rad,
            slip: tr.slip,
            sinkage_m: tr.sinkage_m,
            blocked: self.tilt_blocked(attitude).or(tr.blocked),
        }
    }

    /// [`Rover::step_cost`] with the pitch taken from the step's own grade and no roll
    /// (for a planner without a body-attitude map).
    pub fn step_cost_on_grade(&self, d_m: f64, dz_m: f64) -> StepCost {
        let attitude = Attitude {
            pitch_rad: dz_m.atan2(d_m),
            roll_rad: 0.0,
        };
        self.step_cost(d_m, dz_m, attitude)
    }

    /// Electrical energy of turning on the spot by `heading_change_rad` (either sign), J.
    pub fn turn_energy_j(&self, heading_change_rad: f64) -> f64 {
        self.turn_energy_j_per_rad * heading_change_rad.abs()
    }

    /// Which tilt limit, if any, the attitude breaks.
    pub fn tilt_blocked(&self, a: Attitude) -> Option<Blocked> {
        let over = a.pitch_rad > self.max_climb_rad
            || -a.pitch_rad > self.max_descent_rad
            || a.roll_rad.abs() > self.roll_limit_rad()
            || self.tip_over().margin_rad(a.pitch_rad, a.roll_rad) <= 0.0;
        over.then_some(Blocked::TiltLimit)
    }

    fn wheel_geom(&self) -> WheelGeom {
        WheelGeom {
            diameter_m: 2.0 * self.wheel_radius_m,
            width_m: self.wheel_width_m,
        }
    }

    fn traction(&self, grade_rad: f64) -> Traction {
        let weight = self.weight_n();
        let normal_n = weight * grade_rad.cos();
        let firm = grade_rolling_force_n(weight, self.rolling_resistance, grade_rad);
        let Some(named) = self.soil else {
            let ok = firm.abs() <= self.ground_friction * normal_n;
            return Traction {
                force_n: firm,
                slip: 0.0,
                sinkage_m: 0.0,
                blocked: (!ok).then_some(Blocked::TractionLimit),
            };
        };
        let soil = &named.soil;
        let n = self.wheel_count as f64;
        let wheel = self.wheel_geom();
        let load_n = normal_n / n;
        let z = sinkage_m(soil, wheel, load_n);
        let force_n = firm + n * compaction_resistance_n(soil, wheel.width_m, z);
        let contact = Contact::of_wheel(wheel, load_n, z);
        let per_wheel = force_n / n;
        let slip = if per_wheel >= 0.0 {
            slip_for_thrust(soil, &contact, per_wheel, self.max_slip)
        } else {
            let braking_ok = -per_wheel <= max_thrust_n(soil, &contact);
            braking_ok.then_some(0.0)
        };
        let blocked = if z >= self.wheel_radius_m {
            Some(Blocked::SinkageLimit)
        } else if slip.is_none() {
            Some(Blocked::TractionLimit)
        } else {
            None
        };
        Traction {
            force_n,
            slip: slip.unwrap_or(self.max_slip),
            sinkage_m: z,
            blocked,
        }
    }

    fn efficiency_at(&self, speed_m_s: f64, force_n: f64) -> f64 {
        match &self.efficiency_table {
            None => self.drive_efficiency,
            Some(t) => {
                let torque_nm = force_n.max(0.0) * self.wheel_radius_m / self.wheel_count as f64;
                t.at(speed_m_s, torque_nm)
            }
        }
    }
}

fn blocked_step(attitude: Attitude, why: Blocked) -> StepCost {
    StepCost {
        path_m: f64::NAN,
        work_j: f64::NAN,
        drive_energy_j: f64::NAN,
        hotel_energy_j: f64::NAN,
        time_s: f64::NAN,
        speed_m_s: f64::NAN,
        pitch_rad: attitude.pitch_rad,
        roll_rad: attitude.roll_rad,
        slip: f64::NAN,
        sinkage_m: f64::NAN,
        blocked: Some(why),
    }
}
