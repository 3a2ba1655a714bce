//! Thermal node checks: analytic exponential step response (time constant C/G), heater
//! duty in steady cold against the energy balance G (T_set - T_amb) / P_heater, and
//! survival-limit flags.

use sunward::battery::thermal::{ThermalInput, ThermalNode, ThermalParams, ThermalState};

fn node(heater_w: f64, on_c: f64, off_c: f64) -> ThermalNode {
    ThermalNode::new(&ThermalParams {
        heat_capacity_j_k: 36_000.0,
        conductance_w_k: 2.0,
        heater_power_w: heater_w,
        heater_on_c: on_c,
        heater_off_c: off_c,
        ..ThermalParams::default()
    })
    .unwrap()
}

/// Step response of a first-order lumped node with no heater: from 20 degC into
/// -10 degC air with 4 W inside, T(t) = T_ss + (T0 - T_ss) e^{-t G / C}, T_ss = T_amb +
/// Q/G (Incropera et al., Fundamentals of Heat and Mass Transfer, 6th ed., eq. 5.6,
/// lumped capacitance; from memory). Checked at several times, after many small steps
/// and after one long step; and at t = tau the node has covered 1 - 1/e of the way.
#[test]
fn step_response_is_the_analytic_exponential() {
    let n = node(0.0, -90.0, -89.0);
    let tau = 36_000.0 / 2.0;
    assert_eq!(n.time_constant_s(), tau);
    let (t0, t_amb, q_w) = (20.0, -10.0, 4.0);
    let t_ss = t_amb + q_w / 2.0;
    let input = |dt_s| ThermalInput {
        ambient_c: t_amb,
        internal_heat_w: q_w,
        irradiance_w_m2: 0.0,
        dt_s,
    };
    let mut s = ThermalState {
        temp_c: t0,
        heater_on: false,
    };
    let mut t = 0.0;
    for _ in 0..720 {
        s = n.step(&s, &input(60.0)).unwrap().state;
        t += 60.0;
        let want = t_ss + (t0 - t_ss) * (-t / tau).exp();
        assert!(
            (s.temp_c - want).abs() < 1e-9,
            "t = {t}: {} vs {want}",
            s.temp_c
        );
    }
    let one = n
        .step(
            &ThermalState {
                temp_c: t0,
                heater_on: false,
            },
            &input(tau),
        )
        .unwrap();
    let covered = (t0 - one.state.temp_c) / (t0 - t_ss);
    assert!((covered - (1.0 - (-1.0f64).exp())).abs() < 1e-12);
}

/// Steady cold: over a long time the heater's mean power equals the loss G (T_set -
/// T_amb), so duty = G (T_set - T_amb) / P_heater (energy balance). With a 0.2 K band
/// T_set is taken as its midpoint; the band bounds the error by G * 0.1 K / P.
/// Independent of the step length (switching is exact inside a step).
#[test]
fn heater_duty_in_steady_cold_matches_the_energy_balance() {
    for (t_amb, heater_w, dt_s) in [
        (-30.0, 100.0, 600.0),
        (-15.0, 60.0, 37.0),
        (-5.0, 40.0, 3600.0),
    ] {
        let n = node(heater_w, 4.9, 5.1);
        let input = ThermalInput {
            ambient_c: t_amb,
            internal_heat_w: 0.0,
            irradiance_w_m2: 0.0,
            dt_s,
        };
        let mut s = ThermalState {
            temp_c: 5.0,
            heater_on: true,
        };
        let (mut on_s, mut total_s) = (0.0, 0.0);
        for _ in 0..(30.0 * 86_400.0 / dt_s) as usize {
            let r = n.step(&s, &input).unwrap();
            on_s += r.heater_on_s;
            total_s += dt_s;
            s = r.state;
            assert!(r.min_temp_c >= 4.9 - 1e-9 && r.max_temp_c <= 5.1 + 1e-9);
        }
        let duty = on_s / total_s;
        let want = 2.0 * (5.0 - t_amb) / heater_w;
        let tol = 2.0 * 0.1 / heater_w + 1e-4;
        assert!(
            (duty - want).abs() < tol,
            "{t_amb} degC: duty {duty} vs {want}"
        );
    }
}

/// Too weak a heater: the node falls to T_amb + P/G and the limits are flagged.
#[test]
fn weak_heater_breaches_survival_limits_and_flags_them() {
    let n = node(10.0, 5.0, 10.0);
    let input = ThermalInput {
        ambient_c: -40.0,
        internal_heat_w: 0.0,
        irradiance_w_m2: 0.0,
        dt_s: 3600.0,
    };
    let mut s = ThermalState {
        temp_c: 15.0,
        heater_on: false,
    };
    let mut flagged = false;
    for _ in 0..200 {
        let r = n.step(&s, &input).unwrap();
        flagged |= r.flags.below_storage_min && r.flags.below_operating_min;
        s = r.state;
    }
    assert!(flagged);
    assert!(s.heater_on);
    assert!((s.temp_c - (-40.0 + 10.0 / 2.0)).abs() < 1e-6);
}

/// Solar gain enters as absorptance x area x irradiance.
#[test]
fn solar_gain_raises_the_steady_temperature() {
    let p = ThermalParams {
        solar_absorptance_area_m2: 0.1,
        conductance_w_k: 2.0,
        ..ThermalParams::default()
    };
    let n = ThermalNode::new(&p).unwrap();
    let input = ThermalInput {
        ambient_c: 0.0,
        internal_heat_w: 0.0,
        irradiance_w_m2: 800.0,
        dt_s: 1.0,
    };
    assert!((n.steady_temp_c(&input, false) - 40.0).abs() < 1e-12);
}

#[test]
fn thermostat_without_a_band_is_refused() {
    let p = ThermalParams {
        heater_on_c: 5.0,
        heater_off_c: 5.0,
        ..ThermalParams::default()
    };
    let e = ThermalNode::new(&p).unwrap_err().to_string();
    assert!(e.contains("heater_off_c") && e.contains("Fix"), "{e}");
}
