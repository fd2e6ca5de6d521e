//! Every demo case in cases/, at fixed geometry: positive definite inductance matrix, closed
//! energy account and a converged default discretization. (With motion, .ci/run checks the
//! energy account of every demo at its default resolution through the binary, and
//! tests/motion.rs checks the demos in the coarse preview.)
//!
//! The thresholds come from the engine issue: energy residual below 1e-4 of ½CV0², and peak
//! coil current, time of peak and peak workpiece force changing by less than 2 % between the
//! default split (one skin depth) and one twice as fine. The positive-definiteness check is
//! the Cholesky factorisation (a symmetric matrix is positive definite exactly when it has one).

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)]

use std::path::PathBuf;

use nalgebra::Cholesky;
use ringpulse_case::{load_case, Case, Resolution};
use ringpulse_engine::{prepare, run_fixed, run_prepared};

fn demo_paths() -> Vec<PathBuf> {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../../cases");
    let mut paths: Vec<PathBuf> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "json"))
        .collect();
    paths.sort();
    assert!(paths.len() >= 3, "expected the three demo cases in {}", dir.display());
    paths
}

fn load(path: &PathBuf) -> Case {
    let text = std::fs::read_to_string(path).unwrap();
    load_case(&text, &path.display().to_string()).unwrap().0
}

#[test]
fn demo_inductance_matrices_are_positive_definite() {
    for path in demo_paths() {
        let case = load(&path);
        let prepared = prepare(&case).unwrap();
        let net = &prepared.network;
        assert!(
            Cholesky::new(net.l_filaments.clone()).is_some(),
            "{}: filament matrix",
            path.display()
        );
        assert!(Cholesky::new(net.l_loops.clone()).is_some(), "{}: loop matrix", path.display());
        let asym = (&net.l_filaments - net.l_filaments.transpose()).abs().max();
        assert!(asym == 0.0, "{}: L not symmetric ({asym:e})", path.display());
    }
}

#[test]
fn demo_energy_accounts_close() {
    for path in demo_paths() {
        let case = load(&path);
        let r = run_fixed(&case).unwrap();
        let e = &r.summary.energy;
        assert!(
            e.relative_residual.abs() < 1e-4,
            "{}: residual {:e}",
            path.display(),
            e.relative_residual
        );
        assert!(
            e.coil > 0.0 && e.bank_and_feeder > 0.0,
            "{}: dissipation must be positive",
            path.display()
        );
        if case.workpiece.is_some() {
            assert!(e.workpiece > 0.0, "{}: workpiece heating", path.display());
        }
    }
}

#[test]
fn default_discretization_is_converged() {
    for path in demo_paths() {
        let case = load(&path);
        let coarse = run_fixed(&case).unwrap();
        let mut fine_case = case.clone();
        fine_case.discretization.mode = Resolution::SkinDepth { cell_over_skin_depth: 0.5 };
        let fine = run_prepared(&fine_case, prepare(&fine_case).unwrap()).unwrap();
        let (a, b) = (&coarse.summary, &fine.summary);
        let checks = [
            ("peak coil current", a.peak_coil_current, b.peak_coil_current),
            ("time of peak current", a.time_of_peak_current, b.time_of_peak_current),
            ("peak radial force", a.peak_radial_force, b.peak_radial_force),
        ];
        for (what, x, y) in checks {
            let rel = (x - y).abs() / y.abs();
            assert!(
                rel < 0.02,
                "{}: {what} changes by {:.2} % ({x:e} vs {y:e})",
                path.display(),
                rel * 100.0
            );
        }
        // The ring launch is driven axially: its axial force must converge as well.
        if b.peak_axial_force > b.peak_radial_force {
            let rel = (a.peak_axial_force - b.peak_axial_force).abs() / b.peak_axial_force;
            assert!(
                rel < 0.02,
                "{}: peak axial force changes by {:.2} %",
                path.display(),
                rel * 100.0
            );
        }
        assert!(
            fine.mesh.coil_filaments >= 3 * coarse.mesh.coil_filaments,
            "{}: fine split",
            path.display()
        );
    }
}
