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
//! the circuit state. Only workpiece rows change: the coil block of the loop matrix is
//! constant and factorised once, the coil–workpiece coupling comes from tables in ring radius
//! (module `coupling`), and the workpiece block is rebuilt from the kernel at every
//! evaluation and eliminated through its Schur complement.
//!
//! # Mirror symmetry
//!
//! When coil and workpiece are mirror images about the coil's middle plane (the demos are),
//! the currents, forces and ring states are mirror images too, and the workpiece block is
//! solved in the symmetric subspace: each pair of mirror filaments k, k' is one unknown with
//! the orthonormal combination (e_k + e_k')/√2 (a filament on the plane is its own). The
//! reduced block Qᵀ D Q needs M_kl and M_kl' for the representatives only (a quarter of the
//! pairs of the full block, whose other entries follow by reflection), its Schur complement
//! is half the size (an eighth of the factorisation), and the tables hold the combined
//! coupling columns. The state vector stays the full one; mirror rings get the same force,
//! so their states stay equal.
//!
//! The hoop stress of each ring is on an elastic branch or on the yield surface
//! ([`Branch`]); yielding, unloading, die contact and the crowbar are events that end a
//! segment of the integration, so that the right-hand side is smooth inside every step.
//!
//! Every filament carries its temperature: Joule heating with a linear resistivity law, plus
//! Taylor–Quinney plastic heating in the workpiece; resistances follow temperature and
//! geometry.

use std::cell::RefCell;

use crate::flow::{
    hoop_state, plastic_rates, yield_margin, Branch, FlowLaw, HoopState, PlasticRates,
    TAYLOR_QUINNEY,
};
use nalgebra::{Cholesky, DMatrix, DVector, Dyn};
use ode_solvers::continuous_output_model::ContinuousOutputModel;
use ode_solvers::{Dopri5, OutputType, System};
use ringpulse_physics::batch::{gradient_batch, GradientBatch};
use ringpulse_physics::inductance;

use crate::coupling::{CouplingTables, RingShape};
use crate::dense;
use crate::mesh::{Mesh, Part};
use crate::network::{project, LoopColumn, Network};
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
    /// Cholesky factor L_A (lower) of the coil loop matrix A = P_cᵀ L_cc P_c (bank and feeder
    /// inductance on loop 0), n_cl × n_cl.
    l_a: DMatrix<f64>,
    /// L_A⁻¹ P_cᵀ, n_cl × n_c: maps coil-filament flux per ampere to a column of C.
    g0: DMatrix<f64>,
    /// The tabulated coupling C(r) (module `coupling`).
    tables: RefCell<CouplingTables>,
    /// Evaluate the coupling with the kernel at every evaluation instead of the tables.
    exact_coupling: bool,
    /// False when coil and workpiece are mirror-symmetric about one plane: the net axial
    /// force is then zero by symmetry and the rigid axial motion is not integrated.
    axial_free: bool,
    /// Largest axial shift from the tables' anchor over which they are used to first order,
    /// in metres (beyond it the coupling comes from the kernel).
    z_shift_max: f64,
    ws: RefCell<Workspace>,
    rings: Vec<Ring>,
    /// The workpiece filaments the workpiece block is built for: all of them, or in a
    /// mirror-symmetric set-up one of each mirror pair (module docs, "Mirror symmetry").
    reps: Vec<Rep>,
    /// Mirror partner of each ring (itself on the plane, or without symmetry).
    ring_partner: Vec<usize>,
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
}

/// A representative workpiece filament of the reduced workpiece block: filament `k`, and its
/// mirror partner when the set-up is mirror-symmetric and `k` lies off the plane.
#[derive(Debug, Clone, Copy)]
struct Rep {
    k: usize,
    partner: Option<usize>,
}

impl Rep {
    /// Norm of the representative's symmetric combination e_k + e_k' (√2 for a pair, 1 alone).
    fn norm(&self) -> f64 {
        if self.partner.is_some() {
            std::f64::consts::SQRT_2
        } else {
            1.0
        }
    }
}

/// Buffers reused by every evaluation (allocated once per run, and again only when the
/// tables' basis grows).
struct Workspace {
    /// True when `c` and its relatives hold G = Uᵀ C in the tables' basis (m rows); false
    /// when they hold C itself (n_cl rows, the exact path).
    projected: bool,
    /// G = Uᵀ C, or C = L_A⁻¹ P_cᵀ L_cw, rows × n_w, in H^½.
    c: DMatrix<f64>,
    /// G Q: the columns of G combined over mirror pairs ((G_k + G_k')/√2), rows × n_h
    /// (n_h = n_w without symmetry, then a copy of G).
    cr: DMatrix<f64>,
    /// Its derivative, column a against the radius of representative a's ring, rows × n_h,
    /// in H^½/m (filled only with `reduced`).
    dcr: DMatrix<f64>,
    /// Own Zᵀ ∂C_k/∂z of each representative in the tables' axial basis Z, m_z × n_h, in
    /// H^½/m (with `reduced` and the sampled outputs).
    czr: DMatrix<f64>,
    /// ∂M_jk/∂a_j summed over each representative's pair, in the tables' coil-factor basis F,
    /// m_f × n_h, in H/m (with `reduced` and the sampled outputs).
    far: DMatrix<f64>,
    /// True when the tables filled `cr` and `dcr` directly (mirror symmetry, no axial
    /// output): `c`, `dc`, `cz` and `dcz` are then stale.
    reduced: bool,
    /// Its transpose, n_h × rows (for the product (GQ)ᵀ(GQ), fastest as a plain matrix
    /// product).
    ct: DMatrix<f64>,
    /// ∂G/∂r_q column by column (each column against its own ring's radius), rows × n_w, in
    /// H^½/m.
    dc: DMatrix<f64>,
    /// ∂G/∂z, rows × n_w, in H^½/m.
    cz: DMatrix<f64>,
    /// ∂²G/∂z∂r_q, rows × n_w, in H^½/m² (first-order axial shift of the tables).
    dcz: DMatrix<f64>,
    /// Coil–workpiece mutual inductances and their r_q and z derivatives from the kernel,
    /// n_c × n_w each, in H and H/m (the exact path).
    m: DMatrix<f64>,
    mr: DMatrix<f64>,
    mz: DMatrix<f64>,
    /// Reduced workpiece block Qᵀ D Q of the inductance matrix, n_h × n_h, in H.
    d: DMatrix<f64>,
    /// Workpiece force factors for the representatives: row a, column b holds Σ ∂M_kl/∂r_k
    /// over the filaments l of representative b (½ ∂L_kk/∂r_k on the diagonal, plus the
    /// partner's term), n_h × n_h, in H/m.
    gd: DMatrix<f64>,
    /// Reduced Schur complement Qᵀ (D − CᵀC) Q, n_h × n_h, in H (its Cholesky factor after
    /// the solve).
    s: DMatrix<f64>,
    /// ∂L_kk/∂(dr) of each workpiece cell at fixed radius, in H/m.
    self_dr: Vec<f64>,
    /// Workpiece filament radii and axial positions of the last evaluation that built the
    /// workpiece block, in metres (NaN: none yet).
    prev_wr: Vec<f64>,
    prev_wz: Vec<f64>,
    /// Per representative: its filaments (and partner's) sit exactly where they sat at that
    /// evaluation (a ring held at the stop), so its entries of `d`, `gd`, `self_dr` and of
    /// the tables' columns are still valid.
    same: Vec<bool>,
    /// (basis size, windows built) when `cr` and `dcr` were last filled from the tables;
    /// `None` after another path wrote them.
    cr_stamp: Option<(usize, usize)>,
    /// ∂M_jk/∂a_j, coil filament j against workpiece filament k, n_c × n_w, in H/m.
    fa: DMatrix<f64>,
    /// The kernel pairs of one workpiece block (or one exact coupling), evaluated together.
    pairs: GradientBatch,
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
    /// Prepares the moving network from the initial one: factorises the coil block, checks
    /// the mirror symmetry, and tabulates the coupling around the initial radii with a
    /// series error below `table_tolerance` (relative; the stepper's relative tolerance
    /// times 0.01 is the engine's choice).
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
        table_tolerance: f64,
    ) -> Result<MovingNetwork, EngineError> {
        let mesh = &base.mesh;
        let w0 = mesh.workpiece_start();
        let nw = mesh.filaments.len() - w0;
        let n_coil_loops =
            base.loops.iter().take_while(|col| col.iter().all(|&(f, _)| f < w0)).count();
        let coil_loops: Vec<LoopColumn> = base.loops[..n_coil_loops].to_vec();
        let l_cc = base.l_filaments.view((0, 0), (w0, w0)).into_owned();
        let mut a = project(&l_cc, &coil_loops);
        a[(0, 0)] += base.external_inductance;
        let indefinite =
            || EngineError::IndefiniteInductance { conductor: "the coil (its own block)".into() };
        let l_a = Cholesky::new(a).ok_or_else(indefinite)?.unpack();
        // P_cᵀ as a dense n_cl × n_c matrix, then L_A⁻¹ P_cᵀ.
        let mut pct = DMatrix::<f64>::zeros(n_coil_loops, w0);
        for (c, col) in coil_loops.iter().enumerate() {
            for &(f, coef) in col {
                pct[(c, f)] += coef;
            }
        }
        let g0 = l_a.solve_lower_triangular(&pct).ok_or_else(indefinite)?;
        if !g0.iter().all(|v| v.is_finite()) {
            return Err(indefinite());
        }
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
        // Smallest centre distance from a workpiece filament to a coil filament or to a
        // filament of another ring, at the initial geometry, in metres.
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
        let axial_free = !mirror_symmetric(mesh);
        let mirror = if axial_free { None } else { mirror_maps(mesh, &rings) };
        let ring_partner =
            mirror.as_ref().map_or_else(|| (0..rings.len()).collect(), |(p, _)| p.clone());
        let shapes: Vec<RingShape> = rings
            .iter()
            .map(|r| RingShape { r0: r.r0, h0: r.h0, z0: r.z0, layers: r.filaments.len() })
            .collect();
        let tables = CouplingTables::new(
            g0.clone(),
            mesh.filaments[..w0].to_vec(),
            shapes,
            mirror,
            0.0,
            table_tolerance,
        );
        let reps = representatives(&rings, &ring_partner);
        let nh = reps.len();
        let z_shift_max = 0.2 * (100.0 * table_tolerance).sqrt() * closest_pair;
        let ws = Workspace::new(n_coil_loops, nw, nh, w0);
        Ok(MovingNetwork {
            n_coil_loops,
            l_a,
            g0,
            tables: RefCell::new(tables),
            exact_coupling: false,
            axial_free,
            z_shift_max: if z_shift_max.is_finite() { z_shift_max } else { 0.0 },
            ws: RefCell::new(ws),
            rings,
            reps,
            ring_partner,
            grad_r_cc,
            mech,
            coil_heat_capacity: coil_material.density * coil_material.specific_heat,
            coil_alpha: coil_material.temperature_coefficient,
            work_alpha: work_material.temperature_coefficient,
            t_initial,
            stop,
            coil_limit,
            total_mass,
            base,
        })
    }

    /// Evaluates the coil–workpiece coupling with Maxwell's formula at every evaluation
    /// instead of the tables (slower; for checks).
    pub fn set_exact_coupling(&mut self, exact: bool) {
        self.exact_coupling = exact;
    }

    /// Stops using the mirror symmetry of the set-up (the default when the set-up is
    /// mirror-symmetric), for checks; `on` only keeps it.
    #[cfg(test)]
    fn set_mirror_reduction(&mut self, on: bool) {
        let mirror =
            if on && !self.axial_free { mirror_maps(&self.base.mesh, &self.rings) } else { None };
        if mirror.is_none() {
            let plain = self.tables.get_mut().without_mirror();
            *self.tables.get_mut() = plain;
        }
        let partner: Vec<usize> =
            mirror.map_or_else(|| (0..self.rings.len()).collect(), |(p, _)| p);
        self.reps = representatives(&self.rings, &partner);
        self.ring_partner = partner;
        let ws = self.ws.get_mut();
        let (rows, nw, w0) = (ws.c.nrows(), ws.c.ncols(), ws.m.nrows());
        *ws = Workspace::new(rows, nw, self.reps.len(), w0);
    }

    /// Whether the rigid axial motion is integrated (false for a mirror-symmetric set-up,
    /// where the net axial force vanishes by symmetry).
    pub fn axial_free(&self) -> bool {
        self.axial_free
    }

    /// Number of directions of the coupling tables' basis (the rows of every evaluation's
    /// coupling matrix).
    pub fn table_rank(&self) -> usize {
        self.tables.borrow().rank()
    }

    /// Number of coupling-table windows built so far (each covers one ring over a range of
    /// radius).
    pub fn table_windows(&self) -> usize {
        self.tables.borrow().windows_built()
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

    /// The mirror partner of ring q (q itself on the plane or without symmetry): its state,
    /// forces and events are ring q's.
    pub fn ring_partner(&self, q: usize) -> usize {
        self.ring_partner[q]
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

    /// The workpiece's flow law.
    pub fn flow(&self) -> &FlowLaw {
        &self.mech.flow
    }

    /// Young's modulus of the workpiece, in Pa.
    pub fn youngs_modulus(&self) -> f64 {
        self.mech.youngs_modulus
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
        if g.wr.iter().any(|r| !(r.is_finite() && *r > 0.0)) || !z_shift.is_finite() {
            return Err(EngineError::Solver {
                message: "a workpiece ring radius became non-positive".into(),
            });
        }
        Ok(g)
    }

    /// The coupling C, ∂C/∂r_q and ∂C/∂z from the kernel (and ∂M_jk/∂a_j into `fa` when
    /// `coil_factors`): n_w · n_c pair evaluations and three products with L_A⁻¹ P_cᵀ.
    fn coupling_exact(&self, geo: &WorkGeometry, ws: &mut Workspace, coil_factors: bool) {
        let mesh: &Mesh = &self.base.mesh;
        let w0 = mesh.workpiece_start();
        let nw = mesh.filaments.len() - w0;
        let (pa, pb, pz) = ws.pairs.inputs_mut(nw * w0);
        for k in 0..nw {
            for (j, c) in mesh.filaments[..w0].iter().enumerate() {
                let p = k * w0 + j;
                pa[p] = c.r;
                pb[p] = geo.wr[k];
                pz[p] = geo.wz[k] - c.z;
            }
        }
        gradient_batch(&mut ws.pairs);
        for k in 0..nw {
            for j in 0..w0 {
                let g = ws.pairs.get(k * w0 + j);
                ws.m[(j, k)] = g.m;
                // d/dr_q = ∂/∂r_k · ∂r_k/∂r_q.
                ws.mr[(j, k)] = g.dm_db * geo.drf[k];
                ws.mz[(j, k)] = g.dm_dz;
                if coil_factors {
                    ws.fa[(j, k)] = g.dm_da;
                }
            }
        }
        ws.set_rows(self.n_coil_loops);
        ws.projected = false;
        ws.reduced = false;
        ws.cr_stamp = None;
        ws.c.gemm(1.0, &self.g0, &ws.m, 0.0);
        ws.dc.gemm(1.0, &self.g0, &ws.mr, 0.0);
        ws.cz.gemm(1.0, &self.g0, &ws.mz, 0.0);
        ws.dcz.fill(0.0);
    }

    /// The coupling into the workspace: from the tables (to first order in the axial shift
    /// from their anchor) while the shift stays within `z_shift_max` of it, else exactly.
    fn coupling(&self, geo: &WorkGeometry, ws: &mut Workspace, coil_factors: bool) {
        let mut tables = self.tables.borrow_mut();
        let dz = geo.z_shift - tables.z_anchor();
        if self.exact_coupling || dz.abs() > self.z_shift_max {
            self.coupling_exact(geo, ws, coil_factors);
            return;
        }
        let axial = self.axial_free || coil_factors;
        tables.ensure(&geo.ring_radius);
        ws.set_rows(tables.rank());
        ws.projected = true;
        // Mirror symmetry: only the combined columns of the representatives (the tables hold
        // nothing else for a paired ring).
        ws.reduced = self.reps.len() < self.rings.iter().map(|r| r.filaments.len()).sum();
        if ws.reduced {
            let stamp = (tables.rank(), tables.windows_built());
            let keep = if ws.cr_stamp == Some(stamp) { Some(ws.same.as_slice()) } else { None };
            tables.fill_reduced(&geo.ring_radius, &mut ws.cr, &mut ws.dcr, keep);
            ws.cr_stamp = Some(stamp);
            if coil_factors {
                let mz = tables.zbasis().ncols();
                if ws.czr.nrows() != mz {
                    ws.czr = DMatrix::zeros(mz, ws.czr.ncols());
                }
                let mf = tables.fbasis().ncols();
                if ws.far.nrows() != mf {
                    ws.far = DMatrix::zeros(mf, ws.far.ncols());
                }
                tables.fill_reduced_outputs(&geo.ring_radius, &mut ws.czr, &mut ws.far);
            }
            return;
        }
        ws.cr_stamp = None;
        let Workspace { c, dc, cz, dcz, fa, .. } = ws;
        let axial_out = if axial { Some((&mut *cz, &mut *dcz)) } else { None };
        tables.fill(&geo.ring_radius, c, dc, axial_out);
        if coil_factors {
            tables.fill_coil_factors(&geo.ring_radius, fa);
        }
        if dz != 0.0 && axial {
            // C(r, z) ≈ C(r, z_a) + ∂C/∂z (z − z_a), and its r-derivative likewise; the forces
            // below are the exact derivatives of this matrix.
            c.zip_apply(cz, |a, b| *a += dz * b);
            dc.zip_apply(dcz, |a, b| *a += dz * b);
        }
    }

    /// The workpiece block, its force factors and the cells' ∂L_kk/∂(dr), from the kernel:
    /// n_w²/2 pair evaluations, or n_w²/4 with mirror symmetry (Qᵀ D Q needs M_kl and
    /// M_kl' for the representatives k, l and the partner l' of l; the rest follows by
    /// reflection).
    fn workpiece_block(&self, geo: &WorkGeometry, ws: &mut Workspace) {
        let mesh: &Mesh = &self.base.mesh;
        let w0 = mesh.workpiece_start();
        let (wr, wdr, wz) = (&geo.wr, &geo.wdr, &geo.wz);
        let reps = &self.reps;
        // First the kernel pairs, gathered in the order the assembly below reads them and
        // evaluated together (`batch::gradient_batch`: the scalar kernel's numbers bit for bit).
        let pairs = &mut ws.pairs;
        let nh = reps.len();
        let (pa, pb, pz) = pairs.inputs_mut(nh * nh);
        let mut n = 0;
        let mut put = |a: f64, b: f64, z: f64| {
            pa[n] = a;
            pb[n] = b;
            pz[n] = z;
            n += 1;
        };
        for (a, ra) in reps.iter().enumerate() {
            let k = ra.k;
            let same_a = ws.same[a];
            if !same_a {
                if let Some(kp) = ra.partner {
                    put(wr[k], wr[kp], wz[kp] - wz[k]);
                }
            }
            for (b, rb) in reps.iter().enumerate().skip(a + 1) {
                if same_a && ws.same[b] {
                    continue;
                }
                let l = rb.k;
                put(wr[k], wr[l], wz[l] - wz[k]);
                if let (Some(_), Some(lp)) = (ra.partner, rb.partner) {
                    put(wr[k], wr[lp], wz[lp] - wz[k]);
                }
            }
        }
        pairs.truncate(n);
        gradient_batch(pairs);
        let mut next = 0;
        let mut take = || {
            next += 1;
            pairs.get(next - 1)
        };
        for (a, ra) in reps.iter().enumerate() {
            let k = ra.k;
            let dz = mesh.filaments[w0 + k].dz;
            let same_a = ws.same[a];
            if !same_a {
                // L_kk, ∂L_kk/∂r_k and ∂L_kk/∂(dr) at fixed radius, from one GMD.
                let (l_kk, dl_da, self_dr) =
                    inductance::ring_rectangular_with_slopes(wr[k], wdr[k], dz);
                let mut own = l_kk;
                let mut own_r = 0.5 * dl_da;
                ws.self_dr[k] = self_dr;
                if let Some(kp) = ra.partner {
                    ws.self_dr[kp] = self_dr;
                    let g = take();
                    own += g.m;
                    own_r += g.dm_da;
                }
                ws.d[(a, a)] = own;
                ws.gd[(a, a)] = own_r;
            }
            for (b, rb) in reps.iter().enumerate().skip(a + 1) {
                if same_a && ws.same[b] {
                    continue;
                }
                let g = take();
                // Sums over the filaments of each representative: row a against b's group
                // and row b against a's group (in H and H/m).
                let (m_ab, m_ba, f_ab, f_ba) = match (ra.partner, rb.partner) {
                    (Some(_), Some(_)) => {
                        // M_kl' = M_k'l by reflection, and ∂M_kl'/∂r_l' = ∂M_lk'/∂r_l.
                        let h = take();
                        (g.m + h.m, g.m + h.m, g.dm_da + h.dm_da, g.dm_db + h.dm_db)
                    }
                    // l on the plane: M_k'l = M_kl.
                    (Some(_), None) => (g.m, 2.0 * g.m, g.dm_da, 2.0 * g.dm_db),
                    // k on the plane: M_kl' = M_kl.
                    (None, Some(_)) => (2.0 * g.m, g.m, 2.0 * g.dm_da, g.dm_db),
                    (None, None) => (g.m, g.m, g.dm_da, g.dm_db),
                };
                // Qᵀ D Q with the orthonormal combinations (e_k + e_k')/√2.
                let v = m_ab * ra.norm() / rb.norm();
                debug_assert!((v - m_ba * rb.norm() / ra.norm()).abs() <= 1e-12 * v.abs());
                ws.d[(a, b)] = v;
                ws.d[(b, a)] = v;
                ws.gd[(a, b)] = f_ab;
                ws.gd[(b, a)] = f_ba;
            }
        }
        debug_assert_eq!(next, pairs.len());
    }

    /// Evaluates currents, resistances, forces and stresses of a scaled state. With `full`
    /// it also gives the radial force on every coil turn and the axial forces of a
    /// mirror-symmetric set-up (for the sampled output); the right-hand side does without.
    pub fn evaluate(
        &self,
        y: &DVector<f64>,
        scales: &Scales,
        ms: &MechScales,
        branches: &[Branch],
        full: bool,
    ) -> Result<Evaluation, EngineError> {
        let geo = self.geometry(y, ms)?;
        let mut ws_guard = self.ws.borrow_mut();
        let ws = &mut *ws_guard;
        // Which representatives have not moved since the last evaluation (exact equality: a
        // held ring's radius is constant); their block entries and columns are reused.
        for (a, ra) in self.reps.iter().enumerate() {
            let still = |k: usize| geo.wr[k] == ws.prev_wr[k] && geo.wz[k] == ws.prev_wz[k];
            ws.same[a] = still(ra.k) && ra.partner.is_none_or(still);
        }
        self.coupling(&geo, ws, full);
        self.workpiece_block(&geo, ws);
        ws.prev_wr.copy_from_slice(&geo.wr);
        ws.prev_wz.copy_from_slice(&geo.wz);
        self.evaluate_with(y, scales, ms, branches, &geo, ws, full)
    }

    #[allow(clippy::too_many_arguments)]
    fn evaluate_with(
        &self,
        y: &DVector<f64>,
        scales: &Scales,
        ms: &MechScales,
        branches: &[Branch],
        geo: &WorkGeometry,
        ws: &mut Workspace,
        full: bool,
    ) -> Result<Evaluation, EngineError> {
        let lay = self.layout();
        let mesh: &Mesh = &self.base.mesh;
        let n = mesh.filaments.len();
        let w0 = mesh.workpiece_start();
        let nw = n - w0;
        let nr = self.rings.len();
        let ncl = self.n_coil_loops;
        let (wr, wdr) = (&geo.wr, &geo.wdr);
        let nh = self.reps.len();
        // G Q: columns combined over mirror pairs (already there when `reduced`).
        for (a, ra) in self.reps.iter().enumerate().filter(|_| !ws.reduced) {
            let rows = ws.c.nrows();
            let (src, dst) = (ws.c.as_slice(), ws.cr.as_mut_slice());
            let col = &src[ra.k * rows..(ra.k + 1) * rows];
            let out = &mut dst[a * rows..(a + 1) * rows];
            match ra.partner {
                Some(kp) => {
                    let other = &src[kp * rows..(kp + 1) * rows];
                    for ((o, u), v) in out.iter_mut().zip(col).zip(other) {
                        *o = (u + v) * std::f64::consts::FRAC_1_SQRT_2;
                    }
                }
                None => out.copy_from_slice(col),
            }
        }
        // Schur complement S = Qᵀ (D − CᵀC) Q and its Cholesky factor, in place (blocked:
        // module `dense`).
        ws.s.copy_from(&ws.d);
        ws.cr.transpose_to(&mut ws.ct);
        ws.s.gemm(-1.0, &ws.ct, &ws.cr, 1.0);
        if !dense::cholesky_in_place(&mut ws.s) {
            return Err(EngineError::IndefiniteInductance {
                conductor: "the moving workpiece (cells too close to the coil or too deformed)"
                    .into(),
            });
        }
        // The buffer is handed to the solver and taken back after the solve (no allocation).
        let chol =
            Cholesky::<f64, Dyn>::pack_dirty(std::mem::replace(&mut ws.s, DMatrix::zeros(0, 0)));
        let nl = lay.nl;
        let psi = y.rows(0, nl) * scales.psi;
        // φ = L_A⁻¹ ψ_c, x_w = S⁻¹ (ψ_w − Cᵀ φ), ξ = φ − C x_w, x_c = L_A⁻ᵀ ξ, with C = U G:
        // Cᵀ φ = Gᵀ (Uᵀ φ), and the forces need only ξ_U = Uᵀ ξ = Uᵀ φ − G x_w.
        let mut phi = psi.rows(0, ncl).into_owned();
        dense::solve_lower(&self.l_a, phi.as_mut_slice());
        let tables = self.tables.borrow();
        let basis = tables.basis();
        let phi_u = if ws.projected { basis.tr_mul(&phi) } else { phi.clone() };
        // In the reduced space: x̃ = S̃⁻¹ Qᵀ (ψ_w − Cᵀ φ); a mirror pair carries x̃_a/√2 each.
        let mut x_r = DVector::zeros(nh);
        for (a, ra) in self.reps.iter().enumerate() {
            x_r[a] = match ra.partner {
                Some(kp) => (psi[ncl + ra.k] + psi[ncl + kp]) * std::f64::consts::FRAC_1_SQRT_2,
                None => psi[ncl + ra.k],
            };
        }
        x_r.gemv_tr(-1.0, &ws.cr, &phi_u, 1.0);
        chol.solve_mut(&mut x_r);
        ws.s = chol.unpack_dirty();
        let g_x = &ws.cr * &x_r;
        let mut x_w = DVector::zeros(nw);
        // Physical currents of the representatives, in the order of `reps`.
        let mut x_rep = DVector::zeros(nh);
        for (a, ra) in self.reps.iter().enumerate() {
            let v = x_r[a] / ra.norm();
            x_rep[a] = v;
            x_w[ra.k] = v;
            if let Some(kp) = ra.partner {
                x_w[kp] = v;
            }
        }
        let xi_u = &phi_u - &g_x;
        let mut xi = phi;
        if ws.projected {
            xi.gemv(-1.0, basis, &g_x, 1.0);
        } else {
            xi -= &g_x;
        }
        // ξ in the axial basis, for the reported axial forces of a mirror-symmetric set-up.
        let xi_z = if ws.reduced && full { Some(tables.zbasis().tr_mul(&xi)) } else { None };
        drop(tables);
        let mut x_c = xi.clone();
        dense::solve_lower_transposed(&self.l_a, x_c.as_mut_slice());
        if !(x_w.iter().all(|v| v.is_finite()) && x_c.iter().all(|v| v.is_finite())) {
            return Err(EngineError::Solver {
                message: "the loop currents of the moving network are not finite".into(),
            });
        }
        let mut x = DVector::zeros(nl);
        x.rows_mut(0, ncl).copy_from(&x_c);
        x.rows_mut(ncl, nw).copy_from(&x_w);
        let mut i_f = DVector::zeros(n);
        self.base.filament_currents(&x, &mut i_f);
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
        // Forces: the coil part of ∂W/∂r_q is Σ_k x_k (∂C_k/∂r_q · ξ), the workpiece part
        // ½ x_wᵀ (∂D/∂r_q) x_w with the layer positions and the thinning.
        // Per filament: ∂C_k/∂r_q · ξ = ∂G_k/∂r_q · ξ_U. From the combined columns, a mirror
        // pair's (∂G_k + ∂G_k')/√2 · ξ_U is √2 times each one's (ξ is symmetric).
        let f_coil = if ws.reduced {
            let f_rep = ws.dcr.tr_mul(&xi_u);
            let mut f = DVector::zeros(nw);
            for (a, ra) in self.reps.iter().enumerate() {
                let v = f_rep[a] / ra.norm();
                f[ra.k] = v;
                if let Some(kp) = ra.partner {
                    f[kp] = v;
                }
            }
            f
        } else {
            ws.dc.tr_mul(&xi_u)
        };
        // Σ_l ∂M_kl/∂r_k x_l (½ ∂L_kk/∂r_k x_k on the diagonal) per representative, the same for
        // its partner.
        let fr_rep = &ws.gd * &x_rep;
        let mut fr_w = DVector::zeros(nw);
        for (a, ra) in self.reps.iter().enumerate() {
            fr_w[ra.k] = fr_rep[a];
            if let Some(kp) = ra.partner {
                fr_w[kp] = fr_rep[a];
            }
        }
        let axial = self.axial_free || full;
        let f_axial = if !axial {
            None
        } else if let Some(xi_z) = &xi_z {
            // Own ∂C_k/∂z · ξ = (Zᵀ ∂C_k/∂z) · (Zᵀ ξ) of each representative; its partner's is
            // the negative.
            let f_rep = ws.czr.tr_mul(xi_z);
            let mut f = DVector::zeros(nw);
            for (a, ra) in self.reps.iter().enumerate() {
                f[ra.k] = f_rep[a];
                if let Some(kp) = ra.partner {
                    f[kp] = -f_rep[a];
                }
            }
            Some(f)
        } else {
            Some(ws.cz.tr_mul(&xi_u))
        };
        let mut ring_force = vec![0.0; nr];
        let mut ring_lorentz = vec![0.0; nr];
        let mut ring_axial_force = vec![0.0; nr];
        let mut axial_force = 0.0;
        for (q, ring) in self.rings.iter().enumerate() {
            for &k in &ring.filaments {
                let coil = x_w[k] * f_coil[k];
                let own = x_w[k] * fr_w[k];
                ring_force[q] +=
                    coil + own * geo.drf[k] + 0.5 * x_w[k] * x_w[k] * ws.self_dr[k] * geo.ddrf[k];
                ring_lorentz[q] += coil / geo.drf[k] + own;
                if let Some(fz) = &f_axial {
                    let v = x_w[k] * fz[k];
                    ring_axial_force[q] += v;
                    axial_force += v;
                }
            }
        }
        if !self.axial_free {
            // Zero by symmetry; what the sum holds is rounding.
            axial_force = 0.0;
        }
        // Mirror rings feel the same radial force; copying it keeps their states identical
        // (the coupling columns of the two differ in rounding).
        for (q, &p) in self.ring_partner.iter().enumerate() {
            if p < q {
                ring_force[q] = ring_force[p];
                ring_lorentz[q] = ring_lorentz[p];
            }
        }
        // Coil turn radial forces (coil held): coil-coil constant part plus coupling.
        let mut turn_force = vec![0.0; mesh.turns];
        if full {
            let i_c = i_f.rows(0, w0).into_owned();
            let fc = if ws.reduced {
                let tables = self.tables.borrow();
                &self.grad_r_cc * &i_c + tables.fbasis() * (&ws.far * &x_rep)
            } else {
                &self.grad_r_cc * &i_c + &ws.fa * &x_w
            };
            for (f, fil) in mesh.filaments[..w0].iter().enumerate() {
                if let Part::Coil { turn } = fil.part {
                    turn_force[turn] += i_c[f] * fc[f];
                }
            }
        }
        // Hoop stresses.
        let mut ring_stress = vec![0.0; nr];
        let mut ring_hoop = Vec::with_capacity(nr);
        let mut ring_temperature = vec![0.0; nr];
        for (q, ring) in self.rings.iter().enumerate() {
            let p = self.ring_partner[q];
            if p < q {
                // A mirror ring: its partner's state, so its partner's stress.
                ring_stress[q] = ring_stress[p];
                ring_hoop.push(ring_hoop[p]);
                ring_temperature[q] = ring_temperature[p];
                continue;
            }
            let base_q = lay.rings + 4 * q;
            let r = geo.ring_radius[q];
            let v = y[base_q + 1] * ms.velocity;
            let eps = (r / ring.r0).ln();
            let t_ring = ring.filaments.iter().map(|&k| y[lay.temps + w0 + k]).sum::<f64>()
                / ring.filaments.len().max(1) as f64
                * ms.temperature;
            let st = hoop_state(
                branches.get(q).copied().unwrap_or(Branch::Elastic),
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
            ring_radius: geo.ring_radius.clone(),
            ring_wall: geo.ring_wall.clone(),
            turn_force,
            axial_force,
        })
    }
}

impl Workspace {
    /// Buffers for `rows` coupling rows, `nw` workpiece filaments of which `nh` are
    /// representatives, and `w0` coil filaments; nothing cached yet.
    fn new(rows: usize, nw: usize, nh: usize, w0: usize) -> Workspace {
        Workspace {
            projected: false,
            c: DMatrix::zeros(rows, nw),
            cr: DMatrix::zeros(rows, nh),
            dcr: DMatrix::zeros(rows, nh),
            czr: DMatrix::zeros(rows, nh),
            far: DMatrix::zeros(w0, nh),
            reduced: false,
            ct: DMatrix::zeros(nh, rows),
            dc: DMatrix::zeros(rows, nw),
            cz: DMatrix::zeros(rows, nw),
            dcz: DMatrix::zeros(rows, nw),
            m: DMatrix::zeros(w0, nw),
            mr: DMatrix::zeros(w0, nw),
            mz: DMatrix::zeros(w0, nw),
            d: DMatrix::zeros(nh, nh),
            gd: DMatrix::zeros(nh, nh),
            s: DMatrix::zeros(nh, nh),
            self_dr: vec![0.0; nw],
            prev_wr: vec![f64::NAN; nw],
            prev_wz: vec![f64::NAN; nw],
            same: vec![false; nh],
            cr_stamp: None,
            fa: DMatrix::zeros(w0, nw),
            pairs: GradientBatch::default(),
        }
    }

    /// Gives the coupling buffers `rows` rows (a new basis size, or the exact path's n_cl).
    fn set_rows(&mut self, rows: usize) {
        if self.c.nrows() == rows {
            return;
        }
        let nw = self.c.ncols();
        let nh = self.cr.ncols();
        self.c = DMatrix::zeros(rows, nw);
        self.cr = DMatrix::zeros(rows, nh);
        self.dcr = DMatrix::zeros(rows, nh);
        self.ct = DMatrix::zeros(nh, rows);
        self.dc = DMatrix::zeros(rows, nw);
        self.cz = DMatrix::zeros(rows, nw);
        self.dcz = DMatrix::zeros(rows, nw);
    }
}

/// The representative filaments for a ring pairing: the layers of every ring whose partner's
/// index is not below its own, with the partner ring's same layer.
fn representatives(rings: &[Ring], ring_partner: &[usize]) -> Vec<Rep> {
    let mut reps = Vec::new();
    for (q, ring) in rings.iter().enumerate() {
        let p = ring_partner[q];
        if p < q {
            continue;
        }
        for (j, &k) in ring.filaments.iter().enumerate() {
            let partner = if p == q { None } else { rings[p].filaments.get(j).copied() };
            reps.push(Rep { k, partner });
        }
    }
    reps
}

/// The mirror maps of a mirror-symmetric set-up (about the middle plane of the coil, as in
/// [`mirror_symmetric`]): the partner of every ring (the ring of the same radius, wall,
/// length and layers at the reflected axial position; itself on the plane) and the image of
/// every coil filament (same radius and section, reflected position). `None` when some ring
/// or coil filament has none, or the maps are not involutions.
fn mirror_maps(mesh: &Mesh, rings: &[Ring]) -> Option<(Vec<usize>, Vec<usize>)> {
    let coil: Vec<&crate::mesh::Filament> =
        mesh.filaments.iter().filter(|x| matches!(x.part, Part::Coil { .. })).collect();
    if coil.is_empty() || coil.len() != mesh.workpiece_start() {
        return None;
    }
    let zc = coil.iter().map(|x| x.z).sum::<f64>() / coil.len() as f64;
    let scale = mesh.filaments.iter().fold(0.0f64, |m, f| m.max(f.r + f.dr).max((f.z - zc).abs()));
    let tol = 1e-9 * scale;
    let same = |u: f64, v: f64| (u - v).abs() <= tol;
    let partner: Option<Vec<usize>> = rings
        .iter()
        .map(|ring| {
            rings.iter().position(|other| {
                same(other.z0 - zc, zc - ring.z0)
                    && same(other.r0, ring.r0)
                    && same(other.h0, ring.h0)
                    && same(other.dz, ring.dz)
                    && other.filaments.len() == ring.filaments.len()
            })
        })
        .collect();
    let image: Option<Vec<usize>> = coil
        .iter()
        .map(|f| {
            coil.iter().position(|g| {
                same(g.z - zc, zc - f.z) && same(g.r, f.r) && same(g.dr, f.dr) && same(g.dz, f.dz)
            })
        })
        .collect();
    let involution = |m: &[usize]| m.iter().enumerate().all(|(i, &j)| m[j] == i);
    match (partner, image) {
        (Some(p), Some(c)) if involution(&p) && involution(&c) => Some((p, c)),
        _ => None,
    }
}

/// True when the coil and workpiece filaments are mirror images of themselves about one
/// plane z = z_m (each filament has a partner of the same radius and section at 2 z_m − z,
/// to 1e-9 of the set-up's size). The net axial force on the workpiece then vanishes.
fn mirror_symmetric(mesh: &Mesh) -> bool {
    let f = &mesh.filaments;
    if f.is_empty() {
        return true;
    }
    let (zmin, zmax) = f.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| {
        (a.min(x.z - x.dz / 2.0), b.max(x.z + x.dz / 2.0))
    });
    let rmax = f.iter().fold(0.0f64, |m, x| m.max(x.r + x.dr));
    let tol = 1e-9 * (zmax - zmin).max(rmax);
    // The plane through the middle of the coil; the workpiece must share it.
    let coil: Vec<&crate::mesh::Filament> =
        f.iter().filter(|x| matches!(x.part, Part::Coil { .. })).collect();
    if coil.is_empty() {
        return false;
    }
    let zc = coil.iter().map(|x| x.z).sum::<f64>() / coil.len() as f64;
    let key = |x: &crate::mesh::Filament, z: f64| {
        (matches!(x.part, Part::Coil { .. }), (x.r / tol).round() as i64, (z / tol).round() as i64)
    };
    let mut a: Vec<_> = f.iter().map(|x| (key(x, x.z - zc), x.dr, x.dz)).collect();
    let mut b: Vec<_> = f.iter().map(|x| (key(x, zc - x.z), x.dr, x.dz)).collect();
    let cmp = |p: &((bool, i64, i64), f64, f64), q: &((bool, i64, i64), f64, f64)| p.0.cmp(&q.0);
    a.sort_by(cmp);
    b.sort_by(cmp);
    a.iter().zip(&b).all(|(p, q)| {
        let near = |u: i64, v: i64| (u - v).abs() <= 1;
        p.0 .0 == q.0 .0
            && near(p.0 .1, q.0 .1)
            && near(p.0 .2, q.0 .2)
            && (p.1 - q.1).abs() <= tol
            && (p.2 - q.2).abs() <= tol
    })
}

/// Switches that change between segments of a run.
#[derive(Debug, Clone, PartialEq)]
pub struct Flags {
    /// The crowbar has closed.
    pub crowbarred: bool,
    /// Rings held at the stop.
    pub held: Vec<bool>,
    /// Branch of each ring's hoop stress (elastic, or on the yield surface).
    pub branch: Vec<Branch>,
}

impl Flags {
    /// All rings free and elastic, crowbar open.
    pub fn initial(n_rings: usize) -> Flags {
        Flags {
            crowbarred: false,
            held: vec![false; n_rings],
            branch: vec![Branch::Elastic; n_rings],
        }
    }
}

/// An event that ends a segment.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Event {
    /// The capacitor voltage reached zero (crowbar closes).
    Crowbar,
    /// Ring q reached the die or mandrel.
    Stop(usize),
    /// Elastic ring q reached the yield surface.
    Yield(usize),
    /// Yielding ring q unloads (its radial velocity turned against the direction of flow).
    Unload(usize),
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
    /// Failed evaluations since the last accepted step, and in the whole segment.
    failures: std::cell::Cell<(u32, u32)>,
    /// A failure the stepper cannot step around: every evaluation after it returns NaN, so
    /// that the step size underflows at once instead of the run crawling on.
    fatal: RefCell<Option<EngineError>>,
    last_t: f64,
    last_y: Option<DVector<f64>>,
    /// The events that stopped the segment, with their bracket (t_before, t_after).
    pub event: Option<(Vec<Event>, f64, f64)>,
    /// Smallest and largest accepted step, in seconds.
    pub dt_range: (f64, f64),
    /// Called with (time, end time) after each accepted step.
    progress: Option<&'a dyn Fn(f64, f64)>,
    t_end: f64,
    /// An elastic ring yields when its trial stress exceeds the flow stress by this fraction
    /// (the stepper's relative tolerance: a grazing touch of the yield surface below it is
    /// within the solver's accuracy and does not switch the branch).
    pub yield_tol: f64,
    /// Last accepted step, in seconds (the next segment starts with it).
    pub last_dt: f64,
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
            failures: std::cell::Cell::new((0, 0)),
            fatal: RefCell::new(None),
            last_t: t0,
            last_y: None,
            event: None,
            dt_range: (f64::INFINITY, 0.0),
            progress: None,
            t_end: 0.0,
            yield_tol: 0.0,
            last_dt: 0.0,
        }
    }

    /// The first error met while evaluating (the stepper cannot return one): the one that
    /// ended the segment, else the last one not followed by an accepted step.
    pub fn take_error(&self) -> Option<EngineError> {
        self.fatal.borrow_mut().take().or_else(|| self.last.borrow_mut().take())
    }

    /// Time derivative of a scaled state.
    pub fn derivative(&self, y: &DVector<f64>, dy: &mut DVector<f64>) {
        dy.fill(0.0);
        if self.fatal.borrow().is_some() {
            dy.fill(f64::NAN);
            return;
        }
        let ev = match self.net.evaluate(y, &self.scales, &self.ms, &self.flags.branch, false) {
            Ok(ev) => ev,
            Err(e) => {
                // A NaN derivative makes the stepper reject and shrink. A trial step that
                // overshoots into an impossible geometry is stepped around that way; a state
                // that keeps failing (the cells deforming past a positive definite inductance
                // matrix) would make the stepper crawl, so after 30 failures without progress,
                // or 500 in the segment, the segment ends with the error.
                let (since, total) = self.failures.get();
                self.failures.set((since + 1, total + 1));
                if since + 1 > 30 || total + 1 > 500 {
                    *self.fatal.borrow_mut() = Some(e);
                } else {
                    let mut slot_err = self.last.borrow_mut();
                    if slot_err.is_none() {
                        *slot_err = Some(e);
                    }
                }
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
        // A mirror ring's state equals its partner's, and so do its plastic rates.
        let mut ring_rates: Vec<PlasticRates> = Vec::with_capacity(net.rings.len());
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
            let partner = net.ring_partner[q];
            let rates = if self.flags.held[q] {
                PlasticRates { strain: 0.0, hardening: 0.0, u: 0.0 }
            } else if partner < q {
                ring_rates[partner]
            } else {
                let r = ev.ring_radius[q];
                let acc = dy[base_q + 1] * ms.velocity;
                // d(ε̇)/dt for ε̇ = v/r.
                let rate_dot = acc / r - (v_q / r).powi(2);
                plastic_rates(
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
            ring_rates.push(rates);
            let rate = rates.strain;
            // On the yield surface the plastic strain is ε − σ/E by consistency; it is set so
            // when the ring leaves the surface ([`MovingNetwork::to_elastic`]) rather than
            // integrated, since its path has a sharp bend just after the Johnson–Cook onset
            // that the stress does not feel but the stepper would have to resolve.
            dy[base_q + 2] = 0.0;
            dy[base_q + 3] = rates.hardening;
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
            // A mirror ring's events are its partner's (the run applies them to both).
            if self.flags.held[q] || self.net.ring_partner[q] < q {
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
            match self.flags.branch[q] {
                Branch::Elastic => {
                    if self.net.yield_excess(q, y, &self.ms) > self.yield_tol
                        && self.net.yield_excess(q, y_prev, &self.ms) <= self.yield_tol
                    {
                        out.push(Event::Yield(q));
                    }
                }
                branch => {
                    if self.net.flow_speed(q, branch, y, &self.ms) <= 0.0 {
                        out.push(Event::Unload(q));
                    }
                }
            }
        }
        out
    }
}

impl MovingNetwork {
    /// Ring q's hoop strain ε = ln(r/r0), hoop strain rate ε̇ = v/r (1/s), and mean
    /// temperature (K) in a scaled state.
    fn ring_kinematics(&self, q: usize, y: &DVector<f64>, ms: &MechScales) -> (f64, f64, f64) {
        let lay = self.layout();
        let ring = &self.rings[q];
        let base = lay.rings + 4 * q;
        let r = ring.r0 + y[base] * ms.length;
        let v = y[base + 1] * ms.velocity;
        let w0 = self.base.mesh.workpiece_start();
        let t = ring.filaments.iter().map(|&k| y[lay.temps + w0 + k]).sum::<f64>()
            / ring.filaments.len().max(1) as f64
            * ms.temperature;
        ((r / ring.r0).ln(), v / r, t)
    }

    /// How far elastic ring q's trial stress E (ε − ε_p) is beyond its flow stress, as a
    /// fraction of the flow stress (negative inside the yield surface).
    pub fn yield_excess(&self, q: usize, y: &DVector<f64>, ms: &MechScales) -> f64 {
        let lay = self.layout();
        let base = lay.rings + 4 * q;
        let (eps, rate, t) = self.ring_kinematics(q, y, ms);
        let flow = self.mech.flow.flow_stress_w(y[base + 3], rate, t).max(f64::MIN_POSITIVE);
        yield_margin(
            eps,
            y[base + 2],
            y[base + 3],
            rate,
            t,
            self.mech.youngs_modulus,
            &self.mech.flow,
        ) / flow
    }

    /// The branch a ring enters when it yields: tension or compression by the sign of its
    /// trial stress.
    pub fn yield_branch(&self, q: usize, y: &DVector<f64>, ms: &MechScales) -> Branch {
        let lay = self.layout();
        let (eps, _, _) = self.ring_kinematics(q, y, ms);
        if eps - y[lay.rings + 4 * q + 2] >= 0.0 {
            Branch::Tension
        } else {
            Branch::Compression
        }
    }

    /// Duration of ring q's yield onset at its state, in seconds ([`FlowLaw::onset_time`]).
    pub fn onset_time(&self, q: usize, y: &DVector<f64>, ms: &MechScales) -> Option<f64> {
        let (_, rate, t) = self.ring_kinematics(q, y, ms);
        self.mech.flow.onset_time(rate, t, self.mech.youngs_modulus)
    }

    /// Radial speed of yielding ring q in the direction of its flow (outward in tension), in
    /// m/s. The ring unloads when it turns: while it still moves that way the consistency
    /// condition gives plastic flow (the strain rate and the rate and thermal softening all
    /// add to it), so the velocity reversal is where the elastic branch takes over; thermal
    /// softening of a ring at rest shows up as a new yield event.
    pub fn flow_speed(&self, q: usize, branch: Branch, y: &DVector<f64>, ms: &MechScales) -> f64 {
        let lay = self.layout();
        branch.sign() * y[lay.rings + 4 * q + 1] * ms.velocity
    }

    /// Puts ring q back on the elastic branch with its stress unchanged: the plastic strain
    /// is set to ε − σ/E for the stress σ it had on `branch` (the yield surface holds σ at
    /// the flow stress while ε_p drifts by the stepper's error; this keeps σ continuous).
    pub fn to_elastic(&self, q: usize, branch: Branch, y: &mut DVector<f64>, ms: &MechScales) {
        if branch == Branch::Elastic {
            return;
        }
        let lay = self.layout();
        let base = lay.rings + 4 * q;
        let (eps, rate, t) = self.ring_kinematics(q, y, ms);
        let st = hoop_state(
            branch,
            eps,
            y[base + 2],
            y[base + 3],
            rate,
            t,
            self.mech.youngs_modulus,
            &self.mech.flow,
        );
        y[base + 2] = eps - st.stress / self.mech.youngs_modulus;
    }

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
            self.last_dt = dt;
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
        let (_, total) = self.failures.get();
        self.failures.set((0, total));
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
    /// Last accepted step, in seconds.
    pub last_dt: f64,
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

/// Integrates one motion segment, starting with step `first_step` (seconds; 0 lets the
/// stepper choose).
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
    first_step: f64,
    progress: Option<&dyn Fn(f64, f64)>,
) -> Result<MotionSegment, EngineError> {
    let mut rhs = MotionRhs::new(net, circuit, scales, ms, flags.clone(), watch_crowbar, t0);
    rhs.last_y = Some(y0.clone());
    rhs.progress = progress;
    rhs.yield_tol = settings.rel_tol;
    rhs.t_end = t1;
    // A segment that follows an event starts with the step the last one ended with (a fresh
    // start from a guess costs rejected steps at every event).
    // Half of it: the stepper aims at an error of about half its tolerance, so the same step
    // from a new start is rejected about half the time.
    let h0 = if first_step > 0.0 { (0.5 * first_step).min(settings.max_step) } else { 0.0 };
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
            h0,
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
        last_dt: rhs.last_dt,
    })
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;
    use crate::motion_run::flow_law_for;

    fn network(case: &ringpulse_case::Case, tolerance: f64) -> MovingNetwork {
        let prepared = crate::prepare(case).unwrap();
        let t = case.workpiece.as_ref().unwrap();
        let mech = WorkpieceMechanics {
            density: t.material.density,
            specific_heat: t.material.specific_heat,
            youngs_modulus: t.material.youngs_modulus,
            flow: flow_law_for(&t.material),
        };
        MovingNetwork::new(
            prepared.network,
            t.wall,
            mech,
            &case.coil.material,
            &t.material,
            293.15,
            None,
            None,
            tolerance,
        )
        .unwrap()
    }

    /// The tabulated coupling (C = U G and its radial derivative, over several windows, with
    /// an uneven profile) against Maxwell's formula at the same geometry: the values agree to
    /// the table tolerance of the largest entry, the force factors to a few hundred times it
    /// (a Chebyshev derivative loses about the square of the number of terms).
    #[test]
    fn tables_reproduce_the_kernel() {
        let mut case = crate::reference::coarse_expansion_case();
        // The default one-skin-depth resolution: 6 x 8 cells per turn, 2 wall layers, so that
        // the basis is a real compression (283 coil loops).
        case.discretization.mode =
            ringpulse_case::Resolution::SkinDepth { cell_over_skin_depth: 1.0 };
        // Off the coil's middle plane, so that no mirror pairing applies and the tables hold
        // every filament's own column.
        case.workpiece.as_mut().unwrap().z_center = 1e-3;
        let tol = 1e-9;
        let net = network(&case, tol);
        let lay = net.layout();
        let ms = MechScales { length: 1.5e-3, velocity: 100.0, temperature: 300.0 };
        let nr = net.n_rings();
        let mut y = DVector::zeros(lay.len);
        for q in 0..nr {
            // From 0.1 mm inward to 2.4 mm outward along the tube.
            let d = -0.1e-3 + 2.5e-3 * (q as f64 / nr as f64).powi(2);
            y[lay.rings + 4 * q] = d / ms.length;
        }
        let geo = net.geometry(&y, &ms).unwrap();
        let mut ws = net.ws.borrow_mut();
        net.coupling(&geo, &mut ws, false);
        assert!(ws.projected && !ws.reduced);
        let rank = ws.c.nrows();
        assert!(rank > 10 && rank < net.n_coil_loops, "basis of {rank} vectors");
        let basis = net.tables.borrow().basis().clone();
        let c_tab = &basis * &ws.c;
        let dc_tab = &basis * &ws.dc;
        net.coupling_exact(&geo, &mut ws, false);
        let c_max = ws.c.amax();
        let dc_max = ws.dc.amax();
        let c_err = (&c_tab - &ws.c).amax();
        let dc_err = (&dc_tab - &ws.dc).amax();
        assert!(c_err < 10.0 * tol * c_max, "C off by {:e} of {c_max:e}", c_err / c_max);
        assert!(dc_err < 300.0 * tol * dc_max, "∂C/∂r off by {:e} of {dc_max:e}", dc_err / dc_max);
        // Several windows were needed for the profile.
        assert!(net.table_windows() > nr, "{} windows for {nr} rings", net.table_windows());
    }

    /// A mirror-symmetric profile on a mirror-symmetric set-up: the reduced tables'
    /// combined columns (G_k + G_k')/√2 and their radial derivatives equal the same
    /// combination of Maxwell's formula, and the reduced evaluation (half the workpiece
    /// block) gives the currents and forces of the full one.
    #[test]
    fn mirror_reduction_matches_the_full_network() {
        let mut case = crate::reference::coarse_expansion_case();
        // Two layers, an even number of rings (no ring on the plane); then one layer of an
        // odd number, whose middle ring lies on the plane and is its own partner.
        case.discretization.mode =
            ringpulse_case::Resolution::SkinDepth { cell_over_skin_depth: 1.0 };
        check_mirror_reduction(&case, false);
        // (a request of 15 cells gives one layer of 27 rings on this tube)
        case.discretization.mode = ringpulse_case::Resolution::Coarse { tube_rings: 15 };
        check_mirror_reduction(&case, true);
    }

    fn check_mirror_reduction(case: &ringpulse_case::Case, ring_on_plane: bool) {
        let tol = 1e-9;
        let mut net = network(case, tol);
        assert!(!net.axial_free());
        let nw: usize = net.rings.iter().map(|r| r.filaments.len()).sum();
        assert!(2 * net.reps.len() <= nw + 4, "{} representatives of {nw}", net.reps.len());
        assert_eq!(
            net.reps.iter().any(|r| r.partner.is_none()),
            ring_on_plane,
            "{} rings",
            net.n_rings()
        );
        let lay = net.layout();
        let ms = MechScales { length: 1.5e-3, velocity: 100.0, temperature: 300.0 };
        let nr = net.n_rings();
        let zc = 0.5 * (net.ring_z0(0) + net.ring_z0(nr - 1));
        let half = 0.5 * (net.ring_z0(nr - 1) - net.ring_z0(0));
        let mut y = DVector::zeros(lay.len);
        for q in 0..nr {
            // Bulging in the middle: 2.4 mm there, 0.1 mm inward at the ends.
            let u = (net.ring_z0(q) - zc) / half;
            y[lay.rings + 4 * q] = (-0.1e-3 + 2.5e-3 * (1.0 - u * u)) / ms.length;
        }
        // A flux state with mirror-equal workpiece linkages and some coil flux.
        let scales = Scales { psi: 1.0, volt: 1.0, energy: 1.0, charge: 1.0, action: 1.0 };
        y[0] = 1e-3;
        for (q, ring) in net.rings.iter().enumerate() {
            let u = (net.ring_z0(q) - zc) / half;
            for &k in &ring.filaments {
                y[lay.nl - nw + k] =
                    -2e-4 * (1.0 - 0.5 * u * u) * (1.0 + 0.1 * k as f64 / nw as f64);
            }
        }
        for (q, &p) in net.ring_partner.iter().enumerate() {
            for (&k, &kp) in net.rings[q].filaments.iter().zip(&net.rings[p].filaments) {
                let v = y[lay.nl - nw + k.min(kp)];
                y[lay.nl - nw + k] = v;
            }
        }
        for f in 0..net.base.mesh.filaments.len() {
            y[lay.temps + f] = 1.0;
        }
        let geo = net.geometry(&y, &ms).unwrap();
        {
            let mut ws = net.ws.borrow_mut();
            net.coupling(&geo, &mut ws, false);
            assert!(ws.reduced);
            let basis = net.tables.borrow().basis().clone();
            let cr = &basis * &ws.cr;
            let dcr = &basis * &ws.dcr;
            net.coupling_exact(&geo, &mut ws, false);
            let mut c_err: f64 = 0.0;
            let mut dc_err: f64 = 0.0;
            for (a, ra) in net.reps.iter().enumerate() {
                let mut col = ws.c.column(ra.k).into_owned();
                let mut dcol = ws.dc.column(ra.k).into_owned();
                if let Some(kp) = ra.partner {
                    col = (col + ws.c.column(kp)) * std::f64::consts::FRAC_1_SQRT_2;
                    dcol = (dcol + ws.dc.column(kp)) * std::f64::consts::FRAC_1_SQRT_2;
                }
                c_err = c_err.max((cr.column(a) - col).amax());
                dc_err = dc_err.max((dcr.column(a) - dcol).amax());
            }
            let (c_max, dc_max) = (ws.c.amax(), ws.dc.amax());
            assert!(c_err < 10.0 * tol * c_max, "C off by {:e}", c_err / c_max);
            assert!(dc_err < 300.0 * tol * dc_max, "∂C/∂r off by {:e}", dc_err / dc_max);
        }
        let branches = vec![Branch::Elastic; nr];
        let reduced = net.evaluate(&y, &scales, &ms, &branches, false).unwrap();
        let reduced_out = net.evaluate(&y, &scales, &ms, &branches, true).unwrap();
        net.set_mirror_reduction(false);
        assert_eq!(net.reps.len(), nw);
        let full = net.evaluate(&y, &scales, &ms, &branches, false).unwrap();
        let full_out = net.evaluate(&y, &scales, &ms, &branches, true).unwrap();
        let rel = |a: &[f64], b: &[f64]| {
            let top = b.iter().fold(0.0f64, |m, v| m.max(v.abs()));
            a.iter().zip(b).fold(0.0f64, |m, (u, v)| m.max((u - v).abs())) / top
        };
        let dx = rel(reduced.x.as_slice(), full.x.as_slice());
        let df = rel(&reduced.ring_force, &full.ring_force);
        let dl = rel(&reduced.ring_lorentz, &full.ring_lorentz);
        // Both use the same table data and differ in rounding only (measured 1e-13).
        assert!(dx < 1e-10 && df < 1e-10 && dl < 1e-10, "currents {dx:e}, forces {df:e}, {dl:e}");
        assert!(full.ring_force.iter().any(|f| f.abs() > 0.0));
        // The sampled outputs: the coil turns' radial forces and the rings' axial forces
        let dt = rel(&reduced_out.turn_force, &full_out.turn_force);
        let dz = rel(&reduced_out.ring_axial_force, &full_out.ring_axial_force);
        // (from the axial basis and the pair-summed coil factors; both within the tables'
        // tolerance, measured 2e-12 and 8e-12).
        assert!(dt < 1e-9 && dz < 1e-9, "turn forces {dt:e}, axial forces {dz:e}");
        assert!(full_out.ring_axial_force.iter().any(|f| f.abs() > 0.0));
    }

    /// The demos' coil and workpiece are mirror images about the coil's mid-plane; shifting the
    /// workpiece breaks it.
    #[test]
    fn mirror_symmetry_is_detected() {
        let case = crate::reference::coarse_expansion_case();
        assert!(!network(&case, 1e-9).axial_free());
        let mut shifted = case.clone();
        shifted.workpiece.as_mut().unwrap().z_center = 1e-3;
        assert!(network(&shifted, 1e-9).axial_free());
    }
}
