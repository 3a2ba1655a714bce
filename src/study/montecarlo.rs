//! The weather Monte Carlo: N runs per season, each with its own sequence of daily
//! clear-sky indices drawn from the site's monthly statistics
//! ([`crate::sun::clearness_mc`]: independent days, Beta with the month's mean and sd),
//! giving the probability of completing the mission and the distribution of the lowest
//! state of charge.
//!
//! # Method
//! Run `r` of a season draws one index per local day from the season's date on (enough
//! days for the policy's deadline), from the stream `stream_seed(seed, season name, r)`,
//! and simulates the season with those indices in place of the monthly clearness
//! ([`crate::mission::sim::SkySetup::clearness_daily`]). Runs are independent and are
//! simulated in parallel; results are collected in (season, run) order, so they are the
//! same on any number of threads.
//!
//! Statistics per season: the share of feasible runs (the probability of completing,
//! as estimated from N runs: its standard error is about √(p(1−p)/N)); the mean of the
//! runs' lowest state of charge; and its 5, 50 and 95 % quantiles by linear
//! interpolation between order statistics (R. J. Hyndman and Y. Fan, "Sample quantiles
//! in statistical packages", The American Statistician 50(4), 361-365, 1996, definition
//! 7: `h = (N − 1)·p`, `Q = x[⌊h⌋] + (h − ⌊h⌋)(x[⌊h⌋+1] − x[⌊h⌋])` on the sorted values;
//! the default of R and NumPy).
//!
//! # Limits
//! Those of the daily draws (independent days under-sample dark spells: the probability
//! is optimistic), and those of the simulation.
//!
//! # Units
//! State of charge as a fraction 0..1.

use rayon::prelude::*;

use crate::mission::resolve::Season;
use crate::mission::runner::season_start;
use crate::mission::sim::{simulate, SimError, SimSetup};
use crate::mission::verdict::summarize;
use crate::sun::clearness_mc::{stream_seed, DailyClearness, Xoshiro256};

/// The seed used when none is given.
pub const DEFAULT_SEED: u64 = 20_270_621;

/// The name of the quantile rule written into reports.
pub const QUANTILE_RULE: &str = "linear between order statistics (Hyndman & Fan 1996, type 7)";

/// One run's outcome.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Draw {
    /// The run's verdict.
    pub feasible: bool,
    /// The run's lowest state of charge.
    pub min_soc: f64,
}

/// One season's Monte Carlo.
#[derive(Debug, Clone, PartialEq)]
pub struct SeasonMonteCarlo {
    /// The season.
    pub season: Season,
    /// The Monte Carlo seed.
    pub seed: u64,
    /// Every run, in run order.
    pub draws: Vec<Draw>,
}

impl SeasonMonteCarlo {
    /// The share of feasible runs.
    pub fn probability_complete(&self) -> f64 {
        let n = self.draws.len().max(1) as f64;
        self.draws.iter().filter(|d| d.feasible).count() as f64 / n
    }

    /// The runs' lowest states of charge, in run order.
    pub fn min_socs(&self) -> Vec<f64> {
        self.draws.iter().map(|d| d.min_soc).collect()
    }

    /// The mean of the runs' lowest state of charge.
    pub fn min_soc_mean(&self) -> f64 {
        let v = self.min_socs();
        v.iter().sum::<f64>() / v.len().max(1) as f64
    }

    /// The `p` quantile (0..1) of the runs' lowest state of charge ([`quantile`]).
    pub fn min_soc_quantile(&self, p: f64) -> f64 {
        let mut v = self.min_socs();
        v.sort_by(f64::total_cmp);
        quantile(&v, p)
    }
}

/// The `p` quantile of `sorted` (ascending) by Hyndman and Fan's definition 7 (module
/// doc); NaN when empty.
pub fn quantile(sorted: &[f64], p: f64) -> f64 {
    match sorted.len() {
        0 => f64::NAN,
        1 => sorted[0],
        n => {
            let h = (n - 1) as f64 * p.clamp(0.0, 1.0);
            let lo = h.floor() as usize;
            let hi = (lo + 1).min(n - 1);
            sorted[lo] + (h - lo as f64) * (sorted[hi] - sorted[lo])
        }
    }
}

/// Days of draws a run needs: every local day from the season's date through the
/// deadline, plus one for a start late in the day.
fn days_needed(setup: &SimSetup<'_>) -> usize {
    (setup.policy.deadline_s / 86_400.0).ceil() as usize + 2
}

/// Runs `runs` sampled simulations of every season with `setup` (module doc), reporting
/// each finished run to `progress`.
pub fn monte_carlo(
    setup: &SimSetup<'_>,
    seasons: &[Season],
    sky: &DailyClearness,
    runs: usize,
    seed: u64,
    progress: &dyn crate::progress::Progress,
) -> Result<Vec<SeasonMonteCarlo>, SimError> {
    let reserve = setup.pack.params().reserve_soc;
    let days = days_needed(setup);
    let done = std::sync::atomic::AtomicU64::new(0);
    progress.start("weather Monte Carlo", (seasons.len() * runs) as u64);
    let jobs: Vec<(usize, usize)> = (0..seasons.len())
        .flat_map(|s| (0..runs).map(move |r| (s, r)))
        .collect();
    let draws: Result<Vec<Draw>, SimError> = jobs
        .par_iter()
        .map(|&(s, r)| {
            let season = &seasons[s];
            let mut rng = Xoshiro256::seeded(stream_seed(seed, &season.name, r as u64));
            let k = sky.draw_days(season.date, days, &mut rng);
            let mut one = setup.clone();
            one.sky.clearness_daily = Some(&k);
            let start = season_start(season.date, setup.utc_offset_s, setup.start_local_h);
            let run = simulate(&one, start)?;
            let length = setup.route.summary.length_m;
            let summary = summarize(&season.name, season.date, &run, reserve, length);
            progress.update(done.fetch_add(1, std::sync::atomic::Ordering::Relaxed) + 1);
            Ok(Draw {
                feasible: summary.feasible,
                min_soc: run.min_soc.0,
            })
        })
        .collect();
    progress.finish();
    let draws = draws?;
    Ok(seasons
        .iter()
        .enumerate()
        .map(|(s, season)| SeasonMonteCarlo {
            season: season.clone(),
            seed,
            draws: draws[s * runs..(s + 1) * runs].to_vec(),
        })
        .collect())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Definition 7 against NumPy's default `numpy.quantile` (linear), by hand:
    /// x = [1, 2, 4, 8], p = 0.5 → h = 1.5 → 2 + 0.5·2 = 3; p = 0.05 → h = 0.15 →
    /// 1.15; p = 0.95 → h = 2.85 → 4 + 0.85·4 = 7.4.
    #[test]
    fn quantile_type_7() {
        let x = [1.0, 2.0, 4.0, 8.0];
        assert!((quantile(&x, 0.5) - 3.0).abs() < 1e-12);
        assert!((quantile(&x, 0.05) - 1.15).abs() < 1e-12);
        assert!((quantile(&x, 0.95) - 7.4).abs() < 1e-12);
        assert_eq!(quantile(&[5.0], 0.3), 5.0);
        assert!(quantile(&[], 0.3).is_nan());
    }
}
