//! Terrain shading of a site from the terrain stage's horizon map.
//!
//! # Method
//! Beam: the sun is hidden where its apparent elevation is at or below the horizon angle
//! of the map for the sun's azimuth ([`HorizonMap::angle_at`], linear between the two
//! nearest sectors); hidden sun means zero beam on every plane. Diffuse: sky diffuse is
//! scaled by the cell's sky-view factor ([`HorizonMap::sky_view_factor`], Dozier and Frew
//! 1990, eq. 7 for a level surface), i.e. the horizon is assumed to block an isotropic
//! share of the sky. Ground-reflected light is left as computed (surrounding terrain
//! reflects at least as much as the level ground the transposition assumes).
//!
//! Limits: circumsolar diffuse is not removed when the sun itself is hidden (a small
//! overestimate just after sunrise behind a ridge); the sky-view factor is that of a
//! level surface, not of the tilted panel; the horizon map's own sampling (about half a
//! cell near the observer) bounds the timing of terrain sunrise.
//!
//! # Units
//! Angles in radians; irradiance in W/m²; the sky-view factor is dimensionless.

use crate::terrain::horizon::HorizonMap;

use super::transposition::PoaComponents;

/// How the terrain around one grid cell shades it.
#[derive(Debug, Clone, Copy)]
pub struct SiteShade<'a> {
    map: &'a HorizonMap,
    col: usize,
    row: usize,
    sky_view: f64,
}

impl<'a> SiteShade<'a> {
    /// The shade of cell (`col`, `row`) of `map`; `None` outside the grid.
    pub fn new(map: &'a HorizonMap, col: usize, row: usize) -> Option<SiteShade<'a>> {
        (col < map.width() && row < map.height()).then(|| SiteShade {
            map,
            col,
            row,
            sky_view: map.sky_view_factor(col, row),
        })
    }

    /// True when terrain hides a sun at apparent elevation `elevation_rad` and azimuth
    /// `azimuth_rad` (clockwise from north).
    pub fn sun_hidden(&self, elevation_rad: f64, azimuth_rad: f64) -> bool {
        elevation_rad <= self.map.angle_at(self.col, self.row, azimuth_rad)
    }

    /// Sky-view factor of the cell, 0..1.
    pub fn sky_view_factor(&self) -> f64 {
        self.sky_view
    }

    /// Applies the shade to plane-of-array components (module doc).
    pub fn apply(&self, poa: PoaComponents, elevation_rad: f64, azimuth_rad: f64) -> PoaComponents {
        let beam = if self.sun_hidden(elevation_rad, azimuth_rad) {
            0.0
        } else {
            poa.beam_w_m2
        };
        PoaComponents {
            beam_w_m2: beam,
            sky_diffuse_w_m2: poa.sky_diffuse_w_m2 * self.sky_view,
            ground_w_m2: poa.ground_w_m2,
        }
    }
}
