//! A planned route: legs through ordered waypoints, then the per-step profile and the
//! summary (length along the ground, energy, time, largest pitch and roll).
//!
//! Route points are map coordinates in the DEM's CRS; each falls in the cell that
//! contains it. Legs are planned one after another with the same planner and joined at
//! the waypoints. The profile re-evaluates every step with the vehicle model, so its
//! energy and time are what the rover would spend whatever the objective was.
//!
//! # Units
//! Metres, joules, seconds, radians.

use crate::plan::astar::{Planner, Workspace, DIRECTIONS};
use crate::plan::cost::StepModel;
use crate::plan::error::PlanError;

/// A named point in map coordinates.
#[derive(Debug, Clone, PartialEq)]
pub struct RoutePoint {
    /// "start", "goal", "waypoint 1", …
    pub label: String,
    /// Map x (easting or longitude).
    pub x: f64,
    /// Map y (northing or latitude).
    pub y: f64,
}

/// One row of the profile: the rover arriving at a cell.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct ProfileRow {
    /// Grid column.
    pub col: usize,
    /// Grid row.
    pub row: usize,
    /// Map x of the cell centre.
    pub x: f64,
    /// Map y of the cell centre.
    pub y: f64,
    /// Elevation, metres.
    pub z_m: f64,
    /// Distance along the ground from the start, metres.
    pub distance_m: f64,
    /// Pitch of the step that arrived here, radians (0 at the start).
    pub pitch_rad: f64,
    /// Roll of that step, radians (+ left side up).
    pub roll_rad: f64,
    /// Heading of that step, radians clockwise from north.
    pub heading_rad: f64,
    /// Battery energy of that step (drive + hotel), joules; negative = regenerated.
    pub step_energy_j: f64,
    /// Driving time of that step, seconds.
    pub step_time_s: f64,
}

/// Totals of a route.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct RouteSummary {
    /// Length along the ground, metres.
    pub length_m: f64,
    /// Battery energy, joules.
    pub energy_j: f64,
    /// Driving time, seconds.
    pub duration_s: f64,
    /// Largest |pitch|, radians.
    pub max_pitch_rad: f64,
    /// Largest |roll|, radians.
    pub max_roll_rad: f64,
    /// Cells taken from the queue over all legs.
    pub expanded_nodes: u64,
    /// Total cost in the objective's units.
    pub cost: f64,
}

/// A planned route.
#[derive(Debug, Clone, PartialEq)]
pub struct Route {
    /// The profile, one row per cell from start to goal.
    pub profile: Vec<ProfileRow>,
    /// Totals.
    pub summary: RouteSummary,
}

impl Route {
    /// (col, row) of every cell, start to goal.
    pub fn cells(&self) -> Vec<[usize; 2]> {
        self.profile.iter().map(|p| [p.col, p.row]).collect()
    }
}

/// The cell holding a map point, checked against the grid and the blocks.
pub fn locate<M: StepModel + ?Sized>(
    planner: &Planner<'_, M>,
    p: &RoutePoint,
) -> Result<usize, PlanError> {
    let grid = planner.dem;
    let g = &grid.georef;
    let (w, h) = (grid.width(), grid.height());
    let Some((col, row)) = g.cell_at(p.x, p.y, w, h) else {
        return Err(PlanError::Outside {
            what: p.label.clone(),
            x: p.x,
            y: p.y,
            x0: g.origin_x,
            x1: g.origin_x + w as f64 * g.pixel_width,
            y0: g.origin_y - h as f64 * g.pixel_height,
            y1: g.origin_y,
        });
    };
    let cell = row * w + col;
    if let Some(why) = planner.flags.blocked(cell) {
        return Err(PlanError::OnBlockedCell {
            what: p.label.clone(),
            x: p.x,
            y: p.y,
            why,
        });
    }
    Ok(cell)
}

/// Route costs between cells, one search each: `costs[i][j]` is the optimal cost (in the
/// objective's units) from `from[i]` to `to[j]`, +∞ where no drivable route exists and on
/// the diagonal i == j (the leg matrices of `plan::sites`).
pub fn leg_costs<M: StepModel + ?Sized>(
    planner: &Planner<'_, M>,
    from: &[usize],
    to: &[usize],
) -> Vec<Vec<f64>> {
    let mut ws = Workspace::default();
    from.iter()
        .enumerate()
        .map(|(i, &a)| {
            to.iter()
                .enumerate()
                .map(|(j, &b)| {
                    if i == j {
                        return f64::INFINITY;
                    }
                    planner
                        .search(a, b, &mut ws)
                        .map_or(f64::INFINITY, |p| p.cost)
                })
                .collect()
        })
        .collect()
}

/// Plans through `points` in order (at least two: start and goal).
pub fn plan_route<M: StepModel + ?Sized>(
    planner: &Planner<'_, M>,
    points: &[RoutePoint],
) -> Result<Route, PlanError> {
    assert!(points.len() >= 2, "a route needs a start and a goal");
    let cells: Vec<usize> = points
        .iter()
        .map(|p| locate(planner, p))
        .collect::<Result<_, _>>()?;
    let mut ws = Workspace::default();
    let mut path = vec![cells[0]];
    let (mut expanded, mut cost) = (0, 0.0);
    for (i, pair) in cells.windows(2).enumerate() {
        let leg = planner
            .search(pair[0], pair[1], &mut ws)
            .map_err(|detail| {
                let w = planner.dem.width();
                let n = detail.nearest.0;
                PlanError::Unreachable {
                    from: points[i].label.clone(),
                    to: points[i + 1].label.clone(),
                    nearest_xy: planner.dem.georef.cell_centre(n % w, n / w),
                    detail,
                    names: crate::plan::error::LimitNames::default(),
                }
            })?;
        expanded += leg.expanded;
        cost += leg.cost;
        path.extend_from_slice(&leg.cells[1..]);
    }
    Ok(profile(planner, &path, expanded, cost))
}

/// The route along `cells`, consecutive 8-neighbours from start to goal, with its
/// profile and summary evaluated as [`plan_route`] evaluates its own (the objective's
/// cost summed over the steps; `expanded` is the caller's search count). Every step must
/// be drivable: the caller has checked each with [`Planner::geometry`] and the model.
pub fn route_along<M: StepModel + ?Sized>(
    planner: &Planner<'_, M>,
    cells: &[usize],
    expanded: u64,
) -> Route {
    let mut r = profile(planner, cells, expanded, 0.0);
    let o = planner.objective;
    r.summary.cost = r
        .profile
        .windows(2)
        .map(|p| {
            let length = p[1].distance_m - p[0].distance_m;
            let e = crate::plan::cost::StepEnergy {
                energy_j: p[1].step_energy_j,
                time_s: p[1].step_time_s,
            };
            o.cost(length, &e)
        })
        .sum();
    r
}

fn profile<M: StepModel + ?Sized>(
    p: &Planner<'_, M>,
    cells: &[usize],
    expanded: u64,
    cost: f64,
) -> Route {
    let w = p.dem.width();
    let row_of = |cell: usize, step: Option<(f64, f64, f64, f64, f64, f64)>, dist: f64| {
        let (x, y) = p.dem.georef.cell_centre(cell % w, cell / w);
        let (pitch, roll, heading, e, t, _) = step.unwrap_or_default();
        ProfileRow {
            col: cell % w,
            row: cell / w,
            x,
            y,
            z_m: p.dem.data()[cell] as f64,
            distance_m: dist,
            pitch_rad: pitch,
            roll_rad: roll,
            heading_rad: heading,
            step_energy_j: e,
            step_time_s: t,
        }
    };
    let mut rows = vec![row_of(cells[0], None, 0.0)];
    let mut s = RouteSummary {
        length_m: 0.0,
        energy_j: 0.0,
        duration_s: 0.0,
        max_pitch_rad: 0.0,
        max_roll_rad: 0.0,
        expanded_nodes: expanded,
        cost,
    };
    let table = p.step_table();
    for pair in cells.windows(2) {
        let (dc, dr) = (
            (pair[1] % w) as i32 - (pair[0] % w) as i32,
            (pair[1] / w) as i32 - (pair[0] / w) as i32,
        );
        let dir = DIRECTIONS
            .iter()
            .position(|&o| o == (dc, dr))
            .expect("consecutive route cells are neighbours");
        let step = p
            .geometry_in(&table, pair[0], dir)
            .expect("a planned step is drivable");
        let e = p.model.step(&step).expect("a planned step is drivable");
        s.length_m += step.length_m();
        s.energy_j += e.energy_j;
        s.duration_s += e.time_s;
        s.max_pitch_rad = s.max_pitch_rad.max(step.pitch_rad().abs());
        s.max_roll_rad = s.max_roll_rad.max(step.roll_rad().abs());
        let info = (
            step.pitch_rad(),
            step.roll_rad(),
            step.heading_rad,
            e.energy_j,
            e.time_s,
            0.0,
        );
        rows.push(row_of(pair[1], Some(info), s.length_m));
    }
    Route {
        profile: rows,
        summary: s,
    }
}
