//! Thin wrappers over the `ellip` crate: Carlson's symmetric integrals R_F and R_D and the
//! complete Legendre integrals K and E written in terms of them.
//!
//! They exist so that the rest of the crate has one place that fixes the conventions
//! (`ellip` takes the *parameter* m = k², not the modulus k) and turns `ellip`'s `Result`
//! into a plain `f64` that is `NaN` outside the domain, as every kernel function here does.
//! K and E are taken from the complementary parameter mc = 1 − m = k'², which callers
//! compute from the geometry: near m = 1 it is the small, accurately known quantity, and
//! 1 − m would lose it to cancellation.

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

/// K(κ) and the difference K(κ) − E(κ) from one arithmetic-geometric mean, with no
/// cancellation anywhere (dimensionless).
///
/// ```text
/// K = π / (2 M(1, κ')),   K − E = K · Σ_{n≥0} 2^(n−1) c_n²   (DLMF 19.8.1, 19.8.6)
/// a_0 = 1, b_0 = κ', c_0 = κ;  a_{n+1} = (a_n + b_n)/2,  b_{n+1} = √(a_n b_n),
/// c_{n+1} = (a_n − b_n)/2 = c_n² / (4 a_{n+1})
/// ```
///
/// The sum has only positive terms and c_{n+1} is formed from c_n² rather than from the
/// difference a_n − b_n, so both results are accurate to a few ulps for every κ in (0, 1);
/// the mean converges quadratically (at most about eight steps at κ'² = 10⁻³⁰).
/// It gives the same K and K − E as R_F(0, κ'², 1) and (κ²/3) R_D(0, κ'², 1) (DLMF 19.25.1)
/// at about half the cost of evaluating both, which matters in the filament kernel.
///
/// - `m`: κ², in [0, 1];
/// - `mc`: κ'² = 1 − κ², computed by the caller without the subtraction; must be > 0.
///
/// Returns `(NaN, NaN)` for out-of-range input and `(+∞, +∞)` for `mc` = 0.
#[inline]
pub fn complete_k_and_difference(m: f64, mc: f64) -> (f64, f64) {
    if !(m >= 0.0 && mc >= 0.0 && m.is_finite() && mc.is_finite()) {
        return (f64::NAN, f64::NAN);
    }
    if mc == 0.0 {
        return (f64::INFINITY, f64::INFINITY);
    }
    let mut a = 1.0;
    let mut b = mc.sqrt();
    let mut c2 = m;
    let mut weight = 0.5;
    let mut sum = 0.5 * m;
    // Quadratic convergence: 64 steps is far more than any double needs.
    for _ in 0..64 {
        let a_next = 0.5 * (a + b);
        b = (a * b).sqrt();
        a = a_next;
        let c = c2 / (4.0 * a);
        c2 = c * c;
        weight *= 2.0;
        let term = weight * c2;
        sum += term;
        if term <= 1e-17 * sum {
            break;
        }
    }
    let k = std::f64::consts::PI / (a + b);
    (k, k * sum)
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
    fn agm_matches_carlson() {
        for mc in [1e-30, 1e-20, 1e-12, 1e-6, 1e-3, 0.01, 0.3, 0.5, 0.77, 0.999, 1.0 - 1e-9] {
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
