//! Panel electrical power from plane-of-array irradiance, with cell temperature, and the
//! panel's orientation from its mount and the vehicle's attitude.
//!
//! # Power
//! P = A · η_stc · (1 + γ·(T_cell − 25 °C)) · G_poa · (1 − soiling) · η_mppt · η_wiring,
//! floored at 0 (the linear temperature-coefficient model used in PV data sheets, e.g.
//! IEC 61853-1 power-rating conditions; common practice). η_stc is the module efficiency
//! at standard test conditions (1000 W/m², 25 °C cell, AM1.5 spectrum, IEC 60904-3).
//! Left out: low-irradiance efficiency drop, spectral and reflection (incidence-angle)
//! losses, mismatch between cells, partial shading of single cells.
//!
//! # Cell temperature
//! - Faiman: D. Faiman, "Assessing the outdoor operating performance of photovoltaic
//!   modules", Progress in Photovoltaics 16, 307-315, 2008, eq. 3:
//!   T = T_air + G_poa / (U0 + U1·v_wind), defaults U0 = 25.0 W/(m²·K),
//!   U1 = 6.84 W·s/(m³·K) (his fit for crystalline-silicon modules).
//! - NOCT: T = T_air + (NOCT − 20 °C) · G_poa / 800 W/m² (the nominal operating cell
//!   temperature definition of IEC 61215; common practice), NOCT from the data sheet.
//!
//! Rover panels are often mounted with little rear ventilation; both models assume an
//! open-rack module and can run cold by 10 K or more on a closed deck.
//!
//! # Mounts
//! Vehicle attitude is heading ψ (clockwise from north), pitch θ (nose up positive) and
//! roll φ (right side down positive). The body frame is x forward, y left, z up; its
//! axes in east-north-up are built by rotating about z (heading), then y (pitch), then x
//! (roll). A body-fixed panel has a normal given in body axes; a fixed panel has a tilt
//! and an azimuth relative to the nose; a mast with single-axis tracking turns about a
//! body axis to bring its normal as close to the sun as allowed, within ±max angle
//! (no backtracking: a rover carries no neighbouring rows).
//!
//! # Units
//! Area m², efficiencies and coefficients as fractions (γ per kelvin), temperatures °C,
//! wind m/s, irradiance W/m², power W, angles radians.

use super::error::{check_range, SunError};
use super::transposition::Plane;

/// Standard test condition cell temperature, °C (IEC 60904-3).
pub const STC_TEMPERATURE_C: f64 = 25.0;

/// Cell temperature model.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum CellTemperature {
    /// Faiman (2008): heat-loss coefficients U0 W/(m²·K) and U1 W·s/(m³·K).
    Faiman {
        /// Constant heat-loss coefficient, W/(m²·K).
        u0: f64,
        /// Wind-dependent heat-loss coefficient, W·s/(m³·K).
        u1: f64,
    },
    /// NOCT model with the data-sheet NOCT, °C.
    Noct {
        /// Nominal operating cell temperature, °C.
        noct_c: f64,
    },
}

impl Default for CellTemperature {
    /// Faiman with his crystalline-silicon fit U0 = 25.0, U1 = 6.84.
    fn default() -> Self {
        CellTemperature::Faiman { u0: 25.0, u1: 6.84 }
    }
}

impl CellTemperature {
    /// Cell temperature, °C, for `poa_w_m2` at air temperature `air_c` and wind `wind_m_s`.
    pub fn cell_temp_c(&self, poa_w_m2: f64, air_c: f64, wind_m_s: f64) -> f64 {
        match *self {
            CellTemperature::Faiman { u0, u1 } => air_c + poa_w_m2 / (u0 + u1 * wind_m_s.max(0.0)),
            CellTemperature::Noct { noct_c } => air_c + (noct_c - 20.0) * poa_w_m2 / 800.0,
        }
    }
}

/// A solar panel's electrical parameters.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Panel {
    /// Active area, m².
    pub area_m2: f64,
    /// Module efficiency at STC, fraction.
    pub efficiency_stc: f64,
    /// Power temperature coefficient γ, per kelvin (negative for silicon).
    pub temp_coeff_per_k: f64,
    /// Fraction of light lost to dust and dirt.
    pub soiling_loss: f64,
    /// Maximum-power-point tracker efficiency, fraction.
    pub mppt_efficiency: f64,
    /// Wiring and connector efficiency, fraction.
    pub wiring_efficiency: f64,
    /// Cell temperature model.
    pub cell_temperature: CellTemperature,
}

impl Default for Panel {
    /// 1 m² of 20 % monocrystalline silicon, γ = −0.0035 /K (typical data-sheet values
    /// for such modules, common practice), 5 % soiling (a dusty field site; common
    /// practice), 97 % MPPT and 98 % wiring efficiency (common practice), Faiman.
    fn default() -> Self {
        Panel {
            area_m2: 1.0,
            efficiency_stc: 0.20,
            temp_coeff_per_k: -0.0035,
            soiling_loss: 0.05,
            mppt_efficiency: 0.97,
            wiring_efficiency: 0.98,
            cell_temperature: CellTemperature::default(),
        }
    }
}

impl Panel {
    /// Checks every field's range.
    pub fn validate(self) -> Result<Panel, SunError> {
        check_range(
            "area_m2",
            self.area_m2,
            0.0,
            1e3,
            "m² from 0 to 1000",
            "give the active panel area in m²",
        )?;
        check_range(
            "efficiency_stc",
            self.efficiency_stc,
            0.0,
            0.5,
            "a fraction from 0 to 0.5",
            "give the data sheet's module efficiency, e.g. 0.21",
        )?;
        check_range(
            "temp_coeff_per_k",
            self.temp_coeff_per_k,
            -0.02,
            0.01,
            "per kelvin, -0.02 to 0.01",
            "give the data sheet's power coefficient as a fraction, e.g. -0.0035",
        )?;
        check_range(
            "soiling_loss",
            self.soiling_loss,
            0.0,
            1.0,
            "a fraction from 0 to 1",
            "e.g. 0.05 for 5 %",
        )?;
        check_range(
            "mppt_efficiency",
            self.mppt_efficiency,
            0.0,
            1.0,
            "a fraction from 0 to 1",
            "e.g. 0.97",
        )?;
        check_range(
            "wiring_efficiency",
            self.wiring_efficiency,
            0.0,
            1.0,
            "a fraction from 0 to 1",
            "e.g. 0.98",
        )?;
        Ok(self)
    }

    /// Electrical power delivered, W, for `poa_w_m2` at cell temperature `cell_c`.
    pub fn power_w(&self, poa_w_m2: f64, cell_c: f64) -> f64 {
        let thermal = 1.0 + self.temp_coeff_per_k * (cell_c - STC_TEMPERATURE_C);
        let p = self.area_m2 * self.efficiency_stc * thermal * poa_w_m2 * (1.0 - self.soiling_loss);
        (p * self.mppt_efficiency * self.wiring_efficiency).max(0.0)
    }

    /// Electrical power, W, with the cell temperature from the panel's model.
    pub fn power_at_w(&self, poa_w_m2: f64, air_c: f64, wind_m_s: f64) -> f64 {
        self.power_w(
            poa_w_m2,
            self.cell_temperature.cell_temp_c(poa_w_m2, air_c, wind_m_s),
        )
    }
}

/// Vehicle attitude: heading, pitch and roll, radians (module doc for signs).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Attitude {
    /// Heading, radians clockwise from north.
    pub heading_rad: f64,
    /// Pitch, radians, nose up positive.
    pub pitch_rad: f64,
    /// Roll, radians, right side down positive.
    pub roll_rad: f64,
}

type Vec3 = [f64; 3];

impl Attitude {
    /// Body axes (forward, left, up) in east-north-up coordinates.
    pub fn body_axes_enu(&self) -> [Vec3; 3] {
        let (sh, ch) = self.heading_rad.sin_cos();
        let (sp, cp) = self.pitch_rad.sin_cos();
        let (sr, cr) = self.roll_rad.sin_cos();
        // Level frame: forward f0, left l0, up u0.
        let f0 = [sh, ch, 0.0];
        let l0 = [-ch, sh, 0.0];
        let u0 = [0.0, 0.0, 1.0];
        // Pitch about the left axis (nose up), then roll about the new forward axis.
        let f1 = add(scale(f0, cp), scale(u0, sp));
        let u1 = add(scale(u0, cp), scale(f0, -sp));
        // Right side down: the up axis tilts toward the right (−left).
        let u2 = add(scale(u1, cr), scale(l0, -sr));
        let l2 = add(scale(l0, cr), scale(u1, sr));
        [f1, l2, u2]
    }

    /// A body-axes vector (forward, left, up) in east-north-up coordinates.
    pub fn to_enu(&self, v: Vec3) -> Vec3 {
        let [f, l, u] = self.body_axes_enu();
        add(add(scale(f, v[0]), scale(l, v[1])), scale(u, v[2]))
    }
}

fn add(a: Vec3, b: Vec3) -> Vec3 {
    [a[0] + b[0], a[1] + b[1], a[2] + b[2]]
}

fn scale(a: Vec3, k: f64) -> Vec3 {
    [a[0] * k, a[1] * k, a[2] * k]
}

fn dot(a: Vec3, b: Vec3) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

/// How a panel is carried.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Mount {
    /// Normal fixed in body axes (forward, left, up); (0, 0, 1) is a deck panel.
    BodyFixed {
        /// Unit normal in body axes.
        normal_body: Vec3,
    },
    /// Tilt from the deck and azimuth relative to the nose (clockwise, radians).
    FixedTilt {
        /// Tilt from the deck, radians.
        tilt_rad: f64,
        /// Facing direction relative to the nose, radians clockwise.
        relative_azimuth_rad: f64,
    },
    /// Single-axis tracker on a mast: rotation axis along the body's forward axis turned
    /// by `axis_yaw_rad` (clockwise), panel level at rotation 0, limits ±`max_angle_rad`.
    SingleAxis {
        /// Axis direction relative to the nose, radians clockwise.
        axis_yaw_rad: f64,
        /// Largest rotation either way, radians.
        max_angle_rad: f64,
    },
}

/// Unit vector toward a sun at zenith `z` and azimuth `a` (east, north, up).
pub fn sun_vector_enu(zenith_rad: f64, azimuth_rad: f64) -> Vec3 {
    let (sz, cz) = zenith_rad.sin_cos();
    let (sa, ca) = azimuth_rad.sin_cos();
    [sz * sa, sz * ca, cz]
}

impl Mount {
    /// Whether the plane depends on the sun's place (a tracker); otherwise
    /// [`Self::plane`] ignores its sun arguments.
    pub fn tracks_sun(&self) -> bool {
        matches!(self, Mount::SingleAxis { .. })
    }

    /// The panel plane for vehicle attitude `att` and a sun at (`zenith_rad`,
    /// `azimuth_rad`); `None` only for a zero body normal.
    pub fn plane(&self, att: &Attitude, zenith_rad: f64, azimuth_rad: f64) -> Option<Plane> {
        match *self {
            Mount::BodyFixed { normal_body } => Plane::from_normal_enu(att.to_enu(normal_body)),
            Mount::FixedTilt {
                tilt_rad,
                relative_azimuth_rad,
            } => {
                let (st, ct) = tilt_rad.sin_cos();
                let (sa, ca) = relative_azimuth_rad.sin_cos();
                // Clockwise from the nose = toward the right = −left.
                Plane::from_normal_enu(att.to_enu([st * ca, -st * sa, ct]))
            }
            Mount::SingleAxis {
                axis_yaw_rad,
                max_angle_rad,
            } => {
                let (sy, cy) = axis_yaw_rad.sin_cos();
                let axis = att.to_enu([cy, -sy, 0.0]);
                let up = att.to_enu([0.0, 0.0, 1.0]);
                let side = cross(up, axis);
                let s = sun_vector_enu(zenith_rad, azimuth_rad);
                // Rotation about the axis that brings the normal nearest the sun.
                let rot = dot(s, side)
                    .atan2(dot(s, up))
                    .clamp(-max_angle_rad, max_angle_rad);
                let n = add(scale(up, rot.cos()), scale(side, rot.sin()));
                Plane::from_normal_enu(n)
            }
        }
    }
}

fn cross(a: Vec3, b: Vec3) -> Vec3 {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}
