//! Single-layer solenoid formulas: Nagaoka's coefficient (exact, and the Lundin and Wheeler
//! approximations), the current-sheet inductance and Rosa's round-wire corrections.
//!
//! They serve as independent checks of the filament-ring network (a ring sum must
//! reproduce the Rosa-corrected Nagaoka value within ~0.1 %) and as quick estimates of a
//! coil's inductance.
//! None of them includes the helix pitch (the axial current component), leads or the
//! proximity effect.

use crate::elliptic::{carlson_rd, carlson_rf};
use crate::MU0;
use std::f64::consts::PI;

/// Nagaoka's coefficient K_N of a current sheet (dimensionless, 0 < K_N < 1).
///
/// Exact elliptic expression (Lorenz 1879; H. Nagaoka, J. Coll. Sci. Imp. Univ. Tokyo 27,
/// art. 6 (1909); NOTES-physics D1), with x = D/l, k² = x²/(1 + x²), k'² = 1/(1 + x²):
///
/// ```text
/// K_N = 4/(3π k') [ (k'²/k²)(K(k) − E(k)) + E(k) − k ]
///     = 4/(3π k') [ (k'²/3) R_D(0, k'², 1) + E(k) − k ]      (K − E = (k²/3) R_D)
/// ```
///
/// For short coils (x ≥ 4, k'² ≤ 1/17) the difference E − k would cancel (it costs ~x²·10⁻¹⁷
/// relative, 10⁻¹² at x = 100), so there it is written as a sum of positive terms,
/// E − k = (E − 1) + k'²/(1 + k), with the logarithmic series (DLMF 19.12.2, Λ = ln(4/k'))
///
/// ```text
/// E − 1 = Σ_{m≥0} a_m k'^(2m+2) (Λ − δ_m),   a_0 = 1/2,  a_{m+1} = a_m (m + 1/2)(m + 3/2)/((m + 1)(m + 2)),
/// δ_m = c_m + 1/((2m + 1)(2m + 2)),  c_0 = 0,  c_{m+1} = c_m + 1/(m + 1/2) − 1/(m + 1)
/// ```
///
/// (c_m = ψ(m + 1/2) − ψ(m + 1) + 2 ln 2 < 2 ln 2, so δ_m < 2 ln 2 + 1/2 < 2.8 ≤ Λ and every
/// term is positive).
/// The relative error is then ~10⁻¹⁵ for every x.
///
/// - `diameter_over_length`: coil diameter over coil length, x = 2a/l; finite and > 0.
///
/// Returns `NaN` for out-of-range input (the caller validates).
pub fn nagaoka_coefficient(diameter_over_length: f64) -> f64 {
    let x = diameter_over_length;
    if !(x > 0.0 && x.is_finite()) {
        return f64::NAN;
    }
    let h = x.hypot(1.0);
    let k = x / h;
    let kc = 1.0 / h;
    let (m, mc) = (k * k, kc * kc);
    let rd = carlson_rd(0.0, mc, 1.0);
    let e_minus_k = if x >= 4.0 {
        // Λ = ln(4/k') = ln(4h).
        e_minus_one_log_series(mc, (4.0 * h).ln()) + mc / (1.0 + k)
    } else {
        carlson_rf(0.0, mc, 1.0) - m / 3.0 * rd - k
    };
    4.0 / (3.0 * PI * kc) * (mc / 3.0 * rd + e_minus_k)
}

/// E(k) − 1 for small k'² = `mc` (≤ 1/17 here) by DLMF 19.12.2, `lambda` = ln(4/k').
/// Terms fall by about k'² each; 40 terms reach 10⁻⁴⁹ at k'² = 1/17.
fn e_minus_one_log_series(mc: f64, lambda: f64) -> f64 {
    let mut a = 0.5;
    let mut c = 0.0;
    let mut power = mc;
    let mut sum = 0.0;
    for m in 0..40 {
        let mf = m as f64;
        let delta = c + 1.0 / ((2.0 * mf + 1.0) * (2.0 * mf + 2.0));
        let term = a * power * (lambda - delta);
        sum += term;
        if term < 1e-18 * sum {
            break;
        }
        a *= (mf + 0.5) * (mf + 1.5) / ((mf + 1.0) * (mf + 2.0));
        c += 1.0 / (mf + 0.5) - 1.0 / (mf + 1.0);
        power *= mc;
    }
    sum
}

/// Lundin's handbook approximation of Nagaoka's coefficient (dimensionless).
///
/// R. Lundin, "A handbook formula for the inductance of a single-layer circular coil",
/// Proc. IEEE 73(9) (1985) 1428–1429, with x = D/l:
///
/// ```text
/// f1(y) = (1 + 0.383901 y + 0.017108 y²) / (1 + 0.258952 y)
/// f2(y) = 0.093842 y + 0.002029 y² − 0.000801 y³
/// x ≤ 1:  K_N ≈ f1(x²) − 4x/(3π)
/// x ≥ 1:  K_N ≈ (2/(π x)) { [ln(4x) − 1/2] f1(1/x²) + f2(1/x²) }
/// ```
///
/// Stated accuracy ±3 ppm; the tests check it against the exact coefficient.
///
/// - `diameter_over_length`: x = 2a/l; finite and > 0.
///
/// Returns `NaN` for out-of-range input (the caller validates).
pub fn lundin_coefficient(diameter_over_length: f64) -> f64 {
    let x = diameter_over_length;
    if !(x > 0.0 && x.is_finite()) {
        return f64::NAN;
    }
    let f1 = |y: f64| (1.0 + 0.383901 * y + 0.017108 * y * y) / (1.0 + 0.258952 * y);
    let f2 = |y: f64| y * (0.093842 + y * (0.002029 - 0.000801 * y));
    if x <= 1.0 {
        f1(x * x) - 4.0 * x / (3.0 * PI)
    } else {
        let y = 1.0 / (x * x);
        2.0 / (PI * x) * (((4.0 * x).ln() - 0.5) * f1(y) + f2(y))
    }
}

/// Wheeler's approximation of Nagaoka's coefficient (dimensionless).
///
/// K_N ≈ 1 / (1 + 0.9 a/l), the SI form of H. A. Wheeler, "Simple inductance formulas for
/// radio coils", Proc. IRE 16(10) (1928) 1398–1400, L = a² N² / (9a + 10l) µH with a and l in inches.
/// Stated to about 1 % for l > 0.8 a (within 0.3 % there against the exact value); −2.3 %
/// at D/l = 4 and −11 % at D/l = 10.
///
/// - `radius_over_length`: a/l; finite and > 0.
///
/// Returns `NaN` for out-of-range input (the caller validates).
pub fn wheeler_coefficient(radius_over_length: f64) -> f64 {
    let r = radius_over_length;
    if !(r > 0.0 && r.is_finite()) {
        return f64::NAN;
    }
    1.0 / (1.0 + 0.9 * r)
}

/// Inductance of a single-layer current sheet, in henries.
///
/// L = μ0 π a² N² K_N / l, K_N = [`nagaoka_coefficient`](2a/l) (NOTES-physics D1).
///
/// - `radius`: sheet (coil) radius a, in metres; finite and > 0.
/// - `length`: coil length l, in metres; finite and > 0.
/// - `turns`: number of turns N (dimensionless); finite and > 0.
///
/// Returns `NaN` for out-of-range input (the caller validates).
pub fn current_sheet_inductance(radius: f64, length: f64, turns: f64) -> f64 {
    if ![radius, length, turns].iter().all(|&v| v > 0.0 && v.is_finite()) {
        return f64::NAN;
    }
    MU0 * PI * radius * radius * turns * turns * nagaoka_coefficient(2.0 * radius / length) / length
}

/// Rosa's correction A for the self-inductance of round wire against a current strip
/// (dimensionless).
///
/// A = 5/4 − ln(2p/d)  (uniform current in the wire; E. B. Rosa, Bull. Bur. Stand. 2
/// (1906); Grover 1946 pp. 148–150; NOTES-physics D4).
///
/// - `pitch`: turn pitch p, in metres; finite and > 0 (p ≥ d for a real coil).
/// - `wire_diameter`: bare wire diameter d, in metres; finite and > 0.
///
/// Returns `NaN` for out-of-range input (the caller validates).
pub fn rosa_a(pitch: f64, wire_diameter: f64) -> f64 {
    if !(pitch > 0.0 && wire_diameter > 0.0 && pitch.is_finite() && wire_diameter.is_finite()) {
        return f64::NAN;
    }
    1.25 - (2.0 * pitch / wire_diameter).ln()
}

/// Rosa's correction B for the mutual inductances of round turns against strips
/// (dimensionless; independent of the pitch).
///
/// B(N) = (2/N) Σ_{j=1}^{N−1} (N − j) ln(j p / g_j)   (Rosa 1906; Grover 1946; NOTES D4),
/// g_j = GMD of two collinear strips of width p whose centres are j p apart
/// (ln g = [F(s + p) + F(s − p) − 2F(s)]/p², F(u) = u² ln|u|/2 − 3u²/4, Maxwell art. 692).
///
/// With p = 1 each term is h(j) = ln j − ln g_j, which this function evaluates without the
/// cancellation of the second difference: h(1) = 3/2 − 2 ln 2 exactly, and for j ≥ 2
/// h(j) = Σ_{n≥2} 2 j^(2−2n) / ((2n)(2n − 1)(2n − 2)) = 1/(12 j²) + 1/(60 j⁴) + …
/// (the Taylor expansion of the second difference of F).
///
/// - `turns`: number of turns N ≥ 1; N = 1 gives 0, N = 0 gives `NaN`.
pub fn rosa_b(turns: usize) -> f64 {
    if turns == 0 {
        return f64::NAN;
    }
    let n = turns as f64;
    let mut total = 0.0;
    for j in 1..turns {
        total += (n - j as f64) * strip_log_ratio(j);
    }
    2.0 * total / n
}

/// h(j) = ln(j p / g_j) for two strips of width p with centres j p apart (dimensionless).
fn strip_log_ratio(j: usize) -> f64 {
    if j == 1 {
        return 1.5 - 2.0 * std::f64::consts::LN_2;
    }
    let x2 = 1.0 / (j as f64 * j as f64);
    // Terms fall by at least x² ≤ 1/4 each; 40 terms reach 1e-24 relative at j = 2.
    let mut power = x2; // x^(2n−2) for n = 2
    let mut sum = 0.0;
    for n in 2..42 {
        let two_n = 2.0 * n as f64;
        let term = 2.0 * power / (two_n * (two_n - 1.0) * (two_n - 2.0));
        sum += term;
        if term < 1e-18 * sum {
            break;
        }
        power *= x2;
    }
    sum
}

/// Inductance of a single-layer coil of round wire, in henries: the current-sheet value
/// with Rosa's corrections.
///
/// L = μ0 π a² N² K_N / l − μ0 a N (A + B),  l = N p   (Rosa 1906–1908; Grover 1946;
/// NOTES-physics D4), with [`rosa_a`] and [`rosa_b`].
///
/// - `radius`: coil radius a to the wire centres, in metres; finite and > 0.
/// - `pitch`: turn pitch p, in metres; finite and > 0.
/// - `wire_diameter`: bare wire diameter d, in metres; finite and > 0.
/// - `turns`: number of turns N ≥ 1.
///
/// Returns `NaN` for out-of-range input (the caller validates).
pub fn rosa_corrected_inductance(radius: f64, pitch: f64, wire_diameter: f64, turns: usize) -> f64 {
    if turns == 0 || !(radius > 0.0 && radius.is_finite()) {
        return f64::NAN;
    }
    let n = turns as f64;
    current_sheet_inductance(radius, n * pitch, n)
        - MU0 * radius * n * (rosa_a(pitch, wire_diameter) + rosa_b(turns))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rosa_b_small_cases() {
        // B(1) = 0: a single turn has no mutual correction; B(2) = h(1) = 3/2 − 2 ln 2
        // (second difference of F at s = p, NOTES-physics C2/D4).
        assert_eq!(rosa_b(1), 0.0);
        assert!((rosa_b(2) - (1.5 - 2.0 * std::f64::consts::LN_2)).abs() < 1e-16);
        assert!(rosa_b(0).is_nan());
    }

    #[test]
    fn invalid_input_is_nan() {
        assert!(nagaoka_coefficient(0.0).is_nan());
        assert!(lundin_coefficient(-1.0).is_nan());
        assert!(wheeler_coefficient(f64::NAN).is_nan());
        assert!(current_sheet_inductance(0.01, 0.0, 10.0).is_nan());
        assert!(rosa_a(0.0, 1e-3).is_nan());
        assert!(rosa_corrected_inductance(0.01, 1e-3, 1e-3, 0).is_nan());
        assert!(rosa_corrected_inductance(0.01, -1e-3, 1e-3, 3).is_nan());
    }
}
