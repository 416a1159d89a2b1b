//! Diagonal scaling of the system matrix before rank decisions.
//!
//! A change of state units `x = S z`, `S` diagonal, does not change what is controllable or
//! observable, yet the staircase's rank thresholds, relative to `‖[A B]‖`, see a badly
//! scaled model as nearly rank deficient: the ones on the sub-diagonal of a companion form
//! with coefficients near 1e9 sit below `√ε·1e9`. Balancing the system matrix first makes
//! every decision independent of the units the model was written in. The scaling is that of
//! Parlett & Reinsch 1969, "Balancing a matrix for calculation of eigenvalues and
//! eigenvectors", Numer. Math. 13, here applied to the system matrix `[[A, B], [C, 0]]`
//! (the kind of system balancing used before staircase reductions in the literature on
//! Van Dooren's and Varga's algorithms; the adaptation to a rectangular system matrix, with
//! signal weights and the rule for one-sided states below, is this crate's own).
//!
//! Scalings are powers of two, so applying and undoing them is exact.

use crate::numeric::linalg::kernels;
use nalgebra::DMatrix;

/// Sweep cap of the balancing iteration; a sweep that changes something lowers the sum of
/// squared row and column norms by at least 5 % of one term, so real models settle in a
/// handful of sweeps (the cap only guards against a cycle caused by rounding).
const MAX_SWEEPS: usize = 100;

/// Power-of-two scalings of a model's states, inputs and outputs.
///
/// The scaled model is `(S⁻¹ A S, S⁻¹ B E, F C S)` with `S = diag(state)`,
/// `E = diag(input)`, `F = diag(output)`. `S` alone is a similarity (same input–output
/// behaviour); `E` and `F` only rescale the signals, which leaves controllability,
/// observability and the controllable and unobservable subspaces unchanged, so a rank
/// decision may use them and undo them afterwards.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct SystemScaling {
    /// `S`: old state `x = S z`.
    pub(crate) state: Vec<f64>,
    /// `E`: input column weights.
    pub(crate) input: Vec<f64>,
    /// `F`: output row weights.
    pub(crate) output: Vec<f64>,
}

impl SystemScaling {
    /// `(S⁻¹ A S, S⁻¹ B E, F C S)`.
    pub(crate) fn apply(
        &self,
        a: &DMatrix<f64>,
        b: &DMatrix<f64>,
        c: &DMatrix<f64>,
    ) -> (DMatrix<f64>, DMatrix<f64>, DMatrix<f64>) {
        let s = &self.state;
        let a = DMatrix::from_fn(a.nrows(), a.ncols(), |i, j| a[(i, j)] * s[j] / s[i]);
        let b = DMatrix::from_fn(b.nrows(), b.ncols(), |i, j| {
            b[(i, j)] * self.input[j] / s[i]
        });
        let c = DMatrix::from_fn(c.nrows(), c.ncols(), |i, j| {
            c[(i, j)] * self.output[i] * s[j]
        });
        (a, b, c)
    }

    /// `(S⁻¹ A S, S⁻¹ B, C S)`: the similarity alone (same transfer function).
    pub(crate) fn apply_state(
        &self,
        a: &DMatrix<f64>,
        b: &DMatrix<f64>,
        c: &DMatrix<f64>,
    ) -> (DMatrix<f64>, DMatrix<f64>, DMatrix<f64>) {
        SystemScaling {
            state: self.state.clone(),
            input: vec![1.0; b.ncols()],
            output: vec![1.0; c.nrows()],
        }
        .apply(a, b, c)
    }

    /// Undoes the signal weights on a reduced input matrix: `B̃ E⁻¹`.
    pub(crate) fn unweight_b(&self, b: &DMatrix<f64>) -> DMatrix<f64> {
        DMatrix::from_fn(b.nrows(), b.ncols(), |i, j| b[(i, j)] / self.input[j])
    }

    /// Undoes the signal weights on a reduced output matrix: `F⁻¹ C̃`.
    pub(crate) fn unweight_c(&self, c: &DMatrix<f64>) -> DMatrix<f64> {
        DMatrix::from_fn(c.nrows(), c.ncols(), |i, j| c[(i, j)] / self.output[i])
    }

    /// `S` as a matrix.
    pub(crate) fn state_matrix(&self) -> DMatrix<f64> {
        DMatrix::from_diagonal(&nalgebra::DVector::from_column_slice(&self.state))
    }
}

/// The nearest power of two to `x > 0` (finite); 1 otherwise.
fn pow2_near(x: f64) -> f64 {
    if !(x.is_finite() && x > 0.0) {
        return 1.0;
    }
    2f64.powi(x.log2().round() as i32)
}

/// Balances the system matrix `[[A, B], [C, 0]]` of checked, finite `(A, B, C)` by
/// power-of-two scalings (see [`SystemScaling`]).
///
/// Algorithm, in three steps on a copy scaled to largest entry 1 (exact):
/// 1. Parlett–Reinsch balancing of `A` alone (Parlett & Reinsch 1969, radix 2:
///    [`crate::numeric::linalg::kernels::balance_in_place`]).
/// 2. The typical size `τ = ‖A_offdiag‖_F/√n` of the balanced A (its diagonal, which a
///    diagonal similarity leaves alone, when A is diagonal; 1 for A = 0), and power-of-two
///    weights bringing every input column of `B` and output row of `C` to size τ (these
///    weights change no subspace).
/// 3. Sweeps of the same iteration on the system matrix with those weights fixed: state
///    i's column is column i of `[A; C]`, its row is row i of `[A B]`, both without `a_ii`;
///    its scale is the power of two that makes the two norms nearest, accepted when it
///    lowers their sum of squares by 5 %. A state whose row (or column) outside the diagonal
///    is zero — nothing feeds it (or it feeds nothing) — has no balance point; its column
///    (row) is brought to the size τ instead, so that a weak entry that only reflects the
///    state's units does not look like a rank drop.
///
/// Cost O(n(n + m + p)) per sweep.
pub(crate) fn balance_system(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    c: &DMatrix<f64>,
) -> SystemScaling {
    let (n, m, p) = (a.nrows(), b.ncols(), c.nrows());
    let mut sc = SystemScaling {
        state: vec![1.0; n],
        input: vec![1.0; m],
        output: vec![1.0; p],
    };
    if n == 0 {
        return sc;
    }
    let big = a
        .iter()
        .chain(b.iter())
        .chain(c.iter())
        .fold(0.0f64, |acc, v| acc.max(v.abs()));
    if big == 0.0 || !big.is_finite() {
        return sc;
    }
    let unit = pow2_near(big);
    let (mut wa, mut wb, mut wc) = (a / unit, b / unit, c / unit);
    // (1) A alone.
    let d = kernels::balance_in_place(&mut wa);
    for (i, &di) in d.iter().enumerate() {
        sc.state[i] = di;
        wb.row_mut(i).scale_mut(1.0 / di);
        wc.column_mut(i).scale_mut(di);
    }
    // (2) Typical size and signal weights.
    let off: f64 = (0..n)
        .flat_map(|j| (0..n).map(move |i| (i, j)))
        .filter(|(i, j)| i != j)
        .map(|(i, j)| wa[(i, j)] * wa[(i, j)])
        .sum();
    let tau = if off > 0.0 {
        (off / n as f64).sqrt()
    } else if wa.norm() > 0.0 {
        wa.norm() / (n as f64).sqrt()
    } else {
        1.0
    };
    for j in 0..m {
        let f = pow2_near(tau / wb.column(j).norm());
        wb.column_mut(j).scale_mut(f);
        sc.input[j] = f;
    }
    for i in 0..p {
        let f = pow2_near(tau / wc.row(i).norm());
        wc.row_mut(i).scale_mut(f);
        sc.output[i] = f;
    }
    // (3) The system matrix with fixed signal weights.
    for _ in 0..MAX_SWEEPS {
        let mut changed = false;
        for i in 0..n {
            let aii = wa[(i, i)];
            let col2 = wa.column(i).norm_squared() - aii * aii + wc.column(i).norm_squared();
            let row2 = wa.row(i).norm_squared() - aii * aii + wb.row(i).norm_squared();
            let (col, row) = (col2.max(0.0).sqrt(), row2.max(0.0).sqrt());
            let f = if col > 0.0 && row > 0.0 {
                // Column i scales by f, row i by 1/f: balanced at f ≈ √(row/col).
                let f = pow2_near((row / col).sqrt());
                let (cn, rn) = (col * f, row / f);
                if cn * cn + rn * rn >= 0.95 * (col2 + row2) {
                    1.0
                } else {
                    f
                }
            } else if col > 0.0 {
                // Nothing feeds it: its column alone to the typical size.
                far_from_one(pow2_near(tau / col))
            } else if row > 0.0 {
                // It feeds nothing: its row alone to the typical size.
                far_from_one(pow2_near(row / tau))
            } else {
                1.0
            };
            if f != 1.0 {
                changed = true;
                sc.state[i] *= f;
                wa.column_mut(i).scale_mut(f);
                wa.row_mut(i).scale_mut(1.0 / f);
                wa[(i, i)] = aii;
                wc.column_mut(i).scale_mut(f);
                wb.row_mut(i).scale_mut(1.0 / f);
            }
        }
        if !changed {
            break;
        }
    }
    sc
}

/// `f` when it is at least a factor 4 away from 1, else 1 (no churn for one-sided states).
fn far_from_one(f: f64) -> f64 {
    if f.log2().abs() >= 2.0 {
        f
    } else {
        1.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn companion_form_of_a_fast_low_pass_is_balanced() {
        // 1e9/(s³ + 2e3 s² + 2e6 s + 1e9): the companion form's unit sub-diagonal sits nine
        // decades below its first row; after balancing every off-diagonal entry is within a
        // small factor of ωc = 1e3 (the exact scaling diag(1e6, 1e3, 1) makes them all
        // multiples of ωc: derivation).
        let a = DMatrix::from_row_slice(3, 3, &[-2e3, -2e6, -1e9, 1.0, 0.0, 0.0, 0.0, 1.0, 0.0]);
        let b = DMatrix::from_column_slice(3, 1, &[1.0, 0.0, 0.0]);
        let c = DMatrix::from_row_slice(1, 3, &[0.0, 0.0, 1e9]);
        let sc = balance_system(&a, &b, &c);
        let (ab, bb, cb) = sc.apply(&a, &b, &c);
        for v in ab.iter().chain(bb.iter()).chain(cb.iter()) {
            assert!(
                *v == 0.0 || (v.abs() > 1e1 && v.abs() < 1e5),
                "{ab} {bb} {cb}"
            );
        }
        // Powers of two only: exact round trip.
        for s in &sc.state {
            assert_eq!(s.log2().fract(), 0.0);
        }
        let back = DMatrix::from_fn(3, 3, |i, j| ab[(i, j)] * sc.state[i] / sc.state[j]);
        assert_eq!(back, a);
    }

    #[test]
    fn a_decoupled_state_with_a_tiny_input_entry_is_weighted_up() {
        // A = diag(−1, −2), B = [1; 1e-10]: the scaling x₂ = 1e-10·z₂ gives B = [1; 1]
        // (a similarity), so the second state is as controllable as the first.
        let a = DMatrix::from_row_slice(2, 2, &[-1.0, 0.0, 0.0, -2.0]);
        let b = DMatrix::from_column_slice(2, 1, &[1.0, 1e-10]);
        let c = DMatrix::zeros(0, 2);
        let sc = balance_system(&a, &b, &c);
        let (_, bb, _) = sc.apply(&a, &b, &c);
        assert!(bb[(1, 0)].abs() > 0.1 * bb[(0, 0)].abs(), "{bb}");
    }
}
