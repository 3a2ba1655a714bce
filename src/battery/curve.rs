//! Piecewise-linear curves y(x) on sorted nodes: the form of every tabulated battery
//! property (open-circuit voltage, capacity against temperature).
//!
//! Between nodes the curve is linear; outside the node range it is held at the end
//! value (no extrapolation: a table says nothing beyond its ends). The integral is
//! exact for the piecewise-linear curve (trapezoids), so stored energy computed from an
//! open-circuit-voltage curve is consistent with the voltage used in each step.
//!
//! # Units
//! Whatever the caller's table carries; the curve is unit-agnostic.

/// A piecewise-linear curve through `(x[i], y[i])`, x strictly increasing.
#[derive(Debug, Clone, PartialEq)]
pub struct Curve {
    xs: Vec<f64>,
    ys: Vec<f64>,
    /// `cum[i]` = integral of the curve from `xs[0]` to `xs[i]`.
    cum: Vec<f64>,
    /// (n − 1)/(x_last − x_first): the segment of x on evenly spaced nodes, the first
    /// guess of [`Curve::segment`].
    per_x: f64,
}

/// Why a set of nodes cannot make a curve.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum CurveShapeError {
    /// Fewer than two nodes, or x and y of different lengths.
    TooFewNodes,
    /// A value is NaN or infinite.
    NotFinite,
    /// x is not strictly increasing.
    NotIncreasing,
}

impl Curve {
    /// Builds a curve from nodes; x must be finite and strictly increasing.
    pub fn new(xs: Vec<f64>, ys: Vec<f64>) -> Result<Curve, CurveShapeError> {
        if xs.len() < 2 || xs.len() != ys.len() {
            return Err(CurveShapeError::TooFewNodes);
        }
        if xs.iter().chain(&ys).any(|v| !v.is_finite()) {
            return Err(CurveShapeError::NotFinite);
        }
        if xs.windows(2).any(|w| w[1] <= w[0]) {
            return Err(CurveShapeError::NotIncreasing);
        }
        let mut cum = vec![0.0; xs.len()];
        for i in 1..xs.len() {
            cum[i] = cum[i - 1] + 0.5 * (ys[i] + ys[i - 1]) * (xs[i] - xs[i - 1]);
        }
        let per_x = (xs.len() - 1) as f64 / (xs[xs.len() - 1] - xs[0]);
        Ok(Curve { xs, ys, cum, per_x })
    }

    /// The node abscissae.
    pub fn xs(&self) -> &[f64] {
        &self.xs
    }

    /// The node ordinates.
    pub fn ys(&self) -> &[f64] {
        &self.ys
    }

    /// Index `i` of the segment `[xs[i], xs[i+1]]` that holds `x`, for `x` strictly
    /// inside the node range: the largest i with xs[i] ≤ x. Guessed as if the nodes
    /// were evenly spaced, then moved to the segment that holds x (no moves on evenly
    /// spaced tables such as the OCV curves, a walk on others): the same index a binary
    /// search gives, without its unpredictable branches (every pack step asks several
    /// times).
    fn segment(&self, x: f64) -> usize {
        let last = self.xs.len() - 2;
        let guess = ((x - self.xs[0]) * self.per_x) as usize;
        let mut i = guess.min(last);
        while i > 0 && self.xs[i] > x {
            i -= 1;
        }
        while i < last && self.xs[i + 1] <= x {
            i += 1;
        }
        i
    }

    /// y at `x`, linear between nodes, held at the end values outside them.
    pub fn eval(&self, x: f64) -> f64 {
        let n = self.xs.len();
        if x <= self.xs[0] {
            return self.ys[0];
        }
        if x >= self.xs[n - 1] {
            return self.ys[n - 1];
        }
        let i = self.segment(x);
        let t = (x - self.xs[i]) / (self.xs[i + 1] - self.xs[i]);
        self.ys[i] + t * (self.ys[i + 1] - self.ys[i])
    }

    /// Integral of the curve from `xs[0]` to `x` (end values held outside the range).
    pub fn integral_to(&self, x: f64) -> f64 {
        let n = self.xs.len();
        if x <= self.xs[0] {
            return self.ys[0] * (x - self.xs[0]);
        }
        if x >= self.xs[n - 1] {
            return self.cum[n - 1] + self.ys[n - 1] * (x - self.xs[n - 1]);
        }
        let i = self.segment(x);
        // eval(x) on the same segment, without a second search.
        let t = (x - self.xs[i]) / (self.xs[i + 1] - self.xs[i]);
        let y = self.ys[i] + t * (self.ys[i + 1] - self.ys[i]);
        self.cum[i] + 0.5 * (self.ys[i] + y) * (x - self.xs[i])
    }

    /// Mean of the curve over `[a, b]` (either order); the value at `a` when `a == b`.
    pub fn mean(&self, a: f64, b: f64) -> f64 {
        if (b - a).abs() < 1e-12 {
            return self.eval(0.5 * (a + b));
        }
        (self.integral_to(b) - self.integral_to(a)) / (b - a)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn eval_and_integral_of_a_known_polyline() {
        // y = 2x on [0,1], then y = 2 on [1,3]: integral to 3 is 1 + 4 = 5.
        let c = Curve::new(vec![0.0, 1.0, 3.0], vec![0.0, 2.0, 2.0]).unwrap();
        assert!((c.eval(0.25) - 0.5).abs() < 1e-15);
        assert!((c.eval(2.0) - 2.0).abs() < 1e-15);
        assert!((c.integral_to(0.5) - 0.25).abs() < 1e-15);
        assert!((c.integral_to(3.0) - 5.0).abs() < 1e-15);
        assert!((c.mean(0.0, 1.0) - 1.0).abs() < 1e-15);
        assert_eq!(c.eval(-1.0), 0.0);
        assert_eq!(c.eval(9.0), 2.0);
    }

    /// The guessed segment is the one a binary search over the nodes finds (the largest
    /// i with xs[i] <= x), on evenly and unevenly spaced nodes, at the nodes themselves
    /// and between them.
    #[test]
    fn segment_equals_the_binary_search() {
        let mut rng = crate::terrain::synth::SplitMix64::new(11);
        for case in 0..200 {
            let n = 2 + (rng.next_f64() * 30.0) as usize;
            let mut xs = vec![rng.next_f64() * 10.0 - 5.0];
            for _ in 1..n {
                // Evenly spaced for a third of the cases, else gaps over three decades.
                let gap = if case % 3 == 0 {
                    0.01
                } else {
                    10f64.powf(rng.next_f64() * 3.0 - 2.0)
                };
                xs.push(xs[xs.len() - 1] + gap);
            }
            let c = Curve::new(xs.clone(), vec![0.0; n]).unwrap();
            let mut probes: Vec<f64> = xs[1..n - 1].to_vec();
            let span = xs[n - 1] - xs[0];
            probes.extend((0..50).map(|_| xs[0] + span * rng.next_f64()));
            for x in probes.into_iter().filter(|&x| x > xs[0] && x < xs[n - 1]) {
                let k = xs.partition_point(|&v| v <= x);
                assert_eq!(c.segment(x), (k - 1).min(n - 2), "case {case}, x {x}");
            }
        }
    }

    #[test]
    fn bad_nodes_are_refused() {
        assert_eq!(
            Curve::new(vec![0.0], vec![1.0]),
            Err(CurveShapeError::TooFewNodes)
        );
        assert_eq!(
            Curve::new(vec![0.0, 0.0], vec![1.0, 2.0]),
            Err(CurveShapeError::NotIncreasing)
        );
        assert_eq!(
            Curve::new(vec![0.0, f64::NAN], vec![1.0, 2.0]),
            Err(CurveShapeError::NotFinite)
        );
    }
}
