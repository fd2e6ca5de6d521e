//! Sizing: the smallest charging voltage or capacitance that meets a target.
//!
//! The adjusted value x runs over a range [lo, hi] (default: a tenth to ten times the case's
//! value). The range is first scanned upwards at [`SCAN_POINTS`] geometrically spaced points,
//! stopping at the first point whose metric meets the target; the last point below and that
//! point bracket the smallest value that meets it. The bracket is then narrowed by the
//! Illinois variant of regula falsi on ln x (Dowell and Jarratt, BIT 11 (1971) 168), with a
//! bisection step whenever an iteration fails to halve the bracket, until its width is at most
//! `rel_tol` (default [`REL_TOL`]) of its upper end, or [`MAX_REFINE`] runs. The answer is the
//! upper end, which meets the target; the true smallest value lies within the tolerance below
//! it. Every evaluation is a full engine run, so the number of runs is bounded by
//! `SCAN_POINTS + MAX_REFINE` and sizing cannot hang.
//!
//! The scan assumes that the metric does not rise above the target and fall back between two
//! scan points; for the charging voltage every current grows linearly and every force and
//! pressure quadratically (the network is linear), so the first crossing is the only one.
//! With motion the displacement, strain and impact speed grow with the bank energy too, but a
//! die or mandrel caps them: a strain beyond the die's is reported as out of reach.

use ringpulse_case::units::{parse_str, Dimension};
use ringpulse_case::Case;
use ringpulse_engine::RunResult;

use crate::ratings::{evaluate, RatingsReport};
use crate::sweep::Runner;
use crate::{spec_error, StudyError};

/// Points of the upward scan of the range.
pub const SCAN_POINTS: usize = 9;
/// Default relative tolerance on the adjusted value.
pub const REL_TOL: f64 = 1e-3;
/// Most runs spent narrowing the bracket.
pub const MAX_REFINE: usize = 60;

/// What a sizing aims at.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Target {
    /// Peak magnetic pressure on the workpiece, in pascals.
    PeakPressure,
    /// Peak coil current, in amperes.
    PeakCoilCurrent,
    /// Peak net radial force on the workpiece, in newtons.
    PeakRadialForce,
    /// Peak net axial force on the workpiece, in newtons.
    PeakAxialForce,
    /// Peak net workpiece current, in amperes.
    PeakWorkpieceCurrent,
    /// Largest magnitude of the final hoop strain ln(r/r0) over the rings (dimensionless;
    /// motion only).
    FinalStrain,
    /// Largest magnitude of the radial displacement of any ring, in metres (motion only).
    MaxDisplacement,
    /// Largest impact speed on the die or mandrel, in m/s (motion only; 0 without impact).
    ImpactVelocity,
}

impl Target {
    /// Every target, with its name on the command line.
    pub const ALL: [(Target, &'static str); 8] = [
        (Target::PeakPressure, "peak_pressure"),
        (Target::PeakCoilCurrent, "peak_coil_current"),
        (Target::PeakRadialForce, "peak_radial_force"),
        (Target::PeakAxialForce, "peak_axial_force"),
        (Target::PeakWorkpieceCurrent, "peak_workpiece_current"),
        (Target::FinalStrain, "final_strain"),
        (Target::MaxDisplacement, "max_displacement"),
        (Target::ImpactVelocity, "impact_velocity"),
    ];

    /// The command-line name.
    pub fn name(self) -> &'static str {
        Target::ALL.iter().find(|(t, _)| *t == self).map_or("?", |(_, n)| n)
    }

    /// Parses the target value: a bare number is SI (a strain as a fraction); otherwise a
    /// string with a unit of the target's quantity (`150 MPa`, `2 mm`, `250 m/s`, `5%`).
    fn parse_value(self, v: &str) -> Result<f64, String> {
        if let Ok(x) = v.parse::<f64>() {
            return Ok(x);
        }
        let number = |s: &str, what: &str| {
            s.trim().parse::<f64>().map_err(|_| format!("expected {what}, got {v:?}"))
        };
        match self {
            Target::PeakPressure => parse_str(v, Dimension::Stress),
            Target::PeakCoilCurrent | Target::PeakWorkpieceCurrent => {
                parse_str(v, Dimension::Current)
            }
            Target::PeakRadialForce | Target::PeakAxialForce => parse_str(v, Dimension::Force),
            Target::MaxDisplacement => parse_str(v, Dimension::Length),
            Target::FinalStrain => match v.strip_suffix('%') {
                Some(p) => number(p, "a strain as a plain number (0.05) or in percent (5%)")
                    .map(|x| x / 100.0),
                None => Err(format!(
                    "expected a strain as a plain number (0.05) or in percent (5%), got {v:?}"
                )),
            },
            Target::ImpactVelocity => {
                let (num, scale) = if let Some(n) = v.strip_suffix("km/s") {
                    (n, 1e3)
                } else if let Some(n) = v.strip_suffix("m/s") {
                    (n, 1.0)
                } else {
                    return Err(format!("expected a speed in m/s (250 m/s), got {v:?}"));
                };
                number(num, "a speed in m/s (250 m/s)").map(|x| x * scale)
            }
        }
    }

    /// The sweep column of the same quantity (name with unit).
    pub fn column(self) -> &'static str {
        match self {
            Target::PeakPressure => "peak_pressure_Pa",
            Target::PeakCoilCurrent => "peak_coil_current_A",
            Target::PeakRadialForce => "peak_radial_force_N",
            Target::PeakAxialForce => "peak_axial_force_N",
            Target::PeakWorkpieceCurrent => "peak_workpiece_current_A",
            Target::FinalStrain => "final_strain_magnitude",
            Target::MaxDisplacement => "max_displacement_m",
            Target::ImpactVelocity => "max_impact_velocity_m_per_s",
        }
    }

    /// True when the target needs a workpiece.
    pub fn needs_workpiece(self) -> bool {
        self != Target::PeakCoilCurrent
    }

    /// True when the target needs the workpiece to move.
    pub fn needs_motion(self) -> bool {
        matches!(self, Target::FinalStrain | Target::MaxDisplacement | Target::ImpactVelocity)
    }

    /// The target quantity of a run (NaN when the run lacks it, e.g. no motion).
    pub fn value(self, r: &RunResult) -> f64 {
        let s = &r.summary;
        let motion = s.motion.as_ref();
        match self {
            Target::PeakPressure => s.peak_pressure.as_ref().map_or(f64::NAN, |p| p.value),
            Target::PeakCoilCurrent => s.peak_coil_current,
            Target::PeakRadialForce => s.peak_radial_force,
            Target::PeakAxialForce => s.peak_axial_force,
            Target::PeakWorkpieceCurrent => s.peak_workpiece_current,
            Target::FinalStrain => motion.map_or(f64::NAN, |m| {
                m.final_strain_range[0].abs().max(m.final_strain_range[1].abs())
            }),
            Target::MaxDisplacement => motion.map_or(f64::NAN, |m| m.max_displacement.abs()),
            Target::ImpactVelocity => {
                motion.map_or(f64::NAN, |m| m.max_impact_velocity.unwrap_or(0.0))
            }
        }
    }
}

/// A parsed `--target NAME=VALUE`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TargetSpec {
    /// The quantity.
    pub target: Target,
    /// The value to reach, in SI units. Must be > 0.
    pub value: f64,
}

/// Parses `--target NAME=VALUE`, such as `peak_pressure=150MPa`.
pub fn parse_target(text: &str) -> Result<TargetSpec, StudyError> {
    let err = |m: String| spec_error("--target", text, m);
    let Some((name, value)) = text.split_once('=') else {
        return Err(err("expected NAME=VALUE, e.g. peak_pressure=150MPa".into()));
    };
    let name = name.trim();
    let Some(&(target, _)) = Target::ALL.iter().find(|(_, n)| *n == name) else {
        let names: Vec<&str> = Target::ALL.iter().map(|(_, n)| *n).collect();
        return Err(err(format!("unknown target {name:?}; targets are {}", names.join(", "))));
    };
    let v = value.trim();
    let x = target.parse_value(v).map_err(err)?;
    if !(x.is_finite() && x > 0.0) {
        return Err(err(format!("the target value must be > 0, got {v:?}")));
    }
    Ok(TargetSpec { target, value: x })
}

/// Which bank value a sizing adjusts.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Adjust {
    /// `bank.voltage`, in volts.
    Voltage,
    /// `bank.capacitance`, in farads.
    Capacitance,
}

impl Adjust {
    /// Parses `--adjust`.
    pub fn parse(text: &str) -> Result<Adjust, StudyError> {
        match text.trim() {
            "bank.voltage" => Ok(Adjust::Voltage),
            "bank.capacitance" => Ok(Adjust::Capacitance),
            _ => Err(spec_error("--adjust", text, "expected bank.voltage or bank.capacitance")),
        }
    }

    /// The case path.
    pub fn path(self) -> &'static str {
        match self {
            Adjust::Voltage => "bank.voltage",
            Adjust::Capacitance => "bank.capacitance",
        }
    }

    /// The SI unit.
    pub fn unit(self) -> &'static str {
        match self {
            Adjust::Voltage => "V",
            Adjust::Capacitance => "F",
        }
    }

    /// The dimension of range values.
    pub fn dimension(self) -> Dimension {
        match self {
            Adjust::Voltage => Dimension::Voltage,
            Adjust::Capacitance => Dimension::Capacitance,
        }
    }

    /// The value in a case.
    pub fn get(self, case: &Case) -> f64 {
        match self {
            Adjust::Voltage => case.bank.voltage,
            Adjust::Capacitance => case.bank.capacitance,
        }
    }

    /// Sets the value in a case.
    pub fn set(self, case: &mut Case, x: f64) {
        match self {
            Adjust::Voltage => case.bank.voltage = x,
            Adjust::Capacitance => case.bank.capacitance = x,
        }
    }
}

/// Parses `--range LO..HI` for the adjusted value (units allowed; a bare number is SI).
pub fn parse_range(text: &str, adjust: Adjust) -> Result<(f64, f64), StudyError> {
    let err = |m: String| spec_error("--range", text, m);
    let Some((lo, hi)) = text.split_once("..") else {
        return Err(err("expected LO..HI, e.g. 1kV..20kV".into()));
    };
    let one = |s: &str| -> Result<f64, StudyError> {
        let s = s.trim();
        match s.parse::<f64>() {
            Ok(x) => Ok(x),
            Err(_) => parse_str(s, adjust.dimension()).map_err(err),
        }
    };
    let (lo, hi) = (one(lo)?, one(hi)?);
    if !(lo.is_finite() && hi.is_finite() && lo > 0.0 && lo < hi) {
        return Err(err(format!("expected 0 < LO < HI, got {lo} .. {hi}")));
    }
    Ok((lo, hi))
}

/// Parses `--capacitances a,b,c` (units allowed; a bare number is SI).
pub fn parse_capacitances(text: &str) -> Result<Vec<f64>, StudyError> {
    let err = |m: String| spec_error("--capacitances", text, m);
    text.split(',')
        .map(|s| {
            let s = s.trim();
            let x = match s.parse::<f64>() {
                Ok(x) => x,
                Err(_) => parse_str(s, Dimension::Capacitance).map_err(err)?,
            };
            if x.is_finite() && x > 0.0 {
                Ok(x)
            } else {
                Err(err(format!("every capacitance must be > 0, got {s:?}")))
            }
        })
        .collect()
}

/// Settings of a sizing.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SizeOptions {
    /// Range of the adjusted value, in SI; `None`: a tenth to ten times the case's value.
    pub range: Option<(f64, f64)>,
    /// Relative tolerance on the adjusted value. Default: [`REL_TOL`].
    pub rel_tol: f64,
    /// Run every evaluation in coarse resolution.
    pub coarse: bool,
    /// Keep the workpiece fixed (no motion) in every evaluation.
    pub fixed: bool,
}

impl Default for SizeOptions {
    fn default() -> Self {
        SizeOptions { range: None, rel_tol: REL_TOL, coarse: false, fixed: false }
    }
}

/// One engine run of the sizing.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Evaluation {
    /// The adjusted value, in SI.
    pub x: f64,
    /// The target quantity of that run, in SI.
    pub metric: f64,
}

/// The point found.
#[derive(Debug, Clone, PartialEq)]
pub struct SizedPoint {
    /// The smallest adjusted value found that meets the target, in SI.
    pub value: f64,
    /// The largest value tried that does not meet it (`None` when the range's lower end
    /// already does): the smallest value lies in (below, value].
    pub below: Option<f64>,
    /// The target quantity at `value`, in SI.
    pub metric: f64,
    /// Charging voltage there, in volts.
    pub voltage: f64,
    /// Capacitance there, in farads.
    pub capacitance: f64,
    /// Stored energy 0.5 C V^2 there, in joules.
    pub energy: f64,
    /// The ratings checks of the run there.
    pub ratings: RatingsReport,
}

/// The outcome of one sizing.
#[derive(Debug, Clone, PartialEq)]
pub enum Outcome {
    /// The target is met.
    Met(SizedPoint),
    /// Not even the best point of the range meets the target.
    Unreachable {
        /// The adjusted value with the largest metric, in SI.
        best_value: f64,
        /// That metric, in SI.
        best_metric: f64,
    },
}

/// A sizing with its context and every run it made.
#[derive(Debug, Clone, PartialEq)]
pub struct Sizing {
    /// What was adjusted.
    pub adjust: Adjust,
    /// The target.
    pub target: TargetSpec,
    /// The range searched, in SI.
    pub range: (f64, f64),
    /// The relative tolerance used.
    pub rel_tol: f64,
    /// The bank capacitance of the sizing (the case's, or the one given for this option).
    pub capacitance: f64,
    /// What was found.
    pub outcome: Outcome,
    /// Every run, in order.
    pub evaluations: Vec<Evaluation>,
}

/// Finds the smallest value of `adjust` meeting `target` for `base` (see the module doc).
pub fn size(
    base: &Case,
    target: TargetSpec,
    adjust: Adjust,
    opts: &SizeOptions,
) -> Result<Sizing, StudyError> {
    size_with(&Runner::new(2), base, target, adjust, opts)
}

fn size_with(
    runner: &Runner,
    base: &Case,
    target: TargetSpec,
    adjust: Adjust,
    opts: &SizeOptions,
) -> Result<Sizing, StudyError> {
    if target.target.needs_workpiece() && base.workpiece.is_none() {
        return Err(spec_error(
            "--target",
            target.target.name(),
            "needs a workpiece, and the case has none",
        ));
    }
    if target.target.needs_motion() && (opts.fixed || !base.motion.enabled) {
        return Err(spec_error(
            "--target",
            target.target.name(),
            "needs the workpiece to move: the case has motion off (\"motion\": false) or \
             --fixed was given",
        ));
    }
    if !(opts.rel_tol > 0.0 && opts.rel_tol < 0.5) {
        return Err(spec_error(
            "--rel-tol",
            &opts.rel_tol.to_string(),
            "expected a value in (0, 0.5)",
        ));
    }
    let x0 = adjust.get(base);
    let (lo, hi) = opts.range.unwrap_or((x0 / 10.0, x0 * 10.0));
    let mut case = base.clone();
    if opts.coarse {
        case.discretization.mode = ringpulse_case::Resolution::Coarse {
            tube_rings: ringpulse_case::validate::defaults::COARSE_TUBE_RINGS,
        };
    }
    if opts.fixed {
        case.motion.enabled = false;
    }
    let mut evaluations = Vec::new();
    let mut eval = |x: f64| -> Result<(f64, RunResult), StudyError> {
        let mut c = case.clone();
        adjust.set(&mut c, x);
        let r = runner.run(&c).map_err(|e| StudyError::Run {
            what: format!("{} = {x:e} {}", adjust.path(), adjust.unit()),
            message: e.to_string(),
            refused: !matches!(e, ringpulse_engine::EngineError::Solver { .. }),
        })?;
        let m = target.target.value(&r);
        evaluations.push(Evaluation { x, metric: m });
        Ok((m, r))
    };
    let goal = target.value;
    let meets = |m: f64| m.is_finite() && m >= goal;

    // Upward scan for the first point that meets the target.
    let ratio = hi / lo;
    let mut below: Option<(f64, f64)> = None;
    let mut above: Option<(f64, f64, RunResult)> = None;
    let mut best = (lo, f64::NEG_INFINITY);
    for j in 0..SCAN_POINTS {
        let x = if j + 1 == SCAN_POINTS {
            hi
        } else {
            lo * ratio.powf(j as f64 / (SCAN_POINTS - 1) as f64)
        };
        let (m, r) = eval(x)?;
        if m.is_finite() && m > best.1 {
            best = (x, m);
        }
        if meets(m) {
            above = Some((x, m, r));
            break;
        }
        below = Some((x, m));
    }
    let Some((mut b, mut fb_m, mut rb)) = above else {
        let outcome = Outcome::Unreachable { best_value: best.0, best_metric: best.1 };
        return Ok(Sizing {
            adjust,
            target,
            range: (lo, hi),
            rel_tol: opts.rel_tol,
            capacitance: case.bank.capacitance,
            outcome,
            evaluations,
        });
    };
    let mut lower = None;
    if let Some((mut a, fa0)) = below {
        // Illinois regula falsi on ln x for f = metric − goal, with f(a) < 0 <= f(b).
        let (mut fa, mut fb) = (fa0 - goal, fb_m - goal);
        let mut side = 0i8;
        let mut refine = 0;
        while b - a > opts.rel_tol * b && refine < MAX_REFINE {
            let width = b - a;
            let (la, lb) = (a.ln(), b.ln());
            let mut x = if fa.is_finite() && fb.is_finite() && fb > fa {
                (la - fa * (lb - la) / (fb - fa)).exp()
            } else {
                (0.5 * (la + lb)).exp()
            };
            if !(x > a && x < b) {
                x = (0.5 * (la + lb)).exp();
            }
            let (m, r) = eval(x)?;
            refine += 1;
            let f = m - goal;
            if meets(m) {
                (b, fb, fb_m, rb) = (x, f, m, r);
                if side == 1 {
                    fa *= 0.5;
                }
                side = 1;
            } else {
                (a, fa) = (x, if f.is_finite() { f } else { -goal });
                if side == -1 {
                    fb *= 0.5;
                }
                side = -1;
            }
            // Guarantee progress: a step that does not halve the bracket is followed by a
            // bisection.
            if b - a > 0.5 * width && b - a > opts.rel_tol * b && refine < MAX_REFINE {
                let mid = (0.5 * (a.ln() + b.ln())).exp();
                let (m, r) = eval(mid)?;
                refine += 1;
                if meets(m) {
                    (b, fb, fb_m, rb) = (mid, m - goal, m, r);
                } else {
                    (a, fa) = (mid, if m.is_finite() { m - goal } else { -goal });
                }
                side = 0;
            }
        }
        lower = Some(a);
    }
    let mut at = case.clone();
    adjust.set(&mut at, b);
    let point = SizedPoint {
        value: b,
        below: lower,
        metric: fb_m,
        voltage: at.bank.voltage,
        capacitance: at.bank.capacitance,
        energy: 0.5 * at.bank.capacitance * at.bank.voltage * at.bank.voltage,
        ratings: evaluate(&at, &rb),
    };
    Ok(Sizing {
        adjust,
        target,
        range: (lo, hi),
        rel_tol: opts.rel_tol,
        capacitance: at.bank.capacitance,
        outcome: Outcome::Met(point),
        evaluations,
    })
}

/// Sizes the charging voltage for each capacitance and ranks the options: those that meet
/// the target first, by stored energy (smallest first), then the ones that do not.
pub fn size_capacitances(
    base: &Case,
    target: TargetSpec,
    capacitances: &[f64],
    opts: &SizeOptions,
) -> Result<Vec<Sizing>, StudyError> {
    let runner = Runner::new(2);
    let mut out = Vec::with_capacity(capacitances.len());
    for &c in capacitances {
        let mut case = base.clone();
        case.bank.capacitance = c;
        out.push(size_with(&runner, &case, target, Adjust::Voltage, opts)?);
    }
    let energy = |s: &Sizing| match &s.outcome {
        Outcome::Met(p) => p.energy,
        Outcome::Unreachable { .. } => f64::INFINITY,
    };
    out.sort_by(|a, b| energy(a).total_cmp(&energy(b)));
    Ok(out)
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    #[test]
    fn targets_parse_with_units() {
        let t = parse_target("peak_pressure=150MPa").unwrap();
        assert_eq!(t, TargetSpec { target: Target::PeakPressure, value: 150e6 });
        let t = parse_target("peak_radial_force=400 kN").unwrap();
        assert_eq!(t.value, 4e5);
        let t = parse_target("peak_coil_current=1e5").unwrap();
        assert_eq!(t.value, 1e5);
        assert!(parse_target("peak_pressure=150 kA")
            .unwrap_err()
            .to_string()
            .contains("(a current)"));
        assert!(parse_target("peak_pressure=-1").is_err());
        assert!(parse_target("pressure=1").unwrap_err().to_string().contains("targets are"));
    }

    #[test]
    fn motion_targets_parse_with_their_units() {
        let t = parse_target("final_strain=5%").unwrap();
        assert_eq!(t.target, Target::FinalStrain);
        assert!((t.value - 0.05).abs() < 1e-15);
        assert_eq!(parse_target("final_strain=0.05").unwrap().value, 0.05);
        assert_eq!(parse_target("max_displacement=2 mm").unwrap().value, 2e-3);
        assert_eq!(parse_target("impact_velocity=250 m/s").unwrap().value, 250.0);
        assert_eq!(parse_target("impact_velocity=0.3km/s").unwrap().value, 300.0);
        let e = parse_target("impact_velocity=250 mm").unwrap_err().to_string();
        assert!(e.contains("expected a speed in m/s"), "{e}");
        let e = parse_target("final_strain=5 mm").unwrap_err().to_string();
        assert!(e.contains("in percent (5%)"), "{e}");
        assert!(Target::FinalStrain.needs_motion() && !Target::PeakPressure.needs_motion());
    }

    #[test]
    fn ranges_and_capacitances() {
        assert_eq!(parse_range("1kV..20kV", Adjust::Voltage).unwrap(), (1e3, 2e4));
        assert!(parse_range("20kV..1kV", Adjust::Voltage).is_err());
        assert!(parse_range("1uF..2uF", Adjust::Voltage).is_err());
        assert_eq!(parse_capacitances("100uF,2e-4").unwrap(), [100e-6, 2e-4]);
        assert!(parse_capacitances("100uF,0").is_err());
        assert!(Adjust::parse("bank.inductance").is_err());
    }
}
