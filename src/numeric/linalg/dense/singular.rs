//! Singular values and the SVD, verified: nalgebra's factors are checked to reproduce the
//! matrix and recomputed (transpose, reversed columns, one-sided Jacobi) when they do not.

use super::*;

/// Iteration cap handed to nalgebra's implicit-shift SVD (total sweeps over all values).
pub(super) fn svd_iteration_cap(rows: usize, cols: usize) -> usize {
    200 * (rows + cols) + 1000
}

/// Thin SVD of a finite, non-empty matrix after exact power-of-two scaling.
///
/// With vectors, the factors are verified (see [`verified_factors`]): nalgebra 0.35's SVD
/// returns singular vectors that do not reproduce the matrix for a few percent of nearly
/// rank-deficient inputs (its singular values are right), so a failed check is retried on
/// the transpose and on a column-reversed copy, and finally by one-sided Jacobi.
pub(super) fn thin_svd(
    a: &DMatrix<f64>,
    vectors: bool,
) -> NumResult<nalgebra::SVD<f64, nalgebra::Dyn, nalgebra::Dyn>> {
    if a.is_empty() {
        // nalgebra panics on an empty matrix; its thin SVD has no singular values.
        return Ok(nalgebra::SVD {
            u: vectors.then(|| DMatrix::zeros(a.nrows(), 0)),
            v_t: vectors.then(|| DMatrix::zeros(0, a.ncols())),
            singular_values: nalgebra::DVector::zeros(0),
        });
    }
    let e = scale_exponent(a);
    let scaled = a.map(|v| times_pow2(v, -e));
    let cap = svd_iteration_cap(a.nrows(), a.ncols());
    let mut svd = if vectors {
        verified_factors(&scaled, cap)?
    } else {
        nalgebra::SVD::try_new(scaled, false, false, f64::EPSILON, cap).ok_or_else(|| {
            NumError::NoConvergence {
                what: "singular value decomposition".into(),
                iterations: cap,
            }
        })?
    };
    svd.singular_values.apply(|v| *v = times_pow2(*v, e));
    Ok(svd)
}

/// nalgebra's dynamic SVD type.
pub type Svd = nalgebra::SVD<f64, nalgebra::Dyn, nalgebra::Dyn>;

/// Whether thin factors reproduce `a` and are orthonormal to 64·max(r, c)·ε.
pub(super) fn factors_ok(
    a: &DMatrix<f64>,
    u: &DMatrix<f64>,
    s: &nalgebra::DVector<f64>,
    vt: &DMatrix<f64>,
) -> bool {
    let k = s.len();
    let tol = 64.0 * (a.nrows().max(a.ncols()) as f64) * f64::EPSILON;
    let mut us = u.clone();
    for j in 0..k {
        let mut col = us.column_mut(j);
        col *= s[j];
    }
    let rec = (&us * vt - a).norm();
    let orth_u = (u.transpose() * u - DMatrix::identity(k, k)).norm();
    let orth_v = (vt * vt.transpose() - DMatrix::identity(k, k)).norm();
    rec <= tol * a.norm().max(f64::MIN_POSITIVE)
        && orth_u <= tol * k as f64
        && orth_v <= tol * k as f64
}

/// A verified thin SVD with vectors of a finite, non-empty (scaled) matrix.
pub(super) fn verified_factors(a: &DMatrix<f64>, cap: usize) -> NumResult<Svd> {
    let try_one = |m: DMatrix<f64>| nalgebra::SVD::try_new(m, true, true, f64::EPSILON, cap);
    if let Some(f) = try_one(a.clone()) {
        if let (Some(u), Some(vt)) = (&f.u, &f.v_t) {
            if factors_ok(a, u, &f.singular_values, vt) {
                return Ok(f);
            }
        }
    }
    // Aᵀ = V Σ Uᵀ.
    if let Some(f) = try_one(a.transpose()) {
        if let (Some(u), Some(vt)) = (f.u.clone(), f.v_t.clone()) {
            let (u2, vt2) = (vt.transpose(), u.transpose());
            if factors_ok(a, &u2, &f.singular_values, &vt2) {
                return Ok(nalgebra::SVD {
                    u: Some(u2),
                    v_t: Some(vt2),
                    singular_values: f.singular_values,
                });
            }
        }
    }
    // A P (columns reversed) = U Σ (P V)ᵀ… so Vᵀ = (Vᵀ of AP) Pᵀ: reverse its columns back.
    let c = a.ncols();
    let rev = DMatrix::from_fn(a.nrows(), c, |i, j| a[(i, c - 1 - j)]);
    if let Some(f) = try_one(rev) {
        if let (Some(u), Some(vt)) = (f.u.clone(), f.v_t.clone()) {
            let vt2 = DMatrix::from_fn(vt.nrows(), c, |i, j| vt[(i, c - 1 - j)]);
            if factors_ok(a, &u, &f.singular_values, &vt2) {
                return Ok(nalgebra::SVD {
                    u: Some(u),
                    v_t: Some(vt2),
                    singular_values: f.singular_values,
                });
            }
        }
    }
    jacobi_factors(a)
}

/// Thin SVD by one-sided Jacobi on the rows (Hestenes 1958; see
/// `lti::staircase::factor::row_jacobi`), for the rare inputs on which the QR-based SVD's
/// vectors fail verification.
pub(super) fn jacobi_factors(a: &DMatrix<f64>) -> NumResult<Svd> {
    let (r, c) = a.shape();
    if r > c {
        let t = jacobi_factors(&a.transpose())?;
        let (u, vt) = (t.u.unwrap_or_default(), t.v_t.unwrap_or_default());
        return Ok(nalgebra::SVD {
            u: Some(vt.transpose()),
            v_t: Some(u.transpose()),
            singular_values: t.singular_values,
        });
    }
    // r ≤ c: A = U W, W r×c with orthogonal rows of norms σ.
    let (sigma, u, w) = crate::numeric::lti::staircase::row_jacobi(a)?;
    let tiny = f64::EPSILON * sigma.first().copied().unwrap_or(0.0) * c as f64;
    let mut rows: Vec<nalgebra::RowDVector<f64>> = Vec::with_capacity(r);
    let mut good: Vec<nalgebra::DVector<f64>> = Vec::new();
    for (k, &sk) in sigma.iter().enumerate() {
        if sk > tiny {
            let row = w.row(k) / sk;
            good.push(row.transpose());
            rows.push(row);
        } else {
            rows.push(nalgebra::RowDVector::zeros(c));
        }
    }
    // Complete the rows of zero singular values orthonormally.
    if good.len() < r {
        let basis = if good.is_empty() {
            DMatrix::identity(c, c)
        } else {
            complete_orthonormal(DMatrix::from_columns(&good))
        };
        let mut next = good.len();
        for (k, &sk) in sigma.iter().enumerate() {
            if sk <= tiny {
                rows[k] = basis.column(next.min(c - 1)).transpose();
                next += 1;
            }
        }
    }
    let vt = DMatrix::from_rows(&rows);
    let s =
        nalgebra::DVector::from_iterator(r, sigma.iter().map(|&x| if x > tiny { x } else { 0.0 }));
    Ok(nalgebra::SVD {
        u: Some(u),
        v_t: Some(vt),
        singular_values: s,
    })
}

/// nalgebra's thin SVD structure, with vectors verified and singular values sorted in
/// descending order (columns of U and rows of Vᵀ permuted alike). For callers that use
/// nalgebra's `SVD` type; see [`thin_svd`] for why the check is needed.
pub fn verified_svd(a: &DMatrix<f64>) -> NumResult<Svd> {
    check::finite("A", a)?;
    let f = thin_svd(a, true)?;
    let (Some(u), Some(vt)) = (f.u, f.v_t) else {
        return Err(NumError::NoConvergence {
            what: "singular value decomposition".into(),
            iterations: 0,
        });
    };
    let k = f.singular_values.len();
    let mut idx: Vec<usize> = (0..k).collect();
    idx.sort_by(|&p, &q| f.singular_values[q].total_cmp(&f.singular_values[p]));
    let u2 = DMatrix::from_fn(u.nrows(), k, |i, j| u[(i, idx[j])]);
    let vt2 = DMatrix::from_fn(k, vt.ncols(), |i, j| vt[(idx[i], j)]);
    let s2 = nalgebra::DVector::from_iterator(k, idx.iter().map(|&i| f.singular_values[i]));
    Ok(nalgebra::SVD {
        u: Some(u2),
        v_t: Some(vt2),
        singular_values: s2,
    })
}

/// Thin singular value decomposition with verified vectors: `(U, σ, Vᵀ)` with `A = U
/// diag(σ) Vᵀ`, U r×k, Vᵀ k×c, k = min(r, c), σ not sorted. Use this rather than nalgebra's
/// `svd(true, true)` anywhere singular vectors matter (see [`thin_svd`] for why).
pub fn svd_factors(a: &DMatrix<f64>) -> NumResult<(DMatrix<f64>, Vec<f64>, DMatrix<f64>)> {
    check::finite("A", a)?;
    let (r, c) = a.shape();
    if r == 0 || c == 0 {
        return Ok((DMatrix::zeros(r, 0), Vec::new(), DMatrix::zeros(0, c)));
    }
    let f = thin_svd(a, true)?;
    match (f.u, f.v_t) {
        (Some(u), Some(vt)) => Ok((u, f.singular_values.iter().copied().collect(), vt)),
        _ => Err(NumError::NoConvergence {
            what: "singular value decomposition".into(),
            iterations: 0,
        }),
    }
}

/// Singular values of `a` (any shape), in descending order.
///
/// Mathematics: the σᵢ ≥ 0 with A = U Σ Vᵀ, min(r, c) of them. Algorithm: Householder
/// bidiagonalisation then implicit-shift QR on the bidiagonal (Golub & Kahan 1965,
/// "Calculating the singular values and pseudo-inverse of a matrix"; Golub & Reinsch 1970,
/// "Singular value decomposition and least squares solutions"), via nalgebra, after an
/// exact power-of-two scaling so that no intermediate overflows. Cost O(r·c·min(r, c)).
/// Each σᵢ has absolute error of order ε·σ₁ (backward stability). An empty matrix
/// (0 rows or 0 columns) has no singular values and gives an empty vector.
pub fn singular_values(a: &DMatrix<f64>) -> NumResult<Vec<f64>> {
    check::finite("A", a)?;
    if a.nrows() == 0 || a.ncols() == 0 {
        return Ok(Vec::new());
    }
    let svd = thin_svd(a, false)?;
    let mut s: Vec<f64> = svd.singular_values.iter().copied().collect();
    s.sort_by(|x, y| y.total_cmp(x));
    Ok(s)
}

/// A full singular value decomposition A = U Σ Vᵀ of an r×c matrix.
#[derive(Debug, Clone, PartialEq)]
pub struct FullSvd {
    /// Orthogonal r×r matrix of left singular vectors (columns).
    pub u: DMatrix<f64>,
    /// The min(r, c) singular values, descending.
    pub sigma: Vec<f64>,
    /// Orthogonal c×c matrix of right singular vectors (columns).
    pub v: DMatrix<f64>,
}

impl FullSvd {
    /// The r×c matrix Σ with the singular values on its diagonal.
    pub fn sigma_matrix(&self) -> DMatrix<f64> {
        let mut s = DMatrix::zeros(self.u.nrows(), self.v.nrows());
        for (k, v) in self.sigma.iter().enumerate() {
            s[(k, k)] = *v;
        }
        s
    }
}

/// Extends the orthonormal columns of `q` (n×k, k ≤ n) to an orthogonal n×n matrix.
///
/// The extra columns are the trailing columns of the full Householder factor of the QR
/// factorisation of `q`, which are orthogonal to range(q) by construction.
pub(super) fn complete_orthonormal(q: DMatrix<f64>) -> DMatrix<f64> {
    let (n, k) = q.shape();
    if k >= n {
        return q;
    }
    if k == 0 {
        return DMatrix::identity(n, n);
    }
    let qr = q.clone().qr();
    let mut full_t = DMatrix::<f64>::identity(n, n);
    qr.q_tr_mul(&mut full_t);
    let full = full_t.transpose();
    let mut out = DMatrix::zeros(n, n);
    out.columns_mut(0, k).copy_from(&q);
    out.columns_mut(k, n - k).copy_from(&full.columns(k, n - k));
    out
}

/// Full SVD A = U Σ Vᵀ with square orthogonal U (r×r) and V (c×c).
///
/// nalgebra's SVD is thin (U is r×k, V is c×k with k = min(r, c)); the missing columns are
/// completed to an orthonormal basis of the orthogonal complement by one Householder QR of
/// the thin factor, so they are orthonormal but otherwise arbitrary (any basis of the null
/// space is valid). Algorithm and reference as [`singular_values`]; cost O(r·c·k) plus
/// O(r³ + c³) for the completion. Residual ‖A − U Σ Vᵀ‖ is of order ε·σ₁. Empty matrices
/// give identity U and V and no singular values.
pub fn svd(a: &DMatrix<f64>) -> NumResult<FullSvd> {
    check::finite("A", a)?;
    let (r, c) = a.shape();
    if r == 0 || c == 0 {
        return Ok(FullSvd {
            u: DMatrix::identity(r, r),
            sigma: Vec::new(),
            v: DMatrix::identity(c, c),
        });
    }
    let thin = thin_svd(a, true)?;
    let (u, v_t) = match (thin.u, thin.v_t) {
        (Some(u), Some(v_t)) => (u, v_t),
        _ => {
            return Err(NumError::NoConvergence {
                what: "singular value decomposition".into(),
                iterations: 0,
            })
        }
    };
    let sigma: Vec<f64> = thin.singular_values.iter().copied().collect();
    Ok(FullSvd {
        u: complete_orthonormal(u),
        sigma,
        v: complete_orthonormal(v_t.transpose()),
    })
}
