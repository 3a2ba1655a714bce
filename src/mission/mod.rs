//! The mission: one file that names the site, terrain, route, rover, panels, battery,
//! loads, weather, operating rules and seasons, read in two steps.
//!
//! - [`spec`]: TOML text → a raw mirror of the file with the place of every value;
//!   each key checked alone (known, right type, in range).
//! - [`resolve`]: raw → a checked [`Mission`] of the stages' own types; fields checked
//!   against each other and by the stages' own validation; input files looked up
//!   through a closure the caller passes (this module reads no file).
//!
//! [`check`] does both and returns every problem found, sorted by line and column.
//!
//! Then the run:
//!
//! - [`sim`]: the one orchestrator (drive, park, charge, sleep).
//! - [`ledger`]: energy bookkeeping that closes, and daily budgets.
//! - [`runner`]: one run per season, in parallel, with verdicts and daily budgets.
//! - [`verdict`]: a season's verdict and margin.
//! - [`prepare`]: the pipeline from a checked mission to a simulation setup (terrain
//!   read through [`crate::terrain::io`], route planned, sites ordered, models checked),
//!   shared by every command that simulates.

pub mod ledger;
pub mod prepare;
pub mod resolve;
pub mod runner;
pub mod sim;
pub mod spec;
pub mod verdict;

use std::path::Path;

pub use resolve::{Mission, Season};
pub use spec::Problem;

/// Parses and resolves a mission file's `text`. `base` is the folder of the mission
/// file (input paths are relative to it); `exists` says whether an input file exists.
/// Returns the mission, or every problem found by both steps, sorted by position.
pub fn check(
    text: &str,
    base: &Path,
    exists: &dyn Fn(&Path) -> bool,
) -> Result<Mission, Vec<Problem>> {
    let (raw, mut problems) = spec::parse(text);
    let syntax_failed = problems.iter().any(|p| p.key == "(file)");
    if syntax_failed {
        return Err(problems);
    }
    match resolve::resolve(&raw, text, base, exists) {
        Ok(m) if problems.is_empty() => Ok(m),
        Ok(_) => Err(problems),
        Err(more) => {
            problems.extend(more);
            if problems.is_empty() {
                problems.push(unexplained());
            }
            spec::sort_problems(&mut problems);
            Err(problems)
        }
    }
}

/// A safety net: every path of the resolver that gives up reports why, after the
/// spec's problems; should one not, say so rather than return an empty list.
fn unexplained() -> Problem {
    Problem {
        key: "(file)".into(),
        at: None,
        detail: "the mission could not be resolved, and no single key was found at fault".into(),
        fix: "please report this file to the sunward developers".into(),
    }
}
