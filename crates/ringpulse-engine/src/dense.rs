//! A blocked Cholesky factorisation for the workpiece block's Schur complement, which the
//! motion engine factorises at every evaluation.
//!
//! The trailing update of each block column, A₂₂ −= L₂₁ L₂₁ᵀ, is a matrix product and goes
//! through nalgebra's `gemm` (the `matrixmultiply` kernels, vectorised for the machine at
//! run time), which is where almost all of the n³/3 multiply-adds are; the diagonal blocks
//! and panels are small and done directly. On the 76 × 76 complement of the expansion demo
//! the factorisation's share of the run fell from 5.4 % to 3.9 % of the profile samples
//! (perf, one run each); small matrices keep nalgebra's unblocked routine.

use nalgebra::DMatrix;

/// Block width.
const BLOCK: usize = 24;

/// Up to this size nalgebra's unblocked factorisation is used (a matrix product's set-up
/// costs more than it saves on small blocks).
const UNBLOCKED: usize = 48;

/// Factorises the symmetric positive definite matrix `a` in place into its lower Cholesky
/// factor L (A = L Lᵀ); only the lower triangle is read, and the strict upper triangle is
/// left undefined, as in nalgebra's `Cholesky::pack_dirty` (whose solves use the lower
/// triangle only). Returns false (with `a` overwritten) when a pivot is not positive or not
/// finite.
pub fn cholesky_in_place(a: &mut DMatrix<f64>) -> bool {
    let n = a.nrows();
    if a.ncols() != n {
        return false;
    }
    if n <= UNBLOCKED {
        let owned = std::mem::replace(a, DMatrix::zeros(0, 0));
        return match nalgebra::Cholesky::new(owned) {
            Some(chol) => {
                *a = chol.unpack_dirty();
                true
            }
            None => {
                *a = DMatrix::zeros(n, n);
                false
            }
        };
    }
    let mut j = 0;
    while j < n {
        let b = BLOCK.min(n - j);
        let m = n - j - b;
        // The panel (rows j.., columns j..j + b), left-looking column by column: column c
        // (rows c..) less the columns k in j..c of the panel times L[c, k], then scaled by
        // its pivot (the columns left of j are already subtracted by the trailing updates).
        // Columns are contiguous slices of the column-major storage.
        let data = a.as_mut_slice();
        for c in j..j + b {
            let (left, rest) = data.split_at_mut(c * n);
            let col = &mut rest[c..n];
            for k in j..c {
                let colk = &left[k * n + c..k * n + n];
                let f = colk[0];
                if f != 0.0 {
                    for (x, l) in col.iter_mut().zip(colk) {
                        *x -= f * l;
                    }
                }
            }
            let d = col[0];
            if !(d > 0.0 && d.is_finite()) {
                return false;
            }
            let d = d.sqrt();
            col[0] = d;
            let inv = 1.0 / d;
            for x in &mut col[1..] {
                *x *= inv;
            }
        }
        if m > 0 {
            // Trailing update A₂₂ −= L₂₁ L₂₁ᵀ (the whole block: its upper part is never read).
            let l21 = a.view((j + b, j), (m, b)).into_owned();
            let l21t = l21.transpose();
            a.view_mut((j + b, j + b), (m, m)).gemm(-1.0, &l21, &l21t, 1.0);
        }
        j += b;
    }
    true
}

/// Solves L x = b in place for a lower-triangular `l` (only its lower triangle is read), by
/// columns: x_i = b_i / L_ii, then b_(i+1..) −= x_i L_(i+1.., i).
/// The same operations in the same order as nalgebra's `solve_lower_triangular_mut`, so the
/// same bits, but compiled for the widest vector unit the processor has ([`pulp`]); the
/// coil block's two solves per evaluation of a moving run were a tenth of its time.
/// Stops, as nalgebra does, at a zero pivot (the coil block's Cholesky factor has none).
pub fn solve_lower(l: &DMatrix<f64>, b: &mut [f64]) {
    struct Solve<'a>(&'a DMatrix<f64>, &'a mut [f64]);
    impl pulp::WithSimd for Solve<'_> {
        type Output = ();
        #[inline(always)]
        fn with_simd<S: pulp::Simd>(self, _simd: S) {
            let (l, b) = (self.0, self.1);
            let n = l.nrows().min(b.len());
            let data = l.as_slice();
            let rows = l.nrows();
            for i in 0..n {
                let col = &data[i * rows..i * rows + n];
                let diag = col[i];
                if diag == 0.0 {
                    return;
                }
                let coeff = b[i] / diag;
                b[i] = coeff;
                for (y, x) in b[i + 1..n].iter_mut().zip(&col[i + 1..]) {
                    *y -= coeff * x;
                }
            }
        }
    }
    pulp::Arch::new().dispatch(Solve(l, b));
}

/// Solves Lᵀ x = b in place for a lower-triangular `l`, from the last row up:
/// x_i = (b_i − L_(i+1.., i) · x_(i+1..)) / L_ii.
/// The dot product sums in eight interleaved partial sums combined as nalgebra's `dot` does
/// (so the result equals `tr_solve_lower_triangular_mut` bit for bit), compiled for the widest
/// vector unit the processor has ([`pulp`]).
pub fn solve_lower_transposed(l: &DMatrix<f64>, b: &mut [f64]) {
    struct Solve<'a>(&'a DMatrix<f64>, &'a mut [f64]);
    impl pulp::WithSimd for Solve<'_> {
        type Output = ();
        #[inline(always)]
        fn with_simd<S: pulp::Simd>(self, _simd: S) {
            let (l, b) = (self.0, self.1);
            let n = l.nrows().min(b.len());
            let data = l.as_slice();
            let rows = l.nrows();
            for i in (0..n).rev() {
                let col = &data[i * rows + i + 1..i * rows + n];
                let x = &b[i + 1..n];
                let mut acc = [0.0f64; 8];
                let chunks = col.len() / 8;
                for (cc, xc) in col.chunks_exact(8).zip(x.chunks_exact(8)) {
                    for k in 0..8 {
                        acc[k] += cc[k] * xc[k];
                    }
                }
                let mut dot = 0.0;
                dot += acc[0] + acc[4];
                dot += acc[1] + acc[5];
                dot += acc[2] + acc[6];
                dot += acc[3] + acc[7];
                for (c, v) in col[8 * chunks..].iter().zip(&x[8 * chunks..]) {
                    dot += c * v;
                }
                let diag = data[i * rows + i];
                if diag == 0.0 {
                    return;
                }
                b[i] = (b[i] - dot) / diag;
            }
        }
    }
    pulp::Arch::new().dispatch(Solve(l, b));
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;
    use nalgebra::{Cholesky, DVector};

    /// Against nalgebra's unblocked Cholesky on inductance-like matrices (dominant diagonal,
    /// smooth off-diagonal decay) of sizes below, at and across the block width.
    #[test]
    fn agrees_with_nalgebra() {
        for n in [1usize, 2, 23, 24, 25, 48, 49, 76, 133] {
            let a = DMatrix::from_fn(n, n, |i, j| {
                let d = (i as f64 - j as f64).abs();
                1e-7 * (1.0 / (1.0 + d) + if i == j { 2.0 } else { 0.0 })
            });
            let mut l = a.clone();
            assert!(cholesky_in_place(&mut l));
            let lr = Cholesky::new(a.clone()).unwrap().unpack();
            let err = (l.lower_triangle() - &lr).amax() / lr.amax();
            assert!(err < 1e-14, "n = {n}: {err:e}");
            let b = DVector::from_fn(n, |i, _| (i as f64 * 0.37).sin() + 0.5);
            let x = Cholesky::pack_dirty(l).solve(&b);
            assert!((&a * &x - &b).amax() < 1e-12 * b.amax());
        }
        let mut bad = DMatrix::from_row_slice(2, 2, &[1.0, 2.0, 2.0, 1.0]);
        assert!(!cholesky_in_place(&mut bad));
        let mut nan = DMatrix::from_row_slice(1, 1, &[f64::NAN]);
        assert!(!cholesky_in_place(&mut nan));
    }

    /// Both triangular solves give nalgebra's results bit for bit, for sizes below, at and
    /// across the eight-wide partial sums.
    #[test]
    fn triangular_solves_equal_nalgebra_bit_for_bit() {
        for n in [1usize, 2, 7, 8, 9, 17, 64, 289] {
            let a = DMatrix::from_fn(n, n, |i, j| {
                let d = (i as f64 - j as f64).abs();
                1e-7 * (1.0 / (1.0 + d) + if i == j { 2.0 } else { 0.0 })
                    * (1.0 + 0.1 * (i as f64).sin())
            });
            let a = (&a + a.transpose()) * 0.5;
            let l = Cholesky::new(a).unwrap().unpack();
            let b = DVector::from_fn(n, |i, _| (i as f64 * 0.37).sin() + 0.5);
            let mut want = b.clone();
            l.solve_lower_triangular_mut(&mut want);
            let mut got = b.clone();
            solve_lower(&l, got.as_mut_slice());
            assert!(
                got.iter().zip(want.iter()).all(|(x, y)| x.to_bits() == y.to_bits()),
                "L x = b, n = {n}"
            );
            let mut want = b.clone();
            l.tr_solve_lower_triangular_mut(&mut want);
            let mut got = b.clone();
            solve_lower_transposed(&l, got.as_mut_slice());
            assert!(
                got.iter().zip(want.iter()).all(|(x, y)| x.to_bits() == y.to_bits()),
                "Lᵀ x = b, n = {n}"
            );
        }
    }
}
