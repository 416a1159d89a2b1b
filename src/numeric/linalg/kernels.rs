//! Small dense loops that the compiler vectorises: reductions with several independent
//! accumulators (a plain `iter().sum()` is bound by the latency of one add chain, about
//! 4 cycles per element, because floating-point addition may not be reordered), and
//! forward/back substitution with many right-hand sides in the row-oriented form whose
//! inner loop is a contiguous multiply-add.
//!
//! Results differ from the one-chain loops only by the order of the additions (a few ulps
//! of the sum), never in what is computed.

use nalgebra::DMatrix;

/// Number of independent accumulators: one 512-bit register of f64, or two 256-bit ones.
const LANES: usize = 8;

/// Σ |xᵢ|.
pub(crate) fn sum_abs(x: &[f64]) -> f64 {
    let mut acc = [0.0f64; LANES];
    let chunks = x.chunks_exact(LANES);
    let tail = chunks.remainder();
    for c in chunks {
        for l in 0..LANES {
            acc[l] += c[l].abs();
        }
    }
    acc.iter().sum::<f64>() + tail.iter().map(|v| v.abs()).sum::<f64>()
}

/// Σ xᵢ².
pub(crate) fn sum_squares(x: &[f64]) -> f64 {
    let mut acc = [0.0f64; LANES];
    let chunks = x.chunks_exact(LANES);
    let tail = chunks.remainder();
    for c in chunks {
        for l in 0..LANES {
            acc[l] += c[l] * c[l];
        }
    }
    acc.iter().sum::<f64>() + tail.iter().map(|v| v * v).sum::<f64>()
}

/// Σ xᵢ yᵢ over slices of equal length.
pub(crate) fn dot(x: &[f64], y: &[f64]) -> f64 {
    let mut acc = [0.0f64; LANES];
    let cx = x.chunks_exact(LANES);
    let cy = y.chunks_exact(LANES);
    let tail: f64 = cx
        .remainder()
        .iter()
        .zip(cy.remainder())
        .map(|(a, b)| a * b)
        .sum();
    for (a, b) in cx.zip(cy) {
        for l in 0..LANES {
            acc[l] += a[l] * b[l];
        }
    }
    acc.iter().sum::<f64>() + tail
}

/// max |xᵢ| (0 for an empty slice; NaN entries are skipped, as by `f64::max`).
pub(crate) fn max_abs(x: &[f64]) -> f64 {
    let mut acc = [0.0f64; LANES];
    let chunks = x.chunks_exact(LANES);
    let tail = chunks.remainder();
    for c in chunks {
        for l in 0..LANES {
            acc[l] = acc[l].max(c[l].abs());
        }
    }
    let m = acc.iter().fold(0.0f64, |m, v| m.max(*v));
    tail.iter().fold(m, |m, v| m.max(v.abs()))
}

/// Whether every entry is finite (x·0 is NaN exactly for ±∞ and NaN).
pub(crate) fn all_finite(x: &[f64]) -> bool {
    let mut acc = [0.0f64; LANES];
    let chunks = x.chunks_exact(LANES);
    let tail = chunks.remainder();
    for c in chunks {
        for l in 0..LANES {
            acc[l] += c[l] * 0.0;
        }
    }
    acc.iter().all(|v| *v == 0.0) && tail.iter().all(|v| v.is_finite())
}

/// ‖A‖₁ = maxⱼ Σᵢ |aᵢⱼ| (plain sums: callers keep the entries far from overflow).
pub(crate) fn one_norm(a: &DMatrix<f64>) -> f64 {
    let n = a.nrows();
    if n == 0 {
        return 0.0;
    }
    a.as_slice()
        .chunks_exact(n)
        .map(sum_abs)
        .fold(0.0f64, f64::max)
}

/// y += α·x over contiguous slices of equal length (separate slice arguments: the
/// compiler knows they do not overlap and vectorises the loop).
#[inline]
pub(crate) fn axpy(y: &mut [f64], alpha: f64, x: &[f64]) {
    for (yi, xi) in y.iter_mut().zip(x) {
        *yi += alpha * xi;
    }
}

/// LU factorisation with partial pivoting in place, P M = L U with L unit lower triangular
/// below the diagonal of `m` and U on and above it; `piv[k]` is the row swapped with row k
/// at step k. The right-looking column-oriented form of LAPACK's `dgetf2` (Golub & Van
/// Loan 2013, "Matrix Computations", 4th ed., Algorithm 3.4.1): every update is a
/// contiguous multiply-add down a column. Returns `false` on an exactly zero pivot.
fn lu_in_place(m: &mut DMatrix<f64>, piv: &mut [usize]) -> bool {
    let n = m.nrows();
    let a = m.as_mut_slice();
    for k in 0..n {
        let col = &a[k * n..(k + 1) * n];
        let (mut p, mut best) = (k, col[k].abs());
        for (i, v) in col.iter().enumerate().skip(k + 1) {
            if v.abs() > best {
                (p, best) = (i, v.abs());
            }
        }
        piv[k] = p;
        if best == 0.0 {
            return false;
        }
        if p != k {
            for j in 0..n {
                a.swap(j * n + k, j * n + p);
            }
        }
        let pivot = a[k * n + k];
        for v in &mut a[k * n + k + 1..(k + 1) * n] {
            *v /= pivot;
        }
        let (left, right) = a.split_at_mut((k + 1) * n);
        let lk = &left[k * n + k + 1..(k + 1) * n];
        for cj in right.chunks_exact_mut(n) {
            let ukj = cj[k];
            if ukj != 0.0 {
                axpy(&mut cj[k + 1..], -ukj, lk);
            }
        }
    }
    true
}

/// B M⁻¹ for square `M` ("right division", the side-right case of LAPACK's `dtrsm`):
/// with P M = L U from [`lu_in_place`], X M = B is solved as Z U = B, then W L = Z, then
/// X = W P. In column-major storage each of those makes column j of the result from
/// column j of the right-hand side minus a combination of columns already solved, so every
/// inner loop is a contiguous multiply-add down a whole column. Blocks of `NB` columns are
/// solved that way and the earlier columns' effect on a block is applied first as one
/// matrix product, so that most of the work runs in the matrix-product kernel (the blocked
/// form of `dtrsm`; Golub & Van Loan 2013, "Matrix Computations", 4th ed., § 3.1 and
/// § 3.4). `None` when `U` has an exactly zero pivot.
pub(crate) fn right_divide(mut b: DMatrix<f64>, mut m: DMatrix<f64>) -> Option<DMatrix<f64>> {
    const NB: usize = 8;
    let n = m.nrows();
    let rows = b.nrows();
    let mut piv = vec![0usize; n];
    if !lu_in_place(&mut m, &mut piv) {
        return None;
    }
    // Z U = B, block columns from the left.
    let mut j0 = 0;
    while j0 < n {
        let j1 = (j0 + NB).min(n);
        if j0 > 0 {
            let (done, mut blk) = b.columns_range_pair_mut(0..j0, j0..j1);
            blk.gemm(-1.0, &done, &m.view((0, j0), (j0, j1 - j0)), 1.0);
        }
        let lu = m.as_slice();
        let z = b.as_mut_slice();
        for j in j0..j1 {
            let (left, right) = z.split_at_mut(j * rows);
            let zj = &mut right[..rows];
            for k in j0..j {
                axpy(zj, -lu[j * n + k], &left[k * rows..(k + 1) * rows]);
            }
            // A true division, not a multiple of 1/u_jj: exact where the quotient is
            // representable (an identity block stays exactly the identity).
            let pivot = lu[j * n + j];
            for v in zj.iter_mut() {
                *v /= pivot;
            }
        }
        j0 = j1;
    }
    // W L = Z with L unit lower triangular, block columns from the right.
    let mut j1 = n;
    while j1 > 0 {
        let j0 = j1.saturating_sub(NB);
        if j1 < n {
            let (mut blk, done) = b.columns_range_pair_mut(j0..j1, j1..n);
            blk.gemm(-1.0, &done, &m.view((j1, j0), (n - j1, j1 - j0)), 1.0);
        }
        let lu = m.as_slice();
        let w = b.as_mut_slice();
        for j in (j0..j1).rev() {
            let (left, right) = w.split_at_mut((j + 1) * rows);
            let wj = &mut left[j * rows..];
            for k in j + 1..j1 {
                let off = (k - j - 1) * rows;
                axpy(wj, -lu[j * n + k], &right[off..off + rows]);
            }
        }
        j1 = j0;
    }
    // X = W P: undo the row interchanges of M as column interchanges, last first.
    for k in (0..n).rev() {
        if piv[k] != k {
            b.swap_columns(k, piv[k]);
        }
    }
    Some(b)
}

/// Parlett–Reinsch balancing with 2-norms and radix 2, in place: returns d with the
/// balanced matrix D⁻¹AD, D = diag(d) (Parlett & Reinsch 1969, "Balancing a matrix for
/// calculation of eigenvalues and eigenvectors", Numer. Math. 13; the variant of James,
/// Langou & Lowery 2014, arXiv:1401.5766, that nalgebra's `balance_parlett_reinsch` also
/// implements, with the same acceptance test). The row and column norms are computed in
/// one vectorised pass per sweep and updated in O(n) when an index is rescaled, instead of
/// recomputing a strided row norm for every index.
pub(crate) fn balance_in_place(a: &mut DMatrix<f64>) -> Vec<f64> {
    let n = a.nrows();
    let mut d = vec![1.0f64; n];
    let mut col = vec![0.0f64; n];
    let mut row = vec![0.0f64; n];
    // Each sweep that changes something lowers Σ (‖col‖² + ‖row‖²) by at least 5 % of one
    // term; the cap only guards against a cycle caused by rounding.
    for _sweep in 0..200 {
        for (j, c) in a.as_slice().chunks_exact(n.max(1)).enumerate() {
            col[j] = sum_squares(c);
        }
        row.iter_mut().for_each(|r| *r = 0.0);
        for c in a.as_slice().chunks_exact(n.max(1)) {
            for (r, v) in row.iter_mut().zip(c) {
                *r += v * v;
            }
        }
        let mut converged = true;
        for i in 0..n {
            let s = col[i] + row[i];
            let (mut c, mut r) = (col[i].sqrt(), row[i].sqrt());
            // Non-finite norms (overflowed squares) would make the loops below endless.
            if c == 0.0 || r == 0.0 || !(c.is_finite() && r.is_finite()) {
                continue;
            }
            let mut f = 1.0f64;
            // Each step moves c/r by a factor 4; 2200 steps span every finite ratio.
            let mut steps = 0;
            while c < r / 2.0 && steps < 2200 {
                steps += 1;
                c *= 2.0;
                r /= 2.0;
                f *= 2.0;
            }
            while c >= r * 2.0 && steps < 4400 {
                steps += 1;
                c /= 2.0;
                r *= 2.0;
                f /= 2.0;
            }
            if c * c + r * r >= 0.95 * s || !(f.is_finite() && f > 0.0 && (f * f).is_finite()) {
                continue;
            }
            converged = false;
            d[i] *= f;
            let (f2, g2) = (f * f, 1.0 / (f * f));
            // Column i scales by f, row i by 1/f (the diagonal entry is unchanged): other
            // rows k gain a_ki²(f² − 1), other columns j gain a_ij²(1/f² − 1).
            for k in 0..n {
                if k != i {
                    let v = a[(k, i)];
                    row[k] += v * v * (f2 - 1.0);
                    let w = a[(i, k)];
                    col[k] += w * w * (g2 - 1.0);
                }
            }
            let aii = a[(i, i)];
            a.column_mut(i).iter_mut().for_each(|v| *v *= f);
            a.row_mut(i).iter_mut().for_each(|v| *v /= f);
            a[(i, i)] = aii;
            col[i] = (col[i] - aii * aii) * f2 + aii * aii;
            row[i] = (row[i] - aii * aii) * g2 + aii * aii;
        }
        if converged {
            break;
        }
    }
    d
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::numeric::testing::Rng;

    #[test]
    fn reductions_match_plain_loops() {
        let mut rng = Rng::new(5);
        for len in [0usize, 1, 7, 8, 9, 63, 64, 65, 1000] {
            let x: Vec<f64> = (0..len).map(|_| rng.normal()).collect();
            let plain_abs: f64 = x.iter().map(|v| v.abs()).sum();
            let plain_sq: f64 = x.iter().map(|v| v * v).sum();
            let plain_max = x.iter().fold(0.0f64, |m, v| m.max(v.abs()));
            assert!((sum_abs(&x) - plain_abs).abs() <= 1e-14 * plain_abs.max(1.0));
            assert!((sum_squares(&x) - plain_sq).abs() <= 1e-14 * plain_sq.max(1.0));
            assert!((dot(&x, &x) - plain_sq).abs() <= 1e-14 * plain_sq.max(1.0));
            assert_eq!(max_abs(&x), plain_max);
            assert!(all_finite(&x));
            for bad in [f64::NAN, f64::INFINITY, f64::NEG_INFINITY] {
                for at in [0, len / 2, len.saturating_sub(1)] {
                    if len > 0 {
                        let mut y = x.clone();
                        y[at] = bad;
                        assert!(!all_finite(&y), "len {len}, {bad} at {at}");
                    }
                }
            }
        }
    }

    #[test]
    fn right_division_matches_nalgebra() {
        // X M = B ⇔ Mᵀ Xᵀ = Bᵀ, solved independently by nalgebra's LU.
        let mut rng = Rng::new(6);
        for n in [0usize, 1, 2, 3, 4, 5, 8, 9, 17, 50, 101] {
            for r in [1usize, 3, n] {
                let m = rng.matrix(n, n) + DMatrix::identity(n, n) * 3.0;
                let b = rng.matrix(r, n);
                let x = right_divide(b.clone(), m.clone()).expect("nonsingular");
                let residual = (&x * &m - &b).norm() / (m.norm() * x.norm() + b.norm()).max(1e-300);
                assert!(
                    residual < 1e-15 * n.max(1) as f64,
                    "n {n}, r {r}: {residual}"
                );
                if n > 0 {
                    let reference = m
                        .transpose()
                        .lu()
                        .solve(&b.transpose())
                        .expect("nonsingular");
                    let diff = (&x - reference.transpose()).norm();
                    assert!(diff <= 1e-12 * x.norm(), "n {n}, r {r}: {diff}");
                }
            }
        }
        // Pivoting is needed: a zero leading entry.
        let m = DMatrix::from_row_slice(3, 3, &[0.0, 1.0, 2.0, 3.0, 0.0, 1.0, 1.0, 2.0, 0.0]);
        let b = DMatrix::from_row_slice(2, 3, &[1.0, 0.0, 0.0, 0.5, -1.0, 2.0]);
        let x = right_divide(b.clone(), m.clone()).expect("nonsingular");
        assert!((&x * &m - &b).norm() < 1e-15);
        let singular = DMatrix::from_row_slice(2, 2, &[1.0, 2.0, 2.0, 4.0]);
        assert!(right_divide(DMatrix::identity(2, 2), singular).is_none());
    }

    #[test]
    fn balancing_matches_nalgebra_and_is_a_similarity() {
        let mut rng = Rng::new(7);
        for n in [1usize, 2, 3, 10, 40] {
            // Graded scaling D G D⁻¹ with D spanning 12 decades.
            let g = rng.matrix(n, n);
            let s: Vec<f64> = (0..n)
                .map(|i| 10f64.powf(12.0 * i as f64 / n as f64))
                .collect();
            let a = DMatrix::from_fn(n, n, |i, j| g[(i, j)] * s[i] / s[j]);
            let mut mine = a.clone();
            let d = balance_in_place(&mut mine);
            let mut theirs = a.clone();
            let dn = nalgebra::linalg::balancing::balance_parlett_reinsch(&mut theirs);
            // Same decisions as nalgebra's (norms differ only in rounding).
            assert_eq!(d, dn.iter().copied().collect::<Vec<_>>(), "n {n}");
            assert_eq!(mine, theirs, "n {n}");
            // D⁻¹ A D exactly (powers of two).
            let back = DMatrix::from_fn(n, n, |i, j| a[(i, j)] / d[i] * d[j]);
            assert_eq!(back, mine);
            assert!(d.iter().all(|v| v.log2().fract() == 0.0));
        }
    }
}
