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
use crate::numeric::error::{NumError, NumResult};
use crate::numeric::linalg::dense::singular_values;
use crate::numeric::linalg::eigen::eigenvalues;
use crate::numeric::linalg::schur::RealSchur;
use crate::numeric::linalg::sylvester::{
    fmt_complex, solve_lyapunov, solve_lyapunov_discrete, symmetric_part,
};
use nalgebra::{Cholesky, Complex, DMatrix, Dyn, SymmetricEigen};

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
    continuous_impl(a, b, q, r, params, &Roles::CONTROL)
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
    discrete_impl(a, b, q, r, params, &Roles::CONTROL)
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

#[derive(Debug, Clone, Copy, PartialEq)]
enum Time {
    Continuous,
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

// ------------------------------------------------------------------------------------------
// Continuous time

pub(crate) fn continuous_impl(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    q: &DMatrix<f64>,
    r: &DMatrix<f64>,
    params: &RiccatiParams,
    roles: &Roles,
) -> NumResult<Riccati> {
    in_balanced_states(a, b, q, r, |a, b, q| {
        continuous_unscaled(a, b, q, r, params, roles)
    })
}

fn continuous_unscaled(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    q: &DMatrix<f64>,
    r: &DMatrix<f64>,
    params: &RiccatiParams,
    roles: &Roles,
) -> NumResult<Riccati> {
    let pr = prepare(a, b, q, r, params, roles)?;
    let n = pr.n;
    if n == 0 {
        return Ok(empty(pr.m));
    }
    let fail = |cause: String| no_stabilizing(Time::Continuous, a, b, &pr.q_half, roles, cause);
    // Scaling X = αY balances the off-diagonal blocks of the Hamiltonian.
    let (nq, ng) = (pr.q.norm(), pr.g.norm());
    let alpha = if nq > 0.0 && ng > 0.0 {
        (nq / ng).sqrt()
    } else {
        1.0
    };
    let mut h = DMatrix::zeros(2 * n, 2 * n);
    h.view_mut((0, 0), (n, n)).copy_from(a);
    h.view_mut((0, n), (n, n)).copy_from(&(&pr.g * -alpha));
    h.view_mut((n, 0), (n, n))
        .copy_from(&(&pr.q * (-1.0 / alpha)));
    h.view_mut((n, n), (n, n)).copy_from(&(-a.transpose()));
    let hnorm = h.norm();
    let mut schur = RealSchur::new(&h)?;
    let closest = schur
        .eigenvalues()
        .into_iter()
        .min_by(|x, y| x.re.abs().total_cmp(&y.re.abs()))
        .unwrap_or(Complex::new(f64::INFINITY, 0.0));
    if closest.re.abs() <= params.boundary_tol * hnorm {
        return Err(fail(format!(
            "the Hamiltonian matrix has an eigenvalue within {:.1e}·‖H‖ of the imaginary axis \
             ({}, ‖H‖_F = {hnorm:.3e})",
            params.boundary_tol,
            fmt_complex(closest)
        )));
    }
    let stable = schur.reorder(|z| z.re < 0.0)?;
    if stable != n {
        return Err(fail(format!(
            "the Hamiltonian matrix has {stable} stable eigenvalues, expected {n}"
        )));
    }
    let u11 = schur.q.view((0, 0), (n, n)).into_owned();
    let u21 = schur.q.view((n, 0), (n, n)).into_owned();
    let sv = singular_values(&u11)?;
    let (smax, smin) = (sv[0], sv[n - 1]);
    let u11_condition = if smin > 0.0 {
        smax / smin
    } else {
        f64::INFINITY
    };
    if smin <= params.u11_rcond_min * smax {
        return Err(fail(format!(
            "the stable invariant subspace is not a graph: U₁₁ is numerically singular \
             (condition {u11_condition:.3e})"
        )));
    }
    let yt = u11
        .transpose()
        .lu()
        .solve(&u21.transpose())
        .ok_or_else(|| fail("U₁₁ is singular".to_string()))?;
    let x0 = symmetrize(&(yt.transpose() * alpha));
    if check::finite("X", &x0).is_err() {
        return Err(fail("the solution overflows".to_string()));
    }
    let x = kleinman_step(a, &pr, x0);
    let gain = continuous_gain(b, &pr, &x)?;
    let closed_loop_poles = eigenvalues(&(a - b * &gain))?;
    let worst = closed_loop_poles
        .iter()
        .map(|z| z.re)
        .fold(f64::NEG_INFINITY, f64::max);
    if worst >= -params.boundary_tol * hnorm {
        return Err(fail(format!(
            "the computed closed loop A − BK is not stable (largest real part {worst:.3e})"
        )));
    }
    let res = care_residual(a, &pr, &x).norm();
    let scale = care_scale(a, &pr, &x);
    Ok(Riccati {
        x,
        gain,
        closed_loop_poles,
        u11_condition,
        residual: ratio(res, scale),
    })
}

fn ratio(res: f64, scale: f64) -> f64 {
    if scale > 0.0 {
        res / scale
    } else {
        res
    }
}

/// The norm of the terms of the continuous residual, `‖Q‖ + 2‖A‖‖X‖ + ‖X‖²‖G‖`: what the
/// residual is measured against.
fn care_scale(a: &DMatrix<f64>, pr: &Prepared, x: &DMatrix<f64>) -> f64 {
    pr.q.norm() + 2.0 * a.norm() * x.norm() + x.norm_squared() * pr.g.norm()
}

/// `AᵀX + XA − XGX + Q`.
fn care_residual(a: &DMatrix<f64>, pr: &Prepared, x: &DMatrix<f64>) -> DMatrix<f64> {
    let xa = x * a;
    xa.transpose() + xa - x * &pr.g * x + &pr.q
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

/// One Newton (Kleinman) step in correction form; returns the better of the two iterates.
/// Skipped when the residual of `x` is already at rounding level
/// ([`residual_at_rounding_level`]).
fn kleinman_step(a: &DMatrix<f64>, pr: &Prepared, x: DMatrix<f64>) -> DMatrix<f64> {
    let res = care_residual(a, pr, &x);
    if residual_at_rounding_level(res.norm(), care_scale(a, pr, &x), pr.n) {
        return x;
    }
    let ac = a - &pr.g * &x;
    match solve_lyapunov(&ac.transpose(), &symmetrize(&res)) {
        Ok(d) => {
            let x1 = symmetrize(&(&x + d));
            if care_residual(a, pr, &x1).norm() <= res.norm() {
                x1
            } else {
                x
            }
        }
        Err(_) => x,
    }
}

/// `K = R⁻¹BᵀX` through the Cholesky factor of `R`.
fn continuous_gain(b: &DMatrix<f64>, pr: &Prepared, x: &DMatrix<f64>) -> NumResult<DMatrix<f64>> {
    match &pr.r_chol {
        None => Ok(DMatrix::zeros(0, pr.n)),
        Some(chol) => Ok(chol.solve(&(b.transpose() * x))),
    }
}

// ------------------------------------------------------------------------------------------
// Discrete time

pub(crate) fn discrete_impl(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    q: &DMatrix<f64>,
    r: &DMatrix<f64>,
    params: &RiccatiParams,
    roles: &Roles,
) -> NumResult<Riccati> {
    in_balanced_states(a, b, q, r, |a, b, q| {
        discrete_unscaled(a, b, q, r, params, roles)
    })
}

fn discrete_unscaled(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    q: &DMatrix<f64>,
    r: &DMatrix<f64>,
    params: &RiccatiParams,
    roles: &Roles,
) -> NumResult<Riccati> {
    let pr = prepare(a, b, q, r, params, roles)?;
    let n = pr.n;
    if n == 0 {
        return Ok(empty(pr.m));
    }
    let fail = |cause: String| no_stabilizing(Time::Discrete, a, b, &pr.q_half, roles, cause);
    let mut x = sda(a, &pr.g, &pr.q, params).map_err(&fail)?;
    let radius = |x: &DMatrix<f64>| -> NumResult<f64> {
        let (k, _) = discrete_gain(a, b, &pr, x)?;
        let poles = eigenvalues(&(a - b * k))?;
        Ok(poles.iter().map(|z| z.norm()).fold(0.0, f64::max))
    };
    let stabilizing = matches!(radius(&x), Ok(rho) if rho < 1.0 - params.boundary_tol);
    if !stabilizing {
        // The doubling limit misses an unstable mode that Q does not see: restart Newton's
        // method from the solution of a detectable problem, whose gain stabilizes (A, B).
        let shift = if pr.q.norm() > 0.0 { pr.q.norm() } else { 1.0 };
        let qreg = &pr.q + DMatrix::identity(n, n) * shift;
        let start = sda(a, &pr.g, &qreg, params).map_err(&fail)?;
        x = hewer_iterate(a, b, &pr, start, params.max_newton_steps)
            .map_err(|e| fail(format!("Newton's method broke down ({e})")))?;
    }
    let x = hewer_step(a, b, &pr, x);
    let (gain, term) = discrete_gain(a, b, &pr, &x).map_err(|e| fail(e.to_string()))?;
    let closed_loop_poles = eigenvalues(&(a - b * &gain))?;
    let rho = closed_loop_poles
        .iter()
        .map(|z| z.norm())
        .fold(0.0, f64::max);
    if rho >= 1.0 - params.boundary_tol {
        return Err(fail(format!(
            "the computed closed loop A − BK is not stable (spectral radius {rho:.6})"
        )));
    }
    let res = dare_residual(a, &pr, &x, &term).norm();
    let scale = dare_scale(a, &pr, &x, &term);
    Ok(Riccati {
        u11_condition: graph_condition(&x),
        x,
        gain,
        closed_loop_poles,
        residual: ratio(res, scale),
    })
}

/// The structure-preserving doubling iteration; `Err` carries the reason it failed.
fn sda(
    a: &DMatrix<f64>,
    g: &DMatrix<f64>,
    h0: &DMatrix<f64>,
    params: &RiccatiParams,
) -> Result<DMatrix<f64>, String> {
    let n = a.nrows();
    let id = DMatrix::<f64>::identity(n, n);
    let (mut ak, mut gk, mut hk) = (a.clone(), g.clone(), h0.clone());
    let mut previous = f64::INFINITY;
    for _ in 0..params.max_doubling_steps {
        let lu = (&id + &gk * &hk).lu();
        let (wa, wg) = match (lu.solve(&ak), lu.solve(&gk)) {
            (Some(wa), Some(wg)) => (wa, wg),
            _ => return Err("the doubling iteration met a singular matrix I + GₖHₖ".into()),
        };
        let a1 = &ak * &wa;
        let g1 = symmetrize(&(&gk + &ak * wg * ak.transpose()));
        let h1 = symmetrize(&(&hk + ak.transpose() * &hk * wa));
        if check::finite("A", &a1).is_err()
            || check::finite("G", &g1).is_err()
            || check::finite("H", &h1).is_err()
        {
            return Err("the doubling iteration overflowed".into());
        }
        let change = (&h1 - &hk).norm();
        let size = h1.norm();
        ak = a1;
        gk = g1;
        hk = h1;
        if change <= 1e-13 * size || (previous <= 1e-8 * size && change >= previous) {
            return Ok(hk);
        }
        previous = change;
    }
    Err(format!(
        "the doubling iteration did not converge in {} steps (a closed-loop pole on or very \
         near the unit circle)",
        params.max_doubling_steps
    ))
}

/// `K = (R + BᵀXB)⁻¹BᵀXA` and the term `AᵀXB(R + BᵀXB)⁻¹BᵀXA = (BᵀXA)ᵀK`.
fn discrete_gain(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    pr: &Prepared,
    x: &DMatrix<f64>,
) -> NumResult<(DMatrix<f64>, DMatrix<f64>)> {
    if pr.m == 0 {
        return Ok((DMatrix::zeros(0, pr.n), DMatrix::zeros(pr.n, pr.n)));
    }
    let xb = x * b;
    let s = symmetrize(&(&pr.r + b.transpose() * &xb));
    let f = xb.transpose() * a;
    let chol = Cholesky::new(s).ok_or_else(|| {
        NumError::no_solution("discrete Riccati gain", "R + BᵀXB is not positive definite")
    })?;
    let k = chol.solve(&f);
    let term = symmetrize(&(f.transpose() * &k));
    Ok((k, term))
}

/// `AᵀXA − X − AᵀXB(R + BᵀXB)⁻¹BᵀXA + Q` given the third term.
fn dare_residual(
    a: &DMatrix<f64>,
    pr: &Prepared,
    x: &DMatrix<f64>,
    term: &DMatrix<f64>,
) -> DMatrix<f64> {
    a.transpose() * x * a - x - term + &pr.q
}

/// The norm of the terms of the discrete residual, `‖Q‖ + ‖X‖ + ‖A‖²‖X‖ + ‖term‖`.
fn dare_scale(a: &DMatrix<f64>, pr: &Prepared, x: &DMatrix<f64>, term: &DMatrix<f64>) -> f64 {
    let an = a.norm();
    pr.q.norm() + x.norm() + an * an * x.norm() + term.norm()
}

/// One Newton (Hewer) step in correction form; returns the better of the two iterates.
/// Skipped when the residual of `x` is already at rounding level
/// ([`residual_at_rounding_level`]).
fn hewer_step(a: &DMatrix<f64>, b: &DMatrix<f64>, pr: &Prepared, x: DMatrix<f64>) -> DMatrix<f64> {
    let Ok((k, term)) = discrete_gain(a, b, pr, &x) else {
        return x;
    };
    let res = dare_residual(a, pr, &x, &term);
    if residual_at_rounding_level(res.norm(), dare_scale(a, pr, &x, &term), pr.n) {
        return x;
    }
    let ac = a - b * k;
    match solve_lyapunov_discrete(&ac.transpose(), &symmetrize(&res)) {
        Ok(d) => {
            let x1 = symmetrize(&(&x + d));
            match discrete_gain(a, b, pr, &x1) {
                Ok((_, t1)) if dare_residual(a, pr, &x1, &t1).norm() <= res.norm() => x1,
                _ => x,
            }
        }
        Err(_) => x,
    }
}

/// Newton's method (Hewer) from a stabilizing `x` until the correction is below
/// `1e-14·‖X‖_F` or `max` steps.
fn hewer_iterate(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    pr: &Prepared,
    mut x: DMatrix<f64>,
    max: usize,
) -> NumResult<DMatrix<f64>> {
    for _ in 0..max {
        let (k, term) = discrete_gain(a, b, pr, &x)?;
        let res = dare_residual(a, pr, &x, &term);
        let ac = a - b * k;
        let d = solve_lyapunov_discrete(&ac.transpose(), &symmetrize(&res))?;
        x = symmetrize(&(&x + &d));
        if d.norm() <= 1e-14 * x.norm() {
            break;
        }
    }
    Ok(x)
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

// ------------------------------------------------------------------------------------------
// Diagnosis of a missing stabilizing solution

/// Relative PBH threshold and boundary band used by the diagnosis (see the doc comments).
const PBH_TOL: f64 = 1e-6;

/// The error for a missing stabilizing solution: the modes found by PBH tests, else `cause`.
fn no_stabilizing(
    time: Time,
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    q_half: &DMatrix<f64>,
    roles: &Roles,
    cause: String,
) -> NumError {
    let found = diagnose(time, a, b, q_half, roles);
    let why = if found.is_empty() {
        format!("no stabilizing solution: {cause}")
    } else {
        format!("no stabilizing solution: {} ({cause})", found.join("; "))
    };
    NumError::no_solution(time.equation(), why)
}

/// PBH tests at the eigenvalues of `A` that are not stable (controllability) or lie on the
/// stability boundary (observability through `Q^½`).
fn diagnose(
    time: Time,
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    q_half: &DMatrix<f64>,
    roles: &Roles,
) -> Vec<String> {
    let Ok(values) = eigenvalues(a) else {
        return Vec::new();
    };
    let scale = a.norm().max(1.0);
    let mut out = Vec::new();
    for lambda in values.into_iter().filter(|z| z.im >= 0.0) {
        let (boundary, not_stable, place) = match time {
            Time::Continuous => (
                lambda.re.abs() <= PBH_TOL * scale,
                lambda.re >= -PBH_TOL * scale,
                "on the imaginary axis",
            ),
            Time::Discrete => (
                (lambda.norm() - 1.0).abs() <= PBH_TOL * lambda.norm().max(1.0),
                lambda.norm() >= 1.0 - PBH_TOL,
                "on the unit circle",
            ),
        };
        let shown = fmt_complex(lambda);
        if not_stable && pbh_deficient(a, b, lambda, false) {
            out.push(format!(
                "mode {shown} of {} {}",
                roles.a, roles.uncontrollable
            ));
        }
        if boundary && pbh_deficient(a, q_half, lambda, true) {
            out.push(format!(
                "mode {shown} of {} lies {place} and {}",
                roles.a, roles.unobservable
            ));
        }
    }
    out
}

/// Whether `[A − λI, M]` (or `[A − λI; M]` when `stacked`) loses rank: its smallest singular
/// value is at most `PBH_TOL` times its Frobenius norm.
fn pbh_deficient(a: &DMatrix<f64>, m: &DMatrix<f64>, lambda: Complex<f64>, stacked: bool) -> bool {
    let n = a.nrows();
    let shifted = DMatrix::from_fn(n, n, |i, j| {
        Complex::new(a[(i, j)], 0.0)
            - if i == j {
                lambda
            } else {
                Complex::new(0.0, 0.0)
            }
    });
    let mc = m.map(|v| Complex::new(v, 0.0));
    let pencil = if stacked {
        let mut p = DMatrix::zeros(n + mc.nrows(), n);
        p.view_mut((0, 0), (n, n)).copy_from(&shifted);
        p.view_mut((n, 0), (mc.nrows(), n)).copy_from(&mc);
        p
    } else {
        let mut p = DMatrix::zeros(n, n + mc.ncols());
        p.view_mut((0, 0), (n, n)).copy_from(&shifted);
        p.view_mut((0, n), (n, mc.ncols())).copy_from(&mc);
        p
    };
    let norm = pencil.norm();
    if norm == 0.0 {
        return true;
    }
    match nalgebra::SVD::try_new(pencil, false, false, f64::EPSILON, 200 * n + 1000) {
        Some(svd) => {
            let smin = svd
                .singular_values
                .iter()
                .fold(f64::INFINITY, |s, v| s.min(*v));
            smin <= PBH_TOL * norm
        }
        None => false,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::assert_close;
    use crate::numeric::testing::Rng;

    fn m(rows: usize, cols: usize, v: &[f64]) -> DMatrix<f64> {
        DMatrix::from_row_slice(rows, cols, v)
    }

    /// Residual-ratio threshold for well-conditioned random cases: a small multiple of n·ε
    /// (the scaled-residual idea of LAPACK-style tests; the factor 100 is our choice).
    fn threshold(n: usize) -> f64 {
        100.0 * n as f64 * f64::EPSILON
    }

    #[test]
    fn double_integrator_closed_form() {
        // A = [[0, 1], [0, 0]], B = [0; 1], Q = I, R = 1. Writing X = [[p, q], [q, s]], the
        // equation AᵀX + XA − XBBᵀX + I = 0 reads entrywise
        //   (1,1): −q² + 1 = 0,  (1,2): p − q·s = 0,  (2,2): 2q − s² + 1 = 0.
        // X ⪰ 0 and stabilizing give q = 1, s = √3, p = √3, so X = [[√3, 1], [1, √3]] and
        // K = BᵀX = [1, √3] (closed loop s² + √3 s + 1, poles −√3/2 ± i/2).
        let a = m(2, 2, &[0.0, 1.0, 0.0, 0.0]);
        let b = m(2, 1, &[0.0, 1.0]);
        let s3 = 3f64.sqrt();
        let sol = solve_riccati(&a, &b, &DMatrix::identity(2, 2), &m(1, 1, &[1.0])).unwrap();
        assert_close!(sol.x, m(2, 2, &[s3, 1.0, 1.0, s3]), 1e-14, 1e-14);
        assert_close!(sol.gain, m(1, 2, &[1.0, s3]), 1e-14, 1e-14);
        let p = &sol.closed_loop_poles;
        assert_close!(p[0].re, -s3 / 2.0, 1e-14, 1e-14);
        assert_close!(p[0].im, -0.5, 1e-14, 1e-14);
        assert!(sol.residual < threshold(2), "residual {}", sol.residual);
    }

    #[test]
    fn scalar_continuous_closed_form() {
        // Scalar: 2a·x − (b²/r)·x² + q = 0, whose stabilizing root (a − b²x/r < 0) is
        // x = (a + √(a² + b²q/r))·r/b².
        for &(a, b, q, r) in &[
            (1.0, 1.0, 1.0, 1.0),
            (-2.0, 0.5, 3.0, 0.1),
            (5.0, 2.0, 0.0, 4.0),
        ] {
            let sol = solve_riccati(
                &m(1, 1, &[a]),
                &m(1, 1, &[b]),
                &m(1, 1, &[q]),
                &m(1, 1, &[r]),
            )
            .unwrap();
            let want = (a + (a * a + b * b * q / r).sqrt()) * r / (b * b);
            assert_close!(sol.x[(0, 0)], want, 1e-14, 1e-14);
            assert!(sol.closed_loop_poles[0].re < 0.0);
        }
    }

    #[test]
    fn scalar_discrete_closed_form() {
        // Scalar: x = a²x − a²b²x²/(r + b²x) + q. Multiplying by (r + b²x):
        //   b²x² + (r − a²r − q·b²)·x − q·r = 0, so with c = r(1 − a²) − q·b²
        //   x = (−c + √(c² + 4b²qr)) / (2b²), the non-negative (stabilizing) root.
        for &(a, b, q, r) in &[
            (1.2, 1.0, 1.0, 1.0),
            (0.5, 2.0, 3.0, 0.1),
            (-3.0, 0.5, 0.0, 2.0),
        ] {
            let sol = solve_riccati_discrete(
                &m(1, 1, &[a]),
                &m(1, 1, &[b]),
                &m(1, 1, &[q]),
                &m(1, 1, &[r]),
            )
            .unwrap();
            let c = r * (1.0 - a * a) - q * b * b;
            let want = (-c + (c * c + 4.0 * b * b * q * r).sqrt()) / (2.0 * b * b);
            assert_close!(sol.x[(0, 0)], want, 1e-14, 1e-13);
            assert!(sol.closed_loop_poles[0].norm() < 1.0);
        }
    }

    #[test]
    fn double_integrator_discrete_residual_and_stability() {
        // Sampled double integrator (dt = 0.1, zero-order hold: A = [[1, dt], [0, 1]],
        // B = [dt²/2; dt]); both poles at z = 1, the case doubling handles without
        // inverting anything. Checked by residual and closed-loop stability.
        let dt = 0.1;
        let a = m(2, 2, &[1.0, dt, 0.0, 1.0]);
        let b = m(2, 1, &[dt * dt / 2.0, dt]);
        let sol =
            solve_riccati_discrete(&a, &b, &DMatrix::identity(2, 2), &m(1, 1, &[1.0])).unwrap();
        assert!(sol.residual < threshold(2), "residual {}", sol.residual);
        assert!(sol.closed_loop_poles.iter().all(|z| z.norm() < 1.0));
    }

    /// A random stabilizable problem: A with eigenvalues in both half planes, B n×m
    /// (random B makes (A, B) controllable with probability one), Q = CᵀC + 0.1·I, R SPD.
    fn random_problem(rng: &mut Rng, n: usize, m: usize, scale: f64) -> [DMatrix<f64>; 4] {
        let a = rng.matrix(n, n) * scale;
        let b = rng.matrix(n, m);
        let c = rng.matrix(n, n);
        let q = c.transpose() * c + DMatrix::identity(n, n) * 0.1;
        let l = rng.matrix(m, m);
        let r = &l * l.transpose() + DMatrix::identity(m, m);
        [a, b, q, r]
    }

    #[test]
    fn random_continuous_residual_ratio() {
        // Single-input random models of order 40 are numerically almost uncontrollable:
        // ‖X‖ grows roughly geometrically with n (about 1e5 at n = 10, 1e13 at n = 30 in a
        // trial), so U₁₁ is singular to working precision at n = 40 and m = 1. Order 40 is
        // therefore tested with 5 and 20 inputs.
        let mut rng = Rng::new(11);
        for &n in &[1usize, 2, 3, 10, 40] {
            let inputs: &[usize] = if n >= 40 { &[5, 20] } else { &[1, 2, 5] };
            for &m in inputs.iter().filter(|&&m| m <= n.max(1)) {
                let [a, b, q, r] = random_problem(&mut rng, n, m, 1.0);
                let sol = solve_riccati(&a, &b, &q, &r)
                    .unwrap_or_else(|e| panic!("n={n} m={m}: {e}\nA={a}B={b}Q={q}R={r}"));
                assert!(
                    sol.residual < threshold(n),
                    "n={n} m={m}: residual {}",
                    sol.residual
                );
                assert!(sol.closed_loop_poles.iter().all(|z| z.re < 0.0));
                // X symmetric positive semidefinite (Q ≻ 0 here, so positive definite).
                let e = SymmetricEigen::new(sol.x.clone());
                assert!(e.eigenvalues.iter().all(|v| *v > 0.0), "n={n}: X not PD");
                // K = R⁻¹BᵀX, checked as R K = BᵀX.
                let lhs = &r * &sol.gain;
                let rhs = b.transpose() * &sol.x;
                assert_close!(lhs, rhs, 1e-11 * rhs.amax().max(1.0), 1e-10);
            }
        }
    }

    #[test]
    fn random_discrete_residual_ratio() {
        let mut rng = Rng::new(12);
        for &n in &[1usize, 2, 3, 10, 40] {
            for m in [1, n.div_ceil(2)] {
                // Scale 1.2/√n puts the spectral radius of A near 1.2: modes on both sides
                // of the unit circle.
                let [a, b, q, r] = random_problem(&mut rng, n, m, 1.2 / (n as f64).sqrt());
                let sol = solve_riccati_discrete(&a, &b, &q, &r).unwrap();
                assert!(
                    sol.residual < threshold(n),
                    "n={n} m={m}: residual {}",
                    sol.residual
                );
                assert!(sol.closed_loop_poles.iter().all(|z| z.norm() < 1.0));
            }
        }
    }

    #[test]
    fn discrete_singular_a() {
        // A nilpotent (singular): methods that invert A fail here. Residual check.
        let a = m(3, 3, &[0.0, 1.0, 0.0, 0.0, 0.0, 1.0, 0.0, 0.0, 0.0]);
        let b = m(3, 1, &[0.0, 0.0, 1.0]);
        let sol =
            solve_riccati_discrete(&a, &b, &DMatrix::identity(3, 3), &m(1, 1, &[0.5])).unwrap();
        assert!(sol.residual < threshold(3), "residual {}", sol.residual);
    }

    /// A chain of `k` lightly damped oscillators (ω_i = i, ζ = 0.001), coupled by springs,
    /// force input on the first mass only.
    fn lightly_damped_chain(k: usize) -> (DMatrix<f64>, DMatrix<f64>) {
        let n = 2 * k;
        let mut a = DMatrix::zeros(n, n);
        for i in 0..k {
            let w = (i + 1) as f64;
            a[(2 * i, 2 * i + 1)] = 1.0;
            a[(2 * i + 1, 2 * i)] = -w * w;
            a[(2 * i + 1, 2 * i + 1)] = -2.0 * 0.001 * w;
            if i + 1 < k {
                a[(2 * i + 1, 2 * i + 2)] = 0.5;
                a[(2 * i + 3, 2 * i)] = 0.5;
            }
        }
        let mut b = DMatrix::zeros(n, 1);
        b[(1, 0)] = 1.0;
        (a, b)
    }

    #[test]
    fn ill_conditioned_chain_small_r() {
        // Lightly damped chain, cheap control (R = 1e-8): ‖X‖ and ‖K‖ are large and the
        // Hamiltonian badly scaled; the relative residual must still be small. The
        // threshold 1e3·n·ε allows for the condition of the problem (our choice).
        let (a, b) = lightly_damped_chain(5);
        let n = a.nrows();
        for &r in &[1e-8, 1.0, 1e6] {
            let sol = solve_riccati(&a, &b, &DMatrix::identity(n, n), &m(1, 1, &[r])).unwrap();
            assert!(
                sol.residual < 1e3 * n as f64 * f64::EPSILON,
                "r={r}: residual {}",
                sol.residual
            );
            assert!(sol.closed_loop_poles.iter().all(|z| z.re < 0.0));
        }
    }

    #[test]
    fn continuous_u11_condition_matches_graph_identity() {
        // For α = 1 (‖Q‖_F = ‖G‖_F) the Schur basis and the identity U₁₁ = (I + X²)^{-1/2}
        // describe the same subspace, so their conditions agree.
        let a = m(2, 2, &[0.0, 1.0, -2.0, 0.3]);
        let b = m(2, 2, &[1.0, 0.0, 0.0, 1.0]);
        let q = DMatrix::identity(2, 2);
        let sol = solve_riccati(&a, &b, &q, &DMatrix::identity(2, 2)).unwrap();
        assert_close!(sol.u11_condition, graph_condition(&sol.x), 1e-12, 1e-12);
    }

    #[test]
    fn uncontrollable_unstable_mode_is_named() {
        // Mode 1 is unstable and B does not reach it.
        let a = m(2, 2, &[1.0, 0.0, 0.0, -1.0]);
        let b = m(2, 1, &[0.0, 1.0]);
        let q = DMatrix::identity(2, 2);
        let r = m(1, 1, &[1.0]);
        let e = solve_riccati(&a, &b, &q, &r).unwrap_err().to_string();
        assert!(
            e.contains("not stabilizable") && e.contains("1.000000"),
            "{e}"
        );
        let ad = m(2, 2, &[1.5, 0.0, 0.0, 0.5]);
        let e = solve_riccati_discrete(&ad, &b, &q, &r)
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("not stabilizable") && e.contains("1.500000"),
            "{e}"
        );
    }

    #[test]
    fn unobservable_mode_on_boundary_is_named() {
        // Continuous: oscillator poles ±2i, Q = 0 sees nothing; the Hamiltonian has its
        // eigenvalues on the imaginary axis.
        let a = m(2, 2, &[0.0, 1.0, -4.0, 0.0]);
        let b = m(2, 1, &[0.0, 1.0]);
        let q = DMatrix::zeros(2, 2);
        let r = m(1, 1, &[1.0]);
        let e = solve_riccati(&a, &b, &q, &r).unwrap_err().to_string();
        assert!(
            e.contains("imaginary axis") && e.contains("unobservable"),
            "{e}"
        );
        // Integrator 0 unseen by Q = diag(0, 1) on a decoupled stable second state.
        let a2 = m(2, 2, &[0.0, 0.0, 0.0, -1.0]);
        let b2 = m(2, 1, &[1.0, 1.0]);
        let q2 = m(2, 2, &[0.0, 0.0, 0.0, 1.0]);
        let e = solve_riccati(&a2, &b2, &q2, &r).unwrap_err().to_string();
        assert!(e.contains("unobservable") && e.contains("0.000000"), "{e}");
        // Discrete: a rotation (poles e^{±i}) with Q = 0.
        let (c, s) = (1f64.cos(), 1f64.sin());
        let ad = m(2, 2, &[c, -s, s, c]);
        let e = solve_riccati_discrete(&ad, &b, &q, &r)
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("unit circle") && e.contains("unobservable"),
            "{e}"
        );
    }

    #[test]
    fn undetectable_unstable_mode_still_solved() {
        // Q = 0 with A unstable: the stabilizing solution exists (it mirrors the unstable
        // poles). Scalar closed forms: continuous x = 2a·r/b² (pole −a), discrete
        // x = r(a² − 1)/b² (pole 1/a), from the formulas of the scalar tests with q = 0.
        let (a, b, r) = (2.0, 1.0, 1.0);
        let z = m(1, 1, &[0.0]);
        let c = solve_riccati(&m(1, 1, &[a]), &m(1, 1, &[b]), &z, &m(1, 1, &[r])).unwrap();
        assert_close!(c.x[(0, 0)], 2.0 * a * r / (b * b), 1e-14, 1e-14);
        let d = solve_riccati_discrete(&m(1, 1, &[a]), &m(1, 1, &[b]), &z, &m(1, 1, &[r])).unwrap();
        assert_close!(d.x[(0, 0)], r * (a * a - 1.0) / (b * b), 1e-14, 1e-13);
        assert_close!(d.closed_loop_poles[0].re, 1.0 / a, 1e-14, 1e-13);
    }

    #[test]
    fn bad_input_is_named() {
        let a = DMatrix::identity(2, 2);
        let b = m(2, 1, &[1.0, 1.0]);
        let q = DMatrix::identity(2, 2);
        let r = m(1, 1, &[1.0]);
        let e = solve_riccati(&m(2, 3, &[0.0; 6]), &b, &q, &r).unwrap_err();
        assert!(matches!(e, NumError::NotSquare { .. }));
        let e = solve_riccati(&a, &m(3, 1, &[1.0; 3]), &q, &r)
            .unwrap_err()
            .to_string();
        assert!(e.starts_with("B:"), "{e}");
        let e = solve_riccati(&a, &b, &m(2, 2, &[1.0, 2.0, 0.0, 1.0]), &r).unwrap_err();
        assert!(e.to_string().contains("symmetric"), "{e}");
        let e = solve_riccati(&a, &b, &m(2, 2, &[1.0, 0.0, 0.0, -1.0]), &r).unwrap_err();
        assert!(e.to_string().contains("positive semidefinite"), "{e}");
        let e = solve_riccati_discrete(&a, &b, &q, &m(1, 1, &[0.0])).unwrap_err();
        assert!(
            e.to_string().starts_with("R:") && e.to_string().contains("definite"),
            "{e}"
        );
        let e = solve_riccati(&a, &b, &q, &m(2, 2, &[1.0; 4])).unwrap_err();
        assert!(e.to_string().starts_with("R:"), "{e}");
        let e = solve_riccati(&a, &b, &m(2, 2, &[f64::NAN, 0.0, 0.0, 1.0]), &r).unwrap_err();
        assert!(matches!(e, NumError::NotFinite { .. }));
    }

    #[test]
    fn empty_and_inputless() {
        let z = DMatrix::zeros(0, 0);
        let sol = solve_riccati(&z, &DMatrix::zeros(0, 1), &z, &m(1, 1, &[1.0])).unwrap();
        assert_eq!(sol.gain.shape(), (1, 0));
        // No inputs, stable A: the equation is the Lyapunov equation AᵀX + XA + Q = 0;
        // scalar a = −1, q = 2 gives x = q/(2|a|) = 1.
        let sol = solve_riccati(
            &m(1, 1, &[-1.0]),
            &DMatrix::zeros(1, 0),
            &m(1, 1, &[2.0]),
            &z,
        )
        .unwrap();
        assert_close!(sol.x[(0, 0)], 1.0, 1e-14, 1e-14);
        // Discrete scalar a = 0.5, q = 0.75: x = q/(1 − a²) = 1.
        let sol = solve_riccati_discrete(
            &m(1, 1, &[0.5]),
            &DMatrix::zeros(1, 0),
            &m(1, 1, &[0.75]),
            &z,
        )
        .unwrap();
        assert_close!(sol.x[(0, 0)], 1.0, 1e-14, 1e-14);
    }
}
