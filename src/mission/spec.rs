//! The mission file as written: TOML text in, a raw mirror of every section out, with
//! the place of every value kept, and every problem a key has on its own.
//!
//! # What is checked here
//! Each key alone: that it is known (an unknown key gets a did-you-mean suggestion),
//! that its value has the right type, and, for the sections sunward's mission layer
//! owns (`[site]`, `[terrain]`, `[route]`, `[panels]`, `[weather]`, `[policy]`,
//! `[seasons]`, `[simulation]`), that it lies in its documented range. The tables the
//! stages own (`[rover]`, `[battery]`, `[thermal]`, `[loads]`) are checked for unknown
//! keys and types here and for ranges by the stages themselves in
//! [`resolve`](super::resolve), so no range is written twice.
//!
//! Every key, its unit, default and range is listed in `docs/mission-file.md`; the
//! ranges below are the same numbers.
//!
//! # Units
//! As named in each key: `_deg` degrees, `_m` metres, `_m2` square metres, `_w` watts,
//! `_h` hours, `_min` minutes, `_s` seconds, `_c` degrees Celsius, SOC as a fraction.
//! Nothing here converts units: [`resolve`](super::resolve) does, through
//! [`crate::units`].

use std::fmt;
use std::ops::Range;

use serde::de::DeserializeOwned;
use toml::de::{DeTable, DeValue, ValueDeserializer};
use toml::Spanned;

use crate::battery::loads::LoadSpec;
use crate::battery::thermal::ThermalParams;
use crate::battery::PackParams;
use crate::vehicle::rover::RoverFile;
use crate::vehicle::TextPos;

/// One problem with a mission file: the key, where it sits, what is wrong and the fix.
#[derive(Debug, Clone, PartialEq)]
pub struct Problem {
    /// Full key path as written, e.g. `site.lat_deg`, `loads.camera.power_w`.
    pub key: String,
    /// Line and column of the value (or of the key, or of the section), when known.
    pub at: Option<TextPos>,
    /// What is wrong and what was expected.
    pub detail: String,
    /// What the user can do.
    pub fix: String,
}

impl fmt::Display for Problem {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}: {}. Fix: {}", self.key, self.detail, self.fix)
    }
}

impl Problem {
    /// The problem as one line `FILE:LINE:COLUMN: key: problem. Fix: ...` (line and
    /// column 1 when the problem concerns the whole file).
    pub fn render(&self, file: &str) -> String {
        let at = self.at.unwrap_or(TextPos { line: 1, column: 1 });
        format!("{file}:{}:{}: {self}", at.line, at.column)
    }
}

/// A value from the file with its byte range in the text.
pub type Val<T> = Spanned<T>;

/// A parsed TOML value owned by the raw mission.
pub type TomlValue<'i> = Spanned<DeValue<'i>>;

/// A table whose keys a stage owns (`[rover]`, `[battery]`, `[thermal]`): unknown and
/// ill-typed keys already removed and reported, the rest kept as parsed so the
/// resolver can hand them to the stage's own type.
#[derive(Debug, Clone)]
pub struct StageTable<'i> {
    /// The table, spans into the mission text.
    pub value: TomlValue<'i>,
    /// Byte range of the table's header (for problems that concern the whole table).
    pub header: Range<usize>,
}

impl<'i> StageTable<'i> {
    /// Deserializes the table into the stage's own type.
    pub fn to<T: DeserializeOwned>(&self) -> Result<T, toml::de::Error> {
        T::deserialize(ValueDeserializer::from(self.value.clone()))
    }

    /// Byte range of `key`'s value, when the table holds it.
    pub fn span_of(&self, key: &str) -> Option<Range<usize>> {
        table_of(&self.value)?
            .iter()
            .find(|(k, _)| k.get_ref() == key)
            .map(|(_, v)| v.span())
    }

    /// The same table without `key` (its default then applies).
    pub fn without(&self, key: &str) -> StageTable<'i> {
        let mut out = self.clone();
        if let DeValue::Table(t) = out.value.get_mut() {
            let mut kept = DeTable::new();
            for (k, v) in t.iter().filter(|(k, _)| k.get_ref() != key) {
                kept.insert(k.clone(), v.clone());
            }
            *t = kept;
        }
        out
    }
}

/// `[site]`.
#[derive(Debug, Clone, Default)]
#[allow(missing_docs)] // each field is the key of the same name, documented in docs/mission-file.md
pub struct SiteRaw {
    pub name: Option<Val<String>>,
    pub lat_deg: Option<Val<f64>>,
    pub lon_deg: Option<Val<f64>>,
    pub elevation_m: Option<Val<f64>>,
    pub time_zone: Option<Val<String>>,
}

/// `[terrain]`.
#[derive(Debug, Clone, Default)]
#[allow(missing_docs)] // each field is the key of the same name, documented in docs/mission-file.md
pub struct TerrainRaw {
    pub file: Option<Val<String>>,
    pub cell_m: Option<Val<f64>>,
    pub z_scale_m: Option<Val<f64>>,
    pub z_offset_m: Option<Val<f64>>,
    pub png_nodata: Option<Val<i64>>,
    pub keep_out: Option<Val<String>>,
    pub max_cells: Option<Val<i64>>,
    pub max_memory_mb: Option<Val<i64>>,
}

/// One `[[route.sites]]` entry.
#[derive(Debug, Clone, Default)]
#[allow(missing_docs)] // each field is the key of the same name, documented in docs/mission-file.md
pub struct SiteStopRaw {
    pub name: Option<Val<String>>,
    pub x_m: Option<Val<f64>>,
    pub y_m: Option<Val<f64>>,
    pub payload_min: Option<Val<f64>>,
    /// Byte range of the entry, for problems about the whole entry.
    pub span: Range<usize>,
}

/// `[route]`.
#[derive(Debug, Clone, Default)]
#[allow(missing_docs)] // each field is the key of the same name, documented in docs/mission-file.md
pub struct RouteRaw {
    pub start_m: Option<Val<[f64; 2]>>,
    pub goal_m: Option<Val<[f64; 2]>>,
    pub waypoints_m: Vec<Val<[f64; 2]>>,
    pub sites: Vec<SiteStopRaw>,
    pub objective: Option<Val<String>>,
    pub connectivity: Option<Val<i64>>,
    pub max_climb_deg: Option<Val<f64>>,
    pub max_descent_deg: Option<Val<f64>>,
    pub max_roll_deg: Option<Val<f64>>,
}

/// `[panels]`.
#[derive(Debug, Clone, Default)]
#[allow(missing_docs)] // each field is the key of the same name, documented in docs/mission-file.md
pub struct PanelsRaw {
    pub area_m2: Option<Val<f64>>,
    pub efficiency_stc: Option<Val<f64>>,
    pub temp_coeff_per_k: Option<Val<f64>>,
    pub soiling_loss: Option<Val<f64>>,
    pub mppt_efficiency: Option<Val<f64>>,
    pub wiring_efficiency: Option<Val<f64>>,
    pub cell_temperature: Option<Val<String>>,
    pub faiman_u0_w_m2_k: Option<Val<f64>>,
    pub faiman_u1_w_s_m3_k: Option<Val<f64>>,
    pub noct_c: Option<Val<f64>>,
    pub mount: Option<Val<String>>,
    pub tilt_deg: Option<Val<f64>>,
    pub azimuth_deg: Option<Val<f64>>,
    pub axis_yaw_deg: Option<Val<f64>>,
    pub max_rotation_deg: Option<Val<f64>>,
}

/// One load: its table, and its name when it came from `[loads.NAME]`.
#[derive(Debug, Clone)]
pub struct LoadRaw<'i> {
    /// The checked load.
    pub spec: Option<LoadSpec>,
    /// Full key of the load (`loads.camera` or `loads[2]`).
    pub key: String,
    /// The load's table, for placing the stage's range problems.
    pub table: StageTable<'i>,
}

/// `[weather]`.
#[derive(Debug, Clone, Default)]
#[allow(missing_docs)] // each field is the key of the same name, documented in docs/mission-file.md
pub struct WeatherRaw {
    pub sky: Option<Val<String>>,
    pub linke_turbidity: Option<Val<Vec<f64>>>,
    pub clearness: Option<Val<Vec<f64>>>,
    pub clearness_sd: Option<Val<Vec<f64>>>,
    pub file: Option<Val<String>>,
    pub albedo: Option<Val<f64>>,
    pub sky_model: Option<Val<String>>,
    pub wind_m_s: Option<Val<f64>>,
    pub air_temp_mean_c: Option<Val<Vec<f64>>>,
    pub air_temp_swing_c: Option<Val<Vec<f64>>>,
    pub air_temp_peak_h: Option<Val<f64>>,
}

/// `[policy]`.
#[derive(Debug, Clone, Default)]
#[allow(missing_docs)] // each field is the key of the same name, documented in docs/mission-file.md
pub struct PolicyRaw {
    pub driving: Option<Val<String>>,
    pub drive_start_h: Option<Val<f64>>,
    pub drive_end_h: Option<Val<f64>>,
    pub min_soc_to_drive: Option<Val<f64>>,
    pub park_and_charge_to_soc: Option<Val<f64>>,
    pub overnight: Option<Val<String>>,
    pub deadline_days: Option<Val<f64>>,
    pub survival_loads: Vec<Val<String>>,
}

/// `[seasons]`.
#[derive(Debug, Clone, Default)]
#[allow(missing_docs)] // each field is the key of the same name, documented in docs/mission-file.md
pub struct SeasonsRaw {
    pub mode: Option<Val<String>>,
    pub year: Option<Val<i64>>,
    pub dates: Vec<Val<String>>,
    pub day_of_month: Option<Val<i64>>,
}

/// `[simulation]`.
#[derive(Debug, Clone, Default)]
#[allow(missing_docs)] // each field is the key of the same name, documented in docs/mission-file.md
pub struct SimulationRaw {
    pub step_s: Option<Val<f64>>,
    pub start_local_h: Option<Val<f64>>,
}

/// The whole file as written. A missing section is `None` (or empty) here; the
/// resolver says which sections are required.
#[derive(Debug, Clone, Default)]
#[allow(missing_docs)] // each field is the section of the same name
pub struct RawMission<'i> {
    pub site: Option<SiteRaw>,
    pub terrain: Option<TerrainRaw>,
    pub route: Option<RouteRaw>,
    pub rover: Option<StageTable<'i>>,
    pub panels: PanelsRaw,
    pub battery: Option<StageTable<'i>>,
    pub thermal: Option<StageTable<'i>>,
    pub loads: Vec<LoadRaw<'i>>,
    pub weather: Option<WeatherRaw>,
    pub policy: PolicyRaw,
    pub seasons: SeasonsRaw,
    pub simulation: SimulationRaw,
    /// Full keys present in the file, bad values included (`site`, `site.lat_deg`),
    /// with the byte range of the key (of the table, for sections).
    pub given: Vec<(String, Range<usize>)>,
}

/// The sections a mission file may hold, in the order of the documentation.
pub const SECTIONS: [&str; 12] = [
    "site",
    "terrain",
    "route",
    "rover",
    "panels",
    "battery",
    "thermal",
    "loads",
    "weather",
    "policy",
    "seasons",
    "simulation",
];

/// A closed or half-open numeric interval for a key.
#[derive(Debug, Clone, Copy)]
pub struct Interval {
    lo: f64,
    hi: f64,
    lo_open: bool,
    hi_open: bool,
    /// The bounds are checked by a later stage (with its own message); here only
    /// finiteness is, and the bounds only name the documented range in that message.
    stage_checks_bounds: bool,
}

impl Interval {
    /// [lo, hi].
    pub const fn closed(lo: f64, hi: f64) -> Interval {
        Interval {
            lo,
            hi,
            lo_open: false,
            hi_open: false,
            stage_checks_bounds: false,
        }
    }

    /// (lo, hi].
    pub const fn open_lo(lo: f64, hi: f64) -> Interval {
        Interval {
            lo,
            hi,
            lo_open: true,
            hi_open: false,
            stage_checks_bounds: false,
        }
    }

    /// [lo, hi).
    pub const fn open_hi(lo: f64, hi: f64) -> Interval {
        Interval {
            lo,
            hi,
            lo_open: false,
            hi_open: true,
            stage_checks_bounds: false,
        }
    }

    /// (lo, hi).
    pub const fn open(lo: f64, hi: f64) -> Interval {
        Interval {
            lo,
            hi,
            lo_open: true,
            hi_open: true,
            stage_checks_bounds: false,
        }
    }

    /// [lo, hi] as documented, but only finiteness is checked here: a later stage checks
    /// the bounds with its own message (one source for the range of its parameters).
    pub const fn stage_checked(lo: f64, hi: f64) -> Interval {
        Interval {
            stage_checks_bounds: true,
            ..Interval::closed(lo, hi)
        }
    }

    /// Whether `v` lies inside (a value that is not finite never does).
    pub fn contains(&self, v: f64) -> bool {
        if self.stage_checks_bounds {
            return v.is_finite();
        }
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
        v.is_finite() && above && below
    }
}

impl fmt::Display for Interval {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let open = if self.lo_open { '(' } else { '[' };
        let close = if self.hi_open { ')' } else { ']' };
        write!(f, "{open}{}, {}{close}", self.lo, self.hi)
    }
}

/// Collects problems with positions taken from byte ranges of the text.
pub struct Problems<'t> {
    text: &'t str,
    /// Problems found so far.
    pub list: Vec<Problem>,
    /// Full keys present in the file (even with a bad value), so that the resolver
    /// does not call a badly written key missing.
    pub given: Vec<(String, Range<usize>)>,
}

impl<'t> Problems<'t> {
    /// An empty list for `text`.
    pub fn new(text: &'t str) -> Problems<'t> {
        Problems {
            text,
            list: Vec::new(),
            given: Vec::new(),
        }
    }

    /// Adds a problem at byte range `span` (or at no place).
    pub fn add(&mut self, key: &str, span: Option<Range<usize>>, detail: String, fix: String) {
        let at = span.map(|s| TextPos::of_offset(self.text, s.start));
        self.list.push(Problem {
            key: key.to_string(),
            at,
            detail,
            fix,
        });
    }

    /// The text the spans point into.
    pub fn text(&self) -> &'t str {
        self.text
    }
}

/// Parses a mission file's text. Returns the raw mirror (as much as could be read) and
/// every problem that a key has on its own, sorted by position.
pub fn parse(text: &str) -> (RawMission<'_>, Vec<Problem>) {
    let mut out = Problems::new(text);
    let root = match DeTable::parse(text) {
        Ok(t) => t,
        Err(e) => {
            syntax_problem(&mut out, &e);
            return (RawMission::default(), out.list);
        }
    };
    let root = root.into_inner();
    let mut raw = read_root(&root, &mut out);
    raw.given = std::mem::take(&mut out.given);
    let mut list = out.list;
    sort_problems(&mut list);
    (raw, list)
}

/// Sorts problems by line, then column (problems without a place first).
pub fn sort_problems(list: &mut [Problem]) {
    list.sort_by_key(|p| p.at.map(|a| (a.line, a.column)));
}

fn syntax_problem(out: &mut Problems<'_>, e: &toml::de::Error) {
    out.add(
        "(file)",
        e.span(),
        format!("not valid TOML: {}", e.message().trim()),
        "correct the TOML syntax at this place (quotes around text, `=` between key and \
         value, brackets around section names)"
            .into(),
    );
}

fn read_root<'i>(root: &DeTable<'i>, out: &mut Problems<'_>) -> RawMission<'i> {
    let mut raw = RawMission::default();
    for (key, value) in root.iter() {
        let name = key.get_ref().as_ref();
        if !SECTIONS.contains(&name) {
            unknown_key(out, "", name, key.span(), &SECTIONS);
            continue;
        }
        read_section(&mut raw, name, value, out);
    }
    raw
}

fn read_section<'i>(
    raw: &mut RawMission<'i>,
    name: &str,
    value: &TomlValue<'i>,
    out: &mut Problems<'_>,
) {
    if name == "loads" {
        raw.loads = read_loads(value, out);
        return;
    }
    let Some(mut t) = Reader::table(name, value, out) else {
        return;
    };
    match name {
        "site" => raw.site = Some(read_site(&mut t, out)),
        "terrain" => raw.terrain = Some(read_terrain(&mut t, out)),
        "route" => raw.route = Some(read_route(&mut t, out)),
        "rover" => raw.rover = Some(stage_table::<RoverFile>(&t, out)),
        "panels" => raw.panels = read_panels(&mut t, out),
        "battery" => raw.battery = Some(stage_table::<PackParams>(&t, out)),
        "thermal" => raw.thermal = Some(stage_table::<ThermalParams>(&t, out)),
        "weather" => raw.weather = Some(read_weather(&mut t, out)),
        "policy" => raw.policy = read_policy(&mut t, out),
        "seasons" => raw.seasons = read_seasons(&mut t, out),
        _ => raw.simulation = read_simulation(&mut t, out),
    }
    if !matches!(name, "rover" | "battery" | "thermal") {
        t.finish(out);
    }
}

/// Reads the keys of one table: each accessor records the key as known, checks the
/// type (and range), and reports problems; [`Reader::finish`] reports the rest as
/// unknown.
pub struct Reader<'a, 'i> {
    path: String,
    table: &'a DeTable<'i>,
    span: Range<usize>,
    known: Vec<&'static str>,
}

/// The TOML type a value should have, for messages.
fn type_name(v: &DeValue<'_>) -> std::borrow::Cow<'static, str> {
    match v {
        DeValue::String(_) => "text".into(),
        DeValue::Integer(_) => "an integer".into(),
        DeValue::Float(_) => "a number".into(),
        DeValue::Boolean(_) => "true/false".into(),
        DeValue::Datetime(_) => "a date".into(),
        DeValue::Array(a) if a.len() == 1 => "an array of 1 value".into(),
        DeValue::Array(a) => format!("an array of {} values", a.len()).into(),
        DeValue::Table(_) => "a table".into(),
    }
}

fn table_of<'a, 'i>(v: &'a TomlValue<'i>) -> Option<&'a DeTable<'i>> {
    match v.get_ref() {
        DeValue::Table(t) => Some(t),
        _ => None,
    }
}

impl<'a, 'i> Reader<'a, 'i> {
    /// A reader over `value`, which must be a table (else a problem and `None`).
    pub fn table(
        path: &str,
        value: &'a TomlValue<'i>,
        out: &mut Problems<'_>,
    ) -> Option<Reader<'a, 'i>> {
        let Some(table) = table_of(value) else {
            out.add(
                path,
                Some(value.span()),
                format!("expected a table, got {}", type_name(value.get_ref())),
                format!("write it as a section `[{path}]` with its keys below"),
            );
            return None;
        };
        let reader = Reader {
            path: path.to_string(),
            table,
            span: value.span(),
            known: Vec::new(),
        };
        out.given.push((path.to_string(), value.span()));
        reader.note_given(out);
        Some(reader)
    }

    fn full(&self, key: &str) -> String {
        if self.path.is_empty() {
            key.to_string()
        } else {
            format!("{}.{key}", self.path)
        }
    }

    /// The value of `key`, recording the key as known.
    pub fn get(&mut self, key: &'static str) -> Option<&'a TomlValue<'i>> {
        self.known.push(key);
        self.table
            .iter()
            .find(|(k, _)| k.get_ref() == key)
            .map(|(_, v)| v)
    }

    fn note_given(&self, out: &mut Problems<'_>) {
        for (k, _) in self.table.iter() {
            out.given.push((self.full(k.get_ref()), k.span()));
        }
    }

    fn typed<T: DeserializeOwned>(
        &mut self,
        key: &'static str,
        expected: &str,
        example: &str,
        out: &mut Problems<'_>,
    ) -> Option<Val<T>> {
        let v = self.get(key)?;
        match T::deserialize(ValueDeserializer::from(v.clone())) {
            Ok(t) => Some(Spanned::new(v.span(), t)),
            Err(_) => {
                out.add(
                    &self.full(key),
                    Some(v.span()),
                    format!("expected {expected}, got {}", type_name(v.get_ref())),
                    format!("write it as {expected}, e.g. `{key} = {example}`"),
                );
                None
            }
        }
    }

    /// A number in `range` (integers are accepted as numbers).
    pub fn num(
        &mut self,
        key: &'static str,
        range: Interval,
        out: &mut Problems<'_>,
    ) -> Option<Val<f64>> {
        let v = self.typed::<f64>(key, "a number", "1.0", out)?;
        self.in_range(key, v, range, out)
    }

    fn in_range(
        &self,
        key: &'static str,
        v: Val<f64>,
        range: Interval,
        out: &mut Problems<'_>,
    ) -> Option<Val<f64>> {
        if range.contains(*v.get_ref()) {
            return Some(v);
        }
        let what = if v.get_ref().is_finite() {
            "a number"
        } else {
            "a finite number"
        };
        out.add(
            &self.full(key),
            Some(v.span()),
            format!("got {}, expected {what} in {range}", v.get_ref()),
            format!("set `{key}` inside {range}, or leave it out for the documented default"),
        );
        None
    }

    /// An integer in `range`.
    pub fn int(
        &mut self,
        key: &'static str,
        range: Interval,
        out: &mut Problems<'_>,
    ) -> Option<Val<i64>> {
        let v = self.typed::<i64>(key, "an integer", "1", out)?;
        let f = Spanned::new(v.span(), *v.get_ref() as f64);
        self.in_range(key, f, range, out)?;
        Some(v)
    }

    /// Text.
    pub fn text(&mut self, key: &'static str, out: &mut Problems<'_>) -> Option<Val<String>> {
        self.typed::<String>(key, "text in quotes", "\"...\"", out)
    }

    /// Text that must be one of `choices`.
    pub fn choice(
        &mut self,
        key: &'static str,
        choices: &[&str],
        out: &mut Problems<'_>,
    ) -> Option<Val<String>> {
        let v = self.text(key, out)?;
        if choices.contains(&v.get_ref().as_str()) {
            return Some(v);
        }
        let hint = suggestion(v.get_ref(), choices);
        out.add(
            &self.full(key),
            Some(v.span()),
            format!("unknown value \"{}\"{hint}", v.get_ref()),
            format!("use one of: {}", quoted(choices)),
        );
        None
    }

    /// A map point `[x, y]` in metres.
    pub fn point(&mut self, key: &'static str, out: &mut Problems<'_>) -> Option<Val<[f64; 2]>> {
        let v = self.get(key)?;
        match point_of(v) {
            Ok(xy) => self.finite_point(key, Spanned::new(v.span(), xy), out),
            Err(detail) => {
                out.add(
                    &self.full(key),
                    Some(v.span()),
                    detail,
                    format!(
                        "write it as a point [x, y] of two numbers, e.g. `{key} = [100.0, 250.0]`"
                    ),
                );
                None
            }
        }
    }

    fn finite_point(
        &self,
        key: &str,
        v: Val<[f64; 2]>,
        out: &mut Problems<'_>,
    ) -> Option<Val<[f64; 2]>> {
        if v.get_ref().iter().all(|c| c.is_finite()) {
            return Some(v);
        }
        out.add(
            &self.full(key),
            Some(v.span()),
            "expected finite map coordinates".into(),
            "give the point in the terrain's map coordinates, metres".into(),
        );
        None
    }

    /// A list of numbers, each in `range`; `count` fixes the length when given.
    pub fn nums(
        &mut self,
        key: &'static str,
        count: Option<usize>,
        range: Interval,
        out: &mut Problems<'_>,
    ) -> Option<Val<Vec<f64>>> {
        let v = self.typed::<Vec<f64>>(key, "an array of numbers", "[1.0, 2.0]", out)?;
        if let Some(n) = count.filter(|n| *n != v.get_ref().len()) {
            out.add(
                &self.full(key),
                Some(v.span()),
                format!("expected {n} values, got {}", v.get_ref().len()),
                format!("give {n} values (January to December for monthly tables)"),
            );
            return None;
        }
        if let Some((i, x)) = v
            .get_ref()
            .iter()
            .enumerate()
            .find(|(_, x)| !range.contains(**x))
        {
            let what = if x.is_finite() {
                "is outside"
            } else {
                "is not a finite number in"
            };
            out.add(
                &self.full(key),
                Some(v.span()),
                format!("value {x} (at index {i}) {what} {range}"),
                format!("keep every value of `{key}` inside {range}"),
            );
            return None;
        }
        Some(v)
    }

    /// Reports every key not asked for as unknown.
    pub fn finish(self, out: &mut Problems<'_>) {
        for (k, _) in self.table.iter() {
            let name = k.get_ref().as_ref();
            if !self.known.contains(&name) {
                unknown_key(out, &self.path, name, k.span(), &self.known);
            }
        }
    }
}

fn quoted(choices: &[&str]) -> String {
    let q: Vec<String> = choices.iter().map(|c| format!("\"{c}\"")).collect();
    q.join(", ")
}

fn unknown_key(out: &mut Problems<'_>, path: &str, key: &str, span: Range<usize>, known: &[&str]) {
    let full = if path.is_empty() {
        key.to_string()
    } else {
        format!("{path}.{key}")
    };
    let what = if path.is_empty() { "section" } else { "key" };
    let fix = match nearest(key, known) {
        Some(k) => format!("did you mean `{k}`?"),
        None => format!(
            "remove it; known {what}s here are: {}",
            known
                .iter()
                .map(|k| format!("`{k}`"))
                .collect::<Vec<_>>()
                .join(", ")
        ),
    };
    out.add(&full, Some(span), format!("unknown {what}"), fix);
}

fn suggestion(got: &str, known: &[&str]) -> String {
    nearest(got, known).map_or(String::new(), |k| format!(" (did you mean \"{k}\"?)"))
}

/// The known name nearest to `got` by edit distance, when close enough to be a typo
/// (at most a third of the name's length, and at least 1).
pub fn nearest<'k>(got: &str, known: &[&'k str]) -> Option<&'k str> {
    let limit = (got.chars().count() / 3).max(1);
    known
        .iter()
        .map(|k| (edit_distance(got, k), *k))
        .filter(|(d, _)| *d <= limit)
        .min_by_key(|(d, _)| *d)
        .map(|(_, k)| k)
}

/// Levenshtein distance (insert, delete, substitute; one each), in characters.
pub fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut cur = vec![i + 1; b.len() + 1];
        for (j, cb) in b.iter().enumerate() {
            let sub = prev[j] + usize::from(ca != *cb);
            cur[j + 1] = sub.min(prev[j + 1] + 1).min(cur[j] + 1);
        }
        prev = cur;
    }
    prev[b.len()]
}

fn read_site(t: &mut Reader<'_, '_>, out: &mut Problems<'_>) -> SiteRaw {
    SiteRaw {
        name: t.text("name", out),
        lat_deg: t.num("lat_deg", Interval::closed(-90.0, 90.0), out),
        lon_deg: t.num("lon_deg", Interval::closed(-180.0, 180.0), out),
        elevation_m: t.num("elevation_m", Interval::closed(-500.0, 9000.0), out),
        time_zone: t.text("time_zone", out),
    }
}

fn read_terrain(t: &mut Reader<'_, '_>, out: &mut Problems<'_>) -> TerrainRaw {
    TerrainRaw {
        file: t.text("file", out),
        cell_m: t.num("cell_m", Interval::open_lo(0.0, 100_000.0), out),
        z_scale_m: t.num("z_scale_m", Interval::open_lo(0.0, 1000.0), out),
        z_offset_m: t.num("z_offset_m", Interval::closed(-20_000.0, 20_000.0), out),
        png_nodata: t.int("png_nodata", Interval::closed(0.0, 65_535.0), out),
        keep_out: t.text("keep_out", out),
        max_cells: t.int("max_cells", Interval::closed(1.0, 17_179_869_184.0), out),
        max_memory_mb: t.int("max_memory_mb", Interval::closed(1.0, 1_073_741_824.0), out),
    }
}

/// Objectives of `route.objective`.
pub const OBJECTIVES: [&str; 3] = ["energy", "time", "distance"];

fn read_route(t: &mut Reader<'_, '_>, out: &mut Problems<'_>) -> RouteRaw {
    let tilt = Interval::open(0.0, 90.0);
    RouteRaw {
        start_m: t.point("start_m", out),
        goal_m: t.point("goal_m", out),
        waypoints_m: read_waypoints(t, out),
        sites: read_stops(t, out),
        objective: t.choice("objective", &OBJECTIVES, out),
        connectivity: read_connectivity(t, out),
        max_climb_deg: t.num("max_climb_deg", tilt, out),
        max_descent_deg: t.num("max_descent_deg", tilt, out),
        max_roll_deg: t.num("max_roll_deg", tilt, out),
    }
}

fn read_connectivity(t: &mut Reader<'_, '_>, out: &mut Problems<'_>) -> Option<Val<i64>> {
    let v = t.int(
        "connectivity",
        Interval::closed(i64::MIN as f64, i64::MAX as f64),
        out,
    )?;
    if matches!(v.get_ref(), 8 | 16) {
        return Some(v);
    }
    out.add(
        "route.connectivity",
        Some(v.span()),
        format!("got {}, expected 8 or 16", v.get_ref()),
        "use 8 (neighbours) or 16 (neighbours and knight moves)".into(),
    );
    None
}

/// `waypoints_m`: an array of points, each checked on its own, so that a bad point is
/// reported as `waypoints_m[i]` at its own place in the file.
fn read_waypoints(t: &mut Reader<'_, '_>, out: &mut Problems<'_>) -> Vec<Val<[f64; 2]>> {
    const EXPECTED: &str = "an array of points [[x, y], ...]";
    const EXAMPLE: &str = "[[100.0, 250.0], [400.0, 300.0]]";
    let Some(v) = t.get("waypoints_m") else {
        return Vec::new();
    };
    let DeValue::Array(points) = v.get_ref() else {
        out.add(
            &t.full("waypoints_m"),
            Some(v.span()),
            format!("expected {EXPECTED}, got {}", type_name(v.get_ref())),
            format!("write it as {EXPECTED}, e.g. `waypoints_m = {EXAMPLE}`"),
        );
        return Vec::new();
    };
    if !points.is_empty() && points.iter().all(is_number) {
        // One point without the outer brackets: one problem, not one per number.
        out.add(
            &t.full("waypoints_m"),
            Some(v.span()),
            format!("expected {EXPECTED}, got {} numbers", points.len()),
            "give each point its own brackets, e.g. `waypoints_m = [[100.0, 250.0]]` for one"
                .to_string(),
        );
        return Vec::new();
    }
    let mut good = Vec::new();
    for (i, p) in points.iter().enumerate() {
        let key = format!("waypoints_m[{i}]");
        match point_of(p) {
            Ok(xy) => {
                if let Some(v) = t.finite_point(&key, Spanned::new(p.span(), xy), out) {
                    good.push(v);
                }
            }
            Err(detail) => out.add(
                &t.full(&key),
                Some(p.span()),
                detail,
                format!(
                    "write waypoint {} as [x, y] in the terrain's map coordinates, metres, \
                     e.g. `waypoints_m = {EXAMPLE}`",
                    i + 1
                ),
            ),
        }
    }
    good
}

/// Whether `v` is a TOML integer or float.
fn is_number(v: &TomlValue<'_>) -> bool {
    matches!(v.get_ref(), DeValue::Integer(_) | DeValue::Float(_))
}

/// The point `[x, y]` that `p` holds, or what is wrong with it: its type, or for a pair,
/// which coordinate is not a number.
fn point_of(p: &TomlValue<'_>) -> Result<[f64; 2], String> {
    if let Ok(xy) = <XY as serde::Deserialize>::deserialize(ValueDeserializer::from(p.clone())) {
        return Ok(xy.0);
    }
    let got = match p.get_ref() {
        DeValue::Array(xy) if xy.len() == 2 => match xy.iter().position(|v| !is_number(v)) {
            Some(i) => format!("{} as {}", type_name(xy[i].get_ref()), ["x", "y"][i]),
            None => type_name(p.get_ref()).into(),
        },
        other => type_name(other).into(),
    };
    Err(format!("expected a point [x, y] of two numbers, got {got}"))
}

/// A point `[x, y]` of exactly two numbers. serde reads `[f64; 2]` from the first two
/// elements of a longer array and ignores the rest, so `[20.0, 20.0, 3.0]` passed.
struct XY([f64; 2]);

impl<'de> serde::Deserialize<'de> for XY {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<XY, D::Error> {
        struct Two;
        impl<'de> serde::de::Visitor<'de> for Two {
            type Value = XY;
            fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
                f.write_str("an array of two numbers")
            }
            fn visit_seq<A: serde::de::SeqAccess<'de>>(self, mut seq: A) -> Result<XY, A::Error> {
                use serde::de::{Error, IgnoredAny};
                let mut xy = [0.0; 2];
                for (i, c) in xy.iter_mut().enumerate() {
                    *c = seq
                        .next_element()?
                        .ok_or_else(|| A::Error::invalid_length(i, &self))?;
                }
                let mut n = 2;
                while seq.next_element::<IgnoredAny>()?.is_some() {
                    n += 1;
                }
                if n != 2 {
                    return Err(A::Error::invalid_length(n, &self));
                }
                Ok(XY(xy))
            }
        }
        d.deserialize_seq(Two)
    }
}

fn read_stops(t: &mut Reader<'_, '_>, out: &mut Problems<'_>) -> Vec<SiteStopRaw> {
    let Some(v) = t.get("sites") else {
        return Vec::new();
    };
    let DeValue::Array(items) = v.get_ref() else {
        out.add(
            "route.sites",
            Some(v.span()),
            format!(
                "expected an array of tables, got {}",
                type_name(v.get_ref())
            ),
            "write each site as a `[[route.sites]]` table with name, x_m, y_m, payload_min".into(),
        );
        return Vec::new();
    };
    let mut stops = Vec::new();
    for (i, item) in items.iter().enumerate() {
        let path = format!("route.sites[{i}]");
        if let Some(mut s) = Reader::table(&path, item, out) {
            stops.push(read_stop(&mut s, out));
            s.finish(out);
        }
    }
    stops
}

fn read_stop(s: &mut Reader<'_, '_>, out: &mut Problems<'_>) -> SiteStopRaw {
    let coord = Interval::closed(-1e9, 1e9);
    SiteStopRaw {
        name: s.text("name", out),
        x_m: s.num("x_m", coord, out),
        y_m: s.num("y_m", coord, out),
        payload_min: s.num("payload_min", Interval::closed(0.0, 10_080.0), out),
        span: s.span.clone(),
    }
}

/// Mounts of `panels.mount`.
pub const MOUNTS: [&str; 3] = ["deck", "fixed_tilt", "single_axis"];
/// Models of `panels.cell_temperature`.
pub const CELL_MODELS: [&str; 2] = ["faiman", "noct"];

fn read_panels(t: &mut Reader<'_, '_>, out: &mut Problems<'_>) -> PanelsRaw {
    // The electrical keys' ranges are the sun stage's (`Panel::validate`, in resolve).
    PanelsRaw {
        area_m2: t.num("area_m2", Interval::stage_checked(0.0, 1000.0), out),
        efficiency_stc: t.num("efficiency_stc", Interval::stage_checked(0.0, 0.5), out),
        temp_coeff_per_k: t.num(
            "temp_coeff_per_k",
            Interval::stage_checked(-0.02, 0.01),
            out,
        ),
        soiling_loss: t.num("soiling_loss", Interval::stage_checked(0.0, 1.0), out),
        mppt_efficiency: t.num("mppt_efficiency", Interval::stage_checked(0.0, 1.0), out),
        wiring_efficiency: t.num("wiring_efficiency", Interval::stage_checked(0.0, 1.0), out),
        cell_temperature: t.choice("cell_temperature", &CELL_MODELS, out),
        faiman_u0_w_m2_k: t.num("faiman_u0_w_m2_k", Interval::open_lo(0.0, 200.0), out),
        faiman_u1_w_s_m3_k: t.num("faiman_u1_w_s_m3_k", Interval::closed(0.0, 100.0), out),
        noct_c: t.num("noct_c", Interval::closed(20.0, 80.0), out),
        mount: t.choice("mount", &MOUNTS, out),
        tilt_deg: t.num("tilt_deg", Interval::closed(0.0, 90.0), out),
        azimuth_deg: t.num("azimuth_deg", Interval::closed(-360.0, 360.0), out),
        axis_yaw_deg: t.num("axis_yaw_deg", Interval::closed(-360.0, 360.0), out),
        max_rotation_deg: t.num("max_rotation_deg", Interval::open_lo(0.0, 90.0), out),
    }
}

/// Sources of `weather.sky`.
pub const SKIES: [&str; 3] = ["clear_sky", "clearness", "csv"];
/// Models of `weather.sky_model`.
pub const SKY_MODELS: [&str; 3] = ["hay_davies", "isotropic", "perez"];

fn read_weather(t: &mut Reader<'_, '_>, out: &mut Problems<'_>) -> WeatherRaw {
    WeatherRaw {
        sky: t.choice("sky", &SKIES, out),
        linke_turbidity: read_linke(t, out),
        clearness: t.nums("clearness", Some(12), Interval::closed(0.0, 1.0), out),
        clearness_sd: read_one_or_twelve(t, "clearness_sd", Interval::closed(0.0, 0.5), out),
        file: t.text("file", out),
        albedo: t.num("albedo", Interval::closed(0.0, 1.0), out),
        sky_model: t.choice("sky_model", &SKY_MODELS, out),
        wind_m_s: t.num("wind_m_s", Interval::closed(0.0, 60.0), out),
        // Climate ranges are the battery stage's (`MonthlyClimate::validate`, in resolve).
        air_temp_mean_c: t.nums(
            "air_temp_mean_c",
            Some(12),
            Interval::stage_checked(-90.0, 60.0),
            out,
        ),
        air_temp_swing_c: t.nums(
            "air_temp_swing_c",
            Some(12),
            Interval::stage_checked(0.0, 40.0),
            out,
        ),
        air_temp_peak_h: t.num("air_temp_peak_h", Interval::stage_checked(0.0, 24.0), out),
    }
}

/// `linke_turbidity`: one number for every month, or twelve.
fn read_linke(t: &mut Reader<'_, '_>, out: &mut Problems<'_>) -> Option<Val<Vec<f64>>> {
    read_one_or_twelve(t, "linke_turbidity", Interval::closed(1.0, 10.0), out)
}

/// A monthly key given as one number for every month, or twelve.
fn read_one_or_twelve(
    t: &mut Reader<'_, '_>,
    key: &'static str,
    range: Interval,
    out: &mut Problems<'_>,
) -> Option<Val<Vec<f64>>> {
    let v = t.get(key)?;
    if matches!(v.get_ref(), DeValue::Array(_)) {
        t.known.pop();
        return t.nums(key, Some(12), range, out);
    }
    t.known.pop();
    let one = t.num(key, range, out)?;
    Some(Spanned::new(one.span(), vec![*one.get_ref(); 12]))
}

/// Modes of `policy.driving`.
pub const DRIVING: [&str; 3] = ["daylight", "window", "any_time"];
/// Modes of `policy.overnight`.
pub const OVERNIGHT: [&str; 2] = ["sleep", "awake"];

fn read_policy(t: &mut Reader<'_, '_>, out: &mut Problems<'_>) -> PolicyRaw {
    let hour = Interval::closed(0.0, 24.0);
    let soc = Interval::closed(0.0, 1.0);
    PolicyRaw {
        driving: t.choice("driving", &DRIVING, out),
        drive_start_h: t.num("drive_start_h", hour, out),
        drive_end_h: t.num("drive_end_h", hour, out),
        min_soc_to_drive: t.num("min_soc_to_drive", soc, out),
        park_and_charge_to_soc: t.num("park_and_charge_to_soc", Interval::open_lo(0.0, 1.0), out),
        overnight: t.choice("overnight", &OVERNIGHT, out),
        deadline_days: t.num("deadline_days", Interval::open_lo(0.0, 366.0), out),
        survival_loads: t
            .typed::<Vec<Spanned<String>>>(
                "survival_loads",
                "an array of load names",
                "[\"watchdog\"]",
                out,
            )
            .map_or(Vec::new(), Spanned::into_inner),
    }
}

/// Modes of `seasons.mode`.
pub const SEASON_MODES: [&str; 3] = ["solstices_equinoxes", "dates", "monthly"];

fn read_seasons(t: &mut Reader<'_, '_>, out: &mut Problems<'_>) -> SeasonsRaw {
    SeasonsRaw {
        mode: t.choice("mode", &SEASON_MODES, out),
        year: t.int("year", Interval::closed(1900.0, 2100.0), out),
        dates: read_dates(t, out),
        day_of_month: t.int("day_of_month", Interval::closed(1.0, 28.0), out),
    }
}

/// `dates`: each a quoted "YYYY-MM-DD" or a bare TOML date.
fn read_dates(t: &mut Reader<'_, '_>, out: &mut Problems<'_>) -> Vec<Val<String>> {
    let Some(v) = t.get("dates") else {
        return Vec::new();
    };
    let DeValue::Array(items) = v.get_ref() else {
        out.add(
            "seasons.dates",
            Some(v.span()),
            format!("expected an array of dates, got {}", type_name(v.get_ref())),
            "write e.g. `dates = [\"2027-06-21\", \"2027-12-21\"]`".into(),
        );
        return Vec::new();
    };
    items.iter().filter_map(|d| date_text(d, out)).collect()
}

fn date_text(d: &TomlValue<'_>, out: &mut Problems<'_>) -> Option<Val<String>> {
    let text = match d.get_ref() {
        DeValue::String(s) => s.to_string(),
        DeValue::Datetime(dt) => dt.to_string(),
        other => {
            out.add(
                "seasons.dates",
                Some(d.span()),
                format!("expected a date, got {}", type_name(other)),
                "write each date as \"YYYY-MM-DD\"".into(),
            );
            return None;
        }
    };
    Some(Spanned::new(d.span(), text))
}

fn read_simulation(t: &mut Reader<'_, '_>, out: &mut Problems<'_>) -> SimulationRaw {
    SimulationRaw {
        step_s: t.num("step_s", Interval::open_lo(0.0, 60.0), out),
        start_local_h: t.num("start_local_h", Interval::open_hi(0.0, 24.0), out),
    }
}

/// `[loads]`: named tables (`[loads.camera]`) or an array of tables (`[[loads]]`).
fn read_loads<'i>(value: &TomlValue<'i>, out: &mut Problems<'_>) -> Vec<LoadRaw<'i>> {
    match value.get_ref() {
        DeValue::Array(items) => items
            .iter()
            .enumerate()
            .filter_map(|(i, item)| read_load(&format!("loads[{i}]"), None, item, out))
            .collect(),
        DeValue::Table(t) => t
            .iter()
            .filter_map(|(k, item)| {
                let name = k.get_ref().as_ref();
                read_load(&format!("loads.{name}"), Some(name), item, out)
            })
            .collect(),
        other => {
            out.add(
                "loads",
                Some(value.span()),
                format!("expected tables of loads, got {}", type_name(other)),
                "write each load as `[loads.NAME]` with power_w and when".into(),
            );
            Vec::new()
        }
    }
}

fn read_load<'i>(
    key: &str,
    name: Option<&str>,
    item: &TomlValue<'i>,
    out: &mut Problems<'_>,
) -> Option<LoadRaw<'i>> {
    let reader = Reader::table(key, item, out)?;
    let before = out.list.len();
    let mut table = stage_table::<LoadSpec>(&reader, out);
    if let Some(n) = name {
        if table.span_of("name").is_some() {
            out.add(
                &format!("{key}.name"),
                table.span_of("name"),
                "a load under `[loads.NAME]` takes its name from the table".into(),
                "remove `name`, or use the `[[loads]]` form".into(),
            );
            table = table.without("name");
        }
        table = with_name(table, n);
    }
    let spec = match table.to::<LoadSpec>() {
        Ok(s) => Some(s),
        Err(e) => {
            if out.list.len() == before {
                load_problem(key, &table, e.message(), out);
            }
            None
        }
    };
    Some(LoadRaw {
        spec,
        key: key.to_string(),
        table,
    })
}

/// Places the load stage's message: at `when` when the schedule is unknown, else at
/// the load's table; the stage's `load "NAME": ` prefix is dropped (the key names it).
fn load_problem(key: &str, table: &StageTable<'_>, message: &str, out: &mut Problems<'_>) {
    let message = message.trim();
    let detail = match message.strip_prefix("load \"") {
        Some(rest) => rest.split_once("\": ").map_or(message, |(_, d)| d),
        None => message,
    };
    let when = table
        .span_of("when")
        .filter(|_| detail.starts_with("unknown when"));
    let (key, span) = match when {
        Some(span) => (format!("{key}.when"), span),
        None => (key.to_string(), table.header.clone()),
    };
    out.add(&key, Some(span), detail.to_string(), load_fix().into());
}

fn load_fix() -> &'static str {
    "give `power_w` and `when` (always, awake, driving, parked, asleep, daylight, window with \
     start_h and end_h, periodic with every_min and for_min, at_site with minutes)"
}

fn with_name<'i>(mut table: StageTable<'i>, name: &str) -> StageTable<'i> {
    let span = table.header.clone();
    if let DeValue::Table(t) = table.value.get_mut() {
        let key = Spanned::new(span.clone(), std::borrow::Cow::Owned("name".to_string()));
        let val = Spanned::new(
            span,
            DeValue::String(std::borrow::Cow::Owned(name.to_string())),
        );
        t.insert(key, val);
    }
    table
}

/// Keeps the keys `T` knows whose values `T` accepts; reports the others.
fn stage_table<'i, T: DeserializeOwned>(
    t: &Reader<'_, 'i>,
    out: &mut Problems<'_>,
) -> StageTable<'i> {
    let fields = struct_fields::<T>();
    let mut kept = DeTable::new();
    for (k, v) in t.table.iter() {
        let name = k.get_ref().as_ref();
        if !fields.contains(&name) {
            unknown_key(out, &t.path, name, k.span(), fields);
        } else if let Some(msg) = rejects::<T>(k, v) {
            out.add(
                &t.full(name),
                Some(v.span()),
                format!("wrong type or value: {msg}"),
                format!("check `{name}` against the documentation of [{}]", t.path),
            );
        } else {
            kept.insert(k.clone(), v.clone());
        }
    }
    StageTable {
        value: Spanned::new(t.span.clone(), DeValue::Table(kept)),
        header: t.span.clone(),
    }
}

/// Whether `T` refuses a table holding only this key (its message), for types whose
/// other keys all have defaults. Keys `T` needs but that are absent are not reported
/// here (a "missing field" message is the table's problem, not the key's).
fn rejects<'i, T: DeserializeOwned>(
    k: &Spanned<std::borrow::Cow<'i, str>>,
    v: &TomlValue<'i>,
) -> Option<String> {
    let mut one = DeTable::new();
    one.insert(k.clone(), v.clone());
    let e = T::deserialize(ValueDeserializer::from(Spanned::new(
        v.span(),
        DeValue::Table(one),
    )))
    .err()?;
    let msg = e.message().trim().to_string();
    (!msg.starts_with("missing field") && !msg.contains("needs `")).then_some(msg)
}

/// The field names a derived `Deserialize` struct declares (asked of the type itself,
/// so the list cannot drift from the stage's own definition).
pub fn struct_fields<T: DeserializeOwned>() -> &'static [&'static str] {
    let mut fields: &'static [&'static str] = &[];
    let _ = T::deserialize(FieldNames(&mut fields));
    fields
}

/// A deserializer that only records the fields a struct asks for.
struct FieldNames<'f>(&'f mut &'static [&'static str]);

impl<'de> serde::Deserializer<'de> for FieldNames<'_> {
    type Error = serde::de::value::Error;

    fn deserialize_any<V: serde::de::Visitor<'de>>(self, _: V) -> Result<V::Value, Self::Error> {
        Err(serde::de::Error::custom("not a struct"))
    }

    fn deserialize_struct<V: serde::de::Visitor<'de>>(
        self,
        _: &'static str,
        fields: &'static [&'static str],
        _: V,
    ) -> Result<V::Value, Self::Error> {
        *self.0 = fields;
        Err(serde::de::Error::custom("fields recorded"))
    }

    serde::forward_to_deserialize_any! {
        bool i8 i16 i32 i64 i128 u8 u16 u32 u64 u128 f32 f64 char str string bytes
        byte_buf option unit unit_struct newtype_struct seq tuple tuple_struct map enum
        identifier ignored_any
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn stage_field_lists_come_from_the_types() {
        assert!(struct_fields::<RoverFile>().contains(&"mass_kg"));
        assert!(struct_fields::<PackParams>().contains(&"reserve_soc"));
        assert!(struct_fields::<ThermalParams>().contains(&"heater_power_w"));
        assert!(struct_fields::<LoadSpec>().contains(&"when"));
    }

    #[test]
    fn edit_distance_counts_single_edits() {
        assert_eq!(edit_distance("kitten", "sitting"), 3);
        assert_eq!(nearest("lat_dg", &["lat_deg", "lon_deg"]), Some("lat_deg"));
        assert_eq!(nearest("colour", &["lat_deg"]), None);
    }
}
