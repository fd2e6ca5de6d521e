//! What a run returns: uniform-grid traces, per-ring traces, the summary and solver statistics.
//!
//! Everything is SI. The summary derives `Serialize` with unit-suffixed keys so that the output
//! crate can write it as JSON without renaming; the traces are plain vectors that the output
//! crate turns into CSV and plots.

use serde::Serialize;

/// The complete result of one transient run.
#[derive(Debug, Clone)]
pub struct RunResult {
    /// Traces on the uniform output grid.
    pub traces: Traces,
    /// Per workpiece ring traces (empty when the case has no workpiece).
    pub rings: RingTraces,
    /// Scalar results.
    pub summary: Summary,
    /// Solver statistics.
    pub stats: SolverStats,
    /// The discretization that was used.
    pub mesh: MeshInfo,
    /// Warnings for the engineer (plain sentences, no trailing period).
    pub warnings: Vec<String>,
    /// Magnetic field at requested points (empty unless asked for), on the uniform time grid.
    pub probes: Vec<ProbeTrace>,
}

/// The magnetic field of all filament currents at one point, over time.
#[derive(Debug, Clone, Default)]
pub struct ProbeTrace {
    /// Radius of the point, in metres (0 is on the axis).
    pub r: f64,
    /// Axial position of the point, in metres.
    pub z: f64,
    /// Radial flux density at each output time, in tesla.
    pub b_r: Vec<f64>,
    /// Axial flux density at each output time, in tesla.
    pub b_z: Vec<f64>,
}

/// Whole-circuit traces sampled on a uniform time grid.
#[derive(Debug, Clone, Default)]
pub struct Traces {
    /// Sample times, in seconds, starting at 0.
    pub time: Vec<f64>,
    /// Coil (bank) current, in amperes; positive in the direction the discharge starts.
    pub coil_current: Vec<f64>,
    /// Capacitor voltage, in volts.
    pub capacitor_voltage: Vec<f64>,
    /// Net azimuthal current in the workpiece (sum over its filaments), in amperes.
    pub workpiece_current: Vec<f64>,
    /// Net radial force on the workpiece, in newtons; positive outward.
    pub radial_force: Vec<f64>,
    /// Net axial force on the workpiece, in newtons; positive towards +z.
    pub axial_force: Vec<f64>,
    /// Largest magnetic pressure over the workpiece rings at that instant, in pascals
    /// (positive: pushing the wall away from the coil).
    pub peak_pressure: Vec<f64>,
}

/// Per-ring traces of the workpiece, sampled every `stride`-th output time.
#[derive(Debug, Clone, Default)]
pub struct RingTraces {
    /// Mean radius of each axial ring of the workpiece, in metres.
    pub radius: Vec<f64>,
    /// Axial centre of each ring, in metres.
    pub z: Vec<f64>,
    /// Axial length of each ring, in metres.
    pub length: Vec<f64>,
    /// Cross-section area of each ring (all its radial layers), in square metres.
    pub area: Vec<f64>,
    /// Sample times of the rows below, in seconds.
    pub time: Vec<f64>,
    /// Net current of each ring (all radial layers), in amperes: `current[sample][ring]`.
    pub current: Vec<Vec<f64>>,
    /// Magnetic pressure on each ring, in pascals: net radial force over the wall surface that
    /// faces the coil, positive pushing the wall away from the coil: `pressure[sample][ring]`.
    pub pressure: Vec<Vec<f64>>,
    /// Net axial force on each ring, in newtons, positive towards +z: `axial_force[sample][ring]`.
    pub axial_force: Vec<Vec<f64>>,
    /// Mean radius of each ring at each sample, in metres (motion runs; empty otherwise).
    pub radius_history: Vec<Vec<f64>>,
    /// Radial velocity of each ring, in m/s (motion runs).
    pub velocity: Vec<Vec<f64>>,
    /// Hoop strain ln(r/r0) of each ring (motion runs).
    pub strain: Vec<Vec<f64>>,
    /// Mean temperature of each ring, in kelvin (motion runs).
    pub temperature: Vec<Vec<f64>>,
    /// Axial position of each ring's centre including the rigid shift, in metres (motion runs).
    pub z_history: Vec<Vec<f64>>,
}

/// Scalar results of a run. JSON keys carry their unit.
#[derive(Debug, Clone, Serialize, Default)]
pub struct Summary {
    /// Largest absolute coil current, in amperes.
    #[serde(rename = "peak_coil_current_A")]
    pub peak_coil_current: f64,
    /// Time of the largest absolute coil current, in seconds.
    #[serde(rename = "time_of_peak_current_s")]
    pub time_of_peak_current: f64,
    /// First zero crossing of the coil current after its first peak, in seconds.
    #[serde(rename = "first_current_zero_s")]
    pub first_current_zero: Option<f64>,
    /// Ringing frequency from the first two current zeros (or 1 / (2 x first zero)), in hertz.
    #[serde(rename = "ringing_frequency_Hz")]
    pub ringing_frequency: Option<f64>,
    /// Ringing frequency estimated before the run (used for the skin-depth split), in hertz.
    #[serde(rename = "estimated_frequency_Hz")]
    pub estimated_frequency: f64,
    /// Largest absolute rate of rise of the coil current, in amperes per second.
    #[serde(rename = "peak_di_dt_A_per_s")]
    pub peak_di_dt: f64,
    /// Charge transferred through the switch, integral of |i| dt, in coulombs.
    #[serde(rename = "charge_C")]
    pub charge: f64,
    /// Action integral of the coil current, integral of i^2 dt, in A^2 s.
    #[serde(rename = "action_integral_A2s")]
    pub action_integral: f64,
    /// Largest negative capacitor voltage as a percentage of the charging voltage.
    #[serde(rename = "voltage_reversal_percent")]
    pub voltage_reversal_percent: f64,
    /// Time the crowbar closed, in seconds, if the case has one and it closed.
    #[serde(rename = "crowbar_time_s")]
    pub crowbar_time: Option<f64>,
    /// Largest absolute net workpiece current, in amperes.
    #[serde(rename = "peak_workpiece_current_A")]
    pub peak_workpiece_current: f64,
    /// Largest magnetic pressure on any workpiece ring, with where and when.
    pub peak_pressure: Option<PeakPressure>,
    /// Largest absolute net radial force on the workpiece, in newtons.
    #[serde(rename = "peak_radial_force_N")]
    pub peak_radial_force: f64,
    /// Largest absolute net axial force on the workpiece, in newtons.
    #[serde(rename = "peak_axial_force_N")]
    pub peak_axial_force: f64,
    /// Largest hoop stress in a coil turn from its own magnetic force (thin-ring estimate
    /// F_r / (2π A)), in pascals; signed: positive tension (bursting), negative compression.
    #[serde(rename = "peak_coil_hoop_stress_Pa")]
    pub peak_coil_hoop_stress: f64,
    /// Largest net radial magnetic force per area of a turn's face towards the workpiece, in
    /// pascals.
    #[serde(rename = "peak_coil_pressure_Pa")]
    pub peak_coil_pressure: f64,
    /// Highest coil filament temperature at the end, adiabatic estimate, in kelvin.
    #[serde(rename = "peak_coil_temperature_K")]
    pub peak_coil_temperature: f64,
    /// Highest workpiece filament temperature at the end, adiabatic estimate, in kelvin.
    #[serde(rename = "peak_workpiece_temperature_K")]
    pub peak_workpiece_temperature: Option<f64>,
    /// Energy account at the end of the run.
    pub energy: EnergyAccount,
    /// Results of the workpiece motion (`None` when motion is off).
    pub motion: Option<MotionSummary>,
    /// End time of the transient, in seconds.
    #[serde(rename = "end_time_s")]
    pub end_time: f64,
}

/// Where and when the magnetic pressure peaked.
#[derive(Debug, Clone, Serialize, Default)]
pub struct PeakPressure {
    /// Peak pressure, in pascals.
    #[serde(rename = "value_Pa")]
    pub value: f64,
    /// Index of the workpiece ring (0 at the lowest z).
    pub ring: usize,
    /// Axial position of that ring's centre, in metres.
    #[serde(rename = "z_m")]
    pub z: f64,
    /// Time of the peak, in seconds.
    #[serde(rename = "time_s")]
    pub time: f64,
}

/// Where the bank's initial energy went, in joules.
///
/// `initial = bank_and_feeder + coil + workpiece + crowbar + magnetic + capacitor + residual`.
#[derive(Debug, Clone, Serialize, Default)]
pub struct EnergyAccount {
    /// 0.5 C V0^2, in joules.
    #[serde(rename = "initial_J")]
    pub initial: f64,
    /// Dissipated in the bank, switch and feeder resistance, in joules.
    #[serde(rename = "bank_and_feeder_J")]
    pub bank_and_feeder: f64,
    /// Dissipated in the coil conductor, in joules.
    #[serde(rename = "coil_J")]
    pub coil: f64,
    /// Dissipated in the workpiece, in joules.
    #[serde(rename = "workpiece_J")]
    pub workpiece: f64,
    /// Dissipated in the crowbar path, in joules.
    #[serde(rename = "crowbar_J")]
    pub crowbar: f64,
    /// Kinetic energy of the workpiece at the end, in joules.
    #[serde(rename = "kinetic_J")]
    pub kinetic: f64,
    /// Elastic energy stored in the workpiece at the end, in joules.
    #[serde(rename = "elastic_J")]
    pub elastic: f64,
    /// Plastic work done on the workpiece, in joules.
    #[serde(rename = "plastic_work_J")]
    pub plastic: f64,
    /// Kinetic energy absorbed by the die or mandrel at impacts, in joules.
    #[serde(rename = "die_impact_J")]
    pub impact: f64,
    /// Still stored in the magnetic field at the end, in joules.
    #[serde(rename = "magnetic_J")]
    pub magnetic: f64,
    /// Still stored in the capacitor at the end, in joules.
    #[serde(rename = "capacitor_J")]
    pub capacitor: f64,
    /// initial minus all of the above, as a fraction of initial.
    pub relative_residual: f64,
}

/// What the workpiece did (motion runs).
#[derive(Debug, Clone, Serialize, Default)]
pub struct MotionSummary {
    /// Largest radial displacement of any ring (signed: positive outward), in metres.
    #[serde(rename = "max_displacement_m")]
    pub max_displacement: f64,
    /// Axial ring centre where the largest displacement occurred, in metres.
    #[serde(rename = "max_displacement_z_m")]
    pub max_displacement_z: f64,
    /// Largest radial speed of any ring, in m/s (signed: positive outward).
    #[serde(rename = "max_velocity_m_per_s")]
    pub max_velocity: f64,
    /// Rigid axial displacement of the workpiece at the end, in metres.
    #[serde(rename = "axial_displacement_m")]
    pub axial_displacement: f64,
    /// Rigid axial velocity of the workpiece at the end, in m/s.
    #[serde(rename = "axial_velocity_m_per_s")]
    pub axial_velocity: f64,
    /// Time of the first impact on the die or mandrel, in seconds.
    #[serde(rename = "first_impact_time_s")]
    pub first_impact_time: Option<f64>,
    /// Largest impact speed on the die or mandrel, in m/s.
    #[serde(rename = "max_impact_velocity_m_per_s")]
    pub max_impact_velocity: Option<f64>,
    /// Rings that reached the die or mandrel.
    pub rings_at_stop: usize,
    /// Impacts: (ring, time in s, speed in m/s).
    pub impacts: Vec<(usize, f64, f64)>,
    /// Smallest and largest final hoop strain ln(r/r0) over the rings.
    pub final_strain_range: [f64; 2],
    /// Largest equivalent plastic strain of any ring at the end.
    pub max_plastic_strain: f64,
    /// Largest hoop strain rate of any ring, in 1/s.
    #[serde(rename = "max_strain_rate_per_s")]
    pub max_strain_rate: f64,
    /// Plastic work over the bank energy 0.5 C V0^2.
    pub efficiency: f64,
    /// Largest workpiece speed at the end of the run, in m/s (non-zero: still moving).
    #[serde(rename = "final_max_speed_m_per_s")]
    pub final_max_speed: f64,
    /// Why the run stopped early, if it did (e.g. the workpiece reached the coil).
    pub stopped: Option<String>,
    /// Initial wall of the workpiece, in metres.
    #[serde(rename = "initial_wall_m")]
    pub initial_wall: f64,
    /// Radius of the die or mandrel, in metres, if there is one.
    #[serde(rename = "stop_radius_m")]
    pub stop_radius: Option<f64>,
}

/// Statistics of the adaptive stepper, summed over all segments (a crowbar splits the run).
#[derive(Debug, Clone, Serialize, Default)]
pub struct SolverStats {
    /// Accepted steps.
    pub steps: u64,
    /// Rejected steps.
    pub rejected_steps: u64,
    /// Right-hand-side evaluations.
    pub rhs_evaluations: u64,
    /// Smallest accepted step, in seconds.
    #[serde(rename = "min_dt_s")]
    pub min_dt: f64,
    /// Largest accepted step, in seconds.
    #[serde(rename = "max_dt_s")]
    pub max_dt: f64,
    /// Number of integration segments (1, or 2 after a crowbar event; with motion one more
    /// after every event: yield, unload, impact).
    pub segments: u32,
    /// Wall time of matrix assembly and factorisation, in seconds.
    #[serde(rename = "assembly_time_s")]
    pub assembly_time: f64,
    /// Wall time of the time stepping and sampling, in seconds.
    #[serde(rename = "stepping_time_s")]
    pub stepping_time: f64,
    /// Relative tolerance the stepper ran with (the case's, or the default of the run's kind:
    /// fixed geometry, motion, or motion in the coarse preview).
    pub rel_tol: f64,
    /// Absolute tolerance on the scaled state the stepper ran with.
    pub abs_tol: f64,
}

impl SolverStats {
    /// The statistics of a run made of segments, each given as its (accepted, rejected,
    /// evaluations) counts and its (smallest, largest) accepted step in seconds; with the
    /// assembly and stepping wall times in seconds and the (relative, absolute) tolerances.
    pub fn from_segments(
        segments: impl IntoIterator<Item = ((u64, u64, u64), (f64, f64))>,
        assembly_time: f64,
        stepping_time: f64,
        (rel_tol, abs_tol): (f64, f64),
    ) -> SolverStats {
        let mut stats = SolverStats {
            min_dt: f64::INFINITY,
            assembly_time,
            stepping_time,
            rel_tol,
            abs_tol,
            ..SolverStats::default()
        };
        for (counts, dt_range) in segments {
            stats.steps += counts.0;
            stats.rejected_steps += counts.1;
            stats.rhs_evaluations += counts.2;
            stats.min_dt = stats.min_dt.min(dt_range.0);
            stats.max_dt = stats.max_dt.max(dt_range.1);
            stats.segments += 1;
        }
        if !stats.min_dt.is_finite() {
            stats.min_dt = 0.0;
        }
        stats
    }
}

/// How the conductors were split.
#[derive(Debug, Clone, Serialize, Default)]
pub struct MeshInfo {
    /// Filaments in the coil (all turns).
    pub coil_filaments: usize,
    /// Filaments per coil turn, radial x axial.
    pub coil_split: [usize; 2],
    /// Filaments in the workpiece.
    pub workpiece_filaments: usize,
    /// Workpiece split, radial layers x axial rings.
    pub workpiece_split: [usize; 2],
    /// Skin depth in the coil conductor at the estimated frequency, in metres.
    #[serde(rename = "coil_skin_depth_m")]
    pub coil_skin_depth: f64,
    /// Skin depth in the workpiece at the estimated frequency, in metres.
    #[serde(rename = "workpiece_skin_depth_m")]
    pub workpiece_skin_depth: Option<f64>,
    /// Unknowns of the network (loop currents).
    pub loops: usize,
    /// Self-inductance of the coil alone (filaments in series/parallel, no workpiece), in henries.
    #[serde(rename = "coil_inductance_H")]
    pub coil_inductance: f64,
}
