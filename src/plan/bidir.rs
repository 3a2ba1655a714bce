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
//! the best g_f(v) + g_b(v) found so far (next section), the searches stop once the two
//! smallest queued keys sum to at least μ: every cell with forward distance below the
//! forward top key is settled, and likewise backward, so on a path shorter than the two
//! keys' sum there is a step u → w with u settled forward and w settled backward, whose
//! relaxations gave w a forward label and u a backward one, each summing with the cell's
//! own label to at most that path's length, so μ already is at most it. (Rounding can end the search when the sums differ by a few
//! ulps; the planner's tolerance is 1e-9 relative.)
//!
//! # Meeting
//! μ is kept over the cells *settled* by one side and labelled by the other: enough for
//! the argument above, because of the step u → w there, whichever end was settled
//! later (or both in the same round) is checked after the other end's relaxation gave
//! it a label on the path (the other side's label of u is at most c(u, w) + g_b(w), and
//! likewise for w), so μ is at most the path's length once both ends are checked.
//!
//! # Lock-step rounds (deterministic)
//! Each thread reads and writes only its own cost array; they run in rounds, with one
//! barrier per round. In round r each side first checks the cells the other side settled
//! in round r − 1 (sent with their labels) against its own labels, then does a fixed
//! amount of work in the order of its queue, counted as cells settled plus steps priced
//! (with rounds cut by key thresholds, the two sides' time per round followed their
//! steps priced, correlation 0.89, more than their cells settled, 0.62), and posts its
//! settled cells, its best sum and its smallest queued key. After the barrier both read
//! the same posts: the best sums of round r cover every pair of cells settled up to
//! round r − 1 (by the argument of the previous section), so the stopping rule is
//! applied to them with the smallest keys posted at the end of round r − 1, and both
//! decide identically (the searches run one round past the point the rule first holds;
//! a round is small). Posts are kept per round parity, so a side posting round r + 1
//! never overwrites a post of round r the other has yet to read. The meeting cell is
//! the smallest index among equal sums. A round is 2 × [`ROUND_CELLS`] units, or 2/64
//! of the grid's cells when that is less (at least 16). Everything each thread does
//! depends only on the data and on these counts, never on timing, so the route found is
//! the same on every run and on one core or two (when several routes tie, it is one of
//! them, not always the one the one-way search picks).
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

use std::sync::{Condvar, Mutex};

use crate::plan::astar::{
    dir_table, is_closed, is_static_block, At, DirInfo, GridPath, Planner, TanLimits, Toward,
    Unreachable, Workspace, FREE,
};
use crate::plan::cost::{Blocked, StepModel};
use crate::plan::queue::BucketQueue;

/// Cells per side a round settles at most, about (a round is twice as many work units,
/// module doc; about 2-3 ms of work); 1/64 of the grid when that is less (at least 8).
/// Smaller rounds let the sides wait less for each other at the barrier (the slower
/// side of a round sets its pace) and run less past the stopping point; larger ones pay
/// fewer barriers: on the 4096 × 4096 bench 2^13 took about 4 % less wall time than
/// 2^15 and 2^12 (benches/results/2026-12-03-route-search.txt).
pub const ROUND_CELLS: u64 = 1 << 13;

/// Grids with at least this many cells are searched both ways at once by
/// [`Planner::search`] (below it, thread start and the second array cost more than they
/// save).
pub const MIN_CELLS: usize = 1 << 20;

/// The arrays of a bidirectional search (kept in a [`Workspace`] for reuse).
#[derive(Debug, Default)]
pub struct BiArrays {
    g: [Vec<u64>; 2],
    /// One queue per side, each written by its own thread: [`BucketQueue`] is aligned
    /// so that the two never share a cache line.
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
    /// Cells settled this round, with their labels.
    settled: Vec<(u32, f64)>,
    expanded: u64,
    /// Work units done: cells settled plus steps priced.
    work: u64,
    exhausted: bool,
    /// One flag per run of 2^[`PAGE_SHIFT`] cells (row-major): set once this side labels
    /// a cell there. The meeting check skips the other side's cells in runs this side
    /// never reached, without reading its cost word (a cache miss far from its front).
    labelled: Vec<bool>,
}

/// Cells per flag of [`Side::labelled`]: the cost words of one 4 KiB page.
const PAGE_SHIFT: u32 = 9;

impl Side<'_> {
    /// The smallest queued key (+∞ when the queue is empty).
    fn top(&self) -> f64 {
        match self.pending {
            Some((k, _)) if !self.exhausted => k,
            _ => f64::INFINITY,
        }
    }
}

/// What a side tells the other at the end of a round: the best sum it found checking
/// the other side's cells of the round before, its smallest queued key, and the cells it
/// settled.
#[derive(Debug, Default)]
struct Post {
    best: (f64, u32),
    top: f64,
    settled: Vec<(u32, f64)>,
}

/// The posts of both sides, for each round parity (`[parity][side]`).
type Board = Mutex<[[Post; 2]; 2]>;

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
        self.potential_at(self.p.z(v), col, row)
    }

    /// [`Self::potential`] of a cell with elevation `z_v` given.
    #[inline(always)]
    fn potential_at(&self, z_v: f64, col: i64, row: i64) -> f64 {
        let (c, r) = (col as f64, row as f64);
        0.5 * (self.to_goal.bound_at(self.p, z_v, c, r)
            - self.from_start.bound_at(self.p, z_v, c, r))
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
            side.settled.push((x, gu));
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
            let z_next = self.p.z(next);
            let dz = if REV { z_at - z_next } else { z_next - z_at };
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
            if gn < g_next {
                st(g, next, gn);
                side.labelled[next >> PAGE_SHIFT] = true;
                let pot = self.potential_at(z_next, col, row);
                side.heap
                    .push(if REV { gn - pot } else { gn + pot }, next as u32);
            }
        }
    }

    /// The best (sum, cell) over the other side's settled cells `theirs` that this
    /// side (`own`) has labelled.
    fn check(&self, own: &[u64], labelled: &[bool], theirs: &[(u32, f64)]) -> (f64, u32) {
        let mut best = (f64::INFINITY, u32::MAX);
        for &(x, other) in theirs {
            if !labelled[x as usize >> PAGE_SHIFT] {
                continue;
            }
            let a = ld(own, x as usize);
            if a.is_finite() {
                let s = (a.abs() + other, x);
                if earlier(s, best) {
                    best = s;
                }
            }
        }
        best
    }

    /// One side's rounds until the stopping rule holds; returns μ and its cell. Each
    /// side reads and writes only its own array `g`; what crosses is in `board`.
    fn rounds<const REV: bool>(
        &self,
        me: usize,
        g: &mut [u64],
        side: &mut Side<'_>,
        barrier: &Rendezvous,
        board: &Board,
    ) -> (f64, u32) {
        let _leaving = BreakOnUnwind(barrier);
        let mut mu = (f64::INFINITY, u32::MAX);
        // The other side left by a panic: stop; its join passes the panic on.
        let gone = (f64::INFINITY, u32::MAX);
        // The other side's settled cells of the round before, and the two smallest
        // keys posted then.
        let mut theirs: Vec<(u32, f64)> = Vec::new();
        let mut tops_before = 0.0;
        for round in 0usize.. {
            let best = self.check(g, &side.labelled, &theirs);
            self.advance::<REV>(g, side);
            {
                let mut b = board.lock().unwrap_or_else(|e| e.into_inner());
                let post = &mut b[round % 2][me];
                post.best = best;
                post.top = side.top();
                // Hand the settled list over; take back the emptied one posted two
                // rounds ago.
                std::mem::swap(&mut post.settled, &mut side.settled);
                side.settled.clear();
            }
            if !barrier.wait() {
                return gone;
            }
            let tops = {
                let mut b = board.lock().unwrap_or_else(|e| e.into_inner());
                let posts = &mut b[round % 2];
                for p in posts.iter() {
                    if earlier(p.best, mu) {
                        mu = p.best;
                    }
                }
                std::mem::swap(&mut theirs, &mut posts[1 - me].settled);
                posts[0].top + posts[1].top
            };
            // The best sums just read cover the cells settled up to the round before,
            // so the rule is applied with that round's smallest keys.
            if round > 0 && tops_before >= mu.0 {
                return mu;
            }
            tops_before = tops;
        }
        unreachable!("the rounds end by returning")
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
///
/// The start keys are p(s) = h_t(s)/2 and −p(t) = h_s(t)/2, never negative (h_s(s) and
/// h_t(t) are 0); the clamp only turns −0 into 0. A potential with a negative start key
/// would break the queue's order here, since later keys are clamped to the last served.
fn side(heap: &mut BucketQueue, key: f64, cell: usize, cells: usize) -> Side<'_> {
    debug_assert!(key >= 0.0, "a start key below 0: {key}");
    heap.push(key.max(0.0), cell as u32);
    let mut labelled = vec![false; (cells >> PAGE_SHIFT) + 1];
    labelled[cell >> PAGE_SHIFT] = true;
    Side {
        heap,
        pending: None,
        settled: Vec::new(),
        expanded: 0,
        exhausted: false,
        work: 0,
        labelled,
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
        let w = self.dem.width();
        let [hf, hb] = &mut bi.heap;
        let width = self.queue_width();
        hf.reset(width);
        hb.reset(width);
        let (sc, sr) = ((start % w) as i64, (start / w) as i64);
        let (gc, gr) = ((goal % w) as i64, (goal / w) as i64);
        let mut fwd = side(hf, ctx.potential(start, sc, sr), start, n);
        let mut bwd = side(hb, -ctx.potential(goal, gc, gr), goal, n);
        let barrier = Rendezvous::default();
        let board = Board::default();
        let [gf, gb] = &mut bi.g;
        let mu = std::thread::scope(|s| {
            let back = s.spawn(|| ctx.rounds::<true>(1, gb, &mut bwd, &barrier, &board));
            let mu = ctx.rounds::<false>(0, gf, &mut fwd, &barrier, &board);
            if let Err(e) = back.join() {
                std::panic::resume_unwind(e);
            }
            mu
        });
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
