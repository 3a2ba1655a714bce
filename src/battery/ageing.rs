//! Optional ageing estimate over a mission: equivalent full cycles, depth-of-discharge
//! cycles by rainflow counting, and cycle damage by the Palmgren-Miner rule.
//!
//! # Method
//! - Equivalent full cycles: EFC = charge discharged / nominal capacity (common
//!   practice).
//! - Cycles and their depth: rainflow counting of the SOC history, the three-point
//!   algorithm of ASTM E1049-85 (reapproved 2017), "Standard Practices for Cycle
//!   Counting in Fatigue Analysis", section 5.4.4: reversals are extracted, a range
//!   Y = |s[-2] - s[-3]| is counted once the next range X >= Y (a full cycle, or a half
//!   cycle when Y holds the starting point); the ranges left at the end are half
//!   cycles. Depth of discharge of a cycle = its SOC range.
//! - Damage: the Palmgren-Miner sum D = sum(n_i / N(DoD_i)) with a Woehler-type cycle
//!   life N(DoD) = N_full * DoD^(-k) (the DoD stress model used for Li-ion cycle ageing,
//!   e.g. B. Xu et al., "Modeling of lithium-ion battery degradation for cell life
//!   assessment", IEEE Trans. Smart Grid 9(2), 2018; from memory). D = 1 is the end of
//!   life (commonly 80 % of the initial capacity).
//!
//! # Left out
//! Calendar ageing, temperature and C-rate stress, the mean SOC of each cycle. The
//! estimate ranks missions; it does not predict a pack's life.
//!
//! # Units
//! SOC and DoD fractions 0..1, charge A h, cycles dimensionless.

use serde::Deserialize;

use super::error::{check_range, BatteryError};

/// One counted cycle.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Cycle {
    /// Range of the cycle (depth of discharge for an SOC history).
    pub range: f64,
    /// Mean of the cycle's two extremes.
    pub mean: f64,
    /// 1.0 for a full cycle, 0.5 for a half cycle.
    pub count: f64,
}

/// Turning points of a history: the first and last samples and every sample where
/// the direction changes (flat runs collapse to one point).
pub fn reversals(history: &[f64]) -> Vec<f64> {
    let mut out: Vec<f64> = Vec::new();
    for &x in history {
        match out.len() {
            0 => out.push(x),
            1 if x != out[0] => out.push(x),
            1 => {}
            n => {
                let (a, b) = (out[n - 2], out[n - 1]);
                if x == b {
                    continue;
                }
                if (b - a).signum() == (x - b).signum() {
                    out[n - 1] = x;
                } else {
                    out.push(x);
                }
            }
        }
    }
    out
}

/// Rainflow cycles of `history` (ASTM E1049-85, section 5.4.4).
pub fn rainflow(history: &[f64]) -> Vec<Cycle> {
    let cycle = |a: f64, b: f64, count| Cycle {
        range: (a - b).abs(),
        mean: 0.5 * (a + b),
        count,
    };
    let mut cycles = Vec::new();
    let mut stack: Vec<f64> = Vec::new();
    for p in reversals(history) {
        stack.push(p);
        while stack.len() >= 3 {
            let n = stack.len();
            let x = (stack[n - 1] - stack[n - 2]).abs();
            let y = (stack[n - 2] - stack[n - 3]).abs();
            if x < y {
                break;
            }
            if n == 3 {
                cycles.push(cycle(stack[0], stack[1], 0.5));
                stack.remove(0);
            } else {
                cycles.push(cycle(stack[n - 3], stack[n - 2], 1.0));
                stack.drain(n - 3..n - 1);
            }
        }
    }
    cycles.extend(stack.windows(2).map(|w| cycle(w[0], w[1], 0.5)));
    cycles
}

/// Cycle-life curve parameters (an `[battery.ageing]` table).
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct AgeingParams {
    /// Cycles to end of life at 100 % depth of discharge; 10 to 1e6. Default 3000
    /// (common practice for LFP cells at 25 degC; take the data sheet's figure).
    pub cycles_at_full_dod: f64,
    /// Exponent k of N(DoD) = N_full DoD^(-k); 0 to 5. Default 1.0 (an assumption: the
    /// charge throughput to end of life is then independent of depth).
    pub dod_exponent: f64,
}

impl Default for AgeingParams {
    fn default() -> Self {
        AgeingParams {
            cycles_at_full_dod: 3000.0,
            dod_exponent: 1.0,
        }
    }
}

/// The ageing estimate of one mission.
#[derive(Debug, Clone, PartialEq)]
pub struct AgeingEstimate {
    /// Equivalent full cycles (discharged charge / capacity).
    pub equivalent_full_cycles: f64,
    /// Deepest counted cycle (0..1).
    pub max_dod: f64,
    /// Palmgren-Miner damage, 1 = end of life.
    pub damage: f64,
    /// The counted cycles.
    pub cycles: Vec<Cycle>,
}

/// Estimates ageing from an SOC history and the charge discharged.
pub fn estimate(
    p: &AgeingParams,
    soc_history: &[f64],
    discharged_ah: f64,
    capacity_ah: f64,
) -> Result<AgeingEstimate, BatteryError> {
    let fix = "take the cycle-life curve from the cell data sheet";
    let n_full = p.cycles_at_full_dod;
    check_range(
        "battery.ageing",
        "cycles_at_full_dod",
        n_full,
        (10.0, 1e6),
        "10 to 1e6",
        fix,
    )?;
    let k = p.dod_exponent;
    check_range(
        "battery.ageing",
        "dod_exponent",
        k,
        (0.0, 5.0),
        "0 to 5",
        fix,
    )?;
    let cycles = rainflow(soc_history);
    let damage = cycles
        .iter()
        .filter(|c| c.range > 0.0)
        .map(|c| c.count / (n_full * c.range.powf(-k)))
        .sum();
    Ok(AgeingEstimate {
        equivalent_full_cycles: discharged_ah / capacity_ah,
        max_dod: cycles.iter().map(|c| c.range).fold(0.0, f64::max),
        damage,
        cycles,
    })
}
