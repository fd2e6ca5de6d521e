//! Error reporting: every problem at once, with JSON paths, in the documented format.

#![allow(clippy::panic)]

mod common;

use common::{at, check, minimal, problems, remove, set};
use ringpulse_case::{load_case, validate::parse_case_file};
use serde_json::json;

#[test]
fn several_problems_are_reported_together_with_exact_text() {
    let mut case = minimal();
    set(&mut case, "bank.voltage", json!("8 uF"));
    remove(&mut case, "coil.turns");
    let Err(err) = load_case(&case.to_string(), "cases/x.json") else {
        panic!("case should be invalid")
    };
    assert_eq!(
        err.to_string(),
        "invalid case \"cases/x.json\"\n  bank.voltage: expected a voltage (V, e.g. \"8 kV\"), got \
         \"8 uF\" (a capacitance)\n  coil.turns: missing field"
    );
    assert_eq!(err.origin, "cases/x.json");
}

#[test]
fn a_badly_broken_case_lists_every_problem() {
    let case = json!({
        "description": "",
        "bank": { "capacitance": "-100 uF", "voltage": "8 kW", "resistance": "-1 mOhm" },
        "feeder": { "inductance": "30 nF" },
        "coil": {
            "turns": 2.5,
            "conductor": { "radial": "0 mm" },
            "material": "unobtainium"
        },
        "workpiece": { "inner_radius": "25 mm", "wall": "1 mm", "length": "40 mm",
                       "material": 7, "split": { "radial": 0, "axial": "3" } },
        "discretization": { "resolution": "fine", "max_aspect": 0.5 },
        "solver": { "rel_tol": 0.5, "end_time": "-1 us" },
        "initial_temperature": "-300 degC"
    });
    let Err(err) = check(&case) else { panic!("case should be invalid") };
    let text = err.to_string();
    let expected = [
        "invalid case \"test.json\"",
        "  description: must not be empty",
        "  bank.capacitance: must be > 0, got \"-100 uF\"",
        "  bank.voltage: expected a voltage (V, e.g. \"8 kV\"), got \"8 kW\" (unknown unit \"kW\")",
        "  bank.resistance: must be >= 0, got \"-1 mOhm\"",
        "  feeder.inductance: expected an inductance (H, e.g. \"50 nH\"), got \"30 nF\" (a capacitance)",
        "  coil.turns: must be an integer >= 1, got 2.5",
        "  coil.conductor.radial: must be > 0, got \"0 mm\"",
        "  coil.conductor.axial: missing field",
        "  coil.mean_radius: missing field (give coil.mean_radius or coil.inner_radius)",
        "  coil.material: unknown material \"unobtainium\"; the built-in materials are copper, \
         copper_ofhc, aluminium_1050, aluminium_6061_t6, aluminium_6063_t6, brass, steel_1010, \
         stainless_304, titanium_grade2",
        "  workpiece.material: expected a built-in material name (e.g. \"copper\") or a material \
         object, got 7",
        "  workpiece.split.radial: must be an integer >= 1, got 0",
        "  workpiece.split.axial: must be an integer >= 1, got \"3\"",
        "  discretization.resolution: must be \"skin_depth\" or \"coarse\", got \"fine\"",
        "  discretization.max_aspect: must be >= 1, got 0.5",
        "  solver.rel_tol: must be in (0, 0.01], got 0.5",
        "  solver.end_time: must be > 0, got \"-1 us\"",
        "  initial_temperature: must be > 0, got \"-300 degC\" (= -26.85 K)",
    ]
    .join("\n");
    assert_eq!(text, expected);
}

#[test]
fn missing_sections_are_reported() {
    let p = problems(&json!({}));
    assert_eq!(
        p,
        vec![
            ("description".to_string(), "missing field".to_string()),
            ("bank".to_string(), "missing field".to_string()),
            ("coil".to_string(), "missing field".to_string()),
        ]
    );
}

#[test]
fn sections_of_the_wrong_type_are_reported() {
    let mut case = minimal();
    set(&mut case, "bank", json!(5));
    set(&mut case, "solver", json!([1, 2]));
    set(&mut case, "coil.conductor", json!("3 mm"));
    let p = problems(&case);
    assert_eq!(at(&p, "bank"), ["expected an object, got 5"]);
    assert_eq!(at(&p, "solver"), ["expected an object, got an array"]);
    assert_eq!(at(&p, "coil.conductor"), ["expected an object, got \"3 mm\""]);
}

#[test]
fn unknown_fields_are_errors_with_paths() {
    let mut case = minimal();
    set(&mut case, "bank.capacity", json!("100 uF"));
    set(&mut case, "coil.conductor.thickness", json!("2 mm"));
    set(&mut case, "colour", json!("red"));
    set(&mut case, "workpiece.material", json!({ "base": "copper", "hardness": 3 }));
    let p = problems(&case);
    assert_eq!(
        at(&p, "bank.capacity"),
        ["unknown field (expected one of: notes, capacitance, voltage, inductance, resistance, \
          crowbar)"]
    );
    assert_eq!(
        at(&p, "coil.conductor.thickness"),
        ["unknown field (expected one of: notes, radial, axial)"]
    );
    assert_eq!(p.iter().filter(|(path, _)| path == "colour").count(), 1);
    assert_eq!(p.iter().filter(|(path, _)| path == "workpiece.material.hardness").count(), 1);
    assert_eq!(p.len(), 4, "{p:?}");
}

#[test]
fn notes_are_allowed_everywhere_but_must_be_strings() {
    let mut case = minimal();
    for path in ["notes", "bank.notes", "coil.notes", "coil.conductor.notes", "workpiece.notes"] {
        set(&mut case, path, json!("free text"));
    }
    assert!(check(&case).is_ok());
    set(&mut case, "coil.notes", json!(3));
    let p = problems(&case);
    assert_eq!(p, vec![("coil.notes".to_string(), "must be a string, got 3".to_string())]);
}

#[test]
fn json_syntax_error_is_one_problem_with_line_and_column() {
    let text =
        "{\n  \"description\": \"x\",\n  \"bank\": { \"capacitance\": \"1 uF\" \"voltage\": 1 }\n}";
    let Err(err) = load_case(text, "broken.json") else { panic!("text should not parse") };
    assert_eq!(err.problems.len(), 1);
    assert_eq!(err.problems[0].path, "(document)");
    assert_eq!(
        err.to_string(),
        "invalid case \"broken.json\"\n  (document): invalid JSON at line 3, column 35: expected \
         `,` or `}`"
    );
}

#[test]
fn empty_and_truncated_text() {
    for (text, expected) in [
        ("", "invalid JSON at line 1, column 0: EOF while parsing a value"),
        ("{\"description\": ", "invalid JSON at line 1, column 16: EOF while parsing a value"),
    ] {
        let msg = parse_case_file(text, "t.json").err().map(|e| e.problems[0].message.clone());
        assert_eq!(msg.as_deref(), Some(expected), "{text:?}");
    }
}

#[test]
fn top_level_must_be_an_object() {
    let msg = parse_case_file("[1, 2]", "t.json").err().map(|e| e.to_string());
    assert_eq!(
        msg.as_deref(),
        Some("invalid case \"t.json\"\n  (document): expected a JSON object at the top level, got an array")
    );
}

#[test]
fn byte_order_mark_is_accepted() {
    let text = format!("\u{feff}{}", minimal());
    assert!(load_case(&text, "bom.json").is_ok());
}

#[test]
fn null_means_absent() {
    let mut case = minimal();
    set(&mut case, "bank.inductance", json!(null));
    set(&mut case, "solver", json!(null));
    assert!(check(&case).is_ok());
    set(&mut case, "bank.voltage", json!(null));
    assert_eq!(at(&problems(&case), "bank.voltage"), ["missing field"]);
}
