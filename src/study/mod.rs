//! Trade studies on the mission runner: sweeps over mission keys ([`sweep`], with the
//! values in [`vary`]), sizing of the battery or the panels by bisection ([`size`]), and
//! the weather Monte Carlo ([`montecarlo`]: N sampled-weather runs per season).
//!
//! Everything here simulates through [`crate::mission::prepare`], so a case of a study
//! and `sunward run` on the same mission file give the same verdict.

pub mod montecarlo;
pub mod size;
pub mod sweep;
pub mod vary;
