//! `sunward run MISSION.toml`: check the mission, plan the route, simulate every season
//! and write the verdict, the time series, the daily budgets and the route.

use std::path::{Path, PathBuf};

use clap::Args;

use sunward::battery::ambient::Ambient;
use sunward::battery::pack::Pack;
use sunward::battery::thermal::ThermalNode;
use sunward::mission::resolve::{DrivingHours, Mission, Overnight, Sky};
use sunward::mission::runner::{run_seasons_with, SeasonResult};
use sunward::mission::sim::{DriveHours, EndCondition, Policy, SimSetup, SkySetup, Stop};
use sunward::mission::{check, Problem};
use sunward::plan::route::{leg_costs, locate};
use sunward::plan::{plan_route, CellFlags, Planner, Route, RoutePoint};
use sunward::report::atomic::write_atomic;
use sunward::report::csv::{daily_rows, timeseries_csv, DAILY_HEADER};
use sunward::report::html::{report_html, Figure, PageContext};
use sunward::report::json::{summary, summary_json};
use sunward::report::map::route_map_rgb;
use sunward::report::plot::{render_png, render_svg};
use sunward::report::season_plot::{season_chart, seasons_chart};
use sunward::sun::position::{delta_t_model_s, Observer};
use sunward::terrain::io::png;
use sunward::terrain::{hillshade, horizon, io::read_dem, Dem};
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

/// Cells closed by the mission's keep-out raster (cells with data are closed).
fn flags_for(m: &Mission, dem: &Dem) -> Result<CellFlags, Error> {
    let mut flags = CellFlags::from_dem(dem);
    if let Some(path) = &m.terrain.keep_out_path {
        let mask = read_dem(path, &m.terrain.read)?;
        if (mask.width(), mask.height()) != (dem.width(), dem.height()) {
            return Err(Error::Usage(format!(
                "{}: the keep-out raster is {} x {} cells, the terrain {} x {}. Fix: give a \
                 keep-out raster on the terrain's grid",
                path.display(),
                mask.width(),
                mask.height(),
                dem.width(),
                dem.height()
            )));
        }
        for (i, v) in mask.data().iter().enumerate() {
            if !v.is_nan() {
                flags.block(i, sunward::plan::Blocked::KeepOut);
            }
        }
    }
    Ok(flags)
}

/// The route: start, waypoints, the sites in visiting order, goal.
fn route_points(m: &Mission, order: &[usize]) -> Vec<RoutePoint> {
    let mut pts = vec![m.route.start.point.clone()];
    pts.extend(m.route.waypoints.iter().map(|w| w.point.clone()));
    pts.extend(order.iter().map(|&i| m.route.sites[i].place.point.clone()));
    pts.push(m.route.goal.point.clone());
    pts
}

/// The cheapest order of the unordered sites on the open path from the last waypoint
/// (or the start) to the goal: pairwise route costs, then `plan::sites` on a matrix whose
/// "return to base" legs are the legs to the goal, so the optimal tour is the optimal
/// open path (Held-Karp, exact, up to 10 sites). Without any complete order, the file's. Without any complete order, the file's.
fn site_order<M: sunward::plan::StepModel + ?Sized>(
    m: &Mission,
    planner: &Planner<'_, M>,
) -> Result<Vec<usize>, Error> {
    use sunward::plan::sites::{graph_from_matrix, order_sites, OrderOptions};
    let n = m.route.sites.len();
    if n <= 1 {
        return Ok((0..n).collect());
    }
    let anchor = m
        .route
        .waypoints
        .last()
        .unwrap_or(&m.route.start)
        .point
        .clone();
    let mut nodes = vec![anchor];
    nodes.extend(m.route.sites.iter().map(|s| s.place.point.clone()));
    let cells: Vec<usize> = nodes
        .iter()
        .map(|p| locate(planner, p))
        .collect::<Result<_, _>>()?;
    // Column 0 is the goal instead of the leg's start: the tour's return leg.
    let mut targets = cells.clone();
    targets[0] = locate(planner, &m.route.goal.point)?;
    let costs = leg_costs(planner, &cells, &targets);
    let names: Vec<String> = std::iter::once("the leg's start".to_string())
        .chain(m.route.sites.iter().map(|s| s.place.point.label.clone()))
        .collect();
    // When some leg cannot be driven no order exists; keep the file's order and let the
    // route planner explain which limit closes the way.
    let tour = graph_from_matrix(&costs, Some(&names))
        .and_then(|g| order_sites(&g, &OrderOptions::default()));
    Ok(match tour {
        Ok(t) => t.order[1..t.order.len() - 1]
            .iter()
            .map(|&i| i - 1)
            .collect(),
        Err(_) => (0..n).collect(),
    })
}

/// The payload stops: the profile row where the route reaches each site, walking the
/// route points in order (start, waypoints, sites, goal).
fn site_stops<M: sunward::plan::StepModel + ?Sized>(
    m: &Mission,
    planner: &Planner<'_, M>,
    route: &Route,
    order: &[usize],
) -> Vec<Stop> {
    let w = planner.dem.width();
    let mut from = 0;
    let mut stops = Vec::new();
    let points = route_points(m, order);
    let first_site = 1 + m.route.waypoints.len();
    for (i, p) in points.iter().enumerate().skip(1) {
        let Ok(cell) = locate(planner, p) else {
            continue;
        };
        let Some(k) = route.profile[from..]
            .iter()
            .position(|r| r.row * w + r.col == cell)
        else {
            continue;
        };
        from += k;
        if i >= first_site && i < first_site + m.route.sites.len() {
            stops.push(Stop {
                row: from,
                duration_s: m.route.sites[order[i - first_site]].payload_s,
            });
        }
    }
    stops
}

fn policy(m: &Mission) -> Policy {
    let drive_hours = match m.policy.driving {
        DrivingHours::Daylight => DriveHours::Daylight,
        DrivingHours::Window { start_h, end_h } => DriveHours::LocalWindow { start_h, end_h },
        DrivingHours::AnyTime => DriveHours::Always,
    };
    Policy {
        drive_hours,
        min_soc_to_drive: m.policy.min_soc_to_drive,
        resume_soc: m.policy.park_and_charge_to_soc,
        deadline_s: m.policy.deadline_s,
        end: EndCondition::Arrival,
        sleep_outside_hours: m.policy.overnight == Overnight::Sleep,
    }
}

/// Share of the hotel and payload power that heats the battery box: 0.3 is an
/// assumption with no source (electronics mostly outside an insulated battery box); it
/// belongs in the mission's `[thermal]` table once the file has the key.
const ELECTRONICS_HEAT_SHARE: f64 = 0.3;

pub fn run(a: RunArgs) -> Result<(), Error> {
    let feasible = run_mission(&a.mission, &a.out, &a.season, a.quiet)?;
    if a.fail_on_infeasible && !feasible {
        std::process::exit(1);
    }
    Ok(())
}

/// Runs a mission file into `out`; returns whether every season was feasible.
pub fn run_mission(
    mission: &Path,
    out: &Path,
    only: &[String],
    quiet: bool,
) -> Result<bool, Error> {
    let a = RunArgs {
        mission: mission.to_path_buf(),
        out: out.to_path_buf(),
        season: only.to_vec(),
        fail_on_infeasible: false,
        quiet,
    };
    let m = load_mission(&a.mission)?;
    std::fs::create_dir_all(&a.out).map_err(|source| Error::Output {
        path: a.out.clone(),
        source,
    })?;
    super::check_output(&a.out.join("summary.json"), &[&a.mission])?;
    if let Sky::Csv { path } = &m.weather.sky {
        return Err(Error::Usage(format!(
            "{}: weather files are not used by the simulation yet. Fix: use the clear sky \
             ([weather] sky = \"clear\") for now",
            path.display()
        )));
    }
    super::check_series_memory(&a.mission, &m)?;
    let dem = read_dem(&m.terrain.dem_path, &m.terrain.read)?;
    let cells = dem.len() as u64;
    let need = sunward::limits::planner_bytes(cells)
        + sunward::limits::horizon_bytes(cells, horizon::DEFAULT_SECTORS as u64);
    let what = "the route planner's arrays and the horizon maps";
    super::check_memory(&m.terrain.read, &m.terrain.dem_path, &dem, what, need)?;
    let flags = flags_for(&m, &dem)?;
    let model = RoverStepModel::new(&m.rover);
    let planner = Planner {
        dem: &dem,
        flags: &flags,
        model: &model,
        limits: m.route.tilt,
        connectivity: m.route.connectivity,
        objective: m.route.objective,
    };
    let order = site_order(&m, &planner)?;
    let route = match plan_route(&planner, &route_points(&m, &order)) {
        Ok(r) => r,
        Err(e @ sunward::plan::PlanError::Unreachable { .. }) => {
            return unplannable(&a, &m, &e);
        }
        Err(e) => return Err(e.into()),
    };
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
    let horizons = horizon::horizon_map(&dem, horizon::DEFAULT_SECTORS, progress)?;
    let stops = site_stops(&m, &planner, &route, &order);
    let results = simulate_seasons(&m, &route, &stops, &horizons, &a.season, progress)?;
    let mission_dir = a.mission.parent().unwrap_or(Path::new(""));
    write_outputs(mission_dir, &a.out, &m, &dem, &route, &planner, &results)?;
    print_verdicts(&m, &results, &a.out);
    Ok(results.iter().all(|r| r.summary.feasible))
}

fn simulate_seasons(
    m: &Mission,
    route: &Route,
    stops: &[Stop],
    horizons: &horizon::HorizonMap,
    only: &[String],
    progress: &dyn sunward::progress::Progress,
) -> Result<Vec<SeasonResult>, Error> {
    let stage = |e: String| Error::Usage(format!("{}: {e}", m.site.name));
    let pack = Pack::new(&m.battery).map_err(|e| stage(e.to_string()))?;
    let thermal = ThermalNode::new(&m.thermal).map_err(|e| stage(e.to_string()))?;
    let ambient = Ambient::Monthly(m.weather.climate.clone());
    let (linke, clearness_monthly) = match &m.weather.sky {
        Sky::ClearSky(l) => (*l, [1.0; 12]),
        Sky::Clearness { linke, monthly } => (*linke, *monthly),
        Sky::Csv { .. } => unreachable!("refused before"),
    };
    let observer = Observer::new(
        m.site.latitude_rad,
        m.site.longitude_rad,
        m.site.elevation_m,
    )
    .map_err(|e| stage(e.to_string()))?;
    let year = m
        .seasons
        .first()
        .map_or(2027, |s| chrono::Datelike::year(&s.date));
    let setup = SimSetup {
        route,
        rover: &m.rover,
        pack: &pack,
        initial_soc: 1.0,
        thermal: &thermal,
        initial_box_temp_c: None,
        electronics_heat_share: ELECTRONICS_HEAT_SHARE,
        loads: &m.loads,
        panel: &m.panels.panel,
        mount: m.panels.mount,
        sky: SkySetup {
            observer,
            delta_t_s: delta_t_model_s(f64::from(year) + 0.5),
            linke,
            sky_model: m.weather.sky_model,
            albedo: m.weather.albedo,
            wind_m_s: m.weather.wind_m_s,
            clearness_monthly,
        },
        horizon: Some(horizons),
        ambient: &ambient,
        utc_offset_s: i64::from(m.site.utc_offset.local_minus_utc()),
        policy: policy(m),
        step_s: m.step_s,
        stops: stops.to_vec(),
    };
    let seasons: Vec<_> = m
        .seasons
        .iter()
        .filter(|s| only.is_empty() || only.iter().any(|o| s.name.contains(o.as_str())))
        .cloned()
        .collect();
    if seasons.is_empty() {
        return Err(Error::Usage(format!(
            "no season matches --season {:?}; the mission has: {}",
            only,
            m.seasons
                .iter()
                .map(|s| s.name.as_str())
                .collect::<Vec<_>>()
                .join(", ")
        )));
    }
    run_seasons_with(&setup, &seasons, progress).map_err(|e| stage(e.to_string()))
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
/// the limit that closes the way (`tilt` for pitch and roll, `traction` for traction and
/// sinkage, `terrain` for keep-out, no-data, roughness or the grid edge). Writes
/// summary.json only.
fn unplannable(a: &RunArgs, m: &Mission, e: &sunward::plan::PlanError) -> Result<bool, Error> {
    use sunward::mission::ledger::Ledger;
    use sunward::mission::runner::local_midnight;
    use sunward::mission::sim::{Run, Stranded};
    use sunward::mission::verdict::summarize;
    use sunward::plan::Blocked;
    let sunward::plan::PlanError::Unreachable {
        detail, nearest_xy, ..
    } = e
    else {
        unreachable!("called for unreachable routes only")
    };
    let cause = match detail.closed_by.first().map(|c| c.0) {
        Some(Blocked::PitchUp | Blocked::PitchDown | Blocked::Roll) => "tilt",
        Some(Blocked::Traction | Blocked::Sinkage) => "traction",
        _ => "terrain",
    };
    let offset = i64::from(m.site.utc_offset.local_minus_utc());
    let results: Vec<SeasonResult> = m
        .seasons
        .iter()
        .filter(|s| a.season.is_empty() || a.season.iter().any(|o| s.name.contains(o.as_str())))
        .map(|season| {
            let start = local_midnight(season.date, offset);
            let run = Run {
                samples: Vec::new(),
                ledger: Ledger::default(),
                arrival: None,
                stranded: Some(Stranded {
                    time: start,
                    x: nearest_xy.0,
                    y: nearest_xy.1,
                    cause,
                    detail: e.to_string(),
                }),
                min_soc: (1.0, start),
                hours_below_reserve: 0.0,
                storage_breach: None,
                distance_m: 0.0,
                in_hours_s: 0.0,
                charging_hold_s: 0.0,
            };
            let summary = summarize(&season.name, season.date, &run, m.battery.reserve_soc, 0.0);
            SeasonResult {
                season: season.clone(),
                run,
                summary,
                days: Vec::new(),
            }
        })
        .collect();
    let inputs = serde_json::json!({"route": "not plannable", "reason": e.to_string()});
    let doc = summary(&m.site.name, &results, inputs);
    let text = summary_json(&doc);
    write_atomic(&a.out.join("summary.json"), |w| {
        w.write_all(text.as_bytes())
    })?;
    crate::say!(
        "{}: the route cannot be planned, so no season is feasible.",
        m.site.name
    );
    crate::say!("  {e}");
    crate::say!("summary.json written to {}", a.out.display());
    Ok(false)
}

/// The page's fixed text: the route and the assumptions with their sources.
fn page_context(m: &Mission, route: &Route) -> PageContext {
    let a = |w: &str, v: String, s: &str| (w.to_string(), v, s.to_string());
    PageContext {
        mission: m.site.name.clone(),
        route_line: format!(
            "Route: {:.0} m along the ground, {:.0} Wh of battery energy, {:.1} h of driving \
             (planned by exact A* on the terrain grid).",
            route.summary.length_m,
            sunward::units::j_to_wh(route.summary.energy_j),
            route.summary.duration_s / 3600.0
        ),
        assumptions: vec![
            a(
                "sun position",
                "NREL SPA".into(),
                "Reda and Andreas, NREL/TP-560-34302",
            ),
            a(
                "irradiance",
                "clear sky, Ineichen-Perez".into(),
                "Ineichen and Perez, Solar Energy 73(3), 2002",
            ),
            a(
                "panel plane",
                format!("{:?}", m.weather.sky_model),
                "Hay and Davies 1980 / Perez et al. 1990",
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
                    "{} Wh {}",
                    m.battery.capacity_wh.unwrap_or(f64::NAN),
                    m.battery.chemistry.preset().name
                ),
                "mission file; OCV tables from PyBaMM parameter sets",
            ),
            a(
                "battery box heating",
                format!("{ELECTRONICS_HEAT_SHARE} of the electronics' power"),
                "assumption, no source",
            ),
            a(
                "start of each season",
                "local midnight, full pack".into(),
                "sunward convention",
            ),
            a("simulation step", format!("{} s", m.step_s), "mission file"),
        ],
    }
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

fn write_outputs<M: sunward::plan::StepModel + ?Sized>(
    mission_dir: &Path,
    out: &Path,
    m: &Mission,
    dem: &Dem,
    route: &Route,
    planner: &Planner<'_, M>,
    results: &[SeasonResult],
) -> Result<(), Error> {
    let inputs = serde_json::json!({
        "site": {"name": m.site.name, "lat_deg": m.site.latitude_rad.to_degrees(),
                 "lon_deg": m.site.longitude_rad.to_degrees(), "elevation_m": m.site.elevation_m,
                 "utc_offset": m.site.utc_offset.to_string()},
        "terrain_file": terrain_label(m, mission_dir),
        "route_length_m": route.summary.length_m,
        "battery_capacity_wh": m.battery.capacity_wh,
        "panel_area_m2": m.panels.panel.area_m2,
        "step_s": m.step_s,
        "deadline_s": m.policy.deadline_s,
        "initial_soc": 1.0,
    });
    let doc = summary(&m.site.name, results, inputs);
    let text = summary_json(&doc);
    write_atomic(&out.join("summary.json"), |w| w.write_all(text.as_bytes()))?;
    let mut daily = format!("{DAILY_HEADER}\n");
    for r in results {
        let text = timeseries_csv(&r.run.samples);
        let name = format!("timeseries-{}.csv", slug(&r.season.name));
        write_atomic(&out.join(name), |w| w.write_all(text.as_bytes()))?;
        daily.push_str(&daily_rows(&r.season.name, &r.days));
    }
    write_atomic(&out.join("daily-budget.csv"), |w| {
        w.write_all(daily.as_bytes())
    })?;
    let rs = route_summary_json(route, planner.objective, &m.rover, &planner.limits);
    let gj = serde_json::to_string(&route_geojson(route, &rs)).expect("JSON values serialise");
    write_atomic(&out.join("route.geojson"), |w| w.write_all(gj.as_bytes()))?;
    let prof = profile_csv(route);
    write_atomic(&out.join("profile.csv"), |w| w.write_all(prof.as_bytes()))?;
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
    let px = route_map_rgb(&grey, dem.width(), dem.height(), route, &sites, scale);
    write_atomic(&out.join("route_map.png"), |wr| {
        png::write_rgb8(wr, dem.width() * scale, dem.height() * scale, &px)
    })?;
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
    let mut figures = Vec::new();
    for (name, chart) in &charts {
        let png = render_png(chart).map_err(plot_err)?;
        write_atomic(&out.join(format!("{name}.png")), |w| w.write_all(&png))?;
        let svg = render_svg(chart).map_err(plot_err)?;
        write_atomic(&out.join(format!("{name}.svg")), |w| {
            w.write_all(svg.as_bytes())
        })?;
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
    figures.insert(
        0,
        Figure {
            caption: "Route over the shaded relief, coloured by step energy (blue: cheapest, \
                      red: most costly); start green, goal white, sites and waypoints yellow"
                .into(),
            png: map_png,
        },
    );
    let html = report_html(&page_context(m, route), results, &figures);
    write_atomic(&out.join("report.html"), |w| w.write_all(html.as_bytes()))?;
    Ok(())
}

fn print_verdicts(m: &Mission, results: &[SeasonResult], out: &Path) {
    crate::say!("{}: {} season(s)", m.site.name, results.len());
    for r in results {
        let s = &r.summary;
        crate::say!(
            "  {:<18} {}  {:<10} min SOC {:>5.1} %  margin {:+.2}  generated {:>7.0} Wh  used {:>7.0} Wh  {}",
            s.name,
            s.date,
            if s.feasible { "FEASIBLE" } else { "INFEASIBLE" },
            100.0 * s.min_soc,
            s.margin,
            s.energy_generated_wh,
            s.energy_consumed_wh.drive + s.energy_consumed_wh.hotel + s.energy_consumed_wh.payload + s.energy_consumed_wh.heater,
            s.reason
        );
    }
    crate::say!("outputs in {}: summary.json, timeseries-*.csv, daily-budget.csv, route.geojson, profile.csv, route_map.png, season-*.png/svg, seasons.png/svg, report.html", out.display());
    crate::say!("(a planning aid: confirm by field tests and keep margins; see README, Model limits and cautions)");
}
