//! Validation of the `motion` section: whether the workpiece moves, its stop (die or mandrel)
//! and its flow stress law.
//!
//! `"motion": false` keeps the geometry fixed; `"motion": true` or an object turns motion on
//! (the default when the case has a workpiece). The object holds `stop_radius` (a die outside
//! or a mandrel inside the tube) and `flow_stress` (a law; the default picks one from the
//! material). This is a child module of `validate` so that it can use the checker there.

use serde_json::{Map, Value};

use super::{join, Checker, Got, Range};
use crate::model::{Coil, FlowStress, MotionSettings, Tube};
use crate::units::{describe_value, Dimension};

/// Keys of the motion object.
pub const MOTION_FIELDS: &[&str] = &["notes", "enabled", "stop_radius", "flow_stress"];

/// Keys of the flow-stress object.
pub const FLOW_FIELDS: &[&str] = &[
    "notes",
    "law",
    "set",
    "a",
    "b",
    "n",
    "c",
    "m",
    "melting_point",
    "reference_rate",
    "k",
    "prestrain",
    "stress",
];

/// Names of the published Johnson–Cook sets the engine knows.
pub const JOHNSON_COOK_SETS: &[&str] = &[
    "ofhc_copper",
    "cartridge_brass",
    "aluminium_2024_t351",
    "aluminium_7039",
    "armco_iron",
    "steel_4340",
    "aluminium_6061_t6",
];

fn field(map: &Map<String, Value>, key: &str) -> Option<Value> {
    map.get(key).filter(|v| !v.is_null()).cloned()
}

impl Checker {
    /// Reads the `motion` value; `None` when invalid (problems recorded).
    pub(super) fn motion(
        &mut self,
        value: &Option<Value>,
        coil: Option<&Coil>,
        tube: Option<&Tube>,
    ) -> Option<MotionSettings> {
        let default_on = tube.is_some();
        let map = match value {
            None | Some(Value::Null) => {
                return Some(MotionSettings { enabled: default_on, ..MotionSettings::default() })
            }
            Some(Value::Bool(b)) => {
                if *b && tube.is_none() {
                    self.problem("motion", "motion needs a workpiece");
                    return None;
                }
                return Some(MotionSettings { enabled: *b, ..MotionSettings::default() });
            }
            Some(Value::Object(map)) => map,
            Some(v) => {
                self.problem(
                    "motion",
                    format!("expected true, false or an object, got {}", describe_value(v)),
                );
                return None;
            }
        };
        for key in map.keys() {
            if !MOTION_FIELDS.contains(&key.as_str()) {
                self.problem(
                    &join("motion", key),
                    format!("unknown field (expected one of: {})", MOTION_FIELDS.join(", ")),
                );
            }
        }
        let enabled = match map.get("enabled") {
            None | Some(Value::Null) => default_on,
            Some(Value::Bool(b)) => *b,
            Some(v) => {
                self.problem(
                    "motion.enabled",
                    format!("expected true or false, got {}", describe_value(v)),
                );
                return None;
            }
        };
        if enabled && tube.is_none() {
            self.problem("motion.enabled", "motion needs a workpiece");
            return None;
        }
        let stop = self.optional(
            "motion.stop_radius",
            &field(map, "stop_radius"),
            Dimension::Length,
            Range::Positive,
        )?;
        if let (Some(rs), Some(tube)) = (stop, tube) {
            self.check_stop(rs, coil, tube);
        }
        let flow = match map.get("flow_stress") {
            None | Some(Value::Null) => None,
            Some(Value::Object(f)) => Some(self.flow_stress(f)?),
            Some(v) => {
                self.problem(
                    "motion.flow_stress",
                    format!("expected an object such as {{\"law\": \"constant\", \"stress\": \"250 MPa\"}}, got {}", describe_value(v)),
                );
                return None;
            }
        };
        Some(MotionSettings { enabled, stop_radius: stop, flow_stress: flow })
    }

    /// A stop must lie outside the wall and away from the coil's side.
    fn check_stop(&mut self, rs: f64, coil: Option<&Coil>, tube: &Tube) {
        let inner = tube.inner_radius;
        let outer = tube.inner_radius + tube.wall;
        let mm = |x: f64| format!("{:.3} mm", x * 1e3);
        if rs > inner && rs < outer {
            self.problem(
                "motion.stop_radius",
                format!(
                    "{} lies inside the tube wall ({} to {}); a die must be at or beyond the outer \
                     surface, a mandrel at or within the inner surface",
                    mm(rs),
                    mm(inner),
                    mm(outer)
                ),
            );
            return;
        }
        let Some(coil) = coil else { return };
        let coil_in = coil.mean_radius - coil.radial_thickness / 2.0;
        let coil_out = coil.mean_radius + coil.radial_thickness / 2.0;
        if coil_out <= inner && rs <= inner {
            self.problem(
                "motion.stop_radius",
                format!(
                    "a mandrel at {} is on the coil's side: with the coil inside (up to {}) the \
                     tube expands away from it, and reaching the mandrel would mean passing \
                     through the coil",
                    mm(rs),
                    mm(coil_out)
                ),
            );
        } else if coil_in >= outer && rs >= outer {
            self.problem(
                "motion.stop_radius",
                format!(
                    "a die at {} is on the coil's side: with the coil outside (from {}) the tube \
                     is compressed away from it, and reaching the die would mean passing through \
                     the coil",
                    mm(rs),
                    mm(coil_in)
                ),
            );
        }
    }

    fn flow_stress(&mut self, f: &Map<String, Value>) -> Option<FlowStress> {
        let path = "motion.flow_stress";
        for key in f.keys() {
            if !FLOW_FIELDS.contains(&key.as_str()) {
                self.problem(
                    &join(path, key),
                    format!("unknown field (expected one of: {})", FLOW_FIELDS.join(", ")),
                );
            }
        }
        let law = match f.get("law") {
            Some(Value::String(s)) => s.as_str(),
            None => {
                self.problem(
                    &join(path, "law"),
                    "missing field (\"johnson_cook\", \"power\" or \"constant\")",
                );
                return None;
            }
            Some(v) => {
                self.problem(
                    &join(path, "law"),
                    format!("expected a string, got {}", describe_value(v)),
                );
                return None;
            }
        };
        let stress = |ck: &mut Checker, key: &str, range: Range| {
            ck.required(&join(path, key), &field(f, key), Dimension::Stress, range)
        };
        let plain =
            |ck: &mut Checker, key: &str, range: Range, default: Option<f64>| -> Option<f64> {
                match (
                    ck.quantity(&join(path, key), &field(f, key), Dimension::Dimensionless, range),
                    default,
                ) {
                    (Got::Ok(x), _) => Some(x),
                    (Got::Absent, Some(d)) => Some(d),
                    (Got::Absent, None) => {
                        ck.problem(&join(path, key), "missing field");
                        None
                    }
                    (Got::Bad, _) => None,
                }
            };
        // Fields the chosen law does not read are ignored, with a warning (a sweep over one
        // would otherwise change nothing without a word).
        let (reads, what): (&[&str], String) = match law {
            "constant" => (&["stress"], "the constant law".into()),
            "power" => (&["k", "n", "prestrain"], "the power law".into()),
            "johnson_cook" => match f.get("set") {
                Some(Value::String(name)) => {
                    (&["set"], format!("the Johnson-Cook law with the published set \"{name}\""))
                }
                _ => (
                    &["set", "a", "b", "n", "c", "m", "melting_point", "reference_rate"],
                    "the Johnson-Cook law".into(),
                ),
            },
            _ => (FLOW_FIELDS, String::new()),
        };
        for key in f.keys() {
            let key = key.as_str();
            if FLOW_FIELDS.contains(&key)
                && !["notes", "law"].contains(&key)
                && !reads.contains(&key)
            {
                self.warn(&join(path, key), format!("not used by {what}; ignored"));
            }
        }
        match law {
            "constant" => {
                Some(FlowStress::Constant { stress: stress(self, "stress", Range::Positive)? })
            }
            "power" => {
                let k = stress(self, "k", Range::Positive);
                let n = plain(self, "n", Range::OpenClosed(0.0, 1.0), None);
                let e0 = plain(self, "prestrain", Range::Positive, Some(0.002));
                Some(FlowStress::PowerLaw { k: k?, n: n?, prestrain: e0? })
            }
            "johnson_cook" => {
                if let Some(set) = f.get("set") {
                    return match set {
                        Value::String(name) if JOHNSON_COOK_SETS.contains(&name.as_str()) => {
                            Some(FlowStress::JohnsonCookSet(name.clone()))
                        }
                        other => {
                            self.problem(
                                &join(path, "set"),
                                format!(
                                    "unknown parameter set {}; the known sets are {}",
                                    describe_value(other),
                                    JOHNSON_COOK_SETS.join(", ")
                                ),
                            );
                            None
                        }
                    };
                }
                let a = stress(self, "a", Range::Positive);
                let b = stress(self, "b", Range::NonNegative);
                let n = plain(self, "n", Range::OpenClosed(0.0, 1.0), None);
                let c = plain(self, "c", Range::NonNegative, None);
                let m = plain(self, "m", Range::Positive, None);
                let tm = self.required(
                    &join(path, "melting_point"),
                    &field(f, "melting_point"),
                    Dimension::Temperature,
                    Range::Positive,
                );
                // Reference strain rate, a plain number in 1/s.
                let rate = plain(self, "reference_rate", Range::Positive, Some(1.0));
                Some(FlowStress::JohnsonCook {
                    a: a?,
                    b: b?,
                    n: n?,
                    c: c?,
                    m: m?,
                    melting_point: tm?,
                    reference_rate: rate?,
                })
            }
            other => {
                self.problem(
                    &join(path, "law"),
                    format!("unknown law \"{other}\"; expected \"johnson_cook\", \"power\" or \"constant\""),
                );
                None
            }
        }
    }
}
