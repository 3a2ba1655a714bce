//! What the planner asks of a vehicle: the energy and time of one step, lower bounds
//! for the heuristic, and the regeneration bound for the potential. The planner knows no
//! rover; `vehicle` implements [`StepModel`].
//!
//! # The contract (what keeps the search exact)
//! For every step the model accepts, with horizontal length d, rise dz:
//! 1. `energy_j ≥ energy_lower_bound_j(d, dz)` and `time_s ≥ time_lower_bound_s(d, dz)`;
//! 2. both bounds are subadditive in the displacement: bound(a + b) ≤ bound(a) + bound(b)
//!    (they are functions of the horizontal distance and the rise of the straight
//!    displacement, non-decreasing in distance);
//! 3. `energy_j ≥ regen_bound_j_per_m() · dz` (a step cannot return more than that many
//!    joules per metre of descent, nor cost less per metre of climb), and
//!    `energy_lower_bound_j(d, dz) ≥ regen_bound_j_per_m() · dz`.
//!
//! For the wheel-work model W = m g (Crr·d + dz), E = max(W/η, ρ·W) + P_hotel·t, all three
//! hold with E_lb = max(W/η, ρ·W) + P_hotel·d/v_max and k = ρ m g: the map
//! W ↦ max(W/η, ρW) is convex, non-decreasing and positively homogeneous, hence
//! subadditive, and a path's wheel work sums to m g (Crr·L + Δz) with L ≥ d.
//! Tests in this crate check the contract on random steps for every model.
//!
//! # Units
//! Lengths in metres, energy in joules, time in seconds, angles in radians.

/// Geometry of one step between cell centres.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Step {
    /// Horizontal length, metres (> 0).
    pub d_m: f64,
    /// Rise (negative when descending), metres.
    pub dz_m: f64,
    /// Heading, radians clockwise from north.
    pub heading_rad: f64,
    /// Along-track slope s = dz/d = tan(pitch), m/m (+ uphill).
    pub slope: f64,
    /// Cross slope t, m/m: rise of the terrain to the right of the heading per metre.
    pub cross_slope: f64,
    /// Row-major index of the cell the step starts in.
    pub from: usize,
    /// Row-major index of the cell the step ends in.
    pub to: usize,
}

impl Step {
    /// Body pitch, radians (+ nose up): atan(s) ([`crate::plan::tilt`]).
    #[inline]
    pub fn pitch_rad(&self) -> f64 {
        self.slope.atan()
    }

    /// Body roll, radians (+ left side up): −atan(t/√(1 + s²)) ([`crate::plan::tilt`]).
    #[inline]
    pub fn roll_rad(&self) -> f64 {
        crate::plan::tilt::pitch_roll_from_slopes(self.slope, self.cross_slope).1
    }

    /// Length along the ground, metres.
    #[inline]
    pub fn length_m(&self) -> f64 {
        (self.d_m * self.d_m + self.dz_m * self.dz_m).sqrt()
    }
}

/// Energy and time of a step the vehicle can drive.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StepEnergy {
    /// Electrical energy drawn from the battery, joules (negative when regenerating).
    pub energy_j: f64,
    /// Driving time, seconds (> 0).
    pub time_s: f64,
}

/// Why a step (or a cell) cannot be driven.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Blocked {
    /// Climbing steeper than the uphill pitch limit.
    PitchUp,
    /// Descending steeper than the downhill pitch limit.
    PitchDown,
    /// Cross slope beyond the roll limit.
    Roll,
    /// Cell rougher than the roughness limit.
    Roughness,
    /// Cell inside a keep-out area.
    KeepOut,
    /// Cell without elevation data.
    NoData,
    /// The soil cannot give the thrust the step needs.
    Traction,
    /// The wheels would sink to their radius (stuck).
    Sinkage,
    /// Off the edge of the grid.
    GridEdge,
}

impl Blocked {
    /// A phrase for messages.
    pub fn describe(self) -> &'static str {
        match self {
            Blocked::PitchUp => "uphill pitch limit",
            Blocked::PitchDown => "downhill pitch limit",
            Blocked::Roll => "roll limit",
            Blocked::Roughness => "roughness limit",
            Blocked::KeepOut => "keep-out area",
            Blocked::NoData => "no-data cells",
            Blocked::Traction => "traction limit",
            Blocked::Sinkage => "sinkage limit",
            Blocked::GridEdge => "edge of the grid",
        }
    }

    /// All reasons, in report order.
    pub const ALL: [Blocked; 9] = [
        Blocked::PitchUp,
        Blocked::PitchDown,
        Blocked::Roll,
        Blocked::Roughness,
        Blocked::KeepOut,
        Blocked::NoData,
        Blocked::Traction,
        Blocked::Sinkage,
        Blocked::GridEdge,
    ];
}

/// A vehicle as the planner sees it (see the module doc for the contract).
pub trait StepModel: Sync {
    /// Energy and time of a step, or why the vehicle cannot drive it.
    fn step(&self, step: &Step) -> Result<StepEnergy, Blocked>;
    /// Lower bound of the energy of any drivable path with this displacement, joules.
    fn energy_lower_bound_j(&self, d_m: f64, dz_m: f64) -> f64;
    /// Lower bound of the time of any drivable path with this displacement, seconds.
    fn time_lower_bound_s(&self, d_m: f64, dz_m: f64) -> f64;
    /// k ≥ 0 with energy ≥ k·dz for every step, joules per metre of rise.
    fn regen_bound_j_per_m(&self) -> f64;
    /// The constants of the two lower bounds when they have the wheel-work form of
    /// [`WheelBounds`] (then [`Self::energy_lower_bound_j`] and
    /// [`Self::time_lower_bound_s`] must be [`WheelBounds::energy_j`] and
    /// [`WheelBounds::time_s`]); the planner then evaluates its heuristic without
    /// calls and with one square root. None (the default): the two methods are called.
    fn wheel_bounds(&self) -> Option<WheelBounds> {
        None
    }
}

/// Lower bounds of the firm-ground wheel-work form (DESIGN.md; contract 1 and 2 of the
/// module doc): with W = m g (C_rr·d + dz) and L = √(d² + dz²), energy ≥ max(W/η, ρ·W)
/// + P_hotel·L/v_max (W/η for W > 0, ρ·W otherwise) and time ≥ L/v_max.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WheelBounds {
    /// Weight m·g, newtons.
    pub weight_n: f64,
    /// Rolling-resistance coefficient.
    pub crr: f64,
    /// The best drive efficiency.
    pub eta: f64,
    /// Regenerated fraction of braking work.
    pub rho: f64,
    /// Hotel power, watts.
    pub hotel_w: f64,
    /// Top speed, m/s.
    pub v_max: f64,
}

impl WheelBounds {
    /// The energy bound, joules, for length `l_m` = √(d² + dz²) given.
    #[inline]
    pub fn energy_with_length_j(&self, d_m: f64, dz_m: f64, l_m: f64) -> f64 {
        let w = self.weight_n * (self.crr * d_m + dz_m);
        let drive = if w > 0.0 { w / self.eta } else { self.rho * w };
        drive + self.hotel_w * l_m / self.v_max
    }

    /// The energy bound, joules.
    #[inline]
    pub fn energy_j(&self, d_m: f64, dz_m: f64) -> f64 {
        self.energy_with_length_j(d_m, dz_m, (d_m * d_m + dz_m * dz_m).sqrt())
    }

    /// The time bound, seconds.
    #[inline]
    pub fn time_s(&self, d_m: f64, dz_m: f64) -> f64 {
        (d_m * d_m + dz_m * dz_m).sqrt() / self.v_max
    }
}

/// The reduced lower bound B(d, dz) − K·dz of [`Objective::lower_bound`] for a model
/// with [`WheelBounds`], its constants folded once per search so that an evaluation is
/// one square root and a few products (no divisions, no branches on the weights):
/// with L = √(d² + dz²) and u = C_rr·d + dz,
/// B − K·dz = a·L + (u > 0 ? b₊ : b₋)·u − K·dz,
/// a = w_m + (w_s + w_J·P_hotel)/v_max, b₊ = w_J·m g/η, b₋ = w_J·ρ·m g.
/// The same function as [`Objective::lower_bound`] minus K·dz, so the same bound (the
/// arithmetic differs only in rounding, a few ulps; a test compares).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ReducedBound {
    per_l: f64,
    crr: f64,
    up: f64,
    down: f64,
    k: f64,
}

impl ReducedBound {
    /// Folds the objective `o`, the model's bounds `wb` and the potential weight `k`.
    pub fn new(o: &Objective, wb: &WheelBounds, k: f64) -> ReducedBound {
        ReducedBound {
            per_l: o.per_m + (o.per_s + o.per_j * wb.hotel_w) / wb.v_max,
            crr: wb.crr,
            up: o.per_j * wb.weight_n / wb.eta,
            down: o.per_j * wb.weight_n * wb.rho,
            k,
        }
    }

    /// B(d, dz) − K·dz for horizontal length `d_m` and rise `dz_m`.
    #[inline(always)]
    pub fn of(&self, d_m: f64, dz_m: f64) -> f64 {
        let l = (d_m * d_m + dz_m * dz_m).sqrt();
        let u = self.crr * d_m + dz_m;
        let b = if u > 0.0 { self.up } else { self.down };
        self.per_l * l + b * u - self.k * dz_m
    }

    /// [`Self::of`] with the slope length L replaced by the horizontal length d ≤ L: a
    /// lower bound again, and of the same convex, positively homogeneous form (d is a
    /// norm of the displacement), so consistent as a heuristic; no square root.
    #[inline(always)]
    pub fn of_flat(&self, d_m: f64, dz_m: f64) -> f64 {
        let u = self.crr * d_m + dz_m;
        let b = if u > 0.0 { self.up } else { self.down };
        self.per_l * d_m + b * u - self.k * dz_m
    }
}

/// What the route minimises: a weighted sum of slope length (per metre), driving time
/// (per second) and energy (per joule). The named objectives set one weight to 1.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Objective {
    /// Weight per metre of slope length.
    pub per_m: f64,
    /// Weight per second of driving.
    pub per_s: f64,
    /// Weight per joule of energy.
    pub per_j: f64,
}

impl Objective {
    /// Shortest path over the ground (slope length).
    pub const DISTANCE: Objective = Objective {
        per_m: 1.0,
        per_s: 0.0,
        per_j: 0.0,
    };
    /// Fastest path.
    pub const TIME: Objective = Objective {
        per_m: 0.0,
        per_s: 1.0,
        per_j: 0.0,
    };
    /// Least energy (drive plus hotel energy over the driving time).
    pub const ENERGY: Objective = Objective {
        per_m: 0.0,
        per_s: 0.0,
        per_j: 1.0,
    };

    /// The name of a pure objective, or "mix".
    pub fn name(&self) -> &'static str {
        match (self.per_m > 0.0, self.per_s > 0.0, self.per_j > 0.0) {
            (true, false, false) => "distance",
            (false, true, false) => "time",
            (false, false, true) => "energy",
            _ => "mix",
        }
    }

    /// Cost of a step with this slope length and evaluation.
    #[inline]
    pub fn cost(&self, length_m: f64, e: &StepEnergy) -> f64 {
        self.per_m * length_m + self.per_s * e.time_s + self.per_j * e.energy_j
    }

    /// Admissible, consistent lower bound of the cost of a displacement.
    #[inline]
    pub fn lower_bound<M: StepModel + ?Sized>(&self, m: &M, d_m: f64, dz_m: f64) -> f64 {
        let mut b = self.per_m * (d_m * d_m + dz_m * dz_m).sqrt();
        if self.per_s > 0.0 {
            b += self.per_s * m.time_lower_bound_s(d_m, dz_m);
        }
        if self.per_j > 0.0 {
            b += self.per_j * m.energy_lower_bound_j(d_m, dz_m);
        }
        b
    }

    /// The potential weight K of the Johnson reweighting c' = c − K·dz (cost per metre of
    /// rise that every step is guaranteed to carry).
    pub fn potential_per_m<M: StepModel + ?Sized>(&self, m: &M) -> f64 {
        self.per_j * m.regen_bound_j_per_m()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A model that is its wheel bounds (for [`Objective::lower_bound`]).
    struct Bounds(WheelBounds);

    impl StepModel for Bounds {
        fn step(&self, _: &Step) -> Result<StepEnergy, Blocked> {
            Err(Blocked::Traction)
        }
        fn energy_lower_bound_j(&self, d_m: f64, dz_m: f64) -> f64 {
            self.0.energy_j(d_m, dz_m)
        }
        fn time_lower_bound_s(&self, d_m: f64, dz_m: f64) -> f64 {
            self.0.time_s(d_m, dz_m)
        }
        fn regen_bound_j_per_m(&self) -> f64 {
            self.0.rho * self.0.weight_n
        }
    }

    /// The folded bound is `lower_bound − K·dz` to within rounding, for every objective,
    /// with and without regeneration, uphill, downhill and flat.
    #[test]
    fn folded_bound_equals_the_lower_bound_less_the_potential() {
        let mix = Objective {
            per_m: 0.3,
            per_s: 2.0,
            per_j: 1e-3,
        };
        let mut checked = 0;
        for rho in [0.0, 0.35] {
            let m = Bounds(WheelBounds {
                weight_n: 40.0 * 9.81,
                crr: 0.08,
                eta: 0.7,
                rho,
                hotel_w: 25.0,
                v_max: 0.8,
            });
            for o in [Objective::DISTANCE, Objective::TIME, Objective::ENERGY, mix] {
                let k = o.potential_per_m(&m);
                let rb = ReducedBound::new(&o, &m.0, k);
                for i in 0..400 {
                    let d = 0.5 + (i % 20) as f64 * 0.7;
                    let dz = (i / 20) as f64 * 0.4 - 4.0;
                    let want = o.lower_bound(&m, d, dz) - k * dz;
                    let got = rb.of(d, dz);
                    let scale = o.lower_bound(&m, d, dz).abs() + (k * dz).abs();
                    assert!(
                        (got - want).abs() <= 1e-14 * scale,
                        "{o:?} rho {rho} d {d} dz {dz}: {got} against {want}"
                    );
                    // The flat form is lower (d ≤ L) and differs only in the L term.
                    let flat = rb.of_flat(d, dz);
                    assert!(flat <= got + 1e-14 * scale, "{o:?} d {d} dz {dz}");
                    let l = (d * d + dz * dz).sqrt();
                    let per_l = o.per_m + (o.per_s + o.per_j * m.0.hotel_w) / m.0.v_max;
                    assert!(((got - flat) - per_l * (l - d)).abs() <= 1e-12 * scale);
                    checked += 1;
                }
            }
        }
        assert_eq!(checked, 3200);
    }
}
