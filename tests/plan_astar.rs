//! The planner against a general-purpose reference library: on many seeded random grids,
//! the A* optimum equals `pathfinding::dijkstra` (pathfinding 4.x, crates.io) run on the
//! same explicit graph, to 1e-9 relative, for every objective, with and without
//! regenerative braking. With regen the raw graph has negative edges, so the reference
//! runs Dijkstra on the Johnson-reduced weights and, independently, a plain Bellman-Ford
//! on the raw weights (Bellman 1958; Ford 1956) checks that the two agree.
//! Also: every step of a returned route keeps the constraints, analytic cases (flat
//! plane, a slope too steep to climb straight), and the model contract.

use std::ops::Add;

use pathfinding::num_traits::Zero;
use sunward::plan::{
    Blocked, CellFlags, Connectivity, Objective, Planner, Step, StepEnergy, StepModel, TiltLimits,
    Workspace,
};
use sunward::terrain::synth::SplitMix64;
use sunward::terrain::{Dem, GeoRef, Grid};

/// The wheel-work model of DESIGN.md, written out here on its own: W = m g (Crr d + dz),
/// E = W/η for W > 0 and ρ·W for W < 0, plus hotel power over the driving time; speed
/// falls linearly with |pitch| to 40 % at 25°.
struct TestRover {
    mass_kg: f64,
    crr: f64,
    eta: f64,
    rho: f64,
    hotel_w: f64,
    v_max: f64,
}

const G: f64 = 9.806_65;

impl TestRover {
    fn wheel_energy(&self, w: f64) -> f64 {
        if w > 0.0 {
            w / self.eta
        } else {
            self.rho * w
        }
    }
}

impl StepModel for TestRover {
    fn step(&self, s: &Step) -> Result<StepEnergy, Blocked> {
        let w = self.mass_kg * G * (self.crr * s.d_m + s.dz_m);
        let v = self.v_max * (1.0 - 0.6 * (s.pitch_rad().abs() / 25f64.to_radians()).min(1.0));
        let t = s.d_m.hypot(s.dz_m) / v;
        Ok(StepEnergy {
            energy_j: self.wheel_energy(w) + self.hotel_w * t,
            time_s: t,
        })
    }
    fn energy_lower_bound_j(&self, d: f64, dz: f64) -> f64 {
        self.wheel_energy(self.mass_kg * G * (self.crr * d + dz))
            + self.hotel_w * d.hypot(dz) / self.v_max
    }
    fn time_lower_bound_s(&self, d: f64, dz: f64) -> f64 {
        d.hypot(dz) / self.v_max
    }
    fn regen_bound_j_per_m(&self) -> f64 {
        self.rho * self.mass_kg * G
    }
}

fn rover(rho: f64) -> TestRover {
    TestRover {
        mass_kg: 135.0,
        crr: 0.08,
        eta: 0.7,
        rho,
        hotel_w: 25.0,
        v_max: 0.5,
    }
}

fn random_dem(rng: &mut SplitMix64, w: usize, h: usize) -> Dem {
    let rough = 0.5 + 3.0 * rng.next_f64();
    let data = (0..w * h)
        .map(|i| {
            if rng.next_f64() < 0.04 {
                f32::NAN
            } else {
                let (c, r) = ((i % w) as f64, (i / w) as f64);
                (0.8 * c + 0.5 * r + rough * rng.next_f64()) as f32
            }
        })
        .collect();
    Grid::from_vec(w, h, data, GeoRef::local(2.0))
}

/// f64 with a total order, for the reference library's `Ord + Zero` bound.
#[derive(Clone, Copy, Debug, PartialEq)]
struct Cost(f64);
impl Eq for Cost {}
impl PartialOrd for Cost {
    fn partial_cmp(&self, o: &Self) -> Option<std::cmp::Ordering> {
        Some(self.cmp(o))
    }
}
impl Ord for Cost {
    fn cmp(&self, o: &Self) -> std::cmp::Ordering {
        self.0.total_cmp(&o.0)
    }
}
impl Add for Cost {
    type Output = Cost;
    fn add(self, o: Cost) -> Cost {
        Cost(self.0 + o.0)
    }
}
impl Zero for Cost {
    fn zero() -> Cost {
        Cost(0.0)
    }
    fn is_zero(&self) -> bool {
        self.0 == 0.0
    }
}

/// The explicit graph: for each cell, its drivable steps as (to, true cost, rise).
fn explicit_graph<M: StepModel>(p: &Planner<'_, M>) -> Vec<Vec<(usize, f64, f64)>> {
    (0..p.dem.len())
        .map(|u| {
            if p.flags.blocked(u).is_some() {
                return Vec::new();
            }
            (0..p.connectivity.count())
                .filter_map(|dir| {
                    let s = p.geometry(u, dir).ok()?;
                    let e = p.model.step(&s).ok()?;
                    Some((s.to, p.objective.cost(s.d_m.hypot(s.dz_m), &e), s.dz_m))
                })
                .collect()
        })
        .collect()
}

fn bellman_ford(graph: &[Vec<(usize, f64, f64)>], start: usize) -> Vec<f64> {
    let mut dist = vec![f64::INFINITY; graph.len()];
    dist[start] = 0.0;
    for _ in 0..graph.len() {
        let mut changed = false;
        for (u, edges) in graph.iter().enumerate() {
            if dist[u].is_infinite() {
                continue;
            }
            for &(v, c, _) in edges {
                let better =
                    dist[v].is_infinite() || dist[u] + c < dist[v] - 1e-12 * dist[v].abs().max(1.0);
                if better {
                    dist[v] = dist[u] + c;
                    changed = true;
                }
            }
        }
        if !changed {
            break;
        }
    }
    dist
}

/// The optimal cost from `start` to `goal` by `pathfinding`'s Dijkstra (a general-purpose
/// reference library) on the explicit graph with Johnson's reweighting (non-negative
/// costs), mapped back to the true cost.
fn reference_cost<M: StepModel>(
    p: &Planner<'_, M>,
    graph: &[Vec<(usize, f64, f64)>],
    start: usize,
    goal: usize,
) -> Option<f64> {
    let k = p.objective.potential_per_m(p.model);
    let z = |c: usize| p.dem.data()[c] as f64;
    pathfinding::directed::dijkstra::dijkstra(
        &start,
        |&u| {
            graph[u]
                .iter()
                .map(move |&(v, c, dz)| (v, Cost(c - k * dz)))
                .collect::<Vec<_>>()
        },
        |&u| u == goal,
    )
    .map(|(_, c)| c.0 + k * (z(goal) - z(start)))
}

/// The true cost of walking `cells` on the explicit graph (∞ if a step is missing).
fn walked_cost(graph: &[Vec<(usize, f64, f64)>], cells: &[usize]) -> f64 {
    cells
        .windows(2)
        .map(|p| {
            graph[p[0]]
                .iter()
                .find(|e| e.0 == p[1])
                .map_or(f64::INFINITY, |e| e.1)
        })
        .sum()
}

fn rel_close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-9 * a.abs().max(b.abs()).max(1e-12)
}

#[test]
fn astar_equals_reference_dijkstra_on_random_grids() {
    let mut rng = SplitMix64::new(2024);
    let objectives = [
        Objective::DISTANCE,
        Objective::TIME,
        Objective::ENERGY,
        Objective {
            per_m: 0.5,
            per_s: 2.0,
            per_j: 0.001,
        },
    ];
    let mut compared = 0;
    let mut negative_edges_seen = false;
    for case in 0..60 {
        let (w, h) = (
            5 + (rng.next_u64() % 8) as usize,
            5 + (rng.next_u64() % 8) as usize,
        );
        let dem = random_dem(&mut rng, w, h);
        let flags = CellFlags::from_dem(&dem);
        let conn = if case % 2 == 0 {
            Connectivity::Eight
        } else {
            Connectivity::Sixteen
        };
        let lim = (18.0 + 30.0 * rng.next_f64()).to_radians();
        let limits = TiltLimits {
            max_pitch_up_rad: lim,
            max_pitch_down_rad: lim * 1.2,
            max_roll_rad: lim,
        };
        for rho in [0.0, 0.6] {
            let model = rover(rho);
            for objective in objectives {
                let p = Planner {
                    dem: &dem,
                    flags: &flags,
                    model: &model,
                    limits,
                    connectivity: conn,
                    objective,
                };
                let graph = explicit_graph(&p);
                negative_edges_seen |= graph.iter().flatten().any(|e| e.1 < 0.0);
                let (start, goal) = (0, dem.len() - 1);
                if flags.blocked(start).is_some() || flags.blocked(goal).is_some() {
                    continue;
                }
                let reference = reference_cost(&p, &graph, start, goal);
                let bf = bellman_ford(&graph, start)[goal];
                let ours = p.search(start, goal, &mut Workspace::default());
                let both = p.search_bidirectional(start, goal, &mut Workspace::default());
                match (&reference, &both) {
                    (Some(r), Ok(path)) => {
                        assert!(
                            rel_close(*r, path.cost),
                            "case {case} {objective:?} rho {rho}: ref {r} bidirectional {}",
                            path.cost
                        );
                        assert!(rel_close(*r, walked_cost(&graph, &path.cells)));
                    }
                    (None, Err(_)) => {}
                    (r, o) => panic!("case {case}: reference {r:?} vs bidirectional {o:?}"),
                }
                match (reference, ours) {
                    (Some(r), Ok(path)) => {
                        assert!(
                            rel_close(r, path.cost),
                            "case {case} {objective:?} rho {rho}: ref {r} ours {} bf {bf}",
                            path.cost
                        );
                        assert!(rel_close(r, walked_cost(&graph, &path.cells)));
                        assert!(
                            rel_close(r, bf),
                            "reduced Dijkstra {r} vs Bellman-Ford {bf}"
                        );
                        compared += 1;
                    }
                    (None, Err(_)) => assert!(bf.is_infinite()),
                    (r, o) => panic!(
                        "case {case}: reference {r:?} vs ours {:?}",
                        o.map(|p| p.cost)
                    ),
                }
            }
        }
    }
    assert!(compared > 200, "only {compared} reachable cases compared");
    assert!(
        negative_edges_seen,
        "the regen cases never produced a negative step"
    );
}

/// The two-thread bidirectional search between random interior cells (the searches meet
/// away from the corners, and the bounds-check-free path runs) equals the reference
/// Dijkstra, and its route walks at that cost; repeated runs give the same cells.
#[test]
fn bidirectional_search_equals_reference_between_random_cells() {
    let mut rng = SplitMix64::new(31);
    let mut compared = 0;
    for case in 0..40 {
        let (w, h) = (
            20 + (rng.next_u64() % 20) as usize,
            15 + (rng.next_u64() % 20) as usize,
        );
        let mut dem = random_dem(&mut rng, w, h);
        dem.data_mut().iter_mut().for_each(|z| *z *= 0.5);
        let flags = CellFlags::from_dem(&dem);
        let model = rover(if case % 2 == 0 { 0.0 } else { 0.6 });
        let lim = 30f64.to_radians();
        let p = Planner {
            dem: &dem,
            flags: &flags,
            model: &model,
            limits: TiltLimits {
                max_pitch_up_rad: lim,
                max_pitch_down_rad: lim,
                max_roll_rad: lim,
            },
            connectivity: if case % 3 == 0 {
                Connectivity::Sixteen
            } else {
                Connectivity::Eight
            },
            objective: [Objective::ENERGY, Objective::TIME, Objective::DISTANCE][case % 3],
        };
        let graph = explicit_graph(&p);
        let n = dem.len() as u64;
        let (start, goal) = ((rng.next_u64() % n) as usize, (rng.next_u64() % n) as usize);
        if start == goal || flags.blocked(start).is_some() || flags.blocked(goal).is_some() {
            continue;
        }
        let reference = reference_cost(&p, &graph, start, goal);
        let first = p.search_bidirectional(start, goal, &mut Workspace::default());
        let again = p.search_bidirectional(start, goal, &mut Workspace::default());
        match (reference, &first) {
            (Some(r), Ok(path)) => {
                assert!(
                    rel_close(r, path.cost),
                    "case {case}: ref {r} ours {}",
                    path.cost
                );
                assert!(
                    rel_close(r, walked_cost(&graph, &path.cells)),
                    "case {case}"
                );
                assert_eq!((path.cells[0], *path.cells.last().unwrap()), (start, goal));
                compared += 1;
            }
            (None, Err(_)) => {}
            (r, o) => panic!("case {case}: reference {r:?} vs ours {o:?}"),
        }
        assert_eq!(first, again, "case {case}: two runs differ");
    }
    assert!(compared > 25, "only {compared} cases compared");
}

/// No step of a returned route breaks a tilt limit or enters a blocked cell.
#[test]
fn routes_keep_every_constraint() {
    let mut rng = SplitMix64::new(77);
    for _ in 0..40 {
        let dem = random_dem(&mut rng, 14, 11);
        let mut flags = CellFlags::from_dem(&dem);
        for c in 0..dem.len() {
            if rng.next_f64() < 0.05 {
                flags.block(c, Blocked::KeepOut);
            }
        }
        let model = rover(0.3);
        let limits = TiltLimits {
            max_pitch_up_rad: 22f64.to_radians(),
            max_pitch_down_rad: 28f64.to_radians(),
            max_roll_rad: 25f64.to_radians(),
        };
        let p = Planner {
            dem: &dem,
            flags: &flags,
            model: &model,
            limits,
            connectivity: Connectivity::Sixteen,
            objective: Objective::ENERGY,
        };
        let (start, goal) = (0, dem.len() - 1);
        if flags.blocked(start).is_some() || flags.blocked(goal).is_some() {
            continue;
        }
        let Ok(one_way) = p.search(start, goal, &mut Workspace::default()) else {
            continue;
        };
        let both = p.search_bidirectional(start, goal, &mut Workspace::default());
        let both = both.expect("the bidirectional search finds the route the one-way finds");
        for pair in one_way.cells.windows(2).chain(both.cells.windows(2)) {
            assert!(flags.blocked(pair[1]).is_none());
            let (w, a, b) = (dem.width() as i64, pair[0] as i64, pair[1] as i64);
            let (dc, dr) = (b % w - a % w, b / w - a / w);
            let d = ((dc * dc + dr * dr) as f64).sqrt() * 2.0;
            let dz = (dem.data()[pair[1]] - dem.data()[pair[0]]) as f64;
            let pitch = (dz / d).atan();
            assert!(
                pitch <= limits.max_pitch_up_rad + 1e-12
                    && -pitch <= limits.max_pitch_down_rad + 1e-12
            );
            let dir = sunward::plan::astar::DIRECTIONS
                .iter()
                .position(|&o| o == (dc as i32, dr as i32))
                .unwrap();
            let s = p.geometry(pair[0], dir).unwrap();
            assert!(s.roll_rad().abs() <= limits.max_roll_rad + 1e-12);
        }
    }
}

fn plane(w: usize, h: usize, cell: f64, rise_north: f64) -> Dem {
    let data = (0..w * h)
        .map(|i| ((h - 1 - i / w) as f64 * cell * rise_north) as f32)
        .collect();
    Grid::from_vec(w, h, data, GeoRef::local(cell))
}

/// Analytic: on a flat plane the shortest route is straight, of length n·cell along a
/// row and n·√2·cell along a diagonal.
#[test]
fn flat_plane_routes_are_straight() {
    let dem = plane(20, 20, 3.0, 0.0);
    let flags = CellFlags::from_dem(&dem);
    let model = rover(0.0);
    let p = Planner {
        dem: &dem,
        flags: &flags,
        model: &model,
        limits: TiltLimits::default(),
        connectivity: Connectivity::Eight,
        objective: Objective::DISTANCE,
    };
    let path = p
        .search(20 * 5 + 1, 20 * 5 + 18, &mut Workspace::default())
        .unwrap();
    assert!((path.cost - 17.0 * 3.0).abs() < 1e-9);
    assert_eq!(path.cells.len(), 18);
    let path = p
        .search(0, 20 * 19 + 19, &mut Workspace::default())
        .unwrap();
    assert!((path.cost - 19.0 * 2f64.sqrt() * 3.0).abs() < 1e-9);
    // A straight line: every step is the same diagonal.
    assert!(path.cells.windows(2).all(|p| p[1] - p[0] == 21));
}

/// Analytic: a 30° slope (tan 30° = 0.577) rising north, uphill pitch limit 20°. Straight
/// up is 30°, a diagonal 22.2° (atan(0.577/√2)): both too steep; the knight move
/// (±2, −1) climbs atan(0.577/√5) = 14.5°. A route to a goal due north in a narrow
/// corridor must therefore zig-zag: it switches between east- and west-going climbs.
#[test]
fn slope_too_steep_to_climb_straight_forces_switchbacks() {
    let tan30 = 30f64.to_radians().tan();
    let dem = plane(9, 30, 1.0, tan30);
    let flags = CellFlags::from_dem(&dem);
    let model = rover(0.0);
    let limits = TiltLimits {
        max_pitch_up_rad: 20f64.to_radians(),
        max_pitch_down_rad: 20f64.to_radians(),
        max_roll_rad: 35f64.to_radians(),
    };
    let p = Planner {
        dem: &dem,
        flags: &flags,
        model: &model,
        limits,
        connectivity: Connectivity::Sixteen,
        objective: Objective::ENERGY,
    };
    let (start, goal) = (29 * 9 + 4, 4);
    let path = p.search(start, goal, &mut Workspace::default()).unwrap();
    let w = 9i64;
    let mut reversals = 0;
    let mut last = 0i64;
    for pair in path.cells.windows(2) {
        let dc = pair[1] as i64 % w - pair[0] as i64 % w;
        let dr = pair[1] as i64 / w - pair[0] as i64 / w;
        assert!(dr <= 0 || dc != 0);
        let pitch = (-(dr as f64) * tan30 / ((dc * dc + dr * dr) as f64).sqrt()).atan();
        assert!(
            pitch <= 20f64.to_radians() + 1e-12,
            "step ({dc},{dr}) pitch {}",
            pitch.to_degrees()
        );
        if dc != 0 {
            if last != 0 && dc.signum() != last {
                reversals += 1;
            }
            last = dc.signum();
        }
    }
    assert!(
        reversals >= 3,
        "expected switchbacks, got {reversals} reversals"
    );
    // Blocking the knight moves (8-connected) closes the slope entirely, and the
    // explanation names the pitch limit.
    let p8 = Planner {
        connectivity: Connectivity::Eight,
        ..p
    };
    let why = p8
        .search(start, goal, &mut Workspace::default())
        .unwrap_err();
    assert_eq!(why.closed_by[0].0, Blocked::PitchUp, "{why:?}");
    assert_eq!(why.nearest.1, 29.0);
}

/// Checks the model contract of sunward::plan::cost on random steps: energy and time
/// above the bounds, bounds subadditive, energy above k·dz.
fn check_contract<M: StepModel>(m: &M, seed: u64) -> usize {
    let mut rng = SplitMix64::new(seed);
    let mut accepted = 0;
    for _ in 0..10_000 {
        let d = 0.5 + 5.0 * rng.next_f64();
        let dz = (rng.next_f64() - 0.5) * 2.0;
        let s = Step {
            d_m: d,
            dz_m: dz,
            heading_rad: 0.0,
            slope: dz / d,
            cross_slope: (rng.next_f64() - 0.5) * 0.3,
            from: 0,
            to: 1,
        };
        let (d2, dz2) = (5.0 * rng.next_f64(), (rng.next_f64() - 0.5) * 4.0);
        let lb_sum = m.energy_lower_bound_j(d, dz) + m.energy_lower_bound_j(d2, dz2);
        assert!(m.energy_lower_bound_j(d + d2, dz + dz2) <= lb_sum + 1e-9);
        assert!(m.energy_lower_bound_j(d, dz) >= m.regen_bound_j_per_m() * dz - 1e-9);
        let Ok(e) = m.step(&s) else { continue };
        accepted += 1;
        assert!(
            e.energy_j >= m.energy_lower_bound_j(d, dz) - 1e-9,
            "{s:?}: {e:?}"
        );
        assert!(e.time_s >= m.time_lower_bound_s(d, dz) - 1e-12);
        assert!(e.energy_j >= m.regen_bound_j_per_m() * dz - 1e-9);
    }
    accepted
}

#[test]
fn test_rover_keeps_the_model_contract() {
    assert_eq!(check_contract(&rover(0.6), 3), 10_000);
}

/// The vehicle model's rover (firm ground with regen, and soft soil) keeps the contract
/// too, so the planner stays exact with it; and on random grids it gives the same optimum
/// as the reference Dijkstra.
#[test]
fn vehicle_rover_keeps_the_model_contract_and_plans_exactly() {
    use sunward::vehicle::plan_model::RoverStepModel;
    use sunward::vehicle::Rover;
    let firm_rover = Rover::from_toml_str("regen_fraction = 0.5\nmax_roll_deg = 30\n").unwrap();
    let sand_rover = Rover::from_toml_str("soil = \"sandy-loam\"\n").unwrap();
    let (firm, sand) = (
        RoverStepModel::new(&firm_rover),
        RoverStepModel::new(&sand_rover),
    );
    assert!(check_contract(&firm, 4) > 5_000);
    assert!(check_contract(&sand, 5) > 1_000);
    let mut rng = SplitMix64::new(99);
    let mut compared = 0;
    for _ in 0..20 {
        let mut dem = random_dem(&mut rng, 9, 8);
        dem.data_mut().iter_mut().for_each(|z| *z *= 0.3); // gentler: within 20° limits
        let flags = CellFlags::from_dem(&dem);
        let p = Planner {
            dem: &dem,
            flags: &flags,
            model: &firm,
            limits: TiltLimits::default(),
            connectivity: Connectivity::Sixteen,
            objective: Objective::ENERGY,
        };
        let (start, goal) = (0, dem.len() - 1);
        if flags.blocked(start).is_some() || flags.blocked(goal).is_some() {
            continue;
        }
        let graph = explicit_graph(&p);
        let reference = reference_cost(&p, &graph, start, goal);
        match (reference, p.search(start, goal, &mut Workspace::default())) {
            (Some(r), Ok(path)) => {
                assert!(rel_close(r, path.cost), "ref {r} ours {}", path.cost);
                compared += 1;
            }
            (None, Err(_)) => {}
            (r, o) => panic!("reference {r:?} vs ours {:?}", o.map(|p| p.cost)),
        }
    }
    assert!(compared >= 5, "{compared}");
}

/// Smoothing on a flat plane turns the 8-connected zig-zag into the straight line:
/// analytic length √(20² + 10²) cells, cheaper than the grid path; on random terrain it
/// never costs more than the grid path under the same evaluation and keeps the ends.
#[test]
fn smoothing_straightens_and_never_costs_more() {
    let dem = plane(30, 20, 2.0, 0.0);
    let flags = CellFlags::from_dem(&dem);
    let model = rover(0.0);
    let p = Planner {
        dem: &dem,
        flags: &flags,
        model: &model,
        limits: TiltLimits::default(),
        connectivity: Connectivity::Eight,
        objective: Objective::ENERGY,
    };
    let (start, goal) = (30 + 1, 11 * 30 + 21);
    let path = p.search(start, goal, &mut Workspace::default()).unwrap();
    let sm = p.smooth(&path.cells);
    let straight = (20f64 * 20.0 + 10.0 * 10.0).sqrt() * 2.0;
    assert!(
        (sm.length_m - straight).abs() < 1e-9,
        "{} vs {straight}",
        sm.length_m
    );
    assert_eq!(sm.points.len(), 2);
    assert!(sm.smoothed_cost < sm.grid_cost);
    assert!(
        (sm.grid_cost - path.cost).abs() < 1e-6 * path.cost,
        "same evaluation on a plane"
    );

    let mut rng = SplitMix64::new(31);
    for _ in 0..30 {
        let mut dem = random_dem(&mut rng, 16, 12);
        dem.data_mut().iter_mut().for_each(|z| *z *= 0.4);
        let flags = CellFlags::from_dem(&dem);
        let p = Planner {
            dem: &dem,
            flags: &flags,
            model: &model,
            limits: TiltLimits::default(),
            connectivity: Connectivity::Eight,
            objective: Objective::ENERGY,
        };
        let (start, goal) = (0, dem.len() - 1);
        if flags.blocked(start).is_some() || flags.blocked(goal).is_some() {
            continue;
        }
        let Ok(path) = p.search(start, goal, &mut Workspace::default()) else {
            continue;
        };
        let sm = p.smooth(&path.cells);
        assert!(sm.smoothed_cost <= sm.grid_cost + 1e-9 * sm.grid_cost.abs());
        let c = |cell: usize| dem.georef.cell_centre(cell % 16, cell / 16);
        assert_eq!((sm.points[0].x, sm.points[0].y), c(start));
        let last = sm.points[sm.points.len() - 1];
        assert_eq!((last.x, last.y), c(goal));
    }
}
