//! Energy bookkeeping that closes: every watt-hour the panels make goes to a load, into
//! the pack, into a loss, or is curtailed because the pack could not take it.
//!
//! Identity checked after every run (common practice of energy-balance accounting):
//!
//! ```text
//!   generated − curtailed − (drive + hotel + payload + heater) − losses = Δ stored
//! ```
//!
//! where losses are the pack's I²R and coulombic losses and Δ stored the change of the
//! pack's open-circuit energy. Consumption is what was actually served (a step that
//! could not be served in full strands the rover and ends the run).
//!
//! # Units
//! Watt-hours.

/// Energy by category over a span, Wh.
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize)]
pub struct Ledger {
    /// Panel output.
    pub generated_wh: f64,
    /// Panel output the full (or too cold) pack could not accept.
    pub curtailed_wh: f64,
    /// Traction drive.
    pub drive_wh: f64,
    /// Hotel (computer, radio, sensors) while awake.
    pub hotel_wh: f64,
    /// Named payload loads.
    pub payload_wh: f64,
    /// Battery heater.
    pub heater_wh: f64,
    /// Pack I²R and coulombic losses.
    pub losses_wh: f64,
    /// Change of stored energy.
    pub stored_delta_wh: f64,
}

impl Ledger {
    /// Everything consumed by the rover's loads, Wh.
    pub fn consumed_wh(&self) -> f64 {
        self.drive_wh + self.hotel_wh + self.payload_wh + self.heater_wh
    }

    /// generated − curtailed − consumed − losses − Δstored, Wh (zero when it closes).
    pub fn residual_wh(&self) -> f64 {
        self.generated_wh
            - self.curtailed_wh
            - self.consumed_wh()
            - self.losses_wh
            - self.stored_delta_wh
    }

    /// The residual as a share of the energy moved (0 for an idle span).
    pub fn relative_residual(&self) -> f64 {
        let moved = self.generated_wh + self.consumed_wh() + self.losses_wh;
        if moved > 0.0 {
            self.residual_wh().abs() / moved
        } else {
            0.0
        }
    }

    /// Adds another span.
    pub fn add(&mut self, o: &Ledger) {
        self.generated_wh += o.generated_wh;
        self.curtailed_wh += o.curtailed_wh;
        self.drive_wh += o.drive_wh;
        self.hotel_wh += o.hotel_wh;
        self.payload_wh += o.payload_wh;
        self.heater_wh += o.heater_wh;
        self.losses_wh += o.losses_wh;
        self.stored_delta_wh += o.stored_delta_wh;
    }
}

/// One local day of a run (a row of daily-budget.csv).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct DayBudget {
    /// Local calendar date.
    pub date: chrono::NaiveDate,
    /// Energy by category over the day, Wh.
    pub ledger: Ledger,
    /// State of charge at the start of the day's first step.
    pub soc_start: f64,
    /// Lowest state of charge of the day.
    pub soc_min: f64,
    /// State of charge at the end of the day's last step.
    pub soc_end: f64,
}

impl DayBudget {
    /// Generated minus consumed minus losses, Wh.
    pub fn net_wh(&self) -> f64 {
        self.ledger.generated_wh
            - self.ledger.curtailed_wh
            - self.ledger.consumed_wh()
            - self.ledger.losses_wh
    }
}

/// Daily budgets by local date from a run's samples (`step_s` apart, the clock
/// `utc_offset_s` ahead of UTC); `initial_soc` is the state before the first sample.
pub fn daily_budgets(
    samples: &[crate::mission::sim::Sample],
    step_s: f64,
    utc_offset_s: i64,
    initial_soc: f64,
) -> Vec<DayBudget> {
    let h = step_s / 3600.0;
    let mut days: Vec<DayBudget> = Vec::new();
    let mut prev_soc = initial_soc;
    for s in samples {
        let date = (s.time + chrono::Duration::seconds(utc_offset_s)).date_naive();
        if days.last().is_none_or(|d| d.date != date) {
            days.push(DayBudget {
                date,
                ledger: Ledger::default(),
                soc_start: prev_soc,
                soc_min: prev_soc,
                soc_end: prev_soc,
            });
        }
        let d = days.last_mut().expect("just pushed");
        d.ledger.add(&Ledger {
            generated_wh: s.generated_w * h,
            curtailed_wh: s.curtailed_w * h,
            drive_wh: s.drive_w * h,
            hotel_wh: s.hotel_w * h,
            payload_wh: s.payload_w * h,
            heater_wh: s.heater_w * h,
            losses_wh: s.losses_w * h,
            stored_delta_wh: s.stored_delta_wh,
        });
        d.soc_min = d.soc_min.min(s.soc);
        d.soc_end = s.soc;
        prev_soc = s.soc;
    }
    days
}
