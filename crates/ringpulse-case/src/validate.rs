//! Validation: from the raw [`CaseFile`] to a checked [`Case`] in SI units.
//!
//! This is the one place where defaults are filled in (see [`defaults`]) and where every
//! range and consistency check happens. Validation does not stop at the first problem: it
//! walks the whole file, collects every problem with its JSON path (`coil.conductor.radial`)
//! and returns them together in a [`CaseError`], so a user fixes a case in one round.
//! Cautions that do not make a case invalid (a ferromagnetic material, an ignored field) come
//! back as warnings beside the `Case`.

use std::fmt::Display;

use serde_json::Value;

use crate::file::{
    BankFile, CapacitorRatingsFile, CaseFile, CoilFile, CoilRatingsFile, ConductorFile,
    CrowbarFile, CustomMaterialFile, DiscretizationFile, FeederFile, FeederRatingsFile,
    MaterialFile, RatingsFile, Section, SolverFile, SplitFile, SwitchRatingsFile, TubeFile,
    Unknown,
};
use crate::materials;
use crate::model::{
    Bank, CapacitorRatings, Case, Coil, CoilRatings, Crowbar, Discretization, FeederRatings,
    Material, Ratings, Resolution, SolverSettings, Split, SwitchRatings, Tube,
};
use crate::units::{self, describe_value, Dimension};

pub mod defaults {
    //! Every default and hard limit of the case format, in one place.
    //!
    //! docs/case-format.md lists the same values; a change here updates it too.

    /// Bank and switch inductance, in henries.
    pub const BANK_INDUCTANCE: f64 = 0.0;
    /// Bank and switch resistance, in ohms.
    pub const BANK_RESISTANCE: f64 = 0.0;
    /// Crowbar path resistance, in ohms.
    pub const CROWBAR_RESISTANCE: f64 = 0.0;
    /// Crowbar path inductance, in henries.
    pub const CROWBAR_INDUCTANCE: f64 = 0.0;
    /// Feeder inductance, in henries.
    pub const FEEDER_INDUCTANCE: f64 = 0.0;
    /// Feeder resistance, in ohms.
    pub const FEEDER_RESISTANCE: f64 = 0.0;
    /// Axial centre of coil and workpiece, in metres.
    pub const Z_CENTER: f64 = 0.0;
    /// Cell edge as a multiple of the skin depth in `skin_depth` resolution.
    pub const CELL_OVER_SKIN_DEPTH: f64 = 1.0;
    /// Axial rings of the tube in `coarse` resolution.
    pub const COARSE_TUBE_RINGS: usize = 40;
    /// Largest number of filaments accepted (the inductance matrix is then 128 MB).
    pub const MAX_FILAMENTS: usize = 4000;
    /// Largest cell aspect ratio (longer / shorter side) in automatic splits.
    pub const MAX_ASPECT: f64 = 1.5;
    /// Relative tolerance of the adaptive stepper at fixed geometry.
    pub const REL_TOL: f64 = 1e-7;
    /// Absolute tolerance on the scaled state at fixed geometry.
    pub const ABS_TOL: f64 = 1e-9;
    /// Relative tolerance of the adaptive stepper with a moving workpiece: the results of the
    /// demos move by about 1e-6 relative from the fixed-geometry setting (docs/performance.md),
    /// far below the model's own error, at half the evaluations (each yield and unloading of
    /// a ring is a sharp feature the stepper resolves).
    pub const MOTION_REL_TOL: f64 = 1e-6;
    /// Absolute tolerance on the scaled state with a moving workpiece.
    pub const MOTION_ABS_TOL: f64 = 1e-6;
    /// Relative tolerance with a moving workpiece in the coarse preview: its discretization
    /// error (about 1 % on the peak current against the default resolution) dwarfs the
    /// stepper's at this setting (about 2e-4 on the efficiency, 2e-5 or less on the other
    /// results of the expansion demo; docs/performance.md), at three quarters of the
    /// evaluations.
    pub const PREVIEW_MOTION_REL_TOL: f64 = 1e-5;
    /// Absolute tolerance on the scaled state with a moving workpiece in the coarse preview.
    pub const PREVIEW_MOTION_ABS_TOL: f64 = 1e-5;
    /// Initial temperature of every conductor, in kelvin (20 °C).
    pub const INITIAL_TEMPERATURE: f64 = 293.15;
    /// Reference temperature of a custom material's resistivity, in kelvin (20 °C).
    pub const REFERENCE_TEMPERATURE: f64 = crate::materials::REFERENCE_TEMPERATURE;
    /// What a sweep of `coil.turns` keeps fixed.
    pub const COIL_HOLD: &str = "pitch";
    /// Capacitor units sharing the bank current (`ratings.capacitors.units`).
    pub const CAPACITOR_UNITS: usize = 1;
    /// Yield strength over allowed coil hoop stress (`ratings.coil.safety_factor`).
    pub const COIL_SAFETY_FACTOR: f64 = 2.0;

    /// Hard upper limit of `discretization.max_filaments`: a dense inductance matrix of
    /// 20000 x 20000 `f64` takes 3.2 GB.
    pub const MAX_FILAMENTS_LIMIT: usize = 20_000;
    /// Largest relative tolerance accepted; looser runs are not worth reporting.
    pub const REL_TOL_MAX: f64 = 1e-2;
    /// Largest number of output samples, `end_time / output_step`.
    pub const MAX_OUTPUT_SAMPLES: f64 = 1e6;
}

/// Origin used by [`validate`], which does not know where the case came from.
const IN_MEMORY: &str = "(in memory)";

/// Path used for problems with the document as a whole (syntax, top-level type).
const DOCUMENT: &str = "(document)";

/// One thing wrong with a case, at one place in the JSON.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Problem {
    /// JSON path of the offending field, such as `coil.conductor.radial`, or `(document)`.
    pub path: String,
    /// What is wrong, starting lowercase, without a trailing period.
    pub message: String,
}

impl Display for Problem {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}: {}", self.path, self.message)
    }
}

/// A case that cannot be run, with every problem found in it.
///
/// Displays as a header line naming the origin, then one indented line per problem:
///
/// ```text
/// invalid case "cases/x.json"
///   bank.voltage: expected a voltage (V, e.g. "8 kV"), got "8 uF" (a capacitance)
///   coil.turns: missing field
/// ```
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("invalid case \"{origin}\"{}", problem_lines(.problems))]
pub struct CaseError {
    /// Where the case came from, usually its file name.
    pub origin: String,
    /// Every problem found, in the order of the schema.
    pub problems: Vec<Problem>,
}

fn problem_lines(problems: &[Problem]) -> String {
    problems.iter().map(|p| format!("\n  {p}")).collect()
}

/// Parses the JSON text of a case file into a [`CaseFile`], without checking values.
///
/// A syntax error becomes a single problem at `(document)` naming the line and column.
pub fn parse_case_file(text: &str, origin: &str) -> Result<CaseFile, CaseError> {
    let one = |message: String| CaseError {
        origin: origin.to_string(),
        problems: vec![Problem { path: DOCUMENT.to_string(), message }],
    };
    // Editors on some systems write a byte-order mark, which JSON parsers reject.
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let value: Value = match serde_json::from_str(text) {
        Ok(v) => v,
        Err(e) => {
            let full = e.to_string();
            let suffix = format!(" at line {} column {}", e.line(), e.column());
            let what = full.strip_suffix(&suffix).unwrap_or(&full);
            return Err(one(format!(
                "invalid JSON at line {}, column {}: {what}",
                e.line(),
                e.column()
            )));
        }
    };
    if !value.is_object() {
        return Err(one(format!(
            "expected a JSON object at the top level, got {}",
            describe_value(&value)
        )));
    }
    // Every field type accepts any JSON value, so this fails only on a serde surprise.
    serde_json::from_value(value).map_err(|e| one(format!("unreadable case: {e}")))
}

/// Parses and validates a case file's text; `origin` (usually the file name) goes into the
/// error. Returns the case and any warnings, each `"path: message"`.
pub fn load_case(text: &str, origin: &str) -> Result<(Case, Vec<String>), CaseError> {
    let file = parse_case_file(text, origin)?;
    validate(&file).map_err(|e| CaseError { origin: origin.to_string(), ..e })
}

/// Validates a parsed case file, fills in defaults and converts to SI.
///
/// Returns the case and any warnings (each `"path: message"`), or every problem found. The
/// error's origin is `"(in memory)"`; [`load_case`] replaces it with the file name.
pub fn validate(file: &CaseFile) -> Result<(Case, Vec<String>), CaseError> {
    let mut ck = Checker::default();
    let description = ck.description(&file.description);
    let bank = ck.bank(&file.bank);
    let feeder = ck.feeder(&file.feeder);
    let coil = ck.coil(&file.coil);
    let workpiece = ck.workpiece(&file.workpiece);
    let discretization = ck.discretization(&file.discretization);
    let solver = ck.solver(&file.solver);
    let initial_temperature = ck.or_default(
        "initial_temperature",
        &file.initial_temperature,
        Dimension::Temperature,
        Range::Positive,
        defaults::INITIAL_TEMPERATURE,
    );
    let ratings = ck.ratings(&file.ratings, coil.as_ref());
    let motion =
        ck.motion(&file.motion, coil.as_ref(), workpiece.as_ref().and_then(|w| w.as_ref()));
    ck.common("", &file.notes, &file.unknown, CaseFile::FIELDS);

    if let (Some(coil), Some(Some(tube))) = (&coil, &workpiece) {
        ck.check_overlap(coil, tube);
    }
    if let (Some(coil), Some(tube), Some(disc)) = (&coil, &workpiece, &discretization) {
        ck.check_filaments(coil, tube.as_ref(), disc);
    }
    if let (Some(t), Some(coil), Some(tube)) = (initial_temperature, &coil, &workpiece) {
        let raw = file.initial_temperature.as_ref();
        ck.check_temperature(t, raw, "coil", &coil.material);
        if let Some(tube) = tube {
            ck.check_temperature(t, raw, "workpiece", &tube.material);
        }
    }

    let bank = match (bank, feeder) {
        (Some(b), Some((feeder_inductance, feeder_resistance))) => {
            Some(Bank { feeder_inductance, feeder_resistance, ..b })
        }
        _ => None,
    };
    match (description, bank, coil, workpiece, discretization, solver, initial_temperature, ratings)
    {
        (
            Some(description),
            Some(bank),
            Some(coil),
            Some(workpiece),
            Some(discretization),
            Some(solver),
            Some(initial_temperature),
            Some(ratings),
        ) if ck.problems.is_empty() => Ok((
            Case {
                description,
                bank,
                coil,
                workpiece,
                discretization,
                solver,
                initial_temperature,
                ratings,
                motion: motion.unwrap_or_default(),
            },
            ck.warnings,
        )),
        _ => {
            if ck.problems.is_empty() {
                // Every `None` above is meant to come with a problem; keep the error non-empty
                // even if one slipped through.
                ck.problem(DOCUMENT, "internal error: a section failed without a message");
            }
            Err(CaseError { origin: IN_MEMORY.to_string(), problems: ck.problems })
        }
    }
}

#[path = "motion_check.rs"]
pub(crate) mod motion_check;

/// The outcome of reading one optional field.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Got<T> {
    /// Not present (or JSON null).
    Absent,
    /// Present but invalid; the problem has been recorded.
    Bad,
    /// Present and valid.
    Ok(T),
}

impl<T> Got<T> {
    fn is_absent(&self) -> bool {
        matches!(self, Got::Absent)
    }
}

/// The allowed range of a quantity, checked after unit conversion.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Range {
    /// Any finite value.
    Any,
    /// x > 0.
    Positive,
    /// x >= 0.
    NonNegative,
    /// x >= the bound.
    AtLeast(f64),
    /// lo < x <= hi.
    OpenClosed(f64, f64),
}

impl Range {
    fn admits(self, x: f64) -> bool {
        match self {
            Range::Any => true,
            Range::Positive => x > 0.0,
            Range::NonNegative => x >= 0.0,
            Range::AtLeast(lo) => x >= lo,
            Range::OpenClosed(lo, hi) => x > lo && x <= hi,
        }
    }

    fn requirement(self) -> String {
        match self {
            Range::Any => "be finite".to_string(),
            Range::Positive => "be > 0".to_string(),
            Range::NonNegative => "be >= 0".to_string(),
            Range::AtLeast(lo) => format!("be >= {}", fmt_num(lo)),
            Range::OpenClosed(lo, hi) => format!("be in ({}, {}]", fmt_num(lo), fmt_num(hi)),
        }
    }
}

/// `parent.key`, or `key` at the top level.
fn join(parent: &str, key: &str) -> String {
    if parent.is_empty() {
        key.to_string()
    } else {
        format!("{parent}.{key}")
    }
}

/// A quoted string for messages.
fn quoted(text: &str) -> String {
    describe_value(&Value::String(text.to_string()))
}

/// A number with about six significant digits and no trailing zeros: 18.5, 0.0035, 1e-12.
fn fmt_num(x: f64) -> String {
    if x == 0.0 || !x.is_finite() {
        return format!("{x}");
    }
    let a = x.abs();
    if !(1e-4..1e9).contains(&a) {
        // Six significant digits here too, so that 0.1 us shows as 1e-7, not 1.0000000000000001e-7.
        let s = format!("{x:.5e}");
        return match s.split_once('e') {
            Some((mantissa, exp)) if mantissa.contains('.') => {
                format!("{}e{exp}", mantissa.trim_end_matches('0').trim_end_matches('.'))
            }
            _ => s,
        };
    }
    let decimals = (5 - a.log10().floor() as i32).max(0) as usize;
    let s = format!("{x:.decimals$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// A length in millimetres for messages.
fn fmt_mm(metres: f64) -> String {
    format!("{} mm", fmt_num(metres * 1e3))
}

/// An interval of lengths in millimetres for messages: "18.5 to 21.5 mm".
fn fmt_mm_range(lo: f64, hi: f64) -> String {
    format!("{} to {} mm", fmt_num(lo * 1e3), fmt_num(hi * 1e3))
}

/// Collects problems and warnings while walking the file.
#[derive(Debug, Default)]
struct Checker {
    problems: Vec<Problem>,
    warnings: Vec<String>,
}

impl Checker {
    fn problem(&mut self, path: &str, message: impl Into<String>) {
        self.problems.push(Problem { path: path.to_string(), message: message.into() });
    }

    fn warn(&mut self, path: &str, message: impl Display) {
        self.warnings.push(format!("{path}: {message}"));
    }

    /// The object at `path`, if it is one. A missing required object is a problem.
    fn object<'a, T>(
        &mut self,
        path: &str,
        section: &'a Option<Section<T>>,
        required: bool,
    ) -> Option<&'a T> {
        match section {
            None => {
                if required {
                    self.problem(path, "missing field");
                }
                None
            }
            Some(Section::Invalid(v)) => {
                self.problem(path, format!("expected an object, got {}", describe_value(v)));
                None
            }
            Some(Section::Object(t)) => Some(t),
        }
    }

    /// Checks what every object has: an optional `notes` string and no unknown keys.
    fn common(&mut self, path: &str, notes: &Option<Value>, unknown: &Unknown, fields: &[&str]) {
        if let Some(v) = notes {
            if !v.is_string() {
                self.problem(
                    &join(path, "notes"),
                    format!("must be a string, got {}", describe_value(v)),
                );
            }
        }
        for key in unknown.keys() {
            self.problem(
                &join(path, key),
                format!("unknown field (expected one of: {})", fields.join(", ")),
            );
        }
    }

    /// Reads a quantity and checks its range.
    fn quantity(
        &mut self,
        path: &str,
        v: &Option<Value>,
        dim: Dimension,
        range: Range,
    ) -> Got<f64> {
        let Some(v) = v else { return Got::Absent };
        match units::parse_quantity(v, dim) {
            Err(message) => {
                self.problem(path, message);
                Got::Bad
            }
            Ok(x) if range.admits(x) => Got::Ok(x),
            Ok(x) => {
                let mut got = describe_value(v);
                if dim == Dimension::Temperature && v.is_string() {
                    got = format!("{got} (= {} K)", fmt_num(x));
                }
                self.problem(path, format!("must {}, got {got}", range.requirement()));
                Got::Bad
            }
        }
    }

    fn required(
        &mut self,
        path: &str,
        v: &Option<Value>,
        dim: Dimension,
        range: Range,
    ) -> Option<f64> {
        match self.quantity(path, v, dim, range) {
            Got::Absent => {
                self.problem(path, "missing field");
                None
            }
            Got::Bad => None,
            Got::Ok(x) => Some(x),
        }
    }

    fn or_default(
        &mut self,
        path: &str,
        v: &Option<Value>,
        dim: Dimension,
        range: Range,
        default: f64,
    ) -> Option<f64> {
        match self.quantity(path, v, dim, range) {
            Got::Absent => Some(default),
            Got::Bad => None,
            Got::Ok(x) => Some(x),
        }
    }

    /// An optional quantity without default: `Some(None)` when absent, `None` when invalid.
    fn optional(
        &mut self,
        path: &str,
        v: &Option<Value>,
        dim: Dimension,
        range: Range,
    ) -> Option<Option<f64>> {
        match self.quantity(path, v, dim, range) {
            Got::Absent => Some(None),
            Got::Bad => None,
            Got::Ok(x) => Some(Some(x)),
        }
    }

    /// Reads a whole number >= `min`. `6` and `6.0` are accepted, `6.5` and `"6"` are not.
    fn count(&mut self, path: &str, v: &Option<Value>, min: usize) -> Got<usize> {
        let Some(v) = v else { return Got::Absent };
        let n = match v {
            Value::Number(n) => match (n.as_u64(), n.as_f64()) {
                (Some(u), _) => usize::try_from(u).ok(),
                // 2^53: beyond it a float no longer holds every integer.
                (None, Some(f))
                    if f.fract() == 0.0 && (0.0..9.007_199_254_740_992e15).contains(&f) =>
                {
                    usize::try_from(f as u64).ok()
                }
                _ => None,
            },
            _ => None,
        };
        match n {
            Some(n) if n >= min => Got::Ok(n),
            _ => {
                self.problem(
                    path,
                    format!("must be an integer >= {min}, got {}", describe_value(v)),
                );
                Got::Bad
            }
        }
    }

    fn count_or_default(
        &mut self,
        path: &str,
        v: &Option<Value>,
        min: usize,
        default: usize,
    ) -> Option<usize> {
        match self.count(path, v, min) {
            Got::Absent => Some(default),
            Got::Bad => None,
            Got::Ok(n) => Some(n),
        }
    }

    fn string<'a>(&mut self, path: &str, v: &'a Option<Value>) -> Got<&'a str> {
        match v {
            None => Got::Absent,
            Some(Value::String(s)) => Got::Ok(s),
            Some(other) => {
                self.problem(path, format!("must be a string, got {}", describe_value(other)));
                Got::Bad
            }
        }
    }

    fn description(&mut self, v: &Option<Value>) -> Option<String> {
        match self.string("description", v) {
            Got::Absent => {
                self.problem("description", "missing field");
                None
            }
            Got::Bad => None,
            Got::Ok(s) if s.trim().is_empty() => {
                self.problem("description", "must not be empty");
                None
            }
            Got::Ok(s) => Some(s.to_string()),
        }
    }

    /// The bank without its feeder values, which `feeder` supplies.
    fn bank(&mut self, section: &Option<Section<BankFile>>) -> Option<Bank> {
        let b = self.object("bank", section, true)?;
        use Dimension::{Capacitance, Inductance, Resistance, Voltage};
        let capacitance =
            self.required("bank.capacitance", &b.capacitance, Capacitance, Range::Positive);
        let voltage = self.required("bank.voltage", &b.voltage, Voltage, Range::Positive);
        let inductance = self.or_default(
            "bank.inductance",
            &b.inductance,
            Inductance,
            Range::NonNegative,
            defaults::BANK_INDUCTANCE,
        );
        let resistance = self.or_default(
            "bank.resistance",
            &b.resistance,
            Resistance,
            Range::NonNegative,
            defaults::BANK_RESISTANCE,
        );
        let crowbar = self.crowbar(&b.crowbar);
        self.common("bank", &b.notes, &b.unknown, BankFile::FIELDS);
        Some(Bank {
            capacitance: capacitance?,
            voltage: voltage?,
            inductance: inductance?,
            resistance: resistance?,
            feeder_inductance: defaults::FEEDER_INDUCTANCE,
            feeder_resistance: defaults::FEEDER_RESISTANCE,
            crowbar: crowbar?,
        })
    }

    /// `Some(None)` when there is no crowbar, `None` when it is invalid.
    fn crowbar(&mut self, section: &Option<Section<CrowbarFile>>) -> Option<Option<Crowbar>> {
        if section.is_none() {
            return Some(None);
        }
        let c = self.object("bank.crowbar", section, false)?;
        let resistance = self.or_default(
            "bank.crowbar.resistance",
            &c.resistance,
            Dimension::Resistance,
            Range::NonNegative,
            defaults::CROWBAR_RESISTANCE,
        );
        let inductance = self.or_default(
            "bank.crowbar.inductance",
            &c.inductance,
            Dimension::Inductance,
            Range::NonNegative,
            defaults::CROWBAR_INDUCTANCE,
        );
        self.common("bank.crowbar", &c.notes, &c.unknown, CrowbarFile::FIELDS);
        Some(Some(Crowbar { resistance: resistance?, inductance: inductance? }))
    }

    /// Feeder inductance and resistance, defaults when the section is absent.
    fn feeder(&mut self, section: &Option<Section<FeederFile>>) -> Option<(f64, f64)> {
        let empty = FeederFile::default();
        let f = if section.is_none() { &empty } else { self.object("feeder", section, false)? };
        let inductance = self.or_default(
            "feeder.inductance",
            &f.inductance,
            Dimension::Inductance,
            Range::NonNegative,
            defaults::FEEDER_INDUCTANCE,
        );
        let resistance = self.or_default(
            "feeder.resistance",
            &f.resistance,
            Dimension::Resistance,
            Range::NonNegative,
            defaults::FEEDER_RESISTANCE,
        );
        self.common("feeder", &f.notes, &f.unknown, FeederFile::FIELDS);
        Some((inductance?, resistance?))
    }

    fn coil(&mut self, section: &Option<Section<CoilFile>>) -> Option<Coil> {
        use Dimension::Length;
        let c = self.object("coil", section, true)?;
        let turns = match self.count("coil.turns", &c.turns, 1) {
            Got::Absent => {
                self.problem("coil.turns", "missing field");
                None
            }
            Got::Bad => None,
            Got::Ok(n) => Some(n),
        };
        let mean = self.quantity("coil.mean_radius", &c.mean_radius, Length, Range::Positive);
        let inner = self.quantity("coil.inner_radius", &c.inner_radius, Length, Range::Positive);
        let (radial, axial) = match self.object("coil.conductor", &c.conductor, true) {
            Some(k) => {
                let radial =
                    self.required("coil.conductor.radial", &k.radial, Length, Range::Positive);
                let axial =
                    self.required("coil.conductor.axial", &k.axial, Length, Range::Positive);
                self.common("coil.conductor", &k.notes, &k.unknown, ConductorFile::FIELDS);
                (radial, axial)
            }
            None => (None, None),
        };
        let mean_radius = match (mean, inner) {
            (Got::Absent, Got::Absent) => {
                self.problem(
                    "coil.mean_radius",
                    "missing field (give coil.mean_radius or coil.inner_radius)",
                );
                None
            }
            (m, i) if !m.is_absent() && !i.is_absent() => {
                self.problem(
                    "coil.inner_radius",
                    "give either coil.mean_radius or coil.inner_radius, not both",
                );
                None
            }
            (Got::Ok(m), _) => match radial {
                Some(h) if h >= 2.0 * m => {
                    self.problem(
                        "coil.conductor.radial",
                        format!(
                            "radial thickness {} must be less than twice the mean radius \
                             (2 × {} = {}), else the winding's inner radius is <= 0",
                            fmt_mm(h),
                            fmt_mm(m),
                            fmt_mm(2.0 * m)
                        ),
                    );
                    None
                }
                _ => Some(m),
            },
            (_, Got::Ok(i)) => radial.map(|h| i + h / 2.0),
            _ => None,
        };
        let pitch = self.pitch(c, turns, axial);
        let z_center =
            self.or_default("coil.z_center", &c.z_center, Length, Range::Any, defaults::Z_CENTER);
        let material = self.material("coil.material", &c.material);
        let split = self.split("coil.split", &c.split);
        match self.string("coil.hold", &c.hold) {
            Got::Absent | Got::Bad | Got::Ok("pitch" | "winding_length") => {}
            Got::Ok(other) => self.problem(
                "coil.hold",
                format!("must be \"pitch\" or \"winding_length\", got {}", quoted(other)),
            ),
        }
        self.common("coil", &c.notes, &c.unknown, CoilFile::FIELDS);
        Some(Coil {
            turns: turns?,
            mean_radius: mean_radius?,
            radial_thickness: radial?,
            axial_width: axial?,
            pitch: pitch?,
            z_center: z_center?,
            material: material?,
            split: split?,
        })
    }

    /// The pitch from `pitch` or `winding_length`; for one turn, the axial width.
    fn pitch(&mut self, c: &CoilFile, turns: Option<usize>, axial: Option<f64>) -> Option<f64> {
        use Dimension::Length;
        let pitch = self.quantity("coil.pitch", &c.pitch, Length, Range::Positive);
        let length =
            self.quantity("coil.winding_length", &c.winding_length, Length, Range::Positive);
        let turns = turns?;
        if turns == 1 {
            for (key, got) in [("coil.pitch", pitch), ("coil.winding_length", length)] {
                if !got.is_absent() {
                    self.warn(key, "ignored for a single turn (the pitch is the axial width)");
                }
            }
            return axial;
        }
        let width = axial?;
        // Pitch equal to the width (turns touching) must pass even after the division in
        // winding_length / turns, so compare with a relative tolerance of a few ulps.
        let too_close = |p: f64| p < width * (1.0 - 1e-12);
        match (pitch, length) {
            (Got::Absent, Got::Absent) => {
                self.problem(
                    "coil.pitch",
                    "missing field (give coil.pitch or coil.winding_length when coil.turns > 1)",
                );
                None
            }
            (p, l) if !p.is_absent() && !l.is_absent() => {
                self.problem(
                    "coil.winding_length",
                    "give either coil.pitch or coil.winding_length, not both",
                );
                None
            }
            (Got::Ok(p), _) if too_close(p) => {
                self.problem(
                    "coil.pitch",
                    format!(
                        "turns overlap: pitch {} is less than the conductor's axial width {} \
                         (coil.conductor.axial)",
                        fmt_mm(p),
                        fmt_mm(width)
                    ),
                );
                None
            }
            (Got::Ok(p), _) => Some(p),
            (_, Got::Ok(l)) => {
                let p = l / turns as f64;
                if too_close(p) {
                    self.problem(
                        "coil.winding_length",
                        format!(
                            "turns overlap: {} over {turns} turns gives a pitch of {}, less than \
                             the conductor's axial width {} (coil.conductor.axial)",
                            fmt_mm(l),
                            fmt_mm(p),
                            fmt_mm(width)
                        ),
                    );
                    None
                } else {
                    Some(p)
                }
            }
            _ => None,
        }
    }

    /// `Some(None)` when there is no workpiece, `None` when it is invalid.
    fn workpiece(&mut self, section: &Option<Section<TubeFile>>) -> Option<Option<Tube>> {
        use Dimension::Length;
        if section.is_none() {
            return Some(None);
        }
        let t = self.object("workpiece", section, false)?;
        let inner_radius =
            self.required("workpiece.inner_radius", &t.inner_radius, Length, Range::Positive);
        let wall = self.required("workpiece.wall", &t.wall, Length, Range::Positive);
        let length = self.required("workpiece.length", &t.length, Length, Range::Positive);
        let z_center = self.or_default(
            "workpiece.z_center",
            &t.z_center,
            Length,
            Range::Any,
            defaults::Z_CENTER,
        );
        let material = self.material("workpiece.material", &t.material);
        let split = self.split("workpiece.split", &t.split);
        self.common("workpiece", &t.notes, &t.unknown, TubeFile::FIELDS);
        Some(Some(Tube {
            inner_radius: inner_radius?,
            wall: wall?,
            length: length?,
            z_center: z_center?,
            material: material?,
            split: split?,
        }))
    }

    /// `Some(None)` when there is no split, `None` when it is invalid.
    fn split(&mut self, path: &str, section: &Option<Section<SplitFile>>) -> Option<Option<Split>> {
        if section.is_none() {
            return Some(None);
        }
        let s = self.object(path, section, false)?;
        let part = |ck: &mut Checker, key: &str, v: &Option<Value>| {
            let p = join(path, key);
            match ck.count(&p, v, 1) {
                Got::Absent => {
                    ck.problem(&p, "missing field");
                    None
                }
                Got::Bad => None,
                Got::Ok(n) => Some(n),
            }
        };
        let radial = part(self, "radial", &s.radial);
        let axial = part(self, "axial", &s.axial);
        self.common(path, &s.notes, &s.unknown, SplitFile::FIELDS);
        Some(Some(Split { radial: radial?, axial: axial? }))
    }

    fn material(&mut self, path: &str, m: &Option<MaterialFile>) -> Option<Material> {
        match m {
            None => {
                self.problem(path, "missing field");
                None
            }
            Some(MaterialFile::Invalid(v)) => {
                self.problem(
                    path,
                    format!(
                        "expected a built-in material name (e.g. \"copper\") or a material \
                         object, got {}",
                        describe_value(v)
                    ),
                );
                None
            }
            Some(MaterialFile::Name(name)) => self.builtin_material(path, name),
            Some(MaterialFile::Custom(c)) => self.custom_material(path, c),
        }
    }

    fn builtin_material(&mut self, path: &str, name: &str) -> Option<Material> {
        match materials::builtin(name) {
            Some(m) => {
                if let Some(w) = materials::builtin_warning(name) {
                    self.warn(path, w);
                }
                Some(m)
            }
            None => {
                self.problem(
                    path,
                    format!(
                        "unknown material {}; the built-in materials are {}",
                        quoted(name),
                        materials::builtin_names().join(", ")
                    ),
                );
                None
            }
        }
    }

    fn custom_material(&mut self, path: &str, c: &CustomMaterialFile) -> Option<Material> {
        let name = self.string(&join(path, "name"), &c.name);
        let source = self.string(&join(path, "source"), &c.source);
        let base_path = join(path, "base");
        let base = match self.string(&base_path, &c.base) {
            Got::Absent => Base::None,
            Got::Bad => Base::Invalid,
            Got::Ok(b) => match self.builtin_material(&base_path, b) {
                Some(m) => Base::Material(m),
                None => Base::Invalid,
            },
        };
        use Dimension::{
            Density, Resistivity, SpecificHeat, Stress, Temperature, TemperatureCoefficient,
        };
        use Range::{NonNegative, Positive};
        let mut overridden = Vec::new();
        let mut prop = |ck: &mut Checker,
                        key: &'static str,
                        v: &Option<Value>,
                        dim: Dimension,
                        range: Range,
                        from_base: fn(&Material) -> f64| {
            let p = join(path, key);
            match (ck.quantity(&p, v, dim, range), &base) {
                (Got::Ok(x), _) => {
                    overridden.push(key);
                    Some(x)
                }
                (Got::Bad, _) => None,
                (Got::Absent, Base::Material(m)) => Some(from_base(m)),
                (Got::Absent, Base::None) => {
                    ck.problem(
                        &p,
                        "missing field (a material without \"base\" needs every property)",
                    );
                    None
                }
                (Got::Absent, Base::Invalid) => None,
            }
        };
        let resistivity =
            prop(self, "resistivity", &c.resistivity, Resistivity, Positive, |m| m.resistivity);
        let temperature_coefficient = prop(
            self,
            "temperature_coefficient",
            &c.temperature_coefficient,
            TemperatureCoefficient,
            NonNegative,
            |m| m.temperature_coefficient,
        );
        let density = prop(self, "density", &c.density, Density, Positive, |m| m.density);
        let specific_heat =
            prop(self, "specific_heat", &c.specific_heat, SpecificHeat, Positive, |m| {
                m.specific_heat
            });
        let melting_point =
            prop(self, "melting_point", &c.melting_point, Temperature, Positive, |m| {
                m.melting_point
            });
        let youngs_modulus =
            prop(self, "youngs_modulus", &c.youngs_modulus, Stress, Positive, |m| m.youngs_modulus);
        let yield_strength =
            prop(self, "yield_strength", &c.yield_strength, Stress, Positive, |m| m.yield_strength);
        // The reference temperature is optional even without a base: it defaults to 20 °C.
        let reference_path = join(path, "reference_temperature");
        let reference_temperature =
            match self.quantity(&reference_path, &c.reference_temperature, Temperature, Positive) {
                Got::Ok(t) => {
                    overridden.push("reference_temperature");
                    Some(t)
                }
                Got::Bad => None,
                Got::Absent => Some(match &base {
                    Base::Material(m) => m.reference_temperature,
                    _ => defaults::REFERENCE_TEMPERATURE,
                }),
            };
        if let (Some(melt), Some(reference)) = (melting_point, reference_temperature) {
            if melt <= reference {
                self.problem(
                    &join(path, "melting_point"),
                    format!(
                        "must be above the reference temperature {} K, got {} K",
                        fmt_num(reference),
                        fmt_num(melt)
                    ),
                );
            }
        }
        self.common(path, &c.notes, &c.unknown, CustomMaterialFile::FIELDS);

        let base = match base {
            Base::Material(m) => Some(m),
            Base::None => None,
            Base::Invalid => return None,
        };
        let name = match (name, &base) {
            (Got::Ok(n), _) => n.to_string(),
            (Got::Bad, _) => return None,
            (Got::Absent, Some(b)) if overridden.is_empty() => {
                self.warn(
                    path,
                    format!(
                        "nothing is overridden; the plain name {} says the same",
                        quoted(&b.name)
                    ),
                );
                b.name.clone()
            }
            (Got::Absent, Some(b)) => format!("{} (modified)", b.name),
            (Got::Absent, None) => "custom".to_string(),
        };
        let source = match (source, &base) {
            (Got::Ok(s), _) => s.to_string(),
            (Got::Bad, _) => return None,
            (Got::Absent, Some(b)) if overridden.is_empty() => b.source.clone(),
            (Got::Absent, Some(b)) => {
                format!("{}; overridden in the case file: {}", b.source, overridden.join(", "))
            }
            (Got::Absent, None) => "given in the case file (no source stated)".to_string(),
        };
        let melting_point = melting_point?;
        let reference_temperature = reference_temperature?;
        if melting_point <= reference_temperature {
            return None;
        }
        Some(Material {
            name,
            resistivity: resistivity?,
            temperature_coefficient: temperature_coefficient?,
            reference_temperature,
            density: density?,
            specific_heat: specific_heat?,
            melting_point,
            youngs_modulus: youngs_modulus?,
            yield_strength: yield_strength?,
            source,
        })
    }

    fn discretization(
        &mut self,
        section: &Option<Section<DiscretizationFile>>,
    ) -> Option<Discretization> {
        let empty = DiscretizationFile::default();
        let d =
            if section.is_none() { &empty } else { self.object("discretization", section, false)? };
        let resolution = match self.string("discretization.resolution", &d.resolution) {
            Got::Absent | Got::Ok("skin_depth") => Some(false),
            Got::Ok("coarse") => Some(true),
            Got::Ok(other) => {
                self.problem(
                    "discretization.resolution",
                    format!("must be \"skin_depth\" or \"coarse\", got {}", quoted(other)),
                );
                None
            }
            Got::Bad => None,
        };
        let cell = self.or_default(
            "discretization.cell_over_skin_depth",
            &d.cell_over_skin_depth,
            Dimension::Dimensionless,
            Range::Positive,
            defaults::CELL_OVER_SKIN_DEPTH,
        );
        let rings = self.count_or_default(
            "discretization.coarse_tube_rings",
            &d.coarse_tube_rings,
            1,
            defaults::COARSE_TUBE_RINGS,
        );
        let max_filaments = match self.count_or_default(
            "discretization.max_filaments",
            &d.max_filaments,
            1,
            defaults::MAX_FILAMENTS,
        ) {
            Some(n) if n > defaults::MAX_FILAMENTS_LIMIT => {
                self.problem(
                    "discretization.max_filaments",
                    format!(
                        "must be <= {} (a dense inductance matrix of that many filaments \
                         already takes 3.2 GB), got {n}",
                        defaults::MAX_FILAMENTS_LIMIT
                    ),
                );
                None
            }
            other => other,
        };
        let max_aspect = self.or_default(
            "discretization.max_aspect",
            &d.max_aspect,
            Dimension::Dimensionless,
            Range::AtLeast(1.0),
            defaults::MAX_ASPECT,
        );
        self.common("discretization", &d.notes, &d.unknown, DiscretizationFile::FIELDS);
        let mode = if resolution? {
            Resolution::Coarse { tube_rings: rings? }
        } else {
            Resolution::SkinDepth { cell_over_skin_depth: cell? }
        };
        Some(Discretization { mode, max_filaments: max_filaments?, max_aspect: max_aspect? })
    }

    fn solver(&mut self, section: &Option<Section<SolverFile>>) -> Option<SolverSettings> {
        let empty = SolverFile::default();
        let s = if section.is_none() { &empty } else { self.object("solver", section, false)? };
        // Left unset when absent: the default depends on whether the workpiece moves, which
        // the command line may still change (`--fixed`); see `SolverSettings::tolerances`.
        let rel_tol = self.optional(
            "solver.rel_tol",
            &s.rel_tol,
            Dimension::Dimensionless,
            Range::OpenClosed(0.0, defaults::REL_TOL_MAX),
        );
        let abs_tol =
            self.optional("solver.abs_tol", &s.abs_tol, Dimension::Dimensionless, Range::Positive);
        let end_time =
            self.optional("solver.end_time", &s.end_time, Dimension::Time, Range::Positive);
        let output_step =
            self.optional("solver.output_step", &s.output_step, Dimension::Time, Range::Positive);
        let mut steps_ok = true;
        if let (Some(Some(end)), Some(Some(step))) = (end_time, output_step) {
            let samples = end / step;
            if step > end {
                self.problem(
                    "solver.output_step",
                    format!(
                        "must be <= solver.end_time ({} s), got {} s",
                        fmt_num(end),
                        fmt_num(step)
                    ),
                );
                steps_ok = false;
            } else if samples > defaults::MAX_OUTPUT_SAMPLES {
                self.problem(
                    "solver.output_step",
                    format!(
                        "{} s over solver.end_time = {} s gives {} output samples, more than the \
                         limit of {}",
                        fmt_num(step),
                        fmt_num(end),
                        fmt_num(samples.ceil()),
                        fmt_num(defaults::MAX_OUTPUT_SAMPLES)
                    ),
                );
                steps_ok = false;
            }
        }
        self.common("solver", &s.notes, &s.unknown, SolverFile::FIELDS);
        if !steps_ok {
            return None;
        }
        Some(SolverSettings {
            rel_tol: rel_tol?,
            abs_tol: abs_tol?,
            end_time: end_time?,
            output_step: output_step?,
        })
    }

    /// The `ratings` section; every limit is optional and must be > 0 when given. `coil` is
    /// the validated coil, whose material's yield strength gives the default allowed hoop
    /// stress.
    fn ratings(
        &mut self,
        section: &Option<Section<RatingsFile>>,
        coil: Option<&Coil>,
    ) -> Option<Ratings> {
        if section.is_none() {
            return Some(Ratings::default());
        }
        let r = self.object("ratings", section, false)?;
        let switch = self.switch_ratings(&r.switch);
        let capacitors = self.capacitor_ratings(&r.capacitors);
        let coil_ratings = self.coil_ratings(&r.coil, coil);
        let feeder = self.feeder_ratings(&r.feeder);
        self.common("ratings", &r.notes, &r.unknown, RatingsFile::FIELDS);
        Some(Ratings {
            switch: switch?,
            capacitors: capacitors?,
            coil: coil_ratings?,
            feeder: feeder?,
        })
    }

    fn switch_ratings(
        &mut self,
        section: &Option<Section<SwitchRatingsFile>>,
    ) -> Option<SwitchRatings> {
        if section.is_none() {
            return Some(SwitchRatings::default());
        }
        let s = self.object("ratings.switch", section, false)?;
        use Dimension::{Action, Charge, Current, CurrentRate, Percent};
        let limit = |ck: &mut Checker, key: &str, v: &Option<Value>, dim: Dimension| {
            ck.optional(&join("ratings.switch", key), v, dim, Range::Positive)
        };
        let peak_current = limit(self, "peak_current", &s.peak_current, Current);
        let peak_di_dt = limit(self, "peak_di_dt", &s.peak_di_dt, CurrentRate);
        let charge = limit(self, "charge", &s.charge, Charge);
        let action_integral = limit(self, "action_integral", &s.action_integral, Action);
        let reverse = limit(self, "reverse_current", &s.reverse_current, Percent);
        self.common("ratings.switch", &s.notes, &s.unknown, SwitchRatingsFile::FIELDS);
        Some(SwitchRatings {
            peak_current: peak_current?,
            peak_di_dt: peak_di_dt?,
            charge: charge?,
            action_integral: action_integral?,
            reverse_current_percent: reverse?,
        })
    }

    fn capacitor_ratings(
        &mut self,
        section: &Option<Section<CapacitorRatingsFile>>,
    ) -> Option<CapacitorRatings> {
        if section.is_none() {
            return Some(CapacitorRatings::default());
        }
        let c = self.object("ratings.capacitors", section, false)?;
        let path = |key: &str| join("ratings.capacitors", key);
        let voltage =
            self.optional(&path("voltage"), &c.voltage, Dimension::Voltage, Range::Positive);
        let reversal = self.optional(
            &path("voltage_reversal"),
            &c.voltage_reversal,
            Dimension::Percent,
            Range::Positive,
        );
        let peak_current = self.optional(
            &path("peak_current"),
            &c.peak_current,
            Dimension::Current,
            Range::Positive,
        );
        let units = self.count_or_default(&path("units"), &c.units, 1, defaults::CAPACITOR_UNITS);
        if c.units.is_some() && c.peak_current.is_none() {
            self.warn(
                &path("units"),
                "has no effect without ratings.capacitors.peak_current (it divides the bank \
                 current among the units)",
            );
        }
        self.common("ratings.capacitors", &c.notes, &c.unknown, CapacitorRatingsFile::FIELDS);
        Some(CapacitorRatings {
            voltage: voltage?,
            voltage_reversal_percent: reversal?,
            peak_current: peak_current?,
            units: units?,
        })
    }

    /// With a `ratings.coil` object the hoop stress is always checked: against
    /// `allowed_hoop_stress` if given, else against the coil material's yield strength over
    /// `safety_factor` (default 2).
    fn coil_ratings(
        &mut self,
        section: &Option<Section<CoilRatingsFile>>,
        coil: Option<&Coil>,
    ) -> Option<CoilRatings> {
        if section.is_none() {
            return Some(CoilRatings::default());
        }
        let c = self.object("ratings.coil", section, false)?;
        let path = |key: &str| join("ratings.coil", key);
        let rise = self.optional(
            &path("temperature_rise"),
            &c.temperature_rise,
            Dimension::TemperatureDifference,
            Range::Positive,
        );
        let allowed = self.quantity(
            &path("allowed_hoop_stress"),
            &c.allowed_hoop_stress,
            Dimension::Stress,
            Range::Positive,
        );
        let factor = self.quantity(
            &path("safety_factor"),
            &c.safety_factor,
            Dimension::Dimensionless,
            Range::AtLeast(1.0),
        );
        self.common("ratings.coil", &c.notes, &c.unknown, CoilRatingsFile::FIELDS);
        if !allowed.is_absent() && !factor.is_absent() {
            self.problem(
                &path("safety_factor"),
                "give either ratings.coil.allowed_hoop_stress or ratings.coil.safety_factor, \
                 not both",
            );
            return None;
        }
        let (allowed_hoop_stress, safety_factor) = match (allowed, factor) {
            (Got::Bad, _) | (_, Got::Bad) => return None,
            (Got::Ok(s), _) => (Some(s), None),
            (Got::Absent, f) => {
                let f = match f {
                    Got::Ok(f) => f,
                    _ => defaults::COIL_SAFETY_FACTOR,
                };
                // Without a valid coil there is no yield strength; its problem is reported.
                let yield_strength = coil?.material.yield_strength;
                (Some(yield_strength / f), Some(f))
            }
        };
        Some(CoilRatings { temperature_rise: rise?, allowed_hoop_stress, safety_factor })
    }

    fn feeder_ratings(
        &mut self,
        section: &Option<Section<FeederRatingsFile>>,
    ) -> Option<FeederRatings> {
        if section.is_none() {
            return Some(FeederRatings::default());
        }
        let f = self.object("ratings.feeder", section, false)?;
        let peak_current = self.optional(
            "ratings.feeder.peak_current",
            &f.peak_current,
            Dimension::Current,
            Range::Positive,
        );
        let action_integral = self.optional(
            "ratings.feeder.action_integral",
            &f.action_integral,
            Dimension::Action,
            Range::Positive,
        );
        self.common("ratings.feeder", &f.notes, &f.unknown, FeederRatingsFile::FIELDS);
        Some(FeederRatings { peak_current: peak_current?, action_integral: action_integral? })
    }

    /// Coil turns and tube are rectangles in the r-z plane; they must neither overlap nor
    /// touch (touching conductors would need zero insulation).
    fn check_overlap(&mut self, coil: &Coil, tube: &Tube) {
        let coil_in = coil.mean_radius - coil.radial_thickness / 2.0;
        let coil_out = coil.mean_radius + coil.radial_thickness / 2.0;
        let tube_in = tube.inner_radius;
        let tube_out = tube.inner_radius + tube.wall;
        let tube_z0 = tube.z_center - tube.length / 2.0;
        let tube_z1 = tube.z_center + tube.length / 2.0;
        let n = coil.turns as f64;
        let half_width = coil.axial_width / 2.0;
        let first_z = coil.z_center - (n - 1.0) / 2.0 * coil.pitch;
        let last_z = first_z + (n - 1.0) * coil.pitch;
        // Gaps below this are rounding of the inputs ("23.5 mm" + "1.5 mm" vs "25 mm"), so
        // they count as touching.
        let scale = [coil_out, tube_out, first_z.abs(), last_z.abs(), tube_z0.abs(), tube_z1.abs()]
            .into_iter()
            .fold(0.0_f64, f64::max);
        let tol = 1e-9 * scale;
        let gap_r = (tube_in - coil_out).max(coil_in - tube_out);
        if gap_r > tol {
            return;
        }
        // Turn i (from 0) is centred at first_z + i * pitch; find the turns whose axial extent
        // meets the tube's, without looping over a possibly huge turn count.
        let lo = ((tube_z0 - tol - half_width - first_z) / coil.pitch).ceil().max(0.0);
        let hi = ((tube_z1 + tol + half_width - first_z) / coil.pitch).floor().min(n - 1.0);
        if lo > hi {
            return;
        }
        // The turn nearest the tube's centre has the deepest axial overlap.
        let nearest = ((tube.z_center - first_z) / coil.pitch).round().clamp(lo, hi);
        let z = first_z + nearest * coil.pitch;
        let gap_z = (tube_z0 - (z + half_width)).max((z - half_width) - tube_z1);
        let gap = gap_r.max(gap_z);
        let turns = if lo == hi {
            format!("turn {} of {}", lo as u64 + 1, coil.turns)
        } else {
            format!("turns {} to {} of {}", lo as u64 + 1, hi as u64 + 1, coil.turns)
        };
        let extents = format!(
            "the coil conductor spans r = {}, the tube r = {} and z = {}",
            fmt_mm_range(coil_in, coil_out),
            fmt_mm_range(tube_in, tube_out),
            fmt_mm_range(tube_z0, tube_z1)
        );
        if gap < -tol {
            self.problem(
                "workpiece",
                format!("overlaps the coil ({turns}): {extents}; conductors cannot share space"),
            );
        } else {
            self.problem(
                "workpiece",
                format!(
                    "touches the coil ({turns}) with no gap: {extents}; touching conductors \
                     would need zero insulation, so leave a gap"
                ),
            );
        }
    }

    /// Refuses a case whose filament count is known to exceed `max_filaments`: explicit
    /// splits are exact, coarse mode uses one filament per turn and `coarse_tube_rings`, and
    /// an automatic skin-depth split is counted as at least one filament per turn or tube.
    fn check_filaments(&mut self, coil: &Coil, tube: Option<&Tube>, disc: &Discretization) {
        // u128 so that absurd inputs (10^12 turns split 10^9 ways) still count exactly.
        let turns = coil.turns as u128;
        let (coil_count, coil_exact, coil_path, coil_detail) = match coil.split {
            Some(s) => {
                let n = turns.saturating_mul(s.radial as u128).saturating_mul(s.axial as u128);
                (
                    n,
                    true,
                    "coil.split",
                    format!("coil {turns} turns × {} × {} = {n}", s.radial, s.axial),
                )
            }
            None => match disc.mode {
                Resolution::Coarse { .. } => {
                    (turns, true, "coil.turns", format!("coil {turns} turns × 1 = {turns}"))
                }
                Resolution::SkinDepth { .. } => (
                    turns,
                    false,
                    "coil.turns",
                    format!("coil at least {turns} (one per turn; automatic split)"),
                ),
            },
        };
        let (tube_count, tube_exact, tube_path, tube_detail) = match tube {
            None => (0, true, "workpiece", None),
            Some(t) => match (t.split, disc.mode) {
                (Some(s), _) => {
                    let n = (s.radial as u128).saturating_mul(s.axial as u128);
                    (
                        n,
                        true,
                        "workpiece.split",
                        Some(format!("workpiece {} × {} = {n}", s.radial, s.axial)),
                    )
                }
                (None, Resolution::Coarse { tube_rings }) => (
                    tube_rings as u128,
                    true,
                    "discretization.coarse_tube_rings",
                    Some(format!("workpiece {tube_rings} (discretization.coarse_tube_rings)")),
                ),
                (None, Resolution::SkinDepth { .. }) => (
                    1,
                    false,
                    "workpiece",
                    Some("workpiece at least 1 (automatic split)".to_string()),
                ),
            },
        };
        let total = coil_count.saturating_add(tube_count);
        let limit = disc.max_filaments as u128;
        if total <= limit {
            return;
        }
        let path = if coil_count >= tube_count { coil_path } else { tube_path };
        let at_least = if coil_exact && tube_exact { "" } else { "at least " };
        let mut detail = coil_detail;
        if let Some(t) = tube_detail {
            detail = format!("{detail}, {t}");
        }
        self.problem(
            path,
            format!(
                "refused: {at_least}{total} filaments exceed the limit of {limit} \
                 (discretization.max_filaments); {detail}"
            ),
        );
    }

    /// The initial temperature must be below the melting point and leave the linear
    /// resistivity law ρ0 (1 + α (T − T0)) positive.
    fn check_temperature(&mut self, t: f64, raw: Option<&Value>, which: &str, m: &Material) {
        let got = match raw {
            Some(v @ Value::String(_)) => format!("{} (= {} K)", describe_value(v), fmt_num(t)),
            _ => format!("{} K", fmt_num(t)),
        };
        if t >= m.melting_point {
            self.problem(
                "initial_temperature",
                format!(
                    "must be below the melting point of the {which} material {} ({} K), got {got}",
                    m.name,
                    fmt_num(m.melting_point)
                ),
            );
            return;
        }
        let factor = 1.0 + m.temperature_coefficient * (t - m.reference_temperature);
        if factor <= 0.0 {
            let zero = m.reference_temperature - 1.0 / m.temperature_coefficient;
            self.problem(
                "initial_temperature",
                format!(
                    "the linear resistivity law of the {which} material {} reaches zero at {} K, \
                     so the initial temperature must be above it, got {got}",
                    m.name,
                    fmt_num(zero)
                ),
            );
        }
    }
}

/// The `base` of a custom material.
enum Base {
    /// No base: every property must be given.
    None,
    /// A valid built-in base.
    Material(Material),
    /// A base was given but is not valid; the problem is recorded.
    Invalid,
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_format_compactly() {
        assert_eq!(fmt_num(18.499999999999996), "18.5");
        assert_eq!(fmt_num(0.0035), "0.0035");
        assert_eq!(fmt_num(3.0), "3");
        assert_eq!(fmt_num(-30.0), "-30");
        assert_eq!(fmt_num(293.15), "293.15");
        assert_eq!(fmt_num(1e-7), "1e-7");
        assert_eq!(fmt_num(0.1 / 1e6), "1e-7");
        assert_eq!(fmt_num(-2.5e-12), "-2.5e-12");
        assert_eq!(fmt_num(3.2e10), "3.2e10");
        assert_eq!(fmt_num(0.0), "0");
        assert_eq!(fmt_mm(0.0235), "23.5 mm");
    }

    #[test]
    fn ranges_admit_and_describe() {
        assert!(Range::Positive.admits(1e-300));
        assert!(!Range::Positive.admits(0.0));
        assert!(Range::NonNegative.admits(0.0));
        assert!(Range::AtLeast(1.0).admits(1.0));
        assert!(!Range::OpenClosed(0.0, 1e-2).admits(0.0));
        assert!(Range::OpenClosed(0.0, 1e-2).admits(1e-2));
        assert_eq!(Range::OpenClosed(0.0, 1e-2).requirement(), "be in (0, 0.01]");
    }

    #[test]
    fn error_display_lists_every_problem() {
        let e = CaseError {
            origin: "cases/x.json".to_string(),
            problems: vec![
                Problem { path: "a.b".to_string(), message: "first".to_string() },
                Problem { path: "c".to_string(), message: "second".to_string() },
            ],
        };
        assert_eq!(e.to_string(), "invalid case \"cases/x.json\"\n  a.b: first\n  c: second");
    }
}
