//! The scalar results of a run that sweeps report and sizing aims at, by column name.
//!
//! Column names carry their unit (`peak_coil_current_A`) and match the keys of the engine's
//! summary.json where one exists. A metric without a value for a run (no workpiece, no
//! current zero in the run) is `None`, written as an empty CSV cell. No wall-time metric is
//! listed: a sweep's CSV must be the same bytes whichever machine or shard computed a row.

use ringpulse_case::Case;
use ringpulse_engine::RunResult;

use crate::ratings::reverse_current_percent;

/// One scalar result of a run.
#[derive(Clone, Copy)]
pub struct Metric {
    /// Column name with unit suffix.
    pub name: &'static str,
    /// What it is, for docs and messages.
    pub about: &'static str,
    /// True for a count (a whole number, such as `filaments`), written without an exponent.
    pub count: bool,
    /// Its value for a run of a case.
    pub value: fn(&Case, &RunResult) -> Option<f64>,
}

impl std::fmt::Debug for Metric {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name)
    }
}

fn finite(x: f64) -> Option<f64> {
    x.is_finite().then_some(x)
}

fn motion(r: &RunResult) -> Option<&ringpulse_engine::MotionSummary> {
    r.summary.motion.as_ref()
}

fn has_workpiece(case: &Case) -> bool {
    case.workpiece.is_some()
}

/// Every metric of a sweep row, in column order.
pub const METRICS: &[Metric] = &[
    Metric {
        name: "peak_coil_current_A",
        about: "largest absolute coil current",
        count: false,
        value: |_, r| finite(r.summary.peak_coil_current),
    },
    Metric {
        name: "time_of_peak_current_s",
        about: "time of the largest absolute coil current",
        count: false,
        value: |_, r| finite(r.summary.time_of_peak_current),
    },
    Metric {
        name: "first_current_zero_s",
        about: "first zero of the coil current after its peak",
        count: false,
        value: |_, r| r.summary.first_current_zero,
    },
    Metric {
        name: "ringing_frequency_Hz",
        about: "ringing frequency from the current zeros",
        count: false,
        value: |_, r| r.summary.ringing_frequency,
    },
    Metric {
        name: "peak_di_dt_A_per_s",
        about: "largest absolute rate of rise of the coil current",
        count: false,
        value: |_, r| finite(r.summary.peak_di_dt),
    },
    Metric {
        name: "charge_C",
        about: "charge through the switch, integral of |i| dt over the run",
        count: false,
        value: |_, r| finite(r.summary.charge),
    },
    Metric {
        name: "action_integral_A2s",
        about: "action integral of the coil current, integral of i^2 dt over the run",
        count: false,
        value: |_, r| finite(r.summary.action_integral),
    },
    Metric {
        name: "voltage_reversal_percent",
        about: "largest negative capacitor voltage, percent of the charging voltage",
        count: false,
        value: |_, r| finite(r.summary.voltage_reversal_percent),
    },
    Metric {
        name: "reverse_current_percent",
        about: "largest current opposite to the first peak, percent of that peak",
        count: false,
        value: |_, r| {
            let s = &r.summary;
            finite(reverse_current_percent(&r.traces, s.peak_coil_current, s.time_of_peak_current))
        },
    },
    Metric {
        name: "peak_workpiece_current_A",
        about: "largest absolute net workpiece current",
        count: false,
        value: |c, r| has_workpiece(c).then_some(r.summary.peak_workpiece_current),
    },
    Metric {
        name: "peak_pressure_Pa",
        about: "largest magnetic pressure on any workpiece ring",
        count: false,
        value: |_, r| r.summary.peak_pressure.as_ref().map(|p| p.value),
    },
    Metric {
        name: "peak_radial_force_N",
        about: "largest absolute net radial force on the workpiece",
        count: false,
        value: |c, r| has_workpiece(c).then_some(r.summary.peak_radial_force),
    },
    Metric {
        name: "peak_axial_force_N",
        about: "largest absolute net axial force on the workpiece",
        count: false,
        value: |c, r| has_workpiece(c).then_some(r.summary.peak_axial_force),
    },
    Metric {
        name: "peak_coil_hoop_stress_Pa",
        about: "largest turn hoop stress, signed (tension positive)",
        count: false,
        value: |_, r| finite(r.summary.peak_coil_hoop_stress),
    },
    Metric {
        name: "peak_coil_pressure_Pa",
        about: "largest net radial magnetic force per face area of a turn",
        count: false,
        value: |_, r| finite(r.summary.peak_coil_pressure),
    },
    Metric {
        name: "peak_coil_temperature_K",
        about: "hottest coil filament at the end, adiabatic estimate",
        count: false,
        value: |_, r| finite(r.summary.peak_coil_temperature),
    },
    Metric {
        name: "peak_workpiece_temperature_K",
        about: "hottest workpiece filament at the end, adiabatic estimate",
        count: false,
        value: |_, r| r.summary.peak_workpiece_temperature,
    },
    Metric {
        name: "energy_initial_J",
        about: "stored bank energy 0.5 C V0^2",
        count: false,
        value: |_, r| finite(r.summary.energy.initial),
    },
    Metric {
        name: "energy_coil_J",
        about: "energy dissipated in the coil",
        count: false,
        value: |_, r| finite(r.summary.energy.coil),
    },
    Metric {
        name: "energy_workpiece_J",
        about: "energy dissipated in the workpiece",
        count: false,
        value: |_, r| finite(r.summary.energy.workpiece),
    },
    Metric {
        name: "energy_relative_residual",
        about: "energy account residual over the stored energy (solver error)",
        count: false,
        value: |_, r| finite(r.summary.energy.relative_residual),
    },
    Metric {
        name: "max_displacement_m",
        about: "largest radial displacement of any ring (signed, outward positive); motion only",
        count: false,
        value: |_, r| motion(r).map(|m| m.max_displacement),
    },
    Metric {
        name: "max_velocity_m_per_s",
        about: "largest radial speed of any ring (signed, outward positive); motion only",
        count: false,
        value: |_, r| motion(r).map(|m| m.max_velocity),
    },
    Metric {
        name: "first_impact_time_s",
        about: "time of the first impact on the die or mandrel; motion only",
        count: false,
        value: |_, r| motion(r).and_then(|m| m.first_impact_time),
    },
    Metric {
        name: "max_impact_velocity_m_per_s",
        about: "largest impact speed on the die or mandrel; motion only",
        count: false,
        value: |_, r| motion(r).and_then(|m| m.max_impact_velocity),
    },
    Metric {
        name: "rings_at_stop",
        about: "workpiece rings that reached the die or mandrel; motion only",
        count: true,
        value: |_, r| motion(r).map(|m| m.rings_at_stop as f64),
    },
    Metric {
        name: "final_strain_min",
        about: "smallest final hoop strain ln(r/r0) over the rings (dimensionless); motion only",
        count: false,
        value: |_, r| motion(r).map(|m| m.final_strain_range[0]),
    },
    Metric {
        name: "final_strain_max",
        about: "largest final hoop strain ln(r/r0) over the rings (dimensionless); motion only",
        count: false,
        value: |_, r| motion(r).map(|m| m.final_strain_range[1]),
    },
    Metric {
        name: "final_strain_magnitude",
        about: "largest |final hoop strain| over the rings (dimensionless; the final_strain \
                sizing target); motion only",
        count: false,
        value: |_, r| {
            motion(r).map(|m| m.final_strain_range[0].abs().max(m.final_strain_range[1].abs()))
        },
    },
    Metric {
        name: "max_plastic_strain",
        about:
            "largest equivalent plastic strain of any ring at the end (dimensionless); motion only",
        count: false,
        value: |_, r| motion(r).map(|m| m.max_plastic_strain),
    },
    Metric {
        name: "plastic_work_J",
        about: "plastic work done on the workpiece; motion only",
        count: false,
        value: |_, r| motion(r).map(|_| r.summary.energy.plastic),
    },
    Metric {
        name: "kinetic_energy_J",
        about: "kinetic energy of the workpiece at the end of the run; motion only",
        count: false,
        value: |_, r| motion(r).map(|_| r.summary.energy.kinetic),
    },
    Metric {
        name: "efficiency",
        about: "plastic work over the bank energy 0.5 C V0^2 (dimensionless); motion only",
        count: false,
        value: |_, r| motion(r).map(|m| m.efficiency),
    },
    Metric {
        name: "coil_inductance_H",
        about: "self-inductance of the coil alone",
        count: false,
        value: |_, r| finite(r.mesh.coil_inductance),
    },
    Metric {
        name: "filaments",
        about: "filaments of coil and workpiece",
        count: true,
        value: |_, r| Some((r.mesh.coil_filaments + r.mesh.workpiece_filaments) as f64),
    },
];

/// The metric of a column name.
pub fn metric(name: &str) -> Option<&'static Metric> {
    METRICS.iter().find(|m| m.name == name)
}

/// Every metric's value for one run, in column order.
pub fn values(case: &Case, result: &RunResult) -> Vec<Option<f64>> {
    METRICS.iter().map(|m| (m.value)(case, result)).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_are_unique_and_carry_units() {
        const UNITS: [&str; 14] = [
            "_A", "_s", "_Hz", "_A_per_s", "_C", "_A2s", "_percent", "_Pa", "_N", "_K", "_J", "_H",
            "_m", "_m_per_s",
        ];
        for (k, m) in METRICS.iter().enumerate() {
            assert!(METRICS[..k].iter().all(|o| o.name != m.name), "duplicate {}", m.name);
            let unitless = [
                "energy_relative_residual",
                "filaments",
                "rings_at_stop",
                "final_strain_min",
                "final_strain_max",
                "final_strain_magnitude",
                "max_plastic_strain",
                "efficiency",
            ];
            assert!(
                unitless.contains(&m.name) || UNITS.iter().any(|u| m.name.ends_with(u)),
                "{} has no unit suffix",
                m.name
            );
        }
        assert!(metric("peak_pressure_Pa").is_some());
        assert!(metric("peak_pressure").is_none());
    }
}
