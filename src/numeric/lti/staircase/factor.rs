//! The rank-revealing kernel of the staircase: Householder QR followed by a one-sided Jacobi
//! SVD of the small triangular factor, giving an explicitly orthogonal left factor.
//!
//! nalgebra's SVD is not used here: in nalgebra 0.35, `SVD::try_new` with vectors returns
//! wrong factors (reconstruction errors of order one) for some nearly rank-deficient
//! matrices — exactly the blocks a staircase meets (see the regression test below).

use crate::numeric::error::{NumError, NumResult};
use nalgebra::{DMatrix, DVector};

/// Sweep cap of the Jacobi iteration; it converges quadratically, in well under 20 sweeps
/// in practice.
const MAX_SWEEPS: usize = 60;

/// A Householder reflector `H = I − β v vᵀ` acting on coordinates `start..start + v.len()`.
pub(crate) struct Reflector {
    pub(crate) start: usize,
    pub(crate) v: DVector<f64>,
    pub(crate) beta: f64,
}

/// Householder QR of an L×w matrix `m` (Householder 1958, "Unitary triangularization of a
/// nonsymmetric matrix", J. ACM): reflectors with `H_q ⋯ H_1 m = [R; 0]`, R upper
/// trapezoidal, q ≤ min(L, w). Columns already zero below the diagonal get no reflector.
pub(crate) fn householder(m: &DMatrix<f64>) -> Vec<Reflector> {
    let mut w = m.clone();
    let (l, cols) = w.shape();
    let mut out = Vec::with_capacity(cols.min(l));
    for j in 0..cols.min(l) {
        let mut v = w.view((j, j), (l - j, 1)).column(0).clone_owned();
        let norm = v.norm();
        if norm == 0.0 {
            continue;
        }
        let alpha = if v[0] >= 0.0 { -norm } else { norm };
        v[0] -= alpha;
        let vv = v.norm_squared();
        if vv == 0.0 || !vv.is_finite() {
            continue;
        }
        let beta = 2.0 / vv;
        let mut sub = w.view_mut((j, j), (l - j, cols - j));
        let t = sub.tr_mul(&v);
        sub.ger(-beta, &v, &t, 1.0);
        out.push(Reflector { start: j, v, beta });
    }
    out
}

/// `X[off.., :] ← H X[off.., :]` for the reflector `(v, β)`.
pub(crate) fn reflect_rows(x: &mut DMatrix<f64>, off: usize, v: &DVector<f64>, beta: f64) {
    if x.ncols() == 0 || v.is_empty() {
        return;
    }
    let mut rows = x.rows_mut(off, v.len());
    let t = rows.tr_mul(v);
    rows.ger(-beta, v, &t, 1.0);
}

/// `X[:, off..] ← X[:, off..] H` for the reflector `(v, β)`.
pub(crate) fn reflect_cols(x: &mut DMatrix<f64>, off: usize, v: &DVector<f64>, beta: f64) {
    if x.nrows() == 0 || v.is_empty() {
        return;
    }
    let mut cols = x.columns_mut(off, v.len());
    let t = &cols * v;
    cols.ger(-beta, &t, v, 1.0);
}

/// One-sided Jacobi SVD on the rows of an s×w matrix `m` (Hestenes 1958, "Inversion of
/// matrices by biorthogonalization and related results", J. SIAM; accuracy: Demmel &
/// Veselić 1992, "Jacobi's method is more accurate than QR", SIAM J. Matrix Anal. Appl.).
///
/// Plane rotations of row pairs, accumulated in an orthogonal `U` (s×s), until every pair of
/// rows of `W = Uᵀ m` is orthogonal to within `s·ε` relative to their norms. Returns the
/// singular values (the row norms, descending), `U` and `W` with rows in the same order, so
/// that `m = U W` and `W Wᵀ = diag(σ²)`. Cost O(s²·(w + s)) per sweep.
pub(crate) fn row_jacobi(m: &DMatrix<f64>) -> NumResult<(Vec<f64>, DMatrix<f64>, DMatrix<f64>)> {
    let (s, w) = m.shape();
    let scale = m.amax();
    if s == 0 || w == 0 || scale == 0.0 {
        return Ok((vec![0.0; s], DMatrix::identity(s, s), m.clone()));
    }
    // Work on the transpose so that the rows are contiguous columns.
    let mut x = m.transpose() / scale;
    let mut u = DMatrix::identity(s, s);
    let tol = s as f64 * f64::EPSILON;
    // A row below rounding level of the whole matrix is left alone: rotating it against a
    // large row re-creates, at every sweep, a non-orthogonality of the size of the large
    // row's rounding, which relative to the tiny row never drops below `tol` (the cycle
    // that made integer models fail with "did not converge"). Leaving it costs a backward
    // error below `negligible`, where its singular value counts as zero anyway.
    let negligible = (s.max(w) as f64 * f64::EPSILON * x.norm()).powi(2);
    let mut converged = false;
    for _ in 0..MAX_SWEEPS {
        let mut rotated = false;
        for i in 0..s {
            for j in i + 1..s {
                let alpha = x.column(i).norm_squared();
                let beta = x.column(j).norm_squared();
                let gamma = x.column(i).dot(&x.column(j));
                if gamma == 0.0
                    || alpha <= negligible
                    || beta <= negligible
                    || gamma.abs() <= tol * (alpha.sqrt() * beta.sqrt())
                {
                    continue;
                }
                rotated = true;
                let zeta = (beta - alpha) / (2.0 * gamma);
                let sign = if zeta >= 0.0 { 1.0 } else { -1.0 };
                let t = sign / (zeta.abs() + 1.0f64.hypot(zeta));
                let c = 1.0 / 1.0f64.hypot(t);
                let sn = c * t;
                rotate_columns(&mut x, i, j, c, sn);
                rotate_columns(&mut u, i, j, c, sn);
            }
        }
        if !rotated {
            converged = true;
            break;
        }
    }
    if !converged {
        return Err(NumError::NoConvergence {
            what: "Jacobi singular value decomposition".into(),
            iterations: MAX_SWEEPS,
        });
    }
    let norms: Vec<f64> = (0..s).map(|i| x.column(i).norm()).collect();
    let mut idx: Vec<usize> = (0..s).collect();
    idx.sort_by(|&p, &q| norms[q].total_cmp(&norms[p]));
    let sigma = idx.iter().map(|&i| norms[i] * scale).collect();
    let u_sorted = DMatrix::from_fn(s, s, |r, k| u[(r, idx[k])]);
    let w_sorted = DMatrix::from_fn(s, w, |k, col| x[(col, idx[k])] * scale);
    Ok((sigma, u_sorted, w_sorted))
}

/// Columns i, j of `x` ← (c·x_i − s·x_j, s·x_i + c·x_j).
fn rotate_columns(x: &mut DMatrix<f64>, i: usize, j: usize, c: f64, s: f64) {
    for r in 0..x.nrows() {
        let (p, q) = (x[(r, i)], x[(r, j)]);
        x[(r, i)] = c * p - s * q;
        x[(r, j)] = s * p + c * q;
    }
}

/// A rank-revealing orthogonal left factor of an L×w matrix M:
/// `U = H_1 ⋯ H_q · diag(S, I)` with `Uᵀ M = [W; 0]`, `W` (s×w, s = min(L, w)) having
/// orthogonal rows of norms `sigma` (descending). So the leading r columns of `U` span the
/// dominant r-dimensional left singular subspace, and the rows r..L of `Uᵀ M` have norm
/// `(σ_{r+1}² + … )^{1/2}` up to rounding.
///
/// Algorithm: Householder QR when L > w (so the Jacobi iteration runs on the w×w factor R),
/// then [`row_jacobi`]. Cost O(L·w·min(L, w)) plus the Jacobi sweeps on an s×w matrix.
pub(crate) struct LeftFactor {
    /// Singular values, descending (s of them).
    pub(crate) sigma: Vec<f64>,
    reflectors: Vec<Reflector>,
    small: DMatrix<f64>,
}

impl LeftFactor {
    /// The factor of `m`; empty for an empty matrix.
    pub(crate) fn new(m: &DMatrix<f64>) -> NumResult<Self> {
        let (l, w) = m.shape();
        let scale = m.amax();
        if l == 0 || w == 0 || scale == 0.0 {
            let s = l.min(w);
            return Ok(LeftFactor {
                sigma: vec![0.0; s],
                reflectors: Vec::new(),
                small: DMatrix::identity(s, s),
            });
        }
        // Scaled to max |mᵢⱼ| = 1 so that no square over- or underflows.
        let m = m / scale;
        let (reflectors, core) = if l > w {
            let hs = householder(&m);
            let mut r = m.clone();
            for h in &hs {
                reflect_rows(&mut r, h.start, &h.v, h.beta);
            }
            (hs, r.rows(0, w).clone_owned())
        } else {
            (Vec::new(), m)
        };
        let (sigma, small, _) = row_jacobi(&core)?;
        let sigma = sigma.into_iter().map(|x| x * scale).collect();
        Ok(LeftFactor {
            sigma,
            reflectors,
            small,
        })
    }

    /// `X[off.., :] ← Uᵀ X[off.., :]`.
    pub(crate) fn apply_left(&self, x: &mut DMatrix<f64>, off: usize) {
        for h in &self.reflectors {
            reflect_rows(x, off + h.start, &h.v, h.beta);
        }
        let s = self.small.nrows();
        if s > 0 && x.ncols() > 0 {
            let rows = x.rows(off, s).clone_owned();
            x.rows_mut(off, s).copy_from(&self.small.tr_mul(&rows));
        }
    }

    /// `X[:, off..] ← X[:, off..] U`.
    pub(crate) fn apply_right(&self, x: &mut DMatrix<f64>, off: usize) {
        for h in &self.reflectors {
            reflect_cols(x, off + h.start, &h.v, h.beta);
        }
        let s = self.small.nrows();
        if s > 0 && x.nrows() > 0 {
            let cols = x.columns(off, s).clone_owned();
            x.columns_mut(off, s).copy_from(&(cols * &self.small));
        }
    }

    /// The full L×L orthogonal factor `U`.
    pub(crate) fn full(&self, l: usize) -> DMatrix<f64> {
        let mut u = DMatrix::identity(l, l);
        self.apply_right(&mut u, 0);
        u
    }
}

#[cfg(test)]
mod tests {
    use super::super::fixtures::random_orthogonal;
    use super::*;
    use crate::assert_close;
    use crate::numeric::testing::Rng;

    /// Checks `U` orthogonal, `Uᵀ M = [W; 0]` with orthogonal rows of norms σ.
    fn check(m: &DMatrix<f64>, f: &LeftFactor) {
        let (l, w) = m.shape();
        let u = f.full(l);
        let scale = 1.0 + m.norm();
        // Backward error of orthogonal transformations, generous multiple of n·ε (common
        // practice, no source).
        let tol = 1e3 * (l + w).max(1) as f64 * f64::EPSILON;
        assert_close!(u.transpose() * &u, DMatrix::<f64>::identity(l, l), tol, 0.0);
        let um = u.transpose() * m;
        let mut left = m.clone();
        f.apply_left(&mut left, 0);
        assert_close!(left, um, tol * scale, 0.0);
        let s = l.min(w);
        for i in 0..l {
            let want = if i < s { f.sigma[i] } else { 0.0 };
            assert_close!(um.row(i).norm(), want, tol * scale, 0.0);
        }
        assert!(f.sigma.windows(2).all(|p| p[0] >= p[1]));
    }

    #[test]
    fn planted_singular_values_are_recovered() {
        let mut rng = Rng::new(51);
        for &(l, w) in &[
            (1, 1),
            (2, 1),
            (1, 3),
            (2, 2),
            (3, 3),
            (10, 3),
            (3, 10),
            (30, 30),
            (30, 7),
        ] {
            for rank in [0, 1, l.min(w)] {
                // M = Q₁ diag(σ) Q₂ᵀ with σ planted (construction).
                let want: Vec<f64> = (0..l.min(w))
                    .map(|i| {
                        if i < rank {
                            2f64.powi(-(i as i32))
                        } else {
                            0.0
                        }
                    })
                    .collect();
                let q1 = random_orthogonal(&mut rng, l);
                let q2 = random_orthogonal(&mut rng, w);
                let mut d = DMatrix::zeros(l, w);
                for (i, &s) in want.iter().enumerate() {
                    d[(i, i)] = s;
                }
                let m = &q1 * d * q2.transpose();
                let f = LeftFactor::new(&m).unwrap();
                check(&m, &f);
                assert_close!(f.sigma.clone(), want, 1e-14, 0.0);
            }
        }
    }

    #[test]
    fn regression_nalgebra_svd_nearly_rank_one_block() {
        // This 2×2 block (a staircase step of a hidden planted model) is rank one up to
        // rounding; nalgebra 0.35's SVD::try_new returned a U whose first column was off by
        // 0.1 and a reconstruction error of 2e-2. Exact σ₁ = ‖M‖_F to rounding (rank one).
        let m = DMatrix::from_row_slice(
            2,
            2,
            &[
                0.1301447363006644,
                0.0791399503655573,
                -0.15035581973460868,
                -0.09143014500010048,
            ],
        );
        let f = LeftFactor::new(&m).unwrap();
        check(&m, &f);
        assert_close!(f.sigma[0], m.norm(), 0.0, 1e-15);
        assert!(f.sigma[1] < 1e-15);
    }

    #[test]
    fn empty_and_extreme_scales() {
        assert!(LeftFactor::new(&DMatrix::zeros(0, 3))
            .unwrap()
            .sigma
            .is_empty());
        assert!(LeftFactor::new(&DMatrix::zeros(3, 0))
            .unwrap()
            .sigma
            .is_empty());
        let f = LeftFactor::new(&DMatrix::zeros(3, 2)).unwrap();
        assert_eq!(f.sigma, vec![0.0, 0.0]);
        let mut rng = Rng::new(52);
        for s in [1e-200, 1e200] {
            let m = rng.matrix(4, 3) * s;
            let f = LeftFactor::new(&m).unwrap();
            // Singular values scale with the matrix (definition).
            let g = LeftFactor::new(&(&m / s)).unwrap();
            for (x, y) in f.sigma.iter().zip(g.sigma.iter()) {
                assert_close!(*x / s, *y, 0.0, 1e-13);
            }
        }
    }
}
