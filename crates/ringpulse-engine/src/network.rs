//! The circuit network: filament inductance matrix, loop (mesh-current) formulation and the
//! force-factor matrices of the workpiece.
//!
//! Filament currents are `i = P x`, where `x` are loop currents and `P` the incidence of loops
//! on filaments (docs/theory.md, "Network"):
//! - loop 0, the bank loop, runs through the capacitor, bank, feeder and the first sub-filament
//!   of every turn (turns in series);
//! - for every other sub-filament of a turn, a loop runs out through it and back through the
//!   turn's first sub-filament, so the sub-filaments of one turn are parallel paths that share
//!   the turn's voltage;
//! - every workpiece filament is a shorted loop of its own.
//!
//! The loop inductance matrix is `Pᵀ L P` plus the external (bank and feeder) inductance on
//! loop 0. `P` has at most `turns` entries per column, so it is kept sparse. More constraints
//! (a field shaper with zero net current, several coils) are more loop columns.

use nalgebra::{Cholesky, DMatrix, DVector, Dyn};
use ringpulse_physics::batch::{gradient_batch, GradientBatch};
use ringpulse_physics::inductance;

use crate::mesh::{Mesh, Part};
use crate::EngineError;

/// One loop: the filaments it passes through with their orientation (+1 or -1).
pub type LoopColumn = Vec<(usize, f64)>;

/// The assembled network for a fixed geometry.
#[derive(Debug, Clone)]
pub struct Network {
    /// Filament mesh.
    pub mesh: Mesh,
    /// Loop incidence, one column per loop.
    pub loops: Vec<LoopColumn>,
    /// Filament inductance matrix, in henries.
    pub l_filaments: DMatrix<f64>,
    /// Loop inductance matrix including the external inductance on loop 0, in henries.
    pub l_loops: DMatrix<f64>,
    /// Inverse of `l_loops`, in 1/H.
    pub l_loops_inv: DMatrix<f64>,
    /// Filament resistances, in ohms.
    pub r_filaments: Vec<f64>,
    /// Force factors: `grad_r[(k, j)] = ∂M_kj/∂r_k` (j ≠ k) and `½ ∂L_kk/∂r_k` on the diagonal,
    /// so that the radial force on filament k is `i_k · (grad_r.row(k) · i)`, in H/m.
    pub grad_r: DMatrix<f64>,
    /// `grad_z[(k, j)] = ∂M_kj/∂z_k` (zero on the diagonal), in H/m.
    pub grad_z: DMatrix<f64>,
    /// Inductance in loop 0 outside the coil (bank and feeder), in henries.
    pub external_inductance: f64,
    /// Inductance of the coil alone, `1ᵀ L_cc 1` of the turns in series with their sub-filaments
    /// in parallel (from the loop matrix without workpiece coupling), in henries.
    pub coil_inductance: f64,
}

/// Assembles the filament inductance matrix and the force factors of every filament.
///
/// Mutual terms come from Maxwell's formula for two coaxial filaments (at the cell centres) and
/// the self terms from the geometric-mean-distance formula of a rectangular section.
pub fn assemble_filaments(mesh: &Mesh) -> (DMatrix<f64>, DMatrix<f64>, DMatrix<f64>) {
    let n = mesh.filaments.len();
    let mut l = DMatrix::<f64>::zeros(n, n);
    let mut grad_r = DMatrix::<f64>::zeros(n, n);
    let mut grad_z = DMatrix::<f64>::zeros(n, n);
    let mut pairs = GradientBatch::default();
    for i in 0..n {
        let fi = &mesh.filaments[i];
        l[(i, i)] = inductance::ring_rectangular(fi.r, fi.dr, fi.dz);
        grad_r[(i, i)] = 0.5 * inductance::ring_rectangular_dradius(fi.r, fi.dr, fi.dz);
        // Row i against every later filament, evaluated together (`gradient_batch` gives the
        // scalar kernel's numbers bit for bit).
        pairs.clear();
        for fj in &mesh.filaments[i + 1..] {
            pairs.push(fi.r, fj.r, fj.z - fi.z);
        }
        gradient_batch(&mut pairs);
        for (p, j) in ((i + 1)..n).enumerate() {
            // Ring a = i at z_i, ring b = j at z_j; dm_db = ∂M/∂r_j, dm_dz = ∂M/∂z_j = −∂M/∂z_i.
            let g = pairs.get(p);
            l[(i, j)] = g.m;
            l[(j, i)] = g.m;
            grad_r[(j, i)] = g.dm_db;
            grad_z[(j, i)] = g.dm_dz;
            grad_r[(i, j)] = g.dm_da;
            grad_z[(i, j)] = -g.dm_dz;
        }
    }
    (l, grad_r, grad_z)
}

/// Builds the loop incidence of a mesh (see the module doc).
pub fn build_loops(mesh: &Mesh) -> Vec<LoopColumn> {
    let per_turn = mesh.coil_split.radial * mesh.coil_split.axial;
    let mut loops = Vec::with_capacity(1 + mesh.filaments.len());
    loops.push((0..mesh.turns).map(|t| (t * per_turn, 1.0)).collect());
    for t in 0..mesh.turns {
        let first = t * per_turn;
        for j in 1..per_turn {
            loops.push(vec![(first + j, 1.0), (first, -1.0)]);
        }
    }
    for f in mesh.workpiece_start()..mesh.filaments.len() {
        loops.push(vec![(f, 1.0)]);
    }
    loops
}

/// Computes `Pᵀ A P` for a dense symmetric filament matrix `a` and sparse loop columns.
pub fn project(a: &DMatrix<f64>, loops: &[LoopColumn]) -> DMatrix<f64> {
    let n = a.nrows();
    let nl = loops.len();
    let mut ap = DMatrix::<f64>::zeros(n, nl);
    for (d, col) in loops.iter().enumerate() {
        for &(g, b) in col {
            let src = a.column(g);
            let mut dst = ap.column_mut(d);
            dst.axpy(b, &src, 1.0);
        }
    }
    let mut out = DMatrix::<f64>::zeros(nl, nl);
    for (c, col) in loops.iter().enumerate() {
        for &(f, a_coef) in col {
            for d in 0..nl {
                out[(c, d)] += a_coef * ap[(f, d)];
            }
        }
    }
    // Symmetrise against rounding so the Cholesky test sees an exactly symmetric matrix.
    let t = out.transpose();
    (out + t) * 0.5
}

impl Network {
    /// Assembles the network of a mesh with `external_inductance` henries in the bank loop.
    pub fn new(mesh: Mesh, external_inductance: f64) -> Result<Network, EngineError> {
        let (l_filaments, grad_r, grad_z) = assemble_filaments(&mesh);
        let loops = build_loops(&mesh);
        let mut l_loops = project(&l_filaments, &loops);
        let coil_inductance = coil_only_inductance(&mesh, &l_filaments, &loops);
        l_loops[(0, 0)] += external_inductance;
        let l_loops_inv =
            invert_spd(&l_loops).ok_or_else(|| diagnose_indefinite(&mesh, &l_filaments))?;
        let r_filaments = mesh.filaments.iter().map(|f| f.resistance()).collect();
        Ok(Network {
            mesh,
            loops,
            l_filaments,
            l_loops,
            l_loops_inv,
            r_filaments,
            grad_r,
            grad_z,
            external_inductance,
            coil_inductance,
        })
    }

    /// Number of loops (unknown currents).
    pub fn n_loops(&self) -> usize {
        self.loops.len()
    }

    /// Filament currents `i = P x`, in amperes, written into `out`.
    pub fn filament_currents(&self, x: &DVector<f64>, out: &mut DVector<f64>) {
        out.fill(0.0);
        for (c, col) in self.loops.iter().enumerate() {
            for &(f, a) in col {
                out[f] += a * x[c];
            }
        }
    }

    /// Loop voltages `Pᵀ v` of filament voltages `v`, written into `out`.
    pub fn loop_sums(&self, v: &DVector<f64>, out: &mut DVector<f64>) {
        for (c, col) in self.loops.iter().enumerate() {
            out[c] = col.iter().map(|&(f, a)| a * v[f]).sum();
        }
    }

    /// Adds `extra` henries to the bank loop and refactorises (used when a crowbar closes).
    pub fn add_bank_loop_inductance(&mut self, extra: f64) -> Result<(), EngineError> {
        if extra == 0.0 {
            return Ok(());
        }
        self.l_loops[(0, 0)] += extra;
        self.external_inductance += extra;
        self.l_loops_inv = invert_spd(&self.l_loops)
            .ok_or_else(|| diagnose_indefinite(&self.mesh, &self.l_filaments))?;
        Ok(())
    }
}

/// The coil's own inductance: loop 0 with the sub-filament loops of the coil eliminated
/// (Schur complement), workpiece loops left out.
fn coil_only_inductance(mesh: &Mesh, l: &DMatrix<f64>, loops: &[LoopColumn]) -> f64 {
    let coil_loops: Vec<LoopColumn> = loops
        .iter()
        .filter(|col| col.iter().all(|&(f, _)| f < mesh.workpiece_start()))
        .cloned()
        .collect();
    let lc = project(l, &coil_loops);
    if lc.nrows() == 1 {
        return lc[(0, 0)];
    }
    let k = lc.nrows();
    let a = lc[(0, 0)];
    let b = lc.view((0, 1), (1, k - 1)).transpose();
    let d = lc.view((1, 1), (k - 1, k - 1)).into_owned();
    match Cholesky::new(d) {
        Some(ch) => a - b.dot(&ch.solve(&b)),
        None => a,
    }
}

/// Inverts a symmetric positive definite matrix by Cholesky; `None` if it is not positive
/// definite.
pub fn invert_spd(a: &DMatrix<f64>) -> Option<DMatrix<f64>> {
    let ch: Cholesky<f64, Dyn> = Cholesky::new(a.clone())?;
    let inv = ch.inverse();
    if inv.iter().all(|v| v.is_finite()) {
        Some(inv)
    } else {
        None
    }
}

/// Finds which conductor's split makes the inductance matrix indefinite.
fn diagnose_indefinite(mesh: &Mesh, l: &DMatrix<f64>) -> EngineError {
    let block_ok = |idx: &[usize]| {
        let m = DMatrix::from_fn(idx.len(), idx.len(), |a, b| l[(idx[a], idx[b])]);
        Cholesky::new(m).is_some()
    };
    for turn in 0..mesh.turns {
        let idx: Vec<usize> = mesh
            .filaments
            .iter()
            .enumerate()
            .filter(|(_, f)| f.part == Part::Coil { turn })
            .map(|(i, _)| i)
            .collect();
        if !block_ok(&idx) {
            let f = mesh.filaments[idx[0]];
            return EngineError::IndefiniteInductance {
                conductor: format!(
                    "coil turn {turn} split {} x {} (cells {:.3} mm radial x {:.3} mm axial)",
                    mesh.coil_split.radial,
                    mesh.coil_split.axial,
                    f.dr * 1e3,
                    f.dz * 1e3
                ),
            };
        }
    }
    let w: Vec<usize> = (mesh.workpiece_start()..mesh.filaments.len()).collect();
    if !w.is_empty() && !block_ok(&w) {
        let f = mesh.filaments[w[0]];
        let s = mesh.workpiece_split.unwrap_or(ringpulse_case::Split { radial: 0, axial: 0 });
        return EngineError::IndefiniteInductance {
            conductor: format!(
                "workpiece split {} x {} (cells {:.3} mm radial x {:.3} mm axial)",
                s.radial,
                s.axial,
                f.dr * 1e3,
                f.dz * 1e3
            ),
        };
    }
    EngineError::IndefiniteInductance {
        conductor:
            "the coupling between coil and workpiece (conductors too close for their cell size)"
                .to_string(),
    }
}
