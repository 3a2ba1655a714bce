//! Unit conversions: the only place where degrees become radians, watt-hours become joules
//! and degrees Celsius become kelvin.
//!
//! Inside sunward every quantity has one SI unit (radians, joules or watt-hours as named,
//! kelvin or degrees Celsius as named); conversions happen at the edges (files, CLI,
//! reports) through these functions so that a unit slip has one place to hide.
//!
//! # Units
//! Each function names its input and output unit.

/// Joules in one watt-hour (exact, by definition of the watt-hour).
pub const J_PER_WH: f64 = 3600.0;

/// Offset between the Celsius and the kelvin scales (exact, SI Brochure, 9th ed., 2.3.1).
pub const KELVIN_AT_0_C: f64 = 273.15;

/// Degrees to radians.
#[inline]
pub fn deg_to_rad(deg: f64) -> f64 {
    deg.to_radians()
}

/// Radians to degrees.
#[inline]
pub fn rad_to_deg(rad: f64) -> f64 {
    rad.to_degrees()
}

/// Watt-hours to joules.
#[inline]
pub fn wh_to_j(energy_wh: f64) -> f64 {
    energy_wh * J_PER_WH
}

/// Joules to watt-hours.
#[inline]
pub fn j_to_wh(energy_j: f64) -> f64 {
    energy_j / J_PER_WH
}

/// Degrees Celsius to kelvin.
#[inline]
pub fn c_to_k(temp_c: f64) -> f64 {
    temp_c + KELVIN_AT_0_C
}

/// Kelvin to degrees Celsius.
#[inline]
pub fn k_to_c(temp_k: f64) -> f64 {
    temp_k - KELVIN_AT_0_C
}

/// Wraps an azimuth in radians into [0, 2π).
#[inline]
pub fn wrap_azimuth_rad(az_rad: f64) -> f64 {
    let tau = std::f64::consts::TAU;
    let a = az_rad % tau;
    if a < 0.0 {
        a + tau
    } else {
        a
    }
}

/// Hours after local midnight as a clock time `HH:MM`, rounded to the minute
/// (7.5 gives `07:30`). A value that is not finite is written as given.
pub fn clock_hhmm(hours: f64) -> String {
    if !hours.is_finite() {
        return format!("{hours} h");
    }
    let minutes = (hours * 60.0).round() as i64;
    let sign = if minutes < 0 { "-" } else { "" };
    let m = minutes.abs();
    format!("{sign}{:02}:{:02}", m / 60, m % 60)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn conversions_round_trip_and_match_definitions() {
        assert!((deg_to_rad(180.0) - std::f64::consts::PI).abs() < 1e-15);
        assert!((rad_to_deg(deg_to_rad(37.5)) - 37.5).abs() < 1e-12);
        assert_eq!(wh_to_j(1.0), 3600.0);
        assert!((j_to_wh(wh_to_j(12.5)) - 12.5).abs() < 1e-12);
        assert!((c_to_k(0.0) - 273.15).abs() < 1e-12);
        assert!((k_to_c(c_to_k(-40.0)) + 40.0).abs() < 1e-12);
    }

    #[test]
    fn azimuth_wraps_into_one_turn() {
        let tau = std::f64::consts::TAU;
        assert!((wrap_azimuth_rad(-0.5) - (tau - 0.5)).abs() < 1e-12);
        assert!((wrap_azimuth_rad(tau + 0.25) - 0.25).abs() < 1e-12);
        assert_eq!(wrap_azimuth_rad(0.0), 0.0);
    }

    #[test]
    fn clock_times_are_hours_and_minutes() {
        assert_eq!(clock_hhmm(7.5), "07:30");
        assert_eq!(clock_hhmm(8.0), "08:00");
        assert_eq!(clock_hhmm(0.0), "00:00");
        assert_eq!(clock_hhmm(13.999), "14:00");
        assert_eq!(clock_hhmm(9.25), "09:15");
    }
}
