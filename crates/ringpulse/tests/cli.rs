//! Tests of the real `ringpulse` binary, each in a fresh temporary directory.
//!
//! Golden files: `tests/golden/err/<name>/case.json` holds an invalid case and `stderr.txt` the
//! exact message, `exit_code` the expected exit code; `UPDATE_GOLDEN=1 cargo test` rewrites the
//! expected files from today's output (review the diff like code). Every bad input must leave
//! no output directory and no temporary directory behind.

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)]

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use serde_json::Value;

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_ringpulse"))
}

fn repo() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../..")
}

fn run_in(dir: &Path, args: &[&str]) -> Output {
    bin().current_dir(dir).args(args).output().unwrap()
}

fn leftovers(dir: &Path) -> Vec<String> {
    std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n != "case.json")
        .collect()
}

#[test]
fn golden_bad_inputs() {
    let root = repo().join("tests/golden/err");
    let mut dirs: Vec<PathBuf> = std::fs::read_dir(&root)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.is_dir())
        .collect();
    dirs.sort();
    assert!(dirs.len() >= 8, "golden error cases missing in {}", root.display());
    let update = std::env::var_os("UPDATE_GOLDEN").is_some();
    for dir in dirs {
        let tmp = tempfile::tempdir().unwrap();
        std::fs::copy(dir.join("case.json"), tmp.path().join("case.json")).unwrap();
        let out = run_in(tmp.path(), &["run", "case.json", "--out", "out", "--quiet"]);
        let stderr = String::from_utf8_lossy(&out.stderr).into_owned();
        let code = out.status.code().unwrap_or(-1);
        if update {
            std::fs::write(dir.join("stderr.txt"), &stderr).unwrap();
            std::fs::write(dir.join("exit_code"), format!("{code}\n")).unwrap();
            continue;
        }
        let name = dir.file_name().unwrap().to_string_lossy().into_owned();
        let expected = std::fs::read_to_string(dir.join("stderr.txt")).unwrap();
        let expected_code: i32 =
            std::fs::read_to_string(dir.join("exit_code")).unwrap().trim().parse().unwrap();
        assert_eq!(stderr, expected, "{name}: stderr");
        assert_eq!(code, expected_code, "{name}: exit code");
        assert_ne!(code, 0, "{name}: must fail");
        assert!(leftovers(tmp.path()).is_empty(), "{name}: left {:?}", leftovers(tmp.path()));
        // One line per problem, each naming a field path (or the document).
        for line in stderr.lines().skip(1) {
            assert!(
                line.starts_with("  ") && line.contains(": "),
                "{name}: line without a field: {line}"
            );
        }
        if !stderr.starts_with("error: invalid case") {
            assert!(stderr.lines().count() == 1, "{name}: one clear error line, got {stderr}");
        }
    }
}

#[test]
fn run_writes_results_and_summary_parses() {
    let tmp = tempfile::tempdir().unwrap();
    let case = repo().join("cases/tube_expansion_6turn.json");
    let out = run_in(tmp.path(), &["run", case.to_str().unwrap(), "--out", "res", "--coarse"]);
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(stdout.contains("peak coil current") && stdout.contains("CAUTION"), "{stdout}");
    // The preview says it is no basis for a ratings decision, in the report and in summary.json.
    let warning = "--coarse: a coarse preview is not valid for a ratings decision";
    assert!(stdout.contains(warning), "{stdout}");
    let res = tmp.path().join("res");
    let summary: Value =
        serde_json::from_str(&std::fs::read_to_string(res.join("summary.json")).unwrap()).unwrap();
    let warnings = summary["warnings"].as_array().unwrap();
    assert!(warnings.iter().any(|w| w.as_str().unwrap().starts_with(warning)), "{warnings:?}");
    for f in [
        "timeseries.csv",
        "rings.csv",
        "summary.json",
        "currents.png",
        "currents.svg",
        "pressure_profile.png",
        "pressure_profile.svg",
        "pressure_history.png",
        "pressure_history.svg",
    ] {
        let meta = std::fs::metadata(res.join(f)).unwrap_or_else(|_| panic!("{f} missing"));
        assert!(meta.len() > 100, "{f} too small");
    }
    let png = std::fs::read(res.join("currents.png")).unwrap();
    assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
    let summary: Value =
        serde_json::from_str(&std::fs::read_to_string(res.join("summary.json")).unwrap()).unwrap();
    let peak = summary["summary"]["peak_coil_current_A"].as_f64().unwrap();
    assert!(peak > 1e4 && peak < 1e6, "peak {peak}");
    assert_eq!(summary["case_sha256"].as_str().unwrap().len(), 64);
    assert!(summary["safety"].as_str().unwrap().contains("design aid"));
    let residual = summary["summary"]["energy"]["relative_residual"].as_f64().unwrap();
    assert!(residual.abs() < 1e-4, "residual {residual}");
    // The CSV header carries units and every row has as many fields.
    let ts = std::fs::read_to_string(res.join("timeseries.csv")).unwrap();
    let mut lines = ts.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    assert_eq!(header[0], "time_s");
    assert!(header.contains(&"coil_current_A") && header.contains(&"peak_pressure_Pa"));
    let mut rows = 0;
    for l in lines {
        let fields: Vec<f64> = l.split(',').map(|x| x.parse().unwrap()).collect();
        assert_eq!(fields.len(), header.len());
        rows += 1;
    }
    assert!(rows > 500, "rows {rows}");
    assert!(std::fs::read_dir(tmp.path()).unwrap().all(|e| !e
        .unwrap()
        .file_name()
        .to_string_lossy()
        .contains(".partial-")));
}

#[test]
fn new_writes_a_valid_example() {
    let tmp = tempfile::tempdir().unwrap();
    let out = run_in(tmp.path(), &["new", "example.json"]);
    assert!(out.status.success());
    let again = run_in(tmp.path(), &["new", "example.json"]);
    assert_eq!(again.status.code(), Some(2), "refuses to overwrite");
    assert!(String::from_utf8_lossy(&again.stderr).contains("--force"));
    let run = run_in(
        tmp.path(),
        &["run", "example.json", "--out", "o", "--coarse", "--no-plots", "--quiet"],
    );
    assert!(run.status.success(), "{}", String::from_utf8_lossy(&run.stderr));
    assert!(tmp.path().join("o/summary.json").exists());
    assert!(!tmp.path().join("o/currents.png").exists(), "--no-plots");
}

#[test]
fn command_line_errors_exit_2() {
    let tmp = tempfile::tempdir().unwrap();
    let missing = run_in(tmp.path(), &["run", "nope.json"]);
    assert_eq!(missing.status.code(), Some(2));
    assert!(
        String::from_utf8_lossy(&missing.stderr).contains("cannot read case file \"nope.json\"")
    );
    let unknown = run_in(tmp.path(), &["fly"]);
    assert_eq!(unknown.status.code(), Some(2));
    let case = repo().join("cases/tube_expansion_6turn.json");
    let refine = run_in(tmp.path(), &["run", case.to_str().unwrap(), "--refine=-1"]);
    assert_eq!(refine.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&refine.stderr)
        .contains("--refine: expected a factor in (0, 16], got -1"));
    assert!(leftovers(tmp.path()).is_empty());
}

/// An output or input error is printed once: the operating system's text and a case error are
/// not repeated by the error chain.
#[test]
fn errors_are_not_repeated() {
    let tmp = tempfile::tempdir().unwrap();
    std::fs::write(tmp.path().join("file"), "x").unwrap();
    let case = repo().join("cases/ring_launch_single_turn.json");
    let args = ["run", case.to_str().unwrap(), "--coarse", "--fixed", "--no-plots", "--quiet"];
    let out = run_in(tmp.path(), &[&args[..], &["--out", "file/sub"]].concat());
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(5), "{stderr}");
    assert!(stderr.starts_with("error: cannot write"), "{stderr}");
    assert_eq!(stderr.matches("os error").count(), 1, "{stderr}");
    let merge = run_in(tmp.path(), &["merge", "missing.part-1-of-2.csv", "--out", "m"]);
    let stderr = String::from_utf8_lossy(&merge.stderr);
    assert_eq!(merge.status.code(), Some(2), "{stderr}");
    assert_eq!(stderr.matches("os error").count(), 1, "{stderr}");
    std::fs::write(tmp.path().join("bad.json"), r#"{"description": "no bank"}"#).unwrap();
    let sweep = run_in(tmp.path(), &["sweep", "bad.json", "--vary", "bank.voltage=1kV,2kV"]);
    let stderr = String::from_utf8_lossy(&sweep.stderr);
    assert_eq!(sweep.status.code(), Some(2), "{stderr}");
    assert_eq!(stderr.matches("invalid case").count(), 1, "{stderr}");
    let mut left = leftovers(tmp.path());
    left.sort();
    assert_eq!(left, ["bad.json", "file"], "no output or temporary directory left");
}
