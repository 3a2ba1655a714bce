//! Body pitch and roll of a rigid vehicle standing on a plane, from the plane's gradient
//! and the vehicle's heading.
//!
//! Geometry (vector algebra, common practice): the plane z = gx·x + gy·y (x east, y
//! north) has normal n = (−gx, −gy, 1)/N, N = √(1 + gx² + gy²). A vehicle heading along
//! the horizontal unit vector h = (sin ψ, cos ψ) climbs with slope s = g·h and sees the
//! cross slope t = g·h⊥, h⊥ = (cos ψ, −sin ψ) (to its right). In the yaw-pitch-roll
//! (Z-Y-X) convention the body's up axis is n, so cos θ·cos φ = n_z = 1/N, and the
//! forward axis f = (h, s)/√(1 + s²) gives the pitch; hence
//!
//! ```text
//!   pitch θ = atan(s)                     (+ nose up)
//!   roll  φ = −atan(t / √(1 + s²))        (+ left side up, as in the vehicle model)
//! ```
//!
//! With these angles the ratio of the lateral to the normal component of gravity in the
//! body frame is tan φ, the quantity a static tip-over angle is compared with.
//!
//! A traverse straight up a slope of angle α gives θ = α, φ = 0; straight across it
//! θ = 0, φ = ±α. Suspension travel and wheel sinkage are left out here (the vehicle
//! model's wheel-contact fit refines the attitude).
//!
//! # Units
//! Gradients in m/m; angles in radians.

/// Pitch and roll (radians) of a vehicle heading `heading_rad` (clockwise from north) on
/// a plane with gradient (gx east, gy north).
#[inline]
pub fn pitch_roll(gx: f64, gy: f64, heading_rad: f64) -> (f64, f64) {
    let (sh, ch) = heading_rad.sin_cos();
    let s = gx * sh + gy * ch;
    let t = gx * ch - gy * sh;
    pitch_roll_from_slopes(s, t)
}

/// Pitch and roll (radians) from the along-track slope s and the cross slope t (m/m,
/// rising to the right of the heading).
#[inline]
pub fn pitch_roll_from_slopes(s: f64, t: f64) -> (f64, f64) {
    (s.atan(), (-t / (1.0 + s * s).sqrt()).atan())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Analytic: on a plane of slope angle α facing north (uphill to the south), driving
    /// south gives pitch α, driving east gives roll ±α, driving north pitch −α.
    #[test]
    fn straight_up_and_across_a_slope() {
        for alpha_deg in [5.0f64, 20.0, 35.0] {
            let a = alpha_deg.to_radians();
            let gy = -a.tan(); // rises southward
            let (p, r) = pitch_roll(0.0, gy, std::f64::consts::PI);
            assert!((p - a).abs() < 1e-12 && r.abs() < 1e-12);
            let (p, r) = pitch_roll(0.0, gy, std::f64::consts::FRAC_PI_2);
            assert!(p.abs() < 1e-12);
            assert!(
                (r.abs() - a).abs() < 1e-12,
                "{} vs {}",
                r.to_degrees(),
                alpha_deg
            );
            let (p, _) = pitch_roll(0.0, gy, 0.0);
            assert!((p + a).abs() < 1e-12);
        }
    }

    /// The body's up axis is the plane normal: for any heading, the tilt of the normal
    /// from vertical (the plane's slope angle α) satisfies cos α = cos θ · cos φ.
    #[test]
    fn pitch_and_roll_compose_to_the_plane_slope() {
        for &(gx, gy) in &[(0.3f64, -0.2f64), (-0.5, 0.1), (0.05, 0.6)] {
            let alpha = gx.hypot(gy).atan();
            for k in 0..16 {
                let (p, r) = pitch_roll(gx, gy, k as f64 * std::f64::consts::TAU / 16.0);
                assert!((p.cos() * r.cos() - alpha.cos()).abs() < 1e-12);
            }
        }
    }
}
