//! Roughness: the range of elevations in the 3 × 3 window around a cell.
//!
//! Method: "roughness" of Wilson, O'Connell, Brown, Guinan and Grehan, "Multiscale
//! terrain analysis of multibeam bathymetry data for habitat mapping on the continental
//! slope", Marine Geodesy 30, 2007, pp. 3-35 — the largest minus the smallest elevation
//! of the cell and its eight neighbours, as GDAL's `gdaldem roughness` computes it.
//! Neighbours outside the grid or without data are left out; a no-data centre gives
//! no-data. It measures relief the rover meets within one cell step, in metres.
//!
//! # Units
//! Metres.

use rayon::prelude::*;

use crate::terrain::raster::{Dem, Grid};

/// Roughness of every cell, metres (NaN = no-data).
pub fn roughness_map(dem: &Dem) -> Grid<f32> {
    let w = dem.width();
    let mut out = Grid::filled_like(dem, f32::NAN);
    out.data_mut()
        .par_chunks_mut(w)
        .enumerate()
        .for_each(|(row, line)| {
            for (col, v) in line.iter_mut().enumerate() {
                if dem.get(col, row).is_nan() {
                    continue;
                }
                let (mut lo, mut hi) = (f32::INFINITY, f32::NEG_INFINITY);
                for dr in -1..=1 {
                    for dc in -1..=1 {
                        if let Some(z) = dem.get_checked(col as isize + dc, row as isize + dr) {
                            if !z.is_nan() {
                                lo = lo.min(z);
                                hi = hi.max(z);
                            }
                        }
                    }
                }
                *v = hi - lo;
            }
        });
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::terrain::raster::GeoRef;

    #[test]
    fn range_of_the_window() {
        let data = vec![1.0, 2.0, 3.0, 4.0, 9.0, 6.0, 7.0, 8.0, f32::NAN];
        let dem = Grid::from_vec(3, 3, data, GeoRef::local(1.0));
        let r = roughness_map(&dem);
        assert_eq!(r.get(1, 1), 8.0);
        assert_eq!(r.get(0, 0), 8.0); // 1, 2, 4, 9
        assert!(r.get(2, 2).is_nan());
    }
}
