//! Load schedules, ambient temperature and the pack's limits: behaviour checks and
//! invariants (no outside reference applies to a schedule; each expected value follows
//! from the schedule's definition in src/battery/loads.rs).

use chrono::{DateTime, Utc};
use sunward::battery::ambient::{Ambient, AmbientSeries, MonthlyClimate};
use sunward::battery::loads::{Activity, LoadContext, LoadSpec, Loads};
use sunward::battery::{Pack, PackParams, StepRequest};

#[derive(serde::Deserialize)]
struct File {
    loads: Vec<LoadSpec>,
}

fn loads() -> Loads {
    let text = r#"
        [[loads]]
        name = "avionics"
        power_w = 12.0
        when = "always"
        [[loads]]
        name = "nav-camera"
        power_w = 8.0
        when = "driving"
        [[loads]]
        name = "radio"
        power_w = 20.0
        duty = 0.25
        when = "window"
        start_h = 22.0
        end_h = 2.0
        [[loads]]
        name = "beacon"
        power_w = 5.0
        when = "periodic"
        every_min = 60.0
        for_min = 10.0
        [[loads]]
        name = "spectrometer"
        power_w = 30.0
        when = "at_site"
        minutes = 45.0
        [[loads]]
        name = "weather-mast"
        power_w = 3.0
        when = "daylight"
    "#;
    Loads::new(toml::from_str::<File>(text).unwrap().loads).unwrap()
}

fn ctx(hour: f64, activity: Activity) -> LoadContext {
    LoadContext {
        local_time_s: hour * 3600.0,
        activity,
        daylight: (6.0..18.0).contains(&hour),
        site_elapsed_s: None,
        elapsed_s: hour * 3600.0,
    }
}

#[test]
fn schedules_switch_as_documented() {
    let l = loads();
    let by_name =
        |c: &LoadContext, n: &str| l.evaluate(c).iter().find(|p| p.name == n).unwrap().power_w;
    // 23:05, parked: avionics, radio at 25 % duty (window crosses midnight), beacon
    // (5 min into its hour), no camera, no mast at night.
    let c = ctx(23.0 + 5.0 / 60.0, Activity::Parked);
    assert_eq!(by_name(&c, "avionics"), 12.0);
    assert_eq!(by_name(&c, "radio"), 5.0);
    assert_eq!(by_name(&c, "beacon"), 5.0);
    assert_eq!(by_name(&c, "nav-camera"), 0.0);
    assert_eq!(by_name(&c, "weather-mast"), 0.0);
    // 10:30 driving, daylight: camera and mast; radio off; beacon off (30 min in).
    let c = ctx(10.5, Activity::Driving);
    assert_eq!(l.total_w(&c), 12.0 + 8.0 + 3.0);
    // At a site: the payload runs for the first 45 minutes only.
    let mut c = ctx(12.5, Activity::Parked);
    c.site_elapsed_s = Some(44.0 * 60.0);
    assert_eq!(by_name(&c, "spectrometer"), 30.0);
    c.site_elapsed_s = Some(46.0 * 60.0);
    assert_eq!(by_name(&c, "spectrometer"), 0.0);
}

/// Over one day of mission time the periodic load is on for_min / every_min of the time.
#[test]
fn periodic_load_has_its_duty_over_a_day() {
    let l = loads();
    let on = (0..86_400)
        .filter(|&s| {
            let c = LoadContext {
                elapsed_s: f64::from(s),
                ..ctx(0.0, Activity::Asleep)
            };
            l.evaluate(&c)
                .iter()
                .any(|p| p.name == "beacon" && p.power_w > 0.0)
        })
        .count();
    assert_eq!(on, 86_400 / 6);
}

#[test]
fn bad_loads_are_refused_with_the_key_named() {
    let mut specs = toml::from_str::<File>(
        "[[loads]]\nname = \"a\"\npower_w = 1.0\nwhen = \"periodic\"\nevery_min = 10.0\nfor_min = 20.0\n",
    )
    .unwrap()
    .loads;
    let e = Loads::new(specs.clone()).unwrap_err().to_string();
    assert!(e.contains("a.for_min") && e.contains("Fix"), "{e}");
    specs[0].schedule = sunward::battery::loads::Schedule::Always;
    specs.push(specs[0].clone());
    assert!(Loads::new(specs)
        .unwrap_err()
        .to_string()
        .contains("two loads"));
    assert!(toml::from_str::<File>(
        "[[loads]]\nname = \"a\"\npower_w = 1.0\nwhen = \"sometimes\"\n"
    )
    .is_err());
}

fn climate() -> MonthlyClimate {
    MonthlyClimate {
        mean_c: [
            -20.0, -18.0, -12.0, -4.0, 4.0, 10.0, 13.0, 11.0, 5.0, -3.0, -12.0, -18.0,
        ],
        diurnal_swing_c: [
            4.0, 6.0, 8.0, 10.0, 10.0, 10.0, 10.0, 10.0, 8.0, 6.0, 4.0, 4.0,
        ],
        peak_hour: 15.0,
    }
}

/// Mid-month the daily mean is the monthly mean and max - min is the swing (the
/// definition of the model); the peak sits at peak_hour.
#[test]
fn monthly_climate_reproduces_its_inputs() {
    let m = climate();
    m.validate().unwrap();
    let mid_jan = 365.25 / 24.0;
    let temps: Vec<f64> = (0..24 * 60)
        .map(|k| m.temp_c(mid_jan, f64::from(k) / 60.0))
        .collect();
    let mean = temps.iter().sum::<f64>() / temps.len() as f64;
    let (lo, hi) = temps
        .iter()
        .fold((f64::MAX, f64::MIN), |(a, b), &t| (a.min(t), b.max(t)));
    assert!((mean + 20.0).abs() < 1e-9);
    assert!((hi - lo - 4.0).abs() < 1e-6);
    assert!((m.temp_c(mid_jan, 15.0) - hi).abs() < 1e-9);
    // Mid-December to mid-January wraps around the year end.
    let new_year = m.temp_c(0.0, 9.0);
    assert!(new_year < -18.0 && new_year > -20.0 - 2.0);
}

#[test]
fn monthly_ambient_uses_local_time() {
    let a = Ambient::Monthly(climate());
    let utc: DateTime<Utc> = "2027-01-16T03:00:00Z".parse().unwrap();
    // 03:00 UTC is 15:00 at UTC+12 h: the daily peak.
    let peak = a.temp_c(utc, 12 * 3600);
    let night = a.temp_c(utc, 0);
    assert!(peak > night + 3.9);
}

#[test]
fn measured_series_interpolates_and_reports_bad_rows() {
    let s = AmbientSeries::parse_csv(
        "# Ostvik mast\ntime,temp_c\n2027-01-15T00:00:00Z,-10\n2027-01-15T06:00:00Z,-16\n",
    )
    .unwrap();
    let t: DateTime<Utc> = "2027-01-15T02:00:00Z".parse().unwrap();
    assert!((s.temp_c(t) + 12.0).abs() < 1e-12);
    assert!(s.covers(t));
    let e = AmbientSeries::parse_csv("time,temp_c\n2027-01-15T00:00:00Z,-10\nyesterday,-3\n")
        .unwrap_err();
    assert!(e.to_string().contains("line 3"), "{e}");
}

/// Safety rule: no charge is accepted below the charge temperature limit, at any SOC.
#[test]
fn no_charging_below_the_charge_temperature_limit() {
    let pack = Pack::new(&PackParams {
        charge_temp_min_c: 2.0,
        ..PackParams::default()
    })
    .unwrap();
    for soc in [0.0, 0.3, 0.9] {
        let s = pack.state_at(soc).unwrap();
        let r = pack
            .step(
                &s,
                &StepRequest {
                    power_w: -200.0,
                    dt_s: 600.0,
                    cell_temp_c: 1.9,
                },
            )
            .unwrap();
        assert!(r.flags.charge_blocked_cold);
        assert_eq!(r.state.soc, soc);
        assert_eq!(r.unaccepted_w, 200.0);
        let ok = pack
            .step(
                &s,
                &StepRequest {
                    power_w: -200.0,
                    dt_s: 600.0,
                    cell_temp_c: 2.1,
                },
            )
            .unwrap();
        assert!(ok.state.soc > soc && !ok.flags.charge_blocked_cold);
    }
}

/// Near full the voltage ceiling tapers the current (CV phase); it never exceeds the
/// C-rate limit and never pushes the SOC past 1.
#[test]
fn charge_tapers_near_full_and_respects_the_c_rate() {
    let pack = Pack::new(&PackParams::default()).unwrap();
    let i_max = 0.5 * pack.capacity_ah();
    let mut s = pack.state_at(0.5).unwrap();
    let (mut saw_cc, mut saw_cv, mut last_i) = (false, false, f64::MAX);
    for _ in 0..(24 * 60) {
        let r = pack
            .step(
                &s,
                &StepRequest {
                    power_w: -5000.0,
                    dt_s: 60.0,
                    cell_temp_c: 20.0,
                },
            )
            .unwrap();
        assert!(-r.current_a <= i_max * (1.0 + 1e-12));
        assert!(r.state.soc <= 1.0);
        saw_cc |= r.flags.current_limited;
        if r.flags.cv_taper {
            assert!(-r.current_a <= last_i + 1e-9, "taper current does not rise");
            saw_cv = true;
            last_i = -r.current_a;
        }
        s = r.state;
    }
    assert!(saw_cc && saw_cv);
    assert!(s.soc > 0.99);
}

/// More power than the pack can give is a recorded shortfall, never a silent clip;
/// at the cut-off the whole request becomes shortfall.
#[test]
fn undeliverable_power_is_recorded_as_shortfall() {
    let pack = Pack::new(&PackParams::default()).unwrap();
    let s = pack.state_at(0.5).unwrap();
    let big = pack
        .step(
            &s,
            &StepRequest {
                power_w: 1e6,
                dt_s: 1.0,
                cell_temp_c: 20.0,
            },
        )
        .unwrap();
    assert!(big.flags.current_limited || big.flags.voltage_limited);
    assert!((big.power_w + big.shortfall_w - 1e6).abs() < 1e-6);
    assert!(big.shortfall_w > 0.0);
    let empty = pack.state_at(0.0).unwrap();
    let r = pack
        .step(
            &empty,
            &StepRequest {
                power_w: 50.0,
                dt_s: 60.0,
                cell_temp_c: 20.0,
            },
        )
        .unwrap();
    assert!(r.flags.cutoff && r.flags.below_reserve);
    assert_eq!(r.shortfall_w, 50.0);
    // Cold shrinks the usable capacity: at -19.9 degC the LFP floor is
    // 1 - (0.70 + 0.10 * 0.1 / 20) = 0.2995 SOC (linear between -20 and 0 degC).
    let s = pack.state_at(0.31).unwrap();
    let r = pack
        .step(
            &s,
            &StepRequest {
                power_w: 100.0,
                dt_s: 3600.0,
                cell_temp_c: -19.9,
            },
        )
        .unwrap();
    assert!(
        r.flags.cutoff
            && (r.state.soc - 0.2995).abs() < 1e-12
            && r.on_s < 3600.0
            && r.shortfall_w > 0.0,
        "{r:?}"
    );
}

#[test]
fn pack_parameters_parse_from_toml_and_bad_ones_name_the_key() {
    let p: PackParams = toml::from_str(
        "chemistry = \"nmc\"\ncells_series = 14\ncells_parallel = 4\ncell_capacity_ah = 5.0\nreserve_soc = 0.25\n",
    )
    .unwrap();
    let pack = Pack::new(&p).unwrap();
    assert_eq!(pack.capacity_ah(), 20.0);
    assert!((pack.max_voltage_v() - 14.0 * 4.2).abs() < 1e-12);
    let bad: PackParams = toml::from_str("capacity_wh = 500.0\n").unwrap();
    let e = Pack::new(&bad).unwrap_err().to_string();
    assert!(e.contains("nominal_voltage_v") && e.contains("Fix"), "{e}");
    let bad: PackParams = toml::from_str("reserve_soc = 1.5\n").unwrap();
    assert!(Pack::new(&bad)
        .unwrap_err()
        .to_string()
        .contains("reserve_soc"));
    assert!(toml::from_str::<PackParams>("capacity_kwh = 1.0\n").is_err());
}
