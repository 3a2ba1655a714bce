//! Season dates: the equinoxes and solstices of a year, named for the site's hemisphere.
//!
//! # Method
//! An equinox or solstice is the instant the Sun's apparent geocentric longitude λ is a
//! multiple of 90° (0° March equinox, 90° June solstice, 180° September equinox, 270°
//! December solstice; the definition in Meeus, *Astronomical Algorithms*, 2nd ed., 1998,
//! ch. 27). λ comes from the NREL SPA chain already in [`crate::sun::position`]
//! (geocentric longitude with nutation and aberration); the instant is found by bisection
//! to one second within the month the event falls in. The UTC date of that instant is
//! the season's date.
//!
//! Names follow the site's hemisphere: at a northern site the June solstice is
//! "summer", at a southern site "winter"; "spring"/"autumn" likewise for the equinoxes.
//!
//! # Units
//! Degrees for longitudes; instants in UTC.

use chrono::{DateTime, NaiveDate, TimeZone, Utc};

use crate::sun::position::{geocentric, julian_day};

/// A named season day.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Season {
    /// "spring", "summer", "autumn", "winter", or a name given by the user.
    pub name: String,
    /// The UTC date.
    pub date: NaiveDate,
    /// The instant of the equinox or solstice, when the season is one.
    pub instant: Option<DateTime<Utc>>,
}

/// ΔT used only to place the events (TT − UT, seconds; a few seconds of error move an
/// event by as much, far below a day).
const DELTA_T_FOR_EVENTS_S: f64 = 70.0;

fn apparent_longitude_deg(t: DateTime<Utc>) -> f64 {
    let jde = julian_day(t) + DELTA_T_FOR_EVENTS_S / 86_400.0;
    geocentric(jde).apparent_longitude_deg
}

/// Signed difference λ(t) − target, wrapped into (−180°, 180°].
fn offset_deg(t: DateTime<Utc>, target_deg: f64) -> f64 {
    let d = (apparent_longitude_deg(t) - target_deg).rem_euclid(360.0);
    if d > 180.0 {
        d - 360.0
    } else {
        d
    }
}

/// The instant λ = `target_deg` within `month` of `year` (months 3, 6, 9, 12 for the
/// equinoxes and solstices), by bisection to one second.
pub fn solar_longitude_instant(year: i32, month: u32, target_deg: f64) -> Option<DateTime<Utc>> {
    let start = Utc.with_ymd_and_hms(year, month, 1, 0, 0, 0).single()?;
    let (ny, nm) = if month == 12 {
        (year + 1, 1)
    } else {
        (year, month + 1)
    };
    let end = Utc.with_ymd_and_hms(ny, nm, 1, 0, 0, 0).single()?;
    let (mut lo, mut hi) = (start.timestamp(), end.timestamp());
    let at = |s: i64| DateTime::from_timestamp(s, 0).expect("in range");
    if offset_deg(at(lo), target_deg) > 0.0 || offset_deg(at(hi), target_deg) < 0.0 {
        return None;
    }
    while hi - lo > 1 {
        let mid = lo + (hi - lo) / 2;
        if offset_deg(at(mid), target_deg) < 0.0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    Some(at(hi))
}

/// The four equinoxes and solstices of `year`, named for the hemisphere of `lat_deg`, in
/// calendar order.
pub fn default_seasons(year: i32, lat_deg: f64) -> Vec<Season> {
    let north = lat_deg >= 0.0;
    let names: [(&str, &str); 4] = [
        ("spring", "autumn"),
        ("summer", "winter"),
        ("autumn", "spring"),
        ("winter", "summer"),
    ];
    [(3, 0.0), (6, 90.0), (9, 180.0), (12, 270.0)]
        .iter()
        .zip(names)
        .filter_map(|(&(month, lambda), (n, s))| {
            let instant = solar_longitude_instant(year, month, lambda)?;
            Some(Season {
                name: if north { n } else { s }.to_string(),
                date: instant.date_naive(),
                instant: Some(instant),
            })
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Equinoxes and solstices of 2024 as published by the US Naval Observatory
    /// ("Earth's Seasons", 2024: Mar 20 03:06, Jun 20 20:51, Sep 22 12:44, Dec 21 09:20
    /// UTC; from memory, to the minute). Tolerance 2 minutes.
    #[test]
    fn events_of_2024_match_the_published_times() {
        let want = [
            (3, 0.0, "2024-03-20T03:06:00Z"),
            (6, 90.0, "2024-06-20T20:51:00Z"),
            (9, 180.0, "2024-09-22T12:44:00Z"),
            (12, 270.0, "2024-12-21T09:20:00Z"),
        ];
        for (month, lambda, at) in want {
            let got = solar_longitude_instant(2024, month, lambda).unwrap();
            let want: DateTime<Utc> = at.parse().unwrap();
            let err = (got - want).num_seconds().abs();
            assert!(err <= 120, "{month}: {got} vs {want}");
        }
    }

    #[test]
    fn names_follow_the_hemisphere() {
        let north = default_seasons(2031, 69.0);
        let south = default_seasons(2031, -40.0);
        assert_eq!(
            north.iter().map(|s| s.name.as_str()).collect::<Vec<_>>(),
            ["spring", "summer", "autumn", "winter"]
        );
        assert_eq!(south[1].name, "winter");
        assert_eq!(north[1].date, south[1].date);
        assert_eq!(north[1].date.format("%m-%d").to_string(), "06-21");
    }
}
