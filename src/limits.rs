//! Resource limits: the memory budget checked before the large per-cell allocations.
//!
//! Two limits guard a run against a raster that is too big for the machine, both checked
//! before anything large is allocated and both raised by the user, never guessed from the
//! machine (a default is a starting point with a stated reason):
//!
//! - the cell count ([`crate::terrain::io::DEFAULT_MAX_CELLS`], `--max-cells`,
//!   `[terrain] max_cells`), checked by the raster readers from the file header;
//! - the memory budget ([`DEFAULT_MAX_MEMORY_MB`], `--max-memory-mb`,
//!   `[terrain] max_memory_mb`), checked here against the bytes the planner's per-cell
//!   arrays and the horizon maps will take for the grid that was read, and the bytes of
//!   the seasons' time series a mission's step and deadline ask for.
//!
//! The estimates are sizes of the arrays themselves (rounded up), not of everything a
//! process holds; they are meant to refuse a run that cannot fit, with a message that
//! says what to raise, not to account for every byte.
//!
//! # Units
//! Bytes inside; the budget is given in MiB (2^20 bytes) at the edges.

/// Default memory budget: 8192 MiB (8 GiB). Common practice for a laptop-class machine
/// of the 2020s; it admits the route planner on the default maximum of 2^28 cells
/// (6 GiB at [`PLANNER_BYTES_PER_CELL`]) and horizon maps of 32 sectors on 7000 × 7000
/// cells. Raise it on bigger machines.
pub const DEFAULT_MAX_MEMORY_MB: u64 = 8192;

/// Bytes per cell the route planner holds while it searches: the elevation grid (4, f32),
/// the cell flags (1, u8), and either the one-way search's cost-so-far array (8, f64)
/// and parent byte (1) or, on large grids, the two cost arrays of the bidirectional
/// search (16, [`crate::plan::bidir`]), plus the queues' entries. The whole `route`
/// process was measured at 22.5 bytes per cell at peak on a 4096 × 4096
/// corner-to-corner search (README, Speed); rounded up.
pub const PLANNER_BYTES_PER_CELL: u64 = 24;

/// Bytes of the horizon maps: one f32 angle per cell and sector.
pub fn horizon_bytes(cells: u64, sectors: u64) -> u64 {
    cells.saturating_mul(sectors).saturating_mul(4)
}

/// Bytes of the route planner's per-cell arrays for `cells` cells.
pub fn planner_bytes(cells: u64) -> u64 {
    cells.saturating_mul(PLANNER_BYTES_PER_CELL)
}

/// Bytes of the seasons' time series: `seasons` runs of at most `steps` steps each, held
/// together (the seasons run in parallel and are written after all finish), each step a
/// sample of `sample_bytes`, plus one season's CSV text at [`CSV_BYTES_PER_STEP`].
pub fn time_series_bytes(steps: u64, seasons: u64, sample_bytes: u64) -> u64 {
    let samples = steps.saturating_mul(seasons).saturating_mul(sample_bytes);
    samples.saturating_add(steps.saturating_mul(CSV_BYTES_PER_STEP))
}

/// Bytes of one time-series CSV row, rounded up from the longest rows the runner writes
/// (about 170 characters: 16 columns of numbers and a timestamp).
pub const CSV_BYTES_PER_STEP: u64 = 256;

/// The memory the arrays of a job would take exceeds the budget.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error(
    "{path}: {what} need about {need_mb} MiB, more than the memory budget of {budget_mb} \
     MiB. Fix: raise the budget with --max-memory-mb (in a mission file: max_memory_mb \
     under [terrain]) if the machine has the memory, or {instead}"
)]
pub struct OverBudget {
    /// The input the job comes from (the raster, or the mission file).
    pub path: std::path::PathBuf,
    /// What needs the memory, e.g. "the horizon maps for 512 x 512 cells".
    pub what: String,
    /// Estimated need, MiB (rounded up).
    pub need_mb: u64,
    /// The budget in force, MiB.
    pub budget_mb: u64,
    /// The other way out, e.g. "crop or resample the raster".
    pub instead: &'static str,
}

/// Refuses a job on `path` whose arrays (`bytes` in total) exceed `budget_mb` MiB;
/// `instead` says what else the user can do.
pub fn check(
    path: &std::path::Path,
    what: String,
    bytes: u64,
    budget_mb: u64,
    instead: &'static str,
) -> Result<(), OverBudget> {
    if bytes > budget_mb.saturating_mul(1 << 20) {
        return Err(OverBudget {
            path: path.to_path_buf(),
            what,
            need_mb: bytes.div_ceil(1 << 20),
            budget_mb,
            instead,
        });
    }
    Ok(())
}

/// [`check`] for a job on a grid of `width` × `height` cells.
pub fn check_grid(
    path: &std::path::Path,
    what: &str,
    (width, height): (usize, usize),
    bytes: u64,
    budget_mb: u64,
) -> Result<(), OverBudget> {
    let what = format!("{what} for {width} x {height} cells");
    check(path, what, bytes, budget_mb, "crop or resample the raster")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn budget_is_inclusive_and_names_the_flag_and_the_key() {
        let mib = 1u64 << 20;
        let p = std::path::Path::new("dem.tif");
        assert!(check_grid(p, "maps", (1, 1), 10 * mib, 10).is_ok());
        let e = check_grid(p, "maps", (2048, 1024), 10 * mib + 1, 10).unwrap_err();
        assert_eq!(e.need_mb, 11);
        let text = e.to_string();
        assert!(text.starts_with("dem.tif: maps for 2048 x 1024 cells need about 11 MiB"));
        assert!(text.contains("--max-memory-mb") && text.contains("max_memory_mb under [terrain]"));
        assert!(text.ends_with("or crop or resample the raster"), "{text}");
    }

    #[test]
    fn estimates_saturate_instead_of_wrapping() {
        assert_eq!(horizon_bytes(u64::MAX, 32), u64::MAX);
        assert_eq!(planner_bytes(1 << 28), 6 << 30);
        assert_eq!(horizon_bytes(100, 32), 12_800);
        assert_eq!(time_series_bytes(10, 4, 100), 4000 + 2560);
        assert_eq!(time_series_bytes(u64::MAX, 4, 100), u64::MAX);
    }
}
