//! Synthetic demo terrain: seeded fractal relief with a ridge, a valley and a scarp.
//!
//! Not a physical model: a documented, reproducible generator for demo data and tests.
//! The relief is fractional Brownian motion (a sum of octaves of value noise, each
//! octave half the wavelength and 0.4 times the amplitude of the last; Musgrave
//! in Ebert et al., *Texturing and Modeling: A Procedural Approach*, 3rd ed., 2003,
//! ch. 16), plus three landforms placed from the same seed: a ridge with a Gaussian
//! cross-section, a meandering valley, and a steep scarp (a smooth step three cells wide).
//! The same seed, size and cell size give the same grid on every machine (integer hashing
//! and plain f64 arithmetic only).
//!
//! # Units
//! Cell size and elevations in metres.

use crate::terrain::error::TerrainError;
use crate::terrain::raster::{Dem, GeoRef, Grid};

/// Amplitude ratio between successive octaves: below 0.5 so that slopes shrink at
/// finer scales (0.5 would give every octave the same slopes).
const PERSISTENCE: f64 = 0.4;

/// Generator settings.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SynthParams {
    /// Cells per side (16..=16384).
    pub size: usize,
    /// Cell size, metres (0.01..=1000).
    pub cell_m: f64,
    /// Seed of every random choice.
    pub seed: u64,
    /// Elevation of the mean surface, metres.
    pub base_m: f64,
    /// Relief scale: the fractal relief's amplitude as a share of the grid's extent
    /// (default 0.01: about 10 m of relief on a 1 km grid, rolling but drivable).
    pub relief: f64,
}

impl Default for SynthParams {
    fn default() -> Self {
        SynthParams {
            size: 512,
            cell_m: 2.0,
            seed: 1,
            base_m: 500.0,
            relief: 0.01,
        }
    }
}

/// SplitMix64 (Steele, Lea and Flood, "Fast splittable pseudorandom number generators",
/// OOPSLA 2014): a tiny, well-mixed 64-bit generator.
#[derive(Debug, Clone)]
pub struct SplitMix64(u64);

impl SplitMix64 {
    /// A generator from a seed.
    pub fn new(seed: u64) -> Self {
        SplitMix64(seed)
    }

    /// The next 64 random bits.
    pub fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        mix(self.0)
    }

    /// A uniform number in [0, 1).
    pub fn next_f64(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 / (1u64 << 53) as f64
    }
}

fn mix(mut z: u64) -> u64 {
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// Lattice value in [−1, 1] for integer point (i, j) of an octave.
fn lattice(seed: u64, octave: u32, i: i64, j: i64) -> f64 {
    let h =
        mix(seed
            ^ mix((i as u64).wrapping_mul(0x9E37_79B1) ^ mix(j as u64 ^ ((octave as u64) << 48))));
    (h >> 11) as f64 / (1u64 << 52) as f64 - 1.0
}

fn value_noise(seed: u64, octave: u32, x: f64, y: f64) -> f64 {
    let (i, j) = (x.floor(), y.floor());
    let (tx, ty) = (x - i, y - j);
    let fade = |t: f64| t * t * t * (t * (t * 6.0 - 15.0) + 10.0);
    let (sx, sy) = (fade(tx), fade(ty));
    let (i, j) = (i as i64, j as i64);
    let v00 = lattice(seed, octave, i, j);
    let v10 = lattice(seed, octave, i + 1, j);
    let v01 = lattice(seed, octave, i, j + 1);
    let v11 = lattice(seed, octave, i + 1, j + 1);
    let a = v00 + (v10 - v00) * sx;
    let b = v01 + (v11 - v01) * sx;
    a + (b - a) * sy
}

/// Fractional Brownian motion at (x, y) in wavelengths of the first octave.
fn fbm(seed: u64, x: f64, y: f64, octaves: u32, persistence: f64) -> f64 {
    let (mut sum, mut amp, mut freq) = (0.0, 1.0, 1.0);
    for o in 0..octaves {
        sum += amp * value_noise(seed, o, x * freq, y * freq);
        amp *= persistence;
        freq *= 2.0;
    }
    sum
}

/// The three landforms, placed from the seed.
struct Landforms {
    ridge: (f64, f64, f64, f64, f64),
    valley: (f64, f64, f64, f64, f64),
    scarp: (f64, f64, f64, f64),
}

impl Landforms {
    fn new(rng: &mut SplitMix64, extent: f64) -> Landforms {
        let ang = |r: &mut SplitMix64| r.next_f64() * std::f64::consts::PI;
        let pos = |r: &mut SplitMix64| (0.25 + 0.5 * r.next_f64()) * extent;
        Landforms {
            // (x0, y0, direction, height, half-width)
            ridge: (pos(rng), pos(rng), ang(rng), 0.03 * extent, 0.1 * extent),
            // (x0, y0, direction, depth, half-width)
            valley: (pos(rng), pos(rng), ang(rng), 0.02 * extent, 0.06 * extent),
            // (x0, y0, direction, height)
            scarp: (pos(rng), pos(rng), ang(rng), 0.012 * extent),
        }
    }

    /// (along, across) coordinates of (x, y) relative to a line.
    fn frame(x: f64, y: f64, x0: f64, y0: f64, dir: f64) -> (f64, f64) {
        let (s, c) = dir.sin_cos();
        let (dx, dy) = (x - x0, y - y0);
        (dx * c + dy * s, -dx * s + dy * c)
    }

    fn height(&self, x: f64, y: f64, extent: f64, cell_m: f64) -> f64 {
        let (rx, ry, rd, rh, rw) = self.ridge;
        let (along, across) = Self::frame(x, y, rx, ry, rd);
        let taper = (-(along / (0.45 * extent)).powi(2)).exp();
        let ridge = rh * taper * (-(across / rw).powi(2)).exp();
        let (vx, vy, vd, vh, vw) = self.valley;
        let (along, across) = Self::frame(x, y, vx, vy, vd);
        let meander = 0.06 * extent * (along / (0.15 * extent)).sin();
        let valley = -vh * (-((across - meander) / vw).powi(2)).exp();
        let (sx, sy, sd, sh) = self.scarp;
        let (along, across) = Self::frame(x, y, sx, sy, sd);
        let taper = 1.0 / (1.0 + (along / (0.3 * extent)).powi(8));
        let scarp = sh * taper * (across / (1.5 * cell_m)).tanh();
        ridge + valley + scarp
    }
}

/// Generates a square terrain. Its upper-left corner is at (0, size·cell) in a local
/// metric CRS, so map coordinates run from 0 to size·cell on both axes.
pub fn synthesize(p: &SynthParams) -> Result<Dem, TerrainError> {
    if !(16..=16384).contains(&p.size) {
        return Err(TerrainError::Parameter {
            name: "size",
            value: p.size.to_string(),
            expected: "16 to 16384 cells per side",
        });
    }
    if !(p.cell_m >= 0.01 && p.cell_m <= 1000.0) {
        return Err(TerrainError::Parameter {
            name: "cell size (--cell-m)",
            value: p.cell_m.to_string(),
            expected: "0.01 to 1000 metres",
        });
    }
    if !(p.relief >= 0.0 && p.relief <= 1.0 && p.base_m.is_finite()) {
        return Err(TerrainError::Parameter {
            name: "relief",
            value: p.relief.to_string(),
            expected: "0 to 1 (a share of the extent)",
        });
    }
    let extent = p.size as f64 * p.cell_m;
    let mut rng = SplitMix64::new(p.seed);
    let forms = Landforms::new(&mut rng, extent);
    let noise_seed = rng.next_u64();
    let wavelength = extent / 4.0;
    // Finest octave: a wavelength of about 8 cells, so relief stays smooth at the
    // cell scale a rover drives on.
    let octaves = ((p.size as f64 / 32.0).log2().floor() as u32 + 1).clamp(1, 10);
    let mut data = Vec::with_capacity(p.size * p.size);
    for r in 0..p.size {
        for c in 0..p.size {
            let x = (c as f64 + 0.5) * p.cell_m;
            let y = extent - (r as f64 + 0.5) * p.cell_m;
            let n = fbm(
                noise_seed,
                x / wavelength,
                y / wavelength,
                octaves,
                PERSISTENCE,
            );
            let z = p.base_m + p.relief * extent * n + forms.height(x, y, extent, p.cell_m);
            data.push(z as f32);
        }
    }
    let mut g = GeoRef::local(p.cell_m);
    g.origin_y = extent;
    Ok(Grid::from_vec(p.size, p.size, data, g))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn same_seed_same_terrain_other_seed_other_terrain() {
        let p = SynthParams {
            size: 64,
            ..SynthParams::default()
        };
        let a = synthesize(&p).unwrap();
        let b = synthesize(&p).unwrap();
        let c = synthesize(&SynthParams { seed: 2, ..p }).unwrap();
        assert_eq!(a, b);
        assert_ne!(a.data(), c.data());
        assert!(a.data().iter().all(|z| z.is_finite()));
    }

    #[test]
    fn bad_parameters_are_refused() {
        assert!(synthesize(&SynthParams {
            size: 3,
            ..SynthParams::default()
        })
        .is_err());
        assert!(synthesize(&SynthParams {
            cell_m: -1.0,
            ..SynthParams::default()
        })
        .is_err());
    }
}
