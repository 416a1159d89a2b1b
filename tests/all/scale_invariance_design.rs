//! Scale invariance and honest accuracy of the matrix-equation and design routines
//! (issue 13: "no silently wrong answer"; NUMERICS.md § Scale invariance).
//!
//! Each check either compares with a closed form (derivation beside it) or with the same
//! problem in other state units: with `x = T z` (T diagonal) a model `(A, B)` becomes
//! `(T⁻¹AT, T⁻¹B)`; here the tests use the opposite convention `A' = T A T⁻¹`, `B' = T B`
//! (new state `T x`), for which the controllability Gramian transforms as `P' = T P Tᵀ`
//! (substitute into `A'P' + P'A'ᵀ + B'B'ᵀ = T(AP + PAᵀ + BBᵀ)Tᵀ`; likewise for the
//! discrete form).

use nalgebra::DMatrix;
use statebook::numeric::design::lyapunov::{solve_lyapunov, solve_lyapunov_discrete};
use statebook::numeric::error::NumError;
use statebook::numeric::linalg::sylvester::solve_sylvester;
use statebook::numeric::lti::balance::controllability_gramian;

fn rel(a: f64, b: f64) -> f64 {
    if a == b {
        0.0
    } else {
        (a - b).abs() / a.abs().max(b.abs())
    }
}

/// Entrywise relative agreement.
fn assert_entries(got: &DMatrix<f64>, want: &DMatrix<f64>, tol: f64, what: &str) {
    assert_eq!(got.shape(), want.shape(), "{what}: shape");
    for i in 0..got.nrows() {
        for j in 0..got.ncols() {
            let e = rel(got[(i, j)], want[(i, j)]);
            assert!(
                e <= tol,
                "{what}: entry ({i}, {j}) is {:e}, expected {:e} (relative error {e:e})",
                got[(i, j)],
                want[(i, j)]
            );
        }
    }
}

/// Diagonal scalings from 1e-3 to 1e3 on two states (both orders and mixed signs of the
/// exponents).
fn scalings_2() -> Vec<[f64; 2]> {
    let mut out = Vec::new();
    for &s1 in &[1e-3, 1e-1, 1.0, 1e1, 1e3] {
        for &s2 in &[1e-3, 1.0, 1e3] {
            out.push([s1, s2]);
        }
    }
    out
}

/// `T A T⁻¹`, `T B` for `T = diag(t)`.
fn rescale(a: &DMatrix<f64>, b: &DMatrix<f64>, t: &[f64]) -> (DMatrix<f64>, DMatrix<f64>) {
    let n = a.nrows();
    (
        DMatrix::from_fn(n, n, |i, j| t[i] * a[(i, j)] / t[j]),
        DMatrix::from_fn(n, b.ncols(), |i, j| t[i] * b[(i, j)]),
    )
}

/// `T X Tᵀ` for `T = diag(t)`.
fn congruence(x: &DMatrix<f64>, t: &[f64]) -> DMatrix<f64> {
    DMatrix::from_fn(x.nrows(), x.ncols(), |i, j| t[i] * x[(i, j)] * t[j])
}

/// Closed form of `A X + X Aᵀ + Q = 0` for upper-triangular 2×2 `A = [[a, c], [0, d]]`, by
/// back substitution on the entries (derived by hand): (2,2) `2d·x₂₂ + q₂₂ = 0`;
/// (1,2) `(a + d)·x₁₂ + c·x₂₂ + q₁₂ = 0`; (1,1) `2a·x₁₁ + 2c·x₁₂ + q₁₁ = 0`. For
/// `c = 0` it is `xᵢⱼ = −qᵢⱼ/(λᵢ + λⱼ)`.
fn lyapunov_2x2_upper(a: f64, c: f64, d: f64, q: &DMatrix<f64>) -> DMatrix<f64> {
    let x22 = -q[(1, 1)] / (2.0 * d);
    let x12 = -(q[(0, 1)] + c * x22) / (a + d);
    let x11 = -(q[(0, 0)] + 2.0 * c * x12) / (2.0 * a);
    DMatrix::from_row_slice(2, 2, &[x11, x12, x12, x22])
}

#[test]
fn issue13_stiff_diagonal_gramian_is_solved_at_every_scale() {
    // A = diag(−1e6, −1e-6), B = [1; 1]: Pᵢⱼ = bᵢbⱼ/(−(λᵢ + λⱼ)) (closed form above). The
    // slow pair has λ + λ = −2e-6, exact data; main refused it as "λᵢ + λⱼ ≈ 0".
    let (l1, l2) = (-1e6, -1e-6);
    let a = DMatrix::from_row_slice(2, 2, &[l1, 0.0, 0.0, l2]);
    let b = DMatrix::from_row_slice(2, 1, &[1.0, 1.0]);
    let want = DMatrix::from_row_slice(
        2,
        2,
        &[
            -1.0 / (2.0 * l1),
            -1.0 / (l1 + l2),
            -1.0 / (l1 + l2),
            -1.0 / (2.0 * l2),
        ],
    );
    for t in scalings_2() {
        let (at, bt) = rescale(&a, &b, &t);
        let p = controllability_gramian(&at, &bt, 0.0)
            .unwrap_or_else(|e| panic!("T = diag({t:?}): refused: {e}"));
        assert_entries(
            &p,
            &congruence(&want, &t),
            1e-12,
            &format!("T = diag({t:?})"),
        );
    }
    // The same through the general Sylvester solver: A X + X A = −B Bᵀ.
    let q = &b * b.transpose();
    let x = solve_sylvester(&a, &a, &(-&q)).expect("stiff Sylvester");
    assert_entries(&x, &want, 1e-12, "Sylvester A X + X A = −BBᵀ");
}

#[test]
fn stiff_coupled_gramian_matches_back_substitution_at_every_scale() {
    // A = [[−1e6, 1], [0, −1e-6]] (a fast mode feeding a slow one), B = [1; 1]; the rescaled
    // coupling c·t₁/t₂ runs from 1e-6 to 1e6, so the solver must balance and still judge the
    // slow pair on its own scale.
    let (a11, c, d) = (-1e6, 1.0, -1e-6);
    let a = DMatrix::from_row_slice(2, 2, &[a11, c, 0.0, d]);
    let b = DMatrix::from_row_slice(2, 1, &[1.0, 1.0]);
    let want = lyapunov_2x2_upper(a11, c, d, &(&b * b.transpose()));
    for t in scalings_2() {
        let (at, bt) = rescale(&a, &b, &t);
        let p = controllability_gramian(&at, &bt, 0.0)
            .unwrap_or_else(|e| panic!("T = diag({t:?}): refused: {e}"));
        assert_entries(
            &p,
            &congruence(&want, &t),
            1e-10,
            &format!("T = diag({t:?})"),
        );
    }
}

#[test]
fn discrete_equations_with_a_slow_pair_are_solved() {
    // Stein equation A X Aᵀ − X + Q = 0 with diagonal A: xᵢⱼ = qᵢⱼ/(1 − λᵢλⱼ) (derived by
    // hand). Eigenvalues 1 − 1e-6 (a slow sampled mode, 1 − λ² ≈ 2e-6) and 0.5: the
    // discrete Gramian, at every state scaling.
    let lam = [1.0 - 1e-6, 0.5];
    let a = DMatrix::from_row_slice(2, 2, &[lam[0], 0.0, 0.0, lam[1]]);
    let b = DMatrix::from_row_slice(2, 1, &[1.0, 1.0]);
    let want = DMatrix::from_fn(2, 2, |i, j| 1.0 / (1.0 - lam[i] * lam[j]));
    for t in scalings_2() {
        let (at, bt) = rescale(&a, &b, &t);
        let p = controllability_gramian(&at, &bt, 1.0)
            .unwrap_or_else(|e| panic!("T = diag({t:?}): refused: {e}"));
        assert_entries(
            &p,
            &congruence(&want, &t),
            1e-9,
            &format!("T = diag({t:?})"),
        );
    }
    // The same slow pair beside a large (unstable) eigenvalue 1e4: the equation is still
    // well-posed (no λᵢλⱼ = 1), but main judged every pivot against 1 + ‖A‖² = 1e8 and
    // refused the slow pair.
    let lam = [1.0 - 1e-6, 0.5, 1e4];
    let a = DMatrix::from_diagonal(&nalgebra::DVector::from_row_slice(&lam));
    let q = DMatrix::from_element(3, 3, 1.0);
    let want = DMatrix::from_fn(3, 3, |i, j| 1.0 / (1.0 - lam[i] * lam[j]));
    let x = solve_lyapunov_discrete(&a, &q).expect("well-posed Stein equation");
    assert_entries(&x, &want, 1e-9, "diag(1 − 1e-6, 0.5, 1e4)");
}

#[test]
fn singular_equations_are_still_refused_at_every_scale() {
    // Eigenvalues +1 and −1: λ₁ + λ₂ = 0, so A X + X Aᵀ + Q = 0 has no unique solution,
    // whatever the units (and at any time scale: ±1e-6 and ±1e6 too).
    for &w in &[1e-6, 1.0, 1e6] {
        let a = DMatrix::from_row_slice(2, 2, &[w, w, 0.0, -w]);
        let q = DMatrix::identity(2, 2);
        for t in scalings_2() {
            let (at, _) = rescale(&a, &q, &t);
            match solve_lyapunov(&at, &q) {
                Err(NumError::NoSolution { why, .. }) => {
                    assert!(why.contains("λᵢ + λⱼ ≈ 0"), "{why}")
                }
                other => panic!("ω = {w}, T = diag({t:?}): expected a refusal, got {other:?}"),
            }
        }
        // Discrete: eigenvalues 2w and 1/(2w), product exactly 1.
        let a = DMatrix::from_row_slice(2, 2, &[2.0 * w, 1.0, 0.0, 0.5 / w]);
        match solve_lyapunov_discrete(&a, &DMatrix::identity(2, 2)) {
            Err(NumError::NoSolution { why, .. }) => assert!(why.contains("λᵢλⱼ ≈ 1"), "{why}"),
            other => panic!("ω = {w}: expected a refusal, got {other:?}"),
        }
    }
    // Near-singular at rounding level beside a fast mode: eigenvalues −1e6 and
    // ±1e-10 (1e-10 is below 16ε·1e6 ≈ 3.6e-9, indistinguishable from 0 in a matrix of
    // this size) — refused, with the figure.
    let a = DMatrix::from_row_slice(3, 3, &[-1e6, 1.0, 0.0, 0.0, 1e-10, 1.0, 0.0, 0.0, -1e-10]);
    let err = solve_lyapunov(&a, &DMatrix::identity(3, 3)).expect_err("rounding-level pair");
    let text = err.to_string();
    assert!(text.contains("relative separation"), "{text}");
    assert!(text.contains("rounding level"), "{text}");
}

/// `T⁻ᵀ Q T⁻¹` for `T = diag(t)`: the same cost in the new state `T x`.
fn cost_in_new_units(q: &DMatrix<f64>, t: &[f64]) -> DMatrix<f64> {
    DMatrix::from_fn(q.nrows(), q.ncols(), |i, j| q[(i, j)] / (t[i] * t[j]))
}

#[test]
fn riccati_solutions_follow_the_state_units() {
    // The same regulator problem in the state T x: A' = T A T⁻¹, B' = T B, Q' = T⁻ᵀQT⁻¹
    // give X' = T⁻ᵀXT⁻¹ and the same closed-loop poles. Main refused T = diag(1e-3, 1e3)
    // as "uncontrollable, on the imaginary axis": its boundary test was relative to ‖H‖.
    use statebook::numeric::design::riccati::{solve_riccati, solve_riccati_discrete};
    let a = DMatrix::from_row_slice(2, 2, &[0.0, 1.0, -1.0, -0.2]);
    let b = DMatrix::from_row_slice(2, 1, &[0.0, 1.0]);
    let q = DMatrix::identity(2, 2);
    let r = DMatrix::from_element(1, 1, 1.0);
    let ad = DMatrix::from_row_slice(2, 2, &[1.0, 0.1, -0.1, 0.98]);
    let x = solve_riccati(&a, &b, &q, &r).expect("continuous");
    let xd = solve_riccati_discrete(&ad, &b, &q, &r).expect("discrete");
    // The case main refused, with Q = I in the new units (a different, well-posed problem).
    let (at, bt) = rescale(&a, &b, &[1e-3, 1e3]);
    let sol = solve_riccati(&at, &bt, &q, &r).expect("Q = I in scaled units: solved");
    assert!(sol.residual < 1e-13, "residual {}", sol.residual);
    assert!(sol.closed_loop_poles.iter().all(|z| z.re < 0.0));
    let mut scalings = scalings_2();
    scalings.push([1e-6, 1e6]);
    scalings.push([1e6, 1e-6]);
    for t in scalings {
        let inv = [1.0 / t[0], 1.0 / t[1]];
        let qt = cost_in_new_units(&q, &t);
        let (at, bt) = rescale(&a, &b, &t);
        let xt = solve_riccati(&at, &bt, &qt, &r)
            .unwrap_or_else(|e| panic!("T = diag({t:?}): refused: {e}"));
        let back = cost_in_new_units(&xt.x, &inv);
        assert_entries(&back, &x.x, 1e-9, &format!("continuous, T = diag({t:?})"));
        let (adt, bdt) = rescale(&ad, &b, &t);
        let xdt = solve_riccati_discrete(&adt, &bdt, &qt, &r)
            .unwrap_or_else(|e| panic!("discrete, T = diag({t:?}): refused: {e}"));
        let back = cost_in_new_units(&xdt.x, &inv);
        assert_entries(&back, &xd.x, 1e-9, &format!("discrete, T = diag({t:?})"));
    }
}
