//! Field and pressure checks of the coupled coil-tube model against long-solenoid theory.
//!
//! Sources: the long-solenoid field B = μ0 N I / l (Ampère's law; any electromagnetics text,
//! e.g. Jackson, "Classical Electrodynamics", §5.3) and the magnetic pressure p = B²/(2μ0)
//! (ibid., Maxwell stress); the thin-shell magnetic diffusion time τ = μ0 σ a d / 2 with
//! τ dB_in/dt = B_out − B_in (H. Knoepfel, "Pulsed High Magnetic Fields", 1970 — derivation in
//! docs/theory.md: a one-turn solenoid of L' = μ0 π a² and R' = 2π a /(σ d) per unit length).

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)]

use ringpulse_case::{Crowbar, Split};
use ringpulse_engine::reference::{coil, simple_case, tube};
use ringpulse_engine::{prepare, run_with_probes};
use ringpulse_physics::MU0;

/// A long coil outside a thick copper tube: near the middle, the net pressure on the tube equals
/// (B_gap² − B_in²)/(2μ0) with B_gap = μ0 N I / l; the wall (about five skin depths at the
/// ringing frequency) keeps most of the field out, and the measured inner field on the axis
/// accounts for the rest.
#[test]
fn long_coil_pressure_matches_solenoid_field() {
    let turns = 60;
    let pitch = 4e-3;
    let length = turns as f64 * pitch;
    let mut case = simple_case(
        30e-6,
        5e3,
        50e-9,
        2e-3,
        coil(turns, 26.75e-3, 1.5e-3, 3.5e-3, pitch, Some(Split { radial: 1, axial: 2 })),
        Some(tube(22e-3, 3e-3, length, "copper", Some(Split { radial: 4, axial: 240 }))),
    );
    case.solver.end_time = Some(30e-6);
    let result = run_with_probes(&case, prepare(&case).unwrap(), &[(0.0, 0.0)]).unwrap();
    let s = &result.summary;
    let rings = &result.rings;
    // The ring sample closest to the current peak.
    let (k_ring, &t) = rings
        .time
        .iter()
        .enumerate()
        .min_by(|a, b| {
            (a.1 - s.time_of_peak_current).abs().total_cmp(&(b.1 - s.time_of_peak_current).abs())
        })
        .unwrap();
    let k = result.traces.time.iter().position(|&x| x == t).unwrap();
    let current = result.traces.coil_current[k];
    let b = MU0 * turns as f64 * current / length;
    let b_in = result.probes[0].b_z[k];
    let expected = (b * b - b_in * b_in) / (2.0 * MU0);
    // Average over the rings within one pitch of the middle (the turns are discrete).
    let mid: Vec<usize> = (0..rings.z.len()).filter(|&r| rings.z[r].abs() <= pitch).collect();
    let p_mid = mid.iter().map(|&r| rings.pressure[k_ring][r]).sum::<f64>() / mid.len() as f64;
    let err = (p_mid - expected) / expected;
    eprintln!("long coil: mid pressure rel err {err:e}");
    assert!(
        err.abs() < 0.03,
        "mid pressure {p_mid:e} Pa vs B^2/(2 mu0) = {expected:e} Pa (rel {err:e})"
    );
}

/// A thin aluminium tube inside a long coil, with a crowbarred (step-like) current: the field
/// inside follows the thin-shell diffusion equation with τ = μ0 σ a d / 2.
#[test]
fn thin_shell_field_rises_with_diffusion_time() {
    let turns = 40;
    let pitch = 4e-3;
    let length = turns as f64 * pitch;
    let (a_tube, wall) = (20e-3, 0.25e-3);
    let mut case = simple_case(
        1e-6,
        20e3,
        0.0,
        0.0,
        coil(turns, 22.75e-3, 1.5e-3, 3.5e-3, pitch, Some(Split { radial: 1, axial: 1 })),
        Some(tube(
            a_tube,
            wall,
            length,
            "aluminium_6061_t6",
            Some(Split { radial: 1, axial: 160 }),
        )),
    );
    case.bank.crowbar = Some(Crowbar { resistance: 0.0, inductance: 0.0 });
    let sigma = 1.0 / case.workpiece.as_ref().unwrap().material.resistivity;
    let tau = MU0 * sigma * (a_tube + wall / 2.0) * wall / 2.0;
    case.solver.end_time = Some(2.0 * tau);
    case.solver.output_step = Some(tau / 400.0);
    let prepared = prepare(&case).unwrap();
    let r_gap = a_tube + wall + 0.5 * (22.0e-3 - a_tube - wall);
    let result = run_with_probes(&case, prepared, &[(0.0, 0.0), (r_gap, 0.0)]).unwrap();
    let b_in = &result.probes[0].b_z;
    let b_out = &result.probes[1].b_z;
    let t = &result.traces.time;
    // Integrate τ dB/dt = B_out − B_in with the trapezoidal rule on the output grid.
    let mut model = vec![0.0; t.len()];
    for k in 1..t.len() {
        let h = t[k] - t[k - 1];
        let c = h / (2.0 * tau);
        model[k] = (model[k - 1] * (1.0 - c) + c * (b_out[k] + b_out[k - 1])) / (1.0 + c);
    }
    let peak = b_out.iter().fold(0.0f64, |m, x| m.max(x.abs()));
    let worst = (0..t.len()).map(|k| (b_in[k] - model[k]).abs()).fold(0.0, f64::max);
    eprintln!("thin shell: worst {:e} of peak", worst / peak);
    assert!(
        worst < 0.03 * peak,
        "inner field vs thin-shell model: worst {worst:e} T of {peak:e} T"
    );
    // And the field really is delayed: at t = τ/4 it is well below the outside field.
    let k = t.iter().position(|&x| x >= tau / 4.0).unwrap();
    assert!(b_in[k] < 0.5 * b_out[k], "B_in {} vs B_out {}", b_in[k], b_out[k]);
}
