//! One lumped thermal node for the battery / electronics box, with a thermostat heater
//! and survival limits.
//!
//! # Method
//! A single heat capacity C behind one conductance G to the ambient air (a first-order
//! lumped-capacitance model; F. P. Incropera et al., *Fundamentals of Heat and Mass
//! Transfer*, 6th ed., Wiley 2007, section 5.2, eq. 5.6 for the exponential response;
//! from memory):
//!
//! ```text
//! C dT/dt = Q_int + Q_heater + Q_solar - G (T - T_amb)
//! Q_solar = alpha_A * G_sun                     (absorptance x exposed area, m^2)
//! constant inputs over an interval t:  T(t) = T_ss + (T0 - T_ss) exp(-t / tau)
//! T_ss = T_amb + (Q_int + Q_heater + Q_solar) / G,   tau = C / G
//! ```
//!
//! The step is exact for inputs held constant over the step. The thermostat (on below
//! `heater_on_c`, off above `heater_off_c`) is switched at the exact crossing time
//! t* = tau ln((T0 - T_ss) / (T_switch - T_ss)) inside the step, so heater energy and
//! duty do not depend on the step length. In steady cold the heater duty tends to
//! G (T_mean - T_amb) / P_heater (energy balance over a cycle), T_mean between the two
//! thresholds.
//!
//! # Left out
//! Temperature gradients inside the pack (one node: cells at the box temperature),
//! radiation to the sky as a separate term (lump it into G), wind dependence of G,
//! heat of reaction (entropic heat), phase-change material.
//!
//! # Units
//! Temperatures degC, heat capacity J/K, conductance W/K, powers W, irradiance W/m^2,
//! area m^2, time s, energy Wh.

use serde::Deserialize;

use super::error::{check_range, BatteryError};

/// Most thermostat switchings inside one step (a guard: a narrower band than ~1 mK or
/// a step of days could otherwise switch without end).
const MAX_SWITCHES_PER_STEP: usize = 100_000;

/// The `[thermal]` table of a mission file.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct ThermalParams {
    /// Heat capacity of the box with cells and electronics, J/K; 10 to 1e8. Default
    /// 20 000 J/K: about 20 kg of cells and structure at ~1000 J/(kg K) (an assumption;
    /// Li-ion cells are about 800-1100 J/(kg K): common practice).
    pub heat_capacity_j_k: f64,
    /// Conductance from the box to the ambient air, W/K; 0.001 to 1000. Default 0.6 W/K:
    /// a 0.6 m^2 box skin behind 30 mm of foam at 0.03 W/(m K) (an assumption).
    pub conductance_w_k: f64,
    /// Absorptance x sunlit area of the box, m^2; 0 to 100. Default 0 (no solar gain).
    pub solar_absorptance_area_m2: f64,
    /// Heater power while on, W; 0 to 10 000. Default 15 W (an assumption).
    pub heater_power_w: f64,
    /// Heater switches on below this box temperature, degC. Default 5 degC: above the
    /// 0 degC charge limit so that charging can start at dawn (an assumption).
    pub heater_on_c: f64,
    /// Heater switches off above this, degC (> `heater_on_c`). Default 10 degC.
    pub heater_off_c: f64,
    /// Coldest the cells may ever be, degC (cell data sheet, storage). Default -20 degC
    /// (common practice for Li-ion; the data sheet governs).
    pub storage_min_c: f64,
    /// Coldest for operation (discharge), degC. Default -20 degC (common practice).
    pub operating_min_c: f64,
    /// Hottest for operation, degC. Default 60 degC (common practice).
    pub operating_max_c: f64,
    /// Share of the rover's electronics power (hotel and payload) dissipated inside the
    /// battery box, fraction 0 to 1. Default 0.3: an assumption with no source, for
    /// electronics mostly outside an insulated battery box. Set 1 when the avionics
    /// share the box with the cells, 0 when the box holds only cells.
    pub electronics_heat_share: f64,
}

impl Default for ThermalParams {
    fn default() -> Self {
        ThermalParams {
            heat_capacity_j_k: 20_000.0,
            conductance_w_k: 0.6,
            solar_absorptance_area_m2: 0.0,
            heater_power_w: 15.0,
            heater_on_c: 5.0,
            heater_off_c: 10.0,
            storage_min_c: -20.0,
            operating_min_c: -20.0,
            operating_max_c: 60.0,
            electronics_heat_share: 0.3,
        }
    }
}

/// Thermal state carried from step to step.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ThermalState {
    /// Box (and cell) temperature, degC.
    pub temp_c: f64,
    /// Whether the thermostat has the heater on.
    pub heater_on: bool,
}

/// Inputs held constant over one step.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ThermalInput {
    /// Ambient air temperature, degC.
    pub ambient_c: f64,
    /// Heat dissipated inside the box (electronics, I^2 R), W.
    pub internal_heat_w: f64,
    /// Irradiance on the box's sunlit side, W/m^2.
    pub irradiance_w_m2: f64,
    /// Step length, s (> 0).
    pub dt_s: f64,
}

/// Survival limits breached in a step (the simulation records the time).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct ThermalFlags {
    /// Below `storage_min_c` at some moment of the step.
    pub below_storage_min: bool,
    /// Below `operating_min_c` at some moment of the step.
    pub below_operating_min: bool,
    /// Above `operating_max_c` at some moment of the step.
    pub above_operating_max: bool,
}

/// The outcome of one thermal step.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ThermalStep {
    /// State at the end of the step.
    pub state: ThermalState,
    /// Heater energy drawn in the step, Wh.
    pub heater_energy_wh: f64,
    /// Seconds of the step with the heater on.
    pub heater_on_s: f64,
    /// Lowest temperature within the step, degC.
    pub min_temp_c: f64,
    /// Highest temperature within the step, degC.
    pub max_temp_c: f64,
    /// Limits breached.
    pub flags: ThermalFlags,
}

/// A checked thermal node.
#[derive(Debug, Clone, PartialEq)]
pub struct ThermalNode {
    p: ThermalParams,
}

impl ThermalNode {
    /// Checks the parameters (ranges on [`ThermalParams`]).
    pub fn new(p: &ThermalParams) -> Result<ThermalNode, BatteryError> {
        let fix = "see the documented range of this key";
        let t = |k: &str, v: f64, r: (f64, f64), e: &'static str| {
            check_range("thermal", k, v, r, e, fix)
        };
        t(
            "heat_capacity_j_k",
            p.heat_capacity_j_k,
            (10.0, 1e8),
            "10 to 1e8 J/K",
        )?;
        t(
            "conductance_w_k",
            p.conductance_w_k,
            (1e-3, 1e3),
            "0.001 to 1000 W/K",
        )?;
        let a = p.solar_absorptance_area_m2;
        t("solar_absorptance_area_m2", a, (0.0, 100.0), "0 to 100 m^2")?;
        t(
            "heater_power_w",
            p.heater_power_w,
            (0.0, 1e4),
            "0 to 10000 W",
        )?;
        t(
            "electronics_heat_share",
            p.electronics_heat_share,
            (0.0, 1.0),
            "a fraction from 0 to 1",
        )?;
        for (k, v) in [
            ("heater_on_c", p.heater_on_c),
            ("heater_off_c", p.heater_off_c),
            ("storage_min_c", p.storage_min_c),
            ("operating_min_c", p.operating_min_c),
            ("operating_max_c", p.operating_max_c),
        ] {
            t(k, v, (-100.0, 150.0), "-100 to 150 degC")?;
        }
        if p.heater_off_c < p.heater_on_c + 0.01 {
            return Err(BatteryError::Inconsistent {
                table: "thermal",
                problem: format!(
                    "heater_off_c = {} is not above heater_on_c = {} by at least 0.01 K",
                    p.heater_off_c, p.heater_on_c
                ),
                fix: "give the thermostat a band, e.g. heater_on_c = 5, heater_off_c = 10",
            });
        }
        Ok(ThermalNode { p: p.clone() })
    }

    /// The parameters.
    pub fn params(&self) -> &ThermalParams {
        &self.p
    }

    /// Time constant C / G, s.
    pub fn time_constant_s(&self) -> f64 {
        self.p.heat_capacity_j_k / self.p.conductance_w_k
    }

    /// Steady temperature for the given inputs and heater state, degC.
    pub fn steady_temp_c(&self, input: &ThermalInput, heater_on: bool) -> f64 {
        let heater_w = if heater_on {
            self.p.heater_power_w
        } else {
            0.0
        };
        let solar_w = self.p.solar_absorptance_area_m2 * input.irradiance_w_m2.max(0.0);
        input.ambient_c + (input.internal_heat_w + heater_w + solar_w) / self.p.conductance_w_k
    }

    /// Advances the node by one step with exact exponential segments between
    /// thermostat switchings.
    pub fn step(
        &self,
        s: &ThermalState,
        input: &ThermalInput,
    ) -> Result<ThermalStep, BatteryError> {
        check_input(input)?;
        let tau = self.time_constant_s();
        let (mut temp, mut on) = (s.temp_c, self.thermostat(s.temp_c, s.heater_on));
        let (mut left_s, mut on_s) = (input.dt_s, 0.0);
        let (mut lo, mut hi) = (temp, temp);
        for _ in 0..MAX_SWITCHES_PER_STEP {
            let t_ss = self.steady_temp_c(input, on);
            let target = if on {
                self.p.heater_off_c
            } else {
                self.p.heater_on_c
            };
            let seg_s = crossing_time_s(temp, t_ss, target, tau)
                .unwrap_or(f64::INFINITY)
                .min(left_s);
            temp = t_ss + (temp - t_ss) * (-seg_s / tau).exp();
            if seg_s < left_s {
                temp = target;
            }
            (lo, hi) = (lo.min(temp), hi.max(temp));
            on_s += if on { seg_s } else { 0.0 };
            left_s -= seg_s;
            if left_s <= 0.0 {
                break;
            }
            on = !on;
        }
        Ok(self.finish(temp, on, on_s, (lo, hi)))
    }

    /// Heater state for a node at `temp_c` that was `was_on`: the hysteresis rule.
    fn thermostat(&self, temp_c: f64, was_on: bool) -> bool {
        if temp_c < self.p.heater_on_c {
            true
        } else if temp_c > self.p.heater_off_c {
            false
        } else {
            was_on
        }
    }

    fn finish(&self, temp_c: f64, on: bool, on_s: f64, (lo, hi): (f64, f64)) -> ThermalStep {
        ThermalStep {
            state: ThermalState {
                temp_c,
                heater_on: on,
            },
            heater_energy_wh: self.p.heater_power_w * on_s / 3600.0,
            heater_on_s: on_s,
            min_temp_c: lo,
            max_temp_c: hi,
            flags: ThermalFlags {
                below_storage_min: lo < self.p.storage_min_c,
                below_operating_min: lo < self.p.operating_min_c,
                above_operating_max: hi > self.p.operating_max_c,
            },
        }
    }
}

/// Time for T(t) = T_ss + (T0 - T_ss) e^{-t/tau} to reach `target`, if it ever does
/// (target strictly between T0 and T_ss, or T0 already at the target when heading past it).
fn crossing_time_s(t0: f64, t_ss: f64, target: f64, tau: f64) -> Option<f64> {
    let (a, b) = (t0 - t_ss, target - t_ss);
    if a == 0.0 || b == 0.0 || a.signum() != b.signum() || b.abs() > a.abs() {
        return None;
    }
    Some(tau * (a / b).ln())
}

fn check_input(i: &ThermalInput) -> Result<(), BatteryError> {
    let fix = "this is a bug in the caller: report it";
    let any = (f64::MIN, f64::MAX);
    check_range(
        "thermal",
        "step.ambient_c",
        i.ambient_c,
        (-150.0, 150.0),
        "-150 to 150 degC",
        fix,
    )?;
    check_range(
        "thermal",
        "step.internal_heat_w",
        i.internal_heat_w,
        any,
        "a finite power",
        fix,
    )?;
    check_range(
        "thermal",
        "step.irradiance_w_m2",
        i.irradiance_w_m2,
        any,
        "a finite irradiance",
        fix,
    )?;
    check_range(
        "thermal",
        "step.dt_s",
        i.dt_s,
        (1e-9, 1e9),
        "0 < dt_s <= 1e9 s",
        fix,
    )?;
    Ok(())
}
