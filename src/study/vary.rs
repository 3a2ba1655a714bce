//! What a trade study varies: `KEY=A:B:STEP` specifications, the values they stand for,
//! and the mission file with one combination of values written in.
//!
//! # Keys
//! Any numeric mission key by its dotted path, as written in the mission file
//! (`battery.capacity_wh`, `panels.area_m2`, `policy.deadline_days`). Inside an array of
//! tables a path segment picks the element by its `name` (`loads.row imager.duty`,
//! `route.sites.tarn shore.payload_min`) or by its index from 0 (`loads.0.duty`). A key
//! the file leaves out is added (its section too), so defaults can be varied. The
//! `[terrain]` keys cannot be varied (the terrain is read once per study).
//!
//! One key that is not in the file: `seasons.start_date` (or `route.start_date`) varies the season's start date
//! (`A` and `B` as `YYYY-MM-DD`, `STEP` in whole days, e.g. `7` or `7d`); each case runs
//! that one date (the `[seasons]` section becomes `mode = "dates"` with that date).
//!
//! And `payload.duty`: the `duty` of every load not named in `policy.survival_loads`
//! (the payload), all set to the same value.
//!
//! # Values
//! `A:B:STEP` gives `A, A + STEP, …` up to and including `B` (within a millionth of a
//! step, so that decimal steps land on `B`); each value is `A + i·STEP` rounded to 12
//! significant digits (no accumulated sums). `A:B:STEP` with `B < A` needs a negative
//! step. A single value `A` is allowed. Integral values are written as TOML integers
//! (the mission file accepts integers for numeric keys), others as floats.

use chrono::{Duration, NaiveDate};

/// Most values one `--vary` may give.
pub const MAX_VALUES_PER_KEY: usize = 100_000;

/// The virtual key for the season's start date.
pub const START_DATE_KEY: &str = "seasons.start_date";

/// Another name for [`START_DATE_KEY`] (the mission's start date is the route's too).
pub const START_DATE_ALIAS: &str = "route.start_date";

/// The virtual key for the duty of every payload load (every load not named in
/// `policy.survival_loads`).
pub const PAYLOAD_DUTY_KEY: &str = "payload.duty";

/// One value of a varied key.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Value {
    /// A number.
    Number(f64),
    /// A date (for [`START_DATE_KEY`]).
    Date(NaiveDate),
}

impl Value {
    /// The value as the CSV and the messages show it.
    pub fn text(&self) -> String {
        match self {
            Value::Number(v) => number_text(*v),
            Value::Date(d) => d.format("%Y-%m-%d").to_string(),
        }
    }

    /// The value as a number (dates: days since 1970-01-01), for plots.
    pub fn as_f64(&self) -> f64 {
        match self {
            Value::Number(v) => *v,
            Value::Date(d) => {
                (*d - NaiveDate::from_ymd_opt(1970, 1, 1).expect("valid")).num_days() as f64
            }
        }
    }
}

/// Shortest text that reads back as `v` (integers without a decimal point).
pub fn number_text(v: f64) -> String {
    if v.fract() == 0.0 && v.abs() < 9.0e15 {
        format!("{}", v as i64)
    } else {
        format!("{v}")
    }
}

/// One `--vary KEY=A:B:STEP`.
#[derive(Debug, Clone, PartialEq)]
pub struct Vary {
    /// The dotted key.
    pub key: String,
    /// Its values, in order.
    pub values: Vec<Value>,
    /// The specification as given (for messages and shard records).
    pub spec: String,
}

/// A problem with a `--vary` specification, with the fix.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("--vary {spec}: {problem}. Fix: {fix}")]
pub struct VaryError {
    /// The specification as given.
    pub spec: String,
    /// What is wrong.
    pub problem: String,
    /// What to do.
    pub fix: String,
}

fn err(spec: &str, problem: impl Into<String>, fix: impl Into<String>) -> VaryError {
    VaryError {
        spec: spec.to_string(),
        problem: problem.into(),
        fix: fix.into(),
    }
}

/// Rounds to 12 significant digits (so that 0.1 + 2·0.1 reads 0.3).
fn round12(v: f64) -> f64 {
    if v == 0.0 || !v.is_finite() {
        return v;
    }
    format!("{v:.11e}").parse().unwrap_or(v)
}

impl Vary {
    /// Parses `KEY=A:B:STEP` (or `KEY=A`).
    pub fn parse(spec: &str) -> Result<Vary, VaryError> {
        let Some((key, range)) = spec.split_once('=') else {
            return Err(err(
                spec,
                "no `=`",
                "write KEY=A:B:STEP, e.g. battery.capacity_wh=1200:3600:400",
            ));
        };
        let key = key.trim();
        if key.is_empty() || key.split('.').any(|s| s.trim().is_empty()) {
            return Err(err(
                spec,
                "the key is empty or has an empty segment",
                "give the dotted key as in the mission file, e.g. panels.area_m2",
            ));
        }
        if key == "terrain" || key.starts_with("terrain.") {
            return Err(err(
                spec,
                "terrain keys cannot be varied (the terrain is read once per study)",
                "run one study per terrain",
            ));
        }
        let parts: Vec<&str> = range.split(':').map(str::trim).collect();
        if parts.len() != 1 && parts.len() != 3 {
            return Err(err(
                spec,
                format!("`{range}` has {} part(s)", parts.len()),
                "write A:B:STEP (three parts) or a single value",
            ));
        }
        let key = if key == START_DATE_ALIAS {
            START_DATE_KEY
        } else {
            key
        };
        let values = if key == START_DATE_KEY {
            date_values(spec, &parts)?
        } else {
            number_values(spec, &parts)?
        };
        Ok(Vary {
            key: key.to_string(),
            values,
            spec: spec.to_string(),
        })
    }
}

fn number_values(spec: &str, parts: &[&str]) -> Result<Vec<Value>, VaryError> {
    let num = |s: &str| -> Result<f64, VaryError> {
        s.parse::<f64>()
            .ok()
            .filter(|v| v.is_finite())
            .ok_or_else(|| {
                err(
                    spec,
                    format!("`{s}` is not a number"),
                    "write numbers such as 0.5 or 1200",
                )
            })
    };
    let a = num(parts[0])?;
    if parts.len() == 1 {
        return Ok(vec![Value::Number(a)]);
    }
    let (b, step) = (num(parts[1])?, num(parts[2])?);
    if step == 0.0 || (b - a) * step < 0.0 {
        return Err(err(
            spec,
            format!("a step of {step} never goes from {a} to {b}"),
            "give a step with the sign of B - A, not zero",
        ));
    }
    let n = ((b - a) / step + 1e-6).floor() + 1.0;
    if n > MAX_VALUES_PER_KEY as f64 {
        return Err(err(
            spec,
            format!("{n:.0} values"),
            format!("use a coarser step (at most {MAX_VALUES_PER_KEY} values a key)"),
        ));
    }
    Ok((0..n as usize)
        .map(|i| Value::Number(round12(a + i as f64 * step)))
        .collect())
}

fn date_values(spec: &str, parts: &[&str]) -> Result<Vec<Value>, VaryError> {
    let date = |s: &str| {
        NaiveDate::parse_from_str(s, "%Y-%m-%d").map_err(|_| {
            err(
                spec,
                format!("`{s}` is not a date"),
                "write dates as YYYY-MM-DD",
            )
        })
    };
    let a = date(parts[0])?;
    if parts.len() == 1 {
        return Ok(vec![Value::Date(a)]);
    }
    let b = date(parts[1])?;
    let step: i64 = parts[2].trim_end_matches('d').parse().map_err(|_| {
        err(
            spec,
            format!("`{}` is not a whole number of days", parts[2]),
            "write the step in days, e.g. 7 or 7d",
        )
    })?;
    let span = (b - a).num_days();
    if step == 0 || span * step < 0 {
        return Err(err(
            spec,
            format!("a step of {step} days never goes from {a} to {b}"),
            "give a step in days with the sign of B - A, not zero",
        ));
    }
    let n = span / step + 1;
    if n as usize > MAX_VALUES_PER_KEY {
        return Err(err(spec, format!("{n} dates"), "use a longer step"));
    }
    Ok((0..n)
        .map(|i| Value::Date(a + Duration::days(i * step)))
        .collect())
}

/// The full grid of cases: every combination, the first key varying slowest. Case `i`
/// is the `i`-th combination in that order.
pub fn grid_len(varies: &[Vary]) -> usize {
    varies.iter().map(|v| v.values.len()).product()
}

/// The values of case `index` (see [`grid_len`]), one per key.
pub fn case_values(varies: &[Vary], index: usize) -> Vec<Value> {
    let mut rest = index;
    let mut out = vec![Value::Number(0.0); varies.len()];
    for (k, v) in varies.iter().enumerate().rev() {
        let n = v.values.len();
        out[k] = v.values[rest % n];
        rest /= n;
    }
    out
}

/// Writes `value` at the dotted `key` of a parsed mission file (module doc).
pub fn set(doc: &mut toml::Table, key: &str, value: Value) -> Result<(), String> {
    if key == START_DATE_KEY {
        let Value::Date(d) = value else {
            return Err(format!("{key} takes dates"));
        };
        let mut seasons = toml::Table::new();
        seasons.insert("mode".into(), toml::Value::String("dates".into()));
        seasons.insert(
            "dates".into(),
            toml::Value::Array(vec![toml::Value::String(d.format("%Y-%m-%d").to_string())]),
        );
        doc.insert("seasons".into(), toml::Value::Table(seasons));
        return Ok(());
    }
    let Value::Number(v) = value else {
        return Err(format!("{key} takes numbers, not dates"));
    };
    if key == PAYLOAD_DUTY_KEY {
        return set_payload_duty(doc, v);
    }
    if key == CAPACITY_KEY {
        resize_by_energy(doc)?;
    }
    let segs: Vec<&str> = key.split('.').map(str::trim).collect();
    let mut table = doc;
    let mut i = 0;
    let mut walked = String::new();
    while i + 1 < segs.len() {
        let seg = segs[i];
        if !walked.is_empty() {
            walked.push('.');
        }
        walked.push_str(seg);
        let entry = table
            .entry(seg.to_string())
            .or_insert_with(|| toml::Value::Table(toml::Table::new()));
        table = match entry {
            toml::Value::Table(t) => t,
            toml::Value::Array(items) => {
                // The next segment picks the element; a key must follow it.
                if i + 2 >= segs.len() {
                    return Err(format!(
                        "`{walked}` is a list; name an element and a key, e.g. `{walked}.NAME.KEY`"
                    ));
                }
                i += 1;
                let pick = segs[i];
                let idx = items
                    .iter()
                    .position(|t| t.get("name").and_then(toml::Value::as_str) == Some(pick))
                    .or_else(|| pick.parse::<usize>().ok().filter(|&k| k < items.len()));
                let Some(idx) = idx else {
                    let names: Vec<&str> = items
                        .iter()
                        .filter_map(|t| t.get("name").and_then(toml::Value::as_str))
                        .collect();
                    return Err(format!(
                        "`{walked}` has no element named `{pick}` (names: {}; or an index from 0 to {})",
                        names.join(", "),
                        items.len().saturating_sub(1)
                    ));
                };
                walked.push('.');
                walked.push_str(pick);
                match &mut items[idx] {
                    toml::Value::Table(t) => t,
                    _ => return Err(format!("`{walked}` is not a table")),
                }
            }
            other => {
                return Err(format!(
                    "`{walked}` is {} in the mission file, not a section",
                    other.type_str()
                ))
            }
        };
        i += 1;
    }
    let last = segs[segs.len() - 1];
    if let Some(old) = table.get(last) {
        if !matches!(old, toml::Value::Integer(_) | toml::Value::Float(_)) {
            return Err(format!(
                "`{key}` is a {} in the mission file, not a number",
                old.type_str()
            ));
        }
    }
    let val = if v.fract() == 0.0 && v.abs() < 9.0e15 {
        toml::Value::Integer(v as i64)
    } else {
        toml::Value::Float(v)
    };
    table.insert(last.to_string(), val);
    Ok(())
}

/// The pack energy key, which a study varies however the file sizes the pack.
pub const CAPACITY_KEY: &str = "battery.capacity_wh";

/// Before [`CAPACITY_KEY`] is written: a pack the file sizes by cells (or leaves at the
/// default) is re-sized by energy at its own nominal voltage
/// ([`crate::battery::params::PackParams::rated_voltage_v`]: series cells × the
/// chemistry's mean cell OCV, or the default voltage), so that the value written sets
/// the pack's energy and the pack is not sized twice. A file that sizes the pack by
/// energy is left as it is.
fn resize_by_energy(doc: &mut toml::Table) -> Result<(), String> {
    let battery = doc
        .entry("battery")
        .or_insert_with(|| toml::Value::Table(toml::Table::new()));
    let toml::Value::Table(b) = battery else {
        return Err("`battery` is not a table".to_string());
    };
    if b.contains_key("nominal_voltage_v") || b.contains_key("capacity_wh") {
        // Sized by energy already (or in part: the mission's own check says so).
        return Ok(());
    }
    let chemistry = match b.get("chemistry").and_then(toml::Value::as_str) {
        None => crate::battery::chemistry::Chemistry::default(),
        Some(c) => toml::Value::String(c.to_string())
            .try_into()
            .map_err(|_| format!("battery.chemistry = \"{c}\" is not a known chemistry"))?,
    };
    let series = match b.get("cells_series") {
        None => None,
        Some(v) => match v.as_integer() {
            Some(n) if n >= 1 => u32::try_from(n).ok(),
            _ => None,
        }
        .map(Some)
        .ok_or("battery.cells_series must be a whole number of cells".to_string())?,
    };
    let params = crate::battery::params::PackParams {
        chemistry,
        cells_series: series,
        ..Default::default()
    };
    let Some(volts) = params.rated_voltage_v() else {
        return Err("the pack's nominal voltage is unknown".to_string());
    };
    for k in ["cells_series", "cells_parallel", "cell_capacity_ah"] {
        b.remove(k);
    }
    b.insert("nominal_voltage_v".into(), toml::Value::Float(volts));
    Ok(())
}

/// Writes `duty = v` into every load not named in `policy.survival_loads`.
fn set_payload_duty(doc: &mut toml::Table, v: f64) -> Result<(), String> {
    let survival: Vec<String> = doc
        .get("policy")
        .and_then(|p| p.get("survival_loads"))
        .and_then(toml::Value::as_array)
        .map(|a| {
            a.iter()
                .filter_map(|x| x.as_str().map(String::from))
                .collect()
        })
        .unwrap_or_default();
    let mut n = 0;
    let mut put = |name: &str, t: &mut toml::Table| {
        if !survival.iter().any(|s| s == name) {
            t.insert("duty".into(), toml::Value::Float(v));
            n += 1;
        }
    };
    match doc.get_mut("loads") {
        Some(toml::Value::Array(items)) => {
            for it in items {
                if let toml::Value::Table(t) = it {
                    let name = t
                        .get("name")
                        .and_then(toml::Value::as_str)
                        .unwrap_or("")
                        .to_string();
                    put(&name, t);
                }
            }
        }
        Some(toml::Value::Table(named)) => {
            for (name, it) in named.iter_mut() {
                if let toml::Value::Table(t) = it {
                    put(name, t);
                }
            }
        }
        _ => {}
    }
    if n == 0 {
        return Err(format!(
            "{PAYLOAD_DUTY_KEY}: the mission has no load outside policy.survival_loads"
        ));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn decimal_steps_land_on_the_end() {
        let v = Vary::parse("loads.radio.duty=0.1:0.5:0.1").unwrap();
        let t: Vec<String> = v.values.iter().map(Value::text).collect();
        assert_eq!(t, ["0.1", "0.2", "0.3", "0.4", "0.5"]);
        let v = Vary::parse("battery.capacity_wh=3600:1200:-1200").unwrap();
        let t: Vec<String> = v.values.iter().map(Value::text).collect();
        assert_eq!(t, ["3600", "2400", "1200"]);
    }

    #[test]
    fn bad_specs_say_what_to_write() {
        let e = Vary::parse("battery.capacity_wh=1200:3600:-5").unwrap_err();
        assert!(
            e.to_string().contains("never goes from 1200 to 3600"),
            "{e}"
        );
        assert!(Vary::parse("battery.capacity_wh").is_err());
        assert!(Vary::parse("terrain.vertical_scale=1:2:1").is_err());
        assert!(Vary::parse("a..b=1").is_err());
        assert!(Vary::parse("x=1:2").is_err());
        assert!(Vary::parse("x=one").is_err());
    }

    #[test]
    fn dates_step_in_days() {
        let v = Vary::parse("seasons.start_date=2027-01-01:2027-01-31:10d").unwrap();
        let alias = Vary::parse("route.start_date=2027-01-01:2027-01-31:10d").unwrap();
        assert_eq!(
            (alias.key.as_str(), &alias.values),
            (START_DATE_KEY, &v.values)
        );
        let t: Vec<String> = v.values.iter().map(Value::text).collect();
        assert_eq!(t, ["2027-01-01", "2027-01-11", "2027-01-21", "2027-01-31"]);
    }

    #[test]
    fn the_grid_varies_the_first_key_slowest() {
        let a = Vary::parse("a.x=1:2:1").unwrap();
        let b = Vary::parse("a.y=10:30:10").unwrap();
        let vs = [a, b];
        assert_eq!(grid_len(&vs), 6);
        let cases: Vec<(f64, f64)> = (0..6)
            .map(|i| {
                let c = case_values(&vs, i);
                (c[0].as_f64(), c[1].as_f64())
            })
            .collect();
        assert_eq!(
            cases,
            [
                (1., 10.),
                (1., 20.),
                (1., 30.),
                (2., 10.),
                (2., 20.),
                (2., 30.)
            ]
        );
    }

    #[test]
    fn set_writes_tables_list_elements_and_new_keys() {
        let mut doc: toml::Table = toml::from_str(
            "[battery]\ncapacity_wh = 100.0\n[[loads]]\nname = \"cam\"\npower_w = 5.0\n",
        )
        .unwrap();
        set(&mut doc, "battery.capacity_wh", Value::Number(250.0)).unwrap();
        set(&mut doc, "loads.cam.duty", Value::Number(0.25)).unwrap();
        set(&mut doc, "loads.0.power_w", Value::Number(7.5)).unwrap();
        set(&mut doc, "thermal.heater_power_w", Value::Number(9.0)).unwrap();
        assert_eq!(doc["battery"]["capacity_wh"].as_integer(), Some(250));
        assert_eq!(doc["loads"][0]["duty"].as_float(), Some(0.25));
        assert_eq!(doc["loads"][0]["power_w"].as_float(), Some(7.5));
        assert_eq!(doc["thermal"]["heater_power_w"].as_integer(), Some(9));
        let e = set(&mut doc, "loads.radar.duty", Value::Number(0.1)).unwrap_err();
        assert!(
            e.contains("no element named `radar`") && e.contains("cam"),
            "{e}"
        );
        let e = set(&mut doc, "loads.cam.name", Value::Number(1.0)).unwrap_err();
        assert!(e.contains("not a number"), "{e}");
        set(
            &mut doc,
            START_DATE_KEY,
            Value::Date(NaiveDate::from_ymd_opt(2027, 3, 1).unwrap()),
        )
        .unwrap();
        assert_eq!(doc["seasons"]["mode"].as_str(), Some("dates"));
    }

    /// A pack sized by cells, or not at all, is re-sized by energy at its own voltage
    /// when a study sets its energy, so the mission reads one size (and that energy).
    #[test]
    fn capacity_on_a_pack_sized_by_cells_resizes_it_by_energy() {
        use crate::battery::pack::Pack;
        use crate::battery::params::PackParams;
        let mut doc: toml::Table = toml::from_str(
            "[battery]\nchemistry = \"nmc\"\ncells_series = 8\ncells_parallel = 6\ncell_capacity_ah = 3.0\n",
        )
        .unwrap();
        set(&mut doc, CAPACITY_KEY, Value::Number(720.0)).unwrap();
        let b = &doc["battery"];
        assert!(b.get("cells_series").is_none() && b.get("cell_capacity_ah").is_none());
        let p: PackParams = b.clone().try_into().unwrap();
        let mean_cell = crate::battery::chemistry::Chemistry::Nmc
            .preset()
            .mean_ocv_v();
        assert!((p.nominal_voltage_v.unwrap() - 8.0 * mean_cell).abs() < 1e-9);
        let pack = Pack::new(&p).unwrap();
        assert!((pack.stored_energy_wh(1.0) - 720.0).abs() < 1e-6);
        assert!((pack.series_cells() - 8.0).abs() < 1e-9);
        // No [battery] at all: the default voltage.
        let mut doc = toml::Table::new();
        set(&mut doc, CAPACITY_KEY, Value::Number(500.0)).unwrap();
        assert_eq!(
            doc["battery"]["nominal_voltage_v"].as_float(),
            Some(crate::battery::params::DEFAULT_NOMINAL_VOLTAGE_V)
        );
        // Sized by energy: left alone but for the value.
        let mut doc: toml::Table =
            toml::from_str("[battery]\ncapacity_wh = 100.0\nnominal_voltage_v = 12.8\n").unwrap();
        set(&mut doc, CAPACITY_KEY, Value::Number(250.0)).unwrap();
        assert_eq!(doc["battery"]["nominal_voltage_v"].as_float(), Some(12.8));
    }
}
