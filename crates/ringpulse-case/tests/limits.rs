//! Numerical limits: filament counts, discretization and solver settings, temperatures.

mod common;

use common::{at, check, close, minimal, ok, problems, remove, set};
use ringpulse_case::{Resolution, Split};
use serde_json::json;

#[test]
fn defaults_are_filled_in() {
    let (c, warnings) = ok(&minimal());
    assert!(warnings.is_empty());
    assert_eq!(c.bank.inductance, 0.0);
    assert_eq!(c.bank.resistance, 0.0);
    assert_eq!(c.bank.feeder_inductance, 0.0);
    assert_eq!(c.bank.feeder_resistance, 0.0);
    assert_eq!(c.bank.crowbar, None);
    assert_eq!(c.discretization.mode, Resolution::SkinDepth { cell_over_skin_depth: 1.0 });
    assert_eq!(c.discretization.max_filaments, 4000);
    assert_eq!(c.discretization.max_aspect, 1.5);
    // Unset: the run picks the default of its kind (fixed geometry or motion).
    assert_eq!(c.solver.rel_tol, None);
    assert_eq!(c.solver.abs_tol, None);
    assert_eq!(c.solver.tolerances(false), (1e-7, 1e-9));
    assert_eq!(c.solver.tolerances(true), (1e-6, 1e-6));
    // The coarse preview with motion: looser defaults, matched to its discretization.
    assert_eq!(c.solver.tolerances_at(true, true), (1e-5, 1e-5));
    assert_eq!(c.solver.tolerances_at(false, true), (1e-7, 1e-9));
    assert_eq!(c.solver.end_time, None);
    assert_eq!(c.solver.output_step, None);
    assert_eq!(c.initial_temperature, 293.15);
}

#[test]
fn empty_crowbar_object_enables_an_ideal_crowbar() {
    let mut case = minimal();
    set(&mut case, "bank.crowbar", json!({}));
    let (c, _) = ok(&case);
    assert_eq!(c.bank.crowbar.map(|k| (k.resistance, k.inductance)), Some((0.0, 0.0)));
}

#[test]
fn coarse_mode() {
    let mut case = minimal();
    set(&mut case, "discretization", json!({ "resolution": "coarse", "coarse_tube_rings": 25 }));
    let (c, _) = ok(&case);
    assert_eq!(c.discretization.mode, Resolution::Coarse { tube_rings: 25 });
    set(&mut case, "discretization.resolution", json!("coarse"));
    remove(&mut case, "discretization.coarse_tube_rings");
    let (c, _) = ok(&case);
    assert_eq!(c.discretization.mode, Resolution::Coarse { tube_rings: 40 });
}

#[test]
fn explicit_splits_are_kept() {
    let mut case = minimal();
    set(&mut case, "coil.split", json!({ "radial": 3, "axial": 4 }));
    set(&mut case, "workpiece.split", json!({ "radial": 2, "axial": 60.0 }));
    let (c, _) = ok(&case);
    assert_eq!(c.coil.split, Some(Split { radial: 3, axial: 4 }));
    assert_eq!(c.workpiece.and_then(|t| t.split), Some(Split { radial: 2, axial: 60 }));
    set(&mut case, "coil.split", json!({ "radial": 3 }));
    assert_eq!(at(&problems(&case), "coil.split.axial"), ["missing field"]);
}

#[test]
fn filament_limit_refuses_explicit_splits() {
    // 4 turns × 10 × 20 = 800 plus 5 × 100 = 500 gives 1300 > 1000.
    let mut case = minimal();
    set(&mut case, "coil.split", json!({ "radial": 10, "axial": 20 }));
    set(&mut case, "workpiece.split", json!({ "radial": 5, "axial": 100 }));
    set(&mut case, "discretization.max_filaments", json!(1000));
    let p = problems(&case);
    assert_eq!(
        p,
        vec![(
            "coil.split".to_string(),
            "refused: 1300 filaments exceed the limit of 1000 (discretization.max_filaments); \
             coil 4 turns × 10 × 20 = 800, workpiece 5 × 100 = 500"
                .to_string()
        )]
    );
    set(&mut case, "discretization.max_filaments", json!(1300));
    assert!(check(&case).is_ok());
}

#[test]
fn filament_limit_counts_the_known_part_of_automatic_splits() {
    // The default limit of 4000 with 4100 filaments in the tube alone.
    let mut case = minimal();
    set(&mut case, "workpiece.split", json!({ "radial": 41, "axial": 100 }));
    assert_eq!(
        at(&problems(&case), "workpiece.split"),
        ["refused: at least 4104 filaments exceed the limit of 4000 \
          (discretization.max_filaments); coil at least 4 (one per turn; automatic split), \
          workpiece 41 × 100 = 4100"]
    );
    // Coarse mode: one per turn plus the tube rings.
    let mut case = minimal();
    set(
        &mut case,
        "discretization",
        json!({ "resolution": "coarse", "coarse_tube_rings": 100, "max_filaments": 50 }),
    );
    assert_eq!(
        at(&problems(&case), "discretization.coarse_tube_rings"),
        ["refused: 104 filaments exceed the limit of 50 (discretization.max_filaments); coil 4 \
          turns × 1 = 4, workpiece 100 (discretization.coarse_tube_rings)"]
    );
}

#[test]
fn huge_counts_do_not_overflow_or_hang() {
    let mut case = minimal();
    set(&mut case, "coil.turns", json!(1_000_000_000_000_u64));
    set(
        &mut case,
        "coil.split",
        json!({ "radial": 4_000_000_000_u64, "axial": 4_000_000_000_u64 }),
    );
    let p = problems(&case);
    let msg = at(&p, "coil.split");
    assert_eq!(msg.len(), 1, "{p:?}");
    // 10^12 turns × 1.6e19 filaments per turn, plus at least one in the tube.
    assert!(
        msg[0].starts_with("refused: at least 16000000000000000000000000000001 filaments"),
        "{}",
        msg[0]
    );
}

#[test]
fn max_filaments_has_a_hard_cap() {
    let mut case = minimal();
    set(&mut case, "discretization.max_filaments", json!(20000));
    assert!(check(&case).is_ok());
    set(&mut case, "discretization.max_filaments", json!(20001));
    assert_eq!(
        at(&problems(&case), "discretization.max_filaments"),
        ["must be <= 20000 (a dense inductance matrix of that many filaments already takes 3.2 \
          GB), got 20001"]
    );
    set(&mut case, "discretization.max_filaments", json!(0));
    assert_eq!(
        at(&problems(&case), "discretization.max_filaments"),
        ["must be an integer >= 1, got 0"]
    );
}

#[test]
fn integers_are_required_where_counts_are_expected() {
    let mut case = minimal();
    for (value, shown) in
        [(json!(0), "0"), (json!(-2), "-2"), (json!(2.5), "2.5"), (json!("6"), "\"6\"")]
    {
        set(&mut case, "coil.turns", value);
        assert_eq!(
            at(&problems(&case), "coil.turns"),
            [format!("must be an integer >= 1, got {shown}")]
        );
    }
    set(&mut case, "coil.turns", json!(4.0));
    assert_eq!(ok(&case).0.coil.turns, 4);
}

#[test]
fn solver_settings_are_checked() {
    let mut case = minimal();
    set(
        &mut case,
        "solver",
        json!({ "rel_tol": 1e-2, "abs_tol": 1e-6, "end_time": "200 us", "output_step": "1 us" }),
    );
    let (c, _) = ok(&case);
    assert_eq!(c.solver.rel_tol, Some(1e-2));
    assert_eq!(c.solver.abs_tol, Some(1e-6));
    assert_eq!(c.solver.tolerances(true), (1e-2, 1e-6));
    assert!(c.solver.end_time.is_some_and(|t| close(t, 200e-6)));
    set(&mut case, "solver.rel_tol", json!(0));
    set(&mut case, "solver.abs_tol", json!("1 mm"));
    let p = problems(&case);
    assert_eq!(at(&p, "solver.rel_tol"), ["must be in (0, 0.01], got 0"]);
    assert_eq!(
        at(&p, "solver.abs_tol"),
        ["expected a plain number (no unit, e.g. 1.5), got \"1 mm\" (a length)"]
    );
}

#[test]
fn too_many_output_samples_are_refused() {
    let mut case = minimal();
    set(&mut case, "solver", json!({ "end_time": "1 s", "output_step": "0.1 us" }));
    assert_eq!(
        at(&problems(&case), "solver.output_step"),
        ["1e-7 s over solver.end_time = 1 s gives 10000000 output samples, more than the limit of \
          1000000"]
    );
    set(&mut case, "solver", json!({ "end_time": "100 ms", "output_step": "0.1 us" }));
    assert!(check(&case).is_ok(), "exactly one million samples pass");
    set(&mut case, "solver", json!({ "end_time": "10 us", "output_step": "20 us" }));
    assert_eq!(
        at(&problems(&case), "solver.output_step"),
        ["must be <= solver.end_time (1e-5 s), got 2e-5 s"]
    );
}

#[test]
fn initial_temperature_in_kelvin_or_celsius() {
    let mut case = minimal();
    for (value, kelvin) in
        [(json!("20 degC"), 293.15), (json!("300 K"), 300.0), (json!(350), 350.0)]
    {
        set(&mut case, "initial_temperature", value);
        assert!(close(ok(&case).0.initial_temperature, kelvin));
    }
}

#[test]
fn initial_temperature_below_both_melting_points() {
    // Aluminium 1050 starts melting at 646 °C, copper at 1065 °C.
    let mut case = minimal();
    set(&mut case, "initial_temperature", json!("700 degC"));
    assert_eq!(
        at(&problems(&case), "initial_temperature"),
        ["must be below the melting point of the workpiece material aluminium_1050 (919.15 K), \
          got \"700 degC\" (= 973.15 K)"]
    );
    set(&mut case, "initial_temperature", json!(2000));
    assert_eq!(at(&problems(&case), "initial_temperature").len(), 2);
    remove(&mut case, "workpiece");
    assert_eq!(
        at(&problems(&case), "initial_temperature"),
        ["must be below the melting point of the coil material copper (1338.15 K), got 2000 K"]
    );
}

#[test]
fn initial_temperature_must_keep_resistivity_positive() {
    // Copper: 293.15 K - 1 / (0.00393 1/K) = 38.697 K, where the linear law reaches zero.
    let mut case = minimal();
    remove(&mut case, "workpiece");
    set(&mut case, "initial_temperature", json!("20 K"));
    assert_eq!(
        at(&problems(&case), "initial_temperature"),
        ["the linear resistivity law of the coil material copper reaches zero at 38.6971 K, so \
          the initial temperature must be above it, got \"20 K\" (= 20 K)"]
    );
    set(&mut case, "initial_temperature", json!("77 K"));
    assert!(check(&case).is_ok());
}
