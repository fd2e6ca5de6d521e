//! Self-inductance and resistance of single rings (tori of round or rectangular section),
//! the self terms of the filament-ring network.
//!
//! All formulas assume a uniform current density over the section (low frequency, or a
//! section small compared with the skin depth) and a section small compared with the ring
//! radius: the close-ring formula μ0 a (ln(8a/g) − 2) with g the geometric mean distance
//! (GMD) of the section from itself (Maxwell, *Treatise* (1873) art. 691–692; Rosa & Grover,
//! Bull. Bur. Stand. 8 (1912); Grover, *Inductance Calculations* (1946)).
//! Compared with an exact 4-D quadrature its relative error is about −1e-4 for a 2 mm
//! square section at 50 mm radius and grows roughly as (section/radius)²: keep each ring's
//! largest section dimension ≲ 0.1–0.2 × its radius.

use crate::MU0;

/// Geometric mean distance of a w × h rectangle from itself, in metres.
///
/// Maxwell's closed form (Treatise art. 691; Rosa & Grover 1912):
///
/// ```text
/// ln g = ln √(w² + h²) − (w²/12h²) ln(1 + h²/w²) − (h²/12w²) ln(1 + w²/h²)
///        + (2w/3h) atan(h/w) + (2h/3w) atan(w/h) − 25/12
/// ```
///
/// Special values: a square of side s gives g = 0.447049 s; a thin strip (h → 0) gives
/// g = w e^(−3/2).
///
/// - `w`, `h`: side lengths, in metres; finite, ≥ 0 and not both zero (one zero side is
///   the thin-strip limit).
///
/// Returns `NaN` for out-of-range input (the caller validates).
pub fn gmd_rectangle(w: f64, h: f64) -> f64 {
    if !(w >= 0.0 && h >= 0.0 && w.is_finite() && h.is_finite()) || (w == 0.0 && h == 0.0) {
        return f64::NAN;
    }
    // The formula is symmetric in w and h; write it with t = small/big ∈ [0, 1], which
    // keeps every term finite and lets the t → 0 limit be taken analytically.
    let (big, small) = if w >= h { (w, h) } else { (h, w) };
    let t = small / big;
    let t2 = t * t;
    // Terms with t only, ln g − ln(big):
    //   ½ ln(1 + t²) − ln(1 + t²)/(12 t²) − (t²/12) ln(1 + 1/t²)
    //   + (2/(3t)) atan t + (2t/3) atan(1/t) − 25/12.
    let rest = if t == 0.0 {
        // Thin strip: ln g = ln w − 3/2.
        -1.5
    } else if t < 1e-8 {
        // Expansion of the same expression for t → 0 (its t³ term vanishes):
        // −3/2 + πt/3 + t² (ln t / 6 − 25/72) + O(t⁴ ln t); it avoids t² underflowing in
        // ln(1 + t²)/(12 t²) for extremely thin rectangles.
        -1.5 + std::f64::consts::PI / 3.0 * t + t2 * (t.ln() / 6.0 - 25.0 / 72.0)
    } else {
        0.5 * t2.ln_1p() - t2.ln_1p() / (12.0 * t2) - t2 / 12.0 * (t2.ln_1p() - 2.0 * t.ln())
            + 2.0 / (3.0 * t) * t.atan()
            + 2.0 * t / 3.0 * (1.0 / t).atan()
            - 25.0 / 12.0
    };
    big * rest.exp()
}

/// Self-inductance of a ring of rectangular section, in henries.
///
/// L = μ0 a [ ln(8a/g) − 2 ],  g = [`gmd_rectangle`](axial, radial)   (Rosa & Grover 1912;
/// Grover 1946; NOTES-physics C3), uniform current density.
///
/// - `radius`: mean radius a of the ring, in metres; finite and > 0.
/// - `radial`: radial thickness of the section, in metres; finite and > 0.
/// - `axial`: axial width of the section, in metres; finite and > 0.
///
/// The formula is meant for sections much smaller than the radius (error ≈ −1e-4 for a
/// 2 mm × 2 mm section at a = 50 mm, −4.6e-2 for 2 mm × 20 mm at 20 mm).
/// Returns `NaN` for out-of-range input (the caller validates).
pub fn ring_rectangular(radius: f64, radial: f64, axial: f64) -> f64 {
    if !section_ok(radius, radial, axial) {
        return f64::NAN;
    }
    let g = gmd_rectangle(axial, radial);
    MU0 * radius * ((8.0 * radius / g).ln() - 2.0)
}

/// Derivative of [`ring_rectangular`] with respect to the ring radius at a fixed section,
/// in henries per metre.
///
/// dL/da = μ0 [ ln(8a/g) − 1 ]  (the derivative of L = μ0 a (ln(8a/g) − 2)).
/// This is the self term ½ I² dL/da of the radial force on a ring (NOTES-physics A5);
/// omitting it breaks the energy balance of a moving ring.
///
/// Inputs and ranges as for [`ring_rectangular`]; `NaN` for out-of-range input.
pub fn ring_rectangular_dradius(radius: f64, radial: f64, axial: f64) -> f64 {
    if !section_ok(radius, radial, axial) {
        return f64::NAN;
    }
    let g = gmd_rectangle(axial, radial);
    MU0 * ((8.0 * radius / g).ln() - 1.0)
}

/// [`ring_rectangular`] with its derivatives, evaluated together (one GMD for all three):
/// (L, ∂L/∂a, ∂L/∂radial), in H, H/m and H/m.
///
/// ∂L/∂a = μ0 [ ln(8a/g) − 1 ] as in [`ring_rectangular_dradius`], and at fixed radius
/// ∂L/∂h = −μ0 a ∂(ln g)/∂h for the radial side h, with the derivative of Maxwell's GMD
/// formula (see [`gmd_rectangle`]; p = h/w, w the axial side):
///
/// ```text
/// h ∂(ln g)/∂h = 1/2 + ln(1 + p²)/(6p²) − (p²/6) ln(1 + 1/p²) − (2/(3p)) atan p + (2p/3) atan(1/p)
/// ```
///
/// (ln g is homogeneous of degree one in (w, h) up to ln: h ∂/∂h + w ∂/∂w of it is 1, which
/// the test checks). Below a side ratio of 1e-3 the terms cancel to O(ratio) and a central
/// difference of the GMD is used instead.
///
/// Inputs and ranges as for [`ring_rectangular`]; `NaN`s for out-of-range input.
pub fn ring_rectangular_with_slopes(radius: f64, radial: f64, axial: f64) -> (f64, f64, f64) {
    if !section_ok(radius, radial, axial) {
        return (f64::NAN, f64::NAN, f64::NAN);
    }
    let (big, small) = if axial >= radial { (axial, radial) } else { (radial, axial) };
    let t = small / big;
    if t < 1e-3 {
        // Thin sections: the closed forms below cancel to O(t); the separate functions and a
        // central difference of the GMD instead.
        let g = gmd_rectangle(axial, radial);
        let lead = (8.0 * radius / g).ln();
        let e = 1e-5 * radial;
        let h_dlng = radial
            * (gmd_rectangle(axial, radial + e).ln() - gmd_rectangle(axial, radial - e).ln())
            / (2.0 * e);
        return (MU0 * radius * (lead - 2.0), MU0 * (lead - 1.0), -MU0 * radius * h_dlng / radial);
    }
    // The GMD and its slope share their transcendental values (t = small/big side):
    // ln(1 + 1/t²) = ln(1 + t²) − 2 ln t and atan(1/t) = π/2 − atan t.
    let t2 = t * t;
    let l1 = t2.ln_1p();
    let lt = t.ln();
    let l2 = l1 - 2.0 * lt;
    let at = t.atan();
    let ait = std::f64::consts::FRAC_PI_2 - at;
    // ln g − ln(big), as in `gmd_rectangle`.
    let rest =
        0.5 * l1 - l1 / (12.0 * t2) - t2 / 12.0 * l2 + 2.0 / (3.0 * t) * at + 2.0 * t / 3.0 * ait
            - 25.0 / 12.0;
    let lead = (8.0 * radius).ln() - big.ln() - rest;
    let l = MU0 * radius * (lead - 2.0);
    let dl_da = MU0 * (lead - 1.0);
    // h ∂(ln g)/∂h at p = h/w: p = t when the radial side is the small one, 1/t otherwise.
    let (p, ln1p_p2, ln1p_ip2, atan_p, atan_ip) =
        if radial <= axial { (t, l1, l2, at, ait) } else { (1.0 / t, l2, l1, ait, at) };
    let p2 = p * p;
    let h_dlng = 0.5 + ln1p_p2 / (6.0 * p2) - p2 / 6.0 * ln1p_ip2 - 2.0 / (3.0 * p) * atan_p
        + 2.0 * p / 3.0 * atan_ip;
    (l, dl_da, -MU0 * radius * h_dlng / radial)
}

/// Self-inductance of a ring of round wire with uniform current density, in henries.
///
/// L = μ0 a [ ln(8a/ρ) − 7/4 ]   (Maxwell/Kirchhoff; Rosa & Grover 1912; NOTES-physics C1).
/// The 7/4 is the close-ring formula with the GMD of a disc, ρ e^(−1/4).
///
/// - `radius`: ring radius a to the wire centre, in metres; finite and > 0.
/// - `wire_radius`: wire radius ρ, in metres; finite, > 0 and meant to be ≪ `radius`
///   (relative error −2.2e-3 at ρ/a = 0.1, −1.8e-5 at ρ/a = 0.01).
///
/// Returns `NaN` for out-of-range input (the caller validates).
pub fn ring_round_wire(radius: f64, wire_radius: f64) -> f64 {
    if !(radius > 0.0 && wire_radius > 0.0 && radius.is_finite() && wire_radius.is_finite()) {
        return f64::NAN;
    }
    MU0 * radius * ((8.0 * radius / wire_radius).ln() - 1.75)
}

/// DC resistance of a ring of rectangular section, in ohms.
///
/// R = ρ_e · 2π a / (h w)  (length of the mean circle over the section area).
/// The exact value for j ∝ 1/r is 2π ρ_e / (w ln(r_out/r_in)), which differs by
/// ~(h/a)²/12 relative.
///
/// - `resistivity`: electrical resistivity ρ_e, in ohm metres; finite and > 0.
/// - `radius`: mean radius a, in metres; finite and > 0.
/// - `radial`, `axial`: section dimensions h and w, in metres; finite and > 0.
///
/// Returns `NaN` for out-of-range input (the caller validates).
pub fn ring_resistance(resistivity: f64, radius: f64, radial: f64, axial: f64) -> f64 {
    if !(resistivity > 0.0 && resistivity.is_finite() && section_ok(radius, radial, axial)) {
        return f64::NAN;
    }
    resistivity * 2.0 * std::f64::consts::PI * radius / (radial * axial)
}

fn section_ok(radius: f64, radial: f64, axial: f64) -> bool {
    [radius, radial, axial].iter().all(|&x| x > 0.0 && x.is_finite())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The three values of `ring_rectangular_with_slopes` against the separate functions and a
    /// central difference of `ring_rectangular` in the radial side, over aspect ratios from
    /// 1e-4 to 1e3; and Euler's relation for the homogeneous ln g (h ∂/∂h + w ∂/∂w of ln g
    /// equals 1), which checks the analytic derivative independently of any difference.
    #[test]
    fn slopes_of_the_rectangular_ring() {
        let a = 0.03;
        for &(h, w) in &[
            (1e-3, 1e-3),
            (0.7e-3, 1.1e-3),
            (2e-3, 0.5e-3),
            (1e-6, 1e-2),
            (1e-4, 0.1),
            (3e-3, 3e-6),
        ] {
            let (l, da, dh) = ring_rectangular_with_slopes(a, h, w);
            assert!((l / ring_rectangular(a, h, w) - 1.0).abs() < 1e-14, "L at {h} x {w}");
            assert!(
                (da / ring_rectangular_dradius(a, h, w) - 1.0).abs() < 1e-14,
                "dL/da at {h} x {w}"
            );
            let e = 1e-4 * h;
            let fd = (ring_rectangular(a, h + e, w) - ring_rectangular(a, h - e, w)) / (2.0 * e);
            assert!((dh / fd - 1.0).abs() < 1e-7, "dL/dh at {h} x {w}: {dh} against {fd}");
            // Euler: w ∂(ln g)/∂w + h ∂(ln g)/∂h = 1, with ∂L/∂h = −μ0 a ∂(ln g)/∂h.
            let (_, _, dw) = ring_rectangular_with_slopes(a, w, h);
            let sum = -(h * dh + w * dw) / (MU0 * a);
            // (1e-15 from the analytic form; the central difference used below p = 1e-3
            // leaves about 4e-12)
            let tol = if h / w < 1e-3 || w / h < 1e-3 { 1e-10 } else { 1e-13 };
            assert!((sum - 1.0).abs() < tol, "Euler sum {sum} at {h} x {w}");
        }
        assert!(ring_rectangular_with_slopes(-1.0, 1e-3, 1e-3).0.is_nan());
    }

    #[test]
    fn gmd_is_symmetric_and_homogeneous() {
        for (w, h) in [(1.0, 0.3), (0.002, 0.005), (1.0, 1e-7)] {
            let g = gmd_rectangle(w, h);
            assert_eq!(g, gmd_rectangle(h, w));
            // g scales linearly with the rectangle.
            assert!((gmd_rectangle(3.0 * w, 3.0 * h) / (3.0 * g) - 1.0).abs() < 1e-15);
        }
    }

    #[test]
    fn gmd_strip_limit() {
        // Thin strip: g = w e^(−3/2) (Maxwell, Treatise art. 692; NOTES-physics C2).
        assert!((gmd_rectangle(2.0, 0.0) / (2.0 * (-1.5_f64).exp()) - 1.0).abs() < 1e-15);
        assert!(gmd_rectangle(0.0, 0.0).is_nan());
        assert!(gmd_rectangle(-1.0, 1.0).is_nan());
    }

    #[test]
    fn invalid_input_is_nan() {
        assert!(ring_rectangular(0.0, 1e-3, 1e-3).is_nan());
        assert!(ring_rectangular_dradius(0.05, -1e-3, 1e-3).is_nan());
        assert!(ring_round_wire(0.05, 0.0).is_nan());
        assert!(ring_resistance(0.0, 0.05, 1e-3, 1e-3).is_nan());
        assert!(ring_resistance(1.7e-8, 0.05, 1e-3, f64::NAN).is_nan());
    }
}
