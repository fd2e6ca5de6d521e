//! Files and text of the studies: ratings.json and the ratings table, sweep.csv with its
//! sidecar sweep.json, shard parts and their merge, sweep plots, size.json and the sizing text.
//!
//! sweep.csv opens with two comment lines that trace it (`# ringpulse VERSION` and
//! `# case_sha256 HASH`, the same in every shard), then holds results only (no timing, no host
//! names), one row per variant in variant order, numbers in Rust's shortest round-trip form
//! and counts as integers, so that the rows a shard writes are byte for byte the rows a single
//! run writes, and merging the parts of a sharded sweep gives the single run's file. The rest
//! of where a result came from (case path, the `--vary` specs, shards, wall time) goes into the
//! sidecar JSON beside it.

use std::collections::BTreeMap;
use std::fs;
use std::path::{Path, PathBuf};

use plotters::prelude::*;
use plotters::style::FontStyle;
use ringpulse_study::metrics::METRICS;
use ringpulse_study::size::{Outcome, Sizing};
use ringpulse_study::{RatingsReport, Row, VarySpec};
use serde_json::{json, Value};

use crate::plots::{range, register_fonts, SIZE};
use crate::tables::{num, sanitize};
use crate::{eng, io_err, OutputError, RunMeta, SAFETY_LINE};

/// Name of a merged or single-run sweep table.
pub const SWEEP_CSV: &str = "sweep.csv";
/// Name of its sidecar.
pub const SWEEP_JSON: &str = "sweep.json";

/// The table unit of a check's SI unit.
fn display_unit(unit: &str) -> &str {
    match unit {
        "A2s" => "A²s",
        other => other,
    }
}

/// A check's value or limit for the table.
fn show(value: f64, unit: &str) -> String {
    match unit {
        "%" => format!("{value:.1} %"),
        "K" => format!("{value:.1} K"),
        u => eng(value, display_unit(u)),
    }
}

/// The ratings table printed by `check` and `run`.
pub fn format_ratings_table(report: &RatingsReport) -> String {
    let mut out = String::from("ratings\n");
    if report.is_empty() {
        out.push_str("  (the case gives no ratings)\n");
        return out;
    }
    out.push_str(&format!(
        "  {:<32} {:>12} {:>12} {:>10}  status\n",
        "quantity", "value", "limit", "margin"
    ));
    for c in &report.checks {
        let status = if c.passes() { "PASS" } else { "FAIL" };
        out.push_str(&format!(
            "  {:<32} {:>12} {:>12} {:>8.1} %  {status}",
            c.label,
            show(c.value, c.unit),
            show(c.limit, c.unit),
            c.margin_percent()
        ));
        if let Some(b) = &c.basis {
            out.push_str(&format!("  ({b})"));
        }
        out.push('\n');
    }
    let failed: Vec<&str> =
        report.checks.iter().filter(|c| !c.passes()).map(|c| c.quantity).collect();
    if failed.is_empty() {
        out.push_str(&format!("  all {} ratings pass\n", report.checks.len()));
    } else {
        out.push_str(&format!(
            "  {} of {} ratings fail: {}\n",
            failed.len(),
            report.checks.len(),
            failed.join(", ")
        ));
    }
    out
}

/// The checks as JSON: value and limit in each entry's `unit`.
pub fn ratings_value(report: &RatingsReport) -> Value {
    let checks: Vec<Value> = report
        .checks
        .iter()
        .map(|c| {
            json!({
                "quantity": c.quantity,
                "label": c.label,
                "unit": c.unit,
                "value": c.value,
                "limit": c.limit,
                "margin_percent": c.margin_percent(),
                "status": if c.passes() { "PASS" } else { "FAIL" },
                "basis": c.basis,
            })
        })
        .collect();
    let failed: Vec<&str> =
        report.checks.iter().filter(|c| !c.passes()).map(|c| c.quantity).collect();
    json!({ "all_pass": report.all_pass(), "failed": failed, "checks": checks })
}

fn meta_value(meta: &RunMeta) -> Value {
    json!({
        "ringpulse_version": meta.version,
        "case": meta.case_path,
        "case_sha256": meta.case_sha256,
        "description": meta.description,
    })
}

fn write_json(path: &Path, doc: Value) -> Result<PathBuf, OutputError> {
    let text = serde_json::to_string_pretty(&sanitize(doc))
        .map_err(|e| OutputError::Encode { path: path.to_path_buf(), message: e.to_string() })?;
    fs::write(path, text + "\n").map_err(io_err(path))?;
    Ok(path.to_path_buf())
}

/// The document of ratings.json.
pub fn ratings_json(meta: &RunMeta, resolution: &str, report: &RatingsReport) -> Value {
    let mut doc = meta_value(meta);
    if let (Value::Object(d), Value::Object(r)) = (&mut doc, ratings_value(report)) {
        d.insert("resolution".into(), json!(resolution));
        d.extend(r);
        d.insert("safety".into(), json!(SAFETY_LINE));
    }
    doc
}

/// Writes ratings.json into `dir` (an existing directory; see [`crate::write_atomically`]).
pub fn write_ratings(
    dir: &Path,
    meta: &RunMeta,
    resolution: &str,
    report: &RatingsReport,
) -> Result<PathBuf, OutputError> {
    write_json(&dir.join("ratings.json"), ratings_json(meta, resolution, report))
}

/// How a sweep was asked for and run: the content of its sidecar JSON.
#[derive(Debug, Clone, PartialEq)]
pub struct SweepMeta {
    /// Version and case.
    pub run: RunMeta,
    /// The `--vary` texts, in order.
    pub vary: Vec<String>,
    /// `"factorial"` or `"latin_hypercube"`.
    pub design: String,
    /// Latin-hypercube points and seed.
    pub lhs: Option<(usize, u64)>,
    /// True when every variant ran in coarse resolution.
    pub coarse: bool,
    /// True when every variant ran with the workpiece held fixed (`--fixed`).
    pub fixed: bool,
    /// Variants of the whole sweep.
    pub variants_total: usize,
    /// This file's shard (1-based) and the number of shards; `None` for a whole sweep.
    pub shard: Option<(usize, usize)>,
    /// Worker threads.
    pub threads: usize,
    /// Wall time of the runs, in seconds.
    pub wall_time: f64,
}

/// The `resolution` entry of ratings.json, size.json and sweep.json: `"case"` (the case's own
/// discretization) or `"coarse"`, with `", no motion"` when `--fixed` held the workpiece.
pub fn resolution_label(coarse: bool, fixed: bool) -> &'static str {
    match (coarse, fixed) {
        (false, false) => "case",
        (true, false) => "coarse",
        (false, true) => "case, no motion",
        (true, true) => "coarse, no motion",
    }
}

fn sweep_meta_value(meta: &SweepMeta, rows: &[Row]) -> Value {
    let failed = rows.iter().filter(|r| r.outcome.is_err()).count();
    let ratings_failed =
        rows.iter().filter(|r| r.outcome.as_ref().is_ok_and(|d| !d.ratings.all_pass())).count();
    let mut doc = meta_value(&meta.run);
    if let Value::Object(d) = &mut doc {
        d.insert("vary".into(), json!(meta.vary));
        d.insert("design".into(), json!(meta.design));
        if let Some((points, seed)) = meta.lhs {
            d.insert("lhs_points".into(), json!(points));
            d.insert("seed".into(), json!(seed));
        }
        d.insert("resolution".into(), json!(resolution_label(meta.coarse, meta.fixed)));
        d.insert("variants_total".into(), json!(meta.variants_total));
        d.insert("shard".into(), json!(meta.shard.map(|s| s.0)));
        d.insert("shards".into(), json!(meta.shard.map_or(1, |s| s.1)));
        d.insert("rows".into(), json!(rows.len()));
        d.insert("failed_variants".into(), json!(failed));
        d.insert("ratings_failed_variants".into(), json!(ratings_failed));
        d.insert("threads".into(), json!(meta.threads));
        d.insert("wall_time_s".into(), json!(meta.wall_time));
        d.insert("safety".into(), json!(SAFETY_LINE));
    }
    doc
}

/// The header of sweep.csv for these specs.
pub fn sweep_header(specs: &[VarySpec]) -> Vec<String> {
    let mut h = vec!["variant".to_string()];
    h.extend(specs.iter().map(VarySpec::column));
    h.extend(METRICS.iter().map(|m| m.name.to_string()));
    h.extend(
        ["ratings", "first_failing_rating", "min_rating_margin_percent", "error"].map(String::from),
    );
    h
}

/// A cell of a whole-number column: an integer when the value is one, else the number form.
fn count_cell(v: f64) -> String {
    if v.is_finite() && v == v.round() && v.abs() < 9.0e15 {
        format!("{}", v as i64)
    } else {
        num(v)
    }
}

/// One row's cells.
fn row_cells(specs: &[VarySpec], row: &Row) -> Vec<String> {
    let mut cells = vec![row.variant.to_string()];
    for (s, v) in specs.iter().zip(&row.values) {
        cells.push(if s.is_count() { count_cell(v.round()) } else { num(*v) });
    }
    match &row.outcome {
        Ok(d) => {
            cells.extend(d.metrics.iter().zip(METRICS).map(|(value, metric)| match value {
                None => String::new(),
                Some(v) if metric.count => count_cell(*v),
                Some(v) => num(*v),
            }));
            if d.ratings.is_empty() {
                cells.extend([String::new(), String::new(), String::new()]);
            } else {
                cells.push(if d.ratings.all_pass() { "PASS" } else { "FAIL" }.into());
                cells.push(d.ratings.first_failure().map_or(String::new(), |c| c.quantity.into()));
                cells.push(d.ratings.min_margin_percent().map_or(String::new(), num));
            }
            cells.push(String::new());
        }
        Err(e) => {
            cells.extend(std::iter::repeat_n(String::new(), METRICS.len() + 3));
            cells.push(e.clone());
        }
    }
    cells
}

fn csv_text(header: &[String], rows: &[Vec<String>]) -> Result<String, String> {
    let mut w =
        csv::WriterBuilder::new().terminator(csv::Terminator::Any(b'\n')).from_writer(Vec::new());
    w.write_record(header).map_err(|e| e.to_string())?;
    for r in rows {
        w.write_record(r).map_err(|e| e.to_string())?;
    }
    let bytes = w.into_inner().map_err(|e| e.to_string())?;
    String::from_utf8(bytes).map_err(|e| e.to_string())
}

/// The comment lines that open sweep.csv and every part of it: the ringpulse version and the
/// SHA-256 of the base case file, each on its own line.
pub fn provenance_lines(version: &str, case_sha256: &str) -> String {
    format!("# ringpulse {version}\n# case_sha256 {case_sha256}\n")
}

/// The ringpulse version and case SHA-256 of the comment lines that open a sweep table, and
/// the rest of the text (header and rows).
pub fn split_provenance(text: &str) -> Result<(&str, &str, &str), String> {
    fn value<'a>(line: &'a str, prefix: &str) -> Option<&'a str> {
        line.strip_prefix(prefix).filter(|v| !v.is_empty() && !v.contains(' '))
    }
    let expected = "two comment lines \"# ringpulse VERSION\" and \"# case_sha256 HASH\" before \
                    the header";
    let mut lines = text.splitn(3, '\n');
    let (Some(first), Some(second), Some(rest)) = (lines.next(), lines.next(), lines.next()) else {
        return Err(format!("expected {expected}"));
    };
    let version = value(first, "# ringpulse ")
        .ok_or_else(|| format!("expected {expected}, got {first:?}"))?;
    let sha = value(second, "# case_sha256 ")
        .ok_or_else(|| format!("expected {expected}, got {second:?} on the second line"))?;
    Ok((version, sha, rest))
}

/// The text of sweep.csv (or of a part) for these rows: the provenance lines of `meta`, the
/// header and one row per variant.
pub fn sweep_csv(meta: &RunMeta, specs: &[VarySpec], rows: &[Row]) -> Result<String, String> {
    let cells: Vec<Vec<String>> = rows.iter().map(|r| row_cells(specs, r)).collect();
    let table = csv_text(&sweep_header(specs), &cells)?;
    Ok(provenance_lines(&meta.version, &meta.case_sha256) + &table)
}

/// File stem of a sweep table: `sweep`, or `sweep.part-I-of-N` for a shard.
pub fn sweep_stem(shard: Option<(usize, usize)>) -> String {
    match shard {
        None => "sweep".into(),
        Some((i, n)) => format!("sweep.part-{i}-of-{n}"),
    }
}

/// Writes a sweep's table and sidecar into `dir` (an existing directory, see
/// [`crate::write_atomically`]), and for a whole sweep the plots of `plot_metrics` against
/// every varied column.
pub fn write_sweep(
    dir: &Path,
    meta: &SweepMeta,
    specs: &[VarySpec],
    rows: &[Row],
    plot_metrics: &[String],
) -> Result<Vec<PathBuf>, OutputError> {
    let stem = sweep_stem(meta.shard);
    let csv_path = dir.join(format!("{stem}.csv"));
    let text = sweep_csv(&meta.run, specs, rows)
        .map_err(|message| OutputError::Encode { path: csv_path.clone(), message })?;
    fs::write(&csv_path, &text).map_err(io_err(&csv_path))?;
    let mut files = vec![csv_path];
    files.push(write_json(&dir.join(format!("{stem}.json")), sweep_meta_value(meta, rows))?);
    if meta.shard.is_none() && !plot_metrics.is_empty() {
        let table = Table::parse(&text)
            .map_err(|message| OutputError::Encode { path: dir.join(SWEEP_CSV), message })?;
        let varied: Vec<String> = specs.iter().map(VarySpec::column).collect();
        files.extend(draw_sweep_plots(dir, &table, &varied, plot_metrics)?);
    }
    Ok(files)
}

/// A CSV table as text cells.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Table {
    /// Column names.
    pub header: Vec<String>,
    /// Rows of cells.
    pub rows: Vec<Vec<String>>,
}

impl Table {
    /// Parses CSV text (header first; lines that start with `#` are comments).
    pub fn parse(text: &str) -> Result<Table, String> {
        let mut r = csv::ReaderBuilder::new()
            .has_headers(true)
            .comment(Some(b'#'))
            .from_reader(text.as_bytes());
        let header: Vec<String> =
            r.headers().map_err(|e| e.to_string())?.iter().map(String::from).collect();
        let mut rows = Vec::new();
        for rec in r.records() {
            rows.push(rec.map_err(|e| e.to_string())?.iter().map(String::from).collect());
        }
        Ok(Table { header, rows })
    }

    /// The numbers of a column (`None` for empty or unparsable cells).
    pub fn column(&self, name: &str) -> Option<Vec<Option<f64>>> {
        let k = self.header.iter().position(|h| h == name)?;
        Some(self.rows.iter().map(|r| r.get(k).and_then(|c| c.parse::<f64>().ok())).collect())
    }
}

/// The display unit of a column from its suffix: `peak_pressure_Pa` → `Pa`.
fn column_unit(column: &str) -> &'static str {
    const SUFFIXES: [(&str, &str); 25] = [
        ("_A_per_s", "A/s"),
        ("_m_per_s", "m/s"),
        ("_A2s", "A²s"),
        ("_percent", "%"),
        ("_Ohm_m", "Ω m"),
        ("_kg_per_m3", "kg/m³"),
        ("_J_per_kg_K", "J/(kg K)"),
        ("_per_K", "1/K"),
        ("_Ohm", "Ω"),
        ("_Hz", "Hz"),
        ("_Pa", "Pa"),
        ("_A", "A"),
        ("_s", "s"),
        ("_C", "C"),
        ("_N", "N"),
        ("_K", "K"),
        ("_J", "J"),
        ("_H", "H"),
        ("_V", "V"),
        ("_F", "F"),
        ("_m", "m"),
        ("_kg", "kg"),
        ("_W", "W"),
        ("_T", "T"),
        ("_rad", "rad"),
    ];
    SUFFIXES.iter().find(|(s, _)| column.ends_with(s)).map_or("", |(_, u)| u)
}

/// A tick label: engineering prefix for dimensional columns, plain otherwise.
fn tick(v: f64, unit: &str) -> String {
    match unit {
        "" | "%" => {
            let s = format!("{v:.4}");
            let s = s.trim_end_matches('0').trim_end_matches('.').to_string();
            if unit.is_empty() {
                s
            } else {
                format!("{s} %")
            }
        }
        u => eng(v, u),
    }
}

const PALETTE: [RGBColor; 8] = [
    RGBColor(31, 119, 180),
    RGBColor(214, 39, 40),
    RGBColor(44, 160, 44),
    RGBColor(255, 127, 14),
    RGBColor(148, 103, 189),
    RGBColor(140, 86, 75),
    RGBColor(227, 119, 194),
    RGBColor(23, 190, 207),
];

/// One group of points of a sweep plot.
struct Group {
    label: String,
    points: Vec<(f64, f64)>,
}

fn draw_scatter<DB: DrawingBackend>(
    root: DrawingArea<DB, plotters::coord::Shift>,
    title: &str,
    (x_name, y_name): (&str, &str),
    groups: &[Group],
    lines: bool,
) -> Result<(), String> {
    root.fill(&WHITE).map_err(|e| e.to_string())?;
    let xr = range(groups.iter().flat_map(|g| g.points.iter().map(|p| p.0)));
    let yr = range(groups.iter().flat_map(|g| g.points.iter().map(|p| p.1)));
    let (xu, yu) = (column_unit(x_name), column_unit(y_name));
    let mut chart = ChartBuilder::on(&root)
        .caption(title, ("sans-serif", 26, FontStyle::Bold))
        .margin(16)
        .x_label_area_size(56)
        .y_label_area_size(110)
        .build_cartesian_2d(xr.0..xr.1, yr.0..yr.1)
        .map_err(|e| e.to_string())?;
    let xf = |v: &f64| tick(*v, xu);
    let yf = |v: &f64| tick(*v, yu);
    chart
        .configure_mesh()
        .x_desc(x_name)
        .y_desc(y_name)
        .x_label_formatter(&xf)
        .y_label_formatter(&yf)
        .label_style(("sans-serif", 18))
        .axis_desc_style(("sans-serif", 20))
        .draw()
        .map_err(|e| e.to_string())?;
    for (k, g) in groups.iter().enumerate() {
        let color = PALETTE[k % PALETTE.len()];
        if lines {
            chart
                .draw_series(LineSeries::new(g.points.clone(), color.stroke_width(2)))
                .map_err(|e| e.to_string())?;
        }
        chart
            .draw_series(g.points.iter().map(|&p| Circle::new(p, 5, color.filled())))
            .map_err(|e| e.to_string())?
            .label(&g.label)
            .legend(move |(x, y)| Circle::new((x + 12, y), 5, color.filled()));
    }
    if groups.len() > 1 {
        chart
            .configure_series_labels()
            .label_font(("sans-serif", 16))
            .background_style(WHITE.mix(0.85))
            .border_style(BLACK)
            .draw()
            .map_err(|e| e.to_string())?;
    }
    root.present().map_err(|e| e.to_string())
}

/// A file-name-safe form of a column name.
fn file_part(name: &str) -> String {
    name.chars().map(|c| if c.is_ascii_alphanumeric() || c == '_' { c } else { '_' }).collect()
}

/// Draws each metric against each varied column into `dir` as
/// `sweep_<metric>_vs_<column>.png` and `.svg`. Points that share the values of the other
/// varied columns are joined by a line when there are at most 8 such groups; otherwise all
/// points are drawn as one scatter. Metrics without any value (no workpiece) are skipped.
pub fn draw_sweep_plots(
    dir: &Path,
    table: &Table,
    varied: &[String],
    plot_metrics: &[String],
) -> Result<Vec<PathBuf>, OutputError> {
    register_fonts();
    let mut files = Vec::new();
    let columns: Vec<Vec<Option<f64>>> =
        varied.iter().map(|v| table.column(v).unwrap_or_default()).collect();
    for metric in plot_metrics {
        let Some(y) = table.column(metric) else { continue };
        if y.iter().all(Option::is_none) {
            continue;
        }
        for (d, x_name) in varied.iter().enumerate() {
            let others: Vec<usize> = (0..varied.len()).filter(|&o| o != d).collect();
            let mut groups: BTreeMap<Vec<u64>, Group> = BTreeMap::new();
            for (k, yk) in y.iter().enumerate() {
                let (Some(xk), Some(yk)) = (columns[d].get(k).copied().flatten(), *yk) else {
                    continue;
                };
                let key: Vec<u64> = others
                    .iter()
                    .map(|&o| columns[o].get(k).copied().flatten().unwrap_or(f64::NAN).to_bits())
                    .collect();
                let label = others
                    .iter()
                    .map(|&o| {
                        let v = columns[o].get(k).copied().flatten().unwrap_or(f64::NAN);
                        format!("{} = {}", varied[o], tick(v, column_unit(&varied[o])))
                    })
                    .collect::<Vec<_>>()
                    .join(", ");
                groups
                    .entry(key)
                    .or_insert_with(|| Group { label, points: Vec::new() })
                    .points
                    .push((xk, yk));
            }
            let mut groups: Vec<Group> = groups.into_values().collect();
            let lines = groups.len() <= PALETTE.len();
            if lines {
                for g in &mut groups {
                    g.points.sort_by(|a, b| a.0.total_cmp(&b.0));
                }
            } else {
                let points = groups.into_iter().flat_map(|g| g.points).collect();
                groups = vec![Group { label: "variants".into(), points }];
            }
            let stem = format!("sweep_{}_vs_{}", file_part(metric), file_part(x_name));
            let title = format!("{metric} against {x_name}");
            let png = dir.join(format!("{stem}.png"));
            let svg = dir.join(format!("{stem}.svg"));
            draw_scatter(
                BitMapBackend::new(&png, SIZE).into_drawing_area(),
                &title,
                (x_name, metric),
                &groups,
                lines,
            )
            .map_err(|message| OutputError::Plot { path: png.clone(), message })?;
            draw_scatter(
                SVGBackend::new(&svg, SIZE).into_drawing_area(),
                &title,
                (x_name, metric),
                &groups,
                lines,
            )
            .map_err(|message| OutputError::Plot { path: svg.clone(), message })?;
            files.push(png);
            files.push(svg);
        }
    }
    Ok(files)
}

/// Errors of `merge`.
#[derive(Debug, thiserror::Error)]
pub enum MergeError {
    /// A file could not be read.
    ///
    /// The message already holds the operating system's text, so `cause` is not also
    /// reported as the error's source (an error chain would print it twice).
    #[error("cannot read \"{path}\": {cause}")]
    Io {
        /// The file.
        path: PathBuf,
        /// The underlying error.
        cause: std::io::Error,
    },
    /// The inputs are not parts of one sweep, or are incomplete.
    #[error("{0}")]
    Invalid(String),
}

/// The merged table and sidecar of a sharded sweep.
#[derive(Debug, Clone, PartialEq)]
pub struct Merged {
    /// The text of sweep.csv, equal to a single run's.
    pub csv: String,
    /// The sidecar of the merged sweep.
    pub sidecar: Value,
    /// The varied columns (for plots).
    pub varied: Vec<String>,
}

/// The part CSV files named by `inputs`: files as given, directories searched for
/// `sweep.part-*-of-*.csv`.
fn part_files(inputs: &[PathBuf]) -> Result<Vec<PathBuf>, MergeError> {
    let mut out = Vec::new();
    for input in inputs {
        if input.is_dir() {
            let entries = fs::read_dir(input)
                .map_err(|cause| MergeError::Io { path: input.clone(), cause })?;
            let mut found: Vec<PathBuf> = entries
                .filter_map(Result::ok)
                .map(|e| e.path())
                .filter(|p| {
                    p.file_name().and_then(|n| n.to_str()).is_some_and(|n| {
                        n.starts_with("sweep.part-") && n.ends_with(".csv") && n.contains("-of-")
                    })
                })
                .collect();
            if found.is_empty() {
                return Err(MergeError::Invalid(format!(
                    "\"{}\" holds no sweep.part-I-of-N.csv files",
                    input.display()
                )));
            }
            found.sort();
            out.extend(found);
        } else {
            out.push(input.clone());
        }
    }
    if out.is_empty() {
        return Err(MergeError::Invalid("no part files given".into()));
    }
    Ok(out)
}

/// A compact list of indices for messages: at most 20, then the count.
fn index_list(v: &[usize]) -> String {
    let shown: Vec<String> = v.iter().take(20).map(usize::to_string).collect();
    if v.len() > 20 {
        format!("{} ... ({} in all)", shown.join(", "), v.len())
    } else {
        shown.join(", ")
    }
}

/// Joins the parts of a sharded sweep into the sweep.csv a single run writes.
///
/// Each part's sidecar (the `.json` beside its `.csv`) must describe the same sweep: the
/// same ringpulse version, case SHA-256, `--vary` specs, design, resolution, variant count and
/// number of shards; and each part's comment lines (version and case SHA-256) must agree with
/// its sidecar. The merged table opens with the same comment lines. The headers must be equal, every shard must be given once, every row
/// must belong to its shard, and every variant must be present; missing variants are named.
pub fn merge_parts(inputs: &[PathBuf]) -> Result<Merged, MergeError> {
    let files = part_files(inputs)?;
    let same_keys =
        ["ringpulse_version", "case_sha256", "vary", "design", "lhs_points", "seed", "resolution"];
    let mut first: Option<(PathBuf, Value, Vec<String>)> = None;
    let mut shards_seen: BTreeMap<usize, PathBuf> = BTreeMap::new();
    let mut rows: BTreeMap<usize, Vec<String>> = BTreeMap::new();
    let mut parts = Vec::new();
    let invalid = |m: String| MergeError::Invalid(m);
    for csv_path in &files {
        let json_path = csv_path.with_extension("json");
        let read = |p: &Path| {
            fs::read_to_string(p).map_err(|cause| MergeError::Io { path: p.to_path_buf(), cause })
        };
        let text = read(csv_path)?;
        let sidecar: Value = serde_json::from_str(&read(&json_path)?).map_err(|e| {
            invalid(format!("\"{}\" is not a sweep sidecar: {e}", json_path.display()))
        })?;
        let (Some(shard), Some(shards), Some(total)) = (
            sidecar["shard"].as_u64(),
            sidecar["shards"].as_u64(),
            sidecar["variants_total"].as_u64(),
        ) else {
            return Err(invalid(format!(
                "\"{}\" is not the sidecar of a shard part (no shard, shards, variants_total)",
                json_path.display()
            )));
        };
        let (shard, shards, total) = (shard as usize, shards as usize, total as usize);
        let (version, sha, body) = split_provenance(&text)
            .map_err(|e| invalid(format!("\"{}\" is not a sweep part: {e}", csv_path.display())))?;
        // The comment lines trace the CSV on its own; they must agree with the sidecar, whose
        // keys are compared across the parts below.
        for (key, in_csv) in [("ringpulse_version", version), ("case_sha256", sha)] {
            if sidecar[key].as_str() != Some(in_csv) {
                return Err(invalid(format!(
                    "\"{}\" and its sidecar \"{}\" disagree: {key} is {in_csv} in the CSV and {} \
                     in the sidecar",
                    csv_path.display(),
                    json_path.display(),
                    sidecar[key]
                )));
            }
        }
        let table = Table::parse(body)
            .map_err(|e| invalid(format!("\"{}\": unreadable CSV: {e}", csv_path.display())))?;
        match &first {
            None => first = Some((csv_path.clone(), sidecar.clone(), table.header.clone())),
            Some((p0, s0, h0)) => {
                for key in same_keys.iter().copied().chain(["shards", "variants_total"]) {
                    if s0[key] != sidecar[key] {
                        return Err(invalid(format!(
                            "\"{}\" and \"{}\" are parts of different sweeps: {key} is {} and {}",
                            p0.display(),
                            csv_path.display(),
                            s0[key],
                            sidecar[key]
                        )));
                    }
                }
                if *h0 != table.header {
                    return Err(invalid(format!(
                        "\"{}\" and \"{}\" have different headers",
                        p0.display(),
                        csv_path.display()
                    )));
                }
            }
        }
        if let Some(other) = shards_seen.insert(shard, csv_path.clone()) {
            return Err(invalid(format!(
                "shard {shard} of {shards} is given twice: \"{}\" and \"{}\"",
                other.display(),
                csv_path.display()
            )));
        }
        for r in table.rows {
            let Some(index) = r.first().and_then(|c| c.parse::<usize>().ok()) else {
                return Err(invalid(format!(
                    "\"{}\": a row without a variant index",
                    csv_path.display()
                )));
            };
            if index >= total || ringpulse_study::shard_of(index, shards) != shard {
                return Err(invalid(format!(
                    "\"{}\": variant {index} does not belong to shard {shard} of {shards}",
                    csv_path.display()
                )));
            }
            if rows.insert(index, r).is_some() {
                return Err(invalid(format!(
                    "\"{}\": variant {index} appears twice",
                    csv_path.display()
                )));
            }
        }
        parts.push(json!({
            "file": csv_path.file_name().map(|n| n.to_string_lossy().into_owned()),
            "shard": shard,
            "threads": sidecar["threads"],
            "wall_time_s": sidecar["wall_time_s"],
        }));
    }
    let Some((_, sidecar0, header)) = first else {
        return Err(invalid("no part files given".into()));
    };
    let shards = sidecar0["shards"].as_u64().unwrap_or(1) as usize;
    let total = sidecar0["variants_total"].as_u64().unwrap_or(0) as usize;
    let missing: Vec<usize> = (0..total).filter(|k| !rows.contains_key(k)).collect();
    if !missing.is_empty() {
        let absent: Vec<String> =
            (1..=shards).filter(|s| !shards_seen.contains_key(s)).map(|s| s.to_string()).collect();
        let hint = if absent.is_empty() {
            String::new()
        } else {
            format!(" (shards not given: {})", absent.join(", "))
        };
        return Err(invalid(format!("missing variants: {}{hint}", index_list(&missing))));
    }
    let all_rows: Vec<Vec<String>> = rows.into_values().collect();
    let version = sidecar0["ringpulse_version"].as_str().unwrap_or_default();
    let sha = sidecar0["case_sha256"].as_str().unwrap_or_default();
    let csv = provenance_lines(version, sha) + &csv_text(&header, &all_rows).map_err(invalid)?;
    let error_col = header.iter().position(|h| h == "error");
    let ratings_col = header.iter().position(|h| h == "ratings");
    let failed = error_col.map_or(0, |c| all_rows.iter().filter(|r| !r[c].is_empty()).count());
    let ratings_failed =
        ratings_col.map_or(0, |c| all_rows.iter().filter(|r| r[c] == "FAIL").count());
    let mut sidecar = json!({});
    if let (Value::Object(out), Value::Object(src)) = (&mut sidecar, &sidecar0) {
        for key in ["ringpulse_version", "case", "case_sha256", "description"]
            .into_iter()
            .chain(same_keys.iter().copied().skip(2))
        {
            if let Some(v) = src.get(key) {
                out.insert(key.into(), v.clone());
            }
        }
        out.insert("variants_total".into(), json!(total));
        out.insert("shard".into(), Value::Null);
        out.insert("shards".into(), json!(shards));
        out.insert("rows".into(), json!(all_rows.len()));
        out.insert("failed_variants".into(), json!(failed));
        out.insert("ratings_failed_variants".into(), json!(ratings_failed));
        out.insert("merged_from".into(), json!(parts));
        out.insert("safety".into(), json!(SAFETY_LINE));
    }
    let metric_names: Vec<&str> = METRICS.iter().map(|m| m.name).collect();
    let varied: Vec<String> = header
        .iter()
        .skip(1)
        .take_while(|h| !metric_names.contains(&h.as_str()))
        .cloned()
        .collect();
    Ok(Merged { csv, sidecar, varied })
}

/// Writes a merged sweep (sweep.csv, sweep.json and plots) into `dir`.
pub fn write_merged(
    dir: &Path,
    merged: &Merged,
    plot_metrics: &[String],
) -> Result<Vec<PathBuf>, OutputError> {
    let csv_path = dir.join(SWEEP_CSV);
    fs::write(&csv_path, &merged.csv).map_err(io_err(&csv_path))?;
    let mut files = vec![csv_path.clone()];
    files.push(write_json(&dir.join(SWEEP_JSON), merged.sidecar.clone())?);
    if !plot_metrics.is_empty() {
        let table = Table::parse(&merged.csv)
            .map_err(|message| OutputError::Encode { path: csv_path, message })?;
        files.extend(draw_sweep_plots(dir, &table, &merged.varied, plot_metrics)?);
    }
    Ok(files)
}

fn adjusted(s: &Sizing, x: f64) -> String {
    eng(x, s.adjust.unit())
}

fn target_unit(s: &Sizing) -> &'static str {
    column_unit(s.target.target.column())
}

/// A target quantity for the terminal: with an engineering prefix and unit, or a strain in
/// percent (a bare "m" would read as metres).
fn target_text(s: &Sizing, v: f64) -> String {
    let unit = target_unit(s);
    if unit.is_empty() {
        format!("{:.3} %", v * 100.0)
    } else {
        eng(v, unit)
    }
}

/// The text printed by `size`: for each option the value found (or why none), the energy and
/// the ratings status; several options are ranked by stored energy.
pub fn format_sizing(sizings: &[Sizing]) -> String {
    let mut out = String::new();
    let Some(first) = sizings.first() else { return out };
    let t = first.target;
    out.push_str(&format!(
        "sizing: smallest {} that gives {} >= {}\n",
        first.adjust.path(),
        t.target.name(),
        target_text(first, t.value)
    ));
    out.push_str(&format!(
        "  range {} .. {}, relative tolerance {:e}\n",
        adjusted(first, first.range.0),
        adjusted(first, first.range.1),
        first.rel_tol
    ));
    let several = sizings.len() > 1;
    for (rank, s) in sizings.iter().enumerate() {
        if several {
            out.push_str(&format!(
                "option {}: capacitance {}\n",
                rank + 1,
                eng(s.capacitance, "F")
            ));
        }
        match &s.outcome {
            Outcome::Met(p) => {
                out.push_str(&format!(
                    "  {} = {}  ({} = {}, {} runs)\n",
                    s.adjust.path(),
                    adjusted(s, p.value),
                    t.target.name(),
                    target_text(s, p.metric),
                    s.evaluations.len()
                ));
                if p.below.is_none() {
                    out.push_str("  the target is met already at the lower end of the range\n");
                }
                out.push_str(&format!(
                    "  bank {} at {}, stored energy {}\n",
                    eng(p.capacitance, "F"),
                    eng(p.voltage, "V"),
                    eng(p.energy, "J")
                ));
                if p.ratings.is_empty() {
                    out.push_str("  the case gives no ratings\n");
                } else if let Some(f) = p.ratings.first_failure() {
                    let failed: Vec<&str> = p
                        .ratings
                        .checks
                        .iter()
                        .filter(|c| !c.passes())
                        .map(|c| c.quantity)
                        .collect();
                    out.push_str(&format!(
                        "  the target cannot be met within the ratings: at the smallest {} that \
                         meets it, {} fails ({} against a limit of {}); failing: {}\n",
                        s.adjust.path(),
                        f.quantity,
                        show(f.value, f.unit),
                        show(f.limit, f.unit),
                        failed.join(", ")
                    ));
                } else {
                    out.push_str(&format!(
                        "  all {} ratings pass; smallest margin {:.1} %\n",
                        p.ratings.checks.len(),
                        p.ratings.min_margin_percent().unwrap_or(f64::NAN)
                    ));
                }
                if !several && !p.ratings.is_empty() {
                    for line in format_ratings_table(&p.ratings).lines() {
                        out.push_str(&format!("  {line}\n"));
                    }
                }
            }
            Outcome::Unreachable { best_value, best_metric } => {
                out.push_str(&format!(
                    "  the target cannot be met within the range: the largest {} found is {} at \
                     {} = {}\n",
                    t.target.name(),
                    target_text(s, *best_metric),
                    s.adjust.path(),
                    adjusted(s, *best_value)
                ));
            }
        }
    }
    out
}

/// The document of size.json.
pub fn size_json(meta: &RunMeta, resolution: &str, sizings: &[Sizing]) -> Value {
    let options: Vec<Value> = sizings
        .iter()
        .map(|s| {
            let evaluations: Vec<Value> = s
                .evaluations
                .iter()
                .map(|e| json!({ "adjusted_value": e.x, "target_quantity": e.metric }))
                .collect();
            let mut o = json!({
                "capacitance_F": s.capacitance,
                "range": [s.range.0, s.range.1],
                "rel_tol": s.rel_tol,
                "runs": s.evaluations.len(),
                "evaluations": evaluations,
            });
            if let Value::Object(m) = &mut o {
                match &s.outcome {
                    Outcome::Met(p) => {
                        m.insert("outcome".into(), json!("met"));
                        m.insert("adjusted_value".into(), json!(p.value));
                        m.insert("largest_value_below_target".into(), json!(p.below));
                        m.insert("target_quantity".into(), json!(p.metric));
                        m.insert("voltage_V".into(), json!(p.voltage));
                        m.insert("energy_J".into(), json!(p.energy));
                        m.insert("ratings".into(), ratings_value(&p.ratings));
                    }
                    Outcome::Unreachable { best_value, best_metric } => {
                        m.insert("outcome".into(), json!("unreachable"));
                        m.insert("best_adjusted_value".into(), json!(best_value));
                        m.insert("best_target_quantity".into(), json!(best_metric));
                    }
                }
            }
            o
        })
        .collect();
    let mut doc = meta_value(meta);
    if let (Value::Object(d), Some(s)) = (&mut doc, sizings.first()) {
        d.insert("resolution".into(), json!(resolution));
        d.insert(
            "target".into(),
            json!({
                "quantity": s.target.target.name(),
                "column": s.target.target.column(),
                "value": s.target.value,
                "unit": target_unit(s),
            }),
        );
        d.insert("adjust".into(), json!({ "path": s.adjust.path(), "unit": s.adjust.unit() }));
        d.insert(
            "note".into(),
            json!(
                "adjusted_value is in the adjust unit, target_quantity in the target unit; \
                   options are ranked by stored energy"
            ),
        );
        d.insert("options".into(), json!(options));
        d.insert("safety".into(), json!(SAFETY_LINE));
    }
    doc
}

/// Writes size.json into `dir` (an existing directory; see [`crate::write_atomically`]).
pub fn write_size(
    dir: &Path,
    meta: &RunMeta,
    resolution: &str,
    sizings: &[Sizing],
) -> Result<PathBuf, OutputError> {
    write_json(&dir.join("size.json"), size_json(meta, resolution, sizings))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn units_from_column_names() {
        assert_eq!(column_unit("peak_pressure_Pa"), "Pa");
        assert_eq!(column_unit("peak_di_dt_A_per_s"), "A/s");
        assert_eq!(column_unit("bank.voltage_V"), "V");
        assert_eq!(column_unit("coil.turns"), "");
        assert_eq!(column_unit("action_integral_A2s"), "A²s");
        assert_eq!(tick(6.0, ""), "6");
        assert_eq!(tick(150e6, "Pa"), "150.0 MPa");
    }

    fn meta() -> RunMeta {
        RunMeta {
            version: "9.8.7".into(),
            case_path: "case.json".into(),
            case_sha256: "ab".repeat(32),
            description: "test".into(),
        }
    }

    #[test]
    fn sweep_csv_opens_with_provenance_and_writes_counts_as_integers() {
        let specs = vec![ringpulse_study::parse_vary("coil.turns=4..5").unwrap()];
        let mut metrics: Vec<Option<f64>> = METRICS.iter().map(|_| Some(1.5e3)).collect();
        let k_fil = METRICS.iter().position(|m| m.name == "filaments").unwrap();
        let k_stop = METRICS.iter().position(|m| m.name == "rings_at_stop").unwrap();
        metrics[k_fil] = Some(42.0);
        metrics[k_stop] = Some(0.0);
        let row = Row {
            variant: 0,
            values: vec![4.0],
            outcome: Ok(ringpulse_study::RowData {
                metrics,
                ratings: ringpulse_study::RatingsReport::default(),
            }),
        };
        let text = sweep_csv(&meta(), &specs, &[row]).unwrap();
        let (version, sha, body) = split_provenance(&text).unwrap();
        assert_eq!((version, sha), ("9.8.7", "ab".repeat(32).as_str()));
        assert!(text.starts_with(&format!("# ringpulse 9.8.7\n# case_sha256 {sha}\nvariant,")));
        let table = Table::parse(&text).unwrap();
        assert_eq!(Table::parse(body).unwrap(), table, "comments are skipped");
        let cell = |name: &str| {
            let k = table.header.iter().position(|h| h == name).unwrap();
            table.rows[0][k].clone()
        };
        assert_eq!(cell("coil.turns"), "4");
        assert_eq!(cell("filaments"), "42");
        assert_eq!(cell("rings_at_stop"), "0");
        assert_eq!(cell("peak_coil_current_A"), "1.5e3");
    }

    #[test]
    fn provenance_lines_are_required() {
        assert!(split_provenance("variant,x\n0,1\n").is_err());
        assert!(split_provenance("# ringpulse 0.1.0\nvariant,x\n").is_err());
        assert!(split_provenance("# ringpulse 0.1.0\n# case_sha256 \nvariant\n").is_err());
    }

    #[test]
    fn index_lists_are_short() {
        assert_eq!(index_list(&[1, 4]), "1, 4");
        let many: Vec<usize> = (0..30).collect();
        assert!(index_list(&many).ends_with("... (30 in all)"));
    }
}
