//! Thin wrappers over the `ellip` crate: Carlson's symmetric integrals R_F and R_D and the
//! complete Legendre integrals K and E written in terms of them.
//!
//! They exist so that the rest of the crate has one place that fixes the conventions
//! (`ellip` takes the *parameter* m = k², not the modulus k) and turns `ellip`'s `Result`
//! into a plain `f64` that is `NaN` outside the domain, as every kernel function here does.
//! K and E are taken from the complementary parameter mc = 1 − m = k'², which callers
//! compute from the geometry: near m = 1 it is the small, accurately known quantity, and
//! 1 − m would lose it to cancellation.

use crate::elliptic_fit as fit;

/// Carlson's symmetric elliptic integral of the first kind (dimensionless for
/// dimensionless arguments; it scales as λ^(−1/2)).
///
/// R_F(x, y, z) = ½ ∫₀^∞ dt / √((t + x)(t + y)(t + z))   (DLMF 19.16.1).
///
/// Arguments must be ≥ 0 with at most one of them zero; otherwise the result is `NaN`.
/// An infinite argument gives 0.
/// Computed by Carlson's duplication algorithm (B. C. Carlson, Numer. Algorithms 10 (1995)
/// 13–26) as implemented in `ellip`.
#[inline]
pub fn carlson_rf(x: f64, y: f64, z: f64) -> f64 {
    ellip::elliprf(x, y, z).unwrap_or(f64::NAN)
}

/// Carlson's degenerate elliptic integral of the third kind (it scales as λ^(−3/2)).
///
/// R_D(x, y, z) = (3/2) ∫₀^∞ dt / ((t + z) √((t + x)(t + y)(t + z)))   (DLMF 19.16.5).
///
/// Requires x ≥ 0, y ≥ 0 (not both zero) and z > 0; otherwise the result is `NaN`.
/// An infinite argument gives 0.
#[inline]
pub fn carlson_rd(x: f64, y: f64, z: f64) -> f64 {
    ellip::elliprd(x, y, z).unwrap_or(f64::NAN)
}

/// Complete elliptic integral of the first kind K, from the complementary parameter
/// `mc` = 1 − m = k'² (dimensionless).
///
/// K = R_F(0, k'², 1)   (DLMF 19.25.1).
///
/// Valid for `mc` ≥ 0 (m ≤ 1); `mc` = 0 gives +∞ (the logarithmic singularity at k = 1) and
/// `mc` < 0 or `NaN` gives `NaN`.
/// The relative error stays near 10⁻¹⁵ down to `mc` ≈ 10⁻³⁰⁰, so K is accurate as m → 1.
#[inline]
pub fn complete_k(mc: f64) -> f64 {
    if mc == 0.0 {
        return f64::INFINITY;
    }
    carlson_rf(0.0, mc, 1.0)
}

/// Complete elliptic integral of the second kind E, from the complementary parameter
/// `mc` = 1 − m = k'² (dimensionless).
///
/// E = R_F(0, k'², 1) − (k²/3) R_D(0, k'², 1)   (DLMF 19.25.1).
///
/// Valid for `mc` ≥ 0 (m ≤ 1); `mc` = 0 gives E = 1 and `mc` < 0 or `NaN` gives `NaN`.
/// For `mc` → 0 the subtraction loses about log10(K) digits (K ≈ ln(4/k')), i.e. at most
/// one or two; callers who need K − E itself should use (k²/3) R_D(0, k'², 1), which has
/// no cancellation at all.
#[inline]
pub fn complete_e(mc: f64) -> f64 {
    if mc == 0.0 {
        return 1.0;
    }
    let m = 1.0 - mc;
    carlson_rf(0.0, mc, 1.0) - m / 3.0 * carlson_rd(0.0, mc, 1.0)
}

/// K(κ) and the difference K(κ) − E(κ), with no cancellation anywhere (dimensionless), from
/// piecewise polynomials and one logarithm.
///
/// With m = κ² and mc = κ'² = 1 − m:
///
/// ```text
/// m ≤ 1/2:   K = A(m),                       K − E = m B(m)
/// mc < 1/2:  K = P(mc) − ln(mc) K(mc)/π,     K − E = G(mc) − ln(mc) E(mc)/π
/// ```
///
/// where K(mc) and E(mc) on the second line come from the first, and A, B, P, G are smooth
/// on [0, 1/2]: the logarithmic terms of K and E near κ = 1 have the coefficients K(κ'²)/π
/// and (K(κ'²) − E(κ'²))/π (DLMF 19.12.1, 19.12.2), so P = K + ln(mc) K(mc)/π and
/// G = K − E + ln(mc) E(mc)/π have no logarithm left. Each is a polynomial of degree 7 on
/// 32 intervals of width 1/64, fitted with mpmath to 2e-18 relative
/// (`tools/gen_elliptic_fit.py`, which writes `elliptic_fit.rs` and checks the assembled K and
/// K − E at 4000 points to 6e-17); in double precision the results are within a few ulps.
/// This replaces the arithmetic-geometric mean (DLMF 19.8.1, 19.8.6), whose five or six
/// square roots and divisions for nearby rings made it the most expensive part of every
/// inductance matrix.
///
/// - `m`: κ², in [0, 1];
/// - `mc`: κ'² = 1 − κ², computed by the caller without the subtraction; must be > 0.
///
/// Returns `(NaN, NaN)` for out-of-range input and `(+∞, +∞)` for `mc` = 0.
#[inline]
pub fn complete_k_and_difference(m: f64, mc: f64) -> (f64, f64) {
    if !(m >= 0.0 && mc >= 0.0 && m <= 1.0 && mc <= 1.0) {
        return (f64::NAN, f64::NAN);
    }
    if mc == 0.0 {
        return (f64::INFINITY, f64::INFINITY);
    }
    if mc >= 0.5 {
        return (piece(&fit::A, m), m * piece(&fit::B, m));
    }
    let kc = piece(&fit::A, mc);
    let ec = kc - mc * piece(&fit::B, mc);
    let lg = mc.ln() * std::f64::consts::FRAC_1_PI;
    (piece(&fit::P, mc) - lg * kc, piece(&fit::G, mc) - lg * ec)
}

/// One of the fitted functions at x in [0, 1/2]: the polynomial of its interval (width 1/64)
/// in u = x − centre, by Horner's rule.
#[inline]
fn piece<const N: usize>(table: &[[f64; N]; fit::INTERVALS], x: f64) -> f64 {
    // x ≤ 1/2 here; the clamp keeps x = 1/2 in the last interval.
    const PER_UNIT: f64 = (2 * fit::INTERVALS) as f64;
    let i = ((x * PER_UNIT) as usize).min(fit::INTERVALS - 1);
    let u = x - (i as f64 + 0.5) / PER_UNIT;
    let c = &table[i];
    let mut acc = c[N - 1];
    for k in (0..N - 1).rev() {
        // Plain multiply and add: `mul_add` is a library call unless the build targets FMA.
        acc = acc * u + c[k];
    }
    acc
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    fn rel(got: f64, want: f64) -> f64 {
        ((got - want) / want).abs()
    }

    #[test]
    fn special_values() {
        // K(0) = E(0) = π/2 and E(1) = 1 (DLMF §19.6).
        assert!(rel(complete_k(1.0), PI / 2.0) < 1e-15);
        assert!(rel(complete_e(1.0), PI / 2.0) < 1e-15);
        assert_eq!(complete_e(0.0), 1.0);
        assert_eq!(complete_k(0.0), f64::INFINITY);
        // R_D(0, y, y) = 3π/(4 y^(3/2)) and R_F(0, y, y) = π/(2 √y) (DLMF §19.20).
        assert!(rel(carlson_rd(0.0, 4.0, 4.0), 3.0 * PI / 32.0) < 1e-15);
        assert!(rel(carlson_rf(0.0, 4.0, 4.0), PI / 4.0) < 1e-15);
        // R_F(x, x, x) = x^(−1/2), R_D(x, x, x) = x^(−3/2) (DLMF §19.20).
        assert!(rel(carlson_rf(9.0, 9.0, 9.0), 1.0 / 3.0) < 1e-15);
        assert!(rel(carlson_rd(9.0, 9.0, 9.0), 1.0 / 27.0) < 1e-15);
    }

    #[test]
    fn legendre_relation() {
        // Legendre's relation E K' + E' K − K K' = π/2 (DLMF 19.7.1), where the primed
        // integrals take the complementary parameter: swap m and mc.
        for mc in [1e-12, 1e-6, 0.01, 0.3, 0.5, 0.77, 0.999] {
            let m = 1.0 - mc;
            let (k, e) = (complete_k(mc), complete_e(mc));
            let (kp, ep) = (complete_k(m), complete_e(m));
            let lhs = e * kp + ep * k - k * kp;
            // The three products are up to ~K·K' ≈ 20 here, so allow 1e-14 absolute.
            assert!((lhs - PI / 2.0).abs() < 1e-14, "Legendre relation at mc = {mc:e}: {lhs}");
        }
    }

    #[test]
    fn logarithmic_limit() {
        // DLMF §19.12: K = ln(4/k') + (k'²/4)(ln(4/k') − 1) + O(k'⁴ ln k'),
        // E = 1 + (k'²/2)(ln(4/k') − 1/2) + O(k'⁴ ln k'); at mc = 1e-12 the rest is ~1e-23.
        let mc: f64 = 1e-12;
        let l = (4.0 / mc.sqrt()).ln();
        assert!(rel(complete_k(mc), l + mc / 4.0 * (l - 1.0)) < 1e-15);
        assert!(rel(complete_e(mc), 1.0 + mc / 2.0 * (l - 0.5)) < 1e-15);
    }

    #[test]
    fn fitted_k_and_difference_match_carlson() {
        for mc in [
            1e-30,
            1e-20,
            1e-12,
            1e-6,
            1e-3,
            0.01,
            0.0625,
            0.3,
            0.4999,
            0.5,
            0.5001,
            0.77,
            0.999,
            1.0 - 1e-9,
        ] {
            let m = 1.0 - mc;
            let (k, d) = complete_k_and_difference(m, mc);
            let k_ref = carlson_rf(0.0, mc, 1.0);
            let d_ref = m / 3.0 * carlson_rd(0.0, mc, 1.0);
            assert!(rel(k, k_ref) < 4e-16, "K at mc = {mc:e}: {k} vs {k_ref}");
            assert!(rel(d, d_ref) < 4e-15, "K - E at mc = {mc:e}: {d} vs {d_ref}");
        }
        // Small modulus: K − E = (π/4) m (1 + 3m/8 + ...) (the series DLMF 19.5.1 and 19.5.2).
        let m = 1e-12;
        let (_, d) = complete_k_and_difference(m, 1.0 - m);
        assert!(rel(d, std::f64::consts::FRAC_PI_4 * m * (1.0 + 3.0 * m / 8.0)) < 1e-15);
        assert_eq!(complete_k_and_difference(1.0, 0.0), (f64::INFINITY, f64::INFINITY));
        assert!(complete_k_and_difference(-1.0, 0.5).0.is_nan());
        assert!(complete_k_and_difference(0.5, f64::NAN).1.is_nan());
    }

    #[test]
    fn out_of_domain_is_nan() {
        assert!(complete_k(-0.5).is_nan());
        assert!(complete_e(-0.5).is_nan());
        assert!(complete_k(f64::NAN).is_nan());
        assert!(carlson_rd(0.0, 0.0, 1.0).is_nan());
        assert!(carlson_rd(1.0, 1.0, 0.0).is_nan());
        assert!(carlson_rf(-1.0, 1.0, 1.0).is_nan());
        assert!(carlson_rf(0.0, 0.0, 1.0).is_nan());
    }
}
