//! Safe dense building blocks: singular values and the SVD (`dense/singular.rs`), rank, norm,
//! condition, determinant, inverse, linear solves, Hessenberg reduction, block assembly,
//! grids and approximate comparison.
//!
//! Every routine checks shapes and finiteness before it reaches nalgebra, whose operators
//! panic on shape mismatch and whose SVD panics on empty matrices. Singularity is judged by
//! the singular values (nalgebra's `try_inverse` accepts exactly singular matrices).

use crate::numeric::check;
use crate::numeric::error::{NumError, NumResult};
use crate::numeric::linalg::kernels;
use nalgebra::{Complex, DMatrix, DVector};

mod singular;
pub use singular::{singular_values, svd, svd_factors, verified_svd, FullSvd, Svd};

/// Largest number of points [`linear_grid`] and [`log_grid`] will allocate.
pub const MAX_GRID_POINTS: usize = 10_000_000;

/// The exponent e with 2^e the power of two at or below the largest |entry| of `a` (0 for a
/// zero matrix).
///
/// Scaling by 2^−e is exact (barring subnormal results) and keeps nalgebra's sums of
/// squares from overflowing or underflowing; every routine here that scales multiplies the
/// scale back exactly.
pub(crate) fn scale_exponent(a: &DMatrix<f64>) -> i32 {
    let amax = a.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    if amax == 0.0 || !amax.is_finite() {
        return 0;
    }
    amax.log2().floor() as i32
}

/// x·2^e without intermediate overflow or underflow of the factor (two steps).
pub(crate) fn times_pow2(x: f64, e: i32) -> f64 {
    let (f1, f2) = pow2_factors(e);
    x * f1 * f2
}

/// The two factors (2^⌊e/2⌋, 2^(e−⌊e/2⌋)) of [`times_pow2`], for scaling many entries
/// by the same power of two: `x * f1 * f2` gives the same result.
pub(crate) fn pow2_factors(e: i32) -> (f64, f64) {
    let half = e / 2;
    (2f64.powi(half), 2f64.powi(e - half))
}

/// A diagonal block of a quasi-triangular matrix: first index and size (1 or 2).
#[derive(Debug, Clone, Copy)]
pub(crate) struct Block {
    /// First row/column of the block.
    pub start: usize,
    /// 1 or 2.
    pub size: usize,
}

/// Real Schur form A = Q T Qᵀ with every 2×2 diagonal block of T holding a complex pair
/// (blocks with real eigenvalues are split by a rotation) and T zero below its blocks.
pub(crate) fn real_schur(a: &DMatrix<f64>) -> NumResult<(DMatrix<f64>, DMatrix<f64>, Vec<Block>)> {
    // One Schur path for the whole crate: the project's own Francis iteration with
    // standardised blocks (nalgebra's iteration stalls on cyclic matrices such as the
    // companion matrix of s⁸ − 1).
    let s = super::schur::RealSchur::new(a)?;
    let blocks = s
        .blocks()
        .into_iter()
        .map(|(start, size)| Block { start, size })
        .collect();
    Ok((s.q, s.t, blocks))
}

/// Eigenvalues of a finite square matrix from its real Schur form (after optional
/// balancing), with complex ones in exact conjugate pairs θ ± iμ, in block order.
pub(crate) fn schur_eigenvalues(a: &DMatrix<f64>, balance: bool) -> NumResult<Vec<Complex<f64>>> {
    let work = if balance {
        balance_reducing_norm(a).map(|(b, _)| b)
    } else {
        None
    };
    let (_, t, blocks) = real_schur(work.as_ref().unwrap_or(a))?;
    let mut out = Vec::with_capacity(a.nrows());
    for b in blocks {
        let z = super::schur::block_eigenvalue(&t, b.start, b.size);
        out.push(z);
        if b.size == 2 {
            out.push(z.conj());
        }
    }
    Ok(out)
}

/// Parlett–Reinsch balancing B = D⁻¹AD (D a power-of-two diagonal, so exact), returned
/// only when it lowers ‖·‖₁; `None` otherwise or for n < 2. `a` must be finite and square.
///
/// Balancing runs on a power-of-two scaled copy so that its row and column norms cannot
/// overflow (nalgebra's loop would not terminate on infinite norms). Parlett & Reinsch
/// 1969, "Balancing a matrix for calculation of eigenvalues and eigenvectors".
pub(crate) fn balance_reducing_norm(a: &DMatrix<f64>) -> Option<(DMatrix<f64>, DVector<f64>)> {
    if a.nrows() < 2 || a.nrows() != a.ncols() {
        return None;
    }
    // Squares of entries within 2^±400 neither overflow nor underflow: no scaling needed.
    let amax = kernels::max_abs(a.as_slice());
    let e = if (2f64.powi(-400)..=2f64.powi(400)).contains(&amax) {
        0
    } else {
        scale_exponent(a)
    };
    let mut b = if e == 0 {
        a.clone()
    } else {
        let (down1, down2) = pow2_factors(-e);
        a.map(|v| v * down1 * down2)
    };
    let d = kernels::balance_in_place(&mut b);
    if d.iter().all(|v| *v == 1.0) {
        return None; // nothing to balance
    }
    if e != 0 {
        let (up1, up2) = pow2_factors(e);
        b.apply(|v| *v = *v * up1 * up2);
    }
    if kernels::all_finite(b.as_slice()) && kernels::one_norm(&b) < kernels::one_norm(a) {
        Some((b, DVector::from_vec(d)))
    } else {
        None
    }
}

/// ‖D⁻¹AD‖_F of the Parlett–Reinsch balanced matrix (‖A‖_F when balancing does not help):
/// the scale of the rounding errors of A's computed eigenvalues, independent of the units
/// of the states. `a` must be finite and square.
pub(crate) fn balanced_frobenius_norm(a: &DMatrix<f64>) -> f64 {
    match balance_reducing_norm(a) {
        Some((b, _)) => frobenius_norm(&b),
        None => frobenius_norm(a),
    }
}

/// Undoes [`balance_reducing_norm`] on a function value: returns D F D⁻¹.
pub(crate) fn unbalance(f: &mut DMatrix<f64>, d: &DVector<f64>) {
    let n = f.nrows();
    for j in 0..n {
        for i in 0..n {
            f[(i, j)] = f[(i, j)] * d[i] / d[j];
        }
    }
}

/// Frobenius norm ‖A‖_F computed without overflow or underflow of the squares (may still be
/// +∞ when the true norm exceeds the range).
pub(crate) fn frobenius_norm(a: &DMatrix<f64>) -> f64 {
    let e = scale_exponent(a);
    let scaled: f64 = a.iter().map(|v| times_pow2(*v, -e).powi(2)).sum();
    times_pow2(scaled.sqrt(), e)
}

/// Numerical rank: the number of singular values above `tol`.
///
/// Default tolerance max(r, c)·ε·σ₁ (the usual choice: singular values below it are
/// indistinguishable from rounding errors of a backward-stable SVD). An explicit `tol` is
/// an absolute threshold on σᵢ and must be finite and ≥ 0. Cost of [`singular_values`].
/// Empty matrices have rank 0.
pub fn rank(a: &DMatrix<f64>, tol: Option<f64>) -> NumResult<usize> {
    if let Some(t) = tol {
        if !t.is_finite() || t < 0.0 {
            return Err(NumError::invalid(
                "tolerance",
                format!("expected a finite number ≥ 0, found {t}"),
            ));
        }
    }
    let s = singular_values(a)?;
    let sigma1 = s.first().copied().unwrap_or(0.0);
    let tol = tol.unwrap_or(a.nrows().max(a.ncols()) as f64 * f64::EPSILON * sigma1);
    Ok(s.iter().filter(|&&v| v > tol).count())
}

/// Spectral norm ‖A‖₂ = σ₁, the largest singular value (0 for an empty matrix).
///
/// Computed from [`singular_values`]; relative accuracy of order ε.
pub fn norm2(a: &DMatrix<f64>) -> NumResult<f64> {
    Ok(singular_values(a)?.first().copied().unwrap_or(0.0))
}

/// 2-norm condition number κ₂(A) = σ₁/σₖ, k = min(r, c).
///
/// Defined for any shape (for a non-square matrix it is the condition of the least-squares
/// problem with that matrix, i.e. σ_max/σ_min over its min(r, c) singular values). Returns
/// `f64::INFINITY` when σₖ = 0 (including the zero matrix) and 1 for an empty matrix, which
/// has no singular values (by the convention that the empty map is perfectly conditioned).
/// Computed from [`singular_values`]; a computed σₖ carries an absolute error of order
/// ε·σ₁, so values of κ above about 1/ε only mean "numerically singular".
pub fn condition(a: &DMatrix<f64>) -> NumResult<f64> {
    let s = singular_values(a)?;
    match (s.first(), s.last()) {
        (Some(&first), Some(&last)) => Ok(if last == 0.0 {
            f64::INFINITY
        } else {
            first / last
        }),
        _ => Ok(1.0),
    }
}

/// Reciprocal 2-norm condition σₙ/σ₁ of a finite square matrix (1 for 0×0, 0 for the zero
/// matrix).
fn reciprocal_condition(a: &DMatrix<f64>) -> NumResult<f64> {
    NumError::deadline("condition estimate")?;
    let s = singular_values(a)?;
    match (s.first(), s.last()) {
        (Some(&first), Some(&last)) => Ok(if first == 0.0 { 0.0 } else { last / first }),
        _ => Ok(1.0),
    }
}

/// Refuses square `a` (n×n) whose reciprocal condition is below n·ε.
fn ensure_nonsingular(what: &str, a: &DMatrix<f64>) -> NumResult<()> {
    let n = a.nrows();
    let rcond = reciprocal_condition(a)?;
    if rcond < n as f64 * f64::EPSILON {
        return Err(NumError::Singular {
            what: what.to_string(),
            rcond,
        });
    }
    Ok(())
}

/// Determinant det(A) of a square matrix.
///
/// Algorithm: LU factorisation with partial pivoting, det = ±∏ uᵢᵢ (Golub & Van Loan 2013,
/// "Matrix Computations", 4th ed., ch. 3). Cost ⅔n³. The result is the determinant of a matrix
/// within a small relative backward error of A; it can over- or underflow for large n
/// even when A is well conditioned (the value is then ±∞ or 0, as floating point gives).
/// det of the 0×0 matrix is 1.
pub fn determinant(a: &DMatrix<f64>) -> NumResult<f64> {
    let n = check::finite_square("A", a)?;
    if n == 0 {
        return Ok(1.0);
    }
    NumError::deadline("determinant")?;
    Ok(a.clone().lu().determinant())
}

/// Inverse A⁻¹ of a square, numerically non-singular matrix.
///
/// Singularity test: the reciprocal 2-norm condition σₙ/σ₁ (from the singular values) must
/// be at least n·ε, otherwise [`NumError::Singular`] reports that figure (0 when A is
/// exactly singular). Then the inverse by LU with partial pivoting (Golub & Van Loan 2013,
/// "Matrix Computations", 4th ed., ch. 3). Cost about 2n³ for the inverse plus the singular values.
/// The relative error of the computed inverse is of order κ₂(A)·ε. Fails with
/// [`NumError::NoSolution`] if the inverse overflows.
pub fn inverse(a: &DMatrix<f64>) -> NumResult<DMatrix<f64>> {
    let n = check::finite_square("A", a)?;
    if n == 0 {
        return Ok(DMatrix::zeros(0, 0));
    }
    ensure_nonsingular("A", a)?;
    // Cancellation points between the phases (the singular values, the LU inverse), each
    // a few tenths of a second at most for the largest matrices a script can make.
    NumError::deadline("inverse")?;
    let inv = a.clone().lu().try_inverse().ok_or(NumError::Singular {
        what: "A".into(),
        rcond: 0.0,
    })?;
    check::finite("inverse", &inv).map_err(|_| {
        NumError::no_solution(
            "inverse of A",
            "the inverse overflows the floating-point range",
        )
    })?;
    Ok(inv)
}

/// Integer power Aᵏ of a square matrix: binary powering (repeated squaring, about
/// 2·log₂|k| products; Golub & Van Loan 2013, "Matrix Computations", 4th ed., § 9.2),
/// with A⁰ = I and, for k < 0, the power of [`inverse`]`(A)` (so a numerically singular A
/// is refused there). Fails with [`NumError::NoSolution`] when the power overflows.
pub fn power(a: &DMatrix<f64>, k: i64) -> NumResult<DMatrix<f64>> {
    let n = check::finite_square("A", a)?;
    let mut base = if k < 0 { inverse(a)? } else { a.clone() };
    let mut e = k.unsigned_abs();
    let mut out = DMatrix::identity(n, n);
    while e > 0 {
        NumError::deadline("matrix power")?;
        if e & 1 == 1 {
            out = &out * &base;
        }
        e >>= 1;
        if e > 0 {
            base = &base * &base;
        }
        if !out.iter().chain(base.iter()).all(|x| x.is_finite()) {
            return Err(NumError::no_solution(
                "matrix power",
                "the power overflows the floating-point range",
            ));
        }
    }
    Ok(out)
}

/// Solves A X = B for X, with A square (n×n) and B n×k.
///
/// Same singularity judgement as [`inverse`] (reciprocal condition σₙ/σ₁ ≥ n·ε, else
/// [`NumError::Singular`]); then LU with partial pivoting and forward/back substitution.
/// Cost ⅔n³ + 2n²k plus the singular values of A. The relative error of X is of order
/// κ₂(A)·ε. Shape errors name both shapes.
pub fn solve(a: &DMatrix<f64>, b: &DMatrix<f64>) -> NumResult<DMatrix<f64>> {
    let n = check::square("A", a)?;
    if b.nrows() != n {
        return Err(NumError::shape(
            "solve(A, B)",
            format!("B with {n} rows to match A ({})", check::shape_of(a)),
            format!("B {}", check::shape_of(b)),
        ));
    }
    check::finite("A", a)?;
    check::finite("B", b)?;
    if n == 0 || b.ncols() == 0 {
        return Ok(DMatrix::zeros(n, b.ncols()));
    }
    ensure_nonsingular("A", a)?;
    NumError::deadline("solve(A, B)")?;
    let x = a.clone().lu().solve(b).ok_or(NumError::Singular {
        what: "A".into(),
        rcond: 0.0,
    })?;
    check::finite("solution", &x).map_err(|_| {
        NumError::no_solution(
            "solve(A, B)",
            "the solution overflows the floating-point range",
        )
    })?;
    Ok(x)
}

/// Orthogonal Hessenberg reduction A = Q H Qᵀ: returns (Q, H) with Q orthogonal and H upper
/// Hessenberg (zero below the first subdiagonal).
///
/// Algorithm: n − 2 Householder reflections (Golub & Van Loan 2013, "Matrix
/// Computations", 4th ed., § 7.4), via nalgebra, after an exact power-of-two scaling. Cost about (10/3)n³ with Q.
/// Backward stable: Q H Qᵀ = A + E with ‖E‖ of order ε‖A‖. 0×0 gives two empty matrices.
pub fn hessenberg(a: &DMatrix<f64>) -> NumResult<(DMatrix<f64>, DMatrix<f64>)> {
    let n = check::finite_square("A", a)?;
    if n <= 2 {
        return Ok((DMatrix::identity(n, n), a.clone()));
    }
    let e = scale_exponent(a);
    let (q, mut h) = nalgebra::linalg::Hessenberg::new(a.map(|v| times_pow2(v, -e))).unpack();
    h.apply(|v| *v = times_pow2(*v, e));
    for j in 0..n {
        for i in (j + 2)..n {
            h[(i, j)] = 0.0;
        }
    }
    Ok((q, h))
}

/// Assembles a block matrix from rows of blocks: `rows[i][j]` is block (i, j).
///
/// Every row must hold the same number of blocks; all blocks of block row i must have the
/// same height and all blocks of block column j the same width. Empty blocks (0 rows or 0
/// columns) are allowed and take part in the checks like any other. A shape error names
/// the offending block by (row, col), 0-based. Values are copied as they are (no
/// finiteness check: assembly computes nothing). No rows gives the 0×0 matrix. Cost: one
/// copy of every entry.
pub fn block(rows: &[Vec<DMatrix<f64>>]) -> NumResult<DMatrix<f64>> {
    let Some(first) = rows.first() else {
        return Ok(DMatrix::zeros(0, 0));
    };
    let ncols = first.len();
    if ncols == 0 {
        return Err(NumError::invalid(
            "block row 0",
            "expected at least one block, found none",
        ));
    }
    let widths: Vec<usize> = first.iter().map(|m| m.ncols()).collect();
    let mut heights = Vec::with_capacity(rows.len());
    for (i, row) in rows.iter().enumerate() {
        if row.len() != ncols {
            return Err(NumError::shape(
                format!("block row {i}"),
                format!("{ncols} blocks like block row 0"),
                format!("{} blocks", row.len()),
            ));
        }
        let h = row[0].nrows();
        for (j, m) in row.iter().enumerate() {
            if m.nrows() != h {
                return Err(NumError::shape(
                    format!("block ({i}, {j})"),
                    format!("{h} rows like block ({i}, 0)"),
                    check::shape_of(m),
                ));
            }
            if m.ncols() != widths[j] {
                return Err(NumError::shape(
                    format!("block ({i}, {j})"),
                    format!("{} columns like block (0, {j})", widths[j]),
                    check::shape_of(m),
                ));
            }
        }
        heights.push(h);
    }
    let total_rows: usize = heights.iter().sum();
    let total_cols: usize = widths.iter().sum();
    let mut out = DMatrix::zeros(total_rows, total_cols);
    let mut r0 = 0;
    for (i, row) in rows.iter().enumerate() {
        let mut c0 = 0;
        for (j, m) in row.iter().enumerate() {
            out.view_mut((r0, c0), (heights[i], widths[j])).copy_from(m);
            c0 += widths[j];
        }
        r0 += heights[i];
    }
    Ok(out)
}

/// Checks the common arguments of the grids.
fn grid_count(low: f64, high: f64, count: usize) -> NumResult<()> {
    if !low.is_finite() {
        return Err(NumError::invalid(
            "low",
            format!("expected a finite number, found {low}"),
        ));
    }
    if !high.is_finite() {
        return Err(NumError::invalid(
            "high",
            format!("expected a finite number, found {high}"),
        ));
    }
    if count > MAX_GRID_POINTS {
        return Err(NumError::TooLarge {
            what: format!("a grid of {count} points"),
            limit: MAX_GRID_POINTS,
        });
    }
    if count == 0 || (count == 1 && low != high) {
        let why = if low == high {
            format!("expected at least 1 point, found {count}")
        } else {
            format!("expected at least 2 points (1 only when low equals high), found {count}")
        };
        return Err(NumError::invalid("count", why));
    }
    Ok(())
}

/// `count` equally spaced points from `low` to `high`, both ends included exactly.
///
/// xₖ = low + (k/(count−1))·(high − low) for 0 < k < count−1, with x₀ = low and the last
/// point = high exactly (the difference is formed as (1−t)·low + t·high when high − low
/// would overflow). `high < low` gives a descending grid. `count` must be ≥ 2, or 1 when
/// low == high (the grid is then that one point); at most [`MAX_GRID_POINTS`]. Cost
/// O(count); each interior point is within a few ulps of its exact value.
pub fn linear_grid(low: f64, high: f64, count: usize) -> NumResult<Vec<f64>> {
    grid_count(low, high, count)?;
    if count == 1 {
        return Ok(vec![low]);
    }
    let span = high - low;
    let last = (count - 1) as f64;
    let mut out: Vec<f64> = (0..count)
        .map(|k| {
            let t = k as f64 / last;
            if span.is_finite() {
                low + t * span
            } else {
                (1.0 - t) * low + t * high
            }
        })
        .collect();
    out[0] = low;
    out[count - 1] = high;
    Ok(out)
}

/// `count` logarithmically spaced points from `low` to `high` (the end values themselves,
/// not their logarithms), both ends included exactly.
///
/// xₖ = 10^(log₁₀ low + (k/(count−1))·(log₁₀ high − log₁₀ low)), with the first and last
/// point set to `low` and `high` exactly; decade ends give exact powers of ten in between
/// whenever the exponents are exact (log_grid(1, 1000, 4) = [1, 10, 100, 1000]). Both ends
/// must be finite and > 0; `high < low` gives a descending grid; `count` as for
/// [`linear_grid`]. Cost O(count); interior points carry a relative error of a few ulps
/// times |log₁₀ xₖ|.
pub fn log_grid(low: f64, high: f64, count: usize) -> NumResult<Vec<f64>> {
    grid_count(low, high, count)?;
    if low <= 0.0 {
        return Err(NumError::invalid(
            "low",
            format!("expected a number > 0, found {low}"),
        ));
    }
    if high <= 0.0 {
        return Err(NumError::invalid(
            "high",
            format!("expected a number > 0, found {high}"),
        ));
    }
    let exponents = linear_grid(low.log10(), high.log10(), count)?;
    let mut out: Vec<f64> = exponents.iter().map(|e| 10f64.powf(*e)).collect();
    out[0] = low;
    if let Some(last) = out.last_mut() {
        *last = high;
    }
    Ok(out)
}

/// Whether A and B agree entrywise: |aᵢⱼ − bᵢⱼ| ≤ tol·max(1, |aᵢⱼ|, |bᵢⱼ|) for every entry.
///
/// The test is mixed: absolute for entries of magnitude below 1, relative above. Matrices
/// of different shapes are not equal (`false`, no error). Entries equal as floating-point
/// numbers (including equal infinities) agree; NaN agrees with nothing. `tol` must be
/// finite and ≥ 0. Cost O(r·c).
pub fn approx_eq(a: &DMatrix<f64>, b: &DMatrix<f64>, tol: f64) -> NumResult<bool> {
    if !tol.is_finite() || tol < 0.0 {
        return Err(NumError::invalid(
            "tolerance",
            format!("expected a finite number ≥ 0, found {tol}"),
        ));
    }
    if a.shape() != b.shape() {
        return Ok(false);
    }
    Ok(a.iter()
        .zip(b.iter())
        .all(|(&x, &y)| x == y || (x - y).abs() <= tol * 1.0f64.max(x.abs()).max(y.abs())))
}

#[cfg(test)]
mod tests;
