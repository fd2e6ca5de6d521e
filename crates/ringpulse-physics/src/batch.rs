//! Many mutual inductances with their gradients at once, for the inner loop of a moving
//! workpiece.
//!
//! [`gradient_batch`] gives, pair by pair, bit for bit the same numbers as
//! [`filament::mutual_inductance_with_gradient`](crate::filament::mutual_inductance_with_gradient):
//! the same operations in the same order (IEEE addition, multiplication, division and square
//! root are correctly rounded in every vector lane, and nothing is fused into a multiply-add).
//! What changes is the layout: the pairs are processed as arrays in a few passes, each a
//! plain loop without branches that the compiler turns into vector instructions.
//! The passes run under [`pulp::Arch::dispatch`], which picks at run time the widest vector
//! unit the processor has (AVX2 on most x86-64 machines of the last decade) and falls back
//! to the portable build elsewhere; the crate itself contains no `unsafe` code.
//! A test compares the batch with the scalar kernel bit for bit.

use crate::elliptic_fit as fit;
use crate::filament::{mutual_inductance_with_gradient, MutualGradient};
use crate::MU0;

/// Inputs and results of [`gradient_batch`], as structure of arrays, with the scratch the
/// passes need; keep one and reuse it so that the inner loop does not allocate.
/// Pairs go in with [`push`](Self::push) or [`inputs_mut`](Self::inputs_mut), results come
/// out with [`get`](Self::get).
#[derive(Debug, Default, Clone)]
pub struct GradientBatch {
    /// Radius a of ring 1 of each pair, in metres.
    a: Vec<f64>,
    /// Radius b of ring 2 of each pair, in metres.
    b: Vec<f64>,
    /// Axial offset z = z2 − z1 of each pair, in metres.
    z: Vec<f64>,
    /// Mutual inductance M, in henries.
    m: Vec<f64>,
    /// ∂M/∂a, in henries per metre.
    dm_da: Vec<f64>,
    /// ∂M/∂b, in henries per metre.
    dm_db: Vec<f64>,
    /// ∂M/∂z, in henries per metre.
    dm_dz: Vec<f64>,
    // Scratch of the passes.
    inv_s: Vec<f64>,
    inv_r1: Vec<f64>,
    inv_r2: Vec<f64>,
    r1: Vec<f64>,
    r2: Vec<f64>,
    lg: Vec<f64>,
    kap: Vec<f64>,
    kc: Vec<f64>,
    u: Vec<f64>,
    j: Vec<u32>,
    p: Vec<[f64; 4]>,
    k: Vec<f64>,
    g: Vec<f64>,
}

impl GradientBatch {
    /// Empties the batch, keeping its storage.
    pub fn clear(&mut self) {
        self.a.clear();
        self.b.clear();
        self.z.clear();
    }

    /// Appends the pair (a, b, z) (metres); its results are at the same index after
    /// [`gradient_batch`].
    #[inline]
    pub fn push(&mut self, a: f64, b: f64, z: f64) {
        self.a.push(a);
        self.b.push(b);
        self.z.push(z);
    }

    /// Makes room for `n` pairs and gives their inputs (a, b, z) to fill by index, which is
    /// cheaper than `n` calls of [`push`](Self::push) in an inner loop; [`truncate`](Self::truncate)
    /// drops the rows left unused.
    pub fn inputs_mut(&mut self, n: usize) -> (&mut [f64], &mut [f64], &mut [f64]) {
        self.a.resize(n, 0.0);
        self.b.resize(n, 0.0);
        self.z.resize(n, 0.0);
        (&mut self.a, &mut self.b, &mut self.z)
    }

    /// Keeps the first `n` pairs.
    pub fn truncate(&mut self, n: usize) {
        self.a.truncate(n);
        self.b.truncate(n);
        self.z.truncate(n);
    }

    /// Number of pairs.
    pub fn len(&self) -> usize {
        self.a.len()
    }

    /// True when the batch holds no pair.
    pub fn is_empty(&self) -> bool {
        self.a.is_empty()
    }

    /// The result of pair `i` as one value.
    #[inline]
    pub fn get(&self, i: usize) -> MutualGradient {
        MutualGradient {
            m: self.m[i],
            dm_da: self.dm_da[i],
            dm_db: self.dm_db[i],
            dm_dz: self.dm_dz[i],
        }
    }
}

/// Evaluates every pair of the batch: M and its three derivatives, exactly as
/// [`mutual_inductance_with_gradient`] would one by one (out-of-range pairs and coincident
/// circles included: they get that function's `NaN` and ∞ markers).
pub fn gradient_batch(batch: &mut GradientBatch) {
    let n = batch.a.len();
    for v in [
        &mut batch.m,
        &mut batch.dm_da,
        &mut batch.dm_db,
        &mut batch.dm_dz,
        &mut batch.inv_s,
        &mut batch.inv_r1,
        &mut batch.inv_r2,
        &mut batch.r1,
        &mut batch.r2,
        &mut batch.lg,
        &mut batch.kap,
        &mut batch.kc,
        &mut batch.u,
        &mut batch.k,
        &mut batch.g,
    ] {
        v.resize(n, 0.0);
    }
    batch.j.resize(n, 0);
    batch.p.resize(n, [0.0; 4]);
    let all_regular = pulp::Arch::new().dispatch(Passes(batch));
    if all_regular {
        return;
    }
    // Pairs the vector passes do not cover: out-of-range input and coincident circles.
    for i in 0..n {
        let (a, b, z) = (batch.a[i], batch.b[i], batch.z[i]);
        let valid = a > 0.0 && b > 0.0 && a.is_finite() && b.is_finite() && z.is_finite();
        let (m, mc) = (batch.kap[i] * batch.kap[i], batch.kc[i]);
        let in_range = m >= 0.0 && mc > 0.0 && m <= 1.0 && mc <= 1.0;
        if !valid || batch.r2[i] == 0.0 || !in_range {
            let g = mutual_inductance_with_gradient(a, b, z);
            batch.m[i] = g.m;
            batch.dm_da[i] = g.dm_da;
            batch.dm_db[i] = g.dm_db;
            batch.dm_dz[i] = g.dm_dz;
        }
    }
}

/// The four fitted functions' coefficients interleaved: `ABPG[j][k]` holds the k-th
/// coefficient of A, B, P and G on interval j, so that one pair's four polynomials are
/// evaluated side by side in one vector (Horner's rule, as `elliptic::piece` does it).
const ABPG: [[[f64; 4]; 8]; fit::INTERVALS] = {
    let mut t = [[[0.0; 4]; 8]; fit::INTERVALS];
    let mut j = 0;
    while j < fit::INTERVALS {
        let mut k = 0;
        while k < 8 {
            t[j][k] = [fit::A[j][k], fit::B[j][k], fit::P[j][k], fit::G[j][k]];
            k += 1;
        }
        j += 1;
    }
    t
};

/// The vector passes, compiled once per instruction set that [`pulp::Arch`] dispatches to.
struct Passes<'a>(&'a mut GradientBatch);

impl pulp::WithSimd for Passes<'_> {
    type Output = bool;

    #[inline(always)]
    fn with_simd<S: pulp::Simd>(self, _simd: S) -> bool {
        passes(self.0)
    }
}

/// Returns true when every pair is regular (in range, circles apart), so that no pair needs
/// the scalar kernel's special values.
#[inline(always)]
fn passes(bt: &mut GradientBatch) -> bool {
    let n = bt.a.len();
    let (a, b, z) = (&bt.a[..n], &bt.b[..n], &bt.z[..n]);
    // Pass 1: distances, reciprocals, κ and κ'², and whether every pair is regular (the
    // tests combined with `&`, not `&&`, so that the loop has no branch).
    let mut irregular = 0u8;
    {
        let (r1v, r2v) = (&mut bt.r1[..n], &mut bt.r2[..n]);
        let (isv, i1v, i2v) = (&mut bt.inv_s[..n], &mut bt.inv_r1[..n], &mut bt.inv_r2[..n]);
        let (kap, kc) = (&mut bt.kap[..n], &mut bt.kc[..n]);
        for i in 0..n {
            let (a, b, z) = (a[i], b[i], z[i]);
            let sum = a + b;
            let diff = a - b;
            let zz = z * z;
            let r1 = (sum * sum + zz).sqrt();
            let r2 = (diff * diff + zz).sqrt();
            let s = r1 + r2;
            let inv_s = 1.0 / s;
            let inv_r1 = 1.0 / r1;
            let inv_r2 = 1.0 / r2;
            let a_s = a * inv_s;
            let b_s = b * inv_s;
            r1v[i] = r1;
            r2v[i] = r2;
            isv[i] = inv_s;
            i1v[i] = inv_r1;
            i2v[i] = inv_r2;
            let kappa = 4.0 * (a_s * b_s);
            let kc2 = 4.0 * ((r1 * inv_s) * (r2 * inv_s));
            kap[i] = kappa;
            kc[i] = kc2;
            let m = kappa * kappa;
            let regular = (a > 0.0)
                & (b > 0.0)
                & a.is_finite()
                & b.is_finite()
                & z.is_finite()
                & (r2 > 0.0)
                & (0.0..=1.0).contains(&m)
                & (kc2 > 0.0)
                & (kc2 <= 1.0);
            irregular |= u8::from(!regular);
        }
    }
    // Pass 2a: the logarithm of the near pairs (a library call, so a loop of its own).
    {
        let (kc, lg) = (&bt.kc[..n], &mut bt.lg[..n]);
        for i in 0..n {
            let mc = kc[i];
            lg[i] = if mc < 0.5 && mc > 0.0 { mc.ln() * std::f64::consts::FRAC_1_PI } else { 0.0 };
        }
    }
    // Pass 2b: K and g = K − E from the fitted polynomials (elliptic::complete_k_and_difference):
    // the argument and its interval, then four pairs at a time through Horner's rule (four
    // independent chains keep the multipliers busy), then the near/far selection.
    {
        const PER_UNIT: f64 = (2 * fit::INTERVALS) as f64;
        let (kap, kc) = (&bt.kap[..n], &bt.kc[..n]);
        let (uv, jv) = (&mut bt.u[..n], &mut bt.j[..n]);
        for i in 0..n {
            let m = kap[i] * kap[i];
            let mc = kc[i];
            let x = if mc >= 0.5 { m } else { mc };
            let j = ((x * PER_UNIT) as usize).min(fit::INTERVALS - 1);
            uv[i] = x - (j as f64 + 0.5) / PER_UNIT;
            jv[i] = j as u32;
        }
        let (uv, jv) = (&bt.u[..n], &bt.j[..n]);
        let pv = &mut bt.p[..n];
        let quads = n / 4;
        for q in 0..quads {
            let i0 = 4 * q;
            let u = [uv[i0], uv[i0 + 1], uv[i0 + 2], uv[i0 + 3]];
            let c = [
                &ABPG[jv[i0] as usize % fit::INTERVALS],
                &ABPG[jv[i0 + 1] as usize % fit::INTERVALS],
                &ABPG[jv[i0 + 2] as usize % fit::INTERVALS],
                &ABPG[jv[i0 + 3] as usize % fit::INTERVALS],
            ];
            let mut acc = [c[0][7], c[1][7], c[2][7], c[3][7]];
            for k in (0..7).rev() {
                for l in 0..4 {
                    for f in 0..4 {
                        acc[l][f] = acc[l][f] * u[l] + c[l][k][f];
                    }
                }
            }
            pv[i0..i0 + 4].copy_from_slice(&acc);
        }
        for i in 4 * quads..n {
            let c = &ABPG[jv[i] as usize % fit::INTERVALS];
            let mut acc = c[7];
            for ck in c[..7].iter().rev() {
                for f in 0..4 {
                    acc[f] = acc[f] * uv[i] + ck[f];
                }
            }
            pv[i] = acc;
        }
        let (kap, kc, lg, pv) = (&bt.kap[..n], &bt.kc[..n], &bt.lg[..n], &bt.p[..n]);
        let (kv, gv) = (&mut bt.k[..n], &mut bt.g[..n]);
        for i in 0..n {
            let m = kap[i] * kap[i];
            let mc = kc[i];
            let far = mc >= 0.5;
            let [pa, pb, pp, pg] = pv[i];
            let l = lg[i];
            let ec = pa - mc * pb;
            kv[i] = if far { pa } else { pp - l * pa };
            gv[i] = if far { m * pb } else { pg - l * ec };
        }
    }
    // Pass 3: M and its derivatives (filament::mutual_inductance_with_gradient).
    {
        let (r1v, r2v) = (&bt.r1[..n], &bt.r2[..n]);
        let (isv, i1v, i2v) = (&bt.inv_s[..n], &bt.inv_r1[..n], &bt.inv_r2[..n]);
        let (kv, gv) = (&bt.k[..n], &bt.g[..n]);
        let (mv, dav, dbv, dzv) =
            (&mut bt.m[..n], &mut bt.dm_da[..n], &mut bt.dm_db[..n], &mut bt.dm_dz[..n]);
        for i in 0..n {
            let (a, b, z) = (a[i], b[i], z[i]);
            let (r1, r2) = (r1v[i], r2v[i]);
            let (inv_s, inv_r1, inv_r2) = (isv[i], i1v[i], i2v[i]);
            let s = r1 + r2;
            let sum = a + b;
            let diff = a - b;
            let zz = z * z;
            let (k, g) = (kv[i], gv[i]);
            let e = k - g;
            let a_s = a * inv_s;
            let b_s = b * inv_s;
            let ar = a * inv_r1;
            let br = b * inv_r1;
            let qa = (b - a) * sum + zz;
            let qb = diff * sum + zz;
            // ds_both
            let u = (a + b) * inv_r1;
            let v = (a - b).abs() * inv_r2;
            let zr = z * inv_r1;
            let small = 4.0 * (a * inv_r2) * (b * inv_r2) * zr * zr / (u + v);
            let big = u + v;
            let ds_da = if a >= b { big } else { small };
            let ds_db = if a > b {
                small
            } else if a == b {
                u - v
            } else {
                big
            };
            mv[i] = MU0 * s * g;
            dav[i] = MU0 * (ds_da * g + 4.0 * a_s * br * br * (qa * inv_r2 * inv_r2) * e);
            dbv[i] = MU0 * (ds_db * g + 4.0 * b_s * ar * ar * (qb * inv_r2 * inv_r2) * e);
            dzv[i] = MU0
                * (z * inv_r2)
                * (s * inv_r1 * g - 8.0 * (ar * br) * ((a * b) * inv_s * inv_r2) * e);
        }
    }
    irregular == 0
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn batch_equals_the_scalar_kernel_bit_for_bit() {
        let mut bt = GradientBatch::default();
        let mut pairs = Vec::new();
        // A tube of 2 layers and 80 rings against itself, far and near pairs, equal radii,
        // and a few out-of-range and coincident pairs.
        for i in 0..160 {
            for j in 0..160 {
                let a = 0.025 + 0.00075 * (i % 2) as f64 + 1e-5 * (i as f64).sin();
                let b = 0.025 + 0.00075 * (j % 2) as f64 + 1e-5 * (j as f64).sin();
                let z = 0.00075 * ((j / 2) as f64 - (i / 2) as f64);
                pairs.push((a, b, z));
            }
        }
        pairs.extend([
            (0.05, 0.05, 0.0),
            (0.05, 0.04, 0.0),
            (1.0, 0.001, 0.3),
            (0.01, 0.02, 300.0),
            (0.0, 1.0, 0.0),
            (-1.0, 1.0, 0.0),
            (1.0, f64::NAN, 0.0),
            (1.0, 1.0, f64::INFINITY),
            (0.05, 0.05, 1e-12),
        ]);
        for &(a, b, z) in &pairs {
            bt.push(a, b, z);
        }
        gradient_batch(&mut bt);
        for (i, &(a, b, z)) in pairs.iter().enumerate() {
            let want = mutual_inductance_with_gradient(a, b, z);
            let got = bt.get(i);
            for (x, y) in [
                (got.m, want.m),
                (got.dm_da, want.dm_da),
                (got.dm_db, want.dm_db),
                (got.dm_dz, want.dm_dz),
            ] {
                assert!(
                    x.to_bits() == y.to_bits() || (x.is_nan() && y.is_nan()),
                    "pair ({a}, {b}, {z}): {got:?} against {want:?}"
                );
            }
        }
    }
}
