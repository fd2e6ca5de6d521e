//! The `ratings` section and `coil.hold`: parsing with units, defaults, and clear problems.

#![allow(clippy::panic)]

mod common;

use common::{at, ok, problems, set};
use serde_json::json;

#[test]
fn no_ratings_means_no_limits() {
    let (case, _) = ok(&common::minimal());
    assert!(case.ratings.is_empty());
    assert_eq!(case.ratings.capacitors.units, 1);
}

#[test]
fn every_limit_parses_with_its_unit() {
    let mut c = common::minimal();
    set(
        &mut c,
        "ratings",
        json!({
            "switch": {
                "peak_current": "150 kA",
                "peak_di_dt": "20 kA/us",
                "charge": "12 C",
                "action_integral": "500 kA2s",
                "reverse_current": "25 %"
            },
            "capacitors": {
                "voltage": "12 kV",
                "voltage_reversal": 20,
                "peak_current": "40 kA",
                "units": 4
            },
            "coil": { "temperature_rise": "100 K", "allowed_hoop_stress": "250 MPa" },
            "feeder": { "peak_current": "160 kA", "action_integral": "2e6 A^2 s" }
        }),
    );
    let (case, warnings) = ok(&c);
    assert!(warnings.is_empty(), "{warnings:?}");
    let r = &case.ratings;
    assert_eq!(r.switch.peak_current, Some(150e3));
    assert_eq!(r.switch.peak_di_dt, Some(2e10));
    assert_eq!(r.switch.charge, Some(12.0));
    assert_eq!(r.switch.action_integral, Some(5e5));
    assert_eq!(r.switch.reverse_current_percent, Some(25.0));
    assert_eq!(r.capacitors.voltage, Some(12e3));
    assert_eq!(r.capacitors.voltage_reversal_percent, Some(20.0));
    assert_eq!(r.capacitors.peak_current, Some(40e3));
    assert_eq!(r.capacitors.units, 4);
    assert_eq!(r.coil.temperature_rise, Some(100.0));
    assert_eq!(r.coil.allowed_hoop_stress, Some(250e6));
    assert_eq!(r.coil.safety_factor, None);
    assert_eq!(r.feeder.peak_current, Some(160e3));
    assert_eq!(r.feeder.action_integral, Some(2e6));
    assert!(!r.is_empty());
}

/// Copper's yield strength in the built-in table is 69 MPa (docs/case-format.md); the default
/// safety factor is 2.
#[test]
fn coil_object_checks_hoop_stress_against_yield_over_safety_factor() {
    let mut c = common::minimal();
    set(&mut c, "ratings", json!({ "coil": {} }));
    let (case, _) = ok(&c);
    assert_eq!(case.ratings.coil.allowed_hoop_stress, Some(69e6 / 2.0));
    assert_eq!(case.ratings.coil.safety_factor, Some(2.0));
    set(&mut c, "ratings.coil.safety_factor", json!(3));
    let (case, _) = ok(&c);
    assert_eq!(case.ratings.coil.allowed_hoop_stress, Some(23e6));
}

#[test]
fn bad_limits_name_field_value_and_expectation() {
    let mut c = common::minimal();
    set(
        &mut c,
        "ratings",
        json!({
            "switch": { "peak_current": "150 kV", "charge": -1, "colour": 1 },
            "capacitors": { "units": 0 },
            "coil": { "allowed_hoop_stress": "1 MPa", "safety_factor": 2, "temperature_rise": "80 degC" },
            "feeder": 3
        }),
    );
    let p = problems(&c);
    assert_eq!(
        at(&p, "ratings.switch.peak_current"),
        ["expected a current (A, e.g. \"150 kA\"), got \"150 kV\" (a voltage)"]
    );
    assert_eq!(at(&p, "ratings.switch.charge"), ["must be > 0, got -1"]);
    assert_eq!(at(&p, "ratings.switch.colour").len(), 1);
    assert_eq!(at(&p, "ratings.capacitors.units"), ["must be an integer >= 1, got 0"]);
    assert_eq!(
        at(&p, "ratings.coil.safety_factor"),
        ["give either ratings.coil.allowed_hoop_stress or ratings.coil.safety_factor, not both"]
    );
    assert_eq!(
        at(&p, "ratings.coil.temperature_rise"),
        ["expected a temperature difference (K, e.g. \"100 K\"), got \"80 degC\" (a temperature)"]
    );
    assert_eq!(at(&p, "ratings.feeder"), ["expected an object, got 3"]);
}

#[test]
fn units_without_a_current_limit_warn() {
    let mut c = common::minimal();
    set(&mut c, "ratings", json!({ "capacitors": { "units": 3 } }));
    let (_, warnings) = ok(&c);
    assert_eq!(warnings.len(), 1, "{warnings:?}");
    assert!(warnings[0].starts_with("ratings.capacitors.units: has no effect"));
}

#[test]
fn hold_accepts_pitch_or_winding_length() {
    let mut c = common::minimal();
    for good in ["pitch", "winding_length"] {
        set(&mut c, "coil.hold", json!(good));
        ok(&c);
    }
    set(&mut c, "coil.hold", json!("length"));
    assert_eq!(
        at(&problems(&c), "coil.hold"),
        ["must be \"pitch\" or \"winding_length\", got \"length\""]
    );
    set(&mut c, "coil.hold", json!(1));
    assert_eq!(at(&problems(&c), "coil.hold"), ["must be a string, got 1"]);
}
