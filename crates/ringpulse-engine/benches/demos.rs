//! Benchmark: wall time of the demo cases end to end (estimate, split, assembly, transient,
//! sampling and summary; no plotting), at the default one-skin-depth resolution and in the
//! coarse preview, plus the series-RLC reference problem of the tests.
//!
//! Run with `cargo bench -p ringpulse-engine --bench demos` (a few minutes: the moving runs at
//! default resolution take about a second each). The engine is single-threaded, so the figures are
//! for one core. Targets: fixed geometry (engine issue), expansion demo at default resolution
//! under 250 ms and its coarse preview under 10 ms; with motion (motion issue), under 1 s and
//! 50 ms. Results are recorded in docs/performance.md.

use std::path::PathBuf;
use std::time::Instant;

use ringpulse_case::{load_case, Case, Resolution};
use ringpulse_engine::{run, run_fixed, RunResult};

/// Median wall time of `repeats` runs, in seconds, and the last result.
fn time_case(case: &Case, repeats: usize, motion: bool) -> Result<(f64, RunResult), String> {
    let mut times = Vec::with_capacity(repeats);
    let mut last = None;
    for _ in 0..repeats {
        let started = Instant::now();
        let r = if motion { run(case) } else { run_fixed(case) }.map_err(|e| e.to_string())?;
        times.push(started.elapsed().as_secs_f64());
        last = Some(r);
    }
    times.sort_by(f64::total_cmp);
    let result = last.ok_or("no run")?;
    Ok((times[times.len() / 2], result))
}

fn report(name: &str, case: &Case, repeats: usize, motion: bool) {
    match time_case(case, repeats, motion) {
        Ok((t, r)) => println!(
            "{name:<44} {:>9.2} ms  filaments {:>5} (coil {:>4}, workpiece {:>4})  steps {:>5} rejected {:>3} \
             rhs {:>6}  segments {:>3}  assembly {:>7.2} ms  stepping {:>7.2} ms",
            t * 1e3,
            r.mesh.coil_filaments + r.mesh.workpiece_filaments,
            r.mesh.coil_filaments,
            r.mesh.workpiece_filaments,
            r.stats.steps,
            r.stats.rejected_steps,
            r.stats.rhs_evaluations,
            r.stats.segments,
            r.stats.assembly_time * 1e3,
            r.stats.stepping_time * 1e3
        ),
        Err(e) => println!("{name:<44} failed: {e}"),
    }
}

fn main() {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../../cases");
    let mut paths: Vec<PathBuf> = std::fs::read_dir(&dir)
        .map(|d| d.filter_map(|e| e.ok().map(|e| e.path())).collect())
        .unwrap_or_default();
    paths.retain(|p| p.extension().is_some_and(|x| x == "json"));
    paths.sort();
    println!("ringpulse engine benchmark (median of 5 runs, one core)");
    // The bench runs at the default tolerances (fixed geometry: rel 1e-7, abs 1e-9), not the
    // reference's tight ones, like the demo rows.
    let mut rlc = ringpulse_engine::reference::series_rlc_case();
    rlc.solver.rel_tol = None;
    rlc.solver.abs_tol = None;
    report("reference: series RLC (1 filament)", &rlc, 5, false);
    for path in paths {
        let Ok(text) = std::fs::read_to_string(&path) else { continue };
        let Ok((case, _)) = load_case(&text, &path.display().to_string()) else {
            println!("{}: invalid case", path.display());
            continue;
        };
        let stem = path.file_stem().map_or(String::new(), |s| s.to_string_lossy().into_owned());
        report(&format!("{stem} fixed (default)"), &case, 5, false);
        let mut coarse = case.clone();
        coarse.discretization.mode = Resolution::Coarse { tube_rings: 40 };
        report(&format!("{stem} fixed (coarse)"), &coarse, 5, false);
        if case.motion.enabled {
            report(&format!("{stem} motion (coarse)"), &coarse, 5, true);
            report(&format!("{stem} motion (default)"), &case, 3, true);
        }
    }
}
