//! CSV tables and the JSON summary of a run.
//!
//! Column names carry their unit (`time_s`, `coil_current_A`); numbers are written with
//! Rust's shortest round-trip representation so that a parsed value equals the computed one.

use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};

use ringpulse_engine::RunResult;
use serde_json::{json, Value};

use crate::{io_err, OutputError, RunMeta, SAFETY_LINE};

/// Header of timeseries.csv.
pub const TIMESERIES_HEADER: &str =
    "time_s,coil_current_A,capacitor_voltage_V,workpiece_current_A,\
radial_force_N,axial_force_N,peak_pressure_Pa";

/// Header of rings.csv.
pub const RINGS_HEADER: &str =
    "time_s,ring,r_m,z_m,current_A,current_density_A_per_m2,pressure_Pa,axial_force_N";

/// Extra columns of rings.csv when the workpiece moves (r_m and z_m are then the current
/// position).
pub const RINGS_MOTION_COLUMNS: &str = ",velocity_m_per_s,hoop_strain,temperature_K";

fn create(path: &Path) -> Result<BufWriter<File>, OutputError> {
    File::create(path).map(BufWriter::new).map_err(io_err(path))
}

/// Writes timeseries.csv: one row per output sample.
pub fn write_timeseries(path: &Path, r: &RunResult) -> Result<PathBuf, OutputError> {
    let mut w = create(path)?;
    let t = &r.traces;
    let mut body = String::with_capacity(t.time.len() * 120);
    body.push_str(TIMESERIES_HEADER);
    body.push('\n');
    for k in 0..t.time.len() {
        let row = [
            t.time[k],
            t.coil_current[k],
            t.capacitor_voltage[k],
            t.workpiece_current[k],
            t.radial_force[k],
            t.axial_force[k],
            t.peak_pressure[k],
        ];
        push_row(&mut body, &row);
    }
    w.write_all(body.as_bytes()).map_err(io_err(path))?;
    w.flush().map_err(io_err(path))?;
    Ok(path.to_path_buf())
}

/// Writes rings.csv in long format: one row per ring sample time and ring.
pub fn write_rings(path: &Path, r: &RunResult) -> Result<PathBuf, OutputError> {
    let mut w = create(path)?;
    let g = &r.rings;
    let mut body = String::new();
    body.push_str(RINGS_HEADER);
    body.push('\n');
    for (s, &t) in g.time.iter().enumerate() {
        for ring in 0..g.z.len() {
            let current = g.current[s][ring];
            let density = if g.area[ring] > 0.0 { current / g.area[ring] } else { f64::NAN };
            body.push_str(&num(t));
            body.push(',');
            body.push_str(&ring.to_string());
            body.push(',');
            push_row(
                &mut body,
                &[
                    g.radius[ring],
                    g.z[ring],
                    current,
                    density,
                    g.pressure[s][ring],
                    g.axial_force[s][ring],
                ],
            );
        }
        if body.len() > 1 << 20 {
            w.write_all(body.as_bytes()).map_err(io_err(path))?;
            body.clear();
        }
    }
    w.write_all(body.as_bytes()).map_err(io_err(path))?;
    w.flush().map_err(io_err(path))?;
    Ok(path.to_path_buf())
}

fn push_row(out: &mut String, values: &[f64]) {
    for (i, v) in values.iter().enumerate() {
        if i > 0 {
            out.push(',');
        }
        out.push_str(&num(*v));
    }
    out.push('\n');
}

/// A number for CSV: shortest round-trip form; non-finite values as `nan`, `inf`, `-inf`.
pub fn num(v: f64) -> String {
    if v.is_nan() {
        "nan".into()
    } else if v.is_infinite() {
        if v > 0.0 {
            "inf".into()
        } else {
            "-inf".into()
        }
    } else {
        format!("{v:e}")
    }
}

/// Replaces non-finite numbers (which JSON cannot hold) by null, recursively.
pub fn sanitize(v: Value) -> Value {
    match v {
        Value::Number(n) => {
            if n.as_f64().is_some_and(|x| !x.is_finite()) {
                Value::Null
            } else {
                Value::Number(n)
            }
        }
        Value::Array(a) => Value::Array(a.into_iter().map(sanitize).collect()),
        Value::Object(o) => Value::Object(o.into_iter().map(|(k, v)| (k, sanitize(v))).collect()),
        other => other,
    }
}

/// The JSON document of summary.json.
pub fn summary_json(meta: &RunMeta, r: &RunResult) -> Result<Value, String> {
    let enc = |v: Result<Value, serde_json::Error>| v.map_err(|e| e.to_string());
    Ok(sanitize(json!({
        "ringpulse_version": meta.version,
        "case": meta.case_path,
        "case_sha256": meta.case_sha256,
        "description": meta.description,
        "summary": enc(serde_json::to_value(&r.summary))?,
        "mesh": enc(serde_json::to_value(&r.mesh))?,
        "solver": enc(serde_json::to_value(&r.stats))?,
        "warnings": r.warnings,
        "safety": SAFETY_LINE,
    })))
}

/// Writes summary.json (pretty-printed).
pub fn write_summary(path: &Path, meta: &RunMeta, r: &RunResult) -> Result<PathBuf, OutputError> {
    let doc = summary_json(meta, r)
        .map_err(|message| OutputError::Encode { path: path.to_path_buf(), message })?;
    let text = serde_json::to_string_pretty(&doc)
        .map_err(|e| OutputError::Encode { path: path.to_path_buf(), message: e.to_string() })?;
    std::fs::write(path, text + "\n").map_err(io_err(path))?;
    Ok(path.to_path_buf())
}
