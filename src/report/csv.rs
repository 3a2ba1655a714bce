//! CSV serialisers for a season run: the time series and the daily budgets. Pure
//! functions from results to text; units in every header.

use crate::mission::ledger::DayBudget;
use crate::mission::sim::Sample;

/// The header of timeseries-SEASON.csv.
pub const TIMESERIES_HEADER: &str = "time_utc,x,y,activity,generated_w,drive_w,hotel_w,payload_w,\
heater_w,losses_w,curtailed_w,soc,box_temp_c,ambient_c,sun_elevation_deg";

/// timeseries-SEASON.csv: one row per simulation step.
pub fn timeseries_csv(samples: &[Sample]) -> String {
    let mut out = String::with_capacity(samples.len() * 120 + 200);
    out.push_str(TIMESERIES_HEADER);
    out.push('\n');
    for s in samples {
        let activity = match s.activity {
            0 => "asleep",
            1 => "parked",
            _ => "driving",
        };
        out.push_str(&format!(
            "{},{:.2},{:.2},{activity},{:.3},{:.3},{:.3},{:.3},{:.3},{:.4},{:.3},{:.5},{:.2},{:.2},{:.3}\n",
            s.time.format("%Y-%m-%dT%H:%M:%SZ"),
            s.x,
            s.y,
            s.generated_w,
            s.drive_w,
            s.hotel_w,
            s.payload_w,
            s.heater_w,
            s.losses_w,
            s.curtailed_w,
            s.soc,
            s.box_temp_c,
            s.ambient_c,
            s.sun_elevation_deg
        ));
    }
    out
}

/// The header of daily-budget.csv.
pub const DAILY_HEADER: &str = "season,date_local,generated_wh,curtailed_wh,drive_wh,hotel_wh,\
payload_wh,heater_wh,losses_wh,consumed_wh,net_wh,soc_start,soc_min,soc_end";

/// Rows of daily-budget.csv for one season (without the header).
pub fn daily_rows(season: &str, days: &[DayBudget]) -> String {
    let mut out = String::new();
    for d in days {
        let l = &d.ledger;
        out.push_str(&format!(
            "{season},{},{:.2},{:.2},{:.2},{:.2},{:.2},{:.2},{:.3},{:.2},{:.2},{:.4},{:.4},{:.4}\n",
            d.date,
            l.generated_wh,
            l.curtailed_wh,
            l.drive_wh,
            l.hotel_wh,
            l.payload_wh,
            l.heater_wh,
            l.losses_wh,
            l.consumed_wh(),
            d.net_wh(),
            d.soc_start,
            d.soc_min,
            d.soc_end
        ));
    }
    out
}
