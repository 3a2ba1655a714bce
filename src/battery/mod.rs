//! Battery stage: pack, thermal node and load schedules, as pure models that the
//! mission simulation steps.
//!
//! - [`chemistry`]: LFP and NMC cell presets (OCV tables, resistance, capacity against
//!   temperature) with their published sources.
//! - [`params`]: the `[battery]` table of a mission file, with defaults and ranges.
//! - [`pack`]: the Rint pack model and its constant-power step (limits, flags,
//!   bookkeeping that closes).
//! - [`curve`]: the piecewise-linear tables the models share.
//!
//! Nothing here reads files, prints or looks at a clock.

pub mod chemistry;
pub mod curve;
mod error;
pub mod pack;
pub mod params;

pub use chemistry::Chemistry;
pub use error::BatteryError;
pub use pack::{Pack, PackFlags, PackState, PackStep, StepRequest};
pub use params::PackParams;
