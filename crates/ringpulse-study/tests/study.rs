//! Checks of the study layer against closed forms and against the engine itself.
//!
//! Sources:
//! - the textbook underdamped series RLC discharge (any circuits text; H. Knoepfel, "Pulsed
//!   High Magnetic Fields", North-Holland 1970, for the pulsed-power form), implemented in
//!   `ringpulse_engine::reference::SeriesRlc`; the charge and action integrals below are the
//!   closed-form antiderivatives of e^{−αt} sin ωt and e^{−2αt} sin² ωt (standard integral
//!   tables);
//! - the magnetic pressure B²/(2μ0) on the winding of a long solenoid, with the on-axis
//!   centre field of a finite solenoid B = μ0 N I / √(l² + 4a²) (textbook magnetostatics, e.g.
//!   Knoepfel 1970, ch. 2; recalled from memory), and the thin-ring hoop stress σ = F/(2π A)
//!   (Barlow's thin-wall relation, σ = p r / h, per unit length).

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)]

use ringpulse_engine::reference::{coil, simple_case, SeriesRlc};
use ringpulse_engine::{prepare, run, run_prepared};
use ringpulse_study::size::{
    size, Adjust, Outcome, SizeOptions, Target, TargetSpec, MAX_REFINE, SCAN_POINTS,
};
use ringpulse_study::{evaluate, Check, RatingsReport};

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

/// One turn, one filament, no workpiece: a pure series RLC circuit.
fn rlc_case() -> ringpulse_case::Case {
    ringpulse_engine::reference::series_rlc_case()
}

/// ∫_0^T |i| dt and ∫_0^T i² dt of i = A e^{−αt} sin ωt, from the antiderivatives between the
/// current zeros t_n = nπ/ω.
fn charge_and_action(rlc: &SeriesRlc, t_end: f64) -> (f64, f64) {
    let (a, w) = (rlc.alpha(), rlc.omega());
    let amp = rlc.v0 / (w * rlc.l);
    // ∫ e^{−αt} sin ωt dt = −e^{−αt} (α sin ωt + ω cos ωt) / (α² + ω²)
    let f1 = |t: f64| -(-a * t).exp() * (a * (w * t).sin() + w * (w * t).cos()) / (a * a + w * w);
    // ∫ e^{−2αt} sin² ωt dt = −e^{−2αt}/(4α) − e^{−2αt} (−2α cos 2ωt + 2ω sin 2ωt) / (2(4α² + 4ω²))
    let f2 = |t: f64| {
        let e = (-2.0 * a * t).exp();
        -e / (4.0 * a)
            - e * (-2.0 * a * (2.0 * w * t).cos() + 2.0 * w * (2.0 * w * t).sin())
                / (2.0 * (4.0 * a * a + 4.0 * w * w))
    };
    let mut charge = 0.0;
    let mut t0 = 0.0;
    let mut n = 1.0;
    while t0 < t_end {
        let t1 = (n * std::f64::consts::PI / w).min(t_end);
        charge += (f1(t1) - f1(t0)).abs();
        t0 = t1;
        n += 1.0;
    }
    (amp * charge, amp * amp * (f2(t_end) - f2(0.0)))
}

fn check<'a>(report: &'a RatingsReport, quantity: &str) -> &'a Check {
    report.checks.iter().find(|c| c.quantity == quantity).unwrap()
}

#[test]
fn ratings_of_a_series_rlc_equal_the_closed_form_and_flip_at_the_limit() {
    let mut case = rlc_case();
    let prepared = prepare(&case).unwrap();
    let rlc = SeriesRlc {
        c: case.bank.capacitance,
        v0: case.bank.voltage,
        l: prepared.network.l_loops[(0, 0)],
        r: case.bank.resistance + prepared.network.r_filaments[0],
    };
    let result = run_prepared(&case, prepared).unwrap();
    let t_end = *result.traces.time.last().unwrap();
    let (charge, action) = charge_and_action(&rlc, t_end);
    let damping = (-rlc.alpha() * std::f64::consts::PI / rlc.omega()).exp();
    let expected = [
        ("switch.peak_current", rlc.current(rlc.peak_time())),
        ("switch.peak_di_dt", rlc.initial_di_dt()),
        ("switch.charge", charge),
        ("switch.action_integral", action),
        // Successive opposite extrema of e^{−αt} sin ωt are π/ω apart: ratio e^{−απ/ω}.
        ("switch.reverse_current", 100.0 * damping),
        ("capacitors.voltage_reversal", 100.0 * rlc.reversal()),
        ("feeder.peak_current", rlc.current(rlc.peak_time())),
        ("feeder.action_integral", action),
    ];
    // Every limit 10 % above the analytic value first: everything passes.
    let set = |case: &mut ringpulse_case::Case, q: &str, v: f64| {
        let r = &mut case.ratings;
        let slot = match q {
            "switch.peak_current" => &mut r.switch.peak_current,
            "switch.peak_di_dt" => &mut r.switch.peak_di_dt,
            "switch.charge" => &mut r.switch.charge,
            "switch.action_integral" => &mut r.switch.action_integral,
            "switch.reverse_current" => &mut r.switch.reverse_current_percent,
            "capacitors.voltage_reversal" => &mut r.capacitors.voltage_reversal_percent,
            "feeder.peak_current" => &mut r.feeder.peak_current,
            "feeder.action_integral" => &mut r.feeder.action_integral,
            _ => panic!("no slot for {q}"),
        };
        *slot = Some(v);
    };
    for (q, v) in expected {
        set(&mut case, q, 1.1 * v);
    }
    let report = evaluate(&case, &result);
    assert_eq!(report.checks.len(), expected.len());
    assert!(report.all_pass());
    for (q, v) in expected {
        let c = check(&report, q);
        eprintln!("{q}: {:.9e} vs closed form {v:.9e}", c.value);
        assert!(rel(c.value, v) < 1e-4, "{q}: reported {} vs closed form {v}", c.value);
    }
    // A limit 1e-3 below or above the reported value flips the check (and only that one).
    for (q, _) in expected {
        let value = check(&report, q).value;
        let mut below = case.clone();
        set(&mut below, q, value * (1.0 - 1e-3));
        let r = evaluate(&below, &result);
        assert!(!check(&r, q).passes(), "{q} must fail just below its value");
        assert_eq!(r.checks.iter().filter(|c| !c.passes()).count(), 1, "{q}");
        assert!(check(&r, q).margin_percent() < 0.0);
        let mut above = case.clone();
        set(&mut above, q, value * (1.0 + 1e-3));
        let r = evaluate(&above, &result);
        assert!(check(&r, q).passes(), "{q} must pass just above its value");
        assert!(check(&r, q).margin_percent() > 0.0);
    }
    // The capacitor voltage rating compares the charging voltage.
    let mut cap = case.clone();
    cap.ratings.capacitors.voltage = Some(9.99e3);
    assert!(!check(&evaluate(&cap, &result), "capacitors.voltage").passes());
    cap.ratings.capacitors.voltage = Some(10.01e3);
    assert!(check(&evaluate(&cap, &result), "capacitors.voltage").passes());
}

#[test]
fn long_thin_coil_turn_pressure_is_the_magnetic_pressure_at_its_surface() {
    // 150 turns of 0.5 mm x 2 mm copper at 2 mm pitch on a 25 mm mean radius: l/a = 12, a
    // close-wound current sheet. No workpiece.
    let (turns, a, radial, pitch) = (150, 25e-3, 0.5e-3, 2e-3);
    let case =
        simple_case(100e-6, 1e3, 50e-9, 1e-3, coil(turns, a, radial, pitch, pitch, None), None);
    let result = run(&case).unwrap();
    let s = &result.summary;
    let mu0 = 4e-7 * std::f64::consts::PI;
    let l = turns as f64 * pitch;
    let i = s.peak_coil_current;
    let b_centre = mu0 * turns as f64 * i / (l * l + 4.0 * a * a).sqrt();
    // The engine divides the turn's net radial force by its outer face area 2π (a + h/2) w;
    // the sheet carries the force at its mean radius a.
    let expected = b_centre * b_centre / (2.0 * mu0) * a / (a + radial / 2.0);
    eprintln!(
        "turn pressure {:.6e} Pa, B²/(2μ0) at the surface {expected:.6e} Pa",
        s.peak_coil_pressure
    );
    assert!(
        rel(s.peak_coil_pressure, expected) < 0.02,
        "turn pressure {} Pa vs B²/(2μ0) {} Pa",
        s.peak_coil_pressure,
        expected
    );
    // And against the infinite-solenoid B = μ0 N I / l, "within a few percent".
    let b_long = mu0 * turns as f64 * i / l;
    let p_long = b_long * b_long / (2.0 * mu0);
    assert!(rel(s.peak_coil_pressure, p_long) < 0.05, "{} vs {}", s.peak_coil_pressure, p_long);
    // The turns are pushed outward: the hoop stress is tensile, σ = p r_face w / (h w).
    assert!(s.peak_coil_hoop_stress > 0.0);
    let sigma = s.peak_coil_pressure * (a + radial / 2.0) / radial;
    assert!(rel(s.peak_coil_hoop_stress, sigma) < 1e-9, "{} vs {sigma}", s.peak_coil_hoop_stress);
}

fn demo(name: &str) -> ringpulse_case::Case {
    let path = format!("{}/../../cases/{name}", env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(&path).unwrap();
    ringpulse_case::load_case(&text, &path).unwrap().0
}

fn coarse(mut case: ringpulse_case::Case) -> ringpulse_case::Case {
    case.discretization.mode = ringpulse_case::Resolution::Coarse { tube_rings: 40 };
    case
}

#[test]
fn sized_voltage_fed_back_to_run_meets_the_pressure_target() {
    let mut case = coarse(demo("tube_expansion_6turn.json"));
    case.motion.enabled = false;
    let target = TargetSpec { target: Target::PeakPressure, value: 150e6 };
    let opts = SizeOptions { rel_tol: 1e-4, ..SizeOptions::default() };
    let sizing = size(&case, target, Adjust::Voltage, &opts).unwrap();
    let Outcome::Met(point) = &sizing.outcome else { panic!("target unreachable: {sizing:?}") };
    let below = point.below.unwrap();
    assert!((point.value - below) / point.value <= 1e-4, "bracket {below} .. {}", point.value);
    let at = |v: f64| {
        let mut c = case.clone();
        c.bank.voltage = v;
        Target::PeakPressure.value(&run(&c).unwrap())
    };
    // Fed back: the sized voltage meets the target, the bracket's lower end does not.
    let p = at(point.value);
    assert!(p >= 150e6, "at the sized voltage the pressure is {p} Pa");
    assert!(at(below) < 150e6);
    // Fixed geometry: pressure ∝ V², so the answer is the closed-form rescaling of one run.
    let p5 = at(5e3);
    let v_exact = 5e3 * (150e6 / p5).sqrt();
    assert!(rel(point.value, v_exact) <= 1e-4, "{} vs {v_exact}", point.value);
    assert!(sizing.evaluations.len() <= SCAN_POINTS + MAX_REFINE);
    assert!(rel(point.energy, 0.5 * case.bank.capacitance * point.value.powi(2)) < 1e-12);
}

#[test]
fn sized_voltage_fed_back_to_a_moving_run_meets_the_strain_target() {
    // The expansion demo, moving against its die; coarse keeps the 20-odd runs quick.
    let case = coarse(demo("tube_expansion_6turn.json"));
    let target = TargetSpec { target: Target::FinalStrain, value: 0.03 };
    let opts = SizeOptions { rel_tol: 2e-3, ..SizeOptions::default() };
    let sizing = size(&case, target, Adjust::Voltage, &opts).unwrap();
    let Outcome::Met(point) = &sizing.outcome else { panic!("target unreachable: {sizing:?}") };
    let strain = |v: f64| {
        let mut c = case.clone();
        c.bank.voltage = v;
        Target::FinalStrain.value(&run(&c).unwrap())
    };
    assert!(strain(point.value) >= 0.03);
    let below = point.below.unwrap();
    assert!(strain(below) < 0.03);
    assert!((point.value - below) / point.value <= 2e-3);
    // A strain beyond the die (29 mm on a 25.75 mm mean radius: ln(28.25/25.75) ≈ 9.3 %) is
    // out of reach at any voltage of the range.
    let far = TargetSpec { target: Target::FinalStrain, value: 0.2 };
    let s = size(&case, far, Adjust::Voltage, &opts).unwrap();
    assert!(matches!(s.outcome, Outcome::Unreachable { .. }), "{:?}", s.outcome);
    assert!(s.evaluations.len() <= SCAN_POINTS);
}

#[test]
fn unreachable_target_ends_after_the_scan() {
    let mut case = coarse(demo("tube_expansion_6turn.json"));
    case.motion.enabled = false;
    let target = TargetSpec { target: Target::PeakPressure, value: 1e15 };
    let sizing = size(&case, target, Adjust::Capacitance, &SizeOptions::default()).unwrap();
    let Outcome::Unreachable { best_value, best_metric } = sizing.outcome else {
        panic!("{:?}", sizing.outcome)
    };
    assert_eq!(sizing.evaluations.len(), SCAN_POINTS);
    assert!(best_metric < 1e15 && best_value > 0.0);
    // A motion target on a case without motion is refused with the reason.
    let t = TargetSpec { target: Target::FinalStrain, value: 0.03 };
    let e = size(&case, t, Adjust::Voltage, &SizeOptions::default()).unwrap_err().to_string();
    assert!(e.contains("needs the workpiece to move"), "{e}");
}
