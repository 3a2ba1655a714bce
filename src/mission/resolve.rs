//! From the raw mission to a checked [`Mission`] of the stages' own types, with every
//! problem listed: required keys that are missing, keys that do not apply to the mode
//! chosen, values the stages refuse (their own range checks, run here, not copied),
//! fields that contradict each other, and input files that do not exist.
//!
//! The resolver reads no file. It asks the caller whether a path exists through a
//! closure, and leaves loading the DEM, the keep-out mask and the weather file to the
//! caller; paths in the file are relative to the mission file's folder.
//!
//! # Seasons
//! By default four dates: the March and September equinoxes and the June and December
//! solstices of `seasons.year`, named for the site's hemisphere (north: the June
//! solstice is "summer solstice"; south: "winter solstice"). The instant of each is
//! where the sun's apparent geocentric longitude λ reaches 0°, 90°, 180° and 270° (the
//! definition of the equinoxes and solstices: J. Meeus, *Astronomical Algorithms*, 2nd
//! ed., Willmann-Bell 1998, chapter 27), with λ from the crate's NREL SPA
//! ([`crate::sun::position::geocentric`], Reda and Andreas 2008, eq. 1-27) found by
//! bisection to under a second; ΔT by Espenak and Meeus (2006). The season's date is
//! the calendar date of that instant at the site's UTC offset. Checked against PyEphem
//! in `tests/reference/seasons/`.
//!
//! # Units
//! Out: radians, metres, seconds, watts, SOC fractions, `chrono` dates; in: the file's
//! units as named in each key (degrees, hours, minutes, days).

use std::path::{Path, PathBuf};

use chrono::{DateTime, Datelike, Duration, FixedOffset, NaiveDate, TimeZone, Utc};

use crate::battery::ambient::MonthlyClimate;
use crate::battery::loads::{LoadSpec, Loads, Schedule};
use crate::battery::thermal::{ThermalNode, ThermalParams};
use crate::battery::{BatteryError, Pack, PackParams};
use crate::mission::spec::{
    sort_problems, LoadRaw, PolicyRaw, Problem, RawMission, RouteRaw, StageTable, TerrainRaw, Val,
};
use crate::plan::{Connectivity, Objective, RoutePoint, TiltLimits};
use crate::sun::error::SunError;
use crate::sun::irradiance::LinkeTurbidity;
use crate::sun::panel::{CellTemperature, Mount, Panel};
use crate::sun::position::{delta_t_model_s, geocentric, julian_day};
use crate::sun::transposition::{SkyModel, ALBEDO_BARE_SOIL};
use crate::terrain::io::{PngScale, ReadOptions, DEFAULT_MAX_CELLS};
use crate::units::deg_to_rad;
use crate::vehicle::{Rover, RoverFile, TextPos, VehicleError};

/// The site.
#[derive(Debug, Clone, PartialEq)]
pub struct Site {
    /// Name shown in reports.
    pub name: String,
    /// Latitude, radians (north positive).
    pub latitude_rad: f64,
    /// Longitude, radians (east positive).
    pub longitude_rad: f64,
    /// Height above sea level, m.
    pub elevation_m: f64,
    /// The fixed UTC offset local times are given in.
    pub utc_offset: FixedOffset,
}

/// Where the terrain comes from (the caller reads it).
#[derive(Debug, Clone, PartialEq)]
pub struct TerrainInput {
    /// The DEM, joined to the mission file's folder.
    pub dem_path: PathBuf,
    /// Reader options (cell-count limit, PNG scale).
    pub read: ReadOptions,
    /// Keep-out raster on the DEM's grid (cells with data are closed), if any.
    pub keep_out_path: Option<PathBuf>,
    /// Where `keep_out` is written in the file.
    pub keep_out_at: Option<TextPos>,
    /// Where `file` is written in the file.
    pub dem_at: Option<TextPos>,
}

impl TerrainInput {
    /// Reads the DEM; an error names `terrain.file` and where it is written.
    pub fn read_dem(&self) -> Result<crate::terrain::Dem, crate::Error> {
        self.read_named(&self.dem_path, "terrain.file", self.dem_at)
    }

    /// Reads the keep-out raster at `path`; an error names `terrain.keep_out`.
    pub fn read_keep_out(&self, path: &Path) -> Result<crate::terrain::Dem, crate::Error> {
        self.read_named(path, "terrain.keep_out", self.keep_out_at)
    }

    /// Reads the raster at `path`, given as `key` at `at` in the mission file.
    fn read_named(
        &self,
        path: &Path,
        key: &'static str,
        at: Option<TextPos>,
    ) -> Result<crate::terrain::Dem, crate::Error> {
        crate::terrain::io::read_dem(path, &self.read).map_err(|e| crate::Error::Named {
            source: Box::new(e.into()),
            key,
            at,
            mission: None,
        })
    }
}

/// A point of the route with its place in the mission text.
#[derive(Debug, Clone, PartialEq)]
pub struct PlacedPoint {
    /// Label and map coordinates (the DEM's CRS, metres).
    pub point: RoutePoint,
    /// Full key in the file (`route.start_m`).
    pub key: String,
    /// Where the point is written.
    pub at: Option<TextPos>,
}

/// A site to visit, in any order, with its payload run.
#[derive(Debug, Clone, PartialEq)]
pub struct VisitSite {
    /// Name and map coordinates.
    pub place: PlacedPoint,
    /// Payload run at the site, s.
    pub payload_s: f64,
}

/// The route to plan.
#[derive(Debug, Clone, PartialEq)]
pub struct RoutePlan {
    /// Start.
    pub start: PlacedPoint,
    /// Goal.
    pub goal: PlacedPoint,
    /// Waypoints visited in order between start and goal.
    pub waypoints: Vec<PlacedPoint>,
    /// Sites visited in any order (after the waypoints' legs are known).
    pub sites: Vec<VisitSite>,
    /// What the planner minimises.
    pub objective: Objective,
    /// Neighbourhood of the grid search.
    pub connectivity: Connectivity,
    /// Tilt limits: the rover's, unless the route overrides them.
    pub tilt: TiltLimits,
}

impl RoutePlan {
    /// Every point of the route, in file order (start, waypoints, sites, goal).
    pub fn points(&self) -> Vec<&PlacedPoint> {
        let mut out = vec![&self.start];
        out.extend(self.waypoints.iter());
        out.extend(self.sites.iter().map(|s| &s.place));
        out.push(&self.goal);
        out
    }
}

/// The panels and how they are carried.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PanelSetup {
    /// Electrical and thermal parameters.
    pub panel: Panel,
    /// Mount.
    pub mount: Mount,
}

/// Where the sunlight comes from.
#[derive(Debug, Clone, PartialEq)]
pub enum Sky {
    /// Ineichen-Perez clear sky with monthly Linke turbidity.
    ClearSky(LinkeTurbidity),
    /// Clear sky scaled by a monthly clearness (measured / clear-sky daily GHI, 0-1).
    Clearness {
        /// Linke turbidity of the clear sky it scales.
        linke: LinkeTurbidity,
        /// January to December.
        monthly: [f64; 12],
    },
    /// A measured weather series; the caller reads the file.
    Csv {
        /// The file, joined to the mission file's folder.
        path: PathBuf,
    },
}

/// Weather and climate.
#[derive(Debug, Clone, PartialEq)]
pub struct Weather {
    /// Sunlight source.
    pub sky: Sky,
    /// Ground albedo.
    pub albedo: f64,
    /// Sky-diffuse transposition model.
    pub sky_model: SkyModel,
    /// Wind speed for the cell temperature, m/s.
    pub wind_m_s: f64,
    /// Monthly air temperature.
    pub climate: MonthlyClimate,
    /// Standard deviation of the daily clear-sky index, January..December (`sky =
    /// "clearness"` only; the monthly `clearness` are the means), for the weather Monte
    /// Carlo. Each month has sd = 0 or sd² < mean·(1 − mean).
    pub clearness_sd: Option<[f64; 12]>,
}

/// When the rover may drive.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum DrivingHours {
    /// While the sun is up.
    Daylight,
    /// Between two local times (crossing midnight when end < start), hours.
    Window {
        /// Start, local hour.
        start_h: f64,
        /// End, local hour.
        end_h: f64,
    },
    /// At any time.
    AnyTime,
}

/// What the rover does at night.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Overnight {
    /// Sleep: only loads scheduled `asleep` or `always` draw power.
    Sleep,
    /// Stay awake (parked).
    Awake,
}

/// Operating rules.
#[derive(Debug, Clone, PartialEq)]
pub struct Policy {
    /// Driving hours.
    pub driving: DrivingHours,
    /// Start a leg only at or above this SOC.
    pub min_soc_to_drive: f64,
    /// Once stopped below `min_soc_to_drive`, charge to this SOC before driving on.
    pub park_and_charge_to_soc: f64,
    /// Night behaviour.
    pub overnight: Overnight,
    /// The mission fails if not arrived after this long, s.
    pub deadline_s: f64,
    /// Loads the rover needs to survive the night (each on while asleep).
    pub survival_loads: Vec<String>,
}

/// One simulated season.
#[derive(Debug, Clone, PartialEq)]
pub struct Season {
    /// Name shown in reports ("summer solstice", "2027-05-01", "May").
    pub name: String,
    /// The local date the mission starts on.
    pub date: NaiveDate,
}

/// A checked mission: everything the simulation needs but the loaded rasters.
#[derive(Debug, Clone)]
pub struct Mission {
    /// The site.
    pub site: Site,
    /// The terrain files.
    pub terrain: TerrainInput,
    /// The route.
    pub route: RoutePlan,
    /// The rover.
    pub rover: Rover,
    /// The panels.
    pub panels: PanelSetup,
    /// The battery pack's parameters (checked by [`Pack::new`]).
    pub battery: PackParams,
    /// The battery box's thermal node (checked by [`ThermalNode::new`]).
    pub thermal: ThermalParams,
    /// The loads.
    pub loads: Loads,
    /// Weather and climate.
    pub weather: Weather,
    /// Operating rules.
    pub policy: Policy,
    /// Seasons to simulate, in date order.
    pub seasons: Vec<Season>,
    /// Simulation step, s.
    pub step_s: f64,
    /// Local hour the mission starts on each season's date.
    pub start_local_h: f64,
}

/// Defaults of the mission's own keys (each documented in `docs/mission-file.md`).
pub mod defaults {
    /// `policy.min_soc_to_drive`: 0.4, twice the default 0.2 reserve so that a leg
    /// starts with room above the reserve (an assumption; set it from the longest leg).
    pub const MIN_SOC_TO_DRIVE: f64 = 0.4;
    /// `policy.park_and_charge_to_soc`: 0.8 (an assumption: a pack full enough for a
    /// leg, short of the slow constant-voltage top of charge).
    pub const PARK_AND_CHARGE_TO_SOC: f64 = 0.8;
    /// `policy.deadline_days`: 7 days (an assumption: a week-long deployment).
    pub const DEADLINE_DAYS: f64 = 7.0;
    /// `seasons.year`: 2027, a fixed year so runs repeat (sunward never reads a clock).
    pub const YEAR: i32 = 2027;
    /// `seasons.day_of_month` for monthly seasons: the 21st, close to the solstice and
    /// equinox days.
    pub const DAY_OF_MONTH: u32 = 21;
    /// `simulation.step_s`: 60 s, the longest step allowed (load schedules of a
    /// minute or more are resolved).
    pub const STEP_S: f64 = 60.0;
    /// `simulation.start_local_h`: 08:00 local (an assumption: a morning start).
    pub const START_LOCAL_H: f64 = 8.0;
    /// `weather.wind_m_s`: 1 m/s, a light wind; low wind means warmer cells and less
    /// power, so a low default errs on the safe side (an assumption).
    pub const WIND_M_S: f64 = 1.0;
    /// `panels.max_rotation_deg`: 45° either way (an assumption for a mast tracker).
    pub const MAX_ROTATION_DEG: f64 = 45.0;
    /// `panels.noct_c`: 45 °C, a usual data-sheet NOCT of open-rack silicon modules
    /// (common practice; the module's data sheet governs).
    pub const NOCT_C: f64 = 45.0;
    /// `weather.air_temp_peak_h`: 15:00 local, as in the battery stage's climate model.
    pub const AIR_TEMP_PEAK_H: f64 = 15.0;
}

/// Collects problems with positions, as the spec does.
struct Out<'t> {
    text: &'t str,
    given: &'t [(String, std::ops::Range<usize>)],
    list: Vec<Problem>,
}

impl Out<'_> {
    fn at(&self, span: Option<std::ops::Range<usize>>) -> Option<TextPos> {
        span.map(|s| TextPos::of_offset(self.text, s.start))
    }

    fn add(
        &mut self,
        key: &str,
        span: Option<std::ops::Range<usize>>,
        detail: String,
        fix: String,
    ) {
        let at = self.at(span);
        self.list.push(Problem {
            key: key.to_string(),
            at,
            detail,
            fix,
        });
    }

    fn is_given(&self, key: &str) -> bool {
        self.given.iter().any(|(g, _)| g == key)
    }

    /// Where the table holding `key` starts (for problems about absent keys).
    fn parent_span(&self, key: &str) -> Option<std::ops::Range<usize>> {
        let parent = key.rsplit_once('.')?.0;
        self.given
            .iter()
            .find(|(g, _)| g == parent)
            .map(|(_, s)| s.clone())
    }

    /// A required key that is absent (not merely badly written).
    fn missing<T>(&mut self, key: &str, v: &Option<Val<T>>, fix: &str) {
        if v.is_none() && !self.is_given(key) {
            let span = self.parent_span(key);
            self.add(
                key,
                span,
                "missing (this key is required)".into(),
                fix.into(),
            );
        }
    }

    /// A key that does not apply to the mode chosen.
    fn not_for<T>(&mut self, key: &str, v: &Option<Val<T>>, mode: &str) {
        if let Some(v) = v {
            self.add(
                key,
                Some(v.span()),
                format!("does not apply to {mode}"),
                "remove it, or choose the mode it belongs to".into(),
            );
        }
    }
}

fn get<T: Clone>(v: &Option<Val<T>>) -> Option<T> {
    v.as_ref().map(|s| s.get_ref().clone())
}

/// Checks the raw mission against itself and the stages, and builds the [`Mission`].
///
/// `text` is the mission file's text (for line and column), `base` the folder the
/// mission file is in, `exists` tells whether an input file exists. The list can be
/// empty when the only faults are ones the spec reported (their keys are absent from
/// the raw mirror): call [`crate::mission::check`] for both lists together.
pub fn resolve(
    raw: &RawMission<'_>,
    text: &str,
    base: &Path,
    exists: &dyn Fn(&Path) -> bool,
) -> Result<Mission, Vec<Problem>> {
    let mut out = Out {
        text,
        given: &raw.given,
        list: Vec::new(),
    };
    let mission = build(raw, base, exists, &mut out);
    let mut list = out.list;
    sort_problems(&mut list);
    match mission {
        Some(m) if list.is_empty() => Ok(m),
        _ => Err(list),
    }
}

fn build(
    raw: &RawMission<'_>,
    base: &Path,
    exists: &dyn Fn(&Path) -> bool,
    out: &mut Out<'_>,
) -> Option<Mission> {
    let site = site(raw, out);
    let terrain = terrain(raw.terrain.as_ref(), base, exists, out);
    let rover = rover(raw.rover.as_ref(), out);
    let route = route(raw, rover.as_ref(), out);
    let panels = panels(raw, out);
    let battery = battery(raw.battery.as_ref(), out);
    let thermal = thermal(raw.thermal.as_ref(), out);
    let loads = loads(&raw.loads, out);
    let weather = weather(raw, base, exists, out);
    let policy = policy(raw, battery.as_ref(), loads.as_ref(), out);
    let seasons = seasons(raw, site.as_ref(), out);
    let step_s = get(&raw.simulation.step_s).unwrap_or(defaults::STEP_S);
    let start_local_h = get(&raw.simulation.start_local_h).unwrap_or(defaults::START_LOCAL_H);
    Some(Mission {
        site: site?,
        terrain: terrain?,
        route: route?,
        rover: rover?,
        panels: panels?,
        battery: battery?,
        thermal: thermal?,
        loads: loads?,
        weather: weather?,
        policy: policy?,
        seasons: seasons?,
        step_s,
        start_local_h,
    })
}

fn section_missing(out: &mut Out<'_>, name: &str, fix: &str) {
    if !out.is_given(name) {
        out.add(name, None, format!("missing section [{name}]"), fix.into());
    }
}

fn site(raw: &RawMission<'_>, out: &mut Out<'_>) -> Option<Site> {
    let Some(s) = &raw.site else {
        section_missing(
            out,
            "site",
            "add [site] with lat_deg, lon_deg and time_zone",
        );
        return None;
    };
    out.missing(
        "site.lat_deg",
        &s.lat_deg,
        "give the site's latitude in degrees, north positive",
    );
    out.missing(
        "site.lon_deg",
        &s.lon_deg,
        "give the site's longitude in degrees, east positive",
    );
    let offset = match &s.time_zone {
        Some(tz) => parse_utc_offset(tz.get_ref()).map_err(|why| {
            out.add("site.time_zone", Some(tz.span()), why.0, why.1);
        }),
        None => Ok(FixedOffset::east_opt(0).expect("zero offset")),
    };
    Some(Site {
        name: get(&s.name).unwrap_or_else(|| "unnamed site".into()),
        latitude_rad: deg_to_rad(get(&s.lat_deg)?),
        longitude_rad: deg_to_rad(get(&s.lon_deg)?),
        elevation_m: get(&s.elevation_m).unwrap_or(0.0),
        utc_offset: offset.ok()?,
    })
}

/// Parses a fixed UTC offset: `UTC`, `Z`, `+HH:MM`, `-HH:MM` or `+HH`, from -12:00 to
/// +14:00. IANA names are refused with the reason (no time-zone database is bundled).
pub fn parse_utc_offset(s: &str) -> Result<FixedOffset, (String, String)> {
    let t = s.trim();
    if t.eq_ignore_ascii_case("utc") || t == "Z" || t.eq_ignore_ascii_case("gmt") {
        return Ok(FixedOffset::east_opt(0).expect("zero offset"));
    }
    let fix = "give the fixed offset from UTC the site keeps during the mission, e.g. \
               \"+02:00\" or \"UTC\"";
    if t.contains('/') {
        return Err((
            format!(
                "time-zone names such as \"{t}\" are not supported: sunward carries no \
                 time-zone database"
            ),
            format!("{fix} (a mission across a daylight-saving change needs one file per offset)"),
        ));
    }
    offset_seconds(t)
        .and_then(FixedOffset::east_opt)
        .ok_or_else(|| {
            (
                format!("\"{t}\" is not a UTC offset from -12:00 to +14:00"),
                fix.into(),
            )
        })
}

fn offset_seconds(t: &str) -> Option<i32> {
    let sign = match t.chars().next()? {
        '+' => 1,
        '-' => -1,
        _ => return None,
    };
    let (h, m) = t[1..].split_once(':').unwrap_or((&t[1..], "00"));
    let ok = |x: &str| x.len() == 2 && x.chars().all(|c| c.is_ascii_digit());
    if !ok(h) || !ok(m) {
        return None;
    }
    let (h, m): (i32, i32) = (h.parse().ok()?, m.parse().ok()?);
    let secs = sign * (h * 3600 + m * 60);
    (m < 60 && (-12 * 3600..=14 * 3600).contains(&secs)).then_some(secs)
}

fn input_file(
    key: &str,
    v: &Val<String>,
    base: &Path,
    exists: &dyn Fn(&Path) -> bool,
    out: &mut Out<'_>,
) -> Option<PathBuf> {
    let path = base.join(v.get_ref());
    if exists(&path) {
        return Some(path);
    }
    out.add(
        key,
        Some(v.span()),
        format!("file not found: {}", path.display()),
        "check the path; it is relative to the mission file's folder".into(),
    );
    None
}

fn terrain(
    t: Option<&TerrainRaw>,
    base: &Path,
    exists: &dyn Fn(&Path) -> bool,
    out: &mut Out<'_>,
) -> Option<TerrainInput> {
    let Some(t) = t else {
        section_missing(
            out,
            "terrain",
            "add [terrain] with file = \"...\" (the DEM)",
        );
        return None;
    };
    out.missing(
        "terrain.file",
        &t.file,
        "give the DEM file, relative to the mission file",
    );
    let dem_path = t
        .file
        .as_ref()
        .and_then(|f| input_file("terrain.file", f, base, exists, out));
    let keep_out_path = t
        .keep_out
        .as_ref()
        .map(|f| input_file("terrain.keep_out", f, base, exists, out));
    let png = png_scale(t, out);
    let read = ReadOptions {
        max_cells: get(&t.max_cells).map_or(DEFAULT_MAX_CELLS, |n| n as u64),
        max_memory_mb: get(&t.max_memory_mb)
            .map_or(crate::limits::DEFAULT_MAX_MEMORY_MB, |n| n as u64),
        png: png?,
    };
    let keep_out_at = out.at(t.keep_out.as_ref().map(|k| k.span()));
    let dem_at = out.at(t.file.as_ref().map(|k| k.span()));
    Some(TerrainInput {
        keep_out_at,
        dem_at,
        dem_path: dem_path?,
        read,
        keep_out_path: keep_out_path.map_or(Some(None), |p| p.map(Some))?,
    })
}

/// PNG scale when the DEM is a PNG; the PNG keys anywhere else are a problem.
fn png_scale(t: &TerrainRaw, out: &mut Out<'_>) -> Option<Option<PngScale>> {
    let is_png = t
        .file
        .as_ref()
        .is_some_and(|f| f.get_ref().to_ascii_lowercase().ends_with(".png"));
    if !is_png {
        let mode = "a DEM that is not a PNG heightmap";
        out.not_for("terrain.cell_m", &t.cell_m, mode);
        out.not_for("terrain.z_scale_m", &t.z_scale_m, mode);
        out.not_for("terrain.z_offset_m", &t.z_offset_m, mode);
        out.not_for("terrain.png_nodata", &t.png_nodata, mode);
        return Some(None);
    }
    out.missing(
        "terrain.cell_m",
        &t.cell_m,
        "a PNG heightmap needs its cell size in metres",
    );
    Some(Some(PngScale {
        cell_m: get(&t.cell_m)?,
        z_scale_m: get(&t.z_scale_m).unwrap_or(1.0),
        z_offset_m: get(&t.z_offset_m).unwrap_or(0.0),
        nodata_raw: get(&t.png_nodata).map(|n| n as u16),
    }))
}

fn rover(t: Option<&StageTable<'_>>, out: &mut Out<'_>) -> Option<Rover> {
    let Some(t) = t else {
        section_missing(
            out,
            "rover",
            "add [rover] with the vehicle's mass_kg, drive_efficiency, hotel_power_w, ...",
        );
        return None;
    };
    let file: RoverFile = stage_value("rover", t, out)?;
    match file.resolve(out.text) {
        Ok(r) => Some(r),
        Err(VehicleError::Invalid(problems)) => {
            for p in problems {
                let at = p.pos.or_else(|| out.at(Some(t.header.clone())));
                out.list.push(Problem {
                    key: format!("rover.{}", p.key),
                    at,
                    detail: p.detail,
                    fix: p.fix,
                });
            }
            None
        }
        Err(VehicleError::Parse { pos, message, fix }) => {
            out.list.push(Problem {
                key: "rover".into(),
                at: pos,
                detail: message,
                fix,
            });
            None
        }
    }
}

fn route(raw: &RawMission<'_>, rover: Option<&Rover>, out: &mut Out<'_>) -> Option<RoutePlan> {
    let Some(r) = &raw.route else {
        let fix = "add [route] with start_m = [x, y] and goal_m = [x, y]";
        section_missing(out, "route", fix);
        return None;
    };
    let fix = "give the point in the terrain's map coordinates, metres, e.g. [120.0, 340.0]";
    out.missing("route.start_m", &r.start_m, fix);
    out.missing("route.goal_m", &r.goal_m, fix);
    let waypoints = r
        .waypoints_m
        .iter()
        .enumerate()
        .map(|(i, w)| {
            let key = format!("route.waypoints_m[{i}]");
            place(format!("waypoint {}", i + 1), &key, w, out)
        })
        .collect();
    let sites = visit_sites(raw, out);
    Some(RoutePlan {
        start: place("start".into(), "route.start_m", r.start_m.as_ref()?, out),
        goal: place("goal".into(), "route.goal_m", r.goal_m.as_ref()?, out),
        waypoints,
        sites: sites?,
        objective: objective_of(r),
        connectivity: match get(&r.connectivity) {
            Some(16) => Connectivity::Sixteen,
            _ => Connectivity::Eight,
        },
        tilt: tilt_limits(r, rover?),
    })
}

fn place(label: String, key: &str, v: &Val<[f64; 2]>, out: &Out<'_>) -> PlacedPoint {
    let [x, y] = *v.get_ref();
    PlacedPoint {
        point: RoutePoint { label, x, y },
        key: key.to_string(),
        at: out.at(Some(v.span())),
    }
}

fn objective_of(r: &RouteRaw) -> Objective {
    match get(&r.objective).as_deref() {
        Some("time") => Objective::TIME,
        Some("distance") => Objective::DISTANCE,
        _ => Objective::ENERGY,
    }
}

/// The rover's limits, each overridden by the route's key when given.
fn tilt_limits(r: &RouteRaw, rover: &Rover) -> TiltLimits {
    TiltLimits {
        max_pitch_up_rad: get(&r.max_climb_deg).map_or(rover.max_climb_rad, deg_to_rad),
        max_pitch_down_rad: get(&r.max_descent_deg).map_or(rover.max_descent_rad, deg_to_rad),
        max_roll_rad: get(&r.max_roll_deg).map_or(rover.roll_limit_rad(), deg_to_rad),
    }
}

fn visit_sites(raw: &RawMission<'_>, out: &mut Out<'_>) -> Option<Vec<VisitSite>> {
    let stops = &raw.route.as_ref()?.sites;
    let mut sites = Vec::new();
    let mut ok = true;
    for (i, s) in stops.iter().enumerate() {
        let key = format!("route.sites[{i}]");
        let name = get(&s.name).unwrap_or_else(|| format!("site {}", i + 1));
        if sites
            .iter()
            .any(|v: &VisitSite| v.place.point.label == name)
        {
            out.add(
                &key,
                Some(s.span.clone()),
                format!("a second site named \"{name}\""),
                "give every site its own name".into(),
            );
            ok = false;
        }
        out.missing(
            &format!("{key}.x_m"),
            &s.x_m,
            "give the site's map x in metres",
        );
        out.missing(
            &format!("{key}.y_m"),
            &s.y_m,
            "give the site's map y in metres",
        );
        let (Some(x), Some(y)) = (get(&s.x_m), get(&s.y_m)) else {
            ok = false;
            continue;
        };
        sites.push(VisitSite {
            place: PlacedPoint {
                point: RoutePoint { label: name, x, y },
                key,
                at: out.at(Some(s.span.clone())),
            },
            payload_s: 60.0 * get(&s.payload_min).unwrap_or(0.0),
        });
    }
    ok.then_some(sites)
}

fn panels(raw: &RawMission<'_>, out: &mut Out<'_>) -> Option<PanelSetup> {
    section_missing(
        out,
        "panels",
        "add [panels] with the panel's area_m2 and efficiency_stc",
    );
    let p = &raw.panels;
    let d = Panel::default();
    let mut panel = Panel {
        area_m2: get(&p.area_m2).unwrap_or(d.area_m2),
        efficiency_stc: get(&p.efficiency_stc).unwrap_or(d.efficiency_stc),
        temp_coeff_per_k: get(&p.temp_coeff_per_k).unwrap_or(d.temp_coeff_per_k),
        soiling_loss: get(&p.soiling_loss).unwrap_or(d.soiling_loss),
        mppt_efficiency: get(&p.mppt_efficiency).unwrap_or(d.mppt_efficiency),
        wiring_efficiency: get(&p.wiring_efficiency).unwrap_or(d.wiring_efficiency),
        cell_temperature: cell_temperature(raw, out),
    };
    let mut ok = true;
    // The sun stage reports the first bad value: report it, put the default back and
    // ask again, so that every bad value is listed.
    for _ in 0..8 {
        let Err(SunError::Parameter {
            name,
            value,
            expected,
            fix,
        }) = panel.validate()
        else {
            break;
        };
        ok = false;
        let span = panel_span(p, name);
        out.add(
            &format!("panels.{name}"),
            span,
            format!("got {value}, expected {expected}"),
            fix.into(),
        );
        reset_panel_field(&mut panel, name);
    }
    let mount = mount(raw, out);
    ok.then_some(PanelSetup {
        panel,
        mount: mount?,
    })
}

fn panel_span(p: &crate::mission::spec::PanelsRaw, name: &str) -> Option<std::ops::Range<usize>> {
    let v = match name {
        "area_m2" => &p.area_m2,
        "efficiency_stc" => &p.efficiency_stc,
        "temp_coeff_per_k" => &p.temp_coeff_per_k,
        "soiling_loss" => &p.soiling_loss,
        "mppt_efficiency" => &p.mppt_efficiency,
        _ => &p.wiring_efficiency,
    };
    v.as_ref().map(|s| s.span())
}

fn reset_panel_field(panel: &mut Panel, name: &str) {
    let d = Panel::default();
    match name {
        "area_m2" => panel.area_m2 = d.area_m2,
        "efficiency_stc" => panel.efficiency_stc = d.efficiency_stc,
        "temp_coeff_per_k" => panel.temp_coeff_per_k = d.temp_coeff_per_k,
        "soiling_loss" => panel.soiling_loss = d.soiling_loss,
        "mppt_efficiency" => panel.mppt_efficiency = d.mppt_efficiency,
        _ => panel.wiring_efficiency = d.wiring_efficiency,
    }
}

fn cell_temperature(raw: &RawMission<'_>, out: &mut Out<'_>) -> CellTemperature {
    let p = &raw.panels;
    match get(&p.cell_temperature).as_deref() {
        Some("noct") => {
            out.not_for(
                "panels.faiman_u0_w_m2_k",
                &p.faiman_u0_w_m2_k,
                "cell_temperature = \"noct\"",
            );
            out.not_for(
                "panels.faiman_u1_w_s_m3_k",
                &p.faiman_u1_w_s_m3_k,
                "cell_temperature = \"noct\"",
            );
            CellTemperature::Noct {
                noct_c: get(&p.noct_c).unwrap_or(defaults::NOCT_C),
            }
        }
        _ => {
            out.not_for("panels.noct_c", &p.noct_c, "cell_temperature = \"faiman\"");
            let CellTemperature::Faiman { u0, u1 } = CellTemperature::default() else {
                unreachable!("the default cell model is Faiman's")
            };
            CellTemperature::Faiman {
                u0: get(&p.faiman_u0_w_m2_k).unwrap_or(u0),
                u1: get(&p.faiman_u1_w_s_m3_k).unwrap_or(u1),
            }
        }
    }
}

fn mount(raw: &RawMission<'_>, out: &mut Out<'_>) -> Option<Mount> {
    let p = &raw.panels;
    let mode = get(&p.mount).unwrap_or_else(|| "deck".into());
    let m = format!("mount = \"{mode}\"");
    match mode.as_str() {
        "fixed_tilt" => {
            out.not_for("panels.axis_yaw_deg", &p.axis_yaw_deg, &m);
            out.not_for("panels.max_rotation_deg", &p.max_rotation_deg, &m);
            out.missing(
                "panels.tilt_deg",
                &p.tilt_deg,
                "give the panel's tilt from the deck, degrees",
            );
            Some(Mount::FixedTilt {
                tilt_rad: deg_to_rad(get(&p.tilt_deg)?),
                relative_azimuth_rad: deg_to_rad(get(&p.azimuth_deg).unwrap_or(0.0)),
            })
        }
        "single_axis" => {
            out.not_for("panels.tilt_deg", &p.tilt_deg, &m);
            out.not_for("panels.azimuth_deg", &p.azimuth_deg, &m);
            Some(Mount::SingleAxis {
                axis_yaw_rad: deg_to_rad(get(&p.axis_yaw_deg).unwrap_or(0.0)),
                max_angle_rad: deg_to_rad(
                    get(&p.max_rotation_deg).unwrap_or(defaults::MAX_ROTATION_DEG),
                ),
            })
        }
        _ => {
            for (k, v) in [
                ("panels.tilt_deg", &p.tilt_deg),
                ("panels.azimuth_deg", &p.azimuth_deg),
            ] {
                out.not_for(k, v, &m);
            }
            out.not_for("panels.axis_yaw_deg", &p.axis_yaw_deg, &m);
            out.not_for("panels.max_rotation_deg", &p.max_rotation_deg, &m);
            Some(Mount::BodyFixed {
                normal_body: [0.0, 0.0, 1.0],
            })
        }
    }
}

/// Reports a battery-stage error on table `t` under `prefix`; returns the key to drop
/// before asking again, when the error names one the table holds.
fn battery_problem(
    prefix: &str,
    t: &StageTable<'_>,
    e: BatteryError,
    out: &mut Out<'_>,
) -> Option<String> {
    match e {
        BatteryError::Parameter {
            key,
            value,
            expected,
            fix,
            ..
        } => {
            let root = key.split(['[', '.']).next().unwrap_or(&key).to_string();
            let span = t.span_of(&root);
            let held = span.is_some();
            let span = span.or_else(|| Some(t.header.clone()));
            out.add(
                &format!("{prefix}.{key}"),
                span,
                format!("got {value}, expected {expected}"),
                fix.into(),
            );
            held.then_some(root)
        }
        BatteryError::Inconsistent { problem, fix, .. } => {
            out.add(prefix, Some(t.header.clone()), problem, fix.into());
            None
        }
        BatteryError::Series { line, problem, fix } => {
            out.add(
                prefix,
                Some(t.header.clone()),
                format!("line {line}: {problem}"),
                fix.into(),
            );
            None
        }
    }
}

/// The stage's own type from its table, or a problem at the table.
fn stage_value<T: serde::de::DeserializeOwned>(
    prefix: &str,
    t: &StageTable<'_>,
    out: &mut Out<'_>,
) -> Option<T> {
    match t.to::<T>() {
        Ok(v) => Some(v),
        Err(e) => {
            let span = e.span().or_else(|| Some(t.header.clone()));
            out.add(
                prefix,
                span,
                e.message().trim().to_string(),
                format!("check the keys of [{prefix}] against docs/mission-file.md"),
            );
            None
        }
    }
}

/// Runs a stage's check on a table, dropping each reported key and asking again, so
/// that every bad value is listed (the stages stop at the first).
fn check_stage<T: serde::de::DeserializeOwned>(
    prefix: &str,
    table: &StageTable<'_>,
    check: impl Fn(&T) -> Result<(), BatteryError>,
    out: &mut Out<'_>,
) -> Option<T> {
    let mut t = table.clone();
    let mut ok = true;
    for _ in 0..64 {
        let value: T = stage_value(prefix, &t, out)?;
        let Err(e) = check(&value) else {
            return ok.then_some(value);
        };
        // With a bad key already dropped, a complaint about keys that belong together
        // ("capacity_wh and nominal_voltage_v must be given together") is about the
        // drop, not about the file: report nothing more.
        if !ok && matches!(e, BatteryError::Inconsistent { .. }) {
            return None;
        }
        ok = false;
        t = t.without(&battery_problem(prefix, &t, e, out)?);
    }
    None
}

fn battery(t: Option<&StageTable<'_>>, out: &mut Out<'_>) -> Option<PackParams> {
    let Some(t) = t else {
        section_missing(
            out,
            "battery",
            "add [battery] with capacity_wh and nominal_voltage_v",
        );
        return None;
    };
    check_stage("battery", t, |p: &PackParams| Pack::new(p).map(|_| ()), out)
}

fn thermal(t: Option<&StageTable<'_>>, out: &mut Out<'_>) -> Option<ThermalParams> {
    match t {
        None => Some(ThermalParams::default()),
        Some(t) => check_stage(
            "thermal",
            t,
            |p: &ThermalParams| ThermalNode::new(p).map(|_| ()),
            out,
        ),
    }
}

fn loads(raw: &[LoadRaw<'_>], out: &mut Out<'_>) -> Option<Loads> {
    let mut specs: Vec<LoadSpec> = Vec::new();
    let mut ok = true;
    for l in raw {
        let Some(spec) = &l.spec else {
            ok = false;
            continue;
        };
        if specs.iter().any(|s| s.name == spec.name) {
            let span = l.table.span_of("name").or(Some(l.table.header.clone()));
            out.add(
                &l.key,
                span,
                format!("a second load named \"{}\"", spec.name),
                "give every load its own name".into(),
            );
            ok = false;
            continue;
        }
        if let Err(e) = Loads::new(vec![spec.clone()]) {
            ok = false;
            let prefix = l.key.clone();
            let e = strip_load_name(e, &spec.name);
            battery_problem(&prefix, &l.table, e, out);
            continue;
        }
        specs.push(spec.clone());
    }
    let loads = Loads::new(specs).ok()?;
    ok.then_some(loads)
}

/// The loads stage names keys `NAME.key`; the mission names them under the load.
fn strip_load_name(e: BatteryError, name: &str) -> BatteryError {
    match e {
        BatteryError::Parameter {
            table,
            key,
            value,
            expected,
            fix,
        } => BatteryError::Parameter {
            table,
            key: key
                .strip_prefix(&format!("{name}."))
                .unwrap_or(&key)
                .to_string(),
            value,
            expected,
            fix,
        },
        other => other,
    }
}

fn weather(
    raw: &RawMission<'_>,
    base: &Path,
    exists: &dyn Fn(&Path) -> bool,
    out: &mut Out<'_>,
) -> Option<Weather> {
    let Some(w) = &raw.weather else {
        section_missing(
            out,
            "weather",
            "add [weather] with the site's monthly air_temp_mean_c and air_temp_swing_c",
        );
        return None;
    };
    let sky = sky(w, base, exists, out);
    let clearness_sd = clearness_sd(w, sky.as_ref(), out);
    let climate = climate(w, out);
    let sky_model = match get(&w.sky_model).as_deref() {
        Some("isotropic") => SkyModel::Isotropic,
        Some("perez") => SkyModel::Perez,
        _ => SkyModel::HayDavies,
    };
    Some(Weather {
        sky: sky?,
        albedo: get(&w.albedo).unwrap_or(ALBEDO_BARE_SOIL),
        sky_model,
        wind_m_s: get(&w.wind_m_s).unwrap_or(defaults::WIND_M_S),
        climate: climate?,
        clearness_sd,
    })
}

/// `clearness_sd`: only with `sky = "clearness"`; a Beta distribution per month needs
/// sd² < mean·(1 − mean) (or sd = 0).
fn clearness_sd(
    w: &crate::mission::spec::WeatherRaw,
    sky: Option<&Sky>,
    out: &mut Out<'_>,
) -> Option<[f64; 12]> {
    let mode = get(&w.sky).unwrap_or_else(|| "clear_sky".into());
    if mode != "clearness" {
        out.not_for(
            "weather.clearness_sd",
            &w.clearness_sd,
            &format!("sky = \"{mode}\""),
        );
        return None;
    }
    let sd = twelve(&w.clearness_sd)?;
    let Some(Sky::Clearness { monthly, .. }) = sky else {
        return None;
    };
    let span = w.clearness_sd.as_ref().map(|s| s.span());
    for (m, (&mu, &sigma)) in monthly.iter().zip(&sd).enumerate() {
        if let Err(e) = crate::sun::clearness_mc::DayLaw::from_mean_sd(mu, sigma, m + 1) {
            let most = (mu * (1.0 - mu)).sqrt();
            out.add(
                "weather.clearness_sd",
                span,
                e.to_string(),
                format!(
                    "give an sd below {most:.3} for month {} (sqrt(mean·(1 − mean)) with the \
                     month's clearness {mu}), or 0 for no day-to-day spread",
                    m + 1
                ),
            );
            return None;
        }
    }
    Some(sd)
}

fn twelve(v: &Option<Val<Vec<f64>>>) -> Option<[f64; 12]> {
    v.as_ref()
        .and_then(|s| s.get_ref().as_slice().try_into().ok())
}

fn sky(
    w: &crate::mission::spec::WeatherRaw,
    base: &Path,
    exists: &dyn Fn(&Path) -> bool,
    out: &mut Out<'_>,
) -> Option<Sky> {
    let mode = get(&w.sky).unwrap_or_else(|| "clear_sky".into());
    let m = format!("sky = \"{mode}\"");
    if mode != "csv" {
        out.not_for("weather.file", &w.file, &m);
    }
    if mode != "clearness" {
        out.not_for("weather.clearness", &w.clearness, &m);
    }
    if mode == "csv" {
        out.not_for("weather.linke_turbidity", &w.linke_turbidity, &m);
        out.missing(
            "weather.file",
            &w.file,
            "give the weather CSV file, relative to the mission file",
        );
        let path = input_file("weather.file", w.file.as_ref()?, base, exists, out)?;
        return Some(Sky::Csv { path });
    }
    let linke = match twelve(&w.linke_turbidity) {
        None => LinkeTurbidity::default(),
        Some(v) => LinkeTurbidity::new(v)
            .map_err(|e| {
                let span = w.linke_turbidity.as_ref().map(|s| s.span());
                out.add(
                    "weather.linke_turbidity",
                    span,
                    sun_detail(&e),
                    "give twelve monthly values, typically 2 to 6".into(),
                );
            })
            .ok()?,
    };
    if mode == "clearness" {
        out.missing(
            "weather.clearness",
            &w.clearness,
            "give twelve monthly clearness values, 0 to 1",
        );
        return Some(Sky::Clearness {
            linke,
            monthly: twelve(&w.clearness)?,
        });
    }
    Some(Sky::ClearSky(linke))
}

fn sun_detail(e: &SunError) -> String {
    match e {
        SunError::Parameter {
            value, expected, ..
        } => format!("got {value}, expected {expected}"),
        other => other.to_string(),
    }
}

fn climate(w: &crate::mission::spec::WeatherRaw, out: &mut Out<'_>) -> Option<MonthlyClimate> {
    let fix = "give twelve monthly values, January to December (climate normals of the site)";
    out.missing("weather.air_temp_mean_c", &w.air_temp_mean_c, fix);
    out.missing("weather.air_temp_swing_c", &w.air_temp_swing_c, fix);
    let c = MonthlyClimate {
        mean_c: twelve(&w.air_temp_mean_c)?,
        diurnal_swing_c: twelve(&w.air_temp_swing_c)?,
        peak_hour: get(&w.air_temp_peak_h).unwrap_or(defaults::AIR_TEMP_PEAK_H),
    };
    if let Err(BatteryError::Parameter {
        key,
        value,
        expected,
        fix,
        ..
    }) = c.validate()
    {
        let (file_key, span) = if key.starts_with("mean_c") {
            (
                "air_temp_mean_c",
                w.air_temp_mean_c.as_ref().map(|s| s.span()),
            )
        } else if key.starts_with("diurnal") {
            (
                "air_temp_swing_c",
                w.air_temp_swing_c.as_ref().map(|s| s.span()),
            )
        } else {
            (
                "air_temp_peak_h",
                w.air_temp_peak_h.as_ref().map(|s| s.span()),
            )
        };
        let month = key.split('[').nth(1).map_or(String::new(), |m| {
            format!(" (month index {}", m.trim_end_matches(']')) + ")"
        });
        out.add(
            &format!("weather.{file_key}"),
            span,
            format!("got {value}{month}, expected {expected}"),
            fix.into(),
        );
        return None;
    }
    Some(c)
}

fn policy(
    raw: &RawMission<'_>,
    battery: Option<&PackParams>,
    loads: Option<&Loads>,
    out: &mut Out<'_>,
) -> Option<Policy> {
    let p = &raw.policy;
    let driving = driving_hours(p, out)?;
    let policy = Policy {
        driving,
        min_soc_to_drive: get(&p.min_soc_to_drive).unwrap_or(defaults::MIN_SOC_TO_DRIVE),
        park_and_charge_to_soc: get(&p.park_and_charge_to_soc)
            .unwrap_or(defaults::PARK_AND_CHARGE_TO_SOC),
        overnight: match get(&p.overnight).as_deref() {
            Some("awake") => Overnight::Awake,
            _ => Overnight::Sleep,
        },
        deadline_s: 86_400.0 * get(&p.deadline_days).unwrap_or(defaults::DEADLINE_DAYS),
        survival_loads: p
            .survival_loads
            .iter()
            .map(|n| n.get_ref().clone())
            .collect(),
    };
    let socs_ok = soc_consistency(raw, &policy, battery, out);
    let loads_ok = loads.is_none_or(|l| survival_loads_ok(raw, l, out));
    (socs_ok && loads_ok).then_some(policy)
}

fn driving_hours(p: &PolicyRaw, out: &mut Out<'_>) -> Option<DrivingHours> {
    let mode = get(&p.driving);
    if mode.as_deref() == Some("window") {
        let fix = "give the local hours of the driving window";
        out.missing("policy.drive_start_h", &p.drive_start_h, fix);
        out.missing("policy.drive_end_h", &p.drive_end_h, fix);
        return Some(DrivingHours::Window {
            start_h: get(&p.drive_start_h)?,
            end_h: get(&p.drive_end_h)?,
        });
    }
    let m = format!("driving = \"{}\"", mode.as_deref().unwrap_or("daylight"));
    out.not_for("policy.drive_start_h", &p.drive_start_h, &m);
    out.not_for("policy.drive_end_h", &p.drive_end_h, &m);
    Some(match mode.as_deref() {
        Some("any_time") => DrivingHours::AnyTime,
        _ => DrivingHours::Daylight,
    })
}

/// Each survival load exists and is on while the rover sleeps.
fn survival_loads_ok(raw: &RawMission<'_>, loads: &Loads, out: &mut Out<'_>) -> bool {
    let names: Vec<&str> = loads.specs().iter().map(|s| s.name.as_str()).collect();
    let mut ok = true;
    for n in &raw.policy.survival_loads {
        let Some(spec) = loads.specs().iter().find(|s| &s.name == n.get_ref()) else {
            let hint = crate::mission::spec::nearest(n.get_ref(), &names)
                .map_or(String::new(), |k| format!(" (did you mean \"{k}\"?)"));
            out.add(
                "policy.survival_loads",
                Some(n.span()),
                format!("no load is named \"{}\"{hint}", n.get_ref()),
                "name loads defined under [loads]".into(),
            );
            ok = false;
            continue;
        };
        if !matches!(spec.schedule, Schedule::Asleep | Schedule::Always) {
            out.add(
                "policy.survival_loads",
                Some(n.span()),
                format!("load \"{}\" is not on while the rover sleeps", n.get_ref()),
                "schedule it with when = \"asleep\" or \"always\"".into(),
            );
            ok = false;
        }
    }
    ok
}

/// reserve_soc (battery) < park_and_charge_to_soc, min_soc_to_drive <= park_and_charge_to_soc,
/// and min_soc_to_drive above the battery's cutoff.
fn soc_consistency(
    raw: &RawMission<'_>,
    policy: &Policy,
    battery: Option<&PackParams>,
    out: &mut Out<'_>,
) -> bool {
    let p = &raw.policy;
    let mut ok = true;
    let charge_span = p.park_and_charge_to_soc.as_ref().map(|s| s.span());
    let drive_span = p.min_soc_to_drive.as_ref().map(|s| s.span());
    if policy.min_soc_to_drive > policy.park_and_charge_to_soc {
        out.add(
            "policy.min_soc_to_drive",
            drive_span.clone().or(charge_span.clone()),
            format!(
                "{} is above park_and_charge_to_soc = {}: a rover that charges to the threshold could never drive on",
                policy.min_soc_to_drive, policy.park_and_charge_to_soc
            ),
            "keep min_soc_to_drive at or below park_and_charge_to_soc".into(),
        );
        ok = false;
    }
    let Some(b) = battery else { return ok };
    if b.reserve_soc >= policy.park_and_charge_to_soc {
        let span =
            charge_span.or_else(|| raw.battery.as_ref().and_then(|t| t.span_of("reserve_soc")));
        out.add(
            "policy.park_and_charge_to_soc",
            span,
            format!(
                "{} is not above battery.reserve_soc = {}: charging would stop inside the reserve",
                policy.park_and_charge_to_soc, b.reserve_soc
            ),
            "raise park_and_charge_to_soc above the reserve, or lower battery.reserve_soc".into(),
        );
        ok = false;
    }
    if policy.min_soc_to_drive <= b.cutoff_soc {
        out.add(
            "policy.min_soc_to_drive",
            drive_span,
            format!(
                "{} is not above battery.cutoff_soc = {}",
                policy.min_soc_to_drive, b.cutoff_soc
            ),
            "set min_soc_to_drive above the cutoff, usually at or above reserve_soc".into(),
        );
        ok = false;
    }
    ok
}

fn seasons(raw: &RawMission<'_>, site: Option<&Site>, out: &mut Out<'_>) -> Option<Vec<Season>> {
    let s = &raw.seasons;
    let mode = get(&s.mode).unwrap_or_else(|| "solstices_equinoxes".into());
    let year = get(&s.year).map_or(defaults::YEAR, |y| y as i32);
    let m = format!("mode = \"{mode}\"");
    if mode != "dates" && !s.dates.is_empty() {
        out.add(
            "seasons.dates",
            Some(s.dates[0].span()),
            format!("does not apply to {m}"),
            "remove it, or set mode = \"dates\"".into(),
        );
    }
    if mode != "monthly" {
        out.not_for("seasons.day_of_month", &s.day_of_month, &m);
    }
    match mode.as_str() {
        "dates" => {
            out.not_for("seasons.year", &s.year, &m);
            listed_dates(raw, out)
        }
        "monthly" => Some(monthly(
            year,
            get(&s.day_of_month).map_or(defaults::DAY_OF_MONTH, |d| d as u32),
        )),
        _ => {
            let site = site?;
            Some(solstices_equinoxes(
                year,
                site.latitude_rad >= 0.0,
                site.utc_offset,
            ))
        }
    }
}

fn listed_dates(raw: &RawMission<'_>, out: &mut Out<'_>) -> Option<Vec<Season>> {
    let dates = &raw.seasons.dates;
    if dates.is_empty() && !out.is_given("seasons.dates") {
        let span = out.parent_span("seasons.dates");
        out.add(
            "seasons.dates",
            span,
            "missing (mode = \"dates\" needs a list of dates)".into(),
            "give e.g. dates = [\"2027-06-21\"]".into(),
        );
        return None;
    }
    let mut seasons = Vec::new();
    let mut ok = true;
    for d in dates {
        match NaiveDate::parse_from_str(d.get_ref(), "%Y-%m-%d") {
            Ok(date) => seasons.push(Season {
                name: d.get_ref().clone(),
                date,
            }),
            Err(_) => {
                out.add(
                    "seasons.dates",
                    Some(d.span()),
                    format!("\"{}\" is not a date YYYY-MM-DD", d.get_ref()),
                    "write the date as \"2027-06-21\"".into(),
                );
                ok = false;
            }
        }
    }
    seasons.sort_by_key(|s| s.date);
    ok.then_some(seasons)
}

const MONTHS: [&str; 12] = [
    "January",
    "February",
    "March",
    "April",
    "May",
    "June",
    "July",
    "August",
    "September",
    "October",
    "November",
    "December",
];

fn monthly(year: i32, day: u32) -> Vec<Season> {
    (1..=12)
        .filter_map(|m| {
            Some(Season {
                name: MONTHS[m as usize - 1].to_string(),
                date: NaiveDate::from_ymd_opt(year, m, day)?,
            })
        })
        .collect()
}

/// The four seasons of `year`, named for the hemisphere, dated at the site's offset.
pub fn solstices_equinoxes(year: i32, north: bool, offset: FixedOffset) -> Vec<Season> {
    let names_north = [
        "spring equinox",
        "summer solstice",
        "autumn equinox",
        "winter solstice",
    ];
    let names_south = [
        "autumn equinox",
        "winter solstice",
        "spring equinox",
        "summer solstice",
    ];
    let names = if north { names_north } else { names_south };
    (0..4)
        .map(|q| {
            let t = solar_longitude_instant(year, q);
            Season {
                name: names[q as usize].to_string(),
                date: t.with_timezone(&offset).date_naive(),
            }
        })
        .collect()
}

/// The UTC instant in `year` when the sun's apparent geocentric longitude reaches
/// 90° × `quarter` (0: March equinox, 1: June solstice, 2: September equinox,
/// 3: December solstice), by bisection on a 40-day bracket around the usual date.
pub fn solar_longitude_instant(year: i32, quarter: u32) -> DateTime<Utc> {
    let target = 90.0 * f64::from(quarter);
    let month = 3 + 3 * quarter;
    let mid = Utc
        .with_ymd_and_hms(year, month, 21, 0, 0, 0)
        .single()
        .expect("the 21st exists in every quarter month");
    let offset_deg = |t: DateTime<Utc>| {
        let jd = julian_day(t);
        let dt_s = delta_t_model_s(f64::from(t.year()) + (f64::from(t.month()) - 0.5) / 12.0);
        let lambda = geocentric(jd + dt_s / 86_400.0).apparent_longitude_deg;
        (lambda - target + 540.0).rem_euclid(360.0) - 180.0
    };
    let (mut lo, mut hi) = (mid - Duration::days(20), mid + Duration::days(20));
    while hi - lo > Duration::milliseconds(500) {
        let m = lo + (hi - lo) / 2;
        if offset_deg(m) < 0.0 {
            lo = m;
        } else {
            hi = m;
        }
    }
    lo + (hi - lo) / 2
}

/// A keep-out raster that is not on the DEM's grid, as a problem at `terrain.keep_out`
/// (the caller loads both rasters).
pub fn keep_out_off_grid(
    terrain: &TerrainInput,
    dem: &crate::terrain::Dem,
    mask: &crate::terrain::Dem,
) -> Option<Problem> {
    let same_size = (mask.width(), mask.height()) == (dem.width(), dem.height());
    let (a, b) = (&mask.georef, &dem.georef);
    let close = |x: f64, y: f64| (x - y).abs() <= 1e-6 * b.pixel_width.abs().max(1.0);
    let same_place = close(a.origin_x, b.origin_x)
        && close(a.origin_y, b.origin_y)
        && close(a.pixel_width, b.pixel_width)
        && close(a.pixel_height, b.pixel_height);
    if same_size && same_place {
        return None;
    }
    Some(Problem {
        key: "terrain.keep_out".into(),
        at: terrain.keep_out_at,
        detail: format!(
            "the keep-out raster ({} x {} cells, origin ({}, {}), cells {} m) is not on the \
             DEM's grid ({} x {} cells, origin ({}, {}), cells {} m)",
            mask.width(),
            mask.height(),
            a.origin_x,
            a.origin_y,
            a.pixel_width,
            dem.width(),
            dem.height(),
            b.origin_x,
            b.origin_y,
            b.pixel_width
        ),
        fix: "make the mask from the DEM itself (same size, origin and cell size)".into(),
    })
}

/// Route points that fall outside the DEM or on a no-data cell, as problems at the
/// point's place in the file (the caller loads the DEM; this reads no file).
pub fn points_off_dem(route: &RoutePlan, dem: &crate::terrain::Dem) -> Vec<Problem> {
    route
        .points()
        .into_iter()
        .filter_map(|p| off_dem(p, dem))
        .collect()
}

fn off_dem(p: &PlacedPoint, dem: &crate::terrain::Dem) -> Option<Problem> {
    let cell = dem
        .georef
        .cell_at(p.point.x, p.point.y, dem.width(), dem.height());
    let detail = if let Some((col, row)) = cell {
        if !dem.get(col, row).is_nan() {
            return None;
        }
        format!(
            "{} ({}, {}) lies on a no-data cell",
            p.point.label, p.point.x, p.point.y
        )
    } else {
        let g = &dem.georef;
        let (x1, y0) = (
            g.origin_x + dem.width() as f64 * g.pixel_width,
            g.origin_y - dem.height() as f64 * g.pixel_height,
        );
        format!(
            "{} ({}, {}) lies outside the terrain, which spans x {} to {} and y {} to {}",
            p.point.label, p.point.x, p.point.y, g.origin_x, x1, y0, g.origin_y
        )
    };
    Some(Problem {
        key: p.key.clone(),
        at: p.at,
        detail,
        fix: "give map coordinates inside the terrain (see `sunward terrain info`)".into(),
    })
}

/// Route points on a cell the keep-out raster closes (any cell with data), as problems
/// at the point's place in the file. `mask` must be on the DEM's grid (see
/// [`keep_out_off_grid`]); points outside it are left to [`points_off_dem`].
pub fn points_in_keep_out(
    route: &RoutePlan,
    dem: &crate::terrain::Dem,
    mask: &crate::terrain::Dem,
) -> Vec<Problem> {
    let on_grid = (mask.width(), mask.height()) == (dem.width(), dem.height());
    let closed = |p: &PlacedPoint| {
        let cell = dem
            .georef
            .cell_at(p.point.x, p.point.y, dem.width(), dem.height());
        on_grid && cell.is_some_and(|(col, row)| !mask.get(col, row).is_nan())
    };
    route
        .points()
        .into_iter()
        .filter(|p| closed(p))
        .map(|p| Problem {
            key: p.key.clone(),
            at: p.at,
            detail: format!(
                "{} ({}, {}) lies inside the keep-out area (a cell of terrain.keep_out with data)",
                p.point.label, p.point.x, p.point.y
            ),
            fix: "move the point out of the keep-out area, or clear that cell of the mask".into(),
        })
        .collect()
}
