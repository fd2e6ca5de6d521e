//! The physics kernel of ringpulse: elliptic integrals, the mutual inductance of coaxial
//! circular filaments and its gradient, the field of a current loop, ring self-inductances,
//! single-layer solenoid formulas and a few electromagnetic laws.
//!
//! Everything here works in SI units on plain `f64` values and does no I/O: the crate is the
//! layer every other ringpulse crate trusts, so each kernel function names the equation it
//! implements and is checked against independent 50-digit reference tables
//! (`tests/reference/` in the repository).
//!
//! Callers validate their inputs.
//! Out-of-range input (a non-positive radius, a non-finite length, ...) gives `NaN` rather
//! than a panic, and each function documents the values it accepts.

pub mod batch;
pub mod elliptic;
mod elliptic_fit;
pub mod em;
pub mod filament;
pub mod inductance;
pub mod solenoid;

/// Vacuum permeability μ0 = 4π·10⁻⁷ H/m, the exact value of the SI before its 2019 revision.
///
/// Since 2019 μ0 is a measured constant: CODATA 2018 gives 1.256 637 062 12·10⁻⁶ H/m
/// (5.4·10⁻¹⁰ relative above this value) and CODATA 2022 gives 1.256 637 061 27·10⁻⁶ H/m
/// (1.3·10⁻¹⁰ relative below).
/// Those differences are far below any engineering tolerance of this tool, and the exact
/// value keeps the reference tables reproducible; comparisons with libraries that use a
/// CODATA value must allow about 10⁻⁹ relative.
pub const MU0: f64 = 4.0e-7 * std::f64::consts::PI;
