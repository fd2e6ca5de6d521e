//! Flow stress laws and the elastic-plastic hoop stress used by the motion model.
//!
//! Johnson–Cook: σ = (A + B εⁿ)(1 + C ln(ε̇/ε̇0))(1 − T*ᵐ), T* = (T − T_r)/(T_m − T_r)
//! (G. R. Johnson & W. H. Cook, Proc. 7th Int. Symp. on Ballistics, The Hague, 1983). The ln
//! term is clamped at zero below the reference rate and T* to [0, 1] (common practice).

/// Johnson–Cook parameters.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct JohnsonCook {
    /// Yield stress A, in Pa.
    pub a: f64,
    /// Hardening modulus B, in Pa.
    pub b: f64,
    /// Hardening exponent n.
    pub n: f64,
    /// Strain-rate coefficient C.
    pub c: f64,
    /// Thermal softening exponent m.
    pub m: f64,
    /// Reference strain rate, in 1/s.
    pub reference_rate: f64,
    /// Reference (room) temperature, in K.
    pub room_temperature: f64,
    /// Melting temperature, in K.
    pub melting_temperature: f64,
}

/// A flow stress law.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum FlowLaw {
    /// Johnson–Cook.
    JohnsonCook(JohnsonCook),
    /// Power law σ = k (ε0 + ε_p)ⁿ (Ludwik/Hollomon form), no rate or temperature term.
    PowerLaw {
        /// Strength coefficient k, in Pa.
        k: f64,
        /// Hardening exponent n.
        n: f64,
        /// Prestrain ε0 (> 0, so that the initial flow stress k ε0ⁿ is finite and positive).
        eps0: f64,
    },
    /// Constant flow stress (perfect plasticity), in Pa.
    Constant {
        /// Flow stress, in Pa.
        stress: f64,
    },
}

impl FlowLaw {
    /// Flow stress in Pa at equivalent plastic strain `eps_p`, strain-rate magnitude `rate`
    /// (1/s) and temperature `t` (K).
    pub fn flow_stress(&self, eps_p: f64, rate: f64, t: f64) -> f64 {
        match *self {
            FlowLaw::Constant { stress } => stress,
            FlowLaw::PowerLaw { k, n, eps0 } => k * (eps0 + eps_p.max(0.0)).powf(n),
            FlowLaw::JohnsonCook(jc) => {
                let e = eps_p.max(0.0);
                let hard = jc.a + jc.b * e.powf(jc.n);
                let ratio = (rate.abs() / jc.reference_rate).max(1.0);
                let rate_term = 1.0 + jc.c * ratio.ln();
                let ts = ((t - jc.room_temperature)
                    / (jc.melting_temperature - jc.room_temperature))
                    .clamp(0.0, 1.0);
                hard * rate_term * (1.0 - ts.powf(jc.m))
            }
        }
    }
}

/// Published Johnson–Cook sets (Johnson & Cook 1983 table, recalled from memory; OFHC copper
/// and 4340 confirmed against two published copies per the project's physics notes; the
/// 6061-T6 set is from later literature, low confidence). Room temperature 294 K.
pub fn johnson_cook_set(name: &str) -> Option<JohnsonCook> {
    let (a, b, n, c, m, tm) = match name {
        "ofhc_copper" => (90e6, 292e6, 0.31, 0.025, 1.09, 1356.0),
        "cartridge_brass" => (112e6, 505e6, 0.42, 0.009, 1.68, 1189.0),
        "aluminium_2024_t351" => (265e6, 426e6, 0.34, 0.015, 1.00, 775.0),
        "aluminium_7039" => (337e6, 343e6, 0.41, 0.010, 1.00, 877.0),
        "armco_iron" => (175e6, 380e6, 0.32, 0.060, 0.55, 1811.0),
        "steel_4340" => (792e6, 510e6, 0.26, 0.014, 1.03, 1793.0),
        "aluminium_6061_t6" => (324e6, 114e6, 0.42, 0.002, 1.34, 925.0),
        _ => return None,
    };
    Some(JohnsonCook {
        a,
        b,
        n,
        c,
        m,
        reference_rate: 1.0,
        room_temperature: 294.0,
        melting_temperature: tm,
    })
}

/// Taylor–Quinney fraction of plastic work turned into heat (Taylor & Quinney 1934, recalled).
pub const TAYLOR_QUINNEY: f64 = 0.9;

/// The hoop stress of a ring and whether it sits on the yield surface.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct HoopState {
    /// Hoop stress, in Pa (tension positive).
    pub stress: f64,
    /// Flow stress at this state, in Pa.
    pub flow: f64,
    /// True when the trial stress E (ε − ε_p) is within the yield band of the flow stress.
    pub yielding: bool,
    /// Smooth 0..1 weight of plastic flow across the yield band.
    pub blend: f64,
}

/// Width of the smoothed yield onset, as a fraction of the flow stress.
///
/// A hard switch between the elastic and plastic branches makes the right-hand side
/// discontinuous, and the adaptive stepper rejected most of its steps (3 100 steps instead of
/// 1 000 on the coarse expansion demo); the smoothing moves the yield point by at most this
/// fraction.
pub const YIELD_BAND: f64 = 2e-3;

/// Elastic trial stress E (ε − ε_p), clamped to the flow stress, with the yield-band weight.
pub fn hoop_state(
    eps: f64,
    eps_p: f64,
    eps_p_equiv: f64,
    rate: f64,
    t: f64,
    e: f64,
    law: &FlowLaw,
) -> HoopState {
    let trial = e * (eps - eps_p);
    let flow = law.flow_stress(eps_p_equiv, rate, t).max(0.0);
    let onset = (1.0 - YIELD_BAND) * flow;
    if trial.abs() <= onset {
        HoopState { stress: trial, flow, yielding: false, blend: 0.0 }
    } else {
        let x = ((trial.abs() - onset) / (YIELD_BAND * flow)).min(1.0);
        HoopState {
            stress: trial.signum() * trial.abs().min(flow),
            flow,
            yielding: true,
            blend: x * x * (3.0 - 2.0 * x),
        }
    }
}

/// Plastic strain rate from the consistency condition, in 1/s.
///
/// On the yield surface |E (ε − ε_p)| = σ_f(ε̄_p, |ε̇|, T) must hold as the state moves, so with
/// u = sign(σ) ε̇_p ≥ 0:
///
/// ```text
/// E (sign(σ) ε̇ − u) = H u + (∂σ_f/∂|ε̇|) d|ε̇|/dt + (∂σ_f/∂T) dT/dt
/// ```
///
/// with H = ∂σ_f/∂ε̄_p. A negative u means the flow stress rises faster than the stress can
/// follow: the ring leaves the surface elastically (u = 0), which also covers unloading and
/// springback. The partial derivatives are forward differences (1e-4 of strain, 1e-3 relative
/// of rate, 0.1 K), bounded where the Johnson–Cook slope is infinite at zero strain. Tracking
/// the surface this way avoids the chatter between elastic and plastic branches that a plain
/// clamp causes, which made the adaptive stepper crawl.
#[allow(clippy::too_many_arguments)]
pub fn plastic_rate(
    state: &HoopState,
    eps_p_equiv: f64,
    rate: f64,
    rate_dot: f64,
    t: f64,
    t_dot: f64,
    e: f64,
    law: &FlowLaw,
) -> f64 {
    if !state.yielding {
        return 0.0;
    }
    let sign = state.stress.signum();
    let f0 = state.flow;
    let d_eps = 1e-4;
    let h = ((law.flow_stress(eps_p_equiv + d_eps, rate, t) - f0) / d_eps).max(0.0);
    let d_rate = 1e-3 * rate.abs().max(1.0);
    let p_rate = (law.flow_stress(eps_p_equiv, rate.abs() + d_rate, t) - f0) / d_rate;
    let p_t = (law.flow_stress(eps_p_equiv, rate, t + 0.1) - f0) / 0.1;
    let abs_rate_dot = rate.signum() * rate_dot;
    let u = (e * sign * rate - p_rate * abs_rate_dot - p_t * t_dot) / (e + h);
    sign * u.max(0.0) * state.blend
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Hand evaluation of the Johnson–Cook formula for OFHC copper (Johnson & Cook 1983 set):
    /// (90 + 292·0.1^0.31)(1 + 0.025 ln 1e4)(1 − 0) MPa = (90 + 292·0.48978)·1.23026 = 286.669 MPa.
    #[test]
    fn johnson_cook_copper_by_hand() {
        let jc = johnson_cook_set("ofhc_copper").unwrap();
        let law = FlowLaw::JohnsonCook(jc);
        let s = law.flow_stress(0.1, 1e4, 294.0);
        let hand = (90e6 + 292e6 * 0.1f64.powf(0.31)) * (1.0 + 0.025 * 1e4f64.ln());
        assert!((s - hand).abs() < 1e-6 * hand);
        assert!((s - 286.669e6).abs() < 1e-3 * 286.669e6, "{s}");
        // Below the reference rate the rate term is clamped at one.
        assert_eq!(law.flow_stress(0.1, 0.01, 294.0), law.flow_stress(0.1, 1.0, 294.0));
        // Softening to zero at melting.
        assert_eq!(law.flow_stress(0.1, 1.0, 1356.0), 0.0);
    }

    /// Johnson–Cook check values of the project physics notes (section G, computed with the
    /// 1983 parameter sets at T_r = 294 K), and one more evaluated by hand:
    /// 4340 at (0.3, 1e4 1/s, 500 K): (792 + 510·0.3^0.26)(1 + 0.014 ln 1e4)(1 − ((500 − 294)/(1793 − 294))^1.03)
    /// = (792 + 510·0.73126)·1.12894·(1 − 0.13742^1.03) = 1144.850 MPa.
    #[test]
    fn johnson_cook_check_values() {
        let cu = FlowLaw::JohnsonCook(johnson_cook_set("ofhc_copper").unwrap());
        let st = FlowLaw::JohnsonCook(johnson_cook_set("steel_4340").unwrap());
        let cases = [
            (&cu, 0.1, 1.0, 294.0, 233.015e6),
            (&cu, 0.1, 1e4, 294.0, 286.669e6),
            (&cu, 0.3, 1e4, 294.0, 358.059e6),
            (&cu, 0.3, 1e4, 500.0, 298.136e6),
            (&st, 0.1, 1.0, 294.0, 1072.266e6),
            (&st, 0.1, 1e4, 294.0, 1210.529e6),
            (&st, 0.3, 1e4, 294.0, 1315.136e6),
            (&st, 0.3, 1e4, 500.0, 1144.850e6),
        ];
        for (law, e, rate, t, expected) in cases {
            let got = law.flow_stress(e, rate, t);
            // The check values are given to 6-7 digits.
            assert!(
                (got - expected).abs() < 2e-6 * expected,
                "{got} vs {expected} at ({e}, {rate}, {t})"
            );
        }
        let hand = (792e6 + 510e6 * 0.3f64.powf(0.26))
            * (1.0 + 0.014 * 1e4f64.ln())
            * (1.0 - ((500.0 - 294.0) / (1793.0 - 294.0f64)).powf(1.03));
        assert!((st.flow_stress(0.3, 1e4, 500.0) - hand).abs() < 1e-9 * hand);
    }

    #[test]
    fn power_law_by_hand() {
        // k (ε0 + ε)^n = 500 MPa · (0.01 + 0.09)^0.25 = 500 · 0.562341 = 281.17 MPa.
        let law = FlowLaw::PowerLaw { k: 500e6, n: 0.25, eps0: 0.01 };
        assert!((law.flow_stress(0.09, 1e4, 900.0) - 281.1707e6).abs() < 1e3);
    }

    #[test]
    fn hoop_stress_clamps_and_unloads_elastically() {
        let law = FlowLaw::Constant { stress: 100e6 };
        let e = 70e9;
        let elastic = hoop_state(1e-3, 0.0, 0.0, 1.0, 300.0, e, &law);
        assert_eq!((elastic.stress, elastic.yielding), (70e6, false));
        assert_eq!(plastic_rate(&elastic, 0.0, 1.0, 0.0, 300.0, 0.0, e, &law), 0.0);
        let yielding = hoop_state(2e-3, 0.0, 0.0, 1.0, 300.0, e, &law);
        assert_eq!((yielding.stress, yielding.yielding), (100e6, true));
        // Perfect plasticity: all of the strain rate is plastic while loading ...
        assert_eq!(plastic_rate(&yielding, 0.0, 1.0, 0.0, 300.0, 0.0, e, &law), 1.0);
        // ... and none while unloading (springback).
        assert_eq!(plastic_rate(&yielding, 0.0, -1.0, 0.0, 300.0, 0.0, e, &law), 0.0);
        // With hardening the plastic rate is E/(E + H) of the total rate.
        let jc = FlowLaw::JohnsonCook(johnson_cook_set("ofhc_copper").unwrap());
        let st = hoop_state(0.2, 0.1, 0.1, 1.0, 294.0, 115e9, &jc);
        assert_eq!(st.stress, jc.flow_stress(0.1, 1.0, 294.0));
        let h = (jc.flow_stress(0.1001, 1.0, 294.0) - st.stress) / 1e-4;
        let r = plastic_rate(&st, 0.1, 1.0, 0.0, 294.0, 0.0, 115e9, &jc);
        assert!((r - 115e9 / (115e9 + h)).abs() < 1e-12);
    }
}
