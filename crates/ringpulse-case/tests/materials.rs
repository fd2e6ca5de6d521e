//! Materials in a case: built-in names, aliases, custom objects and overrides.

#![allow(clippy::panic)]

mod common;

use common::{at, check, close, minimal, ok, problems, set};
use ringpulse_case::materials;
use serde_json::json;

#[test]
fn american_spelling_is_accepted_and_canonicalised() {
    let mut case = minimal();
    set(&mut case, "workpiece.material", json!("aluminum_6061_t6"));
    let (c, _) = ok(&case);
    assert_eq!(c.workpiece.map(|t| t.material.name), Some("aluminium_6061_t6".to_string()));
}

#[test]
fn carbon_steel_warns_that_it_is_ferromagnetic() {
    let mut case = minimal();
    set(&mut case, "workpiece.material", json!("steel_1010"));
    let (_, warnings) = ok(&case);
    assert_eq!(warnings.len(), 1);
    assert!(warnings[0].starts_with("workpiece.material: carbon steel is ferromagnetic"));
    assert!(warnings[0].contains("non-magnetic ring model does not apply"));
}

#[test]
fn full_custom_material() {
    let mut case = minimal();
    set(
        &mut case,
        "workpiece.material",
        json!({
            "name": "my alloy",
            "source": "supplier sheet 12",
            "resistivity": "4.5 uOhm cm",
            "temperature_coefficient": "0.0035 1/K",
            "density": "2.7 g/cm3",
            "specific_heat": "0.9 kJ/(kg K)",
            "melting_point": "600 degC",
            "youngs_modulus": "70 GPa",
            "yield_strength": "150 MPa"
        }),
    );
    let (c, _) = ok(&case);
    let Some(m) = c.workpiece.map(|t| t.material) else { panic!("the case has a workpiece") };
    assert_eq!(m.name, "my alloy");
    assert_eq!(m.source, "supplier sheet 12");
    assert!(close(m.resistivity, 4.5e-8));
    assert!(close(m.temperature_coefficient, 0.0035));
    assert_eq!(m.reference_temperature, 293.15);
    assert!(close(m.density, 2700.0));
    assert!(close(m.specific_heat, 900.0));
    assert!(close(m.melting_point, 873.15));
    assert!(close(m.youngs_modulus, 70e9));
    assert!(close(m.yield_strength, 150e6));
}

#[test]
fn custom_material_without_base_needs_every_property() {
    let mut case = minimal();
    set(&mut case, "workpiece.material", json!({ "resistivity": "3e-8 Ohm m", "density": -1 }));
    let p = problems(&case);
    assert_eq!(at(&p, "workpiece.material.density"), ["must be > 0, got -1"]);
    for key in [
        "temperature_coefficient",
        "specific_heat",
        "melting_point",
        "youngs_modulus",
        "yield_strength",
    ] {
        assert_eq!(
            at(&p, &format!("workpiece.material.{key}")),
            ["missing field (a material without \"base\" needs every property)"],
            "{key}"
        );
    }
    assert_eq!(p.len(), 6, "{p:?}");
}

#[test]
fn base_with_overrides() {
    let mut case = minimal();
    set(
        &mut case,
        "coil.material",
        json!({ "base": "copper", "resistivity": "1.8e-8 Ohm m", "yield_strength": "250 MPa" }),
    );
    let (c, _) = ok(&case);
    let m = c.coil.material;
    let copper = materials::builtin("copper");
    assert_eq!(m.name, "copper (modified)");
    assert_eq!(m.resistivity, 1.8e-8);
    assert_eq!(m.yield_strength, 250e6);
    assert_eq!(Some(m.density), copper.as_ref().map(|c| c.density));
    assert!(m.source.ends_with("; overridden in the case file: resistivity, yield_strength"));
}

#[test]
fn base_without_overrides_keeps_the_name_and_warns() {
    let mut case = minimal();
    set(&mut case, "coil.material", json!({ "base": "brass" }));
    let (c, warnings) = ok(&case);
    assert_eq!(Some(c.coil.material), materials::builtin("brass"));
    assert_eq!(
        warnings,
        ["coil.material: nothing is overridden; the plain name \"brass\" says the same"]
    );
}

#[test]
fn steel_as_a_base_warns_too() {
    let mut case = minimal();
    set(
        &mut case,
        "workpiece.material",
        json!({ "base": "steel_1010", "yield_strength": "300 MPa" }),
    );
    let (_, warnings) = ok(&case);
    assert_eq!(warnings.len(), 1);
    assert!(warnings[0].starts_with("workpiece.material.base: carbon steel is ferromagnetic"));
}

#[test]
fn bad_base_and_bad_values() {
    let mut case = minimal();
    set(
        &mut case,
        "coil.material",
        json!({ "base": "coper", "temperature_coefficient": "-0.001 1/K", "name": 3 }),
    );
    let p = problems(&case);
    assert_eq!(at(&p, "coil.material.name"), ["must be a string, got 3"]);
    assert!(at(&p, "coil.material.base")[0].starts_with("unknown material \"coper\";"));
    assert_eq!(
        at(&p, "coil.material.temperature_coefficient"),
        ["must be >= 0, got \"-0.001 1/K\""]
    );
    // No "missing field" noise once the base is known to be wrong.
    assert_eq!(p.len(), 3, "{p:?}");
}

#[test]
fn zero_temperature_coefficient_is_allowed() {
    let mut case = minimal();
    set(&mut case, "coil.material", json!({ "base": "copper", "temperature_coefficient": 0 }));
    assert!(check(&case).is_ok());
}

#[test]
fn melting_point_must_exceed_the_reference_temperature() {
    let mut case = minimal();
    set(&mut case, "coil.material", json!({ "base": "copper", "melting_point": "10 degC" }));
    assert_eq!(
        at(&problems(&case), "coil.material.melting_point"),
        ["must be above the reference temperature 293.15 K, got 283.15 K"]
    );
    set(
        &mut case,
        "coil.material",
        json!({ "base": "copper", "melting_point": "10 degC", "reference_temperature": "0 degC" }),
    );
    // Valid material now, but the default initial temperature of 20 °C is above its melting point.
    let p = problems(&case);
    assert!(at(&p, "coil.material.melting_point").is_empty(), "{p:?}");
    assert_eq!(at(&p, "initial_temperature").len(), 1, "{p:?}");
}

#[test]
fn wrong_unit_in_a_material_names_the_dimension() {
    let mut case = minimal();
    set(
        &mut case,
        "coil.material",
        json!({ "base": "copper", "density": "8.9 g/cm3", "specific_heat": "385 kg/m3" }),
    );
    assert_eq!(
        at(&problems(&case), "coil.material.specific_heat"),
        ["expected a specific heat (J/(kg K), e.g. \"900 J/(kg K)\"), got \"385 kg/m3\" (a density)"]
    );
}
