//! The `ringpulse` command line: read a case, run the engine, write results, print a report.
//!
//! Exit codes (also in README.md and docs/study.md): 0 success; 2 invalid input (command line,
//! case file, or a discretization the engine refuses); 3 a rating fails (`check`; `size` when
//! the target is met only by breaking a rating); 4 the simulation failed; 5 the output could
//! not be written; 6 `size` cannot meet the target within the range. Errors go to standard
//! error as `error: ...` with one line per problem. The study subcommands live in
//! [`study`].

mod study;

use std::io::IsTerminal;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

use anyhow::Context;
use clap::{Parser, Subcommand};
use ringpulse_case::{load_case, Case, Resolution};
use ringpulse_engine::EngineError;
use ringpulse_output::{case_hash, format_report, write_run, RunMeta, WriteOptions, SAFETY_NOTICE};

/// Exit code: invalid input.
const EXIT_INPUT: u8 = 2;
/// Exit code: a rating fails.
const EXIT_RATINGS: u8 = 3;
/// Exit code: the simulation failed.
const EXIT_SIMULATION: u8 = 4;
/// Exit code: output could not be written.
const EXIT_OUTPUT: u8 = 5;
/// Exit code: `size` cannot meet the target within the range.
const EXIT_UNREACHABLE: u8 = 6;

/// The warning of every command run with `--coarse`: one filament per turn section misses the
/// current crowding that heats and loads the coil (docs/study.md, "Resolution, motion and run
/// time").
const COARSE_WARNING: &str = "--coarse: a coarse preview is not valid for a ratings decision; \
its coil temperature rise, hoop stress and currents can differ a lot from those at the case's \
resolution (docs/study.md); decide on ratings from a run without --coarse";

#[derive(Parser, Debug)]
#[command(
    name = "ringpulse",
    version,
    about = "Capacitor-bank electromagnetic pulse forming: coil current, workpiece pressure and energy, \
             from filament rings",
    after_help = "High-voltage capacitor banks are lethal. ringpulse is a design aid, not a safety \
                  assessment: follow local codes, the equipment maker's instructions and licensed practice."
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Simulate a case and write timeseries.csv, rings.csv, summary.json and plots.
    Run {
        /// Case file (JSON).
        case: PathBuf,
        /// Output directory (created; files in it are replaced).
        #[arg(long, short, default_value = "out")]
        out: PathBuf,
        /// Quick preview: one filament per turn section and about 40 workpiece rings (not valid
        /// for a ratings decision).
        #[arg(long)]
        coarse: bool,
        /// Refine the skin-depth split: cells this many times smaller (2 = twice as fine).
        #[arg(long, value_name = "FACTOR")]
        refine: Option<f64>,
        /// Keep the workpiece fixed (no motion), whatever the case says; much faster.
        #[arg(long)]
        fixed: bool,
        /// Do not draw plots.
        #[arg(long)]
        no_plots: bool,
        /// Print only errors and warnings.
        #[arg(long, short)]
        quiet: bool,
    },
    /// Run a case and check it against its ratings; write ratings.json. Exit 3 if a rating fails.
    Check {
        /// Case file (JSON) with a "ratings" section.
        case: PathBuf,
        /// Output directory (created; ratings.json in it is replaced).
        #[arg(long, short, default_value = "out")]
        out: PathBuf,
        /// Quick preview resolution (not valid for a ratings decision).
        #[arg(long)]
        coarse: bool,
        /// Keep the workpiece fixed (no motion), whatever the case says.
        #[arg(long)]
        fixed: bool,
        /// Print only errors, warnings and failing ratings.
        #[arg(long, short)]
        quiet: bool,
    },
    /// Run variants of a case over a grid or a Latin-hypercube sample; write sweep.csv,
    /// sweep.json and plots (or one shard's part).
    Sweep {
        /// Case file (JSON).
        case: PathBuf,
        /// PATH=VALUES: a numeric field by its dotted path and a list a,b,c, an integer range
        /// lo..hi or a range with a count lo..hi:n; units allowed (bank.voltage=4kV..10kV:7).
        #[arg(long, value_name = "PATH=VALUES", required = true)]
        vary: Vec<String>,
        /// Latin-hypercube sample of this many points instead of the full factorial.
        #[arg(long, value_name = "K")]
        lhs: Option<usize>,
        /// Seed of the Latin-hypercube sample.
        #[arg(long, default_value_t = 1)]
        seed: u64,
        /// Output directory (created; files of the same names are replaced).
        #[arg(long, short, default_value = "out")]
        out: PathBuf,
        /// Run every variant in the quick preview resolution (not valid for a ratings decision).
        #[arg(long)]
        coarse: bool,
        /// Keep the workpiece fixed (no motion) in every variant, whatever the case says.
        #[arg(long)]
        fixed: bool,
        /// Run only shard I of N (1-based; variant k goes to shard k mod N + 1); writes
        /// sweep.part-I-of-N.csv.
        #[arg(long, value_name = "I/N")]
        shard: Option<String>,
        /// Read the shard index from this environment variable (a job-array index).
        #[arg(long, value_name = "VAR")]
        shard_from_env: Option<String>,
        /// Number of shards, with --shard-from-env.
        #[arg(long, value_name = "N")]
        shards: Option<usize>,
        /// Index of the first shard in the environment variable: 1 (default) or 0.
        #[arg(long, value_name = "0|1", default_value_t = 1)]
        shard_index_base: usize,
        /// Metrics to plot against each varied parameter, comma separated.
        #[arg(long, value_name = "METRICS", default_value = study::DEFAULT_PLOTS)]
        plot: String,
        /// Do not draw plots.
        #[arg(long)]
        no_plots: bool,
        /// Worker threads (default: one per core). Results do not depend on it.
        #[arg(long, value_name = "N")]
        jobs: Option<usize>,
        /// Print only errors and warnings.
        #[arg(long, short)]
        quiet: bool,
    },
    /// Join the sweep.part-I-of-N files of a sharded sweep into sweep.csv, sweep.json and plots.
    Merge {
        /// Part CSV files, or directories holding them.
        #[arg(required = true)]
        inputs: Vec<PathBuf>,
        /// Output directory.
        #[arg(long, short, default_value = "out")]
        out: PathBuf,
        /// Metrics to plot against each varied parameter, comma separated.
        #[arg(long, value_name = "METRICS", default_value = study::DEFAULT_PLOTS)]
        plot: String,
        /// Do not draw plots.
        #[arg(long)]
        no_plots: bool,
        /// Print only errors.
        #[arg(long, short)]
        quiet: bool,
    },
    /// Find the smallest charging voltage or capacitance that meets a target; write size.json.
    Size {
        /// Case file (JSON).
        case: PathBuf,
        /// NAME=VALUE: peak_pressure, peak_coil_current, peak_radial_force, peak_axial_force,
        /// peak_workpiece_current, or with motion final_strain, max_displacement,
        /// impact_velocity; e.g. peak_pressure=150MPa, final_strain=5%, impact_velocity=250m/s.
        #[arg(long, value_name = "NAME=VALUE")]
        target: String,
        /// bank.voltage or bank.capacitance.
        #[arg(long, value_name = "PATH", default_value = "bank.voltage")]
        adjust: String,
        /// Range of the adjusted value, LO..HI (default: a tenth to ten times the case's).
        #[arg(long, value_name = "LO..HI")]
        range: Option<String>,
        /// Size the voltage for each of these capacitances and rank them by stored energy.
        #[arg(long, value_name = "C1,C2,...")]
        capacitances: Option<String>,
        /// Relative tolerance on the adjusted value (default 1e-3).
        #[arg(long, value_name = "TOL")]
        rel_tol: Option<f64>,
        /// Quick preview resolution for every run (not valid for a ratings decision).
        #[arg(long)]
        coarse: bool,
        /// Keep the workpiece fixed (no motion) in every run.
        #[arg(long)]
        fixed: bool,
        /// Output directory (created; size.json in it is replaced).
        #[arg(long, short, default_value = "out")]
        out: PathBuf,
        /// Print only errors and warnings.
        #[arg(long, short)]
        quiet: bool,
    },
    /// Write an example case with notes on every field.
    New {
        /// Where to write it; standard output when omitted.
        path: Option<PathBuf>,
        /// Overwrite an existing file.
        #[arg(long)]
        force: bool,
    },
}

/// An error with the exit code it maps to.
struct Failure {
    code: u8,
    error: anyhow::Error,
}

fn fail(code: u8, error: impl Into<anyhow::Error>) -> Failure {
    Failure { code, error: error.into() }
}

fn main() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(cli) => cli,
        Err(e) => {
            let code = if e.use_stderr() { EXIT_INPUT } else { 0 };
            let _ = e.print();
            return ExitCode::from(code);
        }
    };
    match execute(cli) {
        Ok(()) => ExitCode::SUCCESS,
        Err(f) => {
            eprintln!("error: {:#}", f.error);
            ExitCode::from(f.code)
        }
    }
}

fn execute(cli: Cli) -> Result<(), Failure> {
    match cli.command {
        Command::Run { case, out, coarse, refine, fixed, no_plots, quiet } => {
            run(&case, &out, RunChoices { coarse, refine, fixed, plots: !no_plots, quiet })
        }
        Command::New { path, force } => new_case(path.as_deref(), force),
        Command::Check { case, out, coarse, fixed, quiet } => {
            study::check(&case, &out, coarse, fixed, quiet)
        }
        Command::Sweep {
            case,
            vary,
            lhs,
            seed,
            out,
            coarse,
            fixed,
            shard,
            shard_from_env,
            shards,
            shard_index_base,
            plot,
            no_plots,
            jobs,
            quiet,
        } => study::sweep(study::SweepArgs {
            case,
            vary,
            lhs,
            seed,
            out,
            coarse,
            fixed,
            shard,
            shard_from_env,
            shards,
            shard_index_base,
            plot,
            no_plots,
            jobs,
            quiet,
        }),
        Command::Merge { inputs, out, plot, no_plots, quiet } => {
            study::merge(&inputs, &out, &plot, no_plots, quiet)
        }
        Command::Size {
            case,
            target,
            adjust,
            range,
            capacitances,
            rel_tol,
            coarse,
            fixed,
            out,
            quiet,
        } => study::size_cmd(study::SizeArgs {
            case,
            target,
            adjust,
            range,
            capacitances,
            rel_tol,
            coarse,
            fixed,
            out,
            quiet,
        }),
    }
}

/// Reads and validates a case file; the error lists every problem.
fn read_case(path: &Path) -> Result<(Case, Vec<String>, Vec<u8>), Failure> {
    let bytes = std::fs::read(path)
        .with_context(|| format!("cannot read case file \"{}\"", path.display()))
        .map_err(|e| fail(EXIT_INPUT, e))?;
    let text = String::from_utf8(bytes.clone()).map_err(|_| {
        fail(EXIT_INPUT, anyhow::anyhow!("case file \"{}\" is not UTF-8 text", path.display()))
    })?;
    let (case, warnings) =
        load_case(&text, &path.display().to_string()).map_err(|e| fail(EXIT_INPUT, e))?;
    Ok((case, warnings, bytes))
}

/// The options of `run`.
struct RunChoices {
    coarse: bool,
    refine: Option<f64>,
    fixed: bool,
    plots: bool,
    quiet: bool,
}

fn run(path: &Path, out: &Path, choices: RunChoices) -> Result<(), Failure> {
    let RunChoices { coarse, refine, fixed, plots, quiet } = choices;
    let (mut case, case_warnings, bytes) = read_case(path)?;
    if coarse {
        case.discretization.mode = Resolution::Coarse { tube_rings: 40 };
    }
    if fixed {
        case.motion.enabled = false;
    }
    if let Some(factor) = refine {
        if !(factor.is_finite() && factor > 0.0 && factor <= 16.0) {
            return Err(fail(
                EXIT_INPUT,
                anyhow::anyhow!("--refine: expected a factor in (0, 16], got {factor}"),
            ));
        }
        if let Resolution::SkinDepth { cell_over_skin_depth } = case.discretization.mode {
            case.discretization.mode =
                Resolution::SkinDepth { cell_over_skin_depth: cell_over_skin_depth / factor };
        }
    }
    if !quiet {
        eprintln!("ringpulse {}: {}", env!("CARGO_PKG_VERSION"), case.description);
        eprintln!("caution: high-voltage capacitor banks are lethal; this is a design aid, not a safety assessment");
    }
    let moving = case.motion.enabled && case.workpiece.is_some();
    let bar = (moving && !quiet && std::io::stderr().is_terminal()).then(|| {
        let bar = indicatif::ProgressBar::new(1000);
        if let Ok(style) = indicatif::ProgressStyle::with_template(
            "{bar:40} {msg} simulated, {elapsed_precise} elapsed, eta {eta_precise}",
        ) {
            bar.set_style(style);
        }
        bar
    });
    let report = |t: f64, t_end: f64| {
        if let Some(b) = &bar {
            if t_end > 0.0 {
                b.set_position((1000.0 * (t / t_end).clamp(0.0, 1.0)) as u64);
                b.set_message(format!("{:.1} of {:.1} us", t * 1e6, t_end * 1e6));
            }
        }
    };
    let progress: Option<&dyn Fn(f64, f64)> = if bar.is_some() { Some(&report) } else { None };
    let run_result = ringpulse_engine::run_with_progress(&case, progress);
    if let Some(b) = &bar {
        b.finish_and_clear();
    }
    let mut result = run_result.map_err(engine_failure)?;
    let mut warnings = case_warnings;
    if coarse {
        warnings.push(COARSE_WARNING.to_string());
    }
    warnings.append(&mut result.warnings);
    result.warnings = warnings;
    let meta = RunMeta {
        version: env!("CARGO_PKG_VERSION").to_string(),
        case_path: path.display().to_string(),
        case_sha256: case_hash(&bytes),
        description: case.description.clone(),
    };
    let written = write_run(out, &meta, &result, &WriteOptions { plots })
        .map_err(|e| fail(EXIT_OUTPUT, e))?;
    let ratings = (!case.ratings.is_empty()).then(|| ringpulse_study::evaluate(&case, &result));
    if quiet {
        for w in &result.warnings {
            eprintln!("warning: {w}");
        }
        for c in ratings.iter().flat_map(|r| r.checks.iter()).filter(|c| !c.passes()) {
            eprintln!(
                "warning: rating fails: {} ({} > {} {})",
                c.quantity, c.value, c.limit, c.unit
            );
        }
    } else {
        println!("{}", format_report(&meta, &result));
        if let Some(r) = &ratings {
            println!("{}", ringpulse_output::study::format_ratings_table(r));
        }
        println!("wrote {} files to \"{}\"", written.len(), out.display());
    }
    Ok(())
}

/// The exit code of an engine error: a split the engine refuses is a problem of the input; a
/// failing stepper is not.
fn engine_failure(e: EngineError) -> Failure {
    let code = match e {
        EngineError::Solver { .. } => EXIT_SIMULATION,
        _ => EXIT_INPUT,
    };
    fail(code, e)
}

fn new_case(path: Option<&Path>, force: bool) -> Result<(), Failure> {
    let text = ringpulse_case::example::example_case_json();
    match path {
        None => {
            println!("{text}");
            Ok(())
        }
        Some(p) => {
            if p.exists() && !force {
                return Err(fail(
                    EXIT_INPUT,
                    anyhow::anyhow!("\"{}\" exists; pass --force to overwrite it", p.display()),
                ));
            }
            std::fs::write(p, text + "\n")
                .with_context(|| format!("cannot write \"{}\"", p.display()))
                .map_err(|e| fail(EXIT_OUTPUT, e))?;
            eprintln!("wrote example case \"{}\"; {}", p.display(), first_line(SAFETY_NOTICE));
            Ok(())
        }
    }
}

fn first_line(s: &str) -> &str {
    s.lines().next().unwrap_or("")
}
