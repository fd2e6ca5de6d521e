//! Clear errors instead of nonsense: too many filaments, an indefinite inductance matrix.

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)]

use ringpulse_case::Split;
use ringpulse_engine::reference::{coil, simple_case, tube};
use ringpulse_engine::{prepare, run, EngineError};

#[test]
fn refuses_a_discretization_above_the_limit() {
    let mut case = simple_case(
        100e-6,
        5e3,
        50e-9,
        1e-3,
        coil(6, 22.5e-3, 2e-3, 3e-3, 4.5e-3, None),
        Some(tube(25e-3, 1.5e-3, 60e-3, "aluminium_6061_t6", None)),
    );
    case.discretization.max_filaments = 100;
    match prepare(&case) {
        Err(EngineError::TooManyFilaments { count, limit }) => {
            assert_eq!(limit, 100);
            assert!(count > 100);
        }
        other => panic!("expected TooManyFilaments, got {other:?}"),
    }
    let msg = run(&case).unwrap_err().to_string();
    assert!(msg.contains("discretization.max_filaments"), "{msg}");
}

/// Flat cells stacked across their long side (here 0.05 mm x 4 mm cells, aspect 80) make the
/// filament-centre model indefinite (NOTES on discretization: aspect ratio 2 and more seen to
/// fail); the engine must say which split is at fault.
#[test]
fn names_the_split_of_an_indefinite_matrix() {
    let case = simple_case(
        100e-6,
        5e3,
        50e-9,
        1e-3,
        coil(1, 20e-3, 4e-3, 4e-3, 4e-3, Some(Split { radial: 80, axial: 1 })),
        None,
    );
    match prepare(&case) {
        Err(EngineError::IndefiniteInductance { conductor }) => {
            assert!(conductor.contains("coil turn 0 split 80 x 1"), "{conductor}");
        }
        other => {
            panic!("expected IndefiniteInductance, got {:?}", other.map(|p| p.network.n_loops()))
        }
    }
}

/// A wall split into 2:1 cells stacked across their long side stays positive definite but
/// nearly singular: its fastest eddy mode decays at about 1e10 1/s, which would hold the
/// explicit stepper to sub-nanosecond steps for the whole run (it crawled for minutes before
/// this check). The engine refuses it up front and names the split; the same tube in
/// near-square cells passes.
#[test]
fn refuses_a_split_that_would_make_the_stepper_crawl() {
    let elongated = simple_case(
        200e-6,
        5e3,
        100e-9,
        5e-3,
        coil(6, 22e-3, 3e-3, 4e-3, 5.5e-3, None),
        Some(tube(25e-3, 1.5e-3, 60e-3, "aluminium_6061_t6", Some(Split { radial: 4, axial: 76 }))),
    );
    match prepare(&elongated) {
        Err(EngineError::TooStiff { rate, steps, split, .. }) => {
            assert!(rate > 1e9, "rate {rate:e}");
            assert!(steps > ringpulse_engine::run::MAX_STABLE_STEPS);
            assert!(split.contains("workpiece 4 x 76"), "{split}");
        }
        other => panic!("expected TooStiff, got {:?}", other.map(|p| p.network.n_loops())),
    }
    let mut square = elongated.clone();
    square.workpiece.as_mut().unwrap().split = Some(Split { radial: 2, axial: 76 });
    assert!(prepare(&square).is_ok());
}
