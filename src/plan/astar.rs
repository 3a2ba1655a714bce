//! Exact A* over the implicit terrain grid, with Johnson's potential for negative steps.
//!
//! # Graph
//! Nodes are cells; a step goes to one of 8 neighbours (or 16 with the knight moves
//! (±1, ±2), (±2, ±1), for smoother headings). A diagonal or knight step needs the cells
//! it brushes past (its flanking cells) free of no-data, keep-out and roughness blocks, so
//! a route never cuts the corner of a forbidden area. Per-cell state is flat arrays: the
//! best cost so far (f64) and one byte holding the parent direction. The cost word also
//! carries the rest of the state, so the hot loop reads one array besides the elevations:
//! reduced costs are never negative, so a set sign bit marks a closed cell (its cost is
//! stored negated, −0 for a zero cost), and a cell blocked beforehand ([`CellFlags`]) is
//! stored as −∞ (closed before the search starts, and recognisable as a flank).
//! Nothing is hashed and nothing is allocated per cell.
//!
//! # Exactness
//! With regenerative braking a step's cost can be negative. Following Johnson (D. B.
//! Johnson, "Efficient algorithms for shortest paths in sparse networks", JACM 24(1),
//! 1977), every step cost c is replaced by the reduced cost c' = c − K·dz with the
//! potential φ(v) = K·z(v): c' ≥ 0 by the model contract (see [`super::cost`]), and a
//! path's reduced cost differs from its true cost by K·(z_goal − z_start), the same for
//! every path, so the optimal path is unchanged. The search runs on c'.
//!
//! The heuristic is h'(v) = max(0, B(D(v, goal), Δz) − K·(z_goal − z_v)), where B is the
//! objective's lower bound of the cost of a displacement with horizontal length D and rise
//! Δz, and D is a distance no walk on the grid beats: with 8 neighbours the octile distance
//! (a·diag + (b − a)·side for a ≤ b cells of offset, the length of the shortest
//! 8-connected walk, equal to the step length for every single step), with 16 the
//! straight-line distance. Admissible: any path from v to the goal has horizontal length
//! at least D and costs at least B of it (contract 1 summed over its steps with contract
//! 2, B non-decreasing in length), and its reduced cost is its cost minus K·Δz. (For
//! models with wheel-work bounds B is evaluated with the horizontal length in place of
//! the slope length, [`ReducedBound::of_flat`]: lower again, of the same form, and without
//! a square root; on the 4096 × 4096 bench it expanded 76 cells fewer of 8.2 million.)
//! Consistent: for a step u → v, D is a metric with D(u, v) the step's length, so
//! B(D(u, goal)) ≤ B(D(u, v) + D(v, goal)) ≤ B(u → v) + B(v → goal) ≤ c(u, v) +
//! B(v → goal) (monotone, contract 2, contract 1); subtracting the potentials gives
//! h'(u) ≤ c'(u, v) + h'(v); the max with 0 keeps consistency because 0 is consistent
//! with non-negative c'. (The octile distance is not a lower bound for knight moves: a
//! (2, 1) step is √5 long, its octile distance 1 + √2; hence the 16-neighbour rule.) So the first time a
//! cell is taken from the queue its cost is final, keys never decrease, and a monotone
//! bucket queue ([`super::queue`]) is enough.
//!
//! # Constraints
//! Pitch is the step's own rise over its length; roll comes from the elevations of the
//! cells beside the step (right minus left over their separation), through
//! [`super::tilt`]. Uphill pitch, downhill pitch and roll have separate limits. Cells can
//! be blocked beforehand (no-data, keep-out, roughness): see [`CellFlags`].
//!
//! # Units
//! Costs in the objective's units; lengths in metres; angles in radians.

use crate::plan::cost::{Blocked, Objective, ReducedBound, Step, StepModel};
use crate::plan::queue::BucketQueue;
use crate::terrain::Dem;

/// How many neighbours a cell has.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Connectivity {
    /// The 8 neighbours (default).
    #[default]
    Eight,
    /// 8 neighbours plus the 8 knight moves.
    Sixteen,
}

/// Step offsets (dc, dr); the index is the parent code stored per cell.
pub const DIRECTIONS: [(i32, i32); 16] = [
    (1, 0),
    (1, 1),
    (0, 1),
    (-1, 1),
    (-1, 0),
    (-1, -1),
    (0, -1),
    (1, -1),
    (2, 1),
    (1, 2),
    (-1, 2),
    (-2, 1),
    (-2, -1),
    (-1, -2),
    (1, -2),
    (2, -1),
];

impl Connectivity {
    /// Number of directions used.
    pub fn count(self) -> usize {
        match self {
            Connectivity::Eight => 8,
            Connectivity::Sixteen => 16,
        }
    }
}

/// Tilt limits of the vehicle, radians (each in (0, π/2)).
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct TiltLimits {
    /// Steepest climb.
    pub max_pitch_up_rad: f64,
    /// Steepest descent.
    pub max_pitch_down_rad: f64,
    /// Largest roll either way.
    pub max_roll_rad: f64,
}

impl Default for TiltLimits {
    /// 20° each way: a common rating for small wheeled field robots (common practice;
    /// the vehicle's own rating governs).
    fn default() -> Self {
        let a = 20f64.to_radians();
        TiltLimits {
            max_pitch_up_rad: a,
            max_pitch_down_rad: a,
            max_roll_rad: a,
        }
    }
}

/// Static per-cell blocks, prepared once and shared by every search on a grid.
#[derive(Debug, Clone, PartialEq)]
pub struct CellFlags {
    pub(super) flags: Vec<u8>,
}

pub(super) const FREE: u8 = 0;

impl CellFlags {
    /// Marks no-data cells of the DEM.
    pub fn from_dem(dem: &Dem) -> CellFlags {
        CellFlags {
            flags: dem
                .data()
                .iter()
                .map(|z| {
                    if z.is_nan() {
                        Blocked::NoData as u8 + 1
                    } else {
                        FREE
                    }
                })
                .collect(),
        }
    }

    /// Blocks a cell for a reason (the first reason set wins).
    pub fn block(&mut self, cell: usize, why: Blocked) {
        if self.flags[cell] == FREE {
            self.flags[cell] = why as u8 + 1;
        }
    }

    /// Why a cell is blocked, if it is.
    #[inline]
    pub fn blocked(&self, cell: usize) -> Option<Blocked> {
        match self.flags[cell] {
            FREE => None,
            v => Some(Blocked::ALL[(v - 1) as usize]),
        }
    }
}

/// Everything a search needs besides start and goal.
pub struct Planner<'a, M: StepModel + ?Sized> {
    /// Elevations (NaN = no-data).
    pub dem: &'a Dem,
    /// Static blocks.
    pub flags: &'a CellFlags,
    /// The vehicle.
    pub model: &'a M,
    /// Tilt limits.
    pub limits: TiltLimits,
    /// Neighbourhood.
    pub connectivity: Connectivity,
    /// What to minimise.
    pub objective: Objective,
}

/// Reusable search arrays (allocate once per grid, reuse for every leg).
#[derive(Debug, Default)]
pub struct Workspace {
    g: Vec<f64>,
    state: Vec<u8>,
    heap: BucketQueue,
    pub(super) bi: super::bidir::BiArrays,
}

const NO_PARENT: u8 = 0x1f;

/// Closed, or blocked beforehand (see the module doc).
#[inline]
pub(super) fn is_closed(g: f64) -> bool {
    g.is_sign_negative()
}

/// Blocked beforehand (see the module doc).
#[inline]
pub(super) fn is_static_block(g: f64) -> bool {
    g == f64::NEG_INFINITY
}

/// A found path.
#[derive(Debug, Clone, PartialEq)]
pub struct GridPath {
    /// Cells from start to goal (row-major indices).
    pub cells: Vec<usize>,
    /// Total cost in the objective's units (true cost, not reduced).
    pub cost: f64,
    /// Cells taken from the queue.
    pub expanded: u64,
}

/// Why no path exists.
#[derive(Debug, Clone, PartialEq)]
pub struct Unreachable {
    /// Edges out of the reachable region rejected for each reason (most first; the grid
    /// edge only when it is the sole reason).
    pub closed_by: Vec<(Blocked, u64)>,
    /// The reachable cell nearest the goal, and its horizontal distance to it, metres.
    pub nearest: (usize, f64),
    /// Cells the search reached.
    pub reached: u64,
}

/// Per-direction constants of a grid, computed once per search.
#[derive(Debug, Clone, Copy)]
pub(super) struct DirInfo {
    pub(super) dc: i64,
    pub(super) dr: i64,
    /// Row-major index offset of the target cell.
    pub(super) delta: isize,
    /// Horizontal length, metres.
    pub(super) d_m: f64,
    /// 1 / `d_m` (the slope is a product in the hot loop).
    pub(super) inv_d_m: f64,
    pub(super) heading_rad: f64,
    /// Flank pairs (left, right) as index offsets, with their separation across the
    /// heading (metres, right minus left), and the (dc, dr) offsets for edge checks.
    pub(super) flanks: [[(i32, i32); 2]; 2],
    pub(super) flank_delta: [[isize; 2]; 2],
    /// 1 / separation (0 where the pair has no width across the heading).
    pub(super) flank_inv_sep: [f64; 2],
    /// Diagonal and knight steps need their flanking cells free.
    pub(super) needs_free_flanks: bool,
    /// Both flank pairs are the same cells (diagonal and knight steps).
    pub(super) one_pair: bool,
}

pub(super) fn dir_table(dem: &Dem) -> [DirInfo; 16] {
    let cs = dem.cell_size();
    let w = dem.width() as isize;
    std::array::from_fn(|dir| {
        let (dc, dr) = DIRECTIONS[dir];
        let (ex, ny) = (dc as f64 * cs.dx_m, -(dr as f64) * cs.dy_m);
        let d = ex.hypot(ny);
        let (hx, hy) = (ex / d, ny / d);
        let flanks = flank_cells(dc, dr);
        let flank_delta = flanks.map(|pair| pair.map(|(c, r)| r as isize * w + c as isize));
        let flank_inv_sep = flanks.map(|pair| {
            let sx = (pair[1].0 - pair[0].0) as f64 * cs.dx_m;
            let sy = -((pair[1].1 - pair[0].1) as f64) * cs.dy_m;
            let sep = sx * hy - sy * hx;
            if sep.abs() > 1e-9 {
                1.0 / sep
            } else {
                0.0
            }
        });
        DirInfo {
            dc: dc as i64,
            dr: dr as i64,
            delta: dr as isize * w + dc as isize,
            d_m: d,
            inv_d_m: 1.0 / d,
            heading_rad: crate::units::wrap_azimuth_rad(ex.atan2(ny)),
            flanks,
            flank_delta,
            flank_inv_sep,
            needs_free_flanks: dc.abs() + dr.abs() > 1,
            one_pair: flanks[0] == flanks[1],
        }
    })
}

/// A planner's direction table and tilt limits as tangents, for
/// [`Planner::geometry_in`].
#[derive(Debug, Clone, Copy)]
pub struct StepTable {
    dirs: [DirInfo; 16],
    tan: TanLimits,
}

/// Tilt limits as tangents, for comparisons without trigonometry in the hot loop.
#[derive(Debug, Clone, Copy)]
pub(super) struct TanLimits {
    up: f64,
    down: f64,
    roll_sq: f64,
}

impl TanLimits {
    pub(super) fn of(l: &TiltLimits) -> TanLimits {
        TanLimits {
            up: l.max_pitch_up_rad.tan(),
            down: l.max_pitch_down_rad.tan(),
            roll_sq: l.max_roll_rad.tan().powi(2),
        }
    }
}

/// The cell a search is expanding: its index, column, row and whether every cell within
/// two steps is inside the grid (then no bounds checks are needed).
#[derive(Debug, Clone, Copy)]
pub(super) struct At {
    pub(super) cell: usize,
    pub(super) col: i64,
    pub(super) row: i64,
    pub(super) interior: bool,
}

impl<M: StepModel + ?Sized> Planner<'_, M> {
    fn cell_xy(&self, cell: usize) -> (f64, f64) {
        let c = self.dem.cell_size();
        let w = self.dem.width();
        ((cell % w) as f64 * c.dx_m, -((cell / w) as f64) * c.dy_m)
    }

    /// Horizontal distance between two cells, metres.
    pub fn distance_m(&self, a: usize, b: usize) -> f64 {
        let (xa, ya) = self.cell_xy(a);
        let (xb, yb) = self.cell_xy(b);
        (xa - xb).hypot(ya - yb)
    }

    #[inline]
    pub(super) fn z(&self, cell: usize) -> f64 {
        self.dem.data()[cell] as f64
    }

    pub(super) fn at(&self, cell: usize) -> At {
        let w = self.dem.width();
        // A 32-bit division where the numbers allow (several times faster than a 64-bit
        // one on common x86-64 cores; once per expanded cell).
        let (col, row) = match (u32::try_from(cell), u32::try_from(w)) {
            (Ok(c), Ok(w)) => ((c % w) as i64, (c / w) as i64),
            _ => ((cell % w) as i64, (cell / w) as i64),
        };
        At {
            cell,
            col,
            row,
            interior: self.interior(col, row),
        }
    }

    /// Whether every cell within two steps of (`col`, `row`) is inside the grid.
    #[inline]
    pub(super) fn interior(&self, col: i64, row: i64) -> bool {
        let (w, h) = (self.dem.width() as i64, self.dem.height() as i64);
        col >= 2 && row >= 2 && col + 2 < w && row + 2 < h
    }

    /// The step from `from` in direction `dir`, checked against the grid, the cell
    /// blocks and the tilt limits (not yet against the vehicle).
    ///
    /// Builds the grid's direction table on each call; code that asks for many steps
    /// builds a [`StepTable`] once and calls [`Self::geometry_in`].
    pub fn geometry(&self, from: usize, dir: usize) -> Result<Step, Blocked> {
        self.geometry_in(&self.step_table(), from, dir)
    }

    /// The constants [`Self::geometry_in`] needs, computed once.
    pub fn step_table(&self) -> StepTable {
        StepTable {
            dirs: dir_table(self.dem),
            tan: TanLimits::of(&self.limits),
        }
    }

    /// [`Self::geometry`] with the table given (`table` from [`Self::step_table`] of
    /// this planner).
    pub fn geometry_in(&self, table: &StepTable, from: usize, dir: usize) -> Result<Step, Blocked> {
        self.step_geometry(self.at(from), &table.dirs[dir], &table.tan)
    }

    /// Row-major index of (col + dc, row + dr), or None outside the grid.
    #[inline]
    fn offset(&self, at: At, dc: i64, dr: i64, delta: isize) -> Option<usize> {
        self.offset_in::<false>(at, dc, dr, delta)
    }

    /// [`Self::offset`]; `INTERIOR` promises `at.interior` (no bounds checks compiled in).
    #[inline]
    pub(super) fn offset_in<const INTERIOR: bool>(
        &self,
        at: At,
        dc: i64,
        dr: i64,
        delta: isize,
    ) -> Option<usize> {
        if INTERIOR || at.interior {
            return Some((at.cell as isize + delta) as usize);
        }
        self.inside(at.col + dc, at.row + dr)
            .then(|| (at.cell as isize + delta) as usize)
    }

    /// Whether (`col`, `row`) is a cell of the grid.
    #[inline]
    pub(super) fn inside(&self, col: i64, row: i64) -> bool {
        let (w, h) = (self.dem.width() as i64, self.dem.height() as i64);
        col >= 0 && row >= 0 && col < w && row < h
    }

    #[inline]
    fn step_geometry(&self, at: At, di: &DirInfo, tan: &TanLimits) -> Result<Step, Blocked> {
        let to = self
            .offset(at, di.dc, di.dr, di.delta)
            .ok_or(Blocked::GridEdge)?;
        self.step_to(at, di, to, tan)
    }

    /// [`Self::step_geometry`] with the target cell already known to be in the grid.
    #[inline]
    fn step_to(&self, at: At, di: &DirInfo, to: usize, tan: &TanLimits) -> Result<Step, Blocked> {
        if let Some(b) = self.flags.blocked(to) {
            return Err(b);
        }
        self.step_past::<false>(at, di, to, tan, |c| self.flags.blocked(c))
    }

    /// [`Self::step_to`] once the target is known to be free, with the flank blocks
    /// looked up by `blocked`.
    #[inline]
    pub(super) fn step_past<const INTERIOR: bool>(
        &self,
        at: At,
        di: &DirInfo,
        to: usize,
        tan: &TanLimits,
        blocked: impl Fn(usize) -> Option<Blocked>,
    ) -> Result<Step, Blocked> {
        let dz = self.z(to) - self.z(at.cell);
        self.step_past_dz::<INTERIOR>(at, di, to, dz, tan, blocked)
    }

    /// [`Self::step_past`] with the rise `dz` = z(to) − z(at) given.
    #[inline]
    pub(super) fn step_past_dz<const INTERIOR: bool>(
        &self,
        at: At,
        di: &DirInfo,
        to: usize,
        dz: f64,
        tan: &TanLimits,
        blocked: impl Fn(usize) -> Option<Blocked>,
    ) -> Result<Step, Blocked> {
        let mut flank = [[None; 2]; 2];
        let pairs = if di.one_pair { 1 } else { 2 };
        let pairs_in = flank.iter_mut().zip(&di.flanks).zip(&di.flank_delta);
        for ((out, pair), deltas) in pairs_in.take(pairs) {
            for ((o, &(fc, fr)), &d) in out.iter_mut().zip(pair).zip(deltas) {
                *o = self.offset_in::<INTERIOR>(at, fc as i64, fr as i64, d);
            }
        }
        if di.needs_free_flanks {
            for f in flank[0].iter().flatten() {
                if let Some(b) = blocked(*f) {
                    return Err(b);
                }
            }
        }
        let s = dz * di.inv_d_m;
        // Limits compared as tangents: atan is monotone, so s > tan(limit) ⇔ pitch > limit,
        // and |roll| > limit ⇔ t² > tan²(limit)·(1 + s²) (plan::tilt).
        if s > tan.up {
            return Err(Blocked::PitchUp);
        }
        if -s > tan.down {
            return Err(Blocked::PitchDown);
        }
        let t = self.cross_slope(&flank, &di.flank_inv_sep);
        if t * t > tan.roll_sq * (1.0 + s * s) {
            return Err(Blocked::Roll);
        }
        Ok(Step {
            d_m: di.d_m,
            dz_m: dz,
            heading_rad: di.heading_rad,
            slope: s,
            cross_slope: t,
            from: at.cell,
            to,
        })
    }

    /// Cross slope t = (z_right − z_left) / separation across the heading, averaged over
    /// the flank pairs with data (0 when none has data). A step whose two pairs are the
    /// same cells (`flank[1]` left empty) averages one pair: the same value exactly.
    #[inline]
    fn cross_slope(&self, flank: &[[Option<usize>; 2]; 2], inv_sep: &[f64; 2]) -> f64 {
        let (mut sum, mut n) = (0.0, 0);
        for (pair, &inv) in flank.iter().zip(inv_sep) {
            let (Some(l), Some(r)) = (pair[0], pair[1]) else {
                continue;
            };
            let (zl, zr) = (self.z(l), self.z(r));
            if zl.is_nan() || zr.is_nan() || inv == 0.0 {
                continue;
            }
            sum += (zr - zl) * inv;
            n += 1;
        }
        // n ≤ 2: halving is exact, so this is sum / n bit for bit.
        match n {
            0 => 0.0,
            1 => sum,
            _ => sum * 0.5,
        }
    }

    /// The reduced cost c' = max(0, c − K·dz) of the step from `at` in direction `di` to
    /// `to` (a free cell, `dz` = z(to) − z(at)), or None when the step is blocked; flank blocks are looked up by
    /// `blocked`. The one place both searches price a step, so a cost recomputed for a
    /// trace is the same number to the bit.
    #[inline]
    #[allow(clippy::too_many_arguments)]
    pub(super) fn reduced<const INTERIOR: bool>(
        &self,
        at: At,
        di: &DirInfo,
        to: usize,
        dz: f64,
        tan: &TanLimits,
        k: f64,
        blocked: impl Fn(usize) -> Option<Blocked>,
    ) -> Option<f64> {
        let step = self
            .step_past_dz::<INTERIOR>(at, di, to, dz, tan, blocked)
            .ok()?;
        let e = self.model.step(&step).ok()?;
        let len = if self.objective.per_m != 0.0 {
            step.length_m()
        } else {
            0.0
        };
        Some((self.objective.cost(len, &e) - k * step.dz_m).max(0.0))
    }

    /// True when the step in direction `di` with rise `dz`, from a label `g_from`, cannot
    /// beat the label `g_to`, so it need not be priced: a step costs at least the
    /// heuristic's bound of its displacement (contract 1 of [`super::cost`];
    /// [`ReducedBound::of_flat`], without a square root), here taken
    /// a hair low (by 1e-12 relative) against rounding, so skipping it changes nothing.
    /// Only for models with wheel-work bounds, through their [`ReducedBound`] (otherwise
    /// the bound costs about as much as the step).
    #[inline(always)]
    pub(super) fn cannot_improve(
        &self,
        wheel: Option<&ReducedBound>,
        di: &DirInfo,
        dz: f64,
        g_from: f64,
        g_to: f64,
    ) -> bool {
        let Some(rb) = wheel else {
            return false;
        };
        if !g_to.is_finite() {
            return false;
        }
        let lb = rb.of_flat(di.d_m, dz);
        g_from + lb * (1.0 - 1e-12) >= g_to
    }

    /// Exact route from `start` to `goal`: the two-thread
    /// [`Planner::search_bidirectional`] on grids of at least [`super::bidir::MIN_CELLS`]
    /// cells, the one-way [`Planner::search_one_way`] below. `ws` is reused across calls.
    pub fn search(
        &self,
        start: usize,
        goal: usize,
        ws: &mut Workspace,
    ) -> Result<GridPath, Unreachable> {
        if self.dem.len() >= super::bidir::MIN_CELLS {
            self.search_bidirectional(start, goal, ws)
        } else {
            self.search_one_way(start, goal, ws)
        }
    }

    /// The bucket width of the searches' queues ([`super::queue::BucketQueue`]): 1/128
    /// of a flat step's cost, so that the window of buckets spans 128 flat steps, far
    /// more than the keys queued at once spread (on the 4096 × 4096 bench less than 8:
    /// nothing reached the overflow list). Chosen by wall time on that bench
    /// (benches/results/2026-12-03-route-search.txt): against 1/2048, about 15 % less
    /// in the median of alternating runs, as fewer buckets take the pushes of a round and
    /// their ends stay in cache; a window of 4 flat steps sent entries to the overflow
    /// list and took 6 times as long.
    pub(super) fn queue_width(&self) -> f64 {
        let cs = self.dem.cell_size();
        let flat = self
            .objective
            .lower_bound(self.model, cs.dx_m.min(cs.dy_m), 0.0);
        flat / 128.0
    }

    /// Reduced-cost A* from `start` to `goal` on one thread. `ws` is reused across calls.
    pub fn search_one_way(
        &self,
        start: usize,
        goal: usize,
        ws: &mut Workspace,
    ) -> Result<GridPath, Unreachable> {
        let n = self.dem.len();
        ws.g.clear();
        ws.g.extend(self.flags.flags.iter().map(|&f| {
            if f == FREE {
                f64::INFINITY
            } else {
                f64::NEG_INFINITY
            }
        }));
        ws.state.clear();
        ws.state.resize(n, NO_PARENT);
        ws.heap.reset(self.queue_width());
        let table = dir_table(self.dem);
        let table = &table[..self.connectivity.count()];
        let tan = TanLimits::of(&self.limits);
        let k = self.objective.potential_per_m(self.model);
        let w = self.dem.width();
        let toward = Toward::new(self, goal, false);
        let heuristic = |v: usize, col: i64, row: i64| toward.bound(self, v, col, row);
        ws.g[start] = 0.0;
        ws.heap.push(
            heuristic(start, (start % w) as i64, (start / w) as i64),
            start as u32,
        );
        let mut expanded = 0u64;
        while let Some((_, u32v)) = ws.heap.pop() {
            let u = u32v as usize;
            let gu = ws.g[u];
            if is_closed(gu) {
                continue;
            }
            ws.g[u] = -gu;
            expanded += 1;
            if u == goal {
                return Ok(self.trace(ws, start, goal, k, expanded));
            }
            let at = self.at(u);
            let z_u = self.z(u);
            // The loop twice over: with and without bounds checks.
            macro_rules! relax {
                ($interior:literal) => {
                    for (dir, di) in table.iter().enumerate() {
                        let Some(v) = self.offset_in::<$interior>(at, di.dc, di.dr, di.delta)
                        else {
                            continue;
                        };
                        let g_v = ws.g[v];
                        if is_closed(g_v) {
                            continue;
                        }
                        let dz = self.z(v) - z_u;
                        if self.cannot_improve(toward.wheel.as_ref(), di, dz, gu, g_v) {
                            continue;
                        }
                        let g = &ws.g;
                        let flank_block =
                            |c: usize| is_static_block(g[c]).then_some(Blocked::NoData);
                        let Some(reduced) =
                            self.reduced::<$interior>(at, di, v, dz, &tan, k, flank_block)
                        else {
                            continue;
                        };
                        let gv = gu + reduced;
                        if gv < ws.g[v] {
                            ws.g[v] = gv;
                            ws.state[v] = dir as u8;
                            ws.heap
                                .push(gv + heuristic(v, at.col + di.dc, at.row + di.dr), v as u32);
                        }
                    }
                };
            }
            if at.interior {
                relax!(true);
            } else {
                relax!(false);
            }
        }
        Err(self.explain(ws, goal))
    }

    fn trace(&self, ws: &Workspace, start: usize, goal: usize, k: f64, expanded: u64) -> GridPath {
        let w = self.dem.width() as i64;
        let mut cells = vec![goal];
        let mut v = goal;
        while v != start {
            let (dc, dr) = DIRECTIONS[(ws.state[v] & 0x1f) as usize];
            v = (v as i64 - dr as i64 * w - dc as i64) as usize;
            cells.push(v);
        }
        cells.reverse();
        GridPath {
            cells,
            cost: ws.g[goal].abs() + k * (self.z(goal) - self.z(start)),
            expanded,
        }
    }

    /// Tallies why the edges leaving the reached region are closed, and finds the reached
    /// cell nearest the goal.
    fn explain(&self, ws: &Workspace, goal: usize) -> Unreachable {
        let mut counts = [0u64; Blocked::ALL.len()];
        let mut nearest = (usize::MAX, f64::INFINITY);
        let mut reached = 0;
        let table = dir_table(self.dem);
        let tan = TanLimits::of(&self.limits);
        for u in (0..self.dem.len()).filter(|&u| is_closed(ws.g[u]) && !is_static_block(ws.g[u])) {
            reached += 1;
            let d = self.distance_m(u, goal);
            if d < nearest.1 {
                nearest = (u, d);
            }
            let at = self.at(u);
            for di in &table[..self.connectivity.count()] {
                let why = match self.step_geometry(at, di, &tan) {
                    Err(b) => b,
                    Ok(step) if !is_closed(ws.g[step.to]) => match self.model.step(&step) {
                        Err(b) => b,
                        Ok(_) => continue,
                    },
                    Ok(_) => continue,
                };
                counts[why as usize] += 1;
            }
        }
        let mut closed_by: Vec<(Blocked, u64)> = Blocked::ALL
            .iter()
            .map(|&b| (b, counts[b as usize]))
            .filter(|(_, c)| *c > 0)
            .collect();
        // The grid edge bounds every region; name it only when nothing else closes the way.
        if closed_by.iter().any(|(b, _)| *b != Blocked::GridEdge) {
            closed_by.retain(|(b, _)| *b != Blocked::GridEdge);
        }
        closed_by.sort_by_key(|e| std::cmp::Reverse(e.1));
        Unreachable {
            closed_by,
            nearest,
            reached,
        }
    }
}

/// The heuristic's lower bound of the reduced cost between a cell and a fixed end cell
/// (module doc): toward the goal for the forward search, from the start for the backward
/// search of [`super::bidir`] (the same bound with the rise taken the other way).
#[derive(Debug, Clone, Copy)]
pub(super) struct Toward {
    col: f64,
    row: f64,
    z: f64,
    /// The end is the start (rise measured from it) rather than the goal.
    from_end: bool,
    octile: bool,
    dx: f64,
    dy: f64,
    diag: f64,
    k: f64,
    /// The folded bound, for models with wheel-work bounds.
    pub(super) wheel: Option<ReducedBound>,
}

impl Toward {
    pub(super) fn new<M: StepModel + ?Sized>(
        p: &Planner<'_, M>,
        end: usize,
        from_end: bool,
    ) -> Self {
        let cs = p.dem.cell_size();
        let w = p.dem.width();
        Toward {
            col: (end % w) as f64,
            row: (end / w) as f64,
            z: p.z(end),
            from_end,
            octile: p.connectivity == Connectivity::Eight,
            dx: cs.dx_m,
            dy: cs.dy_m,
            diag: cs.dx_m.hypot(cs.dy_m),
            k: p.objective.potential_per_m(p.model),
            wheel: p.model.wheel_bounds().map(|wb| {
                ReducedBound::new(&p.objective, &wb, p.objective.potential_per_m(p.model))
            }),
        }
    }

    /// The bound for cell `v` at (`col`, `row`).
    #[inline(always)]
    pub(super) fn bound<M: StepModel + ?Sized>(
        &self,
        p: &Planner<'_, M>,
        v: usize,
        col: i64,
        row: i64,
    ) -> f64 {
        self.bound_at(p, p.z(v), col as f64, row as f64)
    }

    /// [`Self::bound`] for a cell at (`col`, `row`) with elevation `z_v` given.
    #[inline(always)]
    pub(super) fn bound_at<M: StepModel + ?Sized>(
        &self,
        p: &Planner<'_, M>,
        z_v: f64,
        col: f64,
        row: f64,
    ) -> f64 {
        let (a, b) = ((col - self.col).abs(), (row - self.row).abs());
        // The shortest 8-connected walk (module doc); any walk for 16 neighbours.
        let d = if self.octile {
            if a >= b {
                b * self.diag + (a - b) * self.dx
            } else {
                a * self.diag + (b - a) * self.dy
            }
        } else {
            (a * self.dx).hypot(b * self.dy)
        };
        let dz = if self.from_end {
            z_v - self.z
        } else {
            self.z - z_v
        };
        let b = match &self.wheel {
            Some(rb) => rb.of_flat(d, dz),
            None => p.objective.lower_bound(p.model, d, dz) - self.k * dz,
        };
        b.max(0.0)
    }
}

/// The pairs of cells beside a step (left, right of the heading), relative to its start.
/// Orthogonal steps use the pair at each end; diagonal steps the two corner cells;
/// knight steps the two cells they pass between.
fn flank_cells(dc: i32, dr: i32) -> [[(i32, i32); 2]; 2] {
    // Right of heading (dc, dr) in (col, row) space, rows growing south: rotate by +90°
    // on the map, which is (−dr, dc) in (col, row).
    let right = |c: i32, r: i32| (-r.signum(), c.signum());
    // > 0 when p lies to the right of the heading (rows grow south).
    let cross = |p: (i32, i32)| dc * p.1 - dr * p.0;
    match (dc.abs(), dr.abs()) {
        (1, 0) | (0, 1) => {
            let (rc, rr) = right(dc, dr);
            [
                [(-rc, -rr), (rc, rr)],
                [(dc - rc, dr - rr), (dc + rc, dr + rr)],
            ]
        }
        (1, 1) => {
            // The corner cells (dc, 0) and (0, dr).
            let (a, b) = ((dc, 0), (0, dr));
            let (l, r) = if cross(a) > 0 { (b, a) } else { (a, b) };
            [[l, r], [l, r]]
        }
        _ => {
            // Knight move: it passes between the two cells beside its midpoint.
            let (a, b) = if dc.abs() == 2 {
                ((dc / 2, 0), (dc / 2, dr))
            } else {
                ((0, dr / 2), (dc, dr / 2))
            };
            let (l, r) = if cross(a) > 0 { (b, a) } else { (a, b) };
            [[l, r], [l, r]]
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn flanks_lie_left_and_right_of_the_heading() {
        // Heading east (1, 0): right is south (row + 1).
        let f = flank_cells(1, 0);
        assert_eq!(f[0], [(0, -1), (0, 1)]);
        assert_eq!(f[1], [(1, -1), (1, 1)]);
        // Heading south-east (1, 1): right is (0, 1) (south-west side), left (1, 0).
        assert_eq!(flank_cells(1, 1)[0], [(1, 0), (0, 1)]);
        // Knight (2, 1): passes between (1, 0) on the left and (1, 1) on the right.
        assert_eq!(flank_cells(2, 1)[0], [(1, 0), (1, 1)]);
        // Knight (1, -2): between (0, -1) and (1, -1); heading north-north-east, right = east.
        assert_eq!(flank_cells(1, -2)[0], [(0, -1), (1, -1)]);
    }
}
