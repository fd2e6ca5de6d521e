//! Sweep benchmark: a 200-variant turns x voltage sweep of the expansion demo on all cores.
//!
//! `cargo bench -p ringpulse-study --bench sweep` prints the wall time, the variants per
//! second and how many variants ran, for:
//! - the default (one-skin-depth) resolution at fixed geometry (`--fixed`);
//! - the coarse preview at fixed geometry;
//! - the coarse preview with the workpiece moving (the demo as written).
//!
//! `RINGPULSE_BENCH_FULL=1` adds the default resolution with motion, which takes several
//! minutes on two cores (docs/performance.md). Targets of the studies issue: the
//! default-resolution sweep under 30 s and the coarse one under 3 s on the 2-core machine.

use std::time::Instant;

use ringpulse_study::{generate, parse_vary, run_variants, BaseCase, Design, SweepOptions};

fn main() {
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/../../cases/tube_expansion_6turn.json");
    let text = match std::fs::read_to_string(path) {
        Ok(t) => t,
        Err(e) => {
            eprintln!("cannot read {path}: {e}");
            std::process::exit(1);
        }
    };
    let base = match BaseCase::load(&text, path) {
        Ok(b) => b,
        Err(e) => {
            eprintln!("{e}");
            std::process::exit(1);
        }
    };
    // 10 turn counts x 20 voltages = 200 variants; the pitch is held (coil.hold default).
    let specs = match ["coil.turns=2..11", "bank.voltage=4kV..10kV:20"]
        .iter()
        .map(|s| parse_vary(s))
        .collect::<Result<Vec<_>, _>>()
    {
        Ok(s) => s,
        Err(e) => {
            eprintln!("{e}");
            std::process::exit(1);
        }
    };
    let variants = match generate(&specs, &Design::Factorial) {
        Ok(v) => v,
        Err(e) => {
            eprintln!("{e}");
            std::process::exit(1);
        }
    };
    let full = std::env::var_os("RINGPULSE_BENCH_FULL").is_some();
    let mut modes = vec![
        ("default resolution, fixed geometry", false, true),
        ("coarse preview, fixed geometry", true, true),
        ("coarse preview, moving workpiece", true, false),
    ];
    if full {
        modes.push(("default resolution, moving workpiece", false, false));
    }
    println!(
        "sweep of {} variants ({}) on {} threads",
        variants.len(),
        specs.iter().map(|s| s.text.as_str()).collect::<Vec<_>>().join(" x "),
        rayon::current_num_threads()
    );
    println!("{:<40} {:>10} {:>14} {:>8} {:>8}", "mode", "wall s", "variants/s", "ran", "failed");
    for (name, coarse, fixed) in modes {
        let opts = SweepOptions { coarse, fixed, threads: None };
        let started = Instant::now();
        let rows = match run_variants(&base, &specs, &variants, &opts, &|_, _| {}) {
            Ok(r) => r,
            Err(e) => {
                eprintln!("{name}: {e}");
                std::process::exit(1);
            }
        };
        let wall = started.elapsed().as_secs_f64();
        let failed = rows.iter().filter(|r| r.outcome.is_err()).count();
        println!(
            "{name:<40} {wall:>10.2} {:>14.1} {:>8} {failed:>8}",
            rows.len() as f64 / wall,
            rows.len() - failed
        );
        if let Some(e) = rows.iter().find_map(|r| r.outcome.as_ref().err()) {
            println!("  first error: {e}");
        }
    }
}
