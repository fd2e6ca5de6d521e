//! Writing a synthetic result: files, headers, round-trip of numbers, all-or-nothing, NaN.

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)]

use ringpulse_engine::{RingTraces, RunResult, Summary, Traces};
use ringpulse_output::{write_run, RunMeta, WriteOptions};

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
