//! Hillshade: the cosine of the angle between the surface normal and a light direction.
//!
//! Method: the Lambertian reflectance map of Horn (1981, Proc. IEEE 69(1), eq. for
//! R(p, q)) as used in cartographic hill shading (Burrough and McDonnell, *Principles of
//! Geographical Information Systems*, 1998, §8.3): with Horn's gradient (gx east, gy
//! north) and a light at azimuth A (clockwise from north) and altitude h,
//!
//! ```text
//!   cos i = (sin h − gx·sin A·cos h − gy·cos A·cos h) / √(1 + gx² + gy²)
//! ```
//!
//! Pictures map cos i ∈ [0, 1] to grey 1..255 (1 + 254·cos i, shadowed faces 1), keeping
//! 0 for no-data, the convention of GDAL's `gdaldem hillshade`. Cast shadows are not
//! drawn (that is the horizon module's job).
//!
//! # Units
//! Light azimuth and altitude in radians; output dimensionless.

use rayon::prelude::*;

use crate::terrain::raster::{Dem, Grid};
use crate::terrain::slope::horn_gradient;

/// Cosine of the light's incidence angle on the surface, clamped at 0 (NaN = no-data).
pub fn hillshade(dem: &Dem, light_azimuth_rad: f64, light_altitude_rad: f64) -> Grid<f32> {
    let cell = dem.cell_size();
    let (sa, ca) = light_azimuth_rad.sin_cos();
    let (sh, ch) = light_altitude_rad.sin_cos();
    let w = dem.width();
    let mut out = Grid::filled_like(dem, f32::NAN);
    out.data_mut()
        .par_chunks_mut(w)
        .enumerate()
        .for_each(|(row, line)| {
            for (col, v) in line.iter_mut().enumerate() {
                if let Some((gx, gy)) = horn_gradient(dem, cell, col, row) {
                    let c = (sh - gx * sa * ch - gy * ca * ch) / (1.0 + gx * gx + gy * gy).sqrt();
                    *v = c.max(0.0) as f32;
                }
            }
        });
    out
}

/// Grey levels for a picture: 0 = no-data, 1..=255 from dark to lit.
pub fn to_grey(shade: &Grid<f32>) -> Vec<u8> {
    shade
        .data()
        .iter()
        .map(|&c| {
            if c.is_nan() {
                0
            } else {
                (1.0 + 254.0 * c.clamp(0.0, 1.0)).round() as u8
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::terrain::raster::GeoRef;

    /// Geometry: a 45° plane facing azimuth 315° has its normal pointing at altitude 45°
    /// toward 315°, so a light from there gives cos i = 1; a light from 135° at 45°
    /// altitude grazes behind it (cos i = 0).
    #[test]
    fn plane_facing_the_light_is_fully_lit() {
        // Surface normal pointing to azimuth 315°, tilt 45°: gradient points uphill to
        // azimuth 135°, |g| = tan 45° = 1.
        let (gx, gy) = (135f64.to_radians().sin(), 135f64.to_radians().cos());
        let data = (0..5)
            .flat_map(|r| (0..5).map(move |c| (gx * c as f64 - gy * r as f64) as f32))
            .collect();
        let dem = Grid::from_vec(5, 5, data, GeoRef::local(1.0));
        let hs = hillshade(&dem, 315f64.to_radians(), 45f64.to_radians());
        assert!((hs.get(2, 2) - 1.0).abs() < 1e-5);
        let dark = hillshade(&dem, 135f64.to_radians(), 45f64.to_radians());
        assert_eq!(dark.get(2, 2), 0.0);
    }
}
