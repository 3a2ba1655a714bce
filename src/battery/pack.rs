//! Battery pack: open-circuit voltage with a series resistance (the "Rint" model),
//! stepped at constant terminal power with exact energy bookkeeping.
//!
//! # Method
//! The pack is an ideal voltage source OCV(SOC) behind one resistance R(SOC, T)
//! (an Rint / zeroth-order equivalent circuit; G. L. Plett, *Battery Management Systems,
//! Vol. I: Battery Modeling*, Artech House 2015, section 2.1-2.3 for the ideal source
//! plus series resistance; from memory). At terminal power P (positive out of the pack):
//!
//! ```text
//! discharge:  P = (V - I R) I    =>  I = (V - sqrt(V^2 - 4 R P)) / (2 R)
//! charge:     P = (V + I R) I    =>  I = (-V + sqrt(V^2 + 4 R P)) / (2 R)   (P = offered power)
//! loss = I^2 R,   dSOC/dt = -I / Q (discharge),  +eta_c I / Q (charge)
//! ```
//!
//! The root taken is the physical one (the smaller current). Within a step the current
//! is constant and V is the *mean* OCV over the SOC span the step covers, found by a
//! fixed-point iteration; with that V the stored-energy change Q * integral(OCV dSOC)
//! equals V * charge moved exactly, so for every step
//! `terminal energy out = -delta(stored) - I^2 R dt - coulombic loss` holds to rounding.
//!
//! # Limits applied in each step (every one is flagged, none is silent)
//! - Discharge: the current is capped by `max_discharge_c`, by the terminal voltage
//!   floor (cells x lower voltage limit) and by the power maximum V^2/(4R); the SOC floor
//!   is the larger of `cutoff_soc` and 1 - usable_fraction(T). Requested power the pack
//!   cannot deliver is returned as `shortfall_w` (never clipped silently).
//! - Charge: none below `charge_temp_min_c` or above `charge_temp_max_c`; the current
//!   is capped by `max_charge_c` (constant current) and by the terminal voltage ceiling
//!   (cells x upper voltage limit, applied to the step-mean OCV): near full this makes
//!   the constant-voltage taper. Offered power not taken is `unaccepted_w`.
//! - Cold: usable capacity shrinks as 1 - floor(T); the charge below the floor is not
//!   lost, it returns when the pack warms (capacity loss in the cold is taken as
//!   kinetic and reversible).
//!
//! # Left out
//! RC (diffusion) transients and hysteresis (LFP shows ~10-20 mV: common practice),
//! self-discharge, cell imbalance, current dependence of resistance, the reduced
//! charge current many data sheets demand between 0 and 10 degC, entropic heat.
//!
//! # Units
//! Power W, energy Wh, current A, voltage V, resistance ohm, charge A h, time s,
//! temperature degC, SOC fraction 0..1 of the nominal (25 degC) capacity.

use super::chemistry::{arrhenius_factor, low_soc_factor, CellPreset, Chemistry};
use super::curve::Curve;
use super::error::{check_range, BatteryError};
use super::params::{PackParams, DEFAULT_CAPACITY_WH, DEFAULT_NOMINAL_VOLTAGE_V};

/// Seconds per hour (exact).
const S_PER_H: f64 = 3600.0;

/// Fixed-point iterations for the step-mean OCV (converges in 3-5 for minute steps).
const MEAN_OCV_MAX_ITER: usize = 50;

/// Convergence of the step-mean OCV, V.
const MEAN_OCV_TOL_V: f64 = 1e-10;

/// A checked pack, ready to step.
#[derive(Debug, Clone, PartialEq)]
pub struct Pack {
    chemistry: Chemistry,
    ocv_pack: Curve,
    capacity_ah: f64,
    series_cells: f64,
    r25_ohm: f64,
    ea_j_mol: f64,
    low_soc_k: f64,
    capacity_vs_temp: Curve,
    params: PackParams,
}

/// Pack state carried from step to step.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PackState {
    /// State of charge, fraction of the nominal capacity.
    pub soc: f64,
    /// Charge put in since the start, A h (current at the terminals).
    pub charged_ah: f64,
    /// Charge taken out since the start, A h.
    pub discharged_ah: f64,
}

/// One step's request.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StepRequest {
    /// Terminal power, W: positive asks for discharge, negative offers charge.
    pub power_w: f64,
    /// Step length, s (> 0).
    pub dt_s: f64,
    /// Cell temperature during the step, degC.
    pub cell_temp_c: f64,
}

/// Which limits acted in a step.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct PackFlags {
    /// Charge refused: cell below `charge_temp_min_c`.
    pub charge_blocked_cold: bool,
    /// Charge refused: cell above `charge_temp_max_c`.
    pub charge_blocked_hot: bool,
    /// Discharge refused: cell outside the discharge temperature range.
    pub discharge_blocked_temp: bool,
    /// Charge current limited by the voltage ceiling (constant-voltage taper).
    pub cv_taper: bool,
    /// Current limited by `max_charge_c` or `max_discharge_c`.
    pub current_limited: bool,
    /// Discharge limited by the terminal-voltage floor or the power maximum.
    pub voltage_limited: bool,
    /// The SOC floor (cut-off) was reached: discharge stopped.
    pub cutoff: bool,
    /// The pack is full: charge stopped.
    pub full: bool,
    /// SOC at the end of the step is below `reserve_soc`.
    pub below_reserve: bool,
}

/// The outcome of one step.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PackStep {
    /// State after the step.
    pub state: PackState,
    /// Mean terminal power actually delivered (+) or accepted (-), W.
    pub power_w: f64,
    /// Current while it flowed, A (+ discharge, - charge).
    pub current_a: f64,
    /// Seconds of the step during which current flowed (less than dt at cut-off or full).
    pub on_s: f64,
    /// Mean OCV over the step, V.
    pub ocv_v: f64,
    /// Terminal voltage while current flowed (the OCV when idle), V.
    pub terminal_voltage_v: f64,
    /// Resistance used, ohm.
    pub resistance_ohm: f64,
    /// I^2 R loss in the step, Wh.
    pub loss_resistive_wh: f64,
    /// Charge passed but not stored (coulombic inefficiency) as energy, Wh.
    pub loss_coulombic_wh: f64,
    /// Change of stored (open-circuit) energy, Wh.
    pub stored_delta_wh: f64,
    /// Requested discharge power not delivered, mean over the step, W (>= 0).
    pub shortfall_w: f64,
    /// Offered charge power not accepted, mean over the step, W (>= 0).
    pub unaccepted_w: f64,
    /// Limits that acted.
    pub flags: PackFlags,
}

/// Discharge current at terminal power `p_w` from OCV `v` through `r_ohm`:
/// I = (V - sqrt(V^2 - 4RP)) / (2R), written in the cancellation-free form
/// 2P / (V + sqrt(V^2 - 4RP)). `None` when P exceeds the maximum V^2 / (4R).
pub fn rint_discharge_current_a(v: f64, r_ohm: f64, p_w: f64) -> Option<f64> {
    let disc = v * v - 4.0 * r_ohm * p_w;
    (disc >= 0.0).then(|| 2.0 * p_w / (v + disc.sqrt()))
}

/// Charge current (positive) when power `p_w` (positive) is pushed into OCV `v`
/// through `r_ohm`: I = (-V + sqrt(V^2 + 4RP)) / (2R) = 2P / (V + sqrt(V^2 + 4RP)).
pub fn rint_charge_current_a(v: f64, r_ohm: f64, p_w: f64) -> f64 {
    2.0 * p_w / (v + (v * v + 4.0 * r_ohm * p_w).sqrt())
}

/// Pack size: (series cells, possibly fractional; capacity A h; preset resistance ohm).
fn size(p: &PackParams, preset: &CellPreset) -> Result<(f64, f64), BatteryError> {
    let by_cells = [
        p.cells_series.is_some(),
        p.cells_parallel.is_some(),
        p.cell_capacity_ah.is_some(),
    ];
    let by_energy = p.capacity_wh.is_some() || p.nominal_voltage_v.is_some();
    if by_energy && by_cells.iter().any(|&b| b) {
        return Err(BatteryError::Inconsistent {
            table: "battery",
            problem: "the pack is sized twice: capacity_wh/nominal_voltage_v and cells_*".into(),
            fix: "give either capacity_wh + nominal_voltage_v, or cells_series + cells_parallel + cell_capacity_ah",
        });
    }
    if by_cells.iter().any(|&b| b) {
        return size_by_cells(p);
    }
    size_by_energy(p, preset)
}

fn size_by_cells(p: &PackParams) -> Result<(f64, f64), BatteryError> {
    let (Some(ns), Some(np), Some(q)) = (p.cells_series, p.cells_parallel, p.cell_capacity_ah)
    else {
        return Err(BatteryError::Inconsistent {
            table: "battery",
            problem: "only part of cells_series, cells_parallel, cell_capacity_ah is given".into(),
            fix: "give all three, or size the pack by capacity_wh + nominal_voltage_v",
        });
    };
    let fix = "give a positive count within the range";
    check_range(
        "battery",
        "cells_series",
        ns.into(),
        (1.0, 400.0),
        "1 to 400",
        fix,
    )?;
    let np_range = (1.0, 10_000.0);
    check_range(
        "battery",
        "cells_parallel",
        np.into(),
        np_range,
        "1 to 10000",
        fix,
    )?;
    let q_fix = "use the rated capacity from the cell data sheet";
    check_range(
        "battery",
        "cell_capacity_ah",
        q,
        (0.01, 2000.0),
        "0.01 to 2000 A h",
        q_fix,
    )?;
    Ok((f64::from(ns), f64::from(np) * q))
}

fn size_by_energy(p: &PackParams, preset: &CellPreset) -> Result<(f64, f64), BatteryError> {
    let (wh, v) = match (p.capacity_wh, p.nominal_voltage_v) {
        (None, None) => (DEFAULT_CAPACITY_WH, DEFAULT_NOMINAL_VOLTAGE_V),
        (Some(wh), Some(v)) => (wh, v),
        _ => {
            return Err(BatteryError::Inconsistent {
                table: "battery",
                problem: "capacity_wh and nominal_voltage_v must be given together".into(),
                fix: "add the missing one (both are on the pack's label)",
            })
        }
    };
    let fix = "use the pack's rated energy and nominal voltage";
    check_range("battery", "capacity_wh", wh, (1.0, 1e7), "1 to 1e7 Wh", fix)?;
    check_range(
        "battery",
        "nominal_voltage_v",
        v,
        (1.0, 1500.0),
        "1 to 1500 V",
        fix,
    )?;
    Ok((v / preset.mean_ocv_v(), wh / v))
}

fn capacity_curve(p: &PackParams, preset: &CellPreset) -> Result<Curve, BatteryError> {
    let pts: Vec<(f64, f64)> = match &p.capacity_vs_temp {
        Some(rows) => rows.iter().map(|r| (r[0], r[1])).collect(),
        None => preset.capacity_vs_temp.to_vec(),
    };
    let bad = || BatteryError::Parameter {
        table: "battery",
        key: "capacity_vs_temp".into(),
        value: format!("{pts:?}"),
        expected:
            "two or more [temp_c, fraction] rows, temperatures increasing, fractions in (0, 1.5]",
        fix: "copy the capacity-against-temperature table from the cell data sheet",
    };
    if pts.iter().any(|&(_, f)| !(f > 0.0 && f <= 1.5)) {
        return Err(bad());
    }
    let (ts, fs) = pts.iter().copied().unzip();
    Curve::new(ts, fs).map_err(|_| bad())
}

fn check_limits(p: &PackParams) -> Result<(), BatteryError> {
    let ds = "take the value from the cell data sheet";
    check_range(
        "battery",
        "max_charge_c",
        p.max_charge_c,
        (0.01, 10.0),
        "0.01 to 10 C",
        ds,
    )?;
    let dis = p.max_discharge_c;
    check_range(
        "battery",
        "max_discharge_c",
        dis,
        (0.01, 30.0),
        "0.01 to 30 C",
        ds,
    )?;
    let t =
        |k: &str, v: f64, r: (f64, f64), e: &'static str| check_range("battery", k, v, r, e, ds);
    t(
        "charge_temp_min_c",
        p.charge_temp_min_c,
        (-40.0, 20.0),
        "-40 to 20 degC",
    )?;
    t(
        "charge_temp_max_c",
        p.charge_temp_max_c,
        (20.0, 80.0),
        "20 to 80 degC",
    )?;
    t(
        "discharge_temp_min_c",
        p.discharge_temp_min_c,
        (-60.0, 20.0),
        "-60 to 20 degC",
    )?;
    t(
        "discharge_temp_max_c",
        p.discharge_temp_max_c,
        (20.0, 90.0),
        "20 to 90 degC",
    )?;
    let soc_fix = "give a fraction, e.g. 0.2 for 20 %";
    check_range(
        "battery",
        "cutoff_soc",
        p.cutoff_soc,
        (0.0, 0.5),
        "0 to 0.5",
        soc_fix,
    )?;
    let rs = p.reserve_soc;
    check_range(
        "battery",
        "reserve_soc",
        rs,
        (p.cutoff_soc, 0.9),
        "cutoff_soc to 0.9",
        soc_fix,
    )?;
    let ce = p.coulombic_efficiency;
    let ce_fix = "give a fraction such as 0.999";
    check_range(
        "battery",
        "coulombic_efficiency",
        ce,
        (0.9, 1.0),
        "0.9 to 1",
        ce_fix,
    )?;
    if let Some(ea) = p.resistance_activation_energy_j_mol {
        let k = "resistance_activation_energy_j_mol";
        let fix = "fit it to resistance measured at two temperatures, or leave it out";
        check_range("battery", k, ea, (0.0, 1e5), "0 to 100000 J/mol", fix)?;
    }
    Ok(())
}

impl Pack {
    /// Checks the parameters and builds the pack. Every range is documented on
    /// [`PackParams`].
    pub fn new(p: &PackParams) -> Result<Pack, BatteryError> {
        let preset = p.chemistry.preset();
        check_limits(p)?;
        let (series_cells, capacity_ah) = size(p, preset)?;
        let r25_ohm = match p.resistance_ohm {
            Some(r) => {
                let fix = "give the measured DC resistance of the whole pack";
                check_range(
                    "battery",
                    "resistance_ohm",
                    r,
                    (1e-5, 100.0),
                    "1e-5 to 100 ohm",
                    fix,
                )?
            }
            None => preset.resistance_ohm_ah * series_cells / capacity_ah,
        };
        let cell = preset.ocv_curve();
        let pack_v: Vec<f64> = cell.ys().iter().map(|v| v * series_cells).collect();
        let ocv_pack = Curve::new(cell.xs().to_vec(), pack_v).expect("scaled preset curve");
        Ok(Pack {
            chemistry: p.chemistry,
            ocv_pack,
            capacity_ah,
            series_cells,
            r25_ohm,
            ea_j_mol: p
                .resistance_activation_energy_j_mol
                .unwrap_or(preset.resistance_activation_energy_j_mol),
            low_soc_k: preset.resistance_low_soc_factor,
            capacity_vs_temp: capacity_curve(p, preset)?,
            params: p.clone(),
        })
    }

    /// The chemistry preset in use.
    pub fn chemistry(&self) -> Chemistry {
        self.chemistry
    }

    /// The parameters the pack was built from.
    pub fn params(&self) -> &PackParams {
        &self.params
    }

    /// Nominal capacity (0 to 100 % SOC at 25 degC), A h.
    pub fn capacity_ah(&self) -> f64 {
        self.capacity_ah
    }

    /// Cells in series (fractional when sized by energy and voltage).
    pub fn series_cells(&self) -> f64 {
        self.series_cells
    }

    /// Open-circuit energy stored between 0 % SOC and `soc`, Wh.
    pub fn stored_energy_wh(&self, soc: f64) -> f64 {
        self.capacity_ah * self.ocv_pack.integral_to(soc)
    }

    /// Open-circuit voltage of the pack at `soc`, V.
    pub fn ocv_v(&self, soc: f64) -> f64 {
        self.ocv_pack.eval(soc)
    }

    /// Mean OCV between two SOC values, V.
    pub fn mean_ocv_v(&self, soc_a: f64, soc_b: f64) -> f64 {
        self.ocv_pack.mean(soc_a, soc_b)
    }

    /// [`Self::mean_ocv_v`] with the OCV integral at either end given when known (the
    /// same arithmetic, so the same result to the bit).
    fn cached_mean_ocv_v(&self, a: f64, b: f64, ia: Option<f64>, ib: Option<f64>) -> f64 {
        if (b - a).abs() < 1e-12 {
            return self.ocv_pack.eval(0.5 * (a + b));
        }
        let ia = ia.unwrap_or_else(|| self.ocv_pack.integral_to(a));
        let ib = ib.unwrap_or_else(|| self.ocv_pack.integral_to(b));
        (ib - ia) / (b - a)
    }

    /// Pack DC resistance at `soc` and cell temperature `temp_c`, ohm.
    pub fn resistance_ohm(&self, soc: f64, temp_c: f64) -> f64 {
        self.r25_ohm * arrhenius_factor(self.ea_j_mol, temp_c) * low_soc_factor(self.low_soc_k, soc)
    }

    /// Usable fraction of the nominal capacity at `temp_c`, from the table, capped at 1
    /// (SOC is reckoned on the 25 degC capacity).
    pub fn usable_fraction(&self, temp_c: f64) -> f64 {
        self.capacity_vs_temp.eval(temp_c).min(1.0)
    }

    /// Lowest SOC discharge may reach at `temp_c`: max(cutoff_soc, 1 - usable fraction).
    pub fn floor_soc(&self, temp_c: f64) -> f64 {
        self.params
            .cutoff_soc
            .max(1.0 - self.usable_fraction(temp_c))
    }

    /// Terminal voltage floor (cells x lower limit), V.
    pub fn min_voltage_v(&self) -> f64 {
        self.series_cells * self.chemistry.preset().min_voltage_v
    }

    /// Terminal voltage ceiling while charging (cells x upper limit), V.
    pub fn max_voltage_v(&self) -> f64 {
        self.series_cells * self.chemistry.preset().max_voltage_v
    }

    /// A state at `soc` with zero throughput; `soc` must lie in [0, 1].
    pub fn state_at(&self, soc: f64) -> Result<PackState, BatteryError> {
        let fix = "give the SOC at the start as a fraction, e.g. 1.0 for full";
        let soc = check_range("battery", "initial_soc", soc, (0.0, 1.0), "0 to 1", fix)?;
        Ok(PackState {
            soc,
            charged_ah: 0.0,
            discharged_ah: 0.0,
        })
    }

    /// Advances the pack by one step. Errors only on non-finite inputs or dt <= 0.
    pub fn step(&self, s: &PackState, req: &StepRequest) -> Result<PackStep, BatteryError> {
        check_request(req)?;
        let mut out = if req.power_w > 0.0 {
            self.discharge(s, req)
        } else if req.power_w < 0.0 {
            self.charge(s, req)
        } else {
            self.idle(s, req, PackFlags::default())
        };
        out.flags.below_reserve = out.state.soc < self.params.reserve_soc;
        Ok(out)
    }

    /// A step with no current: everything requested is shortfall or unaccepted.
    fn idle(&self, s: &PackState, req: &StepRequest, flags: PackFlags) -> PackStep {
        let v = self.ocv_v(s.soc);
        PackStep {
            state: *s,
            power_w: 0.0,
            current_a: 0.0,
            on_s: 0.0,
            ocv_v: v,
            terminal_voltage_v: v,
            resistance_ohm: self.resistance_ohm(s.soc, req.cell_temp_c),
            loss_resistive_wh: 0.0,
            loss_coulombic_wh: 0.0,
            stored_delta_wh: 0.0,
            shortfall_w: req.power_w.max(0.0),
            unaccepted_w: (-req.power_w).max(0.0),
            flags,
        }
    }

    fn discharge(&self, s: &PackState, req: &StepRequest) -> PackStep {
        let p = &self.params;
        let t = req.cell_temp_c;
        if t < p.discharge_temp_min_c || t > p.discharge_temp_max_c {
            let flags = PackFlags {
                discharge_blocked_temp: true,
                ..Default::default()
            };
            return self.idle(s, req, flags);
        }
        let floor = self.floor_soc(t);
        if s.soc <= floor {
            return self.idle(
                s,
                req,
                PackFlags {
                    cutoff: true,
                    ..Default::default()
                },
            );
        }
        let r = self.resistance_ohm(s.soc, t);
        let i_max = p.max_discharge_c * self.capacity_ah;
        let mut flags = PackFlags::default();
        let (mut v, mut i, mut soc1, mut on_s) = (self.ocv_v(s.soc), 0.0, s.soc, req.dt_s);
        // The OCV integral at the step's start, the same in every iteration.
        let i_start = self.ocv_pack.integral_to(s.soc);
        let mut i_end = i_start;
        for _ in 0..MEAN_OCV_MAX_ITER {
            let (p_w, f) = self.discharge_power(v, r, i_max, req.power_w);
            flags = f;
            i = rint_discharge_current_a(v, r, p_w).unwrap_or(0.0);
            let soc_end = s.soc - i * req.dt_s / S_PER_H / self.capacity_ah;
            (soc1, on_s, flags.cutoff) = if soc_end < floor {
                (floor, req.dt_s * (s.soc - floor) / (s.soc - soc_end), true)
            } else {
                (soc_end, req.dt_s, false)
            };
            i_end = self.ocv_pack.integral_to(soc1);
            let v_new = self.cached_mean_ocv_v(soc1, s.soc, Some(i_end), Some(i_start));
            let done = (v_new - v).abs() < MEAN_OCV_TOL_V;
            v = v_new;
            if done {
                break;
            }
        }
        self.finish(
            s,
            req,
            Flow {
                v,
                i,
                r,
                soc1,
                on_s,
                eta: 1.0,
                integrals: (i_start, i_end),
            },
            flags,
        )
    }

    /// Power the pack will deliver at OCV `v` and the limits that bound it.
    fn discharge_power(&self, v: f64, r: f64, i_max: f64, p_req: f64) -> (f64, PackFlags) {
        let i_volt = ((v - self.min_voltage_v()) / r).max(0.0);
        let i_peak = v / (2.0 * r);
        let i_star = i_max.min(i_volt).min(i_peak);
        let p_lim = (v - i_star * r) * i_star;
        let mut flags = PackFlags::default();
        if p_req > p_lim {
            flags.current_limited = i_star == i_max;
            flags.voltage_limited = !flags.current_limited;
            return (p_lim, flags);
        }
        (p_req, flags)
    }

    fn charge(&self, s: &PackState, req: &StepRequest) -> PackStep {
        let p = &self.params;
        let t = req.cell_temp_c;
        if t < p.charge_temp_min_c {
            return self.idle(
                s,
                req,
                PackFlags {
                    charge_blocked_cold: true,
                    ..Default::default()
                },
            );
        }
        if t > p.charge_temp_max_c {
            return self.idle(
                s,
                req,
                PackFlags {
                    charge_blocked_hot: true,
                    ..Default::default()
                },
            );
        }
        if s.soc >= 1.0 {
            return self.idle(
                s,
                req,
                PackFlags {
                    full: true,
                    ..Default::default()
                },
            );
        }
        let r = self.resistance_ohm(s.soc, t);
        let i_max = p.max_charge_c * self.capacity_ah;
        let eta = p.coulombic_efficiency;
        let mut flags = PackFlags::default();
        let (mut v, mut i, mut soc1, mut on_s) = (self.ocv_v(s.soc), 0.0, s.soc, req.dt_s);
        let i_start = self.ocv_pack.integral_to(s.soc);
        let mut i_end = i_start;
        for _ in 0..MEAN_OCV_MAX_ITER {
            let (p_w, f) = self.charge_power(v, r, i_max, -req.power_w);
            flags = f;
            i = rint_charge_current_a(v, r, p_w);
            let soc_end = s.soc + eta * i * req.dt_s / S_PER_H / self.capacity_ah;
            (soc1, on_s, flags.full) = if soc_end > 1.0 {
                (1.0, req.dt_s * (1.0 - s.soc) / (soc_end - s.soc), true)
            } else {
                (soc_end, req.dt_s, false)
            };
            i_end = self.ocv_pack.integral_to(soc1);
            let v_new = self.cached_mean_ocv_v(s.soc, soc1, Some(i_start), Some(i_end));
            let done = (v_new - v).abs() < MEAN_OCV_TOL_V;
            v = v_new;
            if done {
                break;
            }
        }
        self.finish(
            s,
            req,
            Flow {
                v,
                i: -i,
                r,
                soc1,
                on_s,
                eta,
                integrals: (i_start, i_end),
            },
            flags,
        )
    }

    /// Charge power the pack takes at OCV `v` from `offered_w`, and the limits acting.
    fn charge_power(&self, v: f64, r: f64, i_max: f64, offered_w: f64) -> (f64, PackFlags) {
        let i_cv = ((self.max_voltage_v() - v) / r).max(0.0);
        let i_star = i_max.min(i_cv);
        let p_lim = (v + i_star * r) * i_star;
        let mut flags = PackFlags::default();
        if offered_w > p_lim {
            flags.cv_taper = i_cv < i_max;
            flags.current_limited = !flags.cv_taper;
            return (p_lim, flags);
        }
        (offered_w, flags)
    }

    /// Builds the step result from the converged flow; the bookkeeping identity is
    /// exact here by construction.
    fn finish(&self, s: &PackState, req: &StepRequest, f: Flow, flags: PackFlags) -> PackStep {
        let ah = f.i.abs() * f.on_s / S_PER_H;
        let loss_resistive_wh = f.i * f.i * f.r * f.on_s / S_PER_H;
        let loss_coulombic_wh = if f.i < 0.0 {
            f.v * (1.0 - f.eta) * ah
        } else {
            0.0
        };
        let terminal_v = f.v - f.i * f.r;
        let power_w = terminal_v * f.i * f.on_s / req.dt_s;
        let mut state = *s;
        state.soc = f.soc1;
        if f.i > 0.0 {
            state.discharged_ah += ah;
        } else {
            state.charged_ah += ah;
        }
        PackStep {
            state,
            power_w,
            current_a: f.i,
            on_s: f.on_s,
            ocv_v: f.v,
            terminal_voltage_v: terminal_v,
            resistance_ohm: f.r,
            loss_resistive_wh,
            loss_coulombic_wh,
            // stored_energy_wh(soc1) − stored_energy_wh(soc), from the integrals at hand.
            stored_delta_wh: self.capacity_ah * f.integrals.1 - self.capacity_ah * f.integrals.0,
            shortfall_w: (req.power_w - power_w).max(0.0),
            unaccepted_w: (power_w - req.power_w).max(0.0),
            flags,
        }
    }
}

/// The converged flow of one step.
struct Flow {
    /// Step-mean OCV, V.
    v: f64,
    /// Current, A (+ discharge, - charge).
    i: f64,
    /// Resistance, ohm.
    r: f64,
    /// SOC at the end.
    soc1: f64,
    /// Seconds with current.
    on_s: f64,
    /// Coulombic efficiency applied to charge.
    eta: f64,
    /// The OCV curve's integral at the step's start SOC and at `soc1`.
    integrals: (f64, f64),
}

fn check_request(req: &StepRequest) -> Result<(), BatteryError> {
    let fix = "this is a bug in the caller: report it";
    let all = (f64::MIN, f64::MAX);
    check_range(
        "battery",
        "step.power_w",
        req.power_w,
        all,
        "a finite power",
        fix,
    )?;
    check_range(
        "battery",
        "step.dt_s",
        req.dt_s,
        (1e-9, 1e9),
        "0 < dt_s <= 1e9 s",
        fix,
    )?;
    check_range(
        "battery",
        "step.cell_temp_c",
        req.cell_temp_c,
        all,
        "a finite temperature",
        fix,
    )?;
    Ok(())
}
