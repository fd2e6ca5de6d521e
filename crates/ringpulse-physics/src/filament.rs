//! Mutual inductance of two coaxial circular filaments, its gradient (the force factors),
//! and the magnetic field of a circular current loop.
//!
//! Ring 1 has radius `a` and sits at z = 0; ring 2 has radius `b` and sits at axial offset
//! `z` = z2 − z1; all lengths are in metres.
//! These functions are evaluated O(n²) times per inductance matrix, so they are
//! allocation-free and share one evaluation of the elliptic integrals between M and its three
//! derivatives.
//!
//! # Formulation
//!
//! With the largest and smallest distances between the circles (Maxwell's notation)
//!
//! ```text
//! r1 = √((a + b)² + z²),   r2 = √((a − b)² + z²),   S = r1 + r2,
//! κ  = (r1 − r2)/S = 4ab/S²,   κ'² = 1 − κ² = 4 r1 r2 / S²,
//! ```
//!
//! Maxwell's second (Landen-transformed) form is M = μ0 S [K(κ) − E(κ)] (Maxwell,
//! *Treatise* (1873) art. 701; Rosa & Grover, Bull. Bur. Stand. 8 (1912)).
//! With K − E = (κ²/3) R_D(0, κ'², 1) (DLMF 19.25.1) it becomes Carlson's form
//!
//! ```text
//! M = μ0 S (κ²/3) R_D(0, κ'², 1) = (16/3) μ0 a² b² R_D(0, 4 r1 r2, S²)
//! ```
//!
//! (the second expression by the homogeneity R_D(λx, λy, λz) = λ^(−3/2) R_D(x, y, z)),
//!
//! which has no cancellation anywhere: κ and κ'² come from products of distances, and
//! R_D is a sum of positive terms.
//! It is accurate to ~10⁻¹⁵ from far rings (κ ≈ k²/4 → 0) to nearly touching ones.
//!
//! The derivatives follow from g(κ) = K(κ) − E(κ), whose derivative has no cancellation
//! either: dg/dκ = κ E(κ)/κ'².
//! Differentiating S and κ,
//!
//! ```text
//! ∂S/∂z = z S/(r1 r2),      ∂κ/∂z = −2κ z/(r1 r2),
//! ∂S/∂a = (a + b)/r1 + (a − b)/r2,   ∂κ/∂a = κ (b² − a² + z²)/(a r1 r2),
//! ```
//!
//! (the second uses S − 2a ∂S/∂a = (b² − a² + z²) S/(r1 r2), which removes the cancellation
//! between 1/a and 2 (∂S/∂a)/S that would otherwise cost ~log10(a/ρ) digits for nearly
//! touching rings) gives, with E = E(κ) = K − g:
//!
//! ```text
//! ∂M/∂a = μ0 [ (∂S/∂a) g + 4 a b² E (b² − a² + z²) / (S r1² r2²) ]
//! ∂M/∂b = μ0 [ (∂S/∂b) g + 4 a² b E (a² − b² + z²) / (S r1² r2²) ]
//! ∂M/∂z = μ0 z [ S g / (r1 r2) − 8 a² b² E / (S r1² r2²) ]
//! ```
//!
//! ∂S/∂a ≥ 0 always; when a < b it is evaluated as 4ab z² / (r1² r2² (u + v)) with
//! u = (a + b)/r1 and v = (b − a)/r2 (from u² − v² = 4ab z²/(r1² r2²)), which avoids the
//! difference of two numbers close to 1.
//! In ∂M/∂z the second term is always at least four times the first, so the difference
//! loses less than one digit; in ∂M/∂a the two terms cancel only where ∂M/∂a itself passes
//! through zero (an inherent loss of relative, not absolute, accuracy).
//!
//! The loop field follows from A_φ = I M(a, r, z)/(2π r) (Smythe (1950) §7.10):
//! B_z = (I/(2π r)) ∂M/∂r and B_r = −(I/(2π r)) ∂M/∂z, with the factor 1/r cancelled
//! analytically so that the field stays exact as r → 0.

use crate::elliptic::{carlson_rd, carlson_rf, complete_k_and_difference};
use crate::MU0;

/// Mutual inductance of two coaxial filaments and its partial derivatives.
///
/// With currents I1 in ring 1 and I2 in ring 2 (same sense positive), the force on ring 2 is
/// F_z = I1 I2 `dm_dz` (axial, newtons) and F_r = I1 I2 `dm_db` (total outward radial
/// force, newtons; the hoop tension is F_r/(2π)).
/// Co-directional currents attract: `dm_dz` < 0 for z > 0.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MutualGradient {
    /// Mutual inductance M, in henries.
    pub m: f64,
    /// ∂M/∂a, derivative with respect to the radius of ring 1, in henries per metre.
    pub dm_da: f64,
    /// ∂M/∂b, derivative with respect to the radius of ring 2, in henries per metre.
    pub dm_db: f64,
    /// ∂M/∂z, derivative with respect to the axial position z2 of ring 2 (= −∂M/∂z1), in
    /// henries per metre.
    pub dm_dz: f64,
}

impl MutualGradient {
    const NAN: Self = Self { m: f64::NAN, dm_da: f64::NAN, dm_db: f64::NAN, dm_dz: f64::NAN };
    const COINCIDENT: Self =
        Self { m: f64::INFINITY, dm_da: f64::NAN, dm_db: f64::NAN, dm_dz: f64::NAN };
}

/// The geometric quantities shared by M, its derivatives and the loop field.
struct Geometry {
    /// Largest distance between the circles, r1 = √((a + b)² + z²), in metres.
    r1: f64,
    /// Smallest distance between the circles, r2 = √((a − b)² + z²), in metres.
    r2: f64,
    /// S = r1 + r2, in metres.
    s: f64,
    /// Landen modulus κ = 4ab/S² (dimensionless, 0 < κ < 1).
    kappa: f64,
    /// Complementary parameter κ'² = 4 r1 r2 / S² (dimensionless), computed without 1 − κ².
    kc2: f64,
}

impl Geometry {
    /// `None` when the circles coincide (r2 = 0), where M diverges.
    #[inline]
    fn new(a: f64, b: f64, z: f64) -> Option<Self> {
        let sum = a + b;
        // a − b is exact when a and b are close (Sterbenz), which keeps r2 accurate for
        // nearly touching rings.
        let diff = a - b;
        let z2 = z * z;
        let r1 = (sum * sum + z2).sqrt();
        let r2 = (diff * diff + z2).sqrt();
        if r2 == 0.0 {
            return None;
        }
        let s = r1 + r2;
        // Written as 4 ((a/S)(b/S)) so that swapping a and b gives bit-identical results
        // (a symmetric inductance matrix) and nothing overflows.
        let kappa = 4.0 * ((a / s) * (b / s));
        let kc2 = 4.0 * ((r1 / s) * (r2 / s));
        Some(Self { r1, r2, s, kappa, kc2 })
    }
}

/// (∂S/∂a, ∂S/∂b) for S = r1 + r2, from the reciprocals 1/r1 and 1/r2; the same forms as
/// [`ds_dradius`] with one division (for the smaller radius, whose derivative needs the
/// cancellation-free form).
#[inline]
fn ds_both(a: f64, b: f64, z: f64, inv_r1: f64, inv_r2: f64) -> (f64, f64) {
    let u = (a + b) * inv_r1;
    let v = (a - b).abs() * inv_r2;
    // For the larger radius the two terms add; for the smaller one they nearly cancel, so it
    // is evaluated as u − v = (u² − v²)/(u + v) = 4ab z²/(r1² r2² (u + v)).
    let zr = z * inv_r1;
    let small = 4.0 * (a * inv_r2) * (b * inv_r2) * zr * zr / (u + v);
    if a >= b {
        (u + v, if a == b { u - v } else { small })
    } else {
        (small, u + v)
    }
}

/// ∂S/∂x for S = r1 + r2, where `own` is the radius x being varied and `other` the radius
/// of the other ring (dimensionless, ≥ 0).
///
/// ∂S/∂x = (x + y)/r1 + (x − y)/r2; for x < y the two terms have opposite signs and nearly
/// cancel, so that case uses u − v = (u² − v²)/(u + v) = 4xy z² / (r1² r2² (u + v)).
#[inline]
fn ds_dradius(own: f64, other: f64, z: f64, r1: f64, r2: f64) -> f64 {
    let u = (own + other) / r1;
    if own >= other {
        u + (own - other) / r2
    } else {
        let v = (other - own) / r2;
        let zr = z / r1;
        4.0 * (own / r2) * (other / r2) * zr * zr / (u + v)
    }
}

#[inline]
fn valid_pair(a: f64, b: f64, z: f64) -> bool {
    a > 0.0 && b > 0.0 && a.is_finite() && b.is_finite() && z.is_finite()
}

/// Mutual inductance of two coaxial circular filaments, in henries.
///
/// Carlson's form of Maxwell's formula (derivation in the module documentation):
///
/// ```text
/// M = μ0 S (κ²/3) R_D(0, κ'², 1),   S = r1 + r2,  κ = 4ab/S²,  κ'² = 4 r1 r2/S²
///   = μ0 √(ab) [ (2/k − k) K(k) − (2/k) E(k) ],  k² = 4ab/((a + b)² + z²)   (Maxwell 1873)
/// ```
///
/// - `a`: radius of ring 1, in metres; must be finite and > 0.
/// - `b`: radius of ring 2, in metres; must be finite and > 0.
/// - `z`: axial offset z2 − z1 of ring 2 from ring 1, in metres; must be finite; M is even
///   in `z`.
///
/// Returns `NaN` for out-of-range input (the caller validates) and +∞ for coincident
/// circles (a = b and z = 0).
/// Relative error ~10⁻¹⁵ for k from 10⁻⁴ to 1 − 10⁻¹⁰; for nearly touching rings the
/// result is as accurate as the inputs' rounding allows (condition number ~ 1/ln(8a/ρ)
/// times a/ρ, ρ = r2).
#[inline]
pub fn mutual_inductance(a: f64, b: f64, z: f64) -> f64 {
    if !valid_pair(a, b, z) {
        return f64::NAN;
    }
    let Some(g) = Geometry::new(a, b, z) else {
        return f64::INFINITY;
    };
    MU0 * g.s * (g.kappa * g.kappa / 3.0) * carlson_rd(0.0, g.kc2, 1.0)
}

/// Mutual inductance of two coaxial filaments and its gradient, from one arithmetic-geometric
/// mean that gives K and K − E together (equal to Carlson's R_F and (κ²/3) R_D).
///
/// ```text
/// M     = μ0 S g,   g = K(κ) − E(κ) = (κ²/3) R_D(0, κ'², 1),   E(κ) = R_F(0, κ'², 1) − g
/// ∂M/∂a = μ0 [ (∂S/∂a) g + 4 a b² E (b² − a² + z²) / (S r1² r2²) ]
/// ∂M/∂b = μ0 [ (∂S/∂b) g + 4 a² b E (a² − b² + z²) / (S r1² r2²) ]
/// ∂M/∂z = μ0 z [ S g / (r1 r2) − 8 a² b² E / (S r1² r2²) ]
/// ```
///
/// derived in the module documentation from dg/dκ = κ E(κ)/κ'² (no cancellation).
///
/// Inputs as for [`mutual_inductance`] (metres; `a`, `b` > 0, all finite).
/// Returns all fields `NaN` for out-of-range input, and `m` = +∞ with `NaN` derivatives
/// for coincident circles.
/// The relative error of each component is ~10⁻¹⁴ or better across the reference table,
/// except where a component passes through zero (then the error is small compared with
/// the other components).
#[inline]
pub fn mutual_inductance_with_gradient(a: f64, b: f64, z: f64) -> MutualGradient {
    if !valid_pair(a, b, z) {
        return MutualGradient::NAN;
    }
    let sum = a + b;
    // a − b is exact when a and b are close (Sterbenz), which keeps r2 accurate for nearly
    // touching rings.
    let diff = a - b;
    let zz = z * z;
    let r1 = (sum * sum + zz).sqrt();
    let r2 = (diff * diff + zz).sqrt();
    if r2 == 0.0 {
        return MutualGradient::COINCIDENT;
    }
    let s = r1 + r2;
    // Three reciprocals for the whole pair (a fourth division is in the cancellation-free ∂S
    // of the smaller radius, `ds_both`); the rest are products with them. Products of a and b
    // with the same reciprocal keep the matrix exactly symmetric under a ↔ b.
    let inv_s = 1.0 / s;
    let inv_r1 = 1.0 / r1;
    let inv_r2 = 1.0 / r2;
    let a_s = a * inv_s;
    let b_s = b * inv_s;
    let kappa = 4.0 * (a_s * b_s);
    let kc2 = 4.0 * ((r1 * inv_s) * (r2 * inv_s));
    // g = K(κ) − E(κ) without cancellation; E(κ) = K − g loses at most ~1.4 digits, and only
    // when the rings nearly touch (K ≈ 25 at κ'² = 1e-20).
    let (k, g) = complete_k_and_difference(kappa * kappa, kc2);
    let e = k - g;

    // Dimensionless building blocks, written as ratios of lengths so that nothing
    // overflows or underflows for any physically sensible scale.
    let ar = a * inv_r1;
    let br = b * inv_r1;
    // b² − a² + z² and a² − b² + z², with (b − a)(b + a) exact-ish for close radii.
    let qa = (b - a) * sum + zz;
    let qb = diff * sum + zz;
    let (ds_da, ds_db) = ds_both(a, b, z, inv_r1, inv_r2);

    let m = MU0 * s * g;
    // 4 a b² E q / (S r1² r2²) = 4 (a/S)(b/r1)² (q/r2²) E.
    let dm_da = MU0 * (ds_da * g + 4.0 * a_s * br * br * (qa * inv_r2 * inv_r2) * e);
    let dm_db = MU0 * (ds_db * g + 4.0 * b_s * ar * ar * (qb * inv_r2 * inv_r2) * e);
    // z [S g/(r1 r2) − 8 a² b² E/(S r1² r2²)] = (z/r2) [(S/r1) g − 8 (a/r1)(b/r1)(ab/(S r2)) E].
    let dm_dz =
        MU0 * (z * inv_r2) * (s * inv_r1 * g - 8.0 * (ar * br) * ((a * b) * inv_s * inv_r2) * e);
    MutualGradient { m, dm_da, dm_db, dm_dz }
}

/// Magnetic flux density (B_r, B_z), in tesla, of a circular loop of radius `a` in the
/// plane z = 0 carrying `current`, at the field point (r, z).
///
/// Smythe's loop field (Smythe 1950 §7.10; Simpson et al., NASA NTRS 20010038494 (2001))
///
/// ```text
/// B_z = μ0 I / (2π β) [ K(k) + (a² − r² − z²)/α² E(k) ],   α² = (a − r)² + z²
/// B_r = μ0 I z / (2π r β) [ −K(k) + (a² + r² + z²)/α² E(k) ],  β² = (a + r)² + z²
/// ```
///
/// evaluated through A_φ = I M(a, r, z)/(2π r), i.e. B_z = (I/(2π r)) ∂M/∂r and
/// B_r = −(I/(2π r)) ∂M/∂z, with the derivatives of [`mutual_inductance_with_gradient`]
/// and the factor 1/r cancelled analytically (with b = r, S = r1 + r2, E = E(κ),
/// D = R_D(0, κ'², 1)):
///
/// ```text
/// B_z = (μ0 I/2π) [ (∂S/∂r) 16 a² r D/(3 S⁴) + 4 a² E (a² − r² + z²)/(S r1² r2²) ]
/// B_r = (μ0 I/2π) 8 z a² r/(S r1 r2) [ E/(r1 r2) − 2 D/(3 S²) ]
/// ```
///
/// On the axis (r = 0) it returns exactly B_r = 0, B_z = μ0 I a²/(2 (a² + z²)^(3/2)).
///
/// - `a`: loop radius, in metres; finite and > 0.
/// - `current`: loop current, in amperes; finite, either sign (positive circulates
///   counter-clockwise seen from +z, giving B_z > 0 at the centre).
/// - `r`: radial coordinate of the field point, in metres; finite and ≥ 0.
/// - `z`: axial coordinate of the field point relative to the loop plane, in metres; finite.
///
/// Returns `(NaN, NaN)` for out-of-range input (the caller validates).
/// On the filament itself (r = a, z = 0) the field diverges: it returns the marker value
/// `(0.0, f64::INFINITY)`, which is not a field value and must not be used as one.
pub fn loop_field(a: f64, current: f64, r: f64, z: f64) -> (f64, f64) {
    if !(a > 0.0
        && a.is_finite()
        && r >= 0.0
        && r.is_finite()
        && z.is_finite()
        && current.is_finite())
    {
        return (f64::NAN, f64::NAN);
    }
    let c = MU0 * current / (2.0 * std::f64::consts::PI);
    if r == 0.0 {
        // On the axis (Jackson §5.5); the general form below would give the same value up
        // to rounding, but this one is exact and cheaper.
        let rho2 = a * a + z * z;
        return (0.0, MU0 * current * a * a / (2.0 * rho2 * rho2.sqrt()));
    }
    let Some(Geometry { r1, r2, s, kappa, kc2 }) = Geometry::new(a, r, z) else {
        return (0.0, f64::INFINITY);
    };
    let rd = carlson_rd(0.0, kc2, 1.0);
    let rf = carlson_rf(0.0, kc2, 1.0);
    let e = rf - kappa * kappa / 3.0 * rd;
    let as_ = a / s;
    let ar = a / r1;
    let inv_r2 = 1.0 / r2;
    let ds_dr = ds_dradius(r, a, z, r1, r2);
    let q = (a - r) * (a + r) + z * z;
    // 16 a² r D/(3 S⁴) = (16/3) (a/S)² (r/S) D / S;  4 a² E q/(S r1² r2²) = 4 (a/r1)² (q/r2²) E / S.
    let bz = c / s
        * (ds_dr * 16.0 / 3.0 * as_ * as_ * (r / s) * rd + 4.0 * ar * ar * q * inv_r2 * inv_r2 * e);
    // 8 z a² r/(S r1 r2) [E/(r1 r2) − 2D/(3 S²)] = (8/S)(z/r2)(a/r1) a r [E/(r1 r2) − 2D/(3S²)].
    let br =
        c * 8.0 / s * (z * inv_r2) * ar * (a * r) * (e / r1 * inv_r2 - 2.0 * rd / (3.0 * s * s));
    (br, bz)
}

#[cfg(test)]
// Check values are copied verbatim (17 digits) from their source so they can be traced.
#[allow(clippy::excessive_precision)]
mod tests {
    use super::*;

    fn rel(got: f64, want: f64) -> f64 {
        ((got - want) / want).abs()
    }

    #[test]
    fn notes_check_values() {
        // NOTES-physics L1/A8 (mpmath 50 digits, reproduced by
        // tests/reference/gen_filament_tables.py): a = b = 0.05 m, z = 0.01 m.
        let g = mutual_inductance_with_gradient(0.05, 0.05, 0.01);
        assert!(rel(g.m, 1.0769280039644622e-7) < 1e-14);
        assert!(rel(g.dm_dz, -6.015461428900549e-6) < 1e-14);
        assert!(rel(g.dm_da, 1.6784741468545171e-6) < 1e-14);
        // NOTES L2: coplanar a = 0.05 m, b = 0.04 m.
        let g = mutual_inductance_with_gradient(0.05, 0.04, 0.0);
        assert!(rel(g.m, 9.0346277725059772e-8) < 1e-14);
        assert!(rel(g.dm_da, -3.8958607279838934e-6) < 1e-14);
        assert!(rel(g.dm_db, 7.1284828531063611e-6) < 1e-14);
        assert_eq!(g.dm_dz, 0.0);
    }

    #[test]
    fn m_only_matches_gradient_m() {
        for (a, b, z) in [(0.05, 0.05, 0.01), (1.0, 0.001, 0.3), (0.01, 0.02, 300.0)] {
            let m = mutual_inductance(a, b, z);
            let g = mutual_inductance_with_gradient(a, b, z);
            assert!(rel(m, g.m) < 1e-15, "M at ({a}, {b}, {z})");
        }
    }

    #[test]
    fn invalid_and_singular_inputs_do_not_panic() {
        for (a, b, z) in [
            (0.0, 1.0, 0.0),
            (-1.0, 1.0, 0.0),
            (1.0, f64::NAN, 0.0),
            (1.0, 1.0, f64::INFINITY),
            (f64::INFINITY, 1.0, 0.0),
        ] {
            assert!(mutual_inductance(a, b, z).is_nan());
            let g = mutual_inductance_with_gradient(a, b, z);
            assert!(g.m.is_nan() && g.dm_da.is_nan() && g.dm_db.is_nan() && g.dm_dz.is_nan());
        }
        assert_eq!(mutual_inductance(0.05, 0.05, 0.0), f64::INFINITY);
        let g = mutual_inductance_with_gradient(0.05, 0.05, 0.0);
        assert_eq!(g.m, f64::INFINITY);
        assert!(g.dm_da.is_nan() && g.dm_db.is_nan() && g.dm_dz.is_nan());

        assert_eq!(loop_field(0.05, 1.0, 0.05, 0.0), (0.0, f64::INFINITY));
        for (a, i, r, z) in [
            (0.0, 1.0, 0.1, 0.0),
            (0.05, 1.0, -0.1, 0.0),
            (0.05, f64::NAN, 0.1, 0.0),
            (0.05, 1.0, 0.1, f64::NEG_INFINITY),
        ] {
            let (br, bz) = loop_field(a, i, r, z);
            assert!(br.is_nan() && bz.is_nan());
        }
    }

    #[test]
    fn loop_field_centre() {
        // B at the centre of a loop: μ0 I/(2a) (Jackson §5.5).
        let (br, bz) = loop_field(0.05, 1000.0, 0.0, 0.0);
        assert_eq!(br, 0.0);
        assert!(rel(bz, MU0 * 1000.0 / 0.1) < 1e-15);
    }
}
