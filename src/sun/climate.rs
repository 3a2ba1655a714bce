//! Weather input: measured or typical weather as CSV text, and monthly clearness indices
//! turned into a day-by-day irradiance profile. Pure parsers and generators: the caller
//! reads the files and passes the sun position in as a closure.
//!
//! # Measured weather (CSV text)
//! Header line with named columns (any order, case-insensitive); `#` lines and blank
//! lines are skipped:
//!
//! ```text
//! time,ghi_w_m2[,dni_w_m2][,dhi_w_m2][,temp_air_c]
//! 2031-06-21T10:00:00+02:00,612.5,701.0,118.2,14.1
//! ```
//!
//! - `time`: RFC 3339 with an offset, or naive local time (`2031-06-21 10:00[:00]`, `T`
//!   or space) when the caller states the UTC offset ([`WeatherCsvOptions::utc_offset_s`]).
//! - `ghi_w_m2` is required. With DNI and DHI both given they are kept as measured;
//!   with one of them, the other closes GHI = DHI + DNI·cos z; with neither, GHI is
//!   split by Erbs ([`super::decomposition`]). The component source is kept per record.
//! - Any time step (1 min to 1 h or more), possibly irregular. A gap longer than
//!   [`WeatherCsvOptions::max_gap_factor`] × the median step is an error naming the line
//!   and the gap, unless the caller asks for [`GapFill::Linear`], which inserts records
//!   at the median step by linear interpolation for gaps up to `max_steps` steps, or
//!   [`GapFill::ClearSkyIndex`], which carries the clear-sky index across the gap.
//!   With a fill asked for, a row with an empty GHI cell counts as missing
//!   (its gap is then filled or refused like any other; at the start or end of the
//!   record it is dropped, shortening the record). Nothing is ever filled with zeros.
//! - Irradiance between −[`WeatherCsvOptions::negative_tolerance_w_m2`] and 0 reads as
//!   0 (thermopile pyranometers read a few W/m² below zero at night: common practice to
//!   clip); below that it is an error. Malformed numbers, times that do not increase,
//!   and missing required cells are errors with line and column.
//!
//! # Monthly clearness indices
//! Twelve monthly mean clearness indices Kt = H̄ / H̄0 (monthly mean daily global
//! horizontal irradiation over the extraterrestrial one) give each day's total and,
//! through the ratio of hourly to daily global irradiation, an instantaneous profile.
//!
//! Sources:
//! - Daily extraterrestrial irradiation on a horizontal plane: J. A. Duffie and W. A.
//!   Beckman, *Solar Engineering of Thermal Processes*, 4th ed., Wiley 2013, eq. 1.10.3,
//!   with the sunset hour angle of eq. 1.6.10:
//!   `H0 = (24/π)·E0·(cos φ cos δ sin ωs + ωs sin φ sin δ)`, `cos ωs = −tan φ tan δ`
//!   (clipped: ωs = 0 in polar night, π in midnight sun). E0 is the day's
//!   extraterrestrial normal irradiance; with E0 in W/m², H0 is in Wh/m².
//! - Ratio of diffuse hourly to daily irradiation: B. Y. H. Liu and R. C. Jordan, "The
//!   interrelationship and characteristic distribution of direct, diffuse and total
//!   solar radiation", Solar Energy 4(3), 1-19, 1960; as written by Duffie and Beckman
//!   eq. 2.13.1: `rd = (π/24)·(cos ω − cos ωs) / (sin ωs − ωs cos ωs)` (per hour).
//! - Ratio of global hourly to daily irradiation: M. Collares-Pereira and A. Rabl, "The
//!   average distribution of solar radiation — correlations between diffuse and
//!   hemispherical and between daily and hourly insolation values", Solar Energy 22(2),
//!   155-164, 1979; Duffie and Beckman eq. 2.13.2: `rt = rd·(a + b cos ω)`,
//!   `a = 0.409 + 0.5016 sin(ωs − π/3)`, `b = 0.6609 − 0.4767 sin(ωs − π/3)`.
//!
//! The instantaneous GHI at hour angle ω is `Kt·H0·rt(ω)` (rt per hour, so Wh/m² per
//! hour = W/m²), zero for |ω| ≥ ωs. The published fit integrates over the day to
//! `a + b (ωs − sin ωs cos ωs) / (2 (sin ωs − ωs cos ωs))`, within about 1 % of one for
//! ordinary days; [`ProfileScaling::ExactDailyTotal`] (the default) divides by that
//! closed-form integral so that each day's profile sums to Kt·H0, which is what the
//! monthly data say. Beam and diffuse come from the Erbs split of the instantaneous GHI.
//! Each instant takes the Kt of its UTC calendar month, and δ, E0 and ω of its own sun
//! position (δ and E0 change by well under 1 % within a day, so the day total still
//! closes; see tests/sun_climate.rs for the measured agreement).
//!
//! Validity and what is left out: the ratio was fitted to long-term averages at US sites
//! (Collares-Pereira and Rabl 1979); it gives an average day, smooth and symmetric about
//! solar noon, with no cloud passages, no day-to-day spread and no morning/afternoon
//! asymmetry. Near polar night and midnight sun (ωs near 0 or π) the fit is outside its
//! data and the profile is only indicative. The horizon of the site is not applied here
//! (terrain shading is [`super::shading`]'s job). Both gap fills invent a smooth sky
//! for the gap: cloud passages inside it are lost, so keep `max_steps` short.
//!
//! # Units
//! Irradiance W/m², daily irradiation Wh/m², angles radians, temperature °C, offsets
//! and steps seconds, clearness indices dimensionless; instants `DateTime<Utc>`.

use std::f64::consts::PI;

use chrono::{DateTime, Datelike, Duration, FixedOffset, NaiveDateTime, Utc};

use super::decomposition::erbs;
use super::error::SunError;
use super::irradiance::{extraterrestrial_w_m2, Components};
use super::position::SunPosition;

/// Where a record's irradiance components came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ComponentSource {
    /// GHI, DNI and DHI as given in the input.
    Measured,
    /// One of DNI/DHI given; the other closes GHI = DHI + DNI·cos z.
    Closed,
    /// GHI given (or generated); DNI and DHI from the Erbs split.
    ErbsSplit,
    /// Inserted by linear interpolation across a gap.
    Filled,
}

/// One instant of weather.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WeatherRecord {
    /// The instant.
    pub time: DateTime<Utc>,
    /// Global horizontal, direct normal and diffuse horizontal irradiance, W/m².
    pub irradiance: Components,
    /// Air temperature, °C, where given.
    pub temp_air_c: Option<f64>,
    /// Where the components came from.
    pub source: ComponentSource,
}

/// How gaps in a weather record are treated.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum GapFill {
    /// Any gap over the allowed length is an error (the default: nothing is invented).
    #[default]
    Refuse,
    /// Gaps up to `max_steps` median steps are filled by linear interpolation.
    Linear {
        /// Longest gap filled, in median steps.
        max_steps: usize,
    },
    /// Gaps up to `max_steps` median steps are filled with the clear-sky index
    /// (GHI over clear-sky GHI) interpolated linearly between the gap's ends, times the
    /// clear-sky GHI inside the gap; DNI and DHI of filled records by Erbs. Needs
    /// [`parse_weather_csv_with_clear_sky`]. An end whose clear-sky GHI is below
    /// [`MIN_CLEAR_SKY_FOR_INDEX_W_M2`] takes the other end's index; with both ends
    /// that dark the gap is an error (there is no index to carry).
    ClearSkyIndex {
        /// Longest gap filled, in median steps.
        max_steps: usize,
    },
}

/// Smallest clear-sky GHI at which a clear-sky index is formed, W/m². Below it (sun
/// within a few degrees of the horizon) the index is dominated by sensor and model
/// error near sunrise and sunset (common practice; the value is sunward's choice).
pub const MIN_CLEAR_SKY_FOR_INDEX_W_M2: f64 = 20.0;

/// Options of [`parse_weather_csv`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WeatherCsvOptions {
    /// UTC offset of naive local times, seconds east of UTC (`None`: every time must
    /// carry its own offset). Default `None`, so a missing offset is never guessed.
    pub utc_offset_s: Option<i32>,
    /// Largest step allowed without a fill, as a multiple of the median step.
    /// Default 2.0: one missing record in a regular series is already a gap.
    pub max_gap_factor: f64,
    /// Irradiance down to −this reads as 0, W/m². Default 10 W/m²: night offsets of
    /// thermopile pyranometers are a few W/m² (common practice; from memory, ISO 9060
    /// class limits on zero offset are of this order).
    pub negative_tolerance_w_m2: f64,
    /// What to do with gaps. Default [`GapFill::Refuse`].
    pub gap_fill: GapFill,
}

impl Default for WeatherCsvOptions {
    fn default() -> Self {
        WeatherCsvOptions {
            utc_offset_s: None,
            max_gap_factor: 2.0,
            negative_tolerance_w_m2: 10.0,
            gap_fill: GapFill::Refuse,
        }
    }
}

/// A parsed weather record with strictly increasing times.
#[derive(Debug, Clone, PartialEq)]
pub struct WeatherSeries {
    /// The records in time order (filled ones included, marked by their source).
    pub records: Vec<WeatherRecord>,
    /// Median time step of the input, seconds.
    pub median_step_s: i64,
}

fn input_err(line: usize, detail: String, fix: impl Into<String>) -> SunError {
    SunError::Input {
        line,
        detail,
        fix: fix.into(),
    }
}

/// Column positions found in the header.
#[derive(Debug, Clone, Copy)]
struct Columns {
    time: usize,
    ghi: usize,
    dni: Option<usize>,
    dhi: Option<usize>,
    temp: Option<usize>,
    count: usize,
}

const COLUMN_FIX: &str =
    "name the columns time,ghi_w_m2 and optionally dni_w_m2,dhi_w_m2,temp_air_c";

fn parse_header(line_no: usize, line: &str) -> Result<Columns, SunError> {
    let names: Vec<String> = line.split(',').map(|c| c.trim().to_lowercase()).collect();
    let find = |n: &str| names.iter().position(|c| c == n);
    let need = |n: &str| {
        find(n).ok_or_else(|| {
            input_err(
                line_no,
                format!(
                    "the header has no `{n}` column (found: {})",
                    names.join(",")
                ),
                COLUMN_FIX,
            )
        })
    };
    Ok(Columns {
        time: need("time")?,
        ghi: need("ghi_w_m2")?,
        dni: find("dni_w_m2"),
        dhi: find("dhi_w_m2"),
        temp: find("temp_air_c"),
        count: names.len(),
    })
}

/// One data row before components are completed.
#[derive(Debug, Clone, Copy)]
struct RawRow {
    line: usize,
    time: DateTime<Utc>,
    ghi: f64,
    dni: Option<f64>,
    dhi: Option<f64>,
    temp: Option<f64>,
}

fn parse_time(
    line: usize,
    col: usize,
    s: &str,
    offset_s: Option<i32>,
) -> Result<DateTime<Utc>, SunError> {
    if let Ok(t) = DateTime::parse_from_rfc3339(s) {
        return Ok(t.with_timezone(&Utc));
    }
    let naive = [
        "%Y-%m-%dT%H:%M:%S",
        "%Y-%m-%d %H:%M:%S",
        "%Y-%m-%dT%H:%M",
        "%Y-%m-%d %H:%M",
    ]
    .iter()
    .find_map(|f| NaiveDateTime::parse_from_str(s, f).ok());
    let bad = |why: &str, fix: &str| {
        input_err(
            line,
            format!("column {col} (time): {s:?} {why}"),
            fix.to_string(),
        )
    };
    let Some(naive) = naive else {
        return Err(bad(
            "is not a time",
            "write RFC 3339 such as 2031-06-21T10:00:00+02:00, or 2031-06-21 10:00 with a stated UTC offset",
        ));
    };
    let Some(off) = offset_s.and_then(FixedOffset::east_opt) else {
        return Err(bad(
            "has no UTC offset",
            "add the offset to each time (2031-06-21T10:00:00+02:00) or state the site's UTC offset",
        ));
    };
    match naive.and_local_timezone(off) {
        chrono::LocalResult::Single(t) => Ok(t.with_timezone(&Utc)),
        _ => Err(bad("cannot be placed in time", "check the date")),
    }
}

fn parse_value(
    line: usize,
    col: usize,
    name: &str,
    s: &str,
    neg_tol: f64,
    irradiance: bool,
) -> Result<Option<f64>, SunError> {
    if s.is_empty() {
        return Ok(None);
    }
    let v: f64 = s
        .parse()
        .ok()
        .filter(|v: &f64| v.is_finite())
        .ok_or_else(|| {
            input_err(
                line,
                format!("column {col} ({name}): {s:?} is not a number"),
                "write a plain decimal number such as 512.3; leave the cell empty when missing",
            )
        })?;
    if irradiance && v < -neg_tol {
        return Err(input_err(
            line,
            format!(
                "column {col} ({name}): {v} W/m2 is below -{neg_tol} W/m2, the most negative reading accepted"
            ),
            "check the sensor's zero offset and units; irradiance cannot be negative",
        ));
    }
    if irradiance && v > MAX_IRRADIANCE_W_M2 {
        return Err(input_err(
            line,
            format!(
                "column {col} ({name}): {v} W/m2 is above {MAX_IRRADIANCE_W_M2} W/m2, more \
                 than sunlight at the ground can give"
            ),
            "check the units: the columns take W/m2 (not kW/m2 scaled up, nor Wh/m2 summed \
             over a longer interval)",
        ));
    }
    if !irradiance && !(AIR_TEMP_RANGE_C.0..=AIR_TEMP_RANGE_C.1).contains(&v) {
        return Err(input_err(
            line,
            format!(
                "column {col} ({name}): {v} °C is outside {} to {} °C",
                AIR_TEMP_RANGE_C.0, AIR_TEMP_RANGE_C.1
            ),
            "check the units: the column takes degrees Celsius (not kelvin or Fahrenheit)",
        ));
    }
    Ok(Some(if irradiance { v.max(0.0) } else { v }))
}

/// Largest irradiance accepted in a weather file, W/m². The solar constant is about
/// 1361 W/m² (Kopp and Lean, "A new, lower value of total solar irradiance", GRL 38,
/// 2011); cloud edges can lift ground-level readings to roughly 1.4 times it for
/// seconds (from memory), so 2000 W/m² leaves room for real records and refuses unit
/// mistakes.
pub const MAX_IRRADIANCE_W_M2: f64 = 2000.0;

/// Air temperatures accepted in a weather file, °C: beyond the records measured at the
/// ground (−89.2 °C at Vostok, 1983; 56.7 °C at Furnace Creek, 1913; from memory) with a
/// margin.
pub const AIR_TEMP_RANGE_C: (f64, f64) = (-100.0, 70.0);

fn cell<'a>(cells: &[&'a str], i: usize) -> &'a str {
    cells.get(i).copied().unwrap_or("")
}

fn parse_row(
    line: usize,
    text: &str,
    c: &Columns,
    o: &WeatherCsvOptions,
) -> Result<Option<RawRow>, SunError> {
    let cells: Vec<&str> = text.split(',').map(str::trim).collect();
    if cells.len() != c.count {
        return Err(input_err(
            line,
            format!("{} columns, the header has {}", cells.len(), c.count),
            "give every row as many comma-separated cells as the header",
        ));
    }
    let time = parse_time(line, c.time + 1, cell(&cells, c.time), o.utc_offset_s)?;
    let tol = o.negative_tolerance_w_m2;
    let opt = |i: Option<usize>, name: &str, irr: bool| match i {
        Some(i) => parse_value(line, i + 1, name, cell(&cells, i), tol, irr),
        None => Ok(None),
    };
    let ghi = opt(Some(c.ghi), "ghi_w_m2", true)?;
    let Some(ghi) = ghi else {
        if o.gap_fill != GapFill::Refuse {
            return Ok(None);
        }
        return Err(input_err(
            line,
            format!("column {} (ghi_w_m2): the value is missing", c.ghi + 1),
            format!(
                "give the value, or delete the row if the rows either side stay within {} x \
                 the median step of each other (nothing is filled in)",
                o.max_gap_factor
            ),
        ));
    };
    Ok(Some(RawRow {
        line,
        time,
        ghi,
        dni: opt(c.dni, "dni_w_m2", true)?,
        dhi: opt(c.dhi, "dhi_w_m2", true)?,
        temp: opt(c.temp, "temp_air_c", false)?,
    }))
}

fn is_content(l: &str) -> bool {
    let t = l.trim();
    !t.is_empty() && !t.starts_with('#')
}

fn parse_rows(text: &str, o: &WeatherCsvOptions) -> Result<Vec<RawRow>, SunError> {
    let mut lines = text
        .lines()
        .enumerate()
        .map(|(i, l)| (i + 1, l))
        .filter(|(_, l)| is_content(l));
    let Some((hl, header)) = lines.next() else {
        return Err(input_err(1, "the text is empty".into(), COLUMN_FIX));
    };
    let cols = parse_header(hl, header)?;
    let mut rows: Vec<RawRow> = Vec::new();
    for (n, l) in lines {
        let Some(r) = parse_row(n, l, &cols, o)? else {
            continue;
        };
        if let Some(p) = rows.last() {
            if r.time <= p.time {
                return Err(input_err(
                    n,
                    format!(
                        "column {} (time): {} is not after line {} ({})",
                        cols.time + 1,
                        r.time.to_rfc3339(),
                        p.line,
                        p.time.to_rfc3339()
                    ),
                    "sort the rows by time and remove duplicates",
                ));
            }
        }
        rows.push(r);
    }
    if rows.len() < 2 {
        return Err(input_err(
            hl,
            format!("{} data rows; at least two are needed", rows.len()),
            "give a record with at least two times",
        ));
    }
    Ok(rows)
}

fn median_step_s(rows: &[RawRow]) -> i64 {
    let mut steps: Vec<i64> = rows
        .windows(2)
        .map(|w| (w[1].time - w[0].time).num_seconds())
        .collect();
    steps.sort_unstable();
    steps[steps.len() / 2]
}

/// Writes a duration as "3 h 10 min", "45 min" or "30 s".
pub fn format_duration_s(s: i64) -> String {
    let (h, m, sec) = (s / 3600, (s % 3600) / 60, s % 60);
    let mut parts = Vec::new();
    if h > 0 {
        parts.push(format!("{h} h"));
    }
    if m > 0 {
        parts.push(format!("{m} min"));
    }
    if sec > 0 || parts.is_empty() {
        parts.push(format!("{sec} s"));
    }
    parts.join(" ")
}

fn lerp(a: f64, b: f64, f: f64) -> f64 {
    a + f * (b - a)
}

fn lerp_opt(a: Option<f64>, b: Option<f64>, f: f64) -> Option<f64> {
    Some(lerp(a?, b?, f))
}

/// Rows interpolated strictly inside (a, b) at the median step.
fn fill_between(a: &RawRow, b: &RawRow, step_s: i64) -> Vec<RawRow> {
    let span = (b.time - a.time).num_seconds();
    let n = (span + step_s / 2) / step_s;
    (1..n)
        .map(|k| {
            let f = k as f64 / n as f64;
            RawRow {
                line: 0,
                time: a.time + Duration::milliseconds((span as f64 * f * 1000.0).round() as i64),
                ghi: lerp(a.ghi, b.ghi, f),
                dni: lerp_opt(a.dni, b.dni, f),
                dhi: lerp_opt(a.dhi, b.dhi, f),
                temp: lerp_opt(a.temp, b.temp, f),
            }
        })
        .collect()
}

/// Clear-sky GHI at an instant, W/m², when the caller gave one.
type ClearSky<'a> = Option<&'a dyn Fn(DateTime<Utc>) -> f64>;

/// Clear-sky index at one end of a gap, if the sky there is bright enough.
fn end_index(r: &RawRow, cs: &dyn Fn(DateTime<Utc>) -> f64) -> Option<f64> {
    let c = cs(r.time);
    (c >= MIN_CLEAR_SKY_FOR_INDEX_W_M2).then(|| r.ghi / c)
}

/// Rows inside (a, b) from the interpolated clear-sky index (see [`GapFill`]).
fn fill_by_index(
    a: &RawRow,
    b: &RawRow,
    step_s: i64,
    cs: &dyn Fn(DateTime<Utc>) -> f64,
) -> Option<Vec<RawRow>> {
    let (ka, kb) = match (end_index(a, cs), end_index(b, cs)) {
        (None, None) => return None,
        (ka, kb) => (ka.or(kb)?, kb.or(ka)?),
    };
    let span_s = (b.time - a.time).num_seconds() as f64;
    let rows = fill_between(a, b, step_s)
        .into_iter()
        .map(|r| {
            let f = (r.time - a.time).num_milliseconds() as f64 / 1000.0 / span_s;
            RawRow {
                ghi: lerp(ka, kb, f) * cs(r.time).max(0.0),
                dni: None,
                dhi: None,
                ..r
            }
        })
        .collect();
    Some(rows)
}

fn fill_gap(
    a: &RawRow,
    b: &RawRow,
    step_s: i64,
    o: &WeatherCsvOptions,
    clear_sky: ClearSky<'_>,
) -> Result<Vec<RawRow>, SunError> {
    let gap = (b.time - a.time).num_seconds();
    let fits = |max_steps: usize| gap <= (max_steps as i64 + 1) * step_s;
    match (o.gap_fill, clear_sky) {
        (GapFill::Linear { max_steps }, _) if fits(max_steps) => Ok(fill_between(a, b, step_s)),
        (GapFill::ClearSkyIndex { max_steps }, Some(cs)) if fits(max_steps) => {
            fill_by_index(a, b, step_s, cs).ok_or_else(|| {
                input_err(
                    a.line,
                    format!(
                        "gap of {} after this line: the clear-sky index is undefined at both ends (sun near or below the horizon)",
                        format_duration_s(gap)
                    ),
                    "give the missing records, or use the linear fill for gaps in darkness",
                )
            })
        }
        (fill, _) => Err(gap_err(a, gap, step_s, o.max_gap_factor, fill)),
    }
}

fn check_gaps(
    rows: Vec<RawRow>,
    step_s: i64,
    o: &WeatherCsvOptions,
    clear_sky: ClearSky<'_>,
) -> Result<Vec<RawRow>, SunError> {
    let allowed_s = (o.max_gap_factor * step_s as f64).round() as i64;
    let mut out = Vec::with_capacity(rows.len());
    for w in rows.windows(2) {
        out.push(w[0]);
        let gap = (w[1].time - w[0].time).num_seconds();
        if gap <= allowed_s {
            continue;
        }
        out.extend(fill_gap(&w[0], &w[1], step_s, o, clear_sky)?);
    }
    out.push(rows[rows.len() - 1]);
    Ok(out)
}

fn gap_err(a: &RawRow, gap_s: i64, step_s: i64, factor: f64, fill: GapFill) -> SunError {
    let fix = match fill {
        GapFill::Refuse => "give the missing records (nothing is filled in), or keep only \
                            the records on one side of the gap if every season's run lies \
                            there"
            .to_string(),
        GapFill::Linear { max_steps } | GapFill::ClearSkyIndex { max_steps } => {
            format!("give the missing records; the fill covers gaps up to {max_steps} steps")
        }
    };
    input_err(
        a.line,
        format!(
            "gap of {} after this line, the largest allowed is {factor} x the median step ({})",
            format_duration_s(gap_s),
            format_duration_s(step_s)
        ),
        fix,
    )
}

/// Completes the components of one row (module doc): measured, closed or Erbs.
fn complete(r: &RawRow, sun: &SunPosition) -> WeatherRecord {
    let cos_z = sun.zenith_rad.cos();
    let e0 = extraterrestrial_w_m2(sun.earth_sun_distance_au);
    let (irradiance, source) = match (r.dni, r.dhi) {
        (Some(dni), Some(dhi)) => (comp(r.ghi, dni, dhi), ComponentSource::Measured),
        (Some(dni), None) => (
            comp(r.ghi, dni, (r.ghi - dni * cos_z.max(0.0)).max(0.0)),
            ComponentSource::Closed,
        ),
        (None, Some(dhi)) => (
            comp(r.ghi, beam_from(r.ghi - dhi, cos_z), dhi),
            ComponentSource::Closed,
        ),
        (None, None) => (erbs(r.ghi, sun.zenith_rad, e0), ComponentSource::ErbsSplit),
    };
    let source = if r.line == 0 {
        ComponentSource::Filled
    } else {
        source
    };
    WeatherRecord {
        time: r.time,
        irradiance,
        temp_air_c: r.temp,
        source,
    }
}

fn comp(ghi: f64, dni: f64, dhi: f64) -> Components {
    Components {
        ghi_w_m2: ghi,
        dni_w_m2: dni,
        dhi_w_m2: dhi,
    }
}

/// DNI from the horizontal beam; none with the sun within ~3° of the horizon (the same
/// guard as the Erbs split, [`super::decomposition::MIN_COS_ZENITH`]).
fn beam_from(horizontal_beam_w_m2: f64, cos_z: f64) -> f64 {
    if cos_z < super::decomposition::MIN_COS_ZENITH {
        0.0
    } else {
        horizontal_beam_w_m2.max(0.0) / cos_z
    }
}

/// Parses weather CSV text (module doc); `sun` gives the sun position at an instant
/// (used where components must be derived).
pub fn parse_weather_csv(
    text: &str,
    options: &WeatherCsvOptions,
    sun: impl Fn(DateTime<Utc>) -> SunPosition,
) -> Result<WeatherSeries, SunError> {
    parse_with(text, options, &sun, None)
}

/// As [`parse_weather_csv`], with `clear_sky_ghi` giving the site's clear-sky GHI at an
/// instant (W/m²) for [`GapFill::ClearSkyIndex`].
pub fn parse_weather_csv_with_clear_sky(
    text: &str,
    options: &WeatherCsvOptions,
    sun: impl Fn(DateTime<Utc>) -> SunPosition,
    clear_sky_ghi: impl Fn(DateTime<Utc>) -> f64,
) -> Result<WeatherSeries, SunError> {
    parse_with(text, options, &sun, Some(&clear_sky_ghi))
}

fn parse_with(
    text: &str,
    options: &WeatherCsvOptions,
    sun: &dyn Fn(DateTime<Utc>) -> SunPosition,
    clear_sky: ClearSky<'_>,
) -> Result<WeatherSeries, SunError> {
    check_options(options)?;
    if matches!(options.gap_fill, GapFill::ClearSkyIndex { .. }) && clear_sky.is_none() {
        return Err(SunError::Parameter {
            name: "gap_fill",
            value: "clear-sky index".into(),
            expected: "a clear-sky GHI for the site",
            fix: "call parse_weather_csv_with_clear_sky, or use the linear fill",
        });
    }
    let rows = parse_rows(text, options)?;
    let step_s = median_step_s(&rows).max(1);
    let rows = check_gaps(rows, step_s, options, clear_sky)?;
    let records = rows.iter().map(|r| complete(r, &sun(r.time))).collect();
    Ok(WeatherSeries {
        records,
        median_step_s: step_s,
    })
}

fn check_options(o: &WeatherCsvOptions) -> Result<(), SunError> {
    use super::error::check_range;
    check_range(
        "max_gap_factor",
        o.max_gap_factor,
        1.0,
        1.0e6,
        "a factor of at least 1",
        "2 allows one step of jitter but no missing record",
    )?;
    check_range(
        "negative_tolerance_w_m2",
        o.negative_tolerance_w_m2,
        0.0,
        100.0,
        "0 to 100 W/m2",
        "10 W/m2 covers night offsets of thermopile pyranometers",
    )?;
    Ok(())
}

// ---------------------------------------------------------------------------------------
// Monthly clearness indices

/// Twelve monthly mean clearness indices Kt, January first.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MonthlyClearness {
    kt: [f64; 12],
}

/// Largest monthly Kt accepted. Monthly means above about 0.8 are not observed on
/// Earth's surface (common practice; the clearest deserts reach roughly 0.75).
pub const MAX_MONTHLY_KT: f64 = 0.85;

impl MonthlyClearness {
    /// Checks each value is in (0, [`MAX_MONTHLY_KT`]].
    pub fn new(kt: [f64; 12]) -> Result<MonthlyClearness, SunError> {
        for (i, &k) in kt.iter().enumerate() {
            if !(k.is_finite() && k > 0.0 && k <= MAX_MONTHLY_KT) {
                return Err(input_err(
                    i + 1,
                    format!("month {}: Kt = {k} is outside (0, {MAX_MONTHLY_KT}]", i + 1),
                    "give the monthly mean daily GHI over the extraterrestrial daily irradiation, e.g. 0.55",
                ));
            }
        }
        Ok(MonthlyClearness { kt })
    }

    /// Kt of `month` (1-12; out-of-range months are clamped).
    pub fn for_month(&self, month: u32) -> f64 {
        self.kt[(month.clamp(1, 12) - 1) as usize]
    }
}

/// Parses `month,kt` CSV text: a header, then twelve rows for months 1 to 12 in order.
pub fn parse_monthly_clearness(text: &str) -> Result<MonthlyClearness, SunError> {
    let mut lines = text
        .lines()
        .enumerate()
        .map(|(i, l)| (i + 1, l))
        .filter(|(_, l)| is_content(l));
    let header_ok = lines
        .next()
        .is_some_and(|(_, l)| l.replace(' ', "").eq_ignore_ascii_case("month,kt"));
    if !header_ok {
        return Err(input_err(
            1,
            "the header is not `month,kt`".into(),
            "start with the line month,kt",
        ));
    }
    let mut kt = [0.0; 12];
    let mut count = 0;
    for (n, l) in lines {
        if count == 12 {
            return Err(input_err(
                n,
                "more than twelve months".into(),
                "give one row per month",
            ));
        }
        kt[count] = parse_month_row(n, l, count + 1)?;
        count += 1;
    }
    if count < 12 {
        return Err(input_err(
            text.lines().count().max(1),
            format!("{count} months given, twelve are needed"),
            "give one row per month, 1 to 12",
        ));
    }
    MonthlyClearness::new(kt)
}

fn parse_month_row(n: usize, l: &str, want: usize) -> Result<f64, SunError> {
    let cells: Vec<&str> = l.split(',').map(str::trim).collect();
    if cells.len() != 2 || cells[0] != want.to_string() {
        return Err(input_err(
            n,
            format!("expected `{want},<kt>`, found {l:?}"),
            "give months 1 to 12 in order, one per row",
        ));
    }
    let kt: f64 = cells[1].parse().map_err(|_| {
        input_err(
            n,
            format!("column 2 (kt): {:?} is not a number", cells[1]),
            "write a decimal such as 0.55",
        )
    })?;
    if !(kt.is_finite() && kt > 0.0 && kt <= MAX_MONTHLY_KT) {
        return Err(input_err(
            n,
            format!("column 2 (kt): {kt} is outside (0, {MAX_MONTHLY_KT}]"),
            "give the monthly mean clearness index, e.g. 0.55",
        ));
    }
    Ok(kt)
}

/// Sunset hour angle ωs for latitude φ and declination δ (Duffie and Beckman eq. 1.6.10),
/// radians in [0, π]: 0 in polar night, π in midnight sun.
pub fn sunset_hour_angle_rad(lat_rad: f64, declination_rad: f64) -> f64 {
    (-lat_rad.tan() * declination_rad.tan())
        .clamp(-1.0, 1.0)
        .acos()
}

/// Daily extraterrestrial irradiation on a horizontal plane, Wh/m² (Duffie and Beckman
/// eq. 1.10.3), for extraterrestrial normal irradiance `e0_w_m2`.
pub fn daily_extraterrestrial_wh_m2(lat_rad: f64, declination_rad: f64, e0_w_m2: f64) -> f64 {
    let ws = sunset_hour_angle_rad(lat_rad, declination_rad);
    let (sp, cp) = lat_rad.sin_cos();
    let (sd, cd) = declination_rad.sin_cos();
    (24.0 / PI * e0_w_m2 * (cp * cd * ws.sin() + ws * sp * sd)).max(0.0)
}

/// Liu-Jordan ratio of hourly to daily diffuse irradiation at hour angle ω, per hour
/// (Duffie and Beckman eq. 2.13.1); 0 outside the day.
pub fn liu_jordan_ratio(hour_angle_rad: f64, sunset_rad: f64) -> f64 {
    let denom = sunset_rad.sin() - sunset_rad * sunset_rad.cos();
    if hour_angle_rad.abs() >= sunset_rad || denom <= 0.0 {
        return 0.0;
    }
    PI / 24.0 * (hour_angle_rad.cos() - sunset_rad.cos()) / denom
}

/// Collares-Pereira and Rabl coefficients (a, b) for sunset hour angle ωs.
pub fn collares_pereira_rabl_ab(sunset_rad: f64) -> (f64, f64) {
    let s = (sunset_rad - PI / 3.0).sin();
    (0.409 + 0.5016 * s, 0.6609 - 0.4767 * s)
}

/// Collares-Pereira and Rabl ratio of hourly to daily global irradiation at hour angle
/// ω, per hour (Duffie and Beckman eq. 2.13.2); 0 outside the day.
pub fn collares_pereira_rabl_ratio(hour_angle_rad: f64, sunset_rad: f64) -> f64 {
    let (a, b) = collares_pereira_rabl_ab(sunset_rad);
    liu_jordan_ratio(hour_angle_rad, sunset_rad) * (a + b * hour_angle_rad.cos())
}

/// The closed-form day integral of the Collares-Pereira and Rabl ratio (module doc):
/// `a + b (ωs − sin ωs cos ωs) / (2 (sin ωs − ωs cos ωs))`, dimensionless.
pub fn collares_pereira_rabl_day_integral(sunset_rad: f64) -> f64 {
    let (a, b) = collares_pereira_rabl_ab(sunset_rad);
    let s = sunset_rad.sin() - sunset_rad * sunset_rad.cos();
    if s <= 0.0 {
        return 1.0;
    }
    a + b * (sunset_rad - sunset_rad.sin() * sunset_rad.cos()) / (2.0 * s)
}

/// How the hourly profile is scaled.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum ProfileScaling {
    /// Divide by the ratio's day integral so each day sums to Kt·H0 (the default).
    #[default]
    ExactDailyTotal,
    /// The published ratio as it is (its day integral is within about 1 % of one).
    Published,
}

/// Instantaneous GHI from the monthly Kt at one sun position (module doc), W/m².
pub fn clearness_ghi_w_m2(
    kt: f64,
    lat_rad: f64,
    sun: &SunPosition,
    scaling: ProfileScaling,
) -> f64 {
    let e0 = extraterrestrial_w_m2(sun.earth_sun_distance_au);
    let ws = sunset_hour_angle_rad(lat_rad, sun.declination_rad);
    let h0 = daily_extraterrestrial_wh_m2(lat_rad, sun.declination_rad, e0);
    let r = collares_pereira_rabl_ratio(sun.hour_angle_rad, ws);
    let norm = match scaling {
        ProfileScaling::ExactDailyTotal => collares_pereira_rabl_day_integral(ws),
        ProfileScaling::Published => 1.0,
    };
    kt * h0 * r / norm
}

/// Weather records from monthly clearness: `count` instants from `start` every `step_s`
/// seconds at latitude `lat_rad`, GHI by [`clearness_ghi_w_m2`], DNI and DHI by Erbs.
pub fn clearness_series(
    clearness: &MonthlyClearness,
    lat_rad: f64,
    start: DateTime<Utc>,
    step_s: i64,
    count: usize,
    scaling: ProfileScaling,
    sun: impl Fn(DateTime<Utc>) -> SunPosition,
) -> Result<Vec<WeatherRecord>, SunError> {
    if step_s <= 0 {
        return Err(SunError::parameter(
            "step_s",
            step_s as f64,
            "a positive number of seconds",
            "give the time step, e.g. 3600 for hourly",
        ));
    }
    Ok((0..count)
        .map(|i| {
            let time = start + Duration::seconds(step_s * i as i64);
            let p = sun(time);
            let kt = clearness.for_month(time.month());
            let ghi = clearness_ghi_w_m2(kt, lat_rad, &p, scaling);
            let e0 = extraterrestrial_w_m2(p.earth_sun_distance_au);
            WeatherRecord {
                time,
                irradiance: erbs(ghi, p.zenith_rad, e0),
                temp_air_c: None,
                source: ComponentSource::ErbsSplit,
            }
        })
        .collect())
}
