//! Progress events emitted by long computations in the numeric core.
//!
//! The core never draws anything: it calls a [`Progress`] sink with how much of a named
//! task is done, and the CLI decides how (or whether) to show it.

/// A receiver of progress reports. Implementations must be cheap and thread-safe: the
/// core may call them from rayon worker threads.
pub trait Progress: Sync {
    /// A task named `label` starts with `total` units of work.
    fn start(&self, label: &str, total: u64);
    /// `done` units of the current task are finished (monotone, at most `total`).
    fn update(&self, done: u64);
    /// The current task is finished.
    fn finish(&self);
}

/// A sink that ignores every report (library default, tests).
#[derive(Debug, Default, Clone, Copy)]
pub struct Silent;

impl Progress for Silent {
    fn start(&self, _label: &str, _total: u64) {}
    fn update(&self, _done: u64) {}
    fn finish(&self) {}
}
