//! `sunward route`: plan one route on a DEM and write it as GeoJSON, a profile CSV and
//! a JSON summary.

use std::path::{Path, PathBuf};

use clap::{Args, ValueEnum};
use serde_json::{json, Value};

use sunward::plan::sites::Tour;
use sunward::plan::smooth::Smoothed;
use sunward::plan::{
    plan_route, Blocked, CellFlags, Connectivity, Objective, Planner, Route, RoutePoint, TiltLimits,
};
use sunward::report::atomic::write_atomic;
use sunward::terrain::{roughness, Dem};
use sunward::vehicle::plan_model::RoverStepModel;
use sunward::vehicle::Rover;
use sunward::Error;

use super::{check_output, DemOptions};

/// What the route minimises.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum ObjectiveArg {
    /// Length along the ground.
    Distance,
    /// Driving time.
    Time,
    /// Battery energy: drive plus hotel over the driving time.
    Energy,
}

impl ObjectiveArg {
    fn objective(self) -> Objective {
        match self {
            ObjectiveArg::Distance => Objective::DISTANCE,
            ObjectiveArg::Time => Objective::TIME,
            ObjectiveArg::Energy => Objective::ENERGY,
        }
    }
}

/// A map point "X,Y" in the DEM's CRS units.
fn parse_point(s: &str) -> Result<(f64, f64), String> {
    let (x, y) = s
        .split_once(',')
        .ok_or_else(|| format!("{s:?} is not X,Y (two numbers separated by a comma)"))?;
    let num = |t: &str| {
        t.trim()
            .parse::<f64>()
            .ok()
            .filter(|v| v.is_finite())
            .ok_or_else(|| format!("{t:?} in {s:?} is not a number"))
    };
    Ok((num(x)?, num(y)?))
}

#[derive(Debug, Args)]
pub struct RouteArgs {
    /// Elevation raster (GeoTIFF, PNG heightmap with --cell-m, or ESRI ASCII grid).
    #[arg(long, value_name = "DEM")]
    terrain: PathBuf,
    #[command(flatten)]
    dem: DemOptions,
    /// Start, in the DEM's CRS units.
    #[arg(long, value_name = "X,Y", value_parser = parse_point, allow_hyphen_values = true,
          required_unless_present = "from_lonlat", conflicts_with = "from_lonlat")]
    from: Option<(f64, f64)>,
    /// Start as WGS 84 longitude,latitude in degrees (geographic or UTM DEMs).
    #[arg(long, value_name = "LON,LAT", value_parser = parse_point, allow_hyphen_values = true)]
    from_lonlat: Option<(f64, f64)>,
    /// Goal, in the DEM's CRS units (not with --site: a site tour returns to the start).
    #[arg(long, value_name = "X,Y", value_parser = parse_point, allow_hyphen_values = true,
          conflicts_with = "to_lonlat")]
    to: Option<(f64, f64)>,
    /// Goal as WGS 84 longitude,latitude in degrees (geographic or UTM DEMs).
    #[arg(long, value_name = "LON,LAT", value_parser = parse_point, allow_hyphen_values = true)]
    to_lonlat: Option<(f64, f64)>,
    /// Unordered sites to visit, returning to the start (repeat the flag): the order is
    /// exact (Held-Karp) for up to 10 sites and a local-search heuristic beyond.
    #[arg(long, value_name = "X,Y", value_parser = parse_point, allow_hyphen_values = true,
          conflicts_with_all = ["to", "to_lonlat", "via"])]
    site: Vec<(f64, f64)>,
    /// Keep-out areas: GeoJSON Polygon/MultiPolygon features, coordinates in the DEM's CRS
    /// (or WGS 84 longitude/latitude with --keep-out-lonlat).
    #[arg(long, value_name = "FILE.geojson")]
    keep_out: Option<PathBuf>,
    /// The keep-out file's coordinates are RFC 7946 WGS 84 longitude/latitude.
    #[arg(long, requires = "keep_out")]
    keep_out_lonlat: bool,
    /// Waypoints to pass in order (repeat the flag).
    #[arg(long, value_name = "X,Y", value_parser = parse_point, allow_hyphen_values = true)]
    via: Vec<(f64, f64)>,
    /// Rover description (TOML); without it the documented default rover is used.
    #[arg(long, value_name = "ROVER.toml")]
    rover: Option<PathBuf>,
    /// What the route minimises.
    #[arg(long, value_enum, default_value_t = ObjectiveArg::Energy)]
    objective: ObjectiveArg,
    /// Steepest pitch allowed uphill and downhill, degrees (default: the rover's limits).
    #[arg(long, value_name = "DEG")]
    max_pitch_deg: Option<f64>,
    /// Largest roll allowed, degrees (default: the rover's roll limit; always capped at
    /// the rover's roll_stability_fraction of its sideways tip-over angle).
    #[arg(long, value_name = "DEG")]
    max_roll_deg: Option<f64>,
    /// Block cells whose 3 x 3 elevation range exceeds this, metres.
    #[arg(long, value_name = "M")]
    max_roughness_m: Option<f64>,
    /// Neighbours per cell: 8, or 16 (adds knight moves for smoother headings).
    #[arg(long, value_name = "N", default_value_t = 8)]
    connectivity: u8,
    /// Any-angle smoothing: straight shortcuts that keep every limit and never cost more
    /// (the GeoJSON then holds the smoothed line; the profile stays on grid cells).
    #[arg(long)]
    smooth: bool,
    /// Write the route as a GeoJSON LineString (coordinates in the DEM's CRS).
    #[arg(long, value_name = "route.geojson")]
    out: Option<PathBuf>,
    /// Write the per-step profile as CSV.
    #[arg(long, value_name = "profile.csv")]
    profile: Option<PathBuf>,
    /// Print the summary as JSON (stable keys, see README).
    #[arg(long)]
    json: bool,
}

/// Reads a rover file, or the default rover.
pub fn load_rover(path: Option<&Path>) -> Result<Rover, Error> {
    let Some(path) = path else {
        return Ok(Rover::default());
    };
    let text = std::fs::read_to_string(path).map_err(|source| Error::Input {
        path: path.to_path_buf(),
        source,
    })?;
    Rover::from_toml_str(&text).map_err(|source| Error::Rover {
        path: path.to_path_buf(),
        source,
    })
}

/// A limit in degrees to 1e-9°, so that a limit given as 15° (and taken through
/// radians and the rover's stability rule) reads 15, not 14.999999999999998.
fn limit_deg(rad: f64) -> f64 {
    (rad.to_degrees() * 1e9).round() / 1e9
}

/// The rover's keys as JSON (what `--json` prints under `rover`).
pub fn rover_json(r: &Rover) -> Value {
    json!({
        "mass_kg": r.mass_kg,
        "payload_kg": r.payload_kg,
        "rolling_resistance": r.rolling_resistance,
        "soil": r.soil.map(|s| s.name),
        "drive_efficiency": r.drive_efficiency,
        "regen_fraction": r.regen_fraction,
        "hotel_power_w": r.hotel_power_w,
        "max_speed_m_s": r.max_speed_m_s,
        "wheel_count": r.wheel_count,
        "wheel_radius_m": r.wheel_radius_m,
        "wheel_width_m": r.wheel_width_m,
        "wheelbase_m": r.wheelbase_m,
        "track_m": r.track_m,
        "cg_height_m": r.cg_height_m,
        "max_climb_deg": limit_deg(r.max_climb_rad),
        "max_descent_deg": limit_deg(r.max_descent_rad),
        "max_roll_deg": limit_deg(r.roll_limit_rad()),
    })
}

fn check_deg(name: &str, v: f64) -> Result<f64, Error> {
    if v.is_finite() && v > 0.0 && v < 90.0 {
        Ok(v.to_radians())
    } else {
        Err(Error::Usage(format!(
            "{name} = {v} is out of range: expected more than 0 and less than 90 degrees"
        )))
    }
}

/// Applies the tilt flags to the rover (they override its file's limits; the roll limit
/// stays capped by the rover's stability fraction of its tip-over angle) and returns the
/// planner's limits, which are the rover's.
fn apply_limits(a: &RouteArgs, rover: &mut Rover) -> Result<TiltLimits, Error> {
    if let Some(p) = a.max_pitch_deg {
        rover.max_climb_rad = check_deg("--max-pitch-deg", p)?;
        rover.max_descent_rad = rover.max_climb_rad;
    }
    if let Some(r) = a.max_roll_deg {
        rover.max_roll_rad = check_deg("--max-roll-deg", r)?;
    }
    Ok(TiltLimits {
        max_pitch_up_rad: rover.max_climb_rad,
        max_pitch_down_rad: rover.max_descent_rad,
        max_roll_rad: rover.roll_limit_rad(),
    })
}

/// A WGS 84 longitude/latitude as map coordinates of the DEM: as they are on a
/// geographic grid, projected on a UTM grid (EPSG 326zz / 327zz), refused otherwise.
pub fn lonlat_to_map(dem: &Dem, flag: &str, (lon, lat): (f64, f64)) -> Result<(f64, f64), Error> {
    use sunward::terrain::utm::{forward, UtmZone};
    let crs = &dem.georef.crs;
    if crs.kind == sunward::terrain::CrsKind::Geographic {
        return Ok((lon, lat));
    }
    let zone = crs.epsg.and_then(UtmZone::from_epsg).ok_or_else(|| {
        Error::Usage(format!(
            "{flag}: the DEM's CRS ({}) is neither geographic nor UTM, so longitude/latitude \
             cannot be placed on it. Fix: give the point in the DEM's own units",
            crs.label()
        ))
    })?;
    let p = forward(zone, lat.to_radians(), lon.to_radians())
        .map_err(|e| Error::Usage(format!("{flag} {lon},{lat}: {e}")))?;
    Ok((p.easting_m, p.northing_m))
}

fn cell_flags(dem: &Dem, max_roughness_m: Option<f64>) -> Result<CellFlags, Error> {
    let mut flags = CellFlags::from_dem(dem);
    if let Some(max) = max_roughness_m {
        if !(max.is_finite() && max > 0.0) {
            return Err(Error::Usage(format!(
                "--max-roughness-m = {max} is out of range: expected a positive number of metres"
            )));
        }
        for (i, r) in roughness::roughness_map(dem).data().iter().enumerate() {
            if *r as f64 > max {
                flags.block(i, Blocked::Roughness);
            }
        }
    }
    Ok(flags)
}

/// The `--json` document: the stable keys first, then context.
pub fn summary_json(route: &Route, objective: Objective, rover: &Rover, l: &TiltLimits) -> Value {
    let s = &route.summary;
    json!({
        "length_m": s.length_m,
        "energy_wh": sunward::units::j_to_wh(s.energy_j),
        "duration_s": s.duration_s,
        "max_pitch_deg": s.max_pitch_rad.to_degrees(),
        "max_roll_deg": s.max_roll_rad.to_degrees(),
        "expanded_nodes": s.expanded_nodes,
        "objective": objective.name(),
        "cells": route.cells(),
        "cost": s.cost,
        "limits": {
            "max_pitch_up_deg": limit_deg(l.max_pitch_up_rad),
            "max_pitch_down_deg": limit_deg(l.max_pitch_down_rad),
            "max_roll_deg": limit_deg(l.max_roll_rad),
        },
        "rover": rover_json(rover),
    })
}

/// The route as a GeoJSON Feature (a LineString with x, y, z in the DEM's CRS).
pub fn route_geojson(route: &Route, summary: &Value) -> Value {
    let coords: Vec<[f64; 3]> = route.profile.iter().map(|p| [p.x, p.y, p.z_m]).collect();
    let mut props = summary.clone();
    if let Some(m) = props.as_object_mut() {
        m.remove("cells");
    }
    json!({
        "type": "FeatureCollection",
        "features": [{
            "type": "Feature",
            "geometry": {"type": "LineString", "coordinates": coords},
            "properties": props,
        }],
    })
}

/// The profile as CSV text, units in the headers.
pub fn profile_csv(route: &Route) -> String {
    let mut out = String::from(
        "distance_m,x,y,z_m,pitch_deg,roll_deg,heading_deg,step_energy_wh,step_time_s,col,row\n",
    );
    for p in &route.profile {
        out.push_str(&format!(
            "{:.3},{:.3},{:.3},{:.3},{:.3},{:.3},{:.2},{:.6},{:.3},{},{}\n",
            p.distance_m,
            p.x,
            p.y,
            p.z_m,
            p.pitch_rad.to_degrees(),
            p.roll_rad.to_degrees(),
            p.heading_rad.to_degrees(),
            sunward::units::j_to_wh(p.step_energy_j),
            p.step_time_s,
            p.col,
            p.row
        ));
    }
    out
}

/// Blocks the cells inside the keep-out polygons of a GeoJSON file.
fn block_keep_out(
    dem: &Dem,
    flags: &mut CellFlags,
    path: &Path,
    lonlat: bool,
) -> Result<(), Error> {
    use sunward::terrain::mask::{parse_keep_out, rasterise, KeepOutCoords};
    let text = std::fs::read_to_string(path).map_err(|source| Error::Input {
        path: path.to_path_buf(),
        source,
    })?;
    let coords = if lonlat {
        KeepOutCoords::Wgs84LonLat
    } else {
        KeepOutCoords::GridCrs
    };
    let shapes =
        parse_keep_out(&text, coords, &dem.georef.crs).map_err(|source| Error::KeepOut {
            path: path.to_path_buf(),
            source,
        })?;
    let mask = rasterise(dem, &shapes);
    for (i, inside) in mask.data().iter().enumerate() {
        if *inside {
            flags.block(i, Blocked::KeepOut);
        }
    }
    Ok(())
}

/// Orders unordered sites into a tour from the start and back: pairwise route costs by
/// the planner, then `plan::sites`. Returns the route points in visiting order.
fn order_tour<M: sunward::plan::StepModel + ?Sized>(
    planner: &Planner<'_, M>,
    base: &RoutePoint,
    sites: &[RoutePoint],
) -> Result<(Vec<RoutePoint>, Tour), Error> {
    use sunward::plan::route::locate;
    use sunward::plan::sites::{graph_from_matrix, order_sites, OrderOptions};
    let nodes: Vec<RoutePoint> = std::iter::once(base.clone())
        .chain(sites.iter().cloned())
        .collect();
    let cells: Vec<usize> = nodes
        .iter()
        .map(|p| locate(planner, p))
        .collect::<Result<_, _>>()?;
    let costs = sunward::plan::route::leg_costs(planner, &cells, &cells);
    let names: Vec<String> = nodes.iter().map(|p| p.label.clone()).collect();
    let graph = graph_from_matrix(&costs, Some(&names))?;
    let tour = order_sites(&graph, &OrderOptions::default())?;
    let mut ordered: Vec<RoutePoint> = tour.order.iter().map(|&i| nodes[i].clone()).collect();
    if let Some(last) = ordered.last_mut() {
        last.label = "start (return)".into();
    }
    Ok((ordered, tour))
}

/// What smoothing changed, for the JSON summary.
fn smoothing_json(sm: &Smoothed) -> Value {
    json!({
        "points": sm.points.len(),
        "length_m": sm.length_m,
        "energy_wh": sunward::units::j_to_wh(sm.energy_j),
        "duration_s": sm.time_s,
        "cost": sm.smoothed_cost,
        "grid_cost_same_evaluation": sm.grid_cost,
        "cost_change_percent": 100.0 * (sm.smoothed_cost - sm.grid_cost) / sm.grid_cost.abs().max(1e-12),
    })
}

pub fn run(a: RouteArgs) -> Result<(), Error> {
    let connectivity = match a.connectivity {
        8 => Connectivity::Eight,
        16 => Connectivity::Sixteen,
        n => {
            return Err(Error::Usage(format!(
                "--connectivity {n}: expected 8 or 16"
            )))
        }
    };
    for out in a.out.iter().chain(a.profile.iter()) {
        check_output(out, &[&a.terrain])?;
    }
    let mut rover = load_rover(a.rover.as_deref())?;
    let limits = apply_limits(&a, &mut rover)?;
    let dem = a.dem.load(&a.terrain)?;
    let need = sunward::limits::planner_bytes(dem.len() as u64);
    super::check_memory(
        &a.dem.read_options(),
        &a.terrain,
        &dem,
        "the route planner's arrays",
        need,
    )?;
    let mut flags = cell_flags(&dem, a.max_roughness_m)?;
    if let Some(path) = &a.keep_out {
        block_keep_out(&dem, &mut flags, path, a.keep_out_lonlat)?;
    }
    let objective = a.objective.objective();
    let planner = Planner {
        dem: &dem,
        flags: &flags,
        model: &RoverStepModel::new(&rover),
        limits,
        connectivity,
        objective,
    };
    let from = match (a.from, a.from_lonlat) {
        (Some(p), _) => p,
        (None, Some(ll)) => lonlat_to_map(&dem, "--from-lonlat", ll)?,
        (None, None) => unreachable!("clap requires --from or --from-lonlat"),
    };
    let point = |label: String, (x, y): (f64, f64)| RoutePoint { label, x, y };
    let mut points = vec![point("start".into(), from)];
    let mut tour = None;
    if a.site.is_empty() {
        for (i, v) in a.via.iter().enumerate() {
            points.push(point(format!("waypoint {}", i + 1), *v));
        }
        let to = match (a.to, a.to_lonlat) {
            (Some(p), _) => p,
            (None, Some(ll)) => lonlat_to_map(&dem, "--to-lonlat", ll)?,
            (None, None) => {
                return Err(Error::Usage(
                    "give the goal with --to (or --to-lonlat), or sites to visit with --site"
                        .into(),
                ))
            }
        };
        points.push(point("goal".into(), to));
    } else {
        let sites: Vec<RoutePoint> = a
            .site
            .iter()
            .enumerate()
            .map(|(i, s)| point(format!("site {}", i + 1), *s))
            .collect();
        let (ordered, t) = order_tour(&planner, &points[0], &sites)?;
        points = ordered;
        tour = Some(t);
    }
    let route = plan_route(&planner, &points)?;
    let mut summary = summary_json(&route, objective, &rover, &limits);
    if let Some(t) = &tour {
        summary["site_order"] = json!({
            "visits": points.iter().map(|p| p.label.clone()).collect::<Vec<_>>(),
            "method": t.method,
            "cost": t.cost,
        });
    }
    let smoothed = a.smooth.then(|| {
        let w = dem.width();
        let cells: Vec<usize> = route.profile.iter().map(|p| p.row * w + p.col).collect();
        planner.smooth(&cells)
    });
    if let Some(sm) = &smoothed {
        summary["smoothed"] = smoothing_json(sm);
    }
    if let Some(out) = &a.out {
        let mut gj = route_geojson(&route, &summary);
        if let Some(sm) = &smoothed {
            let coords: Vec<[f64; 2]> = sm.points.iter().map(|p| [p.x, p.y]).collect();
            gj["features"][0]["geometry"]["coordinates"] = json!(coords);
        }
        let text = serde_json::to_string(&gj).expect("JSON values serialise");
        write_atomic(out, |w| w.write_all(text.as_bytes()))?;
    }
    if let Some(out) = &a.profile {
        let text = profile_csv(&route);
        write_atomic(out, |w| w.write_all(text.as_bytes()))?;
    }
    if a.json {
        crate::say!(
            "{}",
            serde_json::to_string(&summary).expect("JSON values serialise")
        );
    } else {
        let s = &route.summary;
        crate::say!(
            "route: {:.1} m along the ground, {:.1} Wh, {:.0} s driving, max pitch {:.1} deg, max roll {:.1} deg ({} objective, {} cells expanded)",
            s.length_m,
            sunward::units::j_to_wh(s.energy_j),
            s.duration_s,
            s.max_pitch_rad.to_degrees(),
            s.max_roll_rad.to_degrees(),
            objective.name(),
            s.expanded_nodes
        );
    }
    Ok(())
}
