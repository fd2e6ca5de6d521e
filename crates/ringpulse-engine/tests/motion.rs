//! Checks of the moving-workpiece model.
//!
//! Sources: the energy balance of a coupled circuit-mechanical system (the magnetic force is
//! the gradient of the magnetic co-energy, ½ iᵀ ∂L/∂x i; NOTES A5); the adiabatic Joule heating
//! law with linear resistivity integrated in closed form, T = T0 + (exp(g ρ0 α/(ρ_m c)) − 1)/α
//! with g = ∫ j² dt (derivation in docs/theory.md, "Heating"); the thin-ring hoop equation
//! (Gourdin 1989, recalled from memory).

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)]

use ringpulse_case::Split;
use ringpulse_engine::flow::FlowLaw;
use ringpulse_engine::reference::{coil, simple_case, tube};
use ringpulse_engine::{prepare, run_motion, run_prepared, MotionOptions};

fn coarse_expansion() -> ringpulse_case::Case {
    ringpulse_engine::reference::coarse_expansion_case()
}

#[test]
fn frozen_motion_equals_fixed_geometry() {
    let mut case = coarse_expansion();
    // An immovable, non-heating workpiece and coil: huge density, no temperature coefficient.
    let wp = case.workpiece.as_mut().unwrap();
    wp.material.density = 1e30;
    wp.material.temperature_coefficient = 0.0;
    case.coil.material.temperature_coefficient = 0.0;
    case.solver.rel_tol = Some(1e-9);
    case.solver.abs_tol = Some(1e-11);
    let fixed = run_prepared(&case, prepare(&case).unwrap()).unwrap();
    let moving = run_motion(&case, prepare(&case).unwrap(), &MotionOptions::default()).unwrap();
    let (a, b) = (&fixed.summary, &moving.summary);
    let rel = |x: f64, y: f64| (x - y).abs() / y.abs();
    assert!(
        rel(b.peak_coil_current, a.peak_coil_current) < 1e-7,
        "{} vs {}",
        b.peak_coil_current,
        a.peak_coil_current
    );
    assert!(rel(b.time_of_peak_current, a.time_of_peak_current) < 1e-6);
    assert!(
        rel(b.peak_radial_force, a.peak_radial_force) < 1e-6,
        "{} vs {}",
        b.peak_radial_force,
        a.peak_radial_force
    );
    let pa = a.peak_pressure.as_ref().unwrap();
    let pb = b.peak_pressure.as_ref().unwrap();
    assert!(rel(pb.value, pa.value) < 1e-5, "pressure {} vs {}", pb.value, pa.value);
    assert!(rel(b.energy.workpiece, a.energy.workpiece) < 1e-6);
    let m = b.motion.as_ref().unwrap();
    assert!(m.max_displacement.abs() < 1e-20, "displacement {}", m.max_displacement);
}

#[test]
fn energy_account_with_motion_closes() {
    let case = coarse_expansion();
    let r = run_motion(&case, prepare(&case).unwrap(), &MotionOptions::default()).unwrap();
    let e = &r.summary.energy;
    assert!(e.relative_residual.abs() < 1e-3, "residual {:e}", e.relative_residual);
    assert!(e.plastic > 0.0 && e.kinetic >= 0.0 && e.elastic >= 0.0);
    let m = r.summary.motion.as_ref().unwrap();
    assert!(m.max_displacement > 1e-3, "the tube expands: {}", m.max_displacement);
    assert!(m.max_velocity > 50.0 && m.max_velocity < 500.0, "{}", m.max_velocity);
    assert!((m.efficiency - e.plastic / e.initial).abs() < 1e-12);
    // Strain follows the radius: ln(r/r0) of the most displaced ring.
    assert!(m.final_strain_range[1] > 0.0 && m.final_strain_range[0] >= -1e-6);
}

#[test]
fn die_stops_rings_and_records_impacts() {
    let case = coarse_expansion();
    // Die 2 mm outside the tube's outer surface (26.5 mm).
    let die = 28.5e-3;
    let opts = MotionOptions { stop_radius: Some(die), flow: None, exact_coupling: false };
    let r = run_motion(&case, prepare(&case).unwrap(), &opts).unwrap();
    let m = r.summary.motion.as_ref().unwrap();
    assert!(m.rings_at_stop > 0, "some rings reach the die");
    let t_hit = m.first_impact_time.unwrap();
    let v_hit = m.max_impact_velocity.unwrap();
    assert!(t_hit > 0.0 && v_hit > 10.0, "impact at {t_hit} s, {v_hit} m/s");
    // Held rings sit with their outer surface on the die (volume-constant wall).
    let last = r.rings.radius_history.last().unwrap();
    for &(q, _, _) in &m.impacts {
        let r0 = r.rings.radius[q];
        let h = 1.5e-3 * r0 / last[q];
        assert!((last[q] + h / 2.0 - die).abs() < 1e-6, "ring {q} at {}", last[q] + h / 2.0);
    }
    let e = &r.summary.energy;
    assert!(e.impact > 0.0);
    assert!(e.relative_residual.abs() < 1e-3, "residual {:e}", e.relative_residual);
}

#[test]
fn joule_heating_matches_closed_form() {
    // One filament of coil, a far workpiece that barely couples; the coil filament's
    // temperature must follow the closed form for the action density it carried.
    let mut case = simple_case(
        200e-6,
        3e3,
        200e-9,
        2e-3,
        coil(1, 20e-3, 2e-3, 2e-3, 2e-3, Some(Split { radial: 1, axial: 1 })),
        Some(tube(40e-3, 1e-3, 5e-3, "aluminium_6061_t6", Some(Split { radial: 1, axial: 2 }))),
    );
    case.workpiece.as_mut().unwrap().z_center = 0.3;
    case.solver.rel_tol = Some(1e-10);
    case.solver.abs_tol = Some(1e-12);
    let r = run_motion(&case, prepare(&case).unwrap(), &MotionOptions::default()).unwrap();
    let m = &case.coil.material;
    let area = 2e-3 * 2e-3;
    let g = r.summary.action_integral / (area * area);
    let (rho0, alpha, t0) = (m.resistivity, m.temperature_coefficient, case.initial_temperature);
    let expected = t0 + ((g * rho0 * alpha / (m.density * m.specific_heat)).exp() - 1.0) / alpha;
    let got = r.summary.peak_coil_temperature;
    assert!(got - t0 > 10.0, "the filament heats: {got} K");
    assert!((got - expected).abs() < 1e-6 * (expected - t0), "{got} K vs {expected} K");
}

#[test]
fn constant_flow_stress_override_is_used() {
    let case = coarse_expansion();
    let soft = MotionOptions {
        stop_radius: None,
        flow: Some(FlowLaw::Constant { stress: 50e6 }),
        exact_coupling: false,
    };
    let hard = MotionOptions {
        stop_radius: None,
        flow: Some(FlowLaw::Constant { stress: 400e6 }),
        exact_coupling: false,
    };
    let a = run_motion(&case, prepare(&case).unwrap(), &soft).unwrap();
    let b = run_motion(&case, prepare(&case).unwrap(), &hard).unwrap();
    let da = a.summary.motion.unwrap().max_displacement;
    let db = b.summary.motion.unwrap().max_displacement;
    assert!(da > 1.5 * db, "softer material moves further: {da} vs {db}");
}

/// The tabulated coil–workpiece coupling (the default) against Maxwell's formula at every
/// evaluation: the same shot to within the solver tolerance, with the energy account closing
/// at the solver's level.
#[test]
fn tabulated_coupling_matches_the_kernel() {
    // Tight tolerances, so that the comparison resolves differences far below the defaults.
    let mut case = coarse_expansion();
    case.solver.rel_tol = Some(1e-8);
    case.solver.abs_tol = Some(1e-10);
    let opts = MotionOptions { stop_radius: Some(28.5e-3), flow: None, exact_coupling: false };
    let exact_opts = MotionOptions { exact_coupling: true, ..opts };
    let a = run_motion(&case, prepare(&case).unwrap(), &opts).unwrap();
    let b = run_motion(&case, prepare(&case).unwrap(), &exact_opts).unwrap();
    let rel = |x: f64, y: f64| (x - y).abs() / y.abs();
    let (sa, sb) = (&a.summary, &b.summary);
    assert!(rel(sa.peak_coil_current, sb.peak_coil_current) < 1e-6);
    let (ma, mb) = (sa.motion.as_ref().unwrap(), sb.motion.as_ref().unwrap());
    assert!(rel(ma.max_displacement, mb.max_displacement) < 1e-6);
    assert!(
        rel(ma.max_velocity, mb.max_velocity) < 1e-6,
        "{} vs {}",
        ma.max_velocity,
        mb.max_velocity
    );
    assert_eq!(ma.rings_at_stop, mb.rings_at_stop);
    let (va, vb) = (ma.max_impact_velocity.unwrap(), mb.max_impact_velocity.unwrap());
    assert!(rel(va, vb) < 1e-6, "impact {va} vs {vb}");
    let (pa, pb) = (sa.energy.plastic, sb.energy.plastic);
    assert!(rel(pa, pb) < 1e-6, "plastic work {pa} J vs {pb} J");
    assert!(sa.energy.relative_residual.abs() < 1e-7, "residual {:e}", sa.energy.relative_residual);
}

/// Motion issue: the largest displacement changes by less than 1 % from the default
/// discretization (cells of one skin depth, default tolerances) to cells twice as fine with
/// tolerances ten times tighter. Invented scenario small enough for the test suite: a 2-turn
/// internal coil (2 mm x 2 mm copper at 3 mm pitch) freely expanding a 10 mm long aluminium
/// 6061-T6 tube (18 mm inner radius, 1 mm wall), 400 µF at 1.2 kV; no die, so that the
/// displacement is the workpiece's own (with a die it would be pinned at the gap), over
/// 150 µs, by which time the tube has stopped yielding. Measured: 1.2182 mm against
/// 1.2067 mm, a change of 0.94 %. (The expansion demo without its die changes by 1.19 %:
/// docs/performance.md.)
#[test]
fn displacement_converges_with_discretization_and_tolerance() {
    let mut base = simple_case(
        400e-6,
        1.2e3,
        50e-9,
        3e-3,
        coil(2, 16e-3, 2e-3, 2e-3, 3e-3, None),
        Some(tube(18e-3, 1e-3, 10e-3, "aluminium_6061_t6", None)),
    );
    base.motion.enabled = true;
    base.solver.end_time = Some(150e-6);
    let run_at = |cell: f64, tol: Option<f64>| {
        let mut c = base.clone();
        c.discretization.mode =
            ringpulse_case::Resolution::SkinDepth { cell_over_skin_depth: cell };
        c.solver.rel_tol = tol;
        c.solver.abs_tol = tol;
        let r = ringpulse_engine::run(&c).unwrap();
        let still = r.warnings.iter().any(|w| w.contains("still yields"));
        assert!(!still, "the tube must have stopped yielding: {:?}", r.warnings);
        (
            r.summary.motion.unwrap().max_displacement,
            r.mesh.coil_filaments + r.mesh.workpiece_filaments,
        )
    };
    let (default_tol, _) = base.solver.tolerances(true);
    let (d0, n0) = run_at(1.0, None);
    let (d1, n1) = run_at(0.5, Some(default_tol / 10.0));
    assert!(n1 > 2 * n0, "twice as fine: {n0} -> {n1} filaments");
    assert!(d0 > 1e-3, "the tube expands plastically: {d0} m");
    let change = (d0 - d1).abs() / d1;
    assert!(change < 0.01, "max displacement {d0} m vs {d1} m: {:.2} %", 100.0 * change);
}
