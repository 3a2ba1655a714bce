//! WGS 84 geographic coordinates to Universal Transverse Mercator (UTM) and back.
//!
//! # Method
//! The Krüger series to sixth order in the third flattening n, in the form given by
//! C. F. F. Karney, "Transverse Mercator with an accuracy of a few nanometers",
//! J. Geodesy 85(8), 475–485, 2011 (doi:10.1007/s00190-011-0445-3). Karney states that
//! the sixth-order series is accurate to 5 nm within 3900 km of the central meridian
//! (his section 4 and figure 2); UTM use stays far inside that.
//!
//! Forward (Karney eqs. 7–9, 11, 12, with the coefficients α of eq. 35):
//!
//! ```text
//! n  = f / (2 − f),  e = sqrt(f (2 − f))
//! A  = a / (1 + n) · (1 + n²/4 + n⁴/64 + n⁶/256)            rectifying radius, eq. 14
//! τ  = tan φ
//! σ  = sinh(e · atanh(e τ / sqrt(1 + τ²)))
//! τ' = τ sqrt(1 + σ²) − σ sqrt(1 + τ²)                      conformal latitude, eq. 7
//! ξ' = atan2(τ', cos λ),  η' = asinh(sin λ / sqrt(τ'² + cos² λ))   eqs. 8–9
//! ξ  = ξ' + Σ_j α_j sin(2jξ') cosh(2jη')                     eq. 11
//! η  = η' + Σ_j α_j cos(2jξ') sinh(2jη')                     eq. 12
//! E  = E0 + k0 A η,   N = N0 + k0 A ξ
//! ```
//!
//! with λ the longitude from the zone's central meridian, k0 = 0.9996, E0 = 500 000 m,
//! N0 = 0 m north and 10 000 000 m south (the UTM definition: NIMA TM 8358.2, "The
//! Universal Grids", 1989, section 2-3). Meridian convergence γ and point scale k follow
//! Karney eqs. 13 and 15–16 (p', q' from the derivative of the series).
//!
//! The inverse uses the β coefficients of eq. 36 to go from (ξ, η) to (ξ', η'), then
//! solves eq. 7 for τ by Newton's method (eqs. 19–21), three to four iterations.
//!
//! # Units
//! Latitude and longitude in radians (WGS 84); easting and northing in metres;
//! convergence in radians (positive when grid north lies east of true north, i.e. the
//! angle from true north clockwise to grid north); scale dimensionless.
//!
//! # Validity
//! UTM is defined from 80° S to 84° N; [`forward`] refuses latitudes outside that band
//! and points more than [`MAX_OFFSET_FROM_MERIDIAN_DEG`] of longitude from the central
//! meridian (the series remains accurate much further, but a point that far from its
//! zone is almost surely a wrong zone or swapped axes). The datum is WGS 84 only: no
//! datum shift is applied.

use crate::terrain::raster::{WGS84_A_M, WGS84_F};
use crate::units::{deg_to_rad, rad_to_deg};

/// UTM scale factor on the central meridian (NIMA TM 8358.2, 1989, section 2-3).
pub const UTM_K0: f64 = 0.9996;
/// UTM false easting, metres (NIMA TM 8358.2, 1989, section 2-3).
pub const UTM_FALSE_EASTING_M: f64 = 500_000.0;
/// UTM false northing in the southern hemisphere, metres (NIMA TM 8358.2, section 2-3).
pub const UTM_FALSE_NORTHING_SOUTH_M: f64 = 10_000_000.0;
/// Southern limit of UTM, degrees (NIMA TM 8358.2, section 2-3; UPS covers the pole).
pub const UTM_MIN_LAT_DEG: f64 = -80.0;
/// Northern limit of UTM, degrees (NIMA TM 8358.2, section 2-3).
pub const UTM_MAX_LAT_DEG: f64 = 84.0;
/// Largest accepted longitude offset from the central meridian, degrees. A zone is 6°
/// wide (±3°); 10° leaves room for grids that spill over a zone edge, as DEMs near
/// zone boundaries do, while catching wrong zones. The series is accurate far beyond.
pub const MAX_OFFSET_FROM_MERIDIAN_DEG: f64 = 10.0;

/// Hemisphere of a UTM zone (selects the false northing).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Hemisphere {
    /// False northing 0 m.
    North,
    /// False northing 10 000 000 m.
    South,
}

/// A UTM zone on WGS 84.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct UtmZone {
    number: u8,
    hemisphere: Hemisphere,
}

/// Errors of the UTM conversions.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum UtmError {
    /// A zone number outside 1..=60.
    #[error("UTM zone {number} does not exist: zones are numbered 1 to 60")]
    Zone {
        /// The number given.
        number: u32,
    },
    /// A coordinate is NaN or infinite.
    #[error("{what} is not a finite number. Fix: give finite coordinates")]
    NotFinite {
        /// Which coordinate.
        what: &'static str,
    },
    /// Latitude outside UTM's band.
    #[error(
        "latitude {lat_deg:.6}° is outside the UTM band (80° S to 84° N). Fix: check that \
         longitude and latitude are not swapped; polar areas need a polar projection"
    )]
    Latitude {
        /// The latitude, degrees.
        lat_deg: f64,
    },
    /// Longitude too far from the zone.
    #[error(
        "longitude {lon_deg:.6}° is {offset_deg:.3}° from the central meridian of UTM zone \
         {zone} (at most 10° accepted). Fix: check the zone of the DEM and that longitude \
         and latitude are not swapped"
    )]
    FarFromZone {
        /// The longitude, degrees.
        lon_deg: f64,
        /// Its distance from the central meridian, degrees.
        offset_deg: f64,
        /// The zone number.
        zone: u8,
    },
}

impl UtmZone {
    /// A zone from its number (1..=60) and hemisphere.
    pub fn new(number: u32, hemisphere: Hemisphere) -> Result<UtmZone, UtmError> {
        if (1..=60).contains(&number) {
            Ok(UtmZone {
                number: number as u8,
                hemisphere,
            })
        } else {
            Err(UtmError::Zone { number })
        }
    }

    /// The zone of a WGS 84 / UTM EPSG code: 32601–32660 north, 32701–32760 south.
    pub fn from_epsg(code: u32) -> Option<UtmZone> {
        let (base, hemisphere) = match code {
            32601..=32660 => (32600, Hemisphere::North),
            32701..=32760 => (32700, Hemisphere::South),
            _ => return None,
        };
        UtmZone::new(code - base, hemisphere).ok()
    }

    /// The EPSG code of this zone on WGS 84.
    pub fn epsg(self) -> u32 {
        let base = match self.hemisphere {
            Hemisphere::North => 32600,
            Hemisphere::South => 32700,
        };
        base + self.number as u32
    }

    /// Zone number, 1..=60.
    pub fn number(self) -> u8 {
        self.number
    }

    /// Hemisphere.
    pub fn hemisphere(self) -> Hemisphere {
        self.hemisphere
    }

    /// Longitude of the central meridian, radians: −183° + 6° × zone.
    pub fn central_meridian_rad(self) -> f64 {
        deg_to_rad(-183.0 + 6.0 * self.number as f64)
    }

    fn false_northing_m(self) -> f64 {
        match self.hemisphere {
            Hemisphere::North => 0.0,
            Hemisphere::South => UTM_FALSE_NORTHING_SOUTH_M,
        }
    }
}

/// A projected point with its local meridian convergence and point scale.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct UtmPoint {
    /// Easting, metres.
    pub easting_m: f64,
    /// Northing, metres.
    pub northing_m: f64,
    /// Meridian convergence, radians: the angle from true north clockwise to grid north.
    pub convergence_rad: f64,
    /// Point scale factor (1 = true scale; 0.9996 on the central meridian).
    pub scale: f64,
}

/// Series constants of the WGS 84 ellipsoid (Karney 2011, eqs. 14, 35, 36).
struct Series {
    e: f64,
    e2: f64,
    /// Rectifying radius A, metres.
    a_rect_m: f64,
    alpha: [f64; 6],
    beta: [f64; 6],
}

fn series() -> Series {
    let f = WGS84_F;
    let n = f / (2.0 - f);
    let (n2, n3) = (n * n, n * n * n);
    let (n4, n5, n6) = (n3 * n, n3 * n2, n3 * n3);
    let e2 = f * (2.0 - f);
    // Karney (2011) eq. 35 (forward series α_j).
    let alpha = [
        n / 2.0 - 2.0 / 3.0 * n2 + 5.0 / 16.0 * n3 + 41.0 / 180.0 * n4 - 127.0 / 288.0 * n5
            + 7891.0 / 37800.0 * n6,
        13.0 / 48.0 * n2 - 3.0 / 5.0 * n3 + 557.0 / 1440.0 * n4 + 281.0 / 630.0 * n5
            - 1983433.0 / 1935360.0 * n6,
        61.0 / 240.0 * n3 - 103.0 / 140.0 * n4 + 15061.0 / 26880.0 * n5 + 167603.0 / 181440.0 * n6,
        49561.0 / 161280.0 * n4 - 179.0 / 168.0 * n5 + 6601661.0 / 7257600.0 * n6,
        34729.0 / 80640.0 * n5 - 3418889.0 / 1995840.0 * n6,
        212378941.0 / 319334400.0 * n6,
    ];
    // Karney (2011) eq. 36 (inverse series β_j).
    let beta = [
        n / 2.0 - 2.0 / 3.0 * n2 + 37.0 / 96.0 * n3 - 1.0 / 360.0 * n4 - 81.0 / 512.0 * n5
            + 96199.0 / 604800.0 * n6,
        1.0 / 48.0 * n2 + 1.0 / 15.0 * n3 - 437.0 / 1440.0 * n4 + 46.0 / 105.0 * n5
            - 1118711.0 / 3870720.0 * n6,
        17.0 / 480.0 * n3 - 37.0 / 840.0 * n4 - 209.0 / 4480.0 * n5 + 5569.0 / 90720.0 * n6,
        4397.0 / 161280.0 * n4 - 11.0 / 504.0 * n5 - 830251.0 / 7257600.0 * n6,
        4583.0 / 161280.0 * n5 - 108847.0 / 3991680.0 * n6,
        20648693.0 / 638668800.0 * n6,
    ];
    Series {
        e: e2.sqrt(),
        e2,
        a_rect_m: WGS84_A_M / (1.0 + n) * (1.0 + n2 / 4.0 + n4 / 64.0 + n6 / 256.0),
        alpha,
        beta,
    }
}

/// Conformal latitude τ' = tan χ from τ = tan φ (Karney 2011, eq. 7).
fn conformal_tan(s: &Series, tau: f64) -> f64 {
    let sigma = (s.e * (s.e * tau / tau.hypot(1.0)).atanh()).sinh();
    tau * sigma.hypot(1.0) - sigma * tau.hypot(1.0)
}

/// τ from τ' by Newton's method (Karney 2011, eqs. 19–21).
fn geodetic_tan(s: &Series, tau_c: f64) -> f64 {
    let mut tau = tau_c / (1.0 - s.e2);
    for _ in 0..6 {
        let tc = conformal_tan(s, tau);
        let slope =
            (1.0 - s.e2) * tc.hypot(1.0) * tau.hypot(1.0) / (1.0 + (1.0 - s.e2) * tau * tau);
        let step = (tau_c - tc) / slope;
        tau += step;
        if step.abs() <= 1e-15 * tau.abs().max(1.0) {
            break;
        }
    }
    tau
}

fn check_finite(value: f64, what: &'static str) -> Result<(), UtmError> {
    if value.is_finite() {
        Ok(())
    } else {
        Err(UtmError::NotFinite { what })
    }
}

/// An angle wrapped into [−π, π), radians.
fn wrap_pi(angle_rad: f64) -> f64 {
    let pi = std::f64::consts::PI;
    (angle_rad + pi).rem_euclid(std::f64::consts::TAU) - pi
}

/// Longitude from the zone's central meridian, wrapped into [−π, π), radians.
fn offset_from_meridian_rad(zone: UtmZone, lon_rad: f64) -> f64 {
    wrap_pi(lon_rad - zone.central_meridian_rad())
}

fn check_forward_domain(zone: UtmZone, lat_rad: f64, lon_rad: f64) -> Result<f64, UtmError> {
    check_finite(lat_rad, "latitude")?;
    check_finite(lon_rad, "longitude")?;
    let lat_deg = rad_to_deg(lat_rad);
    if !(UTM_MIN_LAT_DEG..=UTM_MAX_LAT_DEG).contains(&lat_deg) {
        return Err(UtmError::Latitude { lat_deg });
    }
    let dlon = offset_from_meridian_rad(zone, lon_rad);
    let offset_deg = rad_to_deg(dlon).abs();
    if offset_deg > MAX_OFFSET_FROM_MERIDIAN_DEG {
        return Err(UtmError::FarFromZone {
            lon_deg: rad_to_deg(lon_rad),
            offset_deg,
            zone: zone.number,
        });
    }
    Ok(dlon)
}

/// WGS 84 latitude and longitude (radians) to UTM in `zone`, with convergence and scale.
pub fn forward(zone: UtmZone, lat_rad: f64, lon_rad: f64) -> Result<UtmPoint, UtmError> {
    let lam = check_forward_domain(zone, lat_rad, lon_rad)?;
    let s = series();
    let tau = lat_rad.tan();
    let tau_c = conformal_tan(&s, tau);
    let (sin_l, cos_l) = lam.sin_cos();
    let xi_c = tau_c.atan2(cos_l);
    let eta_c = (sin_l / tau_c.hypot(cos_l)).asinh();
    let (mut xi, mut eta) = (xi_c, eta_c);
    let (mut p, mut q) = (1.0, 0.0);
    for (j, a) in s.alpha.iter().enumerate() {
        let k = 2.0 * (j + 1) as f64;
        let (sx, cx) = (k * xi_c).sin_cos();
        let (she, che) = ((k * eta_c).sinh(), (k * eta_c).cosh());
        xi += a * sx * che;
        eta += a * cx * she;
        p += k * a * cx * che;
        q += k * a * sx * she;
    }
    // Karney eq. 13 (γ' and γ'') and eqs. 15–16 (k' and k'').
    let gamma_c = (tau_c / tau_c.hypot(1.0) * lam.tan()).atan();
    let gamma = gamma_c + q.atan2(p);
    let sin_phi = lat_rad.sin();
    let k_c = (1.0 - s.e2 * sin_phi * sin_phi).sqrt() * tau.hypot(1.0) / tau_c.hypot(cos_l);
    let k_cc = s.a_rect_m / WGS84_A_M * p.hypot(q);
    Ok(UtmPoint {
        easting_m: UTM_FALSE_EASTING_M + UTM_K0 * s.a_rect_m * eta,
        northing_m: zone.false_northing_m() + UTM_K0 * s.a_rect_m * xi,
        convergence_rad: gamma,
        scale: UTM_K0 * k_c * k_cc,
    })
}

/// UTM easting and northing (metres) in `zone` to WGS 84 latitude and longitude
/// (radians, longitude wrapped into [−π, π)).
pub fn inverse(zone: UtmZone, easting_m: f64, northing_m: f64) -> Result<(f64, f64), UtmError> {
    check_finite(easting_m, "easting")?;
    check_finite(northing_m, "northing")?;
    let s = series();
    let xi = (northing_m - zone.false_northing_m()) / (UTM_K0 * s.a_rect_m);
    let eta = (easting_m - UTM_FALSE_EASTING_M) / (UTM_K0 * s.a_rect_m);
    let (mut xi_c, mut eta_c) = (xi, eta);
    for (j, b) in s.beta.iter().enumerate() {
        let k = 2.0 * (j + 1) as f64;
        xi_c -= b * (k * xi).sin() * (k * eta).cosh();
        eta_c -= b * (k * xi).cos() * (k * eta).sinh();
    }
    let (sin_x, cos_x) = xi_c.sin_cos();
    let sinh_e = eta_c.sinh();
    let tau_c = sin_x / sinh_e.hypot(cos_x);
    let lam = sinh_e.atan2(cos_x);
    let lat_rad = geodetic_tan(&s, tau_c).atan();
    Ok((lat_rad, wrap_pi(lam + zone.central_meridian_rad())))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn epsg_codes_map_to_zones_and_back() {
        for code in (32601..=32660).chain(32701..=32760) {
            assert_eq!(UtmZone::from_epsg(code).unwrap().epsg(), code);
        }
        assert!(UtmZone::from_epsg(32600).is_none());
        assert!(UtmZone::from_epsg(32661).is_none());
        assert!(UtmZone::from_epsg(4326).is_none());
        assert!(UtmZone::new(0, Hemisphere::North).is_err());
    }

    /// On the central meridian at the equator the point is (500 000 m, 0 m), scale k0 and
    /// convergence 0, by the UTM definition (NIMA TM 8358.2, section 2-3).
    #[test]
    fn origin_of_a_zone_is_the_false_origin() {
        let zone = UtmZone::new(31, Hemisphere::North).unwrap();
        let p = forward(zone, 0.0, deg_to_rad(3.0)).unwrap();
        assert!((p.easting_m - 500_000.0).abs() < 1e-9);
        assert!(p.northing_m.abs() < 1e-9);
        assert!((p.scale - UTM_K0).abs() < 1e-15);
        assert!(p.convergence_rad.abs() < 1e-15);
    }
}
