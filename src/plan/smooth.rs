//! Optional any-angle smoothing of a grid route: line-of-sight shortcuts that never
//! break a constraint and never raise the route's cost.
//!
//! # Method
//! Greedy string pulling over the grid path (the idea of post-smoothing in Botea,
//! Müller and Schaeffer, "Near optimal hierarchical path-finding", J. Game Development
//! 1(1), 2004, and of Theta*'s line-of-sight test, Nash et al., AAAI 2007): from an anchor
//! cell, the straight segment to a later cell of the path replaces the cells between them
//! when the segment is drivable and costs no more than the grid path it replaces.
//!
//! A segment is evaluated by sub-steps of at most a quarter cell: elevations by bilinear
//! interpolation, pitch from each sub-step's rise, cross slope from the elevations half a
//! cell either side of its midpoint, the same tilt limits as the search, no sub-step
//! point in a blocked cell, and the vehicle model for energy and time. The grid path is
//! evaluated by the same rule (straight sub-steps between its cell centres), so the cost
//! change reported compares like with like.
//!
//! Smoothing is a heuristic improvement on an optimal grid path: the result is never
//! worse than the grid path under this evaluation, but it is not an optimal any-angle
//! path. It is off by default.
//!
//! # Units
//! Metres, joules, seconds; costs in the objective's units.

use crate::plan::astar::{Planner, TiltLimits};
use crate::plan::cost::{Step, StepModel};

/// Sub-steps per cell along a segment.
const SAMPLES_PER_CELL: f64 = 4.0;
/// How many cells ahead a shortcut may reach from its anchor.
const LOOKAHEAD_CELLS: usize = 48;

/// A point of a smoothed route, in map coordinates.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PathPoint {
    /// Map x.
    pub x: f64,
    /// Map y.
    pub y: f64,
}

/// The outcome of smoothing.
#[derive(Debug, Clone, PartialEq)]
pub struct Smoothed {
    /// Corner points of the smoothed route, start to goal.
    pub points: Vec<PathPoint>,
    /// Cost of the grid path under the segment evaluation.
    pub grid_cost: f64,
    /// Cost of the smoothed route under the same evaluation (≤ `grid_cost`).
    pub smoothed_cost: f64,
    /// Energy of the smoothed route, joules.
    pub energy_j: f64,
    /// Driving time of the smoothed route, seconds.
    pub time_s: f64,
    /// Length along the ground of the smoothed route, metres.
    pub length_m: f64,
}

/// Totals of a segment.
#[derive(Debug, Clone, Copy, Default)]
struct SegmentCost {
    cost: f64,
    energy_j: f64,
    time_s: f64,
    length_m: f64,
}

impl std::ops::AddAssign for SegmentCost {
    fn add_assign(&mut self, o: SegmentCost) {
        self.cost += o.cost;
        self.energy_j += o.energy_j;
        self.time_s += o.time_s;
        self.length_m += o.length_m;
    }
}

impl<M: StepModel + ?Sized> Planner<'_, M> {
    fn centre(&self, cell: usize) -> PathPoint {
        let w = self.dem.width();
        let (x, y) = self.dem.georef.cell_centre(cell % w, cell / w);
        PathPoint { x, y }
    }

    /// Elevation and cell at a map point, or None outside, on no-data or in a block.
    fn probe(&self, p: PathPoint) -> Option<(f64, usize)> {
        let (w, h) = (self.dem.width(), self.dem.height());
        let (col, row) = self.dem.georef.cell_at(p.x, p.y, w, h)?;
        let (px, py) = self.dem.georef.to_pixel(p.x, p.y);
        let cell = row * w + col;
        if self.flags.blocked(cell).is_some() {
            return None;
        }
        let z = self.dem.bilinear(px, py);
        let z = if z.is_nan() {
            self.dem.data()[cell] as f64
        } else {
            z
        };
        (!z.is_nan()).then_some((z, cell))
    }

    /// Cost of driving straight from `a` to `b`, or None when any sub-step breaks a
    /// constraint or the vehicle cannot drive it.
    fn segment(&self, a: PathPoint, b: PathPoint, tan: &(f64, f64, f64)) -> Option<SegmentCost> {
        let cs = self.dem.cell_size();
        let (ex, ny) = (b.x - a.x, b.y - a.y);
        let (ux, uy) = (
            ex / self.dem.georef.pixel_width * cs.dx_m,
            ny / self.dem.georef.pixel_height * cs.dy_m,
        );
        let d_total = (ux * ux + uy * uy).sqrt();
        if d_total == 0.0 {
            return Some(SegmentCost::default());
        }
        let n = ((d_total / cs.dx_m.min(cs.dy_m)) * SAMPLES_PER_CELL)
            .ceil()
            .max(1.0) as usize;
        let (hx, hy) = (ux / d_total, uy / d_total);
        let heading = crate::units::wrap_azimuth_rad(hx.atan2(hy));
        let half = 0.5 * cs.dx_m.min(cs.dy_m);
        // Right-hand normal in map units (east, north), half a cell long.
        let right = PathPoint {
            x: hy * half / cs.dx_m * self.dem.georef.pixel_width,
            y: -hx * half / cs.dy_m * self.dem.georef.pixel_height,
        };
        let at = |f: f64| PathPoint {
            x: a.x + ex * f,
            y: a.y + ny * f,
        };
        let mut total = SegmentCost::default();
        let (mut z0, mut c0) = self.probe(a)?;
        let d = d_total / n as f64;
        for i in 1..=n {
            let (z1, c1) = self.probe(at(i as f64 / n as f64))?;
            let mid = at((i as f64 - 0.5) / n as f64);
            let (zr, _) = self.probe(PathPoint {
                x: mid.x + right.x,
                y: mid.y + right.y,
            })?;
            let (zl, _) = self.probe(PathPoint {
                x: mid.x - right.x,
                y: mid.y - right.y,
            })?;
            let dz = z1 - z0;
            let s = dz / d;
            let t = (zr - zl) / (2.0 * half);
            if s > tan.0 || -s > tan.1 || t * t > tan.2 * (1.0 + s * s) {
                return None;
            }
            let step = Step {
                d_m: d,
                dz_m: dz,
                heading_rad: heading,
                slope: s,
                cross_slope: t,
                from: c0,
                to: c1,
            };
            let e = self.model.step(&step).ok()?;
            let len = step.length_m();
            total += SegmentCost {
                cost: self.objective.cost(len, &e),
                energy_j: e.energy_j,
                time_s: e.time_s,
                length_m: len,
            };
            (z0, c0) = (z1, c1);
        }
        Some(total)
    }

    /// The search's own cost of one grid step of a planned path.
    fn grid_step_cost(&self, from: usize, to: usize) -> SegmentCost {
        let w = self.dem.width() as i64;
        let (dc, dr) = (
            (to as i64 % w - from as i64 % w) as i32,
            (to as i64 / w - from as i64 / w) as i32,
        );
        let dir = crate::plan::astar::DIRECTIONS
            .iter()
            .position(|&o| o == (dc, dr));
        let step = dir.and_then(|d| self.geometry(from, d).ok());
        match step.and_then(|s| self.model.step(&s).ok().map(|e| (s, e))) {
            Some((s, e)) => SegmentCost {
                cost: self.objective.cost(s.length_m(), &e),
                energy_j: e.energy_j,
                time_s: e.time_s,
                length_m: s.length_m(),
            },
            None => SegmentCost::default(),
        }
    }

    /// Smooths a grid path (cells start to goal, as from [`Planner::search`]).
    pub fn smooth(&self, cells: &[usize]) -> Smoothed {
        let l: &TiltLimits = &self.limits;
        let tan = (
            l.max_pitch_up_rad.tan(),
            l.max_pitch_down_rad.tan(),
            l.max_roll_rad.tan().powi(2),
        );
        // Cost of the grid path between consecutive cells under the segment evaluation.
        // A grid step that evaluation rejects (its bilinear sub-steps can differ from the
        // search's cell-to-cell view) keeps the search's own cost and stays fixed: no
        // shortcut spans it.
        let legs: Vec<(SegmentCost, bool)> = cells
            .windows(2)
            .map(
                |p| match self.segment(self.centre(p[0]), self.centre(p[1]), &tan) {
                    Some(c) => (c, true),
                    None => (self.grid_step_cost(p[0], p[1]), false),
                },
            )
            .collect();
        let grid_cost: f64 = legs.iter().map(|(c, _)| c.cost).sum();
        let mut points = vec![self.centre(cells[0])];
        let mut total = SegmentCost::default();
        let mut i = 0;
        while i + 1 < cells.len() {
            let (mut best_j, mut best) = (i + 1, legs[i].0);
            let mut along = SegmentCost::default();
            for j in i + 1..cells.len().min(i + 1 + LOOKAHEAD_CELLS) {
                let (leg, sampled) = legs[j - 1];
                if !sampled {
                    break;
                }
                along += leg;
                if j > i + 1 {
                    if let Some(seg) =
                        self.segment(self.centre(cells[i]), self.centre(cells[j]), &tan)
                    {
                        if seg.cost <= along.cost {
                            (best_j, best) = (j, seg);
                        }
                    }
                }
            }
            total += best;
            points.push(self.centre(cells[best_j]));
            i = best_j;
        }
        Smoothed {
            points,
            grid_cost,
            smoothed_cost: total.cost,
            energy_j: total.energy_j,
            time_s: total.time_s,
            length_m: total.length_m,
        }
    }
}
