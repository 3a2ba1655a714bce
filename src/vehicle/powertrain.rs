//! Powertrain: battery-to-wheel efficiency, regenerative braking and the speed law.
//!
//! # Method
//! - Electrical energy of a step from the mechanical work W at the wheel rims
//!   (sunward DESIGN.md, "Physics core"):
//!   `E = W / η_drive` for W > 0 (motoring), `E = −ρ_regen · |W|` for W < 0 (braking;
//!   the rest of the braking work is lost as heat in brakes, motors and soil).
//! - η_drive is one number (`drive_efficiency`) or, when a table is given, bilinear
//!   interpolation over wheel speed and per-wheel torque, clamped at the table's edges
//!   (no extrapolation: the edge value holds outside).
//! - Speed law on slopes: a ground speed `v(θ)` from the body pitch θ:
//!   - `constant`: v = v_max;
//!   - `linear`: v = v_max · max(f_min, 1 − |θ| / θ_zero), the common-practice habit of
//!     slowing on slopes both up and down (no published law; set θ_zero and f_min from
//!     the vehicle's own drive tests).
//!
//!   Either law is then capped by the motor power, when `max_drive_power_w` is given:
//!   `v ≤ P_max η (1 − i) / F`, F the traction force and i the slip.
//!
//! # Units
//! Work and energy in joules; power in watts; speed in m/s; torque in N·m; angles in
//! radians.
//!
//! # Left out
//! Motor and controller losses that depend on temperature or voltage, idle losses of the
//! drive at zero torque (put them in `hotel_power_w`), acceleration transients.

/// A drive efficiency table over wheel speed and per-wheel torque.
///
/// # Units
/// `speeds_m_s` in m/s, `torques_nm` in N·m (per driven wheel), `efficiency` as
/// fractions in (0, 1], one row per speed.
#[derive(Debug, Clone, PartialEq)]
pub struct EfficiencyTable {
    /// Strictly increasing wheel ground speeds, m/s.
    pub speeds_m_s: Vec<f64>,
    /// Strictly increasing per-wheel torques, N·m.
    pub torques_nm: Vec<f64>,
    /// `efficiency[i][j]` at `speeds_m_s[i]`, `torques_nm[j]`.
    pub efficiency: Vec<Vec<f64>>,
}

impl EfficiencyTable {
    /// Battery-to-wheel efficiency at a speed and torque, bilinear and clamped.
    pub fn at(&self, speed_m_s: f64, torque_nm: f64) -> f64 {
        let (i0, i1, ti) = bracket(&self.speeds_m_s, speed_m_s);
        let (j0, j1, tj) = bracket(&self.torques_nm, torque_nm);
        let e = &self.efficiency;
        let low = e[i0][j0] + (e[i0][j1] - e[i0][j0]) * tj;
        let high = e[i1][j0] + (e[i1][j1] - e[i1][j0]) * tj;
        low + (high - low) * ti
    }
}

/// Index pair and weight of `x` in increasing `axis`, clamped to its ends.
fn bracket(axis: &[f64], x: f64) -> (usize, usize, f64) {
    let last = axis.len() - 1;
    if last == 0 || x <= axis[0] {
        return (0, 0, 0.0);
    }
    if x >= axis[last] {
        return (last, last, 0.0);
    }
    let hi = axis.partition_point(|&a| a <= x).min(last);
    let lo = hi - 1;
    (lo, hi, (x - axis[lo]) / (axis[hi] - axis[lo]))
}

/// Electrical energy drawn from (positive) or returned to (negative) the battery for
/// rim work `work_j`, joules.
#[inline]
pub fn electrical_energy_j(work_j: f64, drive_efficiency: f64, regen_fraction: f64) -> f64 {
    if work_j > 0.0 {
        work_j / drive_efficiency
    } else {
        regen_fraction * work_j
    }
}

/// How ground speed falls with body pitch.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum SpeedLaw {
    /// Full speed on any slope the rover may drive.
    Constant,
    /// `v = v_max · max(min_fraction, 1 − |pitch| / zero_speed_pitch_rad)`.
    Linear {
        /// Pitch at which the straight line reaches zero speed, radians (> 0).
        zero_speed_pitch_rad: f64,
        /// Floor of the speed as a fraction of v_max, in (0, 1].
        min_fraction: f64,
    },
}

impl SpeedLaw {
    /// Ground speed at body pitch `pitch_rad` for top speed `max_speed_m_s`, m/s.
    #[inline]
    pub fn speed_m_s(&self, max_speed_m_s: f64, pitch_rad: f64) -> f64 {
        match *self {
            SpeedLaw::Constant => max_speed_m_s,
            SpeedLaw::Linear {
                zero_speed_pitch_rad,
                min_fraction,
            } => {
                let f = 1.0 - pitch_rad.abs() / zero_speed_pitch_rad;
                max_speed_m_s * f.max(min_fraction)
            }
        }
    }
}

/// Caps `speed_m_s` so that the electrical drive power stays within `max_power_w`:
/// `P = F v / ((1 − i) η)`. Only a pushing force (F > 0) is capped.
#[inline]
pub fn power_capped_speed_m_s(
    speed_m_s: f64,
    force_n: f64,
    slip: f64,
    efficiency: f64,
    max_power_w: f64,
) -> f64 {
    if force_n <= 0.0 {
        return speed_m_s;
    }
    speed_m_s.min(max_power_w * efficiency * (1.0 - slip) / force_n)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn table() -> EfficiencyTable {
        EfficiencyTable {
            speeds_m_s: vec![0.1, 0.5],
            torques_nm: vec![1.0, 5.0, 10.0],
            efficiency: vec![vec![0.4, 0.6, 0.5], vec![0.5, 0.8, 0.7]],
        }
    }

    #[test]
    fn table_hits_nodes_interpolates_and_clamps() {
        let t = table();
        assert!((t.at(0.5, 5.0) - 0.8).abs() < 1e-12);
        assert!((t.at(0.3, 5.0) - 0.7).abs() < 1e-12);
        assert!((t.at(0.1, 3.0) - 0.5).abs() < 1e-12);
        assert!((t.at(9.0, 99.0) - 0.7).abs() < 1e-12);
        assert!((t.at(0.0, 0.0) - 0.4).abs() < 1e-12);
    }

    #[test]
    fn regen_returns_a_share_and_motoring_divides() {
        assert!((electrical_energy_j(70.0, 0.7, 0.3) - 100.0).abs() < 1e-12);
        assert!((electrical_energy_j(-100.0, 0.7, 0.3) + 30.0).abs() < 1e-12);
        assert_eq!(electrical_energy_j(-100.0, 0.7, 0.0), 0.0);
    }

    #[test]
    fn linear_law_slows_symmetrically_and_keeps_its_floor() {
        let law = SpeedLaw::Linear {
            zero_speed_pitch_rad: 0.8,
            min_fraction: 0.25,
        };
        assert!((law.speed_m_s(0.5, 0.4) - 0.25).abs() < 1e-12);
        assert_eq!(law.speed_m_s(0.5, 0.4), law.speed_m_s(0.5, -0.4));
        assert!((law.speed_m_s(0.5, 0.79) - 0.125).abs() < 1e-12);
        assert!((power_capped_speed_m_s(0.5, 100.0, 0.0, 0.5, 40.0) - 0.2).abs() < 1e-12);
    }
}
