//! Runs one simulation per season (in parallel; each season is independent) and gives
//! each its verdict and daily budgets.
//!
//! A season starts at the setup's `start_local_h` on its date (the site's clock,
//! `utc_offset_s`) and runs until arrival, stranding or the policy's deadline.
//!
//! # Units
//! Seconds; dates are local calendar dates.

use chrono::{DateTime, Duration, NaiveDate, Utc};
use rayon::prelude::*;

use crate::mission::ledger::{daily_budgets, DayBudget};
use crate::mission::resolve::Season;
use crate::mission::sim::{simulate, Run, SimError, SimSetup};
use crate::mission::verdict::{summarize, SeasonSummary};

/// One season's outcome.
#[derive(Debug, Clone, PartialEq)]
pub struct SeasonResult {
    /// The season.
    pub season: Season,
    /// The full run.
    pub run: Run,
    /// Verdict and totals.
    pub summary: SeasonSummary,
    /// Day-by-day budgets.
    pub days: Vec<DayBudget>,
}

/// Local midnight of `date` at a site whose clock runs `utc_offset_s` ahead of UTC.
pub fn local_midnight(date: NaiveDate, utc_offset_s: i64) -> DateTime<Utc> {
    date.and_hms_opt(0, 0, 0)
        .expect("midnight exists")
        .and_utc()
        - Duration::seconds(utc_offset_s)
}

/// The start of a season: `start_local_h` hours after local midnight of `date`.
pub fn season_start(date: NaiveDate, utc_offset_s: i64, start_local_h: f64) -> DateTime<Utc> {
    local_midnight(date, utc_offset_s)
        + Duration::milliseconds((start_local_h * 3.6e6).round() as i64)
}

/// Simulates every season with the same setup. Results come back in the seasons' order
/// whatever the number of threads.
pub fn run_seasons(
    setup: &SimSetup<'_>,
    seasons: &[Season],
) -> Result<Vec<SeasonResult>, SimError> {
    run_seasons_with(setup, seasons, &crate::progress::Silent)
}

/// [`run_seasons`], reporting each finished season to `progress`.
pub fn run_seasons_with(
    setup: &SimSetup<'_>,
    seasons: &[Season],
    progress: &dyn crate::progress::Progress,
) -> Result<Vec<SeasonResult>, SimError> {
    let reserve = setup.pack.params().reserve_soc;
    let done = std::sync::atomic::AtomicU64::new(0);
    progress.start("seasons", seasons.len() as u64);
    let out = seasons
        .par_iter()
        .map(|season| {
            let start = season_start(season.date, setup.utc_offset_s, setup.start_local_h);
            let run = simulate(setup, start)?;
            let length = setup.route.summary.length_m;
            let summary = summarize(&season.name, season.date, &run, reserve, length);
            let days = daily_budgets(
                &run.samples,
                setup.step_s,
                setup.utc_offset_s,
                setup.initial_soc,
            );
            progress.update(done.fetch_add(1, std::sync::atomic::Ordering::Relaxed) + 1);
            Ok(SeasonResult {
                season: season.clone(),
                run,
                summary,
                days,
            })
        })
        .collect();
    progress.finish();
    out
}
