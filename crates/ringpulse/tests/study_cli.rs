//! Tests of the study commands through the real binary: sharded sweeps merged against a single
//! run, a sweep with an invalid variant, ratings exit codes and an unreachable sizing target.
//! Every sweep here runs the expansion demo in the coarse preview at fixed geometry to stay
//! quick; the study code paths are the same at any resolution.

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)]

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use serde_json::Value;

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_ringpulse"))
}

fn demo() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../../cases/tube_expansion_6turn.json")
}

fn run(args: &[&str]) -> Output {
    bin().args(args).output().unwrap()
}

fn text(p: &Path) -> String {
    std::fs::read_to_string(p).unwrap()
}

const VARY: [&str; 4] = ["--vary", "coil.turns=4..6", "--vary", "bank.voltage=4kV..6kV:3"];

fn sweep_args<'a>(out: &'a str, extra: &[&'a str]) -> Vec<&'a str> {
    let mut v: Vec<&str> = vec!["sweep"];
    v.extend(VARY);
    v.extend(["--coarse", "--fixed", "--no-plots", "--quiet", "--out", out]);
    v.extend(extra);
    v
}

/// Every command run with --coarse warns, even with --quiet, that the preview is no basis for
/// a ratings decision.
fn assert_coarse_warning(o: &Output) {
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert!(
        stderr.contains("warning: --coarse: a coarse preview is not valid for a ratings decision"),
        "{stderr}"
    );
}

#[test]
fn three_shards_in_separate_processes_merge_to_the_single_run_csv() {
    let tmp = tempfile::tempdir().unwrap();
    let case = demo();
    let case = case.to_str().unwrap();
    let dir = |n: &str| tmp.path().join(n).to_str().unwrap().to_string();
    let single = dir("single");
    let mut args = sweep_args(&single, &[]);
    args.insert(1, case);
    let o = run(&args);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    assert_coarse_warning(&o);
    // The three shards as concurrent processes, two of them via the job-array variable.
    let outs: Vec<String> = (1..=3).map(|i| dir(&format!("part{i}"))).collect();
    let mut children = Vec::new();
    for (i, out) in outs.iter().enumerate() {
        let shard = format!("{}/3", i + 1);
        let mut args = sweep_args(out, &[]);
        args.insert(1, case);
        let mut cmd = bin();
        if i == 0 {
            cmd.args(&args).args(["--shard", &shard]);
        } else {
            // A 0-based array index, as several schedulers give it.
            cmd.args(&args)
                .args(["--shard-from-env", "TEST_ARRAY_INDEX", "--shards", "3"])
                .args(["--shard-index-base", "0"])
                .env("TEST_ARRAY_INDEX", i.to_string());
        }
        children.push(cmd.spawn().unwrap());
    }
    for mut c in children {
        assert!(c.wait().unwrap().success());
    }
    let merged = dir("merged");
    let mut margs = vec!["merge", "--no-plots", "--quiet", "--out", &merged];
    margs.extend(outs.iter().map(String::as_str));
    let o = run(&margs);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let a = text(&tmp.path().join("single/sweep.csv"));
    let b = text(&tmp.path().join("merged/sweep.csv"));
    assert_eq!(a.lines().count(), 12, "two comment lines, header and 9 variants");
    assert_eq!(a, b, "merged shards differ from the single run");
    // Traceability in the CSV itself: the version and the SHA-256 of the case file's bytes
    // (computed here by the output crate's hash, which a unit test checks against FIPS 180-2).
    let sha = ringpulse_output::case_hash(&std::fs::read(demo()).unwrap());
    let version = env!("CARGO_PKG_VERSION");
    assert!(
        a.starts_with(&format!("# ringpulse {version}\n# case_sha256 {sha}\nvariant,")),
        "{}",
        a.lines().take(3).collect::<Vec<_>>().join("\n")
    );
    // Counts are integers: the filament count of every row.
    let lines: Vec<&str> = a.lines().skip(2).collect();
    let k = lines[0].split(',').position(|h| h == "filaments").unwrap();
    for row in &lines[1..] {
        let cell = row.split(',').nth(k).unwrap();
        assert!(cell.parse::<u64>().is_ok(), "filaments cell {cell:?} in {row}");
    }
    // Each part holds its round-robin share.
    for (i, out) in outs.iter().enumerate() {
        let part = std::fs::read_dir(out)
            .unwrap()
            .map(|e| e.unwrap().path())
            .find(|p| p.extension().is_some_and(|x| x == "csv"))
            .unwrap();
        assert!(part
            .file_name()
            .unwrap()
            .to_string_lossy()
            .contains(&format!("part-{}-of-3", i + 1)));
        let part_text = text(&part);
        assert_eq!(
            part_text.lines().count(),
            6,
            "comments, header and 3 rows in {}",
            part.display()
        );
        assert!(a.starts_with(part_text.lines().take(3).collect::<Vec<_>>().join("\n").as_str()));
    }
    // Traceability: version and case hash in the sidecar.
    let side: Value = serde_json::from_str(&text(&tmp.path().join("merged/sweep.json"))).unwrap();
    assert_eq!(side["ringpulse_version"], env!("CARGO_PKG_VERSION"));
    assert_eq!(side["case_sha256"].as_str().unwrap().len(), 64);
    // Parts of different sweeps are refused.
    let other = dir("other");
    let mut args = vec!["sweep", case, "--vary", "coil.turns=4..5", "--coarse", "--fixed"];
    args.extend(["--no-plots", "--quiet", "--out", &other, "--shard", "2/3"]);
    assert!(run(&args).status.success());
    let bad = dir("bad");
    let o = run(&["merge", "--quiet", "--out", &bad, &outs[0], &outs[1], &other]);
    assert_eq!(o.status.code(), Some(2), "{}", String::from_utf8_lossy(&o.stderr));
    assert!(!Path::new(&bad).exists());
    // A part whose comment lines disagree with its sidecar is refused.
    let part1 = std::fs::read_dir(&outs[0])
        .unwrap()
        .map(|e| e.unwrap().path())
        .find(|p| p.extension().is_some_and(|x| x == "csv"))
        .unwrap();
    let tampered = text(&part1).replacen(&sha, &"0".repeat(64), 1);
    std::fs::write(&part1, tampered).unwrap();
    let o = run(&["merge", "--quiet", "--out", &bad, &outs[0], &outs[1], &outs[2]]);
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{stderr}");
    assert!(stderr.contains("disagree: case_sha256"), "{stderr}");
    assert!(!Path::new(&bad).exists());
}

#[test]
fn a_sweep_with_an_invalid_variant_completes_and_reports_its_error() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    let case = demo();
    // A 24.5 mm mean radius puts the 3 mm coil conductor into the tube (inner radius 25 mm).
    let o = run(&[
        "sweep",
        case.to_str().unwrap(),
        "--vary",
        "coil.mean_radius=21mm,24.5mm,22mm",
        "--coarse",
        "--fixed",
        "--no-plots",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let csv = text(&out.join("sweep.csv"));
    // After the two comment lines (version and case hash): the header and three rows.
    let lines: Vec<&str> = csv.lines().skip_while(|l| l.starts_with('#')).collect();
    assert_eq!(lines.len(), 4);
    let header: Vec<&str> = lines[0].split(',').collect();
    let err_col = header.iter().position(|h| *h == "error").unwrap();
    let peak_col = header.iter().position(|h| *h == "peak_coil_current_A").unwrap();
    let cells =
        |k: usize| lines[k].splitn(header.len(), ',').map(str::to_string).collect::<Vec<_>>();
    let bad = cells(2);
    assert!(bad[err_col].contains("overlap"), "error cell: {}", bad[err_col]);
    assert!(bad[peak_col].is_empty());
    for k in [1, 3] {
        let row = cells(k);
        assert!(row[err_col].is_empty(), "row {k}: {}", row[err_col]);
        assert!(row[peak_col].parse::<f64>().unwrap() > 1e4);
    }
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert!(stderr.contains("1 failed"), "{stderr}");
}

fn case_with_ratings(dir: &Path, peak_current: &str) -> PathBuf {
    let mut v: Value = serde_json::from_str(&text(&demo())).unwrap();
    v["motion"] = Value::Bool(false);
    v["ratings"] = serde_json::json!({
        "switch": { "peak_current": peak_current, "charge": "20 C" },
        "capacitors": { "voltage": "10 kV" }
    });
    let p = dir.join(format!("rated_{peak_current}.json").replace(' ', ""));
    std::fs::write(&p, serde_json::to_string_pretty(&v).unwrap()).unwrap();
    p
}

#[test]
fn check_exits_0_when_ratings_pass_and_3_when_one_fails() {
    let tmp = tempfile::tempdir().unwrap();
    for (limit, code) in [("500 kA", 0), ("50 kA", 3)] {
        let case = case_with_ratings(tmp.path(), limit);
        let out = tmp.path().join(format!("out{code}"));
        let o = run(&["check", case.to_str().unwrap(), "--coarse", "--out", out.to_str().unwrap()]);
        assert_eq!(o.status.code(), Some(code), "{}", String::from_utf8_lossy(&o.stderr));
        assert_coarse_warning(&o);
        let table = String::from_utf8_lossy(&o.stdout);
        assert!(table.contains("switch peak current"), "{table}");
        assert_eq!(table.contains("FAIL"), code == 3, "{table}");
        let r: Value = serde_json::from_str(&text(&out.join("ratings.json"))).unwrap();
        assert_eq!(r["resolution"], "coarse");
        assert!(r["case_sha256"].is_string());
    }
}

#[test]
fn size_says_when_the_target_is_out_of_reach() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    let o = run(&[
        "size",
        demo().to_str().unwrap(),
        "--target",
        "peak_pressure=50GPa",
        "--range",
        "1kV..10kV",
        "--coarse",
        "--fixed",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(6), "{}", String::from_utf8_lossy(&o.stderr));
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert!(stderr.contains("cannot be met within the range of bank.voltage"), "{stderr}");
    assert_coarse_warning(&o);
    let s: Value = serde_json::from_str(&text(&out.join("size.json"))).unwrap();
    assert!(s.to_string().contains("unreachable"));
    // A motion target with --fixed is refused as bad input, before any run.
    let o = run(&[
        "size",
        demo().to_str().unwrap(),
        "--target",
        "final_strain=5%",
        "--fixed",
        "--out",
        tmp.path().join("none").to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("needs the workpiece to move"));
}
