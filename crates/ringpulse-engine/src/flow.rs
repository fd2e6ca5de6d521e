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

impl JohnsonCook {
    /// The rate factor 1 + C ln(|ε̇|/ε̇0), clamped at one below the reference rate.
    fn rate_term(&self, rate: f64) -> f64 {
        1.0 + self.c * (rate.abs() / self.reference_rate).max(1.0).ln()
    }

    /// The thermal factor 1 − T*ᵐ, T* = (T − T_r)/(T_m − T_r) clamped to [0, 1].
    fn thermal(&self, t: f64) -> f64 {
        let ts = ((t - self.room_temperature) / (self.melting_temperature - self.room_temperature))
            .clamp(0.0, 1.0);
        if ts == 0.0 {
            1.0
        } else {
            1.0 - ts.powf(self.m)
        }
    }
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

impl FlowLaw {
    /// Duration of the Johnson–Cook yield onset at hoop strain rate `rate` (1/s), temperature
    /// `t` (K) and Young's modulus `e` (Pa), in seconds; `None` for laws without one.
    ///
    /// Just past yield the hardening slope nBε̄ⁿ⁻¹ is far above E and the hardening variable
    /// grows as dw/dt ≈ E|ε̇|/σ_w (σ_w = ∂σ_f/∂w); the plastic flow takes over where
    /// E dε̄/dw = σ_w, at w* = (σ_w n/E)^(n/(1−n)), reached after w* σ_w/(E|ε̇|). The stepper
    /// needs steps of about this size there, so a segment that starts with a yield starts
    /// with it instead of the step before the event (which would be rejected several times).
    pub fn onset_time(&self, rate: f64, t: f64, e: f64) -> Option<f64> {
        match *self {
            FlowLaw::JohnsonCook(jc) if jc.n > 0.0 && jc.n < 1.0 => {
                let sigma_w = jc.b * jc.rate_term(rate) * jc.thermal(t);
                let rate = rate.abs();
                if !(sigma_w > 0.0 && rate > 0.0 && e > 0.0) {
                    return None;
                }
                let w_star = (sigma_w * jc.n / e).powf(jc.n / (1.0 - jc.n));
                let tau = w_star * sigma_w / (e * rate);
                tau.is_finite().then_some(tau)
            }
            _ => None,
        }
    }

    /// The hardening variable w that the motion state carries in place of the equivalent
    /// plastic strain ε̄_p: w = ε̄_pⁿ for Johnson–Cook, w = ε̄_p otherwise.
    ///
    /// Johnson–Cook's A + B ε̄ⁿ has an infinite slope at ε̄ = 0 (n < 1), so dε̄/dt from the
    /// consistency condition is not Lipschitz in ε̄ at the yield onset and the adaptive
    /// stepper falls to nanosecond steps there; in w the law is linear, A + B w, and the
    /// right-hand side is smooth.
    pub fn hardening(&self, eps_p_equiv: f64) -> f64 {
        match *self {
            FlowLaw::JohnsonCook(jc) => eps_p_equiv.max(0.0).powf(jc.n),
            _ => eps_p_equiv,
        }
    }

    /// The equivalent plastic strain ε̄_p of a hardening variable w (inverse of
    /// [`FlowLaw::hardening`]).
    pub fn equivalent_strain(&self, w: f64) -> f64 {
        match *self {
            FlowLaw::JohnsonCook(jc) if jc.n > 0.0 => w.max(0.0).powf(1.0 / jc.n),
            _ => w,
        }
    }

    /// Flow stress in Pa at hardening variable `w`, strain-rate magnitude `rate` (1/s) and
    /// temperature `t` (K).
    pub fn flow_stress_w(&self, w: f64, rate: f64, t: f64) -> f64 {
        match *self {
            // A + B εⁿ = A + B w: no round trip through ε = w^(1/n).
            FlowLaw::JohnsonCook(jc) if jc.n > 0.0 => {
                (jc.a + jc.b * w.max(0.0)) * jc.rate_term(rate) * jc.thermal(t)
            }
            _ => self.flow_stress(self.equivalent_strain(w), rate, t),
        }
    }

    /// (∂σ_f/∂w, dε̄_p/dw, ∂σ_f/∂|ε̇|, ∂σ_f/∂T) at (w, |ε̇|, T): the hardening slope in w,
    /// the slope of the strain map, the rate sensitivity (zero below the reference rate,
    /// where the Johnson–Cook rate term is clamped) and the thermal softening, the last as a
    /// forward difference over 0.1 K (the Johnson–Cook T*ᵐ has an infinite slope at room
    /// temperature for m < 1).
    fn slopes(&self, w: f64, rate: f64, t: f64) -> (f64, f64, f64, f64) {
        match *self {
            FlowLaw::Constant { .. } => (0.0, 1.0, 0.0, 0.0),
            FlowLaw::PowerLaw { k, n, eps0 } => {
                (k * n * (eps0 + w.max(0.0)).powf(n - 1.0), 1.0, 0.0, 0.0)
            }
            FlowLaw::JohnsonCook(jc) => {
                let w = w.max(0.0);
                let ratio = rate.abs() / jc.reference_rate;
                let rate_term = jc.rate_term(rate);
                let thermal = jc.thermal(t);
                // dε̄/dw = ε̄^(1−n)/n = w^((1−n)/n)/n, finite (zero) at the onset.
                let deps_dw = if jc.n > 0.0 { w.powf((1.0 - jc.n) / jc.n) / jc.n } else { 0.0 };
                let hard = if jc.n > 0.0 {
                    jc.a + jc.b * w
                } else {
                    jc.a + jc.b * self.equivalent_strain(w).powf(jc.n)
                };
                let d_rate = if ratio > 1.0 { hard * thermal * jc.c / rate.abs() } else { 0.0 };
                let d_t = hard * rate_term * (jc.thermal(t + 0.1) - thermal) / 0.1;
                (jc.b * rate_term * thermal, deps_dw, d_rate, d_t)
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

/// How a ring's hoop stress is computed while a segment of the run lasts.
///
/// The switch between the elastic and the plastic branch is an event of the stepper
/// (located on its continuous output), so that the right-hand side is smooth inside every
/// step: a switch inside a step (a corner in the stress–strain path) forces the adaptive
/// stepper down to nanosecond steps around it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Branch {
    /// σ = E (ε − ε_p), no plastic flow.
    Elastic,
    /// On the yield surface in tension: σ = +σ_f, plastic flow from the consistency condition.
    Tension,
    /// On the yield surface in compression: σ = −σ_f.
    Compression,
}

impl Branch {
    /// +1 in tension, −1 in compression, 0 elastic.
    pub fn sign(self) -> f64 {
        match self {
            Branch::Elastic => 0.0,
            Branch::Tension => 1.0,
            Branch::Compression => -1.0,
        }
    }
}

/// The hoop stress of a ring and the flow stress at its state.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct HoopState {
    /// Hoop stress, in Pa (tension positive).
    pub stress: f64,
    /// Flow stress at this state, in Pa.
    pub flow: f64,
    /// The branch the stress was computed on.
    pub branch: Branch,
}

/// The hoop stress on a branch: E (ε − ε_p) while elastic, ±σ_f(ε̄_p, |ε̇|, T) on the yield
/// surface.
///
/// - `eps`: hoop strain ln(r/r0); `eps_p`: plastic hoop strain (signed); `w`: hardening
///   variable ([`FlowLaw::hardening`] of the equivalent plastic strain) (all dimensionless);
/// - `rate`: hoop strain rate ε̇, in 1/s; `t`: temperature, in K; `e`: Young's modulus, in Pa.
#[allow(clippy::too_many_arguments)]
pub fn hoop_state(
    branch: Branch,
    eps: f64,
    eps_p: f64,
    w: f64,
    rate: f64,
    t: f64,
    e: f64,
    law: &FlowLaw,
) -> HoopState {
    let flow = law.flow_stress_w(w, rate, t).max(0.0);
    let stress = match branch {
        Branch::Elastic => e * (eps - eps_p),
        Branch::Tension => flow,
        Branch::Compression => -flow,
    };
    HoopState { stress, flow, branch }
}

/// How far the elastic trial stress is beyond the flow stress, |E (ε − ε_p)| − σ_f, in Pa
/// (negative inside the yield surface), with `w` the hardening variable. An elastic ring
/// starts to yield where this crosses zero upward.
pub fn yield_margin(eps: f64, eps_p: f64, w: f64, rate: f64, t: f64, e: f64, law: &FlowLaw) -> f64 {
    (e * (eps - eps_p)).abs() - law.flow_stress_w(w, rate, t).max(0.0)
}

/// Rates of the plastic state on the yield surface.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PlasticRates {
    /// Plastic hoop strain rate ε̇_p (signed), in 1/s.
    pub strain: f64,
    /// Rate of the hardening variable, dw/dt, in 1/s.
    pub hardening: f64,
    /// Consistency rate u = sign(σ) ε̇_p = dε̄_p/dt, in 1/s (negative: the ring unloads).
    pub u: f64,
}

/// Plastic rates from the consistency condition (all zero on the elastic branch).
///
/// On the yield surface |E (ε − ε_p)| = σ_f(ε̄_p, |ε̇|, T) must hold as the state moves, so with
/// u = sign(σ) ε̇_p = dε̄_p/dt:
///
/// ```text
/// E (sign(σ) ε̇ − u) = H u + (∂σ_f/∂|ε̇|) d|ε̇|/dt + (∂σ_f/∂T) dT/dt,   H = ∂σ_f/∂ε̄_p
/// ```
///
/// In the hardening variable w (dε̄_p = (dε̄_p/dw) dw, H = (∂σ_f/∂w)/(dε̄_p/dw)) this is
///
/// ```text
/// dw/dt = N / (E dε̄_p/dw + ∂σ_f/∂w),   N = E sign(σ) ε̇ − (∂σ_f/∂|ε̇|) d|ε̇|/dt − (∂σ_f/∂T) dT/dt
/// ```
///
/// which stays finite and smooth at the Johnson–Cook onset where H is infinite. The rates
/// are not clamped: u < 0 means the state is unloading. The motion engine ends the yielding
/// branch when the ring's velocity turns (until then u ≥ 0, since the strain rate and the
/// rate and thermal softening all add to it), which gives springback. ∂σ_f/∂w and ∂σ_f/∂|ε̇|
/// are exact;
/// ∂σ_f/∂T is a forward difference over 0.1 K.
///
/// - `w`: hardening variable; `rate`: ε̇ (1/s); `rate_dot`: dε̇/dt (1/s²); `t`: temperature
///   (K); `t_dot`: dT/dt (K/s); `e`: Young's modulus (Pa).
#[allow(clippy::too_many_arguments)]
pub fn plastic_rates(
    state: &HoopState,
    w: f64,
    rate: f64,
    rate_dot: f64,
    t: f64,
    t_dot: f64,
    e: f64,
    law: &FlowLaw,
) -> PlasticRates {
    let sign = state.branch.sign();
    if sign == 0.0 {
        return PlasticRates { strain: 0.0, hardening: 0.0, u: 0.0 };
    }
    let (dsig_dw, deps_dw, p_rate, p_t) = law.slopes(w, rate, t);
    let abs_rate_dot = if rate >= 0.0 { rate_dot } else { -rate_dot };
    let n = e * sign * rate - p_rate * abs_rate_dot - p_t * t_dot;
    let denom = e * deps_dw + dsig_dw;
    let hardening = if denom > 0.0 { n / denom } else { 0.0 };
    // u = (dε̄/dw) dw/dt; for a law without hardening (denominator E) this is N/E.
    let u = deps_dw * hardening;
    PlasticRates { strain: sign * u, hardening, u }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The yield-onset duration by hand for OFHC copper at 1e3 1/s, 294 K, E = 124 GPa:
    /// σ_w = 292 MPa (1 + 0.025 ln 1e3) = 342.427 MPa, w* = (σ_w 0.31/E)^(0.31/0.69) = 0.041865,
    /// τ = w* σ_w/(E ε̇) = 115.61 ns; none for the power law and constant stress.
    #[test]
    fn onset_time_by_hand() {
        let law = FlowLaw::JohnsonCook(johnson_cook_set("ofhc_copper").unwrap());
        let tau = law.onset_time(-1e3, 294.0, 124e9).unwrap();
        assert!((tau / 115.61e-9 - 1.0).abs() < 1e-4, "{tau}");
        assert!(law.onset_time(0.0, 294.0, 124e9).is_none());
        assert!(FlowLaw::Constant { stress: 1e8 }.onset_time(1e3, 294.0, 1e11).is_none());
        let power = FlowLaw::PowerLaw { k: 5e8, n: 0.3, eps0: 0.01 };
        assert!(power.onset_time(1e3, 294.0, 1e11).is_none());
    }

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
    fn hoop_stress_on_each_branch() {
        let law = FlowLaw::Constant { stress: 100e6 };
        let e = 70e9;
        let elastic = hoop_state(Branch::Elastic, 1e-3, 0.0, 0.0, 1.0, 300.0, e, &law);
        assert_eq!(elastic.stress, 70e6);
        assert_eq!(plastic_rates(&elastic, 0.0, 1.0, 0.0, 300.0, 0.0, e, &law).u, 0.0);
        // 1e-3 of strain is 70 MPa, 30 MPa inside the surface; 2e-3 is 40 MPa beyond it.
        assert!((yield_margin(1e-3, 0.0, 0.0, 1.0, 300.0, e, &law) + 30e6).abs() < 1.0);
        assert!((yield_margin(-2e-3, 0.0, 0.0, 1.0, 300.0, e, &law) - 40e6).abs() < 1.0);
        let tension = hoop_state(Branch::Tension, 2e-3, 0.0, 0.0, 1.0, 300.0, e, &law);
        assert_eq!(tension.stress, 100e6);
        let compression = hoop_state(Branch::Compression, -2e-3, 0.0, 0.0, -1.0, 300.0, e, &law);
        assert_eq!(compression.stress, -100e6);
        // Perfect plasticity: all of the strain rate is plastic while loading ...
        assert_eq!(plastic_rates(&tension, 0.0, 1.0, 0.0, 300.0, 0.0, e, &law).strain, 1.0);
        assert_eq!(plastic_rates(&compression, 0.0, -1.0, 0.0, 300.0, 0.0, e, &law).strain, -1.0);
        // ... and the consistency rate turns negative when the strain rate reverses (the ring
        // unloads; the motion engine switches it to the elastic branch then).
        assert!(plastic_rates(&tension, 0.0, -1.0, 0.0, 300.0, 0.0, e, &law).u < 0.0);
        // With hardening the plastic rate is E/(E + H) of the total rate, H = dσ_f/dε̄ (here
        // from a central difference of the law itself), and dw/dt = (dw/dε̄) ε̇_p.
        let jc = FlowLaw::JohnsonCook(johnson_cook_set("ofhc_copper").unwrap());
        let w = jc.hardening(0.1);
        let st = hoop_state(Branch::Tension, 0.2, 0.1, w, 1.0, 294.0, 115e9, &jc);
        assert!((st.stress - jc.flow_stress(0.1, 1.0, 294.0)).abs() < 1e-6);
        let h = (jc.flow_stress(0.1 + 1e-6, 1.0, 294.0) - jc.flow_stress(0.1 - 1e-6, 1.0, 294.0))
            / 2e-6;
        let r = plastic_rates(&st, w, 1.0, 0.0, 294.0, 0.0, 115e9, &jc);
        assert!(
            (r.strain - 115e9 / (115e9 + h)).abs() < 1e-8,
            "{} vs {}",
            r.strain,
            115e9 / (115e9 + h)
        );
        let dw_deps = (jc.hardening(0.1 + 1e-6) - jc.hardening(0.1 - 1e-6)) / 2e-6;
        assert!((r.hardening - dw_deps * r.u).abs() < 1e-8 * r.hardening);
        // At the onset (w = 0) the hardening rate is finite, E ε̇ / (∂σ_f/∂w) = E ε̇ / B, while
        // the plastic strain rate starts from zero.
        let st0 = hoop_state(Branch::Tension, 1e-3, 0.0, 0.0, 1.0, 294.0, 115e9, &jc);
        let r0 = plastic_rates(&st0, 0.0, 1.0, 0.0, 294.0, 0.0, 115e9, &jc);
        assert!((r0.hardening - 115e9 / 292e6).abs() < 1e-9 * r0.hardening);
        assert_eq!(r0.strain, 0.0);
        // The hardening variable maps back to the strain.
        assert!((jc.equivalent_strain(jc.hardening(0.37)) - 0.37).abs() < 1e-15);
    }
}
