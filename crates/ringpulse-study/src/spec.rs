//! `--vary PATH=VALUES`: which case field a sweep changes and over which values.
//!
//! PATH is a numeric field of the case by its dotted JSON path (docs/case-format.md), such as
//! `bank.voltage` or `coil.turns`. VALUES is one of
//!
//! - a list `a,b,c`;
//! - an integer range `lo..hi` (step 1, both ends included; whole numbers only);
//! - a range with a count `lo..hi:n` (n evenly spaced values, both ends included).
//!
//! Values may carry units (`4kV`, `1.5 mm`), parsed with the field's own dimension, so
//! `bank.voltage=4uF` is refused here with the field path before anything runs; a bare number
//! is in SI units, like a JSON number in the case file. Everything is converted to SI.

use ringpulse_case::fields::{numeric_field, numeric_paths, FieldKind};
use ringpulse_case::units::{parse_str, Dimension};

use crate::{spec_error, StudyError};

/// Most values one `--vary` may expand to, to keep typing mistakes from starting a huge sweep.
pub const MAX_LEVELS: usize = 10_000;

/// The values of one `--vary`, in SI units.
#[derive(Debug, Clone, PartialEq)]
pub enum Values {
    /// Explicit values, in the order given.
    List(Vec<f64>),
    /// A range, both ends included; `count: None` means step 1 (integer ranges).
    Range {
        /// First value.
        lo: f64,
        /// Last value.
        hi: f64,
        /// Number of evenly spaced values, if given.
        count: Option<usize>,
    },
}

/// One parsed `--vary`.
#[derive(Debug, Clone, PartialEq)]
pub struct VarySpec {
    /// Dotted path of the field.
    pub path: String,
    /// What the field holds.
    pub kind: FieldKind,
    /// The values.
    pub values: Values,
    /// The text as given, for records.
    pub text: String,
    /// True when a range's ends are written as plain whole numbers, so that a range without a
    /// count may step by 1.
    pub whole_ends: bool,
}

impl VarySpec {
    /// The CSV column name: the path with the SI unit suffix, `bank.voltage_V`, `coil.turns`.
    pub fn column(&self) -> String {
        match self.kind.column_unit() {
            Some(unit) => format!("{}_{unit}", self.path),
            None => self.path.clone(),
        }
    }

    /// True for integer fields (turns, split counts).
    pub fn is_count(&self) -> bool {
        self.kind == FieldKind::Count
    }

    /// The values of a full-factorial sweep.
    pub fn levels(&self) -> Result<Vec<f64>, StudyError> {
        let err = |m: String| spec_error("--vary", &self.text, m);
        let levels = match &self.values {
            Values::List(v) => v.clone(),
            Values::Range { lo, hi, count: None } => {
                if !self.whole_ends {
                    return Err(err(format!(
                        "a range without a count steps by 1 and needs plain whole numbers; give \
                         a count, e.g. {}:5",
                        self.text
                    )));
                }
                if hi - lo + 1.0 > MAX_LEVELS as f64 {
                    return Err(err(format!(
                        "at most {MAX_LEVELS} values per --vary, got {}",
                        hi - lo + 1.0
                    )));
                }
                let n = (hi - lo).round() as usize + 1;
                (0..n).map(|k| lo + k as f64).collect()
            }
            Values::Range { lo, hi, count: Some(n) } => {
                let n = *n;
                let mut v: Vec<f64> =
                    (0..n).map(|k| lo + (hi - lo) * (k as f64 / (n - 1) as f64)).collect();
                if let Some(last) = v.last_mut() {
                    *last = *hi;
                }
                if self.is_count() {
                    if let Some(bad) = v.iter().find(|x| (*x - x.round()).abs() > 1e-9) {
                        return Err(err(format!(
                            "{} is a whole number, but {n} evenly spaced values from {lo} to {hi} \
                             include {bad}; choose a count that gives whole steps",
                            self.path
                        )));
                    }
                    v.iter_mut().for_each(|x| *x = x.round());
                }
                v
            }
        };
        Ok(levels)
    }
}

/// Parses one value: a bare number is SI; text with a unit is parsed with the field's dimension.
fn parse_value(text: &str, spec: &str, kind: FieldKind) -> Result<f64, StudyError> {
    let t = text.trim();
    let err = |m: String| spec_error("--vary", spec, m);
    if let Ok(x) = t.parse::<f64>() {
        if !x.is_finite() {
            return Err(err(format!("expected a finite number, got {t:?}")));
        }
        if kind == FieldKind::Count && x.fract() != 0.0 {
            return Err(err(format!("expected a whole number, got {t:?}")));
        }
        return Ok(x);
    }
    match kind {
        FieldKind::Count => Err(err(format!("expected a whole number, got {t:?}"))),
        FieldKind::Quantity(Dimension::Dimensionless) => {
            Err(err(format!("expected a plain number, got {t:?}")))
        }
        FieldKind::Quantity(dim) => parse_str(t, dim).map_err(err),
    }
}

/// Parses `PATH=VALUES` (see the module doc).
pub fn parse_vary(text: &str) -> Result<VarySpec, StudyError> {
    let err = |m: String| spec_error("--vary", text, m);
    let Some((path, values)) = text.split_once('=') else {
        return Err(err("expected PATH=VALUES, e.g. bank.voltage=4kV..10kV:7".into()));
    };
    let path = path.trim();
    let Some(kind) = numeric_field(path) else {
        let known: Vec<&str> = numeric_paths().collect();
        return Err(err(format!(
            "{path:?} is not a numeric field of the case; numeric fields are {} and \
             coil.material.* / workpiece.material.* properties",
            known.join(", ")
        )));
    };
    let values = values.trim();
    if values.is_empty() {
        return Err(err("no values after '='".into()));
    }
    let mut whole_ends = false;
    let values = if let Some((lo, rest)) = values.split_once("..") {
        let (hi, count) = match rest.rsplit_once(':') {
            Some((hi, n)) => {
                let n: usize = n.trim().parse().map_err(|_| {
                    err(format!("expected a whole count after ':', got {:?}", n.trim()))
                })?;
                (hi, Some(n))
            }
            None => (rest, None),
        };
        let lo_v = parse_value(lo, text, kind)?;
        let hi_v = parse_value(hi, text, kind)?;
        if lo_v > hi_v {
            return Err(err(format!("the range must run upwards, got {lo_v} .. {hi_v}")));
        }
        match count {
            Some(n) if n < 2 => {
                return Err(err(format!("a range needs a count of at least 2, got {n}")));
            }
            Some(n) if n > MAX_LEVELS => {
                return Err(err(format!("at most {MAX_LEVELS} values per --vary, got {n}")));
            }
            _ => {}
        }
        let whole = |s: &str| s.trim().parse::<i64>().is_ok();
        whole_ends = whole(lo) && whole(hi);
        Values::Range { lo: lo_v, hi: hi_v, count }
    } else {
        let list = values
            .split(',')
            .map(|v| parse_value(v, text, kind))
            .collect::<Result<Vec<f64>, _>>()?;
        if list.len() > MAX_LEVELS {
            return Err(err(format!("at most {MAX_LEVELS} values per --vary, got {}", list.len())));
        }
        Values::List(list)
    };
    Ok(VarySpec { path: path.to_string(), kind, values, text: text.to_string(), whole_ends })
}

#[cfg(test)]
#[allow(clippy::panic)]
mod tests {
    use super::*;

    fn levels(text: &str) -> Vec<f64> {
        match parse_vary(text).and_then(|s| s.levels()) {
            Ok(v) => v,
            Err(e) => panic!("{text}: {e}"),
        }
    }

    fn error(text: &str) -> String {
        match parse_vary(text).and_then(|s| s.levels()) {
            Ok(v) => panic!("{text}: unexpectedly gave {v:?}"),
            Err(e) => e.to_string(),
        }
    }

    #[test]
    fn lists_and_ranges() {
        assert_eq!(levels("coil.turns=2..5"), [2.0, 3.0, 4.0, 5.0]);
        assert_eq!(levels("bank.voltage=4kV..10kV:7"), [4e3, 5e3, 6e3, 7e3, 8e3, 9e3, 10e3]);
        assert_eq!(levels("bank.voltage=4000,5 kV"), [4e3, 5e3]);
        assert_eq!(levels("coil.pitch=5mm..6mm:3"), [5e-3, 5.5e-3, 6e-3]);
        assert_eq!(levels("coil.turns=2..8:4"), [2.0, 4.0, 6.0, 8.0]);
        assert_eq!(levels("initial_temperature=20degC"), [293.15]);
        let s = parse_vary("bank.voltage=1..2:2").map(|s| s.column());
        assert_eq!(s, Ok("bank.voltage_V".to_string()));
        let s = parse_vary("coil.turns=1").map(|s| s.column());
        assert_eq!(s, Ok("coil.turns".to_string()));
    }

    #[test]
    fn mistakes_name_option_field_and_expectation() {
        assert_eq!(
            error("bank.voltage=4uF..10kV:7"),
            "--vary bank.voltage=4uF..10kV:7: expected a voltage (V, e.g. \"8 kV\"), got \"4uF\" \
             (a capacitance)"
        );
        assert!(error("bank.colour=1").contains("\"bank.colour\" is not a numeric field"));
        assert!(error("bank.voltage").contains("expected PATH=VALUES"));
        assert!(error("coil.turns=2.5").contains("expected a whole number"));
        assert!(error("coil.turns=2..7:3").contains("choose a count that gives whole steps"));
        assert!(error("bank.voltage=4kV..10kV").contains("give a count"));
        assert!(error("bank.voltage=10kV..4kV:3").contains("must run upwards"));
        assert!(error("bank.voltage=4kV..10kV:1").contains("at least 2"));
        assert!(error("coil.turns=1..100000").contains("at most"));
    }
}
