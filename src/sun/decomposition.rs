//! Splitting measured global horizontal irradiance into direct and diffuse parts by the
//! Erbs correlation, for weather that gives GHI only.
//!
//! # Method and source
//! D. G. Erbs, S. A. Klein and J. A. Duffie, "Estimation of the diffuse radiation
//! fraction for hourly, daily and monthly-average global radiation", Solar Energy 28(4),
//! 293-302, 1982, eq. 1 (hourly diffuse fraction):
//!
//! ```text
//! kt = GHI / (E0 · max(cos z, 0.065))          clearness index, clipped to [0, 1]
//! kd = 1 − 0.09·kt                                    kt ≤ 0.22
//! kd = 0.9511 − 0.1604·kt + 4.388·kt² − 16.638·kt³ + 12.336·kt⁴   0.22 < kt ≤ 0.80
//! kd = 0.165                                          kt > 0.80
//! DHI = kd · GHI,  DNI = (GHI − DHI) / cos z
//! ```
//!
//! Low-sun guards (sunward's, the same values the reference library pvlib uses so that
//! checks compare like with like): cos z is floored at 0.065 (z ≈ 86.3°) in kt, and at
//! zenith above 87° DNI is set to 0 with all of GHI diffuse, because dividing by a tiny
//! cos z turns measurement noise into huge beams.
//!
//! Validity: fitted on hourly data from five US sites (latitudes 31-42° N); for
//! sub-hourly steps it is common practice but scatter grows (cloud edges). It knows
//! nothing of the site's albedo or turbidity.
//!
//! # Units
//! Irradiance in W/m², zenith in radians, clearness and diffuse fraction dimensionless.

use super::irradiance::Components;

/// Smallest cos z used in the clearness index (z ≈ 86.3°).
pub const MIN_COS_ZENITH: f64 = 0.065;
/// Zenith above which no beam is derived, radians (87°).
pub const MAX_BEAM_ZENITH_RAD: f64 = 87.0 * std::f64::consts::PI / 180.0;

/// Erbs diffuse fraction for clearness index `kt`.
pub fn erbs_diffuse_fraction(kt: f64) -> f64 {
    if kt <= 0.22 {
        1.0 - 0.09 * kt
    } else if kt <= 0.8 {
        0.9511 - 0.1604 * kt + 4.388 * kt.powi(2) - 16.638 * kt.powi(3) + 12.336 * kt.powi(4)
    } else {
        0.165
    }
}

/// Clearness index kt = GHI / (E0 · max(cos z, 0.065)), clipped to [0, 1].
pub fn clearness_index(ghi_w_m2: f64, zenith_rad: f64, dni_extra_w_m2: f64) -> f64 {
    let horizontal_extra = dni_extra_w_m2 * zenith_rad.cos().max(MIN_COS_ZENITH);
    (ghi_w_m2 / horizontal_extra).clamp(0.0, 1.0)
}

/// DNI and DHI from GHI by Erbs (module doc); GHI is kept as given.
pub fn erbs(ghi_w_m2: f64, zenith_rad: f64, dni_extra_w_m2: f64) -> Components {
    let kt = clearness_index(ghi_w_m2, zenith_rad, dni_extra_w_m2);
    let dhi = erbs_diffuse_fraction(kt) * ghi_w_m2;
    let dni = (ghi_w_m2 - dhi) / zenith_rad.cos();
    if zenith_rad > MAX_BEAM_ZENITH_RAD || ghi_w_m2 < 0.0 || dni < 0.0 {
        return Components {
            ghi_w_m2,
            dni_w_m2: 0.0,
            dhi_w_m2: ghi_w_m2,
        };
    }
    Components {
        ghi_w_m2,
        dni_w_m2: dni,
        dhi_w_m2: dhi,
    }
}
