//! Extraterrestrial irradiance, relative and absolute air mass, and clear-sky irradiance by
//! the Ineichen-Perez model.
//!
//! # Extraterrestrial irradiance
//! E0 = S / R², S = 1361 W/m² (total solar irradiance at 1 AU: G. Kopp and J. L. Lean,
//! "A new, lower value of total solar irradiance: Evidence and climate significance",
//! Geophysical Research Letters 38, L01706, 2011), R the Earth-Sun distance in AU from
//! SPA ([`super::position`]). The ±0.1 % solar-cycle variation is left out.
//!
//! # Air mass
//! Relative optical air mass of F. Kasten and A. T. Young, "Revised optical air mass
//! tables and approximation formula", Applied Optics 28(22), 4735-4738, 1989, eq. 3:
//! AM = 1 / (cos z + 0.50572·(96.07995° − z)^−1.6364), z the apparent zenith in degrees.
//! Absolute (pressure-corrected) air mass AMa = AM · p / 1013.25 hPa. Defined for
//! z < 90°; below the horizon there is none (`None`).
//!
//! # Clear sky: Ineichen-Perez
//! P. Ineichen and R. Perez, "A new airmass independent formulation for the Linke
//! turbidity coefficient", Solar Energy 73(3), 151-157, 2002, eq. 3-4 and 8-9 (without the
//! optional low-sun enhancement), with the beam limit of P. Ineichen, "A broadband
//! simplified version of the Solis clear sky model", Solar Energy 82, 758-762, 2008:
//!
//! ```text
//! fh1 = exp(−h/8000), fh2 = exp(−h/1250)            h: site height, m
//! cg1 = 5.09e−5·h + 0.868, cg2 = 3.92e−5·h + 0.0387
//! GHI = cg1 · E0 · cos z · exp(−cg2 · AMa · (fh1 + fh2·(TL − 1)))
//! b   = 0.664 + 0.163/fh1
//! DNI = min(b · E0 · exp(−0.09 · AMa · (TL − 1)),
//!           GHI · (1 − (0.1 − 0.2·exp(−TL)) / (0.1 + 0.882/fh1)) / cos z)
//! DHI = GHI − DNI · cos z
//! ```
//!
//! TL is the Linke turbidity at air mass 2. Validity: cloudless skies only; the authors
//! report about 1-2 % bias for GHI at sites with known TL; an unknown TL is the largest
//! error (one unit of TL changes clear-sky DNI by roughly 10 % at mid sun heights).
//!
//! # Units
//! Angles in radians, heights in metres, pressure in hPa, irradiance in W/m²; air mass
//! and Linke turbidity are dimensionless.

use super::error::{check_range, SunError};
use super::position::STANDARD_PRESSURE_HPA;
use crate::units::rad_to_deg;

/// Total solar irradiance at 1 AU, W/m² (Kopp and Lean 2011).
pub const SOLAR_CONSTANT_W_M2: f64 = 1361.0;

/// Extraterrestrial normal irradiance at Earth-Sun distance `earth_sun_distance_au`, W/m².
pub fn extraterrestrial_w_m2(earth_sun_distance_au: f64) -> f64 {
    SOLAR_CONSTANT_W_M2 / (earth_sun_distance_au * earth_sun_distance_au)
}

/// Kasten-Young (1989) relative air mass at apparent zenith `apparent_zenith_rad`;
/// `None` when the sun is at or below the horizon.
pub fn relative_airmass(apparent_zenith_rad: f64) -> Option<f64> {
    let z_deg = rad_to_deg(apparent_zenith_rad);
    if !(0.0..90.0).contains(&z_deg) {
        return None;
    }
    Some(1.0 / (apparent_zenith_rad.cos() + 0.50572 * (96.07995 - z_deg).powf(-1.6364)))
}

/// Absolute air mass: relative air mass scaled by pressure / 1013.25 hPa.
pub fn absolute_airmass(relative: f64, pressure_hpa: f64) -> f64 {
    relative * pressure_hpa / STANDARD_PRESSURE_HPA
}

/// Irradiance components on the horizontal and normal to the sun, W/m².
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize)]
pub struct Components {
    /// Global horizontal irradiance, W/m².
    pub ghi_w_m2: f64,
    /// Direct normal irradiance, W/m².
    pub dni_w_m2: f64,
    /// Diffuse horizontal irradiance, W/m².
    pub dhi_w_m2: f64,
}

/// Monthly Linke turbidity of a site (air mass 2), January first.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LinkeTurbidity {
    /// One value per month, January to December, dimensionless.
    pub monthly: [f64; 12],
}

/// Default Linke turbidity for every month: 3.0.
///
/// Why: a moderately clear rural atmosphere. Monthly site means over land mostly lie
/// between about 2 (clean polar, high mountain) and 5-6 (humid or hazy lowlands): J.
/// Remund, L. Wald, M. Lefèvre, T. Ranchin and J. Page, "Worldwide Linke turbidity
/// information", ISES Solar World Congress, 2003 (range recalled from memory). Clear-sky
/// power is sensitive to it: give the site's own monthly values where known.
pub const DEFAULT_LINKE_TURBIDITY: f64 = 3.0;

impl Default for LinkeTurbidity {
    fn default() -> Self {
        LinkeTurbidity {
            monthly: [DEFAULT_LINKE_TURBIDITY; 12],
        }
    }
}

impl LinkeTurbidity {
    /// Twelve checked monthly values (each from 1 to 10).
    pub fn new(monthly: [f64; 12]) -> Result<LinkeTurbidity, SunError> {
        for v in monthly {
            check_range(
                "linke_turbidity",
                v,
                1.0,
                10.0,
                "a Linke turbidity from 1 (clean dry air) to 10",
                "give twelve monthly values, typically 2 to 6",
            )?;
        }
        Ok(LinkeTurbidity { monthly })
    }

    /// The value for month `month` (1-12; out-of-range months are clamped).
    pub fn for_month(&self, month: u32) -> f64 {
        self.monthly[(month.clamp(1, 12) - 1) as usize]
    }
}

/// Ineichen-Perez clear-sky irradiance (module doc). Zero when the sun is down.
///
/// `apparent_zenith_rad`: apparent zenith; `airmass_absolute`: pressure-corrected
/// Kasten-Young air mass; `linke`: TL at air mass 2; `altitude_m`: site height;
/// `dni_extra_w_m2`: extraterrestrial normal irradiance.
pub fn ineichen_perez(
    apparent_zenith_rad: f64,
    airmass_absolute: f64,
    linke: f64,
    altitude_m: f64,
    dni_extra_w_m2: f64,
) -> Components {
    let cos_z = apparent_zenith_rad.cos();
    if cos_z <= 0.0 || !airmass_absolute.is_finite() {
        return Components::default();
    }
    let fh1 = (-altitude_m / 8000.0).exp();
    let fh2 = (-altitude_m / 1250.0).exp();
    let cg1 = 5.09e-5 * altitude_m + 0.868;
    let cg2 = 3.92e-5 * altitude_m + 0.0387;
    let ghi = cg1
        * dni_extra_w_m2
        * cos_z
        * (-cg2 * airmass_absolute * (fh1 + fh2 * (linke - 1.0))).exp();
    let b = 0.664 + 0.163 / fh1;
    let bnci = dni_extra_w_m2 * (b * (-0.09 * airmass_absolute * (linke - 1.0)).exp()).max(0.0);
    let ratio = (1.0 - (0.1 - 0.2 * (-linke).exp()) / (0.1 + 0.882 / fh1)) / cos_z;
    let dni = bnci.min(ghi * ratio.clamp(0.0, 1e20));
    Components {
        ghi_w_m2: ghi,
        dni_w_m2: dni,
        dhi_w_m2: ghi - dni * cos_z,
    }
}
