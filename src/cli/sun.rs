//! `sunward sun ...`: sun position and clear-sky irradiance at one instant, over one day,
//! or as a CSV time series.

use std::fmt::Write as _;
use std::path::PathBuf;

use chrono::{DateTime, Datelike, Duration, NaiveDate, Timelike, Utc};
use clap::{ArgGroup, Args};
use serde::Serialize;

use sunward::report::atomic::write_atomic;
use sunward::report::plot::{
    render_png, render_svg, Band, LineChart, PlotError, Series, Side, XKind, YAxis,
};
use sunward::sun::irradiance::{LinkeTurbidity, DEFAULT_LINKE_TURBIDITY};
use sunward::sun::position::{sun_events, sun_position, DeltaT, Observer};
use sunward::sun::series::{clear_sky_series, sample_at, Sample, SeriesSetup};
use sunward::sun::transposition::{Plane, SkyModel, ALBEDO_BARE_SOIL};
use sunward::sun::SunError;
use sunward::units::{deg_to_rad, rad_to_deg};
use sunward::Error;

use super::check_output;

/// Sun position and clear-sky irradiance (NREL SPA, Ineichen-Perez, Hay-Davies by default).
///
/// Give --time for one instant, --date with --daily for a day's profile, or --from/--to
/// with -o for a CSV time series. Zenith and elevation are geometric (no refraction);
/// apparent_zenith_deg includes refraction and drives air mass and irradiance. Clear
/// skies only: real weather gives less.
#[derive(Debug, Args)]
#[command(group(ArgGroup::new("mode").required(true).args(["time", "date", "from"])))]
pub struct SunArgs {
    /// Latitude, degrees, north positive.
    #[arg(long, value_name = "DEG", allow_hyphen_values = true)]
    lat: f64,
    /// Longitude, degrees, east positive.
    #[arg(long, value_name = "DEG", allow_hyphen_values = true)]
    lon: f64,
    /// One instant, RFC 3339 (e.g. 2031-06-21T12:00:00Z).
    #[arg(long, value_name = "RFC3339")]
    time: Option<DateTime<chrono::FixedOffset>>,
    /// One day (local mean solar day for sunrise/sunset; the profile runs 00:00-24:00 UT).
    #[arg(long, value_name = "YYYY-MM-DD", requires = "daily")]
    date: Option<NaiveDate>,
    /// With --date: print the day's profile as a table.
    #[arg(long, requires = "date")]
    daily: bool,
    /// With --daily: also draw the day's profile (sun elevation, GHI/DNI/DHI and POA
    /// when --tilt-deg is given; night shaded) to FILE.png or FILE.svg.
    #[arg(long, value_name = "FILE.png|FILE.svg", requires = "daily")]
    plot: Option<PathBuf>,
    /// With --daily: UTC offset of the site's clock, hours east (e.g. 2 or -3.5). The
    /// day then runs 00:00-24:00 local clock time and the plot's axis shows it
    /// [default: the day runs 00:00-24:00 UT and the axis shows UTC].
    #[arg(long, value_name = "H", allow_hyphen_values = true, requires = "daily")]
    utc_offset_h: Option<f64>,
    /// First day of a time series (from 00:00 UT).
    #[arg(long, value_name = "YYYY-MM-DD", requires_all = ["to", "out"])]
    from: Option<NaiveDate>,
    /// Last day of a time series (through 24:00 UT).
    #[arg(long, value_name = "YYYY-MM-DD", requires = "from")]
    to: Option<NaiveDate>,
    /// Time step of --daily and of the series, minutes.
    #[arg(long, value_name = "N", default_value_t = 60)]
    step_min: u32,
    /// Output CSV of the time series.
    #[arg(short = 'o', long = "out", value_name = "FILE.csv", requires = "from")]
    out: Option<PathBuf>,
    /// Site height above sea level, metres.
    #[arg(
        long,
        value_name = "M",
        default_value_t = 0.0,
        allow_hyphen_values = true
    )]
    elevation_m: f64,
    /// Air pressure, hPa [default: standard atmosphere at --elevation-m].
    #[arg(long, value_name = "P")]
    pressure_hpa: Option<f64>,
    /// Air temperature for refraction, degrees C.
    #[arg(
        long,
        value_name = "T",
        default_value_t = 15.0,
        allow_hyphen_values = true
    )]
    temperature_c: f64,
    /// Delta T = TT - UT, seconds [default: Espenak-Meeus polynomial for the date].
    #[arg(long, value_name = "S", allow_hyphen_values = true)]
    delta_t_s: Option<f64>,
    /// Linke turbidity for the clear sky (one value for every month).
    #[arg(long, value_name = "TL", default_value_t = DEFAULT_LINKE_TURBIDITY)]
    linke: f64,
    /// Panel tilt from horizontal, degrees from 0 to 180 (plane-of-array output; series
    /// default 0).
    #[arg(
        long,
        value_name = "DEG",
        requires = "panel_azimuth_deg",
        allow_hyphen_values = true
    )]
    tilt_deg: Option<f64>,
    /// Azimuth the panel faces, degrees clockwise from north, -360 to 360.
    #[arg(
        long,
        value_name = "DEG",
        requires = "tilt_deg",
        allow_hyphen_values = true
    )]
    panel_azimuth_deg: Option<f64>,
    /// Ground albedo for the plane-of-array ground term (0.2 bare soil, 0.8 fresh snow).
    #[arg(long, value_name = "FRACTION", default_value_t = ALBEDO_BARE_SOIL)]
    albedo: f64,
    /// Print JSON (stable keys) instead of text (--time only).
    #[arg(long, requires = "time")]
    json: bool,
}

/// The --json answer for one instant (keys are stable: scripts read them).
#[derive(Debug, Serialize)]
struct InstantJson {
    zenith_deg: f64,
    azimuth_deg: f64,
    elevation_deg: f64,
    apparent_zenith_deg: f64,
    extraterrestrial_w_m2: f64,
    airmass: Option<f64>,
    ghi_w_m2: f64,
    dni_w_m2: f64,
    dhi_w_m2: f64,
    sunrise: Option<String>,
    transit: String,
    sunset: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    poa_w_m2: Option<f64>,
}

fn sun_err(e: SunError) -> Error {
    Error::Usage(e.to_string())
}

fn observer(a: &SunArgs) -> Result<Observer, Error> {
    let o = Observer::new(deg_to_rad(a.lat), deg_to_rad(a.lon), a.elevation_m).map_err(sun_err)?;
    let p = a.pressure_hpa.unwrap_or(o.pressure_hpa);
    o.with_atmosphere(p, a.temperature_c).map_err(sun_err)
}

fn setup(a: &SunArgs, delta_t_s: f64) -> Result<SeriesSetup, Error> {
    let plane = Plane::new(
        deg_to_rad(a.tilt_deg.unwrap_or(0.0)),
        deg_to_rad(a.panel_azimuth_deg.unwrap_or(180.0)),
    )
    .map_err(sun_err)?;
    Ok(SeriesSetup {
        observer: observer(a)?,
        delta_t_s,
        linke: LinkeTurbidity::new([a.linke; 12]).map_err(sun_err)?,
        plane,
        sky_model: SkyModel::HayDavies,
        albedo: a.albedo,
    })
}

fn delta_t(a: &SunArgs) -> DeltaT {
    a.delta_t_s.map(DeltaT::Seconds).unwrap_or_default()
}

fn rfc(t: DateTime<Utc>) -> String {
    t.to_rfc3339_opts(chrono::SecondsFormat::Secs, true)
}

/// Years the SPA is valid for: −2000 to 6000 (Reda and Andreas, "Solar position
/// algorithm for solar radiation applications", NREL/TP-560-34302, 2008, abstract).
const SPA_YEARS: std::ops::RangeInclusive<i32> = -2000..=6000;

/// ΔT the SPA accepts, seconds: ±8000 (the limits of the report's reference code, from
/// memory; today's ΔT is about 69 s).
const SPA_DELTA_T_S: f64 = 8000.0;

/// Refuses dates and a ΔT the SPA is not valid for, naming the option.
fn check_validity(a: &SunArgs) -> Result<(), Error> {
    let years = [
        ("--time", a.time.map(|t| t.with_timezone(&Utc).year())),
        ("--date", a.date.map(|d| d.year())),
        ("--from", a.from.map(|d| d.year())),
        ("--to", a.to.map(|d| d.year())),
    ];
    for (flag, year) in years {
        if let Some(y) = year.filter(|y| !SPA_YEARS.contains(y)) {
            return Err(Error::Usage(format!(
                "sun: {flag} is in the year {y}; the solar position algorithm is valid from \
                 {} to {}. Fix: give a date in that range",
                SPA_YEARS.start(),
                SPA_YEARS.end()
            )));
        }
    }
    if let Some(dt) = a.delta_t_s {
        if dt.is_nan() || dt.abs() > SPA_DELTA_T_S {
            return Err(Error::Usage(format!(
                "sun: --delta-t-s {dt} is outside ±{SPA_DELTA_T_S} s. Fix: give TT − UT in \
                 seconds (about 69 s in the 2020s), or leave it out for the built-in model"
            )));
        }
    }
    Ok(())
}

/// Runs `sunward sun`.
pub fn run(a: SunArgs) -> Result<(), Error> {
    check_validity(&a)?;
    if let Some(t) = a.time {
        return instant(&a, t.with_timezone(&Utc));
    }
    if let (Some(d), true) = (a.date, a.daily) {
        return daily(&a, d);
    }
    match (a.from, a.to, a.out.clone()) {
        (Some(f), Some(t), Some(o)) => series(&a, f, t, o),
        _ => Err(Error::Usage(
            "sun: give --time, --date with --daily, or --from, --to and -o".into(),
        )),
    }
}

fn instant(a: &SunArgs, t: DateTime<Utc>) -> Result<(), Error> {
    let dt_s = delta_t(a).seconds_at(t);
    let s = setup(a, dt_s)?;
    let sample = sample_at(t, sun_position(t, &s.observer, dt_s), &s);
    // The local mean solar day holding the instant.
    let local = t + Duration::milliseconds((a.lon / 15.0 * 3_600_000.0) as i64);
    let ev = sun_events(local.date_naive(), &s.observer, delta_t(a));
    let z = rad_to_deg(sample.sun.zenith_rad);
    let out = InstantJson {
        zenith_deg: z,
        azimuth_deg: rad_to_deg(sample.sun.azimuth_rad),
        elevation_deg: 90.0 - z,
        apparent_zenith_deg: rad_to_deg(sample.sun.apparent_zenith_rad),
        extraterrestrial_w_m2: sample.dni_extra_w_m2,
        airmass: sample.airmass_relative,
        ghi_w_m2: sample.clear_sky.ghi_w_m2,
        dni_w_m2: sample.clear_sky.dni_w_m2,
        dhi_w_m2: sample.clear_sky.dhi_w_m2,
        sunrise: ev.sunrise.map(rfc),
        transit: rfc(ev.transit),
        sunset: ev.sunset.map(rfc),
        poa_w_m2: a.tilt_deg.map(|_| sample.poa_w_m2),
    };
    if a.json {
        let text = serde_json::to_string_pretty(&out).map_err(|e| Error::Usage(e.to_string()))?;
        crate::say!("{text}");
    } else {
        print_instant(&out, &ev.kind);
    }
    Ok(())
}

fn print_instant(o: &InstantJson, kind: &sunward::sun::position::DayKind) {
    crate::say!(
        "zenith {:.4} deg (apparent {:.4}), elevation {:.4} deg, azimuth {:.4} deg",
        o.zenith_deg,
        o.apparent_zenith_deg,
        o.elevation_deg,
        o.azimuth_deg
    );
    crate::say!(
        "extraterrestrial {:.1} W/m2, air mass {}",
        o.extraterrestrial_w_m2,
        o.airmass
            .map_or("none (sun down)".into(), |m| format!("{m:.3}"))
    );
    crate::say!(
        "clear sky: GHI {:.1}, DNI {:.1}, DHI {:.1} W/m2",
        o.ghi_w_m2,
        o.dni_w_m2,
        o.dhi_w_m2
    );
    if let Some(p) = o.poa_w_m2 {
        crate::say!("plane of array: {p:.1} W/m2");
    }
    let show = |t: &Option<String>| t.clone().unwrap_or_else(|| "none".into());
    crate::say!(
        "day ({kind:?}): sunrise {}, transit {}, sunset {}",
        show(&o.sunrise),
        o.transit,
        show(&o.sunset)
    );
}

fn step_s(a: &SunArgs) -> Result<i64, Error> {
    if a.step_min == 0 || a.step_min > 1440 {
        return Err(Error::Usage(format!(
            "--step-min {}: expected 1 to 1440 minutes",
            a.step_min
        )));
    }
    Ok(i64::from(a.step_min) * 60)
}

fn daily(a: &SunArgs, d: NaiveDate) -> Result<(), Error> {
    let offset_s = utc_offset_s(a)?;
    if let Some(p) = &a.plot {
        plot_format(p)?;
        check_output(p, &[])?;
    }
    let start = d
        .and_hms_opt(0, 0, 0)
        .map(|x| x.and_utc() - Duration::seconds(i64::from(offset_s)))
        .ok_or_else(|| Error::Usage("--date".into()))?;
    let dt_s = delta_t(a).seconds_at(start);
    let s = setup(a, dt_s)?;
    let step = step_s(a)?;
    let n = (86_400 / step) as usize + 1;
    let rows = clear_sky_series(&s, start, step, n, n, |_, c| c.to_vec()).map_err(sun_err)?;
    let ev = sun_events(d, &s.observer, delta_t(a));
    let show = |t: Option<DateTime<Utc>>| t.map_or("none".into(), rfc);
    crate::say!(
        "{d}: {:?}; sunrise {}, transit {}, sunset {}",
        ev.kind,
        show(ev.sunrise),
        rfc(ev.transit),
        show(ev.sunset)
    );
    crate::say!(
        "{:<21} {:>9} {:>9} {:>8} {:>8} {:>8} {:>8}",
        "time_utc",
        "elev_deg",
        "azim_deg",
        "ghi_w_m2",
        "dni_w_m2",
        "dhi_w_m2",
        "poa_w_m2"
    );
    for r in rows.iter().flatten() {
        crate::say!(
            "{:<21} {:>9.3} {:>9.3} {:>8.1} {:>8.1} {:>8.1} {:>8.1}",
            rfc(r.time),
            90.0 - rad_to_deg(r.sun.apparent_zenith_rad),
            rad_to_deg(r.sun.azimuth_rad),
            r.clear_sky.ghi_w_m2,
            r.clear_sky.dni_w_m2,
            r.clear_sky.dhi_w_m2,
            r.poa_w_m2
        );
    }
    if let Some(p) = &a.plot {
        plot_day(a, d, &s, start, offset_s, p)?;
    }
    Ok(())
}

/// CSV header of the series (units in the names).
const SERIES_HEADER: &str =
    "time_utc,apparent_zenith_deg,azimuth_deg,ghi_w_m2,dni_w_m2,dhi_w_m2,poa_w_m2\n";

fn csv_rows(samples: &[Sample]) -> String {
    let mut s = String::with_capacity(samples.len() * 80);
    for r in samples {
        let t = r.time;
        let _ = writeln!(
            s,
            "{:04}-{:02}-{:02}T{:02}:{:02}:{:02}Z,{:.5},{:.5},{:.2},{:.2},{:.2},{:.2}",
            t.year(),
            t.month(),
            t.day(),
            t.hour(),
            t.minute(),
            t.second(),
            rad_to_deg(r.sun.apparent_zenith_rad),
            rad_to_deg(r.sun.azimuth_rad),
            r.clear_sky.ghi_w_m2,
            r.clear_sky.dni_w_m2,
            r.clear_sky.dhi_w_m2,
            r.poa_w_m2
        );
    }
    s
}

fn series(a: &SunArgs, from: NaiveDate, to: NaiveDate, out: PathBuf) -> Result<(), Error> {
    if to < from {
        return Err(Error::Usage(format!(
            "--to {to} is before --from {from}: give the last day after the first"
        )));
    }
    check_output(&out, &[])?;
    let start = from
        .and_hms_opt(0, 0, 0)
        .map(|x| x.and_utc())
        .ok_or_else(|| Error::Usage("--from".into()))?;
    let days = (to - from).num_days() + 1;
    let step = step_s(a)?;
    let n = (days * 86_400 / step) as usize;
    let mid = start + Duration::seconds(days * 43_200);
    let s = setup(a, delta_t(a).seconds_at(mid))?;
    let parts = clear_sky_series(&s, start, step, n, 8_192, |_, c| csv_rows(c)).map_err(sun_err)?;
    write_atomic(&out, |w| {
        w.write_all(SERIES_HEADER.as_bytes())?;
        parts.iter().try_for_each(|p| w.write_all(p.as_bytes()))
    })?;
    eprintln!("wrote {} rows to {}", n, out.display());
    Ok(())
}

/// Time step of the plotted profile, seconds (fine enough for smooth curves and for
/// night edges within 2.5 min, whatever --step-min the table uses).
const PLOT_STEP_S: i64 = 300;

/// Picture formats of --plot, by file extension.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum PlotFormat {
    Png,
    Svg,
}

fn plot_format(path: &std::path::Path) -> Result<PlotFormat, Error> {
    let ext = path
        .extension()
        .map(|e| e.to_string_lossy().to_lowercase())
        .unwrap_or_default();
    match ext.as_str() {
        "png" => Ok(PlotFormat::Png),
        "svg" => Ok(PlotFormat::Svg),
        _ => Err(Error::Usage(format!(
            "--plot {}: expected a file ending in .png or .svg",
            path.display()
        ))),
    }
}

fn utc_offset_s(a: &SunArgs) -> Result<i32, Error> {
    let h = a.utc_offset_h.unwrap_or(0.0);
    if !(h.is_finite() && (-14.0..=14.0).contains(&h)) {
        return Err(Error::Usage(format!(
            "--utc-offset-h {h}: expected hours from -14 to 14 (e.g. 2 or -3.5)"
        )));
    }
    Ok((h * 3600.0).round() as i32)
}

fn offset_label(offset_s: i32) -> String {
    if offset_s == 0 {
        return "UTC".into();
    }
    let sign = if offset_s < 0 { '-' } else { '+' };
    let m = offset_s.unsigned_abs() / 60;
    format!("UTC{sign}{:02}:{:02}", m / 60, m % 60)
}

fn site_label(lat_deg: f64, lon_deg: f64) -> String {
    let ns = if lat_deg < 0.0 { 'S' } else { 'N' };
    let ew = if lon_deg < 0.0 { 'W' } else { 'E' };
    format!("{:.2}° {ns}, {:.2}° {ew}", lat_deg.abs(), lon_deg.abs())
}

fn epoch_s(t: DateTime<Utc>) -> f64 {
    t.timestamp_millis() as f64 / 1000.0
}

/// Night intervals (apparent sun elevation below 0) of the sampled day, with edges
/// placed by linear interpolation between samples.
fn night_bands(rows: &[Sample]) -> Vec<(f64, f64)> {
    let elev = |r: &Sample| rad_to_deg(r.sun.apparent_elevation_rad());
    let mut bands = Vec::new();
    let mut open = rows
        .first()
        .filter(|r| elev(r) < 0.0)
        .map(|r| epoch_s(r.time));
    for w in rows.windows(2) {
        let (e0, e1) = (elev(&w[0]), elev(&w[1]));
        if (e0 < 0.0) == (e1 < 0.0) {
            continue;
        }
        let (t0, t1) = (epoch_s(w[0].time), epoch_s(w[1].time));
        let edge = t0 + (t1 - t0) * e0 / (e0 - e1);
        match open.take() {
            Some(start) => bands.push((start, edge)),
            None => open = Some(edge),
        }
    }
    if let (Some(start), Some(last)) = (open, rows.last()) {
        bands.push((start, epoch_s(last.time)));
    }
    bands
}

fn line(name: &str, rows: &[Sample], side: Side, f: impl Fn(&Sample) -> f64) -> Series {
    Series {
        name: name.into(),
        points: rows.iter().map(|r| (epoch_s(r.time), f(r))).collect(),
        side,
        color: None,
    }
}

fn day_chart(a: &SunArgs, d: NaiveDate, rows: &[Sample], offset_s: i32) -> LineChart {
    let mut series = vec![
        line("GHI", rows, Side::Left, |r| r.clear_sky.ghi_w_m2),
        line("DNI", rows, Side::Left, |r| r.clear_sky.dni_w_m2),
        line("DHI", rows, Side::Left, |r| r.clear_sky.dhi_w_m2),
    ];
    if let (Some(t), Some(az)) = (a.tilt_deg, a.panel_azimuth_deg) {
        series.push(line(
            &format!("POA (tilt {t}°, azimuth {az}°)"),
            rows,
            Side::Left,
            |r| r.poa_w_m2,
        ));
    }
    let mut elevation = line("sun elevation", rows, Side::Right, |r| {
        rad_to_deg(r.sun.apparent_elevation_rad())
    });
    elevation.color = Some([90, 90, 90]);
    series.push(elevation);
    LineChart {
        title: format!("Clear-sky sun profile, {}, {d}", site_label(a.lat, a.lon)),
        x_label: format!("time ({})", offset_label(offset_s)),
        x_kind: XKind::Time {
            utc_offset_s: offset_s,
        },
        y_left: YAxis {
            label: "irradiance (W/m²)".into(),
            range: None,
        },
        y_right: Some(YAxis {
            label: "sun elevation (deg, with refraction)".into(),
            range: None,
        }),
        series,
        bands: night_bands(rows)
            .into_iter()
            .map(|x_range| Band {
                x_range,
                label: Some("night (sun below horizon)".into()),
            })
            .collect(),
        size_px: (1200, 700),
    }
}

fn plot_day(
    a: &SunArgs,
    d: NaiveDate,
    s: &SeriesSetup,
    start: DateTime<Utc>,
    offset_s: i32,
    path: &std::path::Path,
) -> Result<(), Error> {
    let n = (86_400 / PLOT_STEP_S) as usize + 1;
    let rows: Vec<Sample> = clear_sky_series(s, start, PLOT_STEP_S, n, n, |_, c| c.to_vec())
        .map_err(sun_err)?
        .into_iter()
        .flatten()
        .collect();
    let chart = day_chart(a, d, &rows, offset_s);
    let plot_err = |e: PlotError| Error::Usage(e.to_string());
    let bytes = match plot_format(path)? {
        PlotFormat::Png => render_png(&chart).map_err(plot_err)?,
        PlotFormat::Svg => render_svg(&chart).map_err(plot_err)?.into_bytes(),
    };
    write_atomic(path, |w| w.write_all(&bytes))?;
    eprintln!("wrote the day's profile plot to {}", path.display());
    Ok(())
}
