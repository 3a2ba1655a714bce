//! The mission: season-by-season simulation of a planned route and its bookkeeping.
//!
//! - [`sim`]: the one orchestrator (drive, park, charge, sleep).
//! - [`ledger`]: energy bookkeeping that closes.

pub mod ledger;
pub mod sim;
