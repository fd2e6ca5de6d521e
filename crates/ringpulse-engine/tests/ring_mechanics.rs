//! The thin-ring mechanics of the motion model on its own, against closed forms.
//!
//! Sources: the free-flying ring of the expanding-ring test, σ = −ρ r r̈ (Hoggatt & Recht,
//! Exp. Mech. 9 (1969) 441, recalled from memory), which for a rigid–perfectly-plastic ring
//! gives v² = v0² − (2σ/ρ) ln(r/r0) and r_max = r0 exp(ρ v0²/(2σ)) (closed form derived in the
//! project physics notes, section G: Cu, 8960 kg/m³, 200 MPa, 100 m/s, r0 = 25 mm →
//! r_max/r0 = 1.251071019); and Barlow's thin-wall yield pressure p_y = σ_y h / r (NOTES G:
//! Al 6061-T6, 276 MPa, h = 1 mm, r = 25 mm → 11.04 MPa). The ring equation is the one the
//! engine integrates, m r̈ = F − 2π A σ with m = ρ 2π r0 A0 and A = A0 r0 / r.

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic, clippy::too_many_arguments)]

use ringpulse_engine::flow::{hoop_state, plastic_rates, yield_margin, Branch, FlowLaw};

/// State: r, v, ε_p, w (the hardening variable; ε̄_p for a constant flow stress). Returns its derivative for an outward force `force(t, r)` in N,
/// with the hoop stress on `branch`.
fn ring_rhs(
    branch: Branch,
    y: [f64; 4],
    t: f64,
    density: f64,
    r0: f64,
    area0: f64,
    e: f64,
    law: &FlowLaw,
    force: &dyn Fn(f64, f64) -> f64,
    damping: f64,
) -> [f64; 4] {
    let [r, v, eps_p, w] = y;
    let mass = density * 2.0 * std::f64::consts::PI * r0 * area0;
    let area = area0 * r0 / r;
    let st = hoop_state(branch, (r / r0).ln(), eps_p, w, v / r, 293.0, e, law);
    let acc = (force(t, r) - 2.0 * std::f64::consts::PI * area * st.stress) / mass - damping * v;
    let rates = plastic_rates(&st, w, v / r, acc / r - (v / r).powi(2), 293.0, 0.0, e, law);
    [v, acc, rates.strain, rates.hardening]
}

fn rk4(y: [f64; 4], t: f64, h: f64, f: &dyn Fn([f64; 4], f64) -> [f64; 4]) -> [f64; 4] {
    let add = |a: [f64; 4], b: [f64; 4], s: f64| {
        [a[0] + s * b[0], a[1] + s * b[1], a[2] + s * b[2], a[3] + s * b[3]]
    };
    let k1 = f(y, t);
    let k2 = f(add(y, k1, h / 2.0), t + h / 2.0);
    let k3 = f(add(y, k2, h / 2.0), t + h / 2.0);
    let k4 = f(add(y, k3, h), t + h);
    let mut out = y;
    for i in 0..4 {
        out[i] += h / 6.0 * (k1[i] + 2.0 * k2[i] + 2.0 * k3[i] + k4[i]);
    }
    out
}

#[test]
fn free_ring_decelerates_as_the_expanding_ring_relation() {
    let (rho, sigma, v0, r0) = (8960.0, 200e6, 100.0, 25e-3);
    let law = FlowLaw::Constant { stress: sigma };
    // A very stiff ring yields at once: rigid–perfectly-plastic. Start on the yield surface.
    let e = 1e15;
    let area0 = 1e-6;
    // On the yield surface in tension while the ring expands (it never unloads before v = 0).
    let f = |y: [f64; 4], t: f64| {
        ring_rhs(Branch::Tension, y, t, rho, r0, area0, e, &law, &|_, _| 0.0, 0.0)
    };
    let mut y = [r0, v0, -sigma / e, 0.0];
    let h = 2e-9;
    let mut t = 0.0;
    let mut worst: f64 = 0.0;
    while y[1] > 0.0 && t < 1e-3 {
        y = rk4(y, t, h, &f);
        t += h;
        if y[1] > 0.0 {
            let v2 = v0 * v0 - 2.0 * sigma / rho * (y[0] / r0).ln();
            worst = worst.max((y[1] - v2.sqrt()).abs() / v0);
        }
    }
    let exact = r0 * (rho * v0 * v0 / (2.0 * sigma)).exp();
    assert!((exact / r0 - 1.251071019).abs() < 1e-9, "closed form {}", exact / r0);
    assert!((y[0] - exact).abs() / exact < 1e-4, "r_max {} vs {}", y[0], exact);
    assert!(worst < 1e-4, "velocity along the path off by {worst:e} of v0");
    // And the deceleration is σ = −ρ r r̈ (thin ring, area scaling included: A r = A0 r0).
    let acc = f([r0 * 1.1, 50.0, -sigma / e, 0.01], 0.0)[1];
    assert!((-rho * r0 * 1.1 * acc - sigma).abs() < 1e-9 * sigma, "σ = −ρ r r̈");
}

#[test]
fn ring_under_slowly_rising_pressure_yields_at_barlow_pressure() {
    let (rho, sy, e, h0, r0) = (2700.0, 276e6, 68.9e9, 1e-3, 25e-3);
    let law = FlowLaw::Constant { stress: sy };
    let dz = 1e-3;
    let area0 = h0 * dz;
    // Pressure ramp on the inner surface, slow against the ring's elastic period
    // (2π r / c ≈ 31 µs); light damping removes the ringing (a quasi-static test).
    let ramp = 20e6 / 5e-3; // Pa/s: 20 MPa in 5 ms.
    let force = |t: f64, r: f64| {
        let h = h0 * r0 / r;
        ramp * t * 2.0 * std::f64::consts::PI * (r - h / 2.0) * dz
    };
    // Elastic until the trial stress reaches the flow stress.
    let f =
        |y: [f64; 4], t: f64| ring_rhs(Branch::Elastic, y, t, rho, r0, area0, e, &law, &force, 2e5);
    let mut y = [r0, 0.0, 0.0, 0.0];
    let h = 5e-8;
    let mut t = 0.0;
    let mut p_yield = None;
    while t < 5e-3 {
        y = rk4(y, t, h, &f);
        t += h;
        if yield_margin((y[0] / r0).ln(), y[2], y[3], y[1] / y[0], 293.0, e, &law) >= 0.0 {
            p_yield = Some(ramp * t);
            break;
        }
    }
    let p = p_yield.expect("the ring yields within the ramp");
    // Barlow on the current geometry: σ_y h / r_inner (pressure on the inner surface).
    let hh = h0 * r0 / y[0];
    let barlow = sy * hh / (y[0] - hh / 2.0);
    assert!((p - barlow).abs() / barlow < 0.01, "yield at {p:e} Pa vs Barlow {barlow:e} Pa");
    assert!(
        (barlow - 11.04e6).abs() / 11.04e6 < 0.03,
        "NOTES G value 11.04 MPa (mean radius form)"
    );
}
