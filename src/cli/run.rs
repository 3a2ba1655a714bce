//! `sunward run MISSION.toml`: check the mission, plan the route, simulate every season
//! and write the verdict, the time series, the daily budgets and the route.

use std::path::{Path, PathBuf};

use clap::Args;

use sunward::mission::prepare::{self, select_seasons, sim_setup, Ground, Models};
use sunward::mission::resolve::{Mission, Season, Sky};
use sunward::mission::runner::{run_seasons_with, SeasonResult};
use sunward::mission::{check, Problem};
use sunward::plan::route::locate;
use sunward::plan::{Planner, Route};
use sunward::report::atomic::Staging;
use sunward::report::csv::{daily_rows, timeseries_csv, DAILY_HEADER};
use sunward::report::html::{report_html, Figure, PageContext};
use sunward::report::json::{monte_carlo_json, summary, summary_json};
use sunward::report::map::route_map_rgb;
use sunward::report::montecarlo_plot::monte_carlo_chart;
use sunward::report::plot::{render_png, render_svg};
use sunward::report::season_plot::{season_chart, seasons_chart};
use sunward::study::montecarlo::{monte_carlo, SeasonMonteCarlo, DEFAULT_SEED};
use sunward::sun::clearness_mc::DailyClearness;
use sunward::terrain::io::png;
use sunward::terrain::{hillshade, horizon, Dem};
use sunward::vehicle::plan_model::RoverStepModel;
use sunward::Error;

use super::progress::Bar;
use super::route::{profile_csv, route_geojson, summary_json as route_summary_json};

#[derive(Debug, Args)]
pub struct RunArgs {
    /// The mission file (TOML; `sunward check` validates it).
    mission: PathBuf,
    /// Folder for the outputs (created if missing).
    #[arg(long, value_name = "DIR", default_value = "sunward-out")]
    out: PathBuf,
    /// Run only the seasons whose name contains this text (repeat for several).
    #[arg(long, value_name = "NAME")]
    season: Vec<String>,
    /// Exit with code 1 when any season is infeasible.
    #[arg(long)]
    fail_on_infeasible: bool,
    /// No progress display.
    #[arg(long, short = 'q')]
    quiet: bool,
    /// Also run N sampled-weather runs per season (daily clear-sky index drawn from the
    /// monthly `clearness` and `clearness_sd` of [weather], sky = "clearness").
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u32).range(1..=100_000))]
    monte_carlo: Option<u32>,
    /// Seed of the Monte Carlo draws (same seed, same result).
    #[arg(long, value_name = "S", requires = "monte_carlo", default_value_t = DEFAULT_SEED)]
    seed: u64,
    /// `fixed`: the A* route driven by the mission's policy. `sun-aware`: per season, a
    /// route and a schedule of holds from a time-dependent search that keeps the reserve,
    /// leg by leg through the waypoints and the sites (the fixed route's site order and
    /// payload runs); the fixed route's verdicts are printed beside it.
    #[arg(long, value_enum, default_value_t = PlannerKind::Fixed)]
    planner: PlannerKind,
    /// With --planner sun-aware: `arrival` for the earliest arrival that keeps the
    /// reserve, `charge` for the most charge at the goal (a longer search).
    #[arg(long, value_enum, default_value_t = SunAwareGoal::Arrival)]
    sun_aware_objective: SunAwareGoal,
}

/// What the sun-aware search optimises.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum SunAwareGoal {
    /// Earliest arrival.
    Arrival,
    /// Most charge at the goal.
    Charge,
}

/// Which planner `run` uses.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum PlannerKind {
    /// The fixed route with the mission's policy.
    Fixed,
    /// Route and schedule from the sun-aware search.
    SunAware,
}

/// The weather Monte Carlo of a run.
struct MonteCarlo {
    runs: usize,
    seed: u64,
    results: Vec<SeasonMonteCarlo>,
}

/// The daily laws of the mission's sky for `--monte-carlo` (refused unless the mission
/// gives monthly clearness means and sds).
fn daily_laws(path: &Path, m: &Mission) -> Result<DailyClearness, Error> {
    let refuse = |what: &str, fix: &str| {
        Error::Usage(format!(
            "{}: --monte-carlo samples the daily clear-sky index from the monthly clearness \
             means and their standard deviation; {what}. Fix: {fix}",
            path.display()
        ))
    };
    let sd_fix = "add [weather] clearness_sd (one number or twelve, one per month)";
    let (monthly, sd) = match (&m.weather.sky, &m.weather.clearness_sd) {
        (Sky::Clearness { monthly, .. }, Some(sd)) => (monthly, sd),
        (Sky::Clearness { .. }, None) => {
            return Err(refuse(
                "this mission gives the monthly clearness means but no clearness_sd",
                sd_fix,
            ))
        }
        (Sky::Csv { .. }, _) => {
            return Err(refuse(
                "this mission uses a measured weather record (sky = \"csv\"), which is not \
                 sampled",
                "set [weather] sky = \"clearness\" with the twelve monthly clearness means \
                 and clearness_sd, or run without --monte-carlo",
            ))
        }
        (Sky::ClearSky(_), _) => {
            return Err(refuse(
                "this mission uses the clear sky (sky = \"clear_sky\"), which has no monthly \
                 clearness",
                "set [weather] sky = \"clearness\" with the twelve monthly clearness means \
                 and clearness_sd (one number or twelve)",
            ))
        }
    };
    DailyClearness::new(monthly, sd).map_err(|e| {
        Error::Usage(format!(
            "{}: [weather] clearness_sd: {e}. Fix: give a smaller sd",
            path.display()
        ))
    })
}

/// Reads and checks the mission file, listing every problem on failure.
pub fn load_mission(path: &Path) -> Result<Mission, Error> {
    let text = std::fs::read_to_string(path).map_err(|source| Error::Input {
        path: path.to_path_buf(),
        source,
    })?;
    let base = path.parent().unwrap_or(Path::new("")).to_path_buf();
    let file = path.display().to_string();
    check(&text, &base, &|p: &Path| p.is_file()).map_err(|problems: Vec<Problem>| Error::Mission {
        file: path.to_path_buf(),
        problems: problems.iter().map(|p| p.render(&file)).collect(),
    })
}

/// The mission's checked models, with the weather file read when the mission has one.
/// The text of the mission's weather file, when it has one (`sky = "csv"`).
pub fn weather_text(m: &Mission) -> Result<Option<String>, Error> {
    match &m.weather.sky {
        Sky::Csv { path } => {
            std::fs::read_to_string(path)
                .map(Some)
                .map_err(|source| Error::Input {
                    path: path.clone(),
                    source,
                })
        }
        _ => Ok(None),
    }
}

pub fn load_models(m: &Mission) -> Result<Models, Error> {
    Models::with_weather(m, weather_text(m)?.as_deref())
}

pub fn run(a: RunArgs) -> Result<(), Error> {
    let feasible = run_with(&a)?;
    if a.fail_on_infeasible && !feasible {
        std::process::exit(1);
    }
    Ok(())
}

/// A mission run whose outputs are staged: what it prints once they are in place.
pub struct Finished {
    /// Every season feasible.
    pub feasible: bool,
    /// The mission's input files (never replaced or removed by the outputs).
    pub inputs: Vec<PathBuf>,
    /// The lines for standard output.
    lines: Vec<String>,
}

impl Finished {
    /// Prints the verdicts (call after the outputs are committed).
    pub fn print(&self) {
        for l in &self.lines {
            crate::say!("{l}");
        }
    }

    /// Moves a run's staged outputs into place: summary.json last, and the previous
    /// run's outputs that this run did not write removed.
    pub fn commit(&self, staged: Staging, is_own: impl Fn(&str) -> bool) -> Result<(), Error> {
        let inputs: Vec<&Path> = self.inputs.iter().map(|p| p.as_path()).collect();
        staged.commit("summary.json", is_own, &inputs)
    }
}

/// The fixed names of `run`'s outputs.
const RUN_OUTPUTS: [&str; 11] = [
    "summary.json",
    "report.html",
    "daily-budget.csv",
    "route.geojson",
    "profile.csv",
    "route_map.png",
    "route_map.svg",
    "seasons.png",
    "seasons.svg",
    "montecarlo.png",
    "montecarlo.svg",
];

/// Whether `name` is one of `run`'s outputs (a fixed name, or a per-season name with a
/// season slug): a previous run's file of such a name that this run does not write is
/// removed with the new set.
pub fn is_run_output(name: &str) -> bool {
    let slugged = |prefix: &str, suffix: &str| {
        name.strip_prefix(prefix)
            .and_then(|r| r.strip_suffix(suffix))
            .is_some_and(|s| {
                !s.is_empty()
                    && s.bytes()
                        .all(|b| b.is_ascii_lowercase() || b.is_ascii_digit() || b == b'-')
            })
    };
    RUN_OUTPUTS.contains(&name)
        || slugged("timeseries-", ".csv")
        || slugged("season-", ".png")
        || slugged("season-", ".svg")
        || slugged("route-sun-aware-", ".geojson")
}

/// The files a mission reads.
fn mission_inputs(path: &Path, m: &Mission) -> Vec<PathBuf> {
    let mut v = vec![path.to_path_buf(), m.terrain.dem_path.clone()];
    v.extend(m.terrain.keep_out_path.clone());
    if let Sky::Csv { path } = &m.weather.sky {
        v.push(path.clone());
    }
    v
}

/// Creates `out` and checks it can take the outputs, before any long work.
pub fn prepare_out(out: &Path, inputs: &[&Path]) -> Result<(), Error> {
    std::fs::create_dir_all(out).map_err(|source| Error::Output {
        path: out.to_path_buf(),
        source,
    })?;
    super::check_output(&out.join("summary.json"), inputs)
}

/// Runs a mission file into the staged set `staged` (for `sunward demo`, which adds its
/// own files before the commit).
pub fn run_mission(
    mission: &Path,
    staged: &mut Staging,
    only: &[String],
    quiet: bool,
) -> Result<Finished, Error> {
    let a = RunArgs {
        mission: mission.to_path_buf(),
        out: staged.out().to_path_buf(),
        season: only.to_vec(),
        fail_on_infeasible: false,
        quiet,
        planner: PlannerKind::Fixed,
        sun_aware_objective: SunAwareGoal::Arrival,
        monte_carlo: None,
        seed: DEFAULT_SEED,
    };
    let m = load_mission(&a.mission)?;
    run_staged(&a, &m, None, staged)
}

fn run_with(a: &RunArgs) -> Result<bool, Error> {
    let m = load_mission(&a.mission)?;
    // Refused before the output folder is touched.
    let laws = match a.monte_carlo {
        Some(_) => Some(daily_laws(&a.mission, &m)?),
        None => None,
    };
    prepare_out(&a.out, &[&a.mission])?;
    let mut staged = Staging::new(&a.out)?;
    let done = run_staged(a, &m, laws, &mut staged)?;
    done.commit(staged, is_run_output)?;
    done.print();
    Ok(done.feasible)
}

/// Plans, simulates and stages every output of the run (nothing in `a.out` changes);
/// `laws` are the daily laws of `--monte-carlo` ([`daily_laws`]), None without it.
fn run_staged(
    a: &RunArgs,
    m: &Mission,
    laws: Option<DailyClearness>,
    staged: &mut Staging,
) -> Result<Finished, Error> {
    let inputs = mission_inputs(&a.mission, m);
    super::check_series_memory(&a.mission, m)?;
    let models = load_models(m)?;
    let ground = Ground::load(m).map_err(|e| e.in_mission(&a.mission))?;
    let cells = ground.dem.len() as u64;
    let need = sunward::limits::planner_bytes(cells)
        + sunward::limits::horizon_bytes(cells, horizon::DEFAULT_SECTORS as u64);
    let what = "the route planner's arrays and the horizon maps";
    super::check_memory(
        &m.terrain.read,
        &m.terrain.dem_path,
        &ground.dem,
        what,
        need,
    )?;
    let seasons = select_seasons(m, &a.season)?;
    prepare::check_weather_span(m, &models, &seasons)?;
    let planned = match prepare::plan(m, &ground)? {
        Ok(p) => p,
        Err(e) => return unplannable(m, &seasons, &e, staged, inputs),
    };
    let model = RoverStepModel::new(&m.rover);
    let planner = ground.planner(m, &model);
    let visits = sun_aware_visits(m, &planned.order);
    if a.planner == PlannerKind::SunAware {
        check_sun_aware(m, &planner, &visits)?;
        // The label searches of the seasons that run at once, on top of the planner's
        // arrays and the horizon maps.
        let at_once = rayon::current_num_threads().min(seasons.len()).max(1) as u64;
        let labels = sun_aware_settings(a)
            .label_memory_bytes()
            .saturating_mul(at_once);
        let what = format!(
            "the route planner's arrays, the horizon maps and the sun-aware label search \
             ({at_once} season(s) at once)"
        );
        sunward::limits::check(
            &m.terrain.dem_path,
            what,
            need.saturating_add(labels),
            m.terrain.read.max_memory_mb,
            "use --planner fixed, or fewer seasons (--season)",
        )?;
    }
    let route = &planned.route;
    if !a.quiet {
        eprintln!(
            "route: {:.0} m, {:.0} Wh, {:.1} h of driving",
            route.summary.length_m,
            sunward::units::j_to_wh(route.summary.energy_j),
            route.summary.duration_s / 3600.0
        );
    }
    let silent = sunward::progress::Silent;
    let bar = Bar::new();
    let progress: &dyn sunward::progress::Progress = if a.quiet { &silent } else { &bar };
    let horizons = horizon::horizon_map(&ground.dem, horizon::DEFAULT_SECTORS, progress)?;
    let setup = sim_setup(m, &models, &planned, Some(&horizons));
    let results = run_seasons_with(&setup, &seasons, progress)
        .map_err(|e| Error::Usage(format!("{}: {e}", m.site.name)))?;
    let mc = match (a.monte_carlo, &laws) {
        (Some(n), Some(laws)) => {
            if !a.quiet {
                eprintln!("weather Monte Carlo: {n} runs per season, seed {}", a.seed);
            }
            let results = monte_carlo(&setup, &seasons, laws, n as usize, a.seed, progress)
                .map_err(|e| Error::Usage(format!("{}: {e}", m.site.name)))?;
            Some(MonteCarlo {
                runs: n as usize,
                seed: a.seed,
                results,
            })
        }
        _ => None,
    };
    let mission_dir = a.mission.parent().unwrap_or(Path::new(""));
    let (results, cmp) = match a.planner {
        PlannerKind::Fixed => (results, None),
        PlannerKind::SunAware => {
            let (r, c) = sun_aware(
                a, m, &planner, &setup, &seasons, &visits, results, progress, staged,
            )?;
            (r, Some(c))
        }
    };
    write_outputs(
        mission_dir,
        staged,
        m,
        &ground.dem,
        route,
        &planner,
        &results,
        mc.as_ref(),
        cmp.as_ref(),
    )?;
    let mut lines = verdict_lines(m, &results, &a.out);
    if let Some(mc) = &mc {
        lines.extend(monte_carlo_lines(mc, m.battery.reserve_soc));
    }
    Ok(Finished {
        feasible: results.iter().all(|r| r.summary.feasible),
        inputs,
        lines,
    })
}

/// The points the sun-aware plan visits between start and goal: the waypoints in their
/// order, then the sites in the fixed route's visiting order with their payload runs.
fn sun_aware_visits(m: &Mission, order: &[usize]) -> Vec<sunward::mission::sunaware::Visit> {
    use sunward::mission::sunaware::Visit;
    let waypoints = m.route.waypoints.iter().map(|w| Visit {
        point: w.point.clone(),
        payload_s: None,
    });
    let sites = order.iter().map(|&i| Visit {
        point: m.route.sites[i].place.point.clone(),
        payload_s: Some(m.route.sites[i].payload_s),
    });
    waypoints.chain(sites).collect()
}

/// The sun-aware search settings `run` uses.
fn sun_aware_settings(a: &RunArgs) -> sunward::mission::sunaware::SunAwareSettings {
    use sunward::mission::sunaware::{SunAwareObjective, SunAwareSettings};
    SunAwareSettings {
        objective: match a.sun_aware_objective {
            SunAwareGoal::Arrival => SunAwareObjective::EarliestArrival,
            SunAwareGoal::Charge => SunAwareObjective::MostCharge,
        },
        ..SunAwareSettings::default()
    }
}

/// What `--planner sun-aware` cannot plan is refused before the seasons run: a site in
/// the goal's cell (the run ends on arrival, so its payload run would never happen).
fn check_sun_aware(
    m: &Mission,
    planner: &Planner<'_, RoverStepModel<'_>>,
    visits: &[sunward::mission::sunaware::Visit],
) -> Result<(), Error> {
    use sunward::mission::sunaware::check_visits;
    check_visits(planner, &m.route.start.point, visits, &m.route.goal.point).map_err(|e| {
        Error::Usage(format!(
            "{}: --planner sun-aware cannot plan this route: {e}. Fix: move the site or the \
             goal into another cell, or use --planner fixed",
            m.site.name
        ))
    })?;
    Ok(())
}

/// The fixed route's runs beside the sun-aware plans': table rows for the report, one
/// chart per season and the summary.json object.
struct Comparison {
    rows: Vec<(String, String, String)>,
    /// Each planned season's sun-aware route (for the route map).
    routes: Vec<(String, Route)>,
    charts: Vec<(String, sunward::report::plot::LineChart)>,
    json: serde_json::Value,
}

/// `--planner sun-aware`: plans and replays every season, writes each season's route,
/// prints the fixed route's verdicts beside the sun-aware ones; returns the sun-aware
/// results (a season without a plan keeps the fixed route's) and the comparison.
#[allow(clippy::too_many_arguments)]
fn sun_aware(
    a: &RunArgs,
    m: &Mission,
    planner: &Planner<'_, RoverStepModel<'_>>,
    setup: &sunward::mission::sim::SimSetup<'_>,
    seasons: &[Season],
    visits: &[sunward::mission::sunaware::Visit],
    fixed: Vec<SeasonResult>,
    progress: &dyn sunward::progress::Progress,
    staged: &mut Staging,
) -> Result<(Vec<SeasonResult>, Comparison), Error> {
    use sunward::mission::sunaware::run_seasons_sun_aware_with;
    let (start, goal) = (&m.route.start.point, &m.route.goal.point);
    let settings = sun_aware_settings(a);
    let planned = run_seasons_sun_aware_with(
        planner, setup, seasons, start, visits, goal, &settings, progress,
    )
    .map_err(|e| Error::Usage(format!("{}: {e}", m.site.name)))?;
    crate::say!(
        "{}: fixed route and sun-aware plan side by side",
        m.site.name
    );
    let offset = m.site.utc_offset.local_minus_utc();
    let mut cmp = Comparison {
        rows: Vec::new(),
        routes: Vec::new(),
        charts: Vec::new(),
        json: serde_json::Value::Array(Vec::new()),
    };
    let mut seasons_json = Vec::new();
    for (f, s) in fixed.iter().zip(&planned) {
        let verdict = |r: &SeasonResult| {
            let v = if r.summary.feasible {
                "FEASIBLE"
            } else {
                "INFEASIBLE"
            };
            format!("{v} (min SOC {})", r.summary.min_soc_text())
        };
        let side = |r: &SeasonResult| {
            serde_json::json!({
                "feasible": r.summary.feasible,
                "min_soc": r.summary.min_soc,
                "energy_generated_wh": r.summary.energy_generated_wh,
                "reason": r.summary.reason,
            })
        };
        let mut sun_json = side(&s.result);
        let plan = match &s.plan {
            Ok(p) => {
                let held = p.waiting_s() / 3600.0;
                let rs = route_summary_json(&p.route, planner.objective, &m.rover, &planner.limits);
                let gj = serde_json::to_string(&route_geojson(&p.route, &rs))
                    .expect("JSON values serialise");
                let name = format!("route-sun-aware-{}.geojson", slug(&f.season.name));
                staged.write(&name, |w| w.write_all(gj.as_bytes()))?;
                cmp.routes.push((f.season.name.clone(), p.route.clone()));
                let t0 = sunward::mission::runner::season_start(
                    f.season.date,
                    i64::from(offset),
                    m.start_local_h,
                );
                let holds: Vec<serde_json::Value> = p
                    .holds
                    .iter()
                    .filter_map(|h| {
                        let row = p.route.profile.get(h.row)?;
                        let until = t0 + chrono::Duration::milliseconds((h.until_s * 1e3) as i64);
                        Some(serde_json::json!({
                            "x": row.x, "y": row.y,
                            "until": until.to_rfc3339_opts(chrono::SecondsFormat::Secs, true),
                        }))
                    })
                    .collect();
                sun_json["planned"] = true.into();
                sun_json["route_file"] = name.clone().into();
                sun_json["route_length_m"] = p.route.summary.length_m.into();
                sun_json["hours_not_driving"] = held.into();
                sun_json["holds"] = holds.into();
                sun_json["legs"] = serde_json::to_value(&p.legs).expect("JSON values serialise");
                format!(
                    "{}, {:.0} m, {} hold(s), {} payload run(s), {held:.1} h not driving, \
                     arrival after {:.1} h ({name})",
                    verdict(&s.result),
                    p.route.summary.length_m,
                    p.holds.len(),
                    p.stops.len(),
                    p.arrival_s / 3600.0
                )
            }
            Err(e) => {
                sun_json["planned"] = false.into();
                sun_json["no_plan"] = e.to_string().into();
                format!("{e}; the fixed route's run is reported")
            }
        };
        crate::say!("  {:<18} fixed: {}", f.season.name, verdict(f));
        crate::say!("  {:<18} sun-aware: {plan}", "");
        cmp.rows.push((
            f.season.name.clone(),
            format!("{} — {}", verdict(f), f.summary.reason),
            plan,
        ));
        cmp.charts.push((
            format!("season-{}-planners", slug(&f.season.name)),
            sunward::report::season_plot::planners_chart(
                &m.site.name,
                f,
                &s.result,
                m.step_s,
                offset,
            ),
        ));
        seasons_json.push(serde_json::json!({
            "name": f.season.name,
            "fixed_route": side(f),
            "sun_aware": sun_json,
        }));
    }
    cmp.json = serde_json::Value::Array(seasons_json);
    Ok((planned.into_iter().map(|s| s.result).collect(), cmp))
}

fn slug(name: &str) -> String {
    name.chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() {
                c.to_ascii_lowercase()
            } else {
                '-'
            }
        })
        .collect()
}

/// The route cannot be planned: every season is infeasible, stranded at its start by
/// the limit that closes the way (see `sunward::mission::prepare::unplannable`). Stages
/// summary.json and report.html, both with that verdict; the commit removes the previous
/// run's other outputs (time series, plots, route), which would not belong to it.
fn unplannable(
    m: &Mission,
    seasons: &[Season],
    e: &sunward::plan::PlanError,
    staged: &mut Staging,
    inputs: Vec<PathBuf>,
) -> Result<Finished, Error> {
    let results = prepare::unplannable(m, seasons, e);
    let inputs_json = serde_json::json!({"route": "not plannable", "reason": e.to_string()});
    let mut doc = summary(&m.site.name, &results, inputs_json);
    doc.cautions = run_cautions(m);
    let text = summary_json(&doc);
    staged.write("summary.json", |w| w.write_all(text.as_bytes()))?;
    let mut ctx = page_context_without_route(m);
    ctx.route_line = "Route: none. The route cannot be planned (the reason is in the \
                      verdict table), so the rover stays at the start and no season is \
                      simulated."
        .to_string();
    let html = report_html(&ctx, &results, &[]);
    staged.write("report.html", |w| w.write_all(html.as_bytes()))?;
    let out = staged.out().display().to_string();
    let lines = vec![
        format!(
            "{}: the route cannot be planned, so no season is feasible.",
            m.site.name
        ),
        format!("  {e}"),
        format!("summary.json and report.html written to {out}"),
    ];
    Ok(Finished {
        feasible: false,
        inputs,
        lines,
    })
}

/// The page's fixed text: the route and the assumptions with their sources.
fn page_context(m: &Mission, route: &Route) -> PageContext {
    PageContext {
        route_line: format!(
            "Route: {:.0} m along the ground, {:.0} Wh of battery energy, {:.1} h of driving \
             (planned by exact A* on the terrain grid).",
            route.summary.length_m,
            sunward::units::j_to_wh(route.summary.energy_j),
            route.summary.duration_s / 3600.0
        ),
        ..page_context_without_route(m)
    }
}

/// The page's fixed text without a route line: the assumptions with their sources.
fn page_context_without_route(m: &Mission) -> PageContext {
    let a = |w: &str, v: String, s: &str| (w.to_string(), v, s.to_string());
    PageContext {
        comparison: Vec::new(),
        cautions: run_cautions(m),
        mission: m.site.name.clone(),
        route_line: String::new(),
        assumptions: vec![
            a(
                "sun position",
                "NREL SPA".into(),
                "Reda and Andreas, NREL/TP-560-34302",
            ),
            match &m.weather.sky {
                Sky::Csv { path } => a(
                    "irradiance",
                    format!("measured weather, {}", path.display()),
                    "weather file; linear between records, beam closed on GHI",
                ),
                Sky::Clearness { .. } => a(
                    "irradiance",
                    "clear sky (Ineichen and Perez) scaled by the monthly clearness index".into(),
                    "Ineichen and Perez, Solar Energy 73(3), 2002; monthly clearness from the \
                     mission file ([weather] clearness)",
                ),
                Sky::ClearSky(_) => a(
                    "irradiance",
                    "clear sky (Ineichen and Perez) with monthly Linke turbidity".into(),
                    "Ineichen and Perez, Solar Energy 73(3), 2002",
                ),
            },
            a(
                "panel plane (sky diffuse)",
                sky_model_words(m.weather.sky_model).into(),
                "mission file ([weather] sky_model)",
            ),
            a(
                "ground albedo",
                format!("{}", m.weather.albedo),
                "mission file",
            ),
            a(
                "terrain shading",
                "32 horizon sectors".into(),
                "convex-hull sweeps, Stewart 1998",
            ),
            a(
                "traction",
                format!("C_rr {}", m.rover.rolling_resistance),
                "mission file; Bekker / Wong (2008) for soils",
            ),
            a(
                "drive efficiency",
                format!("{}", m.rover.drive_efficiency),
                "mission file",
            ),
            a(
                "battery",
                format!(
                    "{} {}",
                    m.battery
                        .size_words()
                        .unwrap_or_else(|| "NaN Wh".to_string()),
                    m.battery.chemistry.preset().name
                ),
                "mission file; OCV tables from PyBaMM parameter sets",
            ),
            a(
                "battery box heating",
                format!(
                    "{} of the electronics' power",
                    m.thermal.electronics_heat_share
                ),
                "mission file ([thermal] electronics_heat_share; default 0.3 is an assumption)",
            ),
            a(
                "start of each season",
                format!(
                    "{} local time, full pack",
                    sunward::units::clock_hhmm(m.start_local_h)
                ),
                "sunward convention",
            ),
            a("simulation step", format!("{} s", m.step_s), "mission file"),
        ],
    }
}

/// The sky-diffuse transposition model in plain words, with its publication.
fn sky_model_words(model: sunward::sun::transposition::SkyModel) -> &'static str {
    use sunward::sun::transposition::SkyModel;
    match model {
        SkyModel::Isotropic => "isotropic sky (Liu and Jordan 1963)",
        SkyModel::HayDavies => "circumsolar and isotropic sky (Hay and Davies 1980)",
        SkyModel::Perez => "circumsolar, horizon band and isotropic sky (Perez et al. 1990)",
    }
}

/// The cautions of a run: the light caution names the mission's source of sunlight.
fn run_cautions(m: &Mission) -> [&'static str; 4] {
    sunward::report::json::cautions_for_sky(&m.weather.sky)
}

/// The terrain path as the mission file gives it (relative to the mission's folder), so
/// that summary.json does not depend on where the mission was run from.
fn terrain_label(m: &Mission, mission_dir: &Path) -> String {
    let p = &m.terrain.dem_path;
    p.strip_prefix(mission_dir)
        .unwrap_or(p)
        .display()
        .to_string()
}

#[allow(clippy::too_many_arguments)] // one call site; each argument is a distinct input
fn write_outputs<M: sunward::plan::StepModel + ?Sized>(
    mission_dir: &Path,
    st: &mut Staging,
    m: &Mission,
    dem: &Dem,
    route: &Route,
    planner: &Planner<'_, M>,
    results: &[SeasonResult],
    mc: Option<&MonteCarlo>,
    cmp: Option<&Comparison>,
) -> Result<(), Error> {
    let inputs = serde_json::json!({
        "site": {"name": m.site.name, "lat_deg": m.site.latitude_rad.to_degrees(),
                 "lon_deg": m.site.longitude_rad.to_degrees(), "elevation_m": m.site.elevation_m,
                 "utc_offset": m.site.utc_offset.to_string()},
        "terrain_file": terrain_label(m, mission_dir),
        "route_length_m": route.summary.length_m,
        "battery_capacity_wh": m.battery.rated_energy_wh(),
        "panel_area_m2": m.panels.panel.area_m2,
        "step_s": m.step_s,
        "deadline_s": m.policy.deadline_s,
        "initial_soc": prepare::INITIAL_SOC,
        "start_local_h": m.start_local_h,
        "electronics_heat_share": m.thermal.electronics_heat_share,
    });
    let mut inputs = inputs;
    if let Sky::Csv { path } = &m.weather.sky {
        let label = path.strip_prefix(mission_dir).unwrap_or(path);
        inputs["weather_file"] = label.display().to_string().into();
    }
    let mut doc = summary(&m.site.name, results, inputs);
    doc.cautions = run_cautions(m);
    doc.monte_carlo = mc.map(|mc| monte_carlo_json(&mc.results, mc.runs, mc.seed));
    doc.planner_comparison = cmp.map(|c| c.json.clone());
    let out = st.out().to_path_buf();
    let text = summary_json(&doc);
    st.write("summary.json", |w| w.write_all(text.as_bytes()))?;
    let mut daily = format!("{DAILY_HEADER}\n");
    for r in results {
        let text = timeseries_csv(&r.run.samples);
        let name = format!("timeseries-{}.csv", slug(&r.season.name));
        st.write(&name, |w| w.write_all(text.as_bytes()))?;
        daily.push_str(&daily_rows(&r.season.name, &r.days));
    }
    st.write("daily-budget.csv", |w| w.write_all(daily.as_bytes()))?;
    let rs = route_summary_json(route, planner.objective, &m.rover, &planner.limits);
    let gj = serde_json::to_string(&route_geojson(route, &rs)).expect("JSON values serialise");
    st.write("route.geojson", |w| w.write_all(gj.as_bytes()))?;
    let prof = profile_csv(route);
    st.write("profile.csv", |w| w.write_all(prof.as_bytes()))?;
    let grey = hillshade::to_grey(&hillshade::hillshade(
        dem,
        315f64.to_radians(),
        45f64.to_radians(),
    ));
    let scale = (1024 / dem.width().max(dem.height())).clamp(1, 4);
    let w = dem.width();
    let sites: Vec<(usize, usize)> = m
        .route
        .waypoints
        .iter()
        .chain(m.route.sites.iter().map(|s| &s.place))
        .filter_map(|p| locate(planner, &p.point).ok())
        .map(|c| (c % w, c / w))
        .collect();
    let others: Vec<(&str, &Route)> = cmp
        .map(|c| c.routes.iter().map(|(n, r)| (n.as_str(), r)).collect())
        .unwrap_or_default();
    let other_routes: Vec<&Route> = others.iter().map(|o| o.1).collect();
    let px = route_map_rgb(
        &grey,
        dem.width(),
        dem.height(),
        route,
        &other_routes,
        &sites,
        scale,
    );
    let other_names: Vec<&str> = others.iter().map(|o| o.0).collect();
    let framed = sunward::report::map::route_map_png(
        &px,
        dem.width() * scale,
        dem.height() * scale,
        route,
        &other_names,
        dem.cell_size().dx_m,
        scale,
        &format!("{}: route coloured by step energy", m.site.name),
    )
    .map_err(|e| Error::Usage(format!("route map: {e}")))?;
    st.write("route_map.png", |wr| wr.write_all(&framed))?;
    let grey_rgb: Vec<u8> = grey.iter().flat_map(|&g| [g, g, g]).collect();
    let mut relief = Vec::new();
    png::write_rgb8(&mut relief, dem.width(), dem.height(), &grey_rgb).map_err(|source| {
        Error::Output {
            path: out.join("route_map.svg"),
            source,
        }
    })?;
    let svg = sunward::report::map::route_map_svg(
        &relief,
        dem.width(),
        dem.height(),
        route,
        &others,
        &sites,
        scale,
        &format!("{}: route coloured by step energy", m.site.name),
    );
    st.write("route_map.svg", |w| w.write_all(svg.as_bytes()))?;
    let offset = m.site.utc_offset.local_minus_utc();
    let plot_err = |e: sunward::report::plot::PlotError| Error::Usage(format!("plot: {e}"));
    let mut charts: Vec<(String, sunward::report::plot::LineChart)> = results
        .iter()
        .map(|r| {
            (
                format!("season-{}", slug(&r.season.name)),
                season_chart(&m.site.name, r, m.step_s, offset),
            )
        })
        .collect();
    charts.push(("seasons".to_string(), seasons_chart(&m.site.name, results)));
    if let Some(mc) = mc {
        let chart = monte_carlo_chart(&m.site.name, &mc.results, m.battery.reserve_soc);
        charts.push(("montecarlo".to_string(), chart));
    }
    if let Some(c) = cmp {
        charts.extend(c.charts.iter().cloned());
    }
    let mut figures = Vec::new();
    for (name, chart) in &charts {
        let png = render_png(chart).map_err(plot_err)?;
        st.write(&format!("{name}.png"), |w| w.write_all(&png))?;
        let svg = render_svg(chart).map_err(plot_err)?;
        st.write(&format!("{name}.svg"), |w| w.write_all(svg.as_bytes()))?;
        figures.push(Figure {
            caption: chart.title.clone(),
            png,
        });
    }
    let mut map_png = Vec::new();
    png::write_rgb8(&mut map_png, dem.width() * scale, dem.height() * scale, &px).map_err(
        |source| Error::Output {
            path: out.join("report.html"),
            source,
        },
    )?;
    let mut caption = "Route over the shaded relief, coloured by step energy (blue: cheapest, \
                       red: most costly); start green, goal white, sites and waypoints yellow"
        .to_string();
    if !others.is_empty() {
        caption.push_str(&format!(
            "; sun-aware routes in plain colours under it: {}",
            sunward::report::map::others_legend(&others)
        ));
    }
    figures.insert(
        0,
        Figure {
            caption,
            png: map_png,
        },
    );
    let mut ctx = page_context(m, route);
    if let Some(c) = cmp {
        ctx.comparison = c.rows.clone();
    }
    let html = report_html(&ctx, results, &figures);
    st.write("report.html", |w| w.write_all(html.as_bytes()))?;
    Ok(())
}

/// The Monte Carlo's lines for standard output.
fn monte_carlo_lines(mc: &MonteCarlo, reserve_soc: f64) -> Vec<String> {
    let mut lines = Vec::new();
    lines.push(format!(
        "weather Monte Carlo: {} runs per season, seed {} (days drawn independently: dark \
         spells are under-sampled, so these probabilities are optimistic)",
        mc.runs, mc.seed
    ));
    for r in &mc.results {
        lines.push(format!(
            "  {:<18} complete in {:>5.1} % of runs  min SOC mean {:>5.1} %  5/50/95 %: {:.1} / {:.1} / {:.1} %  (reserve {:.0} %)",
            r.season.name,
            100.0 * r.probability_complete(),
            100.0 * r.min_soc_mean(),
            100.0 * r.min_soc_quantile(0.05),
            100.0 * r.min_soc_quantile(0.5),
            100.0 * r.min_soc_quantile(0.95),
            100.0 * reserve_soc
        ));
    }
    lines.push("  (summary.json: monte_carlo; montecarlo.png/svg)".to_string());
    lines
}

/// The seasons' verdicts, lines for standard output.
fn verdict_lines(m: &Mission, results: &[SeasonResult], out: &Path) -> Vec<String> {
    let mut lines = Vec::new();
    lines.push(format!("{}: {} season(s)", m.site.name, results.len()));
    for r in results {
        let s = &r.summary;
        lines.push(format!(
            "  {:<18} {}  {:<10} min SOC {:>7}  margin {:>5}  generated {:>7.0} Wh  used {:>7.0} Wh  {}",
            s.name,
            s.date,
            if s.feasible { "FEASIBLE" } else { "INFEASIBLE" },
            s.min_soc_text(),
            s.margin_text(),
            s.energy_generated_wh,
            s.energy_consumed_wh.drive + s.energy_consumed_wh.hotel + s.energy_consumed_wh.payload + s.energy_consumed_wh.heater,
            s.reason
        ));
    }
    lines.push(format!("outputs in {}: summary.json, timeseries-*.csv, daily-budget.csv, route.geojson, profile.csv, route_map.png/svg, season-*.png/svg, seasons.png/svg, report.html", out.display()));
    lines.push(
        "(a planning aid: confirm by field tests and keep margins; see README, Model limits and cautions)"
            .to_string(),
    );
    lines
}
