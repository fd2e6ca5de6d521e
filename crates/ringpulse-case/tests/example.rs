//! The built-in example case validates cleanly and means what its description says.

#![allow(clippy::panic)]

mod common;

use common::close;
use ringpulse_case::example::example_case_json;
use ringpulse_case::{load_case, Resolution};

#[test]
fn example_validates_without_warnings() {
    let (case, warnings) = match load_case(&example_case_json(), "example.json") {
        Ok(r) => r,
        Err(e) => panic!("example must validate:\n{e}"),
    };
    assert!(warnings.is_empty(), "{warnings:?}");

    assert!(case.description.contains("6061-T6"));
    assert!(close(case.bank.capacitance, 200e-6));
    assert!(close(case.bank.voltage, 8e3));
    assert!(close(case.bank.inductance, 50e-9));
    assert!(close(case.bank.resistance, 2e-3));
    assert!(close(case.bank.feeder_inductance, 30e-9));
    assert!(close(case.bank.feeder_resistance, 1e-3));
    let crowbar = case.bank.crowbar.as_ref().map(|c| (c.resistance, c.inductance));
    assert_eq!(crowbar, Some((1e-3, 0.0)));

    assert_eq!(case.coil.turns, 6);
    assert!(close(case.coil.mean_radius, 21e-3));
    assert!(close(case.coil.radial_thickness, 3e-3));
    assert!(close(case.coil.axial_width, 4e-3));
    assert!(close(case.coil.pitch, 5e-3));
    assert_eq!(case.coil.z_center, 0.0);
    assert_eq!(case.coil.material.name, "copper");
    assert_eq!(case.coil.split, None);

    let Some(tube) = &case.workpiece else { panic!("example has a workpiece") };
    // 50 mm inner diameter, 1.5 mm wall, 60 mm long.
    assert!(close(2.0 * tube.inner_radius, 50e-3));
    assert!(close(tube.wall, 1.5e-3));
    assert!(close(tube.length, 60e-3));
    assert_eq!(tube.material.name, "aluminium_6061_t6");
    // The coil is inside the tube with a gap.
    assert!(case.coil.mean_radius + case.coil.radial_thickness / 2.0 < tube.inner_radius);

    assert_eq!(case.discretization.mode, Resolution::SkinDepth { cell_over_skin_depth: 1.0 });
    assert_eq!(case.discretization.max_filaments, 4000);
    assert_eq!(case.discretization.max_aspect, 1.5);
    assert_eq!(case.solver.rel_tol, Some(1e-6));
    assert_eq!(case.solver.abs_tol, Some(1e-6));
    assert!(case.solver.end_time.is_some_and(|t| close(t, 300e-6)));
    assert!(case.solver.output_step.is_some_and(|t| close(t, 0.1e-6)));
    assert!(close(case.initial_temperature, 293.15));
}

#[test]
fn example_is_pretty_printed_json() {
    let text = example_case_json();
    assert!(text.starts_with("{\n  \"description\""));
    assert!(text.lines().count() > 50);
}
