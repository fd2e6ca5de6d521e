//! Ratings: one run compared with the limits in a case's `ratings` section.
//!
//! Each limit that the case gives becomes one [`Check`] with the value from the run, the
//! limit, the margin (limit − value) / limit × 100 % and PASS (value <= limit) or FAIL. Which
//! run quantity each limit is compared with is listed in docs/study.md. In the engine's
//! circuit the switch, the capacitors, the feeder and the coil carry one series current (a
//! crowbar sits across the capacitor terminals, so the switch and feeder go on carrying the
//! decaying current after it closes), so switch, capacitor and feeder currents are all the
//! coil current.

use ringpulse_case::Case;
use ringpulse_engine::{RunResult, Traces};

/// One limit compared with the run.
#[derive(Debug, Clone, PartialEq)]
pub struct Check {
    /// Dotted key of the limit in the case file, such as `switch.peak_current` (under
    /// `ratings.`); `coil.hoop_stress` stands for the hoop stress check.
    pub quantity: &'static str,
    /// Words for tables, such as `switch peak current`.
    pub label: &'static str,
    /// SI unit of value and limit: `A`, `A/s`, `C`, `A2s`, `V`, `%`, `K`, `Pa`.
    pub unit: &'static str,
    /// The run's value, in `unit`.
    pub value: f64,
    /// The limit, in `unit`. Always > 0 (validation).
    pub limit: f64,
    /// How value or limit were derived, when not read directly (e.g. the safety factor).
    pub basis: Option<String>,
}

impl Check {
    /// Margin (limit − value) / limit, in percent; negative when the limit is exceeded.
    pub fn margin_percent(&self) -> f64 {
        (self.limit - self.value) / self.limit * 100.0
    }

    /// True when the value does not exceed the limit. A non-finite value fails.
    pub fn passes(&self) -> bool {
        self.value.is_finite() && self.value <= self.limit
    }
}

/// Every check of one run, in the order of docs/case-format.md.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct RatingsReport {
    /// The checks; empty when the case gives no limits.
    pub checks: Vec<Check>,
}

impl RatingsReport {
    /// True when there is nothing to check.
    pub fn is_empty(&self) -> bool {
        self.checks.is_empty()
    }

    /// True when every check passes (also when there are none).
    pub fn all_pass(&self) -> bool {
        self.checks.iter().all(Check::passes)
    }

    /// The first failing check, in table order.
    pub fn first_failure(&self) -> Option<&Check> {
        self.checks.iter().find(|c| !c.passes())
    }

    /// The smallest margin of all checks, in percent.
    pub fn min_margin_percent(&self) -> Option<f64> {
        self.checks.iter().map(Check::margin_percent).reduce(f64::min)
    }
}

/// A stress in MPa for basis notes, without trailing zeros.
fn mpa(pascals: f64) -> String {
    let s = format!("{:.3}", pascals / 1e6);
    let s = s.trim_end_matches('0').trim_end_matches('.');
    format!("{s} MPa")
}

/// Compares a run of `case` with the case's ratings.
pub fn evaluate(case: &Case, result: &RunResult) -> RatingsReport {
    let r = &case.ratings;
    let s = &result.summary;
    let mut checks = Vec::new();
    let mut add = |quantity, label, unit, value: f64, limit: Option<f64>, basis: Option<String>| {
        if let Some(limit) = limit {
            checks.push(Check { quantity, label, unit, value, limit, basis });
        }
    };
    let sw = &r.switch;
    add(
        "switch.peak_current",
        "switch peak current",
        "A",
        s.peak_coil_current,
        sw.peak_current,
        None,
    );
    add("switch.peak_di_dt", "switch peak di/dt", "A/s", s.peak_di_dt, sw.peak_di_dt, None);
    add("switch.charge", "switch charge per shot", "C", s.charge, sw.charge, None);
    add(
        "switch.action_integral",
        "switch action integral",
        "A2s",
        s.action_integral,
        sw.action_integral,
        None,
    );
    if sw.reverse_current_percent.is_some() {
        add(
            "switch.reverse_current",
            "switch reverse current",
            "%",
            reverse_current_percent(&result.traces, s.peak_coil_current, s.time_of_peak_current),
            sw.reverse_current_percent,
            None,
        );
    }
    let cap = &r.capacitors;
    add("capacitors.voltage", "capacitor voltage", "V", case.bank.voltage, cap.voltage, None);
    add(
        "capacitors.voltage_reversal",
        "capacitor voltage reversal",
        "%",
        s.voltage_reversal_percent,
        cap.voltage_reversal_percent,
        None,
    );
    let units = cap.units.max(1);
    add(
        "capacitors.peak_current",
        "capacitor peak current per unit",
        "A",
        s.peak_coil_current / units as f64,
        cap.peak_current,
        (units > 1).then(|| format!("bank current / {units} units")),
    );
    let coil = &r.coil;
    add(
        "coil.temperature_rise",
        "coil temperature rise",
        "K",
        s.peak_coil_temperature - case.initial_temperature,
        coil.temperature_rise,
        None,
    );
    let hoop_basis = coil.safety_factor.map(|f| {
        let m = &case.coil.material;
        format!("yield strength {} of {} / safety factor {f}", mpa(m.yield_strength), m.name)
    });
    add(
        "coil.hoop_stress",
        "coil hoop stress (magnitude)",
        "Pa",
        s.peak_coil_hoop_stress.abs(),
        coil.allowed_hoop_stress,
        hoop_basis,
    );
    let feeder = &r.feeder;
    add(
        "feeder.peak_current",
        "feeder peak current",
        "A",
        s.peak_coil_current,
        feeder.peak_current,
        None,
    );
    add(
        "feeder.action_integral",
        "feeder action integral",
        "A2s",
        s.action_integral,
        feeder.action_integral,
        None,
    );
    RatingsReport { checks }
}

/// Vertex value of the parabola through three equally spaced samples around a maximum; the
/// middle sample when they do not bend down.
fn parabolic_peak(y0: f64, y1: f64, y2: f64) -> f64 {
    let curvature = y0 - 2.0 * y1 + y2;
    if curvature < 0.0 {
        y1 - (y0 - y2) * (y0 - y2) / (8.0 * curvature)
    } else {
        y1
    }
}

/// Largest current of the opposite sign to the first current peak, in percent of that peak.
///
/// The first peak is the largest |i| before the current first changes sign; when the
/// summary's refined peak (`peak`, at `peak_time`) lies in that first lobe it is used as is.
/// The reverse peak is the largest opposite-sign sample, refined by a parabola through it and
/// its neighbours (the grid is uniform), which makes it accurate to about (2π/samples per
/// period)^4. Returns 0 when the current never reverses.
pub fn reverse_current_percent(traces: &Traces, peak: f64, peak_time: f64) -> f64 {
    let i = &traces.coil_current;
    let t = &traces.time;
    let Some(big) = i.iter().map(|x| x.abs()).reduce(f64::max) else { return 0.0 };
    if big.is_nan() || big <= 0.0 {
        return 0.0;
    }
    // The direction the discharge starts in: the first sample above 1 % of the peak.
    let Some(start) = i.iter().position(|x| x.abs() > 0.01 * big) else { return 0.0 };
    let sign = i[start].signum();
    let lobe_end = (start..i.len()).find(|&k| sign * i[k] < 0.0).unwrap_or(i.len());
    let refine = |k: usize, s: f64| -> f64 {
        if k == 0 || k + 1 >= i.len() {
            s * i[k]
        } else {
            parabolic_peak(s * i[k - 1], s * i[k], s * i[k + 1])
        }
    };
    let first_k =
        (start..lobe_end).fold(start, |b, k| if sign * i[k] > sign * i[b] { k } else { b });
    let in_first_lobe = lobe_end >= t.len() || peak_time <= t[lobe_end];
    let first = if in_first_lobe && peak > 0.0 { peak } else { refine(first_k, sign) };
    if lobe_end >= i.len() || first.is_nan() || first <= 0.0 {
        return 0.0;
    }
    let reverse_k =
        (lobe_end..i.len()).fold(lobe_end, |b, k| if -sign * i[k] > -sign * i[b] { k } else { b });
    let reverse = refine(reverse_k, -sign).max(0.0);
    reverse / first * 100.0
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A damped sine sampled on a grid: successive opposite peaks of e^{−αt} sin ωt differ by
    /// the factor e^{−απ/ω} (textbook underdamped RLC, docs/study.md).
    #[test]
    fn reverse_current_of_a_damped_sine() {
        let (alpha, omega) = (5000.0, 99874.9217772);
        let n = 2001;
        let t_end = 3.0 * 2.0 * std::f64::consts::PI / omega;
        let time: Vec<f64> = (0..n).map(|k| k as f64 * t_end / (n - 1) as f64).collect();
        let current: Vec<f64> =
            time.iter().map(|&t| -(-alpha * t).exp() * (omega * t).sin()).collect();
        let traces = Traces { time, coil_current: current, ..Traces::default() };
        let t_peak = (omega / alpha).atan() / omega;
        let peak = (-alpha * t_peak).exp() * (omega * t_peak).sin();
        let got = reverse_current_percent(&traces, peak, t_peak);
        let exact = 100.0 * (-std::f64::consts::PI * alpha / omega).exp();
        assert!((got - exact).abs() < 1e-6 * exact, "reverse {got} vs {exact}");
    }

    #[test]
    fn no_reversal_gives_zero() {
        let time: Vec<f64> = (0..100).map(|k| k as f64).collect();
        let current: Vec<f64> = time.iter().map(|t| t * (-t / 10.0).exp()).collect();
        let traces = Traces { time, coil_current: current, ..Traces::default() };
        assert_eq!(reverse_current_percent(&traces, 3.68, 10.0), 0.0);
        assert_eq!(reverse_current_percent(&Traces::default(), 0.0, 0.0), 0.0);
    }

    #[test]
    fn margin_and_status() {
        let c = Check {
            quantity: "switch.peak_current",
            label: "switch peak current",
            unit: "A",
            value: 90.0,
            limit: 100.0,
            basis: None,
        };
        assert!((c.margin_percent() - 10.0).abs() < 1e-12);
        assert!(c.passes());
        let over = Check { value: 110.0, ..c.clone() };
        assert!(!over.passes());
        let nan = Check { value: f64::NAN, ..c };
        assert!(!nan.passes());
        let report = RatingsReport { checks: vec![over.clone(), nan] };
        assert_eq!(report.first_failure(), Some(&over));
        assert!((report.min_margin_percent().unwrap_or(0.0) + 10.0).abs() < 1e-12);
    }
}
