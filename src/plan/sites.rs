//! Site ordering: visit every science site once and come back to base, at least cost.
//!
//! # Problem
//! An asymmetric travelling-salesman tour. Node 0 is the base, nodes 1..n−1 are sites;
//! the cost of the leg i → j is what the route planner found from i to j (energy, time or
//! distance, whatever its objective was). Legs may differ by direction (uphill costs more
//! than downhill) and may be missing: a leg that has no edge in the [`SiteGraph`], or whose
//! cost is +∞, cannot be driven. A tour uses each site exactly once and only the legs
//! given; it does not route through other sites (the planner's leg costs already are
//! shortest paths over the terrain).
//!
//! # Methods
//! - Exact, up to [`OrderOptions::exact_max_sites`] sites (default 10): Held–Karp
//!   dynamic programming over subsets (M. Held and R. M. Karp, "A dynamic programming
//!   approach to sequencing problems", J. SIAM 10(1), 196–210, 1962; also R. Bellman,
//!   J. ACM 9(1), 61–63, 1962):
//!   `C(S, j) = min over i in S∖{j} of C(S∖{j}, i) + c(i, j)`, `C({j}, j) = c(0, j)`,
//!   tour cost `min over j of C(all, j) + c(j, 0)`. Time O(2^m m²), memory O(2^m m) for
//!   m sites: 10 sites take about 10⁵ steps, 16 sites about 1.7·10⁷ steps and 18 MB.
//! - Beyond: nearest insertion (D. J. Rosenkrantz, R. E. Stearns and P. M. Lewis,
//!   "An analysis of several heuristics for the traveling salesman problem", SIAM J.
//!   Comput. 6(3), 563–581, 1977), adapted to direction: the site closest to the tour in
//!   either direction is inserted where it adds the least directed cost; then local search
//!   to a local optimum under 2-opt (G. A. Croes, Oper. Res. 6(6), 791–812, 1958: reverse a
//!   stretch, re-costing the reversed legs in their new direction) and Or-opt (I. Or,
//!   PhD thesis, Northwestern University, 1976: move a run of 1–3 sites elsewhere, in the
//!   same or the reversed direction). Then iterated local search: a double-bridge kick
//!   (cut the tour in four and reconnect A C B D, which reverses nothing) followed by the
//!   same local search, kept when it improves (O. Martin, S. W. Otto and E. W. Felten,
//!   "Large-step Markov chains for the traveling salesman problem", Complex Systems 5(3),
//!   299–326, 1991), [`OrderOptions::kicks`] times.
//!
//! Missing legs are counted, not summed: a tour is compared first by how many missing legs
//! it uses, then by its cost. The heuristic can thus start from a tour with missing legs
//! and repair it; a tour that still needs one is reported as [`SiteError::NoTour`].
//!
//! # Units
//! Leg costs and the tour cost are in the unit of the leg-cost matrix (Wh, s or m as the
//! planner's objective); costs may be negative (regeneration) but not NaN or −∞.
//!
//! # Limits
//! The heuristic has no guarantee: on random 8–10-site instances its measured gap to the
//! optimum is reported in tests/plan_sites.rs. Leg costs are taken as fixed: the cost of
//! a leg does not depend on the time of day or on the state of charge when it is driven.

use petgraph::graph::{DiGraph, NodeIndex};
use petgraph::visit::{Dfs, EdgeFiltered, EdgeRef, Reversed};

/// Default largest number of sites solved exactly: Held–Karp on 10 sites is about 10⁵
/// steps, well under a millisecond, and the heuristic is exact-enough-but-unproven
/// beyond. Common practice for exact subset DP is up to ~20 nodes; 10 keeps the
/// guarantee where it costs nothing.
pub const DEFAULT_EXACT_MAX_SITES: usize = 10;

/// Hard ceiling for [`OrderOptions::exact_max_sites`]: 2^16 · 16 table entries of
/// 17 bytes (18 MB, about 1.7·10⁷ steps) is the most this module will allocate.
pub const EXACT_MAX_SITES_LIMIT: usize = 16;

/// A site (or the base) in the [`SiteGraph`].
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct SiteNode {
    /// Name used in messages ("base", "site 3", or the mission's name for it).
    pub name: String,
}

/// The site graph: node index 0 is the base, the others are sites; edge weights are leg
/// costs. A missing edge, or one weighing +∞, is a leg that cannot be driven. Parallel
/// edges are allowed; the cheapest counts.
pub type SiteGraph = DiGraph<SiteNode, f64>;

/// How the order was found.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Method {
    /// Held–Karp dynamic programming: the optimum.
    HeldKarp,
    /// Nearest insertion, then 2-opt and Or-opt to a local optimum: no guarantee.
    InsertionLocalSearch,
}

/// Options of [`order_sites`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct OrderOptions {
    /// Largest number of sites solved exactly (default [`DEFAULT_EXACT_MAX_SITES`], at most
    /// [`EXACT_MAX_SITES_LIMIT`]); more sites use the heuristic.
    pub exact_max_sites: usize,
    /// Rounds of iterated local search after the first local optimum (default
    /// [`DEFAULT_KICKS`]); 0 keeps the first local optimum.
    pub kicks: usize,
}

/// Default rounds of iterated local search: see the gap figures measured in
/// tests/plan_sites.rs. Each round costs one local search, O(m²) per pass for m sites,
/// so 60 sites take well under a second in a release build.
pub const DEFAULT_KICKS: usize = 200;

impl Default for OrderOptions {
    fn default() -> Self {
        OrderOptions {
            exact_max_sites: DEFAULT_EXACT_MAX_SITES,
            kicks: DEFAULT_KICKS,
        }
    }
}

/// A tour from base through every site and back.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Tour {
    /// Node indices in visiting order, starting and ending with 0 (the base).
    pub order: Vec<usize>,
    /// Sum of the leg costs, in the matrix's unit.
    pub cost: f64,
    /// How the order was found.
    pub method: Method,
}

/// Why no order could be given.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SiteError {
    /// No base.
    #[error(
        "the leg-cost matrix is empty: there is no base. Fix: give at least the base \
         (index 0) and the sites to visit"
    )]
    Empty,
    /// A matrix row has the wrong length.
    #[error(
        "the leg-cost matrix is not square: row {row} has {len} entries, expected {n}. \
         Fix: give one cost per destination in every row (f64::INFINITY where a leg is \
         impossible)"
    )]
    NotSquare {
        /// The row.
        row: usize,
        /// Its length.
        len: usize,
        /// The number of rows.
        n: usize,
    },
    /// A leg cost is NaN or −∞.
    #[error(
        "the cost of the leg {from} → {to} is {value}: expected a finite number, or +∞ \
         for a leg that cannot be driven. Fix: check the route planner's result for this leg"
    )]
    BadCost {
        /// Start of the leg.
        from: String,
        /// End of the leg.
        to: String,
        /// The value.
        value: f64,
    },
    /// A site that no sequence of legs reaches from the base.
    #[error(
        "{site} cannot be reached from the base: every leg into it is missing or infinite. \
         Fix: drop the site, move it, or relax the limits that block the way there"
    )]
    UnreachableFromBase {
        /// Node index.
        index: usize,
        /// Its name.
        site: String,
    },
    /// A site from which no sequence of legs leads back to the base.
    #[error(
        "there is no way back to the base from {site}: every leg out of it is missing or \
         infinite. Fix: drop the site, move it, or relax the limits that block the way back"
    )]
    NoWayBack {
        /// Node index.
        index: usize,
        /// Its name.
        site: String,
    },
    /// Every site can be reached and left, but no tour visits each once with given legs.
    #[error(
        "no tour visits every site once using only drivable legs (the best found still \
         needs the missing leg {from} → {to}). Fix: allow that leg, or split the sites \
         into several sorties"
    )]
    NoTour {
        /// Start of a missing leg the best tour needs.
        from: String,
        /// End of it.
        to: String,
    },
    /// An option out of range.
    #[error("invalid option {name} = {value}: {expected}")]
    Option {
        /// The option.
        name: &'static str,
        /// Its value.
        value: String,
        /// The valid range.
        expected: &'static str,
    },
}

/// Default node name: "base" for 0, "site i" otherwise.
pub fn default_name(index: usize) -> String {
    if index == 0 {
        "base".to_string()
    } else {
        format!("site {index}")
    }
}

/// Builds the site graph from a square leg-cost matrix (`costs[i][j]` = leg i → j; the
/// diagonal is ignored; +∞ = no edge). `names`, when given, names the nodes in messages.
pub fn graph_from_matrix(
    costs: &[Vec<f64>],
    names: Option<&[String]>,
) -> Result<SiteGraph, SiteError> {
    let n = costs.len();
    if n == 0 {
        return Err(SiteError::Empty);
    }
    let name = |i: usize| {
        names
            .and_then(|v| v.get(i).cloned())
            .unwrap_or_else(|| default_name(i))
    };
    let mut g = SiteGraph::with_capacity(n, n * n);
    for i in 0..n {
        g.add_node(SiteNode { name: name(i) });
    }
    for (i, row) in costs.iter().enumerate() {
        if row.len() != n {
            return Err(SiteError::NotSquare {
                row: i,
                len: row.len(),
                n,
            });
        }
        for (j, &c) in row.iter().enumerate() {
            if i != j && c != f64::INFINITY {
                g.add_edge(NodeIndex::new(i), NodeIndex::new(j), c);
            }
        }
    }
    check_costs(&g)?;
    Ok(g)
}

fn check_costs(g: &SiteGraph) -> Result<(), SiteError> {
    for e in g.edge_references() {
        let c = *e.weight();
        if c.is_nan() || c == f64::NEG_INFINITY {
            return Err(SiteError::BadCost {
                from: g[e.source()].name.clone(),
                to: g[e.target()].name.clone(),
                value: c,
            });
        }
    }
    Ok(())
}

/// Dense leg costs taken from a site graph: +∞ where there is no edge.
#[derive(Debug, Clone, PartialEq)]
pub struct LegCosts {
    n: usize,
    cost: Vec<f64>,
}

impl LegCosts {
    /// The cheapest edge i → j of the graph for every pair (+∞ where none).
    pub fn from_graph(g: &SiteGraph) -> LegCosts {
        let n = g.node_count();
        let mut cost = vec![f64::INFINITY; n * n];
        // Staying put costs nothing (the tour of a base alone is [0, 0]).
        for i in 0..n {
            cost[i * n + i] = 0.0;
        }
        for e in g.edge_references() {
            let (i, j) = (e.source().index(), e.target().index());
            if i != j {
                let c = &mut cost[i * n + j];
                *c = c.min(*e.weight());
            }
        }
        LegCosts { n, cost }
    }

    /// Number of nodes (base + sites).
    pub fn len(&self) -> usize {
        self.n
    }

    /// True when there is not even a base.
    pub fn is_empty(&self) -> bool {
        self.n == 0
    }

    /// Cost of the leg i → j (+∞ when it cannot be driven; 0 for i = j).
    #[inline]
    pub fn get(&self, i: usize, j: usize) -> f64 {
        self.cost[i * self.n + j]
    }

    /// Sum of the legs of a closed order (the first and last entries are the base).
    pub fn tour_cost(&self, order: &[usize]) -> f64 {
        order.windows(2).map(|w| self.get(w[0], w[1])).sum()
    }
}

/// Checks that every site can be reached from the base and can reach it, through the
/// graph's finite edges.
pub fn check_reachable(g: &SiteGraph) -> Result<(), SiteError> {
    if g.node_count() == 0 {
        return Err(SiteError::Empty);
    }
    let finite = EdgeFiltered::from_fn(g, |e| e.weight().is_finite());
    let base = NodeIndex::new(0);
    let forward = reached(&finite, base, g.node_count());
    if let Some(i) = forward.iter().position(|r| !r) {
        return Err(SiteError::UnreachableFromBase {
            index: i,
            site: g[NodeIndex::new(i)].name.clone(),
        });
    }
    let back = reached(Reversed(&finite), base, g.node_count());
    if let Some(i) = back.iter().position(|r| !r) {
        return Err(SiteError::NoWayBack {
            index: i,
            site: g[NodeIndex::new(i)].name.clone(),
        });
    }
    Ok(())
}

fn reached<G>(graph: G, start: NodeIndex, n: usize) -> Vec<bool>
where
    G: petgraph::visit::IntoNeighbors<NodeId = NodeIndex> + petgraph::visit::Visitable,
{
    let mut seen = vec![false; n];
    let mut dfs = Dfs::new(graph, start);
    while let Some(v) = dfs.next(graph) {
        seen[v.index()] = true;
    }
    seen
}

/// Orders the sites of `g`: exact for up to `options.exact_max_sites` sites, heuristic
/// beyond. Errors name a site that cannot be reached or left, or a leg the tour would need.
pub fn order_sites(g: &SiteGraph, options: &OrderOptions) -> Result<Tour, SiteError> {
    if options.exact_max_sites > EXACT_MAX_SITES_LIMIT {
        return Err(too_many_for_exact(options.exact_max_sites));
    }
    check_costs(g)?;
    check_reachable(g)?;
    let legs = LegCosts::from_graph(g);
    let tour = if legs.len() - 1 <= options.exact_max_sites {
        held_karp(&legs)?
    } else {
        insertion_local_search(&legs, options.kicks)
    };
    if let Some(w) = tour
        .order
        .windows(2)
        .find(|w| legs.get(w[0], w[1]).is_infinite())
    {
        return Err(SiteError::NoTour {
            from: g[NodeIndex::new(w[0])].name.clone(),
            to: g[NodeIndex::new(w[1])].name.clone(),
        });
    }
    Ok(tour)
}

/// A tour's weight for comparisons: missing legs first, then the finite cost.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Weight {
    missing: i64,
    cost: f64,
}

impl Weight {
    const ZERO: Weight = Weight {
        missing: 0,
        cost: 0.0,
    };

    fn leg(c: f64) -> Weight {
        if c.is_finite() {
            Weight {
                missing: 0,
                cost: c,
            }
        } else {
            Weight {
                missing: 1,
                cost: 0.0,
            }
        }
    }

    fn plus(self, o: Weight) -> Weight {
        Weight {
            missing: self.missing.saturating_add(o.missing),
            cost: self.cost + o.cost,
        }
    }

    fn minus(self, o: Weight) -> Weight {
        Weight {
            missing: self.missing.saturating_sub(o.missing),
            cost: self.cost - o.cost,
        }
    }

    /// True when `self` (a change of weight) improves by more than `eps`.
    fn improves(self, eps: f64) -> bool {
        self.missing < 0 || (self.missing == 0 && self.cost < -eps)
    }

    fn less(self, o: Weight) -> bool {
        self.missing < o.missing || (self.missing == o.missing && self.cost < o.cost)
    }
}

/// Worse than any tour (more missing legs than a tour has), for initial minima.
const WORST: Weight = Weight {
    missing: i64::MAX,
    cost: 0.0,
};

/// The optimal tour by Held–Karp dynamic programming (see the module doc). A tour that
/// needs a missing leg is returned with cost +∞ when no other exists; callers check.
/// Refuses more than [`EXACT_MAX_SITES_LIMIT`] sites (its memory grows as 2^sites).
pub fn held_karp(legs: &LegCosts) -> Result<Tour, SiteError> {
    let m = legs.len().saturating_sub(1);
    if m > EXACT_MAX_SITES_LIMIT {
        return Err(too_many_for_exact(m));
    }
    if m == 0 {
        return Ok(Tour {
            order: vec![0, 0],
            cost: 0.0,
            method: Method::HeldKarp,
        });
    }
    let (table, parent) = held_karp_table(legs, m);
    let full = (1usize << m) - 1;
    let mut best = (WORST, 0usize);
    for j in 0..m {
        let w = table[full * m + j].plus(Weight::leg(legs.get(j + 1, 0)));
        if w.less(best.0) {
            best = (w, j);
        }
    }
    let order = held_karp_order(&parent, m, best.1);
    Ok(Tour {
        cost: legs.tour_cost(&order),
        order,
        method: Method::HeldKarp,
    })
}

fn too_many_for_exact(sites: usize) -> SiteError {
    SiteError::Option {
        name: "exact_max_sites",
        value: sites.to_string(),
        expected: "at most 16 (the exact method's memory grows as 2^sites)",
    }
}

/// `table[S·m + j]`: least weight from the base through the set S of sites (bit k = site
/// k+1), ending at site j+1 ∈ S; `parent` holds the site before j (u8::MAX = the base).
fn held_karp_table(legs: &LegCosts, m: usize) -> (Vec<Weight>, Vec<u8>) {
    // Entries with j outside S are never read; WORST only fills them.
    let mut table = vec![WORST; (1usize << m) * m];
    let mut parent = vec![u8::MAX; (1usize << m) * m];
    for j in 0..m {
        table[(1 << j) * m + j] = Weight::leg(legs.get(0, j + 1));
    }
    for set in 1usize..(1 << m) {
        for j in (0..m).filter(|j| set & (1 << j) != 0) {
            let rest = set & !(1 << j);
            if rest == 0 {
                continue;
            }
            let (w, p) = best_predecessor(legs, &table, m, rest, j);
            table[set * m + j] = w;
            parent[set * m + j] = p;
        }
    }
    (table, parent)
}

fn best_predecessor(
    legs: &LegCosts,
    table: &[Weight],
    m: usize,
    rest: usize,
    j: usize,
) -> (Weight, u8) {
    let mut best = (WORST, u8::MAX);
    for i in (0..m).filter(|i| rest & (1 << i) != 0) {
        let w = table[rest * m + i].plus(Weight::leg(legs.get(i + 1, j + 1)));
        if w.less(best.0) {
            best = (w, i as u8);
        }
    }
    best
}

fn held_karp_order(parent: &[u8], m: usize, last: usize) -> Vec<usize> {
    let mut order = vec![0];
    let mut set = (1usize << m) - 1;
    let mut j = last;
    loop {
        order.push(j + 1);
        let p = parent[set * m + j];
        set &= !(1 << j);
        if p == u8::MAX {
            break;
        }
        j = p as usize;
    }
    order.push(0);
    order.reverse();
    order
}

/// Relative size of an improvement that counts, so that rounding cannot cycle the search.
const IMPROVEMENT_EPS: f64 = 1e-12;

/// Nearest insertion, 2-opt and Or-opt to a local optimum, then `kicks` rounds of
/// iterated local search (see the module doc). Deterministic: the kicks come from a
/// fixed-seed generator.
pub fn insertion_local_search(legs: &LegCosts, kicks: usize) -> Tour {
    let scale = legs
        .cost
        .iter()
        .filter(|c| c.is_finite())
        .fold(0.0f64, |a, c| a.max(c.abs()));
    let eps = IMPROVEMENT_EPS * scale.max(1.0) * legs.len() as f64;
    let mut best = nearest_insertion(legs);
    local_search(legs, &mut best, eps);
    let mut best_w = tour_weight(legs, &best);
    let mut kick_rng = SplitMix64(0x05EE_D0F5_17E5);
    // A double bridge needs three cuts between four or more sites.
    let kicks = if legs.len() >= 5 { kicks } else { 0 };
    for _ in 0..kicks {
        let mut trial = double_bridge(&best, &mut kick_rng);
        local_search(legs, &mut trial, eps);
        let w = tour_weight(legs, &trial);
        if w.minus(best_w).improves(eps) {
            (best, best_w) = (trial, w);
        }
    }
    Tour {
        cost: legs.tour_cost(&best),
        order: best,
        method: Method::InsertionLocalSearch,
    }
}

/// 2-opt and Or-opt passes until neither improves.
fn local_search(legs: &LegCosts, order: &mut Vec<usize>, eps: f64) {
    // Each pass strictly improves the weight, so this ends; the cap is a safety net.
    for _ in 0..10_000 {
        if !(two_opt_pass(legs, order, eps) | or_opt_pass(legs, order, eps)) {
            break;
        }
    }
}

fn tour_weight(legs: &LegCosts, order: &[usize]) -> Weight {
    order.windows(2).fold(Weight::ZERO, |w, p| {
        w.plus(Weight::leg(legs.get(p[0], p[1])))
    })
}

/// SplitMix64 (S. Vigna, public domain): a fixed-seed source of kick positions.
struct SplitMix64(u64);

impl SplitMix64 {
    fn next_below(&mut self, bound: usize) -> usize {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        ((z ^ (z >> 31)) % bound as u64) as usize
    }
}

/// The double-bridge kick (Martin, Otto and Felten 1991): with cuts 1 ≤ p1 < p2 < p3 ≤ m
/// the sites A B C D become A C B D. No stretch is reversed, which suits one-way costs.
fn double_bridge(order: &[usize], rng: &mut SplitMix64) -> Vec<usize> {
    let m = order.len() - 2;
    let mut cuts = [0usize; 3];
    loop {
        for c in &mut cuts {
            *c = 1 + rng.next_below(m);
        }
        cuts.sort_unstable();
        if cuts[0] < cuts[1] && cuts[1] < cuts[2] {
            break;
        }
    }
    let [p1, p2, p3] = cuts;
    let mut out = Vec::with_capacity(order.len());
    out.extend_from_slice(&order[..p1]);
    out.extend_from_slice(&order[p2..p3]);
    out.extend_from_slice(&order[p1..p2]);
    out.extend_from_slice(&order[p3..]);
    out
}

/// Directed nearest insertion: repeatedly take the site closest to the tour (in either
/// direction) and insert it where it adds least.
pub fn nearest_insertion(legs: &LegCosts) -> Vec<usize> {
    let n = legs.len();
    let mut order = vec![0, 0];
    let mut closeness: Vec<Weight> = (0..n)
        .map(|s| closer(Weight::leg(legs.get(0, s)), Weight::leg(legs.get(s, 0))))
        .collect();
    let mut in_tour = vec![false; n];
    in_tour[0] = true;
    for _ in 1..n {
        let s = (1..n)
            .filter(|&s| !in_tour[s])
            .reduce(|a, b| {
                if closeness[b].less(closeness[a]) {
                    b
                } else {
                    a
                }
            })
            .expect("a site is left");
        insert_cheapest(legs, &mut order, s);
        in_tour[s] = true;
        for t in (1..n).filter(|&t| !in_tour[t]) {
            let d = closer(Weight::leg(legs.get(s, t)), Weight::leg(legs.get(t, s)));
            closeness[t] = closer(closeness[t], d);
        }
    }
    order
}

fn closer(a: Weight, b: Weight) -> Weight {
    if b.less(a) {
        b
    } else {
        a
    }
}

fn insert_cheapest(legs: &LegCosts, order: &mut Vec<usize>, s: usize) {
    let leg = |a: usize, b: usize| Weight::leg(legs.get(a, b));
    let mut best: Option<(Weight, usize)> = None;
    for k in 0..order.len() - 1 {
        let (a, b) = (order[k], order[k + 1]);
        let delta = leg(a, s).plus(leg(s, b)).minus(leg(a, b));
        if best.is_none_or(|(w, _)| delta.less(w)) {
            best = Some((delta, k + 1));
        }
    }
    let (_, at) = best.expect("the tour has a leg");
    order.insert(at, s);
}

/// Prefix sums of the tour's legs driven forward and backward.
fn prefix_weights(legs: &LegCosts, order: &[usize]) -> (Vec<Weight>, Vec<Weight>) {
    let mut fwd = vec![Weight::ZERO; order.len()];
    let mut bwd = vec![Weight::ZERO; order.len()];
    for k in 1..order.len() {
        fwd[k] = fwd[k - 1].plus(Weight::leg(legs.get(order[k - 1], order[k])));
        bwd[k] = bwd[k - 1].plus(Weight::leg(legs.get(order[k], order[k - 1])));
    }
    (fwd, bwd)
}

/// Best 2-opt move (reverse order[i..=j]); applies it and returns true if it improves.
fn two_opt_pass(legs: &LegCosts, order: &mut [usize], eps: f64) -> bool {
    let (fwd, bwd) = prefix_weights(legs, order);
    let leg = |a: usize, b: usize| Weight::leg(legs.get(a, b));
    let last = order.len() - 1;
    let mut best: Option<(Weight, usize, usize)> = None;
    for i in 1..last {
        for j in i + 1..last {
            let old = leg(order[i - 1], order[i])
                .plus(fwd[j].minus(fwd[i]))
                .plus(leg(order[j], order[j + 1]));
            let new = leg(order[i - 1], order[j])
                .plus(bwd[j].minus(bwd[i]))
                .plus(leg(order[i], order[j + 1]));
            let delta = new.minus(old);
            if delta.improves(eps) && best.is_none_or(|(w, _, _)| delta.less(w)) {
                best = Some((delta, i, j));
            }
        }
    }
    match best {
        Some((_, i, j)) => {
            order[i..=j].reverse();
            true
        }
        None => false,
    }
}

/// An Or-opt move: the run order[i..i+len] goes between order[at] and order[at+1] of
/// the tour without it, reversed or not.
#[derive(Debug, Clone, Copy)]
struct OrMove {
    i: usize,
    len: usize,
    at: usize,
    reversed: bool,
}

/// Best Or-opt move; applies it and returns true if it improves.
fn or_opt_pass(legs: &LegCosts, order: &mut Vec<usize>, eps: f64) -> bool {
    let (fwd, bwd) = prefix_weights(legs, order);
    let leg = |a: usize, b: usize| Weight::leg(legs.get(a, b));
    let last = order.len() - 1;
    let mut best: Option<(Weight, OrMove)> = None;
    for len in 1..=3usize {
        for i in 1..last.saturating_sub(len - 1) {
            let e = i + len - 1; // last index of the run
            let (p, q) = (order[i - 1], order[e + 1]);
            let removed = leg(p, order[i]).plus(leg(order[e], q)).minus(leg(p, q));
            for at in (0..last).filter(|&a| a + 1 < i || a > e) {
                let (a, b) = (order[at], order[at + 1]);
                for reversed in [false, true] {
                    let (first, end, inner) = if reversed {
                        (order[e], order[i], bwd[e].minus(bwd[i]))
                    } else {
                        (order[i], order[e], fwd[e].minus(fwd[i]))
                    };
                    let old_inner = fwd[e].minus(fwd[i]);
                    let added = leg(a, first).plus(leg(end, b)).minus(leg(a, b));
                    let delta = added.plus(inner).minus(old_inner).minus(removed);
                    let mv = OrMove {
                        i,
                        len,
                        at,
                        reversed,
                    };
                    if delta.improves(eps) && best.is_none_or(|(w, _)| delta.less(w)) {
                        best = Some((delta, mv));
                    }
                }
            }
        }
    }
    match best {
        Some((_, mv)) => {
            apply_or_move(order, mv);
            true
        }
        None => false,
    }
}

fn apply_or_move(order: &mut Vec<usize>, mv: OrMove) {
    let mut run: Vec<usize> = order.drain(mv.i..mv.i + mv.len).collect();
    if mv.reversed {
        run.reverse();
    }
    // `at` indexed the tour with the run still in it; shift if it lay after the run.
    let at = if mv.at > mv.i { mv.at - mv.len } else { mv.at };
    order.splice(at + 1..at + 1, run);
}

#[cfg(test)]
mod tests {
    use super::*;

    fn legs(rows: &[&[f64]]) -> LegCosts {
        let m: Vec<Vec<f64>> = rows.iter().map(|r| r.to_vec()).collect();
        LegCosts::from_graph(&graph_from_matrix(&m, None).unwrap())
    }

    #[test]
    fn or_move_keeps_every_site_once() {
        let mut order = vec![0, 1, 2, 3, 4, 5, 0];
        apply_or_move(
            &mut order,
            OrMove {
                i: 1,
                len: 2,
                at: 4,
                reversed: true,
            },
        );
        assert_eq!(order, vec![0, 3, 4, 2, 1, 5, 0]);
        apply_or_move(
            &mut order,
            OrMove {
                i: 4,
                len: 1,
                at: 0,
                reversed: false,
            },
        );
        assert_eq!(order, vec![0, 1, 3, 4, 2, 5, 0]);
    }

    /// A directed 4-cycle whose cheap direction is 0→1→2→3→0 (cost 4) and whose reverse
    /// is expensive (40): by hand, the optimum is the cheap direction.
    #[test]
    fn one_way_cycle_is_followed_in_its_cheap_direction() {
        let l = legs(&[
            &[0.0, 1.0, 50.0, 10.0],
            &[10.0, 0.0, 1.0, 50.0],
            &[50.0, 10.0, 0.0, 1.0],
            &[1.0, 50.0, 10.0, 0.0],
        ]);
        let t = held_karp(&l).unwrap();
        assert_eq!(t.order, vec![0, 1, 2, 3, 0]);
        assert_eq!(t.cost, 4.0);
        assert_eq!(insertion_local_search(&l, 0).cost, 4.0);
        assert_eq!(insertion_local_search(&l, 10).cost, 4.0);
    }
}
