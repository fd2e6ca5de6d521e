//! The numeric fields of the case file by their dotted JSON path, with the kind of value each
//! holds.
//!
//! Sweeps and sizing change a case by path (`bank.voltage`, `coil.turns`); this table tells
//! them which unit a value is parsed in and which unit a CSV column carries, so that a value
//! with the wrong unit is refused before anything runs. Paths are those of
//! docs/case-format.md.

use crate::units::Dimension;

/// What a numeric field holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FieldKind {
    /// A physical quantity of this dimension (a JSON number is in SI units).
    Quantity(Dimension),
    /// A whole number (turns, filament counts).
    Count,
}

impl FieldKind {
    /// The unit suffix of a CSV column holding this field in SI: `"V"` for a voltage, `None`
    /// for counts and plain numbers.
    pub fn column_unit(self) -> Option<&'static str> {
        match self {
            FieldKind::Count | FieldKind::Quantity(Dimension::Dimensionless) => None,
            FieldKind::Quantity(d) => Some(match d {
                Dimension::Resistance => "Ohm",
                Dimension::Resistivity => "Ohm_m",
                Dimension::Density => "kg_per_m3",
                Dimension::SpecificHeat => "J_per_kg_K",
                Dimension::TemperatureCoefficient => "per_K",
                Dimension::CurrentRate => "A_per_s",
                Dimension::Percent => "percent",
                other => other.si_unit(),
            }),
        }
    }
}

/// Properties of a custom material object, with their dimensions.
const MATERIAL_FIELDS: [(&str, Dimension); 8] = [
    ("resistivity", Dimension::Resistivity),
    ("temperature_coefficient", Dimension::TemperatureCoefficient),
    ("reference_temperature", Dimension::Temperature),
    ("density", Dimension::Density),
    ("specific_heat", Dimension::SpecificHeat),
    ("melting_point", Dimension::Temperature),
    ("youngs_modulus", Dimension::Stress),
    ("yield_strength", Dimension::Stress),
];

/// Every numeric field outside materials, by path.
const FIELDS: &[(&str, FieldKind)] = {
    use Dimension::*;
    use FieldKind::{Count, Quantity as Q};
    &[
        ("initial_temperature", Q(Temperature)),
        ("bank.capacitance", Q(Capacitance)),
        ("bank.voltage", Q(Voltage)),
        ("bank.inductance", Q(Inductance)),
        ("bank.resistance", Q(Resistance)),
        ("bank.crowbar.resistance", Q(Resistance)),
        ("bank.crowbar.inductance", Q(Inductance)),
        ("feeder.inductance", Q(Inductance)),
        ("feeder.resistance", Q(Resistance)),
        ("coil.turns", Count),
        ("coil.mean_radius", Q(Length)),
        ("coil.inner_radius", Q(Length)),
        ("coil.conductor.radial", Q(Length)),
        ("coil.conductor.axial", Q(Length)),
        ("coil.pitch", Q(Length)),
        ("coil.winding_length", Q(Length)),
        ("coil.z_center", Q(Length)),
        ("coil.split.radial", Count),
        ("coil.split.axial", Count),
        ("workpiece.inner_radius", Q(Length)),
        ("workpiece.wall", Q(Length)),
        ("workpiece.length", Q(Length)),
        ("workpiece.z_center", Q(Length)),
        ("workpiece.split.radial", Count),
        ("workpiece.split.axial", Count),
        ("discretization.cell_over_skin_depth", Q(Dimensionless)),
        ("discretization.coarse_tube_rings", Count),
        ("discretization.max_filaments", Count),
        ("discretization.max_aspect", Q(Dimensionless)),
        ("solver.rel_tol", Q(Dimensionless)),
        ("solver.abs_tol", Q(Dimensionless)),
        ("solver.end_time", Q(Time)),
        ("solver.output_step", Q(Time)),
        ("motion.stop_radius", Q(Length)),
        ("motion.flow_stress.a", Q(Stress)),
        ("motion.flow_stress.b", Q(Stress)),
        ("motion.flow_stress.n", Q(Dimensionless)),
        ("motion.flow_stress.c", Q(Dimensionless)),
        ("motion.flow_stress.m", Q(Dimensionless)),
        ("motion.flow_stress.melting_point", Q(Temperature)),
        ("motion.flow_stress.reference_rate", Q(Dimensionless)),
        ("motion.flow_stress.k", Q(Stress)),
        ("motion.flow_stress.prestrain", Q(Dimensionless)),
        ("motion.flow_stress.stress", Q(Stress)),
        ("ratings.switch.peak_current", Q(Current)),
        ("ratings.switch.peak_di_dt", Q(CurrentRate)),
        ("ratings.switch.charge", Q(Charge)),
        ("ratings.switch.action_integral", Q(Action)),
        ("ratings.switch.reverse_current", Q(Percent)),
        ("ratings.capacitors.voltage", Q(Voltage)),
        ("ratings.capacitors.voltage_reversal", Q(Percent)),
        ("ratings.capacitors.peak_current", Q(Current)),
        ("ratings.capacitors.units", Count),
        ("ratings.coil.temperature_rise", Q(TemperatureDifference)),
        ("ratings.coil.allowed_hoop_stress", Q(Stress)),
        ("ratings.coil.safety_factor", Q(Dimensionless)),
        ("ratings.feeder.peak_current", Q(Current)),
        ("ratings.feeder.action_integral", Q(Action)),
    ]
};

/// The kind of the numeric field at a dotted path, or `None` when the path is not a numeric
/// field of the case format.
///
/// Material properties are found under both materials: `coil.material.resistivity`,
/// `workpiece.material.yield_strength`.
pub fn numeric_field(path: &str) -> Option<FieldKind> {
    if let Some((_, kind)) = FIELDS.iter().find(|(p, _)| *p == path) {
        return Some(*kind);
    }
    let (owner, property) = path.split_once(".material.")?;
    if owner != "coil" && owner != "workpiece" {
        return None;
    }
    MATERIAL_FIELDS.iter().find(|(name, _)| *name == property).map(|(_, d)| FieldKind::Quantity(*d))
}

/// Every numeric path outside materials, in documentation order (for messages).
pub fn numeric_paths() -> impl Iterator<Item = &'static str> {
    FIELDS.iter().map(|(p, _)| *p)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::file::{
        BankFile, CapacitorRatingsFile, CaseFile, CoilFile, CoilRatingsFile, ConductorFile,
        CrowbarFile, CustomMaterialFile, DiscretizationFile, FeederFile, FeederRatingsFile,
        SolverFile, SplitFile, SwitchRatingsFile, TubeFile,
    };

    /// Every path's last key is a key of the object it names, so the table cannot drift from
    /// the schema.
    #[test]
    fn every_path_names_a_schema_field() {
        for (path, _) in FIELDS {
            let (parent, key) = path.rsplit_once('.').unwrap_or(("", path));
            let keys: &[&str] = match parent {
                "" => CaseFile::FIELDS,
                "bank" => BankFile::FIELDS,
                "bank.crowbar" => CrowbarFile::FIELDS,
                "feeder" => FeederFile::FIELDS,
                "coil" => CoilFile::FIELDS,
                "coil.conductor" => ConductorFile::FIELDS,
                "coil.split" | "workpiece.split" => SplitFile::FIELDS,
                "workpiece" => TubeFile::FIELDS,
                "discretization" => DiscretizationFile::FIELDS,
                "solver" => SolverFile::FIELDS,
                "ratings.switch" => SwitchRatingsFile::FIELDS,
                "ratings.capacitors" => CapacitorRatingsFile::FIELDS,
                "ratings.coil" => CoilRatingsFile::FIELDS,
                "ratings.feeder" => FeederRatingsFile::FIELDS,
                "motion" => crate::validate::motion_check::MOTION_FIELDS,
                "motion.flow_stress" => crate::validate::motion_check::FLOW_FIELDS,
                _ => &[],
            };
            assert!(keys.contains(&key), "{path}: not a schema field");
        }
        for (name, _) in MATERIAL_FIELDS {
            assert!(CustomMaterialFile::FIELDS.contains(&name), "material {name}");
        }
    }

    #[test]
    fn lookups() {
        assert_eq!(numeric_field("bank.voltage"), Some(FieldKind::Quantity(Dimension::Voltage)));
        assert_eq!(numeric_field("coil.turns"), Some(FieldKind::Count));
        assert_eq!(
            numeric_field("workpiece.material.yield_strength"),
            Some(FieldKind::Quantity(Dimension::Stress))
        );
        assert_eq!(numeric_field("coil.material.name"), None);
        assert_eq!(numeric_field("bank.material.density"), None);
        assert_eq!(numeric_field("description"), None);
        assert_eq!(numeric_field("bank"), None);
        assert_eq!(FieldKind::Quantity(Dimension::Voltage).column_unit(), Some("V"));
        assert_eq!(FieldKind::Count.column_unit(), None);
    }
}
