//! Command-line definition (clap derive): the single source of the CLI's help text.

mod check;
mod demo;
mod progress;
mod route;
mod run;
mod sun;
mod sweep;
mod terrain;

use std::path::{Path, PathBuf};

use clap::{Args, Parser, Subcommand};

use sunward::terrain::io::{PngScale, ReadOptions, DEFAULT_MAX_CELLS};
use sunward::Error;

/// Energy and mission feasibility planner for solar-powered mobile robots.
///
/// A planning aid with stated model limits: confirm every plan with field tests and
/// margins; battery limits come from the cell maker's data sheet; local regulations and
/// the operator's own safety practice govern.
#[derive(Debug, Parser)]
#[command(name = "sunward", version, about, long_about)]
pub struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// Run the bundled demo end to end and write its outputs.
    Demo(demo::DemoArgs),
    /// Inspect and analyse elevation rasters.
    #[command(subcommand)]
    Terrain(terrain::TerrainCommand),
    /// Sun position and clear-sky irradiance: one instant, one day, or a CSV series.
    Sun(sun::SunArgs),
    /// Run a mission: plan the route, simulate every season, write the verdict and budgets.
    Run(run::RunArgs),
    /// Plan a route on a DEM: exact energy-, time- or distance-optimal A* with tilt limits.
    Route(route::RouteArgs),
    /// Validate a mission file without running it: every problem with line and column.
    Check(check::CheckArgs),
    /// Run a mission over a grid of key values (one row per case in sweep.csv).
    Sweep(sweep::SweepArgs),
    /// Join the outputs of `sweep --shard` runs into one sweep.
    Merge(sweep::MergeArgs),
    /// The smallest battery (or panel area) that passes every season.
    Size(sweep::SizeArgs),
}

/// How to read a DEM: the flags every command that takes a DEM shares.
#[derive(Debug, Clone, Args)]
pub struct DemOptions {
    /// PNG heightmaps only: cell size in metres.
    #[arg(long, value_name = "M")]
    pub cell_m: Option<f64>,
    /// PNG heightmaps only: metres per raw sample step.
    #[arg(long, value_name = "M", default_value_t = 1.0)]
    pub z_scale: f64,
    /// PNG heightmaps only: elevation of raw value 0, metres.
    #[arg(long, value_name = "M", default_value_t = 0.0)]
    pub z_offset: f64,
    /// PNG heightmaps only: raw sample value that marks no-data.
    #[arg(long, value_name = "RAW")]
    pub png_nodata: Option<u16>,
    /// Refuse rasters with more cells than this (checked before reading the data); at
    /// least 1.
    #[arg(long, value_name = "CELLS", default_value_t = DEFAULT_MAX_CELLS,
          value_parser = clap::value_parser!(u64).range(1..))]
    pub max_cells: u64,
    /// Memory budget in MiB for the route planner's and the horizon maps' per-cell
    /// arrays, checked before they are allocated.
    #[arg(long, value_name = "MIB", default_value_t = sunward::limits::DEFAULT_MAX_MEMORY_MB)]
    pub max_memory_mb: u64,
}

impl DemOptions {
    /// Reader options from the flags.
    pub fn read_options(&self) -> ReadOptions {
        ReadOptions {
            max_cells: self.max_cells,
            max_memory_mb: self.max_memory_mb,
            png: self.cell_m.map(|cell_m| PngScale {
                cell_m,
                z_scale_m: self.z_scale,
                z_offset_m: self.z_offset,
                nodata_raw: self.png_nodata,
            }),
        }
    }

    /// Reads a DEM with these options.
    pub fn load(&self, path: &Path) -> Result<sunward::terrain::Dem, Error> {
        Ok(sunward::terrain::io::read_dem(path, &self.read_options())?)
    }
}

/// Refuses a job on `dem` (read from `path`) whose per-cell arrays (`bytes`) exceed the
/// memory budget carried by `opts`, before they are allocated.
pub fn check_memory(
    opts: &ReadOptions,
    path: &Path,
    dem: &sunward::terrain::Dem,
    what: &str,
    bytes: u64,
) -> Result<(), Error> {
    let size = (dem.width(), dem.height());
    sunward::limits::check_grid(path, what, size, bytes, opts.max_memory_mb)?;
    Ok(())
}

/// Refuses a mission whose seasons' time series (one sample per step up to the deadline,
/// every season held at once) exceed the memory budget, before anything runs.
pub fn check_series_memory(path: &Path, m: &sunward::mission::Mission) -> Result<(), Error> {
    // `as` saturates: a step of 1e-300 s gives u64::MAX steps, not a wrap.
    let steps = ((m.policy.deadline_s / m.step_s).ceil() as u64).saturating_add(1);
    let seasons = m.seasons.len() as u64;
    let sample = std::mem::size_of::<sunward::mission::sim::Sample>() as u64;
    let bytes = sunward::limits::time_series_bytes(steps, seasons, sample);
    let what = format!(
        "the time series of {seasons} season(s) of up to {steps} steps ({} days at {} s)",
        m.policy.deadline_s / 86_400.0,
        m.step_s
    );
    let instead = "use a longer [simulation] step_s, a shorter [policy] deadline_days or fewer \
                   seasons";
    sunward::limits::check(path, what, bytes, m.terrain.read.max_memory_mb, instead)?;
    Ok(())
}

/// A DEM given as the first positional argument, with its reading flags.
#[derive(Debug, Clone, Args)]
pub struct DemArgs {
    /// Elevation raster: GeoTIFF (.tif), 16-bit PNG heightmap (.png) or ESRI ASCII grid (.asc).
    pub dem: PathBuf,
    #[command(flatten)]
    pub opts: DemOptions,
}

impl DemArgs {
    /// Reads the DEM.
    pub fn load(&self) -> Result<sunward::terrain::Dem, Error> {
        self.opts.load(&self.dem)
    }
}

/// Writes a line to standard output. A closed pipe (`sunward ... | head`) ends the
/// program quietly instead of failing.
pub fn emit(line: impl std::fmt::Display) {
    use std::io::Write;
    let mut out = std::io::stdout().lock();
    if let Err(e) = writeln!(out, "{line}").and_then(|_| out.flush()) {
        if e.kind() == std::io::ErrorKind::BrokenPipe {
            std::process::exit(0);
        }
    }
}

/// `println!` through [`emit`].
#[macro_export]
macro_rules! say {
    ($($arg:tt)*) => {
        $crate::cli::emit(format_args!($($arg)*))
    };
}

/// Refuses an output that would overwrite an input, and checks the folder is writable,
/// before any long work starts.
pub fn check_output(out: &Path, inputs: &[&Path]) -> Result<(), Error> {
    let canon = |p: &Path| std::fs::canonicalize(p).ok();
    if let Some(o) = canon(out) {
        if inputs.iter().any(|i| canon(i).as_ref() == Some(&o)) {
            return Err(Error::OutputIsInput {
                path: out.to_path_buf(),
            });
        }
    }
    sunward::report::atomic::check_writable(out)
}

/// Runs one parsed command line.
pub fn run(cli: Cli) -> Result<(), Error> {
    match cli.command {
        Command::Demo(a) => demo::run(a),
        Command::Terrain(t) => terrain::run(t),
        Command::Sun(a) => sun::run(a),
        Command::Route(a) => route::run(a),
        Command::Run(a) => run::run(a),
        Command::Check(a) => check::run(a),
        Command::Sweep(a) => sweep::run_sweep(a),
        Command::Merge(a) => sweep::run_merge(a),
        Command::Size(a) => sweep::run_size(a),
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn clap_definition_is_consistent() {
        use clap::CommandFactory;
        super::Cli::command().debug_assert();
    }
}
