//! Writing a synthetic result: files, headers, round-trip of numbers, all-or-nothing, NaN.

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)]

use std::error::Error as _;
use std::path::{Path, PathBuf};

use ringpulse_engine::{RingTraces, RunResult, Summary, Traces};
use ringpulse_output::{write_atomically, write_run, OutputError, RunMeta, WriteOptions};

fn synthetic(n: usize) -> RunResult {
    let time: Vec<f64> = (0..n).map(|k| k as f64 * 1e-7).collect();
    let wave = |scale: f64| -> Vec<f64> {
        time.iter().map(|t| scale * (-t * 5e3).exp() * (1e5 * t).sin()).collect()
    };
    let rings = RingTraces {
        radius: vec![0.025, 0.025, 0.025],
        z: vec![-0.01, 0.0, 0.01],
        length: vec![0.01; 3],
        area: vec![1e-5; 3],
        time: time.iter().step_by(10).copied().collect(),
        current: (0..n.div_ceil(10)).map(|k| vec![k as f64, 2.0 * k as f64, k as f64]).collect(),
        pressure: (0..n.div_ceil(10)).map(|k| vec![1e6 * k as f64, 3e6 * k as f64, 1e6]).collect(),
        axial_force: (0..n.div_ceil(10)).map(|_| vec![0.0; 3]).collect(),
        ..RingTraces::default()
    };
    RunResult {
        traces: Traces {
            coil_current: wave(1e5),
            capacitor_voltage: wave(-1e4),
            workpiece_current: wave(-4e5),
            radial_force: wave(1e5),
            axial_force: vec![0.0; n],
            peak_pressure: wave(1e8),
            time,
        },
        rings,
        summary: Summary { peak_coil_current: 92669.2020995, ..Summary::default() },
        stats: Default::default(),
        mesh: Default::default(),
        warnings: vec!["a warning".into()],
        probes: vec![],
    }
}

fn meta() -> RunMeta {
    RunMeta {
        version: "0.0.0-test".into(),
        case_path: "case.json".into(),
        case_sha256: "ab".repeat(32),
        description: "synthetic".into(),
    }
}

#[test]
fn writes_every_file_and_numbers_round_trip() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    let r = synthetic(200);
    let files = write_run(&out, &meta(), &r, &WriteOptions::default()).unwrap();
    assert_eq!(files.len(), 9);
    let ts = std::fs::read_to_string(out.join("timeseries.csv")).unwrap();
    let mut lines = ts.lines();
    assert_eq!(
        lines.next().unwrap(),
        "time_s,coil_current_A,capacitor_voltage_V,workpiece_current_A,radial_force_N,axial_force_N,peak_pressure_Pa"
    );
    for (k, line) in lines.enumerate() {
        let v: Vec<f64> = line.split(',').map(|x| x.parse().unwrap()).collect();
        assert_eq!(v[0], r.traces.time[k]);
        assert_eq!(v[1], r.traces.coil_current[k], "shortest round-trip form");
    }
    let rings = std::fs::read_to_string(out.join("rings.csv")).unwrap();
    assert_eq!(rings.lines().count(), 1 + 20 * 3);
    assert!(rings.starts_with(
        "time_s,ring,r_m,z_m,current_A,current_density_A_per_m2,pressure_Pa,axial_force_N\n"
    ));
    let s: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    assert_eq!(s["summary"]["peak_coil_current_A"].as_f64().unwrap(), 92669.2020995);
    assert_eq!(s["ringpulse_version"], "0.0.0-test");
    assert_eq!(s["warnings"][0], "a warning");
    let svg = std::fs::read_to_string(out.join("pressure_profile.svg")).unwrap();
    assert!(svg.contains("<svg"));
    assert!(!tmp.path().read_dir().unwrap().any(|e| e
        .unwrap()
        .file_name()
        .to_string_lossy()
        .contains("partial")));
}

#[test]
fn failure_leaves_nothing_behind() {
    let tmp = tempfile::tempdir().unwrap();
    let blocker = tmp.path().join("file");
    std::fs::write(&blocker, "x").unwrap();
    // The output directory would have to live inside a regular file.
    let err = write_run(&blocker.join("out"), &meta(), &synthetic(50), &WriteOptions::default())
        .unwrap_err();
    assert!(err.to_string().starts_with("cannot write"), "{err}");
    // The operating system's text appears once: in the message, not again as a source that an
    // error chain (the CLI's `{:#}`) would append.
    assert_eq!(err.to_string().matches("os error").count(), 1, "{err}");
    assert!(err.source().is_none(), "{err}");
    let names: Vec<String> = tmp
        .path()
        .read_dir()
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert_eq!(names, vec!["file".to_string()]);
}

#[test]
fn nan_and_empty_data_do_not_panic() {
    let tmp = tempfile::tempdir().unwrap();
    let mut r = synthetic(30);
    r.traces.coil_current[3] = f64::NAN;
    r.traces.peak_pressure = vec![f64::INFINITY; 30];
    r.summary.peak_coil_current = f64::NAN;
    write_run(&tmp.path().join("a"), &meta(), &r, &WriteOptions::default()).unwrap();
    let s: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(tmp.path().join("a/summary.json")).unwrap())
            .unwrap();
    assert!(s["summary"]["peak_coil_current_A"].is_null(), "NaN becomes null");
    let mut empty = synthetic(1);
    empty.rings = RingTraces::default();
    let files =
        write_run(&tmp.path().join("b"), &meta(), &empty, &WriteOptions::default()).unwrap();
    assert_eq!(files.len(), 4, "no workpiece plots and no rings.csv without rings");
}

/// The names in a directory, sorted.
fn names(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = dir
        .read_dir()
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

#[test]
fn directory_in_the_way_stops_before_anything_moves() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    std::fs::create_dir_all(out.join("summary.json")).unwrap();
    std::fs::write(out.join("summary.json/keep.txt"), "inside").unwrap();
    std::fs::write(out.join("timeseries.csv"), "old timeseries").unwrap();
    std::fs::write(out.join("notes.txt"), "mine").unwrap();
    let err = write_run(&out, &meta(), &synthetic(50), &WriteOptions::default()).unwrap_err();
    let text = err.to_string();
    assert!(
        matches!(&err, OutputError::Destination { path, .. } if path == &out.join("summary.json")),
        "{text}"
    );
    assert!(text.contains("summary.json") && text.contains("directory"), "{text}");
    // Nothing was moved: the old files and the directory are as they were, no new file came.
    assert_eq!(names(&out), ["notes.txt", "summary.json", "timeseries.csv"]);
    assert_eq!(std::fs::read_to_string(out.join("timeseries.csv")).unwrap(), "old timeseries");
    assert_eq!(std::fs::read_to_string(out.join("summary.json/keep.txt")).unwrap(), "inside");
    assert_eq!(names(tmp.path()), ["out"], "no temporary directory left");
}

#[test]
fn output_path_that_is_a_file_is_refused() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    std::fs::write(&out, "a file").unwrap();
    let err = write_run(&out, &meta(), &synthetic(50), &WriteOptions::default()).unwrap_err();
    assert!(matches!(err, OutputError::Destination { .. }), "{err}");
    assert!(err.to_string().contains("not a directory"), "{err}");
    assert_eq!(std::fs::read_to_string(&out).unwrap(), "a file");
    assert_eq!(names(tmp.path()), ["out"]);
}

#[test]
fn failure_while_moving_puts_back_what_was_there() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    std::fs::create_dir(&out).unwrap();
    std::fs::write(out.join("a.csv"), "old a").unwrap();
    // The writer lists a second file that it never wrote: its move fails after a.csv (which
    // replaces an older a.csv) and b.csv (new) have been moved in.
    let err = write_atomically(&out, |dir| {
        std::fs::write(dir.join("a.csv"), "new a").unwrap();
        std::fs::write(dir.join("b.csv"), "new b").unwrap();
        Ok(vec![dir.join("a.csv"), dir.join("b.csv"), dir.join("c.csv")])
    })
    .unwrap_err();
    assert!(matches!(&err, OutputError::Io { path, .. } if path == &out.join("c.csv")), "{err}");
    assert_eq!(names(&out), ["a.csv"], "b.csv removed again");
    assert_eq!(std::fs::read_to_string(out.join("a.csv")).unwrap(), "old a", "a.csv restored");
    assert_eq!(names(tmp.path()), ["out"]);
}

#[test]
fn new_output_directory_arrives_whole() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("deeper/out");
    let files: Vec<PathBuf> = write_atomically(&out, |dir| {
        std::fs::write(dir.join("x.txt"), "x").unwrap();
        Ok(vec![dir.join("x.txt")])
    })
    .unwrap();
    assert_eq!(files, vec![out.join("x.txt")]);
    assert_eq!(names(&out), ["x.txt"]);
    assert_eq!(names(&tmp.path().join("deeper")), ["out"]);
}
