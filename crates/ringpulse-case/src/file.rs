//! `CaseFile` types: the case file's JSON exactly as written, before any checking.
//!
//! Every quantity is kept as a raw [`serde_json::Value`] so that both `0.0015` and `"1.5 mm"`
//! parse here and the unit is interpreted later, with the field's path at hand. Objects are
//! wrapped in [`Section`] and materials in [`MaterialFile`], both of which accept any JSON
//! value; unknown keys are collected in each object's `unknown` map. Deserializing a JSON
//! object into a [`CaseFile`] therefore never fails, and validation can report every problem
//! at once instead of stopping at serde's first error. A JSON `null` counts as an absent field.
//!
//! See docs/case-format.md for the meaning, unit, default and range of each field.

use std::collections::BTreeMap;

use serde::Deserialize;
use serde_json::Value;

/// Keys of an object that the schema does not know, with their values (reported as errors).
pub type Unknown = BTreeMap<String, Value>;

/// A place in the schema that should hold a JSON object.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(untagged)]
pub enum Section<T> {
    /// The value was a JSON object.
    Object(T),
    /// The value was something else (a number, string, array, ...), kept for the message.
    Invalid(Value),
}

/// The whole case file.
#[derive(Debug, Clone, Default, PartialEq, Deserialize)]
pub struct CaseFile {
    /// One-line description of the scenario. Required string.
    pub description: Option<Value>,
    /// Free text, ignored by validation.
    pub notes: Option<Value>,
    /// Capacitor bank. Required.
    pub bank: Option<Section<BankFile>>,
    /// Feeder between bank and coil. Optional.
    pub feeder: Option<Section<FeederFile>>,
    /// Forming coil. Required.
    pub coil: Option<Section<CoilFile>>,
    /// Workpiece tube. Optional.
    pub workpiece: Option<Section<TubeFile>>,
    /// Filament split settings. Optional.
    pub discretization: Option<Section<DiscretizationFile>>,
    /// Transient solver settings. Optional.
    pub solver: Option<Section<SolverFile>>,
    /// Initial temperature of every conductor (temperature). Optional.
    pub initial_temperature: Option<Value>,
    /// Limits of switch, capacitors, coil and feeder to check a run against. Optional.
    pub ratings: Option<Section<RatingsFile>>,
    /// Workpiece motion: true, false or an object (stop_radius, flow_stress). Optional.
    pub motion: Option<Value>,
    /// Keys not in the schema.
    #[serde(flatten)]
    pub unknown: Unknown,
}

impl CaseFile {
    /// The keys this object accepts, in documentation order.
    pub const FIELDS: &'static [&'static str] = &[
        "description",
        "notes",
        "bank",
        "feeder",
        "coil",
        "workpiece",
        "discretization",
        "solver",
        "initial_temperature",
        "ratings",
        "motion",
    ];
}

/// The `bank` object.
#[derive(Debug, Clone, Default, PartialEq, Deserialize)]
pub struct BankFile {
    /// Free text, ignored by validation.
    pub notes: Option<Value>,
    /// Bank capacitance (capacitance). Required.
    pub capacitance: Option<Value>,
    /// Charging voltage (voltage). Required.
    pub voltage: Option<Value>,
    /// Bank and switch inductance (inductance). Optional.
    pub inductance: Option<Value>,
    /// Bank and switch resistance (resistance). Optional.
    pub resistance: Option<Value>,
    /// Crowbar; present means enabled. Optional.
    pub crowbar: Option<Section<CrowbarFile>>,
    /// Keys not in the schema.
    #[serde(flatten)]
    pub unknown: Unknown,
}

impl BankFile {
    /// The keys this object accepts, in documentation order.
    pub const FIELDS: &'static [&'static str] =
        &["notes", "capacitance", "voltage", "inductance", "resistance", "crowbar"];
}

/// The `bank.crowbar` object.
#[derive(Debug, Clone, Default, PartialEq, Deserialize)]
pub struct CrowbarFile {
    /// Free text, ignored by validation.
    pub notes: Option<Value>,
    /// Crowbar path resistance (resistance). Optional.
    pub resistance: Option<Value>,
    /// Crowbar path inductance (inductance). Optional.
    pub inductance: Option<Value>,
    /// Keys not in the schema.
    #[serde(flatten)]
    pub unknown: Unknown,
}

impl CrowbarFile {
    /// The keys this object accepts, in documentation order.
    pub const FIELDS: &'static [&'static str] = &["notes", "resistance", "inductance"];
}

/// The `feeder` object.
#[derive(Debug, Clone, Default, PartialEq, Deserialize)]
pub struct FeederFile {
    /// Free text, ignored by validation.
    pub notes: Option<Value>,
    /// Feeder inductance (inductance). Optional.
    pub inductance: Option<Value>,
    /// Feeder resistance (resistance). Optional.
    pub resistance: Option<Value>,
    /// Keys not in the schema.
    #[serde(flatten)]
    pub unknown: Unknown,
}

impl FeederFile {
    /// The keys this object accepts, in documentation order.
    pub const FIELDS: &'static [&'static str] = &["notes", "inductance", "resistance"];
}

/// The `coil` object.
#[derive(Debug, Clone, Default, PartialEq, Deserialize)]
pub struct CoilFile {
    /// Free text, ignored by validation.
    pub notes: Option<Value>,
    /// Number of turns (integer). Required.
    pub turns: Option<Value>,
    /// Mean radius of the conductor section (length). Exactly one of this and `inner_radius`.
    pub mean_radius: Option<Value>,
    /// Inner radius of the winding (length). Exactly one of this and `mean_radius`.
    pub inner_radius: Option<Value>,
    /// Conductor cross-section. Required.
    pub conductor: Option<Section<ConductorFile>>,
    /// Distance between turn centres (length). For more than one turn, exactly one of this and
    /// `winding_length`.
    pub pitch: Option<Value>,
    /// Turns times pitch (length). For more than one turn, exactly one of this and `pitch`.
    pub winding_length: Option<Value>,
    /// Axial position of the winding's centre (length). Optional.
    pub z_center: Option<Value>,
    /// Conductor material. Required.
    pub material: Option<MaterialFile>,
    /// Fixed filament split of each turn. Optional.
    pub split: Option<Section<SplitFile>>,
    /// What a sweep of `turns` keeps: `"pitch"` (default) or `"winding_length"`. Optional.
    pub hold: Option<Value>,
    /// Keys not in the schema.
    #[serde(flatten)]
    pub unknown: Unknown,
}

impl CoilFile {
    /// The keys this object accepts, in documentation order.
    pub const FIELDS: &'static [&'static str] = &[
        "notes",
        "turns",
        "mean_radius",
        "inner_radius",
        "conductor",
        "pitch",
        "winding_length",
        "z_center",
        "material",
        "split",
        "hold",
    ];
}

/// The `coil.conductor` object: the rectangular cross-section of the conductor.
#[derive(Debug, Clone, Default, PartialEq, Deserialize)]
pub struct ConductorFile {
    /// Free text, ignored by validation.
    pub notes: Option<Value>,
    /// Radial thickness (length). Required.
    pub radial: Option<Value>,
    /// Axial width (length). Required.
    pub axial: Option<Value>,
    /// Keys not in the schema.
    #[serde(flatten)]
    pub unknown: Unknown,
}

impl ConductorFile {
    /// The keys this object accepts, in documentation order.
    pub const FIELDS: &'static [&'static str] = &["notes", "radial", "axial"];
}

/// The `workpiece` object: a tube, or a ring if short.
#[derive(Debug, Clone, Default, PartialEq, Deserialize)]
pub struct TubeFile {
    /// Free text, ignored by validation.
    pub notes: Option<Value>,
    /// Inner radius (length). Required.
    pub inner_radius: Option<Value>,
    /// Wall thickness (length). Required.
    pub wall: Option<Value>,
    /// Axial length (length). Required.
    pub length: Option<Value>,
    /// Axial position of the tube's centre (length). Optional.
    pub z_center: Option<Value>,
    /// Tube material. Required.
    pub material: Option<MaterialFile>,
    /// Fixed filament split. Optional.
    pub split: Option<Section<SplitFile>>,
    /// Keys not in the schema.
    #[serde(flatten)]
    pub unknown: Unknown,
}

impl TubeFile {
    /// The keys this object accepts, in documentation order.
    pub const FIELDS: &'static [&'static str] =
        &["notes", "inner_radius", "wall", "length", "z_center", "material", "split"];
}

/// A `split` object: a fixed number of filaments across a rectangular section.
#[derive(Debug, Clone, Default, PartialEq, Deserialize)]
pub struct SplitFile {
    /// Free text, ignored by validation.
    pub notes: Option<Value>,
    /// Filaments across the radial thickness (integer). Required.
    pub radial: Option<Value>,
    /// Filaments along the axial width or length (integer). Required.
    pub axial: Option<Value>,
    /// Keys not in the schema.
    #[serde(flatten)]
    pub unknown: Unknown,
}

impl SplitFile {
    /// The keys this object accepts, in documentation order.
    pub const FIELDS: &'static [&'static str] = &["notes", "radial", "axial"];
}

/// A `material` value: a built-in name or a custom material object.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(untagged)]
pub enum MaterialFile {
    /// The name of a built-in material, such as `"copper"`.
    Name(String),
    /// A custom material object.
    Custom(Box<CustomMaterialFile>),
    /// Neither a string nor an object, kept for the message.
    Invalid(Value),
}

/// A custom material object: every property, or a built-in `base` with some overrides.
#[derive(Debug, Clone, Default, PartialEq, Deserialize)]
pub struct CustomMaterialFile {
    /// Free text, ignored by validation.
    pub notes: Option<Value>,
    /// Display name (string). Optional.
    pub name: Option<Value>,
    /// Where the numbers come from (string). Optional.
    pub source: Option<Value>,
    /// Built-in material to start from (string). Optional.
    pub base: Option<Value>,
    /// Resistivity at the reference temperature (resistivity).
    pub resistivity: Option<Value>,
    /// Linear temperature coefficient of resistivity (temperature coefficient).
    pub temperature_coefficient: Option<Value>,
    /// Temperature at which `resistivity` holds (temperature). Optional.
    pub reference_temperature: Option<Value>,
    /// Mass density (density).
    pub density: Option<Value>,
    /// Specific heat capacity (specific heat).
    pub specific_heat: Option<Value>,
    /// Melting (solidus) temperature (temperature).
    pub melting_point: Option<Value>,
    /// Young's modulus (stress).
    pub youngs_modulus: Option<Value>,
    /// Initial yield strength (stress).
    pub yield_strength: Option<Value>,
    /// Keys not in the schema.
    #[serde(flatten)]
    pub unknown: Unknown,
}

impl CustomMaterialFile {
    /// The keys this object accepts, in documentation order.
    pub const FIELDS: &'static [&'static str] = &[
        "notes",
        "name",
        "source",
        "base",
        "resistivity",
        "temperature_coefficient",
        "reference_temperature",
        "density",
        "specific_heat",
        "melting_point",
        "youngs_modulus",
        "yield_strength",
    ];
}

/// The `discretization` object.
#[derive(Debug, Clone, Default, PartialEq, Deserialize)]
pub struct DiscretizationFile {
    /// Free text, ignored by validation.
    pub notes: Option<Value>,
    /// `"skin_depth"` or `"coarse"`. Optional.
    pub resolution: Option<Value>,
    /// Cell edge over skin depth (plain number). Optional.
    pub cell_over_skin_depth: Option<Value>,
    /// Tube rings in coarse mode (integer). Optional.
    pub coarse_tube_rings: Option<Value>,
    /// Filament limit (integer). Optional.
    pub max_filaments: Option<Value>,
    /// Largest cell aspect ratio (plain number). Optional.
    pub max_aspect: Option<Value>,
    /// Keys not in the schema.
    #[serde(flatten)]
    pub unknown: Unknown,
}

impl DiscretizationFile {
    /// The keys this object accepts, in documentation order.
    pub const FIELDS: &'static [&'static str] = &[
        "notes",
        "resolution",
        "cell_over_skin_depth",
        "coarse_tube_rings",
        "max_filaments",
        "max_aspect",
    ];
}

/// The `solver` object.
#[derive(Debug, Clone, Default, PartialEq, Deserialize)]
pub struct SolverFile {
    /// Free text, ignored by validation.
    pub notes: Option<Value>,
    /// Relative tolerance (plain number). Optional.
    pub rel_tol: Option<Value>,
    /// Absolute tolerance on the scaled state (plain number). Optional.
    pub abs_tol: Option<Value>,
    /// End time of the transient (time). Optional.
    pub end_time: Option<Value>,
    /// Output sampling interval (time). Optional.
    pub output_step: Option<Value>,
    /// Keys not in the schema.
    #[serde(flatten)]
    pub unknown: Unknown,
}

impl SolverFile {
    /// The keys this object accepts, in documentation order.
    pub const FIELDS: &'static [&'static str] =
        &["notes", "rel_tol", "abs_tol", "end_time", "output_step"];
}

/// The `ratings` object: limits to check a run against, each optional.
#[derive(Debug, Clone, Default, PartialEq, Deserialize)]
pub struct RatingsFile {
    /// Free text, ignored by validation.
    pub notes: Option<Value>,
    /// The closing switch. Optional.
    pub switch: Option<Section<SwitchRatingsFile>>,
    /// The capacitors of the bank. Optional.
    pub capacitors: Option<Section<CapacitorRatingsFile>>,
    /// The forming coil. Optional.
    pub coil: Option<Section<CoilRatingsFile>>,
    /// The feeder cable or bus. Optional.
    pub feeder: Option<Section<FeederRatingsFile>>,
    /// Keys not in the schema.
    #[serde(flatten)]
    pub unknown: Unknown,
}

impl RatingsFile {
    /// The keys this object accepts, in documentation order.
    pub const FIELDS: &'static [&'static str] =
        &["notes", "switch", "capacitors", "coil", "feeder"];
}

/// The `ratings.switch` object.
#[derive(Debug, Clone, Default, PartialEq, Deserialize)]
pub struct SwitchRatingsFile {
    /// Free text, ignored by validation.
    pub notes: Option<Value>,
    /// Largest allowed current (current). Optional.
    pub peak_current: Option<Value>,
    /// Largest allowed rate of rise of current (current rate). Optional.
    pub peak_di_dt: Option<Value>,
    /// Largest allowed charge per shot, ∫|i| dt (charge). Optional.
    pub charge: Option<Value>,
    /// Largest allowed action integral per shot, ∫i² dt (action). Optional.
    pub action_integral: Option<Value>,
    /// Largest allowed reverse current, percent of the first peak (percent). Optional.
    pub reverse_current: Option<Value>,
    /// Keys not in the schema.
    #[serde(flatten)]
    pub unknown: Unknown,
}

impl SwitchRatingsFile {
    /// The keys this object accepts, in documentation order.
    pub const FIELDS: &'static [&'static str] =
        &["notes", "peak_current", "peak_di_dt", "charge", "action_integral", "reverse_current"];
}

/// The `ratings.capacitors` object.
#[derive(Debug, Clone, Default, PartialEq, Deserialize)]
pub struct CapacitorRatingsFile {
    /// Free text, ignored by validation.
    pub notes: Option<Value>,
    /// Rated voltage (voltage). Optional.
    pub voltage: Option<Value>,
    /// Allowed voltage reversal, percent of the charging voltage (percent). Optional.
    pub voltage_reversal: Option<Value>,
    /// Largest allowed current per unit (current). Optional.
    pub peak_current: Option<Value>,
    /// Number of capacitor units sharing the bank current (integer). Optional.
    pub units: Option<Value>,
    /// Keys not in the schema.
    #[serde(flatten)]
    pub unknown: Unknown,
}

impl CapacitorRatingsFile {
    /// The keys this object accepts, in documentation order.
    pub const FIELDS: &'static [&'static str] =
        &["notes", "voltage", "voltage_reversal", "peak_current", "units"];
}

/// The `ratings.coil` object.
#[derive(Debug, Clone, Default, PartialEq, Deserialize)]
pub struct CoilRatingsFile {
    /// Free text, ignored by validation.
    pub notes: Option<Value>,
    /// Allowed temperature rise of the hottest coil filament (temperature difference). Optional.
    pub temperature_rise: Option<Value>,
    /// Allowed conductor hoop stress magnitude (stress). Optional.
    pub allowed_hoop_stress: Option<Value>,
    /// Yield strength over allowed hoop stress (plain number). Optional.
    pub safety_factor: Option<Value>,
    /// Keys not in the schema.
    #[serde(flatten)]
    pub unknown: Unknown,
}

impl CoilRatingsFile {
    /// The keys this object accepts, in documentation order.
    pub const FIELDS: &'static [&'static str] =
        &["notes", "temperature_rise", "allowed_hoop_stress", "safety_factor"];
}

/// The `ratings.feeder` object.
#[derive(Debug, Clone, Default, PartialEq, Deserialize)]
pub struct FeederRatingsFile {
    /// Free text, ignored by validation.
    pub notes: Option<Value>,
    /// Largest allowed current (current). Optional.
    pub peak_current: Option<Value>,
    /// Largest allowed action integral, ∫i² dt (action). Optional.
    pub action_integral: Option<Value>,
    /// Keys not in the schema.
    #[serde(flatten)]
    pub unknown: Unknown,
}

impl FeederRatingsFile {
    /// The keys this object accepts, in documentation order.
    pub const FIELDS: &'static [&'static str] = &["notes", "peak_current", "action_integral"];
}

#[cfg(test)]
// A failing test is a panic; that is what these helpers are for.
#[allow(clippy::panic)]
mod tests {
    use super::*;
    use serde::de::DeserializeOwned;
    use serde_json::{json, Map};

    /// An object holding every listed key (each set to 1) must leave `unknown` empty, so the
    /// FIELDS lists cannot drift from the struct definitions.
    fn all_fields_known<T: DeserializeOwned>(fields: &[&str], unknown: fn(&T) -> &Unknown) {
        let obj: Map<String, Value> = fields.iter().map(|f| (f.to_string(), json!(1))).collect();
        match serde_json::from_value::<T>(Value::Object(obj)) {
            Ok(t) => assert!(unknown(&t).is_empty(), "unexpected unknown keys {:?}", unknown(&t)),
            Err(e) => panic!("object with all fields failed to deserialize: {e}"),
        }
    }

    #[test]
    fn field_lists_match_structs() {
        all_fields_known::<CaseFile>(CaseFile::FIELDS, |t| &t.unknown);
        all_fields_known::<BankFile>(BankFile::FIELDS, |t| &t.unknown);
        all_fields_known::<CrowbarFile>(CrowbarFile::FIELDS, |t| &t.unknown);
        all_fields_known::<FeederFile>(FeederFile::FIELDS, |t| &t.unknown);
        all_fields_known::<CoilFile>(CoilFile::FIELDS, |t| &t.unknown);
        all_fields_known::<ConductorFile>(ConductorFile::FIELDS, |t| &t.unknown);
        all_fields_known::<TubeFile>(TubeFile::FIELDS, |t| &t.unknown);
        all_fields_known::<SplitFile>(SplitFile::FIELDS, |t| &t.unknown);
        all_fields_known::<CustomMaterialFile>(CustomMaterialFile::FIELDS, |t| &t.unknown);
        all_fields_known::<DiscretizationFile>(DiscretizationFile::FIELDS, |t| &t.unknown);
        all_fields_known::<SolverFile>(SolverFile::FIELDS, |t| &t.unknown);
        all_fields_known::<RatingsFile>(RatingsFile::FIELDS, |t| &t.unknown);
        all_fields_known::<SwitchRatingsFile>(SwitchRatingsFile::FIELDS, |t| &t.unknown);
        all_fields_known::<CapacitorRatingsFile>(CapacitorRatingsFile::FIELDS, |t| &t.unknown);
        all_fields_known::<CoilRatingsFile>(CoilRatingsFile::FIELDS, |t| &t.unknown);
        all_fields_known::<FeederRatingsFile>(FeederRatingsFile::FIELDS, |t| &t.unknown);
    }

    #[test]
    fn any_value_deserializes_into_sections() {
        let file: Result<CaseFile, _> = serde_json::from_value(json!({
            "bank": 5,
            "coil": {"material": 3, "turns": "x", "split": [1, 2], "extra": true},
            "workpiece": {"material": {"base": "copper", "colour": "red"}},
            "solver": null,
        }));
        let file = file.unwrap_or_else(|e| panic!("deserialize failed: {e}"));
        assert_eq!(file.bank, Some(Section::Invalid(json!(5))));
        assert_eq!(file.solver, None);
        let Some(Section::Object(coil)) = &file.coil else {
            panic!("coil should be an object: {:?}", file.coil);
        };
        assert_eq!(coil.material, Some(MaterialFile::Invalid(json!(3))));
        assert_eq!(coil.turns, Some(json!("x")));
        assert_eq!(coil.split, Some(Section::Invalid(json!([1, 2]))));
        assert_eq!(coil.unknown.get("extra"), Some(&json!(true)));
        let Some(Section::Object(tube)) = &file.workpiece else {
            panic!("workpiece should be an object");
        };
        let Some(MaterialFile::Custom(m)) = &tube.material else {
            panic!("material should be custom: {:?}", tube.material);
        };
        assert_eq!(m.base, Some(json!("copper")));
        assert_eq!(m.unknown.get("colour"), Some(&json!("red")));
    }
}
