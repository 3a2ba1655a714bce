//! Sizing: the smallest battery capacity (or panel area) with which every season of the
//! mission is feasible (arrives, never strands, never below the reserve), by bisection.
//!
//! # Method
//! Feasibility is taken as monotone in the size (more battery or more panel never turns
//! a feasible case infeasible: the property test in tests/study.rs checks it on the demo
//! mission). From the mission's own value the search brackets the answer, halving until
//! a size fails or doubling until one passes (within the key's range: battery
//! [`BATTERY_RANGE_WH`], panels [`PANEL_RANGE_M2`]), then bisects the bracket
//! geometrically (the next size is √(lo·hi)) until `hi / lo ≤ 1 + tolerance`. The answer
//! is `hi`, a size that passes; `lo`, which fails, is within the tolerance below it. With
//! a tolerance under 5 %, 0.95 × the answer lies below `lo` and fails too.
//!
//! # Binding season and moment
//! At the answer, the binding season is the one with the smallest margin and the binding
//! moment its lowest state of charge; the seasons that fail at `lo` are listed too.
//!
//! The route does not depend on either size (the battery and panel masses are part of
//! `[rover] mass_kg`), so it is planned once.

use crate::mission::prepare::Planned;
use crate::plan::PlanError;
use crate::progress::Progress;
use crate::study::sweep::{CaseOutcome, Study};
use crate::study::vary::{Value, Vary};

/// What to size.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum What {
    /// `battery.capacity_wh`.
    Battery,
    /// `panels.area_m2`.
    Panels,
}

impl What {
    /// The mission key.
    pub fn key(self) -> &'static str {
        match self {
            What::Battery => "battery.capacity_wh",
            What::Panels => "panels.area_m2",
        }
    }

    /// The key's unit.
    pub fn unit(self) -> &'static str {
        match self {
            What::Battery => "Wh",
            What::Panels => "m²",
        }
    }

    fn range(self) -> (f64, f64) {
        match self {
            What::Battery => BATTERY_RANGE_WH,
            What::Panels => PANEL_RANGE_M2,
        }
    }
}

/// Battery capacities searched, Wh (the key's range in the mission file).
pub const BATTERY_RANGE_WH: (f64, f64) = (1.0, 1e7);
/// Panel areas searched, m² (above 0: no panel cannot be bisected; up to the key's 1000).
pub const PANEL_RANGE_M2: (f64, f64) = (0.001, 1000.0);

/// The sizing result.
#[derive(Debug, Clone, PartialEq)]
pub struct Sizing {
    /// What was sized.
    pub what: What,
    /// The mission's own value.
    pub mission_value: f64,
    /// The smallest size found that passes every season.
    pub value: f64,
    /// The largest size found that fails (None when the smallest size searched passes).
    pub failing_below: Option<f64>,
    /// The relative tolerance `hi / lo - 1` reached.
    pub tolerance: f64,
    /// The outcome at `value`.
    pub at_value: CaseOutcome,
    /// The outcome at `failing_below`.
    pub at_failing: Option<CaseOutcome>,
    /// Simulations of the whole mission made.
    pub evaluations: usize,
}

/// Why no size was found.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SizeError {
    /// Even the largest size fails.
    #[error("no {key} up to {max} {unit} makes every season feasible: {season} still fails ({reason}). Fix: the mission fails for a reason size cannot mend; see the reason, or run `sunward run` on it")]
    NoneUpTo {
        /// The key.
        key: &'static str,
        /// The largest size tried.
        max: f64,
        /// Its unit.
        unit: &'static str,
        /// The binding season there.
        season: String,
        /// Its reason.
        reason: String,
        /// The mission's own value.
        mission_value: f64,
        /// Simulations of the whole mission made.
        evaluations: usize,
    },
    /// The route cannot be planned, so no size helps.
    #[error("the route cannot be planned, so no size helps: {reason}")]
    Unplannable {
        /// Why the planner failed.
        reason: String,
        /// The mission's own value.
        mission_value: f64,
    },
    /// The mission or a case of it is not valid.
    #[error("{0}")]
    Case(String),
    /// The tolerance is outside (0, 0.5].
    #[error("tolerance {0}: expected more than 0 and at most 0.5. Fix: use e.g. 0.01 for 1 %")]
    Tolerance(f64),
}

/// Sizes `what` for the study's mission to a relative `tolerance`.
pub fn size(
    study: &Study<'_>,
    what: What,
    tolerance: f64,
    progress: &dyn Progress,
) -> Result<Sizing, SizeError> {
    if !(tolerance > 0.0 && tolerance <= 0.5) {
        return Err(SizeError::Tolerance(tolerance));
    }
    let key = what.key();
    let vary = Vary {
        key: key.to_string(),
        values: Vec::new(),
        spec: format!("{key} (sizing)"),
    };
    let base = study.mission(&[], &[]).map_err(SizeError::Case)?;
    let mission_value = match what {
        What::Battery => base
            .battery
            .rated_energy_wh()
            .unwrap_or(crate::battery::params::DEFAULT_CAPACITY_WH),
        What::Panels => base.panels.panel.area_m2,
    };
    let planned: Result<Planned, PlanError> = study.plan(&base).map_err(SizeError::Case)?;
    if let Err(e) = &planned {
        return Err(SizeError::Unplannable {
            reason: e.to_string(),
            mission_value,
        });
    }
    let (min, max) = what.range();
    let mut evaluations = 0;
    let mut eval = |v: f64| -> Result<CaseOutcome, SizeError> {
        let m = study
            .mission(std::slice::from_ref(&vary), &[Value::Number(v)])
            .map_err(SizeError::Case)?;
        evaluations += 1;
        progress.update(evaluations as u64);
        Ok(study.outcome(&m, &planned))
    };
    progress.start("sizing (simulations)", 0);
    let start = mission_value.clamp(min, max);
    let first = eval(start)?;
    let (mut lo, mut hi, mut at_lo, mut at_hi);
    if first.feasible {
        (hi, at_hi) = (start, first);
        lo = start;
        loop {
            if lo <= min {
                progress.finish();
                return Ok(Sizing {
                    what,
                    mission_value,
                    value: hi,
                    failing_below: None,
                    tolerance: 0.0,
                    at_value: at_hi,
                    at_failing: None,
                    evaluations,
                });
            }
            let v = (lo / 2.0).max(min);
            let o = eval(v)?;
            if o.feasible {
                (hi, at_hi) = (v, o);
                lo = v;
            } else {
                (lo, at_lo) = (v, Some(o));
                break;
            }
        }
    } else {
        (lo, at_lo) = (start, Some(first));
        loop {
            if lo >= max {
                let o = at_lo.expect("a failing outcome");
                progress.finish();
                return Err(SizeError::NoneUpTo {
                    key,
                    max,
                    unit: what.unit(),
                    season: o.binding_season,
                    reason: o.binding_reason,
                    mission_value,
                    evaluations,
                });
            }
            let v = (lo * 2.0).min(max);
            let o = eval(v)?;
            if o.feasible {
                (hi, at_hi) = (v, o);
                break;
            }
            (lo, at_lo) = (v, Some(o));
        }
    }
    while hi / lo - 1.0 > tolerance {
        let v = (lo * hi).sqrt();
        let o = eval(v)?;
        if o.feasible {
            (hi, at_hi) = (v, o);
        } else {
            (lo, at_lo) = (v, Some(o));
        }
    }
    progress.finish();
    Ok(Sizing {
        what,
        mission_value,
        value: hi,
        failing_below: Some(lo),
        tolerance: hi / lo - 1.0,
        at_value: at_hi,
        at_failing: at_lo,
        evaluations,
    })
}
