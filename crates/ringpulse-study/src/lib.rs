//! Studies on top of the engine: ratings checks, parameter sweeps, sharding and sizing.
//!
//! [`ratings`] compares one run with the limits of a case's `ratings` section. [`metrics`]
//! names the scalar results a sweep reports and a sizing can aim at. [`spec`] parses
//! `--vary PATH=VALUES` specifications, [`variants`] turns them into a full factorial or a
//! Latin-hypercube list of variants and applies each to the case JSON, [`sweep`] runs the
//! variants in parallel (results in variant order, independent of thread count) and slices
//! them into shards, and [`size`] finds the smallest charging voltage or capacitance that meets
//! a target. Everything runs in memory: this crate writes no files and prints nothing.
//! docs/study.md describes the behaviour for users.

pub mod metrics;
pub mod ratings;
pub mod size;
pub mod spec;
pub mod sweep;
pub mod variants;

pub use ratings::{evaluate, Check, RatingsReport};
pub use spec::{parse_vary, Values, VarySpec};
pub use sweep::{run_variants, shard_of, BaseCase, Row, RowData, SweepOptions};
pub use variants::{generate, Design, Variant};

/// Errors of a study: bad specifications, a base case that does not validate, a failed run.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum StudyError {
    /// A command-line specification (`--vary`, `--target`, `--range`, ...) is malformed.
    #[error("{option} {text}: {message}")]
    Spec {
        /// The option, such as `--vary`.
        option: String,
        /// The text given to it.
        text: String,
        /// What is wrong and what was expected.
        message: String,
    },
    /// The base case does not validate (shown as the case error itself, once).
    #[error(transparent)]
    Case(#[from] ringpulse_case::CaseError),
    /// The engine failed on a run that the study needs (sizing cannot skip a point).
    #[error("the run with {what} failed: {message}")]
    Run {
        /// Which run, such as `bank.voltage = 6000 V`.
        what: String,
        /// The engine's or validation's message.
        message: String,
        /// True when the engine refused the case (a problem of the input, such as too many
        /// filaments), false when the stepper failed.
        refused: bool,
    },
}

/// Shorthand for a [`StudyError::Spec`].
pub(crate) fn spec_error(option: &str, text: &str, message: impl Into<String>) -> StudyError {
    StudyError::Spec { option: option.to_string(), text: text.to_string(), message: message.into() }
}
