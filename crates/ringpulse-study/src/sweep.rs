//! Running many variants of a case: in parallel, in variant order, sliced into shards.
//!
//! Each variant's case JSON is validated and run on its own; a variant that fails validation
//! or the engine keeps its error text in its row and the sweep goes on. Rows come back in
//! variant order whatever the number of threads, and every run is a pure function of its case,
//! so a sweep gives the same rows sequentially, in parallel and in shards.
//!
//! Variants that differ only in the charging voltage share the engine's prepared network
//! (mesh, inductance matrix and its factorisations do not depend on the voltage): a small cache
//! keyed by the case with the voltage set aside hands the same [`Prepared`] to all of them. The
//! prepared network is a deterministic function of that key, so the cache changes run time
//! only, never a result.

use std::collections::{HashMap, VecDeque};
use std::panic::{catch_unwind, AssertUnwindSafe};
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::{Arc, Mutex, OnceLock};

use rayon::prelude::*;
use ringpulse_case::validate::parse_case_file;
use ringpulse_case::{validate, Case, Ratings, Resolution};
use ringpulse_engine::{prepare, run_prepared_as_case, EngineError, Prepared, RunResult};
use serde_json::Value;

use crate::metrics;
use crate::ratings::{evaluate, RatingsReport};
use crate::spec::VarySpec;
use crate::variants::{apply, Variant};
use crate::StudyError;

/// The case a study starts from: its JSON (to write variants into) and its validated form.
#[derive(Debug, Clone)]
pub struct BaseCase {
    /// The case file as JSON.
    pub json: Value,
    /// The validated case.
    pub case: Case,
    /// Validation warnings of the base case, each `path: message`.
    pub warnings: Vec<String>,
    /// Where it came from, for messages.
    pub origin: String,
}

impl BaseCase {
    /// Parses and validates a case file's text.
    pub fn load(text: &str, origin: &str) -> Result<BaseCase, StudyError> {
        let file = parse_case_file(text, origin)?;
        let (case, warnings) = validate(&file)
            .map_err(|e| ringpulse_case::CaseError { origin: origin.to_string(), ..e })?;
        // parse_case_file has already checked the text is a JSON object.
        let json: Value =
            serde_json::from_str(text.trim_start_matches('\u{feff}')).map_err(|e| {
                ringpulse_case::CaseError {
                    origin: origin.to_string(),
                    problems: vec![ringpulse_case::Problem {
                        path: "(document)".into(),
                        message: e.to_string(),
                    }],
                }
            })?;
        Ok(BaseCase { json, case, warnings, origin: origin.to_string() })
    }
}

/// How variants are run.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct SweepOptions {
    /// Run every variant in coarse resolution (one filament per turn, 40 workpiece cells).
    pub coarse: bool,
    /// Keep the workpiece fixed (no motion) in every variant, whatever the case says.
    pub fixed: bool,
    /// Worker threads; `None`: one per core (rayon's default).
    pub threads: Option<usize>,
}

/// The results of one variant that ran.
#[derive(Debug, Clone, PartialEq)]
pub struct RowData {
    /// The values of [`metrics::METRICS`], in column order.
    pub metrics: Vec<Option<f64>>,
    /// The ratings checks of the run.
    pub ratings: RatingsReport,
}

/// One row of a sweep.
#[derive(Debug, Clone, PartialEq)]
pub struct Row {
    /// The variant index, from 0.
    pub variant: usize,
    /// The varied values, in SI, in spec order.
    pub values: Vec<f64>,
    /// The results, or the error text (one line) of a variant that failed.
    pub outcome: Result<RowData, String>,
}

/// The shard (1-based, of `shards`) that variant `index` belongs to: variants are dealt out
/// round-robin, index k to shard (k mod N) + 1, so that shards get similar mixes of cheap and
/// expensive variants.
pub fn shard_of(index: usize, shards: usize) -> usize {
    index % shards.max(1) + 1
}

/// Runs cases, sharing prepared networks between cases that differ only in their voltage.
#[derive(Default)]
pub struct Runner {
    cache: Mutex<PreparedCache>,
    capacity: usize,
}

type Slot = Arc<OnceLock<Result<Prepared, EngineError>>>;

#[derive(Default)]
struct PreparedCache {
    slots: HashMap<String, Slot>,
    order: VecDeque<String>,
}

impl Runner {
    /// A runner that keeps up to `capacity` prepared networks (each holds a few dense n x n
    /// matrices, about 20 MB for 700 filaments).
    pub fn new(capacity: usize) -> Runner {
        Runner { cache: Mutex::new(PreparedCache::default()), capacity: capacity.max(1) }
    }

    /// Runs one case with the engine.
    pub fn run(&self, case: &Case) -> Result<RunResult, EngineError> {
        let mut key_case = case.clone();
        key_case.bank.voltage = 1.0;
        key_case.description.clear();
        key_case.ratings = Ratings::default();
        let key = format!("{key_case:?}");
        let slot = {
            // A poisoned lock only means another thread panicked while holding it; the map
            // itself is still consistent.
            let mut cache = self.cache.lock().unwrap_or_else(|e| e.into_inner());
            if let Some(slot) = cache.slots.get(&key) {
                Arc::clone(slot)
            } else {
                while cache.order.len() >= self.capacity {
                    if let Some(old) = cache.order.pop_front() {
                        cache.slots.remove(&old);
                    }
                }
                let slot: Slot = Arc::default();
                cache.slots.insert(key.clone(), Arc::clone(&slot));
                cache.order.push_back(key);
                slot
            }
        };
        let prepared = slot.get_or_init(|| prepare(case)).clone()?;
        run_prepared_as_case(case, prepared, None)
    }
}

/// The text of a panic payload.
fn panic_text(payload: &(dyn std::any::Any + Send)) -> String {
    if let Some(s) = payload.downcast_ref::<&str>() {
        (*s).to_string()
    } else if let Some(s) = payload.downcast_ref::<String>() {
        s.clone()
    } else {
        "no message".to_string()
    }
}

/// One line of text from a possibly multi-line message.
pub fn one_line(message: &str) -> String {
    message.lines().map(str::trim).filter(|l| !l.is_empty()).collect::<Vec<_>>().join("; ")
}

/// Validates the JSON of a variant, applies the sweep options and runs it.
fn run_variant(
    runner: &Runner,
    json: Value,
    opts: &SweepOptions,
) -> Result<(Case, RunResult), String> {
    let file = serde_json::from_value(json).map_err(|e| format!("unreadable case: {e}"))?;
    let (mut case, _) = validate(&file).map_err(|e| {
        let problems: Vec<String> = e.problems.iter().map(|p| p.to_string()).collect();
        format!("invalid case: {}", problems.join("; "))
    })?;
    if opts.coarse {
        case.discretization.mode = Resolution::Coarse {
            tube_rings: ringpulse_case::validate::defaults::COARSE_TUBE_RINGS,
        };
    }
    if opts.fixed {
        case.motion.enabled = false;
    }
    let result = runner.run(&case).map_err(|e| e.to_string())?;
    Ok((case, result))
}

fn row(
    runner: &Runner,
    base: &BaseCase,
    specs: &[VarySpec],
    v: &Variant,
    opts: &SweepOptions,
) -> Row {
    let outcome = catch_unwind(AssertUnwindSafe(|| {
        let json = apply(&base.json, &base.case, specs, &v.values)?;
        let (case, result) = run_variant(runner, json, opts)?;
        Ok(RowData { metrics: metrics::values(&case, &result), ratings: evaluate(&case, &result) })
    }))
    .unwrap_or_else(|payload| {
        Err(format!("internal error: the engine panicked: {}", panic_text(payload.as_ref())))
    })
    .map_err(|e: String| one_line(&e));
    Row { variant: v.index, values: v.values.clone(), outcome }
}

/// Runs `variants` of `base` and returns one row per variant, in the order given.
///
/// `progress(done, total)` is called after each variant finishes (from worker threads).
pub fn run_variants(
    base: &BaseCase,
    specs: &[VarySpec],
    variants: &[Variant],
    opts: &SweepOptions,
    progress: &(dyn Fn(usize, usize) + Sync),
) -> Result<Vec<Row>, StudyError> {
    let total = variants.len();
    let done = AtomicUsize::new(0);
    let threads = opts.threads.unwrap_or_else(rayon::current_num_threads).max(1);
    let runner = Runner::new(2 * threads + 2);
    let work = || -> Vec<Row> {
        variants
            .par_iter()
            .map(|v| {
                let r = row(&runner, base, specs, v, opts);
                progress(done.fetch_add(1, Ordering::Relaxed) + 1, total);
                r
            })
            .collect()
    };
    match opts.threads {
        None => Ok(work()),
        Some(n) => {
            let pool =
                rayon::ThreadPoolBuilder::new().num_threads(n.max(1)).build().map_err(|e| {
                    StudyError::Spec {
                        option: "--jobs".into(),
                        text: n.to_string(),
                        message: format!("cannot start the worker threads: {e}"),
                    }
                })?;
            Ok(pool.install(work))
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shards_deal_round_robin() {
        let shards: Vec<usize> = (0..7).map(|k| shard_of(k, 3)).collect();
        assert_eq!(shards, [1, 2, 3, 1, 2, 3, 1]);
        assert_eq!(shard_of(5, 0), 1);
    }

    #[test]
    fn one_line_joins_lines() {
        assert_eq!(
            one_line("invalid case \"x\"\n  a: b\n  c: d"),
            "invalid case \"x\"; a: b; c: d"
        );
    }
}
