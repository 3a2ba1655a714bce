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
/// extent, and no elevation beyond [`MARKER_ELEVATION_M`] (other elevations are taken as
/// they are: the readers' reference files hold full Int32 ranges). [`read_dem`] applies them; callers of a reader's own entry point
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
    let w = dem.width();
    if let Some((i, z)) = dem
        .data()
        .iter()
        .enumerate()
        .find(|(_, z)| z.abs() > MARKER_ELEVATION_M)
    {
        let n = dem
            .data()
            .iter()
            .filter(|z| z.abs() > MARKER_ELEVATION_M)
            .count();
        return Err(implausible(
            format!(
                "{n} cell(s) hold elevations beyond ±{} m (the first at column {}, row {}:                  {}), values that mark missing data rather than terrain",
                num(f64::from(MARKER_ELEVATION_M)),
                i % w,
                i / w,
                num(f64::from(*z))
            ),
            "declare the raster's no-data value (for example gdal_edit.py -a_nodata \
             -3.4028234663852886e+38 FILE.tif) or fill those cells",
        ));
    }
    Ok(())
}

/// Elevations beyond ± this many metres are taken for missing-data markers (such as the
/// largest Float32, ±3.4e38, written without a no-data tag) and refused: far past any
/// real terrain and past every integer sample type's range (the readers' reference files
/// hold full Int32 ranges, about ±2.1e9), so no real grid is refused.
pub const MARKER_ELEVATION_M: f32 = 1e20;

#[cfg(test)]
mod tests {
    use super::*;
    use crate::terrain::{GeoRef, Grid};

    /// A grid holding the largest Float32 (a no-data marker without its tag) is refused
    /// with the cell named; Int32-range elevations and NaN no-data pass.
    #[test]
    fn marker_elevations_are_refused_and_real_ranges_pass() {
        let mut z = vec![100.0f32; 12];
        z[7] = -f32::MAX;
        let dem = Grid::from_vec(4, 3, z, GeoRef::local(1.0));
        let e = check_grid(Path::new("m.tif"), &dem)
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("m.tif") && e.contains("column 3, row 1") && e.contains("1 cell(s)"),
            "{e}"
        );
        let ok = Grid::from_vec(
            4,
            3,
            vec![
                2.1e9,
                -2.1e9,
                f32::NAN,
                0.0,
                1.0,
                2.0,
                3.0,
                4.0,
                5.0,
                6.0,
                7.0,
                8.0,
            ],
            GeoRef::local(1.0),
        );
        assert!(check_grid(Path::new("ok.tif"), &ok).is_ok());
    }
}
