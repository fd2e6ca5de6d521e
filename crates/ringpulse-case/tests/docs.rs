//! docs/case-format.md documents every field of the schema and every default.

#![allow(clippy::panic)]

use ringpulse_case::file::{
    BankFile, CapacitorRatingsFile, CaseFile, CoilFile, CoilRatingsFile, ConductorFile,
    CrowbarFile, CustomMaterialFile, DiscretizationFile, FeederFile, FeederRatingsFile,
    RatingsFile, SolverFile, SplitFile, SwitchRatingsFile, TubeFile,
};
use ringpulse_case::materials::{builtin, builtin_names};

fn doc() -> String {
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/../../docs/case-format.md");
    std::fs::read_to_string(path).unwrap_or_default()
}

#[test]
fn every_field_is_documented() {
    let doc = doc();
    assert!(!doc.is_empty(), "docs/case-format.md is missing");
    let lists: [&[&str]; 16] = [
        CaseFile::FIELDS,
        BankFile::FIELDS,
        CrowbarFile::FIELDS,
        FeederFile::FIELDS,
        CoilFile::FIELDS,
        ConductorFile::FIELDS,
        TubeFile::FIELDS,
        SplitFile::FIELDS,
        CustomMaterialFile::FIELDS,
        DiscretizationFile::FIELDS,
        SolverFile::FIELDS,
        RatingsFile::FIELDS,
        SwitchRatingsFile::FIELDS,
        CapacitorRatingsFile::FIELDS,
        CoilRatingsFile::FIELDS,
        FeederRatingsFile::FIELDS,
    ];
    for field in lists.iter().flat_map(|l| l.iter()) {
        assert!(doc.contains(&format!("`{field}`")), "field {field} is not documented");
    }
    for name in builtin_names() {
        assert!(doc.contains(&format!("`{name}`")), "material {name} is not documented");
    }
}

#[test]
fn defaults_and_limits_are_documented() {
    use ringpulse_case::validate::defaults as d;
    let doc = doc();
    for (what, text) in [
        (
            "max_filaments",
            format!(
                "| `max_filaments` | integer | no | {} | 1 to {} |",
                d::MAX_FILAMENTS,
                d::MAX_FILAMENTS_LIMIT
            ),
        ),
        (
            "coarse_tube_rings",
            format!("| `coarse_tube_rings` | integer | no | {} |", d::COARSE_TUBE_RINGS),
        ),
        ("max_aspect", format!("| `max_aspect` | plain number | no | {} |", d::MAX_ASPECT)),
        (
            "rel_tol",
            format!(
                "| `rel_tol` | plain number | no | {:e} (fixed geometry), {:e} (motion), {:e} (motion in the coarse preview) | > 0 and <= {:e} |",
                d::REL_TOL,
                d::MOTION_REL_TOL,
                d::PREVIEW_MOTION_REL_TOL,
                d::REL_TOL_MAX
            ),
        ),
        (
            "abs_tol",
            format!(
                "| `abs_tol` | plain number | no | {:e} (fixed geometry), {:e} (motion), {:e} (motion in the coarse preview) |",
                d::ABS_TOL,
                d::MOTION_ABS_TOL,
                d::PREVIEW_MOTION_ABS_TOL
            ),
        ),
        ("initial_temperature", format!("| no | {} K (20 °C) |", d::INITIAL_TEMPERATURE)),
        ("cell_over_skin_depth", format!("| no | {:.1} | > 0 |", d::CELL_OVER_SKIN_DEPTH)),
        ("output samples", format!("{:e} output samples", d::MAX_OUTPUT_SAMPLES)),
        ("hold", format!("| `hold` | string | no | `\"{}\"` |", d::COIL_HOLD)),
        ("units", format!("| `units` | integer | no | {} | >= 1 |", d::CAPACITOR_UNITS)),
        (
            "safety_factor",
            format!("| `safety_factor` | plain number | no | {} | >= 1 |", d::COIL_SAFETY_FACTOR),
        ),
    ] {
        assert!(doc.contains(&text), "{what}: docs/case-format.md should contain {text:?}");
    }
}

#[test]
fn material_table_matches_the_code() {
    let doc = doc();
    for name in builtin_names() {
        let prefix = format!("| `{name}` |");
        let row = doc.lines().find(|l| l.starts_with(&prefix));
        let Some(row) = row else { panic!("docs/case-format.md has no table row for {name}") };
        // Columns: name, alloy, then seven numbers in the units of the header.
        let numbers: Vec<f64> =
            row.split('|').skip(3).filter_map(|c| c.trim().parse().ok()).collect();
        let Some(m) = builtin(name) else { continue };
        let expected = [
            m.resistivity,
            m.temperature_coefficient,
            m.density,
            m.specific_heat,
            m.melting_point,
            m.youngs_modulus / 1e9,
            m.yield_strength / 1e6,
        ];
        assert_eq!(numbers.len(), expected.len(), "{name}: {row}");
        for (doc_value, code_value) in numbers.iter().zip(expected) {
            assert!(
                (doc_value - code_value).abs() <= 1e-9 * code_value.abs(),
                "{name}: docs say {doc_value}, code has {code_value}"
            );
        }
    }
}
