//! A run with a moving workpiece: segments between events (crowbar, die impacts, coil
//! contact), sampling, and the summary with motion results and the full energy account.

use std::time::Instant;

use crate::flow::{johnson_cook_set, Branch, FlowLaw, JohnsonCook};
use nalgebra::DVector;
use ringpulse_case::{Case, FlowStress};

use crate::mesh::Arrangement;
use crate::motion::{
    integrate_motion_segment, mslot, Event, Flags, MechScales, MotionSegment, MovingNetwork, Stop,
    WorkpieceMechanics,
};
use crate::results::*;
use crate::run::{argmax_abs, collect_warnings, max_abs, Prepared};
use crate::transient::{golden_max, illinois_zero, slot, Circuit, Scales, StepperSettings};
use crate::EngineError;

/// Options of a motion run.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct MotionOptions {
    /// Radius of a rigid die (expansion: the outer surface stops there) or mandrel
    /// (compression: the inner surface stops there), in metres.
    pub stop_radius: Option<f64>,
    /// Flow law override; `None` picks one from the material name (see [`flow_law_for`]).
    pub flow: Option<FlowLaw>,
    /// Evaluate the coil–workpiece coupling with Maxwell's formula at every evaluation
    /// instead of the tables of `coupling` (slower; for checks). Default: false.
    pub exact_coupling: bool,
}

/// The flow law used for a material: a published Johnson–Cook set where one fits the
/// material, else perfect plasticity at its yield strength.
///
/// copper → OFHC copper, brass → cartridge brass, aluminium 6061-T6 → the 6061-T6 set of the
/// later literature (low confidence), steel_1010 → Armco iron (the nearest published set;
/// recalled from memory, see ringpulse-physics `material`). Everything else: constant flow
/// stress = the material's yield strength.
pub fn flow_law_for(material: &ringpulse_case::Material) -> FlowLaw {
    let name = material.name.to_ascii_lowercase();
    let set = if name.starts_with("copper") {
        johnson_cook_set("ofhc_copper")
    } else if name.starts_with("brass") {
        johnson_cook_set("cartridge_brass")
    } else if name.starts_with("aluminium_6061") || name.starts_with("aluminum_6061") {
        johnson_cook_set("aluminium_6061_t6")
    } else if name.starts_with("steel_1010") {
        johnson_cook_set("armco_iron")
    } else {
        None
    };
    match set {
        Some(mut jc) => {
            jc.room_temperature = material.reference_temperature;
            FlowLaw::JohnsonCook(jc)
        }
        None => FlowLaw::Constant { stress: material.yield_strength },
    }
}

/// The flow law of a case: its `motion.flow_stress` if given, else [`flow_law_for`] the
/// workpiece material.
pub fn flow_law_of_case(spec: Option<&FlowStress>, material: &ringpulse_case::Material) -> FlowLaw {
    match spec {
        None => flow_law_for(material),
        Some(FlowStress::Constant { stress }) => FlowLaw::Constant { stress: *stress },
        Some(FlowStress::PowerLaw { k, n, prestrain }) => {
            FlowLaw::PowerLaw { k: *k, n: *n, eps0: *prestrain }
        }
        Some(FlowStress::JohnsonCookSet(name)) => match johnson_cook_set(name) {
            Some(mut jc) => {
                jc.room_temperature = material.reference_temperature;
                FlowLaw::JohnsonCook(jc)
            }
            None => flow_law_for(material),
        },
        Some(FlowStress::JohnsonCook { a, b, n, c, m, melting_point, reference_rate }) => {
            FlowLaw::JohnsonCook(JohnsonCook {
                a: *a,
                b: *b,
                n: *n,
                c: *c,
                m: *m,
                reference_rate: *reference_rate,
                room_temperature: material.reference_temperature,
                melting_temperature: *melting_point,
            })
        }
    }
}

/// The motion options a case asks for.
pub fn motion_options(case: &Case) -> MotionOptions {
    MotionOptions {
        stop_radius: case.motion.stop_radius,
        flow: case
            .workpiece
            .as_ref()
            .map(|t| flow_law_of_case(case.motion.flow_stress.as_ref(), &t.material)),
        exact_coupling: false,
    }
}

/// Runs a prepared case with the workpiece free to move.
pub fn run_motion(
    case: &Case,
    prepared: Prepared,
    options: &MotionOptions,
) -> Result<RunResult, EngineError> {
    run_motion_with_progress(case, prepared, options, None)
}

/// [`run_motion`] that reports the simulated time, in seconds, and the end time after each
/// accepted step (for a progress display).
pub fn run_motion_with_progress(
    case: &Case,
    prepared: Prepared,
    options: &MotionOptions,
    progress: Option<&dyn Fn(f64, f64)>,
) -> Result<RunResult, EngineError> {
    let Some(tube) = case.workpiece.as_ref() else {
        return Err(EngineError::Unsupported {
            field: "motion".into(),
            message: "motion needs a workpiece".into(),
        });
    };
    let bank = &case.bank;
    if bank.crowbar.as_ref().is_some_and(|c| c.inductance > 0.0) {
        return Err(EngineError::Unsupported {
            field: "bank.crowbar.inductance".into(),
            message:
                "a crowbar inductance above 0 is not supported with motion yet; set it to 0 or \
                      switch motion off"
                    .into(),
        });
    }
    let Prepared { network, estimate, assembly_time } = prepared;
    let started = Instant::now();
    let arrangement = network.mesh.arrangement;
    let coil = &case.coil;
    let coil_limit = match arrangement {
        Some(Arrangement::CoilInside) => {
            Some((coil.mean_radius + coil.radial_thickness / 2.0, true))
        }
        Some(Arrangement::CoilOutside) => {
            Some((coil.mean_radius - coil.radial_thickness / 2.0, false))
        }
        _ => None,
    };
    let stop = options.stop_radius.map(|r| {
        if r >= tube.inner_radius + tube.wall {
            Stop::Die(r)
        } else {
            Stop::Mandrel(r)
        }
    });
    let mech = WorkpieceMechanics {
        density: tube.material.density,
        specific_heat: tube.material.specific_heat,
        youngs_modulus: tube.material.youngs_modulus,
        flow: options.flow.unwrap_or_else(|| flow_law_for(&tube.material)),
    };
    let preview = matches!(case.discretization.mode, ringpulse_case::Resolution::Coarse { .. });
    let (rel_tol, abs_tol) = case.solver.tolerances_at(true, preview);
    // The coupling tables are kept a hundred times more accurate than the stepper's
    // relative tolerance, so that their error is lost in the stepper's.
    let mut net = MovingNetwork::new(
        network,
        tube.wall,
        mech,
        &coil.material,
        &tube.material,
        case.initial_temperature,
        stop,
        coil_limit,
        1e-2 * rel_tol,
    )?;
    let lay = net.layout();
    let nl = lay.nl;
    let nr = net.n_rings();

    let period = 1.0 / estimate.frequency;
    let t_end = case.solver.end_time.unwrap_or(3.0 * period);
    let dt_out = case.solver.output_step.unwrap_or(t_end / 500.0);
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
    let ms = MechScales { length: tube.wall, velocity: 100.0, temperature: 300.0 };
    let circuit = Circuit {
        capacitance: bank.capacitance,
        external_resistance: bank.resistance + bank.feeder_resistance,
        crowbar_resistance: bank.crowbar.as_ref().map_or(0.0, |c| c.resistance),
    };
    let settings = StepperSettings {
        rel_tol,
        abs_tol,
        max_step: (period / 10.0).min(t_end),
        max_steps: 5_000_000,
    };
    net.set_exact_coupling(options.exact_coupling);
    let mut y = DVector::zeros(lay.len);
    y[nl + slot::V] = 1.0;
    for f in 0..net.base.mesh.filaments.len() {
        y[lay.temps + f] = case.initial_temperature / ms.temperature;
    }

    // Segments between events.
    let mut segments: Vec<MotionSegment> = Vec::new();
    let mut flags = Flags::initial(nr);
    let mut t = 0.0;
    let mut crowbar_time = None;
    let mut impacts: Vec<(usize, f64, f64)> = Vec::new();
    let mut stopped: Option<String> = None;
    // Each pass ends at an event: the crowbar, a ring yielding, unloading or reaching the stop
    // or the coil, or the end. A ring may yield and unload many times while it rings
    // elastically about its final shape; the cap only guards against an endless loop.
    let max_segments = 200 * nr + 100;
    let mut first_step = 0.0;
    let mut ended = false;
    for _ in 0..max_segments {
        let mut seg = integrate_motion_segment(
            &net,
            circuit,
            scales,
            ms,
            flags.clone(),
            bank.crowbar.is_some(),
            t,
            t_end,
            y.clone(),
            &settings,
            first_step,
            progress,
        )?;
        if seg.last_dt > 0.0 {
            first_step = seg.last_dt;
        }
        let Some((events, ta, tb)) = seg.event.clone() else {
            segments.push(seg);
            ended = true;
            break;
        };
        // Locate each event in the step; the earliest ends the segment, and every event within
        // a relative 1e-12 of it is applied there.
        let located: Vec<(Event, f64)> = events
            .iter()
            .map(|&event| {
                let t_e = match event {
                    Event::Crowbar => illinois_zero(ta, tb, |s| seg.state(s)[nl + slot::V]),
                    Event::Stop(q) => illinois_zero(ta, tb, |s| {
                        net.stop_gap(q, &seg.state(s), &ms).unwrap_or(0.0)
                    }),
                    Event::CoilContact(q) => illinois_zero(ta, tb, |s| {
                        net.coil_gap(q, &seg.state(s), &ms).unwrap_or(0.0)
                    }),
                    Event::ThickWall(q) => {
                        illinois_zero(ta, tb, |s| net.wall_margin(q, &seg.state(s), &ms))
                    }
                    Event::Yield(q) => illinois_zero(ta, tb, |s| {
                        net.yield_excess(q, &seg.state(s), &ms) - settings.rel_tol
                    }),
                    Event::Unload(q) => {
                        let branch = seg.flags.branch[q];
                        illinois_zero(ta, tb, |s| net.flow_speed(q, branch, &seg.state(s), &ms))
                    }
                };
                (event, t_e)
            })
            .collect();
        let t_e = located.iter().map(|e| e.1).fold(f64::INFINITY, f64::min);
        seg.t_end = t_e;
        y = seg.state(t_e);
        segments.push(seg);
        t = t_e;
        let mut contact = false;
        // Shortest yield onset among the rings that yield here, in seconds.
        let mut onset = f64::INFINITY;
        // A ring's event is also its mirror partner's (the stepper reports one of each pair).
        let with_partners = located.iter().flat_map(|&(event, t_ev)| {
            let mirror = match event {
                Event::Stop(q) | Event::Yield(q) | Event::Unload(q) => {
                    let p = net.ring_partner(q);
                    (p != q).then_some(match event {
                        Event::Stop(_) => Event::Stop(p),
                        Event::Yield(_) => Event::Yield(p),
                        _ => Event::Unload(p),
                    })
                }
                _ => None,
            };
            std::iter::once((event, t_ev)).chain(mirror.map(|m| (m, t_ev)))
        });
        let located: Vec<(Event, f64)> = with_partners.collect();
        for &(event, t_ev) in &located {
            if t_ev > t_e * (1.0 + 1e-12) + 1e-18 {
                continue;
            }
            match event {
                Event::Crowbar => {
                    crowbar_time = Some(t_e);
                    flags.crowbarred = true;
                    y[nl + slot::V] = 0.0;
                }
                Event::Stop(q) => {
                    let v = y[lay.rings + 4 * q + 1] * ms.velocity;
                    impacts.push((q, t_e, v.abs()));
                    y[lay.mech + mslot::W_IMPACT] += 0.5 * net.ring_mass(q) * v * v / scales.energy;
                    y[lay.rings + 4 * q + 1] = 0.0;
                    flags.held[q] = true;
                    // Held, its stress stays what it was at the impact.
                    net.to_elastic(q, flags.branch[q], &mut y, &ms);
                    flags.branch[q] = Branch::Elastic;
                }
                Event::Yield(q) => {
                    if !flags.held[q] {
                        flags.branch[q] = net.yield_branch(q, &y, &ms);
                        onset = onset.min(net.onset_time(q, &y, &ms).unwrap_or(f64::INFINITY));
                    }
                }
                Event::Unload(q) => {
                    net.to_elastic(q, flags.branch[q], &mut y, &ms);
                    flags.branch[q] = Branch::Elastic;
                }
                Event::CoilContact(q) => {
                    stopped = Some(format!(
                        "workpiece ring {q} (z = {:.2} mm) reached the coil at t = {:.3} us; the \
                         run stops there",
                        net.ring_z0(q) * 1e3,
                        t_e * 1e6
                    ));
                    contact = true;
                }
                Event::ThickWall(q) => {
                    let r = net.ring_r0(q) + y[lay.rings + 4 * q] * ms.length;
                    stopped = Some(format!(
                        "workpiece ring {q} (z = {:.2} mm) collapsed to r = {:.2} mm at t = {:.3} \
                         us, where its wall reaches {:.0} % of its radius and the thin-ring model \
                         no longer holds; the run stops there (add a mandrel with \
                         motion.stop_radius)",
                        net.ring_z0(q) * 1e3,
                        r * 1e3,
                        t_e * 1e6,
                        net.wall_ratio_limit(q) * 100.0
                    ));
                    contact = true;
                }
            }
        }
        if onset.is_finite() && first_step > 0.0 {
            // The next segment starts with a step of twice the onset's duration (the segment
            // uses half the step it is given), not the step before the event, which the onset
            // transient rejects several times over; but not a thousand times below that step.
            // (Expansion demo: 2323 evaluations with the step before the event; starting
            // with 0.5, 1, 2 and 4 onset durations 2353, 2245, 2125 and 2299.)
            first_step = first_step.min(4.0 * onset).max(1e-3 * first_step);
        }
        if contact {
            break;
        }
        if t >= t_end {
            ended = true;
            break;
        }
    }
    if !ended && stopped.is_none() {
        return Err(EngineError::Solver {
            message: format!(
                "more than {max_segments} events (yield, unload, impact) before t = {:.3} us; \
                 the run stops rather than loop",
                t * 1e6
            ),
        });
    }
    let t_stop = segments.last().map_or(0.0, |s| s.t_end);
    let segment_at = |s: f64| -> &MotionSegment {
        segments.iter().find(|seg| s <= seg.t_end).unwrap_or_else(|| &segments[segments.len() - 1])
    };

    // Sampling.
    let n_samples =
        if stopped.is_some() { ((t_stop / dt_out).floor() as usize).max(1) + 1 } else { n_samples };
    let mut traces = Traces::default();
    let mut rings = RingTraces {
        radius: (0..nr).map(|q| net.ring_r0(q)).collect(),
        z: (0..nr).map(|q| net.ring_z0(q)).collect(),
        length: (0..nr).map(|q| net.ring_dz(q)).collect(),
        area: (0..nr).map(|q| tube.wall * net.ring_dz(q)).collect(),
        ..RingTraces::default()
    };
    let (face_sign, face_outer) = match arrangement {
        Some(Arrangement::CoilOutside) => (-1.0, true),
        _ => (1.0, false),
    };
    let mut peak_pressure: Option<PeakPressure> = None;
    let mut hoop_peak: f64 = 0.0;
    let mut coil_pressure_peak: f64 = 0.0;
    let turn_area = coil.radial_thickness * coil.axial_width;
    let coil_face_radius = match arrangement {
        Some(Arrangement::CoilOutside) => coil.mean_radius - coil.radial_thickness / 2.0,
        _ => coil.mean_radius + coil.radial_thickness / 2.0,
    };
    let mut max_disp = (0.0f64, 0.0f64);
    let mut max_vel = 0.0f64;
    let mut max_rate = 0.0f64;
    let mut di_dt_max = 0.0f64;
    let stride = n_samples.div_ceil(400).max(1);
    for k in 0..n_samples {
        let s = (k as f64 * dt_out).min(t_stop);
        let seg = segment_at(s);
        let ys = seg.state(s);
        let ev = net.evaluate(&ys, &scales, &ms, &seg.flags.branch, true)?;
        let i0 = ev.x[0];
        traces.time.push(s);
        traces.coil_current.push(i0);
        traces.capacitor_voltage.push(ys[nl + slot::V] * scales.volt);
        let w0 = net.base.mesh.workpiece_start();
        traces.workpiece_current.push(ev.i_f.rows(w0, ev.i_f.len() - w0).sum());
        traces.radial_force.push(ev.ring_lorentz.iter().sum());
        traces.axial_force.push(ev.axial_force);
        let mut p_max = f64::NEG_INFINITY;
        let mut ring_p = vec![0.0; nr];
        let mut ring_v = vec![0.0; nr];
        let mut ring_strain = vec![0.0; nr];
        let mut ring_temp = vec![0.0; nr];
        let mut ring_cur = vec![0.0; nr];
        let mut ring_z = vec![0.0; nr];
        let z_shift = ys[lay.mech + mslot::Z] * ms.length;
        for q in 0..nr {
            let r = ev.ring_radius[q];
            let face =
                if face_outer { r + ev.ring_wall[q] / 2.0 } else { r - ev.ring_wall[q] / 2.0 };
            let p = face_sign * ev.ring_lorentz[q]
                / (2.0 * std::f64::consts::PI * face * net.ring_dz(q));
            ring_p[q] = p;
            p_max = p_max.max(p);
            if peak_pressure.as_ref().is_none_or(|pk| p > pk.value) {
                peak_pressure =
                    Some(PeakPressure { value: p, ring: q, z: net.ring_z0(q), time: s });
            }
            let v = ys[lay.rings + 4 * q + 1] * ms.velocity;
            ring_v[q] = v;
            ring_strain[q] = (r / net.ring_r0(q)).ln();
            ring_z[q] = net.ring_z0(q) + z_shift;
            let disp = r - net.ring_r0(q);
            // Ties within rounding (a band of rings held at the die) keep the first ring found,
            // so that the reported position does not hop between them with the last digit.
            if disp.abs() > max_disp.0.abs() * (1.0 + 1e-9) {
                max_disp = (disp, net.ring_z0(q));
            }
            if v.abs() > max_vel.abs() {
                max_vel = v;
            }
            max_rate = max_rate.max((v / r).abs());
            ring_cur[q] = 0.0;
            ring_temp[q] = 0.0;
        }
        for (f, fil) in net.base.mesh.filaments[w0..].iter().enumerate() {
            if let crate::mesh::Part::Workpiece { ring, .. } = fil.part {
                ring_cur[ring] += ev.i_f[w0 + f];
                ring_temp[ring] += ys[lay.temps + w0 + f] * ms.temperature;
            }
        }
        let layers = net.base.mesh.workpiece_split.map_or(1, |sp| sp.radial) as f64;
        for t_q in ring_temp.iter_mut() {
            *t_q /= layers;
        }
        traces.peak_pressure.push(p_max);
        for &f in &ev.turn_force {
            let sigma = f / (2.0 * std::f64::consts::PI * turn_area);
            if sigma.abs() > hoop_peak.abs() {
                hoop_peak = sigma;
            }
            coil_pressure_peak = coil_pressure_peak
                .max(f.abs() / (2.0 * std::f64::consts::PI * coil_face_radius * coil.axial_width));
        }
        let keep = k % stride == 0 || k + 1 == n_samples;
        if keep {
            rings.time.push(s);
            rings.current.push(ring_cur);
            rings.pressure.push(ring_p);
            rings.axial_force.push(ev.ring_axial_force.clone());
            rings.radius_history.push(ev.ring_radius.clone());
            rings.velocity.push(ring_v);
            rings.strain.push(ring_strain);
            rings.temperature.push(ring_temp);
            rings.z_history.push(ring_z);
        }
    }

    // di/dt: exact at t = 0 (V0 (Λ⁻¹)₀₀, nothing moves yet; usually the peak), elsewhere central
    // differences of the sampled current (relative error about (ω Δt)²/6, 2e-4 at the default
    // grid), which saves two network evaluations per sample.
    di_dt_max = di_dt_max.max((bank.voltage * net.base.l_loops_inv[(0, 0)]).abs());
    for k in 1..traces.time.len().saturating_sub(1) {
        let h = traces.time[k + 1] - traces.time[k - 1];
        if h > 0.0 {
            di_dt_max = di_dt_max
                .max(((traces.coil_current[k + 1] - traces.coil_current[k - 1]) / h).abs());
        }
    }

    // Current peak and zeros on the continuous output.
    let i = &traces.coil_current;
    let tt = &traces.time;
    let ns = tt.len();
    let coil_current_at = |s: f64| -> f64 {
        let seg = segment_at(s);
        net.evaluate(&seg.state(s), &scales, &ms, &seg.flags.branch, false).map_or(0.0, |e| e.x[0])
    };
    let k_peak = argmax_abs(i);
    let sign = if i[k_peak] >= 0.0 { 1.0 } else { -1.0 };
    let (t_peak, i_peak) =
        golden_max(tt[k_peak.saturating_sub(1)], tt[(k_peak + 1).min(ns - 1)], |s| {
            sign * coil_current_at(s)
        });
    let zero_after = |from: usize| -> Option<(usize, f64)> {
        let s0 = if i[from] >= 0.0 { 1.0 } else { -1.0 };
        (from + 1..ns)
            .find(|&k| s0 * i[k] <= 0.0)
            .map(|k| (k, illinois_zero(tt[k - 1], tt[k], |s| s0 * coil_current_at(s))))
    };
    let first_zero = zero_after(k_peak);
    let second_zero = first_zero.and_then(|(k, _)| zero_after(k));
    let ringing_frequency = match (first_zero, second_zero) {
        (Some((_, z1)), Some((_, z2))) if z2 > z1 => Some(0.5 / (z2 - z1)),
        (Some((_, z1)), _) if z1 > 0.0 => Some(0.5 / z1),
        _ => None,
    };
    let v_min = traces.capacitor_voltage.iter().fold(f64::INFINITY, |m, v| m.min(*v));

    // Energy account.
    let y_end = segment_at(t_stop).state(t_stop);
    let ev_end = net.evaluate(&y_end, &scales, &ms, &segment_at(t_stop).flags.branch, true)?;
    let psi_end = y_end.rows(0, nl) * scales.psi;
    let v_end = y_end[nl + slot::V] * scales.volt;
    let mut kinetic = 0.5 * net.total_mass() * (y_end[lay.mech + mslot::VZ] * ms.velocity).powi(2);
    let mut elastic = 0.0;
    let mut final_speed = (y_end[lay.mech + mslot::VZ] * ms.velocity).abs();
    // Radial speed alone: a ring launched along the axis is meant to keep flying.
    let mut final_radial_speed = 0.0f64;
    let mut strain_range = [f64::INFINITY, f64::NEG_INFINITY];
    let mut max_plastic = 0.0f64;
    // Plastic flow in the last 5 % of the run: without it, any speed left is elastic ringing
    // about a settled plastic shape (springback oscillation, undamped in this model).
    let y_late = segment_at(0.95 * t_stop).state(0.95 * t_stop);
    let eq_strain =
        |y: &DVector<f64>, q: usize| net.flow().equivalent_strain(y[lay.rings + 4 * q + 3]);
    let still_flowing =
        (0..nr).any(|q| (eq_strain(&y_end, q) - eq_strain(&y_late, q)).abs() > 1e-6);
    for q in 0..nr {
        let v = y_end[lay.rings + 4 * q + 1] * ms.velocity;
        kinetic += 0.5 * net.ring_mass(q) * v * v;
        final_speed = final_speed.max(v.abs());
        final_radial_speed = final_radial_speed.max(v.abs());
        let sigma = ev_end.ring_stress[q];
        elastic += 0.5 * sigma * sigma / net.youngs_modulus() * net.ring_volume(q);
        let eps = (ev_end.ring_radius[q] / net.ring_r0(q)).ln();
        strain_range[0] = strain_range[0].min(eps);
        strain_range[1] = strain_range[1].max(eps);
        max_plastic = max_plastic.max(eq_strain(&y_end, q));
    }
    let w_internal = y_end[lay.mech + mslot::W_INTERNAL] * scales.energy;
    let impact = y_end[lay.mech + mslot::W_IMPACT] * scales.energy;
    let mut energy = EnergyAccount {
        initial: e0,
        bank_and_feeder: y_end[nl + slot::E_BANK] * scales.energy,
        coil: y_end[nl + slot::E_COIL] * scales.energy,
        workpiece: y_end[nl + slot::E_WORK] * scales.energy,
        crowbar: y_end[nl + slot::E_CROWBAR] * scales.energy,
        kinetic,
        elastic,
        plastic: w_internal - elastic,
        impact,
        magnetic: 0.5 * psi_end.dot(&ev_end.x),
        capacitor: 0.5 * bank.capacitance * v_end * v_end,
        relative_residual: 0.0,
    };
    let accounted = energy.bank_and_feeder
        + energy.coil
        + energy.workpiece
        + energy.crowbar
        + energy.kinetic
        + energy.elastic
        + energy.plastic
        + energy.impact
        + energy.magnetic
        + energy.capacitor;
    energy.relative_residual = (e0 - accounted) / e0;

    // Temperatures from the coupled heating state.
    let w0 = net.base.mesh.workpiece_start();
    let n_fil = net.base.mesh.filaments.len();
    let temp = |f: usize| y_end[lay.temps + f] * ms.temperature;
    let peak_coil_temperature = (0..w0).map(temp).fold(case.initial_temperature, f64::max);
    let peak_workpiece_temperature =
        Some((w0..n_fil).map(temp).fold(case.initial_temperature, f64::max));

    // In time order, rings in index order within one instant.
    impacts.sort_by(|a, b| a.1.total_cmp(&b.1).then(a.0.cmp(&b.0)));
    let motion = MotionSummary {
        max_displacement: max_disp.0,
        max_displacement_z: max_disp.1,
        max_velocity: max_vel,
        axial_displacement: y_end[lay.mech + mslot::Z] * ms.length,
        axial_velocity: y_end[lay.mech + mslot::VZ] * ms.velocity,
        first_impact_time: impacts.first().map(|i| i.1),
        max_impact_velocity: impacts.iter().map(|i| i.2).reduce(f64::max),
        rings_at_stop: impacts.len(),
        impacts,
        final_strain_range: if nr > 0 { strain_range } else { [0.0, 0.0] },
        max_plastic_strain: max_plastic,
        max_strain_rate: max_rate,
        efficiency: energy.plastic / e0,
        final_max_speed: final_speed,
        stopped: stopped.clone(),
        initial_wall: tube.wall,
        stop_radius: options.stop_radius,
    };
    let summary = Summary {
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
        peak_coil_hoop_stress: hoop_peak,
        peak_coil_pressure: coil_pressure_peak,
        peak_coil_temperature,
        peak_workpiece_temperature,
        energy,
        motion: Some(motion),
        end_time: t_stop,
    };
    let stats = SolverStats::from_segments(
        segments.iter().map(|seg| (seg.counts, seg.dt_range)),
        assembly_time,
        started.elapsed().as_secs_f64(),
        (settings.rel_tol, settings.abs_tol),
    );
    let mesh = &net.base.mesh;
    let mesh_info = MeshInfo {
        coil_filaments: mesh.coil_filaments(),
        coil_split: [mesh.coil_split.radial, mesh.coil_split.axial],
        workpiece_filaments: mesh.workpiece_filaments(),
        workpiece_split: mesh.workpiece_split.map_or([0, 0], |s| [s.radial, s.axial]),
        coil_skin_depth: ringpulse_physics::em::skin_depth(
            coil.material.resistivity,
            estimate.frequency,
        ),
        workpiece_skin_depth: Some(ringpulse_physics::em::skin_depth(
            tube.material.resistivity,
            estimate.frequency,
        )),
        loops: nl,
        coil_inductance: net.base.coil_inductance,
    };
    let mut warnings = collect_warnings(case, &summary, &traces, mesh_info.workpiece_skin_depth);
    if let Some(m) = &summary.motion {
        if let Some(msg) = &m.stopped {
            warnings.push(msg.clone());
        } else if final_radial_speed > 1.0 && still_flowing {
            warnings.push(format!(
                "the workpiece still moves radially at {:.1} m/s and still yields at the end \
                 time ({:.1} us): the final profile is not final; extend solver.end_time",
                final_radial_speed,
                summary.end_time * 1e6
            ));
        }
    }
    Ok(RunResult { traces, rings, summary, stats, mesh: mesh_info, warnings, probes: Vec::new() })
}
