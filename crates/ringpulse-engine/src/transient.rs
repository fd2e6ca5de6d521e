//! The transient: flux linkages and capacitor voltage integrated by an adaptive Runge-Kutta
//! stepper (Dormand-Prince 5(4) from `ode_solvers`), with a crowbar event.
//!
//! State (scaled to order one, so that the scalar tolerances of the stepper treat all
//! components alike): loop flux linkages ψ (scale V0·t_ref, in webers), the capacitor voltage
//! (scale V0) and running integrals: energy dissipated in bank and feeder, coil, workpiece and
//! crowbar (scale ½CV0²), the charge ∫|i| dt (scale C·V0) and the action ∫i² dt (scale
//! I_ref²·t_ref). The equations are
//!
//! ```text
//! dψ/dt = e − Pᵀ R P x − R_ext x₀ ê₀,   x = L⁻¹ ψ,   e = v_C ê₀,   C dv_C/dt = −x₀
//! ```
//!
//! With flux linkage as the state, a geometry that changes later (a moving workpiece) gets
//! its motional EMF without extra terms. The crowbar closes when v_C first reaches zero: the
//! step that crosses zero stops the integration, the crossing is located by bisection on the
//! stepper's continuous output, and a second segment starts there with the capacitor out of
//! the circuit (ode_solvers has no root finding; see NOTES in DEVELOPERS.md).

use std::cell::RefCell;

use nalgebra::DVector;
use ode_solvers::continuous_output_model::ContinuousOutputModel;
use ode_solvers::{Dopri5, OutputType, System};

use crate::network::Network;
use crate::EngineError;

/// Offsets of the running integrals after the flux linkages and the capacitor voltage.
pub mod slot {
    /// Capacitor voltage.
    pub const V: usize = 0;
    /// Energy dissipated in bank, switch and feeder.
    pub const E_BANK: usize = 1;
    /// Energy dissipated in the coil.
    pub const E_COIL: usize = 2;
    /// Energy dissipated in the workpiece.
    pub const E_WORK: usize = 3;
    /// Energy dissipated in the crowbar path.
    pub const E_CROWBAR: usize = 4;
    /// Charge ∫|i| dt.
    pub const CHARGE: usize = 5;
    /// Action ∫i² dt.
    pub const ACTION: usize = 6;
    /// Number of extra slots.
    pub const COUNT: usize = 7;
}

/// Scale factors between the solver's state and SI values.
#[derive(Debug, Clone, Copy)]
pub struct Scales {
    /// Flux linkage scale, in webers.
    pub psi: f64,
    /// Voltage scale, in volts.
    pub volt: f64,
    /// Energy scale, in joules.
    pub energy: f64,
    /// Charge scale, in coulombs.
    pub charge: f64,
    /// Action scale, in A² s.
    pub action: f64,
}

/// Circuit constants outside the filament network.
#[derive(Debug, Clone, Copy)]
pub struct Circuit {
    /// Capacitance, in farads.
    pub capacitance: f64,
    /// Bank, switch and feeder resistance in the bank loop, in ohms.
    pub external_resistance: f64,
    /// Crowbar resistance, in ohms (used once the crowbar has closed).
    pub crowbar_resistance: f64,
}

/// The right-hand side of the network equations for one segment.
pub struct Rhs<'a> {
    net: &'a Network,
    circuit: Circuit,
    scales: Scales,
    crowbarred: bool,
    watch_crowbar: bool,
    scratch: RefCell<Scratch>,
    /// Time of the previous accepted step, in seconds.
    last_t: f64,
    /// Capacitor voltage (scaled) at the previous accepted step.
    last_v: f64,
    /// Set when v_C crossed zero in the last accepted step: (t_before, t_after).
    pub crossing: Option<(f64, f64)>,
    /// Set when the state stopped being finite.
    pub blew_up: Option<f64>,
    /// Smallest and largest accepted step, in seconds.
    pub dt_range: (f64, f64),
}

struct Scratch {
    psi: DVector<f64>,
    x: DVector<f64>,
    i_f: DVector<f64>,
    drop_f: DVector<f64>,
    drop_l: DVector<f64>,
}

impl<'a> Rhs<'a> {
    /// A right-hand side; `crowbarred` says whether the capacitor is already out of the circuit,
    /// `watch_crowbar` whether to stop at the first zero of v_C.
    pub fn new(
        net: &'a Network,
        circuit: Circuit,
        scales: Scales,
        crowbarred: bool,
        watch_crowbar: bool,
        t0: f64,
        v0_scaled: f64,
    ) -> Rhs<'a> {
        let n = net.mesh.filaments.len();
        let nl = net.n_loops();
        Rhs {
            net,
            circuit,
            scales,
            crowbarred,
            watch_crowbar,
            scratch: RefCell::new(Scratch {
                psi: DVector::zeros(nl),
                x: DVector::zeros(nl),
                i_f: DVector::zeros(n),
                drop_f: DVector::zeros(n),
                drop_l: DVector::zeros(nl),
            }),
            last_t: t0,
            last_v: v0_scaled,
            crossing: None,
            blew_up: None,
            dt_range: (f64::INFINITY, 0.0),
        }
    }

    /// Loop currents, in amperes, of a scaled state.
    pub fn loop_currents(&self, y: &DVector<f64>) -> DVector<f64> {
        let nl = self.net.n_loops();
        let psi = y.rows(0, nl) * self.scales.psi;
        &self.net.l_loops_inv * psi
    }

    /// Rate of change of the bank-loop current, in A/s, for a scaled state `y` whose loop
    /// currents `x` (amperes) are already known: di₀/dt = (L⁻¹ dψ/dt)₀ with dψ/dt from `x`.
    pub fn bank_current_rate(&self, y: &DVector<f64>, x: &DVector<f64>) -> f64 {
        let net = self.net;
        let nl = net.n_loops();
        let mut i_f = DVector::zeros(net.mesh.filaments.len());
        net.filament_currents(x, &mut i_f);
        for (f, i) in i_f.iter_mut().enumerate() {
            *i *= net.r_filaments[f];
        }
        let mut dpsi = DVector::zeros(nl);
        net.loop_sums(&i_f, &mut dpsi);
        dpsi.neg_mut();
        let v = y[nl + slot::V] * self.scales.volt;
        let source = if self.crowbarred { 0.0 } else { v };
        let r_cb = if self.crowbarred { self.circuit.crowbar_resistance } else { 0.0 };
        dpsi[0] += source - (self.circuit.external_resistance + r_cb) * x[0];
        net.l_loops_inv.row(0).transpose().dot(&dpsi)
    }

    fn eval(&self, y: &DVector<f64>, dy: &mut DVector<f64>) {
        let net = self.net;
        let nl = net.n_loops();
        let w0 = net.mesh.workpiece_start();
        let mut guard = self.scratch.borrow_mut();
        let s = &mut *guard;
        for k in 0..nl {
            s.psi[k] = y[k] * self.scales.psi;
        }
        s.x.gemv(1.0, &net.l_loops_inv, &s.psi, 0.0);
        net.filament_currents(&s.x, &mut s.i_f);
        let mut e_coil = 0.0;
        let mut e_work = 0.0;
        for f in 0..s.i_f.len() {
            let i = s.i_f[f];
            let r = net.r_filaments[f];
            s.drop_f[f] = r * i;
            if f < w0 {
                e_coil += r * i * i;
            } else {
                e_work += r * i * i;
            }
        }
        net.loop_sums(&s.drop_f, &mut s.drop_l);
        let i0 = s.x[0];
        let v = y[nl + slot::V] * self.scales.volt;
        let source = if self.crowbarred { 0.0 } else { v };
        let r_bank = self.circuit.external_resistance;
        let r_cb = if self.crowbarred { self.circuit.crowbar_resistance } else { 0.0 };
        for k in 0..nl {
            dy[k] = -s.drop_l[k] / self.scales.psi;
        }
        dy[0] += (source - (r_bank + r_cb) * i0) / self.scales.psi;
        dy[nl + slot::V] =
            if self.crowbarred { 0.0 } else { -i0 / self.circuit.capacitance / self.scales.volt };
        dy[nl + slot::E_BANK] = r_bank * i0 * i0 / self.scales.energy;
        dy[nl + slot::E_COIL] = e_coil / self.scales.energy;
        dy[nl + slot::E_WORK] = e_work / self.scales.energy;
        dy[nl + slot::E_CROWBAR] = r_cb * i0 * i0 / self.scales.energy;
        dy[nl + slot::CHARGE] = i0.abs() / self.scales.charge;
        dy[nl + slot::ACTION] = i0 * i0 / self.scales.action;
    }
}

impl System<f64, DVector<f64>> for &mut Rhs<'_> {
    fn system(&self, _t: f64, y: &DVector<f64>, dy: &mut DVector<f64>) {
        self.eval(y, dy);
    }

    fn solout(&mut self, t: f64, y: &DVector<f64>, _dy: &DVector<f64>) -> bool {
        let dt = t - self.last_t;
        if dt > 0.0 {
            self.dt_range.0 = self.dt_range.0.min(dt);
            self.dt_range.1 = self.dt_range.1.max(dt);
        }
        if !y.iter().all(|v| v.is_finite()) {
            self.blew_up = Some(t);
            return true;
        }
        let v = y[self.net.n_loops() + slot::V];
        let stop = self.watch_crowbar && !self.crowbarred && self.last_v > 0.0 && v <= 0.0;
        if stop {
            self.crossing = Some((self.last_t, t));
        }
        self.last_t = t;
        self.last_v = v;
        stop
    }
}

/// Tolerances and limits of one integration.
#[derive(Debug, Clone, Copy)]
pub struct StepperSettings {
    /// Relative tolerance.
    pub rel_tol: f64,
    /// Absolute tolerance on the scaled state.
    pub abs_tol: f64,
    /// Largest step, in seconds.
    pub max_step: f64,
    /// Largest number of steps per segment.
    pub max_steps: u32,
}

/// The outcome of one integrated segment.
pub struct Segment {
    /// Start time, in seconds.
    pub t_start: f64,
    /// End time, in seconds.
    pub t_end: f64,
    /// Continuous output of the scaled state over [t_start, t_end].
    pub model: ContinuousOutputModel<f64, DVector<f64>>,
    /// Scaled state at t_start.
    pub y_start: DVector<f64>,
    /// Accepted steps, rejected steps, RHS evaluations.
    pub counts: (u64, u64, u64),
    /// Smallest and largest accepted step, in seconds.
    pub dt_range: (f64, f64),
    /// The crossing bracket when the segment stopped at a zero of v_C.
    pub crossing: Option<(f64, f64)>,
    /// Whether this segment ran with the crowbar closed.
    pub crowbarred: bool,
}

impl Segment {
    /// Scaled state at time `t` (clamped into the segment).
    pub fn state(&self, t: f64) -> DVector<f64> {
        if t <= self.t_start {
            return self.y_start.clone();
        }
        let t = t.min(self.t_end);
        self.model.evaluate(t).unwrap_or_else(|| self.y_start.clone())
    }
}

/// Integrates one segment from `t0` to `t1`.
#[allow(clippy::too_many_arguments)]
pub fn integrate_segment(
    net: &Network,
    circuit: Circuit,
    scales: Scales,
    crowbarred: bool,
    watch_crowbar: bool,
    t0: f64,
    t1: f64,
    y0: DVector<f64>,
    settings: &StepperSettings,
) -> Result<Segment, EngineError> {
    let nl = net.n_loops();
    let mut rhs = Rhs::new(net, circuit, scales, crowbarred, watch_crowbar, t0, y0[nl + slot::V]);
    let mut model = ContinuousOutputModel::default();
    let outcome = {
        let mut stepper = Dopri5::from_param(
            &mut rhs,
            t0,
            t1,
            (t1 - t0) / 100.0,
            y0.clone(),
            settings.rel_tol,
            settings.abs_tol,
            0.9,
            0.04,
            0.2,
            10.0,
            settings.max_step,
            0.0,
            settings.max_steps,
            // The ring network is mildly stiff by nature (fast eddy modes); the stepper's
            // stiffness abort would stop runs that are merely slower, so it is switched off.
            u32::MAX,
            OutputType::Continuous,
        );
        stepper.integrate_with_continuous_output_model(&mut model)
    };
    let stats = outcome.map_err(|e| EngineError::Solver { message: e.to_string() })?;
    if let Some(t) = rhs.blew_up {
        return Err(EngineError::Solver {
            message: format!("the state stopped being finite at t = {t:e} s"),
        });
    }
    let t_end = match rhs.crossing {
        Some((_, t_after)) => t_after,
        None => t1,
    };
    Ok(Segment {
        t_start: t0,
        t_end,
        model,
        y_start: y0,
        counts: (
            u64::from(stats.accepted_steps),
            u64::from(stats.rejected_steps),
            u64::from(stats.num_eval),
        ),
        dt_range: rhs.dt_range,
        crossing: rhs.crossing,
        crowbarred,
    })
}

/// Locates the zero of a scalar function of time inside `[a, b]` by bisection, given that it
/// is positive at `a` and not positive at `b`. Stops at a bracket of 1e-14 relative.
pub fn bisect_zero(mut a: f64, mut b: f64, f: impl Fn(f64) -> f64) -> f64 {
    let fa = f(a);
    for _ in 0..200 {
        let m = 0.5 * (a + b);
        if (b - a) <= 1e-14 * b.abs().max(1e-300) {
            break;
        }
        let fm = f(m);
        if (fm > 0.0) == (fa > 0.0) {
            a = m;
        } else {
            b = m;
        }
    }
    0.5 * (a + b)
}

/// A zero of `f` in `[a, b]`, where f(a) and f(b) have opposite signs, by the Illinois
/// variant of regula falsi (M. Dowell and P. Jarratt, BIT 11 (1971) 168–174): the bracket
/// is kept, and the retained end's value is halved when the same end is kept twice, which
/// makes the convergence superlinear (order about 1.44). It ends when the estimate moves by
/// less than 1e-14 of its size or the bracket is that narrow, in about ten evaluations
/// where bisection to the same width takes forty-five. Without a sign change (or with a
/// non-finite value) it falls back to [`bisect_zero`].
pub fn illinois_zero(mut a: f64, mut b: f64, f: impl Fn(f64) -> f64) -> f64 {
    let mut fa = f(a);
    let mut fb = f(b);
    if fa == 0.0 {
        return a;
    }
    if fb == 0.0 {
        return b;
    }
    if !(fa.is_finite() && fb.is_finite()) || (fa > 0.0) == (fb > 0.0) {
        return bisect_zero(a, b, f);
    }
    let mut kept = 0i8;
    // (NaN: no previous estimate to compare with)
    let mut c = f64::NAN;
    for _ in 0..200 {
        let tol = 1e-14 * a.abs().max(b.abs()).max(1e-300);
        if b - a <= tol {
            break;
        }
        let mut next = (a * fb - b * fa) / (fb - fa);
        if !(next > a && next < b) {
            next = 0.5 * (a + b);
        }
        let moved = (next - c).abs();
        c = next;
        let fc = f(c);
        if fc == 0.0 || !fc.is_finite() {
            break;
        }
        if (fc > 0.0) == (fb > 0.0) {
            b = c;
            fb = fc;
            if kept == -1 {
                fa *= 0.5;
            }
            kept = -1;
        } else {
            a = c;
            fa = fc;
            if kept == 1 {
                fb *= 0.5;
            }
            kept = 1;
        }
        if moved <= tol {
            break;
        }
    }
    if c.is_nan() {
        0.5 * (a + b)
    } else {
        c
    }
}

/// Maximises a scalar function of time inside `[a, b]` by golden-section search (the function
/// is assumed unimodal there, as around a sampled peak). Returns (t, f(t)).
pub fn golden_max(mut a: f64, mut b: f64, f: impl Fn(f64) -> f64) -> (f64, f64) {
    let g = 0.5 * (5f64.sqrt() - 1.0);
    let mut c = b - g * (b - a);
    let mut d = a + g * (b - a);
    let mut fc = f(c);
    let mut fd = f(d);
    for _ in 0..200 {
        // Near a maximum f changes by ½ f'' δt², so its position is defined only to about
        // √ε relative; a bracket of 1e-9 relative leaves the peak value exact to rounding
        // (a narrower one only costs evaluations: each is a full network solve).
        if (b - a) <= 1e-9 * b.abs().max(1e-300) {
            break;
        }
        if fc > fd {
            b = d;
            d = c;
            fd = fc;
            c = b - g * (b - a);
            fc = f(c);
        } else {
            a = c;
            c = d;
            fc = fd;
            d = a + g * (b - a);
            fd = f(d);
        }
    }
    let t = 0.5 * (a + b);
    (t, f(t))
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::cell::Cell;

    /// The Illinois method finds known roots to the bisection's accuracy in far fewer
    /// evaluations: cos t at π/2, a triple root (where plain regula falsi stalls), a
    /// nearly discontinuous tanh, and a root at a bracket end.
    #[test]
    fn illinois_finds_known_roots() {
        let count = Cell::new(0);
        let count = &count;
        let counted = |f: fn(f64) -> f64| {
            move |t: f64| {
                count.set(count.get() + 1);
                f(t)
            }
        };
        let r = illinois_zero(1.0, 2.0, counted(|t: f64| t.cos()));
        assert!((r - std::f64::consts::FRAC_PI_2).abs() < 1e-14, "{r}");
        assert!(count.get() < 15, "{} evaluations", count.get());
        let b = bisect_zero(1.0, 2.0, |t: f64| t.cos());
        assert!((b - r).abs() < 1e-13);
        count.set(0);
        let r = illinois_zero(0.0, 1.0, counted(|t: f64| -(t - 0.3).powi(3)));
        // A triple root: f is below 1e-45 within 1e-15 of it, so only the bracket decides.
        assert!((r - 0.3).abs() < 1e-5, "{r}");
        assert!(count.get() < 200, "{} evaluations", count.get());
        let r = illinois_zero(0.0, 1.0, |t: f64| -(1e6 * (t - 0.37)).tanh());
        assert!((r - 0.37).abs() < 1e-13, "{r}");
        assert_eq!(illinois_zero(0.0, 2.0, |t: f64| 2.0 - t), 2.0);
        // No sign change: bisection's answer.
        assert_eq!(
            illinois_zero(0.0, 1.0, |t: f64| 1.0 + t),
            bisect_zero(0.0, 1.0, |t: f64| 1.0 + t)
        );
    }
}
