//! summary.json: the schema of a mission run's verdict file, with its own version.
//!
//! Schema version 1 (stable keys; fields may be added, never renamed or removed without
//! a new version):
//!
//! ```text
//! {
//!   "schema_version": 1,
//!   "tool": "sunward 0.1.0",
//!   "mission": "<name>",
//!   "feasible": true | false,            every season feasible
//!   "seasons": [ {                         one object per season, in calendar order
//!     "name", "date", "feasible", "arrival_time" (RFC 3339 or null),
//!     "stranded" (null or {"time", "x", "y", "cause": "light" | "heat", "detail"}),
//!     "min_soc", "min_soc_time", "hours_below_reserve",
//!     "energy_generated_wh", "energy_consumed_wh": {"drive", "hotel", "payload",
//!     "heater", "losses"}, "margin", "energy_curtailed_wh", "distance_m",
//!     "storage_breach_time", "reason" } ],
//!   "inputs": { ... the mission's inputs, echoed with units in their keys ... },
//!   "cautions": [ ... ],
//!   "monte_carlo": {                       only with `run --monte-carlo N`
//!     "runs", "seed", "distribution", "quantile_rule", "limitation",
//!     "seasons": [ {                       one object per season, in the seasons' order
//!       "name", "date", "runs", "seed", "distribution", "quantile_rule",
//!       "probability_complete",            share of feasible runs (0..1)
//!       "min_soc_mean", "min_soc_q05", "min_soc_q50", "min_soc_q95",
//!       "min_socs": [ ... ]                each run's lowest state of charge, run order
//!     } ] }
//! }
//! ```
//!
//! `margin` = lowest state of charge − reserve, as a fraction of nominal capacity
//! (see [`crate::mission::verdict`]).

use serde::Serialize;

use crate::mission::runner::SeasonResult;
use crate::mission::verdict::SeasonSummary;
use crate::study::montecarlo::{SeasonMonteCarlo, QUANTILE_RULE};
use crate::sun::clearness_mc::DISTRIBUTION;

/// The schema version written into every summary.json.
pub const SCHEMA_VERSION: u32 = 1;

/// The light caution of a run under the clear sky.
pub const LIGHT_CLEAR_SKY: &str = "Clear-sky irradiance is an upper envelope of real skies; \
     cloud, dust, snow on panels and shading the terrain model misses all reduce the energy.";

/// The light caution of a run under the clear sky scaled by monthly clearness.
pub const LIGHT_CLEARNESS: &str = "The monthly clearness scales every day of a month alike; \
     real days scatter around the mean (run --monte-carlo with clearness_sd to see the \
     spread), and dust, snow on panels and shading the terrain model misses all reduce the \
     energy.";

/// The light caution of a run on a measured weather record.
pub const LIGHT_MEASURED: &str = "Measured weather is one record of the past; other years \
     differ, and dust, snow on panels and shading the terrain model misses all reduce the \
     energy.";

/// The cautions of a mission's reports: the light caution names its source of sunlight.
pub fn cautions_for_sky(sky: &crate::mission::resolve::Sky) -> [&'static str; 4] {
    use crate::mission::resolve::Sky;
    cautions_with_light(match sky {
        Sky::ClearSky(_) => LIGHT_CLEAR_SKY,
        Sky::Clearness { .. } => LIGHT_CLEARNESS,
        Sky::Csv { .. } => LIGHT_MEASURED,
    })
}

/// The cautions every report carries, with `light` (one of the `LIGHT_*` texts) second.
pub fn cautions_with_light(light: &'static str) -> [&'static str; 4] {
    let mut c = CAUTIONS;
    c[1] = light;
    c
}

/// The cautions every report carries (the light caution of the clear sky).
pub const CAUTIONS: [&str; 4] = [
    "sunward is a planning aid with stated model limits (README: Model limits and cautions); \
     confirm every plan by field tests and keep margins.",
    LIGHT_CLEAR_SKY,
    "Battery limits, above all the charge temperature limit, come from the cell maker's data \
     sheet, not from sunward's defaults.",
    "Local regulations and the operator's own safety practice govern every deployment.",
];

/// The summary document.
#[derive(Debug, Clone, Serialize)]
pub struct Summary<'a> {
    /// [`SCHEMA_VERSION`].
    pub schema_version: u32,
    /// Program and version.
    pub tool: String,
    /// Mission name.
    pub mission: &'a str,
    /// Every season feasible.
    pub feasible: bool,
    /// One entry per season.
    pub seasons: Vec<&'a SeasonSummary>,
    /// The inputs, echoed.
    pub inputs: serde_json::Value,
    /// The cautions.
    pub cautions: [&'static str; 4],
    /// The weather Monte Carlo, when one was run.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub monte_carlo: Option<MonteCarloJson>,
    /// With `--planner sun-aware`: per season, the fixed route's verdict beside the
    /// sun-aware plan's, and the plan's holds.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub planner_comparison: Option<serde_json::Value>,
}

/// The weather Monte Carlo of a run (`run --monte-carlo N`).
#[derive(Debug, Clone, Serialize)]
pub struct MonteCarloJson {
    /// Runs per season.
    pub runs: usize,
    /// The seed.
    pub seed: u64,
    /// The daily distribution.
    pub distribution: &'static str,
    /// How the quantiles are formed.
    pub quantile_rule: &'static str,
    /// What the sampling leaves out.
    pub limitation: &'static str,
    /// One entry per season.
    pub seasons: Vec<MonteCarloSeasonJson>,
}

/// One season's Monte Carlo in summary.json.
#[derive(Debug, Clone, Serialize)]
pub struct MonteCarloSeasonJson {
    /// Season name.
    pub name: String,
    /// Season date.
    pub date: String,
    /// Runs.
    pub runs: usize,
    /// The seed.
    pub seed: u64,
    /// The daily distribution.
    pub distribution: &'static str,
    /// How the quantiles are formed.
    pub quantile_rule: &'static str,
    /// Share of feasible runs.
    pub probability_complete: f64,
    /// Mean of the runs' lowest state of charge.
    pub min_soc_mean: f64,
    /// 5 % quantile of the lowest state of charge.
    pub min_soc_q05: f64,
    /// Median of the lowest state of charge.
    pub min_soc_q50: f64,
    /// 95 % quantile of the lowest state of charge.
    pub min_soc_q95: f64,
    /// Every run's lowest state of charge, in run order.
    pub min_socs: Vec<f64>,
}

/// What the Monte Carlo's daily draws leave out.
pub const MONTE_CARLO_LIMITATION: &str = "days are drawn independently; real cloudiness \
     is autocorrelated, so multi-day dark spells are under-sampled and the probability of \
     completing is optimistic";

/// The summary.json entry of a weather Monte Carlo.
pub fn monte_carlo_json(results: &[SeasonMonteCarlo], runs: usize, seed: u64) -> MonteCarloJson {
    MonteCarloJson {
        runs,
        seed,
        distribution: DISTRIBUTION,
        quantile_rule: QUANTILE_RULE,
        limitation: MONTE_CARLO_LIMITATION,
        seasons: results
            .iter()
            .map(|r| MonteCarloSeasonJson {
                name: r.season.name.clone(),
                date: r.season.date.to_string(),
                runs: r.draws.len(),
                seed: r.seed,
                distribution: DISTRIBUTION,
                quantile_rule: QUANTILE_RULE,
                probability_complete: r.probability_complete(),
                min_soc_mean: r.min_soc_mean(),
                min_soc_q05: r.min_soc_quantile(0.05),
                min_soc_q50: r.min_soc_quantile(0.50),
                min_soc_q95: r.min_soc_quantile(0.95),
                min_socs: r.min_socs(),
            })
            .collect(),
    }
}

/// Builds the summary of a run.
pub fn summary<'a>(
    mission: &'a str,
    results: &'a [SeasonResult],
    inputs: serde_json::Value,
) -> Summary<'a> {
    Summary {
        schema_version: SCHEMA_VERSION,
        tool: format!("sunward {}", env!("CARGO_PKG_VERSION")),
        mission,
        feasible: results.iter().all(|r| r.summary.feasible),
        seasons: results.iter().map(|r| &r.summary).collect(),
        inputs,
        cautions: CAUTIONS,
        monte_carlo: None,
        planner_comparison: None,
    }
}

/// summary.json text (pretty, stable key order within each object).
pub fn summary_json(s: &Summary<'_>) -> String {
    serde_json::to_string_pretty(s).expect("plain data serialises")
}
