//! Robustness: any value in any field gives a result, never a panic, and every message
//! follows the house style (starts lowercase, no trailing period).

#![allow(clippy::panic)]

mod common;

use common::{check, minimal, set};
use ringpulse_case::example::example_case_json;
use serde_json::{json, Value};

/// Every field of the schema, as dotted paths.
const PATHS: &[&str] = &[
    "description",
    "notes",
    "bank",
    "bank.capacitance",
    "bank.voltage",
    "bank.inductance",
    "bank.resistance",
    "bank.crowbar",
    "bank.crowbar.resistance",
    "bank.crowbar.inductance",
    "feeder",
    "feeder.inductance",
    "feeder.resistance",
    "coil",
    "coil.turns",
    "coil.mean_radius",
    "coil.inner_radius",
    "coil.conductor",
    "coil.conductor.radial",
    "coil.conductor.axial",
    "coil.pitch",
    "coil.winding_length",
    "coil.z_center",
    "coil.material",
    "coil.material.base",
    "coil.material.resistivity",
    "coil.material.melting_point",
    "coil.split",
    "coil.split.radial",
    "workpiece",
    "workpiece.inner_radius",
    "workpiece.wall",
    "workpiece.length",
    "workpiece.z_center",
    "workpiece.material",
    "workpiece.split.axial",
    "discretization",
    "discretization.resolution",
    "discretization.cell_over_skin_depth",
    "discretization.coarse_tube_rings",
    "discretization.max_filaments",
    "discretization.max_aspect",
    "solver",
    "solver.rel_tol",
    "solver.abs_tol",
    "solver.end_time",
    "solver.output_step",
    "initial_temperature",
    "unknown_key",
];

fn values() -> Vec<Value> {
    vec![
        json!(null),
        json!(true),
        json!(-1),
        json!(0),
        json!(1),
        json!(2.5),
        json!(1e308),
        json!(-1e308),
        json!(u64::MAX),
        json!(""),
        json!("x"),
        json!("NaN"),
        json!("1e999 m"),
        json!("1 mm"),
        json!("-1 mm"),
        json!("20 degC"),
        json!("µ"),
        json!("1 \u{0}"),
        json!([]),
        json!([1, "a"]),
        json!({}),
        json!({ "base": "copper" }),
        json!({ "radial": 1, "axial": 1 }),
    ]
}

fn assert_style(messages: &[String], context: &str) {
    for m in messages {
        assert!(!m.is_empty(), "{context}: empty message");
        let first = m.chars().next().unwrap_or(' ');
        assert!(!first.is_uppercase(), "{context}: message starts uppercase: {m}");
        assert!(!m.ends_with('.'), "{context}: message ends with a period: {m}");
    }
}

#[test]
fn any_value_in_any_field_is_handled() {
    for base in [minimal(), serde_json::from_str(&example_case_json()).unwrap_or(Value::Null)] {
        for path in PATHS {
            for value in values() {
                let mut case = base.clone();
                // Setting below a non-object (e.g. coil.material = "copper") is skipped.
                if !settable(&case, path) {
                    continue;
                }
                set(&mut case, path, value.clone());
                let context = format!("{path} = {value}");
                match check(&case) {
                    Ok((_, warnings)) => assert_style(&warnings, &context),
                    Err(e) => {
                        assert!(!e.problems.is_empty(), "{context}: error without problems");
                        let messages: Vec<String> =
                            e.problems.iter().map(|p| p.message.clone()).collect();
                        assert_style(&messages, &context);
                        assert!(e.problems.iter().all(|p| !p.path.is_empty()), "{context}");
                    }
                }
            }
        }
    }
}

/// True when every parent of `path` is absent or an object.
fn settable(case: &Value, path: &str) -> bool {
    let mut node = case;
    let keys: Vec<&str> = path.split('.').collect();
    for key in &keys[..keys.len() - 1] {
        match node.get(key) {
            None => return true,
            Some(v) if v.is_object() => node = v,
            Some(_) => return false,
        }
    }
    true
}

#[test]
fn arbitrary_text_is_handled() {
    for text in
        ["", " ", "null", "1", "\"x\"", "[", "{", "{\"a\":", "{}}", "{\"description\": 1e999}"]
    {
        match ringpulse_case::load_case(text, "t.json") {
            Ok(_) => panic!("{text:?} unexpectedly validated"),
            Err(e) => {
                assert_eq!(e.problems.len(), 1, "{text:?}: {e}");
                let messages: Vec<String> = e.problems.iter().map(|p| p.message.clone()).collect();
                assert_style(&messages, text);
            }
        }
    }
}
