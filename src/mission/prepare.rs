//! From a checked [`Mission`] to what the season simulation needs: the terrain and its
//! closed cells ([`Ground`]), the planned route with the sites in visiting order and the
//! payload stops ([`Planned`]), the stages' checked models ([`Models`]) and the
//! [`SimSetup`] that ties them together. One pipeline for `run`, `sweep`, `size` and the
//! weather Monte Carlo, so that every command simulates a mission the same way.
//!
//! Site order: the unordered sites are visited in the cheapest order on the open path
//! from the last waypoint (or the start) to the goal: pairwise route costs, then
//! [`crate::plan::sites`] on a matrix whose "return to base" legs are the legs to the
//! goal, so that the optimal tour is the optimal open path (Held-Karp, exact up to 10
//! sites). When some leg cannot be driven no order exists: the file's order is kept and
//! the route planner explains which limit closes the way.
//!
//! Measured weather (`[weather] sky = "csv"`): the caller reads the file and passes its
//! text to [`Models::with_weather`], which parses it ([`crate::sun::climate`], naive
//! local times at the site's UTC offset) and takes the air temperature from its
//! `temp_air_c` column when it has one (else the monthly climate). Every season's run,
//! from its start through the policy's deadline, must lie inside the record
//! ([`check_weather_span`]).
//!
//! A route that cannot be planned is a verdict, not an error: [`unplannable`] gives every
//! season an infeasible result stranded at the start, with the cause `tilt` (pitch and
//! roll), `traction` (traction and sinkage) or `terrain` (keep-out, no-data, roughness,
//! the grid edge).

use std::path::Path;

use crate::battery::ambient::{Ambient, AmbientSeries};
use crate::battery::pack::Pack;
use crate::battery::thermal::ThermalNode;
use crate::error::Error;
use crate::mission::ledger::Ledger;
use crate::mission::resolve::{DrivingHours, Mission, Overnight, Season, Sky};
use crate::mission::runner::{season_start, SeasonResult};
use crate::mission::sim::{
    DriveHours, EndCondition, Policy, Run, SimSetup, SkySetup, Stop, Stranded,
};
use crate::mission::verdict::summarize;
use crate::plan::route::{leg_costs, locate};
use crate::plan::{plan_route, Blocked, CellFlags, PlanError, Planner, Route, RoutePoint};
use crate::sun::climate::{parse_weather_csv, WeatherCsvOptions, WeatherSeries};
use crate::sun::position::{delta_t_model_s, sun_position, Observer};
use crate::terrain::horizon::HorizonMap;
use crate::terrain::Dem;
use crate::vehicle::plan_model::RoverStepModel;

/// The terrain and the cells closed before any vehicle limit (no-data, keep-out).
#[derive(Debug)]
pub struct Ground {
    /// Elevations (NaN = no-data).
    pub dem: Dem,
    /// Cells closed by no-data or the mission's keep-out raster.
    pub flags: CellFlags,
}

impl Ground {
    /// Reads the mission's terrain and its keep-out raster (cells with data are closed).
    pub fn load(m: &Mission) -> Result<Ground, Error> {
        let dem = m.terrain.read_dem()?;
        let mut flags = CellFlags::from_dem(&dem);
        if let Some(path) = &m.terrain.keep_out_path {
            let mask = m.terrain.read_keep_out(path)?;
            if (mask.width(), mask.height()) != (dem.width(), dem.height()) {
                return Err(Error::Usage(format!(
                    "{}: the keep-out raster is {} x {} cells, the terrain {} x {}. Fix: \
                     give a keep-out raster on the terrain's grid",
                    path.display(),
                    mask.width(),
                    mask.height(),
                    dem.width(),
                    dem.height()
                )));
            }
            for (i, v) in mask.data().iter().enumerate() {
                if !v.is_nan() {
                    flags.block(i, Blocked::KeepOut);
                }
            }
        }
        Ok(Ground { dem, flags })
    }

    /// The planner for `m`'s route settings over this ground with `model`.
    pub fn planner<'a>(
        &'a self,
        m: &Mission,
        model: &'a RoverStepModel<'a>,
    ) -> Planner<'a, RoverStepModel<'a>> {
        Planner {
            dem: &self.dem,
            flags: &self.flags,
            model,
            limits: m.route.tilt,
            connectivity: m.route.connectivity,
            objective: m.route.objective,
        }
    }
}

/// A planned route: the route, the sites' visiting order and the payload stops on it.
#[derive(Debug, Clone)]
pub struct Planned {
    /// The route from start to goal through waypoints and sites.
    pub route: Route,
    /// Indices into `m.route.sites` in visiting order.
    pub order: Vec<usize>,
    /// The payload stops (profile rows and durations).
    pub stops: Vec<Stop>,
}

/// Plans `m`'s route. `Ok(Err(..))`: the route cannot be driven (a verdict, see
/// [`unplannable`]); `Err`: bad input (a point off the grid, a failed site order).
pub fn plan(m: &Mission, ground: &Ground) -> Result<Result<Planned, PlanError>, Error> {
    let model = RoverStepModel::new(&m.rover);
    let planner = ground.planner(m, &model);
    let order = site_order(m, &planner)?;
    match plan_route(&planner, &route_points(m, &order)) {
        Ok(route) => {
            let stops = site_stops(m, &planner, &route, &order);
            Ok(Ok(Planned {
                route,
                order,
                stops,
            }))
        }
        Err(e @ PlanError::Unreachable { .. }) => Ok(Err(
            e.with_limit_names(crate::plan::error::LimitNames::MissionKeys)
        )),
        Err(e) => Err(e.into()),
    }
}

/// The route: start, waypoints, the sites in visiting order, goal.
pub fn route_points(m: &Mission, order: &[usize]) -> Vec<RoutePoint> {
    let mut pts = vec![m.route.start.point.clone()];
    pts.extend(m.route.waypoints.iter().map(|w| w.point.clone()));
    pts.extend(order.iter().map(|&i| m.route.sites[i].place.point.clone()));
    pts.push(m.route.goal.point.clone());
    pts
}

/// The cheapest order of the unordered sites on the open path to the goal (module doc).
fn site_order(m: &Mission, planner: &Planner<'_, RoverStepModel<'_>>) -> Result<Vec<usize>, Error> {
    use crate::plan::sites::{graph_from_matrix, order_sites, OrderOptions};
    let n = m.route.sites.len();
    if n <= 1 {
        return Ok((0..n).collect());
    }
    let anchor = m.route.waypoints.last().unwrap_or(&m.route.start);
    let mut nodes = vec![anchor.point.clone()];
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
fn site_stops(
    m: &Mission,
    planner: &Planner<'_, RoverStepModel<'_>>,
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

/// The mission's driving policy in the simulation's terms.
pub fn policy(m: &Mission) -> Policy {
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

/// The stages' checked models for one mission.
#[derive(Debug, Clone)]
pub struct Models {
    /// The battery pack.
    pub pack: Pack,
    /// The battery box's thermal node.
    pub thermal: ThermalNode,
    /// Air temperature.
    pub ambient: Ambient,
    /// The site.
    pub observer: Observer,
    /// The measured weather record (`sky = "csv"`), with the file it came from.
    pub weather: Option<(std::path::PathBuf, WeatherSeries)>,
}

impl Models {
    /// Checks the battery, thermal and site values of `m` (a mission without a weather
    /// file; see [`Models::with_weather`]).
    pub fn new(m: &Mission) -> Result<Models, Error> {
        Models::with_weather(m, None)
    }

    /// As [`Models::new`], with `weather_csv` the text of the mission's weather file
    /// (`sky = "csv"`; the caller reads it, the core reads no files).
    pub fn with_weather(m: &Mission, weather_csv: Option<&str>) -> Result<Models, Error> {
        let observer = observer(m)?;
        let weather = match (&m.weather.sky, weather_csv) {
            (Sky::Csv { path }, Some(text)) => {
                Some((path.clone(), parse_weather(m, path, text, &observer)?))
            }
            (Sky::Csv { path }, None) => {
                return Err(Error::Usage(format!(
                    "{}: this command does not read weather files (`run` and `check` do). \
                     Fix: use [weather] sky = \"clearness\" or \"clear_sky\" here",
                    path.display()
                )))
            }
            _ => None,
        };
        let ambient = match weather
            .as_ref()
            .and_then(|(p, w)| air_temperature(p, w).transpose())
        {
            Some(series) => Ambient::Series(series?),
            None => Ambient::Monthly(m.weather.climate.clone()),
        };
        Models::build(m, observer, weather, ambient)
    }

    /// The models of `m`, a variant of the mission these models were made for (a case of
    /// a trade study): battery, thermal node and site from `m`, the weather record (and
    /// its air temperature) reused, so the weather file is parsed once per study.
    pub fn for_variant(&self, m: &Mission) -> Result<Models, Error> {
        let ambient = match (&self.weather, &self.ambient) {
            (Some(_), Ambient::Series(s)) => Ambient::Series(s.clone()),
            _ => Ambient::Monthly(m.weather.climate.clone()),
        };
        Models::build(m, observer(m)?, self.weather.clone(), ambient)
    }

    /// The pack and thermal node of `m` with the given site, weather and air temperature.
    fn build(
        m: &Mission,
        observer: Observer,
        weather: Option<(std::path::PathBuf, WeatherSeries)>,
        ambient: Ambient,
    ) -> Result<Models, Error> {
        Ok(Models {
            pack: Pack::new(&m.battery).map_err(|e| stage(m, e.to_string()))?,
            thermal: ThermalNode::new(&m.thermal).map_err(|e| stage(m, e.to_string()))?,
            ambient,
            observer,
            weather,
        })
    }
}

/// An error of the models of `m`, named by its site.
fn stage(m: &Mission, e: String) -> Error {
    Error::Usage(format!("{}: {e}", m.site.name))
}

/// The observer at `m`'s site.
fn observer(m: &Mission) -> Result<Observer, Error> {
    Observer::new(
        m.site.latitude_rad,
        m.site.longitude_rad,
        m.site.elevation_m,
    )
    .map_err(|e| stage(m, e.to_string()))
}

/// Parses the weather file's text (naive times at the site's UTC offset).
fn parse_weather(
    m: &Mission,
    path: &Path,
    text: &str,
    observer: &Observer,
) -> Result<WeatherSeries, Error> {
    let options = WeatherCsvOptions {
        utc_offset_s: Some(m.site.utc_offset.local_minus_utc()),
        ..WeatherCsvOptions::default()
    };
    let year = m
        .seasons
        .first()
        .map_or(2027, |s| chrono::Datelike::year(&s.date));
    let dt = delta_t_model_s(f64::from(year) + 0.5);
    let series = parse_weather_csv(text, &options, |t| sun_position(t, observer, dt))
        .map_err(|e| Error::Usage(format!("{}: {e}", path.display())))?;
    if series.records.len() < 2 {
        return Err(Error::Usage(format!(
            "{}: fewer than two weather records. Fix: give a record over every season's run",
            path.display()
        )));
    }
    Ok(series)
}

/// The file's air temperature column as an ambient series, when the file has one.
fn air_temperature(path: &Path, w: &WeatherSeries) -> Result<Option<AmbientSeries>, Error> {
    let (times, temps): (Vec<_>, Vec<_>) = w
        .records
        .iter()
        .filter_map(|r| r.temp_air_c.map(|c| (r.time, c)))
        .unzip();
    if times.is_empty() {
        return Ok(None);
    }
    AmbientSeries::from_points(times, temps)
        .map(Some)
        .map_err(|e| Error::Usage(format!("{}: temp_air_c: {e}", path.display())))
}

/// Every season's run (start through the deadline) must lie inside the weather record.
pub fn check_weather_span(m: &Mission, models: &Models, seasons: &[Season]) -> Result<(), Error> {
    let Some((path, w)) = &models.weather else {
        return Ok(());
    };
    let Some((first, last)) = crate::sun::measured::span(w) else {
        return Ok(());
    };
    let offset = i64::from(m.site.utc_offset.local_minus_utc());
    let local = |t: chrono::DateTime<chrono::Utc>| {
        (t + chrono::Duration::seconds(offset))
            .format("%Y-%m-%d %H:%M")
            .to_string()
    };
    for s in seasons {
        let start = season_start(s.date, offset, m.start_local_h);
        let end = start + chrono::Duration::milliseconds((m.policy.deadline_s * 1000.0) as i64);
        if first <= start && end <= last {
            continue;
        }
        return Err(Error::Usage(format!(
            "{}: the weather record runs from {} to {} local time (UTC{}), but season \"{}\" \
             ({}) runs from {} to {} (its start at {} local time plus the deadline of {} days). \
             Fix: give weather records covering the season's run, move the season's date \
             into the record, or shorten [policy] deadline_days",
            path.display(),
            local(first),
            local(last),
            m.site.utc_offset,
            s.name,
            s.date,
            local(start),
            local(end),
            crate::units::clock_hhmm(m.start_local_h),
            m.policy.deadline_s / 86_400.0
        )));
    }
    Ok(())
}

/// The state of charge every season starts with (the runner's convention: a full pack
/// at the mission's start hour).
pub const INITIAL_SOC: f64 = 1.0;

/// The season simulation's setup for `m` along `planned`.
pub fn sim_setup<'a>(
    m: &'a Mission,
    models: &'a Models,
    planned: &'a Planned,
    horizons: Option<&'a HorizonMap>,
) -> SimSetup<'a> {
    let (linke, clearness_monthly) = match &m.weather.sky {
        Sky::ClearSky(l) => (*l, [1.0; 12]),
        Sky::Clearness { linke, monthly } => (*linke, *monthly),
        // The measured record replaces the clear sky (models.weather).
        Sky::Csv { .. } => (Default::default(), [1.0; 12]),
    };
    let year = m
        .seasons
        .first()
        .map_or(2027, |s| chrono::Datelike::year(&s.date));
    SimSetup {
        route: &planned.route,
        rover: &m.rover,
        pack: &models.pack,
        initial_soc: INITIAL_SOC,
        thermal: &models.thermal,
        initial_box_temp_c: None,
        electronics_heat_share: m.thermal.electronics_heat_share,
        loads: &m.loads,
        panel: &m.panels.panel,
        mount: m.panels.mount,
        sky: SkySetup {
            observer: models.observer,
            delta_t_s: delta_t_model_s(f64::from(year) + 0.5),
            linke,
            sky_model: m.weather.sky_model,
            albedo: m.weather.albedo,
            wind_m_s: m.weather.wind_m_s,
            clearness_monthly,
            clearness_daily: None,
            weather: models.weather.as_ref().map(|(_, w)| w),
        },
        horizon: horizons,
        ambient: &models.ambient,
        utc_offset_s: i64::from(m.site.utc_offset.local_minus_utc()),
        policy: policy(m),
        step_s: m.step_s,
        stops: planned.stops.clone(),
        holds: Vec::new(),
        start_local_h: m.start_local_h,
        sun_steps: None,
    }
}

/// The seasons whose name contains one of `only`, ignoring case (all when `only` is
/// empty): `--season june` picks "June", `--season winter` "winter solstice".
pub fn select_seasons(m: &Mission, only: &[String]) -> Result<Vec<Season>, Error> {
    let only: Vec<String> = only.iter().map(|o| o.to_lowercase()).collect();
    let seasons: Vec<Season> = m
        .seasons
        .iter()
        .filter(|s| {
            let name = s.name.to_lowercase();
            only.is_empty() || only.iter().any(|o| name.contains(o.as_str()))
        })
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
    Ok(seasons)
}

/// The stranding cause of a route that cannot be planned (module doc).
pub fn unplannable_cause(e: &PlanError) -> &'static str {
    match e {
        PlanError::Unreachable { detail, .. } => match detail.closed_by.first().map(|c| c.0) {
            Some(Blocked::PitchUp | Blocked::PitchDown | Blocked::Roll) => "tilt",
            Some(Blocked::Traction | Blocked::Sinkage) => "traction",
            _ => "terrain",
        },
        _ => "terrain",
    }
}

/// Every season infeasible, stranded at the start (its place and the season's first
/// instant: without a route the rover never leaves) by the limit that closes the way;
/// the detail names the reachable cell nearest the leg's end. Nothing is simulated, so
/// `min_soc` and `margin` are NaN (null in summary.json).
pub fn unplannable(m: &Mission, seasons: &[Season], e: &PlanError) -> Vec<SeasonResult> {
    let (x, y) = (m.route.start.point.x, m.route.start.point.y);
    let offset = i64::from(m.site.utc_offset.local_minus_utc());
    seasons
        .iter()
        .map(|season| {
            let start = season_start(season.date, offset, m.start_local_h);
            let run = Run {
                samples: Vec::new(),
                ledger: Ledger::default(),
                arrival: None,
                stranded: Some(Stranded {
                    time: start,
                    x,
                    y,
                    cause: unplannable_cause(e),
                    detail: e.to_string(),
                }),
                min_soc: (INITIAL_SOC, start),
                hours_below_reserve: 0.0,
                storage_breach: None,
                distance_m: 0.0,
                in_hours_s: 0.0,
                charging_hold_s: 0.0,
                charge_wait_s: 0.0,
                charge_wait_stored_wh: 0.0,
            };
            let mut summary =
                summarize(&season.name, season.date, &run, m.battery.reserve_soc, 0.0);
            // The season never started: no lowest state of charge, no margin (null in
            // summary.json, a dash in tables), rather than a full pack's.
            summary.min_soc = f64::NAN;
            summary.margin = f64::NAN;
            SeasonResult {
                season: season.clone(),
                run,
                summary,
                days: Vec::new(),
            }
        })
        .collect()
}
