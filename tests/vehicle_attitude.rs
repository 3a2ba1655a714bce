//! Body attitude on analytic planes and across a step edge; tip-over statics.

use sunward::terrain::{Dem, GeoRef, Grid};
use sunward::vehicle::{body_pose, Attitude, Blocked, Rover};

const CELL_M: f64 = 0.25;
const SIZE: usize = 41;

/// A DEM sampled from z(east, north) at cell centres (GeoRef::local: origin at the
/// upper-left corner, rows southward).
fn dem_of(z: impl Fn(f64, f64) -> f64) -> Dem {
    let mut data = Vec::with_capacity(SIZE * SIZE);
    for r in 0..SIZE {
        for c in 0..SIZE {
            let e = (c as f64 + 0.5) * CELL_M;
            let n = -(r as f64 + 0.5) * CELL_M;
            data.push(z(e, n) as f32);
        }
    }
    Grid::from_vec(SIZE, SIZE, data, GeoRef::local(CELL_M))
}

/// A plane of slope α whose downhill side faces azimuth A (analytic geometry: the
/// uphill gradient points to A + π, so ∂z/∂e = −tan α sin A, ∂z/∂n = −tan α cos A).
/// For every heading the fitted body must report that slope as its tilt and that
/// aspect as the azimuth its top faces, and pitch = atan(∂z/∂forward).
#[test]
fn attitude_on_planes_equals_slope_and_aspect_for_every_heading() {
    let rover = Rover::default();
    let layout = rover.wheel_layout();
    let centre = SIZE as f64 / 2.0;
    for slope_deg in [3.0f64, 12.0, 25.0, 35.0] {
        for aspect_deg in [0.0f64, 37.0, 90.0, 200.0, 315.0] {
            let (t, a) = (slope_deg.to_radians().tan(), aspect_deg.to_radians());
            let (gx, gy) = (-t * a.sin(), -t * a.cos());
            let dem = dem_of(|e, n| gx * e + gy * n + 5.0);
            for h in (0..360).step_by(10) {
                let heading = (h as f64).to_radians();
                let pose = body_pose(&dem, &layout, centre, centre, heading).expect("on the grid");
                let att = pose.attitude;
                let tilt = att.tilt_rad(heading);
                let facing = att.facing_azimuth_rad(heading);
                let d_az = (facing - a + std::f64::consts::PI).rem_euclid(std::f64::consts::TAU)
                    - std::f64::consts::PI;
                assert!(
                    (tilt - slope_deg.to_radians()).abs() < 1e-4,
                    "tilt {slope_deg} {aspect_deg} {h}"
                );
                assert!(
                    d_az.abs() < 1e-4,
                    "aspect {slope_deg} {aspect_deg} {h}: {facing}"
                );
                let g_forward = gx * heading.sin() + gy * heading.cos();
                assert!((att.pitch_rad - g_forward.atan()).abs() < 1e-4);
                assert!(pose.residual_rms_m < 1e-4);
                let direct = Attitude::from_gradient(gx, gy, heading);
                assert!((direct.roll_rad - att.roll_rad).abs() < 1e-4);
            }
        }
    }
}

/// Driving east over a 0.3 m step: pitch stays within what the step can cause and
/// moves continuously. Bound on the least-squares slope: each contact height changes
/// by at most h·Δx/cell over a move Δx (bilinear ramp), so
/// |Δg_f| ≤ Σ|f_k| · h·Δx/cell / Σ f_k² (0.033 for the default six wheels and a 1/20
/// cell move); overall |g_f| ≤ h · Σ|f_k| / Σ f_k² = 0.667.
#[test]
fn attitude_over_a_step_edge_is_bounded_and_continuous() {
    let rover = Rover::default();
    let layout = rover.wheel_layout();
    let step_m = 0.3;
    let edge_e = 20.0 * CELL_M;
    let dem = dem_of(|e, _| if e < edge_e { 0.0 } else { step_m });
    let sum_abs: f64 = layout.offsets_m().iter().map(|o| o.0.abs()).sum();
    let sum_sq: f64 = layout.offsets_m().iter().map(|o| o.0 * o.0).sum();
    let max_g = step_m * sum_abs / sum_sq;
    let max_dg = sum_abs * step_m * 0.05 / sum_sq;
    let mut last: Option<f64> = None;
    let mut peak: f64 = 0.0;
    for k in 0..=400 {
        let px = 10.0 + 0.05 * k as f64;
        let pose =
            body_pose(&dem, &layout, px, 20.5, std::f64::consts::FRAC_PI_2).expect("on the grid");
        let g = pose.attitude.pitch_rad.tan();
        assert!(
            g >= -1e-9 && g <= max_g + 1e-6,
            "pitch slope {g} at px {px}"
        );
        assert!(pose.attitude.roll_rad.abs() < 1e-6);
        if let Some(prev) = last {
            assert!(
                (g - prev).abs() <= max_dg + 1e-6,
                "jump {} at px {px}",
                g - prev
            );
        }
        peak = peak.max(g);
        last = Some(g);
    }
    assert!(peak > 0.1, "the edge is felt");
}

#[test]
fn no_pose_off_the_grid_or_on_no_data() {
    let rover = Rover::default();
    let mut dem = dem_of(|_, _| 1.0);
    assert!(body_pose(&dem, &rover.wheel_layout(), 0.5, 0.5, 0.0).is_none());
    // Heading north, the front-left contact sits 1.6 cells west and 1.8 north of the centre.
    dem.set(18, 18, f32::NAN);
    assert!(body_pose(&dem, &rover.wheel_layout(), 20.5, 20.5, 0.0).is_none());
}

/// Textbook statics of a rigid body on a plane: it tips sideways when the gravity line
/// through the centre of gravity passes the wheel line, at atan((track/2) / h).
#[test]
fn tip_over_angle_is_atan_half_track_over_cg_height() {
    let rover = Rover {
        track_m: 0.9,
        cg_height_m: 0.6,
        wheelbase_m: 1.2,
        ..Rover::default()
    };
    let tip = rover.tip_over();
    assert!((tip.sideways_rad - (0.45f64 / 0.6).atan()).abs() < 1e-15);
    assert!((tip.forward_rad - (0.6f64 / 0.6).atan()).abs() < 1e-15);
    assert!(tip.margin_rad(0.0, tip.sideways_rad).abs() < 1e-12);
    assert!(tip.margin_rad(0.0, tip.sideways_rad + 0.01) < 0.0);
    let limit = rover.roll_limit_rad();
    assert!(limit <= 0.5 * tip.sideways_rad + 1e-15);
    let over = Attitude {
        pitch_rad: 0.0,
        roll_rad: limit + 0.01,
    };
    assert_eq!(rover.tilt_blocked(over), Some(Blocked::TiltLimit));
}
