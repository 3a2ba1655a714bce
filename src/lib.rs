//! sunward — energy and mission feasibility planning for solar-powered mobile robots.
//!
//! The data flow, in pipeline order:
//!
//! ```text
//! DEM file ──► terrain::io (GeoTIFF / 16-bit PNG / ESRI ASCII → Grid<f32>, NaN = no-data)
//!                 │
//!          terrain::{slope, roughness, hillshade, horizon}   derived maps
//!                 │
//!          plan (A* over the grid) ◄── vehicle (step cost, attitude, stability)
//!                 │
//!          sun (position, irradiance, shading, PV) ─► battery (pack, thermal, loads)
//!                 │
//!          mission::{spec, resolve} ─► mission::prepare ─► mission::sim ─► report / study
//! ```
//!
//! - [`units`]: the only unit conversions (deg↔rad, Wh↔J, °C↔K).
//! - [`progress`]: progress events the core emits; only the CLI draws them.
//! - [`terrain::raster`]: `Grid<T>` with georeference and cell size in metres.
//! - [`terrain::io`]: raster readers and writers (the only I/O of the terrain stage).
//! - [`terrain::slope`]: slope and aspect by Horn's method.
//! - [`terrain::roughness`]: 3 × 3 elevation range (Wilson et al. 2007).
//! - [`terrain::hillshade`]: Lambertian shaded relief.
//! - [`terrain::horizon`]: horizon angles per azimuth sector by convex-hull sweeps.
//! - [`terrain::synth`]: seeded synthetic demo terrain.
//! - [`terrain::mask`]: keep-out polygons (GeoJSON) rasterised onto the grid.
//! - [`terrain::utm`]: WGS 84 to UTM and back (Krüger series).
//! - [`plan::cost`]: what the planner asks of a vehicle (the `StepModel` contract).
//! - [`plan::tilt`]: pitch and roll from a slope and a heading.
//! - [`plan::queue`]: the monotone radix heap.
//! - [`plan::astar`]: exact A* with Johnson's potential, tilt limits, explanations.
//! - [`plan::route`]: a planned route's profile and summary, legs through waypoints.
//! - [`plan::sites`]: visiting order of unordered sites (Held-Karp, local search).
//! - [`plan::smooth`]: optional any-angle smoothing of a grid route.
//! - [`vehicle::rover`]: the rover description (keys with units, defaults, ranges).
//! - [`vehicle::traction`]: grade, rolling and Bekker soft-soil resistance, thrust, slip.
//! - [`vehicle::powertrain`]: drive efficiency, regeneration, speed law.
//! - [`vehicle::attitude`]: body pitch and roll from the wheel contact points.
//! - [`vehicle::stability`]: static tip-over angles and margins.
//! - [`vehicle::step`]: the cost of one step.
//! - [`vehicle::plan_model`]: the rover as the planner's step model.
//! - [`sun::position`]: NREL SPA sun position, sunrise, transit, sunset.
//! - [`sun::irradiance`]: extraterrestrial irradiance, air mass, Ineichen-Perez clear sky.
//! - [`sun::decomposition`]: Erbs split of GHI into beam and diffuse.
//! - [`sun::transposition`]: isotropic, Hay-Davies and Perez plane-of-array models.
//! - [`sun::shading`]: terrain horizon and sky-view factor applied to irradiance.
//! - [`sun::panel`]: PV power with cell temperature and mounts.
//! - [`sun::series`]: clear-sky time series.
//! - [`sun::measured`]: a measured weather record's irradiance at any instant.
//! - [`sun::clearness_mc`]: seeded daily clear-sky index draws (Beta, Marsaglia-Tsang).
//! - [`battery::pack`]: Rint pack model with charge limits and exact bookkeeping.
//! - [`battery::chemistry`]: LFP and NMC presets.
//! - [`battery::thermal`]: lumped thermal node with thermostat heater.
//! - [`battery::ambient`]: air temperature from monthly means or a series.
//! - [`battery::loads`]: named loads and their schedules.
//! - [`battery::ageing`]: equivalent full cycles and rainflow damage.
//! - [`mission::spec`]: the mission file as written, every key checked alone.
//! - [`mission::resolve`]: the checked mission of the stages' types, every problem listed.
//! - [`mission::sim`]: the season simulation (drive, park, charge, sleep).
//! - [`mission::ledger`]: energy bookkeeping that closes.
//! - [`mission::prepare`]: from a checked mission to a simulation setup.
//! - [`mission::runner`]: the seasons of a mission in parallel.
//! - [`study::vary`]: the keys and values a trade study varies.
//! - [`study::sweep`]: sweeps over mission keys, shards.
//! - [`study::size`]: battery and panel sizing by bisection.
//! - [`mission::sunaware`]: sun-aware planning, a route and a schedule of holds from a
//!   time-dependent label search priced by the simulation's own step arithmetic.
//! - [`study::montecarlo`]: the weather Monte Carlo (N sampled runs per season).
//! - [`report`]: output serialisers and the one atomic writer.
//! - [`report::sweep`]: sweep.csv and the merging of shards.
//! - [`report::heatmap`]: a sweep's heatmap.
//! - [`limits`]: the memory budget checked before the large per-cell allocations.
//! - [`error`]: the top-level error wrapping each stage's typed error.
//!
//! The numeric core does no I/O and prints nothing; the CLI in `src/main.rs` and
//! `src/cli/` parses arguments, calls the library, renders results and maps errors to
//! exit codes.

#![warn(missing_docs)]

pub mod battery;
pub mod error;
pub mod fastmath;
pub mod limits;
pub mod mission;
pub mod plan;
pub mod progress;
pub mod report;
pub mod study;
pub mod sun;
pub mod terrain;
pub mod units;
pub mod vehicle;

pub use error::Error;
