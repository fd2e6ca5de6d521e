//! Shared helpers for the integration tests: reading the reference CSV tables of
//! `tests/reference/` (written by `tests/reference/gen_filament_tables.py`) and comparing
//! numbers with tolerances that say what is compared and where.

// Each test binary uses a different subset of these helpers; a helper that fails panics,
// which is how a test reports a broken reference file.
#![allow(dead_code, clippy::panic)]

use std::fmt::Display;

/// A reference table: column names and rows of numbers.
pub struct Table {
    pub columns: Vec<String>,
    pub rows: Vec<Vec<f64>>,
}

impl Table {
    /// Index of the named column; panics (test code) if the table lacks it.
    pub fn col(&self, name: &str) -> usize {
        self.columns
            .iter()
            .position(|c| c == name)
            .unwrap_or_else(|| panic!("column {name} missing from {:?}", self.columns))
    }
}

/// Reads `tests/reference/<name>` from the repository root.
/// Lines starting with '#' are provenance comments; the first other line is the header.
pub fn read_table(name: &str) -> Table {
    let path = format!("{}/../../tests/reference/{name}", env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("reading {path}: {e}"));
    let mut lines = text.lines().filter(|l| !l.starts_with('#') && !l.trim().is_empty());
    let header = lines.next().unwrap_or_else(|| panic!("{path} is empty"));
    let columns: Vec<String> = header.split(',').map(|s| s.trim().to_string()).collect();
    let rows: Vec<Vec<f64>> = lines
        .map(|l| {
            l.split(',')
                .map(|s| s.trim().parse::<f64>().unwrap_or_else(|e| panic!("{path}: {s:?}: {e}")))
                .collect::<Vec<f64>>()
        })
        .inspect(|r| assert_eq!(r.len(), columns.len(), "{path}: ragged row {r:?}"))
        .collect();
    assert!(!rows.is_empty(), "{path} has no data rows");
    Table { columns, rows }
}

/// Relative difference |got − want| / |want|.
pub fn rel_err(got: f64, want: f64) -> f64 {
    ((got - want) / want).abs()
}

/// Asserts |got − want| ≤ rel·|want| + abs, naming the quantity and the place.
pub fn assert_close(got: f64, want: f64, rel: f64, abs: f64, what: impl Display) {
    let err = (got - want).abs();
    assert!(
        err <= rel * want.abs() + abs,
        "{what}: got {got:e}, want {want:e} (error {err:e}, allowed {rel:e} relative + {abs:e} absolute)"
    );
}
