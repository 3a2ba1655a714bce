//! Errors of the terrain stage: each names the file, what is wrong and how to fix it.

use std::path::PathBuf;

/// Everything that can go wrong while reading, checking or writing a raster.
#[derive(Debug, thiserror::Error)]
pub enum TerrainError {
    /// The file could not be opened, read or written.
    #[error("{path}: {action} failed: {source}")]
    Io {
        /// The file.
        path: PathBuf,
        /// "reading" or "writing".
        action: &'static str,
        /// The operating-system error.
        source: std::io::Error,
    },
    /// The file is not a raster of the format its name says, or is damaged.
    #[error("{path}: not a readable {format}: {detail}. Fix: {fix}")]
    Malformed {
        /// The file.
        path: PathBuf,
        /// "GeoTIFF", "PNG heightmap", "ESRI ASCII grid".
        format: &'static str,
        /// What the reader found.
        detail: String,
        /// What the user can do.
        fix: String,
    },
    /// A valid file with a feature sunward does not read.
    #[error("{path}: unsupported {what}. Fix: {fix}")]
    Unsupported {
        /// The file.
        path: PathBuf,
        /// What is unsupported.
        what: String,
        /// What the user can do.
        fix: String,
    },
    /// The header declares more cells than the configured limit.
    #[error(
        "{path}: the raster is {width} x {height} = {} cells, more than the limit of \
         {limit} cells. Fix: crop or resample the raster, or raise the limit with --max-cells (in a \
         mission file: max_cells under [terrain])",
        u128::from(*.width) * u128::from(*.height)
    )]
    TooLarge {
        /// The file.
        path: PathBuf,
        /// Declared columns.
        width: u64,
        /// Declared rows.
        height: u64,
        /// The limit in force.
        limit: u64,
    },
    /// Every cell is no-data (or NaN).
    #[error(
        "{path}: every one of the {cells} cells is no-data; there is no terrain to use. \
         Fix: check the no-data value and the file's extent"
    )]
    AllNoData {
        /// The file.
        path: PathBuf,
        /// Number of cells.
        cells: usize,
    },
    /// The grid reads, but its georeference or values cannot describe real terrain.
    #[error("{path}: {detail}. Fix: {fix}")]
    Implausible {
        /// The file.
        path: PathBuf,
        /// What is impossible about it.
        detail: String,
        /// What the user can do.
        fix: &'static str,
    },
    /// A parameter of an analysis is out of range.
    #[error("invalid parameter {name} = {value}: {expected}")]
    Parameter {
        /// The parameter.
        name: &'static str,
        /// Its value, as given.
        value: String,
        /// The valid range.
        expected: &'static str,
    },
    /// The file extension names no raster format sunward reads.
    #[error(
        "{path}: unknown raster format (extension {ext:?}). Fix: use a GeoTIFF (.tif, .tiff), \
         a 16-bit PNG heightmap (.png) or an ESRI ASCII grid (.asc)"
    )]
    UnknownFormat {
        /// The file.
        path: PathBuf,
        /// Its extension.
        ext: String,
    },
}

impl TerrainError {
    /// Shorthand for a [`TerrainError::Malformed`].
    pub fn malformed(
        path: &std::path::Path,
        format: &'static str,
        detail: impl Into<String>,
        fix: impl Into<String>,
    ) -> TerrainError {
        TerrainError::Malformed {
            path: path.to_path_buf(),
            format,
            detail: detail.into(),
            fix: fix.into(),
        }
    }

    /// Shorthand for a [`TerrainError::Unsupported`].
    pub fn unsupported(
        path: &std::path::Path,
        what: impl Into<String>,
        fix: impl Into<String>,
    ) -> TerrainError {
        TerrainError::Unsupported {
            path: path.to_path_buf(),
            what: what.into(),
            fix: fix.into(),
        }
    }
}
