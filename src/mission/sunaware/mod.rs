//! Sun-aware planning: a route *and* a schedule (where to wait, and until when) that
//! reaches the goal through the waypoints and the sites (with their payload runs) with
//! the state of charge never below the reserve, found by a time-dependent search over
//! (place, time) with the state of charge as a resource.
//!
//! # Method
//! A resource-constrained shortest-path search with label dominance (labels and
//! Pareto pruning as in Irnich and Desaulniers, "Shortest path problems with resource
//! constraints", in *Column Generation*, Springer 2005, ch. 2; from memory), on a
//! time-expanded graph in the spirit of sun-synchronous exploration (Wettergreen et al.,
//! "Sun-synchronous robotic exploration", IJRR 24(1), 2005: plan where the rover is
//! *when*, so that it stays lit).
//!
//! - **States.** A label is a rover at a node of a coarse lattice at a time t (seconds,
//!   continuous) with the simulation's full energy state: pack state of charge, battery
//!   box temperature and heater, last step's losses, and the open simulation step.
//! - **Moves.** Drive to one of the 8 neighbouring lattice nodes along a fixed fine-grid
//!   path (energy and time from the planner's [`StepModel`], step by step); or wait in
//!   place until the next bucket boundary (below). The energy of a move is priced by
//!   the simulation's own step arithmetic (`walker`): panels from the same sun,
//!   transposition, panel and terrain-shading code, at the cell and body attitude the
//!   rover has in each simulation step (body-mounted panels follow heading, pitch and
//!   roll; a waiting rover keeps the attitude it arrived with), hotel and named loads,
//!   thermal node, heater and pack. A move is refused when a step would end below the
//!   reserve state of charge, when driving would fall outside the policy's driving
//!   hours, or past the deadline (the search's time horizon is the policy's deadline).
//! - **Time buckets.** Time is cut into buckets of `bucket_s` (a whole number of
//!   simulation steps). A label belongs to bucket ⌊t / bucket_s⌋; a wait lasts from t to
//!   the next bucket boundary, (⌊t / bucket_s⌋ + 1)·bucket_s, so schedules hold until
//!   bucket boundaries and a hold always ends on a simulation step.
//! - **Dominance.** Per (node, bucket) the search keeps the labels that no other label of
//!   the same node and bucket beats on both arrival time and state of charge: label a
//!   prunes b when t_a ≤ t_b and SOC_a + ε ≥ SOC_b, ε the `soc_resolution` (default
//!   0.5 %; 0 gives the plain Pareto test). Pruning compares these two resources only:
//!   it ignores the box temperature, the arrival heading (which sets the panels' attitude
//!   for a later wait) and the drain while a to-be-pruned label would wait from t_a to
//!   t_b. Within a bucket these differ little; the search is exact up to this rule.
//! - **Order.** Labels leave a priority queue by t + h, h the vehicle's lower bound of
//!   the driving time to the goal: with [`SunAwareObjective::EarliestArrival`] the first
//!   label to reach the goal is the earliest arrival (up to the dominance rule); with
//!   [`SunAwareObjective::MostCharge`] every label is expanded and the arrival with the
//!   highest state of charge wins (ties: earlier); an arrival with a full pack ends the
//!   search once no queued label can arrive earlier.
//!
//! Pruning and ε decide only which plan is found, never whether it is safe: every label
//! carries its own exact energy state, so a plan found keeps the reserve in the
//! simulation whatever was pruned on the way.
//!
//! # The coarse lattice and tilt safety
//! Lattice nodes are fine cells `block_cells` apart in rows and columns, placed so that
//! the start is a node; node (i, j) stands for the block of fine cells around it and is
//! the cell the rover actually visits (cells are *sampled*, not averaged: no elevation is
//! smoothed). The edge between neighbouring nodes is the straight fine-grid path between
//! them (`block_cells` fine steps, cardinal or diagonal), and the goal is reached from
//! any node within `block_cells` fine cells of it by a diagonal-then-straight fine path.
//! Every fine step of every edge is checked by the fine planner ([`Planner::geometry`]:
//! cell blocks, flanking cells, uphill, downhill and roll limits on the fine DEM) and
//! priced by the vehicle model, so a coarse edge is drivable exactly when every fine step
//! of it is: the coarse grid can never cut a corner the fine grid forbids. It can miss a
//! passage narrower than a block or not on a straight line between nodes (the price of
//! the coarse grid); `block_cells = 1` searches the fine grid itself.
//!
//! **Refinement** (`refine`, on by default): a second search on a lattice of
//! ⌈block/4⌉-cell spacing (aligned on the start, so every coarse node and every coarse
//! straight edge is also on it), restricted to the nodes within two coarse blocks of the
//! coarse plan's route; the better of the two plans is kept (the coarse one when the
//! refined search finds nothing better or runs out of labels).
//!
//! A leg whose end the lattice cannot reach at all (the `Tilt` bound: a passage
//! narrower than a block, or an end on a slope whose straight approaches are too steep)
//! is searched again with half the block, down to the fine grid; such a leg is not
//! refined again.
//!
//! # Waypoints, sites and legs
//! [`plan_sun_aware_via`] plans leg by leg: start → each [`Visit`] in the order given
//! (waypoints first, then the sites in the order the fixed pipeline chooses,
//! [`crate::mission::prepare::plan`]) → goal. Each leg is one search as above, from the
//! previous leg's end states (each with its time, pack, battery box, losses, open
//! simulation step and the attitude the rover arrived with: the arrival front, below)
//! to the next point. At a waypoint the rover
//! drives on; at a site the leg's last move includes the payload run: the rover parks
//! (hotel on, loads scheduled `at_site` on with the site's clock, even outside the
//! driving hours) for as many simulation steps as the simulation's site clock needs
//! (the walker's `visit`), and the run must keep the reserve like any other move, so a
//! leg's arrivals are compared on the state *after* the payload run. The legs are joined
//! into one fine-grid route with the holds, a [`Stop`] per site, and a hold at each
//! site's row until the payload run ends (merged with the next leg's first wait), so
//! that the simulation keeps the arrival attitude there as the search did. The joined
//! plan is walked once more from the start through the step arithmetic (the ledger
//! reported) and must end in the last leg's state.
//!
//! **The arrival front, carried across legs.** A leg before the last does not keep one
//! best arrival. Its search collects every label that reaches the leg's end (at a site,
//! the state after the payload run) and keeps those that no other arrival of the same
//! time bucket dominates by the rule above (no later, at most ε less charge): the leg's
//! *arrival front*. It expands every label, as [`SunAwareObjective::MostCharge`] does,
//! and ends when the queue is empty, or when an arrival with a full pack exists and no
//! queued label can arrive earlier than it, or at the label budget (the front is then
//! marked incomplete). The coarse and the refined search (whose corridor covers the
//! routes of all the coarse front's members) give a front each; they are merged under
//! the same rule. The next leg's search starts from every member at once: each start
//! label carries the member's energy state, the attitude the rover arrived with (for
//! its waits before its first drive) and an origin (which member it continues,
//! inherited by its children); the start labels share one search, so dominance compares
//! labels of different origins like any others. The final leg keeps the objective's
//! best arrival over all its start labels, and its plan is traced back through the
//! origins, leg by leg, to the start; each member's leg is replayed from the state of
//! the member it continues and must end in the member's state. A leg's search also
//! drops every label that could not finish the later legs before the deadline: its
//! horizon is the deadline less a lower bound of the later legs' time (their
//! straight-line driving time by the vehicle's bound, the one that orders the queue,
//! and their payload runs).
//!
//! Why "no plan" is then a proof within the bounds: any plan on the lattice passes each
//! leg's end in some state; that state is in the front, or a member of its time bucket
//! is no later with at most ε less charge, or a full-pack arrival is no later; the next
//! leg's search starts from that member too. So when a later leg has no plan from any
//! carried start, no plan exists within the same bounds a single leg's search has: the
//! dominance rule (ε, and what it ignores: box temperature, arrival heading, the drain
//! while waiting from t_a to t_b; a full pack is taken to cover every later arrival),
//! waits ending on bucket boundaries, the lattice (and the refinement's corridor), the
//! label budget and the horizon. When the budget cut an earlier leg's front, a later
//! "no plan" names the label budget and the leg whose front was cut.
//!
//! The cost: each leg before the last is searched to exhaustion (like most charge), not
//! to its first arrival, and the next leg starts from up to a few members per bucket;
//! but since they share one search, the next leg costs one search with many start
//! labels, not one search per member. A single leg is searched as before.
//!
//! **The greedy bound** (`greedy_bound`, on by default; [`SunAwareObjective::EarliestArrival`]
//! with several legs). First the greedy pass: each leg keeps only its own earliest
//! arrival and the next leg starts from that one state. If it arrives, at T_g, a plan
//! exists (it is replayed like any other), so no "no plan" proof is needed, and no
//! label that cannot reach the goal by T_g can lead to an earlier plan: a label of leg
//! k at time t needs at least h (the bound of the driving time to the leg's end, the
//! one that orders the queue) plus the later legs' lower bound (above) to arrive. The
//! front pass then runs with T_g in place of the deadline in every leg's horizon, and
//! its plan is kept unless the greedy plan arrives earlier, or the bounded fronts find
//! none (only the dominance rule's ε, which can prune a label for a no-earlier one with
//! less charge, or the label budget can make them miss the greedy arrival); then the
//! greedy plan stands. If the greedy pass has no plan, the fronts are searched up to the
//! deadline as above, for the proof. The bounded pass keeps the plan of the unbounded
//! one: a label cut at T_g can dominate only labels of the same node no earlier than
//! itself, which are cut too (and the bound h is consistent, the straight-line driving
//! bound being subadditive: a cut label's children are cut as well), so the labels that
//! survive meet each other exactly as in the unbounded pass; what differs is the
//! refinement's corridor, drawn around the bounded coarse front's routes only (so the
//! refined front can miss a member the unbounded one has), and the label budget,
//! reached later. When the bounded fronts miss the greedy arrival the greedy plan
//! stands: seen on the survey fixture of `tests/mission_sunaware.rs` from a full pack,
//! same arrival as the unbounded fronts and more charge. There, with the refinement
//! off, the bounded and the unbounded pass give the same fronts' members up to the
//! bound and the same plan, as the argument says; with it on they differ, and widening
//! the corridor by the greedy plan's route did not close the gap: the cause is not yet
//! pinned down. [`SearchStats::greedy_bound_s`] and
//! [`SearchStats::greedy_plan`] report what the bound did.
//!
//! With [`SunAwareObjective::MostCharge`] no such bound is used: a later arrival can
//! carry more charge, so the greedy plan's arrival bounds nothing but the deadline
//! does. (Only a greedy arrival with a full pack would bound the search, by the
//! full-pack rule above; the greedy pass would cost a full most-charge search per leg
//! to find that out, and is not run.)
//!
//! In every search a label is refused when its time plus h passes the leg's horizon
//! (not only a move whose start time does): such a label could only arrive too late,
//! and by the argument above its absence changes nothing for the others.
//!
//! The plan comes back on the fine grid (the edges' fine paths joined) with its holds
//! and stops, and [`SunAwarePlan::replay_setup`] gives the simulation setup that replays
//! it: the ordinary [`simulate`] with [`Hold`]s and [`Stop`]s reproduces the search's
//! energy to the last few bits (see `tests/mission_sunaware.rs`).
//!
//! # Bounds
//! The time horizon (the policy's deadline) and a label budget (`max_labels`; memory is
//! about `max_labels` × the label size, reported in [`SearchStats::label_bytes`] and
//! [`SunAwareSettings::label_memory_bytes`], which `sunward run` adds, for the seasons
//! searched at once, to the memory it checks against the budget before it starts; the
//! label budget also bounds the work, hence the time, of a search). When
//! no plan exists the error names the bound that bit: the goal unreachable on the
//! lattice whatever the time (tilt or another cell block), the label budget, labels cut
//! at the reserve everywhere, or labels that could not arrive before the horizon; with
//! several legs it also names the leg (`2 of 5, from waypoint 1 to lichen transect`).
//!
//! # Limits
//! Exact up to the dominance rule and the lattice, across legs as within one (above);
//! legs before the last cost a full search each up to the deadline when the greedy
//! legs find no plan (and with the most-charge objective), up to the greedy arrival
//! otherwise; a site in the goal's cell is refused (the run ends on
//! arrival, before any payload run there; [`check_visits`]); the lattice uses the 8 neighbours (not
//! the knight moves of 16-connectivity); the replay policy drives whenever the schedule
//! says (its state-of-charge thresholds are set to zero: the plan itself keeps the
//! reserve). Besides the labels, memory goes to the lattice edges computed (about 56
//! bytes per fine step of each edge, all edges of the reachable lattice: the reachability
//! check builds them) and to the cached panel output of waits (one value per simulation
//! step of each (arrival edge, bucket) waited in): on large grids keep `block_cells`
//! above 1. The weather is the simulation's: clear sky scaled by the monthly clearness.
//!
//! # Units
//! Seconds, watt-hours, fractions (state of charge), metres.

mod walker;

use std::cmp::Reverse;
use std::collections::BinaryHeap;

use chrono::{DateTime, Utc};

use crate::mission::ledger::{daily_budgets, Ledger};
use crate::mission::resolve::Season;
use crate::mission::runner::{season_start, SeasonResult};
use crate::mission::sim::{simulate, EndCondition, Hold, SimError, SimSetup, Stop};
use crate::mission::verdict::summarize;
use crate::plan::astar::{StepTable, DIRECTIONS};
use crate::plan::route::{locate, route_along};
use crate::plan::{Blocked, PlanError, Planner, Route, RoutePoint, StepModel};
use crate::sun::panel::Attitude;
use walker::{Clock, Halt, Pose, Walk, Walker};

/// What the sun-aware search optimises.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum SunAwareObjective {
    /// Arrive as early as possible.
    #[default]
    EarliestArrival,
    /// Arrive (before the deadline) with the highest state of charge.
    MostCharge,
}

/// Search settings.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SunAwareSettings {
    /// Fine cells between lattice nodes (1..=256; 1 = the fine grid).
    pub block_cells: usize,
    /// Bucket length, seconds: a whole number of simulation steps.
    pub bucket_s: f64,
    /// Label budget (each label is [`SearchStats::label_bytes`] bytes).
    pub max_labels: usize,
    /// State-of-charge resolution of the dominance test (0..0.05): a label prunes
    /// another of the same node and bucket that is no earlier and has less than this
    /// much more charge. 0 keeps every Pareto label.
    pub soc_resolution: f64,
    /// What to optimise.
    pub objective: SunAwareObjective,
    /// Search again on a lattice four times finer (at least one cell) within two
    /// blocks of the coarse plan's route, and keep the better plan.
    pub refine: bool,
    /// Test use: each leg before the last keeps only its best arrival by the objective
    /// (the next leg starts from that one state) instead of its arrival front.
    #[doc(hidden)]
    pub greedy_legs: bool,
    /// With several legs and [`SunAwareObjective::EarliestArrival`]: plan greedily first
    /// and, when that plan arrives, search the arrival fronts only up to its arrival
    /// (module doc, "The greedy bound"). Off: the fronts are searched up to the deadline
    /// (the same plan, slower; for tests and measurements).
    pub greedy_bound: bool,
}

impl SunAwareSettings {
    /// Bytes of one search's labels at the full label budget (the labels themselves;
    /// the lattice edges and the wait cache come on top, module doc, Limits). A caller
    /// that runs several searches at once multiplies it by their number.
    pub fn label_memory_bytes(&self) -> u64 {
        (self.max_labels as u64).saturating_mul(std::mem::size_of::<Label>() as u64)
    }
}

impl Default for SunAwareSettings {
    /// 8-cell blocks, 30-minute buckets (a charging decision every half hour: the sun
    /// moves 7.5° of azimuth in that time), 4 million labels (a few hundred MB), a
    /// state-of-charge resolution of 0.5 % (finer than a pack's state of charge is
    /// known in the field, where estimates are good to a few per cent: common practice;
    /// on the benchmark it cuts the labels fourfold against 0.1 %).
    fn default() -> Self {
        SunAwareSettings {
            block_cells: 8,
            bucket_s: 1800.0,
            max_labels: 4_000_000,
            soc_resolution: 0.005,
            objective: SunAwareObjective::EarliestArrival,
            refine: true,
            greedy_legs: false,
            greedy_bound: true,
        }
    }
}

/// What the search did.
#[derive(Debug, Clone, PartialEq, Default, serde::Serialize)]
pub struct SearchStats {
    /// Lattice nodes (the goal not counted).
    pub nodes: usize,
    /// Lattice edges whose fine path is blocked, by the first reason met.
    pub edges_blocked: Vec<(Blocked, u64)>,
    /// Labels made.
    pub labels_created: u64,
    /// Labels taken from the queue and expanded.
    pub labels_expanded: u64,
    /// Labels pruned by dominance (refused or removed).
    pub labels_dominated: u64,
    /// Moves refused because a step would end below the reserve.
    pub cut_reserve: u64,
    /// Moves refused because they could not arrive before the horizon.
    pub cut_horizon: u64,
    /// Drives refused because they fell outside the driving hours.
    pub cut_hours: u64,
    /// Bytes per label.
    pub label_bytes: usize,
    /// Whether the search ran to its end (false: the label budget stopped it).
    pub complete: bool,
    /// Nodes of the refining search's corridor (0: no refinement).
    pub refine_nodes: usize,
    /// Whether the plan comes from the refining search.
    pub refined: bool,
    /// The greedy plan's arrival (seconds after the start) that bounded the search of
    /// the arrival fronts, when it did (module doc, "The greedy bound").
    pub greedy_bound_s: Option<f64>,
    /// Whether the plan is the greedy plan itself (the bounded fronts found none
    /// better).
    pub greedy_plan: bool,
}

impl SearchStats {
    /// Adds the other search's counters (lattice nodes and flags stay).
    fn add(&mut self, o: &SearchStats) {
        for &(b, k) in &o.edges_blocked {
            match self.edges_blocked.iter_mut().find(|(x, _)| *x == b) {
                Some(e) => e.1 += k,
                None => self.edges_blocked.push((b, k)),
            }
        }
        self.labels_created += o.labels_created;
        self.labels_expanded += o.labels_expanded;
        self.labels_dominated += o.labels_dominated;
        self.cut_reserve += o.cut_reserve;
        self.cut_horizon += o.cut_horizon;
        self.cut_hours += o.cut_hours;
    }
}

/// A route with a schedule.
#[derive(Debug, Clone, PartialEq)]
pub struct SunAwarePlan {
    /// The route on the fine grid.
    pub route: Route,
    /// Where and until when the rover waits (at a site: at least until its payload run
    /// ends).
    pub holds: Vec<Hold>,
    /// The payload runs at the sites, in visiting order.
    pub stops: Vec<Stop>,
    /// The legs, start to goal: one per waypoint and site, and the last to the goal.
    pub legs: Vec<PlanLeg>,
    /// Arrival, seconds after the start.
    pub arrival_s: f64,
    /// State of charge after the step of the arrival.
    pub final_soc: f64,
    /// Lowest state of charge at any step end.
    pub min_soc: f64,
    /// The plan's energy as the search priced it.
    pub ledger: Ledger,
    /// Search counters.
    pub stats: SearchStats,
    /// The arrival front of each leg but the last (the arrivals the next leg started
    /// from), start to goal.
    pub fronts: Vec<ArrivalFront>,
}

/// The arrivals a leg carried into the next one: no member dominates another of the
/// same time bucket of its `done_s` (no later, at most `soc_resolution` less charge).
#[derive(Debug, Clone, PartialEq)]
pub struct ArrivalFront {
    /// The members, in the order the searches made them.
    pub members: Vec<FrontMember>,
}

/// One arrival of a leg's front.
#[derive(Debug, Clone, PartialEq)]
pub struct FrontMember {
    /// The member of the previous leg's front it continues (0 for the first leg).
    pub origin: usize,
    /// Arrival at the leg's end, seconds after the start.
    pub arrival_s: f64,
    /// When the next leg starts from it (after the payload run at a site), seconds
    /// after the start.
    pub done_s: f64,
    /// State of charge then.
    pub soc: f64,
    /// The fine cells of its leg's route (row-major indices; the first is the leg's
    /// start).
    pub cells: Vec<usize>,
    /// Its holds, by the rows of its leg's route.
    pub holds: Vec<Hold>,
}

impl SunAwarePlan {
    /// Seconds from the start to the arrival not spent driving (holds, payload runs,
    /// and the ends of the simulation steps in which a hold or a payload run begins).
    pub fn waiting_s(&self) -> f64 {
        (self.arrival_s - self.route.summary.duration_s).max(0.0)
    }

    /// The setup that replays this plan with [`crate::mission::sim::simulate`]:
    /// `template` with this route, holds and payload stops, state-of-charge thresholds
    /// at zero (the plan keeps the reserve) and the run ending at arrival.
    pub fn replay_setup<'a>(&'a self, template: &SimSetup<'a>) -> SimSetup<'a> {
        let mut s = template.clone();
        s.route = &self.route;
        s.stops = self.stops.clone();
        s.holds = self.holds.clone();
        s.policy.min_soc_to_drive = 0.0;
        s.policy.resume_soc = 0.0;
        s.policy.end = EndCondition::Arrival;
        s
    }
}

/// A point between the start and the goal that a plan must reach, in the order given.
#[derive(Debug, Clone, PartialEq)]
pub struct Visit {
    /// Where (its label names the leg in messages).
    pub point: RoutePoint,
    /// The payload run there, seconds, for a site (the rover parks with the `at_site`
    /// loads on); `None` for a waypoint, driven through.
    pub payload_s: Option<f64>,
}

/// One leg of a plan, from one point to the next.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct PlanLeg {
    /// The label of the point the leg starts from.
    pub from: String,
    /// The label of the point it ends at.
    pub to: String,
    /// The row of the plan's route profile where it ends.
    pub end_row: usize,
    /// Arrival at its end, seconds after the start.
    pub arrival_s: f64,
    /// When the rover leaves its end (after the payload run at a site), seconds after
    /// the start; the arrival for a waypoint and the goal.
    pub done_s: f64,
    /// The payload run at its end, seconds (a site).
    pub payload_s: Option<f64>,
}

/// The bound that left the search without a plan.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Bound {
    /// No lattice path at any time: tilt limits or other cell blocks.
    Tilt,
    /// The label budget ran out first.
    LabelBudget,
    /// Every way ran below the reserve state of charge.
    Reserve,
    /// No way arrives before the horizon (the deadline).
    Horizon,
}

/// Why the search gave no plan.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SunAwareError {
    /// A setting is out of range.
    #[error("sun-aware setting {name} = {value}: expected {expected}")]
    Setting {
        /// The setting.
        name: &'static str,
        /// Its value.
        value: String,
        /// What is accepted.
        expected: &'static str,
    },
    /// Start or goal could not be placed.
    #[error(transparent)]
    Place(#[from] PlanError),
    /// The simulation setup was refused.
    #[error(transparent)]
    Sim(#[from] SimError),
    /// The search ended without a plan.
    #[error(
        "no sun-aware plan{}: {detail}",
        leg.as_deref().map(|l| format!(" for the leg {l}")).unwrap_or_default()
    )]
    NoPlan {
        /// The leg without a plan (`from A to B`) when the plan has several.
        leg: Option<String>,
        /// The bound that bit.
        bound: Bound,
        /// What happened, in words, with the fix.
        detail: String,
        /// Search counters.
        stats: Box<SearchStats>,
    },
}

/// Plans from `start` to `goal` for a run of `setup` (its route, stops and holds are
/// ignored) beginning at `t0`. `planner` is the fine-grid planner over the DEM the
/// horizon map of `setup` was made from.
pub fn plan_sun_aware<M: StepModel + ?Sized>(
    planner: &Planner<'_, M>,
    setup: &SimSetup<'_>,
    start: &RoutePoint,
    goal: &RoutePoint,
    t0: DateTime<Utc>,
    settings: &SunAwareSettings,
) -> Result<SunAwarePlan, SunAwareError> {
    plan_sun_aware_via(planner, setup, start, &[], goal, t0, settings)
}

/// Plans from `start` through `visits` in their order (waypoints driven through, sites
/// with their payload runs) to `goal`, leg by leg (module doc), for a run of `setup`
/// (its route, stops and holds are ignored) beginning at `t0`.
pub fn plan_sun_aware_via<M: StepModel + ?Sized>(
    planner: &Planner<'_, M>,
    setup: &SimSetup<'_>,
    start: &RoutePoint,
    visits: &[Visit],
    goal: &RoutePoint,
    t0: DateTime<Utc>,
    settings: &SunAwareSettings,
) -> Result<SunAwarePlan, SunAwareError> {
    plan_via(planner, setup, start, visits, goal, t0, settings, &|_| {})
}

/// How many leg searches [`plan_sun_aware_via`] reports for one season with `visits`
/// (the units of the progress of [`run_seasons_sun_aware_with`]): one per leg, twice
/// when the greedy bound applies (the greedy pass, then the fronts).
pub fn leg_searches(visits: &[Visit], settings: &SunAwareSettings) -> u64 {
    let n = visits.len() as u64 + 1;
    if greedy_bound_applies(n as usize, settings) {
        2 * n
    } else {
        n
    }
}

/// Whether the greedy bound is used (module doc, "The greedy bound").
fn greedy_bound_applies(legs: usize, s: &SunAwareSettings) -> bool {
    legs > 1
        && s.greedy_bound
        && !s.greedy_legs
        && s.objective == SunAwareObjective::EarliestArrival
}

/// [`plan_sun_aware_via`], calling `tick(k)` when k more leg searches of the
/// [`leg_searches`] are done.
#[allow(clippy::too_many_arguments)]
fn plan_via<M: StepModel + ?Sized>(
    planner: &Planner<'_, M>,
    setup: &SimSetup<'_>,
    start: &RoutePoint,
    visits: &[Visit],
    goal: &RoutePoint,
    t0: DateTime<Utc>,
    settings: &SunAwareSettings,
    tick: &(dyn Fn(u64) + Sync),
) -> Result<SunAwarePlan, SunAwareError> {
    check_settings(planner, setup, settings)?;
    let cells = check_visits(planner, start, visits, goal)?;
    let clock = Clock::new(setup, t0)?;
    let walker = Walker {
        setup,
        clock: &clock,
        reserve_soc: setup.pack.params().reserve_soc,
    };
    let mut names = vec![start.label.as_str()];
    names.extend(visits.iter().map(|v| v.point.label.as_str()));
    names.push(goal.label.as_str());
    let n = cells.len() - 1;
    let legs = Legs {
        planner,
        walker: &walker,
        names: &names,
        visits,
        rest: rest_lower_bounds(planner, &cells, visits),
        cells: &cells,
        settings,
    };
    let deadline_s = clock.horizon_s();
    // Each pass reports its legs, the skipped ones too when it ends early.
    let pass = |greedy: bool, by_s: f64| {
        let done = std::sync::atomic::AtomicU64::new(0);
        let r = legs.search(greedy, by_s, &|| {
            done.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
            tick(1);
        });
        tick(n as u64 - done.load(std::sync::atomic::Ordering::Relaxed));
        r
    };
    if !greedy_bound_applies(n, settings) {
        return pass(settings.greedy_legs, deadline_s);
    }
    // The greedy bound: a greedy plan proves a plan exists and bounds the earliest
    // arrival; without one, the full search is needed for the proof.
    let greedy = match pass(true, deadline_s) {
        Ok(g) => g,
        Err(SunAwareError::NoPlan { .. }) => return pass(false, deadline_s),
        Err(e) => return Err(e),
    };
    // The greedy plan's own labels must pass: its arrival is the replay's (equal to the
    // search's to 1e-6 s), and t + h sums the same driving time in another order.
    let greedy_s = greedy.arrival_s;
    let by_s = greedy_s + BOUND_SLACK_S;
    let (mut plan, other, is_greedy) = match pass(false, by_s) {
        Ok(p) if p.arrival_s <= greedy.arrival_s + ROUNDING_S => (p, greedy.stats, false),
        Ok(p) => (greedy, p.stats, true),
        // Only the dominance rule's ε or the label budget can leave the bounded fronts
        // without a plan as early as the greedy one: the greedy plan stands.
        Err(SunAwareError::NoPlan { stats, .. }) => (greedy, *stats, true),
        Err(e) => return Err(e),
    };
    plan.stats.add(&other);
    plan.stats.complete &= other.complete;
    plan.stats.greedy_bound_s = Some(greedy_s);
    plan.stats.greedy_plan = is_greedy;
    Ok(plan)
}

/// What every pass over the legs shares.
struct Legs<'a, 'p, 'w, 's, 'x, M: StepModel + ?Sized> {
    planner: &'a Planner<'p, M>,
    walker: &'a Walker<'w, 's>,
    names: &'a [&'x str],
    visits: &'a [Visit],
    /// Per leg, the lower bound of the later legs' time ([`rest_lower_bounds`]).
    rest: Vec<f64>,
    cells: &'a [usize],
    settings: &'a SunAwareSettings,
}

impl<M: StepModel + ?Sized> Legs<'_, '_, '_, '_, '_, M> {
    /// One pass over the legs: each leg before the last keeps its arrival front, or
    /// with `greedy` its best arrival; no label is kept that could not arrive at the
    /// goal by `by_s` (seconds after the start: the deadline, or the greedy bound).
    /// `leg_done` is called after each leg.
    fn search(
        &self,
        greedy: bool,
        by_s: f64,
        leg_done: &dyn Fn(),
    ) -> Result<SunAwarePlan, SunAwareError> {
        let Legs {
            planner,
            walker,
            names,
            visits,
            cells,
            settings,
            ..
        } = *self;
        let rest = &self.rest;
        let n = cells.len() - 1;
        let arrive_by_s = by_s.min(walker.clock.horizon_s());
        let mut starts = vec![LegStart {
            walk: walker.start()?,
            att: Attitude::default(),
        }];
        let mut fronts: Vec<Vec<LegPlan>> = Vec::new();
        let mut stats = SearchStats {
            complete: true,
            ..SearchStats::default()
        };
        // The first leg whose arrival front the label budget cut.
        let mut cut: Option<usize> = None;
        for k in 0..n {
            let end = match visits.get(k) {
                None => LegEnd::Arrive,
                Some(v) => v.payload_s.map_or(LegEnd::Pass, LegEnd::Visit),
            };
            let want = if k + 1 == n || greedy {
                Want::Best
            } else {
                Want::Front
            };
            let leg_name =
                (n > 1).then(|| format!("{} of {n}, from {} to {}", k + 1, names[k], names[k + 1]));
            let name = |e: SunAwareError| match e {
                SunAwareError::NoPlan {
                    bound,
                    detail,
                    stats,
                    ..
                } => {
                    let (bound, detail) = match cut {
                        Some(j) => (
                            Bound::LabelBudget,
                            format!(
                                "no plan from the {} arrivals carried into it ({detail}); but the \
                                 label budget of {} labels cut the arrival front of the leg {} \
                                 of {n}, from {} to {}, so an arrival it did not reach may still \
                                 lead to a plan: raise the budget, use larger blocks or longer \
                                 buckets",
                                starts.len(),
                                settings.max_labels,
                                j + 1,
                                names[j],
                                names[j + 1]
                            ),
                        ),
                        None => (bound, detail),
                    };
                    SunAwareError::NoPlan {
                        leg: leg_name.clone(),
                        bound,
                        detail,
                        stats,
                    }
                }
                e => e,
            };
            let horizon_s = arrive_by_s - rest[k];
            let front = if cells[k + 1] == cells[k] {
                in_place(
                    walker,
                    planner.dem.width(),
                    cells[k],
                    &starts,
                    end,
                    want,
                    horizon_s,
                    settings,
                    names[k + 1],
                )
                .map_err(|e| {
                    name(match e {
                        SunAwareError::NoPlan {
                            leg, bound, detail, ..
                        } => SunAwareError::NoPlan {
                            leg,
                            bound,
                            detail,
                            stats: Box::new(stats.clone()),
                        },
                        e => e,
                    })
                })?
            } else {
                plan_leg(
                    planner,
                    walker,
                    cells[k],
                    &starts,
                    cells[k + 1],
                    end,
                    want,
                    horizon_s,
                    settings,
                )
                .map_err(name)?
            };
            stats.nodes = stats.nodes.max(front.stats.nodes);
            stats.refine_nodes += front.stats.refine_nodes;
            stats.refined |= front.stats.refined;
            stats.label_bytes = stats.label_bytes.max(front.stats.label_bytes);
            stats.add(&front.stats);
            stats.complete &= front.complete;
            if !front.complete && want == Want::Front && cut.is_none() {
                cut = Some(k);
            }
            starts = front
                .members
                .iter()
                .map(|m| LegStart {
                    walk: m.end,
                    att: m.end_att,
                })
                .collect();
            fronts.push(front.members);
            leg_done();
        }
        join_legs(planner, walker, names, visits, cells, fronts, stats)
    }
}

/// Joins the legs of the plan: the final leg's plan traced back through the origins to
/// the first leg, into one route with its holds, stops and legs, replayed from the start
/// through the step arithmetic (which must end in the last leg's state).
fn join_legs<M: StepModel + ?Sized>(
    planner: &Planner<'_, M>,
    walker: &Walker<'_, '_>,
    names: &[&str],
    visits: &[Visit],
    cells: &[usize],
    fronts: Vec<Vec<LegPlan>>,
    stats: SearchStats,
) -> Result<SunAwarePlan, SunAwareError> {
    let mut chain: Vec<&LegPlan> = Vec::new();
    let mut j = 0;
    for f in fronts.iter().rev() {
        chain.push(&f[j]);
        j = f[j].origin;
    }
    chain.reverse();
    let (mut route_cells, mut holds, mut stops, mut legs) =
        (vec![cells[0]], Vec::new(), Vec::new(), Vec::new());
    for (k, leg) in chain.iter().enumerate() {
        let base = route_cells.len() - 1;
        for h in &leg.holds {
            push_hold(&mut holds, base + h.row, h.until_s);
        }
        route_cells.extend(&leg.cells[1..]);
        let row = route_cells.len() - 1;
        let payload_s = visits.get(k).and_then(|v| v.payload_s);
        if let Some(p) = payload_s {
            stops.push(Stop { row, duration_s: p });
            push_hold(&mut holds, row, leg.end.t_s);
        }
        legs.push(PlanLeg {
            from: names[k].to_string(),
            to: names[k + 1].to_string(),
            end_row: row,
            arrival_s: leg.arrival_s,
            done_s: if payload_s.is_some() {
                leg.end.t_s
            } else {
                leg.arrival_s
            },
            payload_s,
        });
    }
    let last = chain.last().expect("a plan has legs").end;
    let route = route_along(planner, &route_cells, stats.labels_expanded);
    let replay = walk_plan(
        walker,
        &route,
        &holds,
        &stops,
        walker.start()?,
        Attitude::default(),
        LegEnd::Arrive,
    );
    let (walk, ledger, arrival_s) = match replay {
        Ok(r) if (r.0.pack.soc - last.pack.soc).abs() < 1e-9 => r,
        other => {
            return Err(SimError::Stage(format!(
                "the sun-aware plan did not replay through the step arithmetic ({:?}); \
                 please report this mission to the sunward developers",
                other.map(|r| r.0.pack.soc)
            ))
            .into())
        }
    };
    let fronts = fronts[..fronts.len() - 1]
        .iter()
        .map(|f| ArrivalFront {
            members: f
                .iter()
                .map(|m| FrontMember {
                    origin: m.origin,
                    arrival_s: m.arrival_s,
                    done_s: m.end.t_s,
                    soc: m.end.pack.soc,
                    cells: m.cells.clone(),
                    holds: m.holds.clone(),
                })
                .collect(),
        })
        .collect();
    Ok(SunAwarePlan {
        route,
        holds,
        stops,
        legs,
        arrival_s,
        final_soc: walk.pack.soc,
        min_soc: walk.min_soc,
        ledger,
        stats,
        fronts,
    })
}

/// Per leg, a lower bound of the time the legs after it take, seconds: their driving
/// (the vehicle's lower bound over the straight distance, as the search's own order
/// uses) and their payload runs.
fn rest_lower_bounds<M: StepModel + ?Sized>(
    planner: &Planner<'_, M>,
    cells: &[usize],
    visits: &[Visit],
) -> Vec<f64> {
    let z = |c: usize| planner.dem.data()[c] as f64;
    let n = cells.len() - 1;
    let mut rest = vec![0.0; n];
    for k in (0..n.saturating_sub(1)).rev() {
        let (a, b) = (cells[k + 1], cells[k + 2]);
        let (d, dz) = (planner.distance_m(a, b), z(b) - z(a));
        let drive = if d > 0.0 && dz.is_finite() {
            planner.model.time_lower_bound_s(d, dz)
        } else {
            0.0
        };
        let payload = visits.get(k + 1).and_then(|v| v.payload_s).unwrap_or(0.0);
        rest[k] = rest[k + 1] + drive + payload;
    }
    rest
}

/// A leg whose end is in the cell of its start: nothing to drive; each start does the
/// end's action in place (the payload run at a site).
#[allow(clippy::too_many_arguments)]
fn in_place(
    walker: &Walker<'_, '_>,
    width: usize,
    cell: usize,
    starts: &[LegStart],
    end: LegEnd,
    want: Want,
    horizon_s: f64,
    settings: &SunAwareSettings,
    point: &str,
) -> Result<LegFront, SunAwareError> {
    let mut members = Vec::new();
    let mut last = Halt::Reserve;
    for (k, st) in starts.iter().enumerate() {
        let mut walk = st.walk;
        let t = walk.t_s;
        let pose = Pose {
            col: cell % width,
            row: cell / width,
            att: st.att,
        };
        let done = match end {
            LegEnd::Visit(p) => walker.visit(&mut walk, &pose, p, None),
            LegEnd::Arrive => walker.arrive(&mut walk, &pose, None),
            LegEnd::Pass => Ok(()),
        }
        .and_then(|()| {
            if end != LegEnd::Arrive && walk.t_s > horizon_s {
                Err(Halt::Horizon)
            } else {
                Ok(())
            }
        });
        match done {
            Ok(()) => members.push(LegPlan {
                cells: vec![cell],
                holds: Vec::new(),
                arrival_s: t,
                end: walk,
                end_att: st.att,
                origin: k,
            }),
            Err(h) => last = h,
        }
    }
    if members.is_empty() {
        let (bound, what) = match last {
            Halt::Horizon => (Bound::Horizon, "runs past the deadline"),
            _ => (Bound::Reserve, "runs below the reserve state of charge"),
        };
        return Err(SunAwareError::NoPlan {
            leg: None,
            bound,
            detail: format!(
                "the payload run at {point} {what}; a larger battery or panels, an \
                 earlier start or a later deadline may help"
            ),
            stats: Box::default(),
        });
    }
    match want {
        Want::Front => {
            merge_front(&mut members, settings);
        }
        Want::Best => {
            let mut best = 0;
            for i in 1..members.len() {
                if better(&members[i], &members[best], settings.objective) {
                    best = i;
                }
            }
            members = vec![members.swap_remove(best)];
        }
    }
    Ok(LegFront {
        members,
        complete: true,
        stats: SearchStats::default(),
    })
}

/// The cells of the start, the visits and the goal, checked: every point on the grid,
/// not all in one cell, and no site in the goal's cell (the run ends on arrival, so its
/// payload run would never happen).
pub fn check_visits<M: StepModel + ?Sized>(
    planner: &Planner<'_, M>,
    start: &RoutePoint,
    visits: &[Visit],
    goal: &RoutePoint,
) -> Result<Vec<usize>, SunAwareError> {
    let mut cells = vec![locate(planner, start)?];
    for v in visits {
        cells.push(locate(planner, &v.point)?);
    }
    let g = locate(planner, goal)?;
    cells.push(g);
    if cells.iter().all(|&c| c == g) {
        return Err(setting(
            "goal",
            format!("{}, {}", goal.x, goal.y),
            "a goal in another cell than the start",
        ));
    }
    if let Some(v) = visits
        .iter()
        .zip(&cells[1..])
        .find(|(v, &c)| v.payload_s.is_some() && c == g)
    {
        return Err(setting(
            "site",
            format!("{} at {}, {}", v.0.point.label, v.0.point.x, v.0.point.y),
            "a site in another cell than the goal (the run ends on arrival at the goal, \
             before any payload run there)",
        ));
    }
    Ok(cells)
}

/// Appends a hold, merged with the last one when it is at the same row.
fn push_hold(holds: &mut Vec<Hold>, row: usize, until_s: f64) {
    match holds.last_mut() {
        Some(h) if h.row == row => h.until_s = h.until_s.max(until_s),
        _ => holds.push(Hold { row, until_s }),
    }
}

/// One start of a leg's search (an arrival of the previous leg): the energy state and
/// the attitude the rover has there.
#[derive(Debug, Clone, Copy)]
struct LegStart {
    walk: Walk,
    att: Attitude,
}

/// What happens at a leg's end.
#[derive(Debug, Clone, Copy, PartialEq)]
enum LegEnd {
    /// The goal: the run ends (the step of the arrival closes there).
    Arrive,
    /// A site: the payload run of this many seconds.
    Visit(f64),
    /// A waypoint: the rover drives on.
    Pass,
}

/// One leg's plan from one of its starts.
#[derive(Debug, Clone)]
struct LegPlan {
    /// The fine cells of the leg's route (the first is the leg's start).
    cells: Vec<usize>,
    /// Holds, by the leg route's rows.
    holds: Vec<Hold>,
    /// Arrival at the leg's end, seconds after the start.
    arrival_s: f64,
    /// The state after the leg's end (after the payload run at a site).
    end: Walk,
    /// The attitude the rover has at the leg's end.
    end_att: Attitude,
    /// The start it continues (an index into the leg's starts).
    origin: usize,
}

/// What a leg's search gives: the chosen plan ([`Want::Best`]) or the arrival front.
#[derive(Debug, Clone)]
struct LegFront {
    members: Vec<LegPlan>,
    /// Whether the search ran to its end (false: the label budget cut it).
    complete: bool,
    stats: SearchStats,
}

/// One leg searched sun-aware from `starts` (all in cell `from`): on the coarse
/// lattice, then refined (module doc). `horizon_s`: the search's time horizon.
#[allow(clippy::too_many_arguments)]
fn plan_leg<M: StepModel + ?Sized>(
    planner: &Planner<'_, M>,
    walker: &Walker<'_, '_>,
    from: usize,
    starts: &[LegStart],
    to: usize,
    end: LegEnd,
    want: Want,
    horizon_s: f64,
    settings: &SunAwareSettings,
) -> Result<LegFront, SunAwareError> {
    let leg = LegSearch {
        starts,
        end,
        want,
        horizon_s,
    };
    // A lattice that cannot reach the leg's end at all is halved, down to the fine grid.
    let mut b = settings.block_cells;
    let mut coarse = loop {
        let lat = Lattice::new(planner, b, from, to);
        match search_once(planner, lat, walker, &leg, settings, None) {
            Err(SunAwareError::NoPlan {
                bound: Bound::Tilt, ..
            }) if b > 1 => b /= 2,
            r => break r?,
        }
    };
    // A halved lattice is not refined again (its search already cost the most).
    let b2 = (b / 4).max(1);
    if !settings.refine || b2 == b || b < settings.block_cells {
        return Ok(coarse);
    }
    let fine_lat = Lattice::new(planner, b2, from, to);
    let mut mask = vec![false; fine_lat.nodes()];
    let mut cells: Vec<usize> = coarse
        .members
        .iter()
        .flat_map(|m| m.cells.iter().copied())
        .collect();
    cells.sort_unstable();
    cells.dedup();
    corridor(&fine_lat, &cells, 2 * b, &mut mask);
    let refine_nodes = mask.iter().filter(|&&m| m).count();
    let refined = search_once(planner, fine_lat, walker, &leg, settings, Some(mask));
    let mut out = match (refined, want) {
        (Ok(mut fine), Want::Best)
            if better(&fine.members[0], &coarse.members[0], settings.objective) =>
        {
            fine.stats.refined = true;
            fine.stats.add(&coarse.stats);
            fine.complete = coarse.complete;
            fine
        }
        (Ok(fine), Want::Best) => {
            coarse.stats.add(&fine.stats);
            coarse
        }
        (Ok(fine), Want::Front) => {
            let n = coarse.members.len();
            coarse.stats.add(&fine.stats);
            coarse.members.extend(fine.members);
            let kept = merge_front(&mut coarse.members, settings);
            coarse.stats.refined = kept.iter().any(|&k| k >= n);
            coarse
        }
        (Err(SunAwareError::NoPlan { stats, .. }), _) => {
            coarse.stats.add(&stats);
            coarse
        }
        (Err(e), _) => return Err(e),
    };
    out.stats.refine_nodes = refine_nodes;
    Ok(out)
}

/// Keeps the members of `front` that no other member of the same time bucket (of its
/// end state) dominates by the search's rule; returns the kept members' indices in the
/// given order (the first of two equal ones is kept).
fn merge_front(front: &mut Vec<LegPlan>, settings: &SunAwareSettings) -> Vec<usize> {
    let eps = settings.soc_resolution;
    let key = |m: &LegPlan| (m.end.t_s, m.end.pack.soc);
    let bucket = |t: f64| (t / settings.bucket_s) as usize;
    let mut kept: Vec<usize> = Vec::new();
    for i in 0..front.len() {
        let (t, soc) = key(&front[i]);
        let same = |j: &usize| bucket(key(&front[*j]).0) == bucket(t);
        if kept
            .iter()
            .filter(|j| same(j))
            .any(|&j| dominates(key(&front[j]).0, key(&front[j]).1, t, soc, eps))
        {
            continue;
        }
        kept.retain(|j| !(same(j) && dominates(t, soc, key(&front[*j]).0, key(&front[*j]).1, eps)));
        kept.push(i);
    }
    let mut k = 0;
    let mut i = 0;
    front.retain(|_| {
        let keep = kept.get(k) == Some(&i);
        k += keep as usize;
        i += 1;
        keep
    });
    kept
}

/// One season planned sun-aware: the plan (or why there is none) and the season's
/// result, the plan's replay by the simulation, or the fixed route's run of `template`
/// when there is no plan.
#[derive(Debug, Clone)]
pub struct SunAwareSeason {
    /// The plan, or why there is none.
    pub plan: Result<SunAwarePlan, SunAwareError>,
    /// The season's verdict and run.
    pub result: SeasonResult,
}

/// Plans every season sun-aware from its own start (the plan depends on the date),
/// through `visits` in their order, and replays each plan with
/// [`crate::mission::sim::simulate`]; a season without a plan keeps the fixed route's
/// run of `template`. In parallel, results in the seasons' order.
pub fn run_seasons_sun_aware<M: StepModel + ?Sized>(
    planner: &Planner<'_, M>,
    template: &SimSetup<'_>,
    seasons: &[Season],
    start: &RoutePoint,
    visits: &[Visit],
    goal: &RoutePoint,
    settings: &SunAwareSettings,
) -> Result<Vec<SunAwareSeason>, SimError> {
    run_seasons_sun_aware_with(
        planner,
        template,
        seasons,
        start,
        visits,
        goal,
        settings,
        &crate::progress::Silent,
    )
}

/// [`run_seasons_sun_aware`], reporting to `progress` the leg searches done over all
/// seasons (the task "sun-aware search", [`leg_searches`] per season).
#[allow(clippy::too_many_arguments)]
pub fn run_seasons_sun_aware_with<M: StepModel + ?Sized>(
    planner: &Planner<'_, M>,
    template: &SimSetup<'_>,
    seasons: &[Season],
    start: &RoutePoint,
    visits: &[Visit],
    goal: &RoutePoint,
    settings: &SunAwareSettings,
    progress: &dyn crate::progress::Progress,
) -> Result<Vec<SunAwareSeason>, SimError> {
    use rayon::prelude::*;
    let total = leg_searches(visits, settings) * seasons.len() as u64;
    progress.start("sun-aware search (legs)", total);
    // Under the lock, so that the counts reported stay monotone.
    let done = std::sync::Mutex::new(0u64);
    let tick = |k: u64| {
        if k > 0 {
            let mut d = done.lock().unwrap_or_else(|e| e.into_inner());
            *d += k;
            progress.update(*d);
        }
    };
    let out = seasons
        .par_iter()
        .map(|season| {
            let t0 = season_start(season.date, template.utc_offset_s, template.start_local_h);
            let plan = plan_via(planner, template, start, visits, goal, t0, settings, &tick);
            let result = match &plan {
                Ok(p) => season_result(&p.replay_setup(template), season, t0)?,
                Err(_) => season_result(template, season, t0)?,
            };
            Ok(SunAwareSeason { plan, result })
        })
        .collect();
    progress.finish();
    out
}

/// Simulates `setup` for `season` from `t0` with its verdict and daily budgets.
fn season_result(
    setup: &SimSetup<'_>,
    season: &Season,
    t0: DateTime<Utc>,
) -> Result<SeasonResult, SimError> {
    let run = simulate(setup, t0)?;
    let reserve = setup.pack.params().reserve_soc;
    let length = setup.route.summary.length_m;
    let summary = summarize(&season.name, season.date, &run, reserve, length);
    let days = daily_budgets(
        &run.samples,
        setup.step_s,
        setup.utc_offset_s,
        setup.initial_soc,
    );
    Ok(SeasonResult {
        season: season.clone(),
        run,
        summary,
        days,
    })
}

/// What one leg's search starts from and looks for.
struct LegSearch<'a> {
    starts: &'a [LegStart],
    end: LegEnd,
    want: Want,
    horizon_s: f64,
}

/// One search on `lat` (only the `allowed` nodes, when given) for `leg`.
fn search_once<M: StepModel + ?Sized>(
    planner: &Planner<'_, M>,
    lat: Lattice,
    walker: &Walker<'_, '_>,
    leg: &LegSearch<'_>,
    settings: &SunAwareSettings,
    allowed: Option<Vec<bool>>,
) -> Result<LegFront, SunAwareError> {
    let mut search = Search::new(planner, lat, walker, settings);
    search.allowed = allowed;
    search.end = leg.end;
    search.want = leg.want;
    search.horizon_s = leg.horizon_s;
    search.reachable()?;
    let found = search.run(leg.starts)?;
    let members = found
        .iter()
        .map(|&i| search.leg_plan(i, leg.starts))
        .collect::<Result<Vec<_>, _>>()?;
    Ok(LegFront {
        members,
        complete: search.stats.complete,
        stats: std::mem::take(&mut search.stats),
    })
}

/// Whether leg plan `a` beats leg plan `b` on the objective.
fn better(a: &LegPlan, b: &LegPlan, objective: SunAwareObjective) -> bool {
    let (sa, sb) = (a.end.pack.soc, b.end.pack.soc);
    match objective {
        SunAwareObjective::EarliestArrival => (a.arrival_s, -sa) < (b.arrival_s, -sb),
        SunAwareObjective::MostCharge => (sa, -a.arrival_s) > (sb, -b.arrival_s),
    }
}

/// Marks the nodes of `lat` within `radius` fine cells (Chebyshev) of a cell of `cells`.
fn corridor(lat: &Lattice, cells: &[usize], radius: usize, mark: &mut [bool]) {
    let (nc, nr) = (lat.nc, lat.nr);
    let r = radius.div_ceil(lat.b) as i64;
    for &cell in cells {
        let (col, row) = (cell % lat.w, cell / lat.w);
        let i = (col as f64 - lat.c0 as f64) / lat.b as f64;
        let j = (row as f64 - lat.r0 as f64) / lat.b as f64;
        let (i, j) = (i.round() as i64, j.round() as i64);
        for dj in -r..=r {
            for di in -r..=r {
                let (a, c) = (i + di, j + dj);
                if a >= 0 && c >= 0 && (a as usize) < nc && (c as usize) < nr {
                    mark[c as usize * nc + a as usize] = true;
                }
            }
        }
    }
}

fn setting(name: &'static str, value: String, expected: &'static str) -> SunAwareError {
    SunAwareError::Setting {
        name,
        value,
        expected,
    }
}

fn check_settings<M: StepModel + ?Sized>(
    planner: &Planner<'_, M>,
    setup: &SimSetup<'_>,
    s: &SunAwareSettings,
) -> Result<(), SunAwareError> {
    if !(1..=256).contains(&s.block_cells) {
        return Err(setting(
            "block_cells",
            s.block_cells.to_string(),
            "1 to 256 fine cells",
        ));
    }
    let ratio = s.bucket_s / setup.step_s;
    if !(ratio >= 1.0 && (ratio - ratio.round()).abs() < 1e-9) {
        return Err(setting(
            "bucket_s",
            s.bucket_s.to_string(),
            "a whole number (at least 1) of simulation steps",
        ));
    }
    if !(0.0..=0.05).contains(&s.soc_resolution) {
        return Err(setting(
            "soc_resolution",
            s.soc_resolution.to_string(),
            "a fraction from 0 to 0.05",
        ));
    }
    if s.max_labels == 0 || s.max_labels > u32::MAX as usize / 2 {
        return Err(setting(
            "max_labels",
            s.max_labels.to_string(),
            "1 to 2^31 labels",
        ));
    }
    if let Some(h) = setup.horizon {
        if h.width() != planner.dem.width() || h.height() != planner.dem.height() {
            return Err(setting(
                "horizon",
                format!("{} x {}", h.width(), h.height()),
                "a horizon map of the planner's DEM (same width and height)",
            ));
        }
    }
    Ok(())
}

/// The coarse lattice: fine cells `b` apart, aligned on the start.
#[derive(Debug, Clone, Copy)]
struct Lattice {
    b: usize,
    c0: usize,
    r0: usize,
    nc: usize,
    nr: usize,
    start_cell: usize,
    goal_cell: usize,
    w: usize,
}

/// Rounding allowance of times compared with a horizon, seconds: a time plus the bound h
/// sums the same driving time in another order than the moves do (on a straight drive at
/// full speed the two are equal but for rounding).
const ROUNDING_S: f64 = 1e-6;
/// How far past the greedy plan's arrival the bounded fronts may arrive, seconds: above
/// the replay's tolerance of arrival times (1e-6 s) and [`ROUNDING_S`], so that the
/// greedy plan's own labels are never cut.
const BOUND_SLACK_S: f64 = 1e-3;
/// Edge slots per node: 8 neighbours, then the goal.
const SLOTS: usize = 9;
const GOAL_SLOT: u8 = 8;
const WAIT: u8 = 9;
const START: u8 = 10;
/// A pack this full counts as full for [`SunAwareObjective::MostCharge`]'s early end
/// (the constant-voltage taper makes the last 0.1 % slow).
const FULL_SOC: f64 = 0.999;

impl Lattice {
    fn new<M: StepModel + ?Sized>(p: &Planner<'_, M>, b: usize, start: usize, goal: usize) -> Self {
        let (w, h) = (p.dem.width(), p.dem.height());
        let (c0, r0) = ((start % w) % b, (start / w) % b);
        Lattice {
            b,
            c0,
            r0,
            nc: (w - 1 - c0) / b + 1,
            nr: (h - 1 - r0) / b + 1,
            start_cell: start,
            goal_cell: goal,
            w,
        }
    }

    fn nodes(&self) -> usize {
        self.nc * self.nr
    }

    /// The goal's node id (one past the lattice).
    fn goal(&self) -> usize {
        self.nodes()
    }

    fn cell(&self, node: usize) -> usize {
        if node == self.goal() {
            return self.goal_cell;
        }
        let (i, j) = (node % self.nc, node / self.nc);
        (self.r0 + j * self.b) * self.w + self.c0 + i * self.b
    }

    fn node_of(&self, cell: usize) -> usize {
        let (c, r) = (cell % self.w, cell / self.w);
        (r - self.r0) / self.b * self.nc + (c - self.c0) / self.b
    }

    /// The node the edge in `slot` leads to, if it is inside the lattice.
    fn target(&self, node: usize, slot: u8) -> Option<usize> {
        if slot == GOAL_SLOT {
            let (a, g) = (self.cell(node), self.goal_cell);
            let d = ((a % self.w).abs_diff(g % self.w)).max((a / self.w).abs_diff(g / self.w));
            return (d > 0 && d <= self.b).then_some(self.goal());
        }
        let (dc, dr) = DIRECTIONS[slot as usize];
        let (i, j) = ((node % self.nc) as i64, (node / self.nc) as i64);
        let (ti, tj) = (i + dc as i64, j + dr as i64);
        (ti >= 0 && tj >= 0 && (ti as usize) < self.nc && (tj as usize) < self.nr)
            .then(|| tj as usize * self.nc + ti as usize)
    }
}

/// One fine step of an edge.
#[derive(Debug, Clone, Copy)]
struct FineStep {
    /// The cell it starts in and its attitude.
    pose: Pose,
    energy_j: f64,
    time_s: f64,
    /// The cell it ends in.
    to: usize,
}

type Edge = Result<Box<[FineStep]>, Blocked>;

/// A rover at a node at a time with its energy state.
#[derive(Debug, Clone, Copy)]
struct Label {
    walk: Walk,
    node: u32,
    parent: u32,
    /// The edge slot that brought it, [`WAIT`] or [`START`].
    how: u8,
    alive: bool,
    /// Edge index (node · SLOTS + slot) of the last drive (u32::MAX: none yet).
    in_edge: u32,
    /// Which start label its chain began at (an index into the search's starts: the
    /// arrival of the previous leg it continues).
    origin: u32,
}

struct Search<'p, 'w, 's, 'a, M: StepModel + ?Sized> {
    planner: &'p Planner<'p, M>,
    /// The planner's step table, built once ([`Planner::geometry_in`]).
    steps: StepTable,
    lat: Lattice,
    walker: &'w Walker<'s, 'a>,
    settings: SunAwareSettings,
    edges: Vec<Option<Edge>>,
    /// Lower bound of the driving time to the goal, per node (goal last).
    h: Vec<f64>,
    labels: Vec<Label>,
    /// Pareto fronts by node · buckets + bucket (only the pairs reached take memory).
    fronts: std::collections::HashMap<usize, Vec<u32>>,
    buckets: usize,
    heap: BinaryHeap<Reverse<(u64, u32)>>,
    /// Panel output of waits: (arrival edge, node, step after the bucket, origin for a
    /// label without an arrival edge) → per step.
    wait_cache: std::collections::HashMap<(u32, u32, u32, u32), std::rc::Rc<[f64]>>,
    /// The nodes the search may use (None: all).
    allowed: Option<Vec<bool>>,
    /// The attitude the rover has at the leg's start, per start label (for waits there
    /// before its first drive).
    start_att: Vec<Attitude>,
    /// What happens at the leg's end.
    end: LegEnd,
    /// Whether the leg's arrival front is wanted, or the objective's best arrival.
    want: Want,
    /// The search's time horizon: the deadline less a lower bound of the time the later
    /// legs need (their driving and payload runs), seconds after the run's start.
    horizon_s: f64,
    /// The arrival front by time bucket (with [`Want::Front`]).
    arrivals: std::collections::HashMap<usize, Vec<u32>>,
    /// The earliest arrival with a full pack, seconds (with [`Want::Front`]).
    full_at: Option<f64>,
    stats: SearchStats,
}

/// What a leg's search returns.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Want {
    /// The best arrival by the objective (the final leg).
    Best,
    /// Every arrival no other arrival of its time bucket dominates (a leg before the
    /// last: the next leg starts from all of them).
    Front,
}

impl<'p, 'w, 's, 'a, M: StepModel + ?Sized> Search<'p, 'w, 's, 'a, M> {
    fn new(
        planner: &'p Planner<'p, M>,
        lat: Lattice,
        walker: &'w Walker<'s, 'a>,
        settings: &SunAwareSettings,
    ) -> Self {
        let g = lat.goal_cell;
        let zg = planner.dem.data()[g] as f64;
        let h = (0..=lat.nodes())
            .map(|n| {
                let c = lat.cell(n);
                let dz = zg - planner.dem.data()[c] as f64;
                let d = planner.distance_m(c, g);
                if d > 0.0 && dz.is_finite() {
                    planner.model.time_lower_bound_s(d, dz)
                } else {
                    0.0
                }
            })
            .collect();
        let buckets = (walker.clock.horizon_s() / settings.bucket_s).ceil() as usize + 1;
        Search {
            planner,
            steps: planner.step_table(),
            lat,
            walker,
            settings: *settings,
            edges: vec![None; lat.nodes() * SLOTS],
            h,
            labels: Vec::new(),
            fronts: Default::default(),
            buckets,
            heap: BinaryHeap::new(),
            wait_cache: Default::default(),
            allowed: None,
            start_att: Vec::new(),
            end: LegEnd::Arrive,
            want: Want::Best,
            horizon_s: walker.clock.horizon_s(),
            arrivals: Default::default(),
            full_at: None,
            stats: SearchStats {
                nodes: lat.nodes(),
                label_bytes: std::mem::size_of::<Label>(),
                ..SearchStats::default()
            },
        }
    }

    /// The fine path from cell `a` to cell `b`, diagonal first, each step checked.
    fn fine_path(&self, a: usize, b: usize) -> Edge {
        let w = self.lat.w;
        let mut out = Vec::new();
        let mut at = a;
        while at != b {
            let dc = ((b % w) as i64 - (at % w) as i64).signum() as i32;
            let dr = ((b / w) as i64 - (at / w) as i64).signum() as i32;
            let dir = DIRECTIONS[..8]
                .iter()
                .position(|&o| o == (dc, dr))
                .expect("a unit offset is one of the 8 directions");
            let step = self.planner.geometry_in(&self.steps, at, dir)?;
            let e = self.planner.model.step(&step)?;
            out.push(FineStep {
                pose: Pose {
                    col: at % w,
                    row: at / w,
                    att: Attitude {
                        heading_rad: step.heading_rad,
                        pitch_rad: step.pitch_rad(),
                        roll_rad: step.roll_rad(),
                    },
                },
                energy_j: e.energy_j,
                time_s: e.time_s,
                to: step.to,
            });
            at = step.to;
        }
        Ok(out.into_boxed_slice())
    }

    /// The node the edge in `slot` leads to, if it is inside the lattice and allowed.
    fn target(&self, node: usize, slot: u8) -> Option<usize> {
        let t = self.lat.target(node, slot)?;
        match &self.allowed {
            Some(a) if t < a.len() && !a[t] => None,
            _ => Some(t),
        }
    }

    /// Makes the edge in `slot` out of `node` (once); its index, or None when the slot
    /// has no edge.
    fn edge(&mut self, node: usize, slot: u8) -> Option<usize> {
        let target = self.target(node, slot)?;
        let idx = node * SLOTS + slot as usize;
        if self.edges[idx].is_none() {
            let e = self.fine_path(self.lat.cell(node), self.lat.cell(target));
            if let Err(why) = e {
                count(&mut self.stats.edges_blocked, why);
            }
            self.edges[idx] = Some(e);
        }
        Some(idx)
    }

    /// Whether the goal can be reached on the lattice at all (tilt and cell blocks).
    fn reachable(&mut self) -> Result<(), SunAwareError> {
        let n = self.lat.nodes();
        let mut seen = vec![false; n + 1];
        let s = self.lat.node_of(self.lat.start_cell);
        seen[s] = true;
        let mut stack = vec![s];
        while let Some(u) = stack.pop() {
            for slot in 0..SLOTS as u8 {
                let ok = self
                    .edge(u, slot)
                    .is_some_and(|e| matches!(self.edges[e], Some(Ok(_))));
                if let (true, Some(v)) = (ok, self.target(u, slot)) {
                    if !seen[v] {
                        seen[v] = true;
                        if v != self.lat.goal() {
                            stack.push(v);
                        }
                    }
                }
            }
        }
        if seen[self.lat.goal()] {
            return Ok(());
        }
        let mut why = self.stats.edges_blocked.clone();
        why.sort_by_key(|b| Reverse(b.1));
        let list: Vec<String> = why
            .iter()
            .map(|(b, k)| format!("{} ({k} edges)", b.describe()))
            .collect();
        Err(self.no_plan(
            Bound::Tilt,
            format!(
                "the goal cannot be reached on the {}-cell lattice at any time: edges are \
                 closed by {}; {}",
                self.lat.b,
                if list.is_empty() {
                    "the grid's edge".to_string()
                } else {
                    list.join(", ")
                },
                if self.lat.b == 1 {
                    "the fine grid's 8 neighbours have no way there either: check the tilt \
                     limits, the keep-out and no-data cells, or move the point"
                } else {
                    "try a smaller block (block_cells) or check the tilt limits"
                }
            ),
        ))
    }

    fn no_plan(&self, bound: Bound, detail: String) -> SunAwareError {
        SunAwareError::NoPlan {
            leg: None,
            bound,
            detail,
            stats: Box::new(self.stats.clone()),
        }
    }

    /// The attitude a label's rover has while it waits: that of its last fine step.
    fn arrival_pose(&self, l: &Label) -> Pose {
        let cell = self.lat.cell(l.node as usize);
        let start = self.start_att[l.origin as usize];
        let att = match self.edges.get(l.in_edge as usize) {
            Some(Some(Ok(steps))) => steps.last().map_or(start, |f| f.pose.att),
            _ => start,
        };
        Pose {
            col: cell % self.lat.w,
            row: cell / self.lat.w,
            att,
        }
    }

    /// The panel output of the steps of the bucket that ends at `until` for a rover
    /// waiting like `l` (same node, same arrival attitude), from the cache.
    fn wait_panels(&mut self, l: &Label, pose: &Pose, until: f64) -> (std::rc::Rc<[f64]>, usize) {
        let per = (self.settings.bucket_s / self.walker.setup.step_s).round() as usize;
        // The wait closes the boundaries from the bucket's start (at the earliest) to
        // before its end: steps from one before the bucket's first to one before `last`.
        let last = self.walker.step_of(until);
        let k0 = last.saturating_sub(per + 1);
        // Labels that have not driven yet wait with their own start's attitude.
        let origin = if l.in_edge == u32::MAX { l.origin } else { 0 };
        let key = (l.in_edge, l.node, last as u32, origin);
        if let Some(g) = self.wait_cache.get(&key) {
            return (g.clone(), k0);
        }
        let g: std::rc::Rc<[f64]> = self.walker.panel_series_w(pose, k0, last).into();
        self.wait_cache.insert(key, g.clone());
        (g, k0)
    }

    fn push(&mut self, l: Label) {
        let idx = self.labels.len() as u32;
        let key = l.walk.t_s + self.h[l.node as usize];
        self.labels.push(l);
        self.stats.labels_created += 1;
        self.heap.push(Reverse((key.to_bits(), idx)));
    }

    /// Admits `l` into the front of its (node, bucket) unless a label there dominates
    /// it; removes the labels it dominates. A label that cannot reach the leg's end
    /// before the horizon (its time plus the lower bound of the driving time left) is
    /// refused first: it could only lead to arrivals past the horizon, and it could only
    /// dominate labels no earlier than itself, which cannot arrive in time either.
    fn admit(&mut self, l: Label) {
        if l.walk.t_s + self.h[l.node as usize] > self.horizon_s + ROUNDING_S {
            self.stats.cut_horizon += 1;
            return;
        }
        let b = ((l.walk.t_s / self.settings.bucket_s) as usize).min(self.buckets - 1);
        let key = l.node as usize * self.buckets + b;
        let front = self.fronts.entry(key).or_default();
        let eps = self.settings.soc_resolution;
        let Some(beaten) = pareto_insert(front, &mut self.labels, &l, eps) else {
            self.stats.labels_dominated += 1;
            return;
        };
        self.stats.labels_dominated += beaten;
        self.push(l);
    }

    fn cut(&mut self, h: Halt) {
        match h {
            Halt::Reserve => self.stats.cut_reserve += 1,
            Halt::Horizon => self.stats.cut_horizon += 1,
            Halt::Hours => self.stats.cut_hours += 1,
        }
    }

    /// Runs the search from `starts` (every one at the leg's start cell); returns the
    /// label of the chosen arrival ([`Want::Best`]) or the arrival front's labels in the
    /// order they were made ([`Want::Front`]).
    fn run(&mut self, starts: &[LegStart]) -> Result<Vec<u32>, SunAwareError> {
        let s = self.lat.node_of(self.lat.start_cell) as u32;
        self.start_att = starts.iter().map(|x| x.att).collect();
        for (k, x) in starts.iter().enumerate() {
            self.admit(Label {
                walk: x.walk,
                node: s,
                parent: u32::MAX,
                how: START,
                alive: true,
                in_edge: u32::MAX,
                origin: k as u32,
            });
        }
        let goal = self.lat.goal() as u32;
        let mut best: Option<u32> = None;
        while let Some(Reverse((_, i))) = self.heap.pop() {
            let l = self.labels[i as usize];
            if !l.alive {
                continue;
            }
            if l.node == goal {
                self.stats.complete = true;
                return Ok(vec![i]);
            }
            // A full arrival cannot be beaten by a later one.
            if let Some(t_full) = self.full_arrival(best) {
                if l.walk.t_s + self.h[l.node as usize] >= t_full {
                    self.stats.complete = true;
                    return self.chosen(best).ok_or_else(|| self.exhausted_error());
                }
            }
            if self.labels.len() >= self.settings.max_labels {
                self.stats.complete = false;
                return self.chosen(best).ok_or_else(|| self.budget_error());
            }
            self.stats.labels_expanded += 1;
            self.expand(i, &l, &mut best);
        }
        self.stats.complete = true;
        self.chosen(best).ok_or_else(|| self.exhausted_error())
    }

    /// The time of the earliest full-pack arrival found so far (`best`: the objective's
    /// best arrival, with [`Want::Best`]).
    fn full_arrival(&self, best: Option<u32>) -> Option<f64> {
        match self.want {
            Want::Front => self.full_at,
            Want::Best => best
                .map(|b| &self.labels[b as usize].walk)
                .filter(|o| o.pack.soc >= FULL_SOC)
                .map(|o| o.t_s),
        }
    }

    /// The search's answer so far: the best arrival, or the arrival front (None when
    /// empty).
    fn chosen(&self, best: Option<u32>) -> Option<Vec<u32>> {
        match self.want {
            Want::Best => best.map(|b| vec![b]),
            Want::Front => {
                let mut front: Vec<u32> = self.arrivals.values().flatten().copied().collect();
                front.sort_unstable();
                (!front.is_empty()).then_some(front)
            }
        }
    }

    /// Admits an arrival into the leg's arrival front unless an arrival of the same
    /// time bucket dominates it (the rule of [`Self::admit`]); removes those it
    /// dominates.
    fn admit_arrival(&mut self, l: Label) {
        let b = (l.walk.t_s / self.settings.bucket_s) as usize;
        let (t, soc) = (l.walk.t_s, l.walk.pack.soc);
        let eps = self.settings.soc_resolution;
        let front = self.arrivals.entry(b).or_default();
        let Some(beaten) = pareto_insert(front, &mut self.labels, &l, eps) else {
            self.stats.labels_dominated += 1;
            return;
        };
        self.stats.labels_dominated += beaten;
        if soc >= FULL_SOC {
            self.full_at = Some(self.full_at.map_or(t, |f| f.min(t)));
        }
        self.labels.push(Label { alive: false, ..l });
        self.stats.labels_created += 1;
    }

    fn expand(&mut self, i: u32, l: &Label, best: &mut Option<u32>) {
        let horizon = self.horizon_s;
        // Wait until the next bucket boundary.
        let until = ((l.walk.t_s / self.settings.bucket_s).floor() + 1.0) * self.settings.bucket_s;
        if until + self.h[l.node as usize] > horizon {
            self.stats.cut_horizon += 1;
        } else {
            let mut w = l.walk;
            let pose = self.arrival_pose(l);
            let (panels, k0) = self.wait_panels(l, &pose, until);
            match self
                .walker
                .hold(&mut w, &pose, until, None, Some((&panels, k0)))
            {
                Ok(()) => self.admit(Label {
                    walk: w,
                    parent: i,
                    how: WAIT,
                    ..*l
                }),
                Err(h) => self.cut(h),
            }
        }
        // Drive along each edge.
        let node = l.node as usize;
        for slot in 0..SLOTS as u8 {
            let Some(target) = self.target(node, slot) else {
                continue;
            };
            if l.walk.t_s + self.h[target] > horizon {
                self.stats.cut_horizon += 1;
                continue;
            }
            let Some(e) = self.edge(node, slot) else {
                continue;
            };
            let Some(Ok(steps)) = &self.edges[e] else {
                continue;
            };
            let mut w = l.walk;
            let mut res = Ok(());
            for f in steps.iter() {
                res = self
                    .walker
                    .drive(&mut w, &f.pose, f.energy_j, f.time_s, None);
                if res.is_err() {
                    break;
                }
            }
            let last_att = steps.last().map(|f| f.pose.att).unwrap_or_default();
            if res.is_ok() && slot == GOAL_SLOT {
                let g = self.lat.goal_cell;
                let pose = Pose {
                    col: g % self.lat.w,
                    row: g / self.lat.w,
                    att: last_att,
                };
                match self.end {
                    LegEnd::Arrive => {
                        let mut arrived = w;
                        res = self.walker.arrive(&mut arrived, &pose, None);
                        // The label keeps the arrival time (before the closing step)
                        // and the state after it.
                        arrived.t_s = w.t_s;
                        w = arrived;
                    }
                    // The label is the state after the payload run, at its end.
                    LegEnd::Visit(p) => res = self.walker.visit(&mut w, &pose, p, None),
                    LegEnd::Pass => {}
                }
            }
            if res.is_ok() && slot == GOAL_SLOT && w.t_s > horizon {
                // Too late for the later legs to arrive before the deadline.
                res = Err(Halt::Horizon);
            }
            if let Err(h) = res {
                self.cut(h);
                continue;
            }
            let new = Label {
                walk: w,
                node: target as u32,
                parent: i,
                how: slot,
                alive: true,
                in_edge: (node * SLOTS + slot as usize) as u32,
                origin: l.origin,
            };
            if slot != GOAL_SLOT {
                self.admit(new);
                continue;
            }
            match (self.want, self.settings.objective) {
                (Want::Front, _) => self.admit_arrival(new),
                (Want::Best, SunAwareObjective::EarliestArrival) => self.push(new),
                (Want::Best, SunAwareObjective::MostCharge) => {
                    let idx = self.labels.len() as u32;
                    let better = best.is_none_or(|b| {
                        let o = &self.labels[b as usize].walk;
                        (w.pack.soc, -w.t_s) > (o.pack.soc, -o.t_s)
                    });
                    self.labels.push(Label {
                        alive: false,
                        ..new
                    });
                    self.stats.labels_created += 1;
                    if better {
                        *best = Some(idx);
                    }
                }
            }
        }
    }

    fn budget_error(&self) -> SunAwareError {
        self.no_plan(
            Bound::LabelBudget,
            format!(
                "the label budget of {} labels ({} MB) ran out after {} expansions before \
                 any arrival; raise the budget, use larger blocks or longer buckets",
                self.settings.max_labels,
                self.settings.max_labels * self.stats.label_bytes / 1_000_000,
                self.stats.labels_expanded
            ),
        )
    }

    fn exhausted_error(&self) -> SunAwareError {
        let st = &self.stats;
        let (bound, what) = if st.cut_reserve > 0 && st.cut_horizon == 0 {
            (
                Bound::Reserve,
                "every way falls below the reserve state of charge".to_string(),
            )
        } else if st.cut_reserve == 0 {
            (
                Bound::Horizon,
                "no way arrives before the deadline".to_string(),
            )
        } else {
            let bound = if st.cut_reserve >= st.cut_horizon {
                Bound::Reserve
            } else {
                Bound::Horizon
            };
            (
                bound,
                "the ways that keep the reserve do not arrive before the deadline".to_string(),
            )
        };
        self.no_plan(
            bound,
            format!(
                "{what} ({} moves ran below the reserve, {} could not arrive before the \
                 deadline of {:.1} h, {} drives fell outside the driving hours, {} labels \
                 expanded); a larger battery or panels, an earlier start, a later deadline \
                 or longer driving hours may help",
                st.cut_reserve,
                st.cut_horizon,
                self.walker.clock.horizon_s() / 3600.0,
                st.cut_hours,
                st.labels_expanded
            ),
        )
    }

    /// The leg plan of arrival label `found` (of a search from `starts`), replayed
    /// through the step arithmetic from its start, which must end in the label's state.
    fn leg_plan(&self, found: u32, starts: &[LegStart]) -> Result<LegPlan, SunAwareError> {
        let mut chain = Vec::new();
        let mut i = found;
        while i != u32::MAX {
            chain.push(i);
            i = self.labels[i as usize].parent;
        }
        chain.reverse();
        let mut cells = vec![self.lat.start_cell];
        let mut holds: Vec<Hold> = Vec::new();
        for &i in &chain[1..] {
            let l = self.labels[i as usize];
            if l.how == WAIT {
                let row = cells.len() - 1;
                match holds.last_mut() {
                    Some(h) if h.row == row => h.until_s = l.walk.t_s,
                    _ => holds.push(Hold {
                        row,
                        until_s: l.walk.t_s,
                    }),
                }
            } else if let Some(Some(Ok(steps))) = self.edges.get(l.in_edge as usize) {
                cells.extend(steps.iter().map(|f| f.to));
            }
        }
        let label = self.labels[found as usize];
        let from = &starts[label.origin as usize];
        let route = route_along(self.planner, &cells, self.stats.labels_expanded);
        let replay = walk_plan(
            self.walker,
            &route,
            &holds,
            &[],
            from.walk,
            from.att,
            self.end,
        );
        let exact = |r: &(Walk, Ledger, f64)| {
            let (w, o) = (&r.0, &label.walk);
            let t_ok = self.end == LegEnd::Arrive || (w.t_s - o.t_s).abs() < 1e-6;
            t_ok && (w.pack.soc - o.pack.soc).abs() < 1e-9 && (w.min_soc - o.min_soc).abs() < 1e-9
        };
        let (end, _, arrival_s) = match replay {
            Ok(r) if exact(&r) => r,
            other => {
                return Err(SimError::Stage(format!(
                    "the sun-aware plan did not replay through the step arithmetic ({:?}); \
                     please report this mission to the sunward developers",
                    other.map(|r| r.0.pack.soc)
                ))
                .into())
            }
        };
        let last = route.profile.last().expect("a leg has rows");
        Ok(LegPlan {
            cells,
            holds,
            arrival_s,
            end,
            end_att: Attitude {
                heading_rad: last.heading_rad,
                pitch_rad: last.pitch_rad,
                roll_rad: last.roll_rad,
            },
            origin: label.origin as usize,
        })
    }
}

/// Whether (t_a, SOC_a) dominates (t_b, SOC_b) by the search's rule: no later, and
/// at most `eps` less charge.
fn dominates(t_a: f64, soc_a: f64, t_b: f64, soc_b: f64, eps: f64) -> bool {
    t_a <= t_b && soc_a + eps >= soc_b
}

/// Inserts label `l` (to be stored next, at index `labels.len()`) into the Pareto
/// `front` of label indices by [`dominates`]: None when a member dominates it;
/// otherwise the members it dominates leave the front and are marked dead, and the
/// number of them is returned.
fn pareto_insert(front: &mut Vec<u32>, labels: &mut [Label], l: &Label, eps: f64) -> Option<u64> {
    let (t, soc) = (l.walk.t_s, l.walk.pack.soc);
    if front.iter().any(|&i| {
        let o = &labels[i as usize].walk;
        dominates(o.t_s, o.pack.soc, t, soc, eps)
    }) {
        return None;
    }
    let before = front.len();
    front.retain(|&i| {
        let o = &mut labels[i as usize];
        let beaten = dominates(t, soc, o.walk.t_s, o.walk.pack.soc, eps);
        if beaten {
            o.alive = false;
        }
        !beaten
    });
    front.push(labels.len() as u32);
    Some((before + 1 - front.len()) as u64)
}

/// Walks a route with holds and payload stops through the step arithmetic from `w0`
/// (the rover at the route's first row with attitude `att0`), ending as `end` says: the
/// final state, the ledger and the arrival time at the last row (seconds after the run's
/// start). At a row the payload runs come first, then the hold, then the drive on.
fn walk_plan(
    walker: &Walker<'_, '_>,
    route: &Route,
    holds: &[Hold],
    stops: &[Stop],
    w0: Walk,
    att0: Attitude,
    end: LegEnd,
) -> Result<(Walk, Ledger, f64), Halt> {
    let p = &route.profile;
    let pose = |r: usize, a: usize| Pose {
        col: p[r].col,
        row: p[r].row,
        att: if a == 0 {
            att0
        } else {
            Attitude {
                heading_rad: p[a].heading_rad,
                pitch_rad: p[a].pitch_rad,
                roll_rad: p[a].roll_rad,
            }
        },
    };
    let mut w = w0;
    let mut ledger = Ledger::default();
    let mut next_hold = holds.iter().peekable();
    let mut next_stop = stops.iter().peekable();
    for i in 0..p.len() {
        while let Some(s) = next_stop.next_if(|s| s.row == i) {
            walker.visit(&mut w, &pose(i, i), s.duration_s, Some(&mut ledger))?;
        }
        while let Some(h) = next_hold.next_if(|h| h.row == i) {
            walker.hold(&mut w, &pose(i, i), h.until_s, Some(&mut ledger), None)?;
        }
        if let Some(row) = p.get(i + 1) {
            let (e, t) = (row.step_energy_j, row.step_time_s);
            walker.drive(&mut w, &pose(i, i + 1), e, t, Some(&mut ledger))?;
        }
    }
    let arrival = w.t_s;
    let last = p.len() - 1;
    match end {
        LegEnd::Arrive => walker.arrive(&mut w, &pose(last, last), Some(&mut ledger))?,
        LegEnd::Visit(s) => walker.visit(&mut w, &pose(last, last), s, Some(&mut ledger))?,
        LegEnd::Pass => {}
    }
    Ok((w, ledger, arrival))
}

fn count(v: &mut Vec<(Blocked, u64)>, why: Blocked) {
    match v.iter_mut().find(|(b, _)| *b == why) {
        Some(e) => e.1 += 1,
        None => v.push((why, 1)),
    }
}
