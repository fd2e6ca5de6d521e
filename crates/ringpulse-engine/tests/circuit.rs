//! Circuit-level checks of the transient against closed-form solutions.
//!
//! Source of every expected value: the textbook underdamped series RLC discharge (any circuits
//! text; H. Knoepfel, "Pulsed High Magnetic Fields", North-Holland 1970, for the pulsed-power
//! form), implemented in `ringpulse_engine::reference::SeriesRlc`, and the crowbarred L-R decay.

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)]

use ringpulse_engine::reference::SeriesRlc;
use ringpulse_engine::{prepare, run_prepared};

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

/// One turn, one filament, no workpiece: a pure series RLC circuit whose L and R are the
/// external values plus the ring's own (from the same kernel the engine uses).
fn rlc_case() -> ringpulse_case::Case {
    ringpulse_engine::reference::series_rlc_case()
}

#[test]
fn series_rlc_matches_analytic_solution() {
    let case = rlc_case();
    let prepared = prepare(&case).unwrap();
    let net = &prepared.network;
    let rlc = SeriesRlc {
        c: case.bank.capacitance,
        v0: case.bank.voltage,
        l: net.l_loops[(0, 0)],
        r: case.bank.resistance + net.r_filaments[0],
    };
    let result = run_prepared(&case, prepared.clone()).unwrap();
    let s = &result.summary;
    let i_peak = rlc.current(rlc.peak_time());
    assert!(rel(s.peak_coil_current, i_peak) < 1e-5, "peak {} vs {}", s.peak_coil_current, i_peak);
    assert!(
        rel(s.time_of_peak_current, rlc.peak_time()) < 1e-4,
        "t_peak {} vs {}",
        s.time_of_peak_current,
        rlc.peak_time()
    );
    let z = s.first_current_zero.unwrap();
    assert!(rel(z, rlc.first_zero()) < 1e-5, "zero {} vs {}", z, rlc.first_zero());
    let rev = s.voltage_reversal_percent / 100.0;
    assert!(rel(rev, rlc.reversal()) < 1e-5, "reversal {} vs {}", rev, rlc.reversal());
    assert!(rel(s.peak_di_dt, rlc.initial_di_dt()) < 1e-5);
    for (k, &t) in result.traces.time.iter().enumerate().step_by(37) {
        let exact = rlc.current(t);
        assert!((result.traces.coil_current[k] - exact).abs() < 1e-6 * i_peak, "i at t = {t:e} s");
        let v = rlc.voltage(t);
        assert!(
            (result.traces.capacitor_voltage[k] - v).abs() < 1e-6 * case.bank.voltage,
            "v at t = {t:e} s"
        );
    }
    assert!(s.energy.relative_residual.abs() < 1e-6, "residual {}", s.energy.relative_residual);
    eprintln!("{:?}\n{:?}", result.stats, s);
}

/// A crowbar closing at the first zero of v_C leaves an L-R loop: no voltage reversal, and
/// after closing i(t) = i_cb exp(−(t − t_cb) R'/L') with R' the loop resistance plus the
/// crowbar's (NOTES E2: textbook crowbarred discharge). Closing happens where v_C = 0, which for
/// the series RLC is at ωt = π − atan(ω/α) (E1).
#[test]
fn crowbar_closes_at_voltage_zero_and_current_decays_exponentially() {
    let mut case = rlc_case();
    case.bank.crowbar = Some(ringpulse_case::Crowbar { resistance: 2e-3, inductance: 0.0 });
    case.solver.end_time = Some(150e-6);
    let prepared = prepare(&case).unwrap();
    let net = &prepared.network;
    let l = net.l_loops[(0, 0)];
    let r_loop = case.bank.resistance + net.r_filaments[0];
    let rlc = SeriesRlc { c: case.bank.capacitance, v0: case.bank.voltage, l, r: r_loop };
    let result = run_prepared(&case, prepared.clone()).unwrap();
    let s = &result.summary;
    let t_cb_exact = (std::f64::consts::PI - (rlc.omega() / rlc.alpha()).atan()) / rlc.omega();
    let t_cb = s.crowbar_time.unwrap();
    assert!(rel(t_cb, t_cb_exact) < 1e-6, "crowbar time {t_cb:e} vs {t_cb_exact:e}");
    assert!(s.voltage_reversal_percent < 1e-6, "reversal {}", s.voltage_reversal_percent);
    let i_cb = rlc.current(t_cb_exact);
    let decay = (r_loop + 2e-3) / l;
    for (k, &t) in result.traces.time.iter().enumerate() {
        if t > t_cb + 1e-6 {
            let exact = i_cb * (-(t - t_cb) * decay).exp();
            assert!(
                (result.traces.coil_current[k] - exact).abs() < 1e-6 * i_cb,
                "i at t = {t:e} s"
            );
            assert_eq!(result.traces.capacitor_voltage[k], 0.0);
        }
    }
    assert!(s.energy.relative_residual.abs() < 1e-6);
    assert!(s.energy.crowbar > 0.0);
}
