//! Raster readers and writers: the only file I/O of the terrain stage.
//!
//! [`read_dem`] picks the reader from the file extension, applies the cell-count limit
//! before any large allocation and refuses grids that are entirely no-data.

pub mod ascii;
pub mod geotiff;
pub mod png;

use std::path::Path;

use crate::terrain::error::TerrainError;
use crate::terrain::raster::Dem;

pub use self::png::PngScale;

/// Default ceiling on the number of cells a reader accepts: 2^28 (268 million cells,
/// 1 GiB of Float32) — four 8192 × 8192 tiles. Raise it with `--max-cells`.
pub const DEFAULT_MAX_CELLS: u64 = 1 << 28;

/// Options for [`read_dem`].
#[derive(Debug, Clone, PartialEq)]
pub struct ReadOptions {
    /// Refuse rasters with more cells than this, before allocating.
    pub max_cells: u64,
    /// Memory budget in MiB for the large per-cell arrays of the jobs that follow the
    /// reading (see [`crate::limits`]); carried here so that it travels with the DEM's
    /// other limits from the command line or the mission file.
    pub max_memory_mb: u64,
    /// Cell size and vertical mapping for PNG heightmaps (required for .png).
    pub png: Option<PngScale>,
}

impl Default for ReadOptions {
    fn default() -> Self {
        ReadOptions {
            max_cells: DEFAULT_MAX_CELLS,
            max_memory_mb: crate::limits::DEFAULT_MAX_MEMORY_MB,
            png: None,
        }
    }
}

/// Reads an elevation raster: GeoTIFF (.tif, .tiff), PNG heightmap (.png) or ESRI ASCII
/// grid (.asc). No-data cells become NaN.
pub fn read_dem(path: &Path, opts: &ReadOptions) -> Result<Dem, TerrainError> {
    let ext = path
        .extension()
        .and_then(|e| e.to_str())
        .unwrap_or("")
        .to_ascii_lowercase();
    let dem = match ext.as_str() {
        "tif" | "tiff" | "gtiff" => geotiff::read(path, opts.max_cells)?,
        "asc" => ascii::read(path, opts.max_cells)?,
        "png" => {
            let scale = opts.png.ok_or_else(|| {
                TerrainError::unsupported(
                    path,
                    "PNG heightmap without cell size and vertical scale",
                    "give --cell-m and --z-scale (and --z-offset if raw 0 is not 0 m)",
                )
            })?;
            png::read(path, &scale, opts.max_cells)?
        }
        _ => {
            return Err(TerrainError::UnknownFormat {
                path: path.to_path_buf(),
                ext,
            })
        }
    };
    if dem.nodata_count() == dem.len() {
        return Err(TerrainError::AllNoData {
            path: path.to_path_buf(),
            cells: dem.len(),
        });
    }
    Ok(dem)
}
