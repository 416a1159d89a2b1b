//! Gramians, Hankel singular values, balanced realisations and balanced truncation.
//!
//! The model is `x' = A x + B u, y = C x + D u` (continuous, `dt = 0`) or
//! `x[k+1] = A x[k] + B u[k], y[k] = C x[k] + D u[k]` (discrete, sample time `dt > 0`),
//! with `A` n×n, `B` n×m, `C` p×n, `D` p×m. Everything here needs a stable `A` (Hurwitz
//! for `dt = 0`, Schur-stable for `dt > 0`): the Gramians of an unstable model are infinite.
//!
//! Gramians: controllability `P` solves `A P + P Aᵀ + B Bᵀ = 0` (discrete
//! `A P Aᵀ − P + B Bᵀ = 0`), observability `Q` solves `Aᵀ Q + Q A + Cᵀ C = 0` (discrete
//! `Aᵀ Q A − Q + Cᵀ C = 0`). The Hankel singular values are `σᵢ = √λᵢ(P Q)`, invariant
//! under a change of state coordinates. Balancing (Moore 1981, "Principal component
//! analysis in linear systems: controllability, observability, and model reduction",
//! IEEE Trans. Automatic Control) is the change of coordinates `x = T z` that makes both
//! Gramians equal to `diag(σ)`.

use crate::numeric::check;
use crate::numeric::design::lyapunov::{solve_lyapunov_discrete_with, solve_lyapunov_with};
use crate::numeric::error::{NumError, NumResult};
use crate::numeric::linalg::hammarling::{
    lyapunov_cholesky_discrete_with, lyapunov_cholesky_with, stability_violation,
};
use crate::numeric::linalg::schur::{block_eigenvalue, quasi_blocks};
use crate::numeric::linalg::sylvester::{real_schur, MatrixEquationParams};
use crate::numeric::lti::system::StateSpace;
use crate::numeric::lti::transform::Transformed;
use nalgebra::{Complex, DMatrix, SVD};

/// Tolerances of balancing and balanced truncation.
#[derive(Debug, Clone, PartialEq)]
pub struct BalanceParams {
    /// Relative tolerance of the minimality test: a Hankel singular value `σᵢ ≤
    /// minimality_tol · σ₁` counts as zero (an uncontrollable or unobservable mode). The
    /// balancing transformation has condition number about `√(σ₁/σₙ)`, so the default
    /// `1e-10` keeps at least ~5 digits of the balanced coefficients while staying far
    /// above the rounding level (~1e-16·σ₁) at which exact zeros are computed.
    pub minimality_tol: f64,
    /// Tolerances of the Lyapunov solvers (stability margin, Schur iteration cap).
    pub equation: MatrixEquationParams,
}

impl Default for BalanceParams {
    fn default() -> Self {
        BalanceParams {
            minimality_tol: 1e-10,
            equation: MatrixEquationParams::default(),
        }
    }
}

/// A balanced realisation: `x = T z`, new model `(T⁻¹ A T, T⁻¹ B, C T, D)` whose
/// controllability and observability Gramians both equal `diag(hankel_singular_values)`.
#[derive(Debug, Clone, PartialEq)]
pub struct Balanced {
    /// `T⁻¹ A T` (n×n).
    pub a: DMatrix<f64>,
    /// `T⁻¹ B` (n×m).
    pub b: DMatrix<f64>,
    /// `C T` (p×n).
    pub c: DMatrix<f64>,
    /// `D`, unchanged (p×m).
    pub d: DMatrix<f64>,
    /// The balancing transformation `T` (n×n), old state `x = T z`.
    pub t: DMatrix<f64>,
    /// Its inverse `T⁻¹`, computed directly (not by inverting `T`).
    pub t_inv: DMatrix<f64>,
    /// The Hankel singular values, descending.
    pub hankel_singular_values: Vec<f64>,
}

impl Balanced {
    /// The balanced form as a change of coordinates of `sys` (its time domain and signal
    /// names kept), with the condition of `T` up to the units of the states.
    pub fn transformed(self, sys: &StateSpace) -> NumResult<Transformed> {
        Transformed::from_parts(sys, (self.a, self.b, self.c), self.t, self.t_inv)
    }
}

/// A balanced truncation of order r.
#[derive(Debug, Clone, PartialEq)]
pub struct Truncated {
    /// Reduced `A` (r×r).
    pub a: DMatrix<f64>,
    /// Reduced `B` (r×m).
    pub b: DMatrix<f64>,
    /// Reduced `C` (p×r).
    pub c: DMatrix<f64>,
    /// `D`, unchanged (p×m).
    pub d: DMatrix<f64>,
    /// All n Hankel singular values of the original model, descending.
    pub hankel_singular_values: Vec<f64>,
    /// `2·Σᵢ₍>r₎ σᵢ`, an upper bound on the peak gain `‖G − Gᵣ‖∞` of the error.
    pub error_bound: f64,
}

/// The controllability Gramian `P` of a stable model.
///
/// **Mathematics.** `P = ∫₀^∞ e^{At} B Bᵀ e^{Aᵀt} dt`, the solution of
/// `A P + P Aᵀ + B Bᵀ = 0` (`dt = 0`), or `P = Σₖ Aᵏ B Bᵀ (Aᵀ)ᵏ`, the solution of
/// `A P Aᵀ − P + B Bᵀ = 0` (`dt > 0`). Symmetric positive semidefinite; singular exactly
/// when `(A, B)` is not controllable.
///
/// **Algorithm.** A stability check on the real Schur form, then
/// [`crate::numeric::design::lyapunov::solve_lyapunov`] (Bartels & Stewart 1972,
/// "Solution of the matrix equation AX + XB = C", Comm. ACM) or its discrete analogue
/// (Kitagawa 1977; Barraud 1977).
///
/// **Cost.** Two real Schur decompositions of `A` (check and solve), about 50n³ flops.
///
/// **Tolerance.** `A` must be stable with the margin of
/// [`MatrixEquationParams::resonance_tol`]; otherwise [`NumError::NoSolution`] says that
/// the Gramian is infinite and names the eigenvalue.
pub fn controllability_gramian(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    dt: f64,
) -> NumResult<DMatrix<f64>> {
    let n = check::finite_square("A", a)?;
    check::rows("B", b, n)?;
    check::finite("B", b)?;
    check_dt(dt)?;
    let params = MatrixEquationParams::default();
    require_stable(a, dt, "controllability Gramian", &params)?;
    let q = b * b.transpose();
    if dt == 0.0 {
        solve_lyapunov_with(a, &q, &params)
    } else {
        solve_lyapunov_discrete_with(a, &q, &params)
    }
}

/// The observability Gramian `Q` of a stable model.
///
/// **Mathematics.** `Q = ∫₀^∞ e^{Aᵀt} Cᵀ C e^{At} dt`, the solution of
/// `Aᵀ Q + Q A + Cᵀ C = 0` (`dt = 0`), or the solution of `Aᵀ Q A − Q + Cᵀ C = 0`
/// (`dt > 0`). Singular exactly when `(C, A)` is not observable.
///
/// **Algorithm, cost, tolerance.** As [`controllability_gramian`] applied to `(Aᵀ, Cᵀ)`.
pub fn observability_gramian(
    a: &DMatrix<f64>,
    c: &DMatrix<f64>,
    dt: f64,
) -> NumResult<DMatrix<f64>> {
    let n = check::finite_square("A", a)?;
    check::cols("C", c, n)?;
    check::finite("C", c)?;
    check_dt(dt)?;
    let params = MatrixEquationParams::default();
    require_stable(a, dt, "observability Gramian", &params)?;
    let at = a.transpose();
    let q = c.transpose() * c;
    if dt == 0.0 {
        solve_lyapunov_with(&at, &q, &params)
    } else {
        solve_lyapunov_discrete_with(&at, &q, &params)
    }
}

/// The Hankel singular values `σ₁ ≥ σ₂ ≥ … ≥ σₙ ≥ 0` of a stable model.
///
/// **Mathematics.** With `P = Lc Lcᵀ` and `Q = Lo Loᵀ`, `P Q` is similar to
/// `(Loᵀ Lc)ᵀ (Loᵀ Lc)`, so `σᵢ = √λᵢ(P Q)` are the singular values of `Loᵀ Lc`. This
/// never forms `P Q`, whose eigenvalues would carry only half the digits for small `σᵢ`.
///
/// **Algorithm.** Cholesky factors of both Gramians directly by Hammarling (1982),
/// "Numerical solution of the stable, non-negative definite Lyapunov equation", IMA J.
/// Numer. Anal. ([`crate::numeric::linalg::hammarling`]), then one SVD; the product form
/// is that of Laub, Heath, Paige & Ward (1987), "Computation of system balancing
/// transformations and other applications of simultaneous diagonalization algorithms",
/// IEEE Trans. Automatic Control.
///
/// **Cost.** Two real Schur decompositions and two factor recursions (about 60n³ flops)
/// plus an n×n SVD.
///
/// **Tolerance.** As [`controllability_gramian`]; values at the rounding level
/// (~1e-16·σ₁, which the SVD may report as exactly 0) stand for exact zeros
/// (uncontrollable or unobservable modes).
pub fn hankel_singular_values(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    c: &DMatrix<f64>,
    dt: f64,
) -> NumResult<Vec<f64>> {
    let (n, _, _) = check_model(a, b, c, None, dt)?;
    if n == 0 {
        return Ok(Vec::new());
    }
    let params = BalanceParams::default();
    let (_, _, hsv) = square_root_svd(a, b, c, dt, &params, false)?;
    Ok(hsv)
}

/// The balanced realisation with the default [`BalanceParams`]; see
/// [`balanced_realization_with`].
pub fn balanced_realization(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    c: &DMatrix<f64>,
    d: &DMatrix<f64>,
    dt: f64,
) -> NumResult<Balanced> {
    balanced_realization_with(a, b, c, d, dt, &BalanceParams::default())
}

/// The balanced realisation of a stable, minimal model.
///
/// **Mathematics.** With Gramian factors `P = Lc Lcᵀ`, `Q = Lo Loᵀ` and the SVD
/// `Loᵀ Lc = W Σ Vᵀ`, the transformation `T = Lc V Σ^{-1/2}` has inverse
/// `T⁻¹ = Σ^{-1/2} Wᵀ Loᵀ` (as `T⁻¹ T = Σ^{-1/2} Wᵀ W Σ Vᵀ V Σ^{-1/2} = I`), and the
/// model `(T⁻¹ A T, T⁻¹ B, C T, D)` has `T⁻¹ P T⁻ᵀ = Tᵀ Q T = Σ`.
///
/// **Algorithm.** The square-root method: Laub, Heath, Paige & Ward (1987), "Computation
/// of system balancing transformations and other applications of simultaneous
/// diagonalization algorithms", IEEE Trans. Automatic Control; Tombs & Postlethwaite
/// (1987), "Truncated balanced realization of a stable non-minimal state-space system",
/// Int. J. Control — with the factors from Hammarling (1982).
///
/// **Cost.** As [`hankel_singular_values`] plus a few n×n products (about 70n³ flops).
///
/// **Tolerance.** The model must be minimal: if `σₙ ≤ params.minimality_tol · σ₁` the
/// result is [`NumError::NoSolution`] saying the model is not minimal and naming the
/// figure (use [`balanced_truncation`] to an order at most the numerical rank instead).
/// `A` must be stable as in [`controllability_gramian`].
pub fn balanced_realization_with(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    c: &DMatrix<f64>,
    d: &DMatrix<f64>,
    dt: f64,
    params: &BalanceParams,
) -> NumResult<Balanced> {
    let (n, m, p) = check_model(a, b, c, Some(d), dt)?;
    if n == 0 {
        return Ok(Balanced {
            a: DMatrix::zeros(0, 0),
            b: DMatrix::zeros(0, m),
            c: DMatrix::zeros(p, 0),
            d: d.clone(),
            t: DMatrix::zeros(0, 0),
            t_inv: DMatrix::zeros(0, 0),
            hankel_singular_values: Vec::new(),
        });
    }
    let (right, left, hsv) = square_root_svd(a, b, c, dt, params, true)?;
    let rank = numerical_rank(&hsv, params.minimality_tol);
    if rank < n {
        let smallest = hsv[n - 1];
        let rel = if hsv[0] > 0.0 { smallest / hsv[0] } else { 0.0 };
        return Err(NumError::no_solution(
            "balanced realization",
            format!(
                "the model is not minimal: Hankel singular value σ{n} = {smallest:.3e} is \
                 {rel:.3e} relative to σ1, at or below the tolerance {:.1e} (an \
                 uncontrollable or unobservable mode; numerical rank {rank} of {n})\n\
                 hint: use balanced_truncation with order ≤ {rank}",
                params.minimality_tol
            ),
        ));
    }
    let (t, t_inv) = projections(&right, &left, &hsv, n);
    Ok(Balanced {
        a: &t_inv * a * &t,
        b: &t_inv * b,
        c: c * &t,
        d: d.clone(),
        t,
        t_inv,
        hankel_singular_values: hsv,
    })
}

/// Balanced truncation with the default [`BalanceParams`]; see
/// [`balanced_truncation_with`].
pub fn balanced_truncation(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    c: &DMatrix<f64>,
    d: &DMatrix<f64>,
    dt: f64,
    order: usize,
) -> NumResult<Truncated> {
    balanced_truncation_with(a, b, c, d, dt, order, &BalanceParams::default())
}

/// Reduces a stable model to `order` states by truncating its balanced realisation.
///
/// **Mathematics.** With `T`, `T⁻¹` of [`balanced_realization_with`], keep the first r
/// columns `Tᵣ = Lc Vᵣ Σᵣ^{-1/2}` and rows `Lᵣ = Σᵣ^{-1/2} Wᵣᵀ Loᵀ`; the reduced model is
/// `(Lᵣ A Tᵣ, Lᵣ B, C Tᵣ, D)`. Only `σ₁ … σᵣ` must be non-zero, so non-minimal models are
/// reduced without first being made minimal. Error bound (Glover 1984, "All optimal
/// Hankel-norm approximations of linear multivariable systems and their L∞-error bounds",
/// Int. J. Control; Enns 1984): for `dt = 0`,
/// `σᵣ₊₁ ≤ sup_ω ‖G(jω) − Gᵣ(jω)‖₂ ≤ 2 Σᵢ₍>r₎ σᵢ` (the left inequality holds for every
/// approximation of order r). For `dt > 0` the same upper bound holds on the unit circle,
/// `sup_θ ‖G(e^{jθ}) − Gᵣ(e^{jθ})‖₂ ≤ 2 Σᵢ₍>r₎ σᵢ`, by Al-Saggaf & Franklin (1987), "An
/// error bound for a discrete reduced order model of a linear multivariable system".
/// `error_bound` counts repeated σᵢ with their multiplicity (a valid, slightly looser form
/// of the bound, which counts each distinct value once).
///
/// **Order.** `order = 0` gives the static model `D` (empty `A`, `B`, `C`) with bound
/// `2 Σ σᵢ`. `order ≥ n` discards nothing: the model is returned **unchanged** (not
/// balanced) with bound 0. `0 < order < n` requires `σ_order > minimality_tol · σ₁`
/// (order at most the numerical rank); otherwise [`NumError::NoSolution`] names the rank.
///
/// **Algorithm.** Square-root balanced truncation: Laub, Heath, Paige & Ward (1987); Tombs
/// & Postlethwaite (1987), "Truncated balanced realization of a stable non-minimal
/// state-space system", Int. J. Control — with Cholesky factors by Hammarling (1982).
///
/// **Cost.** As [`hankel_singular_values`] plus `O(n² r)`.
///
/// **Tolerance.** `params.minimality_tol` as above; stability as in
/// [`controllability_gramian`].
pub fn balanced_truncation_with(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    c: &DMatrix<f64>,
    d: &DMatrix<f64>,
    dt: f64,
    order: usize,
    params: &BalanceParams,
) -> NumResult<Truncated> {
    let (n, _, _) = check_model(a, b, c, Some(d), dt)?;
    if n == 0 {
        return Ok(Truncated {
            a: a.clone(),
            b: b.clone(),
            c: c.clone(),
            d: d.clone(),
            hankel_singular_values: Vec::new(),
            error_bound: 0.0,
        });
    }
    let (right, left, hsv) = square_root_svd(a, b, c, dt, params, true)?;
    if order >= n {
        return Ok(Truncated {
            a: a.clone(),
            b: b.clone(),
            c: c.clone(),
            d: d.clone(),
            hankel_singular_values: hsv,
            error_bound: 0.0,
        });
    }
    let rank = numerical_rank(&hsv, params.minimality_tol);
    if order > rank {
        let s = hsv[order - 1];
        let rel = if hsv[0] > 0.0 { s / hsv[0] } else { 0.0 };
        return Err(NumError::no_solution(
            "balanced truncation",
            format!(
                "order {order} exceeds the numerical rank {rank} of the model: Hankel \
                 singular value σ{order} = {s:.3e} is {rel:.3e} relative to σ1, at or below \
                 the tolerance {:.1e}, so those states have no balanced coordinates\n\
                 hint: order {rank} already reproduces the model to within the bound",
                params.minimality_tol
            ),
        ));
    }
    let (t, t_inv) = projections(&right, &left, &hsv, order);
    let error_bound = 2.0 * hsv[order..].iter().sum::<f64>();
    Ok(Truncated {
        a: &t_inv * a * &t,
        b: &t_inv * b,
        c: c * &t,
        d: d.clone(),
        hankel_singular_values: hsv,
        error_bound,
    })
}

/// `Lc V` and `Wᵀ Loᵀ` (when `vectors`) and the descending Hankel singular values, from the
/// SVD `Loᵀ Lc = W Σ Vᵀ`. Assumes `n > 0` and checked arguments.
fn square_root_svd(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    c: &DMatrix<f64>,
    dt: f64,
    params: &BalanceParams,
    vectors: bool,
) -> NumResult<(DMatrix<f64>, DMatrix<f64>, Vec<f64>)> {
    let lc = gramian_factor(a, b, dt, "controllability Gramian", &params.equation)?;
    let lo = gramian_factor(
        &a.transpose(),
        &c.transpose(),
        dt,
        "observability Gramian",
        &params.equation,
    )?;
    let n = a.nrows();
    let cap = params
        .equation
        .schur_iterations_per_row
        .max(1)
        .saturating_mul(n)
        .max(10);
    let product = lo.transpose() * &lc;
    let svd = if vectors {
        // Verified factors (nalgebra's SVD vectors can be wrong on nearly rank-deficient
        // input, which is exactly the case of a lightly controllable model).
        crate::numeric::linalg::dense::verified_svd(&product)?
    } else {
        SVD::try_new(product, false, false, f64::EPSILON, cap).ok_or_else(|| {
            NumError::NoConvergence {
                what: "SVD of the Gramian factor product".to_string(),
                iterations: cap,
            }
        })?
    };
    let hsv: Vec<f64> = svd.singular_values.iter().copied().collect();
    if !vectors {
        return Ok((DMatrix::zeros(0, 0), DMatrix::zeros(0, 0), hsv));
    }
    let (w, vt) = match (svd.u, svd.v_t) {
        (Some(w), Some(vt)) => (w, vt),
        _ => {
            return Err(NumError::NoConvergence {
                what: "SVD of the Gramian factor product".to_string(),
                iterations: cap,
            })
        }
    };
    Ok((lc * vt.transpose(), w.transpose() * lo.transpose(), hsv))
}

/// `(Tᵣ, Lᵣ)`: the first r columns of `Lc V Σ^{-1/2}` and rows of `Σ^{-1/2} Wᵀ Loᵀ`.
/// Requires `σ₁ … σᵣ > 0`.
fn projections(
    right: &DMatrix<f64>,
    left: &DMatrix<f64>,
    hsv: &[f64],
    r: usize,
) -> (DMatrix<f64>, DMatrix<f64>) {
    let mut t = right.columns(0, r).clone_owned();
    let mut l = left.rows(0, r).clone_owned();
    for (i, &s) in hsv.iter().take(r).enumerate() {
        let f = 1.0 / s.sqrt();
        t.column_mut(i).scale_mut(f);
        l.row_mut(i).scale_mut(f);
    }
    (t, l)
}

/// Number of Hankel singular values above `tol · σ₁` (0 when σ₁ = 0).
fn numerical_rank(hsv: &[f64], tol: f64) -> usize {
    let top = hsv.first().copied().unwrap_or(0.0);
    if top <= 0.0 {
        return 0;
    }
    hsv.iter().take_while(|&&s| s > tol * top).count()
}

/// Hammarling factor of a Gramian, with instability reported as an infinite Gramian.
fn gramian_factor(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    dt: f64,
    what: &str,
    params: &MatrixEquationParams,
) -> NumResult<DMatrix<f64>> {
    let result = if dt == 0.0 {
        lyapunov_cholesky_with(a, b, params)
    } else {
        lyapunov_cholesky_discrete_with(a, b, params)
    };
    result.map_err(|e| match e {
        NumError::NoSolution { why, .. } => infinite_gramian(what, &why),
        other => other,
    })
}

fn infinite_gramian(what: &str, why: &str) -> NumError {
    NumError::no_solution(
        what,
        format!("the Gramian is infinite for an unstable (or marginally stable) model: {why}"),
    )
}

/// Fails unless `A` is stable with the margin of `params` (Hurwitz for `dt = 0`,
/// Schur-stable for `dt > 0`).
fn require_stable(
    a: &DMatrix<f64>,
    dt: f64,
    what: &str,
    params: &MatrixEquationParams,
) -> NumResult<()> {
    if a.nrows() == 0 {
        return Ok(());
    }
    // On the balanced A (Parlett & Reinsch 1969): the margin is judged against each
    // eigenvalue's own size and the rounding level of the balanced matrix, not the units
    // of the states.
    let balanced = crate::numeric::linalg::dense::balance_reducing_norm(a).map(|(b, _)| b);
    let a = balanced.as_ref().unwrap_or(a);
    let (_, t) = real_schur(a, "A", params)?;
    let mut eigs = Vec::with_capacity(t.nrows());
    for (start, size) in quasi_blocks(&t)? {
        let z = block_eigenvalue(&t, start, size);
        eigs.push(z);
        if size == 2 {
            eigs.push(if z.im != 0.0 {
                z.conj()
            } else {
                // Real pair in an unsplit block: the other root from the trace.
                Complex::new(t[(start, start)] + t[(start + 1, start + 1)] - z.re, 0.0)
            });
        }
    }
    match stability_violation(&eigs, a.norm(), dt > 0.0, params) {
        Some(why) => Err(infinite_gramian(what, &why)),
        None => Ok(()),
    }
}

fn check_dt(dt: f64) -> NumResult<()> {
    if !dt.is_finite() || dt < 0.0 {
        return Err(NumError::invalid(
            "dt",
            format!("expected a sample time ≥ 0 (0 for continuous time), found {dt}"),
        ));
    }
    Ok(())
}

/// Shapes and finiteness of `(A, B, C[, D])` and `dt`; returns `(n, m, p)`.
fn check_model(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    c: &DMatrix<f64>,
    d: Option<&DMatrix<f64>>,
    dt: f64,
) -> NumResult<(usize, usize, usize)> {
    let n = check::finite_square("A", a)?;
    check::rows("B", b, n)?;
    check::finite("B", b)?;
    check::cols("C", c, n)?;
    check::finite("C", c)?;
    let (m, p) = (b.ncols(), c.nrows());
    if let Some(d) = d {
        check::dims("D", d, p, m)?;
        check::finite("D", d)?;
    }
    check_dt(dt)?;
    Ok((n, m, p))
}

#[cfg(test)]
mod tests;
