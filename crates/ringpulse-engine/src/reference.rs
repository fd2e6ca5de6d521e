//! Reference problems with known answers, shared by the tests and the benchmarks.
//!
//! The series RLC discharge is the textbook underdamped solution (any circuits text; for
//! pulsed power, H. Knoepfel, "Pulsed High Magnetic Fields", 1970). The case builders make
//! small, fully specified cases in code so that tests do not depend on files.

use ringpulse_case::{
    Bank, Case, Coil, Discretization, Material, MotionSettings, Ratings, Resolution,
    SolverSettings, Split, Tube,
};

/// An underdamped series RLC discharge: C charged to V0, switch closed at t = 0.
#[derive(Debug, Clone, Copy)]
pub struct SeriesRlc {
    /// Capacitance, in farads.
    pub c: f64,
    /// Initial voltage, in volts.
    pub v0: f64,
    /// Total loop inductance, in henries.
    pub l: f64,
    /// Total loop resistance, in ohms.
    pub r: f64,
}

impl SeriesRlc {
    /// Damping rate α = R / (2L), in 1/s.
    pub fn alpha(&self) -> f64 {
        self.r / (2.0 * self.l)
    }

    /// Damped angular frequency ω = √(1/(LC) − α²), in rad/s.
    pub fn omega(&self) -> f64 {
        (1.0 / (self.l * self.c) - self.alpha().powi(2)).sqrt()
    }

    /// Current i(t) = V0/(ωL) e^{−αt} sin ωt, in amperes.
    pub fn current(&self, t: f64) -> f64 {
        self.v0 / (self.omega() * self.l) * (-self.alpha() * t).exp() * (self.omega() * t).sin()
    }

    /// Capacitor voltage v(t) = V0 e^{−αt} (cos ωt + (α/ω) sin ωt), in volts.
    pub fn voltage(&self, t: f64) -> f64 {
        let (a, w) = (self.alpha(), self.omega());
        self.v0 * (-a * t).exp() * ((w * t).cos() + a / w * (w * t).sin())
    }

    /// Time of the current peak, atan(ω/α)/ω, in seconds.
    pub fn peak_time(&self) -> f64 {
        (self.omega() / self.alpha()).atan() / self.omega()
    }

    /// First current zero π/ω, in seconds.
    pub fn first_zero(&self) -> f64 {
        std::f64::consts::PI / self.omega()
    }

    /// Voltage reversal ratio e^{−πα/ω} (fraction of V0).
    pub fn reversal(&self) -> f64 {
        (-std::f64::consts::PI * self.alpha() / self.omega()).exp()
    }

    /// Initial rate of rise V0 / L, in A/s.
    pub fn initial_di_dt(&self) -> f64 {
        self.v0 / self.l
    }

    /// ∫₀^∞ i² dt = C V0² / (2R), in A² s.
    pub fn action_total(&self) -> f64 {
        self.c * self.v0 * self.v0 / (2.0 * self.r)
    }
}

/// A built-in material by name; panics are avoided by falling back to a copper-like default
/// only in this test-support module when the name is unknown.
pub fn material(name: &str) -> Material {
    ringpulse_case::materials::builtin(name).unwrap_or_else(|| Material {
        name: "test copper".into(),
        resistivity: 1.72e-8,
        temperature_coefficient: 0.0039,
        reference_temperature: 293.15,
        density: 8940.0,
        specific_heat: 385.0,
        melting_point: 1356.0,
        youngs_modulus: 115e9,
        yield_strength: 69e6,
        source: "test support".into(),
    })
}

/// A case with a coil and optional tube, default numerics and the given bank.
#[allow(clippy::too_many_arguments)]
pub fn simple_case(
    capacitance: f64,
    voltage: f64,
    external_inductance: f64,
    external_resistance: f64,
    coil: Coil,
    workpiece: Option<Tube>,
) -> Case {
    Case {
        description: "reference problem".into(),
        bank: Bank {
            capacitance,
            voltage,
            inductance: external_inductance,
            resistance: external_resistance,
            feeder_inductance: 0.0,
            feeder_resistance: 0.0,
            crowbar: None,
        },
        coil,
        workpiece,
        discretization: Discretization {
            mode: Resolution::SkinDepth { cell_over_skin_depth: 1.0 },
            max_filaments: 4000,
            max_aspect: 1.5,
        },
        solver: SolverSettings { rel_tol: None, abs_tol: None, end_time: None, output_step: None },
        initial_temperature: 293.15,
        ratings: Ratings::default(),
        motion: MotionSettings::default(),
    }
}

/// A coil of `turns` turns with a fixed split.
pub fn coil(
    turns: usize,
    mean_radius: f64,
    radial: f64,
    axial: f64,
    pitch: f64,
    split: Option<Split>,
) -> Coil {
    Coil {
        turns,
        mean_radius,
        radial_thickness: radial,
        axial_width: axial,
        pitch,
        z_center: 0.0,
        material: material("copper"),
        split,
    }
}

/// A tube of the given material name.
pub fn tube(
    inner_radius: f64,
    wall: f64,
    length: f64,
    material_name: &str,
    split: Option<Split>,
) -> Tube {
    Tube { inner_radius, wall, length, z_center: 0.0, material: material(material_name), split }
}

/// The series RLC reference circuit of the tests and benchmarks: one turn of one filament and
/// no workpiece, 100 µF at 10 kV with 0.8 µH and 8 mΩ outside the coil, tight tolerances
/// (rel 1e-10, abs 1e-12). L and R of the circuit are these plus the ring's own.
pub fn series_rlc_case() -> Case {
    let mut case = simple_case(
        100e-6,
        10e3,
        0.8e-6,
        8e-3,
        coil(1, 0.03, 4e-3, 4e-3, 4e-3, Some(Split { radial: 1, axial: 1 })),
        None,
    );
    case.solver.rel_tol = Some(1e-10);
    case.solver.abs_tol = Some(1e-12);
    case
}

/// The expansion demo's geometry built in code, in the coarse preview: a 6-turn internal coil
/// (22 mm mean radius, 3 mm x 4 mm conductor at 5.5 mm pitch) and an aluminium 6061-T6 tube
/// (25 mm inner radius, 1.5 mm wall, 60 mm long), 200 µF at 5 kV, 100 nH and 5 mΩ outside,
/// 40 tube rings, motion on without a die.
pub fn coarse_expansion_case() -> Case {
    let mut case = simple_case(
        200e-6,
        5e3,
        100e-9,
        5e-3,
        coil(6, 22e-3, 3e-3, 4e-3, 5.5e-3, None),
        Some(tube(25e-3, 1.5e-3, 60e-3, "aluminium_6061_t6", None)),
    );
    case.discretization.mode = Resolution::Coarse { tube_rings: 40 };
    case
}
