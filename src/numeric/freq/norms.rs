//! System norms and bandwidth: `h2_norm`, `hinf_norm`, `bandwidth`.
//!
//! The model is `x' = A x + B u, y = C x + D u` (continuous, `dt = 0`) or
//! `x[k+1] = A x[k] + B u[k], y[k] = C x[k] + D u[k]` (discrete, `dt > 0`), with transfer
//! matrix `G(s) = C (sI − A)⁻¹ B + D`, evaluated at `s = jω` or `z = e^{jω·dt}`.
//!
//! **Stability.** Both norms are those of the Hardy spaces: a model with a pole on or
//! beyond the stability boundary (`Re λ ≥ 0`, `|λ| ≥ 1`, judged with the margin of the
//! Lyapunov solvers, relative to each pole's own size: `−2 Re λ > 2·max(10⁻¹²|λ|,
//! 8ε‖Ã‖_F)`, resp. `1 − |λ|² > max(10⁻¹²(1 + |λ|²), 16ε‖Ã‖_F)`, Ã the balanced A) has
//! infinite H2 and H∞ norms; the routines return `f64::INFINITY` for it, not an error.
//!
//! **Scaling.** The state coordinates are balanced (a power-of-two diagonal similarity of
//! the system matrix, which leaves the transfer function unchanged) before the Lyapunov
//! solve and before the Hamiltonian imaginary-axis test, so the norms do not depend on the
//! units of the states.

use crate::numeric::freq::grid::{
    auto_frequency_grid, brent_root, extend_grid, siso_sweep, SweepParams,
};
use crate::numeric::freq::response::FrequencyEvaluator;
use crate::numeric::linalg::eigen::eigenvalues;
use crate::numeric::linalg::hammarling::{
    lyapunov_cholesky, lyapunov_cholesky_discrete, stability_violation,
};
use crate::numeric::linalg::sylvester::MatrixEquationParams;
use crate::numeric::lti::system::StateSpace;
use crate::numeric::{NumError, NumResult};
use nalgebra::linalg::SVD;
use nalgebra::{Complex, DMatrix};
use std::f64::consts::PI;

type C64 = Complex<f64>;

/// The H2 norm of a stable model.
///
/// **Mathematics.** Continuous: `‖G‖₂² = (1/2π) ∫ ‖G(jω)‖_F² dω = trace(C W_c Cᵀ)`,
/// `W_c` the controllability Gramian (`A W_c + W_c Aᵀ + B Bᵀ = 0`); finite only for a
/// strictly proper model, so any `D ≠ 0` gives `∞`. Discrete: the 2-norm of the impulse
/// response sequence `D, CB, CAB, …`, `‖G‖₂² = trace(C W_c Cᵀ + D Dᵀ)` with
/// `A W_c Aᵀ − W_c + B Bᵀ = 0` (no `dt` scaling). Unstable or marginally stable models
/// (see the module notes) give `∞`.
///
/// **Algorithm.** The Gramian in factored form `W_c = U Uᵀ`, computed directly by
/// Hammarling (1982), "Numerical solution of the stable, non-negative definite Lyapunov
/// equation", IMA J. Numer. Anal. ([`lyapunov_cholesky`]); then
/// `‖G‖₂ = ‖[C U, D]‖_F` (the `D` block only when discrete). The factored form keeps the
/// trace non-negative and accurate even when `W_c` is numerically singular.
///
/// **Cost.** One real Schur form for the stability check (eigenvalues) and one inside the
/// factor computation: about 50n³ flops, plus O(n²(m + p)).
///
/// **Tolerance.** Backward stable through the Lyapunov solver: relative error about
/// `n·ε` times the condition of the Lyapunov equation (large when poles are close to the
/// stability boundary).
pub fn h2_norm(sys: &StateSpace) -> NumResult<f64> {
    let discrete = sys.is_discrete();
    if !discrete && sys.d.iter().any(|&x| x != 0.0) {
        return Ok(f64::INFINITY);
    }
    if unstable(sys)?.is_some() {
        return Ok(f64::INFINITY);
    }
    let factor = if discrete {
        lyapunov_cholesky_discrete(&sys.a, &sys.b)
    } else {
        lyapunov_cholesky(&sys.a, &sys.b)
    };
    let u = match factor {
        Ok(u) => u,
        // The solver's own Schur form may judge a pole at the margin unstable.
        Err(NumError::NoSolution { .. }) => return Ok(f64::INFINITY),
        Err(e) => return Err(e),
    };
    let cu = &sys.c * u;
    let mut sum = cu.norm_squared();
    if discrete {
        sum += sys.d.norm_squared();
    }
    Ok(sum.sqrt())
}

/// Tolerances of [`hinf_norm_with`].
#[derive(Debug, Clone, PartialEq)]
pub struct HinfParams {
    /// Target relative accuracy: each level is `γ = (1 + 2·rel_tol)·σ_lb`, so on
    /// termination the norm lies in `[σ_lb, (1 + 2·rel_tol)·σ_lb]` (default 1e-12).
    pub rel_tol: f64,
    /// An eigenvalue `λ` of the Hamiltonian counts as imaginary when
    /// `|Re λ| ≤ imaginary_tol·max(|λ|, 10⁻⁴‖H‖_F)` (default 1e-6: a crossing is kept
    /// while its eigenvalue condition number stays below about 10⁹, and eigenvalues near
    /// 0 get an absolute floor of 10⁻¹⁰‖H‖_F for their rounding error). A loose value only
    /// costs extra evaluations — a spurious candidate never raises the lower bound above a
    /// value actually attained, and every midpoint is evaluated — while a tight one could
    /// miss a crossing and stop early.
    pub imaginary_tol: f64,
    /// Cap on the level-set iterations (default 100); convergence is quadratic, so
    /// typically 3–8 suffice.
    pub max_iterations: usize,
}

impl Default for HinfParams {
    fn default() -> Self {
        HinfParams {
            rel_tol: 1e-12,
            imaginary_tol: 1e-6,
            max_iterations: 100,
        }
    }
}

/// The H∞ norm `sup_ω σ_max(G(jω))` and a frequency (rad/s) where it is attained, with the
/// default [`HinfParams`]; see [`hinf_norm_with`].
pub fn hinf_norm(sys: &StateSpace) -> NumResult<(f64, f64)> {
    hinf_norm_with(sys, &HinfParams::default())
}

/// The H∞ norm `‖G‖∞ = sup_ω σ_max(G(jω))` (discrete: over `0 ≤ ω ≤ π/dt` of
/// `σ_max(G(e^{jω·dt}))`) and the frequency `ω` (rad/s) where it is attained.
///
/// **Mathematics.** For `γ > σ_max(D)`, with `R = γ²I − DᵀD`, `S = γ²I − DDᵀ`, the
/// Hamiltonian
///
/// ```text
/// H(γ) = [ A + B R⁻¹ Dᵀ C        γ B R⁻¹ Bᵀ          ]
///        [ −γ Cᵀ S⁻¹ C           −(A + B R⁻¹ Dᵀ C)ᵀ  ]
/// ```
///
/// has the eigenvalue `jω` exactly when `γ` is a singular value of `G(jω)` (Boyd,
/// Balakrishnan & Kabamba 1989, "A bisection method for computing the H∞ norm of a
/// transfer matrix and related problems", Math. Control Signals Systems). So `γ` exceeds
/// the norm exactly when `H(γ)` has no imaginary eigenvalue.
///
/// **Algorithm.** The quadratically convergent level-set iteration of Bruinsma &
/// Steinbuch (1990), "A fast algorithm to compute the H∞-norm of a transfer function
/// matrix", Systems & Control Letters 14: start the lower bound `σ_lb` from `σ_max(D)`
/// (ω = ∞), `σ_max(G(0))` and `σ_max(G(jω))` at every pole's `|Im λ|` and `|λ|`; repeat:
/// `γ = (1 + 2·rel_tol)σ_lb`, take the imaginary eigenvalues `jω₁ < … < jω_k` (ω ≥ 0) of
/// `H(γ)`; if none, stop; else evaluate `σ_max` at every midpoint `(ωᵢ + ωᵢ₊₁)/2` and raise
/// `σ_lb` to the largest; stop too when no midpoint exceeds `γ` (then the candidates were
/// rounding artefacts of a tangency). Finally a golden-section search for the maximum of
/// `σ_max` on the last interval recovers the digits that nearly double eigenvalues at a
/// tangency cannot resolve. The value returned is a σ_max actually attained; the true
/// norm lies within a relative `2·rel_tol` above it (up to the rounding of the
/// imaginary-axis test).
///
/// Discrete models are mapped by the bilinear transform `z = (1 + s)/(1 − s)`, which
/// takes the unit circle onto the imaginary axis (`z = e^{jθ}` ↔ `s = j tan(θ/2)`) and
/// keeps the norm: `A_c = (A + I)⁻¹(A − I)`, `B_c = √2 (A + I)⁻¹ B`, `C_c = √2 C (A + I)⁻¹`,
/// `D_c = D − C (A + I)⁻¹ B`; the frequency maps back as `ω = 2 atan(ν)/dt`, ν = ∞ to
/// the Nyquist frequency π/dt.
///
/// **Results.** The frequency is `∞` (continuous) when the supremum is only approached
/// as ω → ∞ (at `σ_max(D)`); `0` for a static model (n = 0). Unstable or marginally stable
/// models give `(∞, ω)` with ω the frequency of the worst pole (`|Im λ|`, or `|arg λ|/dt`).
///
/// **Cost.** One eigenvalue problem of order 2n (about 25·(2n)³ flops) per iteration,
/// O(n²(m + p)) per evaluation of `σ_max` (Hessenberg form computed once, Laub 1981).
///
/// **Tolerance.** See [`HinfParams`]. The frequency of a smooth peak is determined only
/// to about `√ε` relative. The norm itself is ill-conditioned when a pole lies within a
/// small distance δ of the stability boundary (relative to ‖A‖): rounding errors of A
/// alone move it by about `ε/δ` relative, and that is the accuracy to expect. The
/// bilinear map costs accuracy when a pole is near
/// `z = −1` (the condition of `A + I`); the discrete result is therefore polished by a
/// golden-section search on the discrete model's own response near the peak.
///
/// **Errors.** Invalid parameters; failures of the eigenvalue computations;
/// [`NoConvergence`](NumError::NoConvergence) past the iteration cap.
pub fn hinf_norm_with(sys: &StateSpace, params: &HinfParams) -> NumResult<(f64, f64)> {
    if !(params.rel_tol > 0.0 && params.rel_tol < 0.1) {
        return Err(NumError::invalid(
            "rel_tol",
            format!("expected a number in (0, 0.1), found {}", params.rel_tol),
        ));
    }
    if !(params.imaginary_tol > 0.0 && params.imaginary_tol.is_finite()) {
        return Err(NumError::invalid(
            "imaginary_tol",
            format!(
                "expected a finite number > 0, found {}",
                params.imaginary_tol
            ),
        ));
    }
    if sys.order() == 0 || sys.inputs() == 0 || sys.outputs() == 0 {
        return Ok((sigma_max(&sys.d.map(|x| C64::new(x, 0.0)))?, 0.0));
    }
    if let Some(w) = unstable(sys)? {
        return Ok((f64::INFINITY, w));
    }
    // Balanced state coordinates (same transfer function): the Hamiltonian's
    // imaginary-axis test is then relative to a matrix whose size reflects the dynamics,
    // not the units of the states.
    let sc = crate::numeric::lti::staircase::balance_system(&sys.a, &sys.b, &sys.c);
    let (ab, bb, cb) = sc.apply_state(&sys.a, &sys.b, &sys.c);
    let balanced = sys.with_matrices(ab, bb, cb, sys.d.clone())?;
    let sys = &balanced;
    if !sys.is_discrete() {
        return level_set(sys, params);
    }
    let n = sys.order();
    let api = &sys.a + DMatrix::identity(n, n);
    let lu = api.clone().lu();
    let solve = |rhs: &DMatrix<f64>| {
        lu.solve(rhs).ok_or(NumError::Singular {
            what: "A + I (bilinear map of the discrete model)".into(),
            rcond: 0.0,
        })
    };
    let ami = &sys.a - DMatrix::identity(n, n);
    let ac = solve(&ami)?;
    let inv_b = solve(&sys.b)?;
    // C (A + I)⁻¹ = ((A + I)⁻ᵀ Cᵀ)ᵀ.
    let c_inv = api
        .transpose()
        .lu()
        .solve(&sys.c.transpose())
        .ok_or(NumError::Singular {
            what: "A + I (bilinear map of the discrete model)".into(),
            rcond: 0.0,
        })?
        .transpose();
    let r2 = std::f64::consts::SQRT_2;
    let dc = &sys.d - &sys.c * &inv_b;
    let cont = StateSpace::new(ac, inv_b * r2, c_inv * r2, dc, 0.0)?;
    let (value, nu) = level_set(&cont, params)?;
    let theta = if nu.is_infinite() {
        PI
    } else {
        2.0 * nu.atan()
    };
    let w = theta / sys.dt;
    let nyquist = PI / sys.dt;
    if !(w > 0.0 && w < nyquist) {
        return Ok((value, w));
    }
    // Polish on the discrete model itself, so the value is one that its own frequency
    // response attains (the map to s rounds A once more, which matters for poles very
    // close to the unit circle).
    let ev = FrequencyEvaluator::new(sys)?;
    let sigma_d = |x: f64| -> NumResult<f64> { sigma_max(&ev.at_frequency(x)) };
    let bracket = (w * (1.0 - 1e-4), (w * (1.0 + 1e-4)).min(nyquist));
    let (vd, wd) = polish(&sigma_d, (sigma_d(w)?, w), Some(bracket))?;
    Ok(if vd > value { (vd, wd) } else { (value, w) })
}

/// The continuous level-set iteration (see [`hinf_norm_with`]); `sys` stable, n ≥ 1.
fn level_set(sys: &StateSpace, params: &HinfParams) -> NumResult<(f64, f64)> {
    let ev = FrequencyEvaluator::new(sys)?;
    let sigma_at = |w: f64| -> NumResult<f64> { sigma_max(&ev.at_frequency(w)) };
    let dz = sys.d.map(|x| C64::new(x, 0.0));
    let mut best = (sigma_max(&dz)?, f64::INFINITY);
    let consider = |w: f64, best: &mut (f64, f64)| -> NumResult<()> {
        let s = sigma_at(w)?;
        if s > best.0 || (s == best.0 && best.1.is_infinite()) {
            *best = (s, w);
        }
        Ok(())
    };
    consider(0.0, &mut best)?;
    for p in eigenvalues(&sys.a)? {
        consider(p.im.abs(), &mut best)?;
        consider(p.norm(), &mut best)?;
    }
    if best.0 == 0.0 {
        return Ok((0.0, 0.0));
    }
    // The interval whose midpoint gave the current lower bound.
    let mut bracket: Option<(f64, f64)> = None;
    for _ in 0..params.max_iterations {
        let gamma = (1.0 + 2.0 * params.rel_tol) * best.0;
        let h = hamiltonian(sys, gamma)?;
        let hnorm = h.norm();
        let mut freqs: Vec<f64> = eigenvalues(&h)?
            .into_iter()
            .filter(|l| {
                l.im >= 0.0 && l.re.abs() <= params.imaginary_tol * l.norm().max(1e-4 * hnorm)
            })
            .map(|l| l.im)
            .collect();
        if freqs.is_empty() {
            return polish(&sigma_at, best, bracket);
        }
        freqs.sort_by(|a, b| a.total_cmp(b));
        let mut step_best = (0.0f64, 0.0f64);
        let mut step_bracket = None;
        let mut intervals: Vec<(f64, f64)> = freqs.windows(2).map(|p| (p[0], p[1])).collect();
        if freqs.len() == 1 {
            // The only interval is [−ω₁, ω₁], centred at 0.
            intervals.push((0.0, freqs[0]));
            consider(freqs[0], &mut step_best)?;
        }
        for &(a, b) in &intervals {
            let before = step_best.0;
            let mid = if a == 0.0 { 0.0 } else { 0.5 * (a + b) };
            consider(mid, &mut step_best)?;
            if step_best.0 > before {
                step_bracket = Some((a, b));
            }
        }
        if step_best.0 > best.0 {
            best = step_best;
            bracket = step_bracket;
        }
        if step_best.0 < gamma {
            // No midpoint above the level: the candidates were a tangency or rounding.
            return polish(&sigma_at, best, bracket);
        }
    }
    Err(NumError::NoConvergence {
        what: "H-infinity norm level-set iteration".into(),
        iterations: params.max_iterations,
    })
}

/// Golden-section maximisation of `σ_max(G(jω))` over the last bracket, which contains
/// the peak once the level set has closed in on it; recovers the last digits that the
/// Hamiltonian's nearly double eigenvalues at a tangency cannot resolve. Only an
/// improvement is accepted, so the result stays a value actually attained.
fn polish(
    sigma_at: &impl Fn(f64) -> NumResult<f64>,
    best: (f64, f64),
    bracket: Option<(f64, f64)>,
) -> NumResult<(f64, f64)> {
    let Some((mut a, mut b)) = bracket else {
        return Ok(best);
    };
    if !(a.is_finite() && b.is_finite() && b > a) {
        return Ok(best);
    }
    let mut best = best;
    let r = 0.5 * (5f64.sqrt() - 1.0);
    let mut x1 = b - r * (b - a);
    let mut x2 = a + r * (b - a);
    let (mut f1, mut f2) = (sigma_at(x1)?, sigma_at(x2)?);
    for _ in 0..200 {
        if b - a <= 4.0 * f64::EPSILON * b.abs() {
            break;
        }
        if f1 >= f2 {
            b = x2;
            x2 = x1;
            f2 = f1;
            x1 = b - r * (b - a);
            f1 = sigma_at(x1)?;
        } else {
            a = x1;
            x1 = x2;
            f1 = f2;
            x2 = a + r * (b - a);
            f2 = sigma_at(x2)?;
        }
    }
    for (f, x) in [(f1, x1), (f2, x2)] {
        if f > best.0 {
            best = (f, x);
        }
    }
    Ok(best)
}

/// The Hamiltonian `H(γ)` of [`hinf_norm_with`], for `γ > σ_max(D)`.
fn hamiltonian(sys: &StateSpace, gamma: f64) -> NumResult<DMatrix<f64>> {
    let (n, m, p) = (sys.order(), sys.inputs(), sys.outputs());
    let g2 = gamma * gamma;
    let r = DMatrix::identity(m, m) * g2 - sys.d.transpose() * &sys.d;
    let s = DMatrix::identity(p, p) * g2 - &sys.d * sys.d.transpose();
    let not_pd = || NumError::Singular {
        what: format!("γ²I − DᵀD at the level γ = {gamma:e} (γ not above σ_max(D))"),
        rcond: 0.0,
    };
    let r_chol = r.cholesky().ok_or_else(not_pd)?;
    let s_chol = s.cholesky().ok_or_else(not_pd)?;
    let rinv_dt_c = r_chol.solve(&(sys.d.transpose() * &sys.c)); // R⁻¹ Dᵀ C
    let rinv_bt = r_chol.solve(&sys.b.transpose()); // R⁻¹ Bᵀ
    let sinv_c = s_chol.solve(&sys.c); // S⁻¹ C
    let h11 = &sys.a + &sys.b * rinv_dt_c;
    let h12 = &sys.b * rinv_bt * gamma;
    let h21 = sys.c.transpose() * sinv_c * (-gamma);
    let mut h = DMatrix::zeros(2 * n, 2 * n);
    h.view_mut((0, 0), (n, n)).copy_from(&h11);
    h.view_mut((0, n), (n, n)).copy_from(&h12);
    h.view_mut((n, 0), (n, n)).copy_from(&h21);
    h.view_mut((n, n), (n, n)).copy_from(&(-h11.transpose()));
    if h.iter().any(|x| !x.is_finite()) {
        return Err(not_pd());
    }
    Ok(h)
}

/// The largest singular value of a complex matrix (0 for an empty one).
fn sigma_max(g: &DMatrix<C64>) -> NumResult<f64> {
    if g.nrows() == 0 || g.ncols() == 0 {
        return Ok(0.0);
    }
    if g.iter().any(|z| !(z.re.is_finite() && z.im.is_finite())) {
        return Ok(f64::INFINITY);
    }
    if g.len() == 1 {
        return Ok(g[(0, 0)].norm());
    }
    let cap = 200 * (g.nrows() + g.ncols()) + 1000;
    let sv = SVD::try_new(g.clone(), false, false, f64::EPSILON, cap).ok_or(
        NumError::NoConvergence {
            what: "singular values of the frequency response".into(),
            iterations: cap,
        },
    )?;
    Ok(sv.singular_values.iter().fold(0.0f64, |a, &x| a.max(x)))
}

/// `Some(frequency of the worst pole)` when `sys` is not stable with the margin of the
/// Lyapunov solvers (module notes), else `None`.
fn unstable(sys: &StateSpace) -> NumResult<Option<f64>> {
    if sys.order() == 0 {
        return Ok(None);
    }
    let eigs = eigenvalues(&sys.a)?;
    let discrete = sys.is_discrete();
    if stability_violation(
        &eigs,
        crate::numeric::linalg::dense::balanced_frobenius_norm(&sys.a),
        discrete,
        &MatrixEquationParams::default(),
    )
    .is_none()
    {
        return Ok(None);
    }
    let worst = eigs.iter().copied().fold(None::<C64>, |w, z| match w {
        Some(w) if (discrete && w.norm() >= z.norm()) || (!discrete && w.re >= z.re) => Some(w),
        _ => Some(z),
    });
    Ok(worst.map(|z| {
        if discrete {
            z.arg().abs() / sys.dt
        } else {
            z.im.abs()
        }
    }))
}

/// The bandwidth of a SISO model: the first frequency (rad/s) where `|G|` falls below
/// `|G(0)|/√2` (3.01 dB under the DC gain).
///
/// **Mathematics.** `ω_b = min{ω > 0 : |G(jω)| = |G(0)|/√2}` (discrete: `G(e^{jω·dt})`,
/// `G(1)` at DC, `ω ≤ π/dt`).
///
/// **Algorithm.** An adaptive sweep of `|G|` on [`auto_frequency_grid`] (resonances and
/// notches resolved, [`siso_sweep`]) finds the first sample below the level; the bracket
/// from the previous sample (or ω = 0) is refined by Brent's method on
/// `ln|G| − ln(|G(0)|/√2)` ([`brent_root`]; Brent 1973) to full precision. A continuous
/// model still above the level at the end of the grid is followed out by decades
/// ([`extend_grid`]).
///
/// **Results.** `∞` when the gain never falls below the level (a static gain, a model
/// whose high-frequency gain `|D|` stays above it, or a discrete model above it up to
/// π/dt).
///
/// **Cost.** O(n³) once, then O(n²) per sample: a few hundred to a few thousand samples.
///
/// **Errors.** A MIMO model; an infinite DC gain (a pole at s = 0 / z = 1: the bandwidth
/// relative to DC is undefined); a zero DC gain (a zero at s = 0 / z = 1: no level to
/// fall from).
pub fn bandwidth(sys: &StateSpace) -> NumResult<f64> {
    if sys.inputs() != 1 || sys.outputs() != 1 {
        return Err(NumError::invalid(
            "bandwidth",
            format!(
                "expected a single-input single-output model, found {} outputs × {} inputs",
                sys.outputs(),
                sys.inputs()
            ),
        ));
    }
    let ev = FrequencyEvaluator::new(sys)?;
    let dc = ev.at_point(C64::new(if sys.is_discrete() { 1.0 } else { 0.0 }, 0.0))[(0, 0)];
    let dc_gain = dc.norm();
    if !dc_gain.is_finite() {
        return Err(NumError::invalid(
            "bandwidth",
            "the DC gain is infinite (a pole at s = 0 or z = 1, e.g. an integrator); the \
             bandwidth relative to DC is undefined",
        ));
    }
    if dc_gain == 0.0 {
        return Err(NumError::invalid(
            "bandwidth",
            "the DC gain is zero (a zero at s = 0 or z = 1); the bandwidth relative to DC \
             is undefined",
        ));
    }
    let level = (dc_gain / std::f64::consts::SQRT_2).ln();
    let f = |w: f64| ev.at_frequency(w)[(0, 0)].norm().ln() - level;
    let mut grid = auto_frequency_grid(sys, 500)?;
    if !sys.is_discrete() {
        extend_grid(&mut grid, f, false, true);
    }
    let samples = siso_sweep(&ev, &grid, &SweepParams::default());
    let mut prev = (0.0, dc_gain.ln() - level);
    for s in &samples {
        let v = s.value.norm();
        if !v.is_finite() {
            // A pole on the axis: the gain is above any level there.
            prev = (s.w, f64::INFINITY);
            continue;
        }
        let fv = v.ln() - level;
        if fv < 0.0 {
            let (w0, f0) = if prev.1.is_finite() {
                prev
            } else {
                // Restart the bracket just past the pole.
                let w0 = prev.0 * (1.0 + 1e-12);
                (w0, f(w0))
            };
            return brent_root(f, w0, s.w, f0, fv, 0.0).ok_or(NumError::NoConvergence {
                what: "bandwidth root bracketing".into(),
                iterations: 0,
            });
        }
        prev = (s.w, fv);
    }
    Ok(f64::INFINITY)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::numeric::testing::Rng;
    use serde_json::Value;

    /// A model from row-major slices; n from A's length, m and p from B and C.
    fn ss(a: &[f64], b: &[f64], c: &[f64], d: &[f64], dt: f64) -> StateSpace {
        let n = (a.len() as f64).sqrt().round() as usize;
        let (m, p) = (b.len() / n, c.len() / n);
        StateSpace::new(
            DMatrix::from_row_slice(n, n, a),
            DMatrix::from_row_slice(n, m, b),
            DMatrix::from_row_slice(p, n, c),
            DMatrix::from_row_slice(p, m, d),
            dt,
        )
        .unwrap()
    }

    fn first_order(a: f64) -> StateSpace {
        ss(&[-a], &[1.0], &[1.0], &[0.0], 0.0)
    }

    /// ωn²/(s² + 2ζωn s + ωn²).
    fn second_order(wn: f64, zeta: f64) -> StateSpace {
        ss(
            &[0.0, 1.0, -wn * wn, -2.0 * zeta * wn],
            &[0.0, 1.0],
            &[wn * wn, 0.0],
            &[0.0],
            0.0,
        )
    }

    fn rel(a: f64, b: f64) -> f64 {
        (a - b).abs() / b.abs()
    }

    #[test]
    fn first_order_closed_forms() {
        // Source: G = 1/(s + a): |G(jω)| = 1/√(ω² + a²) is 1/(a√2) at ω = a (bandwidth a);
        // ‖G‖₂² = ∫₀^∞ e^{−2at} dt = 1/(2a); ‖G‖∞ = |G(0)| = 1/a (|G| decreasing).
        for a in [0.01, 2.0, 350.0] {
            let g = first_order(a);
            assert!(rel(bandwidth(&g).unwrap(), a) < 1e-14, "a = {a}");
            assert!(rel(h2_norm(&g).unwrap(), 1.0 / (2.0 * a).sqrt()) < 1e-14);
            let (v, w) = hinf_norm(&g).unwrap();
            assert!(rel(v, 1.0 / a) < 1e-14, "{v}");
            assert_eq!(w, 0.0);
        }
    }

    #[test]
    fn lightly_damped_resonance() {
        // Source: derivation. |G(jω)|⁻² = (1 − x)² + 4ζ²x with x = (ω/ωn)² is least at
        // x = 1 − 2ζ², where it equals 4ζ²(1 − ζ²): peak 1/(2ζ√(1 − ζ²)) at ωn√(1 − 2ζ²).
        // Bandwidth: (1 − x)² + 4ζ²x = 2 ⇒ x = 1 − 2ζ² + √((1 − 2ζ²)² + 1).
        for (wn, z) in [(3.0, 0.05), (40.0, 1e-3), (0.2, 0.3)] {
            let g = second_order(wn, z);
            let (v, w) = hinf_norm(&g).unwrap();
            let peak = 1.0 / (2.0 * z * (1.0 - z * z).sqrt());
            assert!(rel(v, peak) < 1e-11, "ζ = {z}: {v} vs {peak}");
            assert!(rel(w, wn * (1.0 - 2.0 * z * z).sqrt()) < 1e-6, "{w}");
            let q = 1.0 - 2.0 * z * z;
            let wb = wn * (q + (q * q + 1.0).sqrt()).sqrt();
            assert!(rel(bandwidth(&g).unwrap(), wb) < 1e-13);
            // Source: ‖G‖₂² for ωn²/(s² + 2ζωn s + ωn²) is ωn/(4ζ) (the Gramian of the
            // companion form solved by hand: W₂₂ = 1/(4ζωn), output weight ωn⁴ W₁₁ with
            // W₁₁ = 1/(4ζωn³)).
            assert!(rel(h2_norm(&g).unwrap(), (wn / (4.0 * z)).sqrt()) < 1e-12);
        }
    }

    #[test]
    fn infinite_and_degenerate_cases() {
        // Source: the documented conventions (module notes and doc comments).
        let unstable = ss(&[0.5], &[1.0], &[1.0], &[0.0], 0.0);
        assert_eq!(h2_norm(&unstable).unwrap(), f64::INFINITY);
        assert_eq!(hinf_norm(&unstable).unwrap().0, f64::INFINITY);
        let integrator = ss(&[0.0], &[1.0], &[1.0], &[0.0], 0.0);
        assert_eq!(h2_norm(&integrator).unwrap(), f64::INFINITY);
        assert!(bandwidth(&integrator)
            .unwrap_err()
            .to_string()
            .contains("infinite"));
        let proper = ss(&[-1.0], &[1.0], &[1.0], &[0.5], 0.0);
        assert_eq!(h2_norm(&proper).unwrap(), f64::INFINITY);
        // Source: G = (s + 0.5)/(s + 1) = 1 − 0.5/(s + 1) rises from 0.5 at DC to 1 at ω = ∞:
        // the supremum 1 is approached only as ω → ∞; the gain never falls below DC/√2.
        let lead = ss(&[-1.0], &[1.0], &[-0.5], &[1.0], 0.0);
        assert_eq!(hinf_norm(&lead).unwrap(), (1.0, f64::INFINITY));
        assert_eq!(bandwidth(&lead).unwrap(), f64::INFINITY);
        // Source: s/(s + 1) = 1 − 1/(s + 1) has G(0) = 0.
        let washout = ss(&[-1.0], &[1.0], &[-1.0], &[1.0], 0.0);
        assert!(bandwidth(&washout)
            .unwrap_err()
            .to_string()
            .contains("zero"));
        // Source: a static gain has norm σ_max(D) (here the 2-norm of [3, 4] is 5).
        let k = StateSpace::new(
            DMatrix::zeros(0, 0),
            DMatrix::zeros(0, 2),
            DMatrix::zeros(1, 0),
            DMatrix::from_row_slice(1, 2, &[3.0, 4.0]),
            0.0,
        )
        .unwrap();
        assert!(rel(hinf_norm(&k).unwrap().0, 5.0) < 1e-15);
        let mimo = ss(&[-1.0], &[1.0, 1.0], &[1.0], &[0.0, 0.0], 0.0);
        assert!(bandwidth(&mimo)
            .unwrap_err()
            .to_string()
            .contains("1 outputs × 2 inputs"));
    }

    #[test]
    fn discrete_first_order() {
        // G(z) = (1 − p)/(z − p), DC gain 1. Source: derivation. |G(e^{jθ})|² =
        // (1 − p)²/(1 − 2p cos θ + p²) = 1/2 ⇒ cos θ = (1 + p² − 2(1 − p)²)/(2p).
        // ‖G‖₂² = Σ_{k≥1} (1 − p)² p^{2(k−1)} = (1 − p)²/(1 − p²); ‖G‖∞ = G(1) = 1 (p > 0).
        let (p, dt) = (0.8, 0.01);
        let g = ss(&[p], &[1.0], &[1.0 - p], &[0.0], dt);
        let theta = ((1.0 + p * p - 2.0 * (1.0 - p) * (1.0 - p)) / (2.0 * p)).acos();
        assert!(rel(bandwidth(&g).unwrap(), theta / dt) < 1e-13);
        assert!(
            rel(
                h2_norm(&g).unwrap(),
                ((1.0 - p) * (1.0 - p) / (1.0 - p * p)).sqrt()
            ) < 1e-14
        );
        let (v, w) = hinf_norm(&g).unwrap();
        assert!(rel(v, 1.0) < 1e-13 && w.abs() < 1e-6, "{v} at {w}");
        // Source: with p = −0.8, |G(e^{jθ})| = 1.8/|e^{jθ} + 0.8| is largest at θ = π (the
        // Nyquist frequency), |G(−1)| = 1.8/0.2 = 9.
        let g = ss(&[-0.8], &[1.0], &[1.8], &[0.0], dt);
        let (v, w) = hinf_norm(&g).unwrap();
        assert!(rel(v, 9.0) < 1e-12 && rel(w, PI / dt) < 1e-12, "{v} at {w}");
    }

    #[test]
    fn hamiltonian_has_the_singular_value_frequencies() {
        // Source: Boyd, Balakrishnan & Kabamba 1989 — γ = σ(G(jω₀)) makes jω₀ an
        // eigenvalue of H(γ); checked on a random MIMO model with D ≠ 0.
        let mut rng = Rng::new(21);
        let n = 4;
        let a = rng.matrix(n, n) - DMatrix::identity(n, n) * 4.0;
        let sys = StateSpace::new(
            a,
            rng.matrix(n, 2),
            rng.matrix(3, n),
            rng.matrix(3, 2) * 0.1,
            0.0,
        )
        .unwrap();
        let w0 = 1.3;
        let g = FrequencyEvaluator::new(&sys).unwrap().at_frequency(w0);
        let gamma = sigma_max(&g).unwrap();
        let h = hamiltonian(&sys, gamma).unwrap();
        let eigs = eigenvalues(&h).unwrap();
        let d = eigs
            .iter()
            .map(|l| (l - C64::new(0.0, w0)).norm())
            .fold(f64::INFINITY, f64::min);
        assert!(d < 1e-8, "closest eigenvalue {d:e} away from j{w0}");
        // The norm is at least the sampled value and matches a dense sweep's maximum.
        let (v, _) = hinf_norm(&sys).unwrap();
        let ev = FrequencyEvaluator::new(&sys).unwrap();
        let sweep = (0..20001)
            .map(|i| {
                sigma_max(&ev.at_frequency(1e-3 * 10f64.powf(i as f64 * 6.0 / 20000.0))).unwrap()
            })
            .fold(0.0f64, f64::max);
        assert!(
            v >= sweep * (1.0 - 1e-14) && v <= sweep * (1.0 + 1e-6),
            "{v} vs {sweep}"
        );
    }

    fn matrix(v: &Value) -> DMatrix<f64> {
        let rows: Vec<Vec<f64>> = v
            .as_array()
            .unwrap()
            .iter()
            .map(|r| {
                r.as_array()
                    .unwrap()
                    .iter()
                    .map(|x| x.as_f64().unwrap())
                    .collect()
            })
            .collect();
        let (r, c) = (rows.len(), rows.first().map_or(0, Vec::len));
        DMatrix::from_fn(r, c, |i, j| rows[i][j])
    }

    fn fixture_system(c: &Value) -> StateSpace {
        let i = &c["inputs"];
        StateSpace::new(
            matrix(&i["A"]),
            matrix(&i["B"]),
            matrix(&i["C"]),
            matrix(&i["D"]),
            i["dt"].as_f64().unwrap(),
        )
        .unwrap()
    }

    #[test]
    fn reference_fixtures() {
        // Source: tests/reference/freq.json, cases h2_norm_* (scipy Lyapunov solvers) and
        // hinf_norm_* (dense sweep plus golden-section refinement, gen_freq.py); the
        // tolerances are the fixtures' own (per_key_tolerance for the frequency).
        let text = include_str!("../../../tests/reference/freq.json");
        let fx: Value = serde_json::from_str(text).unwrap();
        let mut seen = (0, 0);
        for c in fx["cases"].as_array().unwrap() {
            let name = c["name"].as_str().unwrap();
            let tol = |key: &str| {
                let t = if c["per_key_tolerance"][key].is_object() {
                    &c["per_key_tolerance"][key]
                } else {
                    &c["tolerance"]
                };
                (t["abs"].as_f64().unwrap(), t["rel"].as_f64().unwrap())
            };
            let ok = |got: f64, want: f64, key: &str| {
                let (abs, r) = tol(key);
                assert!(
                    (got - want).abs() <= abs + r * want.abs(),
                    "{name}: {key} = {got}, expected {want}"
                );
            };
            if name.starts_with("h2_norm_") {
                seen.0 += 1;
                let want = c["expected"]["h2_norm"].as_f64().unwrap();
                ok(h2_norm(&fixture_system(c)).unwrap(), want, "h2_norm");
            } else if name.starts_with("hinf_norm_") {
                seen.1 += 1;
                let (v, w) = hinf_norm(&fixture_system(c)).unwrap();
                ok(v, c["expected"]["value"].as_f64().unwrap(), "value");
                match c["expected"]["frequency"].as_f64() {
                    Some(want) => ok(w, want, "frequency"),
                    None => assert_eq!(w, f64::INFINITY, "{name}"),
                }
            }
        }
        assert_eq!(seen, (3, 4));
    }
}
