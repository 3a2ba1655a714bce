//! Measured weather at any instant: the irradiance components of a parsed
//! [`WeatherSeries`] (see [`super::climate`]) between its records, for a simulation whose
//! steps fall between them.
//!
//! # Interpolation rule
//! - Records are read as instantaneous values at their time stamps (a file of interval
//!   means should label each record at the middle of its interval).
//! - GHI and the diffuse DHI are interpolated linearly in time between the two records
//!   around the instant; DHI is then clipped to 0..GHI. The beam is **not** interpolated
//!   as DNI: the horizontal beam B = GHI − DHI is, and DNI = B / cos z at the instant's
//!   own sun position. So DNI·cos z + DHI = GHI at every instant, DNI·cos z never
//!   exceeds GHI, and a sunrise between two hourly records does not get a DNI
//!   interpolated from a higher sun (which, divided by a small cos z, would exceed GHI).
//! - With the sun below the horizon (apparent zenith ≥ 90°) there is no irradiance.
//!   With cos z below [`MIN_COS_ZENITH`] (sun within about 3.7° of the horizon, where a
//!   beam/diffuse split is meaningless, as in the Erbs split) all of GHI is diffuse.
//! - Outside the record's span there is no value ([`irradiance_at`] returns `None`):
//!   nothing is extrapolated; callers check [`span`] before a run.
//!
//! Air temperature is not handled here: the file's `temp_air_c` column becomes a
//! [`crate::battery::ambient::AmbientSeries`] (linear between records).
//!
//! # Units
//! Irradiance W/m², angles radians, instants `DateTime<Utc>`.

use chrono::{DateTime, Utc};

use super::climate::WeatherSeries;
use super::decomposition::MIN_COS_ZENITH;
use super::irradiance::Components;

/// The first and last instants of the record.
pub fn span(series: &WeatherSeries) -> Option<(DateTime<Utc>, DateTime<Utc>)> {
    Some((series.records.first()?.time, series.records.last()?.time))
}

/// Whether the record covers `from` through `to`.
pub fn covers(series: &WeatherSeries, from: DateTime<Utc>, to: DateTime<Utc>) -> bool {
    span(series).is_some_and(|(a, b)| a <= from && to <= b)
}

/// GHI, DNI and DHI at `t` for a sun at apparent zenith `zenith_rad` (module doc);
/// `None` outside the record.
pub fn irradiance_at(
    series: &WeatherSeries,
    t: DateTime<Utc>,
    zenith_rad: f64,
) -> Option<Components> {
    let r = &series.records;
    let (first, last) = span(series)?;
    if t < first || t > last {
        return None;
    }
    let k = r.partition_point(|x| x.time <= t);
    let (ghi, dhi) = if k >= r.len() {
        let x = &r[r.len() - 1].irradiance;
        (x.ghi_w_m2, x.dhi_w_m2)
    } else {
        let (a, b) = (&r[k - 1], &r[k]);
        let f = (t - a.time).as_seconds_f64() / (b.time - a.time).as_seconds_f64();
        let lerp = |x: f64, y: f64| x + f * (y - x);
        (
            lerp(a.irradiance.ghi_w_m2, b.irradiance.ghi_w_m2),
            lerp(a.irradiance.dhi_w_m2, b.irradiance.dhi_w_m2),
        )
    };
    let cos_z = zenith_rad.cos();
    if zenith_rad >= std::f64::consts::FRAC_PI_2 || ghi.is_nan() || ghi <= 0.0 {
        return Some(Components {
            ghi_w_m2: 0.0,
            dni_w_m2: 0.0,
            dhi_w_m2: 0.0,
        });
    }
    let dhi = if cos_z < MIN_COS_ZENITH {
        ghi
    } else {
        dhi.clamp(0.0, ghi)
    };
    Some(Components {
        ghi_w_m2: ghi,
        dni_w_m2: if cos_z < MIN_COS_ZENITH {
            0.0
        } else {
            (ghi - dhi) / cos_z
        },
        dhi_w_m2: dhi,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sun::climate::{ComponentSource, WeatherRecord};

    fn rec(h: i64, ghi: f64, dni: f64, dhi: f64) -> WeatherRecord {
        WeatherRecord {
            time: DateTime::from_timestamp(h * 3600, 0).unwrap(),
            irradiance: Components {
                ghi_w_m2: ghi,
                dni_w_m2: dni,
                dhi_w_m2: dhi,
            },
            temp_air_c: None,
            source: ComponentSource::Measured,
        }
    }

    fn series() -> WeatherSeries {
        WeatherSeries {
            records: vec![
                rec(0, 0.0, 0.0, 0.0),
                rec(1, 400.0, 700.0, 100.0),
                rec(2, 600.0, 800.0, 120.0),
            ],
            median_step_s: 3600,
        }
    }

    #[test]
    fn linear_between_records_and_closed_with_the_beam() {
        let s = series();
        let t = DateTime::from_timestamp(5400, 0).unwrap();
        let z = 1.0_f64;
        let c = irradiance_at(&s, t, z).unwrap();
        assert!((c.ghi_w_m2 - 500.0).abs() < 1e-9);
        assert!((c.dhi_w_m2 - 110.0).abs() < 1e-9);
        assert!((c.dni_w_m2 * z.cos() + c.dhi_w_m2 - c.ghi_w_m2).abs() < 1e-9);
    }

    #[test]
    fn low_sun_is_all_diffuse_and_below_horizon_dark() {
        let s = series();
        let t = DateTime::from_timestamp(1800, 0).unwrap();
        let c = irradiance_at(&s, t, 88.5_f64.to_radians()).unwrap();
        assert_eq!((c.ghi_w_m2, c.dni_w_m2, c.dhi_w_m2), (200.0, 0.0, 200.0));
        let c = irradiance_at(&s, t, 90.5_f64.to_radians()).unwrap();
        assert_eq!(c.ghi_w_m2, 0.0);
        // At 80°: beam never exceeds GHI.
        let z = 80.0_f64.to_radians();
        let c = irradiance_at(&s, t, z).unwrap();
        assert!(c.dni_w_m2 * z.cos() <= c.ghi_w_m2 + 1e-9);
    }

    #[test]
    fn nothing_outside_the_span() {
        let s = series();
        let after = DateTime::from_timestamp(7201, 0).unwrap();
        assert!(irradiance_at(&s, after, 0.5).is_none());
        assert!(irradiance_at(&s, DateTime::from_timestamp(7200, 0).unwrap(), 0.5).is_some());
        assert!(covers(
            &s,
            DateTime::from_timestamp(0, 0).unwrap(),
            after - chrono::Duration::seconds(1)
        ));
        assert!(!covers(&s, DateTime::from_timestamp(0, 0).unwrap(), after));
    }
}
