//! The `ringpulse` command line: read a case, run the engine, write results, print a report.
//!
//! Exit codes (also in README.md): 0 success; 2 invalid input (command line, case file, or a
//! discretization the engine refuses);
//! 3 a ratings check failed (reserved for `check`); 4 the simulation failed; 5 the output could
//! not be written. Errors go to standard error as `error: ...` with one line per problem.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use anyhow::Context;
use clap::{Parser, Subcommand};
use ringpulse_case::{load_case, Case, Resolution};
use ringpulse_engine::EngineError;
use ringpulse_output::{case_hash, format_report, write_run, RunMeta, WriteOptions, SAFETY_NOTICE};

/// Exit code: invalid input.
const EXIT_INPUT: u8 = 2;
/// Exit code: the simulation failed.
const EXIT_SIMULATION: u8 = 4;
/// Exit code: output could not be written.
const EXIT_OUTPUT: u8 = 5;

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
        /// Quick preview: one filament per turn section and about 40 workpiece rings.
        #[arg(long)]
        coarse: bool,
        /// Refine the skin-depth split: cells this many times smaller (2 = twice as fine).
        #[arg(long, value_name = "FACTOR")]
        refine: Option<f64>,
        /// Do not draw plots.
        #[arg(long)]
        no_plots: bool,
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
        Command::Run { case, out, coarse, refine, no_plots, quiet } => {
            run(&case, &out, coarse, refine, !no_plots, quiet)
        }
        Command::New { path, force } => new_case(path.as_deref(), force),
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

fn run(
    path: &Path,
    out: &Path,
    coarse: bool,
    refine: Option<f64>,
    plots: bool,
    quiet: bool,
) -> Result<(), Failure> {
    let (mut case, case_warnings, bytes) = read_case(path)?;
    if coarse {
        case.discretization.mode = Resolution::Coarse { tube_rings: 40 };
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
    let mut result = ringpulse_engine::run(&case).map_err(|e| {
        // A split the engine refuses is a problem of the input; a failing stepper is not.
        let code = match e {
            EngineError::Solver { .. } => EXIT_SIMULATION,
            _ => EXIT_INPUT,
        };
        fail(code, e)
    })?;
    let mut warnings = case_warnings;
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
    if quiet {
        for w in &result.warnings {
            eprintln!("warning: {w}");
        }
    } else {
        println!("{}", format_report(&meta, &result));
        println!("wrote {} files to \"{}\"", written.len(), out.display());
    }
    Ok(())
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
