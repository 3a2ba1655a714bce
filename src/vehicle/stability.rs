//! Static stability: tip-over angles of a rigid body on a plane and the margin left at
//! the current attitude.
//!
//! # Method
//! Textbook statics of a rigid body resting on a rectangular support polygon (the wheel
//! contacts: wheelbase L fore/aft, track T across), centre of gravity at height h above
//! the contact plane and `a` ahead of mid-wheelbase. The body tips over an edge when the
//! gravity line through the centre of gravity leaves the polygon:
//! ```text
//!   sideways  φ_tip = atan((T/2) / h)
//!   forward   θ_fwd = atan((L/2 − a) / h)      (nose down, over the front axle)
//!   backward  θ_bwd = atan((L/2 + a) / h)      (nose up, over the rear axle)
//! ```
//! At body pitch p (nose up) and roll φ, gravity seen from the body is
//! (−sin p, −cos p sin φ, −cos p cos φ) in (forward, left, up), so the gravity line's
//! offset per unit height is tan φ sideways and tan p / cos φ fore/aft. The margin is
//! the smallest of `φ_tip − |φ|` and `θ_edge − atan(|tan p| / cos φ)` over the edge the
//! body leans towards; negative means the body tips.
//!
//! # Units
//! Lengths in metres, angles in radians.
//!
//! # Validity and what is left out
//! Static only: no suspension compliance (which moves the centre of gravity outwards
//! on a slope), no dynamic loads from turning, braking or bumps, no lateral centre of
//! gravity offset, no sliding (see traction). Real operations keep a large safety
//! factor below these angles; the rover's `roll_stability_fraction` is that factor.

/// Tip-over angles of a body on a plane.
///
/// # Units
/// Radians.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TipOver {
    /// Roll at which the body tips sideways (either side).
    pub sideways_rad: f64,
    /// Nose-down pitch at which it tips over the front axle.
    pub forward_rad: f64,
    /// Nose-up pitch at which it tips over the rear axle.
    pub backward_rad: f64,
}

/// Tip-over angles from the support rectangle and the centre of gravity (module doc).
pub fn tip_over(track_m: f64, wheelbase_m: f64, cg_height_m: f64, cg_forward_m: f64) -> TipOver {
    TipOver {
        sideways_rad: (0.5 * track_m / cg_height_m).atan(),
        forward_rad: ((0.5 * wheelbase_m - cg_forward_m) / cg_height_m).atan(),
        backward_rad: ((0.5 * wheelbase_m + cg_forward_m) / cg_height_m).atan(),
    }
}

impl TipOver {
    /// Smallest angular margin to tipping at body pitch (nose up positive) and roll,
    /// radians; negative when the body tips.
    pub fn margin_rad(&self, pitch_rad: f64, roll_rad: f64) -> f64 {
        let side = self.sideways_rad - roll_rad.abs();
        let lean = (pitch_rad.tan().abs() / roll_rad.cos()).atan();
        let edge = if pitch_rad >= 0.0 {
            self.backward_rad
        } else {
            self.forward_rad
        };
        side.min(edge - lean)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn margin_is_the_tip_angle_on_a_level_plane_and_zero_at_the_tip() {
        let t = tip_over(0.8, 1.0, 0.4, 0.1);
        assert!((t.margin_rad(0.0, 0.0) - t.sideways_rad.min(t.forward_rad)).abs() < 1e-12);
        assert!(t.margin_rad(0.0, t.sideways_rad).abs() < 1e-12);
        assert!(t.margin_rad(-t.forward_rad, 0.0).abs() < 1e-12);
        assert!(t.forward_rad < t.backward_rad);
    }
}
