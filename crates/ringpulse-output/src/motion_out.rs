//! Output of the workpiece motion: profile.csv and the displacement, velocity and final profile
//! plots. Written only when the run had motion (ring histories present); the per-ring histories
//! go into rings.csv (tables.rs).

use std::path::{Path, PathBuf};

use plotters::style::RGBColor;
use ringpulse_engine::RunResult;

use crate::plots::{figure, Panel, Series};
use crate::tables::num;
use crate::{io_err, OutputError};

/// Header of profile.csv.
pub const PROFILE_HEADER: &str =
    "z_m,initial_radius_m,final_radius_m,final_inner_surface_m,final_outer_surface_m,displacement_m,stop_radius_m";

/// Whether a result carries motion histories.
pub fn has_motion(r: &RunResult) -> bool {
    !r.rings.radius_history.is_empty()
}

/// Writes profile.csv: initial and final radius along the workpiece, with the stop radius.
pub fn write_profile(
    path: &Path,
    r: &RunResult,
    wall: f64,
    stop_radius: Option<f64>,
) -> Result<PathBuf, OutputError> {
    let g = &r.rings;
    let mut body = String::new();
    body.push_str(PROFILE_HEADER);
    body.push('\n');
    let last = g.radius_history.last();
    for ring in 0..g.z.len() {
        let r0 = g.radius[ring];
        let rf = last.and_then(|row| row.get(ring)).copied().unwrap_or(r0);
        let h = wall * r0 / rf;
        body.push_str(&format!(
            "{},{},{},{},{},{},{}\n",
            num(g.z[ring]),
            num(r0),
            num(rf),
            num(rf - h / 2.0),
            num(rf + h / 2.0),
            num(rf - r0),
            stop_radius.map_or(String::new(), num)
        ));
    }
    std::fs::write(path, body).map_err(io_err(path))?;
    Ok(path.to_path_buf())
}

const COLORS: [RGBColor; 5] = [
    RGBColor(31, 119, 180),
    RGBColor(214, 39, 40),
    RGBColor(44, 160, 44),
    RGBColor(148, 103, 189),
    RGBColor(255, 127, 14),
];

/// Draws radius and velocity against time for up to five rings (the middle, the most displaced
/// and three in between) and the final profile with the initial one and the stop.
pub fn draw_motion(
    dir: &Path,
    r: &RunResult,
    wall: f64,
    stop_radius: Option<f64>,
) -> Result<Vec<PathBuf>, OutputError> {
    let g = &r.rings;
    let n = g.z.len();
    if n == 0 || g.radius_history.is_empty() {
        return Ok(Vec::new());
    }
    let mut picks: Vec<usize> = vec![n / 2, n / 4, 3 * n / 4, 0, n - 1];
    picks.sort_unstable();
    picks.dedup();
    let us: Vec<f64> = g.time.iter().map(|t| t * 1e6).collect();
    let series = |m: &Vec<Vec<f64>>, scale: f64, offset: &dyn Fn(usize) -> f64| -> Vec<Series> {
        picks
            .iter()
            .enumerate()
            .map(|(c, &ring)| Series {
                label: format!("ring {ring} (z = {:.1} mm)", g.z[ring] * 1e3),
                color: COLORS[c % COLORS.len()],
                points: us
                    .iter()
                    .zip(m)
                    .map(|(t, row)| {
                        (*t, (row.get(ring).copied().unwrap_or(f64::NAN) - offset(ring)) * scale)
                    })
                    .collect(),
            })
            .collect()
    };
    let mut files = figure(
        dir,
        "motion",
        &[
            Panel {
                title: "Radial displacement".into(),
                x_label: "time (µs)".into(),
                y_label: "displacement (mm)".into(),
                series: series(&g.radius_history, 1e3, &|ring| g.radius[ring]),
            },
            Panel {
                title: "Radial velocity".into(),
                x_label: "time (µs)".into(),
                y_label: "velocity (m/s)".into(),
                series: series(&g.velocity, 1.0, &|_| 0.0),
            },
        ],
    )?;
    let last = g.radius_history.last().cloned().unwrap_or_default();
    let zmm: Vec<f64> = g.z.iter().map(|z| z * 1e3).collect();
    let surface = |rs: &[f64], sign: f64| -> Vec<(f64, f64)> {
        zmm.iter()
            .enumerate()
            .map(|(k, z)| {
                let h = wall * g.radius[k] / rs[k];
                (*z, (rs[k] + sign * h / 2.0) * 1e3)
            })
            .collect()
    };
    let mut profile = vec![
        Series {
            label: "initial inner surface".into(),
            color: RGBColor(150, 150, 150),
            points: surface(&g.radius, -1.0),
        },
        Series {
            label: "initial outer surface".into(),
            color: RGBColor(150, 150, 150),
            points: surface(&g.radius, 1.0),
        },
        Series {
            label: "final inner surface".into(),
            color: COLORS[0],
            points: surface(&last, -1.0),
        },
        Series {
            label: "final outer surface".into(),
            color: COLORS[1],
            points: surface(&last, 1.0),
        },
    ];
    if let (Some(rs), Some(z0), Some(z1)) = (stop_radius, zmm.first(), zmm.last()) {
        profile.push(Series {
            label: "die / mandrel".into(),
            color: RGBColor(0, 0, 0),
            points: vec![(*z0, rs * 1e3), (*z1, rs * 1e3)],
        });
    }
    files.extend(figure(
        dir,
        "profile",
        &[Panel {
            title: format!(
                "Workpiece profile at t = {:.1} µs",
                g.time.last().copied().unwrap_or(0.0) * 1e6
            ),
            x_label: "z (mm)".into(),
            y_label: "radius (mm)".into(),
            series: profile,
        }],
    )?);
    Ok(files)
}
