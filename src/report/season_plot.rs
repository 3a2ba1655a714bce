//! The season chart of a mission run: power generated and power consumed (by the main
//! categories) on the left axis, state of charge on the right, nights shaded; and the
//! seasons compared on one chart (state of charge of each season against time since its
//! start); and, for `--planner sun-aware`, the fixed route's run and the sun-aware plan's
//! run of one season on one chart (power generated and state of charge of each), which
//! shows where the light was gained or lost.
//!
//! # Units
//! Watts, percent, hours; times as local clock time.

use crate::mission::runner::SeasonResult;
use crate::mission::sim::Sample;
use crate::report::plot::{Band, LineChart, Series, Side, XKind, YAxis};

/// At most this many points per series (the samples are thinned evenly beyond it).
const MAX_POINTS: usize = 2000;

fn thin(samples: &[Sample]) -> impl Iterator<Item = &Sample> {
    let step = samples.len().div_ceil(MAX_POINTS).max(1);
    samples.iter().step_by(step)
}

fn series(
    name: &str,
    samples: &[Sample],
    side: Side,
    color: Option<[u8; 3]>,
    f: impl Fn(&Sample) -> f64,
) -> Series {
    Series {
        name: name.to_string(),
        points: thin(samples)
            .map(|s| (s.time.timestamp() as f64, f(s)))
            .collect(),
        side,
        color,
    }
}

/// Night bands: runs of samples with the sun below the horizon.
fn nights(samples: &[Sample], step_s: f64) -> Vec<Band> {
    let mut out = Vec::new();
    let mut start: Option<f64> = None;
    for s in samples {
        let t = s.time.timestamp() as f64;
        match (s.sun_elevation_deg < 0.0, start) {
            (true, None) => start = Some(t),
            (false, Some(a)) => {
                out.push((a, t));
                start = None;
            }
            _ => {}
        }
    }
    if let (Some(a), Some(last)) = (start, samples.last()) {
        out.push((a, last.time.timestamp() as f64 + step_s));
    }
    out.into_iter()
        .map(|x_range| Band {
            x_range,
            label: Some("night (sun below horizon)".into()),
        })
        .collect()
}

/// One season: generation, consumption, state of charge.
pub fn season_chart(site: &str, r: &SeasonResult, step_s: f64, utc_offset_s: i32) -> LineChart {
    let s = &r.run.samples;
    let verdict = if r.summary.feasible {
        "feasible"
    } else {
        "INFEASIBLE"
    };
    LineChart {
        title: format!(
            "{site}: {} from {} ({verdict})",
            r.season.name, r.season.date
        ),
        x_label: format!("local time (UTC{:+.1} h)", f64::from(utc_offset_s) / 3600.0),
        x_kind: XKind::Time { utc_offset_s },
        y_left: YAxis {
            label: "power (W)".into(),
            range: None,
        },
        y_right: Some(YAxis {
            label: "state of charge (%)".into(),
            range: Some((0.0, 100.0)),
        }),
        series: vec![
            series(
                "generated (panels)",
                s,
                Side::Left,
                Some([230, 159, 0]),
                |x| x.generated_w,
            ),
            series(
                "consumed (drive + hotel + payload + heater)",
                s,
                Side::Left,
                Some([0, 114, 178]),
                |x| x.drive_w + x.hotel_w + x.payload_w + x.heater_w,
            ),
            series("heater", s, Side::Left, Some([213, 94, 0]), |x| x.heater_w),
            series("state of charge", s, Side::Right, Some([0, 0, 0]), |x| {
                100.0 * x.soc
            }),
        ],
        bands: nights(s, step_s),
        size_px: (1200, 650),
    }
}

/// All seasons on one chart: state of charge against hours since each season's start.
pub fn seasons_chart(site: &str, results: &[SeasonResult]) -> LineChart {
    let series = results
        .iter()
        .map(|r| {
            let t0 = r.run.samples.first().map_or(0, |s| s.time.timestamp());
            Series {
                name: format!(
                    "{} ({})",
                    r.season.name,
                    if r.summary.feasible {
                        "feasible"
                    } else {
                        "infeasible"
                    }
                ),
                points: thin(&r.run.samples)
                    .map(|s| ((s.time.timestamp() - t0) as f64 / 3600.0, 100.0 * s.soc))
                    .collect(),
                side: Side::Left,
                color: None,
            }
        })
        .collect();
    LineChart {
        title: format!("{site}: state of charge, seasons compared"),
        x_label: "hours since the season's start".into(),
        x_kind: XKind::Numeric,
        y_left: YAxis {
            label: "state of charge (%)".into(),
            range: Some((0.0, 100.0)),
        },
        y_right: None,
        series,
        bands: Vec::new(),
        size_px: (1200, 650),
    }
}

/// One season run twice: along the fixed route and along the sun-aware plan (module doc).
pub fn planners_chart(
    site: &str,
    fixed: &SeasonResult,
    sun_aware: &SeasonResult,
    step_s: f64,
    utc_offset_s: i32,
) -> LineChart {
    let v = |r: &SeasonResult| {
        if r.summary.feasible {
            "feasible"
        } else {
            "INFEASIBLE"
        }
    };
    let (f, a) = (&fixed.run.samples, &sun_aware.run.samples);
    let longer = if a.len() > f.len() { a } else { f };
    LineChart {
        title: format!(
            "{site}: {} — fixed route {} / sun-aware plan {}",
            fixed.season.name,
            v(fixed),
            v(sun_aware)
        ),
        x_label: format!("local time (UTC{:+.1} h)", f64::from(utc_offset_s) / 3600.0),
        x_kind: XKind::Time { utc_offset_s },
        y_left: YAxis {
            label: "power generated (W)".into(),
            range: None,
        },
        y_right: Some(YAxis {
            label: "state of charge (%)".into(),
            range: Some((0.0, 100.0)),
        }),
        series: vec![
            series(
                "generated, fixed route",
                f,
                Side::Left,
                Some([230, 159, 0]),
                |x| x.generated_w,
            ),
            series(
                "generated, sun-aware plan",
                a,
                Side::Left,
                Some([0, 158, 115]),
                |x| x.generated_w,
            ),
            series(
                "state of charge, fixed route",
                f,
                Side::Right,
                Some([0, 0, 0]),
                |x| 100.0 * x.soc,
            ),
            series(
                "state of charge, sun-aware plan",
                a,
                Side::Right,
                Some([0, 114, 178]),
                |x| 100.0 * x.soc,
            ),
        ],
        bands: nights(longer, step_s),
        size_px: (1200, 650),
    }
}
