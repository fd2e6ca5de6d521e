//! The `motion` section: defaults, the boolean shorthand, stops and flow laws.

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)]

use ringpulse_case::{load_case, FlowStress};
use serde_json::{json, Value};

fn case(motion: Option<Value>, workpiece: bool) -> String {
    let mut v = json!({
        "description": "motion settings",
        "bank": { "capacitance": "200 uF", "voltage": "5 kV" },
        "coil": { "turns": 2, "mean_radius": "20 mm", "conductor": { "radial": "2 mm", "axial": "3 mm" },
                  "pitch": "4 mm", "material": "copper" },
        "workpiece": { "inner_radius": "25 mm", "wall": "1.5 mm", "length": "40 mm", "material": "copper" }
    });
    if !workpiece {
        v.as_object_mut().unwrap().remove("workpiece");
    }
    if let Some(m) = motion {
        v["motion"] = m;
    }
    v.to_string()
}

#[test]
fn motion_defaults_follow_the_workpiece() {
    let (with, _) = load_case(&case(None, true), "a").unwrap();
    assert!(with.motion.enabled);
    let (without, _) = load_case(&case(None, false), "b").unwrap();
    assert!(!without.motion.enabled);
    let (off, _) = load_case(&case(Some(json!(false)), true), "c").unwrap();
    assert!(!off.motion.enabled);
    let err = load_case(&case(Some(json!(true)), false), "d").unwrap_err().to_string();
    assert!(err.contains("motion: motion needs a workpiece"), "{err}");
}

#[test]
fn stop_and_flow_law_parse() {
    let m = json!({ "stop_radius": "30 mm", "flow_stress": { "law": "power", "k": "500 MPa", "n": 0.25 } });
    let (c, _) = load_case(&case(Some(m), true), "e").unwrap();
    assert_eq!(c.motion.stop_radius, Some(0.030));
    assert_eq!(
        c.motion.flow_stress,
        Some(FlowStress::PowerLaw { k: 500e6, n: 0.25, prestrain: 0.002 })
    );
    let jc = json!({ "flow_stress": { "law": "johnson_cook", "set": "ofhc_copper" } });
    let (c, _) = load_case(&case(Some(jc), true), "f").unwrap();
    assert_eq!(c.motion.flow_stress, Some(FlowStress::JohnsonCookSet("ofhc_copper".into())));
    let bad = json!({ "flow_stress": { "law": "johnson_cook", "set": "unobtainium" }, "speed": 3 });
    let err = load_case(&case(Some(bad), true), "g").unwrap_err().to_string();
    assert!(err.contains("motion.flow_stress.set: unknown parameter set \"unobtainium\""), "{err}");
    assert!(err.contains("motion.speed: unknown field"), "{err}");
}

/// Fields the chosen flow law does not read are ignored with a warning that names them.
#[test]
fn flow_fields_the_law_does_not_read_are_flagged() {
    let m = json!({ "flow_stress": { "law": "power", "k": "500 MPa", "n": 0.25, "c": 0.02, "stress": "200 MPa" } });
    let (c, warnings) = load_case(&case(Some(m), true), "h").unwrap();
    assert!(matches!(c.motion.flow_stress, Some(FlowStress::PowerLaw { .. })));
    let joined = warnings.join("\n");
    assert!(
        joined.contains("motion.flow_stress.c: not used by the power law; ignored"),
        "{joined}"
    );
    assert!(joined.contains("motion.flow_stress.stress: not used by the power law"), "{joined}");
    let jc = json!({ "flow_stress": { "law": "johnson_cook", "set": "ofhc_copper", "a": "100 MPa", "reference_rate": 10 } });
    let (_, warnings) = load_case(&case(Some(jc), true), "i").unwrap();
    let joined = warnings.join("\n");
    assert!(
        joined.contains("motion.flow_stress.a: not used by the Johnson-Cook law with the published set \"ofhc_copper\""),
        "{joined}"
    );
    assert!(joined.contains("motion.flow_stress.reference_rate: not used"), "{joined}");
    // A law's own fields raise nothing.
    let ok = json!({ "flow_stress": { "law": "constant", "stress": "200 MPa", "notes": "plain" } });
    let (_, warnings) = load_case(&case(Some(ok), true), "j").unwrap();
    assert!(warnings.iter().all(|w| !w.contains("flow_stress")), "{warnings:?}");
}
