//! Shared helpers for the integration tests: a small valid case to start from, and
//! shortcuts to validate JSON values and look at the outcome.

#![allow(dead_code, clippy::panic)]

use ringpulse_case::{load_case, Case, CaseError};
use serde_json::{json, Value};

/// A small valid case: a 4-turn coil inside a copper tube, no optional sections.
pub fn minimal() -> Value {
    json!({
        "description": "test case",
        "bank": { "capacitance": "100 uF", "voltage": "10 kV" },
        "coil": {
            "turns": 4,
            "mean_radius": "20 mm",
            "conductor": { "radial": "2 mm", "axial": "3 mm" },
            "pitch": "4 mm",
            "material": "copper"
        },
        "workpiece": {
            "inner_radius": "25 mm",
            "wall": "1 mm",
            "length": "40 mm",
            "material": "aluminium_1050"
        }
    })
}

/// Sets `value` at a dotted `path` inside `case`, creating objects on the way.
pub fn set(case: &mut Value, path: &str, value: Value) {
    let mut keys = path.split('.').peekable();
    let mut node = case;
    while let Some(key) = keys.next() {
        let Value::Object(map) = node else { panic!("{path}: not an object at {key}") };
        if keys.peek().is_none() {
            map.insert(key.to_string(), value);
            return;
        }
        node = map.entry(key.to_string()).or_insert_with(|| json!({}));
    }
}

/// Removes the field at a dotted `path`.
pub fn remove(case: &mut Value, path: &str) {
    let (parent, key) = match path.rsplit_once('.') {
        Some((p, k)) => (p, k),
        None => ("", path),
    };
    let mut node = case;
    if !parent.is_empty() {
        for k in parent.split('.') {
            node = &mut node[k];
        }
    }
    if let Value::Object(map) = node {
        map.remove(key);
    }
}

/// Validates a JSON value as case `test.json`.
pub fn check(case: &Value) -> Result<(Case, Vec<String>), CaseError> {
    load_case(&case.to_string(), "test.json")
}

/// Validates and expects success.
pub fn ok(case: &Value) -> (Case, Vec<String>) {
    match check(case) {
        Ok(r) => r,
        Err(e) => panic!("expected a valid case, got:\n{e}"),
    }
}

/// Validates and expects failure; returns `(path, message)` pairs.
pub fn problems(case: &Value) -> Vec<(String, String)> {
    match check(case) {
        Ok((c, _)) => panic!("expected an invalid case, got {c:#?}"),
        Err(e) => e.problems.into_iter().map(|p| (p.path, p.message)).collect(),
    }
}

/// The messages reported at `path`.
pub fn at(problems: &[(String, String)], path: &str) -> Vec<String> {
    problems.iter().filter(|(p, _)| p == path).map(|(_, m)| m.clone()).collect()
}

/// Relative closeness for SI values computed from unit strings.
pub fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-12 * a.abs().max(b.abs())
}
