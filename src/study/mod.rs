//! Studies over many simulations of one mission: the weather Monte Carlo (sweeps and
//! battery sizing are planned). Each study reuses the mission pipeline
//! ([`crate::mission::prepare`]) and runs in parallel with results that do not depend on
//! the thread count.

pub mod montecarlo;
