//! Validated case types: SI units, defaults filled in, invariants checked.
//!
//! These are what the engine consumes. They are built only by `validate` from a parsed
//! `CaseFile`, so every value here has passed its range check. All lengths are in metres,
//! times in seconds, temperatures in kelvin.

/// A whole validated case: bank, coil, optional workpiece and the numerical settings.
#[derive(Debug, Clone, PartialEq)]
pub struct Case {
    /// One-line human description of the scenario (from the case file).
    pub description: String,
    /// Capacitor bank, feeder and optional crowbar.
    pub bank: Bank,
    /// The forming coil.
    pub coil: Coil,
    /// The workpiece tube (a short tube is a ring). `None`: the bank discharges into the coil alone.
    pub workpiece: Option<Tube>,
    /// How conductors are split into filament rings.
    pub discretization: Discretization,
    /// Transient solver settings.
    pub solver: SolverSettings,
    /// Initial temperature of every conductor, in kelvin. Default: 293.15 K.
    pub initial_temperature: f64,
    /// Limits to check a run against. Default: none (every limit `None`).
    pub ratings: Ratings,
    /// Whether and how the workpiece moves.
    pub motion: MotionSettings,
}

/// Ratings of switch, capacitors, coil and feeder; every limit is optional.
///
/// A run is checked against each limit that is given (see docs/study.md); `None` means the
/// quantity is not checked.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Ratings {
    /// The closing switch.
    pub switch: SwitchRatings,
    /// The capacitors of the bank.
    pub capacitors: CapacitorRatings,
    /// The forming coil.
    pub coil: CoilRatings,
    /// The feeder cable or bus.
    pub feeder: FeederRatings,
}

impl Ratings {
    /// True when no limit at all is given.
    pub fn is_empty(&self) -> bool {
        let s = &self.switch;
        let c = &self.capacitors;
        [
            s.peak_current,
            s.peak_di_dt,
            s.charge,
            s.action_integral,
            s.reverse_current_percent,
            c.voltage,
            c.voltage_reversal_percent,
            c.peak_current,
            self.coil.temperature_rise,
            self.coil.allowed_hoop_stress,
            self.feeder.peak_current,
            self.feeder.action_integral,
        ]
        .iter()
        .all(Option::is_none)
    }
}

/// Limits of the closing switch. Each must be > 0 when given.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct SwitchRatings {
    /// Largest allowed current, in amperes.
    pub peak_current: Option<f64>,
    /// Largest allowed rate of rise of current, in A/s.
    pub peak_di_dt: Option<f64>,
    /// Largest allowed charge per shot, ∫|i| dt over the run, in coulombs.
    pub charge: Option<f64>,
    /// Largest allowed action integral per shot, ∫i² dt over the run, in A² s.
    pub action_integral: Option<f64>,
    /// Largest allowed reverse current, in percent of the first current peak.
    pub reverse_current_percent: Option<f64>,
}

/// Limits of the bank's capacitors. Each limit must be > 0 when given.
#[derive(Debug, Clone, PartialEq)]
pub struct CapacitorRatings {
    /// Rated voltage, in volts (compared with the charging voltage).
    pub voltage: Option<f64>,
    /// Allowed voltage reversal, in percent of the charging voltage.
    pub voltage_reversal_percent: Option<f64>,
    /// Largest allowed current per capacitor unit, in amperes.
    pub peak_current: Option<f64>,
    /// Number of equal capacitor units in parallel that share the bank current. Must be >= 1.
    /// Default: 1 (the limit then applies to the whole bank current).
    pub units: usize,
}

impl Default for CapacitorRatings {
    fn default() -> Self {
        CapacitorRatings {
            voltage: None,
            voltage_reversal_percent: None,
            peak_current: None,
            units: crate::validate::defaults::CAPACITOR_UNITS,
        }
    }
}

/// Limits of the forming coil.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct CoilRatings {
    /// Allowed temperature rise of the hottest coil filament (adiabatic estimate), in kelvin.
    pub temperature_rise: Option<f64>,
    /// Allowed magnitude of the turn hoop stress, in pascals: `ratings.coil.allowed_hoop_stress`,
    /// or the coil material's yield strength over `safety_factor`. `None` when the case has no
    /// `ratings.coil` object.
    pub allowed_hoop_stress: Option<f64>,
    /// The safety factor the allowed hoop stress was derived with; `None` when it was given
    /// explicitly (or not checked). Default factor: 2.
    pub safety_factor: Option<f64>,
}

/// Limits of the feeder cable or bus. Each must be > 0 when given.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct FeederRatings {
    /// Largest allowed current, in amperes.
    pub peak_current: Option<f64>,
    /// Largest allowed action integral, ∫i² dt over the run, in A² s.
    pub action_integral: Option<f64>,
}

/// Capacitor bank with its switch, feeder and optional crowbar.
#[derive(Debug, Clone, PartialEq)]
pub struct Bank {
    /// Bank capacitance, in farads. Must be > 0.
    pub capacitance: f64,
    /// Charging voltage at switch closing, in volts. Must be > 0.
    pub voltage: f64,
    /// Internal inductance of bank and switch, in henries. Must be >= 0. Default: 0.
    pub inductance: f64,
    /// Internal resistance of bank and switch, in ohms. Must be >= 0. Default: 0.
    pub resistance: f64,
    /// Feeder (cable or bus) inductance, in henries. Must be >= 0. Default: 0.
    pub feeder_inductance: f64,
    /// Feeder (cable or bus) resistance, in ohms. Must be >= 0. Default: 0.
    pub feeder_resistance: f64,
    /// Optional crowbar across the capacitor, closing when its voltage first reaches zero.
    pub crowbar: Option<Crowbar>,
}

/// A crowbar switch across the capacitor terminals.
///
/// It closes when the capacitor voltage first falls to zero; from then on the capacitor is out of
/// the circuit (an ideal diode or switch keeps it from reversing) and the coil current decays
/// through the crowbar's own resistance and inductance.
#[derive(Debug, Clone, PartialEq)]
pub struct Crowbar {
    /// Crowbar path resistance, in ohms. Must be >= 0. Default: 0.
    pub resistance: f64,
    /// Crowbar path inductance, in henries. Must be >= 0. Default: 0.
    pub inductance: f64,
}

/// A solenoid coil of `turns` turns of rectangular conductor, coaxial with the z axis.
#[derive(Debug, Clone, PartialEq)]
pub struct Coil {
    /// Number of turns. Must be >= 1.
    pub turns: usize,
    /// Mean radius of the conductor section (centre of the rectangle), in metres. Must be > 0.
    pub mean_radius: f64,
    /// Radial thickness of the conductor, in metres. Must be > 0 and < 2 * mean_radius.
    pub radial_thickness: f64,
    /// Axial width of the conductor, in metres. Must be > 0.
    pub axial_width: f64,
    /// Axial distance between the centres of adjacent turns, in metres. Must be >= axial_width
    /// when turns > 1. For one turn it is unused and set equal to axial_width.
    pub pitch: f64,
    /// Axial position of the winding's centre, in metres. Default: 0.
    pub z_center: f64,
    /// Conductor material.
    pub material: Material,
    /// Optional fixed split of each turn's section into `radial` x `axial` filaments.
    pub split: Option<Split>,
}

/// A tube (or short ring) workpiece, coaxial with the z axis.
#[derive(Debug, Clone, PartialEq)]
pub struct Tube {
    /// Inner radius, in metres. Must be > 0.
    pub inner_radius: f64,
    /// Wall thickness, in metres. Must be > 0.
    pub wall: f64,
    /// Axial length, in metres. Must be > 0.
    pub length: f64,
    /// Axial position of the tube's centre, in metres. Default: 0.
    pub z_center: f64,
    /// Tube material.
    pub material: Material,
    /// Optional fixed split into `radial` layers x `axial` rings.
    pub split: Option<Split>,
}

/// A fixed split of a rectangular section into filaments.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Split {
    /// Number of filaments across the radial thickness. Must be >= 1.
    pub radial: usize,
    /// Number of filaments along the axial width or length. Must be >= 1.
    pub axial: usize,
}

/// Material properties of a conductor (non-magnetic, relative permeability 1).
#[derive(Debug, Clone, PartialEq)]
pub struct Material {
    /// Name as given in the case (built-in key or "custom").
    pub name: String,
    /// Electrical resistivity at `reference_temperature`, in ohm metres. Must be > 0.
    pub resistivity: f64,
    /// Linear temperature coefficient of resistivity, in 1/K. Must be >= 0.
    pub temperature_coefficient: f64,
    /// Temperature at which `resistivity` holds, in kelvin. Default: 293.15 K.
    pub reference_temperature: f64,
    /// Mass density, in kg/m^3. Must be > 0.
    pub density: f64,
    /// Specific heat capacity, in J/(kg K). Must be > 0.
    pub specific_heat: f64,
    /// Melting (solidus) temperature, in kelvin. Must be > reference_temperature.
    pub melting_point: f64,
    /// Young's modulus, in pascals. Must be > 0.
    pub youngs_modulus: f64,
    /// Initial yield strength, in pascals. Must be > 0.
    pub yield_strength: f64,
    /// Where the numbers come from (for reports).
    pub source: String,
}

/// How the engine splits conductors into filament rings.
#[derive(Debug, Clone, PartialEq)]
pub struct Discretization {
    /// Resolution mode.
    pub mode: Resolution,
    /// Largest number of filaments the engine accepts before refusing, to protect memory.
    /// Default: 4000 (the inductance matrix is then 128 MB).
    pub max_filaments: usize,
    /// Largest allowed cell aspect ratio (longer / shorter side) in automatic mode. Default: 1.5.
    pub max_aspect: f64,
}

/// Resolution mode of the automatic split.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Resolution {
    /// Near-square cells of `cell_over_skin_depth` x the skin depth at the estimated ringing
    /// frequency, per material. Default factor: 1.0 (0.5 is twice as fine).
    SkinDepth {
        /// Cell edge as a multiple of the skin depth. Must be > 0.
        cell_over_skin_depth: f64,
    },
    /// Quick preview: one filament per turn section, and the tube wall in about `tube_rings`
    /// near-square cells (one layer of that many rings for a long thin tube).
    Coarse {
        /// Number of workpiece cells, about. Default: 40.
        tube_rings: usize,
    },
}

/// Transient solver settings.
#[derive(Debug, Clone, PartialEq)]
pub struct SolverSettings {
    /// Relative tolerance of the adaptive stepper, if the case sets it. Range (0, 1e-2].
    /// Default ([`SolverSettings::tolerances`]): 1e-7 at fixed geometry, 1e-6 with motion.
    pub rel_tol: Option<f64>,
    /// Absolute tolerance on the scaled state (amps, volts, webers and the ring states are
    /// scaled to order one first), if the case sets it. Must be > 0. Default: 1e-9 at fixed
    /// geometry, 1e-6 with motion.
    pub abs_tol: Option<f64>,
    /// End time of the transient, in seconds. `None`: three periods of the estimated ringing.
    pub end_time: Option<f64>,
    /// Output sampling interval, in seconds. `None`: end time / 1000 (end time / 500 with motion).
    pub output_step: Option<f64>,
}

impl SolverSettings {
    /// The (relative, absolute) tolerances of a run at fixed geometry (`moving` false) or
    /// with the workpiece moving: the case's values, else the defaults of that kind of run
    /// (`validate::defaults`: 1e-7 and 1e-9 at fixed geometry, 1e-6 and 1e-6 with motion).
    pub fn tolerances(&self, moving: bool) -> (f64, f64) {
        self.tolerances_at(moving, false)
    }

    /// [`SolverSettings::tolerances`] for a run at the given resolution: with the workpiece
    /// moving in the coarse preview (`preview`) the defaults are 1e-5 and 1e-5, matched to the
    /// preview's much larger discretization error.
    pub fn tolerances_at(&self, moving: bool, preview: bool) -> (f64, f64) {
        use crate::validate::defaults as d;
        let (rel, abs) = match (moving, preview) {
            (false, _) => (d::REL_TOL, d::ABS_TOL),
            (true, false) => (d::MOTION_REL_TOL, d::MOTION_ABS_TOL),
            (true, true) => (d::PREVIEW_MOTION_REL_TOL, d::PREVIEW_MOTION_ABS_TOL),
        };
        (self.rel_tol.unwrap_or(rel), self.abs_tol.unwrap_or(abs))
    }
}

/// Motion of the workpiece.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct MotionSettings {
    /// Whether the workpiece moves. Default: true when the case has a workpiece.
    pub enabled: bool,
    /// Radius of a rigid die (at or beyond the tube's outer surface) or mandrel (at or within
    /// its inner surface), in metres. Default: none.
    pub stop_radius: Option<f64>,
    /// Flow stress law of the workpiece. Default: chosen from the material name.
    pub flow_stress: Option<FlowStress>,
}

/// A flow stress law given in the case file.
#[derive(Debug, Clone, PartialEq)]
pub enum FlowStress {
    /// A published Johnson–Cook parameter set by name.
    JohnsonCookSet(String),
    /// Johnson–Cook with explicit parameters.
    JohnsonCook {
        /// A, in Pa.
        a: f64,
        /// B, in Pa.
        b: f64,
        /// n (0, 1].
        n: f64,
        /// C (>= 0).
        c: f64,
        /// m (> 0).
        m: f64,
        /// Melting temperature, in K.
        melting_point: f64,
        /// Reference strain rate, in 1/s. Default: 1.
        reference_rate: f64,
    },
    /// Power law k (ε0 + ε)ⁿ.
    PowerLaw {
        /// k, in Pa.
        k: f64,
        /// n (0, 1].
        n: f64,
        /// ε0 (> 0). Default: 0.002.
        prestrain: f64,
    },
    /// Constant flow stress, in Pa.
    Constant {
        /// Flow stress, in Pa.
        stress: f64,
    },
}
