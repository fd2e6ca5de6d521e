//! Limiting cases, symmetries, finite-difference and field/gradient consistency checks of
//! the filament kernel (independent of the reference tables).

mod common;

use common::{assert_close, rel_err};
use ringpulse_physics::filament::{loop_field, mutual_inductance, mutual_inductance_with_gradient};
use ringpulse_physics::MU0;
use std::f64::consts::PI;

/// A spread of geometries: equal, unequal, coplanar, far, close, negative offsets.
const POINTS: [(f64, f64, f64); 10] = [
    (0.05, 0.05, 0.01),
    (0.05, 0.04, 0.0),
    (0.03, 0.025, 0.005),
    (0.0225, 0.0255, -0.012),
    (1.0, 0.001, 0.5),
    (0.001, 1.0, 2.0),
    (0.05, 0.05, 1e-4),
    (0.05, 0.0499, 1e-4),
    (0.01, 0.02, 3.0),
    (0.2, 0.21, -0.05),
];

#[test]
fn dipole_limit_far_rings() {
    // Far field (NOTES-physics A6, mpmath): M ≈ μ0 π a² b² / (2 d³), relative error 7.5e-5 at
    // k = 0.01 for equal rings; the form with (a² + b² + d²)^(3/2) is within 1.2e-9 there.
    // The error terms scale as k² and k⁴ respectively.
    let (a, b) = (0.05, 0.05);
    let d = 10.0; // k = 2a/√(4a² + d²) ≈ 0.01
    let m = mutual_inductance(a, b, d);
    let dipole = MU0 * PI * a * a * b * b / (2.0 * d * d * d);
    let tight = MU0 * PI * a * a * b * b / (2.0 * (a * a + b * b + d * d).powf(1.5));
    let e_dipole = dipole / m - 1.0;
    let e_tight = tight / m - 1.0;
    assert!((e_dipole.abs() - 7.5e-5).abs() < 0.05e-5, "d³ dipole form error {e_dipole:e}");
    assert!(e_tight.abs() < 1.25e-9, "tight dipole form error {e_tight:e}");

    // Far case k ≈ 1e-4, unequal radii: the tight form's O(k⁴) error is ~1e-16, so it and the
    // kernel must agree to rounding.
    let (a, b, d) = (0.01, 0.02, 300.0);
    let m = mutual_inductance(a, b, d);
    let tight = MU0 * PI * a * a * b * b / (2.0 * (a * a + b * b + d * d).powf(1.5));
    assert_close(m, tight, 1e-14, 0.0, "M at k ≈ 1e-4 vs (a² + b² + d²)^(3/2) dipole form");
}

#[test]
fn close_ring_limit() {
    // Close equal rings (NOTES-physics A6; Maxwell/Rosa–Grover): M ≈ μ0 a (ln(8a/d) − 2),
    // relative error −8.7e-11 at d/a = 2e-5 (mpmath).
    let (a, d) = (0.05, 1e-6);
    let m = mutual_inductance(a, a, d);
    let close = MU0 * a * ((8.0 * a / d).ln() - 2.0);
    assert_close(m, close, 1e-9, 0.0, "M(0.05, 0.05, 1e-6) vs μ0 a (ln(8a/d) − 2)");
    // Second-order form M ≈ μ0 a [(1 + 3d²/16a²) ln(8a/d) − 2 − d²/16a²] (NOTES A6, from
    // memory of the Maxwell/Rosa–Grover series, verified there): error 2.9e-9 at d/a = 0.02.
    let d = 0.001;
    let m = mutual_inductance(a, a, d);
    let x = d * d / (16.0 * a * a);
    let second = MU0 * a * ((1.0 + 3.0 * x) * (8.0 * a / d).ln() - 2.0 - x);
    assert_close(m, second, 3.0e-9, 0.0, "M(0.05, 0.05, 1e-3) vs the second-order close form");
    // Its derivative, term by term: ∂M/∂d = μ0 a [(3d/8a²) ln(8a/d) − (1 + 3d²/16a²)/d − d/8a²];
    // the neglected terms are O((d/a)⁴ ln(a/d)) ≈ 1e-18 relative at d/a = 2e-5.
    let d = 1e-6;
    let g = mutual_inductance_with_gradient(a, a, d);
    let x = d * d / (16.0 * a * a);
    let slope = MU0
        * a
        * (3.0 * d / (8.0 * a * a) * (8.0 * a / d).ln() - (1.0 + 3.0 * x) / d - d / (8.0 * a * a));
    assert_close(g.dm_dz, slope, 1e-12, 0.0, "∂M/∂z at d/a = 2e-5 vs the second-order close form");
}

#[test]
fn symmetries_are_exact() {
    for &(a, b, z) in &POINTS {
        let g = mutual_inductance_with_gradient(a, b, z);
        let swapped = mutual_inductance_with_gradient(b, a, z);
        let mirrored = mutual_inductance_with_gradient(a, b, -z);
        let at = format!("({a}, {b}, {z})");
        // Reciprocity M12 = M21 (Neumann's formula is symmetric) and M even in z.
        assert_eq!(mutual_inductance(a, b, z), mutual_inductance(b, a, z), "M swap at {at}");
        assert_eq!(mutual_inductance(a, b, z), mutual_inductance(a, b, -z), "M mirror at {at}");
        assert_eq!(g.m, swapped.m, "M swap at {at}");
        assert_eq!(g.dm_da, swapped.dm_db, "∂M/∂a(a, b) = ∂M/∂b(b, a) at {at}");
        assert_eq!(g.dm_db, swapped.dm_da, "∂M/∂b(a, b) = ∂M/∂a(b, a) at {at}");
        // Moving ring 1 instead of ring 2 reverses the offset: ∂M/∂z is odd.
        assert_eq!(g.dm_dz, swapped.dm_dz, "∂M/∂z swap at {at}");
        assert_eq!(g.dm_dz, -mirrored.dm_dz, "∂M/∂z mirror at {at}");
        assert_eq!(g.dm_da, mirrored.dm_da, "∂M/∂a mirror at {at}");
    }
}

#[test]
fn co_directional_currents_attract() {
    // Sign convention (NOTES-physics A5): F_z on ring 2 = I1 I2 ∂M/∂z < 0 for z > 0, i.e.
    // ring 2 is pulled back towards ring 1.
    for &(a, b, z) in &POINTS {
        let g = mutual_inductance_with_gradient(a, b, z.abs().max(1e-3));
        assert!(g.dm_dz < 0.0, "∂M/∂z must be < 0 for z > 0 at ({a}, {b}, {z})");
        assert!(g.m > 0.0);
    }
    // Coplanar rings: the inner ring is pushed outward, the outer ring inward (both towards
    // each other).
    let g = mutual_inductance_with_gradient(0.05, 0.04, 0.0);
    assert!(g.dm_db > 0.0 && g.dm_da < 0.0);
}

/// Fourth-order central difference of f at x with step h: truncation error h⁴ f⁽⁵⁾/30.
fn diff4(f: impl Fn(f64) -> f64, x: f64, h: f64) -> f64 {
    (8.0 * (f(x + h) - f(x - h)) - (f(x + 2.0 * h) - f(x - 2.0 * h))) / (12.0 * h)
}

#[test]
fn gradient_matches_finite_differences() {
    for &(a, b, z) in &POINTS {
        let g = mutual_inductance_with_gradient(a, b, z);
        // The step is 1e-3 of the smallest length scale (the gap ρ or a radius): truncation
        // ~(1e-3)⁴ and rounding ~1e-16/1e-3 of M/ρ, so 1e-8 of the gradient scale is ample.
        let rho = ((a - b) * (a - b) + z * z).sqrt();
        let h = 1e-3 * rho.min(a).min(b);
        let scale = g.dm_da.abs() + g.dm_db.abs() + g.dm_dz.abs();
        let fd_a = diff4(|x| mutual_inductance(x, b, z), a, h);
        let fd_b = diff4(|x| mutual_inductance(a, x, z), b, h);
        let fd_z = diff4(|x| mutual_inductance(a, b, x), z, h);
        // Source: 4th-order central differences of the kernel's own M (self-consistency).
        assert_close(g.dm_da, fd_a, 0.0, 1e-8 * scale, format_args!("∂M/∂a at ({a}, {b}, {z})"));
        assert_close(g.dm_db, fd_b, 0.0, 1e-8 * scale, format_args!("∂M/∂b at ({a}, {b}, {z})"));
        assert_close(g.dm_dz, fd_z, 0.0, 1e-8 * scale, format_args!("∂M/∂z at ({a}, {b}, {z})"));
    }
}

#[test]
fn loop_field_is_consistent_with_gradient() {
    // NOTES-physics B1 (A_φ = I M/(2π r), Smythe 1950 §7.10): at the radius b of ring 2,
    // B_z = (I/(2π b)) ∂M/∂b and B_r = −(I/(2π b)) ∂M/∂z; hence the Lorentz force on ring 2
    // equals I1 I2 ∇M.
    let current = 1000.0;
    for &(a, b, z) in &POINTS {
        let g = mutual_inductance_with_gradient(a, b, z);
        let (br, bz) = loop_field(a, current, b, z);
        let c = current / (2.0 * PI * b);
        let scale = br.abs() + bz.abs();
        let at = format!("(a = {a}, r = {b}, z = {z})");
        assert_close(bz, c * g.dm_db, 1e-13, 1e-15 * scale, format_args!("B_z vs ∂M/∂b at {at}"));
        assert_close(br, -c * g.dm_dz, 1e-13, 1e-15 * scale, format_args!("B_r vs ∂M/∂z at {at}"));
    }
}

#[test]
fn loop_field_near_axis_is_smooth() {
    // On the axis B_z = μ0 I a²/(2 (a² + z²)^(3/2)) (Jackson §5.5); off the axis B_z changes
    // by O(r²) and B_r grows linearly, B_r ≈ −(r/2) ∂B_z/∂z (∇·B = 0).
    let (a, i, z) = (0.05, 1000.0, 0.02);
    let (br0, bz0) = loop_field(a, i, 0.0, z);
    assert_eq!(br0, 0.0);
    assert_close(bz0, MU0 * i * a * a / (2.0 * (a * a + z * z).powf(1.5)), 1e-15, 0.0, "axis B_z");
    let dbz_dz = -3.0 * MU0 * i * a * a * z / (2.0 * (a * a + z * z).powf(2.5));
    for r in [1e-12, 1e-9, 1e-6] {
        let (br, bz) = loop_field(a, i, r, z);
        assert_close(bz, bz0, 1e-10, 0.0, format_args!("B_z at r = {r:e}"));
        assert_close(br, -r / 2.0 * dbz_dz, 1e-6, 0.0, format_args!("B_r at r = {r:e}"));
    }
}

#[test]
fn extreme_but_valid_geometries_are_finite() {
    // Very unequal radii, very far and very close rings stay finite and positive.
    for &(a, b, z) in &[
        (1.0, 1e-6, 0.0),
        (1e-6, 1.0, 1e-9),
        (0.05, 0.05, 1e5),
        (0.05, 0.05 + 1e-12, 0.0),
        (10.0, 10.0, 1e-9),
    ] {
        let g = mutual_inductance_with_gradient(a, b, z);
        assert!(g.m.is_finite() && g.m > 0.0, "M at ({a}, {b}, {z}) = {}", g.m);
        assert!(g.dm_da.is_finite() && g.dm_db.is_finite() && g.dm_dz.is_finite());
        assert!(rel_err(mutual_inductance(a, b, z), g.m) < 1e-15);
    }
}
