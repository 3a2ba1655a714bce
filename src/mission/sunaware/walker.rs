//! The simulation's step arithmetic, replayed segment by segment so that a search can
//! price a move exactly as [`crate::mission::sim::simulate`] will later run it.
//!
//! # The rule that makes the replay exact
//! The simulation closes one step of length `dt` at each boundary b = j·dt (j ≥ 1). The
//! panels of a step are those of the cell and attitude the rover has *at the step's
//! end*; its drive energy is the prorated energy of the route steps driven inside it; it
//! is a driving step (hotel on) when any driving happened inside it. A plan is a chain of
//! segments, each a half-open interval [s, e): a drive along one grid step (from cell,
//! attitude of that step) or a hold (cell, attitude the rover arrived with). A segment
//! closes every boundary b with s ≤ b < e with its own cell and attitude; a boundary
//! exactly at a segment's end belongs to the next segment, which is what the simulation
//! does (a rover that completes a grid step exactly at b already counts as at the next
//! cell, facing the step it is about to drive). On arrival the step holding the arrival
//! is closed at the goal with the last step's attitude, and the run ends there
//! ([`crate::mission::sim::EndCondition::Arrival`]).
//!
//! A payload run at a site ([`Walker::visit`]) is a segment too. As in the simulation,
//! its steps begin at the first boundary after the arrival (with the step that holds the
//! arrival still closed as a driving step), or with the open step itself when nothing
//! has happened in it yet (a site at the start); it lasts as many steps as the
//! simulation's site clock needs to reach the payload time, parked with the site's
//! clock running (loads scheduled `at_site`). The plan always holds at a site's row
//! until the payload run ends (or later), so the simulation keeps the arrival attitude;
//! the last step of the run is left open, like any step that ends exactly at a
//! segment's end, and the next segment closes it with the site's clock still running.
//!
//! Each closed step then runs the simulation's own phases in the same order with the
//! same models: panels (shared [`crate::mission::sim::poa_on`]), hotel, named loads
//! (with the site's clock during a payload run), thermal node, heater, pack.
//!
//! # Units
//! Seconds, watts, joules (drive), watt-hours (ledger).

use chrono::{DateTime, Duration, Utc};

use crate::battery::loads::{Activity, LoadContext};
use crate::battery::pack::{PackState, StepRequest};
use crate::battery::thermal::{ThermalInput, ThermalState};
use crate::mission::ledger::Ledger;
use crate::mission::sim::{
    in_window, local_day, local_seconds, poa_on, poa_series, sky_now, DriveHours, SimError,
    SimSetup, SkyNow, SHORTFALL_TOLERANCE,
};
use crate::sun::panel::Attitude;
use crate::sun::position::{SunTrack, DEFAULT_NODE_STEP_S};

/// What one simulation step sees that depends on the instant alone.
#[derive(Debug, Clone, Copy)]
struct StepSky {
    sky: Option<SkyNow>,
    air_c: f64,
    local_s: f64,
    daylight: bool,
    in_hours: bool,
}

/// The instants of a run: one entry per simulation step, computed exactly as the
/// simulation computes them.
#[derive(Debug, Clone)]
pub(crate) struct Clock {
    steps: Vec<StepSky>,
    dt: f64,
    /// Air temperature at the start instant, °C.
    start_air_c: f64,
}

impl Clock {
    /// The steps of a run of `setup` from `start` up to its deadline.
    pub(crate) fn new(setup: &SimSetup<'_>, start: DateTime<Utc>) -> Result<Clock, SimError> {
        let dt = setup.step_s;
        let end = start + Duration::milliseconds((setup.policy.deadline_s * 1000.0) as i64);
        if let Some(w) = setup.sky.weather {
            if !crate::sun::measured::covers(w, start, end) {
                return Err(SimError::Stage(format!(
                    "the weather record does not cover the run from {start} to {end}"
                )));
            }
        }
        let day0 = local_day(start, setup.utc_offset_s);
        let track = SunTrack::new(
            start,
            end + Duration::hours(1),
            &setup.sky.observer,
            setup.sky.delta_t_s,
            DEFAULT_NODE_STEP_S,
        )
        .map_err(|e| SimError::Stage(e.to_string()))?;
        let n = (setup.policy.deadline_s / dt).ceil() as usize;
        let steps = (0..n)
            .map(|k| {
                let t = start + Duration::milliseconds((k as f64 * dt * 1000.0) as i64);
                let mid = t + Duration::milliseconds((dt * 500.0) as i64);
                let sun = track.at(mid);
                let daylight = sun.apparent_elevation_rad() > 0.0;
                let local_s = local_seconds(mid, setup.utc_offset_s);
                let in_hours = match setup.policy.drive_hours {
                    DriveHours::Daylight => daylight,
                    DriveHours::Always => true,
                    DriveHours::LocalWindow { start_h, end_h } => {
                        in_window(local_s / 3600.0, start_h, end_h)
                    }
                };
                StepSky {
                    sky: sky_now(setup, &sun, mid, local_day(mid, setup.utc_offset_s) - day0),
                    air_c: setup.ambient.temp_c(mid, setup.utc_offset_s),
                    local_s,
                    daylight,
                    in_hours,
                }
            })
            .collect();
        Ok(Clock {
            steps,
            dt,
            start_air_c: setup.ambient.temp_c(start, setup.utc_offset_s),
        })
    }

    /// The run's last instant (its deadline), seconds after the start.
    pub(crate) fn horizon_s(&self) -> f64 {
        self.steps.len() as f64 * self.dt
    }

    /// Whether the rover may drive in every step that [s, e) touches.
    fn may_drive(&self, s: f64, e: f64) -> bool {
        let k0 = (s / self.dt).floor() as usize;
        let k1 = ((e / self.dt).ceil() as usize).max(k0 + 1);
        k1 <= self.steps.len() && self.steps[k0..k1].iter().all(|x| x.in_hours)
    }
}

/// Where the rover is for the panels: cell and body attitude.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Pose {
    pub col: usize,
    pub row: usize,
    pub att: Attitude,
}

/// The energy state carried from step to step (the simulation's own).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Walk {
    /// Seconds after the start.
    pub t_s: f64,
    /// Index j of the next boundary j·dt to close.
    next_j: u32,
    /// Drive energy of the open step so far, J.
    drive_j: f64,
    /// Whether the open step has any driving.
    drove: bool,
    /// The pack.
    pub pack: PackState,
    /// The battery box.
    thermal: ThermalState,
    /// Pack losses of the last closed step, W (heat into the box).
    last_loss_w: f64,
    /// Lowest state of charge at a step end so far.
    pub min_soc: f64,
    /// The site's clock in the open step when it is the last step of a payload run, s.
    site_s: Option<f64>,
}

/// Why a walk cannot go on.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Halt {
    /// The state of charge fell below the reserve (or the pack could not serve).
    Reserve,
    /// Past the run's deadline.
    Horizon,
    /// A drive would fall outside the policy's driving hours.
    Hours,
}

/// The fixed parts of a walk: the setup, its clock, the reserve.
pub(crate) struct Walker<'s, 'a> {
    pub setup: &'s SimSetup<'a>,
    pub clock: &'s Clock,
    pub reserve_soc: f64,
}

impl Walker<'_, '_> {
    /// The state at the start of a run.
    pub(crate) fn start(&self) -> Result<Walk, SimError> {
        let s = self.setup;
        let pack = s
            .pack
            .state_at(s.initial_soc)
            .map_err(|e| SimError::Stage(e.to_string()))?;
        let temp_c = s.initial_box_temp_c.unwrap_or(self.clock.start_air_c);
        Ok(Walk {
            t_s: 0.0,
            next_j: 1,
            drive_j: 0.0,
            drove: false,
            pack,
            thermal: ThermalState {
                temp_c,
                heater_on: false,
            },
            last_loss_w: 0.0,
            min_soc: s.initial_soc,
            site_s: None,
        })
    }

    /// Drives one grid step of `energy_j` (battery energy, hotel included) and
    /// `time_s` from `pose` (the cell it starts in, the step's attitude).
    pub(crate) fn drive(
        &self,
        w: &mut Walk,
        pose: &Pose,
        energy_j: f64,
        time_s: f64,
        mut ledger: Option<&mut Ledger>,
    ) -> Result<(), Halt> {
        let (s0, e) = (w.t_s, w.t_s + time_s);
        if e > self.clock.horizon_s() {
            return Err(Halt::Horizon);
        }
        if !self.clock.may_drive(s0, e) {
            return Err(Halt::Hours);
        }
        let step_t = time_s.max(1e-9);
        let rate = (energy_j - self.setup.rover.hotel_power_w * time_s) / step_t;
        let dt = self.clock.dt;
        let mut cur = s0;
        while f64::from(w.next_j) * dt < e {
            let b = f64::from(w.next_j) * dt;
            if b > cur {
                w.drive_j += rate * (b - cur);
                w.drove = true;
                cur = b;
            }
            self.close(w, pose, ledger.as_deref_mut())?;
        }
        if e > cur {
            w.drive_j += rate * (e - cur);
            w.drove = true;
        }
        w.t_s = e;
        Ok(())
    }

    /// Holds at `pose` until `until_s` (a step boundary after the walk's time).
    /// `panels`, when given, holds the panel output at `pose` of steps `k0..` (what
    /// [`Self::panel_w`] gives; a cache shared by every label that waits there).
    pub(crate) fn hold(
        &self,
        w: &mut Walk,
        pose: &Pose,
        until_s: f64,
        mut ledger: Option<&mut Ledger>,
        panels: Option<(&[f64], usize)>,
    ) -> Result<(), Halt> {
        if until_s > self.clock.horizon_s() {
            return Err(Halt::Horizon);
        }
        while f64::from(w.next_j) * self.clock.dt < until_s {
            let k = w.next_j as usize - 1;
            let gen = panels.and_then(|(g, k0)| k.checked_sub(k0).and_then(|i| g.get(i)));
            self.close_with(w, pose, ledger.as_deref_mut(), gen.copied())?;
        }
        w.t_s = until_s;
        Ok(())
    }

    /// A payload run of `payload_s` at `pose` (the site's cell, the attitude the rover
    /// arrived with), from the walk's time (module doc: which steps it takes). Leaves
    /// the walk at the run's end with its last step open.
    pub(crate) fn visit(
        &self,
        w: &mut Walk,
        pose: &Pose,
        payload_s: f64,
        mut ledger: Option<&mut Ledger>,
    ) -> Result<(), Halt> {
        let dt = self.clock.dt;
        // Index of the first step of the run.
        let open = w.next_j as usize - 1;
        let first = if w.t_s <= open as f64 * dt && w.site_s.is_none() {
            open
        } else {
            open + 1
        };
        // Its length in steps, counted as the simulation's site clock counts.
        let (mut n, mut done) = (0usize, 0.0);
        loop {
            done += dt;
            n += 1;
            if done >= payload_s {
                break;
            }
        }
        if first + n > self.clock.steps.len() {
            return Err(Halt::Horizon);
        }
        if first > open {
            self.close(w, pose, ledger.as_deref_mut())?;
        }
        let mut site = 0.0;
        for _ in 1..n {
            w.site_s = Some(site);
            self.close(w, pose, ledger.as_deref_mut())?;
            site += dt;
        }
        w.site_s = Some(site);
        w.t_s = f64::from(w.next_j) * dt;
        Ok(())
    }

    /// Panel output at `pose` in step `k`, W (zero past the horizon).
    pub(crate) fn panel_w(&self, pose: &Pose, k: usize) -> f64 {
        let s = self.setup;
        let Some(x) = self.clock.steps.get(k) else {
            return 0.0;
        };
        let poa = x
            .sky
            .as_ref()
            .map_or(0.0, |sky| poa_on(s, sky, &pose.att, pose.col, pose.row));
        s.panel.power_at_w(poa, x.air_c, s.sky.wind_m_s)
    }

    /// [`Self::panel_w`] for the steps `k0..k1` at one pose, computed together (the
    /// cell's shade and the panels' plane once; the same numbers).
    pub(crate) fn panel_series_w(&self, pose: &Pose, k0: usize, k1: usize) -> Vec<f64> {
        let s = self.setup;
        let skies = (k0..k1).map(|k| self.clock.steps.get(k).and_then(|x| x.sky.as_ref()));
        let poa = poa_series(s, skies, &pose.att, pose.col, pose.row);
        (k0..k1)
            .zip(poa)
            .map(|(k, poa)| match self.clock.steps.get(k) {
                Some(x) => s.panel.power_at_w(poa, x.air_c, s.sky.wind_m_s),
                None => 0.0,
            })
            .collect()
    }

    /// The simulation step holding instant `t_s`.
    pub(crate) fn step_of(&self, t_s: f64) -> usize {
        (t_s / self.clock.dt).floor() as usize
    }

    /// Ends the run at the goal: closes the step that holds the arrival.
    pub(crate) fn arrive(
        &self,
        w: &mut Walk,
        pose: &Pose,
        ledger: Option<&mut Ledger>,
    ) -> Result<(), Halt> {
        if w.next_j as usize > self.clock.steps.len() {
            return Err(Halt::Horizon);
        }
        self.close(w, pose, ledger)
    }

    /// Closes the step ending at boundary `w.next_j` with the rover at `pose`.
    fn close(&self, w: &mut Walk, pose: &Pose, ledger: Option<&mut Ledger>) -> Result<(), Halt> {
        self.close_with(w, pose, ledger, None)
    }

    /// [`Self::close`] with the step's panel output given when known.
    fn close_with(
        &self,
        w: &mut Walk,
        pose: &Pose,
        ledger: Option<&mut Ledger>,
        panel_w: Option<f64>,
    ) -> Result<(), Halt> {
        let s = self.setup;
        let dt = self.clock.dt;
        let k = w.next_j as usize - 1;
        let x = self.clock.steps.get(k).ok_or(Halt::Horizon)?;
        let activity = if w.site_s.is_some() {
            Activity::Parked
        } else if w.drove {
            Activity::Driving
        } else if !x.in_hours && s.policy.sleep_outside_hours {
            Activity::Asleep
        } else {
            Activity::Parked
        };
        let gen_w = panel_w.unwrap_or_else(|| self.panel_w(pose, k));
        let hotel_w = if activity == Activity::Asleep {
            0.0
        } else {
            s.rover.hotel_power_w
        };
        let payload_w = s.loads.total_w(&LoadContext {
            local_time_s: x.local_s,
            activity,
            daylight: x.daylight,
            site_elapsed_s: w.site_s,
            elapsed_s: k as f64 * dt,
        });
        let drive_w = w.drive_j / dt;
        let th = s
            .thermal
            .step(
                &w.thermal,
                &ThermalInput {
                    ambient_c: x.air_c,
                    internal_heat_w: s.electronics_heat_share * (hotel_w + payload_w)
                        + w.last_loss_w,
                    irradiance_w_m2: 0.0,
                    dt_s: dt,
                },
            )
            .map_err(|_| Halt::Reserve)?;
        w.thermal = th.state;
        let heater_w = th.heater_energy_wh * 3600.0 / dt;
        let demand_w = drive_w + hotel_w + payload_w + heater_w;
        let ps = s
            .pack
            .step(
                &w.pack,
                &StepRequest {
                    power_w: demand_w - gen_w,
                    dt_s: dt,
                    cell_temp_c: w.thermal.temp_c,
                },
            )
            .map_err(|_| Halt::Reserve)?;
        w.pack = ps.state;
        let losses_wh = ps.loss_resistive_wh + ps.loss_coulombic_wh;
        w.last_loss_w = losses_wh * 3600.0 / dt;
        w.min_soc = w.min_soc.min(ps.state.soc);
        if let Some(l) = ledger {
            let h = dt / 3600.0;
            l.add(&Ledger {
                generated_wh: gen_w * h,
                curtailed_wh: ps.unaccepted_w * h,
                drive_wh: drive_w * h,
                hotel_wh: hotel_w * h,
                payload_wh: payload_w * h,
                heater_wh: heater_w * h,
                losses_wh,
                stored_delta_wh: ps.stored_delta_wh,
            });
        }
        w.next_j += 1;
        w.drive_j = 0.0;
        w.drove = false;
        w.site_s = None;
        if ps.shortfall_w > SHORTFALL_TOLERANCE * demand_w.max(1.0)
            || ps.state.soc < self.reserve_soc
        {
            return Err(Halt::Reserve);
        }
        Ok(())
    }
}
