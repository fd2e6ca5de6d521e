//! Magnetic pressure, skin depth, shell diffusion time and solenoid field against the
//! check values of NOTES-physics F (mpmath, printed digits as given there).

mod common;

use common::assert_close;
use ringpulse_physics::em::{magnetic_pressure, shell_time_constant, skin_depth, solenoid_field};

#[test]
fn magnetic_pressure_values() {
    // NOTES-physics F: p(1 T) = 0.3978873577 MPa, p(10 T) = 39.78873577 MPa,
    // p(50 T) = 994.7183943 MPa (10 printed digits).
    assert_close(magnetic_pressure(10.0), 39.78873577e6, 1e-9, 0.0, "p(10 T)");
    assert_close(magnetic_pressure(1.0), 0.3978873577e6, 1e-9, 0.0, "p(1 T)");
    assert_close(magnetic_pressure(-50.0), 994.7183943e6, 1e-9, 0.0, "p(−50 T)");
}

#[test]
fn skin_depth_values() {
    // NOTES-physics F (μ_r = 1): Cu 1.724e-8 Ω m: 0.6608 mm at 10 kHz, 2.090 mm at 1 kHz;
    // Al 6061-T6 3.99e-8 Ω m: 1.0053 mm at 10 kHz. Tolerance: half a unit of the last digit.
    assert_close(skin_depth(1.724e-8, 1e4), 0.6608e-3, 0.0, 0.00005e-3, "δ Cu 10 kHz");
    assert_close(skin_depth(1.724e-8, 1e3), 2.090e-3, 0.0, 0.0005e-3, "δ Cu 1 kHz");
    assert_close(skin_depth(3.99e-8, 1e4), 1.0053e-3, 0.0, 0.00005e-3, "δ Al 6061 10 kHz");
}

#[test]
fn shell_time_constant_values() {
    // NOTES-physics F: τ = μ0 σ a d / 2, a = 25 mm, d = 1 mm: Al 6061-T6 (3.99e-8 Ω m)
    // 393.68 µs, Cu (1.724e-8 Ω m) 911.13 µs.
    assert_close(
        shell_time_constant(1.0 / 3.99e-8, 0.025, 0.001),
        393.68e-6,
        0.0,
        0.005e-6,
        "τ Al",
    );
    assert_close(
        shell_time_constant(1.0 / 1.724e-8, 0.025, 0.001),
        911.13e-6,
        0.0,
        0.005e-6,
        "τ Cu",
    );
}

#[test]
fn solenoid_field_value() {
    // NOTES-physics F: N = 10, l = 50 mm, I = 50 kA → 12.56637061 T (and 62.83 MPa).
    let b = solenoid_field(10.0, 50e3, 0.05);
    assert_close(b, 12.56637061, 1e-9, 0.0, "B of a long solenoid");
    assert_close(magnetic_pressure(b), 62.83e6, 0.0, 0.005e6, "its magnetic pressure");
}
