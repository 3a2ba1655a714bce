//! Sweeps: one mission, many cases, each a combination of varied key values
//! ([`super::vary`]), each simulated for its seasons like `sunward run` does
//! ([`crate::mission::prepare`]), reduced to one row.
//!
//! # Cases and their verdict
//! Case `i` writes its values into the mission file, checks the file as `sunward check`
//! would, plans its route and simulates its seasons. Its row holds: `feasible` (every
//! season feasible), the number of feasible seasons, `min_soc` (the lowest state of
//! charge of any season), `hours_below_reserve` (the worst season's), `margin` (the
//! smallest season margin, state of charge above the reserve at its lowest) and the
//! binding season (the one with the smallest margin; the first in the mission's order on
//! ties) with its reason. A case whose file does not check, or whose setup a stage
//! refuses, is infeasible with the problem as its reason (the rest of the sweep goes on).
//!
//! # Reuse
//! The terrain is read and its horizon map computed once. Routes depend only on the
//! `[route]` and `[rover]` sections: cases whose two sections are the same (after their
//! values are written in) share one planned route, planned once.
//!
//! The sun positions of a season (site, start and step alike) are computed once and
//! shared by every case that has them.
//!
//! # Determinism
//! Cases run in parallel (rayon) but each is computed alone from its own inputs, and
//! results come back in case order, so any thread count and any split into shards gives
//! the same rows.

use std::collections::HashMap;
use std::path::Path;
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::{Arc, Mutex};

use rayon::prelude::*;

use crate::error::Error;
use crate::mission::prepare::{plan, sim_setup, unplannable, Ground, Models, Planned};
use crate::mission::resolve::{Mission, Season};
use crate::mission::runner::season_start;
use crate::mission::sim::{simulate, sun_steps, SimSetup, SunSteps};
use crate::mission::verdict::summarize;
use crate::mission::verdict::SeasonSummary;
use crate::plan::PlanError;
use crate::progress::Progress;
use crate::study::vary::{case_values, set, Value, Vary};
use crate::terrain::horizon::HorizonMap;

/// One case's reduced outcome.
#[derive(Debug, Clone, PartialEq)]
pub struct CaseOutcome {
    /// Every season feasible.
    pub feasible: bool,
    /// Seasons feasible.
    pub seasons_feasible: usize,
    /// Seasons run.
    pub seasons: usize,
    /// Lowest state of charge over the seasons, fraction.
    pub min_soc: f64,
    /// The worst season's hours below the reserve.
    pub hours_below_reserve: f64,
    /// Smallest season margin, fraction of capacity.
    pub margin: f64,
    /// The season with the smallest margin.
    pub binding_season: String,
    /// Its verdict's reason (or why the case could not be set up).
    pub binding_reason: String,
    /// When the binding season's state of charge was lowest (UTC, RFC 3339).
    pub binding_time: String,
}

/// One case: its index in the full grid, its values and its outcome.
#[derive(Debug, Clone, PartialEq)]
pub struct Case {
    /// Index in the full grid.
    pub index: usize,
    /// One value per varied key.
    pub values: Vec<Value>,
    /// The outcome.
    pub outcome: CaseOutcome,
}

/// The reduction of a case's season verdicts (module doc).
pub fn reduce(summaries: &[SeasonSummary]) -> CaseOutcome {
    // A season that was not simulated (its route cannot be planned: NaN margin) binds
    // before any simulated one.
    let mut worst: Option<&SeasonSummary> = None;
    for s in summaries {
        let worse =
            |w: &SeasonSummary| (s.margin.is_nan() && !w.margin.is_nan()) || s.margin < w.margin;
        if worst.is_none_or(worse) {
            worst = Some(s);
        }
    }
    let Some(w) = worst else {
        return invalid("no season to run".into());
    };
    CaseOutcome {
        feasible: summaries.iter().all(|s| s.feasible),
        seasons_feasible: summaries.iter().filter(|s| s.feasible).count(),
        seasons: summaries.len(),
        // NaN when no season was simulated.
        min_soc: summaries
            .iter()
            .map(|s| s.min_soc)
            .filter(|v| !v.is_nan())
            .reduce(f64::min)
            .unwrap_or(f64::NAN),
        hours_below_reserve: summaries
            .iter()
            .map(|s| s.hours_below_reserve)
            .fold(0.0, f64::max),
        margin: w.margin,
        binding_season: w.name.clone(),
        binding_reason: w.reason.clone(),
        binding_time: w
            .min_soc_time
            .to_rfc3339_opts(chrono::SecondsFormat::Secs, true),
    }
}

/// A case that could not be set up.
fn invalid(reason: String) -> CaseOutcome {
    CaseOutcome {
        feasible: false,
        seasons_feasible: 0,
        seasons: 0,
        min_soc: f64::NAN,
        hours_below_reserve: f64::NAN,
        margin: f64::NAN,
        binding_season: String::new(),
        binding_reason: reason,
        binding_time: String::new(),
    }
}

/// A mission and what is shared by all its cases.
pub struct Study<'a> {
    doc: toml::Table,
    base: &'a Path,
    exists: &'a (dyn Fn(&Path) -> bool + Sync),
    only: Vec<String>,
    ground: Ground,
    horizons: HorizonMap,
    models: Models,
    /// Sun positions by site, start and step, shared between cases.
    suns: Mutex<HashMap<String, Arc<SunSteps>>>,
}

/// A case's mission, or why it has none.
type Prepared = Result<Mission, String>;

/// A planned route, an unplannable verdict, or why planning failed.
type PlanOutcome = Result<Result<Planned, PlanError>, String>;

impl<'a> Study<'a> {
    /// Reads the base mission's terrain and computes its horizon map. `text` is the
    /// mission file (checked already), `base` its folder, `exists` the file lookup,
    /// `only` the season filter of `--season`, `weather_csv` the text of the mission's
    /// weather file when it has one (`sky = "csv"`; parsed once for every case).
    pub fn new(
        text: &str,
        base: &'a Path,
        exists: &'a (dyn Fn(&Path) -> bool + Sync),
        only: &[String],
        weather_csv: Option<&str>,
        progress: &dyn Progress,
    ) -> Result<Study<'a>, Error> {
        let m = crate::mission::check(text, base, exists).map_err(|p| {
            Error::Usage(format!(
                "the mission file does not check: {}. Fix: run `sunward check` on it",
                p.iter()
                    .map(|p| p.to_string())
                    .collect::<Vec<_>>()
                    .join("; ")
            ))
        })?;
        crate::mission::prepare::select_seasons(&m, only)?;
        let doc: toml::Table = toml::from_str(text)
            .map_err(|e| Error::Usage(format!("the mission file is not TOML: {e}")))?;
        let models = Models::with_weather(&m, weather_csv)?;
        let ground = Ground::load(&m)?;
        // Routes are planned in parallel: one set of planner arrays per thread.
        let cells = ground.dem.len() as u64;
        let threads = rayon::current_num_threads() as u64;
        let need = crate::limits::planner_bytes(cells).saturating_mul(threads)
            + crate::limits::horizon_bytes(cells, crate::terrain::horizon::DEFAULT_SECTORS as u64);
        crate::limits::check_grid(
            &m.terrain.dem_path,
            &format!("the route planner's arrays for {threads} thread(s) and the horizon maps"),
            (ground.dem.width(), ground.dem.height()),
            need,
            m.terrain.read.max_memory_mb,
        )?;
        let horizons = crate::terrain::horizon::horizon_map(
            &ground.dem,
            crate::terrain::horizon::DEFAULT_SECTORS,
            progress,
        )?;
        Ok(Study {
            doc,
            base,
            exists,
            only: only.to_vec(),
            ground,
            horizons,
            models,
            suns: Mutex::new(HashMap::new()),
        })
    }

    /// The mission with `values` written at the keys of `varies`.
    pub fn mission(&self, varies: &[Vary], values: &[Value]) -> Prepared {
        self.case(varies, values).0
    }

    /// The mission of a case and the part of it its route depends on (module doc; None
    /// when the mission is not valid), from one writing of the values.
    fn case(&self, varies: &[Vary], values: &[Value]) -> (Prepared, Option<String>) {
        let mut doc = self.doc.clone();
        for (v, x) in varies.iter().zip(values) {
            if let Err(e) = set(&mut doc, &v.key, *x) {
                return (Err(format!("{} = {}: {e}", v.key, x.text())), None);
            }
        }
        let text = match toml::to_string(&doc) {
            Ok(t) => t,
            Err(e) => return (Err(e.to_string()), None),
        };
        let describe = || {
            varies
                .iter()
                .zip(values)
                .map(|(v, x)| format!("{} = {}", v.key, x.text()))
                .collect::<Vec<_>>()
                .join(", ")
        };
        let mission = crate::mission::check(&text, self.base, self.exists).map_err(|p| {
            format!(
                "with {}: {}",
                describe(),
                p.iter()
                    .map(|p| p.to_string())
                    .collect::<Vec<_>>()
                    .join("; ")
            )
        });
        let pick = |k: &str| doc.get(k).map(|v| toml::to_string(v).unwrap_or_default());
        let route = mission
            .is_ok()
            .then(|| format!("{:?}|{:?}", pick("route"), pick("rover")));
        (mission, route)
    }

    /// The seasons a case runs.
    fn seasons(&self, m: &Mission) -> Result<Vec<Season>, String> {
        crate::mission::prepare::select_seasons(m, &self.only).map_err(|e| e.to_string())
    }

    /// Simulates one mission along `planned` (or its unplannable verdict).
    pub fn outcome(&self, m: &Mission, planned: &Result<Planned, PlanError>) -> CaseOutcome {
        let seasons = match self.seasons(m) {
            Ok(s) => s,
            Err(e) => return invalid(e),
        };
        let summaries: Vec<SeasonSummary> = match planned {
            Err(e) => unplannable(m, &seasons, e)
                .into_iter()
                .map(|r| r.summary)
                .collect(),
            Ok(p) => {
                let models = match self.models.for_variant(m) {
                    Ok(x) => x,
                    Err(e) => return invalid(e.to_string()),
                };
                let setup = sim_setup(m, &models, p, Some(&self.horizons));
                let mut out = Vec::with_capacity(seasons.len());
                for season in &seasons {
                    match self.season_summary(&setup, season) {
                        Ok(s) => out.push(s),
                        Err(e) => return invalid(e.to_string()),
                    }
                }
                out
            }
        };
        reduce(&summaries)
    }

    /// One season of one case, with the sun positions shared between the cases that
    /// have the same site, start and step (computed once, the same to the bit).
    fn season_summary(
        &self,
        setup: &SimSetup<'_>,
        season: &Season,
    ) -> Result<SeasonSummary, crate::mission::sim::SimError> {
        let start = season_start(season.date, setup.utc_offset_s, setup.start_local_h);
        let key = format!(
            "{:?}|{}|{}|{}|{}",
            setup.sky.observer, setup.sky.delta_t_s, start, setup.step_s, setup.policy.deadline_s
        );
        let cached = self.suns.lock().ok().and_then(|c| c.get(&key).cloned());
        let suns = match cached {
            Some(t) => t,
            None => {
                let t = Arc::new(sun_steps(setup, start)?);
                if let Ok(mut c) = self.suns.lock() {
                    c.insert(key, t.clone());
                }
                t
            }
        };
        let mut with_sun = setup.clone();
        with_sun.sun_steps = Some(&suns);
        let run = simulate(&with_sun, start)?;
        Ok(summarize(
            &season.name,
            season.date,
            &run,
            setup.pack.params().reserve_soc,
            setup.route.summary.length_m,
        ))
    }

    /// Plans `m`'s route.
    pub fn plan(&self, m: &Mission) -> PlanOutcome {
        plan(m, &self.ground).map_err(|e| e.to_string())
    }

    /// Runs the cases `indices` of the grid of `varies`, in parallel, reporting each
    /// finished case to `progress`. Rows come back in the order of `indices`.
    pub fn run(&self, varies: &[Vary], indices: &[usize], progress: &dyn Progress) -> Vec<Case> {
        let values: Vec<Vec<Value>> = indices.iter().map(|&i| case_values(varies, i)).collect();
        let (missions, keys): (Vec<Prepared>, Vec<Option<String>>) =
            values.par_iter().map(|v| self.case(varies, v)).unzip();
        // Plan each distinct route once.
        let mut first_of: HashMap<&str, usize> = HashMap::new();
        for (i, k) in keys.iter().enumerate() {
            if let Some(k) = k {
                first_of.entry(k.as_str()).or_insert(i);
            }
        }
        let mut distinct: Vec<(&str, usize)> = first_of.into_iter().collect();
        distinct.sort_by_key(|x| x.1);
        progress.start("routes", distinct.len() as u64);
        let done = AtomicU64::new(0);
        let plans: HashMap<&str, Arc<PlanOutcome>> = distinct
            .par_iter()
            .map(|(k, i)| {
                let m = missions[*i].as_ref().expect("keys only for valid missions");
                let p = self.plan(m);
                progress.update(done.fetch_add(1, Ordering::Relaxed) + 1);
                (*k, Arc::new(p))
            })
            .collect();
        progress.finish();
        progress.start("cases", indices.len() as u64);
        let done = AtomicU64::new(0);
        let out = indices
            .par_iter()
            .zip(values.par_iter())
            .zip(missions.par_iter().zip(keys.par_iter()))
            .map(|((&index, values), (m, key))| {
                let outcome = match (m, key) {
                    (Err(e), _) => invalid(e.clone()),
                    (Ok(m), Some(k)) => match plans[k.as_str()].as_ref() {
                        Err(e) => invalid(e.clone()),
                        Ok(planned) => self.outcome(m, planned),
                    },
                    (Ok(_), None) => invalid("the case's values could not be written".into()),
                };
                progress.update(done.fetch_add(1, Ordering::Relaxed) + 1);
                Case {
                    index,
                    values: values.clone(),
                    outcome,
                }
            })
            .collect();
        progress.finish();
        out
    }
}

/// The case indices of shard `k` of `n` (1-based `k`): every `n`-th case from `k - 1`,
/// so that shards of a sweep whose cost grows along a key still balance.
pub fn shard_indices(total: usize, k: usize, n: usize) -> Vec<usize> {
    (k.saturating_sub(1)..total).step_by(n.max(1)).collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::mission::verdict::Consumed;

    fn season(name: &str, min_soc: f64, margin: f64) -> SeasonSummary {
        let at = chrono::DateTime::from_timestamp(0, 0).unwrap();
        SeasonSummary {
            name: name.into(),
            date: at.date_naive(),
            feasible: margin > 0.0,
            arrival_time: None,
            stranded: None,
            min_soc,
            min_soc_time: at,
            hours_below_reserve: 0.0,
            energy_generated_wh: 0.0,
            energy_consumed_wh: Consumed {
                drive: 0.0,
                hotel: 0.0,
                payload: 0.0,
                heater: 0.0,
                losses: 0.0,
            },
            margin,
            energy_curtailed_wh: 0.0,
            distance_m: 0.0,
            storage_breach_time: None,
            reason: format!("{name} reason"),
        }
    }

    /// The smallest margin binds; a season that was not simulated (NaN margin, its
    /// route cannot be planned) binds before any simulated one, and with no simulated
    /// season the case has no lowest state of charge (NaN, not +∞ or a full pack).
    #[test]
    fn reduce_binds_the_smallest_margin_and_an_unsimulated_season_first() {
        let o = reduce(&[season("a", 0.6, 0.4), season("b", 0.3, 0.1)]);
        assert_eq!(
            (o.binding_season.as_str(), o.margin, o.min_soc),
            ("b", 0.1, 0.3)
        );
        assert!(o.feasible);
        let o = reduce(&[season("a", 0.6, 0.4), season("n", f64::NAN, f64::NAN)]);
        assert_eq!((o.binding_season.as_str(), o.min_soc), ("n", 0.6));
        assert!(o.margin.is_nan() && !o.feasible);
        let o = reduce(&[
            season("n", f64::NAN, f64::NAN),
            season("m", f64::NAN, f64::NAN),
        ]);
        assert!(o.min_soc.is_nan() && o.margin.is_nan() && !o.feasible);
        assert_eq!(o.binding_season, "n");
    }
}
