//! One run of a case: frequency estimate, split, network, transient, sampling and summary.
//!
//! The ringing frequency is estimated first on a coarse mesh (one filament per turn, about 40
//! workpiece rings) with the workpiece as a perfect conductor (flux excluded, the limit that
//! forming aims at); that frequency sets the skin depths and so the default split. The
//! transient then runs on the chosen mesh and is sampled on a uniform grid; peaks and zeros of
//! the coil current are refined on the stepper's continuous output, not read off the grid.

use std::time::Instant;

use nalgebra::{DMatrix, DVector};
use ringpulse_case::{Case, Split};

use crate::mesh::{build_mesh, coarse_tube_split, plan_splits, Arrangement, Part, SplitPlan};
use crate::network::{invert_spd, Network};
use crate::results::*;
use crate::transient::{
    bisect_zero, golden_max, illinois_zero, integrate_segment, slot, Circuit, Rhs, Scales, Segment,
    StepperSettings,
};
use crate::EngineError;

/// The ringing frequency estimated before the run.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FrequencyEstimate {
    /// Estimated ringing frequency 1 / (2π √(L C)), in hertz.
    pub frequency: f64,
    /// Total bank-loop inductance with the workpiece as a perfect conductor, in henries.
    pub loop_inductance: f64,
}

/// Estimates the ringing frequency on a coarse mesh (see the module doc).
pub fn estimate_frequency(case: &Case) -> Result<FrequencyEstimate, EngineError> {
    let aspect = case.discretization.max_aspect;
    let plan = SplitPlan {
        coil: Split { radial: 1, axial: 1 },
        workpiece: case.workpiece.as_ref().map(|t| coarse_tube_split(t, 40, aspect)),
    };
    let mesh = build_mesh(case, &plan);
    let external = case.bank.inductance + case.bank.feeder_inductance;
    let net = Network::new(mesh, external)?;
    let l = &net.l_loops;
    let n = l.nrows();
    let mut l_eff = l[(0, 0)];
    if n > 1 {
        // Eliminate the workpiece loops with zero flux change: L_eff = L00 - b' D^-1 b.
        let b = l.view((1, 0), (n - 1, 1)).into_owned();
        let d = l.view((1, 1), (n - 1, n - 1)).into_owned();
        if let Some(dinv) = invert_spd(&d) {
            let reduced = l_eff - (b.transpose() * dinv * &b)[(0, 0)];
            if reduced.is_finite() && reduced > 0.0 {
                l_eff = reduced;
            }
        }
    }
    let frequency = 1.0 / (2.0 * std::f64::consts::PI * (l_eff * case.bank.capacitance).sqrt());
    Ok(FrequencyEstimate { frequency, loop_inductance: l_eff })
}

/// A case ready to integrate: its network and the estimate that chose the split.
#[derive(Debug, Clone)]
pub struct Prepared {
    /// The assembled network.
    pub network: Network,
    /// The frequency estimate.
    pub estimate: FrequencyEstimate,
    /// Wall time of estimate, split and assembly, in seconds.
    pub assembly_time: f64,
}

/// Estimates the frequency, chooses the split, checks the filament limit and assembles.
pub fn prepare(case: &Case) -> Result<Prepared, EngineError> {
    let started = Instant::now();
    let estimate = estimate_frequency(case)?;
    let plan = plan_splits(case, estimate.frequency);
    let count = plan.filaments(case.coil.turns);
    if count > case.discretization.max_filaments {
        return Err(EngineError::TooManyFilaments {
            count,
            limit: case.discretization.max_filaments,
        });
    }
    let mesh = build_mesh(case, &plan);
    let network = Network::new(mesh, case.bank.inductance + case.bank.feeder_inductance)?;
    check_stiffness(case, &network, &estimate)?;
    Ok(Prepared { network, estimate, assembly_time: started.elapsed().as_secs_f64() })
}

/// Largest number of steps the explicit stepper's stability limit may demand before a run is
/// refused (about minutes of stepping at the default resolution; a sound split needs a few
/// hundred).
pub const MAX_STABLE_STEPS: f64 = 2e5;

/// Refuses a split whose fastest eddy mode would make the explicit stepper crawl.
///
/// The loop flux linkages decay as dψ/dt = −R L⁻¹ ψ; the fastest rate λ is the largest
/// eigenvalue of R L⁻¹ (real and positive: R and L are symmetric positive definite), found by
/// power iteration. Dormand–Prince is stable for h λ up to about 3.3, so the run needs at
/// least λ t_end / 3.3 steps. Elongated cells stacked across their long side make L nearly
/// singular and λ enormous (a 4-layer wall of 2:1 cells on the expansion demo gave 1.5e10
/// 1/s, a sound split about 3e6).
fn check_stiffness(
    case: &Case,
    net: &Network,
    estimate: &FrequencyEstimate,
) -> Result<(), EngineError> {
    let n = net.n_loops();
    if n == 0 {
        return Ok(());
    }
    let r_f = DVector::from_vec(net.r_filaments.clone());
    let external = case.bank.resistance + case.bank.feeder_resistance;
    // v ← R L⁻¹ v, with R = Pᵀ diag(r) P (+ the external resistance on the bank loop).
    let apply = |v: &DVector<f64>| -> DVector<f64> {
        let x = &net.l_loops_inv * v;
        let mut i = DVector::zeros(r_f.len());
        net.filament_currents(&x, &mut i);
        i.component_mul_assign(&r_f);
        let mut out = DVector::zeros(n);
        net.loop_sums(&i, &mut out);
        out[0] += external * x[0];
        out
    };
    let mut v = DVector::from_fn(n, |k, _| 1.0 + (k % 7) as f64 * 0.1);
    let mut rate = 0.0;
    for _ in 0..60 {
        let w = apply(&v);
        let norm = w.norm();
        if !(norm.is_finite() && norm > 0.0) {
            return Ok(());
        }
        let next = norm / v.norm();
        v = w / norm;
        let settled = (next - rate).abs() <= 1e-3 * next;
        rate = next;
        if settled {
            break;
        }
    }
    let end_time = case.solver.end_time.unwrap_or(3.0 / estimate.frequency);
    let steps = rate * end_time / 3.3;
    if steps > MAX_STABLE_STEPS {
        let m = &net.mesh;
        let split = match m.workpiece_split {
            Some(w) => format!(
                "coil {} x {} per turn, workpiece {} x {}",
                m.coil_split.radial, m.coil_split.axial, w.radial, w.axial
            ),
            None => format!("coil {} x {} per turn", m.coil_split.radial, m.coil_split.axial),
        };
        return Err(EngineError::TooStiff {
            rate,
            steps,
            end_time,
            limit: MAX_STABLE_STEPS,
            split,
        });
    }
    Ok(())
}

/// One sample of per-ring data: time, ring currents, pressures and axial forces.
type RingRow = (f64, Vec<f64>, Vec<f64>, Vec<f64>);

/// What is observed of the circuit at one instant.
struct Observation {
    coil_current: f64,
    voltage: f64,
    di_dt: f64,
    workpiece_current: f64,
    radial_force: f64,
    axial_force: f64,
    ring_current: Vec<f64>,
    ring_pressure: Vec<f64>,
    ring_axial_force: Vec<f64>,
    /// Net radial force on each coil turn, in newtons, positive outward.
    turn_radial_force: Vec<f64>,
    /// Filament currents, in amperes.
    filament_currents: DVector<f64>,
}

/// Geometry of the workpiece rings needed to turn forces into pressures.
struct RingGeometry {
    /// Ring index of each workpiece filament.
    ring_of: Vec<usize>,
    /// Area of the wall surface facing the coil, per ring, in square metres.
    face_area: Vec<f64>,
    /// +1 when outward force pushes the wall away from the coil, else -1.
    sign: f64,
    radius: Vec<f64>,
    z: Vec<f64>,
    length: Vec<f64>,
    area: Vec<f64>,
}

fn ring_geometry(case: &Case, net: &Network) -> RingGeometry {
    let mesh = &net.mesh;
    let n_rings = mesh.workpiece_split.map_or(0, |s| s.axial);
    let mut g = RingGeometry {
        ring_of: Vec::new(),
        face_area: vec![0.0; n_rings],
        sign: 1.0,
        radius: vec![0.0; n_rings],
        z: vec![0.0; n_rings],
        length: vec![0.0; n_rings],
        area: vec![0.0; n_rings],
    };
    let Some(tube) = case.workpiece.as_ref() else { return g };
    let (face_radius, sign) = match mesh.arrangement {
        Some(Arrangement::CoilOutside) => (tube.inner_radius + tube.wall, -1.0),
        Some(Arrangement::CoilInside) => (tube.inner_radius, 1.0),
        _ => (tube.inner_radius + tube.wall / 2.0, 1.0),
    };
    g.sign = sign;
    for f in &mesh.filaments[mesh.workpiece_start()..] {
        if let Part::Workpiece { ring, .. } = f.part {
            g.ring_of.push(ring);
            g.face_area[ring] = 2.0 * std::f64::consts::PI * face_radius * f.dz;
            g.radius[ring] = tube.inner_radius + tube.wall / 2.0;
            g.z[ring] = f.z;
            g.length[ring] = f.dz;
            g.area[ring] += f.area();
        }
    }
    g
}

/// Observes a batch of states of one segment. The loop currents and force factors of all
/// states are computed as matrix products, which is several times faster than one
/// matrix-vector product per state.
fn observe_batch(
    net: &Network,
    rhs: &Rhs<'_>,
    rings: &RingGeometry,
    scales: &Scales,
    ys: &[DVector<f64>],
) -> Vec<Observation> {
    let nl = net.n_loops();
    let n = net.mesh.filaments.len();
    let w0 = net.mesh.workpiece_start();
    let nw = n - w0;
    let mut psi = DMatrix::<f64>::zeros(nl, ys.len());
    for (c, y) in ys.iter().enumerate() {
        psi.column_mut(c).copy_from(&(y.rows(0, nl) * scales.psi));
    }
    let x = &net.l_loops_inv * &psi;
    let mut i_f = DMatrix::<f64>::zeros(n, ys.len());
    let mut column = DVector::zeros(n);
    for c in 0..ys.len() {
        net.filament_currents(&x.column(c).into_owned(), &mut column);
        i_f.column_mut(c).copy_from(&column);
    }
    let gr = &net.grad_r * &i_f;
    let gz = net.grad_z.rows(w0, nw) * &i_f;
    let n_rings = rings.face_area.len();
    let mut out = Vec::with_capacity(ys.len());
    for (c, y) in ys.iter().enumerate() {
        let xc = x.column(c).into_owned();
        let ic = i_f.column(c);
        let mut obs = Observation {
            coil_current: xc[0],
            voltage: y[nl + slot::V] * scales.volt,
            di_dt: rhs.bank_current_rate(y, &xc),
            workpiece_current: ic.rows(w0, nw).sum(),
            radial_force: 0.0,
            axial_force: 0.0,
            ring_current: vec![0.0; n_rings],
            ring_pressure: vec![0.0; n_rings],
            ring_axial_force: vec![0.0; n_rings],
            turn_radial_force: vec![0.0; net.mesh.turns],
            filament_currents: ic.into_owned(),
        };
        for (f, fil) in net.mesh.filaments[..w0].iter().enumerate() {
            if let Part::Coil { turn } = fil.part {
                obs.turn_radial_force[turn] += i_f[(f, c)] * gr[(f, c)];
            }
        }
        for (k, &ring) in rings.ring_of.iter().enumerate() {
            let i_k = i_f[(w0 + k, c)];
            let fr = i_k * gr[(w0 + k, c)];
            let fz = i_k * gz[(k, c)];
            obs.radial_force += fr;
            obs.axial_force += fz;
            obs.ring_current[ring] += i_k;
            obs.ring_pressure[ring] += rings.sign * fr / rings.face_area[ring];
            obs.ring_axial_force[ring] += fz;
        }
        out.push(obs);
    }
    out
}

/// Runs a case end to end and returns its traces, summary and statistics: with the workpiece
/// moving when the case asks for motion (the default with a workpiece), else at fixed geometry.
pub fn run(case: &Case) -> Result<RunResult, EngineError> {
    run_with_progress(case, None)
}

/// [`run()`] reporting (simulated time, end time) in seconds as a motion run advances.
pub fn run_with_progress(
    case: &Case,
    progress: Option<&dyn Fn(f64, f64)>,
) -> Result<RunResult, EngineError> {
    let prepared = prepare(case)?;
    run_prepared_as_case(case, prepared, progress)
}

/// Runs a prepared case (see [`prepare`]) the way [`run()`] would: moving when the case asks
/// for motion and has a workpiece, else at fixed geometry. `progress` as in
/// [`run_with_progress`].
pub fn run_prepared_as_case(
    case: &Case,
    prepared: Prepared,
    progress: Option<&dyn Fn(f64, f64)>,
) -> Result<RunResult, EngineError> {
    if case.motion.enabled && case.workpiece.is_some() {
        let options = crate::motion_run::motion_options(case);
        crate::motion_run::run_motion_with_progress(case, prepared, &options, progress)
    } else {
        run_prepared(case, prepared)
    }
}

/// Runs a case at fixed geometry whatever its motion setting.
pub fn run_fixed(case: &Case) -> Result<RunResult, EngineError> {
    let prepared = prepare(case)?;
    run_prepared(case, prepared)
}

/// Runs a prepared case (see [`prepare`]) at fixed geometry, whatever its motion setting.
pub fn run_prepared(case: &Case, prepared: Prepared) -> Result<RunResult, EngineError> {
    run_with_probes(case, prepared, &[])
}

/// Runs a prepared case and records the magnetic field at `probes`, given as (r, z) in metres.
pub fn run_with_probes(
    case: &Case,
    prepared: Prepared,
    probes: &[(f64, f64)],
) -> Result<RunResult, EngineError> {
    let Prepared { network: net, estimate, assembly_time } = prepared;
    let started = Instant::now();
    let bank = &case.bank;
    let period = 1.0 / estimate.frequency;
    let t_end = case.solver.end_time.unwrap_or(3.0 * period);
    let dt_out = case.solver.output_step.unwrap_or(t_end / 1000.0);
    let n_samples = ((t_end / dt_out).round() as usize).max(1) + 1;
    let t_ref = period / (2.0 * std::f64::consts::PI);
    let i_ref = bank.voltage * (bank.capacitance / estimate.loop_inductance).sqrt();
    let e0 = 0.5 * bank.capacitance * bank.voltage * bank.voltage;
    let scales = Scales {
        psi: bank.voltage * t_ref,
        volt: bank.voltage,
        energy: e0,
        charge: bank.capacitance * bank.voltage,
        action: i_ref * i_ref * t_ref,
    };
    let circuit = Circuit {
        capacitance: bank.capacitance,
        external_resistance: bank.resistance + bank.feeder_resistance,
        crowbar_resistance: bank.crowbar.as_ref().map_or(0.0, |c| c.resistance),
    };
    let (rel_tol, abs_tol) = case.solver.tolerances(false);
    let settings = StepperSettings {
        rel_tol,
        abs_tol,
        max_step: (period / 10.0).min(t_end),
        max_steps: 5_000_000,
    };
    let nl = net.n_loops();
    let mut y0 = DVector::zeros(nl + slot::COUNT);
    y0[nl + slot::V] = 1.0;

    // Segment 1: switch closed at t = 0.
    let mut first = integrate_segment(
        &net,
        circuit,
        scales,
        false,
        bank.crowbar.is_some(),
        0.0,
        t_end,
        y0,
        &settings,
    )?;
    let mut second: Option<(Segment, Option<Network>)> = None;
    let mut crowbar_time = None;
    if let (Some((ta, tb)), Some(cb)) = (first.crossing, bank.crowbar.as_ref()) {
        let t_cb = bisect_zero(ta, tb, |t| first.state(t)[nl + slot::V]);
        first.t_end = t_cb;
        crowbar_time = Some(t_cb);
        let mut y_cb = first.state(t_cb);
        y_cb[nl + slot::V] = 0.0;
        let mut net2 = None;
        if cb.inductance > 0.0 {
            // Inserting the crowbar inductance keeps every flux linkage; the magnetic energy
            // that the larger loop inductance cannot hold is booked as a crowbar loss.
            let psi = y_cb.rows(0, nl) * scales.psi;
            let before = 0.5 * psi.dot(&(&net.l_loops_inv * &psi));
            let mut n2 = net.clone();
            n2.add_bank_loop_inductance(cb.inductance)?;
            let after = 0.5 * psi.dot(&(&n2.l_loops_inv * &psi));
            y_cb[nl + slot::E_CROWBAR] += (before - after) / scales.energy;
            net2 = Some(n2);
        }
        if t_cb < t_end {
            let seg_net = net2.as_ref().unwrap_or(&net);
            let seg = integrate_segment(
                seg_net, circuit, scales, true, false, t_cb, t_end, y_cb, &settings,
            )?;
            second = Some((seg, net2));
        }
    }

    let segment_at = |t: f64| -> (&Segment, &Network) {
        match &second {
            Some((seg, n2)) if t > seg.t_start => (seg, n2.as_ref().unwrap_or(&net)),
            _ => (&first, &net),
        }
    };
    let rhs_first = Rhs::new(&net, circuit, scales, false, false, 0.0, 1.0);
    let rhs_second = second.as_ref().map(|(_, n2)| {
        Rhs::new(n2.as_ref().unwrap_or(&net), circuit, scales, true, false, 0.0, 0.0)
    });
    let rhs_at = |t: f64| -> &Rhs<'_> {
        match (&second, &rhs_second) {
            (Some((seg, _)), Some(r)) if t > seg.t_start => r,
            _ => &rhs_first,
        }
    };
    let coil_current_at = |t: f64| -> f64 {
        let (seg, n) = segment_at(t);
        let y = seg.state(t);
        let psi = y.rows(0, nl) * scales.psi;
        n.l_loops_inv.row(0).transpose().dot(&psi)
    };

    // Sampling on the uniform grid.
    let rings = ring_geometry(case, &net);
    let n_rings = rings.face_area.len();
    let mut traces = Traces::default();
    let mut ring_rows: Vec<RingRow> = Vec::with_capacity(n_samples);
    // Field per unit filament current at each probe (B_r row, B_z row), from the loop field.
    let probe_gains: Vec<(DVector<f64>, DVector<f64>)> = probes
        .iter()
        .map(|&(r, z)| {
            let fil = &net.mesh.filaments;
            let br = DVector::from_iterator(
                fil.len(),
                fil.iter().map(|f| ringpulse_physics::filament::loop_field(f.r, 1.0, r, z - f.z).0),
            );
            let bz = DVector::from_iterator(
                fil.len(),
                fil.iter().map(|f| ringpulse_physics::filament::loop_field(f.r, 1.0, r, z - f.z).1),
            );
            (br, bz)
        })
        .collect();
    let mut probe_traces: Vec<ProbeTrace> =
        probes.iter().map(|&(r, z)| ProbeTrace { r, z, ..ProbeTrace::default() }).collect();
    let mut di_dt_max: f64 = 0.0;
    // ∫ i_f² dt per filament by the trapezoidal rule on the output grid, in A² s.
    let n_fil = net.mesh.filaments.len();
    let mut filament_action = vec![0.0; n_fil];
    let mut previous_sq: Option<(f64, Vec<f64>)> = None;
    let mut hoop_peak: f64 = 0.0;
    let mut coil_pressure_peak: f64 = 0.0;
    let coil = &case.coil;
    let turn_area = coil.radial_thickness * coil.axial_width;
    let coil_face_radius = match net.mesh.arrangement {
        Some(Arrangement::CoilOutside) => coil.mean_radius - coil.radial_thickness / 2.0,
        _ => coil.mean_radius + coil.radial_thickness / 2.0,
    };
    let mut peak_pressure: Option<PeakPressure> = None;
    let times: Vec<f64> = (0..n_samples).map(|k| (k as f64 * dt_out).min(t_end)).collect();
    let in_second = |t: f64| second.as_ref().is_some_and(|(seg, _)| t > seg.t_start);
    let mut observations: Vec<Observation> = Vec::with_capacity(n_samples);
    let mut start = 0;
    while start < n_samples {
        // A chunk of samples from one segment, bounded to keep the batch matrices small.
        let side = in_second(times[start]);
        let mut end = start + 1;
        while end < n_samples && end - start < 256 && in_second(times[end]) == side {
            end += 1;
        }
        let (seg, n) = segment_at(times[start]);
        let ys: Vec<DVector<f64>> = times[start..end].iter().map(|&t| seg.state(t)).collect();
        observations.extend(observe_batch(n, rhs_at(times[start]), &rings, &scales, &ys));
        start = end;
    }
    for (k, obs) in observations.into_iter().enumerate() {
        let t = times[k];
        for (trace, (gr, gz)) in probe_traces.iter_mut().zip(&probe_gains) {
            trace.b_r.push(gr.dot(&obs.filament_currents));
            trace.b_z.push(gz.dot(&obs.filament_currents));
        }
        traces.time.push(t);
        traces.coil_current.push(obs.coil_current);
        traces.capacitor_voltage.push(obs.voltage);
        traces.workpiece_current.push(obs.workpiece_current);
        traces.radial_force.push(obs.radial_force);
        traces.axial_force.push(obs.axial_force);
        let mut p_max = f64::NEG_INFINITY;
        for (ring, &p) in obs.ring_pressure.iter().enumerate() {
            if p > p_max {
                p_max = p;
            }
            if n_rings > 0 && peak_pressure.as_ref().is_none_or(|pk| p > pk.value) {
                peak_pressure = Some(PeakPressure { value: p, ring, z: rings.z[ring], time: t });
            }
        }
        traces.peak_pressure.push(if n_rings > 0 { p_max } else { 0.0 });
        di_dt_max = di_dt_max.max(obs.di_dt.abs());
        for &f in &obs.turn_radial_force {
            // Thin-ring hoop stress of a turn: tension T = F_r / (2π), σ = T / A.
            let sigma = f / (2.0 * std::f64::consts::PI * turn_area);
            if sigma.abs() > hoop_peak.abs() {
                hoop_peak = sigma;
            }
            let p = f.abs() / (2.0 * std::f64::consts::PI * coil_face_radius * coil.axial_width);
            coil_pressure_peak = coil_pressure_peak.max(p);
        }
        let sq: Vec<f64> = obs.filament_currents.iter().map(|i| i * i).collect();
        if let Some((t_prev, prev)) = previous_sq.as_ref() {
            let h = t - t_prev;
            for f in 0..n_fil {
                filament_action[f] += 0.5 * h * (prev[f] + sq[f]);
            }
        }
        previous_sq = Some((t, sq));
        ring_rows.push((t, obs.ring_current, obs.ring_pressure, obs.ring_axial_force));
    }

    // Per-ring rows: every stride-th sample, plus the sample of peak pressure.
    let stride = n_samples.div_ceil(400).max(1);
    let peak_sample = peak_pressure.as_ref().map(|p| (p.time / dt_out).round() as usize);
    let mut ring_traces = RingTraces {
        radius: rings.radius.clone(),
        z: rings.z.clone(),
        length: rings.length.clone(),
        area: rings.area.clone(),
        ..RingTraces::default()
    };
    if n_rings > 0 {
        for (k, (t, cur, p, fz)) in ring_rows.into_iter().enumerate() {
            if k % stride == 0 || Some(k) == peak_sample || k + 1 == n_samples {
                ring_traces.time.push(t);
                ring_traces.current.push(cur);
                ring_traces.pressure.push(p);
                ring_traces.axial_force.push(fz);
            }
        }
    }

    // Peak current and zeros, refined on the continuous output.
    let i = &traces.coil_current;
    let tt = &traces.time;
    let k_peak = argmax_abs(i);
    let sign = if i[k_peak] >= 0.0 { 1.0 } else { -1.0 };
    let lo = tt[k_peak.saturating_sub(1)];
    let hi = tt[(k_peak + 1).min(n_samples - 1)];
    let (t_peak, i_peak) = golden_max(lo, hi, |t| sign * coil_current_at(t));
    let zero_after = |from: usize| -> Option<(usize, f64)> {
        let s0 = if i[from] >= 0.0 { 1.0 } else { -1.0 };
        (from + 1..n_samples)
            .find(|&k| s0 * i[k] <= 0.0)
            .map(|k| (k, illinois_zero(tt[k - 1], tt[k], |t| s0 * coil_current_at(t))))
    };
    let first_zero = zero_after(k_peak);
    let second_zero = first_zero.and_then(|(k, _)| zero_after(k));
    let ringing_frequency = match (first_zero, second_zero) {
        (Some((_, z1)), Some((_, z2))) if z2 > z1 => Some(0.5 / (z2 - z1)),
        (Some((_, z1)), _) if z1 > 0.0 => Some(0.5 / z1),
        _ => None,
    };
    let v = &traces.capacitor_voltage;
    let k_vmin = (0..n_samples).fold(0, |b, k| if v[k] < v[b] { k } else { b });
    let mut v_min = v[k_vmin];
    if v_min < 0.0 {
        let lo = tt[k_vmin.saturating_sub(1)];
        let hi = tt[(k_vmin + 1).min(n_samples - 1)];
        let (_, neg) = golden_max(lo, hi, |t| {
            let (seg, _) = segment_at(t);
            -seg.state(t)[nl + slot::V] * scales.volt
        });
        v_min = v_min.min(-neg);
    }

    // Energy account at the end.
    let (last_seg, last_net) = segment_at(t_end);
    let y_end = last_seg.state(t_end);
    let psi_end = y_end.rows(0, nl) * scales.psi;
    let x_end = &last_net.l_loops_inv * &psi_end;
    let v_end = y_end[nl + slot::V] * scales.volt;
    let mut energy = EnergyAccount {
        initial: e0,
        bank_and_feeder: y_end[nl + slot::E_BANK] * scales.energy,
        coil: y_end[nl + slot::E_COIL] * scales.energy,
        workpiece: y_end[nl + slot::E_WORK] * scales.energy,
        crowbar: y_end[nl + slot::E_CROWBAR] * scales.energy,
        magnetic: 0.5 * psi_end.dot(&x_end),
        capacitor: 0.5 * bank.capacitance * v_end * v_end,
        relative_residual: 0.0,
        ..EnergyAccount::default()
    };
    let accounted = energy.bank_and_feeder
        + energy.coil
        + energy.workpiece
        + energy.crowbar
        + energy.magnetic
        + energy.capacitor;
    energy.relative_residual = (e0 - accounted) / e0;

    // Adiabatic temperature estimate per filament from its action with the linear resistivity
    // law integrated in closed form (docs/theory.md, "Heating"): T = T0 + (exp(g ρ0' α/(ρ_m c)) − 1)/α.
    let temperature = |f: usize| -> f64 {
        let fil = &net.mesh.filaments[f];
        let m = match fil.part {
            Part::Coil { .. } => &case.coil.material,
            Part::Workpiece { .. } => match case.workpiece.as_ref() {
                Some(t) => &t.material,
                None => &case.coil.material,
            },
        };
        let g = filament_action[f] / (fil.area() * fil.area());
        heating_temperature(
            fil.resistivity,
            m.temperature_coefficient,
            m.density * m.specific_heat,
            g,
            case.initial_temperature,
        )
    };
    let w0 = net.mesh.workpiece_start();
    let peak_coil_temperature = (0..w0).map(temperature).fold(case.initial_temperature, f64::max);
    let peak_workpiece_temperature = if n_fil > w0 {
        Some((w0..n_fil).map(temperature).fold(case.initial_temperature, f64::max))
    } else {
        None
    };

    let summary = Summary {
        peak_coil_hoop_stress: hoop_peak,
        peak_coil_pressure: coil_pressure_peak,
        peak_coil_temperature,
        peak_workpiece_temperature,
        peak_coil_current: i_peak.max(i[k_peak].abs()),
        time_of_peak_current: t_peak,
        first_current_zero: first_zero.map(|z| z.1),
        ringing_frequency,
        estimated_frequency: estimate.frequency,
        peak_di_dt: di_dt_max,
        charge: y_end[nl + slot::CHARGE] * scales.charge,
        action_integral: y_end[nl + slot::ACTION] * scales.action,
        voltage_reversal_percent: (-v_min).max(0.0) / bank.voltage * 100.0,
        crowbar_time,
        peak_workpiece_current: max_abs(&traces.workpiece_current),
        peak_pressure,
        peak_radial_force: max_abs(&traces.radial_force),
        peak_axial_force: max_abs(&traces.axial_force),
        energy,
        motion: None,
        end_time: t_end,
    };

    let stats = SolverStats::from_segments(
        std::iter::once(&first)
            .chain(second.as_ref().map(|(s, _)| s))
            .map(|seg| (seg.counts, seg.dt_range)),
        assembly_time,
        started.elapsed().as_secs_f64(),
        (settings.rel_tol, settings.abs_tol),
    );

    let mesh = &net.mesh;
    let coil_delta =
        ringpulse_physics::em::skin_depth(case.coil.material.resistivity, estimate.frequency);
    let wp_delta = case
        .workpiece
        .as_ref()
        .map(|t| ringpulse_physics::em::skin_depth(t.material.resistivity, estimate.frequency));
    let mesh_info = MeshInfo {
        coil_filaments: mesh.coil_filaments(),
        coil_split: [mesh.coil_split.radial, mesh.coil_split.axial],
        workpiece_filaments: mesh.workpiece_filaments(),
        workpiece_split: mesh.workpiece_split.map_or([0, 0], |s| [s.radial, s.axial]),
        coil_skin_depth: coil_delta,
        workpiece_skin_depth: wp_delta,
        loops: nl,
        coil_inductance: net.coil_inductance,
    };
    let warnings = collect_warnings(case, &summary, &traces, wp_delta);
    Ok(RunResult {
        traces,
        rings: ring_traces,
        summary,
        stats,
        mesh: mesh_info,
        warnings,
        probes: probe_traces,
    })
}

pub(crate) fn collect_warnings(
    case: &Case,
    s: &Summary,
    traces: &Traces,
    wp_delta: Option<f64>,
) -> Vec<String> {
    let mut out = Vec::new();
    if let (Some(tube), Some(delta)) = (case.workpiece.as_ref(), wp_delta) {
        if delta > tube.wall {
            out.push(format!(
                "the skin depth in the workpiece ({:.3} mm at {:.2} kHz) exceeds its wall ({:.3} mm): \
                 much of the field soaks through and the net pressure is low; a higher ringing \
                 frequency (less capacitance or inductance) helps",
                delta * 1e3,
                s.estimated_frequency / 1e3,
                tube.wall * 1e3
            ));
        }
    }
    if let Some(last) = traces.coil_current.last() {
        if s.peak_coil_current > 0.0 && last.abs() > 0.1 * s.peak_coil_current {
            out.push(format!(
                "the coil current is still {:.0} % of its peak at the end time ({:.1} us); \
                 solver.end_time may be too short to see the whole discharge",
                last.abs() / s.peak_coil_current * 100.0,
                s.end_time * 1e6
            ));
        }
    }
    let near_melting = |what: &str, t: f64, m: &ringpulse_case::Material, out: &mut Vec<String>| {
        // Warn from 80 % of the melting temperature in kelvin (common practice margin).
        if t > 0.8 * m.melting_point {
            out.push(format!(
                "the {what} reaches {t:.0} K at its hottest filament (adiabatic estimate), near or \
                 above its melting point of {:.0} K",
                m.melting_point
            ));
        }
    };
    near_melting("coil", s.peak_coil_temperature, &case.coil.material, &mut out);
    if let (Some(t), Some(tube)) = (s.peak_workpiece_temperature, case.workpiece.as_ref()) {
        near_melting("workpiece", t, &tube.material, &mut out);
    }
    if s.energy.relative_residual.abs() > 1e-3 {
        out.push(format!(
            "the energy account does not close: residual {:.2e} of the stored energy; tighten \
             solver.rel_tol",
            s.energy.relative_residual
        ));
    }
    out
}

/// Adiabatic temperature after an action density `g` (A² s/m⁴) with ρ_e = ρ0 (1 + α (T − T0)):
/// d(ρ_m c T)/dt = ρ_e j², integrated in closed form, in kelvin. `rho0` is ρ_e at `t0`, in Ω m;
/// `heat_capacity` is ρ_m c, in J/(m³ K).
pub fn heating_temperature(rho0: f64, alpha: f64, heat_capacity: f64, g: f64, t0: f64) -> f64 {
    if alpha <= 0.0 {
        return t0 + rho0 * g / heat_capacity;
    }
    // With ρ_e(T) = ρ0 (1 + α (T − T0)): dT/(1 + α(T − T0)) = ρ0 j² dt / (ρ_m c).
    t0 + ((g * rho0 * alpha / heat_capacity).exp() - 1.0) / alpha
}

pub(crate) fn argmax_abs(v: &[f64]) -> usize {
    (0..v.len()).fold(0, |b, k| if v[k].abs() > v[b].abs() { k } else { b })
}

pub(crate) fn max_abs(v: &[f64]) -> f64 {
    v.iter().fold(0.0, |m: f64, x| m.max(x.abs()))
}

/// The filament inductance matrix of a case's default mesh (for checks and reports), in henries.
pub fn inductance_matrix(case: &Case) -> Result<DMatrix<f64>, EngineError> {
    Ok(prepare(case)?.network.l_filaments)
}
