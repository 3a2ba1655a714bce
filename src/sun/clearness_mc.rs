//! Daily clear-sky index draws for the weather Monte Carlo: each local day's index (the
//! day's irradiation over the clear-sky one, 0..1) drawn independently from a Beta
//! distribution with that month's mean and standard deviation, from a small seeded
//! generator of our own, so that a run repeats exactly on any machine and thread count.
//!
//! # Method
//! - **Distribution**: Beta(α, β) on [0, 1] by the method of moments: with mean μ and
//!   standard deviation σ, `ν = μ(1−μ)/σ² − 1`, `α = μ·ν`, `β = (1−μ)·ν`; it needs
//!   `σ² < μ(1−μ)` (otherwise ν ≤ 0). Mean μ and variance σ² are then exact:
//!   `E = α/(α+β)`, `Var = αβ/((α+β)²(α+β+1))` (any statistics text; e.g. Johnson, Kotz
//!   and Balakrishnan, *Continuous Univariate Distributions* vol. 2, 2nd ed., Wiley 1995,
//!   ch. 25). σ = 0 (or μ at 0 or 1, where σ must be 0) gives μ every day.
//! - **Beta variates** as X/(X+Y) with X ~ Gamma(α), Y ~ Gamma(β), formed in logarithms
//!   (`1 / (1 + exp(ln Y − ln X))`) so that tiny shapes do not underflow to 0/0.
//! - **Gamma variates**: G. Marsaglia and W. W. Tsang, "A simple method for generating
//!   gamma variables", ACM Transactions on Mathematical Software 26(3), 363-372, 2000:
//!   for shape a ≥ 1, `d = a − 1/3`, `c = 1/√(9d)`; draw a normal x and a uniform u,
//!   `v = (1 + c x)³`, accept `d·v` when v > 0 and `ln u < x²/2 + d − d v + d ln v`
//!   (the squeeze `u < 1 − 0.0331 x⁴` first); for a < 1, `Gamma(a) = Gamma(a+1)·u^(1/a)`
//!   (the boost the paper gives for shapes below 1).
//! - **Normal variates**: Box-Muller (G. E. P. Box and M. E. Muller, Ann. Math. Statist.
//!   29(2), 610-611, 1958), cosine branch only.
//! - **Uniforms**: xoshiro256** (D. Blackman and S. Vigna, "Scrambled linear
//!   pseudorandom number generators", ACM TOMS 47(4), 2021), seeded through SplitMix64
//!   (G. L. Steele, D. Lea and C. H. Flood, "Fast splittable pseudorandom number
//!   generators", OOPSLA 2014; Vigna's public-domain C code), as the authors advise; the
//!   top 53 bits give a double in [0, 1).
//! - **Streams**: one generator per (season, run), seeded from the run's seed, the
//!   season's name (FNV-1a 64-bit hash, Fowler-Noll-Vo) and the run index through
//!   SplitMix64: the draws of a run depend on nothing else (not on the thread count, the
//!   order runs finish in or which other seasons are selected).
//!
//! # Limits
//! Days are independent: real cloudiness is autocorrelated (overcast spells last days),
//! so multi-day dark spells, which decide whether a pack survives, are under-sampled and
//! the probability of completing is optimistic. The intraday shape is the clear sky's,
//! scaled (no cloud passages). The monthly σ should come from the site's daily data
//! (the spread of daily measured / clear-sky irradiation within each month).
//!
//! # Units
//! Dimensionless indices; days are local calendar days.

use chrono::{Datelike, Duration, NaiveDate};

/// The name written into reports for the daily distribution.
pub const DISTRIBUTION: &str = "beta (method of moments on the monthly mean and sd), \
                                independent days";

/// SplitMix64: one step of the sequence from `state` (Steele, Lea and Flood 2014).
pub fn splitmix64(state: &mut u64) -> u64 {
    *state = state.wrapping_add(0x9E37_79B9_7F4A_7C15);
    let mut z = *state;
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// xoshiro256** (Blackman and Vigna 2021).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Xoshiro256 {
    s: [u64; 4],
}

impl Xoshiro256 {
    /// A generator whose state is four SplitMix64 outputs from `seed`.
    pub fn seeded(seed: u64) -> Xoshiro256 {
        let mut sm = seed;
        Xoshiro256 {
            s: [
                splitmix64(&mut sm),
                splitmix64(&mut sm),
                splitmix64(&mut sm),
                splitmix64(&mut sm),
            ],
        }
    }

    /// A generator with the given state (not all zero).
    pub fn from_state(s: [u64; 4]) -> Xoshiro256 {
        Xoshiro256 { s }
    }

    /// The next 64 random bits.
    pub fn next_u64(&mut self) -> u64 {
        let s = &mut self.s;
        let out = s[1].wrapping_mul(5).rotate_left(7).wrapping_mul(9);
        let t = s[1] << 17;
        s[2] ^= s[0];
        s[3] ^= s[1];
        s[1] ^= s[2];
        s[0] ^= s[3];
        s[2] ^= t;
        s[3] = s[3].rotate_left(45);
        out
    }

    /// A uniform double in [0, 1) (the top 53 bits).
    pub fn uniform(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// A standard normal variate (Box-Muller, cosine branch).
    pub fn normal(&mut self) -> f64 {
        let u1 = 1.0 - self.uniform(); // (0, 1]: ln is finite
        let u2 = self.uniform();
        (-2.0 * u1.ln()).sqrt() * (std::f64::consts::TAU * u2).cos()
    }

    /// ln of a Gamma(shape, 1) variate (Marsaglia and Tsang 2000); `shape` > 0.
    pub fn ln_gamma_variate(&mut self, shape: f64) -> f64 {
        if shape < 1.0 {
            let u = 1.0 - self.uniform();
            return self.ln_gamma_variate(shape + 1.0) + u.ln() / shape;
        }
        let d = shape - 1.0 / 3.0;
        let c = 1.0 / (9.0 * d).sqrt();
        loop {
            let x = self.normal();
            let v = 1.0 + c * x;
            if v <= 0.0 {
                continue;
            }
            let v = v * v * v;
            let u = self.uniform();
            let x2 = x * x;
            if u < 1.0 - 0.0331 * x2 * x2 || u.ln() < 0.5 * x2 + d * (1.0 - v + v.ln()) {
                return d.ln() + v.ln();
            }
        }
    }

    /// A Beta(α, β) variate; α, β > 0.
    pub fn beta(&mut self, alpha: f64, beta: f64) -> f64 {
        let lx = self.ln_gamma_variate(alpha);
        let ly = self.ln_gamma_variate(beta);
        1.0 / (1.0 + (ly - lx).exp())
    }
}

/// FNV-1a, 64 bits (Fowler, Noll and Vo): a stable hash of a season's name.
pub fn fnv1a64(text: &str) -> u64 {
    text.bytes().fold(0xCBF2_9CE4_8422_2325, |h, b| {
        (h ^ u64::from(b)).wrapping_mul(0x0000_0100_0000_01B3)
    })
}

/// The seed of run `run` of the season named `season` under the Monte Carlo seed `seed`
/// (module doc: streams).
pub fn stream_seed(seed: u64, season: &str, run: u64) -> u64 {
    let mut s = seed ^ fnv1a64(season);
    let a = splitmix64(&mut s);
    let mut t = a ^ run;
    splitmix64(&mut t)
}

/// The shapes of one month's Beta distribution, or a constant when σ = 0.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum DayLaw {
    /// Every day the mean (σ = 0).
    Constant(f64),
    /// Beta(α, β).
    Beta {
        /// α.
        alpha: f64,
        /// β.
        beta: f64,
    },
}

/// Why a month's mean and standard deviation give no Beta distribution.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error(
    "month {month}: clearness mean {mean} with sd {sd} (sd² = {sd2:.4} must be below \
     mean·(1 − mean) = {limit:.4} for a Beta distribution)"
)]
pub struct LawError {
    /// Month, 1..12.
    pub month: usize,
    /// The mean.
    pub mean: f64,
    /// The standard deviation.
    pub sd: f64,
    /// sd².
    pub sd2: f64,
    /// mean·(1 − mean).
    pub limit: f64,
}

impl DayLaw {
    /// Method of moments (module doc); `month` (1..12) only names the month in errors.
    pub fn from_mean_sd(mean: f64, sd: f64, month: usize) -> Result<DayLaw, LawError> {
        let limit = mean * (1.0 - mean);
        let err = LawError {
            month,
            mean,
            sd,
            sd2: sd * sd,
            limit,
        };
        if !(0.0..=1.0).contains(&mean) || sd.is_nan() || sd < 0.0 {
            return Err(err);
        }
        if sd == 0.0 {
            return Ok(DayLaw::Constant(mean));
        }
        if sd * sd >= limit {
            return Err(err);
        }
        let nu = limit / (sd * sd) - 1.0;
        Ok(DayLaw::Beta {
            alpha: mean * nu,
            beta: (1.0 - mean) * nu,
        })
    }

    /// One day's index.
    pub fn draw(&self, rng: &mut Xoshiro256) -> f64 {
        match *self {
            DayLaw::Constant(k) => k,
            DayLaw::Beta { alpha, beta } => rng.beta(alpha, beta),
        }
    }
}

/// The twelve monthly laws of a site's daily clear-sky index.
#[derive(Debug, Clone, PartialEq)]
pub struct DailyClearness {
    laws: [DayLaw; 12],
}

impl DailyClearness {
    /// From the monthly means and standard deviations, January..December.
    pub fn new(mean: &[f64; 12], sd: &[f64; 12]) -> Result<DailyClearness, LawError> {
        let mut laws = [DayLaw::Constant(0.0); 12];
        for m in 0..12 {
            laws[m] = DayLaw::from_mean_sd(mean[m], sd[m], m + 1)?;
        }
        Ok(DailyClearness { laws })
    }

    /// The law of month `month` (1..12).
    pub fn law(&self, month: u32) -> DayLaw {
        self.laws[(month.clamp(1, 12) - 1) as usize]
    }

    /// `days` indices for the local days from `first` on, each from its own month's law.
    pub fn draw_days(&self, first: NaiveDate, days: usize, rng: &mut Xoshiro256) -> Vec<f64> {
        (0..days)
            .map(|i| {
                let date = first + Duration::days(i as i64);
                self.law(date.month()).draw(rng)
            })
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// SplitMix64 from seed 1234567: the first three outputs of Vigna's reference C code
    /// (prng.di.unimi.it, splitmix64.c), as asserted by an independent implementation's
    /// test suite (the Arc.Crypto library's Xoshiro256StarStarTest, C#).
    #[test]
    fn splitmix_matches_the_reference_sequence() {
        let mut s = 1_234_567u64;
        let got: Vec<u64> = (0..3).map(|_| splitmix64(&mut s)).collect();
        assert_eq!(
            got,
            [
                6_457_827_717_110_365_317,
                3_203_168_211_198_807_973,
                9_817_491_932_198_370_423
            ]
        );
    }

    #[test]
    fn mean_sd_limits() {
        assert!(DayLaw::from_mean_sd(0.5, 0.5, 1).is_err());
        assert!(DayLaw::from_mean_sd(0.5, 0.49, 1).is_ok());
        assert_eq!(DayLaw::from_mean_sd(0.0, 0.0, 1), Ok(DayLaw::Constant(0.0)));
        assert!(DayLaw::from_mean_sd(0.0, 0.01, 1).is_err());
        let Ok(DayLaw::Beta { alpha, beta }) = DayLaw::from_mean_sd(0.6, 0.2, 3) else {
            panic!()
        };
        // ν = 0.24/0.04 − 1 = 5: α = 3, β = 2.
        assert!((alpha - 3.0).abs() < 1e-12 && (beta - 2.0).abs() < 1e-12);
    }

    #[test]
    fn tiny_shapes_stay_inside_zero_one() {
        let mut r = Xoshiro256::seeded(9);
        for _ in 0..1000 {
            let x = r.beta(0.01, 0.02);
            assert!((0.0..=1.0).contains(&x), "{x}");
        }
    }
}
