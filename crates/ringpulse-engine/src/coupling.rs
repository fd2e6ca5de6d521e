//! The coil–workpiece coupling of a moving workpiece, tabulated against ring radius.
//!
//! With the coil loop matrix A = L_A L_Aᵀ (constant: the coil does not move) and the
//! coil–workpiece block B = P_cᵀ L_cw of the loop inductance matrix, the motion engine works
//! with C = L_A⁻¹ B (docs/theory.md, "Motion"). Column k of C belongs to workpiece filament k
//! and depends on nothing but that filament's position: its radius, which follows the mean
//! radius r_q of its axial ring (layer offset and wall thinning included), and the rigid
//! axial shift of the workpiece. So each column is a smooth function of one variable, r_q,
//! and is tabulated once as a Chebyshev series in r_q instead of being rebuilt from
//! Maxwell's formula (n_coil mutual inductances) and multiplied by L_A⁻¹ (n_loops × n_coil
//! multiply-adds) at every evaluation of the right-hand side.
//!
//! Each ring gets windows of radius [lo, hi]; on each window every one of its filaments
//! has the Chebyshev coefficients (p terms) of
//!
//! - C_k(r_q) (n_loops values), whose derivative series gives ∂C_k/∂r_q, the force factor;
//! - ∂C_k/∂z(r_q), for the axial force and a first-order axial shift;
//! - ∂M_jk/∂a_j(r_q) for every coil filament j (n_coil values), the radial force factor on
//!   the coil, needed only when the coil's own forces are reported.
//!
//! The forces are the exact derivatives of the tabulated matrix, so the energy account
//! closes whatever the table error; that error is kept far below the stepper's tolerance:
//! a window's series is accepted only when its last two coefficients are below
//! `tolerance` times its largest (the Chebyshev series of a function analytic around the
//! window converges geometrically, and the first neglected term bounds the error), and a
//! window that fails is halved until it passes. The window width starts at half the
//! distance from the ring's filaments to the nearest coil filament, where the series
//! converges by about a factor ten per term (the nearest singularity of M is at that
//! distance in the complex r plane).
//!
//! Windows are built on demand, in batches, when a ring reaches a radius no window covers.
//!
//! The columns of C over all filaments and radii span far fewer directions than the coil has
//! loops (about 90 of 283 on the expansion demo at the default resolution, to 1e-9 of the
//! largest), because a workpiece ring a millimetre or more away sees each coil conductor's
//! cross-section through a smooth field. So the tables store G = Uᵀ C in an orthonormal
//! basis U of that span, found greedily from the tabulated data (each column's residual
//! outside the basis below `tolerance` times the largest column), and the engine works with
//! C = U G: the products of every evaluation shrink by the same factor, and so does the
//! memory the evaluation streams through.
//!
//! With a mirror pairing (a set-up that is its own mirror image; module `motion`, "Mirror
//! symmetry") only one ring of each pair gets windows. They hold the combined columns
//! (C_k + C_k')/√2 of a layer and its partner at the same radius, which the right-hand side
//! needs, with the partner's values taken from the coil's mirror image (M(coil i, k') =
//! M(coil image(i), k)), so no kernel calls are added. The basis U then spans only these
//! combined columns (49 directions on the expansion demo instead of 106); the own ∂C_k/∂z
//! (for the reported axial forces) and the pair-summed coil factors (for the coil's forces)
//! get bases of their own, used only by the sampled output.

use nalgebra::{DMatrix, DVector};
use ringpulse_physics::batch::{gradient_batch, GradientBatch};

use crate::mesh::Filament;

/// Chebyshev terms per window.
const TERMS: usize = 12;

/// Windows narrower than this fraction of the initial width are not split further (the
/// series is then used as it is; it only happens for a ring pressed against the coil).
const MIN_WIDTH_FRACTION: f64 = 1.0 / 64.0;

/// Geometry of a workpiece ring that the tables need: how its filaments sit for a given
/// mean radius.
#[derive(Debug, Clone)]
pub struct RingShape {
    /// Initial mean radius, in metres.
    pub r0: f64,
    /// Initial wall, in metres.
    pub h0: f64,
    /// Axial centre at zero shift, in metres.
    pub z0: f64,
    /// Number of radial layers (filaments) of the ring.
    pub layers: usize,
}

impl RingShape {
    /// Radius of layer `j` when the ring's mean radius is `r`, in metres (the wall thins by
    /// volume constancy, h = h0 r0 / r, and the layers split it evenly).
    pub fn layer_radius(&self, j: usize, r: f64) -> f64 {
        let h = self.h0 * self.r0 / r;
        let c = (j as f64 + 0.5) / self.layers as f64 - 0.5;
        r + c * h
    }
}

/// One window of one ring: coefficients for each layer filament.
#[derive(Debug, Clone)]
struct Window {
    lo: f64,
    hi: f64,
    /// Per layer: coefficients of G_k = Uᵀ C_k, one row per basis vector that existed when the
    /// window was built (later basis vectors have zero coefficients here), TERMS columns.
    c: Vec<DMatrix<f64>>,
    /// Per layer: the same for ∂C_k/∂z.
    cz: Vec<DMatrix<f64>>,
    /// Per layer: n_coil × TERMS coefficients of ∂M_jk/∂a_j.
    fa: Vec<DMatrix<f64>>,
    /// For a ring with a mirror partner, per layer: the coefficients of (G_k + G_k')/√2, the
    /// layer and the partner's same layer at the same mean radius (the symmetric combination
    /// the motion engine solves for); empty otherwise.
    cs: Vec<DMatrix<f64>>,
    /// For a ring with a mirror partner, per layer: n_coil × TERMS coefficients of
    /// ∂M_jk/∂a_j + ∂M_jk'/∂a_j; empty otherwise.
    fas: Vec<DMatrix<f64>>,
    /// With a mirror pairing, per layer: the coil factors of the representative (`fas`, or
    /// `fa` on the plane) in the basis F of their span, m_f × TERMS.
    fap: Vec<DMatrix<f64>>,
}

/// The tables of all rings.
#[derive(Debug, Clone)]
pub struct CouplingTables {
    /// L_A⁻¹ P_cᵀ, n_loops × n_coil.
    g0: DMatrix<f64>,
    /// Coil filaments (positions and sizes).
    coil: Vec<Filament>,
    rings: Vec<RingShape>,
    /// Mirror partner of each ring (itself on the plane or without symmetry). A ring whose
    /// partner has the lower index gets no windows: its partner's carry the pair.
    partner: Vec<usize>,
    /// Mirror image of each coil filament (with ring partners): M(coil i, k') equals
    /// M(coil image[i], k) for mirror filaments k, k'.
    coil_image: Vec<usize>,
    /// Initial window width of each ring, in metres.
    width: Vec<f64>,
    /// Grid origin of each ring's windows, in metres.
    base: Vec<f64>,
    windows: Vec<Vec<Window>>,
    /// Axial shift the tables were built at, in metres.
    z_anchor: f64,
    tolerance: f64,
    /// Number of windows built so far.
    built: usize,
    /// Orthonormal basis U of the coupling's span, n_loops × m (m grows as needed).
    basis: DMatrix<f64>,
    /// With a mirror pairing, the basis Z of the axial factors' span (the windows' ∂C/∂z
    /// coefficients are in it); without one it stays empty and they are in U.
    zbasis: DMatrix<f64>,
    /// With a mirror pairing, the basis F (n_coil × m_f) of the coil factors' span (the
    /// columns of ∂M_jk/∂a_j over the coil filaments j are smooth in j as C's are).
    fbasis: DMatrix<f64>,
    /// Largest column norm of the coil-factor data (set by the first batch).
    fa_norm_ref: f64,
    /// Largest column norm of the C data seen, and the factor that brings ∂C/∂z data to the
    /// same size (set by the first batch), for the basis threshold.
    norm_ref: f64,
    z_weight: f64,
}

/// Chebyshev polynomials T_a(x) and their derivatives T'_a(x), a < TERMS.
fn chebyshev(x: f64) -> ([f64; TERMS], [f64; TERMS]) {
    let mut t = [0.0; TERMS];
    let mut d = [0.0; TERMS];
    t[0] = 1.0;
    t[1] = x;
    d[1] = 1.0;
    for a in 1..TERMS - 1 {
        t[a + 1] = 2.0 * x * t[a] - t[a - 1];
        d[a + 1] = 2.0 * t[a] + 2.0 * x * d[a] - d[a - 1];
    }
    (t, d)
}

/// The Chebyshev nodes of the first kind on [-1, 1].
fn nodes() -> [f64; TERMS] {
    let mut x = [0.0; TERMS];
    for (i, xi) in x.iter_mut().enumerate() {
        *xi = (std::f64::consts::PI * (i as f64 + 0.5) / TERMS as f64).cos();
    }
    x
}

/// Coefficients of the interpolant through values at the nodes: `values` has one column per
/// node; the result one column per term.
fn coefficients(values: &DMatrix<f64>) -> DMatrix<f64> {
    let n = TERMS as f64;
    let mut basis = DMatrix::<f64>::zeros(TERMS, TERMS);
    for i in 0..TERMS {
        for a in 0..TERMS {
            let w = if a == 0 { 1.0 / n } else { 2.0 / n };
            basis[(i, a)] = w * (std::f64::consts::PI * a as f64 * (i as f64 + 0.5) / n).cos();
        }
    }
    values * basis
}

/// Relative size of the last two coefficients against the largest (column norms).
fn tail(coef: &DMatrix<f64>) -> f64 {
    let norms: Vec<f64> = (0..TERMS).map(|a| coef.column(a).norm()).collect();
    let top = norms.iter().fold(0.0f64, |m, v| m.max(*v));
    if top == 0.0 {
        return 0.0;
    }
    (norms[TERMS - 1] + norms[TERMS - 2]) / top
}

/// Sums a series and its derivative (times `scale`, the derivative of x against radius)
/// into two columns (plain slices: this is the innermost loop of every evaluation, compiled
/// for the widest vector unit the processor has through [`pulp`]; the same operations in the
/// same order on every unit).
fn series(
    coef: &DMatrix<f64>,
    t: &[f64; TERMS],
    d: &[f64; TERMS],
    scale: f64,
    value: &mut [f64],
    slope: &mut [f64],
) {
    struct Sum<'a> {
        coef: &'a DMatrix<f64>,
        t: &'a [f64; TERMS],
        d: &'a [f64; TERMS],
        scale: f64,
        value: &'a mut [f64],
        slope: &'a mut [f64],
    }
    impl pulp::WithSimd for Sum<'_> {
        type Output = ();
        #[inline(always)]
        fn with_simd<S: pulp::Simd>(self, _simd: S) {
            let Sum { coef, t, d, scale, value, slope } = self;
            // The window may predate the last basis vectors: those rows stay zero.
            let n = coef.nrows();
            let data = coef.as_slice();
            value.fill(0.0);
            slope.fill(0.0);
            for a in 0..TERMS {
                let src = &data[a * n..(a + 1) * n];
                let (ta, da) = (t[a], d[a] * scale);
                for ((v, s), c) in value[..n].iter_mut().zip(slope[..n].iter_mut()).zip(src) {
                    *v += ta * c;
                    *s += da * c;
                }
            }
        }
    }
    pulp::Arch::new().dispatch(Sum { coef, t, d, scale, value, slope });
}

/// Extends the basis until every column of `data` (n_loops × N) lies in its span to
/// within `threshold`: greedy, in blocks of the columns with the
/// largest residuals, orthonormalised twice by modified Gram–Schmidt (deterministic).
fn absorb(basis: &mut DMatrix<f64>, data: &DMatrix<f64>, threshold: f64) {
    let n = basis.nrows();
    // Only columns above the threshold can ever need a basis vector (projecting out more of
    // the basis only shrinks a residual), so the others are dropped at once, and every
    // column whose residual falls below it is dropped as the basis grows: the residual
    // updates, the cost of this function, then shrink with the active set.
    let keep = |r: &DMatrix<f64>| -> (DMatrix<f64>, Vec<f64>) {
        let norms: Vec<f64> = r.column_iter().map(|c| c.norm()).collect();
        let active: Vec<usize> = (0..norms.len()).filter(|&j| norms[j] > threshold).collect();
        let kept_norms = active.iter().map(|&j| norms[j]).collect();
        (r.select_columns(active.iter()), kept_norms)
    };
    let (mut r, _) = keep(data);
    if basis.ncols() > 0 && r.ncols() > 0 {
        for _ in 0..2 {
            // Uᵀ r as a plain product with the transpose (nalgebra's tr_mul takes one dot
            // product per entry, several times slower for these sizes).
            let coef = basis.transpose() * &r;
            r.gemm(-1.0, basis, &coef, 1.0);
        }
    }
    loop {
        let (active, norms) = keep(&r);
        r = active;
        if r.ncols() == 0 || basis.ncols() >= n {
            break;
        }
        let mut order: Vec<usize> = (0..norms.len()).collect();
        order.sort_by(|&a, &b| norms[b].total_cmp(&norms[a]).then(a.cmp(&b)));
        order.truncate(16);
        let mut added: Vec<DVector<f64>> = Vec::new();
        for &j in &order {
            let mut v = r.column(j).into_owned();
            for _ in 0..2 {
                for u in basis.column_iter() {
                    let d = u.dot(&v);
                    v.axpy(-d, &u, 1.0);
                }
                for u in &added {
                    let d = u.dot(&v);
                    v.axpy(-d, u, 1.0);
                }
            }
            let norm = v.norm();
            if norm > threshold {
                added.push(v / norm);
            }
        }
        if added.is_empty() {
            break;
        }
        let block = DMatrix::from_columns(&added);
        let coef = block.transpose() * &r;
        r.gemm(-1.0, &block, &coef, 1.0);
        let old = std::mem::replace(basis, DMatrix::zeros(0, 0));
        let mut cols: Vec<DVector<f64>> = old.column_iter().map(|c| c.into_owned()).collect();
        cols.extend(added);
        *basis = DMatrix::from_columns(&cols);
        if basis.ncols() == 0 {
            *basis = DMatrix::zeros(n, 0);
        }
    }
}

/// Sums a series (no derivative) into a column; as [`series`], rows the window predates stay
/// zero, and the loop is compiled for the widest vector unit.
fn series_value(coef: &DMatrix<f64>, t: &[f64; TERMS], value: &mut [f64]) {
    struct Sum<'a>(&'a DMatrix<f64>, &'a [f64; TERMS], &'a mut [f64]);
    impl pulp::WithSimd for Sum<'_> {
        type Output = ();
        #[inline(always)]
        fn with_simd<S: pulp::Simd>(self, _simd: S) {
            let Sum(coef, t, value) = self;
            let n = coef.nrows();
            value.fill(0.0);
            if n == 0 {
                return;
            }
            for (ta, src) in t.iter().zip(coef.as_slice().chunks_exact(n)) {
                for (v, c) in value[..n].iter_mut().zip(src) {
                    *v += ta * c;
                }
            }
        }
    }
    pulp::Arch::new().dispatch(Sum(coef, t, value));
}

/// Column k of a column-major matrix as a slice.
fn column_mut(m: &mut DMatrix<f64>, k: usize) -> &mut [f64] {
    let n = m.nrows();
    &mut m.as_mut_slice()[k * n..(k + 1) * n]
}

impl CouplingTables {
    /// Tables for the rings of a workpiece against the coil filaments `coil`, with
    /// `g0` = L_A⁻¹ P_cᵀ, built at axial shift `z_anchor`; a window is accepted when its
    /// coefficient tail is below `tolerance`. `mirror`, for a mirror-symmetric set-up, gives
    /// each ring's mirror partner (its own index on the plane) and each coil filament's
    /// mirror image; the tables then hold the combined series of
    /// [`CouplingTables::fill_reduced`] for one ring of each pair, and only the reduced
    /// fills may be used. Builds the window around every ring's initial radius.
    pub fn new(
        g0: DMatrix<f64>,
        coil: Vec<Filament>,
        rings: Vec<RingShape>,
        mirror: Option<(Vec<usize>, Vec<usize>)>,
        z_anchor: f64,
        tolerance: f64,
    ) -> CouplingTables {
        let mut width = Vec::with_capacity(rings.len());
        let mut base = Vec::with_capacity(rings.len());
        for ring in &rings {
            let mut d = f64::INFINITY;
            for j in 0..ring.layers {
                let rj = ring.layer_radius(j, ring.r0);
                for c in &coil {
                    d = d.min((rj - c.r).hypot(ring.z0 + z_anchor - c.z));
                }
            }
            // Half the distance to the coil; a ring far from it still gets windows no wider
            // than a quarter of its radius.
            let w = (0.5 * d).min(0.25 * ring.r0).max(1e-9);
            width.push(w);
            // The initial radius sits a quarter into its first window (most rings move away
            // from the coil, and the first window should cover a little recoil too).
            base.push(ring.r0 - 0.25 * w);
        }
        let n = rings.len();
        let valid = |(partner, image): &(Vec<usize>, Vec<usize>)| {
            partner.len() == rings.len()
                && partner.iter().enumerate().all(|(q, &p)| {
                    p < rings.len() && rings[p].layers == rings[q].layers && partner[p] == q
                })
                && image.len() == coil.len()
                && image.iter().enumerate().all(|(i, &j)| j < coil.len() && image[j] == i)
        };
        let (partner, coil_image) = mirror
            .filter(valid)
            .unwrap_or_else(|| ((0..rings.len()).collect(), (0..coil.len()).collect()));
        let mut tables = CouplingTables {
            g0,
            coil,
            rings,
            partner,
            coil_image,
            width,
            base,
            windows: vec![Vec::new(); n],
            z_anchor,
            tolerance,
            built: 0,
            basis: DMatrix::zeros(0, 0),
            zbasis: DMatrix::zeros(0, 0),
            fbasis: DMatrix::zeros(0, 0),
            fa_norm_ref: 0.0,
            norm_ref: 0.0,
            z_weight: 0.0,
        };
        let ncl = tables.g0.nrows();
        tables.basis = DMatrix::zeros(ncl, 0);
        tables.zbasis = DMatrix::zeros(ncl, 0);
        let nc = tables.coil.len();
        tables.fbasis = DMatrix::zeros(nc, 0);
        let radii: Vec<f64> = tables.rings.iter().map(|r| r.r0).collect();
        tables.ensure(&radii);
        tables
    }

    /// Fresh tables for the same coil and rings without the mirror pairing (for checks).
    pub fn without_mirror(&self) -> CouplingTables {
        CouplingTables::new(
            self.g0.clone(),
            self.coil.clone(),
            self.rings.clone(),
            None,
            self.z_anchor,
            self.tolerance,
        )
    }

    /// Number of windows built so far.
    pub fn windows_built(&self) -> usize {
        self.built
    }

    /// Axial shift the tables were built at, in metres.
    pub fn z_anchor(&self) -> f64 {
        self.z_anchor
    }

    /// The basis U (n_loops × m): C = U G.
    pub fn basis(&self) -> &DMatrix<f64> {
        &self.basis
    }

    /// Number of basis vectors m.
    pub fn rank(&self) -> usize {
        self.basis.ncols()
    }

    /// The basis F of the coil factors with a mirror pairing (n_coil × m_f; empty without
    /// one): the columns of [`CouplingTables::fill_reduced_outputs`]'s `fa` are in it.
    pub fn fbasis(&self) -> &DMatrix<f64> {
        &self.fbasis
    }

    /// The basis Z of the axial factors with a mirror pairing (n_loops × m_z; empty
    /// without one): the columns of [`CouplingTables::fill_reduced_outputs`]'s `cz` are in it.
    pub fn zbasis(&self) -> &DMatrix<f64> {
        &self.zbasis
    }

    /// The window of ring q that covers radius r (windows are sorted and do not overlap, so a
    /// binary search finds the first one whose upper end reaches r).
    fn find(&self, q: usize, r: f64) -> Option<usize> {
        let wins = &self.windows[q];
        let i = wins.partition_point(|w| w.hi < r);
        wins.get(i).filter(|w| r >= w.lo && r <= w.hi).map(|_| i)
    }

    /// Builds whatever windows are missing for rings at mean radii `radii` (metres).
    pub fn ensure(&mut self, radii: &[f64]) {
        let mut wanted: Vec<(usize, f64, f64)> = Vec::new();
        for (q, &r) in radii.iter().enumerate() {
            if self.partner[q] < q || !(r.is_finite() && r > 0.0) || self.find(q, r).is_some() {
                continue;
            }
            let w = self.width[q];
            let cell = ((r - self.base[q]) / w).floor();
            let lo = self.base[q] + cell * w;
            wanted.push((q, lo, lo + w));
        }
        // Build, check, and halve the windows whose series has not converged.
        while !wanted.is_empty() {
            let built = self.build(&wanted);
            let built = self.project(built);
            let mut again = Vec::new();
            for ((q, lo, hi), win) in wanted.into_iter().zip(built) {
                let converged = win
                    .c
                    .iter()
                    .chain(win.cz.iter())
                    .chain(win.fa.iter())
                    .chain(win.cs.iter())
                    .chain(win.fas.iter())
                    .all(|m| tail(m) <= self.tolerance);
                let narrow = hi - lo <= self.width[q] * MIN_WIDTH_FRACTION;
                if converged || narrow {
                    let pos = self.windows[q].partition_point(|x| x.lo < lo);
                    self.windows[q].insert(pos, win);
                    self.built += 1;
                } else {
                    let mid = 0.5 * (lo + hi);
                    again.push((q, lo, mid));
                    again.push((q, mid, hi));
                }
            }
            wanted = again;
        }
    }

    /// Extends the basis by the new windows' data and stores their C and ∂C/∂z coefficients
    /// in it (the convergence test runs on the projected coefficients).
    fn project(&mut self, windows: Vec<Window>) -> Vec<Window> {
        let n = self.basis.nrows();
        let count: usize = windows.iter().map(|w| w.c.len() * TERMS).sum();
        let count_s: usize = windows.iter().map(|w| w.cs.len() * TERMS).sum();
        let mut data_c = DMatrix::<f64>::zeros(n, count);
        let mut data_z = DMatrix::<f64>::zeros(n, count);
        let mut data_s = DMatrix::<f64>::zeros(n, count_s);
        let mut col = 0;
        let mut col_s = 0;
        for w in &windows {
            for (c, cz) in w.c.iter().zip(&w.cz) {
                // A paired ring's own C is not used (the engine works with the combined
                // columns), so it does not widen the basis.
                if w.cs.is_empty() {
                    data_c.columns_mut(col, TERMS).copy_from(c);
                }
                data_z.columns_mut(col, TERMS).copy_from(cz);
                col += TERMS;
            }
            for cs in &w.cs {
                data_s.columns_mut(col_s, TERMS).copy_from(cs);
                col_s += TERMS;
            }
        }
        if self.norm_ref == 0.0 {
            let max_norm = |m: &DMatrix<f64>| m.column_iter().map(|c| c.norm()).fold(0.0, f64::max);
            // (a paired ring contributes its combined columns, √2 times its own in size)
            self.norm_ref =
                max_norm(&data_c).max(max_norm(&data_s) * std::f64::consts::FRAC_1_SQRT_2);
            let nz = max_norm(&data_z);
            self.z_weight = if nz > 0.0 { self.norm_ref / nz } else { 0.0 };
        }
        let mirrored = self.partner.iter().enumerate().any(|(q, &p)| p != q);
        let threshold = self.tolerance * self.norm_ref;
        let uz = if mirrored {
            // The right-hand side needs only the combined columns; the axial factors (own
            // ∂C_k/∂z, for the reported axial forces) get a basis of their own, so that they
            // do not widen the one every evaluation streams through (49 against 106
            // directions on the expansion demo).
            let mut data = DMatrix::<f64>::zeros(n, count + count_s);
            data.columns_mut(0, count).copy_from(&data_c);
            data.columns_mut(count, count_s).copy_from(&data_s);
            absorb(&mut self.basis, &data, threshold);
            absorb(&mut self.zbasis, &(data_z * self.z_weight), threshold);
            self.zbasis.transpose()
        } else {
            let mut data = DMatrix::<f64>::zeros(n, 2 * count + count_s);
            data.columns_mut(0, count).copy_from(&data_c);
            data.columns_mut(count, count).copy_from(&(data_z * self.z_weight));
            data.columns_mut(2 * count, count_s).copy_from(&data_s);
            absorb(&mut self.basis, &data, threshold);
            self.basis.transpose()
        };
        let ut = self.basis.transpose();
        // The representatives' coil factors (pair sums, or own on the plane) in a basis of
        // their own, for the sampled coil forces (their 12 terms × n_coil values per filament
        // otherwise stream through every sampled evaluation).
        let uf = if mirrored {
            let reps: Vec<&DMatrix<f64>> = windows
                .iter()
                .flat_map(|w| if w.fas.is_empty() { w.fa.iter() } else { w.fas.iter() })
                .collect();
            let nc = self.fbasis.nrows();
            let mut data = DMatrix::<f64>::zeros(nc, reps.len() * TERMS);
            for (i, m) in reps.iter().enumerate() {
                data.columns_mut(i * TERMS, TERMS).copy_from(*m);
            }
            if self.fa_norm_ref == 0.0 {
                self.fa_norm_ref = data.column_iter().map(|c| c.norm()).fold(0.0, f64::max);
            }
            absorb(&mut self.fbasis, &data, self.tolerance * self.fa_norm_ref);
            Some(self.fbasis.transpose())
        } else {
            None
        };
        windows
            .into_iter()
            .map(|w| {
                let fap = match &uf {
                    Some(uf) => if w.fas.is_empty() { &w.fa } else { &w.fas }
                        .iter()
                        .map(|m| uf * m)
                        .collect(),
                    None => Vec::new(),
                };
                Window {
                    lo: w.lo,
                    hi: w.hi,
                    c: w.c.iter().map(|c| &ut * c).collect(),
                    cz: w.cz.iter().map(|c| &uz * c).collect(),
                    fa: w.fa,
                    cs: w.cs.iter().map(|c| &ut * c).collect(),
                    fas: w.fas,
                    fap,
                }
            })
            .collect()
    }

    /// Builds windows (ring, lo, hi) in one batch: kernel values at the nodes of every
    /// window, one product with L_A⁻¹ P_cᵀ, one transform to coefficients.
    fn build(&self, wanted: &[(usize, f64, f64)]) -> Vec<Window> {
        let nc = self.coil.len();
        let x = nodes();
        // Columns: for each window, each layer, each node.
        let paired = |q: usize| self.partner[q] != q;
        let cols: usize = wanted.iter().map(|&(q, _, _)| self.rings[q].layers * TERMS).sum();
        let cols_s: usize = wanted
            .iter()
            .filter(|&&(q, _, _)| paired(q))
            .map(|&(q, _, _)| self.rings[q].layers * TERMS)
            .sum();
        let mut m = DMatrix::<f64>::zeros(nc, cols);
        let mut mz = DMatrix::<f64>::zeros(nc, cols);
        let mut ma = DMatrix::<f64>::zeros(nc, cols);
        // For paired rings: M_ik + M_ik' (= M_ik + M_image(i),k) and the same for ∂M/∂a_i.
        let mut ms = DMatrix::<f64>::zeros(nc, cols_s);
        let mut mas = DMatrix::<f64>::zeros(nc, cols_s);
        let mut col = 0;
        let mut col_s = 0;
        let mut pairs = GradientBatch::default();
        for &(q, lo, hi) in wanted {
            let ring = &self.rings[q];
            for j in 0..ring.layers {
                for xi in x.iter() {
                    let r = 0.5 * (lo + hi) + 0.5 * (hi - lo) * xi;
                    let rk = ring.layer_radius(j, r);
                    let zk = ring.z0 + self.z_anchor;
                    pairs.clear();
                    for c in &self.coil {
                        pairs.push(c.r, rk, zk - c.z);
                    }
                    gradient_batch(&mut pairs);
                    for i in 0..self.coil.len() {
                        let g = pairs.get(i);
                        m[(i, col)] = g.m;
                        mz[(i, col)] = g.dm_dz;
                        ma[(i, col)] = g.dm_da;
                    }
                    if paired(q) {
                        for (i, &image) in self.coil_image.iter().enumerate() {
                            ms[(i, col_s)] = m[(i, col)] + m[(image, col)];
                            mas[(i, col_s)] = ma[(i, col)] + ma[(image, col)];
                        }
                        col_s += 1;
                    }
                    col += 1;
                }
            }
        }
        let cm = &self.g0 * &m;
        let cmz = &self.g0 * &mz;
        let cms = (&self.g0 * &ms) * std::f64::consts::FRAC_1_SQRT_2;
        let mut out = Vec::with_capacity(wanted.len());
        let mut col = 0;
        let mut col_s = 0;
        for &(q, lo, hi) in wanted {
            let layers = self.rings[q].layers;
            let mut win = Window {
                lo,
                hi,
                c: Vec::with_capacity(layers),
                cz: Vec::with_capacity(layers),
                fa: Vec::with_capacity(layers),
                cs: Vec::new(),
                fas: Vec::new(),
                fap: Vec::new(),
            };
            for _ in 0..layers {
                win.c.push(coefficients(&cm.columns(col, TERMS).into_owned()));
                win.cz.push(coefficients(&cmz.columns(col, TERMS).into_owned()));
                win.fa.push(coefficients(&ma.columns(col, TERMS).into_owned()));
                col += TERMS;
                if paired(q) {
                    win.cs.push(coefficients(&cms.columns(col_s, TERMS).into_owned()));
                    win.fas.push(coefficients(&mas.columns(col_s, TERMS).into_owned()));
                    col_s += TERMS;
                }
            }
            out.push(win);
        }
        out
    }

    /// Fills column k of `c` with G_k = Uᵀ C_k and of `dc` with ∂G_k/∂r_q for every workpiece
    /// filament, and with `axial` also ∂G_k/∂z and ∂²G_k/∂z∂r_q, for rings at mean radii
    /// `radii` (metres). The matrices must have [`CouplingTables::rank`] rows after
    /// [`CouplingTables::ensure`], which builds missing windows and may grow the basis.
    /// For tables without a mirror pairing (with one, [`CouplingTables::fill_reduced`]).
    pub fn fill(
        &self,
        radii: &[f64],
        c: &mut DMatrix<f64>,
        dc: &mut DMatrix<f64>,
        mut axial: Option<(&mut DMatrix<f64>, &mut DMatrix<f64>)>,
    ) {
        self.each_column(radii, |k, win, j, x| {
            let scale = 2.0 / (win.hi - win.lo);
            let (t, d) = chebyshev(x);
            series(&win.c[j], &t, &d, scale, column_mut(c, k), column_mut(dc, k));
            if let Some((cz, dcz)) = axial.as_mut() {
                series(&win.cz[j], &t, &d, scale, column_mut(cz, k), column_mut(dcz, k));
            }
        });
    }

    /// Calls `f(a, window, layer, x)` for every filament with tables: every workpiece
    /// filament (ring by ring, layers inner first, as the mesh orders them) without a mirror
    /// pairing, the representatives (the layers of each ring whose partner's index is not
    /// below its own, in ring order) with one; x is the ring's radius in `radii` (metres)
    /// mapped to [-1, 1] in the window that covers it. A ring without a window (only for a
    /// non-finite radius, which the caller reports) is skipped.
    fn each_column(&self, radii: &[f64], mut f: impl FnMut(usize, &Window, usize, f64)) {
        let mut a = 0;
        for (q, &r) in radii.iter().enumerate() {
            if self.partner[q] < q {
                continue;
            }
            let layers = self.rings[q].layers;
            if let Some(wi) = self.find(q, r) {
                let win = &self.windows[q][wi];
                let x = (2.0 * r - win.lo - win.hi) / (win.hi - win.lo);
                for j in 0..layers {
                    f(a + j, win, j, x);
                }
            }
            a += layers;
        }
    }

    /// Fills, for a mirror-symmetric workpiece at mean radii `radii` (metres; a ring and its
    /// partner at the same radius), one column per representative filament of `c` with
    /// (G_k + G_k')/√2 and of `dc` with its derivative against the ring's radius (G_k and
    /// ∂G_k/∂r_q for a ring on the plane). The matrices need [`CouplingTables::rank`] rows.
    /// Columns a with `keep[a]` are left as they are (the caller knows they hold the values
    /// for these radii).
    pub fn fill_reduced(
        &self,
        radii: &[f64],
        c: &mut DMatrix<f64>,
        dc: &mut DMatrix<f64>,
        keep: Option<&[bool]>,
    ) {
        self.each_column(radii, |a, win, j, x| {
            if keep.is_some_and(|k| k.get(a).copied().unwrap_or(false)) {
                return;
            }
            let scale = 2.0 / (win.hi - win.lo);
            let (t, d) = chebyshev(x);
            let coef = if win.cs.is_empty() { &win.c[j] } else { &win.cs[j] };
            series(coef, &t, &d, scale, column_mut(c, a), column_mut(dc, a));
        });
    }

    /// The outputs of a mirror-symmetric workpiece beyond the right-hand side, one column per
    /// representative filament k: in `cz` (as many rows as [`CouplingTables::zbasis`] has
    /// columns) its own Zᵀ ∂C_k/∂z (the partner's is its negative),
    /// and in `fa` (as many rows as [`CouplingTables::fbasis`] has columns) Fᵀ of
    /// ∂M_jk/∂a_j + ∂M_jk'/∂a_j over the coil filaments j (the coil's radial force factor
    /// against the pair's common current; its own for a ring on the plane).
    pub fn fill_reduced_outputs(
        &self,
        radii: &[f64],
        cz: &mut DMatrix<f64>,
        fa: &mut DMatrix<f64>,
    ) {
        self.each_column(radii, |a, win, j, x| {
            let (t, _) = chebyshev(x);
            series_value(&win.cz[j], &t, column_mut(cz, a));
            series_value(&win.fap[j], &t, column_mut(fa, a));
        });
    }

    /// Fills column k of `fa` (n_coil × n_workpiece) with ∂M_jk/∂a_j for rings at `radii`
    /// (metres), in H/m. For tables without a mirror pairing (with one,
    /// [`CouplingTables::fill_reduced_outputs`]).
    pub fn fill_coil_factors(&self, radii: &[f64], fa: &mut DMatrix<f64>) {
        self.each_column(radii, |k, win, j, x| {
            let (t, _) = chebyshev(x);
            let mut v = fa.column_mut(k);
            v.fill(0.0);
            for (a, ta) in t.iter().enumerate() {
                v.axpy(*ta, &win.fa[j].column(a), 1.0);
            }
        });
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The interpolant through the nodes reproduces a polynomial of degree TERMS − 1 exactly
    /// and exp on [-1, 1] to its truncation error (the next term, about e/(2¹¹ 12!) = 3e-12),
    /// with derivatives.
    #[test]
    fn chebyshev_series_of_exp() {
        let x = nodes();
        let p = |s: f64| (0..TERMS).map(|a| (a as f64 + 1.0) * s.powi(a as i32)).sum::<f64>();
        let dp = |s: f64| {
            (1..TERMS).map(|a| (a as f64 + 1.0) * a as f64 * s.powi(a as i32 - 1)).sum::<f64>()
        };
        let coef = coefficients(&DMatrix::from_fn(1, TERMS, |_, i| p(x[i])));
        for s in [-0.93, -0.4, 0.0, 0.37, 0.999] {
            let (t, d) = chebyshev(s);
            let v: f64 = (0..TERMS).map(|a| coef[(0, a)] * t[a]).sum();
            let dv: f64 = (0..TERMS).map(|a| coef[(0, a)] * d[a]).sum();
            assert!((v - p(s)).abs() < 1e-12 * p(1.0), "polynomial at {s}");
            assert!((dv - dp(s)).abs() < 1e-11 * dp(1.0), "its derivative at {s}");
        }
        let x = nodes();
        let values = DMatrix::from_fn(1, TERMS, |_, i| x[i].exp());
        let coef = coefficients(&values);
        for s in [-0.93, -0.4, 0.0, 0.37, 0.999] {
            let (t, d) = chebyshev(s);
            let v: f64 = (0..TERMS).map(|a| coef[(0, a)] * t[a]).sum();
            let dv: f64 = (0..TERMS).map(|a| coef[(0, a)] * d[a]).sum();
            assert!((v - s.exp()).abs() < 5e-12, "value at {s}");
            assert!((dv - s.exp()).abs() < 5e-10, "derivative at {s}");
        }
        assert!(tail(&coef) < 1e-9);
    }

    /// The vectorised series give the numbers of a plain scalar loop over the same terms,
    /// bit for bit (each row is summed in the same order; no lanes are combined), also for a
    /// window with fewer rows than the column.
    #[test]
    fn series_equal_a_scalar_loop_bit_for_bit() {
        for (n, len) in [(37, 37), (5, 9), (0, 4)] {
            let coef = DMatrix::from_fn(n, TERMS, |i, a| ((i * 7 + a * 3) as f64 * 0.37).sin());
            let (t, d) = chebyshev(0.4137);
            let scale = 1.0 / 3.1e-3;
            let (mut value, mut slope, mut only) = (vec![1.0; len], vec![1.0; len], vec![1.0; len]);
            series(&coef, &t, &d, scale, &mut value, &mut slope);
            series_value(&coef, &t, &mut only);
            let mut want_v = vec![0.0; len];
            let mut want_s = vec![0.0; len];
            for a in 0..TERMS {
                let da = d[a] * scale;
                for i in 0..n {
                    want_v[i] += t[a] * coef[(i, a)];
                    want_s[i] += da * coef[(i, a)];
                }
            }
            let bits = |v: &[f64]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
            assert_eq!(bits(&value), bits(&want_v), "values, {n} rows of {len}");
            assert_eq!(bits(&slope), bits(&want_s), "slopes, {n} rows of {len}");
            assert_eq!(bits(&only), bits(&want_v), "value-only series, {n} rows of {len}");
        }
    }
}
