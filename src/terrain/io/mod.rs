//! Raster readers and writers: the only file I/O of the terrain stage.
//!
//! [`read_dem`] picks the reader from the file extension, applies the cell-count limit
//! before any large allocation and refuses grids that cannot be terrain ([`check_grid`]:
//! entirely no-data, impossible cell sizes or geographic extents).

pub mod ascii;
pub mod geotiff;
pub mod png;

use std::path::Path;

use crate::terrain::error::TerrainError;
use crate::terrain::raster::{CrsKind, Dem};

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
                    "PNG heightmap without a cell size",
                    "give --cell-m (in a mission file `cell_m` under [terrain]); and \
                     --z-scale and --z-offset when a raw step is not 1 m or raw 0 is not 0 m",
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
    check_grid(path, &dem)?;
    Ok(dem)
}

/// A number as written in messages: plain in the everyday range, else in e-notation.
fn num(v: f64) -> String {
    if v == 0.0 || (1e-3..1e7).contains(&v.abs()) || !v.is_finite() {
        format!("{v}")
    } else {
        format!("{v:e}")
    }
}

/// Smallest and largest cell size accepted, metres: 0.1 mm (bench-scale scans) to
/// 1000 km (coarser than any global DEM). Outside that range the georeference is damaged.
pub const CELL_SIZE_RANGE_M: (f64, f64) = (1e-4, 1e6);

/// The checks every reader's grid passes before use: some data, a geographic extent
/// inside ±90° latitude, a cell size in metres that real terrain can have, and a finite
/// extent. Elevations are taken as they are (the readers' reference files hold full Int32
/// ranges). [`read_dem`] applies them; callers of a reader's own entry point
/// (`geotiff::read_from`, `png::read_from`, `ascii::parse`) apply them with this.
pub fn check_grid(path: &Path, dem: &Dem) -> Result<(), TerrainError> {
    if dem.nodata_count() == dem.len() {
        return Err(TerrainError::AllNoData {
            path: path.to_path_buf(),
            cells: dem.len(),
        });
    }
    let implausible = |detail: String, fix: &'static str| TerrainError::Implausible {
        path: path.to_path_buf(),
        detail,
        fix,
    };
    let g = &dem.georef;
    let south = g.origin_y - dem.height() as f64 * g.pixel_height;
    let east = g.origin_x + dem.width() as f64 * g.pixel_width;
    if g.crs.kind == CrsKind::Geographic {
        // Half a cell of slack: global grids often put cell centres on the poles.
        let (slack_y, slack_x) = (0.5 * g.pixel_height + 1e-9, 0.5 * g.pixel_width + 1e-9);
        let lat_ok = g.origin_y <= 90.0 + slack_y && south >= -90.0 - slack_y;
        let lon_ok = g.origin_x >= -360.0 - slack_x && east <= 360.0 + slack_x;
        if !(lat_ok && lon_ok) {
            return Err(implausible(
                format!(
                    "the grid is geographic (degrees) but spans latitude {} to {} and \
                     longitude {} to {}, beyond ±90° and ±360°",
                    num(south),
                    num(g.origin_y),
                    num(g.origin_x),
                    num(east)
                ),
                "check the georeference: a projected grid needs its projected CRS \
                 (gdal_edit.py -a_srs EPSG:CODE)",
            ));
        }
    }
    let cell = dem.cell_size();
    let (lo, hi) = CELL_SIZE_RANGE_M;
    let in_range = |v: f64| v.is_finite() && (lo..=hi).contains(&v.abs());
    if !(in_range(cell.dx_m) && in_range(cell.dy_m)) {
        return Err(implausible(
            format!(
                "cells of {} x {} m, outside {lo} m to {hi} m",
                num(cell.dx_m),
                num(cell.dy_m)
            ),
            "check the cell size in the header or the georeference tags",
        ));
    }
    if ![g.origin_x, g.origin_y, south, east]
        .iter()
        .all(|v| v.is_finite())
    {
        return Err(implausible(
            format!(
                "the grid's extent, x {} to {} and y {} to {}, is not finite map coordinates",
                num(g.origin_x),
                num(east),
                num(south),
                num(g.origin_y)
            ),
            "check the corner coordinates in the header or the georeference tags",
        ));
    }
    Ok(())
}
