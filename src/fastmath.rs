//! Elementary functions for hot loops, cheaper than the platform's libm and accurate to
//! a few units in the last place.
//!
//! [`atan`] is the rational approximation of Moshier's Cephes Math Library (atan.c:
//! reduction at tan(3π/8) and 0.66, then x + x·z·P(z)/Q(z) with z = x², P of degree 4
//! and Q of degree 5, relative error about 2e-16 in the library's own tests); the
//! coefficients are from memory and are checked here against std's `f64::atan` (the
//! platform's libm) on a dense sweep and at the reduction boundaries (at most 1 ulp
//! apart there). The route planner calls it once per priced step (the speed law), where
//! the libm call took about 7 % of the search's instructions.

use std::f64::consts::{FRAC_PI_2, FRAC_PI_4};

/// tan(3π/8).
const T3P8: f64 = 2.414_213_562_373_095;
/// The low part of π/2 (π/2 − its f64 value), added back after the reduction.
const MOREBITS: f64 = 6.123_233_995_736_766e-17;

const P: [f64; 5] = [
    -8.750_608_600_031_904e-1,
    -1.615_753_718_733_365e1,
    -7.500_855_792_314_705e1,
    -1.228_866_684_490_136_2e2,
    -6.485_021_904_942_025e1,
];
const Q: [f64; 5] = [
    2.485_846_490_142_306_3e1,
    1.650_270_098_316_988_6e2,
    4.328_810_604_912_903e2,
    4.853_903_996_359_137e2,
    1.945_506_571_482_614e2,
];

/// Arc tangent, radians, within a few ulps of `f64::atan` (module doc). NaN gives NaN.
#[inline]
pub fn atan(x: f64) -> f64 {
    let a = x.abs();
    let (base, r, extra) = if a > T3P8 {
        (FRAC_PI_2, -1.0 / a, MOREBITS)
    } else if a <= 0.66 {
        (0.0, a, 0.0)
    } else {
        (FRAC_PI_4, (a - 1.0) / (a + 1.0), 0.5 * MOREBITS)
    };
    let z = r * r;
    let p = (((P[0] * z + P[1]) * z + P[2]) * z + P[3]) * z + P[4];
    let q = ((((z + Q[0]) * z + Q[1]) * z + Q[2]) * z + Q[3]) * z + Q[4];
    let y = base + (r * (z * p / q) + r + extra);
    if x.is_sign_negative() {
        -y
    } else {
        y
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Distance in units in the last place between two finite values of one sign.
    fn ulps(a: f64, b: f64) -> u64 {
        (a.to_bits() as i64 - b.to_bits() as i64).unsigned_abs()
    }

    #[test]
    fn atan_matches_libm_within_a_few_ulps() {
        let mut worst = (0, 0.0);
        let mut check = |x: f64| {
            let (a, b) = (atan(x), x.atan());
            let d = if b == 0.0 { 0 } else { ulps(a, b) };
            assert!(d <= 2, "atan({x:e}) = {a:e}, libm {b:e}: {d} ulps");
            if d > worst.0 {
                worst = (d, x);
            }
        };
        // A dense sweep over the slopes a rover meets and far beyond, both signs.
        for i in 0..=400_000 {
            let x = -20.0 + 40.0 * i as f64 / 400_000.0;
            check(x);
        }
        // Geometric sweeps: tiny and huge magnitudes.
        let mut x = 1e-300;
        while x < 1e300 {
            check(x);
            check(-x);
            x *= 1.013;
        }
        // Either side of the reduction boundaries.
        for b in [0.66, T3P8] {
            let mut y = b;
            for _ in 0..64 {
                check(y);
                y = f64::from_bits(y.to_bits() + 1);
            }
            let mut y = b;
            for _ in 0..64 {
                check(y);
                y = f64::from_bits(y.to_bits() - 1);
            }
        }
        assert!(worst.0 <= 1, "{worst:?}");
    }

    #[test]
    fn atan_special_values() {
        assert_eq!(atan(0.0).to_bits(), 0f64.to_bits());
        assert_eq!(atan(-0.0).to_bits(), (-0f64).to_bits());
        assert_eq!(atan(f64::INFINITY), FRAC_PI_2);
        assert_eq!(atan(f64::NEG_INFINITY), -FRAC_PI_2);
        assert!(atan(f64::NAN).is_nan());
        assert_eq!(atan(1.0), FRAC_PI_4);
    }
}
