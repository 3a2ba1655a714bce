//! Body attitude: pitch and roll of the rover body from the terrain under its wheels.
//!
//! # Method
//! Lumped suspension by a least-squares plane: the wheel contact points are laid out on
//! a rectangle (wheelbase × track, `wheel_count / 2` wheels evenly spaced down each
//! side), placed on the map at the body centre and heading, their heights sampled from
//! the DEM by bilinear interpolation ([`crate::terrain::Grid::bilinear`], cell centres at
//! half-integer pixel coordinates), and the plane `z = a + g_f f + g_l l` fitted by
//! ordinary least squares with equal weights (f forward, l left, metres). That is what
//! an ideally compliant suspension (every wheel on the ground, body parallel to the
//! mean plane of the contacts) does; a rocker-bogie averages differently on rough
//! ground, the two agree on planes.
//!
//! From the fitted gradient (g_f, g_l):
//! ```text
//!   pitch = atan(g_f)                      nose up positive
//!   roll  = atan(g_l / √(1 + g_f²))        left side up (right side down) positive
//! ```
//! (yaw–pitch–roll angles of the body whose up axis is the plane's normal
//! (−g_f, −g_l, 1)/√(1 + g_f² + g_l²)).
//!
//! # Units
//! Map offsets in metres, heights in metres, headings as azimuths clockwise from grid
//! north in radians, pitch and roll in radians.
//!
//! # Validity and what is left out
//! Wheel offsets are taken as horizontal distances (exact for the gradient of a plane;
//! on rough ground the contacts sit a little inwards of where they are sampled). No
//! wheel lift-off, no suspension travel limit, no body clearance check, no sinkage
//! (each contact is on the DEM surface). A contact off the grid or on no-data gives no
//! pose at all: the rover cannot be placed there.

use crate::terrain::Dem;

/// Most wheels a layout can hold (a fixed array keeps the fit allocation-free).
pub const MAX_WHEELS: usize = 16;

/// Body pitch and roll.
///
/// # Units
/// Radians: pitch nose up positive, roll left side up positive.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Attitude {
    /// Pitch, nose up positive.
    pub pitch_rad: f64,
    /// Roll, left side up (right side down) positive.
    pub roll_rad: f64,
}

impl Attitude {
    /// The attitude on a plane of gradient (∂z/∂x east, ∂z/∂y north) for a heading
    /// (azimuth clockwise from north).
    pub fn from_gradient(gx_east: f64, gy_north: f64, heading_rad: f64) -> Attitude {
        let (s, c) = heading_rad.sin_cos();
        let g_forward = gx_east * s + gy_north * c;
        let g_left = -gx_east * c + gy_north * s;
        Attitude::from_body_gradient(g_forward, g_left)
    }

    /// The attitude from the gradient along the body axes (forward, left).
    pub fn from_body_gradient(g_forward: f64, g_left: f64) -> Attitude {
        Attitude {
            pitch_rad: g_forward.atan(),
            roll_rad: (g_left / (1.0 + g_forward * g_forward).sqrt()).atan(),
        }
    }

    /// The body's up axis in map coordinates (east, north, up), a unit vector.
    pub fn up_vector(&self, heading_rad: f64) -> [f64; 3] {
        let g_forward = self.pitch_rad.tan();
        let g_left = self.roll_rad.tan() / self.pitch_rad.cos();
        let norm = (1.0 + g_forward * g_forward + g_left * g_left).sqrt();
        let (n_f, n_l) = (-g_forward / norm, -g_left / norm);
        let (s, c) = heading_rad.sin_cos();
        [n_f * s - n_l * c, n_f * c + n_l * s, 1.0 / norm]
    }

    /// Tilt of the body's up axis from the vertical, radians: the tilt of a panel
    /// mounted flat on the body.
    pub fn tilt_rad(&self, heading_rad: f64) -> f64 {
        self.up_vector(heading_rad)[2].clamp(-1.0, 1.0).acos()
    }

    /// Azimuth the body's top faces (clockwise from north, [0, 2π)), radians; NaN when
    /// level. The azimuth of a panel mounted flat on the body.
    pub fn facing_azimuth_rad(&self, heading_rad: f64) -> f64 {
        let [e, n, _] = self.up_vector(heading_rad);
        if e == 0.0 && n == 0.0 {
            return f64::NAN;
        }
        crate::units::wrap_azimuth_rad(e.atan2(n))
    }
}

/// Where the wheels touch the ground, in body coordinates (forward, left), metres.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WheelLayout {
    count: usize,
    offsets_m: [(f64, f64); MAX_WHEELS],
}

impl WheelLayout {
    /// `count` wheels (even, 4 to [`MAX_WHEELS`]; checked by the rover description)
    /// evenly spaced along each side of a wheelbase × track rectangle centred on the
    /// body.
    pub fn new(count: usize, wheelbase_m: f64, track_m: f64) -> WheelLayout {
        let count = count.clamp(4, MAX_WHEELS) & !1;
        let per_side = count / 2;
        let mut offsets_m = [(0.0, 0.0); MAX_WHEELS];
        for j in 0..per_side {
            let f = 0.5 * wheelbase_m - wheelbase_m * j as f64 / (per_side - 1) as f64;
            offsets_m[2 * j] = (f, 0.5 * track_m);
            offsets_m[2 * j + 1] = (f, -0.5 * track_m);
        }
        WheelLayout { count, offsets_m }
    }

    /// The contact offsets (forward, left), metres.
    pub fn offsets_m(&self) -> &[(f64, f64)] {
        &self.offsets_m[..self.count]
    }
}

/// The body pose fitted to the terrain under the wheels.
///
/// # Units
/// Radians and metres.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BodyPose {
    /// Pitch and roll.
    pub attitude: Attitude,
    /// Height of the fitted plane under the body centre, metres.
    pub centre_z_m: f64,
    /// Root-mean-square distance of the contacts from the plane, metres (zero on a
    /// plane; a measure of how unevenly the wheels are loaded).
    pub residual_rms_m: f64,
}

/// Fits the body plane for the rover centred at pixel coordinates (`px`, `py`) (cell
/// centres at half-integers, as [`crate::terrain::Grid::bilinear`]) heading
/// `heading_rad`. None when a contact falls off the grid or on no-data.
pub fn body_pose(
    dem: &Dem,
    layout: &WheelLayout,
    px: f64,
    py: f64,
    heading_rad: f64,
) -> Option<BodyPose> {
    let cell = dem.cell_size();
    let (s, c) = heading_rad.sin_cos();
    let mut z = [0.0f64; MAX_WHEELS];
    for (k, &(f, l)) in layout.offsets_m().iter().enumerate() {
        let east_m = f * s - l * c;
        let north_m = f * c + l * s;
        z[k] = dem.bilinear(px + east_m / cell.dx_m, py - north_m / cell.dy_m);
        if z[k].is_nan() {
            return None;
        }
    }
    Some(fit_plane(layout.offsets_m(), &z[..layout.count]))
}

/// Least-squares plane z = a + g_f f + g_l l through the contacts.
fn fit_plane(offsets_m: &[(f64, f64)], z: &[f64]) -> BodyPose {
    let n = z.len() as f64;
    let (mut mf, mut ml, mut mz) = (0.0, 0.0, 0.0);
    for (&(f, l), &zk) in offsets_m.iter().zip(z) {
        mf += f / n;
        ml += l / n;
        mz += zk / n;
    }
    let (mut sff, mut sll, mut sfl, mut sfz, mut slz) = (0.0, 0.0, 0.0, 0.0, 0.0);
    for (&(f, l), &zk) in offsets_m.iter().zip(z) {
        let (df, dl, dz) = (f - mf, l - ml, zk - mz);
        sff += df * df;
        sll += dl * dl;
        sfl += df * dl;
        sfz += df * dz;
        slz += dl * dz;
    }
    let det = sff * sll - sfl * sfl;
    let g_f = (sfz * sll - slz * sfl) / det;
    let g_l = (slz * sff - sfz * sfl) / det;
    let a = mz - g_f * mf - g_l * ml;
    let mut sq = 0.0;
    for (&(f, l), &zk) in offsets_m.iter().zip(z) {
        let r = zk - (a + g_f * f + g_l * l);
        sq += r * r;
    }
    BodyPose {
        attitude: Attitude::from_body_gradient(g_f, g_l),
        centre_z_m: a,
        residual_rms_m: (sq / n).sqrt(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn layout_is_symmetric_and_spans_the_rectangle() {
        let w = WheelLayout::new(6, 1.0, 0.8);
        assert_eq!(w.offsets_m().len(), 6);
        let sum_f: f64 = w.offsets_m().iter().map(|o| o.0).sum();
        let sum_l: f64 = w.offsets_m().iter().map(|o| o.1).sum();
        assert!(sum_f.abs() < 1e-12 && sum_l.abs() < 1e-12);
        assert!(w
            .offsets_m()
            .iter()
            .any(|o| (o.0 - 0.5).abs() < 1e-12 && (o.1 + 0.4).abs() < 1e-12));
        assert!(w.offsets_m().iter().any(|o| o.0.abs() < 1e-12));
    }

    #[test]
    fn up_vector_inverts_the_attitude() {
        let a = Attitude::from_gradient(0.2, -0.1, 1.0);
        let up = a.up_vector(1.0);
        let back = Attitude::from_gradient(-up[0] / up[2], -up[1] / up[2], 1.0);
        assert!((back.pitch_rad - a.pitch_rad).abs() < 1e-12);
        assert!((back.roll_rad - a.roll_rad).abs() < 1e-12);
    }
}
