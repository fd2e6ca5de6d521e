//! The study subcommands: `check` (ratings), `sweep` (variants, shards), `merge` (shard parts)
//! and `size` (smallest voltage or capacitance for a target).
//!
//! Each reads its case and options, runs through `ringpulse-study`, prints a short report and
//! writes its files all-or-nothing through `ringpulse_output::write_atomically`. Exit codes are
//! those of main.rs and docs/study.md.

use std::io::IsTerminal;
use std::path::{Path, PathBuf};
use std::time::Instant;

use indicatif::{ProgressBar, ProgressStyle};
use ringpulse_case::{Case, Resolution};
use ringpulse_output::study::{
    format_ratings_table, format_sizing, merge_parts, resolution_label, write_merged,
    write_ratings, write_size, write_sweep, SweepMeta,
};
use ringpulse_output::{case_hash, write_atomically, RunMeta};
use ringpulse_study::metrics::{metric, METRICS};
use ringpulse_study::size::{
    parse_capacitances, parse_range, parse_target, size, size_capacitances, Adjust, Outcome,
    SizeOptions, REL_TOL,
};
use ringpulse_study::{
    evaluate, generate, parse_vary, run_variants, shard_of, BaseCase, Design, StudyError,
    SweepOptions,
};

use crate::{
    engine_failure, fail, read_case, Failure, COARSE_WARNING, EXIT_INPUT, EXIT_OUTPUT,
    EXIT_RATINGS, EXIT_SIMULATION, EXIT_UNREACHABLE,
};

/// The default metrics plotted by `sweep` and `merge`.
pub const DEFAULT_PLOTS: &str = "peak_pressure_Pa,peak_coil_current_A";

fn study_failure(e: StudyError) -> Failure {
    let code = match e {
        StudyError::Run { refused: false, .. } => EXIT_SIMULATION,
        _ => EXIT_INPUT,
    };
    fail(code, e)
}

fn input_error(message: String) -> Failure {
    fail(EXIT_INPUT, anyhow::anyhow!(message))
}

fn meta(path: &Path, bytes: &[u8], description: &str) -> RunMeta {
    RunMeta {
        version: env!("CARGO_PKG_VERSION").to_string(),
        case_path: path.display().to_string(),
        case_sha256: case_hash(bytes),
        description: description.to_string(),
    }
}

fn set_coarse(case: &mut Case) {
    case.discretization.mode =
        Resolution::Coarse { tube_rings: ringpulse_case::validate::defaults::COARSE_TUBE_RINGS };
}

/// `ringpulse check`: run the case, print the ratings table, write ratings.json; exit 3 when
/// a rating fails.
pub fn check(
    path: &Path,
    out: &Path,
    coarse: bool,
    fixed: bool,
    quiet: bool,
) -> Result<(), Failure> {
    let (mut case, warnings, bytes) = read_case(path)?;
    if case.ratings.is_empty() {
        return Err(input_error(format!(
            "case \"{}\" has no ratings section to check (see docs/case-format.md, \"ratings\")",
            path.display()
        )));
    }
    if coarse {
        set_coarse(&mut case);
    }
    if fixed {
        case.motion.enabled = false;
    }
    for w in &warnings {
        eprintln!("warning: {w}");
    }
    if coarse {
        eprintln!("warning: {COARSE_WARNING}");
    }
    let result = ringpulse_engine::run(&case).map_err(engine_failure)?;
    let report = evaluate(&case, &result);
    let meta = meta(path, &bytes, &case.description);
    write_atomically(out, |tmp| {
        Ok(vec![write_ratings(tmp, &meta, resolution_label(coarse, fixed), &report)?])
    })
    .map_err(|e| fail(EXIT_OUTPUT, e))?;
    if !quiet {
        println!("ringpulse {}  case {}", meta.version, meta.case_path);
        println!("  {}\n", case.description);
        print!("{}", format_ratings_table(&report));
        println!("wrote \"{}\"", out.join("ratings.json").display());
    } else if let Some(f) = report.first_failure() {
        eprintln!("rating fails: {} ({} > {} {})", f.quantity, f.value, f.limit, f.unit);
    }
    if report.all_pass() {
        Ok(())
    } else {
        let failed: Vec<&str> =
            report.checks.iter().filter(|c| !c.passes()).map(|c| c.quantity).collect();
        Err(fail(EXIT_RATINGS, anyhow::anyhow!("ratings fail: {}", failed.join(", "))))
    }
}

/// Options of `sweep`.
pub struct SweepArgs {
    /// Case file.
    pub case: PathBuf,
    /// `--vary` texts.
    pub vary: Vec<String>,
    /// `--lhs` points.
    pub lhs: Option<usize>,
    /// `--seed`.
    pub seed: u64,
    /// Output directory.
    pub out: PathBuf,
    /// Coarse resolution for every variant.
    pub coarse: bool,
    /// No motion in any variant.
    pub fixed: bool,
    /// `--shard I/N`.
    pub shard: Option<String>,
    /// `--shard-from-env VAR`.
    pub shard_from_env: Option<String>,
    /// `--shards N` (with `--shard-from-env`).
    pub shards: Option<usize>,
    /// `--shard-index-base` (with `--shard-from-env`).
    pub shard_index_base: usize,
    /// `--plot` metrics.
    pub plot: String,
    /// `--no-plots`.
    pub no_plots: bool,
    /// `--jobs`.
    pub jobs: Option<usize>,
    /// `--quiet`.
    pub quiet: bool,
}

/// Parses `I/N` of `--shard`.
fn parse_shard(text: &str) -> Result<(usize, usize), Failure> {
    let bad =
        || input_error(format!("--shard {text}: expected I/N with 1 <= I <= N, e.g. --shard 2/8"));
    let (i, n) = text.split_once('/').ok_or_else(bad)?;
    let (i, n): (usize, usize) =
        (i.trim().parse().map_err(|_| bad())?, n.trim().parse().map_err(|_| bad())?);
    if i == 0 || i > n {
        return Err(bad());
    }
    Ok((i, n))
}

/// The shard of `--shard` or `--shard-from-env`.
fn shard_choice(a: &SweepArgs) -> Result<Option<(usize, usize)>, Failure> {
    match (&a.shard, &a.shard_from_env) {
        (Some(_), Some(_)) => {
            Err(input_error("give either --shard or --shard-from-env, not both".into()))
        }
        (Some(s), None) => {
            if a.shards.is_some() {
                return Err(input_error(
                    "--shards goes with --shard-from-env; --shard takes I/N".into(),
                ));
            }
            parse_shard(s).map(Some)
        }
        (None, Some(var)) => {
            let Some(n) = a.shards else {
                return Err(input_error(format!(
                    "--shard-from-env {var}: also give the number of shards with --shards N"
                )));
            };
            if n == 0 {
                return Err(input_error("--shards: expected at least 1, got 0".into()));
            }
            if a.shard_index_base > 1 {
                return Err(input_error(format!(
                    "--shard-index-base: expected 0 or 1, got {}",
                    a.shard_index_base
                )));
            }
            let raw = std::env::var(var).map_err(|_| {
                input_error(format!(
                    "--shard-from-env {var}: the environment variable {var} is not set"
                ))
            })?;
            let base = a.shard_index_base;
            let index: usize = raw.trim().parse().map_err(|_| {
                input_error(format!(
                    "--shard-from-env {var}: expected a whole number in {var}, got {raw:?}"
                ))
            })?;
            if index < base || index - base >= n {
                return Err(input_error(format!(
                    "--shard-from-env {var}: {var} = {index} is outside {base}..{} for {n} shards \
                     with --shard-index-base {base}",
                    n - 1 + base
                )));
            }
            Ok(Some((index - base + 1, n)))
        }
        (None, None) => {
            if a.shards.is_some() {
                return Err(input_error("--shards goes with --shard-from-env".into()));
            }
            Ok(None)
        }
    }
}

/// The `--plot` metric names, checked.
fn plot_metrics(plot: &str, no_plots: bool) -> Result<Vec<String>, Failure> {
    if no_plots {
        return Ok(Vec::new());
    }
    let names: Vec<String> =
        plot.split(',').map(|s| s.trim().to_string()).filter(|s| !s.is_empty()).collect();
    for n in &names {
        if metric(n).is_none() {
            let all: Vec<&str> = METRICS.iter().map(|m| m.name).collect();
            return Err(input_error(format!(
                "--plot {plot}: unknown metric {n:?}; metrics are {}",
                all.join(", ")
            )));
        }
    }
    Ok(names)
}

fn read_base(path: &Path) -> Result<(BaseCase, Vec<u8>), Failure> {
    let bytes = std::fs::read(path)
        .map_err(|e| input_error(format!("cannot read case file \"{}\": {e}", path.display())))?;
    let text = String::from_utf8(bytes.clone())
        .map_err(|_| input_error(format!("case file \"{}\" is not UTF-8 text", path.display())))?;
    let base = BaseCase::load(&text, &path.display().to_string()).map_err(study_failure)?;
    Ok((base, bytes))
}

/// A progress reporter: an indicatif bar with ETA when stderr is a terminal, else nothing.
fn progress_bar(total: usize, quiet: bool) -> Option<ProgressBar> {
    if quiet || !std::io::stderr().is_terminal() {
        return None;
    }
    let bar = ProgressBar::new(total as u64);
    if let Ok(style) = ProgressStyle::with_template(
        "{bar:40} {pos}/{len} variants, {elapsed_precise} elapsed, eta {eta_precise}",
    ) {
        bar.set_style(style);
    }
    Some(bar)
}

/// `ringpulse sweep`.
pub fn sweep(a: SweepArgs) -> Result<(), Failure> {
    if a.vary.is_empty() {
        return Err(input_error(
            "sweep needs at least one --vary PATH=VALUES, e.g. --vary bank.voltage=4kV..10kV:7"
                .into(),
        ));
    }
    let specs = a
        .vary
        .iter()
        .map(|v| parse_vary(v))
        .collect::<Result<Vec<_>, _>>()
        .map_err(study_failure)?;
    let design = match a.lhs {
        Some(points) => Design::LatinHypercube { points, seed: a.seed },
        None => Design::Factorial,
    };
    let shard = shard_choice(&a)?;
    let metrics = plot_metrics(&a.plot, a.no_plots)?;
    if let Some(0) = a.jobs {
        return Err(input_error("--jobs: expected at least 1, got 0".into()));
    }
    let (base, bytes) = read_base(&a.case)?;
    let all = generate(&specs, &design).map_err(study_failure)?;
    if a.coarse {
        eprintln!("warning: {COARSE_WARNING}");
    }
    let total = all.len();
    let variants: Vec<_> = match shard {
        Some((i, n)) => all.into_iter().filter(|v| shard_of(v.index, n) == i).collect(),
        None => all,
    };
    if !a.quiet {
        for w in &base.warnings {
            eprintln!("warning: {w}");
        }
        let part = shard.map_or(String::new(), |(i, n)| format!(", shard {i} of {n}"));
        eprintln!(
            "ringpulse {}: sweep of {} variants{part}: {}",
            env!("CARGO_PKG_VERSION"),
            variants.len(),
            base.case.description
        );
    }
    let opts = SweepOptions { coarse: a.coarse, fixed: a.fixed, threads: a.jobs };
    let bar = progress_bar(variants.len(), a.quiet);
    let progress = |done: usize, _total: usize| {
        if let Some(b) = &bar {
            b.set_position(done as u64);
        }
    };
    let started = Instant::now();
    let rows = run_variants(&base, &specs, &variants, &opts, &progress).map_err(study_failure)?;
    let wall = started.elapsed().as_secs_f64();
    if let Some(b) = &bar {
        b.finish_and_clear();
    }
    let threads = a.jobs.unwrap_or_else(rayon::current_num_threads);
    let meta = SweepMeta {
        run: meta(&a.case, &bytes, &base.case.description),
        vary: specs.iter().map(|s| s.text.clone()).collect(),
        design: match design {
            Design::Factorial => "factorial".into(),
            Design::LatinHypercube { .. } => "latin_hypercube".into(),
        },
        lhs: a.lhs.map(|p| (p, a.seed)),
        coarse: a.coarse,
        fixed: a.fixed,
        variants_total: total,
        shard,
        threads,
        wall_time: wall,
    };
    let written = write_atomically(&a.out, |tmp| write_sweep(tmp, &meta, &specs, &rows, &metrics))
        .map_err(|e| fail(EXIT_OUTPUT, e))?;
    let failed = rows.iter().filter(|r| r.outcome.is_err()).count();
    let ratings_failed =
        rows.iter().filter(|r| r.outcome.as_ref().is_ok_and(|d| !d.ratings.all_pass())).count();
    if !a.quiet {
        eprintln!(
            "ran {} variants in {wall:.1} s on {threads} threads: {} ran, {failed} failed{}",
            rows.len(),
            rows.len() - failed,
            if ratings_failed > 0 {
                format!(", {ratings_failed} fail a rating")
            } else {
                String::new()
            }
        );
        for r in rows.iter().filter(|r| r.outcome.is_err()).take(5) {
            if let Err(e) = &r.outcome {
                eprintln!("  variant {}: {e}", r.variant);
            }
        }
        println!("wrote {} files to \"{}\"", written.len(), a.out.display());
    }
    Ok(())
}

/// `ringpulse merge`.
pub fn merge(
    inputs: &[PathBuf],
    out: &Path,
    plot: &str,
    no_plots: bool,
    quiet: bool,
) -> Result<(), Failure> {
    let metrics = plot_metrics(plot, no_plots)?;
    let merged = merge_parts(inputs).map_err(|e| fail(EXIT_INPUT, e))?;
    let written = write_atomically(out, |tmp| write_merged(tmp, &merged, &metrics))
        .map_err(|e| fail(EXIT_OUTPUT, e))?;
    if !quiet {
        println!(
            "merged {} rows from {} shards; wrote {} files to \"{}\"",
            merged.sidecar["rows"],
            merged.sidecar["shards"],
            written.len(),
            out.display()
        );
    }
    Ok(())
}

/// Options of `size`.
pub struct SizeArgs {
    /// Case file.
    pub case: PathBuf,
    /// `--target`.
    pub target: String,
    /// `--adjust`.
    pub adjust: String,
    /// `--range`.
    pub range: Option<String>,
    /// `--capacitances`.
    pub capacitances: Option<String>,
    /// `--rel-tol`.
    pub rel_tol: Option<f64>,
    /// `--coarse`.
    pub coarse: bool,
    /// `--fixed`.
    pub fixed: bool,
    /// `--out`.
    pub out: PathBuf,
    /// `--quiet`.
    pub quiet: bool,
}

/// `ringpulse size`: exit 0 when the target is met within the ratings, 3 when it is met only
/// by breaking a rating, 6 when it cannot be met within the range.
pub fn size_cmd(a: SizeArgs) -> Result<(), Failure> {
    let target = parse_target(&a.target).map_err(study_failure)?;
    let adjust = Adjust::parse(&a.adjust).map_err(study_failure)?;
    let range =
        a.range.as_deref().map(|r| parse_range(r, adjust)).transpose().map_err(study_failure)?;
    let caps =
        a.capacitances.as_deref().map(parse_capacitances).transpose().map_err(study_failure)?;
    if caps.is_some() && adjust != Adjust::Voltage {
        return Err(input_error(
            "--capacitances sizes the voltage for each capacitance; use it with --adjust \
             bank.voltage"
                .into(),
        ));
    }
    let (case, warnings, bytes) = read_case(&a.case)?;
    if !a.quiet {
        for w in &warnings {
            eprintln!("warning: {w}");
        }
    }
    if a.coarse {
        eprintln!("warning: {COARSE_WARNING}");
    }
    let opts = SizeOptions {
        range,
        rel_tol: a.rel_tol.unwrap_or(REL_TOL),
        coarse: a.coarse,
        fixed: a.fixed,
    };
    let sizings = match &caps {
        Some(c) => size_capacitances(&case, target, c, &opts),
        None => size(&case, target, adjust, &opts).map(|s| vec![s]),
    }
    .map_err(study_failure)?;
    let meta = meta(&a.case, &bytes, &case.description);
    write_atomically(&a.out, |tmp| {
        Ok(vec![write_size(tmp, &meta, resolution_label(a.coarse, a.fixed), &sizings)?])
    })
    .map_err(|e| fail(EXIT_OUTPUT, e))?;
    if !a.quiet {
        println!("ringpulse {}  case {}", meta.version, meta.case_path);
        println!("  {}\n", case.description);
        print!("{}", format_sizing(&sizings));
        println!("wrote \"{}\"", a.out.join("size.json").display());
    }
    let met: Vec<_> = sizings
        .iter()
        .filter_map(|s| match &s.outcome {
            Outcome::Met(p) => Some(p),
            Outcome::Unreachable { .. } => None,
        })
        .collect();
    if met.is_empty() {
        return Err(fail(
            EXIT_UNREACHABLE,
            anyhow::anyhow!(
                "the target {} cannot be met within the range of {}",
                a.target,
                adjust.path()
            ),
        ));
    }
    if met.iter().all(|p| !p.ratings.all_pass()) {
        return Err(fail(
            EXIT_RATINGS,
            anyhow::anyhow!("the target {} cannot be met within the ratings", a.target),
        ));
    }
    Ok(())
}
