//! Terrain: elevation rasters, their georeference, and the maps derived from them.
//!
//! Readers and writers live in [`io`] (the only file I/O of this stage); everything else
//! takes grids and returns grids.

pub mod error;
pub mod hillshade;
pub mod horizon;
pub mod io;
pub mod mask;
pub mod raster;
pub mod roughness;
pub mod slope;
pub mod synth;
pub mod utm;

pub use error::TerrainError;
pub use raster::{CellSize, Crs, CrsKind, Dem, GeoRef, Grid};
