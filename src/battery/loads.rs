//! Named electrical loads with schedules: a pure function from a small context (time
//! of day, activity, daylight, site) to power per load.
//!
//! # Method
//! Each load has a constant `power_w` while on and one schedule condition. `duty` is a
//! plain number in [0, 1] that scales the power while the schedule is on (the mean of
//! a load that cycles faster than the simulation step; sweeps vary it):
//!
//! ```text
//! P_load = power_w * duty   if schedule(ctx) else 0
//! ```
//!
//! Schedules (`when = ...` in the mission file):
//! - `always`; `awake` (driving or parked); `driving`; `parked`; `asleep`;
//! - `daylight` (the context's daylight flag, e.g. sun above the terrain horizon);
//! - `window` from `start_h` to `end_h` local time (crossing midnight when
//!   `end_h < start_h`);
//! - `periodic`: on for `for_min` minutes every `every_min` minutes of mission time,
//!   shifted by `offset_min`;
//! - `at_site`: on for the first `minutes` after arriving at each site (a payload run).
//!
//! The schedule is sampled at the context's instant: the simulation step must be no
//! longer than the shortest on-time it needs to resolve.
//!
//! # Units
//! Power W, time of day s since local midnight, mission time s, schedule keys in hours
//! (`_h`) or minutes (`_min`) as named.

use serde::Deserialize;

use super::error::{check_range, BatteryError};

/// What the rover is doing.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Activity {
    /// Moving along the route.
    Driving,
    /// Stopped and awake (charging, working at a site).
    Parked,
    /// Stopped with only the survival loads on.
    Asleep,
}

/// When a load is on.
#[derive(Debug, Clone, PartialEq)]
pub enum Schedule {
    /// Always on.
    Always,
    /// On while driving or parked (not asleep).
    Awake,
    /// On while driving.
    Driving,
    /// On while parked.
    Parked,
    /// On while asleep.
    Asleep,
    /// On in daylight.
    Daylight,
    /// On between two local times.
    Window {
        /// Start, local hour 0..24.
        start_h: f64,
        /// End, local hour 0..24 (before the start: the window crosses midnight).
        end_h: f64,
    },
    /// On for `for_min` every `every_min` minutes of mission time.
    Periodic {
        /// Period, minutes (> 0).
        every_min: f64,
        /// On-time per period, minutes (0..every_min).
        for_min: f64,
        /// Shift of the first on-time from mission start, minutes. Default 0.
        offset_min: f64,
    },
    /// On for the first `minutes` after arriving at each site.
    AtSite {
        /// Length of the payload run, minutes (> 0).
        minutes: f64,
    },
}

/// One named load of the `[[loads]]` array, e.g.
/// `{ name = "radio", power_w = 20.0, duty = 0.25, when = "window", start_h = 22.0, end_h = 2.0 }`.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(try_from = "RawLoad")]
pub struct LoadSpec {
    /// Name, unique, shown in reports.
    pub name: String,
    /// Power while on, W; 0 to 100 000.
    pub power_w: f64,
    /// Fraction of `power_w` drawn on average while on; 0 to 1. Default 1.
    pub duty: f64,
    /// When the load is on (`when = "always" | "awake" | "driving" | "parked" |
    /// "asleep" | "daylight" | "window" | "periodic" | "at_site"` and its keys).
    pub schedule: Schedule,
}

/// The file form of a load: every key, each schedule's keys optional.
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawLoad {
    name: String,
    power_w: f64,
    duty: Option<f64>,
    when: String,
    start_h: Option<f64>,
    end_h: Option<f64>,
    every_min: Option<f64>,
    for_min: Option<f64>,
    offset_min: Option<f64>,
    minutes: Option<f64>,
}

impl TryFrom<RawLoad> for LoadSpec {
    type Error = String;

    fn try_from(r: RawLoad) -> Result<LoadSpec, String> {
        let need = |v: Option<f64>, k: &str| {
            v.ok_or_else(|| format!("load {:?}: when = {:?} needs `{k}`", r.name, r.when))
        };
        let schedule = match r.when.as_str() {
            "always" => Schedule::Always,
            "awake" => Schedule::Awake,
            "driving" => Schedule::Driving,
            "parked" => Schedule::Parked,
            "asleep" => Schedule::Asleep,
            "daylight" => Schedule::Daylight,
            "window" => Schedule::Window {
                start_h: need(r.start_h, "start_h")?,
                end_h: need(r.end_h, "end_h")?,
            },
            "periodic" => Schedule::Periodic {
                every_min: need(r.every_min, "every_min")?,
                for_min: need(r.for_min, "for_min")?,
                offset_min: r.offset_min.unwrap_or(0.0),
            },
            "at_site" => Schedule::AtSite {
                minutes: need(r.minutes, "minutes")?,
            },
            other => {
                return Err(format!(
                    "load {:?}: unknown when = {other:?}; expected always, awake, driving, \
                     parked, asleep, daylight, window, periodic or at_site",
                    r.name
                ))
            }
        };
        let used = schedule_keys(&schedule);
        let given = [
            ("start_h", r.start_h),
            ("end_h", r.end_h),
            ("every_min", r.every_min),
            ("for_min", r.for_min),
            ("offset_min", r.offset_min),
            ("minutes", r.minutes),
        ];
        if let Some((k, _)) = given.iter().find(|(k, v)| v.is_some() && !used.contains(k)) {
            return Err(format!(
                "load {:?}: `{k}` does not apply to when = {:?}",
                r.name, r.when
            ));
        }
        Ok(LoadSpec {
            name: r.name,
            power_w: r.power_w,
            duty: r.duty.unwrap_or(1.0),
            schedule,
        })
    }
}

/// The keys a schedule takes in the file.
fn schedule_keys(s: &Schedule) -> &'static [&'static str] {
    match s {
        Schedule::Window { .. } => &["start_h", "end_h"],
        Schedule::Periodic { .. } => &["every_min", "for_min", "offset_min"],
        Schedule::AtSite { .. } => &["minutes"],
        _ => &[],
    }
}

/// The instant a schedule is evaluated at.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LoadContext {
    /// Local time of day, s since local midnight (0..86 400).
    pub local_time_s: f64,
    /// What the rover is doing.
    pub activity: Activity,
    /// Whether it is daylight at the rover.
    pub daylight: bool,
    /// Seconds since arrival at the current site; `None` when not at a site.
    pub site_elapsed_s: Option<f64>,
    /// Seconds since mission start.
    pub elapsed_s: f64,
}

/// Power of one load at one instant.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LoadPower<'a> {
    /// The load's name.
    pub name: &'a str,
    /// Power drawn, W.
    pub power_w: f64,
}

/// A checked set of loads.
#[derive(Debug, Clone, PartialEq)]
pub struct Loads {
    specs: Vec<LoadSpec>,
}

impl Loads {
    /// Checks every load: unique non-empty names, ranges of power, duty and schedule.
    pub fn new(specs: Vec<LoadSpec>) -> Result<Loads, BatteryError> {
        for (i, s) in specs.iter().enumerate() {
            check_spec(s)?;
            if specs[..i].iter().any(|o| o.name == s.name) {
                return Err(BatteryError::Inconsistent {
                    table: "loads",
                    problem: format!("two loads are named {:?}", s.name),
                    fix: "give every load its own name",
                });
            }
        }
        Ok(Loads { specs })
    }

    /// The loads, in file order.
    pub fn specs(&self) -> &[LoadSpec] {
        &self.specs
    }

    /// Power of every load at `ctx`, in file order.
    pub fn evaluate(&self, ctx: &LoadContext) -> Vec<LoadPower<'_>> {
        self.specs
            .iter()
            .map(|s| LoadPower {
                name: &s.name,
                power_w: if is_on(&s.schedule, ctx) {
                    s.power_w * s.duty
                } else {
                    0.0
                },
            })
            .collect()
    }

    /// Total power of all loads at `ctx`, W.
    pub fn total_w(&self, ctx: &LoadContext) -> f64 {
        self.evaluate(ctx).iter().map(|l| l.power_w).sum()
    }
}

/// Whether `schedule` is on at `ctx`.
pub fn is_on(schedule: &Schedule, ctx: &LoadContext) -> bool {
    let awake = ctx.activity != Activity::Asleep;
    match *schedule {
        Schedule::Always => true,
        Schedule::Awake => awake,
        Schedule::Driving => ctx.activity == Activity::Driving,
        Schedule::Parked => ctx.activity == Activity::Parked,
        Schedule::Asleep => ctx.activity == Activity::Asleep,
        Schedule::Daylight => ctx.daylight,
        Schedule::Window { start_h, end_h } => in_window(ctx.local_time_s / 3600.0, start_h, end_h),
        Schedule::Periodic {
            every_min,
            for_min,
            offset_min,
        } => {
            let phase_min = (ctx.elapsed_s / 60.0 - offset_min).rem_euclid(every_min);
            phase_min < for_min
        }
        Schedule::AtSite { minutes } => ctx.site_elapsed_s.is_some_and(|s| s < minutes * 60.0),
    }
}

/// Whether hour `h` lies in [start, end), wrapping past midnight when end < start.
fn in_window(h: f64, start_h: f64, end_h: f64) -> bool {
    if start_h <= end_h {
        (start_h..end_h).contains(&h)
    } else {
        h >= start_h || h < end_h
    }
}

fn check_spec(s: &LoadSpec) -> Result<(), BatteryError> {
    if s.name.trim().is_empty() {
        return Err(BatteryError::Inconsistent {
            table: "loads",
            problem: "a load has an empty name".into(),
            fix: "name every load, e.g. name = \"camera\"",
        });
    }
    let key = |k: &str| format!("{}.{k}", s.name);
    let fix = "see the documented range of this key";
    check_range(
        "loads",
        &key("power_w"),
        s.power_w,
        (0.0, 1e5),
        "0 to 100000 W",
        fix,
    )?;
    check_range("loads", &key("duty"), s.duty, (0.0, 1.0), "0 to 1", fix)?;
    match s.schedule {
        Schedule::Window { start_h, end_h } => {
            check_range(
                "loads",
                &key("start_h"),
                start_h,
                (0.0, 24.0),
                "0 to 24 h",
                fix,
            )?;
            check_range("loads", &key("end_h"), end_h, (0.0, 24.0), "0 to 24 h", fix)?;
        }
        Schedule::Periodic {
            every_min,
            for_min,
            offset_min,
        } => {
            let e = check_range(
                "loads",
                &key("every_min"),
                every_min,
                (1e-3, 1e6),
                "0.001 to 1e6 min",
                fix,
            )?;
            check_range(
                "loads",
                &key("for_min"),
                for_min,
                (0.0, e),
                "0 to every_min",
                fix,
            )?;
            check_range(
                "loads",
                &key("offset_min"),
                offset_min,
                (0.0, 1e6),
                "0 to 1e6 min",
                fix,
            )?;
        }
        Schedule::AtSite { minutes } => {
            check_range(
                "loads",
                &key("minutes"),
                minutes,
                (1e-3, 1e6),
                "0.001 to 1e6 min",
                fix,
            )?;
        }
        _ => {}
    }
    Ok(())
}
