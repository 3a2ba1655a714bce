//! sunward — energy and mission feasibility planning for solar-powered mobile robots.
//!
//! The data flow, in pipeline order (modules marked *planned* are not built yet):
//!
//! ```text
//! DEM file ──► terrain::io (GeoTIFF / 16-bit PNG / ESRI ASCII → Grid<f32>, NaN = no-data)
//!                 │
//!                 ▼
//!          terrain::{slope, roughness, hillshade, horizon}   derived maps
//!                 │
//!                 ▼
//!          plan ─► vehicle ─► sun ─► battery ─► mission ─► report / study   (planned)
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
//! - [`report`]: output serialisers and the one atomic writer.
//! - [`error`]: the top-level error wrapping each stage's typed error.
//!
//! The numeric core does no I/O and prints nothing; the CLI in `src/main.rs` and
//! `src/cli/` parses arguments, calls the library, renders results and maps errors to
//! exit codes.

#![warn(missing_docs)]

pub mod battery;
pub mod error;
pub mod plan;
pub mod progress;
pub mod report;
pub mod sun;
pub mod terrain;
pub mod units;
pub mod vehicle;

pub use error::Error;
