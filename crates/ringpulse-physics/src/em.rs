//! Basic electromagnetic laws used for estimates and checks: magnetic pressure, skin depth,
//! the magnetic diffusion time of a thin cylindrical shell and the field of a long solenoid.
//!
//! All assume non-magnetic conductors (μ_r = 1); carbon steel and other ferromagnetic
//! materials are outside this model.

use crate::MU0;
use std::f64::consts::PI;

/// Magnetic pressure of a flux density `b`, in pascals.
///
/// p = B² / (2 μ0)   (Jackson, *Classical Electrodynamics*; NOTES-physics F).
/// The net pressure on a wall with inner field B_in is
/// `magnetic_pressure(b_out) − magnetic_pressure(b_in)`.
///
/// - `b`: flux density, in tesla; any finite value (the sign does not matter).
///
/// Returns `NaN` for non-finite input.
pub fn magnetic_pressure(b: f64) -> f64 {
    if !b.is_finite() {
        return f64::NAN;
    }
    b * b / (2.0 * MU0)
}

/// Skin depth of a non-magnetic conductor, in metres.
///
/// δ = √(ρ_e / (π f μ0)) = √(2 ρ_e / (ω μ0))   (Jackson §8.1; μ_r = 1).
///
/// - `resistivity`: electrical resistivity ρ_e, in ohm metres; finite and > 0.
/// - `frequency`: frequency f, in hertz (not rad/s); finite and > 0.
///
/// Returns `NaN` for out-of-range input (the caller validates).
pub fn skin_depth(resistivity: f64, frequency: f64) -> f64 {
    if !(resistivity > 0.0 && frequency > 0.0 && resistivity.is_finite() && frequency.is_finite()) {
        return f64::NAN;
    }
    (resistivity / (PI * frequency * MU0)).sqrt()
}

/// Magnetic diffusion (L/R) time constant of a thin cylindrical shell in an axial field,
/// in seconds.
///
/// τ = μ0 σ a d / 2, from the shell per unit length as a one-turn solenoid with
/// L' = μ0 π a² and R' = 2π a/(σ d) (Knoepfel, *Pulsed High Magnetic Fields* (1970);
/// NOTES-physics F).
/// The field inside follows τ dB_in/dt = B_out − B_in.
/// Valid for a thin wall (d ≪ a) that is also thin compared with the skin depth.
///
/// - `conductivity`: electrical conductivity σ, in siemens per metre; finite and > 0.
/// - `radius`: shell radius a, in metres; finite and > 0.
/// - `wall`: wall thickness d, in metres; finite and > 0.
///
/// Returns `NaN` for out-of-range input (the caller validates).
pub fn shell_time_constant(conductivity: f64, radius: f64, wall: f64) -> f64 {
    if ![conductivity, radius, wall].iter().all(|&v| v > 0.0 && v.is_finite()) {
        return f64::NAN;
    }
    MU0 * conductivity * radius * wall / 2.0
}

/// Flux density inside a long solenoid, in tesla.
///
/// B = μ0 N I / l   (Ampère's law; NOTES-physics F). End effects reduce the field of a
/// finite coil; use the ring model for those.
///
/// - `turns`: number of turns N; finite and > 0.
/// - `current`: coil current I, in amperes; finite, either sign.
/// - `length`: coil length l, in metres; finite and > 0.
///
/// Returns `NaN` for out-of-range input (the caller validates).
pub fn solenoid_field(turns: f64, current: f64, length: f64) -> f64 {
    if !(turns > 0.0
        && length > 0.0
        && turns.is_finite()
        && length.is_finite()
        && current.is_finite())
    {
        return f64::NAN;
    }
    MU0 * turns * current / length
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn invalid_input_is_nan() {
        assert!(magnetic_pressure(f64::INFINITY).is_nan());
        assert!(skin_depth(1.7e-8, 0.0).is_nan());
        assert!(skin_depth(-1.7e-8, 1e4).is_nan());
        assert!(shell_time_constant(2.5e7, 0.025, 0.0).is_nan());
        assert!(solenoid_field(10.0, 1.0, -0.05).is_nan());
    }

    #[test]
    fn pressure_is_even_in_b() {
        assert_eq!(magnetic_pressure(-3.0), magnetic_pressure(3.0));
    }
}
