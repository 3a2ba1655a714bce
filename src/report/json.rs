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
//!   "cautions": [ ... ]
//! }
//! ```
//!
//! `margin` = lowest state of charge − reserve, as a fraction of nominal capacity
//! (see [`crate::mission::verdict`]).

use serde::Serialize;

use crate::mission::runner::SeasonResult;
use crate::mission::verdict::SeasonSummary;

/// The schema version written into every summary.json.
pub const SCHEMA_VERSION: u32 = 1;

/// The cautions every report carries.
pub const CAUTIONS: [&str; 4] = [
    "sunward is a planning aid with stated model limits (README: Model limits and cautions); \
     confirm every plan by field tests and keep margins.",
    "Clear-sky irradiance is an upper envelope of real skies; cloud, dust, snow on panels and \
     shading the terrain model misses all reduce the energy.",
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
    }
}

/// summary.json text (pretty, stable key order within each object).
pub fn summary_json(s: &Summary<'_>) -> String {
    serde_json::to_string_pretty(s).expect("plain data serialises")
}
