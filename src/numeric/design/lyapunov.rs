//! Lyapunov equations `A X + X Aᵀ + Q = 0` and `A X Aᵀ − X + Q = 0` (Gramians, Newton steps
//! of the Riccati solvers, stability certificates): the Bartels–Stewart and
//! Kitagawa–Barraud recursions on one real Schur form of the balanced `A`, sharing the
//! quasi-triangular kernel of the Sylvester solver (`linalg::sylvester`).

use crate::numeric::check;
use crate::numeric::error::NumResult;
use crate::numeric::linalg::sylvester::{
    finite_solution, real_schur, resonance_error, reverse_columns, reverse_transpose,
    solve_quasi_triangular, symmetric_part, Floor, Kind, MatrixEquationParams,
};
use nalgebra::DMatrix;

/// Solves the continuous Lyapunov equation `A X + X Aᵀ + Q = 0` with the default
/// [`MatrixEquationParams`]; see [`solve_lyapunov_with`].
pub fn solve_lyapunov(a: &DMatrix<f64>, q: &DMatrix<f64>) -> NumResult<DMatrix<f64>> {
    solve_lyapunov_with(a, q, &MatrixEquationParams::default())
}

/// Solves the continuous Lyapunov equation `A X + X Aᵀ + Q = 0` for symmetric `X`, with
/// `A` n×n and `Q` n×n symmetric.
///
/// **Mathematics.** Unique solution iff `λᵢ + λⱼ ≠ 0` for all eigenvalue pairs of `A`
/// (stability of `A` is not required; when `A` is stable and `Q ⪰ 0`, `X ⪰ 0` and
/// `X = ∫₀^∞ e^{At} Q e^{Aᵀt} dt`). With `A = U S Uᵀ` (real Schur) it becomes
/// `S Y + Y Sᵀ = −Uᵀ Q U`, solved as the Sylvester equation `S Z + Z R = −Uᵀ Q U J` in
/// the reversed variables `Z = Y J`, `R = J Sᵀ J` (J the reversal permutation, so `R` is
/// upper quasi-triangular); `X = U Y Uᵀ`, returned exactly symmetric as `(X + Xᵀ)/2`.
///
/// **Algorithm.** Bartels & Stewart (1972), "Solution of the matrix equation AX + XB = C",
/// Comm. ACM 15(9), with one Schur decomposition shared by both sides.
///
/// **Cost.** One real Schur decomposition (about 25n³ flops) plus `O(n³)`.
///
/// **Tolerance.** `Q` must be symmetric to `params.symmetry_tol` (relative, Frobenius);
/// the pivot of each eigenvalue pair is judged against
/// `max(params.resonance_tol·(|λᵢ| + |λⱼ|), 16ε‖Ã‖_F)`, Ã the balanced `A` (see
/// [`MatrixEquationParams::resonance_tol`]).
pub fn solve_lyapunov_with(
    a: &DMatrix<f64>,
    q: &DMatrix<f64>,
    params: &MatrixEquationParams,
) -> NumResult<DMatrix<f64>> {
    lyapunov_impl(a, q, Kind::Continuous, params)
}

/// Solves the discrete Lyapunov equation `A X Aᵀ − X + Q = 0` with the default
/// [`MatrixEquationParams`]; see [`solve_lyapunov_discrete_with`].
pub fn solve_lyapunov_discrete(a: &DMatrix<f64>, q: &DMatrix<f64>) -> NumResult<DMatrix<f64>> {
    solve_lyapunov_discrete_with(a, q, &MatrixEquationParams::default())
}

/// Solves the discrete Lyapunov (Stein) equation `A X Aᵀ − X + Q = 0` for symmetric `X`,
/// with `A` n×n and `Q` n×n symmetric.
///
/// **Mathematics.** Unique solution iff `λᵢλⱼ ≠ 1` for all eigenvalue pairs of `A`; when
/// `A` is Schur-stable (all |λ| < 1) and `Q ⪰ 0`, `X = Σₖ Aᵏ Q (Aᵀ)ᵏ ⪰ 0`. With
/// `A = U S Uᵀ` it becomes `S Y Sᵀ − Y = −Uᵀ Q U`; in the reversed variables
/// `Z = Y J`, `R = J Sᵀ J` this is `S Z R − Z = −Uᵀ Q U J`, solved block by block (row
/// blocks from the bottom, column blocks from the left) with the partial products `Z R`
/// kept so that the whole solve stays `O(n³)`. Each block pair is the Kronecker system
/// `(Rₗₗᵀ ⊗ Sₖₖ − I) vec Zₖₗ = vec(rhs)`.
///
/// **Algorithm.** The Schur-form recursion of Kitagawa (1977), "An algorithm for solving
/// the matrix equation X = FXF' + S", Int. J. Control, and Barraud (1977), "A numerical
/// algorithm to solve AᵀXA − X = Q", IEEE Trans. Automatic Control — the discrete analogue
/// of Bartels & Stewart (1972).
///
/// **Cost.** One real Schur decomposition (about 25n³ flops) plus `O(n³)`.
///
/// **Tolerance.** As [`solve_lyapunov_with`], with the pivot of each eigenvalue pair judged
/// against `max(params.resonance_tol·(1 + |λᵢ||λⱼ|), 8ε‖Ã‖_F(|λᵢ| + |λⱼ|))`.
pub fn solve_lyapunov_discrete_with(
    a: &DMatrix<f64>,
    q: &DMatrix<f64>,
    params: &MatrixEquationParams,
) -> NumResult<DMatrix<f64>> {
    lyapunov_impl(a, q, Kind::Discrete, params)
}

fn lyapunov_impl(
    a: &DMatrix<f64>,
    q: &DMatrix<f64>,
    kind: Kind,
    params: &MatrixEquationParams,
) -> NumResult<DMatrix<f64>> {
    let n = check::finite_square("A", a)?;
    check::dims("Q", q, n, n)?;
    check::finite("Q", q)?;
    let q = symmetric_part("Q", q, params.symmetry_tol)?;
    if n == 0 {
        return Ok(DMatrix::zeros(0, 0));
    }
    // Balance first (Parlett & Reinsch 1969): with the power-of-two diagonal similarity
    // Ã = D⁻¹AD the equation for X̃ = D⁻¹XD⁻¹ has Q̃ = D⁻¹QD⁻¹ (both the continuous and the
    // discrete form), and X = D X̃ D exactly; the Schur form and the pivot tests then do not
    // depend on the units of the states.
    if let Some((ab, d)) = crate::numeric::linalg::dense::balance_reducing_norm(a) {
        let qb = DMatrix::from_fn(n, n, |i, j| q[(i, j)] / (d[i] * d[j]));
        let xb = lyapunov_balanced(&ab, &qb, kind, params)?;
        return finite_solution(
            match kind {
                Kind::Continuous => "Lyapunov equation A X + X Aᵀ + Q = 0",
                Kind::Discrete => "discrete Lyapunov equation A X Aᵀ − X + Q = 0",
            },
            DMatrix::from_fn(n, n, |i, j| xb[(i, j)] * d[i] * d[j]),
        );
    }
    lyapunov_balanced(a, &q, kind, params)
}

/// [`lyapunov_impl`] on a balanced (or already well-scaled) `A`, n ≥ 1, symmetric `Q`.
fn lyapunov_balanced(
    a: &DMatrix<f64>,
    q: &DMatrix<f64>,
    kind: Kind,
    params: &MatrixEquationParams,
) -> NumResult<DMatrix<f64>> {
    let (u, s) = real_schur(a, "A", params)?;
    let r = reverse_transpose(&s);
    // F J with F = −Uᵀ Q U: reversing the columns of F.
    let f = -(u.transpose() * q * &u);
    let fj = reverse_columns(&f);
    let (what, cause) = match kind {
        Kind::Continuous => (
            "Lyapunov equation A X + X Aᵀ + Q = 0",
            "A has eigenvalues with λᵢ + λⱼ ≈ 0 (symmetric about the imaginary axis)",
        ),
        Kind::Discrete => (
            "discrete Lyapunov equation A X Aᵀ − X + Q = 0",
            "A has eigenvalues with λᵢλⱼ ≈ 1 (reciprocal about the unit circle)",
        ),
    };
    // Both sides are the (balanced) A: the same rounding level for λᵢ and λⱼ.
    let floor = Floor::new(params, a.norm(), a.norm());
    let z = solve_quasi_triangular(&s, &r, fj, kind, &floor)
        .map_err(|res| resonance_error(what, cause, &res, params))?;
    let y = reverse_columns(&z);
    let x = &u * y * u.transpose();
    let x = (&x + x.transpose()) * 0.5;
    finite_solution(what, x)
}
