//! Irradiance on a tilted plane (plane-of-array, POA) from DNI, DHI and GHI: beam by the
//! angle of incidence, sky diffuse by a named model, ground-reflected by albedo.
//!
//! # Geometry
//! The plane faces azimuth γp (radians clockwise from north) at tilt β from horizontal;
//! its unit normal in east-north-up coordinates is (sin β sin γp, sin β cos γp, cos β).
//! cos θ = cos z cos β + sin z sin β cos(γs − γp) (e.g. J. A. Duffie and W. A. Beckman,
//! *Solar Engineering of Thermal Processes*, 4th ed., Wiley 2013, eq. 1.6.3).
//!
//! # Components
//! - Beam: DNI · max(cos θ, 0).
//! - Ground-reflected, isotropic ground: GHI · ρ · (1 − cos β)/2 (Duffie and Beckman
//!   eq. 2.15.1 term 3).
//! - Sky diffuse, [`SkyModel`]:
//!   - Isotropic (Liu and Jordan 1963): DHI · (1 + cos β)/2.
//!   - Hay-Davies: J. E. Hay and J. A. Davies, "Calculation of the solar radiation
//!     incident on an inclined surface", Proc. First Canadian Solar Radiation Data
//!     Workshop, 1980: anisotropy index A = DNI/E0, Rb = max(cos θ, 0)/max(cos z, cos 89°),
//!     sky = DHI · ((1 − A)(1 + cos β)/2 + A·Rb).
//!   - Perez: R. Perez, P. Ineichen, R. Seals, J. Michalsky and R. Stewart, "Modeling
//!     daylight availability and irradiance components from direct and global
//!     irradiance", Solar Energy 44(5), 271-289, 1990, eq. 9 with the all-sites composite
//!     coefficients of its Table 6: ε = ((DHI + DNI)/DHI + κz³)/(1 + κz³), κ = 1.041,
//!     z in radians; Δ = DHI·AM/E0 (relative air mass); F1 = max(0, f11 + f12Δ + f13z),
//!     F2 = f21 + f22Δ + f23z for the ε bin; sky = DHI · ((1 − F1)(1 + cos β)/2 +
//!     F1·a/b + F2·sin β), a = max(0, cos θ), b = max(cos 85°, cos z). When there is no
//!     air mass (sun at or below the horizon) the isotropic model is used instead.
//!
//! Negative sky diffuse (possible with Perez's horizon-brightening term) is clipped to 0.
//! The sun's direction should be the *apparent* one (refracted), as the panel sees it.
//!
//! Validity: the diffuse models assume an unobstructed sky and a uniform ground; terrain
//! shading is applied separately ([`super::shading`]). None models snow glare or
//! the panel's own reflection losses at large θ.
//!
//! # Units
//! Angles in radians; irradiance in W/m²; albedo and air mass dimensionless.

use super::error::{check_range, SunError};
use super::irradiance::Components;

/// Ground albedo of bare soil and dry grass, 0.2 (common practice; Duffie and Beckman
/// 2013, sec. 2.16, take 0.2 for snow-free ground, recalled from memory).
pub const ALBEDO_BARE_SOIL: f64 = 0.2;
/// Ground albedo of fresh snow, 0.8 (common practice: fresh dry snow reflects 0.8-0.9 of
/// broadband solar light; Duffie and Beckman 2013 use 0.7 for snow cover in general,
/// recalled from memory). In polar winter this more than triples the ground term.
pub const ALBEDO_FRESH_SNOW: f64 = 0.8;

/// Which sky-diffuse model to use.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum SkyModel {
    /// Uniform sky (Liu and Jordan).
    Isotropic,
    /// Circumsolar + isotropic (Hay and Davies 1980), the default: needs only DNI, DHI
    /// and E0, and is well behaved at low sun.
    #[default]
    HayDavies,
    /// Circumsolar + horizon band + isotropic (Perez et al. 1990).
    Perez,
}

/// A flat surface: tilt from horizontal and the azimuth its normal faces.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Plane {
    /// Tilt from horizontal, radians (0 = facing up, π/2 = vertical).
    tilt_rad: f64,
    /// Azimuth the surface faces, radians clockwise from north.
    azimuth_rad: f64,
    /// sin and cos of the tilt, computed once (every irradiance term needs them).
    sin_tilt: f64,
    cos_tilt: f64,
}

/// Checks an angle given in radians against a range in degrees; the comparison and the
/// message use degrees rounded to 1e-9 so that a value the user typed (200) is shown as
/// typed, not as its radians or as 199.99999999999997.
fn check_deg(
    name: &'static str,
    angle_rad: f64,
    (lo_deg, hi_deg): (f64, f64),
    expected: &'static str,
    fix: &'static str,
) -> Result<f64, SunError> {
    let deg = (crate::units::rad_to_deg(angle_rad) * 1e9).round() / 1e9;
    check_range(name, deg, lo_deg, hi_deg, expected, fix)?;
    Ok(angle_rad)
}

impl Plane {
    /// A checked plane: tilt from 0 to π (face-down allowed), azimuth from −2π to 2π
    /// (wrapped into [0, 2π)), the range of the mission file's `panels.azimuth_deg`.
    /// Errors name the values in degrees, as the user gave them.
    pub fn new(tilt_rad: f64, azimuth_rad: f64) -> Result<Plane, SunError> {
        check_deg(
            "tilt_deg",
            tilt_rad,
            (0.0, 180.0),
            "degrees from 0 (flat) to 180 (facing down)",
            "give the panel tilt from horizontal in degrees (--tilt-deg)",
        )?;
        check_deg(
            "panel_azimuth_deg",
            azimuth_rad,
            (-360.0, 360.0),
            "degrees clockwise from north, -360 to 360",
            "give the azimuth the panel faces (--panel-azimuth-deg), e.g. 180 for south",
        )?;
        Ok(Plane::of(tilt_rad, azimuth_rad))
    }

    /// The plane with its tilt's sine and cosine.
    fn of(tilt_rad: f64, azimuth_rad: f64) -> Plane {
        let (sin_tilt, cos_tilt) = tilt_rad.sin_cos();
        Plane {
            tilt_rad,
            azimuth_rad: crate::units::wrap_azimuth_rad(azimuth_rad),
            sin_tilt,
            cos_tilt,
        }
    }

    /// Tilt from horizontal, radians (0 = facing up, π/2 = vertical).
    pub fn tilt_rad(&self) -> f64 {
        self.tilt_rad
    }

    /// Azimuth the surface faces, radians clockwise from north.
    pub fn azimuth_rad(&self) -> f64 {
        self.azimuth_rad
    }

    /// The plane whose unit normal is `n` (east, north, up); `None` for a zero vector.
    pub fn from_normal_enu(n: [f64; 3]) -> Option<Plane> {
        let len = (n[0] * n[0] + n[1] * n[1] + n[2] * n[2]).sqrt();
        if len.is_nan() || len <= 1e-12 {
            return None;
        }
        let up = (n[2] / len).clamp(-1.0, 1.0);
        let azimuth = if n[0].hypot(n[1]) < 1e-12 {
            0.0
        } else {
            n[0].atan2(n[1])
        };
        Some(Plane::of(up.acos(), azimuth))
    }

    /// Unit normal in east-north-up coordinates.
    pub fn normal_enu(&self) -> [f64; 3] {
        let (sb, cb) = (self.sin_tilt, self.cos_tilt);
        let (sg, cg) = self.azimuth_rad.sin_cos();
        [sb * sg, sb * cg, cb]
    }

    /// cos θ, the cosine of the angle of incidence for a sun at zenith `zenith_rad` and
    /// azimuth `azimuth_rad` (may be negative: sun behind the plane).
    pub fn cos_incidence(&self, zenith_rad: f64, azimuth_rad: f64) -> f64 {
        let (sz, cz) = zenith_rad.sin_cos();
        let (sb, cb) = (self.sin_tilt, self.cos_tilt);
        cz * cb + sz * sb * (azimuth_rad - self.azimuth_rad).cos()
    }
}

/// The sun-side inputs of the transposition.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SunGeometry {
    /// Sun zenith (apparent), radians.
    pub zenith_rad: f64,
    /// Sun azimuth, radians clockwise from north.
    pub azimuth_rad: f64,
    /// Extraterrestrial normal irradiance, W/m².
    pub dni_extra_w_m2: f64,
    /// Relative air mass (Perez only); `None` with the sun down.
    pub airmass_relative: Option<f64>,
}

/// Irradiance on the plane, by component, W/m².
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct PoaComponents {
    /// Direct beam on the plane, W/m².
    pub beam_w_m2: f64,
    /// Sky diffuse on the plane, W/m².
    pub sky_diffuse_w_m2: f64,
    /// Ground-reflected on the plane, W/m².
    pub ground_w_m2: f64,
}

impl PoaComponents {
    /// Total plane-of-array irradiance, W/m².
    pub fn total_w_m2(&self) -> f64 {
        self.beam_w_m2 + self.sky_diffuse_w_m2 + self.ground_w_m2
    }
}

/// Perez et al. (1990) Table 6, all-sites composite: per ε bin, f11 f12 f13 f21 f22 f23.
const PEREZ_1990: [[f64; 6]; 8] = [
    [-0.0080, 0.5880, -0.0620, -0.0600, 0.0720, -0.0220],
    [0.1300, 0.6830, -0.1510, -0.0190, 0.0660, -0.0290],
    [0.3300, 0.4870, -0.2210, 0.0550, -0.0640, -0.0260],
    [0.5680, 0.1870, -0.2950, 0.1090, -0.1520, -0.0140],
    [0.8730, -0.3920, -0.3620, 0.2260, -0.4620, 0.0010],
    [1.1320, -1.2370, -0.4120, 0.2880, -0.8230, 0.0560],
    [1.0600, -1.6000, -0.3590, 0.2640, -1.1270, 0.1310],
    [0.6780, -0.3270, -0.2500, 0.1560, -1.3770, 0.2510],
];
/// Lower edges of Perez's sky-clearness bins 2..8 (bin 1 starts at 1).
const PEREZ_BIN_EDGES: [f64; 7] = [1.065, 1.23, 1.5, 1.95, 2.8, 4.5, 6.2];

fn isotropic_sky(dhi: f64, plane: &Plane) -> f64 {
    dhi * 0.5 * (1.0 + plane.cos_tilt)
}

fn hay_davies_sky(irr: &Components, plane: &Plane, sun: &SunGeometry, cos_theta: f64) -> f64 {
    let rb = cos_theta.max(0.0) / sun.zenith_rad.cos().max(0.017_45);
    let ai = if sun.dni_extra_w_m2 > 0.0 {
        irr.dni_w_m2 / sun.dni_extra_w_m2
    } else {
        0.0
    };
    let iso = (irr.dhi_w_m2 * (1.0 - ai) * 0.5 * (1.0 + plane.cos_tilt)).max(0.0);
    iso + (irr.dhi_w_m2 * ai * rb).max(0.0)
}

fn perez_sky(irr: &Components, plane: &Plane, sun: &SunGeometry, cos_theta: f64) -> f64 {
    let Some(am) = sun.airmass_relative else {
        return isotropic_sky(irr.dhi_w_m2, plane);
    };
    if irr.dhi_w_m2 <= 0.0 {
        return 0.0;
    }
    let z = sun.zenith_rad;
    let kz3 = 1.041 * z.powi(3);
    let eps = ((irr.dhi_w_m2 + irr.dni_w_m2) / irr.dhi_w_m2 + kz3) / (1.0 + kz3);
    let bin = PEREZ_BIN_EDGES.iter().filter(|&&e| eps >= e).count();
    let f = PEREZ_1990[bin];
    let delta = irr.dhi_w_m2 * am / sun.dni_extra_w_m2;
    let f1 = (f[0] + f[1] * delta + f[2] * z).max(0.0);
    let f2 = f[3] + f[4] * delta + f[5] * z;
    let a = cos_theta.max(0.0);
    let b = z.cos().max(85f64.to_radians().cos());
    let (sb, cb) = (plane.sin_tilt, plane.cos_tilt);
    (irr.dhi_w_m2 * (0.5 * (1.0 - f1) * (1.0 + cb) + f1 * a / b + f2 * sb)).max(0.0)
}

/// Plane-of-array irradiance by component (module doc).
pub fn plane_of_array(
    plane: &Plane,
    sun: &SunGeometry,
    irr: &Components,
    albedo: f64,
    model: SkyModel,
) -> PoaComponents {
    let cos_theta = plane.cos_incidence(sun.zenith_rad, sun.azimuth_rad);
    let sky = match model {
        SkyModel::Isotropic => isotropic_sky(irr.dhi_w_m2, plane),
        SkyModel::HayDavies => hay_davies_sky(irr, plane, sun, cos_theta),
        SkyModel::Perez => perez_sky(irr, plane, sun, cos_theta),
    };
    PoaComponents {
        beam_w_m2: (irr.dni_w_m2 * cos_theta).max(0.0),
        sky_diffuse_w_m2: sky,
        ground_w_m2: irr.ghi_w_m2 * albedo * 0.5 * (1.0 - plane.cos_tilt),
    }
}
