//! Slope and aspect by Horn's method.
//!
//! Method: B. K. P. Horn, "Hill shading and the reflectance map", Proceedings of the IEEE
//! 69(1), 1981, pp. 14-47: the gradient of the 3 × 3 window
//!
//! ```text
//!   a b c        ∂z/∂x (east)  = ((c + 2f + i) − (a + 2d + g)) / (8 dx)
//!   d e f        ∂z/∂y (north) = ((a + 2b + c) − (g + 2h + i)) / (8 dy)
//!   g h i        slope = atan(√(∂z/∂x² + ∂z/∂y²)),  aspect = atan2(−∂z/∂x, −∂z/∂y)
//! ```
//!
//! Aspect is the azimuth the slope faces (downhill), clockwise from grid north, in
//! [0, 2π); flat cells have no aspect (NaN). Edges and no-data: a missing neighbour is
//! replaced by linear extrapolation through the centre, 2e − (opposite neighbour), or by
//! e when the opposite is missing too. This keeps planes exact up to the grid edge; it
//! differs from GDAL's `gdaldem -compute_edges` at edge cells (GDAL's interior values are
//! the same). A no-data centre gives no-data.
//!
//! # Units
//! Input elevations in metres with cell size in metres; slopes and aspects in radians.

use rayon::prelude::*;

use crate::terrain::raster::{CellSize, Dem, Grid};

/// Horn's gradient at one cell: (∂z/∂x east, ∂z/∂y north), dimensionless (m/m).
/// None where the centre is no-data.
#[inline]
pub fn horn_gradient(dem: &Dem, cell: CellSize, col: usize, row: usize) -> Option<(f64, f64)> {
    let e = dem.get(col, row) as f64;
    if e.is_nan() {
        return None;
    }
    let (w, h) = (dem.width(), dem.height());
    let mut z = [[0.0f64; 3]; 3];
    let interior = col > 0 && row > 0 && col + 1 < w && row + 1 < h;
    let mut complete = interior;
    if interior {
        for (dr, zr) in z.iter_mut().enumerate() {
            for (dc, zv) in zr.iter_mut().enumerate() {
                *zv = dem.get(col + dc - 1, row + dr - 1) as f64;
                complete &= !zv.is_nan();
            }
        }
    }
    if !complete {
        fill_window(dem, col, row, e, &mut z);
    }
    let gx = ((z[0][2] + 2.0 * z[1][2] + z[2][2]) - (z[0][0] + 2.0 * z[1][0] + z[2][0]))
        / (8.0 * cell.dx_m);
    let gy = ((z[0][0] + 2.0 * z[0][1] + z[0][2]) - (z[2][0] + 2.0 * z[2][1] + z[2][2]))
        / (8.0 * cell.dy_m);
    Some((gx, gy))
}

/// Fills the window with the extrapolation rule of the module doc: first the four
/// orthogonal neighbours (2e − opposite, or e), then the diagonals (present value,
/// 2e − opposite diagonal, or the parallelogram z(dc,0) + z(0,dr) − e). Each rule is
/// exact on a plane.
fn fill_window(dem: &Dem, col: usize, row: usize, e: f64, z: &mut [[f64; 3]; 3]) {
    let at = |dc: isize, dr: isize| -> f64 {
        dem.get_checked(col as isize + dc, row as isize + dr)
            .map_or(f64::NAN, |v| v as f64)
    };
    let extrapolate = |dc: isize, dr: isize| -> f64 {
        let v = at(dc, dr);
        if !v.is_nan() {
            return v;
        }
        let opp = at(-dc, -dr);
        if opp.is_nan() {
            f64::NAN
        } else {
            2.0 * e - opp
        }
    };
    z[1][1] = e;
    for (dc, dr) in [(-1isize, 0isize), (1, 0), (0, -1), (0, 1)] {
        let v = extrapolate(dc, dr);
        z[(dr + 1) as usize][(dc + 1) as usize] = if v.is_nan() { e } else { v };
    }
    for (dc, dr) in [(-1isize, -1isize), (1, -1), (-1, 1), (1, 1)] {
        let v = extrapolate(dc, dr);
        let (ic, ir) = ((dc + 1) as usize, (dr + 1) as usize);
        z[ir][ic] = if v.is_nan() {
            z[1][ic] + z[ir][1] - e
        } else {
            v
        };
    }
}

/// Slope angle from a gradient, radians.
#[inline]
pub fn slope_of(gx: f64, gy: f64) -> f64 {
    gx.hypot(gy).atan()
}

/// Aspect (downhill azimuth, clockwise from north) from a gradient, radians in [0, 2π);
/// NaN for a flat cell.
#[inline]
pub fn aspect_of(gx: f64, gy: f64) -> f64 {
    if gx == 0.0 && gy == 0.0 {
        return f64::NAN;
    }
    crate::units::wrap_azimuth_rad((-gx).atan2(-gy))
}

fn map_cells(dem: &Dem, f: impl Fn(f64, f64) -> f64 + Sync) -> Grid<f32> {
    let cell = dem.cell_size();
    let w = dem.width();
    let mut out = Grid::filled_like(dem, f32::NAN);
    out.data_mut()
        .par_chunks_mut(w)
        .enumerate()
        .for_each(|(row, line)| {
            for (col, v) in line.iter_mut().enumerate() {
                if let Some((gx, gy)) = horn_gradient(dem, cell, col, row) {
                    *v = f(gx, gy) as f32;
                }
            }
        });
    out
}

/// Slope of every cell, radians (NaN = no-data).
pub fn slope_map(dem: &Dem) -> Grid<f32> {
    map_cells(dem, slope_of)
}

/// Aspect of every cell, radians clockwise from north (NaN = no-data or flat).
pub fn aspect_map(dem: &Dem) -> Grid<f32> {
    map_cells(dem, aspect_of)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::terrain::raster::GeoRef;

    /// z = a·east + b·north on non-square cells: Horn's estimate is exact for planes, at
    /// every cell including the edges (analytic check: slope = atan √(a² + b²), aspect =
    /// atan2(−a, −b)).
    #[test]
    fn planes_are_exact_everywhere() {
        for &(a, b) in &[(0.1, 0.0), (0.0, -0.3), (0.25, 0.4), (-0.7, 0.2)] {
            let (w, h, dx, dy) = (7, 5, 2.0, 3.0);
            let mut g = GeoRef::local(dx);
            g.pixel_height = dy;
            let data = (0..h)
                .flat_map(|r| (0..w).map(move |c| (a * c as f64 * dx - b * r as f64 * dy) as f32))
                .collect();
            let dem = Grid::from_vec(w, h, data, g);
            let s = slope_map(&dem);
            let asp = aspect_map(&dem);
            let want_s = (a as f64).hypot(b).atan();
            let want_a = crate::units::wrap_azimuth_rad((-a as f64).atan2(-b));
            for i in 0..w * h {
                assert!(
                    (s.data()[i] as f64 - want_s).abs() < 1e-5,
                    "slope {a} {b} cell {i}"
                );
                let da = (asp.data()[i] as f64 - want_a).abs();
                assert!(
                    da < 1e-5 || (da - std::f64::consts::TAU).abs() < 1e-5,
                    "aspect {i}"
                );
            }
        }
    }

    #[test]
    fn nodata_centre_stays_nodata_and_flat_has_no_aspect() {
        let mut data = vec![5.0f32; 9];
        data[4] = f32::NAN;
        let dem = Grid::from_vec(3, 3, data, GeoRef::local(1.0));
        assert!(slope_map(&dem).get(1, 1).is_nan());
        assert_eq!(slope_map(&dem).get(0, 0), 0.0);
        assert!(aspect_map(&dem).get(0, 0).is_nan());
    }
}
