//! Real Schur decomposition `A = Q T Qᵀ` in standard form, and its reordering.
//!
//! `Q` is orthogonal and `T` quasi-upper-triangular: 1×1 blocks hold real eigenvalues and
//! 2×2 blocks hold complex conjugate pairs. Every 2×2 block is kept in *standard form*
//! `[a b; c a]` with `b·c < 0`, so that the pair is `a ± i·√(|b|·|c|)` and can be read off
//! without rounding asymmetry.
//!
//! References:
//! - Francis 1961/62, "The QR transformation: a unitary analogue to the LR transformation"
//!   (the implicit double-shift QR iteration), with the deflation criterion of Ahues &
//!   Tisseur 1997, "A new deflation criterion for the QR algorithm" (LAPACK Working Note
//!   122), organised as in LAPACK's `dlahqr`.
//! - Bai & Demmel 1993, "On swapping diagonal blocks in real Schur form" (reordering).
//! - The 2×2 standardisation follows the method of LAPACK's `dlanv2`; the swaps follow its
//!   `dlaexc`/`dtrsen`.

use super::reflector::{larfg, sign};
use crate::numeric::check;
use crate::numeric::error::{NumError, NumResult};
use nalgebra::{Complex, DMatrix};
use std::ops::Range;

mod francis;
mod reorder;
mod standard;
use francis::*;
use reorder::*;
use standard::*;

/// Iteration cap of the QR iteration behind [`RealSchur::with_params`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SchurParams {
    /// Double-shift QR sweeps allowed for each deflation, per row: the iteration gives up
    /// after `iterations_per_row · max(n, 10)` sweeps without splitting off a 1×1 or 2×2
    /// block (typically two to four sweeps suffice, so the default 30 is far above need).
    pub iterations_per_row: usize,
}

impl Default for SchurParams {
    fn default() -> Self {
        SchurParams {
            iterations_per_row: 30,
        }
    }
}

/// A real Schur decomposition `A = Q T Qᵀ` with every 2×2 block of `T` in standard form.
#[derive(Debug, Clone, PartialEq)]
pub struct RealSchur {
    /// The orthogonal factor `Q` (n×n).
    pub q: DMatrix<f64>,
    /// The quasi-upper-triangular factor `T` (n×n); entries below its 1×1/2×2 diagonal
    /// blocks are exactly zero.
    pub t: DMatrix<f64>,
}

impl RealSchur {
    /// Real Schur decomposition `A = Q T Qᵀ` with the default [`SchurParams`].
    ///
    /// See [`RealSchur::with_params`] for the method, cost and references.
    pub fn new(a: &DMatrix<f64>) -> NumResult<RealSchur> {
        RealSchur::with_params(a, &SchurParams::default())
    }

    /// Real Schur decomposition `A = Q T Qᵀ`: `Q` orthogonal, `T` quasi-upper-triangular with
    /// every 2×2 block in standard form `[a b; c a]`, `b·c < 0` (a block whose eigenvalues
    /// are real is split into two 1×1 blocks).
    ///
    /// Algorithm: Householder reduction to Hessenberg form (nalgebra's `Hessenberg`), then the
    /// Francis implicit double-shift QR iteration (Francis 1961/62, "The QR transformation")
    /// organised as in LAPACK's `dlahqr`: a subdiagonal entry is neglected by the criterion of
    /// Ahues & Tisseur 1997 ("A new deflation criterion for the QR algorithm", LAPACK Working
    /// Note 122), exceptional shifts are used after 10 and 20 sweeps without deflation, and
    /// each 2×2 block that splits off is standardised by a plane rotation computed by the
    /// method of LAPACK's `dlanv2`, applied consistently to `T` and `Q`. (nalgebra's own
    /// Schur iteration is not used: its stricter deflation test and lack of exceptional
    /// shifts make it stall on clustered eigenvalues and on cyclic permutations.) Matrices
    /// with entries beyond 2^±500 are first scaled by an exact power of two.
    ///
    /// Cost: about 25·n³ flops. Tolerance: the factors are backward stable,
    /// `‖A − Q T Qᵀ‖ ≈ c·n·ε·‖A‖`, `‖QᵀQ − I‖ ≈ c·n·ε`.
    ///
    /// Errors: [`NumError::NotSquare`], [`NumError::NotFinite`] on bad input,
    /// [`NumError::NoConvergence`] when a deflation needs more sweeps than
    /// [`SchurParams::iterations_per_row`] allows, and [`NumError::InvalidArgument`] when the
    /// entries are so large that `T` overflows.
    pub fn with_params(a: &DMatrix<f64>, params: &SchurParams) -> NumResult<RealSchur> {
        let n = check::finite_square("A", a)?;
        if n == 0 {
            return Ok(RealSchur {
                q: DMatrix::zeros(0, 0),
                t: DMatrix::zeros(0, 0),
            });
        }
        if n == 1 {
            return Ok(RealSchur {
                q: DMatrix::identity(1, 1),
                t: a.clone(),
            });
        }
        let (work, scale) = scaled_into_safe_range(a);
        let (mut q, mut t) = nalgebra::linalg::Hessenberg::new(work).unpack();
        let itmax = params.iterations_per_row.max(1).saturating_mul(n.max(10));
        francis_qr(&mut t, &mut q, itmax, true).map_err(|e| francis_error(e, itmax))?;
        clean_below_quasi_diagonal(&mut t);
        if let Err((i, j)) = quasi_triangular(&t) {
            return Err(NumError::NoConvergence {
                what: format!("real Schur decomposition (undeflated entry at ({i}, {j}))"),
                iterations: itmax,
            });
        }
        standardize_all(&mut t, &mut q);
        if scale != 1.0 {
            t *= scale;
        }
        if check::finite("T", &t).is_err() || check::finite("Q", &q).is_err() {
            return Err(NumError::invalid(
                "A",
                "entries too large: the Schur factor overflows; scale the matrix down",
            ));
        }
        Ok(RealSchur { q, t })
    }

    /// The eigenvalues of `A` in the order of the diagonal blocks of its Schur form (as
    /// [`RealSchur::eigenvalues`] of [`RealSchur::new`] would give, up to rounding),
    /// without forming `Q` or the off-diagonal part of `T`.
    ///
    /// Algorithm: as [`RealSchur::with_params`] with the default parameters, but the
    /// Hessenberg reduction does not accumulate its orthogonal factor and each QR sweep
    /// updates only the active diagonal window (LAPACK's `dlahqr` with `WANTT = WANTZ =
    /// false`); each 2×2 block left at the end is read by the `dlanv2` standardisation.
    ///
    /// Cost: about 10·n³ flops (Hessenberg 10/3·n³ plus the windowed sweeps), against
    /// 25·n³ for the full decomposition.
    ///
    /// Errors: as [`RealSchur::with_params`].
    pub fn eigenvalues_only(a: &DMatrix<f64>) -> NumResult<Vec<Complex<f64>>> {
        let n = check::finite_square("A", a)?;
        if n <= 1 {
            return Ok(a.iter().map(|&x| Complex::new(x, 0.0)).collect());
        }
        let (work, scale) = scaled_into_safe_range(a);
        let mut t = nalgebra::linalg::Hessenberg::new(work).unpack_h();
        let mut none = DMatrix::zeros(0, 0);
        let itmax = SchurParams::default()
            .iterations_per_row
            .saturating_mul(n.max(10));
        francis_qr(&mut t, &mut none, itmax, false).map_err(|e| francis_error(e, itmax))?;
        let mut out = Vec::with_capacity(n);
        let mut k = 0;
        while k < n {
            if k + 1 < n && t[(k + 1, k)] != 0.0 {
                if k + 2 < n && t[(k + 2, k + 1)] != 0.0 {
                    return Err(NumError::NoConvergence {
                        what: format!(
                            "real Schur decomposition (undeflated entry at ({}, {}))",
                            k + 2,
                            k + 1
                        ),
                        iterations: itmax,
                    });
                }
                let s = lanv2(t[(k, k)], t[(k, k + 1)], t[(k + 1, k)], t[(k + 1, k + 1)]);
                out.push(s.rt1 * scale);
                out.push(s.rt2 * scale);
                k += 2;
            } else {
                out.push(Complex::new(t[(k, k)] * scale, 0.0));
                k += 1;
            }
        }
        if out.iter().any(|z| !z.re.is_finite() || !z.im.is_finite()) {
            return Err(NumError::invalid(
                "A",
                "entries too large: the Schur factor overflows; scale the matrix down",
            ));
        }
        Ok(out)
    }

    /// The eigenvalues in the order of the diagonal blocks of `T`: a 1×1 block gives its
    /// entry, a standard 2×2 block `[a b; c a]` gives `a + i·√(|b|·|c|)` then its exact
    /// conjugate. Cost O(n).
    pub fn eigenvalues(&self) -> Vec<Complex<f64>> {
        let t = &self.t;
        let mut out = Vec::with_capacity(t.nrows());
        for (k, size) in self.blocks() {
            let (z1, z2) = block_eigenvalues(t, k, size);
            out.push(z1);
            if size == 2 {
                out.push(z2);
            }
        }
        out
    }

    /// The diagonal blocks of `T` as `(start, size)` with size 1 or 2, top to bottom
    /// ([`diagonal_blocks`]). Cost O(n).
    pub fn blocks(&self) -> Vec<(usize, usize)> {
        diagonal_blocks(&self.t)
    }

    /// Reorders the decomposition so that every selected eigenvalue lies in the leading
    /// block `T[0..m, 0..m]`, keeping `A = Q T Qᵀ`; returns `m`, the number of selected
    /// eigenvalues. Then the first `m` columns of `Q` span the invariant subspace of the
    /// selected eigenvalues (e.g. the stable subspace of a Hamiltonian for a Riccati
    /// solver). A complex pair is selected when `select` is true for either member, and
    /// moves as one block; the relative order of the selected blocks is kept.
    ///
    /// Algorithm: adjacent 1×1/2×2 diagonal blocks are swapped by the direct method of Bai &
    /// Demmel 1993, "On swapping diagonal blocks in real Schur form" (as in LAPACK's
    /// `dlaexc`/`dtrsen`): solve the small Sylvester equation `T₁₁X − XT₂₂ = γT₁₂`
    /// (Gaussian elimination with complete pivoting, tiny pivots raised to ε·‖T‖ and γ ≤ 1
    /// chosen against overflow), take the orthogonal factor of the QR factorisation of
    /// `[−X; γI]`, and apply it. Each swap is tested before it is accepted: the entries that
    /// must vanish (and a moved 1×1 eigenvalue) must agree within `10·ε·max|D|` for the
    /// swapped block `D` (the test of Bai & Demmel), and the block rebuilt from the zeroed
    /// result must reproduce `D` within `20·ε·‖D‖_F`. Swapped 2×2 blocks are re-standardised.
    ///
    /// Cost: O(n) flops per unit of distance moved per row, at most about 6·n·k² for k
    /// selected eigenvalues moved past the others.
    ///
    /// Errors: [`NumError::ShapeMismatch`], [`NumError::NotFinite`] or
    /// [`NumError::InvalidArgument`] when the fields do not form a real Schur
    /// decomposition; [`NumError::NoSolution`] when a swap fails its stability test (the
    /// eigenvalues of two neighbouring blocks are too close to separate). After an error
    /// `Q` and `T` are still a valid (partially reordered) decomposition of `A`.
    pub fn reorder(&mut self, select: impl Fn(Complex<f64>) -> bool) -> NumResult<usize> {
        let n = check::square("T", &self.t)?;
        check::dims("Q", &self.q, n, n)?;
        check::finite("T", &self.t)?;
        check::finite("Q", &self.q)?;
        if let Err((i, j)) = quasi_triangular(&self.t) {
            return Err(NumError::invalid(
                "T",
                format!("expected a quasi-upper-triangular matrix, found a non-zero entry at ({i}, {j})"),
            ));
        }
        standardize_all(&mut self.t, &mut self.q);
        let mut ks = 0;
        let mut k = 0;
        while k < n {
            let nb = if k + 1 < n && self.t[(k + 1, k)] != 0.0 {
                2
            } else {
                1
            };
            let chosen = if nb == 1 {
                select(Complex::new(self.t[(k, k)], 0.0))
            } else {
                let t = &self.t;
                let s = lanv2(t[(k, k)], t[(k, k + 1)], t[(k + 1, k)], t[(k + 1, k + 1)]);
                select(s.rt1) || select(s.rt2)
            };
            if chosen {
                if k != ks {
                    move_block(&mut self.t, &mut self.q, k, nb, ks).map_err(|r| {
                        NumError::no_solution(
                            "Schur reordering",
                            format!(
                                "swapping the diagonal blocks at rows {} and {} failed the \
                                 stability test (error {:.2e}, threshold {:.2e}): their \
                                 eigenvalues are too close to separate reliably",
                                r.row, r.second, r.error, r.threshold
                            ),
                        )
                    })?;
                }
                ks += nb;
            }
            k += nb;
        }
        Ok(ks)
    }
}

/// The diagonal blocks of an upper quasi-triangular `t` as `(start, size)`, size 1 or 2,
/// top to bottom: a block of size 2 starts where the subdiagonal entry is non-zero. The one
/// block listing of the crate (Schur, Lyapunov, Sylvester, logm, modal forms). Cost O(n).
pub(crate) fn diagonal_blocks(t: &DMatrix<f64>) -> Vec<(usize, usize)> {
    let n = t.nrows().min(t.ncols());
    let mut out = Vec::new();
    let mut k = 0;
    while k < n {
        if k + 1 < n && t[(k + 1, k)] != 0.0 {
            out.push((k, 2));
            k += 2;
        } else {
            out.push((k, 1));
            k += 1;
        }
    }
    out
}

/// [`diagonal_blocks`] of a matrix that must be in real Schur form: fails with
/// [`NumError::NoConvergence`] when two consecutive subdiagonal entries are non-zero (a
/// diagonal block larger than 2×2 remained).
pub(crate) fn quasi_blocks(t: &DMatrix<f64>) -> NumResult<Vec<(usize, usize)>> {
    let blocks = diagonal_blocks(t);
    let n = t.nrows().min(t.ncols());
    if blocks
        .iter()
        .any(|&(k, size)| size == 2 && k + 2 < n && t[(k + 2, k + 1)] != 0.0)
    {
        return Err(NumError::NoConvergence {
            what: "real Schur decomposition (a diagonal block larger than 2×2 remained)"
                .to_string(),
            iterations: 0,
        });
    }
    Ok(blocks)
}

/// The eigenvalues of the diagonal block of `t` at `(start, size)`: the entry of a 1×1
/// block; for a 2×2 block the pair of its standard form ([`lanv2`], LAPACK's `dlanv2`,
/// computed without overflow), the one with non-negative imaginary part first.
pub(crate) fn block_eigenvalues(
    t: &DMatrix<f64>,
    start: usize,
    size: usize,
) -> (Complex<f64>, Complex<f64>) {
    let k = start;
    if size == 1 {
        let z = Complex::new(t[(k, k)], 0.0);
        return (z, z);
    }
    let s = lanv2(t[(k, k)], t[(k, k + 1)], t[(k + 1, k)], t[(k + 1, k + 1)]);
    (s.rt1, s.rt2)
}

/// One eigenvalue of the diagonal block at `(start, size)`: the first of
/// [`block_eigenvalues`] (for a complex pair, the member with positive imaginary part).
pub(crate) fn block_eigenvalue(t: &DMatrix<f64>, start: usize, size: usize) -> Complex<f64> {
    block_eigenvalues(t, start, size).0
}

/// The error of a QR iteration that stopped: cancelled (`None`) or out of iterations at
/// `row`.
fn francis_error(stop: Option<usize>, itmax: usize) -> NumError {
    match stop {
        None => NumError::Cancelled {
            what: "real Schur decomposition".into(),
        },
        Some(row) => NumError::NoConvergence {
            what: format!("real Schur decomposition (QR iteration at row {row})"),
            iterations: itmax,
        },
    }
}

#[cfg(test)]
mod tests;
