//! Bidirectional A* on two threads, for large grids (the same graph, costs and
//! exactness as [`super::astar`]).
//!
//! # Method
//! A forward search from the start and a backward search from the goal (over the
//! reversed steps) run at once, one per thread, each a Dijkstra search on the reduced
//! costs of [`super::astar`] reweighted by the *averaged* potential
//! p(v) = (h_t(v) − h_s(v)) / 2 (forward) and −p(v) (backward), where h_t is the forward
//! search's bound toward the goal and h_s the same bound from the start (the rise taken
//! the other way). Averaged potentials are from Ikeda et al., "A fast algorithm for
//! finding better routes by AI search techniques", Vehicle Navigation and Information
//! Systems Conference 1994, and the stopping rule below from Goldberg and Harrelson,
//! "Computing the shortest path: A* search meets graph theory", SODA 2005 (both from
//! memory).
//!
//! # Exactness
//! h_s is consistent for the backward search by the argument of the [`super::astar`]
//! module doc read backwards: for a step u → v, B(D(s, v), Δz) ≤ B(D(s, u), Δz') +
//! B(u → v) ≤ h_s(u) + c(u, v) before the potentials, because D is a metric and B is
//! monotone and subadditive (contracts 1 and 2 of [`super::cost`]). With h_t consistent
//! forward, c'(u, v) − p(u) + p(v) = ½(c' + h_t(v) − h_t(u)) + ½(c' − h_s(v) + h_s(u))
//! ≥ 0, so both searches see non-negative costs, their keys never decrease, and the
//! bucket queue serves both. Keys: forward g_f(v) + p(v), backward g_b(v) − p(v). With μ
//! the best g_f(v) + g_b(v) over cells labelled by both, the searches stop once the two
//! smallest queued keys sum to at least μ: every cell with forward distance below the
//! forward top key is settled, and likewise backward, so on a path shorter than the two
//! keys' sum there is a step u → w with u settled forward and w settled backward, whose
//! relaxation gave w a forward label; its two labels then sum to that path's length,
//! so μ already is at most it. (Rounding can end the search when the sums differ by a few
//! ulps; the planner's tolerance is 1e-9 relative.)
//!
//! # Lock-step rounds (deterministic)
//! The two threads never read each other's arrays while either writes: they run in
//! rounds. In a round each side does a fixed amount of work in the order of its queue,
//! counted as cells settled plus steps priced (with rounds cut by key thresholds, the
//! two sides' time per round followed their steps priced, correlation 0.89, more than
//! their cells settled, 0.62; the waits that remain, about a tenth of the time on this
//! project's machine, did not shrink with the change and look like the machine's own
//! noise); its state is then a prefix of its Dijkstra order, which is all the stopping
//! rule needs. At a barrier each
//! side checks the cells it labelled in the round against the other side's labels (μ,
//! and the meeting cell, the smallest index among equal sums); at a second barrier both
//! read the same two reports, update μ and decide to stop, identically. A round is
//! 2 × [`ROUND_CELLS`] units, or 2/64 of the grid's cells when that is less (at least
//! 16). Everything each thread does depends only on the data and on these counts, never
//! on timing, so the route found is the same on every
//! run and on one core or two (when several routes tie, it is one of them, not always
//! the one the one-way search picks).
//!
//! # Memory and the route
//! Two cost words per cell (8 bytes each, as in [`super::astar`]: a negative sign marks
//! a settled cell, −∞ a cell blocked beforehand) and no parent arrays: the route is
//! traced from the meeting cell by finding, at each cell, the neighbour whose cost plus
//! the step's reduced cost (recomputed by the same code as in the search) equals
//! the cell's cost to the bit. With the DEM (4 bytes) and the flags (1) that is about 21
//! bytes per cell plus the queues. Should a trace fail (it cannot, short of a cycle of
//! zero-cost steps, which a vehicle with rolling and hotel losses does not have), or no
//! route exist, the one-way search runs instead and gives the route or its explanation.

use std::sync::{Condvar, Mutex, RwLock};

use crate::plan::astar::{
    dir_table, is_closed, is_static_block, At, DirInfo, GridPath, Planner, TanLimits, Toward,
    Unreachable, Workspace, FREE,
};
use crate::plan::cost::{Blocked, StepModel};
use crate::plan::queue::BucketQueue;

/// Cells per side a round settles at most, about (a round is twice as many work units,
/// module doc; about 10 ms of work); 1/64 of the grid when that is less (at least 8).
pub const ROUND_CELLS: u64 = 1 << 15;

/// Grids with at least this many cells are searched both ways at once by
/// [`Planner::search`] (below it, thread start and the second array cost more than they
/// save).
pub const MIN_CELLS: usize = 1 << 20;

/// The arrays of a bidirectional search (kept in a [`Workspace`] for reuse).
#[derive(Debug, Default)]
pub struct BiArrays {
    g: [Vec<u64>; 2],
    heap: [BucketQueue; 2],
}

/// Cost words are stored XOR the bits of +∞, so that zeroed memory (which the allocator
/// hands out as untouched pages) reads as "not labelled" and only blocked cells need
/// writing before a search.
const UNLABELLED: u64 = 0x7ff0_0000_0000_0000;

#[inline]
fn ld(g: &[u64], i: usize) -> f64 {
    f64::from_bits(g[i] ^ UNLABELLED)
}

#[inline]
fn st(g: &mut [u64], i: usize, v: f64) {
    g[i] = v.to_bits() ^ UNLABELLED;
}

/// The two sides' barrier. Unlike std's `Barrier` it can be broken: a side that leaves
/// by a panic breaks it (through [`BreakOnUnwind`]), and the other side's wait then
/// returns false instead of waiting for ever, so the panic reaches the caller.
#[derive(Debug, Default)]
struct Rendezvous {
    /// (sides arrived, generation, broken).
    state: Mutex<(u8, u64, bool)>,
    turn: Condvar,
}

impl Rendezvous {
    /// Waits for the other side: true when both arrived, false when the barrier is broken.
    fn wait(&self) -> bool {
        let mut s = self.state.lock().unwrap_or_else(|e| e.into_inner());
        if s.2 {
            return false;
        }
        let generation = s.1;
        s.0 += 1;
        if s.0 == 2 {
            *s = (0, generation + 1, false);
            self.turn.notify_all();
            return true;
        }
        while s.1 == generation && !s.2 {
            s = self.turn.wait(s).unwrap_or_else(|e| e.into_inner());
        }
        s.1 != generation
    }

    fn break_up(&self) {
        self.state.lock().unwrap_or_else(|e| e.into_inner()).2 = true;
        self.turn.notify_all();
    }
}

/// Breaks a [`Rendezvous`] when dropped while its thread panics.
struct BreakOnUnwind<'a>(&'a Rendezvous);

impl Drop for BreakOnUnwind<'_> {
    fn drop(&mut self) {
        if std::thread::panicking() {
            self.0.break_up();
        }
    }
}

/// (sum, cell) ordered by sum, then by cell.
fn earlier(a: (f64, u32), b: (f64, u32)) -> bool {
    a.0 < b.0 || (a.0 == b.0 && a.1 < b.1)
}

/// One direction's search state.
struct Side<'h> {
    heap: &'h mut BucketQueue,
    /// The first entry after the round's work, held for the next round.
    pending: Option<(f64, u32)>,
    /// Cells labelled this round.
    changed: Vec<u32>,
    expanded: u64,
    /// Work units done: cells settled plus steps priced.
    work: u64,
    exhausted: bool,
}

impl Side<'_> {
    /// The smallest queued key (+∞ when the queue is empty).
    fn top(&self) -> f64 {
        match self.pending {
            Some((k, _)) if !self.exhausted => k,
            _ => f64::INFINITY,
        }
    }
}

/// What a side tells the other at the end of a round.
#[derive(Debug, Clone, Copy)]
struct Report {
    best: (f64, u32),
    top: f64,
}

/// What both threads share: the planner and the constants of the search.
struct Ctx<'p, 'a, M: StepModel + ?Sized> {
    p: &'p Planner<'a, M>,
    table: [DirInfo; 16],
    dirs: usize,
    tan: TanLimits,
    k: f64,
    to_goal: Toward,
    from_start: Toward,
    /// Cells per round aimed at.
    round: u64,
}

impl<M: StepModel + ?Sized> Ctx<'_, '_, M> {
    /// The forward potential p(v) (module doc).
    #[inline]
    fn potential(&self, v: usize, col: i64, row: i64) -> f64 {
        0.5 * (self.to_goal.bound(self.p, v, col, row) - self.from_start.bound(self.p, v, col, row))
    }

    /// Settles queued cells in order until the round's work is done (`REV`: backward),
    /// and holds the next entry.
    fn advance<const REV: bool>(&self, g: &mut [u64], side: &mut Side<'_>) {
        let end = side.work + 2 * self.round;
        loop {
            let Some((key, x)) = side.pending.take().or_else(|| side.heap.pop()) else {
                side.exhausted = true;
                return;
            };
            if side.work >= end {
                side.pending = Some((key, x));
                return;
            }
            let u = x as usize;
            let gu = ld(g, u);
            if is_closed(gu) {
                continue;
            }
            st(g, u, -gu);
            side.expanded += 1;
            side.work += 1;
            let at = self.p.at(u);
            if at.interior {
                self.relax::<REV, true>(g, side, at, gu);
            } else {
                self.relax::<REV, false>(g, side, at, gu);
            }
        }
    }

    /// Relaxes the steps out of (forward) or into (backward) the settled cell `at`.
    /// `INTERIOR` promises `at.interior`: then every cell a step touches is in the grid.
    #[inline]
    fn relax<const REV: bool, const INTERIOR: bool>(
        &self,
        g: &mut [u64],
        side: &mut Side<'_>,
        at: At,
        gu: f64,
    ) {
        let z_at = self.p.z(at.cell);
        for di in &self.table[..self.dirs] {
            let (from, to, col, row) = if REV {
                let (col, row) = (at.col - di.dc, at.row - di.dr);
                if !(INTERIOR || self.p.inside(col, row)) {
                    continue;
                }
                let u = (at.cell as isize - di.delta) as usize;
                let from = At {
                    cell: u,
                    col,
                    row,
                    interior: INTERIOR || self.p.interior(col, row),
                };
                (from, at.cell, col, row)
            } else {
                let Some(v) = self.p.offset_in::<INTERIOR>(at, di.dc, di.dr, di.delta) else {
                    continue;
                };
                (at, v, at.col + di.dc, at.row + di.dr)
            };
            let next = if REV { from.cell } else { to };
            let g_next = ld(g, next);
            if is_closed(g_next) {
                continue;
            }
            // The rise of the step from → to; `at` is one of its ends.
            let dz = if REV {
                z_at - self.p.z(from.cell)
            } else {
                self.p.z(to) - z_at
            };
            if self
                .p
                .cannot_improve(self.to_goal.wheel.as_ref(), di, dz, gu, g_next)
            {
                continue;
            }
            let flank_block = |c: usize| is_static_block(ld(g, c)).then_some(Blocked::NoData);
            let Some(c) =
                self.p
                    .reduced::<INTERIOR>(from, di, to, dz, &self.tan, self.k, flank_block)
            else {
                continue;
            };
            side.work += 1;
            let gn = gu + c;
            if gn < ld(g, next) {
                st(g, next, gn);
                let pot = self.potential(next, col, row);
                side.heap
                    .push(if REV { gn - pot } else { gn + pot }, next as u32);
                side.changed.push(next as u32);
            }
        }
    }

    /// The best (sum, cell) over this round's labelled cells of a side.
    fn check(&self, own: &[u64], other: &[u64], changed: &mut Vec<u32>) -> (f64, u32) {
        let mut best = (f64::INFINITY, u32::MAX);
        for &x in changed.iter() {
            let (a, b) = (ld(own, x as usize), ld(other, x as usize));
            if a.is_finite() && b.is_finite() {
                let s = (a.abs() + b.abs(), x);
                if earlier(s, best) {
                    best = s;
                }
            }
        }
        changed.clear();
        best
    }

    /// One side's rounds until the stopping rule holds; returns μ and its cell. Each
    /// side writes its own cost array only while it advances, and both read both only
    /// while they check, between the barriers (the locks make the phases explicit).
    fn rounds<const REV: bool>(
        &self,
        me: usize,
        g: &[RwLock<Vec<u64>>; 2],
        side: &mut Side<'_>,
        barrier: &Rendezvous,
        reports: &Mutex<[Report; 2]>,
    ) -> (f64, u32) {
        let _leaving = BreakOnUnwind(barrier);
        let mut mu = (f64::INFINITY, u32::MAX);
        // The other side left by a panic: stop; its join passes the panic on.
        let gone = (f64::INFINITY, u32::MAX);
        loop {
            {
                let mut own = g[me].write().unwrap_or_else(|e| e.into_inner());
                self.advance::<REV>(&mut own, side);
            }
            if !barrier.wait() {
                return gone;
            }
            let best = {
                let own = g[me].read().unwrap_or_else(|e| e.into_inner());
                let other = g[1 - me].read().unwrap_or_else(|e| e.into_inner());
                self.check(&own, &other, &mut side.changed)
            };
            let report = Report {
                best,
                top: side.top(),
            };
            reports.lock().unwrap_or_else(|e| e.into_inner())[me] = report;
            if !barrier.wait() {
                return gone;
            }
            let both = *reports.lock().unwrap_or_else(|e| e.into_inner());
            for r in &both {
                if earlier(r.best, mu) {
                    mu = r.best;
                }
            }
            if both[0].top + both[1].top >= mu.0 {
                return mu;
            }
        }
    }

    /// Traces the route from the meeting cell `m` back to the start (forward labels) or
    /// on to the goal (backward labels); None if a cell has no matching neighbour.
    fn trace<const REV: bool>(&self, g: &[u64], m: usize, end: usize) -> Option<Vec<usize>> {
        let flank_block = |c: usize| is_static_block(ld(g, c)).then_some(Blocked::NoData);
        let mut cells = vec![m];
        let mut x = m;
        while x != end {
            if cells.len() > g.len() {
                return None;
            }
            let gx = ld(g, x).abs();
            let at = self.p.at(x);
            let mut next = None;
            for di in &self.table[..self.dirs] {
                let (from, to) = if REV {
                    let Some(y) = self.p.offset_in::<false>(at, di.dc, di.dr, di.delta) else {
                        continue;
                    };
                    (at, y)
                } else {
                    let (col, row) = (at.col - di.dc, at.row - di.dr);
                    if !self.p.inside(col, row) {
                        continue;
                    }
                    let u = (x as isize - di.delta) as usize;
                    (self.p.at(u), x)
                };
                let y = if REV { to } else { from.cell };
                let gy = ld(g, y);
                if !gy.is_finite() {
                    continue;
                }
                let dz = self.p.z(to) - self.p.z(from.cell);
                let Some(c) =
                    self.p
                        .reduced::<false>(from, di, to, dz, &self.tan, self.k, flank_block)
                else {
                    continue;
                };
                if gy.abs() + c == gx {
                    next = Some(y);
                    break;
                }
            }
            x = next?;
            cells.push(x);
        }
        Some(cells)
    }
}

/// A side whose queue holds its start `cell` with `key`.
fn side(heap: &mut BucketQueue, key: f64, cell: usize) -> Side<'_> {
    heap.push(key.max(0.0), cell as u32);
    Side {
        heap,
        pending: None,
        changed: vec![cell as u32],
        expanded: 0,
        exhausted: false,
        work: 0,
    }
}

impl<M: StepModel + ?Sized> Planner<'_, M> {
    /// Exact route from `start` to `goal` by the two-thread bidirectional search (module
    /// doc); the one-way [`Planner::search`] answers instead when there is no route (for
    /// its explanation), when start or goal is blocked, or when they are the same cell.
    pub fn search_bidirectional(
        &self,
        start: usize,
        goal: usize,
        ws: &mut Workspace,
    ) -> Result<GridPath, Unreachable> {
        let free = |c: usize| self.flags.flags[c] == FREE;
        if start == goal || !free(start) || !free(goal) {
            return self.search_one_way(start, goal, ws);
        }
        match self.meet(start, goal, &mut ws.bi) {
            Some(path) => Ok(path),
            None => {
                // Give the memory back before the one-way search takes its own.
                ws.bi = BiArrays::default();
                self.search_one_way(start, goal, ws)
            }
        }
    }

    fn meet(&self, start: usize, goal: usize, bi: &mut BiArrays) -> Option<GridPath> {
        let n = self.dem.len();
        let ctx = Ctx {
            p: self,
            table: dir_table(self.dem),
            dirs: self.connectivity.count(),
            tan: TanLimits::of(&self.limits),
            k: self.objective.potential_per_m(self.model),
            to_goal: Toward::new(self, goal, false),
            from_start: Toward::new(self, start, true),
            round: (n as u64 / 64).clamp(8, ROUND_CELLS),
        };
        // Zeroed (untouched) pages read as unlabelled; only blocked cells are written.
        let init = |g: &mut Vec<u64>| {
            if g.len() == n {
                g.fill(0);
            } else {
                *g = vec![0; n];
                // Touch every page now, in order and on this side's own thread: page
                // faults taken here are cheaper than faults scattered through the search.
                for i in (0..n).step_by(512) {
                    g[i] = 0;
                }
            }
            for (i, f) in self.flags.flags.iter().enumerate() {
                if *f != FREE {
                    st(g, i, f64::NEG_INFINITY);
                }
            }
        };
        let [gf, gb] = &mut bi.g;
        std::thread::scope(|s| {
            s.spawn(|| init(gb));
            init(gf);
        });
        st(&mut bi.g[0], start, 0.0);
        st(&mut bi.g[1], goal, 0.0);
        let g = bi.g.each_mut().map(|v| RwLock::new(std::mem::take(v)));
        let w = self.dem.width();
        let [hf, hb] = &mut bi.heap;
        let width = self.queue_width();
        hf.reset(width);
        hb.reset(width);
        let (sc, sr) = ((start % w) as i64, (start / w) as i64);
        let (gc, gr) = ((goal % w) as i64, (goal / w) as i64);
        let mut fwd = side(hf, ctx.potential(start, sc, sr), start);
        let mut bwd = side(hb, -ctx.potential(goal, gc, gr), goal);
        let barrier = Rendezvous::default();
        let reports = Mutex::new(
            [Report {
                best: (f64::INFINITY, u32::MAX),
                top: 0.0,
            }; 2],
        );
        let mu = std::thread::scope(|s| {
            let back = s.spawn(|| ctx.rounds::<true>(1, &g, &mut bwd, &barrier, &reports));
            let mu = ctx.rounds::<false>(0, &g, &mut fwd, &barrier, &reports);
            if let Err(e) = back.join() {
                std::panic::resume_unwind(e);
            }
            mu
        });
        bi.g = g.map(|l| l.into_inner().unwrap_or_else(|e| e.into_inner()));
        if !mu.0.is_finite() {
            return None;
        }
        let m = mu.1 as usize;
        let mut cells = ctx.trace::<false>(&bi.g[0], m, start)?;
        cells.reverse();
        let on = ctx.trace::<true>(&bi.g[1], m, goal)?;
        cells.extend_from_slice(&on[1..]);
        Some(GridPath {
            cells,
            cost: mu.0 + ctx.k * (self.z(goal) - self.z(start)),
            expanded: fwd.expanded + bwd.expanded,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Both sides pass the barrier round after round; a side that panics breaks it, and
    /// the other side's next wait returns false instead of hanging.
    #[test]
    fn a_panicking_side_breaks_the_rendezvous() {
        let r = Rendezvous::default();
        std::thread::scope(|s| {
            let other = s.spawn(|| (0..100).all(|_| r.wait()));
            assert!((0..100).all(|_| r.wait()));
            assert!(other.join().unwrap());
        });
        let r = Rendezvous::default();
        let left = std::thread::scope(|s| {
            let side = s.spawn(|| {
                let _leaving = BreakOnUnwind(&r);
                assert!(r.wait());
                panic!("a side fails");
            });
            let first = r.wait();
            let second = r.wait();
            (first, second, side.join().is_err())
        });
        assert_eq!(left, (true, false, true));
    }
}
