//! The ringpulse engine: from a validated case to currents, pressures and an energy account.
//!
//! Data flow: [`mesh`] splits coil turns and workpiece wall into filament rings;
//! [`network`] assembles their inductance matrix, force factors and the loop formulation of
//! bank, turns in series and shorted workpiece rings; [`transient`] integrates flux linkages
//! and the capacitor voltage; [`mod@run`] ties it together, samples the result on a uniform grid
//! and computes the summary ([`results`]). Everything runs in memory: this crate writes no
//! files and prints nothing.

pub mod coupling;
pub mod dense;
pub mod flow;
pub mod mesh;
pub mod motion;
pub mod motion_run;
pub mod network;
pub mod reference;
pub mod results;
pub mod run;
pub mod transient;

pub use motion_run::{
    flow_law_for, flow_law_of_case, motion_options, run_motion, run_motion_with_progress,
    MotionOptions,
};
pub use results::*;
pub use run::{
    estimate_frequency, prepare, run, run_fixed, run_prepared, run_prepared_as_case,
    run_with_probes, run_with_progress, FrequencyEstimate, Prepared,
};

/// Errors of the engine. Each names what the engineer can change.
#[derive(Debug, thiserror::Error, Clone, PartialEq)]
pub enum EngineError {
    /// The discretization would need more filaments than allowed.
    #[error(
        "refused: the discretization needs {count} filaments, more than the limit of {limit} \
         (discretization.max_filaments); use a coarser split or raise discretization.cell_over_skin_depth"
    )]
    TooManyFilaments {
        /// Filaments the split would need.
        count: usize,
        /// The limit in force.
        limit: usize,
    },
    /// The split makes the network so stiff that the explicit stepper would crawl.
    #[error(
        "refused: the split gives eddy modes that decay at {rate:.3e} 1/s, so the stepper would \
         need about {steps:.0} steps for the {end_time:.3e} s of the run (limit {limit:.0}); \
         offending split: {split}; use near-square cells (aspect ratio <= 1.5) or a coarser split"
    )]
    TooStiff {
        /// Fastest decay rate of the network, in 1/s.
        rate: f64,
        /// Steps the stability limit of the stepper would need.
        steps: f64,
        /// End time of the run, in seconds.
        end_time: f64,
        /// The refusal limit on the step count.
        limit: f64,
        /// The conductor splits of the mesh.
        split: String,
    },
    /// The inductance matrix is not positive definite.
    #[error(
        "the inductance matrix is not positive definite (checked by its Cholesky factorisation); \
         offending conductor split: {conductor}; use near-square cells"
    )]
    IndefiniteInductance {
        /// Which conductor split is at fault.
        conductor: String,
    },
    /// The stepper failed.
    #[error("transient solver failed: {message}")]
    Solver {
        /// What the stepper reported, with the simulation time.
        message: String,
    },
    /// The case describes something the engine cannot simulate.
    #[error("{field}: {message}")]
    Unsupported {
        /// Case-file path of the field.
        field: String,
        /// What is wrong.
        message: String,
    },
}
