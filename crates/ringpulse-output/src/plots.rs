//! Plots of a run as PNG and SVG, drawn with plotters and the DejaVu fonts (no system fonts).
//!
//! Every plot is drawn twice from one drawing function, once per backend. Non-finite values
//! are skipped and empty or constant data get a small default range, so drawing never panics.

use std::path::{Path, PathBuf};
use std::sync::Once;

use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::FontStyle;
use ringpulse_engine::RunResult;

use crate::OutputError;

/// Size of a one-panel figure, in pixels.
pub(crate) const SIZE: (u32, u32) = (1200, 800);

static FONTS: Once = Once::new();

/// Registers the DejaVu fonts with plotters, once; needed before any text is drawn.
pub(crate) fn register_fonts() {
    FONTS.call_once(|| {
        // ab_glyph needs the fonts registered before any text is drawn (SVG too).
        let _ = plotters::style::register_font(
            "sans-serif",
            FontStyle::Normal,
            dejavu::sans::regular(),
        );
        let _ = plotters::style::register_font("sans-serif", FontStyle::Bold, dejavu::sans::bold());
    });
}

/// One curve: legend label, colour and points.
pub(crate) struct Series {
    pub(crate) label: String,
    pub(crate) color: RGBColor,
    pub(crate) points: Vec<(f64, f64)>,
}

/// One panel: title, axis labels and curves.
pub(crate) struct Panel {
    pub(crate) title: String,
    pub(crate) x_label: String,
    pub(crate) y_label: String,
    pub(crate) series: Vec<Series>,
}

/// Axis range of the finite values, padded by 5 %; a small default for empty or constant data.
pub(crate) fn range(values: impl Iterator<Item = f64>) -> (f64, f64) {
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for v in values.filter(|v| v.is_finite()) {
        lo = lo.min(v);
        hi = hi.max(v);
    }
    if !lo.is_finite() {
        return (0.0, 1.0);
    }
    if hi - lo <= 1e-12 * hi.abs().max(lo.abs()).max(1e-300) {
        let pad = if hi.abs() > 0.0 { hi.abs() * 0.1 } else { 1.0 };
        return (lo - pad, hi + pad);
    }
    let pad = 0.05 * (hi - lo);
    (lo - pad, hi + pad)
}

fn draw_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    panel: &Panel,
) -> Result<(), String> {
    let xr = range(panel.series.iter().flat_map(|s| s.points.iter().map(|p| p.0)));
    let yr = range(panel.series.iter().flat_map(|s| s.points.iter().map(|p| p.1)));
    let mut chart = ChartBuilder::on(area)
        .caption(&panel.title, ("sans-serif", 26, FontStyle::Bold))
        .margin(16)
        .x_label_area_size(56)
        .y_label_area_size(90)
        .build_cartesian_2d(xr.0..xr.1, yr.0..yr.1)
        .map_err(|e| e.to_string())?;
    chart
        .configure_mesh()
        .x_desc(&panel.x_label)
        .y_desc(&panel.y_label)
        .label_style(("sans-serif", 18))
        .axis_desc_style(("sans-serif", 20))
        .draw()
        .map_err(|e| e.to_string())?;
    for s in &panel.series {
        let color = s.color;
        let pts: Vec<(f64, f64)> =
            s.points.iter().copied().filter(|p| p.0.is_finite() && p.1.is_finite()).collect();
        chart
            .draw_series(LineSeries::new(pts, color.stroke_width(2)))
            .map_err(|e| e.to_string())?
            .label(&s.label)
            .legend(move |(x, y)| {
                PathElement::new(vec![(x, y), (x + 24, y)], color.stroke_width(3))
            });
    }
    if panel.series.len() > 1 {
        chart
            .configure_series_labels()
            .label_font(("sans-serif", 18))
            .background_style(WHITE.mix(0.85))
            .border_style(BLACK)
            .draw()
            .map_err(|e| e.to_string())?;
    }
    Ok(())
}

fn draw_figure<DB: DrawingBackend>(
    root: DrawingArea<DB, Shift>,
    panels: &[Panel],
) -> Result<(), String> {
    root.fill(&WHITE).map_err(|e| e.to_string())?;
    let areas = root.split_evenly((panels.len().max(1), 1));
    for (area, panel) in areas.iter().zip(panels) {
        draw_panel(area, panel)?;
    }
    root.present().map_err(|e| e.to_string())
}

/// Draws `panels` stacked vertically into `<dir>/<stem>.png` and `.svg`.
pub(crate) fn figure(
    dir: &Path,
    stem: &str,
    panels: &[Panel],
) -> Result<Vec<PathBuf>, OutputError> {
    register_fonts();
    let png = dir.join(format!("{stem}.png"));
    let svg = dir.join(format!("{stem}.svg"));
    let size = (SIZE.0, SIZE.1 * (panels.len() as u32).clamp(1, 2) * 3 / 4 + SIZE.1 / 4);
    draw_figure(BitMapBackend::new(&png, size).into_drawing_area(), panels)
        .map_err(|message| OutputError::Plot { path: png.clone(), message })?;
    draw_figure(SVGBackend::new(&svg, size).into_drawing_area(), panels)
        .map_err(|message| OutputError::Plot { path: svg.clone(), message })?;
    Ok(vec![png, svg])
}

/// Draws every plot of a run into `dir`; returns the files written.
pub fn draw_all(dir: &Path, r: &RunResult) -> Result<Vec<PathBuf>, OutputError> {
    let t = &r.traces;
    let us: Vec<f64> = t.time.iter().map(|x| x * 1e6).collect();
    let zip = |v: &[f64], scale: f64| -> Vec<(f64, f64)> {
        us.iter().zip(v).map(|(a, b)| (*a, b * scale)).collect()
    };
    let mut currents = vec![Series {
        label: "coil current".into(),
        color: RGBColor(31, 119, 180),
        points: zip(&t.coil_current, 1e-3),
    }];
    if r.mesh.workpiece_filaments > 0 {
        currents.push(Series {
            label: "workpiece current (net)".into(),
            color: RGBColor(214, 39, 40),
            points: zip(&t.workpiece_current, 1e-3),
        });
    }
    let mut files = figure(
        dir,
        "currents",
        &[
            Panel {
                title: "Currents".into(),
                x_label: "time (µs)".into(),
                y_label: "current (kA)".into(),
                series: currents,
            },
            Panel {
                title: "Capacitor voltage".into(),
                x_label: "time (µs)".into(),
                y_label: "voltage (kV)".into(),
                series: vec![Series {
                    label: "capacitor voltage".into(),
                    color: RGBColor(44, 160, 44),
                    points: zip(&t.capacitor_voltage, 1e-3),
                }],
            },
        ],
    )?;
    let g = &r.rings;
    if g.z.is_empty() || g.time.is_empty() {
        return Ok(files);
    }
    // Sample and ring of the peak pressure.
    let (mut best_s, mut best_ring, mut best_p) = (0, 0, f64::NEG_INFINITY);
    for (s, row) in g.pressure.iter().enumerate() {
        for (ring, &p) in row.iter().enumerate() {
            if p.is_finite() && p > best_p {
                (best_s, best_ring, best_p) = (s, ring, p);
            }
        }
    }
    let profile: Vec<(f64, f64)> =
        g.z.iter().zip(&g.pressure[best_s]).map(|(z, p)| (z * 1e3, p * 1e-6)).collect();
    files.extend(figure(
        dir,
        "pressure_profile",
        &[Panel {
            title: format!(
                "Magnetic pressure along the workpiece at t = {:.2} µs",
                g.time[best_s] * 1e6
            ),
            x_label: "z (mm)".into(),
            y_label: "pressure (MPa)".into(),
            series: vec![Series {
                label: "pressure".into(),
                color: RGBColor(148, 103, 189),
                points: profile,
            }],
        }],
    )?);
    let history: Vec<(f64, f64)> =
        g.time.iter().zip(&g.pressure).map(|(t, row)| (t * 1e6, row[best_ring] * 1e-6)).collect();
    files.extend(figure(
        dir,
        "pressure_history",
        &[Panel {
            title: format!(
                "Magnetic pressure on ring {best_ring} (z = {:.2} mm)",
                g.z[best_ring] * 1e3
            ),
            x_label: "time (µs)".into(),
            y_label: "pressure (MPa)".into(),
            series: vec![Series {
                label: "pressure".into(),
                color: RGBColor(255, 127, 14),
                points: history,
            }],
        }],
    )?);
    Ok(files)
}
