//! The raster grid and its georeference.
//!
//! A [`Grid<T>`] is a row-major array of `width × height` cells, row 0 at the north edge,
//! with a [`GeoRef`] that places it on the ground: the map coordinates of the upper-left
//! corner of the upper-left cell, the pixel size along x and y (both positive; y grows
//! northward, rows grow southward) and the coordinate reference system. Rotated grids
//! are refused by the readers.
//!
//! Missing elevations ("no-data") are held as NaN inside sunward, whatever sentinel the
//! file used; the sentinel is kept in [`GeoRef::nodata`] so that writers can restore it.
//!
//! # Cell size in metres
//! Projected grids give the pixel size in the CRS's linear unit (metre, international
//! foot or US survey foot are converted). Geographic grids give degrees; they are turned
//! into metres with the local radii of curvature of the WGS 84 ellipsoid at the grid's
//! central latitude (meridional radius M and prime-vertical radius N; e.g. Snyder,
//! *Map Projections — A Working Manual*, USGS Professional Paper 1395, 1987, eq. 4-18 and
//! 4-20): dy = M·Δφ, dx = N·cos φ·Δλ. Over a grid a few tens of kilometres tall the
//! error of this single-latitude rule is below 0.1 % (the change of cos φ across it).
//!
//! # Units
//! Map coordinates in the CRS's unit; `cell_size_m` in metres; elevations in metres.

/// Semi-major axis of the WGS 84 ellipsoid, metres (NIMA TR8350.2, 3rd ed., table 3.1).
pub const WGS84_A_M: f64 = 6_378_137.0;
/// Flattening of the WGS 84 ellipsoid (NIMA TR8350.2, 3rd ed., table 3.1).
pub const WGS84_F: f64 = 1.0 / 298.257_223_563;

/// What kind of coordinates the grid's map units are.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum CrsKind {
    /// Easting/northing in a linear unit.
    Projected,
    /// Longitude/latitude in degrees.
    Geographic,
    /// The file says nothing; treated as projected metres.
    Unknown,
}

/// The linear unit of a projected CRS.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum LinearUnit {
    /// EPSG unit 9001.
    Metre,
    /// Any other unit, with its length in metres (international foot 0.3048, US survey
    /// foot 1200/3937: EPSG units 9002 and 9003).
    Other {
        /// Metres per unit.
        metres: f64,
    },
}

impl LinearUnit {
    /// Length of one unit in metres.
    pub fn metres(self) -> f64 {
        match self {
            LinearUnit::Metre => 1.0,
            LinearUnit::Other { metres } => metres,
        }
    }
}

/// Raw GeoTIFF georeference keys, kept verbatim so that derived maps carry the same CRS
/// (including user-defined projections that have no EPSG code).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct GeoKeys {
    /// GeoKeyDirectoryTag (34735) as read.
    pub directory: Vec<u16>,
    /// GeoDoubleParamsTag (34736).
    pub doubles: Vec<f64>,
    /// GeoAsciiParamsTag (34737).
    pub ascii: String,
}

/// Coordinate reference system, as far as sunward needs to know it.
#[derive(Debug, Clone, PartialEq)]
pub struct Crs {
    /// EPSG code when the file names one.
    pub epsg: Option<u32>,
    /// Projected, geographic or unknown.
    pub kind: CrsKind,
    /// Linear unit of a projected CRS (metre when unknown).
    pub unit: LinearUnit,
    /// A human-readable name (citation) when the file has one.
    pub name: Option<String>,
    /// GeoTIFF keys to write back, when the grid came from a GeoTIFF.
    pub geokeys: Option<GeoKeys>,
}

impl Crs {
    /// A projected CRS in metres with no code (synthetic terrains, PNG heightmaps).
    pub fn local_metres() -> Crs {
        Crs {
            epsg: None,
            kind: CrsKind::Unknown,
            unit: LinearUnit::Metre,
            name: None,
            geokeys: None,
        }
    }

    /// A short label: `EPSG:32633`, `user-defined projected`, `unknown`.
    pub fn label(&self) -> String {
        match (self.epsg, self.kind) {
            (Some(code), _) => format!("EPSG:{code}"),
            (None, CrsKind::Projected) => "user-defined projected".to_string(),
            (None, CrsKind::Geographic) => "user-defined geographic".to_string(),
            (None, CrsKind::Unknown) => "unknown (taken as metres)".to_string(),
        }
    }
}

/// Where a grid sits on the ground.
#[derive(Debug, Clone, PartialEq)]
pub struct GeoRef {
    /// Map x of the upper-left corner of the upper-left cell.
    pub origin_x: f64,
    /// Map y of the upper-left corner of the upper-left cell.
    pub origin_y: f64,
    /// Cell width in map units (> 0).
    pub pixel_width: f64,
    /// Cell height in map units (> 0; rows run southward).
    pub pixel_height: f64,
    /// The coordinate reference system.
    pub crs: Crs,
    /// The file's no-data sentinel, if it had one.
    pub nodata: Option<f64>,
}

impl GeoRef {
    /// A north-up grid in local metres with its upper-left corner at (0, 0).
    pub fn local(cell_m: f64) -> GeoRef {
        GeoRef {
            origin_x: 0.0,
            origin_y: 0.0,
            pixel_width: cell_m,
            pixel_height: cell_m,
            crs: Crs::local_metres(),
            nodata: None,
        }
    }

    /// Map coordinates of the centre of cell (col, row).
    pub fn cell_centre(&self, col: usize, row: usize) -> (f64, f64) {
        (
            self.origin_x + (col as f64 + 0.5) * self.pixel_width,
            self.origin_y - (row as f64 + 0.5) * self.pixel_height,
        )
    }

    /// Fractional (col, row) of a map point; cell centres are at half-integers.
    pub fn to_pixel(&self, x: f64, y: f64) -> (f64, f64) {
        (
            (x - self.origin_x) / self.pixel_width,
            (self.origin_y - y) / self.pixel_height,
        )
    }

    /// The (col, row) of the cell holding a map point on a `width` × `height` grid, or None
    /// outside. The extent is closed: a point on the outer edge (east or south, col or row
    /// exactly `width` or `height`) lies in the last cell, as the extent the errors quote
    /// promises; within 1e-9 of a cell of the edge counts as on it (rounding of map
    /// coordinates).
    pub fn cell_at(&self, x: f64, y: f64, width: usize, height: usize) -> Option<(usize, usize)> {
        const EDGE: f64 = 1e-9;
        let (px, py) = self.to_pixel(x, y);
        let (w, h) = (width as f64, height as f64);
        let inside = px >= -EDGE && py >= -EDGE && px <= w + EDGE && py <= h + EDGE;
        if !inside || width == 0 || height == 0 {
            return None;
        }
        let col = (px.max(0.0).floor() as usize).min(width - 1);
        let row = (py.max(0.0).floor() as usize).min(height - 1);
        Some((col, row))
    }
}

/// Cell size on the ground, metres.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct CellSize {
    /// East-west extent of a cell, metres.
    pub dx_m: f64,
    /// North-south extent of a cell, metres.
    pub dy_m: f64,
}

impl CellSize {
    /// The mean of the two sides, for reports.
    pub fn mean_m(&self) -> f64 {
        0.5 * (self.dx_m + self.dy_m)
    }
}

/// Meridional (M) and prime-vertical (N) radii of curvature of WGS 84 at latitude φ,
/// metres (Snyder 1987, eq. 4-18 and 4-20).
pub fn wgs84_radii_m(lat_rad: f64) -> (f64, f64) {
    let e2 = WGS84_F * (2.0 - WGS84_F);
    let s2 = lat_rad.sin().powi(2);
    let w = (1.0 - e2 * s2).sqrt();
    let m = WGS84_A_M * (1.0 - e2) / (w * w * w);
    let n = WGS84_A_M / w;
    (m, n)
}

/// A row-major grid of cells with a georeference.
#[derive(Debug, Clone, PartialEq)]
pub struct Grid<T> {
    width: usize,
    height: usize,
    data: Vec<T>,
    /// Where the grid sits.
    pub georef: GeoRef,
}

/// Elevation grid: metres, NaN where there is no data.
pub type Dem = Grid<f32>;

impl<T: Copy> Grid<T> {
    /// A grid from row-major data. Panics if `data.len() != width * height` — a
    /// programming error, never a user-input error (readers check sizes first).
    pub fn from_vec(width: usize, height: usize, data: Vec<T>, georef: GeoRef) -> Grid<T> {
        assert_eq!(data.len(), width * height, "grid data length mismatch");
        Grid {
            width,
            height,
            data,
            georef,
        }
    }

    /// A grid of one value, with the same georeference as `like`.
    pub fn filled_like<U>(like: &Grid<U>, value: T) -> Grid<T> {
        Grid {
            width: like.width,
            height: like.height,
            data: vec![value; like.width * like.height],
            georef: like.georef.clone(),
        }
    }

    /// Number of columns.
    pub fn width(&self) -> usize {
        self.width
    }

    /// Number of rows.
    pub fn height(&self) -> usize {
        self.height
    }

    /// Number of cells.
    pub fn len(&self) -> usize {
        self.data.len()
    }

    /// True for a grid without cells.
    pub fn is_empty(&self) -> bool {
        self.data.is_empty()
    }

    /// The value at (col, row). Panics when out of range.
    #[inline]
    pub fn get(&self, col: usize, row: usize) -> T {
        self.data[row * self.width + col]
    }

    /// The value at (col, row), or None outside the grid.
    #[inline]
    pub fn get_checked(&self, col: isize, row: isize) -> Option<T> {
        if col < 0 || row < 0 || col as usize >= self.width || row as usize >= self.height {
            None
        } else {
            Some(self.data[row as usize * self.width + col as usize])
        }
    }

    /// Sets the value at (col, row).
    #[inline]
    pub fn set(&mut self, col: usize, row: usize, value: T) {
        self.data[row * self.width + col] = value;
    }

    /// Row-major cell values.
    pub fn data(&self) -> &[T] {
        &self.data
    }

    /// Mutable row-major cell values.
    pub fn data_mut(&mut self) -> &mut [T] {
        &mut self.data
    }

    /// One row of values.
    pub fn row(&self, row: usize) -> &[T] {
        &self.data[row * self.width..(row + 1) * self.width]
    }

    /// Consumes the grid, returning its data.
    pub fn into_vec(self) -> Vec<T> {
        self.data
    }
}

impl<T> Grid<T> {
    /// Cell size on the ground in metres (see the module doc for geographic grids).
    pub fn cell_size(&self) -> CellSize {
        let g = &self.georef;
        match g.crs.kind {
            CrsKind::Geographic => {
                let lat_mid = g.origin_y - 0.5 * self.height as f64 * g.pixel_height;
                let (m, n) = wgs84_radii_m(lat_mid.to_radians());
                CellSize {
                    dx_m: n * lat_mid.to_radians().cos() * g.pixel_width.to_radians(),
                    dy_m: m * g.pixel_height.to_radians(),
                }
            }
            _ => {
                let u = g.crs.unit.metres();
                CellSize {
                    dx_m: g.pixel_width * u,
                    dy_m: g.pixel_height * u,
                }
            }
        }
    }
}

impl Grid<f32> {
    /// Number of no-data (NaN) cells.
    pub fn nodata_count(&self) -> usize {
        self.data.iter().filter(|v| v.is_nan()).count()
    }

    /// (min, max, mean) of the valid cells, or None when all are no-data.
    pub fn stats(&self) -> Option<(f64, f64, f64)> {
        let (mut lo, mut hi, mut sum, mut n) = (f64::INFINITY, f64::NEG_INFINITY, 0.0, 0usize);
        for &v in self.data.iter().filter(|v| !v.is_nan()) {
            let v = v as f64;
            lo = lo.min(v);
            hi = hi.max(v);
            sum += v;
            n += 1;
        }
        (n > 0).then(|| (lo, hi, sum / n as f64))
    }

    /// Bilinear elevation at fractional pixel coordinates (cell centres at half-integers),
    /// NaN outside the grid or next to no-data.
    pub fn bilinear(&self, px: f64, py: f64) -> f64 {
        let fx = px - 0.5;
        let fy = py - 0.5;
        let max_x = self.width as f64 - 1.0;
        let max_y = self.height as f64 - 1.0;
        if !(fx >= 0.0 && fy >= 0.0 && fx <= max_x && fy <= max_y) {
            return f64::NAN;
        }
        let c0 = (fx.floor() as usize).min(self.width.saturating_sub(2));
        let r0 = (fy.floor() as usize).min(self.height.saturating_sub(2));
        let c1 = (c0 + 1).min(self.width - 1);
        let r1 = (r0 + 1).min(self.height - 1);
        let (tx, ty) = (fx - c0 as f64, fy - r0 as f64);
        let z00 = self.get(c0, r0) as f64;
        let z10 = self.get(c1, r0) as f64;
        let z01 = self.get(c0, r1) as f64;
        let z11 = self.get(c1, r1) as f64;
        let top = z00 + (z10 - z00) * tx;
        let bottom = z01 + (z11 - z01) * tx;
        top + (bottom - top) * ty
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cell_centres_and_pixels_invert() {
        let mut g = GeoRef::local(2.0);
        g.origin_x = 100.0;
        g.origin_y = 500.0;
        let (x, y) = g.cell_centre(3, 4);
        assert_eq!((x, y), (107.0, 491.0));
        assert_eq!(g.to_pixel(x, y), (3.5, 4.5));
    }

    /// The extent is closed: every corner of a 4 × 3 grid of 2 m cells lies in a corner
    /// cell; a point beyond an edge, or not a number, lies in none.
    #[test]
    fn cell_at_takes_the_closed_extent() {
        let mut g = GeoRef::local(2.0);
        g.origin_x = 100.0;
        g.origin_y = 506.0;
        let at = |x, y| g.cell_at(x, y, 4, 3);
        assert_eq!(at(100.0, 506.0), Some((0, 0)));
        assert_eq!(at(108.0, 506.0), Some((3, 0)));
        assert_eq!(at(100.0, 500.0), Some((0, 2)));
        assert_eq!(at(108.0, 500.0), Some((3, 2)));
        assert_eq!(at(103.0, 503.0), Some((1, 1)));
        assert_eq!(at(108.01, 503.0), None);
        assert_eq!(at(99.99, 503.0), None);
        assert_eq!(at(103.0, 499.99), None);
        assert_eq!(at(103.0, 506.01), None);
        assert_eq!(at(f64::NAN, 503.0), None);
        assert_eq!(GeoRef::local(1.0).cell_at(0.0, 0.0, 0, 0), None);
    }

    /// WGS 84 degree lengths against the usual series for the length of a degree
    /// (latitude: 111 132.954 − 559.822 cos 2φ + 1.175 cos 4φ m; longitude:
    /// 111 412.84 cos φ − 93.5 cos 3φ + 0.118 cos 5φ m; from memory, as printed in
    /// geodesy handbooks and the NGA degree-length tables).
    #[test]
    fn degree_lengths_match_the_series() {
        for lat in [0.0f64, 30.0, 45.0, 60.0, 80.0] {
            let p = lat.to_radians();
            let (m, n) = wgs84_radii_m(p);
            let lat_deg_m = m * 1f64.to_radians();
            let lon_deg_m = n * p.cos() * 1f64.to_radians();
            let want_lat = 111_132.954 - 559.822 * (2.0 * p).cos() + 1.175 * (4.0 * p).cos();
            let want_lon = 111_412.84 * p.cos() - 93.5 * (3.0 * p).cos() + 0.118 * (5.0 * p).cos();
            assert!(
                (lat_deg_m - want_lat).abs() < 0.05,
                "{lat}: {lat_deg_m} vs {want_lat}"
            );
            assert!(
                (lon_deg_m - want_lon).abs() < 0.5,
                "{lat}: {lon_deg_m} vs {want_lon}"
            );
        }
    }

    #[test]
    fn bilinear_is_exact_on_a_plane_and_nan_outside() {
        let mut data = Vec::new();
        for r in 0..4 {
            for c in 0..5 {
                data.push((2.0 * c as f64 + 3.0 * r as f64) as f32);
            }
        }
        let g = Grid::from_vec(5, 4, data, GeoRef::local(1.0));
        let z = g.bilinear(2.25, 1.75);
        assert!((z - (2.0 * 1.75 + 3.0 * 1.25)).abs() < 1e-9);
        assert!(g.bilinear(0.2, 1.0).is_nan());
        assert!(g.bilinear(1.0, 3.9).is_nan());
        assert!((g.bilinear(4.5, 3.5) - (8.0 + 9.0)).abs() < 1e-9);
    }
}
