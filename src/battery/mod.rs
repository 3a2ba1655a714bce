//! Battery stage: pack, thermal node and load schedules, as pure models that the
//! mission simulation steps.
//!
//! - [`chemistry`]: LFP and NMC cell presets (OCV tables, resistance, capacity against
//!   temperature) with their published sources.
//! - [`params`]: the `[battery]` table of a mission file, with defaults and ranges.
//! - [`pack`]: the Rint pack model and its constant-power step (limits, flags,
//!   bookkeeping that closes).
//! - [`thermal`]: one lumped thermal node with a thermostat heater and survival limits
//!   (the `[thermal]` table).
//! - [`ambient`]: air temperature from monthly means and a diurnal swing, or a
//!   measured series.
//! - [`loads`]: named loads and their schedules (the `[loads]` table).
//! - [`ageing`]: optional ageing estimate (equivalent full cycles, rainflow DoD,
//!   Palmgren-Miner damage).
//! - [`curve`]: the piecewise-linear tables the models share.
//!
//! A simulation step calls, in order: [`loads::Loads::total_w`] for the demand,
//! [`thermal::ThermalNode::step`] with the heat of electronics and the last step's
//! I^2 R, then [`pack::Pack::step`] with the net terminal power (loads + heater -
//! solar) at the box temperature. Nothing here reads files, prints or looks at a clock.

pub mod ageing;
pub mod ambient;
pub mod chemistry;
pub mod curve;
mod error;
pub mod loads;
pub mod pack;
pub mod params;
pub mod thermal;

pub use chemistry::Chemistry;
pub use error::BatteryError;
pub use pack::{Pack, PackFlags, PackState, PackStep, StepRequest};
pub use params::PackParams;
