//! The one orchestrator: time-steps a planned route through one season's days — drive,
//! park, charge, sleep — with the sun, the panels, the loads, the thermal node and the
//! pack, and keeps the books.
//!
//! # Each step (length `step_s`, at most 60 s)
//! 1. **Decide** what the rover does ([`Activity`]): inside the driving hours of the
//!    policy it drives when its state of charge is at least `min_soc_to_drive`; once it
//!    has had to stop for that reason it parks and charges until `resume_soc`; outside
//!    the driving hours it sleeps (hotel off, only loads scheduled for sleep or always),
//!    or stays awake and parked when the policy says so.
//! 2. **Drive** along the route profile at the vehicle model's speed: the drive energy of
//!    each route step (its battery energy minus the hotel energy of its driving time) is
//!    spread over its driving time; partial steps are prorated.
//! 3. **Sun**: SPA position at the middle of the step, Ineichen-Perez clear sky (scaled
//!    by a monthly clearness factor when the mission gives one, or by a clear-sky index
//!    per local day when the setup carries one ([`SkySetup::clearness_daily`], the
//!    weather Monte Carlo's draws): every component alike, a simple scaling that keeps
//!    the clear sky's beam/diffuse split), or, with a measured weather record
//!    ([`SkySetup::weather`]), the record's GHI/DNI/DHI at the middle of the step by the
//!    rule of [`crate::sun::measured`] (linear in time, beam closed on GHI at the step's
//!    own sun position, dark below the horizon),
//!    transposition onto the panel plane of the mount at the body attitude of the current
//!    route step (body-mounted panels follow pitch, roll and heading), terrain shading of
//!    the current cell from the horizon map, PV power at the cell temperature.
//! 4. **Loads**: hotel power while awake; the named loads by their schedules.
//! 5. **Thermal**: one node; internal heat = the share of the electronics' power (hotel +
//!    payload) dissipated inside the battery box + last step's I²R loss; the thermostat
//!    heater draws from the pack.
//! 6. **Pack**: the net terminal power (loads + heater + drive − solar) for `step_s` at
//!    the node's temperature; unaccepted solar is curtailed; a shortfall strands the rover.
//!
//! A run ends at arrival (or, with [`EndCondition::Deadline`], at the deadline), at the
//! deadline, or when the rover is stranded. Stranding causes, in this order: `heat` when
//! the pack is too cold to discharge; `light` when the panels generated nothing since the
//! start (polar night, or no usable light; the heater's share is then only noted in the
//! detail); `heat` when the heater took a quarter or more of the energy used in the last
//! 24 h; otherwise `light`.
//!
//! Payload stops: on reaching a site the rover parks for its payload run (loads
//! scheduled `at_site` run, the site clock counts even outside the driving hours), then
//! drives on.
//!
//! Holds (a schedule, as the sun-aware planner makes): on reaching the row of a [`Hold`]
//! the rover stops and stays there until the hold's time, parked inside the driving
//! hours and asleep outside them (as the policy's sleep rule says); while it holds, its
//! panels keep the attitude of the step it arrived on (without holds the parked rover
//! takes the attitude of the step it is about to drive). With no holds nothing changes.
//! A hold at a site's row covers its payload run too (the sun-aware planner holds there
//! at least until the payload run ends, so the rover keeps the attitude it arrived with):
//! while the payload runs the rover is parked as at any site; once it is done, the hold
//! goes on until its time.
//!
//! # Limits
//! Without a weather record the sky is the clear sky, scaled (an upper bound of real
//! skies unless the scaling says otherwise); acceleration and turning
//! energy are left out; the rover's state inside a step is taken as constant.
//!
//! # Units
//! Seconds, watts, watt-hours, degrees Celsius, radians.

use chrono::{DateTime, Duration, Timelike, Utc};

use crate::battery::ambient::Ambient;
use crate::battery::loads::{Activity, LoadContext, Loads};
use crate::battery::pack::{Pack, StepRequest};
use crate::battery::thermal::{ThermalInput, ThermalNode, ThermalState};
use crate::mission::ledger::Ledger;
use crate::plan::Route;
use crate::sun::irradiance::{
    absolute_airmass, extraterrestrial_w_m2, ineichen_perez, relative_airmass, LinkeTurbidity,
};
use crate::sun::panel::{Attitude, Mount, Panel};
use crate::sun::position::{Observer, SunTrack, DEFAULT_NODE_STEP_S};
use crate::sun::shading::SiteShade;
use crate::sun::transposition::{plane_of_array, SkyModel, SunGeometry};
use crate::terrain::horizon::HorizonMap;
use crate::vehicle::Rover;

/// When the rover may drive.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum DriveHours {
    /// While the sun is above the astronomical horizon.
    Daylight,
    /// Between two local times of day, hours (the window may cross midnight).
    LocalWindow {
        /// Start, hours after local midnight.
        start_h: f64,
        /// End, hours after local midnight.
        end_h: f64,
    },
    /// Any time.
    Always,
}

/// When a run ends besides stranding and the deadline.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum EndCondition {
    /// At arrival at the goal.
    Arrival,
    /// At the deadline, even after arrival (the rover then parks).
    Deadline,
}

/// The operating policy.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Policy {
    /// Driving hours.
    pub drive_hours: DriveHours,
    /// Drive only at or above this state of charge (0..1).
    pub min_soc_to_drive: f64,
    /// After stopping to charge, wait until this state of charge (≥ min_soc_to_drive).
    pub resume_soc: f64,
    /// Longest run, seconds after the start.
    pub deadline_s: f64,
    /// When the run ends.
    pub end: EndCondition,
    /// Outside the driving hours the rover sleeps (true) or stays awake, parked (false).
    pub sleep_outside_hours: bool,
}

/// The sun and sky side of a run.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SkySetup<'a> {
    /// The site.
    pub observer: Observer,
    /// ΔT = TT − UT, seconds.
    pub delta_t_s: f64,
    /// Monthly Linke turbidity for the clear sky.
    pub linke: LinkeTurbidity,
    /// Sky-diffuse transposition model.
    pub sky_model: SkyModel,
    /// Ground albedo (0..1).
    pub albedo: f64,
    /// Wind speed for the cell-temperature model, m/s.
    pub wind_m_s: f64,
    /// Monthly factor on the clear-sky irradiance, January..December (1 = clear sky;
    /// a monthly clearness relative to clear sky, e.g. measured / clear-sky daily GHI).
    pub clearness_monthly: [f64; 12],
    /// Clear-sky index per local day (index 0 = the local calendar day of the run's
    /// start, at the site's `utc_offset_s`), overriding the monthly factor on the days it
    /// covers; later days take the monthly factor. `None`: the monthly factor throughout.
    pub clearness_daily: Option<&'a [f64]>,
    /// A measured weather record: its irradiance replaces the clear sky (and the
    /// clearness factors) and must cover the whole run. `None`: the clear sky.
    pub weather: Option<&'a crate::sun::climate::WeatherSeries>,
}

/// A payload stop: when the rover reaches profile row `row`, it parks there for
/// `duration_s` with the site's clock running (loads scheduled `at_site` run).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Stop {
    /// Index of the route profile row of the site.
    pub row: usize,
    /// Length of the payload run, seconds.
    pub duration_s: f64,
}

/// A scheduled hold: on reaching profile row `row` the rover stays there until `until_s`
/// seconds after the start (a multiple of the step length, so it ends on a step).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Hold {
    /// Index of the route profile row where the rover waits.
    pub row: usize,
    /// End of the hold, seconds after the start.
    pub until_s: f64,
}

/// Everything one run needs; the stages' own checked types.
#[derive(Debug, Clone)]
pub struct SimSetup<'a> {
    /// The planned route (profile from start to goal).
    pub route: &'a Route,
    /// The rover (hotel power).
    pub rover: &'a Rover,
    /// The pack.
    pub pack: &'a Pack,
    /// State of charge at the start (0..1).
    pub initial_soc: f64,
    /// The battery box.
    pub thermal: &'a ThermalNode,
    /// Box temperature at the start, °C (None: the ambient temperature).
    pub initial_box_temp_c: Option<f64>,
    /// Share (0..1) of the hotel and payload power dissipated inside the battery box.
    pub electronics_heat_share: f64,
    /// Named loads.
    pub loads: &'a Loads,
    /// Panels.
    pub panel: &'a Panel,
    /// How the panels are mounted.
    pub mount: Mount,
    /// Sun and sky.
    pub sky: SkySetup<'a>,
    /// Terrain horizons for shading (None: open horizon).
    pub horizon: Option<&'a HorizonMap>,
    /// Air temperature.
    pub ambient: &'a Ambient,
    /// Local clock offset from UTC, seconds.
    pub utc_offset_s: i64,
    /// Operating policy.
    pub policy: Policy,
    /// Step length, seconds (1..=60).
    pub step_s: f64,
    /// Payload stops along the route, in route order.
    pub stops: Vec<Stop>,
    /// Scheduled holds, in route order with increasing rows (empty: the policy alone).
    pub holds: Vec<Hold>,
    /// Local hour at which the runner starts each season, 0 to 24 (the mission's
    /// `simulation.start_local_h`); [`simulate`] itself starts where it is told.
    pub start_local_h: f64,
    /// Sun positions computed beforehand for this run's start and step (trade studies
    /// share them between cases); ignored unless they match the run. None: computed.
    pub sun_steps: Option<&'a SunSteps>,
}

/// The sun at the middle of every step of a run: `positions[k]` at
/// `start + (k + ½)·step_s`, computed exactly as [`simulate`] does, so a run given them
/// gives the same results to the bit.
#[derive(Debug, Clone)]
pub struct SunSteps {
    /// The run's start.
    pub start: DateTime<Utc>,
    /// The run's step, s.
    pub step_s: f64,
    /// One position per step.
    pub positions: Vec<crate::sun::position::SunPosition>,
}

/// Where a run's sun positions come from.
enum SunSource<'a> {
    /// Computed beforehand, one per step (at least as many as the run has).
    Shared(&'a [crate::sun::position::SunPosition]),
    /// Computed step by step.
    Track(SunTrack),
}

/// The start and the middle of step `k`.
fn step_instants(start: DateTime<Utc>, dt: f64, k: usize) -> (DateTime<Utc>, DateTime<Utc>) {
    let t = start + Duration::milliseconds((k as f64 * dt * 1000.0) as i64);
    (t, t + Duration::milliseconds((dt * 500.0) as i64))
}

fn sun_track(setup: &SimSetup<'_>, start: DateTime<Utc>) -> Result<SunTrack, SimError> {
    let end = start + Duration::milliseconds((setup.policy.deadline_s * 1000.0) as i64);
    SunTrack::new(
        start,
        end + Duration::hours(1),
        &setup.sky.observer,
        setup.sky.delta_t_s,
        DEFAULT_NODE_STEP_S,
    )
    .map_err(|e| SimError::Stage(e.to_string()))
}

/// The sun positions of a run of `setup` from `start` (see [`SunSteps`]).
pub fn sun_steps(setup: &SimSetup<'_>, start: DateTime<Utc>) -> Result<SunSteps, SimError> {
    check(setup)?;
    let track = sun_track(setup, start)?;
    let steps = (setup.policy.deadline_s / setup.step_s).ceil() as usize;
    Ok(SunSteps {
        start,
        step_s: setup.step_s,
        positions: (0..steps)
            .map(|k| track.at(step_instants(start, setup.step_s, k).1))
            .collect(),
    })
}

/// Why a run stopped short.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Stranded {
    /// When.
    pub time: DateTime<Utc>,
    /// Map x of the rover.
    pub x: f64,
    /// Map y of the rover.
    pub y: f64,
    /// `light` or `heat` (the pack's temperature or the heater's draw) from the
    /// simulation; `tilt`, `traction` or `terrain` when the route cannot be planned.
    pub cause: &'static str,
    /// What happened, in words.
    pub detail: String,
}

/// One recorded step.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Sample {
    /// Start of the step.
    pub time: DateTime<Utc>,
    /// Rover position, map x.
    pub x: f64,
    /// Rover position, map y.
    pub y: f64,
    /// 0 asleep, 1 parked, 2 driving.
    pub activity: u8,
    /// Panel output, W.
    pub generated_w: f64,
    /// Drive power, W.
    pub drive_w: f64,
    /// Hotel power, W.
    pub hotel_w: f64,
    /// Payload loads, W.
    pub payload_w: f64,
    /// Heater, W.
    pub heater_w: f64,
    /// Pack losses, W.
    pub losses_w: f64,
    /// Solar power the pack could not accept, W.
    pub curtailed_w: f64,
    /// Change of the pack's stored energy in the step, Wh.
    pub stored_delta_wh: f64,
    /// State of charge at the end of the step.
    pub soc: f64,
    /// Battery box temperature at the end of the step, °C.
    pub box_temp_c: f64,
    /// Air temperature, °C.
    pub ambient_c: f64,
    /// Sun elevation (apparent), degrees.
    pub sun_elevation_deg: f64,
}

/// The result of one season's run.
#[derive(Debug, Clone, PartialEq)]
pub struct Run {
    /// Every step.
    pub samples: Vec<Sample>,
    /// Totals.
    pub ledger: Ledger,
    /// Arrival at the goal, if reached.
    pub arrival: Option<DateTime<Utc>>,
    /// Stranding, if it happened.
    pub stranded: Option<Stranded>,
    /// Lowest state of charge and when.
    pub min_soc: (f64, DateTime<Utc>),
    /// Hours spent below the reserve state of charge.
    pub hours_below_reserve: f64,
    /// First time the box fell below the storage minimum, if it did.
    pub storage_breach: Option<DateTime<Utc>>,
    /// Route distance covered, metres.
    pub distance_m: f64,
    /// Seconds inside the policy's driving hours.
    pub in_hours_s: f64,
    /// Seconds parked inside the driving hours waiting for charge.
    pub charging_hold_s: f64,
    /// Seconds parked inside the driving hours because the state of charge fell below
    /// `min_soc_to_drive` (until it reached `resume_soc`).
    pub charge_wait_s: f64,
    /// Net change of the pack's stored energy over those seconds, Wh: negative when the
    /// parked rover's loads took more than its panels gave, so waiting did not recharge.
    pub charge_wait_stored_wh: f64,
}

/// Where the rover is on the route: the index of the profile row it is heading to and the
/// seconds already driven of that step.
#[derive(Debug, Clone, Copy)]
struct Progress {
    next: usize,
    into_step_s: f64,
}

/// Errors a run can stop with before it starts.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SimError {
    /// A setup value is out of range.
    #[error("simulation setting {name} = {value}: expected {expected}")]
    Setting {
        /// The setting.
        name: &'static str,
        /// Its value.
        value: String,
        /// The range.
        expected: &'static str,
    },
    /// A stage refused its input.
    #[error("{0}")]
    Stage(String),
}

fn check(setup: &SimSetup<'_>) -> Result<(), SimError> {
    let bad = |name, value: f64, expected| SimError::Setting {
        name,
        value: value.to_string(),
        expected,
    };
    if !(setup.step_s >= 1.0 && setup.step_s <= 60.0) {
        return Err(bad("step_s", setup.step_s, "1 to 60 seconds"));
    }
    if !(0.0..=1.0).contains(&setup.electronics_heat_share) {
        return Err(bad(
            "electronics_heat_share",
            setup.electronics_heat_share,
            "a fraction from 0 to 1",
        ));
    }
    if setup
        .sky
        .clearness_monthly
        .iter()
        .any(|k| !(0.0..=1.2).contains(k))
    {
        return Err(bad("clearness_monthly", f64::NAN, "factors from 0 to 1.2"));
    }
    if let Some(d) = setup.sky.clearness_daily {
        if let Some(k) = d.iter().find(|k| !(0.0..=1.2).contains(*k)) {
            return Err(bad("clearness_daily", *k, "factors from 0 to 1.2"));
        }
        if setup.sky.weather.is_some() {
            return Err(bad(
                "clearness_daily",
                f64::NAN,
                "no daily clearness with a measured weather record",
            ));
        }
    }
    if !(0.0..=1.0).contains(&setup.initial_soc) {
        return Err(bad(
            "initial_soc",
            setup.initial_soc,
            "a fraction from 0 to 1",
        ));
    }
    let p = &setup.policy;
    if !(0.0..=1.0).contains(&p.min_soc_to_drive)
        || !(p.min_soc_to_drive..=1.0).contains(&p.resume_soc)
    {
        return Err(bad(
            "resume_soc",
            p.resume_soc,
            "min_soc_to_drive ≤ resume_soc ≤ 1",
        ));
    }
    if !(p.deadline_s > 0.0 && p.deadline_s <= 400.0 * 86_400.0) {
        return Err(bad(
            "deadline_s",
            p.deadline_s,
            "more than 0 and at most 400 days",
        ));
    }
    Ok(())
}

/// Relative shortfall below which a step counts as served (see its use).
pub(crate) const SHORTFALL_TOLERANCE: f64 = 1e-6;

/// Runs one season from `start`.
pub fn simulate(setup: &SimSetup<'_>, start: DateTime<Utc>) -> Result<Run, SimError> {
    check(setup)?;
    let end = start + Duration::milliseconds((setup.policy.deadline_s * 1000.0) as i64);
    if let Some(w) = setup.sky.weather {
        if !crate::sun::measured::covers(w, start, end) {
            return Err(SimError::Stage(format!(
                "the weather record does not cover the run from {start} to {end}"
            )));
        }
    }
    let day0 = local_day(start, setup.utc_offset_s);
    let steps = (setup.policy.deadline_s / setup.step_s).ceil() as usize;
    let shared = setup
        .sun_steps
        .filter(|t| t.start == start && t.step_s == setup.step_s && t.positions.len() >= steps)
        .map(|t| t.positions.as_slice());
    let sun_at = match shared {
        Some(p) => SunSource::Shared(p),
        None => SunSource::Track(sun_track(setup, start)?),
    };
    let mut pack_state = setup
        .pack
        .state_at(setup.initial_soc)
        .map_err(|e| SimError::Stage(e.to_string()))?;
    let first_air = setup.ambient.temp_c(start, setup.utc_offset_s);
    let mut box_state = ThermalState {
        temp_c: setup.initial_box_temp_c.unwrap_or(first_air),
        heater_on: false,
    };
    let profile = &setup.route.profile;
    let mut prog = Progress {
        next: 1,
        into_step_s: 0.0,
    };
    let mut run = Run {
        samples: Vec::new(),
        ledger: Ledger::default(),
        arrival: (profile.len() <= 1).then_some(start),
        stranded: None,
        min_soc: (setup.initial_soc, start),
        hours_below_reserve: 0.0,
        storage_breach: None,
        distance_m: 0.0,
        in_hours_s: 0.0,
        charging_hold_s: 0.0,
        charge_wait_s: 0.0,
        charge_wait_stored_wh: 0.0,
    };
    let reserve = setup.pack.params().reserve_soc;
    let dt = setup.step_s;
    let (mut charge_hold, mut last_loss_w) = (false, 0.0);
    // The next stop to make, and the seconds already spent at the current one.
    let (mut next_stop, mut at_site_s): (usize, Option<f64>) = (0, None);
    let mut day_window: std::collections::VecDeque<(f64, f64)> = Default::default();
    // Whether the sun has stood above the horizon at any step so far.
    let mut sun_was_up = false;
    // The next scheduled hold still to finish.
    let mut next_hold = 0;
    // The cell the rover was last in, and its shade.
    let mut shade: (Option<(usize, usize)>, Option<SiteShade<'_>>) = (None, None);
    let steps = (setup.policy.deadline_s / dt).ceil() as usize;
    for k in 0..steps {
        if run.arrival.is_some() && setup.policy.end == EndCondition::Arrival {
            break;
        }
        let (t, mid) = step_instants(start, dt, k);
        let sun = match &sun_at {
            SunSource::Shared(p) => p[k],
            SunSource::Track(tr) => tr.at(mid),
        };
        let daylight = sun.apparent_elevation_rad() > 0.0;
        let local_s = local_seconds(mid, setup.utc_offset_s);
        let in_hours = match setup.policy.drive_hours {
            DriveHours::Daylight => daylight,
            DriveHours::Always => true,
            DriveHours::LocalWindow { start_h, end_h } => {
                in_window(local_s / 3600.0, start_h, end_h)
            }
        };
        if charge_hold && pack_state.soc >= setup.policy.resume_soc {
            charge_hold = false;
        }
        let arrived = run.arrival.is_some();
        if let Some(stop) = setup.stops.get(next_stop) {
            if at_site_s.is_none() && prog.next > stop.row && prog.into_step_s == 0.0 {
                at_site_s = Some(0.0);
            }
        }
        let at_site = at_site_s.is_some();
        let elapsed_s = k as f64 * dt;
        while setup.holds.get(next_hold).is_some_and(|h| {
            h.row + 1 == prog.next && prog.into_step_s == 0.0 && elapsed_s >= h.until_s
        }) {
            next_hold += 1;
        }
        let holding = setup.holds.get(next_hold).is_some_and(|h| {
            h.row + 1 == prog.next && prog.into_step_s == 0.0 && elapsed_s < h.until_s
        });
        // A payload run at a site is parked (hotel on) even where a hold also applies.
        let activity = if holding && !at_site {
            if !in_hours && setup.policy.sleep_outside_hours {
                Activity::Asleep
            } else {
                Activity::Parked
            }
        } else if !in_hours && setup.policy.sleep_outside_hours && !at_site {
            Activity::Asleep
        } else if !in_hours || arrived || charge_hold || at_site {
            Activity::Parked
        } else if pack_state.soc >= setup.policy.min_soc_to_drive {
            Activity::Driving
        } else {
            charge_hold = true;
            Activity::Parked
        };
        if in_hours && !arrived {
            run.in_hours_s += dt;
            if activity == Activity::Parked {
                run.charging_hold_s += dt;
            }
        }
        let waiting_for_charge =
            in_hours && !arrived && charge_hold && activity == Activity::Parked;
        // Drive.
        let stop_row = setup.stops.get(next_stop).map_or(usize::MAX, |s| s.row);
        let stop_row = setup
            .holds
            .get(next_hold)
            .map_or(stop_row, |h| stop_row.min(h.row));
        let (drive_j, drive_s) = if activity == Activity::Driving {
            drive(setup, &mut prog, dt, &mut run.distance_m, stop_row)
        } else {
            (0.0, 0.0)
        };
        if prog.next >= profile.len() && run.arrival.is_none() && profile.len() > 1 {
            run.arrival = Some(t + Duration::milliseconds((drive_s * 1000.0) as i64));
        }
        // The cell the rover is in (the start of the step it is driving) and the step
        // whose attitude it has.
        let here = &profile[(prog.next - 1).min(profile.len() - 1)];
        let heading_row = &profile[prog.next.min(profile.len() - 1)];
        // Holding at the end of this step: the rover keeps the attitude it arrived with.
        let end_s = (k + 1) as f64 * dt;
        let heading_row = match setup.holds.get(next_hold) {
            Some(h) if h.row + 1 == prog.next && prog.into_step_s == 0.0 && end_s < h.until_s => {
                here
            }
            _ => heading_row,
        };
        // Sun and panels.
        let air_c = setup.ambient.temp_c(mid, setup.utc_offset_s);
        let att = Attitude {
            heading_rad: heading_row.heading_rad,
            pitch_rad: heading_row.pitch_rad,
            roll_rad: heading_row.roll_rad,
        };
        let day = local_day(mid, setup.utc_offset_s) - day0;
        let cell = (here.col, here.row);
        if shade.0 != Some(cell) {
            // The cell's shade (its sky-view factor) is computed once per cell visited,
            // not once per step.
            shade = (
                Some(cell),
                setup
                    .horizon
                    .and_then(|h| SiteShade::new(h, cell.0, cell.1)),
            );
        }
        let poa_w_m2 = poa(setup, &sun, &att, shade.1.as_ref(), mid, day);
        let gen_w = setup.panel.power_at_w(poa_w_m2, air_c, setup.sky.wind_m_s);
        // Loads.
        let hotel_w = if activity == Activity::Asleep {
            0.0
        } else {
            setup.rover.hotel_power_w
        };
        let ctx = LoadContext {
            local_time_s: local_s,
            activity,
            daylight,
            site_elapsed_s: at_site_s,
            elapsed_s: k as f64 * dt,
        };
        let payload_w = setup.loads.total_w(&ctx);
        if let Some(t_site) = at_site_s {
            let done = t_site + dt;
            let needed = setup.stops.get(next_stop).map_or(0.0, |s| s.duration_s);
            if done >= needed {
                at_site_s = None;
                next_stop += 1;
            } else {
                at_site_s = Some(done);
            }
        }
        let drive_w = drive_j / dt;
        // Thermal.
        let th = setup.thermal.step(
            &box_state,
            &ThermalInput {
                ambient_c: air_c,
                internal_heat_w: setup.electronics_heat_share * (hotel_w + payload_w) + last_loss_w,
                irradiance_w_m2: 0.0,
                dt_s: dt,
            },
        );
        let th = th.map_err(|e| SimError::Stage(e.to_string()))?;
        if th.flags.below_storage_min && run.storage_breach.is_none() {
            run.storage_breach = Some(t);
        }
        box_state = th.state;
        let heater_w = th.heater_energy_wh * 3600.0 / dt;
        // Pack.
        let demand_w = drive_w + hotel_w + payload_w + heater_w;
        let ps = setup
            .pack
            .step(
                &pack_state,
                &StepRequest {
                    power_w: demand_w - gen_w,
                    dt_s: dt,
                    cell_temp_c: box_state.temp_c,
                },
            )
            .map_err(|e| SimError::Stage(e.to_string()))?;
        pack_state = ps.state;
        if waiting_for_charge {
            run.charge_wait_s += dt;
            run.charge_wait_stored_wh += ps.stored_delta_wh;
        }
        let losses_wh = ps.loss_resistive_wh + ps.loss_coulombic_wh;
        last_loss_w = losses_wh * 3600.0 / dt;
        // A shortfall below a millionth of the demand is the pack's round-off (its
        // fixed-point current solve), not a lack of energy: large packs see it.
        let short = ps.shortfall_w > SHORTFALL_TOLERANCE * demand_w.max(1.0);
        // Served share of the demand (below 1 only in the step that strands the rover).
        let served = if short && demand_w > 0.0 {
            ((demand_w - ps.shortfall_w) / demand_w).clamp(0.0, 1.0)
        } else {
            1.0
        };
        let h = dt / 3600.0;
        let step_ledger = Ledger {
            generated_wh: gen_w * h,
            curtailed_wh: ps.unaccepted_w * h,
            drive_wh: drive_w * served * h,
            hotel_wh: hotel_w * served * h,
            payload_wh: payload_w * served * h,
            heater_wh: heater_w * served * h,
            losses_wh,
            stored_delta_wh: ps.stored_delta_wh,
        };
        run.ledger.add(&step_ledger);
        sun_was_up |= sun.apparent_elevation_rad() > 0.0;
        day_window.push_back((step_ledger.heater_wh, step_ledger.consumed_wh()));
        if day_window.len() as f64 * dt > 86_400.0 {
            day_window.pop_front();
        }
        if pack_state.soc < run.min_soc.0 {
            run.min_soc = (
                pack_state.soc,
                t + Duration::milliseconds((dt * 1000.0) as i64),
            );
        }
        if pack_state.soc < reserve {
            run.hours_below_reserve += h;
        }
        run.samples.push(Sample {
            time: t,
            x: here.x,
            y: here.y,
            activity: match activity {
                Activity::Asleep => 0,
                Activity::Parked => 1,
                Activity::Driving => 2,
            },
            generated_w: gen_w,
            drive_w: drive_w * served,
            hotel_w: hotel_w * served,
            payload_w: payload_w * served,
            heater_w: heater_w * served,
            losses_w: last_loss_w,
            curtailed_w: ps.unaccepted_w,
            stored_delta_wh: ps.stored_delta_wh,
            soc: pack_state.soc,
            box_temp_c: box_state.temp_c,
            ambient_c: air_c,
            sun_elevation_deg: sun.apparent_elevation_rad().to_degrees(),
        });
        if short {
            let (heater, used) = day_window
                .iter()
                .fold((0.0, 0.0), |a, b| (a.0 + b.0, a.1 + b.1));
            let light = Light {
                generated_wh: run.ledger.generated_wh,
                sun_was_up,
            };
            run.stranded = Some(stranding(
                t,
                here,
                &ps,
                box_state.temp_c,
                (heater, used),
                light,
            ));
            break;
        }
    }
    Ok(run)
}

/// The light a run has had up to the moment it strands.
#[derive(Debug, Clone, Copy)]
struct Light {
    /// Energy generated since the run's start, Wh.
    generated_wh: f64,
    /// Whether the sun stood above the horizon at any step.
    sun_was_up: bool,
}

/// The heater's share of the last 24 h's energy use from which a stranding (with some
/// light in the run) is blamed on the cold.
const HEATER_SHARE_HEAT: f64 = 0.25;

/// Below this much energy generated over the whole run, Wh, the run had no usable light.
const NO_LIGHT_WH: f64 = 1e-6;

/// Why the rover ran out (module doc: `heat` or `light`). `window` is the heater's
/// energy and the energy used over the last 24 h, Wh.
fn stranding(
    t: DateTime<Utc>,
    here: &crate::plan::ProfileRow,
    ps: &crate::battery::pack::PackStep,
    box_c: f64,
    window: (f64, f64),
    light: Light,
) -> Stranded {
    let (heater_wh, used_wh) = window;
    let heater_share = if used_wh > 0.0 {
        heater_wh / used_wh
    } else {
        0.0
    };
    let heater_note = if heater_share >= HEATER_SHARE_HEAT {
        format!(
            "; the heater drew {:.0} % of the energy used in the last 24 h",
            100.0 * heater_share
        )
    } else {
        String::new()
    };
    let (cause, detail) = if ps.flags.discharge_blocked_temp {
        (
            "heat",
            format!("the pack at {box_c:.1} °C is outside its discharge temperature range"),
        )
    } else if light.generated_wh < NO_LIGHT_WH {
        // No light at all: whatever drew the energy, nothing could have replaced it.
        let why = if light.sun_was_up {
            "the panels generated nothing since the start (the sun was up but gave no usable light)"
        } else {
            "the sun stayed below the horizon the whole run (polar night), so the panels \
             generated nothing"
        };
        (
            "light",
            format!(
                "{why}; the pack reached its floor at {:.0} % state of charge{heater_note}",
                100.0 * ps.state.soc
            ),
        )
    } else if heater_share >= HEATER_SHARE_HEAT {
        (
            "heat",
            format!(
                "the heater drew {:.0} % of the energy used in the last 24 h",
                100.0 * heater_share
            ),
        )
    } else {
        (
            "light",
            format!(
                "the panels could not keep up: the pack reached its floor at {:.0} % state of charge",
                100.0 * ps.state.soc
            ),
        )
    };
    Stranded {
        time: t,
        x: here.x,
        y: here.y,
        cause,
        detail,
    }
}

/// Advances along the profile for up to `dt` seconds; returns (drive energy J, seconds
/// driven).
fn drive(
    setup: &SimSetup<'_>,
    prog: &mut Progress,
    dt: f64,
    distance_m: &mut f64,
    stop_row: usize,
) -> (f64, f64) {
    let profile = &setup.route.profile;
    let hotel = setup.rover.hotel_power_w;
    let (mut left, mut energy) = (dt, 0.0);
    // Stop on reaching the row of the next payload stop (the rover is at row next − 1).
    while left > 0.0 && prog.next < profile.len() && prog.next <= stop_row {
        let row = &profile[prog.next];
        let step_t = row.step_time_s.max(1e-9);
        let take = (step_t - prog.into_step_s).min(left);
        let share = take / step_t;
        energy += (row.step_energy_j - hotel * row.step_time_s) * share;
        *distance_m += (row.distance_m - profile[prog.next - 1].distance_m) * share;
        prog.into_step_s += take;
        left -= take;
        if prog.into_step_s >= step_t - 1e-9 {
            prog.next += 1;
            prog.into_step_s = 0.0;
        }
    }
    (energy, dt - left)
}

/// Plane-of-array irradiance on the panels at the rover's cell (its `shade`), W/m².
fn poa(
    setup: &SimSetup<'_>,
    sun: &crate::sun::position::SunPosition,
    att: &Attitude,
    shade: Option<&SiteShade<'_>>,
    t: DateTime<Utc>,
    day: i64,
) -> f64 {
    match sky_now(setup, sun, t, day) {
        Some(sky) => poa_shaded(setup, &sky, att, shade),
        None => 0.0,
    }
}

/// The part of the plane-of-array irradiance that depends on the instant alone.
#[derive(Debug, Clone, Copy)]
pub(crate) struct SkyNow {
    sun: crate::sun::position::SunPosition,
    geom: SunGeometry,
    irr: crate::sun::irradiance::Components,
}

/// The sky at `t` (local day `day` of the run) with the sun at `sun`; None: no light.
pub(crate) fn sky_now(
    setup: &SimSetup<'_>,
    sun: &crate::sun::position::SunPosition,
    t: DateTime<Utc>,
    day: i64,
) -> Option<SkyNow> {
    let am = relative_airmass(sun.apparent_zenith_rad)?;
    let e0 = extraterrestrial_w_m2(sun.earth_sun_distance_au);
    let sky = &setup.sky;
    let irr = match sky.weather {
        Some(w) => crate::sun::measured::irradiance_at(w, t, sun.apparent_zenith_rad)?,
        None => clear_sky(sky, sun, am, e0, t, day),
    };
    let geom = SunGeometry {
        zenith_rad: sun.apparent_zenith_rad,
        azimuth_rad: sun.azimuth_rad,
        dni_extra_w_m2: e0,
        airmass_relative: Some(am),
    };
    Some(SkyNow {
        sun: *sun,
        geom,
        irr,
    })
}

/// Plane-of-array irradiance under `sky` on panels at attitude `att` in cell (col, row),
/// with the terrain's shading, W/m².
pub(crate) fn poa_on(
    setup: &SimSetup<'_>,
    sky: &SkyNow,
    att: &Attitude,
    col: usize,
    row: usize,
) -> f64 {
    let shade = setup.horizon.and_then(|h| SiteShade::new(h, col, row));
    poa_shaded(setup, sky, att, shade.as_ref())
}

/// [`poa_on`] for the steps `ks` at one cell and attitude, W/m² per step (0 for a step
/// without light): the cell's shade is looked up once and, unless the mount tracks the
/// sun, the panels' plane is computed once, so the numbers are those of [`poa_on`] for
/// each step, to the bit.
pub(crate) fn poa_series<'k>(
    setup: &SimSetup<'_>,
    skies: impl Iterator<Item = Option<&'k SkyNow>>,
    att: &Attitude,
    col: usize,
    row: usize,
) -> Vec<f64> {
    let shade = setup.horizon.and_then(|h| SiteShade::new(h, col, row));
    // The plane of a mount that does not follow the sun (the sun's place is not used).
    let fixed = (!setup.mount.tracks_sun()).then(|| setup.mount.plane(att, 0.0, 0.0));
    skies
        .map(|sky| {
            sky.map_or(0.0, |sky| match fixed {
                Some(plane) => poa_on_plane(setup, sky, plane, shade.as_ref()),
                None => poa_shaded(setup, sky, att, shade.as_ref()),
            })
        })
        .collect()
}

/// [`poa_on`] with the cell's shade given (None: no horizon map, or off the map).
fn poa_shaded(
    setup: &SimSetup<'_>,
    sky: &SkyNow,
    att: &Attitude,
    shade: Option<&SiteShade<'_>>,
) -> f64 {
    let sun = &sky.sun;
    let plane = setup
        .mount
        .plane(att, sun.apparent_zenith_rad, sun.azimuth_rad);
    poa_on_plane(setup, sky, plane, shade)
}

/// [`poa_shaded`] with the panels' plane given (None: no plane, a zero body normal).
fn poa_on_plane(
    setup: &SimSetup<'_>,
    sky: &SkyNow,
    plane: Option<crate::sun::transposition::Plane>,
    shade: Option<&SiteShade<'_>>,
) -> f64 {
    let sun = &sky.sun;
    let Some(plane) = plane else {
        return 0.0;
    };
    let s = &setup.sky;
    let mut p = plane_of_array(&plane, &sky.geom, &sky.irr, s.albedo, s.sky_model);
    if let Some(shade) = shade {
        p = shade.apply(p, sun.apparent_elevation_rad(), sun.azimuth_rad);
    }
    p.total_w_m2()
}

/// The clear sky at `t`, scaled by the day's or the month's clearness factor.
fn clear_sky(
    sky: &SkySetup<'_>,
    sun: &crate::sun::position::SunPosition,
    am: f64,
    e0: f64,
    t: DateTime<Utc>,
    day: i64,
) -> crate::sun::irradiance::Components {
    use chrono::Datelike;
    let irr = ineichen_perez(
        sun.apparent_zenith_rad,
        absolute_airmass(am, sky.observer.pressure_hpa),
        sky.linke.for_month(t.month()),
        sky.observer.elevation_m,
        e0,
    );
    let daily = sky
        .clearness_daily
        .and_then(|d| usize::try_from(day).ok().and_then(|i| d.get(i)));
    let k = daily
        .copied()
        .unwrap_or(sky.clearness_monthly[t.month0() as usize]);
    crate::sun::irradiance::Components {
        ghi_w_m2: irr.ghi_w_m2 * k,
        dni_w_m2: irr.dni_w_m2 * k,
        dhi_w_m2: irr.dhi_w_m2 * k,
    }
}

/// Days since 1970-01-01 on the site's clock.
pub(crate) fn local_day(t: DateTime<Utc>, offset_s: i64) -> i64 {
    (t.timestamp() + offset_s).div_euclid(86_400)
}

pub(crate) fn local_seconds(t: DateTime<Utc>, offset_s: i64) -> f64 {
    let local = t + Duration::seconds(offset_s);
    f64::from(local.num_seconds_from_midnight()) + f64::from(local.nanosecond()) * 1e-9
}

pub(crate) fn in_window(hour: f64, start_h: f64, end_h: f64) -> bool {
    if start_h <= end_h {
        (start_h..end_h).contains(&hour)
    } else {
        hour >= start_h || hour < end_h
    }
}
