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
    /// Relative tolerance of the adaptive stepper. Default: 1e-7. Range (0, 1e-2].
    pub rel_tol: f64,
    /// Absolute tolerance on the scaled state (amps, volts and webers are scaled to order one
    /// first). Default: 1e-9. Must be > 0.
    pub abs_tol: f64,
    /// End time of the transient, in seconds. `None`: three periods of the estimated ringing.
    pub end_time: Option<f64>,
    /// Output sampling interval, in seconds. `None`: end time / 2000.
    pub output_step: Option<f64>,
}
