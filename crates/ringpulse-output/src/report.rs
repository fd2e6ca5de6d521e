//! The terminal report: an aligned table of the run's results in engineering units.

use ringpulse_engine::RunResult;

use crate::{RunMeta, SAFETY_NOTICE};

/// Formats a value with an SI prefix chosen so the mantissa lies in [1, 1000), 4 significant
/// digits: `eng(92669.2, "A")` is `"92.67 kA"`, `eng(1.52e-5, "s")` is `"15.20 µs"`.
pub fn eng(value: f64, unit: &str) -> String {
    if !value.is_finite() {
        return format!("{value} {unit}");
    }
    if value == 0.0 {
        return format!("0 {unit}");
    }
    const PREFIXES: [(i32, &str); 11] = [
        (-15, "f"),
        (-12, "p"),
        (-9, "n"),
        (-6, "µ"),
        (-3, "m"),
        (0, ""),
        (3, "k"),
        (6, "M"),
        (9, "G"),
        (12, "T"),
        (15, "P"),
    ];
    let digits_for = |x: f64| {
        if x.abs() >= 100.0 {
            1
        } else if x.abs() >= 10.0 {
            2
        } else {
            3
        }
    };
    let mut exp = ((value.abs().log10() / 3.0).floor() as i32 * 3).clamp(-15, 15);
    let mut scaled = value / 10f64.powi(exp);
    // Rounding to 4 significant digits can reach 1000: move up one prefix then.
    let shown: f64 = format!("{:.*}", digits_for(scaled), scaled.abs()).parse().unwrap_or(0.0);
    if shown >= 1000.0 && exp < 15 {
        exp += 3;
        scaled = value / 10f64.powi(exp);
    }
    let prefix = PREFIXES.iter().find(|(e, _)| *e == exp).map_or("", |(_, p)| p);
    let digits = digits_for(scaled);
    format!("{scaled:.digits$} {prefix}{unit}")
}

fn row(out: &mut String, name: &str, value: &str) {
    out.push_str(&format!("  {name:<34} {value}\n"));
}

/// The report printed after a run.
pub fn format_report(meta: &RunMeta, r: &RunResult) -> String {
    let s = &r.summary;
    let mut out = String::new();
    out.push_str(&format!("ringpulse {}  case {}\n", meta.version, meta.case_path));
    out.push_str(&format!("  {}\n\n", meta.description));
    out.push_str("circuit\n");
    row(
        &mut out,
        "peak coil current",
        &format!("{} at {}", eng(s.peak_coil_current, "A"), eng(s.time_of_peak_current, "s")),
    );
    row(
        &mut out,
        "first current zero",
        &s.first_current_zero.map_or("none in the run".into(), |t| eng(t, "s")),
    );
    row(
        &mut out,
        "ringing frequency",
        &format!(
            "{} (estimated before the run: {})",
            s.ringing_frequency.map_or("n/a".into(), |f| eng(f, "Hz")),
            eng(s.estimated_frequency, "Hz")
        ),
    );
    row(
        &mut out,
        "peak di/dt",
        &format!("{} ({})", eng(s.peak_di_dt, "A/s"), eng(s.peak_di_dt * 1e-6, "A/µs")),
    );
    row(&mut out, "charge transferred", &eng(s.charge, "C"));
    row(&mut out, "action integral", &eng(s.action_integral, "A²s"));
    row(&mut out, "capacitor voltage reversal", &format!("{:.1} %", s.voltage_reversal_percent));
    if let Some(t) = s.crowbar_time {
        row(&mut out, "crowbar closed", &eng(t, "s"));
    }
    out.push_str("coil\n");
    row(&mut out, "coil inductance (alone)", &eng(r.mesh.coil_inductance, "H"));
    row(
        &mut out,
        "peak turn hoop stress",
        &format!(
            "{} ({})",
            eng(s.peak_coil_hoop_stress, "Pa"),
            if s.peak_coil_hoop_stress >= 0.0 { "tension" } else { "compression" }
        ),
    );
    row(&mut out, "peak pressure on a turn", &eng(s.peak_coil_pressure, "Pa"));
    row(
        &mut out,
        "hottest coil filament",
        &format!(
            "{:.0} K ({})",
            s.peak_coil_temperature,
            if s.motion.is_some() { "coupled heating" } else { "adiabatic estimate" }
        ),
    );
    if r.mesh.workpiece_filaments > 0 {
        out.push_str("workpiece\n");
        row(&mut out, "peak workpiece current", &eng(s.peak_workpiece_current, "A"));
        if let Some(p) = &s.peak_pressure {
            row(
                &mut out,
                "peak magnetic pressure",
                &format!(
                    "{} on ring {} (z = {:.2} mm) at {}",
                    eng(p.value, "Pa"),
                    p.ring,
                    p.z * 1e3,
                    eng(p.time, "s")
                ),
            );
        }
        row(&mut out, "peak net radial force", &eng(s.peak_radial_force, "N"));
        row(&mut out, "peak net axial force", &eng(s.peak_axial_force, "N"));
        if let Some(t) = s.peak_workpiece_temperature {
            let how = if s.motion.is_some() { "coupled heating" } else { "adiabatic estimate" };
            row(&mut out, "hottest workpiece filament", &format!("{t:.0} K ({how})"));
        }
    }
    if let Some(m) = &s.motion {
        out.push_str("motion\n");
        row(
            &mut out,
            "largest displacement",
            &format!(
                "{} at z = {:.2} mm",
                eng(m.max_displacement, "m"),
                m.max_displacement_z * 1e3
            ),
        );
        row(&mut out, "largest radial velocity", &eng(m.max_velocity, "m/s"));
        match m.stop_radius {
            Some(rs) => {
                let impact = match (m.first_impact_time, m.max_impact_velocity) {
                    (Some(t), Some(v)) => format!(
                        "{} rings reached it, first at {}, fastest impact {}",
                        m.rings_at_stop,
                        eng(t, "s"),
                        eng(v, "m/s")
                    ),
                    _ => "no ring reached it".to_string(),
                };
                row(&mut out, &format!("die/mandrel at {}", eng(rs, "m")), &impact);
            }
            None => row(&mut out, "die/mandrel", "none"),
        }
        row(
            &mut out,
            "final hoop strain",
            &format!(
                "{:.2} % to {:.2} % (plastic up to {:.2} %)",
                100.0 * m.final_strain_range[0],
                100.0 * m.final_strain_range[1],
                100.0 * m.max_plastic_strain
            ),
        );
        row(&mut out, "largest strain rate", &format!("{:.3e} 1/s", m.max_strain_rate));
        if m.axial_displacement != 0.0 {
            row(
                &mut out,
                "axial travel",
                &format!(
                    "{} (at {} at the end)",
                    eng(m.axial_displacement, "m"),
                    eng(m.axial_velocity, "m/s")
                ),
            );
        }
        row(
            &mut out,
            "efficiency (plastic work / stored)",
            &format!("{:.1} %", 100.0 * m.efficiency),
        );
        if let Some(msg) = &m.stopped {
            row(&mut out, "run stopped", msg);
        }
    }
    let e = &s.energy;
    out.push_str("energy\n");
    row(&mut out, "stored 0.5 C V0^2", &eng(e.initial, "J"));
    let share = |x: f64| format!("{} ({:.1} %)", eng(x, "J"), x / e.initial * 100.0);
    row(&mut out, "dissipated in bank and feeder", &share(e.bank_and_feeder));
    row(&mut out, "dissipated in coil", &share(e.coil));
    row(&mut out, "dissipated in workpiece", &share(e.workpiece));
    if e.crowbar != 0.0 {
        row(&mut out, "dissipated in crowbar", &share(e.crowbar));
    }
    if s.motion.is_some() {
        row(&mut out, "plastic work", &share(e.plastic));
        row(&mut out, "kinetic energy left", &share(e.kinetic));
        row(&mut out, "elastic energy left", &share(e.elastic));
        if e.impact != 0.0 {
            row(&mut out, "lost at die impacts", &share(e.impact));
        }
    }
    row(&mut out, "left in magnetic field", &share(e.magnetic));
    row(&mut out, "left in capacitor", &share(e.capacitor));
    row(&mut out, "residual (solver error)", &format!("{:.2e} of stored", e.relative_residual));
    out.push_str("numerics\n");
    let m = &r.mesh;
    row(
        &mut out,
        "filaments",
        &format!(
            "coil {} ({} x {} per turn), workpiece {} ({} x {}), {} loops",
            m.coil_filaments,
            m.coil_split[0],
            m.coil_split[1],
            m.workpiece_filaments,
            m.workpiece_split[0],
            m.workpiece_split[1],
            m.loops
        ),
    );
    row(
        &mut out,
        "skin depth",
        &format!(
            "coil {}{}",
            eng(m.coil_skin_depth, "m"),
            m.workpiece_skin_depth
                .map_or(String::new(), |d| format!(", workpiece {}", eng(d, "m")))
        ),
    );
    let st = &r.stats;
    row(
        &mut out,
        "stepper",
        &format!(
            "{} steps ({} rejected), {} evaluations, dt {} .. {}, tolerances {:.0e} relative, {:.0e} absolute",
            st.steps,
            st.rejected_steps,
            st.rhs_evaluations,
            eng(st.min_dt, "s"),
            eng(st.max_dt, "s"),
            st.rel_tol,
            st.abs_tol
        ),
    );
    row(
        &mut out,
        "wall time",
        &format!(
            "assembly {}, stepping {}",
            eng(st.assembly_time, "s"),
            eng(st.stepping_time, "s")
        ),
    );
    if !r.warnings.is_empty() {
        out.push_str("warnings\n");
        for w in &r.warnings {
            out.push_str(&format!("  - {w}\n"));
        }
    }
    out.push('\n');
    out.push_str(SAFETY_NOTICE);
    out.push('\n');
    out
}

#[cfg(test)]
mod tests {
    use super::eng;

    #[test]
    fn engineering_prefixes() {
        assert_eq!(eng(92669.2, "A"), "92.67 kA");
        assert_eq!(eng(1.52e-5, "s"), "15.20 µs");
        assert_eq!(eng(5e5, "A²s"), "500.0 kA²s");
        assert_eq!(eng(999.96, "V"), "1.000 kV");
        assert_eq!(eng(-3.2e6, "Pa"), "-3.200 MPa");
        assert_eq!(eng(0.0, "J"), "0 J");
        assert_eq!(eng(f64::NAN, "J"), "NaN J");
    }
}
