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
