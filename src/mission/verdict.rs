//! A season's verdict and its margin, from a simulation run.
//!
//! A season is **feasible** when the rover arrives before the deadline, is never
//! stranded, never falls below the reserve state of charge, and its battery box never
//! falls below the storage temperature minimum.
//!
//! The **margin** is the lowest state of charge minus the reserve, as a fraction of the
//! pack's nominal capacity: the share of capacity the pack could lose (or the extra
//! energy, in capacity units, the mission could spend at its worst moment) and still keep
//! the reserve. It is negative when the reserve was broken. It is a margin on energy at
//! the worst moment only; it says nothing of the time margin to the deadline.
//!
//! # Units
//! Fractions of capacity for SOC and margin; watt-hours; hours.

use chrono::{DateTime, NaiveDate, Utc};

use crate::mission::ledger::Ledger;
use crate::mission::sim::{Run, Stranded};

/// Energy consumed by category, Wh (the `energy_consumed_wh` object of summary.json).
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Consumed {
    /// Traction.
    pub drive: f64,
    /// Hotel while awake.
    pub hotel: f64,
    /// Named payload loads.
    pub payload: f64,
    /// Battery heater.
    pub heater: f64,
    /// Pack losses (I²R and coulombic).
    pub losses: f64,
}

/// One season in summary.json (stable keys; more may be added).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct SeasonSummary {
    /// Season name.
    pub name: String,
    /// Start date (UTC).
    pub date: NaiveDate,
    /// The verdict.
    pub feasible: bool,
    /// Arrival at the goal, RFC 3339, or null.
    pub arrival_time: Option<DateTime<Utc>>,
    /// Where and why the rover ran out, or null.
    pub stranded: Option<Stranded>,
    /// Lowest state of charge (NaN, null in JSON, when the route cannot be planned and
    /// nothing was simulated).
    pub min_soc: f64,
    /// When it occurred.
    pub min_soc_time: DateTime<Utc>,
    /// Hours below the reserve state of charge.
    pub hours_below_reserve: f64,
    /// Panel output, Wh.
    pub energy_generated_wh: f64,
    /// Energy used by category, Wh.
    pub energy_consumed_wh: Consumed,
    /// Lowest SOC minus the reserve (see the module doc); NaN (null) like `min_soc`.
    pub margin: f64,
    /// Solar output the pack could not accept, Wh.
    pub energy_curtailed_wh: f64,
    /// Route distance covered, metres.
    pub distance_m: f64,
    /// First moment the box fell below the storage minimum, or null.
    pub storage_breach_time: Option<DateTime<Utc>>,
    /// One sentence: why the verdict is what it is.
    pub reason: String,
}

fn consumed(l: &Ledger) -> Consumed {
    Consumed {
        drive: l.drive_wh,
        hotel: l.hotel_wh,
        payload: l.payload_wh,
        heater: l.heater_wh,
        losses: l.losses_wh,
    }
}

impl SeasonSummary {
    /// The lowest state of charge as a percentage with one decimal, or "—" for a season
    /// that was not simulated (its route cannot be planned).
    pub fn min_soc_text(&self) -> String {
        if self.min_soc.is_finite() {
            format!("{:.1} %", 100.0 * self.min_soc)
        } else {
            "—".to_string()
        }
    }

    /// The margin with a sign and two decimals, or "—" for a season that was not
    /// simulated.
    pub fn margin_text(&self) -> String {
        if self.margin.is_finite() {
            format!("{:+.2}", self.margin)
        } else {
            "—".to_string()
        }
    }
}

/// The clause for a rover that waited for charge and lost charge while it waited (its
/// parked loads took more than its panels gave), or nothing.
fn waiting_lost(run: &Run) -> String {
    if run.charge_wait_s <= 0.0 || run.charge_wait_stored_wh >= 0.0 {
        return String::new();
    }
    format!(
        "; over the {:.1} h it waited for charge the pack lost {:.0} Wh net: parked, its \
         loads took more than the panels gave, so waiting could not recharge it (a lower \
         hotel or heater load while parked, or more panel, would)",
        run.charge_wait_s / 3600.0,
        -run.charge_wait_stored_wh
    )
}

/// The verdict of one run; `route_length_m` is the planned route's length.
pub fn summarize(
    name: &str,
    date: NaiveDate,
    run: &Run,
    reserve_soc: f64,
    route_length_m: f64,
) -> SeasonSummary {
    let reason = match (&run.stranded, run.arrival, run.storage_breach) {
        (Some(s), _, _) => format!(
            "stranded at {} ({:.0}, {:.0}) by {}: {}",
            s.time.format("%Y-%m-%d %H:%M UTC"),
            s.x,
            s.y,
            match s.cause {
                "heat" => "temperature",
                "light" => "lack of light",
                "tilt" => "the tilt limits",
                "traction" => "the traction limit",
                _ => "the terrain",
            },
            s.detail
        ),
        (None, None, _) if run.in_hours_s == 0.0 => format!(
            "did not arrive: no driving hours in the whole run (under a daylight-only policy \
             this is polar night), {:.0} of {:.0} m driven",
            run.distance_m, route_length_m
        ),
        (None, None, _) => format!(
            "did not arrive by the deadline: {:.0} of {:.0} m driven; {:.1} h of the driving \
             hours were spent parked, waiting for charge{}",
            run.distance_m,
            route_length_m,
            run.charging_hold_s / 3600.0,
            waiting_lost(run)
        ),
        (None, Some(_), Some(t)) => format!(
            "the battery box fell below its storage minimum at {}",
            t.format("%Y-%m-%d %H:%M UTC")
        ),
        (None, Some(t), None) if run.hours_below_reserve > 0.0 => format!(
            "arrived at {} but spent {:.1} h below the reserve",
            t.format("%Y-%m-%d %H:%M UTC"),
            run.hours_below_reserve
        ),
        (None, Some(t), None) => format!(
            "arrived at {} with the state of charge never below {:.0} %",
            t.format("%Y-%m-%d %H:%M UTC"),
            100.0 * run.min_soc.0
        ),
    };
    let feasible = run.stranded.is_none()
        && run.arrival.is_some()
        && run.hours_below_reserve == 0.0
        && run.storage_breach.is_none();
    SeasonSummary {
        name: name.to_string(),
        date,
        feasible,
        arrival_time: run.arrival,
        stranded: run.stranded.clone(),
        min_soc: run.min_soc.0,
        min_soc_time: run.min_soc.1,
        hours_below_reserve: run.hours_below_reserve,
        energy_generated_wh: run.ledger.generated_wh,
        energy_consumed_wh: consumed(&run.ledger),
        margin: run.min_soc.0 - reserve_soc,
        energy_curtailed_wh: run.ledger.curtailed_wh,
        distance_m: run.distance_m,
        storage_breach_time: run.storage_breach,
        reason,
    }
}
