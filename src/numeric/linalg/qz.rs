//! The real generalized eigenproblem `A x = λ B x`: Hessenberg–triangular reduction and the
//! QZ iteration.
//!
//! For square real `A`, `B` of order n the QZ algorithm finds orthogonal `Q`, `Z` with
//!
//! ```text
//! A = Q S Zᵀ,   B = Q T Zᵀ,
//! ```
//!
//! `S` quasi-upper-triangular (1×1 and 2×2 diagonal blocks, the 2×2 ones carrying complex
//! conjugate pairs) and `T` upper triangular. The eigenvalues are returned as pairs (α, β)
//! with λ = α/β; an infinite eigenvalue (B singular) shows as β = 0 and is never divided by.
//!
//! Method: Moler, C. B. & Stewart, G. W. (1973), "An algorithm for generalized matrix
//! eigenvalue problems", SIAM J. Numer. Anal. 10(2), 241–256; presentation and notation as in
//! Golub, G. H. & Van Loan, C. F. (1996), *Matrix Computations*, 3rd ed., § 7.7.

use super::reflector::{givens, larfg};
use crate::numeric::check;
use crate::numeric::error::{NumError, NumResult};
use crate::numeric::order;
use nalgebra::{Complex, DMatrix};

/// One eigenvalue of the pencil `A − λB` as the pair (α, β) with λ = α/β.
///
/// For a real eigenvalue `alpha` is real and `beta ≥ 0`; the two members of a complex pair
/// share one `beta > 0`. `beta = 0` is an infinite eigenvalue (or, when `alpha = 0` too, the
/// indeterminate 0/0 of a singular pencil, where det(A − λB) vanishes for every λ).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GeneralizedEigenvalue {
    /// Numerator α (complex for a member of a complex-conjugate pair).
    pub alpha: Complex<f64>,
    /// Denominator β, real and non-negative.
    pub beta: f64,
}

impl GeneralizedEigenvalue {
    /// λ = α/β when β is not exactly zero, else `None` (infinite or indeterminate).
    pub fn value(&self) -> Option<Complex<f64>> {
        if self.beta == 0.0 {
            None
        } else {
            Some(self.alpha / self.beta)
        }
    }

    /// Whether the eigenvalue counts as infinite at relative tolerance `tol` for a pencil
    /// whose matrices have Frobenius norms `norm_a` and `norm_b`.
    ///
    /// Infinite means β = 0 exactly, or `|β|·‖A‖ < tol·|α|·‖B‖`, i.e.
    /// `|λ| > ‖A‖ / (tol·‖B‖)`. A finite eigenvalue can only be that large when the
    /// condition number of B exceeds about 1/tol (|λ| ≤ ‖A‖·‖B⁻¹‖), so with the default
    /// tol = √ε ≈ 1.5·10⁻⁸ anything beyond that is as close to infinite as the data can
    /// tell. √ε is also the size at which a rounding-level perturbation displays an
    /// infinite eigenvalue of index two (a 2×2 Jordan block at infinity).
    pub fn is_infinite(&self, tol: f64, norm_a: f64, norm_b: f64) -> bool {
        if self.beta == 0.0 {
            return true;
        }
        if self.alpha.norm() == 0.0 || norm_a == 0.0 {
            return false;
        }
        if norm_b == 0.0 {
            return true;
        }
        // Ratios of O(1) quantities, so that no product overflows.
        self.beta.abs() / norm_b < tol * (self.alpha.norm() / norm_a)
    }
}

/// Iteration cap and tolerance of the QZ iteration.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct QzParams {
    /// QZ sweeps allowed per eigenvalue; the whole iteration gives up with
    /// [`NumError::NoConvergence`] after `sweeps_per_eigenvalue · n` sweeps. Default 30.
    pub sweeps_per_eigenvalue: usize,
    /// Relative tolerance under which β counts as zero when separating finite eigenvalues
    /// (see [`GeneralizedEigenvalue::is_infinite`]). Default √ε ≈ 1.49·10⁻⁸.
    pub infinite_tolerance: f64,
}

impl Default for QzParams {
    fn default() -> Self {
        QzParams {
            sweeps_per_eigenvalue: 30,
            infinite_tolerance: f64::EPSILON.sqrt(),
        }
    }
}

impl QzParams {
    fn validate(&self) -> NumResult<()> {
        if self.sweeps_per_eigenvalue == 0 {
            return Err(NumError::invalid(
                "sweeps_per_eigenvalue",
                "expected at least 1, found 0",
            ));
        }
        check_tolerance(self.infinite_tolerance)
    }
}

fn check_tolerance(tol: f64) -> NumResult<()> {
    if !(tol.is_finite() && tol >= 0.0) {
        return Err(NumError::invalid(
            "infinite_tolerance",
            format!("expected a finite number ≥ 0, found {tol}"),
        ));
    }
    Ok(())
}

/// The Hessenberg–triangular form `A = Q H Zᵀ`, `B = Q T Zᵀ`.
#[derive(Debug, Clone, PartialEq)]
pub struct HessenbergTriangular {
    /// Upper Hessenberg `H = Qᵀ A Z` (entries below the subdiagonal exactly zero).
    pub h: DMatrix<f64>,
    /// Upper triangular `T = Qᵀ B Z` (entries below the diagonal exactly zero).
    pub t: DMatrix<f64>,
    /// Orthogonal left factor.
    pub q: DMatrix<f64>,
    /// Orthogonal right factor.
    pub z: DMatrix<f64>,
}

/// Reduces the pencil (A, B) to Hessenberg–triangular form `A = Q H Zᵀ`, `B = Q T Zᵀ`.
///
/// Algorithm: a Householder QR factorization of B (B = Q₀R, A ← Q₀ᵀA), then for each column
/// j of A from the bottom up a Givens rotation of rows i−1, i annihilates A(i, j) and a
/// Givens rotation of columns i−1, i removes the fill it leaves in T(i, i−1) — the
/// reduction of Moler & Stewart (1973, "An algorithm for generalized matrix eigenvalue
/// problems", SIAM J. Numer. Anal.). Cost O(n³): about 8n³ flops for H and T, roughly
/// doubled when Q and Z are accumulated. Orthogonal transformations only, so the computed
/// form is exact for a pencil within a few multiples of ε·‖(A, B)‖ of the input; no
/// tolerance is involved.
///
/// Errors: A or B not square, of different sizes, or with a NaN/infinite entry.
pub fn hessenberg_triangular(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
) -> NumResult<HessenbergTriangular> {
    check_pencil(a, b)?;
    let mut w = Work::new(a, b, true);
    w.reduce_to_hessenberg_triangular();
    let n = a.nrows();
    Ok(HessenbergTriangular {
        h: w.h,
        t: w.t,
        q: w.q.unwrap_or_else(|| DMatrix::identity(n, n)),
        z: w.z.unwrap_or_else(|| DMatrix::identity(n, n)),
    })
}

/// The real generalized Schur form of a pencil: `A = Q S Zᵀ`, `B = Q T Zᵀ`.
#[derive(Debug, Clone, PartialEq)]
pub struct Qz {
    /// Orthogonal left factor.
    pub q: DMatrix<f64>,
    /// Orthogonal right factor.
    pub z: DMatrix<f64>,
    /// Quasi-upper-triangular `S = Qᵀ A Z`: 1×1 blocks for real eigenvalues, 2×2 blocks
    /// (nonzero subdiagonal) for complex pairs. The 2×2 blocks are not standardised.
    pub s: DMatrix<f64>,
    /// Upper triangular `T = Qᵀ B Z`, zero on the diagonal at infinite eigenvalues.
    pub t: DMatrix<f64>,
    /// Eigenvalues in the order of the diagonal of S: entry k belongs to S(k, k) (for a
    /// complex pair, entries k and k+1 belong to the block at rows k, k+1, the one with
    /// negative imaginary part first).
    pub eigenvalues: Vec<GeneralizedEigenvalue>,
}

impl Qz {
    /// The real generalized Schur form of (A, B) with default [`QzParams`].
    ///
    /// Mathematics: orthogonal Q, Z with A = Q S Zᵀ, B = Q T Zᵀ, S quasi-upper-triangular,
    /// T upper triangular; the eigenvalues of A − λB are α/β read from the diagonal blocks.
    ///
    /// Algorithm: [`hessenberg_triangular`], then the QZ iteration of Moler & Stewart
    /// (1973, "An algorithm for generalized matrix eigenvalue problems", SIAM J. Numer.
    /// Anal.): implicit double-shift sweeps (shifts = eigenvalues of the trailing 2×2 of
    /// H T⁻¹, bulge chased with 3×3 Householder reflections from both sides), replaced by a
    /// single-shift Givens sweep when those shifts are real (the closer one to the corner
    /// is used), and by an exceptional double shift every tenth sweep without deflation
    /// (the ad hoc shift of Martin, Peters & Wilkinson 1970, "The QR algorithm for real
    /// Hessenberg matrices", Numer. Math. 14). A subdiagonal entry of H below ε·‖A‖_F is
    /// set to zero (deflation); a diagonal entry of T below ε·‖B‖_F is set to zero and
    /// chased to the bottom of its block by Givens rotations, where it deflates as an
    /// infinite eigenvalue (β = 0) without any division by it. A 2×2 block with real
    /// eigenvalues is split into two 1×1 blocks.
    ///
    /// Cost O(n³): about 30n³ flops for the eigenvalues alone and 66n³ with Q and Z, by the
    /// counts in Golub & Van Loan (1996, *Matrix Computations*, § 7.7). The result is
    /// the exact generalized Schur form of a pencil within a small multiple of ε·‖(A, B)‖
    /// of the input (normwise backward stable); the accuracy of each eigenvalue is that
    /// backward error times its condition number.
    ///
    /// Errors: shape and finiteness of A, B; [`NumError::NoConvergence`] after
    /// `30·n` sweeps.
    pub fn new(a: &DMatrix<f64>, b: &DMatrix<f64>) -> NumResult<Qz> {
        Qz::with_params(a, b, &QzParams::default())
    }

    /// As [`Qz::new`] with an explicit iteration cap: [`NumError::NoConvergence`] after
    /// `params.sweeps_per_eigenvalue · n` sweeps. `params.infinite_tolerance` is validated
    /// but not stored: pass it to [`Qz::finite_eigenvalues`].
    pub fn with_params(a: &DMatrix<f64>, b: &DMatrix<f64>, params: &QzParams) -> NumResult<Qz> {
        check_pencil(a, b)?;
        params.validate()?;
        let n = a.nrows();
        let mut w = Work::new(a, b, true);
        w.reduce_to_hessenberg_triangular();
        let eigenvalues = w.iterate(params)?;
        Ok(Qz {
            q: w.q.unwrap_or_else(|| DMatrix::identity(n, n)),
            z: w.z.unwrap_or_else(|| DMatrix::identity(n, n)),
            s: w.h,
            t: w.t,
            eigenvalues,
        })
    }

    /// The finite eigenvalues α/β, sorted by [`crate::numeric::order`]; those with
    /// [`GeneralizedEigenvalue::is_infinite`] at relative tolerance `tol` (norms taken from
    /// S and T, which equal those of A and B) are left out.
    ///
    /// Errors: `tol` negative or not finite.
    pub fn finite_eigenvalues(&self, tol: f64) -> NumResult<Vec<Complex<f64>>> {
        check_tolerance(tol)?;
        Ok(finite_sorted(
            &self.eigenvalues,
            tol,
            frobenius(&self.s),
            frobenius(&self.t),
        ))
    }
}

/// All n eigenvalues (α, β) of the pencil A − λB, in the order of the diagonal of the
/// generalized Schur form (see [`Qz::new`] for the mathematics, algorithm, cost and
/// reference). Q and Z are not accumulated, which saves about half the work.
///
/// Errors: shape and finiteness of A, B; [`NumError::NoConvergence`].
pub fn generalized_eigenvalues(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
) -> NumResult<Vec<GeneralizedEigenvalue>> {
    check_pencil(a, b)?;
    let mut w = Work::new(a, b, false);
    w.reduce_to_hessenberg_triangular();
    w.iterate(&QzParams::default())
}

/// The finite eigenvalues λ of `A x = λ B x`, sorted by [`crate::numeric::order`]
/// (ascending real part, then imaginary part).
///
/// Computed by the QZ iteration (see [`Qz::new`]). An eigenvalue counts as infinite and is
/// left out when β = 0 or `|β|·‖A‖_F < tol·|α|·‖B‖_F` (see
/// [`GeneralizedEigenvalue::is_infinite`]; `QzParams::default().infinite_tolerance` = √ε is
/// the usual choice). Indeterminate pairs (α = β = 0, singular pencil) are left out too.
///
/// Errors: shape and finiteness of A, B; `tol` negative or not finite;
/// [`NumError::NoConvergence`].
pub fn finite_generalized_eigenvalues(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    tol: f64,
) -> NumResult<Vec<Complex<f64>>> {
    check_tolerance(tol)?;
    let eig = generalized_eigenvalues(a, b)?;
    Ok(finite_sorted(&eig, tol, frobenius(a), frobenius(b)))
}

fn finite_sorted(
    eig: &[GeneralizedEigenvalue],
    tol: f64,
    norm_a: f64,
    norm_b: f64,
) -> Vec<Complex<f64>> {
    let mut out: Vec<Complex<f64>> = eig
        .iter()
        .filter(|e| !e.is_infinite(tol, norm_a, norm_b))
        .filter_map(|e| e.value())
        .collect();
    order::sort_eigenvalues(&mut out);
    out
}

fn check_pencil(a: &DMatrix<f64>, b: &DMatrix<f64>) -> NumResult<usize> {
    let n = check::finite_square("A", a)?;
    check::square("B", b)?;
    if b.nrows() != n {
        return Err(NumError::shape(
            "B",
            format!("{n}×{n} (the size of A)"),
            check::shape_of(b),
        ));
    }
    check::finite("B", b)?;
    Ok(n)
}

/// Frobenius norm, scaled so that it neither overflows nor underflows.
fn frobenius(m: &DMatrix<f64>) -> f64 {
    let big = m.iter().fold(0.0f64, |acc, x| acc.max(x.abs()));
    if big == 0.0 {
        return 0.0;
    }
    big * m.iter().map(|x| (x / big) * (x / big)).sum::<f64>().sqrt()
}

/// The power of two nearest to `x` (1 for 0 or non-finite `x`).
fn power_of_two_near(x: f64) -> f64 {
    if x == 0.0 || !x.is_finite() {
        return 1.0;
    }
    let e = x.log2().round().clamp(-1000.0, 1000.0) as i32;
    2.0f64.powi(e)
}

/// Householder reflector P = I − τ v vᵀ (v₀ = 1) with P x = β e₁, as `(v, τ, β)`
/// ([`larfg`]).
fn householder(x: &[f64]) -> (Vec<f64>, f64, f64) {
    let mut v = x.to_vec();
    let tau = larfg(&mut v);
    let beta = v[0];
    v[0] = 1.0;
    (v, tau, beta)
}

/// Rows i, i+1 ← [c s; −s c]·rows, over columns `from..to`.
fn rotate_rows(m: &mut DMatrix<f64>, i: usize, c: f64, s: f64, from: usize, to: usize) {
    for col in from..to {
        let (x, y) = (m[(i, col)], m[(i + 1, col)]);
        m[(i, col)] = c * x + s * y;
        m[(i + 1, col)] = -s * x + c * y;
    }
}

/// Columns j, j+1 ← columns·[c s; −s c], over rows `from..to`.
fn rotate_cols(m: &mut DMatrix<f64>, j: usize, c: f64, s: f64, from: usize, to: usize) {
    for row in from..to {
        let (x, y) = (m[(row, j)], m[(row, j + 1)]);
        m[(row, j)] = c * x - s * y;
        m[(row, j + 1)] = s * x + c * y;
    }
}

/// Rows k.. ← (I − τ v vᵀ)·rows, over columns `from..to`.
fn reflect_rows(m: &mut DMatrix<f64>, k: usize, v: &[f64], tau: f64, from: usize, to: usize) {
    for col in from..to {
        let w: f64 = v
            .iter()
            .enumerate()
            .map(|(i, vi)| vi * m[(k + i, col)])
            .sum();
        for (i, vi) in v.iter().enumerate() {
            m[(k + i, col)] -= tau * vi * w;
        }
    }
}

/// Columns k.. ← columns·(I − τ v vᵀ), over rows `from..to`.
fn reflect_cols(m: &mut DMatrix<f64>, k: usize, v: &[f64], tau: f64, from: usize, to: usize) {
    for row in from..to {
        let w: f64 = v
            .iter()
            .enumerate()
            .map(|(i, vi)| vi * m[(row, k + i)])
            .sum();
        for (i, vi) in v.iter().enumerate() {
            m[(row, k + i)] -= tau * vi * w;
        }
    }
}

/// The pencil being reduced, with the accumulated factors (A = Q H Zᵀ, B = Q T Zᵀ).
struct Work {
    h: DMatrix<f64>,
    t: DMatrix<f64>,
    q: Option<DMatrix<f64>>,
    z: Option<DMatrix<f64>>,
}

impl Work {
    fn new(a: &DMatrix<f64>, b: &DMatrix<f64>, factors: bool) -> Self {
        let n = a.nrows();
        Work {
            h: a.clone(),
            t: b.clone(),
            q: factors.then(|| DMatrix::identity(n, n)),
            z: factors.then(|| DMatrix::identity(n, n)),
        }
    }

    fn n(&self) -> usize {
        self.h.nrows()
    }

    /// Left rotation of rows i, i+1: H from column `hc`, T from column `tc`; Q ← Q·Gᵀ.
    fn rot_rows(&mut self, i: usize, c: f64, s: f64, hc: usize, tc: usize) {
        let n = self.n();
        rotate_rows(&mut self.h, i, c, s, hc, n);
        rotate_rows(&mut self.t, i, c, s, tc, n);
        if let Some(q) = self.q.as_mut() {
            rotate_cols(q, i, c, -s, 0, n);
        }
    }

    /// Right rotation of columns j, j+1: H over rows `..hr`, T over rows `..tr`; Z ← Z·G.
    fn rot_cols(&mut self, j: usize, c: f64, s: f64, hr: usize, tr: usize) {
        let n = self.n();
        rotate_cols(&mut self.h, j, c, s, 0, hr);
        rotate_cols(&mut self.t, j, c, s, 0, tr);
        if let Some(z) = self.z.as_mut() {
            rotate_cols(z, j, c, s, 0, n);
        }
    }

    /// Left reflection of rows k..: H from column `hc`, T from column `tc`; Q ← Q·P.
    fn refl_rows(&mut self, k: usize, v: &[f64], tau: f64, hc: usize, tc: usize) {
        let n = self.n();
        reflect_rows(&mut self.h, k, v, tau, hc, n);
        reflect_rows(&mut self.t, k, v, tau, tc, n);
        if let Some(q) = self.q.as_mut() {
            reflect_cols(q, k, v, tau, 0, n);
        }
    }

    /// Right reflection of columns k..: H over rows `..hr`, T over rows `..tr`; Z ← Z·P.
    fn refl_cols(&mut self, k: usize, v: &[f64], tau: f64, hr: usize, tr: usize) {
        let n = self.n();
        reflect_cols(&mut self.h, k, v, tau, 0, hr);
        reflect_cols(&mut self.t, k, v, tau, 0, tr);
        if let Some(z) = self.z.as_mut() {
            reflect_cols(z, k, v, tau, 0, n);
        }
    }

    fn reduce_to_hessenberg_triangular(&mut self) {
        let n = self.n();
        // Householder QR of B, applied to A from the left.
        for j in 0..n.saturating_sub(1) {
            let x: Vec<f64> = (j..n).map(|i| self.t[(i, j)]).collect();
            let (v, tau, beta) = householder(&x);
            if tau != 0.0 {
                self.refl_rows(j, &v, tau, 0, j);
            }
            self.t[(j, j)] = beta;
            for i in j + 1..n {
                self.t[(i, j)] = 0.0;
            }
        }
        // Givens rotations: annihilate A below the subdiagonal, column by column from the
        // bottom, restoring T's triangle after each one.
        for j in 0..n.saturating_sub(2) {
            for i in (j + 2..n).rev() {
                let (c, s) = givens(self.h[(i - 1, j)], self.h[(i, j)]);
                self.rot_rows(i - 1, c, s, j, i - 1);
                self.h[(i, j)] = 0.0;
                let (c, s) = givens(self.t[(i, i)], self.t[(i, i - 1)]);
                self.rot_cols(i - 1, c, s, n, i + 1);
                self.t[(i, i - 1)] = 0.0;
            }
        }
    }

    /// The QZ iteration on the Hessenberg–triangular pencil.
    fn iterate(&mut self, params: &QzParams) -> NumResult<Vec<GeneralizedEigenvalue>> {
        let n = self.n();
        let zero = GeneralizedEigenvalue {
            alpha: Complex::new(0.0, 0.0),
            beta: 0.0,
        };
        let mut eig = vec![zero; n];
        // Scale H and T to norm about 1 by powers of two (exact), so that the shifts, built
        // from H·T⁻¹, can neither overflow nor underflow; undone at the end.
        let (sa, sb) = (
            power_of_two_near(frobenius(&self.h)),
            power_of_two_near(frobenius(&self.t)),
        );
        self.h.unscale_mut(sa);
        self.t.unscale_mut(sb);
        let atol = (f64::EPSILON * frobenius(&self.h)).max(f64::MIN_POSITIVE);
        let btol = (f64::EPSILON * frobenius(&self.t)).max(f64::MIN_POSITIVE);
        let max_sweeps = params.sweeps_per_eigenvalue.saturating_mul(n);
        let mut sweeps = 0usize;
        let mut since_deflation = 0usize;
        // Rows end.. are converged; the active part is 0..end.
        let mut end = n;
        while end > 0 {
            let last = end - 1;
            let mut l = 0;
            for j in (1..=last).rev() {
                if self.h[(j, j - 1)].abs() <= atol {
                    self.h[(j, j - 1)] = 0.0;
                    l = j;
                    break;
                }
            }
            if l == last {
                eig[last] = self.deflate_one(last, btol);
                end -= 1;
                since_deflation = 0;
                continue;
            }
            if let Some(j) = (l..=last).find(|&j| self.t[(j, j)].abs() <= btol) {
                self.t[(j, j)] = 0.0;
                self.chase_zero(j, l, last);
                continue;
            }
            if l + 1 == last {
                if let Some((first, second)) = self.two_by_two(l) {
                    eig[l] = first;
                    eig[l + 1] = second;
                    end -= 2;
                    since_deflation = 0;
                }
                continue;
            }
            sweeps += 1;
            since_deflation += 1;
            NumError::deadline("QZ iteration")?;
            if sweeps > max_sweeps {
                return Err(NumError::NoConvergence {
                    what: "QZ iteration".to_string(),
                    iterations: max_sweeps,
                });
            }
            self.sweep(l, last, since_deflation.is_multiple_of(10));
        }
        self.h.scale_mut(sa);
        self.t.scale_mut(sb);
        for e in eig.iter_mut() {
            e.alpha *= sa;
            e.beta *= sb;
        }
        Ok(eig)
    }

    /// A converged 1×1 block at j: β made non-negative (column j of S, T, Z negated).
    fn deflate_one(&mut self, j: usize, btol: f64) -> GeneralizedEigenvalue {
        if self.t[(j, j)].abs() <= btol {
            self.t[(j, j)] = 0.0;
        }
        if self.t[(j, j)] < 0.0 {
            self.h.column_mut(j).neg_mut();
            self.t.column_mut(j).neg_mut();
            if let Some(z) = self.z.as_mut() {
                z.column_mut(j).neg_mut();
            }
        }
        GeneralizedEigenvalue {
            alpha: Complex::new(self.h[(j, j)], 0.0),
            beta: self.t[(j, j)],
        }
    }

    /// T(j, j) = 0 inside the unreduced block l..=last: rotations move the zero to
    /// T(last, last) and then annihilate H(last, last−1), deflating an infinite eigenvalue.
    fn chase_zero(&mut self, j: usize, l: usize, last: usize) {
        for k in j..last {
            let (c, s) = givens(self.t[(k, k + 1)], self.t[(k + 1, k + 1)]);
            self.rot_rows(k, c, s, if k > l { k - 1 } else { k }, k);
            self.t[(k + 1, k + 1)] = 0.0;
            if k > l {
                let (c, s) = givens(self.h[(k + 1, k)], self.h[(k + 1, k - 1)]);
                self.rot_cols(k - 1, c, s, k + 2, k + 1);
                self.h[(k + 1, k - 1)] = 0.0;
            }
        }
        let (c, s) = givens(self.h[(last, last)], self.h[(last, last - 1)]);
        self.rot_cols(last - 1, c, s, last + 1, last + 1);
        self.h[(last, last - 1)] = 0.0;
    }

    /// An unreduced 2×2 block at k, k+1 with T(k,k), T(k+1,k+1) ≠ 0. Real eigenvalues: split
    /// it into two 1×1 blocks and return `None` (they deflate on the next pass). Complex:
    /// return the pair, with β = √|T(k,k)·T(k+1,k+1)| and α = λ·β.
    fn two_by_two(&mut self, k: usize) -> Option<(GeneralizedEigenvalue, GeneralizedEigenvalue)> {
        let (h11, h12, h21, h22) = (
            self.h[(k, k)],
            self.h[(k, k + 1)],
            self.h[(k + 1, k)],
            self.h[(k + 1, k + 1)],
        );
        let (t11, t12, t22) = (self.t[(k, k)], self.t[(k, k + 1)], self.t[(k + 1, k + 1)]);
        // det(H − λT) = q2·λ² + q1·λ + q0 on the block, each matrix scaled to unit norm.
        // Working with these coefficients rather than with H·T⁻¹ keeps both roots accurate
        // (in the chordal sense) when T is ill-conditioned.
        let hs = h11.hypot(h12).hypot(h21.hypot(h22));
        let ts = t11.hypot(t12).hypot(t22);
        let (a11, a12, a21, a22) = (h11 / hs, h12 / hs, h21 / hs, h22 / hs);
        let (b11, b12, b22) = (t11 / ts, t12 / ts, t22 / ts);
        let q2 = b11 * b22;
        let q1 = -(a11 * b22 + a22 * b11 - a21 * b12);
        let q0 = a11 * a22 - a12 * a21;
        let delta = q1 * q1 - 4.0 * q2 * q0;
        if delta < 0.0 {
            // λ = (−q1 ± j√−Δ)/(2·q2) in the scaled units, times ‖H‖/‖T‖.
            let beta = (t11 * t22).abs().sqrt();
            let re = -q1 / (2.0 * q2) * (hs / ts);
            let im = (-delta).sqrt() / (2.0 * q2.abs()) * (hs / ts);
            let lambda = Complex::new(re, im);
            return Some((
                GeneralizedEigenvalue {
                    alpha: lambda.conj() * beta,
                    beta,
                },
                GeneralizedEigenvalue {
                    alpha: lambda * beta,
                    beta,
                },
            ));
        }
        // Stable quadratic formula: the roots are r/q2 and q0/r with r = −(q1 + sign(q1)√Δ)/2.
        // Split with the root (α, β) = (q0, r) in homogeneous form (r = 0 only for the
        // double root 0).
        let r = -0.5 * (q1 + q1.signum() * delta.sqrt());
        let (alpha, beta) = if r != 0.0 { (q0, r) } else { (0.0, 1.0) };
        // Right null vector z of E = β·H − α·T (scaled); rotate it into the first column.
        let e = [
            [beta * a11 - alpha * b11, beta * a12 - alpha * b12],
            [beta * a21, beta * a22 - alpha * b22],
        ];
        let row = if e[0][0].abs() + e[0][1].abs() >= e[1][0].abs() + e[1][1].abs() {
            e[0]
        } else {
            e[1]
        };
        let norm = row[0].hypot(row[1]);
        let (z0, z1) = if norm == 0.0 {
            (1.0, 0.0)
        } else {
            (row[1] / norm, -row[0] / norm)
        };
        self.rot_cols(k, z0, -z1, k + 2, k + 2);
        // Now H(:,k) and T(:,k) are parallel on rows k, k+1; annihilate the second entry of
        // the larger one (relative to its block's norm) and set both to zero.
        let hv = (self.h[(k, k)], self.h[(k + 1, k)]);
        let tv = (self.t[(k, k)], self.t[(k + 1, k)]);
        let v = if hv.0.hypot(hv.1) * ts >= tv.0.hypot(tv.1) * hs {
            hv
        } else {
            tv
        };
        let (c, s) = givens(v.0, v.1);
        self.rot_rows(k, c, s, k, k);
        self.h[(k + 1, k)] = 0.0;
        self.t[(k + 1, k)] = 0.0;
        None
    }

    /// One QZ sweep on the unreduced block l..=h (at least 3×3, T's diagonal nonzero).
    fn sweep(&mut self, l: usize, h: usize, exceptional: bool) {
        // Trailing 2×2 of M = H T⁻¹ from the trailing 3×3 of T⁻¹ (T upper triangular).
        let (t11, t12, t13) = (
            self.t[(h - 2, h - 2)],
            self.t[(h - 2, h - 1)],
            self.t[(h - 2, h)],
        );
        let (t22, t23, t33) = (self.t[(h - 1, h - 1)], self.t[(h - 1, h)], self.t[(h, h)]);
        let i11 = 1.0 / t11;
        let i12 = -(t12 / t11) / t22;
        let i13 = ((t12 / t11) * (t23 / t22) - t13 / t11) / t33;
        let i22 = 1.0 / t22;
        let i23 = -(t23 / t22) / t33;
        let i33 = 1.0 / t33;
        let (h10, h11, h12) = (
            self.h[(h - 1, h - 2)],
            self.h[(h - 1, h - 1)],
            self.h[(h - 1, h)],
        );
        let (h21, h22) = (self.h[(h, h - 1)], self.h[(h, h)]);
        let ma = h10 * i12 + h11 * i22;
        let mb = h10 * i13 + h11 * i23 + h12 * i33;
        let mc = h21 * i22;
        let md = h21 * i23 + h22 * i33;
        if exceptional {
            let w = mc.abs() + (h10 * i11).abs();
            let e = 0.75 * w + md;
            self.double_shift(l, h, [e, -0.4375 * w, w, e]);
            return;
        }
        let p = 0.5 * (ma - md);
        let disc = p * p + mb * mc;
        if disc >= 0.0 {
            let den = p + p.signum() * disc.sqrt();
            let sigma = if den != 0.0 { md - mb * mc / den } else { md };
            self.single_shift(l, h, sigma);
        } else {
            self.double_shift(l, h, [ma, mb, mc, md]);
        }
    }

    /// Single-shift sweep with real shift σ: Givens rotations chase the bulge.
    fn single_shift(&mut self, l: usize, h: usize, sigma: f64) {
        let x = self.h[(l, l)] - sigma * self.t[(l, l)];
        let y = self.h[(l + 1, l)];
        for k in l..h {
            let (c, s) = if k == l {
                givens(x, y)
            } else {
                givens(self.h[(k, k - 1)], self.h[(k + 1, k - 1)])
            };
            self.rot_rows(k, c, s, if k == l { l } else { k - 1 }, k);
            if k > l {
                self.h[(k + 1, k - 1)] = 0.0;
            }
            let (c, s) = givens(self.t[(k + 1, k + 1)], self.t[(k + 1, k)]);
            self.rot_cols(k, c, s, (k + 2).min(h) + 1, k + 2);
            self.t[(k + 1, k)] = 0.0;
        }
    }

    /// Double-shift sweep with the shifts = eigenvalues of `m = [[a, b], [c, d]]`.
    fn double_shift(&mut self, l: usize, h: usize, m: [f64; 4]) {
        let [a, b, c, d] = m;
        // First column of (M − λ₁)(M − λ₂) with M = H T⁻¹ (only 3 entries are nonzero).
        let m11 = self.h[(l, l)] / self.t[(l, l)];
        let m21 = self.h[(l + 1, l)] / self.t[(l, l)];
        let m12 = (self.h[(l, l + 1)] - m11 * self.t[(l, l + 1)]) / self.t[(l + 1, l + 1)];
        let m22 = (self.h[(l + 1, l + 1)] - m21 * self.t[(l, l + 1)]) / self.t[(l + 1, l + 1)];
        let m32 = self.h[(l + 2, l + 1)] / self.t[(l + 1, l + 1)];
        let mut x = (m11 - a) * (m11 - d) - b * c + m12 * m21;
        let mut y = m21 * ((m11 - a) + (m22 - d));
        let mut z = m21 * m32;
        let scale = x.abs() + y.abs() + z.abs();
        if scale > 0.0 && scale.is_finite() {
            x /= scale;
            y /= scale;
            z /= scale;
        }
        for k in l..=h - 2 {
            if k > l {
                x = self.h[(k, k - 1)];
                y = self.h[(k + 1, k - 1)];
                z = self.h[(k + 2, k - 1)];
            }
            let (v, tau, _) = householder(&[x, y, z]);
            self.refl_rows(k, &v, tau, if k > l { k - 1 } else { l }, k);
            if k > l {
                self.h[(k + 1, k - 1)] = 0.0;
                self.h[(k + 2, k - 1)] = 0.0;
            }
            let hr = (k + 3).min(h) + 1;
            // Row k+2 of T: annihilate T(k+2, k), T(k+2, k+1) against T(k+2, k+2).
            let (vr, tau2, _) = householder(&[
                self.t[(k + 2, k + 2)],
                self.t[(k + 2, k + 1)],
                self.t[(k + 2, k)],
            ]);
            let v2 = [vr[2], vr[1], vr[0]];
            self.refl_cols(k, &v2, tau2, hr, k + 3);
            self.t[(k + 2, k)] = 0.0;
            self.t[(k + 2, k + 1)] = 0.0;
            let (c, s) = givens(self.t[(k + 1, k + 1)], self.t[(k + 1, k)]);
            self.rot_cols(k, c, s, hr, k + 2);
            self.t[(k + 1, k)] = 0.0;
        }
        let (c, s) = givens(self.h[(h - 1, h - 2)], self.h[(h, h - 2)]);
        self.rot_rows(h - 1, c, s, h - 2, h - 1);
        self.h[(h, h - 2)] = 0.0;
        let (c, s) = givens(self.t[(h, h)], self.t[(h, h - 1)]);
        self.rot_cols(h - 1, c, s, h + 1, h + 1);
        self.t[(h, h - 1)] = 0.0;
    }
}

#[cfg(test)]
mod tests;
