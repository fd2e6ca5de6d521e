//! Case files for ringpulse: the JSON schema, unit parsing, built-in materials and validation.
//!
//! A case file is read in two steps. [`file`](mod@file) holds `CaseFile` types that mirror
//! the JSON as written, with quantities kept raw; [`validate`](mod@validate) checks everything
//! at once, fills in the defaults and produces the [`Case`] types of [`model`], all in SI
//! units. [`units`] parses quantities such as `"200 uF"`, [`materials`] holds the built-in
//! material table, [`fields`] the numeric fields by path (for sweeps) and [`example`] a complete
//! example case. The format is documented in docs/case-format.md.

pub mod model;
pub use model::*;
pub mod example;
pub mod fields;
pub mod file;
pub mod materials;
pub mod units;
pub mod validate;
pub use validate::{load_case, validate, CaseError, Problem};
