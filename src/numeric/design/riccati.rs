//! Algebraic Riccati equations of optimal control and estimation, continuous and discrete.
//!
//! * [`solve_riccati`]: `AᵀX + XA − XBR⁻¹BᵀX + Q = 0` (continuous time), by the Schur method
//!   on the Hamiltonian matrix (Laub 1979) plus one Newton step (Kleinman 1968).
//! * [`solve_riccati_discrete`]: `AᵀXA − X − AᵀXB(R + BᵀXB)⁻¹BᵀXA + Q = 0` (discrete time),
//!   by the structure-preserving doubling algorithm (Chu, Fan, Lin & Wang 2004; convergence
//!   theory Lin & Xu 2006), which never inverts `A`, plus Newton steps (Hewer 1971).
//!
//! Both return the *stabilizing* solution — the one that makes `A − BK` stable — or a
//! [`NumError::NoSolution`] naming why none exists: an uncontrollable mode of `(A, B)` that is
//! not stable, or a mode of `A` on the stability boundary that `Q` does not see (PBH tests on
//! the eigenvalues of `A`, run when the solver fails).

use crate::numeric::check;
use crate::numeric::design::lyapunov::{solve_lyapunov, solve_lyapunov_discrete};
use crate::numeric::error::{NumError, NumResult};
use crate::numeric::linalg::dense::singular_values;
use crate::numeric::linalg::eigen::eigenvalues;
use crate::numeric::linalg::schur::RealSchur;
use crate::numeric::linalg::sylvester::{fmt_complex, symmetric_part};
use nalgebra::{Cholesky, Complex, DMatrix, Dyn, SymmetricEigen};

mod continuous;
mod diagnosis;
mod discrete;
use continuous::continuous_unscaled;
use diagnosis::*;
use discrete::discrete_unscaled;

/// Tolerances and iteration caps of the Riccati solvers.
#[derive(Debug, Clone, PartialEq)]
pub struct RiccatiParams {
    /// Largest accepted `‖M − Mᵀ‖_F / ‖M‖_F` for `Q` and `R` (default `1e-10`); their
    /// symmetric parts are used.
    pub symmetry_tol: f64,
    /// `Q` counts as positive semidefinite when its smallest eigenvalue is at least
    /// `−semidefinite_tol · ‖Q‖₂` (default `1e-10`: rounding in a product such as `CᵀC`
    /// leaves eigenvalues of about `n·ε·‖Q‖` of either sign).
    pub semidefinite_tol: f64,
    /// Width of the band around the stability boundary, relative to the problem scale:
    /// the continuous solver refuses Hamiltonian eigenvalues with `|Re λ| ≤ boundary_tol·‖H‖_F`,
    /// and both solvers refuse a closed loop with a pole within this distance of the
    /// boundary (`Re λ ≥ −boundary_tol·‖H‖_F`, resp. `|λ| ≥ 1 − boundary_tol`). Default
    /// `1e-7`: an eigenvalue pair exactly on the imaginary axis usually forms a 2×2 Jordan
    /// block, which rounding splits by about `√ε·‖H‖ ≈ 1.5e-8·‖H‖`, so the band must be
    /// wider than that to recognise it.
    pub boundary_tol: f64,
    /// Smallest accepted reciprocal condition `σ_min/σ_max` of `U₁₁` in the continuous Schur
    /// method (default `1e-13`); below it the stable subspace is not a graph `[I; X]` to
    /// working precision.
    pub u11_rcond_min: f64,
    /// Cap on doubling steps of the discrete solver (default 64; step `k` accounts for
    /// `2ᵏ` steps of the Riccati difference equation, so 64 is far beyond need unless the
    /// closed loop has a pole on the unit circle).
    pub max_doubling_steps: usize,
    /// Cap on Newton steps when the discrete solver has to restart from a stabilizing
    /// initial guess (default 60).
    pub max_newton_steps: usize,
}

impl Default for RiccatiParams {
    fn default() -> Self {
        RiccatiParams {
            symmetry_tol: 1e-10,
            semidefinite_tol: 1e-10,
            boundary_tol: 1e-7,
            u11_rcond_min: 1e-13,
            max_doubling_steps: 64,
            max_newton_steps: 60,
        }
    }
}

/// The stabilizing solution of an algebraic Riccati equation and what goes with it.
#[derive(Debug, Clone, PartialEq)]
pub struct Riccati {
    /// The stabilizing solution `X` (n×n, symmetric positive semidefinite).
    pub x: DMatrix<f64>,
    /// The optimal gain `K` (m×n): `R⁻¹BᵀX` (continuous) or `(R + BᵀXB)⁻¹BᵀXA` (discrete).
    pub gain: DMatrix<f64>,
    /// Eigenvalues of `A − BK`, in the house order (ascending real part, then imaginary).
    pub closed_loop_poles: Vec<Complex<f64>>,
    /// 2-norm condition number of `U₁₁`, where `[U₁₁; U₂₁]` is an orthonormal basis of the
    /// stable invariant (deflating) subspace and `X = U₂₁U₁₁⁻¹`. Continuous: computed from
    /// the Schur basis of the scaled Hamiltonian (see [`solve_riccati_with`]). Discrete: the
    /// doubling algorithm forms no basis, so the value follows from `X` by the identity
    /// `U₁₁ = (I + X²)^{-1/2}` (up to an orthogonal factor): `√(1 + μ_max²) / √(1 + μ_min²)`
    /// over the eigenvalues `μ` of `X`. Large values mean `X` is large or ill determined.
    pub u11_condition: f64,
    /// Relative residual. Continuous: `‖AᵀX + XA − XGX + Q‖_F / (‖Q‖_F + 2‖A‖_F‖X‖_F +
    /// ‖X‖_F²‖G‖_F)` with `G = BR⁻¹Bᵀ`. Discrete: `‖R(X)‖_F / (‖Q‖_F + ‖X‖_F + ‖A‖_F²‖X‖_F +
    /// ‖AᵀXB(R + BᵀXB)⁻¹BᵀXA‖_F)`, the residual over the sum of the sizes of its terms.
    /// A backward-stable solution gives a small multiple of ε.
    pub residual: f64,
}

/// Solves the continuous algebraic Riccati equation `AᵀX + XA − XBR⁻¹BᵀX + Q = 0` with the
/// default [`RiccatiParams`]; see [`solve_riccati_with`].
pub fn solve_riccati(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    q: &DMatrix<f64>,
    r: &DMatrix<f64>,
) -> NumResult<Riccati> {
    solve_riccati_with(a, b, q, r, &RiccatiParams::default())
}

/// Solves the continuous algebraic Riccati equation `AᵀX + XA − XBR⁻¹BᵀX + Q = 0` for its
/// stabilizing solution `X` (all eigenvalues of `A − BR⁻¹BᵀX` in the open left half plane),
/// with `A` n×n, `B` n×m, `Q` n×n symmetric positive semidefinite, `R` m×m symmetric
/// positive definite.
///
/// **Mathematics.** With `G = BR⁻¹Bᵀ`, the Hamiltonian `H = [[A, −G], [−Q, −Aᵀ]]` has its
/// eigenvalues in pairs `λ, −λ̄`. The stabilizing solution exists iff no eigenvalue lies on
/// the imaginary axis and the n-dimensional stable invariant subspace is a graph: spanned
/// by `[U₁₁; U₂₁]` with `U₁₁` invertible; then `X = U₂₁U₁₁⁻¹`. With `Q ⪰ 0` this holds iff
/// `(A, B)` is stabilizable and `(Q^½, A)` has no unobservable mode on the imaginary axis.
///
/// **Algorithm.** Laub (1979), "A Schur method for solving algebraic Riccati equations",
/// IEEE Trans. Automatic Control 24(6): `G` from a Cholesky factor `R = LLᵀ` as
/// `(L⁻¹Bᵀ)ᵀ(L⁻¹Bᵀ)`; the problem is scaled `X = αY`, `α = √(‖Q‖_F/‖G‖_F)`, so that the two
/// off-diagonal blocks of the Hamiltonian have equal norm (common practice, no source);
/// real Schur form of `H` ([`RealSchur::new`]) reordered so the stable eigenvalues lead
/// ([`RealSchur::reorder`], Bai & Demmel 1993 swaps); `Y` from `U₁₁ᵀYᵀ = U₂₁ᵀ` (an LU
/// solve, not an inverse), symmetrised. Then one Newton step (Kleinman 1968, "On an
/// iterative technique for Riccati equation computations", IEEE Trans. Automatic Control
/// 13(1)) in correction form: `(A − GX)ᵀΔ + Δ(A − GX) + 𝓡(X) = 0` for the residual `𝓡(X)`,
/// solved by [`solve_lyapunov`] and kept only if it lowers the residual.
///
/// **Cost.** About 25·(2n)³ = 200n³ flops for the Schur form, O(n³) for the reordering,
/// the solve and the Newton step (one more real Schur form of order n).
///
/// **Tolerances.** See [`RiccatiParams`]: `boundary_tol` (eigenvalues near the imaginary
/// axis), `u11_rcond_min` (singular `U₁₁`), `semidefinite_tol`, `symmetry_tol`.
///
/// **Errors.** Shapes ([`NumError::NotSquare`], [`NumError::ShapeMismatch`]), non-finite
/// entries, `Q` or `R` not symmetric, `Q` indefinite or `R` not positive definite
/// ([`NumError::InvalidArgument`]); [`NumError::NoSolution`] when no stabilizing solution
/// exists, naming the uncontrollable or unobservable mode found by a PBH test
/// (`σ_min([A − λI, B])` resp. `σ_min([A − λI; Q^½])` below `1e-6` of the norm of that
/// matrix at an eigenvalue `λ` of `A` that is not stable resp. within `1e-6·max(1, ‖A‖_F)`
/// of the axis), or else the Hamiltonian eigenvalue closest to the axis or the condition of
/// `U₁₁`.
pub fn solve_riccati_with(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    q: &DMatrix<f64>,
    r: &DMatrix<f64>,
    params: &RiccatiParams,
) -> NumResult<Riccati> {
    solve_impl(Time::Continuous, a, b, q, r, params, &Roles::CONTROL)
}

/// Solves the discrete algebraic Riccati equation
/// `AᵀXA − X − AᵀXB(R + BᵀXB)⁻¹BᵀXA + Q = 0` with the default [`RiccatiParams`]; see
/// [`solve_riccati_discrete_with`].
pub fn solve_riccati_discrete(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    q: &DMatrix<f64>,
    r: &DMatrix<f64>,
) -> NumResult<Riccati> {
    solve_riccati_discrete_with(a, b, q, r, &RiccatiParams::default())
}

/// Solves the discrete algebraic Riccati equation `AᵀXA − X − AᵀXB(R + BᵀXB)⁻¹BᵀXA + Q = 0`
/// for its stabilizing solution `X` (all eigenvalues of `A − BK` inside the unit circle,
/// `K = (R + BᵀXB)⁻¹BᵀXA`), with `A` n×n, `B` n×m, `Q` n×n symmetric positive
/// semidefinite, `R` m×m symmetric positive definite. `A` may be singular.
///
/// **Mathematics.** With `G = BR⁻¹Bᵀ` the equation reads `X = AᵀX(I + GX)⁻¹A + Q`. Its
/// stabilizing solution spans the stable deflating subspace `[I; X]` of the symplectic
/// pencil `[[A, 0], [−Q, I]] − z[[I, G], [0, Aᵀ]]`, whose eigenvalues come in pairs
/// `z, 1/z̄`; it exists iff `(A, B)` is stabilizable and no mode of `A` on the unit circle is
/// unobservable from `Q`.
///
/// **Algorithm.** The structure-preserving doubling algorithm (Chu, Fan, Lin & Wang 2004,
/// "Structure-preserving algorithms for periodic discrete-time algebraic Riccati
/// equations", Int. J. Control 77(8); convergence: Lin & Xu 2006, "Convergence analysis of
/// structure-preserving doubling algorithms for Riccati-type matrix equations", SIAM J.
/// Matrix Anal. Appl. 28(1)): from `A₀ = A, G₀ = G, H₀ = Q`,
/// `Aₖ₊₁ = Aₖ(I + GₖHₖ)⁻¹Aₖ`, `Gₖ₊₁ = Gₖ + Aₖ(I + GₖHₖ)⁻¹GₖAₖᵀ`,
/// `Hₖ₊₁ = Hₖ + AₖᵀHₖ(I + GₖHₖ)⁻¹Aₖ`; `Hₖ → X` quadratically, with error of order
/// `ρ^{2ᵏ}` for the closed-loop spectral radius `ρ`. `I + GₖHₖ` has all eigenvalues ≥ 1
/// (both factors are semidefinite), so nothing singular is ever inverted, and `A` is never
/// inverted. The iteration stops when `‖Hₖ₊₁ − Hₖ‖_F ≤ 1e-13·‖Hₖ₊₁‖_F` or the change stops
/// decreasing below `1e-8` relative (rounding floor). The doubling limit is the stabilizing
/// solution when `(Q^½, A)` is detectable; when the limit does not stabilize (an unstable
/// mode unseen by `Q`), the doubling is rerun with `Q + ‖Q‖_F·I` (`I` if `Q = 0`), whose
/// solution gives a stabilizing gain, and Newton's method (Hewer 1971, "An iterative
/// technique for the computation of the steady state gains for the discrete optimal
/// regulator", IEEE Trans. Automatic Control 16(4)) is iterated from it on the original
/// equation until the correction falls below `1e-14·‖X‖_F`. In every case a final Newton
/// step in correction form `(A − BK)ᵀΔ(A − BK) − Δ + 𝓡(X) = 0` ([`solve_lyapunov_discrete`])
/// refines `X`, kept only if it lowers the residual.
///
/// **Cost.** About `(2/3 + 2 + 6)·n³` flops per doubling step (one LU, two solves, five
/// products), typically 5–30 steps; each Newton step is one discrete Lyapunov solve
/// (about 25n³ + O(n³)).
///
/// **Tolerances and errors.** As [`solve_riccati_with`], with the unit circle in place of
/// the imaginary axis (PBH band `||λ| − 1| ≤ 1e-6`, closed-loop test
/// `|λ| < 1 − boundary_tol`). [`NumError::NoSolution`] names the cause when the doubling
/// does not converge or the result does not stabilize.
pub fn solve_riccati_discrete_with(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    q: &DMatrix<f64>,
    r: &DMatrix<f64>,
    params: &RiccatiParams,
) -> NumResult<Riccati> {
    solve_impl(Time::Discrete, a, b, q, r, params, &Roles::CONTROL)
}

// ------------------------------------------------------------------------------------------
// Roles: the same equations serve the regulator and (by duality) the estimator, whose
// arguments and causes read differently.

/// Names of the arguments and wording of the causes, for error messages.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Roles {
    pub a: &'static str,
    pub b: &'static str,
    pub q: &'static str,
    pub r: &'static str,
    /// Completes "mode λ of A …" for a mode that `B` cannot move.
    pub uncontrollable: &'static str,
    /// Completes "mode λ of A …" for a mode that `Q` does not see.
    pub unobservable: &'static str,
}

impl Roles {
    /// The regulator: `(A, B, Q, R)` as given.
    pub const CONTROL: Roles = Roles {
        a: "A",
        b: "B",
        q: "Q",
        r: "R",
        uncontrollable: "is uncontrollable from B, so (A, B) is not stabilizable",
        unobservable: "is unobservable from Q (a mode of (Q^½, A) that Q does not see)",
    };
    /// The estimator, solved as the dual regulator `(Aᵀ, Cᵀ, W, V)`.
    pub const ESTIMATION: Roles = Roles {
        a: "Aᵀ",
        b: "Cᵀ",
        q: "W",
        r: "V",
        uncontrollable: "is unobservable from the output C, so (C, A) is not detectable",
        unobservable: "is not excited by the process noise W (uncontrollable in (A, W^½))",
    };
}

/// The stabilizing solution in `time`, solved in balanced state coordinates: the one entry
/// point of the solvers (`solve_riccati*`, the LQ regulator and estimator).
pub(crate) fn solve_impl(
    time: Time,
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    q: &DMatrix<f64>,
    r: &DMatrix<f64>,
    params: &RiccatiParams,
    roles: &Roles,
) -> NumResult<Riccati> {
    in_balanced_states(a, b, q, r, |a, b, q| match time {
        Time::Continuous => continuous_unscaled(a, b, q, r, params, roles),
        Time::Discrete => discrete_unscaled(a, b, q, r, params, roles),
    })
}

/// Which Riccati equation: continuous or discrete time.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum Time {
    /// `AᵀX + XA − XBR⁻¹BᵀX + Q = 0`.
    Continuous,
    /// `AᵀXA − X − AᵀXB(R + BᵀXB)⁻¹BᵀXA + Q = 0`.
    Discrete,
}

impl Time {
    fn equation(self) -> &'static str {
        match self {
            Time::Continuous => "continuous Riccati equation",
            Time::Discrete => "discrete Riccati equation",
        }
    }
}

/// Checked and prepared data: symmetric `Q`, `Q^½`, Cholesky of `R` and `G = BR⁻¹Bᵀ`.
struct Prepared {
    n: usize,
    m: usize,
    q: DMatrix<f64>,
    q_half: DMatrix<f64>,
    r: DMatrix<f64>,
    r_chol: Option<Cholesky<f64, Dyn>>,
    g: DMatrix<f64>,
}

fn prepare(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    q: &DMatrix<f64>,
    r: &DMatrix<f64>,
    params: &RiccatiParams,
    roles: &Roles,
) -> NumResult<Prepared> {
    let n = check::finite_square(roles.a, a)?;
    if b.nrows() != n {
        return Err(NumError::shape(
            roles.b,
            format!("{n} rows like {} ({n}×{n})", roles.a),
            check::shape_of(b),
        ));
    }
    check::finite(roles.b, b)?;
    let m = b.ncols();
    check::dims(roles.q, q, n, n)?;
    check::finite(roles.q, q)?;
    check::dims(roles.r, r, m, m)?;
    check::finite(roles.r, r)?;
    let q = symmetric_part(roles.q, q, params.symmetry_tol)?;
    let r = symmetric_part(roles.r, r, params.symmetry_tol)?;
    let q_half = psd_sqrt(roles.q, &q, params.semidefinite_tol)?;
    let (r_chol, g) = if m == 0 {
        (None, DMatrix::zeros(n, n))
    } else {
        let chol = Cholesky::new(r.clone()).ok_or_else(|| {
            NumError::invalid(
                roles.r,
                "expected a symmetric positive definite matrix, but its Cholesky \
                 factorisation fails (an eigenvalue is zero or negative)",
            )
        })?;
        let y = chol
            .l()
            .solve_lower_triangular(&b.transpose())
            .ok_or_else(|| {
                NumError::invalid(
                    roles.r,
                    "the Cholesky factor is singular to working precision",
                )
            })?;
        let g = y.transpose() * y;
        check::finite("B R⁻¹ Bᵀ", &g).map_err(|_| {
            NumError::invalid(roles.r, "B R⁻¹ Bᵀ overflows: R is too close to singular")
        })?;
        (Some(chol), symmetrize(&g))
    };
    Ok(Prepared {
        n,
        m,
        q,
        q_half,
        r,
        r_chol,
        g,
    })
}

/// Symmetric square root of a positive semidefinite matrix, after checking the smallest
/// eigenvalue against `−tol·‖Q‖₂` (negative eigenvalues within the tolerance are set to 0).
fn psd_sqrt(what: &str, q: &DMatrix<f64>, tol: f64) -> NumResult<DMatrix<f64>> {
    let n = q.nrows();
    if n == 0 {
        return Ok(DMatrix::zeros(0, 0));
    }
    let eig = SymmetricEigen::try_new(q.clone(), f64::EPSILON, 100 * n + 1000).ok_or(
        NumError::NoConvergence {
            what: format!("symmetric eigenvalues of {what}"),
            iterations: 100 * n + 1000,
        },
    )?;
    let norm = eig.eigenvalues.iter().fold(0.0f64, |s, v| s.max(v.abs()));
    let min = eig.eigenvalues.iter().fold(f64::INFINITY, |s, v| s.min(*v));
    if min < -tol * norm {
        return Err(NumError::invalid(
            what,
            format!(
                "expected a positive semidefinite matrix, found the eigenvalue {min:.3e} \
                 (‖{what}‖₂ = {norm:.3e}, tolerance {tol:.1e}·‖{what}‖₂)"
            ),
        ));
    }
    let roots = eig.eigenvalues.map(|v| v.max(0.0).sqrt());
    let v = &eig.eigenvectors;
    let vs = DMatrix::from_fn(n, n, |i, j| v[(i, j)] * roots[j]);
    Ok(symmetrize(&(vs * v.transpose())))
}

fn symmetrize(x: &DMatrix<f64>) -> DMatrix<f64> {
    (x + x.transpose()) * 0.5
}

fn empty(m: usize) -> Riccati {
    Riccati {
        x: DMatrix::zeros(0, 0),
        gain: DMatrix::zeros(m, 0),
        closed_loop_poles: Vec::new(),
        u11_condition: 1.0,
        residual: 0.0,
    }
}

// ------------------------------------------------------------------------------------------
// Balanced state coordinates

/// Solves in balanced state coordinates and maps the answer back.
///
/// With `x = D z` for a positive diagonal `D` (powers of two, so the change is exact) the
/// equations keep their form with `A_z = D⁻¹AD`, `B_z = D⁻¹B`, `Q_z = DQD` and the same
/// `R`; their solutions are related by `X = D⁻¹X_zD⁻¹` and `K = K_zD⁻¹`, and the closed-loop
/// poles are the same. So every decision of the solvers (the distance of the Hamiltonian
/// eigenvalues from the axis, the closed-loop stability band, the PBH tests, the rounding
/// levels) is taken on data whose size does not depend on the units of the states
/// (NUMERICS.md § Scale invariance). `D` comes from [`symplectic_scaling`]. Inputs of the
/// wrong shape or with non-finite entries go through unscaled, so that the solver's own
/// checks name them.
fn in_balanced_states(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    q: &DMatrix<f64>,
    r: &DMatrix<f64>,
    solve: impl Fn(&DMatrix<f64>, &DMatrix<f64>, &DMatrix<f64>) -> NumResult<Riccati>,
) -> NumResult<Riccati> {
    let n = a.nrows();
    let shapes_ok = a.ncols() == n
        && b.nrows() == n
        && q.shape() == (n, n)
        && r.shape() == (b.ncols(), b.ncols());
    let finite = |m: &DMatrix<f64>| m.iter().all(|v| v.is_finite());
    if n < 2 || !shapes_ok || !(finite(a) && finite(b) && finite(q) && finite(r)) {
        return solve(a, b, q);
    }
    let d = symplectic_scaling(a, b, q, r);
    if d.iter().all(|&v| v == 1.0) {
        return solve(a, b, q);
    }
    let az = DMatrix::from_fn(n, n, |i, j| a[(i, j)] * d[j] / d[i]);
    let bz = DMatrix::from_fn(n, b.ncols(), |i, j| b[(i, j)] / d[i]);
    let qz = DMatrix::from_fn(n, n, |i, j| d[i] * q[(i, j)] * d[j]);
    let mut sol = solve(&az, &bz, &qz)?;
    sol.x = DMatrix::from_fn(n, n, |i, j| sol.x[(i, j)] / (d[i] * d[j]));
    let m = sol.gain.nrows();
    sol.gain = DMatrix::from_fn(m, n, |i, j| sol.gain[(i, j)] / d[j]);
    Ok(sol)
}

/// A diagonal state scaling `D` (powers of two) that balances the Hamiltonian
/// `[[A, −G], [−Q, −Aᵀ]]` (`G = BR⁻¹Bᵀ`) by the symplectic similarity `diag(D, D⁻¹)`,
/// the structure-preserving balancing of Benner (2000), "Symplectic balancing of
/// Hamiltonian matrices", SIAM J. Sci. Comput. 22(5). The similarity multiplies column `i`
/// of `A` and row `i` of `Q` by `dᵢ` (and row `i` of `A` by `1/dᵢ`), entry `Qᵢᵢ` by `dᵢ²`
/// and `Gᵢᵢ` by `1/dᵢ²`; each `dᵢ` in turn is the power of two that minimises the squared
/// Frobenius norm of the scaled Hamiltonian, sweeping until no `dᵢ` changes (Parlett &
/// Reinsch 1969 use the same cyclic, power-of-two scheme for one matrix). `G` is taken as
/// `B·diag(R)⁻¹·Bᵀ` in magnitude, which is enough to choose units. The same `D` serves the
/// discrete equation, whose symplectic pencil transforms alike.
fn symplectic_scaling(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    q: &DMatrix<f64>,
    r: &DMatrix<f64>,
) -> Vec<f64> {
    let n = a.nrows();
    // Magnitudes scaled by a power of two so that squares cannot overflow.
    let mut big = 0.0f64;
    for v in a.iter().chain(q.iter()) {
        big = big.max(v.abs());
    }
    let g = DMatrix::from_fn(n, n, |i, j| {
        (0..b.ncols())
            .map(|k| {
                let rk = r[(k, k)].abs();
                if rk > 0.0 {
                    (b[(i, k)] * b[(j, k)]).abs() / rk
                } else {
                    0.0
                }
            })
            .sum::<f64>()
    });
    for v in g.iter() {
        big = big.max(*v);
    }
    if !(big.is_finite() && big > 0.0) {
        return vec![1.0; n];
    }
    let unit = 2f64.powi(-big.log2().floor() as i32);
    let sq = |v: f64| (v * unit) * (v * unit);
    let aa = a.map(sq);
    let qq = q.map(sq);
    let gg = g.map(sq);
    let mut d = vec![1.0f64; n];
    for _sweep in 0..64 {
        let mut changed = false;
        for i in 0..n {
            // Squared norms that scale by dᵢ² (up), 1/dᵢ² (down), dᵢ⁴ and 1/dᵢ⁴, with the
            // other scalings applied.
            let (mut up, mut down) = (0.0, 0.0);
            for j in 0..n {
                if j == i {
                    continue;
                }
                let rj = d[j] * d[j];
                // A[j][i]·dᵢ/dⱼ and its copy in −Aᵀ; A[i][j]·dⱼ/dᵢ and its copy.
                up += 2.0 * aa[(j, i)] / rj;
                down += 2.0 * aa[(i, j)] * rj;
                // Q[i][j]·dᵢdⱼ (and Q[j][i]); G[i][j]/(dᵢdⱼ).
                up += 2.0 * qq[(i, j)] * rj;
                down += 2.0 * gg[(i, j)] / rj;
            }
            let (q4, g4) = (qq[(i, i)], gg[(i, i)]);
            let cost = |s: f64| up * s * s + down / (s * s) + q4 * s.powi(4) + g4 / s.powi(4);
            let mut s = d[i];
            let mut best = cost(s);
            for step in [2.0, 0.5] {
                loop {
                    let t = s * step;
                    if !(1e-150..=1e150).contains(&t) {
                        break;
                    }
                    let c = cost(t);
                    if c < 0.95 * best {
                        best = c;
                        s = t;
                    } else {
                        break;
                    }
                }
            }
            if s != d[i] {
                d[i] = s;
                changed = true;
            }
        }
        if !changed {
            break;
        }
    }
    d
}

fn ratio(res: f64, scale: f64) -> f64 {
    if scale > 0.0 {
        res / scale
    } else {
        res
    }
}

/// Relative residual (residual norm over the norm of the terms that make it) at or below
/// which a Newton correction is not tried: the computed residual is then itself rounding,
/// so the correction solves for noise and, through an ill-conditioned closed-loop Lyapunov
/// operator, can move `X` far more than its true error while still lowering the computed
/// residual. Iterative refinement improves a solution only when the residual carries
/// information above its own rounding level (Higham 2002, *Accuracy and Stability of
/// Numerical Algorithms*, 2nd ed., §12.1).
fn residual_at_rounding_level(res: f64, scale: f64, n: usize) -> bool {
    res <= 4.0 * (n.max(1) as f64) * f64::EPSILON * scale
}

/// Condition of `U₁₁ = (I + X²)^{-1/2}`: `√(1 + μ_max²)/√(1 + μ_min²)` over eigenvalues μ of X.
fn graph_condition(x: &DMatrix<f64>) -> f64 {
    let n = x.nrows();
    match SymmetricEigen::try_new(x.clone(), f64::EPSILON, 100 * n + 1000) {
        Some(e) => {
            let sq = e.eigenvalues.map(|v| v * v);
            let hi = sq.iter().fold(0.0f64, |s, v| s.max(*v));
            let lo = sq.iter().fold(f64::INFINITY, |s, v| s.min(*v));
            ((1.0 + hi) / (1.0 + lo)).sqrt()
        }
        None => f64::NAN,
    }
}

#[cfg(test)]
mod tests;
