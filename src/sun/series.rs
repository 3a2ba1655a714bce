//! Clear-sky time series at one site: sun position, clear-sky components and
//! plane-of-array irradiance at equally spaced instants, computed in parallel chunks.
//!
//! The chain at each instant: [`SunTrack`] (SPA with interpolated slow terms) → Kasten-
//! Young air mass (pressure corrected) → Ineichen-Perez with the month's Linke turbidity
//! → transposition onto the plane with the chosen sky model. The apparent (refracted)
//! sun direction drives air mass, clear sky and transposition.
//!
//! # Units
//! Angles in radians, irradiance in W/m², time step in seconds.

use chrono::{DateTime, Datelike, Duration, Utc};
use rayon::prelude::*;

use super::error::{check_range, SunError};
use super::irradiance::{
    absolute_airmass, extraterrestrial_w_m2, ineichen_perez, relative_airmass, Components,
    LinkeTurbidity,
};
use super::position::{julian_day, Observer, SunPosition, SunTrack, DEFAULT_NODE_STEP_S};
use super::transposition::{plane_of_array, Plane, SkyModel, SunGeometry};

/// Everything the series needs besides the instants.
#[derive(Debug, Clone, Copy)]
pub struct SeriesSetup {
    /// The site.
    pub observer: Observer,
    /// ΔT, seconds (one value for the span).
    pub delta_t_s: f64,
    /// Monthly Linke turbidity.
    pub linke: LinkeTurbidity,
    /// The receiving plane.
    pub plane: Plane,
    /// Sky-diffuse model.
    pub sky_model: SkyModel,
    /// Ground albedo, 0..1.
    pub albedo: f64,
}

/// One instant of the series.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Sample {
    /// The instant.
    pub time: DateTime<Utc>,
    /// Sun position.
    pub sun: SunPosition,
    /// Extraterrestrial normal irradiance, W/m².
    pub dni_extra_w_m2: f64,
    /// Relative air mass (`None` with the sun down).
    pub airmass_relative: Option<f64>,
    /// Clear-sky components, W/m².
    pub clear_sky: Components,
    /// Plane-of-array irradiance, W/m².
    pub poa_w_m2: f64,
}

/// The irradiance chain at one sun position (module doc).
pub fn sample_at(time: DateTime<Utc>, sun: SunPosition, setup: &SeriesSetup) -> Sample {
    let e0 = extraterrestrial_w_m2(sun.earth_sun_distance_au);
    let am = relative_airmass(sun.apparent_zenith_rad);
    let clear_sky = match am {
        Some(a) => ineichen_perez(
            sun.apparent_zenith_rad,
            absolute_airmass(a, setup.observer.pressure_hpa),
            setup.linke.for_month(time.month()),
            setup.observer.elevation_m,
            e0,
        ),
        None => Components::default(),
    };
    let geom = SunGeometry {
        zenith_rad: sun.apparent_zenith_rad,
        azimuth_rad: sun.azimuth_rad,
        dni_extra_w_m2: e0,
        airmass_relative: am,
    };
    let poa = plane_of_array(
        &setup.plane,
        &geom,
        &clear_sky,
        setup.albedo,
        setup.sky_model,
    );
    Sample {
        time,
        sun,
        dni_extra_w_m2: e0,
        airmass_relative: am,
        clear_sky,
        poa_w_m2: poa.total_w_m2(),
    }
}

/// `count` samples from `start` every `step_s` seconds, in parallel chunks of `chunk`
/// instants, each chunk handed to `sink` in order of its first index (the sink may be
/// called from several threads; it receives the chunk's index and its samples).
pub fn clear_sky_series<T: Send>(
    setup: &SeriesSetup,
    start: DateTime<Utc>,
    step_s: i64,
    count: usize,
    chunk: usize,
    sink: impl Fn(usize, &[Sample]) -> T + Sync,
) -> Result<Vec<T>, SunError> {
    check_range(
        "step_min",
        step_s as f64 / 60.0,
        1.0 / 60.0,
        1440.0,
        "minutes from 1/60 to 1440",
        "give --step-min as a whole number of minutes, e.g. 1 or 60",
    )?;
    check_range(
        "albedo",
        setup.albedo,
        0.0,
        1.0,
        "a fraction from 0 to 1",
        "0.2 bare soil, 0.8 fresh snow",
    )?;
    let end = start + Duration::seconds(step_s * count.max(1) as i64);
    let track = SunTrack::new(
        start,
        end,
        &setup.observer,
        setup.delta_t_s,
        DEFAULT_NODE_STEP_S,
    )?;
    let jd0 = julian_day(start);
    let step_days = step_s as f64 / 86_400.0;
    let chunk = chunk.max(1);
    let chunks = count.div_ceil(chunk);
    Ok((0..chunks)
        .into_par_iter()
        .map(|c| {
            let range = c * chunk..((c + 1) * chunk).min(count);
            let samples: Vec<Sample> = range
                .map(|i| {
                    let time = start + Duration::seconds(step_s * i as i64);
                    let sun = track.at_jd(jd0 + i as f64 * step_days);
                    sample_at(time, sun, setup)
                })
                .collect();
            sink(c, &samples)
        })
        .collect())
}
