//! Ambient air temperature at a site: monthly means with a diurnal swing, or a
//! measured series.
//!
//! # Method
//! Monthly climate: the mean of each month is placed at the middle of the month and
//! interpolated linearly, year round (December wraps to January); the day follows a
//! cosine of full amplitude swing/2 peaking at `peak_hour` local time:
//!
//! ```text
//! T(day, h) = Tmean(day) + swing(day)/2 * cos(2 pi (h - peak_hour) / 24)
//! ```
//!
//! A single cosine is the simplest diurnal shape (common practice in first-cut thermal
//! design); real days warm faster than they cool and are not symmetric, and the mean
//! of the daily minimum and maximum is not quite the daily mean. Peak default 15:00
//! local (common practice: the warmest hour is mid-afternoon). Weather (cold snaps,
//! cloud, wind) is not in it: use a measured series or margins for that.
//!
//! Measured series: `time,temp_c` rows with RFC 3339 times (e.g.
//! `2027-01-15T06:00:00Z`), interpolated linearly and held at the end values outside
//! the record (callers can ask [`AmbientSeries::covers`]).
//!
//! # Units
//! Temperatures degC, swing K (peak to peak), hours 0..24 local, time UTC.

use chrono::{DateTime, Datelike, Duration, Timelike, Utc};
use serde::Deserialize;

use super::error::{check_range, BatteryError};

/// Mean length of a month in days (365.25 / 12).
const MONTH_DAYS: f64 = 365.25 / 12.0;

/// Monthly means and diurnal swings of one site (a row of the mission file's site table).
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct MonthlyClimate {
    /// Mean air temperature of January..December, degC; each -90 to 60.
    pub mean_c: [f64; 12],
    /// Mean daily swing (maximum minus minimum) of January..December, K; each 0 to 40.
    pub diurnal_swing_c: [f64; 12],
    /// Local hour of the daily maximum; 0 to 24. Default 15.
    #[serde(default = "default_peak_hour")]
    pub peak_hour: f64,
}

fn default_peak_hour() -> f64 {
    15.0
}

impl MonthlyClimate {
    /// Checks every value against its range.
    pub fn validate(&self) -> Result<(), BatteryError> {
        let fix = "give climate normals for the site (monthly mean and daily range)";
        for (m, (&t, &s)) in self.mean_c.iter().zip(&self.diurnal_swing_c).enumerate() {
            check_range(
                "thermal",
                &format!("mean_c[{m}]"),
                t,
                (-90.0, 60.0),
                "-90 to 60 degC",
                fix,
            )?;
            let k = format!("diurnal_swing_c[{m}]");
            check_range("thermal", &k, s, (0.0, 40.0), "0 to 40 K", fix)?;
        }
        check_range(
            "thermal",
            "peak_hour",
            self.peak_hour,
            (0.0, 24.0),
            "0 to 24 h",
            fix,
        )?;
        Ok(())
    }

    /// Linear interpolation of a monthly table at `day` (0-based day of the year,
    /// fractional), with mid-month nodes and wrap-around.
    fn monthly(table: &[f64; 12], day: f64) -> f64 {
        let m = (day / MONTH_DAYS - 0.5).rem_euclid(12.0);
        let i = m.floor() as usize % 12;
        let t = m - m.floor();
        table[i] * (1.0 - t) + table[(i + 1) % 12] * t
    }

    /// Air temperature on `day` (0-based day of the year) at `local_hour`, degC.
    pub fn temp_c(&self, day: f64, local_hour: f64) -> f64 {
        let mean = Self::monthly(&self.mean_c, day);
        let swing = Self::monthly(&self.diurnal_swing_c, day);
        let phase = std::f64::consts::TAU * (local_hour - self.peak_hour) / 24.0;
        mean + 0.5 * swing * phase.cos()
    }
}

/// A measured temperature record, times strictly increasing.
#[derive(Debug, Clone, PartialEq)]
pub struct AmbientSeries {
    times: Vec<DateTime<Utc>>,
    temps_c: Vec<f64>,
}

impl AmbientSeries {
    /// Parses `time,temp_c` CSV text (header line required, `#` lines skipped).
    pub fn parse_csv(text: &str) -> Result<AmbientSeries, BatteryError> {
        let mut rows = text
            .lines()
            .enumerate()
            .filter(|(_, l)| !l.trim().is_empty() && !l.trim_start().starts_with('#'));
        let header_ok = rows
            .next()
            .is_some_and(|(_, l)| l.replace(' ', "").eq_ignore_ascii_case("time,temp_c"));
        if !header_ok {
            return Err(series_err(1, "the header is not `time,temp_c`".into()));
        }
        let (mut times, mut temps_c) = (Vec::new(), Vec::new());
        for (i, line) in rows {
            let (t, v) = parse_row(i + 1, line)?;
            if times.last().is_some_and(|&last| t <= last) {
                return Err(series_err(
                    i + 1,
                    "time is not after the previous row".into(),
                ));
            }
            times.push(t);
            temps_c.push(v);
        }
        if times.len() < 2 {
            return Err(series_err(1, "fewer than two rows".into()));
        }
        Ok(AmbientSeries { times, temps_c })
    }

    /// A record from instants and temperatures (e.g. a weather file's `temp_air_c`
    /// column); times strictly increasing, at least two, temperatures -150..150 degC.
    pub fn from_points(
        times: Vec<DateTime<Utc>>,
        temps_c: Vec<f64>,
    ) -> Result<AmbientSeries, BatteryError> {
        if times.len() != temps_c.len() || times.len() < 2 {
            return Err(series_err(1, "fewer than two temperatures".into()));
        }
        if let Some(i) = times.windows(2).position(|w| w[1] <= w[0]) {
            return Err(series_err(
                i + 2,
                "time is not after the previous row".into(),
            ));
        }
        if let Some(i) = temps_c
            .iter()
            .position(|t| !(t.is_finite() && (-150.0..=150.0).contains(t)))
        {
            return Err(series_err(
                i + 1,
                format!("temperature {} is not -150..150 degC", temps_c[i]),
            ));
        }
        Ok(AmbientSeries { times, temps_c })
    }

    /// Whether `t` lies within the record.
    pub fn covers(&self, t: DateTime<Utc>) -> bool {
        self.times[0] <= t && t <= self.times[self.times.len() - 1]
    }

    /// Temperature at `t`, linear between rows, held outside the record, degC.
    pub fn temp_c(&self, t: DateTime<Utc>) -> f64 {
        let k = self.times.partition_point(|&x| x <= t);
        if k == 0 {
            return self.temps_c[0];
        }
        if k >= self.times.len() {
            return self.temps_c[self.times.len() - 1];
        }
        let (t0, t1) = (self.times[k - 1], self.times[k]);
        let f = (t - t0).as_seconds_f64() / (t1 - t0).as_seconds_f64();
        self.temps_c[k - 1] + f * (self.temps_c[k] - self.temps_c[k - 1])
    }
}

fn parse_row(line_no: usize, line: &str) -> Result<(DateTime<Utc>, f64), BatteryError> {
    let mut cols = line.split(',').map(str::trim);
    let (Some(t), Some(v), None) = (cols.next(), cols.next(), cols.next()) else {
        return Err(series_err(line_no, "expected two columns".into()));
    };
    let t = DateTime::parse_from_rfc3339(t)
        .map_err(|e| series_err(line_no, format!("time {t:?} is not RFC 3339: {e}")))?;
    let v: f64 = v
        .parse()
        .ok()
        .filter(|x: &f64| x.is_finite() && (-150.0..=150.0).contains(x))
        .ok_or_else(|| series_err(line_no, format!("temperature {v:?} is not -150..150 degC")))?;
    Ok((t.with_timezone(&Utc), v))
}

fn series_err(line: usize, problem: String) -> BatteryError {
    BatteryError::Series {
        line,
        problem,
        fix: "write rows as `2027-01-15T06:00:00Z,-12.5` after a `time,temp_c` header",
    }
}

/// Where the ambient temperature comes from.
#[derive(Debug, Clone, PartialEq)]
pub enum Ambient {
    /// Monthly means and diurnal swing.
    Monthly(MonthlyClimate),
    /// A measured record.
    Series(AmbientSeries),
}

impl Ambient {
    /// Air temperature at `utc`, for a site whose local clock is `utc_offset_s` ahead
    /// of UTC (used by the monthly model only), degC.
    pub fn temp_c(&self, utc: DateTime<Utc>, utc_offset_s: i64) -> f64 {
        match self {
            Ambient::Series(s) => s.temp_c(utc),
            Ambient::Monthly(m) => {
                let local = (utc + Duration::seconds(utc_offset_s)).naive_utc();
                let hour = f64::from(local.num_seconds_from_midnight()) / 3600.0;
                m.temp_c(f64::from(local.ordinal0()) + hour / 24.0, hour)
            }
        }
    }
}
