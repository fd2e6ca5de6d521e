//! Built-in conductor materials that a case can name instead of listing every property.
//!
//! All values are nominal room-temperature handbook figures, recalled from memory of the
//! sources named beside each entry and not re-checked against the originals. They are good
//! enough as defaults and for plausibility checks, not as exact reference data: a case that
//! needs better numbers should give a custom material with its own source.
//! Melting points are the solidus (the onset of melting) in kelvin, resistivities hold at the
//! reference temperature 293.15 K (20 °C).

use crate::model::Material;

/// Temperature at which every built-in resistivity holds, in kelvin (20 °C).
pub const REFERENCE_TEMPERATURE: f64 = 293.15;

/// Kelvin from degrees Celsius (0 °C = 273.15 K by definition).
const fn celsius(c: f64) -> f64 {
    c + 273.15
}

/// One row of the built-in table.
struct Entry {
    /// Canonical name, as listed by [`builtin_names`].
    key: &'static str,
    /// Other accepted spellings (the American "aluminum").
    aliases: &'static [&'static str],
    /// Resistivity at 293.15 K, in ohm metres.
    resistivity: f64,
    /// Linear temperature coefficient of resistivity, in 1/K.
    temperature_coefficient: f64,
    /// Mass density, in kg/m^3.
    density: f64,
    /// Specific heat capacity, in J/(kg K).
    specific_heat: f64,
    /// Solidus temperature, in kelvin.
    melting_point: f64,
    /// Young's modulus, in pascals.
    youngs_modulus: f64,
    /// Initial yield strength, in pascals.
    yield_strength: f64,
    /// Where the numbers come from, copied into `Material::source`.
    source: &'static str,
    /// A caution the validator passes on whenever the material is used.
    warning: Option<&'static str>,
}

/// The provenance note every entry carries.
const RECALLED: &str = "recalled from memory, not re-checked";

/// The built-in materials. Every number is recalled from memory of the named source and not
/// re-checked (tagged [M] in the project's physics notes, section H).
const TABLE: [Entry; 9] = [
    // Electrolytic tough pitch copper, annealed. Resistivity 1.72e-8 Ohm m (100 % IACS) and
    // TCR 0.00393 1/K are the IACS standard values; density 8890 kg/m^3 (ASM range 8890-8940),
    // c_p 385 J/(kg K), solidus 1065 °C, E 115 GPa, annealed yield ~69 MPa: ASM Handbook
    // vol. 2 and Copper Development Association data for C11000.
    Entry {
        key: "copper",
        aliases: &[],
        resistivity: 1.72e-8,
        temperature_coefficient: 0.00393,
        density: 8890.0,
        specific_heat: 385.0,
        melting_point: celsius(1065.0),
        youngs_modulus: 115e9,
        yield_strength: 69e6,
        source: "copper C11000 (ETP), annealed: ASM Handbook vol. 2, Copper Development \
                 Association data, IACS standard (recalled from memory, not re-checked)",
        warning: None,
    },
    // Oxygen-free copper C10100, annealed. Resistivity 1.71e-8 Ohm m (101 % IACS), TCR
    // 0.00393 1/K, density 8940 kg/m^3, c_p 385 J/(kg K), melting 1083 °C, E 115 GPa, annealed
    // yield ~69 MPa: ASM Handbook vol. 2, Copper Development Association data for C10100.
    Entry {
        key: "copper_ofhc",
        aliases: &[],
        resistivity: 1.71e-8,
        temperature_coefficient: 0.00393,
        density: 8940.0,
        specific_heat: 385.0,
        melting_point: celsius(1083.0),
        youngs_modulus: 115e9,
        yield_strength: 69e6,
        source: "copper C10100 (OFE/OFHC), annealed: ASM Handbook vol. 2, Copper Development \
                 Association data (recalled from memory, not re-checked)",
        warning: None,
    },
    // Aluminium 1050, temper O. Resistivity 2.8e-8 Ohm m (61-62 % IACS), TCR ~0.0040 1/K,
    // density 2705 kg/m^3, c_p 900 J/(kg K), solidus 646 °C, E 69 GPa, yield ~28 MPa (ASM range
    // for O temper ~20-35 MPa): ASM Handbook vol. 2, Aluminum Association data.
    Entry {
        key: "aluminium_1050",
        aliases: &["aluminum_1050"],
        resistivity: 2.8e-8,
        temperature_coefficient: 0.0040,
        density: 2705.0,
        specific_heat: 900.0,
        melting_point: celsius(646.0),
        youngs_modulus: 69e9,
        yield_strength: 28e6,
        source: "aluminium 1050-O: ASM Handbook vol. 2, Aluminum Association data (recalled \
                 from memory, not re-checked)",
        warning: None,
    },
    // Aluminium 6061-T6. Resistivity 3.99e-8 Ohm m (43 % IACS), TCR ~0.003 1/K, density
    // 2700 kg/m^3, c_p 896 J/(kg K), solidus 582 °C, E 68.9 GPa, yield 276 MPa: ASM Handbook
    // vol. 2 and ASM Metals Handbook Desk Edition.
    Entry {
        key: "aluminium_6061_t6",
        aliases: &["aluminum_6061_t6"],
        resistivity: 3.99e-8,
        temperature_coefficient: 0.003,
        density: 2700.0,
        specific_heat: 896.0,
        melting_point: celsius(582.0),
        youngs_modulus: 68.9e9,
        yield_strength: 276e6,
        source: "aluminium 6061-T6: ASM Handbook vol. 2, ASM Metals Handbook Desk Edition \
                 (recalled from memory, not re-checked)",
        warning: None,
    },
    // Aluminium 6063-T6. Resistivity ~3.3e-8 Ohm m (~53 % IACS), TCR ~0.0035 1/K, density
    // 2690 kg/m^3, c_p 900 J/(kg K), solidus 616 °C, E 68.9 GPa, yield 214 MPa: ASM Handbook
    // vol. 2, Aluminum Association data.
    Entry {
        key: "aluminium_6063_t6",
        aliases: &["aluminum_6063_t6"],
        resistivity: 3.3e-8,
        temperature_coefficient: 0.0035,
        density: 2690.0,
        specific_heat: 900.0,
        melting_point: celsius(616.0),
        youngs_modulus: 68.9e9,
        yield_strength: 214e6,
        source: "aluminium 6063-T6: ASM Handbook vol. 2, Aluminum Association data (recalled \
                 from memory, not re-checked)",
        warning: None,
    },
    // Cartridge brass C26000 (70 Cu / 30 Zn), annealed. Resistivity 6.2e-8 Ohm m (28 % IACS),
    // TCR ~0.0017 1/K (recalled range 0.0015-0.002), density 8530 kg/m^3, c_p 375 J/(kg K),
    // solidus 915 °C, E 110 GPa, yield ~100 MPa (annealed range ~75-150 MPa, grain-size
    // dependent): ASM Handbook vol. 2, Copper Development Association data for C26000.
    Entry {
        key: "brass",
        aliases: &[],
        resistivity: 6.2e-8,
        temperature_coefficient: 0.0017,
        density: 8530.0,
        specific_heat: 375.0,
        melting_point: celsius(915.0),
        youngs_modulus: 110e9,
        yield_strength: 100e6,
        source: "cartridge brass C26000 (70/30), annealed: ASM Handbook vol. 2, Copper \
                 Development Association data (recalled from memory, not re-checked)",
        warning: None,
    },
    // Low-carbon steel 1010. Resistivity ~1.5e-7 Ohm m (recalled range 1.4-1.6e-7), TCR
    // ~0.0055 1/K (range 0.005-0.006), density 7870 kg/m^3, c_p 450 J/(kg K), solidus
    // ~1480 °C, E 200 GPa, yield ~220 MPa (hot rolled; cold drawn up to ~370 MPa): ASM
    // Handbook vol. 1, ASM Metals Handbook Desk Edition.
    Entry {
        key: "steel_1010",
        aliases: &[],
        resistivity: 1.5e-7,
        temperature_coefficient: 0.0055,
        density: 7870.0,
        specific_heat: 450.0,
        melting_point: celsius(1480.0),
        youngs_modulus: 200e9,
        yield_strength: 220e6,
        source: "low-carbon steel 1010, hot rolled: ASM Handbook vol. 1, ASM Metals Handbook \
                 Desk Edition (recalled from memory, not re-checked)",
        warning: Some(
            "carbon steel is ferromagnetic (relative permeability far above 1 until it \
             saturates near 2 T); the non-magnetic ring model does not apply to it, so currents, \
             forces and heating computed for it are rough at best",
        ),
    },
    // Austenitic stainless steel 304, annealed. Resistivity 7.2e-7 Ohm m, TCR ~0.001 1/K,
    // density 8000 kg/m^3, c_p 500 J/(kg K), solidus 1400 °C, E 193 GPa, yield 205 MPa: ASM
    // Handbook vol. 1, ASM Metals Handbook Desk Edition.
    Entry {
        key: "stainless_304",
        aliases: &[],
        resistivity: 7.2e-7,
        temperature_coefficient: 0.001,
        density: 8000.0,
        specific_heat: 500.0,
        melting_point: celsius(1400.0),
        youngs_modulus: 193e9,
        yield_strength: 205e6,
        source: "stainless steel 304, annealed: ASM Handbook vol. 1, ASM Metals Handbook Desk \
                 Edition (recalled from memory, not re-checked)",
        warning: None,
    },
    // Commercially pure titanium grade 2. Resistivity ~5.2e-7 Ohm m (recalled range
    // 4.2-5.6e-7), TCR ~0.0035 1/K, density 4510 kg/m^3, c_p 523 J/(kg K), melting ~1665 °C,
    // E 103 GPa, yield ~345 MPa typical (specified minimum 275 MPa): ASM Handbook vol. 2,
    // ASM Metals Handbook Desk Edition.
    Entry {
        key: "titanium_grade2",
        aliases: &[],
        resistivity: 5.2e-7,
        temperature_coefficient: 0.0035,
        density: 4510.0,
        specific_heat: 523.0,
        melting_point: celsius(1665.0),
        youngs_modulus: 103e9,
        yield_strength: 345e6,
        source: "titanium grade 2 (commercially pure), annealed: ASM Handbook vol. 2, ASM Metals \
                 Handbook Desk Edition (recalled from memory, not re-checked)",
        warning: None,
    },
];

/// Canonical names of the built-in materials, in table order.
const NAMES: [&str; 9] = [
    "copper",
    "copper_ofhc",
    "aluminium_1050",
    "aluminium_6061_t6",
    "aluminium_6063_t6",
    "brass",
    "steel_1010",
    "stainless_304",
    "titanium_grade2",
];

fn entry(name: &str) -> Option<&'static Entry> {
    TABLE.iter().find(|e| e.key == name || e.aliases.contains(&name))
}

/// The built-in material called `name` (a canonical name or an alias such as
/// `"aluminum_6061_t6"`), with `name` set to the canonical name.
///
/// Every value is a nominal handbook figure recalled from memory, not re-checked; the
/// `source` field says so.
pub fn builtin(name: &str) -> Option<Material> {
    entry(name).map(|e| Material {
        name: e.key.to_string(),
        resistivity: e.resistivity,
        temperature_coefficient: e.temperature_coefficient,
        reference_temperature: REFERENCE_TEMPERATURE,
        density: e.density,
        specific_heat: e.specific_heat,
        melting_point: e.melting_point,
        youngs_modulus: e.youngs_modulus,
        yield_strength: e.yield_strength,
        source: e.source.to_string(),
    })
}

/// Canonical names of all built-in materials (aliases are not listed).
pub fn builtin_names() -> &'static [&'static str] {
    &NAMES
}

/// The canonical name for a built-in name or alias.
pub fn canonical_name(name: &str) -> Option<&'static str> {
    entry(name).map(|e| e.key)
}

/// A caution that applies whenever the built-in material `name` is used, if any
/// (for `"steel_1010"`: carbon steel is ferromagnetic).
pub fn builtin_warning(name: &str) -> Option<&'static str> {
    entry(name).and_then(|e| e.warning)
}

/// The provenance remark that every built-in `source` string contains.
pub fn provenance_remark() -> &'static str {
    RECALLED
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_match_the_table() {
        let keys: Vec<&str> = TABLE.iter().map(|e| e.key).collect();
        assert_eq!(keys, builtin_names());
        for name in builtin_names() {
            let m = builtin(name);
            assert!(m.as_ref().is_some_and(|m| m.name == *name), "{name}");
        }
    }

    #[test]
    fn required_materials_exist() {
        for name in [
            "copper",
            "copper_ofhc",
            "aluminium_1050",
            "aluminium_6061_t6",
            "aluminium_6063_t6",
            "brass",
            "steel_1010",
            "stainless_304",
            "titanium_grade2",
        ] {
            assert!(builtin(name).is_some(), "{name}");
        }
    }

    #[test]
    fn american_spelling_is_an_alias() {
        for (alias, key) in [
            ("aluminum_1050", "aluminium_1050"),
            ("aluminum_6061_t6", "aluminium_6061_t6"),
            ("aluminum_6063_t6", "aluminium_6063_t6"),
        ] {
            assert_eq!(builtin(alias), builtin(key));
            assert_eq!(canonical_name(alias), Some(key));
        }
        assert_eq!(builtin("unobtainium"), None);
        assert_eq!(canonical_name("Copper"), None);
    }

    #[test]
    fn every_value_is_physical_and_sourced() {
        for name in builtin_names() {
            let Some(m) = builtin(name) else { continue };
            assert!(m.resistivity > 1e-9 && m.resistivity < 1e-5, "{name} resistivity");
            assert!(m.temperature_coefficient > 0.0 && m.temperature_coefficient < 0.01, "{name}");
            assert!(m.density > 1000.0 && m.density < 25_000.0, "{name} density");
            assert!(m.specific_heat > 100.0 && m.specific_heat < 2000.0, "{name} c_p");
            assert!(m.melting_point > 800.0 && m.melting_point < 2200.0, "{name} melting");
            assert!(m.youngs_modulus > 50e9 && m.youngs_modulus < 250e9, "{name} E");
            assert!(m.yield_strength > 10e6 && m.yield_strength < 1e9, "{name} yield");
            assert_eq!(m.reference_temperature, 293.15);
            assert!(m.source.contains(provenance_remark()), "{name} source");
            assert!(m.source.contains("ASM"), "{name} source names the handbook");
        }
    }

    #[test]
    fn conductivity_ordering_is_sane() {
        // Copper conducts better than aluminium, which conducts better than brass and steel.
        let rho = |n: &str| builtin(n).map_or(f64::NAN, |m| m.resistivity);
        assert!(rho("copper_ofhc") <= rho("copper"));
        assert!(rho("copper") < rho("aluminium_1050"));
        assert!(rho("aluminium_1050") < rho("aluminium_6063_t6"));
        assert!(rho("aluminium_6063_t6") < rho("aluminium_6061_t6"));
        assert!(rho("aluminium_6061_t6") < rho("brass"));
        assert!(rho("brass") < rho("steel_1010"));
        assert!(rho("steel_1010") < rho("stainless_304"));
    }

    #[test]
    fn melting_points_are_in_kelvin() {
        // Solidus of 6061 is 582 °C.
        let t = builtin("aluminium_6061_t6").map_or(f64::NAN, |m| m.melting_point);
        assert!((t - 855.15).abs() < 1e-9, "6061 solidus {t} K");
    }

    #[test]
    fn only_carbon_steel_warns() {
        assert!(builtin_warning("steel_1010").is_some_and(|w| w.contains("ferromagnetic")));
        for name in builtin_names().iter().filter(|n| **n != "steel_1010") {
            assert_eq!(builtin_warning(name), None, "{name}");
        }
    }
}
