//! The moving workpiece: coupled electromechanics, flow stress, Joule and plastic heating, die
//! contact.
//!
//! Each axial workpiece ring has a mean radius r(t) and radial velocity; all its radial layers
//! move with it and its wall thins by volume constancy (h = h0 r0 / r, axial length fixed).
//! The whole workpiece may also translate along z as a rigid body. The equation of motion of
//! ring q (thin ring, hoop stress; docs/theory.md, "Motion") is
//!
//! ```text
//! m_q r̈_q = F_q − 2π A_q σ_q,      F_q = ½ iᵀ (∂L/∂r_q) i
//! ```
//!
//! where F_q is the exact derivative of the inductance matrix actually used, including the
//! layer positions and the thickness change, so the energy account closes. Flux linkages stay
//! the circuit state; the moving blocks of the inductance matrix are rebuilt from the current
//! geometry, or updated to first order from the last rebuild while every ring stays within
//! [`MovingNetwork::linearization_shift`] of it (docs/theory.md, "Motion", bounds the error).
//! Only workpiece rows change: the coil block of the loop matrix is constant and is inverted once, the workpiece is eliminated through its Schur complement.
//!
//! Every filament carries its temperature: Joule heating with a linear resistivity law, plus
//! Taylor–Quinney plastic heating in the workpiece; resistances follow temperature and
//! geometry.

use std::cell::RefCell;

use crate::flow::{hoop_state, plastic_rate, FlowLaw, HoopState, TAYLOR_QUINNEY};
use nalgebra::{Cholesky, DMatrix, DVector, Dyn};
use ode_solvers::continuous_output_model::ContinuousOutputModel;
use ode_solvers::{Dopri5, OutputType, System};
use ringpulse_physics::{filament, inductance};

use crate::mesh::{Mesh, Part};
use crate::network::{invert_spd, project, LoopColumn, Network};
use crate::transient::{slot, Circuit, Scales, StepperSettings};
use crate::EngineError;

/// Mechanical properties of the workpiece used by the motion model.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WorkpieceMechanics {
    /// Mass density, in kg/m³.
    pub density: f64,
    /// Specific heat, in J/(kg K).
    pub specific_heat: f64,
    /// Young's modulus, in Pa.
    pub youngs_modulus: f64,
    /// Flow stress law.
    pub flow: FlowLaw,
}

/// A rigid stop for the workpiece rings.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Stop {
    /// Expansion into a die: a ring stops when its outer surface reaches this radius, in metres.
    Die(f64),
    /// Compression onto a mandrel: a ring stops when its inner surface reaches this radius, in
    /// metres.
    Mandrel(f64),
}

/// Per-ring constant data.
#[derive(Debug, Clone)]
struct Ring {
    /// Initial mean radius, in metres.
    r0: f64,
    /// Initial wall, in metres.
    h0: f64,
    /// Axial length, in metres.
    dz: f64,
    /// Initial axial centre, in metres.
    z0: f64,
    /// Mass, in kilograms.
    mass: f64,
    /// Initial cross-section area (wall × length), in square metres.
    area0: f64,
    /// Workpiece filament indices (0-based within the workpiece) of its layers, inner first.
    filaments: Vec<usize>,
}

/// Constant data of the moving network.
pub struct MovingNetwork {
    /// The network at the initial geometry (coil block, loops, initial matrices).
    pub base: Network,
    n_coil_loops: usize,
    coil_loops: Vec<LoopColumn>,
    a_inv: DMatrix<f64>,
    rings: Vec<Ring>,
    /// Coil-coil force factors ∂M/∂r for coil rows (constant), n_c × n_c.
    grad_r_cc: DMatrix<f64>,
    mech: WorkpieceMechanics,
    coil_heat_capacity: f64,
    coil_alpha: f64,
    work_alpha: f64,
    t_initial: f64,
    stop: Option<Stop>,
    /// Radius beyond which a ring would touch the coil (inner limit for expansion, outer for
    /// compression), as (limit, coil is inside).
    coil_limit: Option<(f64, bool)>,
    total_mass: f64,
    /// Smallest centre distance from a workpiece filament to a coil filament or to a filament
    /// of another ring, at the initial geometry, in metres.
    closest_pair: f64,
}

/// Layout of the state vector after the flux linkages.
#[derive(Debug, Clone, Copy)]
pub struct Layout {
    /// Number of loops.
    pub nl: usize,
    /// Offset of the mechanical block.
    pub mech: usize,
    /// Offset of the per-ring block (4 entries a ring).
    pub rings: usize,
    /// Offset of the filament temperatures.
    pub temps: usize,
    /// Total length.
    pub len: usize,
}

/// Scales of the mechanical part of the state.
#[derive(Debug, Clone, Copy)]
pub struct MechScales {
    /// Length scale, in metres.
    pub length: f64,
    /// Velocity scale, in m/s.
    pub velocity: f64,
    /// Temperature scale, in kelvin.
    pub temperature: f64,
}

/// Mechanical slots.
pub mod mslot {
    /// Work done by the magnetic forces on the workpiece, ∫ F·v dt.
    pub const W_MECH: usize = 0;
    /// Internal work of the hoop stress, ∫ σ ε̇ V dt (elastic energy plus plastic work).
    pub const W_INTERNAL: usize = 1;
    /// Rigid axial shift.
    pub const Z: usize = 2;
    /// Rigid axial velocity.
    pub const VZ: usize = 3;
    /// Kinetic energy lost at die impacts.
    pub const W_IMPACT: usize = 4;
    /// Number of slots.
    pub const COUNT: usize = 5;
}

/// Everything computed from one state.
#[derive(Debug, Clone, Default)]
pub struct Evaluation {
    /// Loop currents, in amperes.
    pub x: DVector<f64>,
    /// Filament currents, in amperes.
    pub i_f: DVector<f64>,
    /// Filament resistances, in ohms.
    pub r_f: DVector<f64>,
    /// Generalised radial force on each ring (the derivative of the magnetic co-energy with
    /// respect to the ring's mean radius, wall thinning included), in newtons. Drives the ring.
    pub ring_force: Vec<f64>,
    /// Net Lorentz radial force on each ring (sum over its cells at fixed section, as reported
    /// by the fixed-geometry engine), in newtons. Used for the reported pressure.
    pub ring_lorentz: Vec<f64>,
    /// Axial force on each ring, in newtons.
    pub ring_axial_force: Vec<f64>,
    /// Hoop stress of each ring, in pascals.
    pub ring_stress: Vec<f64>,
    /// Hoop state of each ring (stress, flow stress, yielding).
    pub ring_hoop: Vec<HoopState>,
    /// Mean temperature of each ring, in kelvin.
    pub ring_temperature: Vec<f64>,
    /// Mean radius of each ring, in metres.
    pub ring_radius: Vec<f64>,
    /// Wall of each ring, in metres.
    pub ring_wall: Vec<f64>,
    /// Radial force on each coil turn, in newtons.
    pub turn_force: Vec<f64>,
    /// Rigid axial force on the workpiece, in newtons.
    pub axial_force: f64,
}

/// The moving blocks of the inductance matrix with their force factors, at one geometry
/// (the anchor), and how they change to first order away from it.
///
/// `evaluate` builds them with the kernel; `evaluate_linearized` reuses them while every ring
/// stays within a small distance of the anchor (docs/theory.md, "Motion", for the error bound).
#[derive(Debug, Clone)]
pub struct MovingBlocks {
    /// Mean ring radii at the anchor, in metres.
    ring_radius: Vec<f64>,
    /// Rigid axial shift at the anchor, in metres.
    z_shift: f64,
    /// Coil-workpiece mutual inductances, n_c × n_w, in henries.
    l_cw: DMatrix<f64>,
    /// ∂M/∂r_f of workpiece filament f against coil filament j, n_w × n_c, in H/m.
    g_wc_r: DMatrix<f64>,
    /// ∂M/∂z_f of workpiece filament f against coil filament j, n_w × n_c, in H/m.
    g_wc_z: DMatrix<f64>,
    /// ∂M/∂r_j of coil filament j against workpiece filament f, n_c × n_w, in H/m.
    g_cw_r: DMatrix<f64>,
    /// Workpiece block, n_w × n_w, in henries.
    d: DMatrix<f64>,
    /// Workpiece force factors (∂M_kl/∂r_k, ½ ∂L_kk/∂r_k on the diagonal), in H/m.
    g_ww_r: DMatrix<f64>,
    /// ∂L_kk/∂(dr) of each workpiece cell at fixed radius, in H/m.
    self_dr: Vec<f64>,
    /// ∂r_f/∂r_q of each workpiece filament (dimensionless).
    drf: Vec<f64>,
    /// ∂dr_f/∂r_q of each workpiece filament (dimensionless).
    ddrf: Vec<f64>,
}

/// Geometry of the workpiece filaments for one state.
struct WorkGeometry {
    /// Filament radii, in metres.
    wr: Vec<f64>,
    /// Filament radial thickness, in metres.
    wdr: Vec<f64>,
    /// Filament axial centres, in metres.
    wz: Vec<f64>,
    /// ∂r_f/∂r_q (dimensionless).
    drf: Vec<f64>,
    /// ∂dr_f/∂r_q (dimensionless).
    ddrf: Vec<f64>,
    /// Mean ring radii, in metres.
    ring_radius: Vec<f64>,
    /// Ring walls, in metres.
    ring_wall: Vec<f64>,
    /// Rigid axial shift, in metres.
    z_shift: f64,
}

impl MovingNetwork {
    /// Prepares the moving network from the initial one.
    // Each argument is a distinct part of the set-up (network, two materials, stop, coil limit);
    // bundling them in a one-use struct would only move the list.
    #[allow(clippy::too_many_arguments)]
    pub fn new(
        base: Network,
        tube_initial_wall: f64,
        mech: WorkpieceMechanics,
        coil_material: &ringpulse_case::Material,
        work_material: &ringpulse_case::Material,
        t_initial: f64,
        stop: Option<Stop>,
        coil_limit: Option<(f64, bool)>,
    ) -> Result<MovingNetwork, EngineError> {
        let mesh = &base.mesh;
        let w0 = mesh.workpiece_start();
        let n_coil_loops =
            base.loops.iter().take_while(|col| col.iter().all(|&(f, _)| f < w0)).count();
        let coil_loops: Vec<LoopColumn> = base.loops[..n_coil_loops].to_vec();
        let l_cc = base.l_filaments.view((0, 0), (w0, w0)).into_owned();
        let mut a = project(&l_cc, &coil_loops);
        a[(0, 0)] += base.external_inductance;
        let a_inv = invert_spd(&a).ok_or(EngineError::IndefiniteInductance {
            conductor: "the coil (its own block)".into(),
        })?;
        let split = mesh.workpiece_split.unwrap_or(ringpulse_case::Split { radial: 1, axial: 0 });
        let mut rings: Vec<Ring> = Vec::with_capacity(split.axial);
        for (k, f) in mesh.filaments[w0..].iter().enumerate() {
            if let Part::Workpiece { ring, layer } = f.part {
                if layer == 0 {
                    let r0 = f.r - f.dr / 2.0 + tube_initial_wall / 2.0;
                    let area0 = tube_initial_wall * f.dz;
                    rings.push(Ring {
                        r0,
                        h0: tube_initial_wall,
                        dz: f.dz,
                        z0: f.z,
                        mass: mech.density * 2.0 * std::f64::consts::PI * r0 * area0,
                        area0,
                        filaments: Vec::with_capacity(split.radial),
                    });
                }
                if let Some(r) = rings.get_mut(ring) {
                    r.filaments.push(k);
                }
            }
        }
        let grad_r_cc = base.grad_r.view((0, 0), (w0, w0)).into_owned();
        let total_mass = rings.iter().map(|r| r.mass).sum();
        let mut closest_pair = f64::INFINITY;
        for (k, f) in mesh.filaments.iter().enumerate().skip(w0) {
            for (j, g) in mesh.filaments.iter().enumerate() {
                let same_ring = match (f.part, g.part) {
                    (Part::Workpiece { ring: a, .. }, Part::Workpiece { ring: b, .. }) => a == b,
                    _ => false,
                };
                if j != k && !same_ring {
                    closest_pair = closest_pair.min((f.r - g.r).hypot(f.z - g.z));
                }
            }
        }
        Ok(MovingNetwork {
            n_coil_loops,
            coil_loops,
            a_inv,
            rings,
            grad_r_cc,
            mech,
            coil_heat_capacity: coil_material.density * coil_material.specific_heat,
            coil_alpha: coil_material.temperature_coefficient,
            work_alpha: work_material.temperature_coefficient,
            t_initial,
            stop,
            coil_limit,
            total_mass,
            closest_pair,
            base,
        })
    }

    /// Largest ring displacement, in metres, over which the moving blocks are updated to first
    /// order before they are rebuilt, for a stepper relative tolerance `rel_tol`:
    /// 0.2 √rel_tol times the closest distance from a workpiece filament to a coil filament or
    /// to another ring (docs/theory.md, "Motion", gives the error bound); 0 for a workpiece
    /// with nothing near it (every evaluation then rebuilds).
    pub fn linearization_shift(&self, rel_tol: f64) -> f64 {
        let shift = 0.2 * rel_tol.max(0.0).sqrt() * self.closest_pair;
        if shift.is_finite() {
            shift
        } else {
            0.0
        }
    }

    /// Number of workpiece rings.
    pub fn n_rings(&self) -> usize {
        self.rings.len()
    }

    /// The state layout.
    pub fn layout(&self) -> Layout {
        let nl = self.base.n_loops();
        let mech = nl + slot::COUNT;
        let rings = mech + mslot::COUNT;
        let temps = rings + 4 * self.rings.len();
        Layout { nl, mech, rings, temps, len: temps + self.base.mesh.filaments.len() }
    }

    /// Initial mean radius of ring q, in metres.
    pub fn ring_r0(&self, q: usize) -> f64 {
        self.rings[q].r0
    }

    /// Initial axial centre of ring q, in metres.
    pub fn ring_z0(&self, q: usize) -> f64 {
        self.rings[q].z0
    }

    /// Axial length of ring q, in metres.
    pub fn ring_dz(&self, q: usize) -> f64 {
        self.rings[q].dz
    }

    /// Mass of ring q, in kilograms.
    pub fn ring_mass(&self, q: usize) -> f64 {
        self.rings[q].mass
    }

    /// Total workpiece mass, in kilograms.
    pub fn total_mass(&self) -> f64 {
        self.total_mass
    }

    /// Volume of ring q (constant), in cubic metres.
    pub fn ring_volume(&self, q: usize) -> f64 {
        2.0 * std::f64::consts::PI * self.rings[q].r0 * self.rings[q].area0
    }

    /// The rigid stop, if any.
    pub fn stop(&self) -> Option<Stop> {
        self.stop
    }

    /// The radius at which ring q touches the coil, if the coil is radially on one side.
    pub fn coil_limit(&self) -> Option<(f64, bool)> {
        self.coil_limit
    }

    /// Young's modulus of the workpiece, in Pa.
    pub fn youngs_modulus(&self) -> f64 {
        self.mech.youngs_modulus
    }

    /// Replaces the constant coil block inverse after extra inductance in the bank loop.
    pub fn add_bank_loop_inductance(&mut self, extra: f64) -> Result<(), EngineError> {
        if extra == 0.0 {
            return Ok(());
        }
        let w0 = self.base.mesh.workpiece_start();
        let l_cc = self.base.l_filaments.view((0, 0), (w0, w0)).into_owned();
        self.base.external_inductance += extra;
        let mut a = project(&l_cc, &self.coil_loops);
        a[(0, 0)] += self.base.external_inductance;
        self.a_inv = invert_spd(&a).ok_or(EngineError::IndefiniteInductance {
            conductor: "the coil (its own block)".into(),
        })?;
        Ok(())
    }

    /// Workpiece filament geometry of a scaled state.
    fn geometry(&self, y: &DVector<f64>, ms: &MechScales) -> Result<WorkGeometry, EngineError> {
        let lay = self.layout();
        let mesh: &Mesh = &self.base.mesh;
        let nw = mesh.filaments.len() - mesh.workpiece_start();
        let nr = self.rings.len();
        let z_shift = y[lay.mech + mslot::Z] * ms.length;
        let mut g = WorkGeometry {
            wr: vec![0.0; nw],
            wdr: vec![0.0; nw],
            wz: vec![0.0; nw],
            drf: vec![0.0; nw],
            ddrf: vec![0.0; nw],
            ring_radius: vec![0.0; nr],
            ring_wall: vec![0.0; nr],
            z_shift,
        };
        for (q, ring) in self.rings.iter().enumerate() {
            let r = ring.r0 + y[lay.rings + 4 * q] * ms.length;
            let h = ring.h0 * ring.r0 / r;
            g.ring_radius[q] = r;
            g.ring_wall[q] = h;
            let layers = ring.filaments.len() as f64;
            for (j, &k) in ring.filaments.iter().enumerate() {
                let c = (j as f64 + 0.5) / layers - 0.5;
                g.wr[k] = r + c * h;
                g.wdr[k] = h / layers;
                g.wz[k] = ring.z0 + z_shift;
                g.drf[k] = 1.0 - c * h / r;
                g.ddrf[k] = -(h / layers) / r;
            }
        }
        if g.wr.iter().any(|r| !(r.is_finite() && *r > 0.0)) {
            return Err(EngineError::Solver {
                message: "a workpiece ring radius became non-positive".into(),
            });
        }
        Ok(g)
    }

    /// The moving blocks at a geometry, from the kernel (n_w · (n_c + n_w/2) pair evaluations).
    fn blocks(&self, geo: &WorkGeometry) -> MovingBlocks {
        let mesh: &Mesh = &self.base.mesh;
        let n = mesh.filaments.len();
        let w0 = mesh.workpiece_start();
        let nw = n - w0;
        let (wr, wdr, wz) = (&geo.wr, &geo.wdr, &geo.wz);
        // Coil-workpiece and workpiece-workpiece blocks with their gradients.
        let mut l_cw = DMatrix::<f64>::zeros(w0, nw);
        let mut g_wc_r = DMatrix::<f64>::zeros(nw, w0); // ∂M/∂r_f (f workpiece) against coil j
        let mut g_wc_z = DMatrix::<f64>::zeros(nw, w0);
        let mut g_cw_r = DMatrix::<f64>::zeros(w0, nw); // ∂M/∂r_j (j coil) against workpiece f
        for k in 0..nw {
            for j in 0..w0 {
                let c = &mesh.filaments[j];
                let g = filament::mutual_inductance_with_gradient(c.r, wr[k], wz[k] - c.z);
                l_cw[(j, k)] = g.m;
                g_wc_r[(k, j)] = g.dm_db;
                g_wc_z[(k, j)] = g.dm_dz;
                g_cw_r[(j, k)] = g.dm_da;
            }
        }
        let mut d = DMatrix::<f64>::zeros(nw, nw);
        let mut g_ww_r = DMatrix::<f64>::zeros(nw, nw);
        let mut self_dr = vec![0.0; nw];
        for k in 0..nw {
            let dz = mesh.filaments[w0 + k].dz;
            d[(k, k)] = inductance::ring_rectangular(wr[k], wdr[k], dz);
            g_ww_r[(k, k)] = 0.5 * inductance::ring_rectangular_dradius(wr[k], wdr[k], dz);
            // ∂L_kk/∂(dr) at fixed radius, by a central difference of the GMD formula (the
            // step 1e-5 relative keeps its error near 1e-10, far below the solver tolerance).
            let e = 1e-5 * wdr[k];
            self_dr[k] = (inductance::ring_rectangular(wr[k], wdr[k] + e, dz)
                - inductance::ring_rectangular(wr[k], wdr[k] - e, dz))
                / (2.0 * e);
            for l in (k + 1)..nw {
                let g = filament::mutual_inductance_with_gradient(wr[k], wr[l], wz[l] - wz[k]);
                d[(k, l)] = g.m;
                d[(l, k)] = g.m;
                g_ww_r[(l, k)] = g.dm_db;
                g_ww_r[(k, l)] = g.dm_da;
            }
        }
        MovingBlocks {
            ring_radius: geo.ring_radius.clone(),
            z_shift: geo.z_shift,
            l_cw,
            g_wc_r,
            g_wc_z,
            g_cw_r,
            d,
            g_ww_r,
            self_dr,
            drf: geo.drf.clone(),
            ddrf: geo.ddrf.clone(),
        }
    }

    /// The moving blocks to first order about `anchor`: L = L(anchor) + Σ_q ∂L/∂r_q Δr_q +
    /// ∂L/∂z Δz, with the force factors held at the anchor. The force factors are then the
    /// exact derivatives of the matrix returned, so the energy account still closes.
    // `k` and `l` index filaments in several per-filament vectors and matrices at once.
    #[allow(clippy::needless_range_loop)]
    fn linearized_blocks(&self, anchor: &MovingBlocks, geo: &WorkGeometry) -> MovingBlocks {
        let mesh: &Mesh = &self.base.mesh;
        let w0 = mesh.workpiece_start();
        let nw = mesh.filaments.len() - w0;
        let mut dr = vec![0.0; nw];
        for (q, ring) in self.rings.iter().enumerate() {
            for &k in &ring.filaments {
                dr[k] = geo.ring_radius[q] - anchor.ring_radius[q];
            }
        }
        let dz = geo.z_shift - anchor.z_shift;
        let mut out = anchor.clone();
        for k in 0..nw {
            // dL_jk/dr_q = ∂M/∂r_k · ∂r_k/∂r_q.
            let a = anchor.drf[k] * dr[k];
            for j in 0..w0 {
                out.l_cw[(j, k)] += anchor.g_wc_r[(k, j)] * a + anchor.g_wc_z[(k, j)] * dz;
            }
        }
        for l in 0..nw {
            let bl = anchor.drf[l] * dr[l];
            for k in 0..nw {
                let change = if k == l {
                    (2.0 * anchor.g_ww_r[(k, k)] * anchor.drf[k]
                        + anchor.self_dr[k] * anchor.ddrf[k])
                        * dr[k]
                } else {
                    anchor.g_ww_r[(k, l)] * anchor.drf[k] * dr[k] + anchor.g_ww_r[(l, k)] * bl
                };
                out.d[(k, l)] += change;
            }
        }
        out
    }

    /// Evaluates currents, resistances, forces and stresses of a scaled state, with the moving
    /// blocks rebuilt exactly by the kernel.
    pub fn evaluate(
        &self,
        y: &DVector<f64>,
        scales: &Scales,
        ms: &MechScales,
    ) -> Result<Evaluation, EngineError> {
        let geo = self.geometry(y, ms)?;
        let blocks = self.blocks(&geo);
        self.evaluate_with(y, scales, ms, &geo, &blocks)
    }

    /// [`MovingNetwork::evaluate`] with the moving blocks updated to first order from `cache`
    /// while no ring has moved more than `max_shift` metres (radially or axially) since the
    /// cache was built; otherwise the blocks are rebuilt exactly and the cache replaced.
    /// Returns whether it rebuilt.
    pub fn evaluate_linearized(
        &self,
        y: &DVector<f64>,
        scales: &Scales,
        ms: &MechScales,
        cache: &mut Option<MovingBlocks>,
        max_shift: f64,
    ) -> Result<(Evaluation, bool), EngineError> {
        let geo = self.geometry(y, ms)?;
        let near = cache.as_ref().filter(|a| {
            (geo.z_shift - a.z_shift).abs() <= max_shift
                && geo
                    .ring_radius
                    .iter()
                    .zip(&a.ring_radius)
                    .all(|(r, ra)| (r - ra).abs() <= max_shift)
        });
        match near {
            Some(anchor) => {
                let blocks = self.linearized_blocks(anchor, &geo);
                Ok((self.evaluate_with(y, scales, ms, &geo, &blocks)?, false))
            }
            None => {
                let blocks = self.blocks(&geo);
                let ev = self.evaluate_with(y, scales, ms, &geo, &blocks)?;
                *cache = Some(blocks);
                Ok((ev, true))
            }
        }
    }

    fn evaluate_with(
        &self,
        y: &DVector<f64>,
        scales: &Scales,
        ms: &MechScales,
        geo: &WorkGeometry,
        blocks: &MovingBlocks,
    ) -> Result<Evaluation, EngineError> {
        let lay = self.layout();
        let mesh: &Mesh = &self.base.mesh;
        let n = mesh.filaments.len();
        let w0 = mesh.workpiece_start();
        let nw = n - w0;
        let nr = self.rings.len();
        let (wr, wdr) = (&geo.wr, &geo.wdr);
        let MovingBlocks { l_cw, g_wc_r, g_wc_z, g_cw_r, d, g_ww_r, self_dr, drf, ddrf, .. } =
            blocks;
        let ring_radius = geo.ring_radius.clone();
        let ring_wall = geo.ring_wall.clone();
        // Loop blocks: B = Pcᵀ L_cw, K = A⁻¹ B, S = D − Bᵀ K.
        let ncl = self.n_coil_loops;
        let mut b = DMatrix::<f64>::zeros(ncl, nw);
        for (c, col) in self.coil_loops.iter().enumerate() {
            for &(f, a) in col {
                for w in 0..nw {
                    b[(c, w)] += a * l_cw[(f, w)];
                }
            }
        }
        let k_mat = &self.a_inv * &b;
        let s = d - b.transpose() * &k_mat;
        let chol: Cholesky<f64, Dyn> =
            Cholesky::new(s).ok_or_else(|| EngineError::IndefiniteInductance {
                conductor: "the moving workpiece (cells too close to the coil or too deformed)"
                    .into(),
            })?;
        let nl = lay.nl;
        let psi = y.rows(0, nl) * scales.psi;
        let psi_c = psi.rows(0, ncl).into_owned();
        let psi_w = psi.rows(ncl, nw).into_owned();
        let y1 = &self.a_inv * &psi_c;
        let x_w = chol.solve(&(psi_w - b.transpose() * &y1));
        let x_c = y1 - &k_mat * &x_w;
        let mut x = DVector::zeros(nl);
        x.rows_mut(0, ncl).copy_from(&x_c);
        x.rows_mut(ncl, nw).copy_from(&x_w);
        let mut i_f = DVector::zeros(n);
        self.base.filament_currents(&x, &mut i_f);
        let i_c = i_f.rows(0, w0).into_owned();
        let i_w = i_f.rows(w0, nw).into_owned();
        // Resistances from temperature and geometry.
        let mut r_f = DVector::zeros(n);
        for f in 0..n {
            let t = y[lay.temps + f] * ms.temperature;
            let fil = &mesh.filaments[f];
            let (alpha, r, dr) = if f < w0 {
                (self.coil_alpha, fil.r, fil.dr)
            } else {
                (self.work_alpha, wr[f - w0], wdr[f - w0])
            };
            let rho = fil.resistivity * (1.0 + alpha * (t - self.t_initial)).max(1e-3);
            r_f[f] = inductance::ring_resistance(rho, r, dr, fil.dz);
        }
        // Forces on workpiece filaments and the generalised ring forces.
        let fr_c = g_wc_r * &i_c; // Σ_j∈coil ∂M/∂r_f i_j
        let fr_w = g_ww_r * &i_w; // includes ½ ∂L_ff/∂r_f i_f on the diagonal
        let fz_c = g_wc_z * &i_c;
        let mut ring_force = vec![0.0; nr];
        let mut ring_lorentz = vec![0.0; nr];
        let mut ring_axial_force = vec![0.0; nr];
        let mut axial_force = 0.0;
        for (q, ring) in self.rings.iter().enumerate() {
            for &k in &ring.filaments {
                let radial = i_w[k] * (fr_c[k] + fr_w[k]);
                ring_force[q] += radial * drf[k] + 0.5 * i_w[k] * i_w[k] * self_dr[k] * ddrf[k];
                ring_lorentz[q] += radial;
                let fz = i_w[k] * fz_c[k];
                ring_axial_force[q] += fz;
                axial_force += fz;
            }
        }
        // Coil turn radial forces (coil held): coil-coil constant part plus coupling.
        let mut turn_force = vec![0.0; mesh.turns];
        let fc = &self.grad_r_cc * &i_c + g_cw_r * &i_w;
        for (f, fil) in mesh.filaments[..w0].iter().enumerate() {
            if let Part::Coil { turn } = fil.part {
                turn_force[turn] += i_c[f] * fc[f];
            }
        }
        // Hoop stresses.
        let mut ring_stress = vec![0.0; nr];
        let mut ring_hoop = Vec::with_capacity(nr);
        let mut ring_temperature = vec![0.0; nr];
        for (q, ring) in self.rings.iter().enumerate() {
            let base_q = lay.rings + 4 * q;
            let r = ring_radius[q];
            let v = y[base_q + 1] * ms.velocity;
            let eps = (r / ring.r0).ln();
            let t_ring = ring.filaments.iter().map(|&k| y[lay.temps + w0 + k]).sum::<f64>()
                / ring.filaments.len().max(1) as f64
                * ms.temperature;
            let st = hoop_state(
                eps,
                y[base_q + 2],
                y[base_q + 3],
                v / r,
                t_ring,
                self.mech.youngs_modulus,
                &self.mech.flow,
            );
            ring_stress[q] = st.stress;
            ring_hoop.push(st);
            ring_temperature[q] = t_ring;
        }
        Ok(Evaluation {
            x,
            i_f,
            r_f,
            ring_force,
            ring_lorentz,
            ring_axial_force,
            ring_stress,
            ring_hoop,
            ring_temperature,
            ring_radius,
            ring_wall,
            turn_force,
            axial_force,
        })
    }
}

/// Switches that change between segments of a run.
#[derive(Debug, Clone, PartialEq)]
pub struct Flags {
    /// The crowbar has closed.
    pub crowbarred: bool,
    /// Rings held at the stop.
    pub held: Vec<bool>,
}

/// An event that ends a segment.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Event {
    /// The capacitor voltage reached zero (crowbar closes).
    Crowbar,
    /// Ring q reached the die or mandrel.
    Stop(usize),
    /// Ring q reached the coil.
    CoilContact(usize),
    /// The wall of ring q reached its limit ratio to the radius (a tube collapsing toward the
    /// axis; [`MovingNetwork::wall_ratio_limit`]): the thin-ring model no longer holds.
    ThickWall(usize),
}

/// Largest wall over mean radius h/r of a ring that the thin-ring model is used for (a ring
/// that starts thicker may reach 1.5 times its initial ratio). A tube
/// compressed without a mandrel thickens as h = h0 r0 / r; past this ratio the run stops with
/// a message (the hoop-stress and filament-cell assumptions fail, and the inductance matrix of
/// the thickened cells soon stops being positive definite: the compression demo without its
/// mandrel loses it near h/r = 0.25).
pub const THIN_WALL_LIMIT: f64 = 0.2;

/// The right-hand side with motion.
pub struct MotionRhs<'a> {
    /// The moving network.
    pub net: &'a MovingNetwork,
    circuit: Circuit,
    scales: Scales,
    ms: MechScales,
    flags: Flags,
    watch_crowbar: bool,
    last: RefCell<Option<EngineError>>,
    last_t: f64,
    last_y: Option<DVector<f64>>,
    /// The events that stopped the segment, with their bracket (t_before, t_after).
    pub event: Option<(Vec<Event>, f64, f64)>,
    /// Smallest and largest accepted step, in seconds.
    pub dt_range: (f64, f64),
    /// Called with (time, end time) after each accepted step.
    progress: Option<&'a dyn Fn(f64, f64)>,
    t_end: f64,
    /// The moving blocks at the last exact rebuild, updated to first order in between.
    blocks: RefCell<Option<MovingBlocks>>,
    /// Largest ring displacement since the last rebuild before the blocks are rebuilt, in
    /// metres.
    pub max_shift: f64,
    /// Number of exact rebuilds of the moving blocks.
    pub rebuilds: std::cell::Cell<u64>,
}

impl<'a> MotionRhs<'a> {
    /// A right-hand side for one segment.
    pub fn new(
        net: &'a MovingNetwork,
        circuit: Circuit,
        scales: Scales,
        ms: MechScales,
        flags: Flags,
        watch_crowbar: bool,
        t0: f64,
    ) -> MotionRhs<'a> {
        MotionRhs {
            net,
            circuit,
            scales,
            ms,
            flags,
            watch_crowbar,
            last: RefCell::new(None),
            last_t: t0,
            last_y: None,
            event: None,
            dt_range: (f64::INFINITY, 0.0),
            progress: None,
            t_end: 0.0,
            blocks: RefCell::new(None),
            max_shift: 0.0,
            rebuilds: std::cell::Cell::new(0),
        }
    }

    /// The first error met while evaluating (the stepper cannot return one).
    pub fn take_error(&self) -> Option<EngineError> {
        self.last.borrow_mut().take()
    }

    /// Time derivative of a scaled state.
    pub fn derivative(&self, y: &DVector<f64>, dy: &mut DVector<f64>) {
        dy.fill(0.0);
        let evaluated = self.net.evaluate_linearized(
            y,
            &self.scales,
            &self.ms,
            &mut self.blocks.borrow_mut(),
            self.max_shift,
        );
        let ev = match evaluated {
            Ok((ev, rebuilt)) => {
                if rebuilt {
                    self.rebuilds.set(self.rebuilds.get() + 1);
                }
                ev
            }
            Err(e) => {
                let mut slot_err = self.last.borrow_mut();
                if slot_err.is_none() {
                    *slot_err = Some(e);
                }
                // A NaN derivative makes the stepper reject and shrink, then stop.
                dy.fill(f64::NAN);
                return;
            }
        };
        let net = self.net;
        let lay = net.layout();
        let nl = lay.nl;
        let mesh = &net.base.mesh;
        let n = mesh.filaments.len();
        let w0 = mesh.workpiece_start();
        let sc = &self.scales;
        let ms = &self.ms;
        // Circuit.
        let mut drop_f = DVector::zeros(n);
        let mut e_coil = 0.0;
        let mut e_work = 0.0;
        for f in 0..n {
            let i = ev.i_f[f];
            drop_f[f] = ev.r_f[f] * i;
            if f < w0 {
                e_coil += ev.r_f[f] * i * i;
            } else {
                e_work += ev.r_f[f] * i * i;
            }
        }
        let mut drop_l = DVector::zeros(nl);
        net.base.loop_sums(&drop_f, &mut drop_l);
        let i0 = ev.x[0];
        let v = y[nl + slot::V] * sc.volt;
        let source = if self.flags.crowbarred { 0.0 } else { v };
        let r_bank = self.circuit.external_resistance;
        let r_cb = if self.flags.crowbarred { self.circuit.crowbar_resistance } else { 0.0 };
        for k in 0..nl {
            dy[k] = -drop_l[k] / sc.psi;
        }
        dy[0] += (source - (r_bank + r_cb) * i0) / sc.psi;
        dy[nl + slot::V] =
            if self.flags.crowbarred { 0.0 } else { -i0 / self.circuit.capacitance / sc.volt };
        dy[nl + slot::E_BANK] = r_bank * i0 * i0 / sc.energy;
        dy[nl + slot::E_COIL] = e_coil / sc.energy;
        dy[nl + slot::E_WORK] = e_work / sc.energy;
        dy[nl + slot::E_CROWBAR] = r_cb * i0 * i0 / sc.energy;
        dy[nl + slot::CHARGE] = i0.abs() / sc.charge;
        dy[nl + slot::ACTION] = i0 * i0 / sc.action;
        let mech = &net.mech;
        // Joule heating; the mean rate of each ring also enters its plastic consistency.
        let mut ring_t_dot = vec![0.0; net.rings.len()];
        for f in 0..n {
            let fil = &mesh.filaments[f];
            let p = ev.r_f[f] * ev.i_f[f] * ev.i_f[f];
            let rate = if f < w0 {
                p / (2.0 * std::f64::consts::PI * fil.r * fil.dr * fil.dz * net.coil_heat_capacity)
            } else {
                let q = match fil.part {
                    Part::Workpiece { ring, .. } => ring,
                    Part::Coil { .. } => 0,
                };
                let layers = net.rings[q].filaments.len().max(1) as f64;
                let r = p / (net.ring_volume(q) / layers * mech.density * mech.specific_heat);
                ring_t_dot[q] += r / layers;
                r
            };
            dy[lay.temps + f] += rate / ms.temperature;
        }
        // Mechanics.
        let mut w_mech = 0.0;
        let mut w_int = 0.0;
        let vz = y[lay.mech + mslot::VZ] * ms.velocity;
        dy[lay.mech + mslot::Z] = vz / ms.length;
        dy[lay.mech + mslot::VZ] = ev.axial_force / net.total_mass / ms.velocity;
        w_mech += ev.axial_force * vz;
        // `q` indexes the ring, its state slots and four per-ring vectors at once.
        #[allow(clippy::needless_range_loop)]
        for q in 0..net.rings.len() {
            let base_q = lay.rings + 4 * q;
            let ring = &net.rings[q];
            let v_q = y[base_q + 1] * ms.velocity;
            let area = ring.area0 * ring.r0 / ev.ring_radius[q];
            let sigma = ev.ring_stress[q];
            if self.flags.held[q] {
                // Held against the stop: no motion, no strain change.
                dy[base_q] = 0.0;
                dy[base_q + 1] = 0.0;
            } else {
                dy[base_q] = v_q / ms.length;
                let acc =
                    (ev.ring_force[q] - 2.0 * std::f64::consts::PI * area * sigma) / ring.mass;
                dy[base_q + 1] = acc / ms.velocity;
                w_mech += ev.ring_force[q] * v_q;
                w_int += 2.0 * std::f64::consts::PI * area * sigma * v_q;
            }
            let rate = if self.flags.held[q] {
                0.0
            } else {
                let r = ev.ring_radius[q];
                let acc = dy[base_q + 1] * ms.velocity;
                // d(ε̇)/dt for ε̇ = v/r.
                let rate_dot = acc / r - (v_q / r).powi(2);
                plastic_rate(
                    &ev.ring_hoop[q],
                    y[base_q + 3],
                    v_q / r,
                    rate_dot,
                    ev.ring_temperature[q],
                    ring_t_dot[q],
                    mech.youngs_modulus,
                    &mech.flow,
                )
            };
            dy[base_q + 2] = rate;
            dy[base_q + 3] = rate.abs();
            // Taylor–Quinney plastic heating, shared by the ring's filaments.
            let heat = TAYLOR_QUINNEY * sigma * rate / (mech.density * mech.specific_heat);
            for &k in &ring.filaments {
                dy[lay.temps + w0 + k] += heat / ms.temperature;
            }
        }
        dy[lay.mech + mslot::W_MECH] = w_mech / sc.energy;
        dy[lay.mech + mslot::W_INTERNAL] = w_int / sc.energy;
    }

    /// Every event whose condition changed over the last step (several rings may reach the
    /// stop in one step; the caller locates each and takes the earliest).
    fn detect(&self, y_prev: &DVector<f64>, y: &DVector<f64>) -> Vec<Event> {
        let lay = self.net.layout();
        let mut out = Vec::new();
        if self.watch_crowbar
            && !self.flags.crowbarred
            && y_prev[lay.nl + slot::V] > 0.0
            && y[lay.nl + slot::V] <= 0.0
        {
            out.push(Event::Crowbar);
        }
        for q in 0..self.net.rings.len() {
            if self.flags.held[q] {
                continue;
            }
            if let Some(g) = self.net.stop_gap(q, y, &self.ms) {
                if g <= 0.0 {
                    out.push(Event::Stop(q));
                }
            }
            if let Some(g) = self.net.coil_gap(q, y, &self.ms) {
                if g <= 0.0 {
                    out.push(Event::CoilContact(q));
                }
            }
            if self.net.wall_margin(q, y, &self.ms) <= 0.0 {
                out.push(Event::ThickWall(q));
            }
        }
        out
    }
}

impl MovingNetwork {
    /// Gap to the stop of ring q, in metres (positive while free), if there is a stop.
    pub fn stop_gap(&self, q: usize, y: &DVector<f64>, ms: &MechScales) -> Option<f64> {
        let lay = self.layout();
        let ring = &self.rings[q];
        let r = ring.r0 + y[lay.rings + 4 * q] * ms.length;
        let h = ring.h0 * ring.r0 / r;
        match self.stop? {
            Stop::Die(rd) => Some(rd - (r + h / 2.0)),
            Stop::Mandrel(rm) => Some((r - h / 2.0) - rm),
        }
    }

    /// The largest wall-to-radius ratio h/r ring q may reach: [`THIN_WALL_LIMIT`], or 1.5
    /// times its initial ratio for a ring that starts thick (a short launch ring).
    pub fn wall_ratio_limit(&self, q: usize) -> f64 {
        let ring = &self.rings[q];
        THIN_WALL_LIMIT.max(1.5 * ring.h0 / ring.r0)
    }

    /// limit × r − h of ring q, in metres (see [`MovingNetwork::wall_ratio_limit`]): positive
    /// while the ring's wall is within the thin-ring model's range.
    pub fn wall_margin(&self, q: usize, y: &DVector<f64>, ms: &MechScales) -> f64 {
        let lay = self.layout();
        let ring = &self.rings[q];
        let r = ring.r0 + y[lay.rings + 4 * q] * ms.length;
        self.wall_ratio_limit(q) * r - ring.h0 * ring.r0 / r
    }

    /// Gap to the coil of ring q, in metres (positive while clear), if the coil is on one side.
    pub fn coil_gap(&self, q: usize, y: &DVector<f64>, ms: &MechScales) -> Option<f64> {
        let lay = self.layout();
        let ring = &self.rings[q];
        let r = ring.r0 + y[lay.rings + 4 * q] * ms.length;
        let h = ring.h0 * ring.r0 / r;
        let (limit, coil_inside) = self.coil_limit?;
        Some(if coil_inside { (r - h / 2.0) - limit } else { limit - (r + h / 2.0) })
    }
}

impl System<f64, DVector<f64>> for &mut MotionRhs<'_> {
    fn system(&self, _t: f64, y: &DVector<f64>, dy: &mut DVector<f64>) {
        self.derivative(y, dy);
    }

    fn solout(&mut self, t: f64, y: &DVector<f64>, _dy: &DVector<f64>) -> bool {
        let dt = t - self.last_t;
        if dt > 0.0 {
            self.dt_range.0 = self.dt_range.0.min(dt);
            self.dt_range.1 = self.dt_range.1.max(dt);
        }
        if !y.iter().all(|v| v.is_finite()) {
            return true;
        }
        // Every stage of an accepted step evaluated cleanly (a failed evaluation returns NaN
        // derivatives, which make the step's error estimate NaN and the step rejected), so a
        // failure recorded before this point came from a rejected trial step that overshot
        // into an impossible geometry: forget it. A failure the stepper cannot step around
        // ends the integration (step size too small) and is then reported.
        self.last.borrow_mut().take();
        let events = match self.last_y.as_ref() {
            Some(prev) => self.detect(prev, y),
            None => Vec::new(),
        };
        let stop = !events.is_empty();
        if stop {
            self.event = Some((events, self.last_t, t));
        }
        self.last_t = t;
        self.last_y = Some(y.clone());
        if let Some(report) = self.progress {
            report(t, self.t_end);
        }
        stop
    }
}

/// One integrated segment of a motion run.
pub struct MotionSegment {
    /// Start time, in seconds.
    pub t_start: f64,
    /// End time, in seconds.
    pub t_end: f64,
    /// Continuous output of the scaled state.
    pub model: ContinuousOutputModel<f64, DVector<f64>>,
    /// State at the start.
    pub y_start: DVector<f64>,
    /// Flags in force during the segment.
    pub flags: Flags,
    /// Accepted, rejected steps and evaluations.
    pub counts: (u64, u64, u64),
    /// Smallest and largest accepted step, in seconds.
    pub dt_range: (f64, f64),
    /// The events that ended it, with their bracket.
    pub event: Option<(Vec<Event>, f64, f64)>,
    /// Exact rebuilds of the moving blocks (the other evaluations updated them to first
    /// order).
    pub rebuilds: u64,
}

impl MotionSegment {
    /// Scaled state at time t, clamped into the segment.
    pub fn state(&self, t: f64) -> DVector<f64> {
        if t <= self.t_start {
            return self.y_start.clone();
        }
        self.model.evaluate(t.min(self.t_end)).unwrap_or_else(|| self.y_start.clone())
    }
}

/// Integrates one motion segment; the moving blocks are updated to first order while no ring
/// has moved more than `max_shift` metres since their last exact rebuild (0: rebuilt at every
/// evaluation).
#[allow(clippy::too_many_arguments)]
pub fn integrate_motion_segment(
    net: &MovingNetwork,
    circuit: Circuit,
    scales: Scales,
    ms: MechScales,
    flags: Flags,
    watch_crowbar: bool,
    t0: f64,
    t1: f64,
    y0: DVector<f64>,
    settings: &StepperSettings,
    max_shift: f64,
    progress: Option<&dyn Fn(f64, f64)>,
) -> Result<MotionSegment, EngineError> {
    let mut rhs = MotionRhs::new(net, circuit, scales, ms, flags.clone(), watch_crowbar, t0);
    rhs.last_y = Some(y0.clone());
    rhs.progress = progress;
    rhs.max_shift = max_shift;
    let mut model = ContinuousOutputModel::default();
    let outcome = {
        let mut stepper = Dopri5::from_param(
            &mut rhs,
            t0,
            t1,
            (t1 - t0) / 100.0,
            y0.clone(),
            settings.rel_tol,
            settings.abs_tol,
            0.9,
            0.04,
            0.2,
            10.0,
            settings.max_step,
            0.0,
            settings.max_steps,
            u32::MAX,
            OutputType::Continuous,
        );
        stepper.integrate_with_continuous_output_model(&mut model)
    };
    if let Some(e) = rhs.take_error() {
        return Err(e);
    }
    let stats = outcome.map_err(|e| EngineError::Solver { message: e.to_string() })?;
    let t_end = rhs.event.as_ref().map_or(t1, |(_, _, tb)| *tb);
    Ok(MotionSegment {
        t_start: t0,
        t_end,
        model,
        y_start: y0,
        flags,
        counts: (
            u64::from(stats.accepted_steps),
            u64::from(stats.rejected_steps),
            u64::from(stats.num_eval),
        ),
        dt_range: rhs.dt_range,
        event: rhs.event.take(),
        rebuilds: rhs.rebuilds.get(),
    })
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;
    use crate::motion_run::flow_law_for;

    /// The first-order update of the moving blocks over the largest displacement it is used
    /// for (every ring and the rigid shift at the threshold, with a varying profile) against
    /// the exact rebuild: the loop currents of the same flux linkages agree to well within
    /// the stepper's relative tolerance, and the forces to first order in the displacement.
    #[test]
    fn linearized_blocks_stay_within_the_solver_tolerance() {
        let case = crate::reference::coarse_expansion_case();
        let rel_tol = case.solver.rel_tol;
        let prepared = crate::prepare(&case).unwrap();
        let t = case.workpiece.as_ref().unwrap();
        let mech = WorkpieceMechanics {
            density: t.material.density,
            specific_heat: t.material.specific_heat,
            youngs_modulus: t.material.youngs_modulus,
            flow: flow_law_for(&t.material),
        };
        let net = MovingNetwork::new(
            prepared.network,
            t.wall,
            mech,
            &case.coil.material,
            &t.material,
            293.15,
            None,
            None,
        )
        .unwrap();
        let lay = net.layout();
        let scales = Scales { psi: 0.1, volt: 5e3, energy: 2.5e3, charge: 1.0, action: 1.0 };
        let ms = MechScales { length: t.wall, velocity: 100.0, temperature: 300.0 };
        let shift = net.linearization_shift(rel_tol);
        assert!(shift > 0.0 && shift < 1e-6, "threshold {shift} m");
        // Flux in the bank loop only (the workpiece loops conserve their zero flux), as at
        // the start of a shot: the workpiece carries the induced currents.
        let mut y0 = DVector::zeros(lay.len);
        y0[0] = 0.5;
        for f in 0..net.base.mesh.filaments.len() {
            y0[lay.temps + f] = 1.0;
        }
        // Anchor 0.2 mm out (the blocks are then not those of the initial mesh).
        for q in 0..net.n_rings() {
            y0[lay.rings + 4 * q] = 0.2e-3 / ms.length;
        }
        let mut y1 = y0.clone();
        let nr = net.n_rings();
        for q in 0..nr {
            let s = if q % 2 == 0 { 0.999 } else { -(q as f64) / nr as f64 };
            y1[lay.rings + 4 * q] += s * shift / ms.length;
        }
        y1[lay.mech + mslot::Z] = 0.999 * shift / ms.length;
        let mut cache = None;
        let (_, rebuilt) = net.evaluate_linearized(&y0, &scales, &ms, &mut cache, shift).unwrap();
        assert!(rebuilt);
        let (lin, rebuilt) = net.evaluate_linearized(&y1, &scales, &ms, &mut cache, shift).unwrap();
        assert!(!rebuilt, "within the threshold the cache is used");
        let exact = net.evaluate(&y1, &scales, &ms).unwrap();
        let anchor = net.evaluate(&y0, &scales, &ms).unwrap();
        let x_max = exact.x.amax();
        let x_err = (&lin.x - &exact.x).amax();
        // The change of the currents over the displacement, to show the update is not trivial.
        let x_change = (&anchor.x - &exact.x).amax();
        assert!(x_err < 1e-2 * rel_tol * x_max, "current error {x_err:e} of {x_max:e}");
        assert!(x_err < 1e-2 * x_change, "error {x_err:e} vs change {x_change:e}");
        let f_max = exact.ring_force.iter().fold(0.0f64, |m, f| m.max(f.abs()));
        for q in 0..nr {
            let err = (lin.ring_force[q] - exact.ring_force[q]).abs();
            // First order: the force factors are held at the anchor.
            assert!(err < 2.0 * rel_tol.sqrt() * f_max, "ring {q}: force error {err:e}");
        }
        // Beyond the threshold it rebuilds, and is then exact.
        let mut y2 = y1.clone();
        y2[lay.rings] += 2.0 * shift / ms.length;
        let (far, rebuilt) = net.evaluate_linearized(&y2, &scales, &ms, &mut cache, shift).unwrap();
        assert!(rebuilt);
        let exact2 = net.evaluate(&y2, &scales, &ms).unwrap();
        assert_eq!(far.x, exact2.x);
    }
}
