//! Step energy, time and passability against hand calculations from the stated
//! formulas (sunward DESIGN.md, "Physics core"), plus invariants.

use sunward::vehicle::{named_soil, Attitude, Blocked, Rover};

/// Firm ground, default rover: 120 + 15 kg, C_rr 0.08, η 0.70, no regeneration,
/// g = 9.806 65 m/s² (standard gravity, exact by definition).
fn firm() -> Rover {
    Rover::default()
}

fn close(got: f64, want: f64, rel: f64) -> bool {
    (got - want).abs() <= rel * want.abs().max(1e-12)
}

/// Hand calculation from W = m g (C_rr d + dz), E = W / η (DESIGN.md):
/// m g = 135 × 9.806 65 = 1323.897 75 N; on a 10 % grade per horizontal metre
/// W = 1323.897 75 × (0.08 + 0.10) = 238.301 595 J, E = 238.301 595 / 0.7 = 340.430 85 J.
#[test]
fn energy_per_metre_on_a_ten_percent_grade_matches_the_hand_calculation() {
    let c = firm().step_cost_on_grade(1.0, 0.1);
    assert!(c.passable(), "{:?}", c.blocked);
    assert!(close(c.work_j, 238.301595, 1e-9), "{}", c.work_j);
    assert!(
        close(c.drive_energy_j, 340.43085, 1e-9),
        "{}",
        c.drive_energy_j
    );
}

/// Descent pays back when W = m g (C_rr d + dz) < 0, i.e. below the grade dz/d = −C_rr
/// (hand calculation: −0.08, about −4.57°). With ρ_regen = 0.5 on a −20 % grade:
/// W = 1323.897 75 × (0.08 − 0.20) = −158.867 73 J, E = −0.5 × 158.867 73 = −79.433 865 J.
#[test]
fn descent_starts_to_pay_back_below_minus_the_rolling_coefficient() {
    let rover = Rover {
        regen_fraction: 0.5,
        ..firm()
    };
    assert!(rover.step_cost_on_grade(1.0, -0.079).drive_energy_j > 0.0);
    assert!(rover.step_cost_on_grade(1.0, -0.081).drive_energy_j < 0.0);
    assert!(rover.step_cost_on_grade(1.0, -0.08).drive_energy_j.abs() < 1e-9);
    let c = rover.step_cost_on_grade(1.0, -0.2);
    assert!(
        close(c.drive_energy_j, -79.433865, 1e-9),
        "{}",
        c.drive_energy_j
    );
    let no_regen = firm().step_cost_on_grade(1.0, -0.2);
    assert_eq!(
        no_regen.drive_energy_j, 0.0,
        "without regeneration braking costs nothing"
    );
}

/// Time and hotel energy: t = s / v, E_hotel = P t. Level, 10 m at the top speed
/// 0.5 m/s: 20 s, 25 W × 20 s = 500 J (hand calculation).
#[test]
fn time_and_hotel_energy_follow_the_speed() {
    let c = firm().step_cost_on_grade(10.0, 0.0);
    assert!(close(c.time_s, 20.0, 1e-12) && close(c.hotel_energy_j, 500.0, 1e-12));
    let slow = firm().step_cost_on_grade(10.0, 2.0);
    assert!(
        slow.speed_m_s < 0.5 && slow.time_s > 20.0,
        "the linear law slows on slopes"
    );
}

/// Traction limit on firm ground: |m g (C_rr cos θ + sin θ)| ≤ μ m g cos θ, so with
/// μ 0.6 and C_rr 0.08 the steepest climb is atan(0.52) = 27.47° (hand calculation).
#[test]
fn firm_ground_traction_limit_sits_at_atan_mu_minus_crr() {
    let rover = Rover {
        max_climb_rad: 60f64.to_radians(),
        ..firm()
    };
    let limit = 0.52f64.atan();
    let below = rover.step_cost_on_grade(1.0, (limit - 1e-4).tan());
    let above = rover.step_cost_on_grade(1.0, (limit + 1e-4).tan());
    assert!(below.passable(), "{:?}", below.blocked);
    assert_eq!(above.blocked, Some(Blocked::TractionLimit));
    assert_eq!(Blocked::TractionLimit.reason(), "traction limit");
}

#[test]
fn tilt_limits_block_steep_steps_and_strong_roll() {
    let rover = firm();
    let c = rover.step_cost_on_grade(1.0, 25f64.to_radians().tan());
    assert_eq!(c.blocked, Some(Blocked::TiltLimit));
    let rolled = Attitude {
        pitch_rad: 0.0,
        roll_rad: rover.roll_limit_rad() + 1e-6,
    };
    assert_eq!(
        rover.step_cost(1.0, 0.0, rolled).blocked,
        Some(Blocked::TiltLimit)
    );
    let nan = rover.step_cost(1.0, f64::NAN, Attitude::default());
    assert_eq!(nan.blocked, Some(Blocked::NoTerrain));
}

fn on_sand() -> Rover {
    Rover {
        soil: named_soil("dry-sand"),
        rolling_resistance: 0.0,
        max_climb_rad: 40f64.to_radians(),
        ..firm()
    }
}

/// Invariants of the soil model: soft soil costs more than the same C_rr on firm
/// ground, needs slip, and closes a steep climb by the traction limit.
#[test]
fn soft_sand_adds_compaction_and_slip_and_closes_steep_climbs_by_traction() {
    let sand = on_sand();
    let flat = sand.step_cost_on_grade(1.0, 0.0);
    assert!(flat.passable() && flat.sinkage_m > 0.0 && flat.slip > 0.0);
    assert!(flat.work_j > 0.0, "compaction resistance on the level");
    let firm_same = Rover {
        soil: None,
        ..on_sand()
    }
    .step_cost_on_grade(1.0, 0.0);
    assert!(flat.drive_energy_j > firm_same.drive_energy_j);
    let mut last_slip = flat.slip;
    let mut closed_at = None;
    for deg in 1..40 {
        let c = sand.step_cost_on_grade(1.0, (deg as f64).to_radians().tan());
        if let Some(why) = c.blocked {
            closed_at = Some((deg, why));
            break;
        }
        assert!(c.slip > last_slip, "slip rises with grade");
        last_slip = c.slip;
    }
    let (deg, why) = closed_at.expect("dry sand closes some climb below 40°");
    assert_eq!(why, Blocked::TractionLimit);
    // The soil's friction angle (28°) bounds the climb from above: thrust cannot exceed
    // A c + W tan φ (Mohr–Coulomb), and cohesion is small in dry sand.
    assert!(deg <= 28, "closed at {deg}°");
}

/// Reversing a level step costs the same; the cost scales with length.
#[test]
fn level_steps_are_symmetric_and_additive() {
    let r = on_sand();
    let a = r.step_cost_on_grade(2.0, 0.0);
    let b = r.step_cost_on_grade(1.0, 0.0);
    assert!(close(a.drive_energy_j, 2.0 * b.drive_energy_j, 1e-12));
    assert!(close(a.time_s, 2.0 * b.time_s, 1e-12));
    assert_eq!(r.turn_energy_j(-1.0), r.turn_energy_j(1.0));
}
