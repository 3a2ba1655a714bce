//! The mission: season-by-season simulation of a planned route and its bookkeeping.
//!
//! - [`sim`]: the one orchestrator (drive, park, charge, sleep).
//! - [`ledger`]: energy bookkeeping that closes.
//! - [`runner`]: one run per season, in parallel, with verdicts and daily budgets.
//! - [`verdict`]: a season's verdict and margin.
//! - [`seasons`]: equinox and solstice dates named for the hemisphere.

pub mod ledger;
pub mod runner;
pub mod seasons;
pub mod sim;
pub mod verdict;
