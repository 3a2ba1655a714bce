//! The rover description: every key with its unit, default and valid range; parsing
//! from TOML (a rover file on its own, or the `[rover]` table of a mission file) and
//! checking, with errors that name the key and its line and column.
//!
//! # Keys
//! The stable keys of sunward's DESIGN.md (`mass_kg`, `payload_kg`,
//! `rolling_resistance`, `drive_efficiency`, `regen_fraction`, `hotel_power_w`,
//! `max_speed_m_s`) keep their names; the rest are listed on [`Rover`]'s fields with the
//! file key, unit, default and range. Angles are degrees in the file (`_deg`) and
//! radians inside. An optional `[efficiency_table]` (or `[rover.efficiency_table]`)
//! holds `speeds_m_s`, `torques_nm` and `efficiency` (one row per speed).
//!
//! # Defaults
//! The defaults describe an invented 135 kg six-wheel field rover used by sunward's
//! demos. They are placeholders: a rover file for a real machine should set every key
//! from that machine's data sheets and drive tests.
//!
//! # Units
//! As named in each key: kg, m, m/s, W, J/rad, m/s², degrees in the file.

use std::ops::Range;

use serde::Deserialize;
use toml::Spanned;

use crate::units::{deg_to_rad, rad_to_deg};
use crate::vehicle::attitude::{WheelLayout, MAX_WHEELS};
use crate::vehicle::error::{Problem, TextPos, VehicleError};
use crate::vehicle::powertrain::{EfficiencyTable, SpeedLaw};
use crate::vehicle::stability::{tip_over, TipOver};
use crate::vehicle::traction::{named_soil, soil_names, NamedSoil};

/// Standard acceleration of gravity, m/s² (3rd CGPM, 1901; exact by definition).
pub const STANDARD_GRAVITY_M_S2: f64 = 9.80665;

/// A checked rover description. Build it with [`Rover::from_toml_str`] or start from
/// [`Rover::default`] and call [`Rover::check`] after changing fields.
#[derive(Debug, Clone, PartialEq)]
pub struct Rover {
    /// `mass_kg`: vehicle without payload, kg. Default 120; range (0, 20 000].
    pub mass_kg: f64,
    /// `payload_kg`: payload carried, kg. Default 15; range [0, 20 000].
    pub payload_kg: f64,
    /// `rolling_resistance`: coefficient C_rr of resistance on firm ground (or, with a
    /// soil, of resistance not explained by soil compaction). Default 0.08 without a
    /// soil (loose gravel or firm dirt, common practice), 0 with a soil (the Bekker
    /// model then supplies the resistance). Range [0, 1).
    pub rolling_resistance: f64,
    /// `soil`: a named soft soil for the Bekker model, or none (firm ground). Default
    /// none. Names: see [`crate::vehicle::traction::SOILS`].
    pub soil: Option<&'static NamedSoil>,
    /// `drive_efficiency`: battery to wheel rim, motoring. Default 0.70 (DESIGN.md's
    /// example; geared DC drives with controller, common practice). Range (0, 1].
    pub drive_efficiency: f64,
    /// `[efficiency_table]`: efficiency over speed and per-wheel torque; replaces
    /// `drive_efficiency` when given. Default none.
    pub efficiency_table: Option<EfficiencyTable>,
    /// `regen_fraction`: share of braking work at the rims returned to the battery.
    /// Default 0 (most small rovers do not regenerate). Range [0, 1).
    pub regen_fraction: f64,
    /// `hotel_power_w`: drawn whenever the rover is awake, W. Default 25 (computer,
    /// radio and sensors of a small rover, common practice). Range [0, 100 000].
    pub hotel_power_w: f64,
    /// `max_speed_m_s`: top ground speed on the level, m/s. Default 0.5. Range (0, 20].
    pub max_speed_m_s: f64,
    /// `wheel_count`: wheels, all driven, even, 4 to 16. Default 6.
    pub wheel_count: usize,
    /// `wheel_radius_m`: m. Default 0.15. Range (0, 2].
    pub wheel_radius_m: f64,
    /// `wheel_width_m`: m. Default 0.12. Range (0, 2].
    pub wheel_width_m: f64,
    /// `wheelbase_m`: front to rear axle, m. Default 0.9. Range (0, 20].
    pub wheelbase_m: f64,
    /// `track_m`: between left and right wheel centres, m. Default 0.8. Range (0, 20].
    pub track_m: f64,
    /// `cg_height_m`: centre of gravity above the ground, m. Default 0.45. Range
    /// (0, 20].
    pub cg_height_m: f64,
    /// `cg_forward_offset_m`: centre of gravity ahead of mid-wheelbase, m. Default 0.
    /// Range: strictly inside ± wheelbase / 2.
    pub cg_forward_offset_m: f64,
    /// `speed_law` (`"constant"` or `"linear"`, with `speed_zero_pitch_deg` and
    /// `min_speed_fraction`). Default linear, zero at 45°, floor 0.3: a placeholder
    /// that halves the speed at 22.5° (no source; set from drive tests).
    pub speed_law: SpeedLaw,
    /// `max_drive_power_w`: cap on electrical drive power, W, which slows the rover on
    /// climbs and soft soil. Default none (no cap). Range (0, 1 000 000].
    pub max_drive_power_w: Option<f64>,
    /// `turn_energy_j_per_rad`: electrical energy per radian of heading change (skid
    /// steering scrub), J/rad. Default 0. Range [0, 1 000 000].
    pub turn_energy_j_per_rad: f64,
    /// `ground_friction`: traction coefficient on firm ground, μ. Default 0.6 (rubber
    /// or grousered wheels on dry firm soil or gravel, common practice; set from a pull
    /// test). Range (0, 2].
    pub ground_friction: f64,
    /// `max_slip`: highest slip the rover may drive at on soft soil; beyond it the step
    /// is at its traction limit. Default 0.5 (common practice). Range (0, 1).
    pub max_slip: f64,
    /// `max_climb_deg`: highest nose-up pitch allowed. Default 20° (placeholder,
    /// common practice for small field rovers). Range (0, 90).
    pub max_climb_rad: f64,
    /// `max_descent_deg`: highest nose-down pitch allowed. Default 20°. Range (0, 90).
    pub max_descent_rad: f64,
    /// `max_roll_deg`: highest roll allowed. Default 15°. Range (0, 90).
    pub max_roll_rad: f64,
    /// `roll_stability_fraction`: roll is also capped at this fraction of the static
    /// sideways tip-over angle. Default 0.5 (common practice: a safety factor of two).
    /// Range (0, 1].
    pub roll_stability_fraction: f64,
    /// `gravity_m_s2`: acceleration of gravity, m/s². Default standard gravity
    /// 9.806 65. Range (0, 30].
    pub gravity_m_s2: f64,
}

impl Default for Rover {
    fn default() -> Self {
        Rover {
            mass_kg: 120.0,
            payload_kg: 15.0,
            rolling_resistance: 0.08,
            soil: None,
            drive_efficiency: 0.70,
            efficiency_table: None,
            regen_fraction: 0.0,
            hotel_power_w: 25.0,
            max_speed_m_s: 0.5,
            wheel_count: 6,
            wheel_radius_m: 0.15,
            wheel_width_m: 0.12,
            wheelbase_m: 0.9,
            track_m: 0.8,
            cg_height_m: 0.45,
            cg_forward_offset_m: 0.0,
            speed_law: SpeedLaw::Linear {
                zero_speed_pitch_rad: deg_to_rad(45.0),
                min_fraction: 0.3,
            },
            max_drive_power_w: None,
            turn_energy_j_per_rad: 0.0,
            ground_friction: 0.6,
            max_slip: 0.5,
            max_climb_rad: deg_to_rad(20.0),
            max_descent_rad: deg_to_rad(20.0),
            max_roll_rad: deg_to_rad(15.0),
            roll_stability_fraction: 0.5,
            gravity_m_s2: STANDARD_GRAVITY_M_S2,
        }
    }
}

/// The rover keys exactly as in the file: every value optional (a default fills in),
/// with its place in the text kept for error messages. A mission file embeds this as
/// its `[rover]` table and calls [`RoverFile::resolve`].
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
#[allow(missing_docs)] // each field is the file key of the same name on `Rover`
pub struct RoverFile {
    pub mass_kg: Option<Spanned<f64>>,
    pub payload_kg: Option<Spanned<f64>>,
    pub rolling_resistance: Option<Spanned<f64>>,
    pub soil: Option<Spanned<String>>,
    pub drive_efficiency: Option<Spanned<f64>>,
    pub efficiency_table: Option<Spanned<EfficiencyTableFile>>,
    pub regen_fraction: Option<Spanned<f64>>,
    pub hotel_power_w: Option<Spanned<f64>>,
    pub max_speed_m_s: Option<Spanned<f64>>,
    pub wheel_count: Option<Spanned<i64>>,
    pub wheel_radius_m: Option<Spanned<f64>>,
    pub wheel_width_m: Option<Spanned<f64>>,
    pub wheelbase_m: Option<Spanned<f64>>,
    pub track_m: Option<Spanned<f64>>,
    pub cg_height_m: Option<Spanned<f64>>,
    pub cg_forward_offset_m: Option<Spanned<f64>>,
    pub speed_law: Option<Spanned<String>>,
    pub speed_zero_pitch_deg: Option<Spanned<f64>>,
    pub min_speed_fraction: Option<Spanned<f64>>,
    pub max_drive_power_w: Option<Spanned<f64>>,
    pub turn_energy_j_per_rad: Option<Spanned<f64>>,
    pub ground_friction: Option<Spanned<f64>>,
    pub max_slip: Option<Spanned<f64>>,
    pub max_climb_deg: Option<Spanned<f64>>,
    pub max_descent_deg: Option<Spanned<f64>>,
    pub max_roll_deg: Option<Spanned<f64>>,
    pub roll_stability_fraction: Option<Spanned<f64>>,
    pub gravity_m_s2: Option<Spanned<f64>>,
}

/// The `[efficiency_table]` keys as in the file.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct EfficiencyTableFile {
    /// Wheel ground speeds, m/s, strictly increasing.
    pub speeds_m_s: Vec<f64>,
    /// Per-wheel torques, N·m, strictly increasing.
    pub torques_nm: Vec<f64>,
    /// One row per speed, one value per torque, each in (0, 1].
    pub efficiency: Vec<Vec<f64>>,
}

/// A mission-style document: the rover keys under `[rover]`, other tables ignored.
#[derive(Deserialize)]
struct WithRoverTable {
    rover: RoverFile,
}

/// Byte ranges of the keys that were given, for placing range errors.
#[derive(Debug, Default)]
struct Spans(Vec<(&'static str, Range<usize>)>);

impl Spans {
    fn take<T: Clone>(&mut self, key: &'static str, v: &Option<Spanned<T>>) -> Option<T> {
        let s = v.as_ref()?;
        self.0.push((key, s.span()));
        Some(s.get_ref().clone())
    }

    fn pos(&self, key: &str, text: &str) -> Option<TextPos> {
        let root = key.split('.').next().unwrap_or(key);
        let (_, r) = self.0.iter().find(|(k, _)| *k == key || *k == root)?;
        Some(TextPos::of_offset(text, r.start))
    }
}

impl Rover {
    /// Parses and checks a rover description: either the keys at the top level (a rover
    /// file) or under a `[rover]` table (a mission file, whose other tables are left to
    /// the mission reader). Every problem is reported with the key and its position.
    pub fn from_toml_str(text: &str) -> Result<Rover, VehicleError> {
        let file = parse_rover_file(text)?;
        file.resolve(text)
    }

    /// Total mass moved, kg.
    pub fn total_mass_kg(&self) -> f64 {
        self.mass_kg + self.payload_kg
    }

    /// Total weight, N.
    pub fn weight_n(&self) -> f64 {
        self.total_mass_kg() * self.gravity_m_s2
    }

    /// Wheel contact layout for the attitude fit.
    pub fn wheel_layout(&self) -> WheelLayout {
        WheelLayout::new(self.wheel_count, self.wheelbase_m, self.track_m)
    }

    /// Static tip-over angles.
    pub fn tip_over(&self) -> TipOver {
        tip_over(
            self.track_m,
            self.wheelbase_m,
            self.cg_height_m,
            self.cg_forward_offset_m,
        )
    }

    /// Roll limit in force: the smaller of `max_roll_deg` and the stability fraction of
    /// the sideways tip-over angle, radians.
    pub fn roll_limit_rad(&self) -> f64 {
        self.max_roll_rad
            .min(self.roll_stability_fraction * self.tip_over().sideways_rad)
    }

    /// Every problem with the values, keyed by file key (positions not attached).
    pub fn check(&self) -> Result<(), VehicleError> {
        let problems = self.problems();
        if problems.is_empty() {
            Ok(())
        } else {
            Err(VehicleError::Invalid(problems))
        }
    }

    fn problems(&self) -> Vec<Problem> {
        let mut out: Vec<Problem> = LIMITS.iter().filter_map(|l| l.check(self)).collect();
        if let Some(p) = self
            .max_drive_power_w
            .and_then(|w| POWER_LIMIT.check_value(w))
        {
            out.push(p);
        }
        out.extend(self.cross_problems());
        out
    }

    fn cross_problems(&self) -> Vec<Problem> {
        let mut out = Vec::new();
        if !self.wheel_count.is_multiple_of(2) || !(4..=MAX_WHEELS).contains(&self.wheel_count) {
            out.push(problem(
                "wheel_count",
                format!(
                    "got {}, expected an even count from 4 to {MAX_WHEELS}",
                    self.wheel_count
                ),
                "give the number of wheels on the ground, both sides together".into(),
            ));
        }
        if self.cg_forward_offset_m.abs() >= 0.5 * self.wheelbase_m {
            out.push(problem(
                "cg_forward_offset_m",
                format!(
                    "got {} m, expected strictly between -{h} and {h} m (half the wheelbase)",
                    self.cg_forward_offset_m,
                    h = 0.5 * self.wheelbase_m
                ),
                "measure the centre of gravity from mid-wheelbase, positive forward".into(),
            ));
        }
        if 2.0 * self.wheel_radius_m >= self.track_m {
            out.push(problem(
                "wheel_radius_m",
                format!(
                    "the wheel diameter {} m is not less than the track {} m",
                    2.0 * self.wheel_radius_m,
                    self.track_m
                ),
                "check `wheel_radius_m` (a radius, not a diameter) and `track_m`".into(),
            ));
        }
        if let SpeedLaw::Linear {
            zero_speed_pitch_rad,
            min_fraction,
        } = self.speed_law
        {
            let z = rad_to_deg(zero_speed_pitch_rad);
            if !(z > 0.0 && z <= 90.0) {
                out.push(range_problem("speed_zero_pitch_deg", z, "(0, 90] degrees"));
            }
            if !(min_fraction > 0.0 && min_fraction <= 1.0) {
                out.push(range_problem("min_speed_fraction", min_fraction, "(0, 1]"));
            }
        }
        if let Some(t) = &self.efficiency_table {
            out.extend(table_problems(t));
        }
        out
    }
}

/// Parses the text into the raw keys, from a `[rover]` table when there is one.
pub fn parse_rover_file(text: &str) -> Result<RoverFile, VehicleError> {
    let table: toml::Table = toml::from_str(text).map_err(|e| parse_error(text, &e))?;
    let nested = matches!(table.get("rover"), Some(toml::Value::Table(_)));
    let parsed = if nested {
        toml::from_str::<WithRoverTable>(text).map(|w| w.rover)
    } else {
        toml::from_str::<RoverFile>(text)
    };
    parsed.map_err(|e| parse_error(text, &e))
}

fn parse_error(text: &str, e: &toml::de::Error) -> VehicleError {
    VehicleError::Parse {
        pos: e.span().map(|r| TextPos::of_offset(text, r.start)),
        message: e.message().trim().to_string(),
        fix: "check the key's spelling and that numbers are written as numbers \
              (1.0, not \"1.0\"); known keys are listed in the rover documentation"
            .to_string(),
    }
}

impl RoverFile {
    /// Fills defaults, checks every value and returns the rover, or every problem with
    /// its line and column in `text` (the document the file was parsed from).
    pub fn resolve(&self, text: &str) -> Result<Rover, VehicleError> {
        let mut spans = Spans::default();
        let mut problems = Vec::new();
        let rover = self.fill(&mut spans, &mut problems);
        problems.extend(rover.problems());
        if problems.is_empty() {
            return Ok(rover);
        }
        for p in problems.iter_mut() {
            p.pos = p.pos.or_else(|| spans.pos(&p.key, text));
        }
        Err(VehicleError::Invalid(problems))
    }

    fn fill(&self, sp: &mut Spans, problems: &mut Vec<Problem>) -> Rover {
        let d = Rover::default();
        let soil = self.resolve_soil(sp, problems);
        let crr_default = if soil.is_some() {
            0.0
        } else {
            d.rolling_resistance
        };
        Rover {
            mass_kg: sp.take("mass_kg", &self.mass_kg).unwrap_or(d.mass_kg),
            payload_kg: sp
                .take("payload_kg", &self.payload_kg)
                .unwrap_or(d.payload_kg),
            rolling_resistance: sp
                .take("rolling_resistance", &self.rolling_resistance)
                .unwrap_or(crr_default),
            soil,
            drive_efficiency: sp
                .take("drive_efficiency", &self.drive_efficiency)
                .unwrap_or(d.drive_efficiency),
            efficiency_table: sp
                .take("efficiency_table", &self.efficiency_table)
                .map(|t| EfficiencyTable {
                    speeds_m_s: t.speeds_m_s,
                    torques_nm: t.torques_nm,
                    efficiency: t.efficiency,
                }),
            regen_fraction: sp
                .take("regen_fraction", &self.regen_fraction)
                .unwrap_or(d.regen_fraction),
            hotel_power_w: sp
                .take("hotel_power_w", &self.hotel_power_w)
                .unwrap_or(d.hotel_power_w),
            max_speed_m_s: sp
                .take("max_speed_m_s", &self.max_speed_m_s)
                .unwrap_or(d.max_speed_m_s),
            wheel_count: self.wheel_count(sp, problems).unwrap_or(d.wheel_count),
            wheel_radius_m: sp
                .take("wheel_radius_m", &self.wheel_radius_m)
                .unwrap_or(d.wheel_radius_m),
            wheel_width_m: sp
                .take("wheel_width_m", &self.wheel_width_m)
                .unwrap_or(d.wheel_width_m),
            wheelbase_m: sp
                .take("wheelbase_m", &self.wheelbase_m)
                .unwrap_or(d.wheelbase_m),
            track_m: sp.take("track_m", &self.track_m).unwrap_or(d.track_m),
            cg_height_m: sp
                .take("cg_height_m", &self.cg_height_m)
                .unwrap_or(d.cg_height_m),
            cg_forward_offset_m: sp
                .take("cg_forward_offset_m", &self.cg_forward_offset_m)
                .unwrap_or(d.cg_forward_offset_m),
            speed_law: self.speed_law(sp, problems, d.speed_law),
            max_drive_power_w: sp.take("max_drive_power_w", &self.max_drive_power_w),
            turn_energy_j_per_rad: sp
                .take("turn_energy_j_per_rad", &self.turn_energy_j_per_rad)
                .unwrap_or(d.turn_energy_j_per_rad),
            ground_friction: sp
                .take("ground_friction", &self.ground_friction)
                .unwrap_or(d.ground_friction),
            max_slip: sp.take("max_slip", &self.max_slip).unwrap_or(d.max_slip),
            max_climb_rad: sp
                .take("max_climb_deg", &self.max_climb_deg)
                .map_or(d.max_climb_rad, deg_to_rad),
            max_descent_rad: sp
                .take("max_descent_deg", &self.max_descent_deg)
                .map_or(d.max_descent_rad, deg_to_rad),
            max_roll_rad: sp
                .take("max_roll_deg", &self.max_roll_deg)
                .map_or(d.max_roll_rad, deg_to_rad),
            roll_stability_fraction: sp
                .take("roll_stability_fraction", &self.roll_stability_fraction)
                .unwrap_or(d.roll_stability_fraction),
            gravity_m_s2: sp
                .take("gravity_m_s2", &self.gravity_m_s2)
                .unwrap_or(d.gravity_m_s2),
        }
    }

    fn resolve_soil(
        &self,
        sp: &mut Spans,
        problems: &mut Vec<Problem>,
    ) -> Option<&'static NamedSoil> {
        let name = sp.take("soil", &self.soil)?;
        let found = named_soil(&name);
        if found.is_none() {
            problems.push(problem(
                "soil",
                format!("unknown soil \"{name}\""),
                format!(
                    "use one of: {}; or leave `soil` out for firm ground",
                    soil_names()
                ),
            ));
        }
        found
    }

    fn wheel_count(&self, sp: &mut Spans, problems: &mut Vec<Problem>) -> Option<usize> {
        let n = sp.take("wheel_count", &self.wheel_count)?;
        match usize::try_from(n) {
            Ok(v) => Some(v),
            Err(_) => {
                problems.push(problem(
                    "wheel_count",
                    format!("got {n}, expected an even count from 4 to {MAX_WHEELS}"),
                    "give the number of wheels on the ground".into(),
                ));
                None
            }
        }
    }

    fn speed_law(
        &self,
        sp: &mut Spans,
        problems: &mut Vec<Problem>,
        default: SpeedLaw,
    ) -> SpeedLaw {
        let zero = sp.take("speed_zero_pitch_deg", &self.speed_zero_pitch_deg);
        let floor = sp.take("min_speed_fraction", &self.min_speed_fraction);
        let name = sp.take("speed_law", &self.speed_law);
        let SpeedLaw::Linear {
            zero_speed_pitch_rad,
            min_fraction,
        } = default
        else {
            return default;
        };
        match name.as_deref() {
            Some("constant") => SpeedLaw::Constant,
            None | Some("linear") => SpeedLaw::Linear {
                zero_speed_pitch_rad: zero.map_or(zero_speed_pitch_rad, deg_to_rad),
                min_fraction: floor.unwrap_or(min_fraction),
            },
            Some(other) => {
                problems.push(problem(
                    "speed_law",
                    format!("unknown speed law \"{other}\""),
                    "use \"constant\" or \"linear\"".into(),
                ));
                default
            }
        }
    }
}

/// One numeric key's valid interval.
struct Limit {
    key: &'static str,
    get: fn(&Rover) -> f64,
    lo: f64,
    hi: f64,
    lo_open: bool,
    hi_open: bool,
}

impl Limit {
    const fn new(
        key: &'static str,
        get: fn(&Rover) -> f64,
        lo: f64,
        hi: f64,
        open: (bool, bool),
    ) -> Limit {
        Limit {
            key,
            get,
            lo,
            hi,
            lo_open: open.0,
            hi_open: open.1,
        }
    }

    fn check(&self, r: &Rover) -> Option<Problem> {
        self.check_value((self.get)(r))
    }

    fn check_value(&self, v: f64) -> Option<Problem> {
        let above = if self.lo_open {
            v > self.lo
        } else {
            v >= self.lo
        };
        let below = if self.hi_open {
            v < self.hi
        } else {
            v <= self.hi
        };
        if above && below {
            return None;
        }
        let range = format!(
            "{}{}, {}{}",
            if self.lo_open { '(' } else { '[' },
            self.lo,
            self.hi,
            if self.hi_open { ')' } else { ']' }
        );
        Some(range_problem(self.key, v, &range))
    }
}

const OPEN: (bool, bool) = (true, false);
const CLOSED: (bool, bool) = (false, false);
const LO_CLOSED_HI_OPEN: (bool, bool) = (false, true);
const BOTH_OPEN: (bool, bool) = (true, true);

/// The range of every numeric key (see the field docs of [`Rover`]).
const LIMITS: [Limit; 21] = [
    Limit::new("mass_kg", |r| r.mass_kg, 0.0, 20_000.0, OPEN),
    Limit::new("payload_kg", |r| r.payload_kg, 0.0, 20_000.0, CLOSED),
    Limit::new(
        "rolling_resistance",
        |r| r.rolling_resistance,
        0.0,
        1.0,
        LO_CLOSED_HI_OPEN,
    ),
    Limit::new("drive_efficiency", |r| r.drive_efficiency, 0.0, 1.0, OPEN),
    Limit::new(
        "regen_fraction",
        |r| r.regen_fraction,
        0.0,
        1.0,
        LO_CLOSED_HI_OPEN,
    ),
    Limit::new("hotel_power_w", |r| r.hotel_power_w, 0.0, 100_000.0, CLOSED),
    Limit::new("max_speed_m_s", |r| r.max_speed_m_s, 0.0, 20.0, OPEN),
    Limit::new("wheel_radius_m", |r| r.wheel_radius_m, 0.0, 2.0, OPEN),
    Limit::new("wheel_width_m", |r| r.wheel_width_m, 0.0, 2.0, OPEN),
    Limit::new("wheelbase_m", |r| r.wheelbase_m, 0.0, 20.0, OPEN),
    Limit::new("track_m", |r| r.track_m, 0.0, 20.0, OPEN),
    Limit::new("cg_height_m", |r| r.cg_height_m, 0.0, 20.0, OPEN),
    Limit::new(
        "cg_forward_offset_m",
        |r| r.cg_forward_offset_m,
        -20.0,
        20.0,
        CLOSED,
    ),
    Limit::new(
        "turn_energy_j_per_rad",
        |r| r.turn_energy_j_per_rad,
        0.0,
        1e6,
        CLOSED,
    ),
    Limit::new("ground_friction", |r| r.ground_friction, 0.0, 2.0, OPEN),
    Limit::new("max_slip", |r| r.max_slip, 0.0, 1.0, BOTH_OPEN),
    Limit::new(
        "max_climb_deg",
        |r| rad_to_deg(r.max_climb_rad),
        0.0,
        90.0,
        BOTH_OPEN,
    ),
    Limit::new(
        "max_descent_deg",
        |r| rad_to_deg(r.max_descent_rad),
        0.0,
        90.0,
        BOTH_OPEN,
    ),
    Limit::new(
        "max_roll_deg",
        |r| rad_to_deg(r.max_roll_rad),
        0.0,
        90.0,
        BOTH_OPEN,
    ),
    Limit::new(
        "roll_stability_fraction",
        |r| r.roll_stability_fraction,
        0.0,
        1.0,
        OPEN,
    ),
    Limit::new("gravity_m_s2", |r| r.gravity_m_s2, 0.0, 30.0, OPEN),
];

const POWER_LIMIT: Limit = Limit::new("max_drive_power_w", |_| 0.0, 0.0, 1e6, OPEN);

fn problem(key: &str, detail: String, fix: String) -> Problem {
    Problem {
        key: key.to_string(),
        pos: None,
        detail,
        fix,
    }
}

fn range_problem(key: &str, v: f64, range: &str) -> Problem {
    problem(
        key,
        if v.is_finite() {
            format!("got {v}, expected a number in {range}")
        } else {
            format!("got {v}, expected a finite number in {range}")
        },
        format!("set `{key}` inside {range}, or leave it out for the documented default"),
    )
}

fn table_problems(t: &EfficiencyTable) -> Vec<Problem> {
    let mut out = Vec::new();
    let increasing = |a: &[f64]| {
        !a.is_empty() && a.windows(2).all(|w| w[1] > w[0]) && a.iter().all(|v| v.is_finite())
    };
    if !increasing(&t.speeds_m_s) {
        out.push(table_problem(
            "speeds_m_s",
            "expected at least one speed, strictly increasing",
        ));
    }
    if !increasing(&t.torques_nm) {
        out.push(table_problem(
            "torques_nm",
            "expected at least one torque, strictly increasing",
        ));
    }
    let shape_ok = t.efficiency.len() == t.speeds_m_s.len()
        && t.efficiency
            .iter()
            .all(|row| row.len() == t.torques_nm.len());
    if !shape_ok {
        out.push(table_problem(
            "efficiency",
            &format!(
                "expected {} rows (one per speed) of {} values (one per torque)",
                t.speeds_m_s.len(),
                t.torques_nm.len()
            ),
        ));
    } else if !t.efficiency.iter().flatten().all(|&e| e > 0.0 && e <= 1.0) {
        out.push(table_problem(
            "efficiency",
            "expected every value in (0, 1]",
        ));
    }
    out
}

fn table_problem(key: &str, detail: &str) -> Problem {
    problem(
        &format!("efficiency_table.{key}"),
        detail.to_string(),
        "give `speeds_m_s`, `torques_nm` and one `efficiency` row per speed".into(),
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_default_rover_passes_its_own_checks() {
        assert!(Rover::default().check().is_ok());
    }
}
