//! The weather Monte Carlo's chart: the empirical distribution (cumulative share of
//! runs) of each season's lowest state of charge, with the battery reserve marked.
//!
//! A point (x, y) on a season's line reads: y % of the runs had a lowest state of
//! charge at or below x %. The empirical CDF is drawn as a step line with one step at
//! each run's value.
//!
//! # Units
//! Percent on both axes.

use crate::report::plot::{Band, LineChart, Series, Side, XKind, YAxis};
use crate::study::montecarlo::SeasonMonteCarlo;

/// The step points of the empirical CDF of `values` (percent on both axes).
pub fn ecdf_points(values: &[f64]) -> Vec<(f64, f64)> {
    let mut v: Vec<f64> = values.iter().map(|x| 100.0 * x).collect();
    v.sort_by(f64::total_cmp);
    let n = v.len() as f64;
    let mut pts = Vec::with_capacity(2 * v.len());
    for (i, &x) in v.iter().enumerate() {
        pts.push((x, 100.0 * i as f64 / n));
        pts.push((x, 100.0 * (i + 1) as f64 / n));
    }
    pts
}

/// One line per season, the reserve as a vertical line and a shaded band below it.
pub fn monte_carlo_chart(site: &str, results: &[SeasonMonteCarlo], reserve_soc: f64) -> LineChart {
    let runs = results.first().map_or(0, |r| r.draws.len());
    let seed = results.first().map_or(0, |r| r.seed);
    let mut series: Vec<Series> = results
        .iter()
        .map(|r| Series {
            name: format!(
                "{} ({:.0} % complete)",
                r.season.name,
                100.0 * r.probability_complete()
            ),
            points: ecdf_points(&r.min_socs()),
            side: Side::Left,
            color: None,
        })
        .collect();
    let reserve = 100.0 * reserve_soc;
    series.push(Series {
        name: format!("reserve ({reserve:.0} %)"),
        points: vec![(reserve, 0.0), (reserve, 100.0)],
        side: Side::Left,
        color: Some([0, 0, 0]),
    });
    LineChart {
        title: format!(
            "{site}: lowest state of charge over {runs} sampled weather runs per season (seed {seed})"
        ),
        x_label: "lowest state of charge of the run (%)".into(),
        x_kind: XKind::Numeric,
        y_left: YAxis {
            label: "runs at or below (%)".into(),
            range: Some((0.0, 100.0)),
        },
        y_right: None,
        series,
        bands: vec![Band {
            x_range: (0.0, reserve),
            label: Some("below the reserve".into()),
        }],
        size_px: (1200, 650),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ecdf_steps_reach_one_hundred() {
        let p = ecdf_points(&[0.5, 0.2, 0.9]);
        assert_eq!(p.first(), Some(&(20.0, 0.0)));
        assert_eq!(p.last(), Some(&(90.0, 100.0)));
        assert!(p.windows(2).all(|w| w[0].0 <= w[1].0 && w[0].1 <= w[1].1));
    }
}
