//! Deciding whether two models have the same input–output behaviour, and recovering the
//! similarity transform between two minimal realizations of it.
//!
//! Two models are equivalent when their transfer functions agree. For rational functions
//! of orders n₁ and n₂ that holds exactly when the Markov parameters `D, CB, CAB, …` agree
//! up to index n₁ + n₂ (the difference is a realization of order ≤ n₁ + n₂, whose Markov
//! parameters vanish beyond that only if all vanish — Cayley–Hamilton). The comparison is
//! made on time-scaled parameters `C (αA)^k B α` with `α = 1/ρ`, ρ the largest pole
//! magnitude of the two models, so that fast and slow models are judged alike; a
//! frequency-response comparison on a grid covering every pole cross-checks the verdict.
//!
//! # How close is close enough
//! A model reached through an ill-conditioned similarity (an integer `T` of condition 1e6,
//! say) carries rounding errors that its Markov parameters amplify: `C A^k B` computed on
//! such data can be off by far more than ε even though the two models are exactly similar.
//! A fixed tolerance then calls exactly similar pairs different. So each parameter gets its
//! own tolerance: the fixed floor [`MARKOV_TOLERANCE`], raised to a small multiple of the
//! parameter's sensitivity to rounding-level changes of the data. The sensitivity is the
//! first-order change of `D, α·CB, α²·CAB, …` under normwise-random perturbations of `A`,
//! `B` and `C` of relative size one, computed exactly by the linearised recurrence
//! `d(AᵏB) = A·d(Aᵏ⁻¹B) + dA·Aᵏ⁻¹B` and maximised over a few seeded directions — the
//! small-sample statistical condition estimate of Kenney & Laub (SIAM J. Sci. Comput. 15,
//! 1994). It is computed on the balanced system (Parlett–Reinsch powers of two, which change
//! no Markov parameter), so bad units do not count as bad conditioning. The verdict reports
//! the margin (largest difference over its tolerance) and says so when the call is close.

use super::staircase::{balance_system, minimal_realization, Minimal};
use super::system::StateSpace;
use super::transform::{rcond, transform_state};
use crate::numeric::freq::response::FrequencyEvaluator;
use crate::numeric::linalg::eigen::eigenvalues;
use crate::numeric::sampling::Xoshiro256StarStar;
use crate::numeric::{NumError, NumResult};
use nalgebra::DMatrix;

/// Relative tolerance on the scaled Markov parameters.
pub const MARKOV_TOLERANCE: f64 = 1e-8;
/// Relative tolerance on the frequency responses.
pub const FREQUENCY_TOLERANCE: f64 = 1e-6;

/// The verdict of [`equivalence`].
#[derive(Debug, Clone)]
pub struct Equivalence {
    /// Whether the two models have the same input–output behaviour.
    pub equivalent: bool,
    /// Why, in words: what was compared and what differs by how much.
    pub reason: String,
    /// Largest relative difference of the scaled Markov parameters (∞ when incomparable).
    pub markov_error: f64,
    /// Largest relative difference of the frequency responses on the grid.
    pub frequency_error: f64,
    /// Largest ratio of a difference to its own tolerance (≤ 1 when equivalent; between
    /// 0.1 and 10 the reason calls the verdict borderline).
    pub margin: f64,
    /// `T` with `b = transform_state(a, T)`, when both are minimal of equal order.
    pub transform: Option<DMatrix<f64>>,
}

fn incomparable(reason: String) -> Equivalence {
    Equivalence {
        equivalent: false,
        reason,
        markov_error: f64::INFINITY,
        frequency_error: f64::INFINITY,
        margin: f64::INFINITY,
        transform: None,
    }
}

fn spectral_radius(a: &DMatrix<f64>) -> NumResult<f64> {
    Ok(eigenvalues(a)?.iter().map(|z| z.norm()).fold(0.0, f64::max))
}

/// The scaled Markov parameters `D, α·CB, α²·CAB, …` (count matrices), computed on the
/// balanced system (exact power-of-two state scaling: the parameters are unchanged).
fn scaled_markov(sys: &StateSpace, alpha: f64, count: usize) -> Vec<DMatrix<f64>> {
    let (a, b, c) = balanced(sys);
    let mut out = vec![sys.d.clone()];
    let a = a * alpha;
    let mut akb = b * alpha;
    for _ in 1..count {
        out.push(&c * &akb);
        akb = &a * akb;
    }
    out
}

/// `A, B, C` of `sys` after the power-of-two system balancing of the staircase module.
fn balanced(sys: &StateSpace) -> (DMatrix<f64>, DMatrix<f64>, DMatrix<f64>) {
    balanced_with_scaling(sys).0
}

/// [`balanced`], with the state scaling `S` (x = S x̃) it applied.
#[allow(clippy::type_complexity)]
fn balanced_with_scaling(
    sys: &StateSpace,
) -> ((DMatrix<f64>, DMatrix<f64>, DMatrix<f64>), Vec<f64>) {
    let sc = balance_system(&sys.a, &sys.b, &sys.c);
    (sc.apply_state(&sys.a, &sys.b, &sys.c), sc.state)
}

/// Margins (difference over tolerance) in this range make the verdict a judgement call, and
/// the reason says so.
const BORDERLINE_LOW: f64 = 0.1;
const BORDERLINE_HIGH: f64 = 10.0;

/// Number of random directions of the sensitivity estimate.
const SENSITIVITY_SAMPLES: usize = 3;
/// Multiple of `n·ε·sensitivity` a Markov parameter may differ by and still agree: rounding
/// in forming and in evaluating the data stays well inside it, a relative change of the
/// model of 1e-6 well outside it unless the data cannot resolve such a change.
const SENSITIVITY_FACTOR: f64 = 30.0;

/// A Gaussian random matrix with the shape of `like` and Frobenius norm `‖like‖_F` (zero when `like`
/// is zero: structurally absent data is not perturbed).
fn direction(rng: &mut Xoshiro256StarStar, like: &DMatrix<f64>) -> DMatrix<f64> {
    let mut g = DMatrix::from_fn(like.nrows(), like.ncols(), |_, _| {
        rng.next_standard_normal()
    });
    let ng = g.norm();
    if ng > 0.0 {
        g *= like.norm() / ng;
    }
    g
}

/// For each scaled Markov parameter of `sys`, the norm of its first-order change under
/// relative normwise perturbations of size one of `A`, `B`, `C` (largest over
/// [`SENSITIVITY_SAMPLES`] seeded directions; see the module documentation).
fn markov_sensitivity(sys: &StateSpace, alpha: f64, count: usize) -> Vec<f64> {
    let (a, b, c) = balanced(sys);
    let a = a * alpha;
    let b = b * alpha;
    let mut rng = Xoshiro256StarStar::new(0x5EED_0FE0_u64);
    let mut out = vec![0.0f64; count];
    for _ in 0..SENSITIVITY_SAMPLES {
        let (da, db, dc) = (
            direction(&mut rng, &a),
            direction(&mut rng, &b),
            direction(&mut rng, &c),
        );
        let mut akb = b.clone();
        let mut dakb = db;
        for slot in out.iter_mut().skip(1) {
            let dm = &dc * &akb + &c * &dakb;
            *slot = slot.max(dm.norm());
            dakb = &a * &dakb + &da * &akb;
            akb = &a * akb;
        }
    }
    out
}

/// Step of the finite-difference sensitivity of the frequency response: small enough that
/// second-order terms stay below 10 % for a sensitivity up to 1e8, large enough that the
/// rounding of the two evaluations (ε/δ ≈ 1e-7 relative) does not matter.
const FREQUENCY_STEP: f64 = 1e-9;

/// For each frequency in `w`, the norm of the change of `G(jω)` per unit relative normwise
/// perturbation of the balanced `A`, `B`, `C` (finite differences of step
/// [`FREQUENCY_STEP`], largest over [`SENSITIVITY_SAMPLES`] seeded directions). `g` holds
/// the unperturbed response on `w`. Points where a response is infinite get 0.
fn frequency_sensitivity(
    sys: &StateSpace,
    w: &[f64],
    g: &[DMatrix<nalgebra::Complex<f64>>],
) -> NumResult<Vec<f64>> {
    let mut out = vec![0.0f64; w.len()];
    if sys.order() == 0 {
        return Ok(out);
    }
    let (a, b, c) = balanced(sys);
    let mut rng = Xoshiro256StarStar::new(0xF2E9_5EED_u64);
    for _ in 0..SENSITIVITY_SAMPLES {
        let pa = &a + direction(&mut rng, &a) * FREQUENCY_STEP;
        let pb = &b + direction(&mut rng, &b) * FREQUENCY_STEP;
        let pc = &c + direction(&mut rng, &c) * FREQUENCY_STEP;
        let moved = sys.with_matrices(pa, pb, pc, sys.d.clone())?;
        let ev = FrequencyEvaluator::new(&moved)?;
        for (slot, (&x, g0)) in out.iter_mut().zip(w.iter().zip(g)) {
            let d = (ev.at_frequency(x) - g0).norm() / FREQUENCY_STEP;
            if d.is_finite() {
                *slot = slot.max(d);
            }
        }
    }
    Ok(out)
}

/// Frequencies covering every pole of both models: a log grid two decades past the
/// extreme pole magnitudes, plus each pole's own frequency (capped at Nyquist when
/// discrete).
fn grid(a: &StateSpace, b: &StateSpace) -> NumResult<Vec<f64>> {
    let mut mags: Vec<f64> = Vec::new();
    for s in [a, b] {
        for p in eigenvalues(&s.a)? {
            let w = if s.is_discrete() {
                (p.ln() / s.dt).norm()
            } else {
                p.norm()
            };
            if w.is_finite() && w > 0.0 {
                mags.push(w);
            }
        }
    }
    // Poles at (numerically) the origin are integrators: they set no frequency scale, and
    // ω = 0 is left out so that the grid never sits on them.
    let top = mags.iter().cloned().fold(0.0, f64::max);
    let integrator = mags.len() < a.order() + b.order() || mags.iter().any(|&m| m <= 1e-9 * top);
    let scales: Vec<f64> = mags.iter().cloned().filter(|&m| m > 1e-9 * top).collect();
    let lo = scales.iter().cloned().fold(f64::INFINITY, f64::min);
    let hi = scales.iter().cloned().fold(0.0, f64::max);
    let (lo, hi) = if scales.is_empty() {
        (0.1, 10.0)
    } else {
        (lo / 100.0, hi * 100.0)
    };
    let nyquist = if a.is_discrete() {
        std::f64::consts::PI / a.dt
    } else {
        f64::INFINITY
    };
    let hi = hi.min(nyquist * 0.999);
    let lo = lo.min(hi / 10.0);
    let count = 160;
    let mut w: Vec<f64> = (0..count)
        .map(|k| lo * (hi / lo).powf(k as f64 / (count - 1) as f64))
        .collect();
    w.extend(scales.iter().filter(|&&m| m < nyquist).map(|m| m * 1.0001));
    if !integrator {
        w.push(0.0);
    }
    w.sort_by(|x, y| x.partial_cmp(y).unwrap_or(std::cmp::Ordering::Equal));
    Ok(w)
}

/// Decides whether `a` and `b` have the same input–output behaviour (see the module
/// documentation) and, when both are minimal and of equal order, returns the `T` with
/// `b = transform_state(a, T)`. Models with different input or output counts, time
/// domains or sample times get a verdict (not equivalent), not an error.
pub fn equivalence(a: &StateSpace, b: &StateSpace) -> NumResult<Equivalence> {
    if a.inputs() != b.inputs() || a.outputs() != b.outputs() {
        return Ok(incomparable(format!(
            "not equivalent: the models have different signal counts ({} inputs × {} outputs \
             against {} × {})",
            a.inputs(),
            a.outputs(),
            b.inputs(),
            b.outputs()
        )));
    }
    if super::system::same_domain("equivalence", a, b).is_err() {
        return Ok(incomparable(format!(
            "not equivalent: the models live in different time domains ({} against {})",
            a.domain_words(),
            b.domain_words()
        )));
    }
    let rho = spectral_radius(&a.a)?.max(spectral_radius(&b.a)?);
    let alpha = if rho > 0.0 && !a.is_discrete() {
        1.0 / rho
    } else {
        1.0
    };
    let alpha = if a.is_discrete() && rho > 1.0 {
        1.0 / rho
    } else {
        alpha
    };
    let count = a.order() + b.order() + 1;
    let ma = scaled_markov(a, alpha, count);
    let mb = scaled_markov(b, alpha, count);
    let scale = ma
        .iter()
        .chain(mb.iter())
        .map(|m| m.norm())
        .fold(0.0, f64::max);
    let sa = markov_sensitivity(a, alpha, count);
    let sb = markov_sensitivity(b, alpha, count);
    let order = a.order().max(b.order()).max(1) as f64;
    // The error of the worst parameter relative to `scale`, that parameter's tolerance, and
    // the margin: the largest ratio of a parameter's difference to its own tolerance.
    let mut markov_error = 0.0f64;
    let mut markov_tolerance = MARKOV_TOLERANCE;
    let mut margin = 0.0f64;
    let mut worst_k = 0;
    let mut worst_e = 0.0f64;
    for (k, (p, q)) in ma.iter().zip(mb.iter()).enumerate() {
        let (e, tol) = if scale > 0.0 {
            let rounding = SENSITIVITY_FACTOR * order * f64::EPSILON * (sa[k] + sb[k]) / scale;
            ((p - q).norm() / scale, MARKOV_TOLERANCE.max(rounding))
        } else {
            (0.0, MARKOV_TOLERANCE)
        };
        markov_error = markov_error.max(e);
        let r = e / tol;
        if r > margin {
            margin = r;
            markov_tolerance = tol;
            worst_k = k;
            worst_e = e;
        }
    }
    // Frequency cross-check.
    let w = grid(a, b)?;
    let ea = FrequencyEvaluator::new(a)?;
    let eb = FrequencyEvaluator::new(b)?;
    let mut ga = Vec::with_capacity(w.len());
    let mut gb = Vec::with_capacity(w.len());
    for &x in &w {
        ga.push(ea.at_frequency(x));
        gb.push(eb.at_frequency(x));
    }
    // Per-point relative error, with a floor at 1e-6 of the typical response size so that
    // deep notches do not count as disagreement, and points within a hair of a pole
    // (response beyond 1e8 times typical) skipped: there the response of either model is
    // dominated by the pole's last-digit position.
    let mut norms: Vec<f64> = ga
        .iter()
        .map(|g| g.norm())
        .filter(|v| v.is_finite())
        .collect();
    norms.sort_by(|x, y| x.partial_cmp(y).unwrap_or(std::cmp::Ordering::Equal));
    let typical = norms.get(norms.len() * 9 / 10).copied().unwrap_or(0.0);
    let fa = frequency_sensitivity(a, &w, &ga)?;
    let fb = frequency_sensitivity(b, &w, &gb)?;
    let mut frequency_error = 0.0f64;
    let mut frequency_margin = 0.0f64;
    let mut frequency_tolerance = FREQUENCY_TOLERANCE;
    let mut worst_w = 0.0;
    for (i, ((x, p), q)) in w.iter().zip(&ga).zip(&gb).enumerate() {
        let (np, nq) = (p.norm(), q.norm());
        if !(np.is_finite() && nq.is_finite()) || np.max(nq) > 1e8 * typical.max(f64::MIN_POSITIVE)
        {
            continue;
        }
        let floor = 1e-6 * typical;
        let denom = np.max(nq).max(floor);
        let (e, tol) = if denom > 0.0 {
            let rounding = SENSITIVITY_FACTOR * order * f64::EPSILON * (fa[i] + fb[i]) / denom;
            ((p - q).norm() / denom, FREQUENCY_TOLERANCE.max(rounding))
        } else {
            (0.0, FREQUENCY_TOLERANCE)
        };
        frequency_error = frequency_error.max(e);
        if e / tol > frequency_margin {
            frequency_margin = e / tol;
            frequency_tolerance = tol;
            worst_w = *x;
        }
    }
    let markov_margin = margin;
    let margin = markov_margin.max(frequency_margin);
    let equivalent = margin <= 1.0;
    let what_k = match worst_k {
        0 => "D".to_string(),
        1 => "C·B".to_string(),
        k => format!("C·A^{}·B", k - 1),
    };
    let raised = markov_tolerance > MARKOV_TOLERANCE || frequency_tolerance > FREQUENCY_TOLERANCE;
    let mut reason = if equivalent {
        format!(
            "equivalent: the first {count} Markov parameters agree to {markov_error:.1e} \
             (relative, time-scaled) and the frequency responses to {frequency_error:.1e} on \
             {} frequencies from {:.3e} to {:.3e} rad/s",
            w.len(),
            w.get(1).copied().unwrap_or(0.0),
            w.last().copied().unwrap_or(0.0)
        )
    } else if markov_margin > 1.0 {
        format!(
            "not equivalent: Markov parameter {worst_k} ({what_k}) differs by {worst_e:.2e} \
             relative (tolerance {markov_tolerance:.1e}); the frequency responses differ most \
             at {worst_w:.4e} rad/s, by {frequency_error:.2e} relative"
        )
    } else {
        format!(
            "not equivalent: the frequency responses differ at {worst_w:.4e} rad/s by \
             {frequency_error:.2e} relative (tolerance {frequency_tolerance:.1e}), though the \
             Markov parameters agree to {markov_error:.1e}"
        )
    };
    if raised {
        reason.push_str(&format!(
            "; the data are ill-conditioned, so tolerances follow their sensitivity to \
             rounding: Markov parameter {worst_k} ({what_k}) is resolved to \
             {markov_tolerance:.1e}, the frequency response at {worst_w:.4e} rad/s to \
             {frequency_tolerance:.1e}"
        ));
    }
    if (BORDERLINE_LOW..=BORDERLINE_HIGH).contains(&margin) {
        reason.push_str(&format!(
            "; borderline: the largest difference is {margin:.2} times its tolerance, a \
             judgement call — compare the responses that matter for the use"
        ));
    }
    let mut transform = None;
    if equivalent {
        let ra = minimal_realization(&a.a, &a.b, &a.c, &a.d, None)?.removed;
        let rb = minimal_realization(&b.a, &b.b, &b.c, &b.d, None)?.removed;
        if ra == 0 && rb == 0 && a.order() == b.order() {
            match recover_transform(a, b) {
                Ok(t) => transform = Some(t),
                Err(e) => reason.push_str(&format!("; no transform recovered: {e}")),
            }
        } else if ra > 0 || rb > 0 {
            reason.push_str(&format!(
                "; no transform: {} (minimal_realization removes {} and {} states)",
                "a similarity exists only between minimal realizations of equal order", ra, rb
            ));
        }
    }
    Ok(Equivalence {
        equivalent,
        reason,
        markov_error,
        frequency_error,
        margin,
        transform,
    })
}

/// A minimal realization checked against the model it came from ([`minimal_checked`]).
#[derive(Debug, Clone)]
pub struct CheckedMinimal {
    /// The reduced model, in the given model's time domain and signal names.
    pub system: StateSpace,
    /// What the staircases removed, with their rank figures.
    pub minimal: Minimal,
    /// When states were removed and the reduced model does not have the given model's
    /// input–output behaviour (its Markov parameters or frequency response moved beyond what
    /// the data's rounding explains): the [`equivalence`] verdict of the two. Then the given
    /// model is close to, not at, a lower order, and the rank tolerance made the call.
    pub changed_behaviour: Option<Equivalence>,
}

impl CheckedMinimal {
    /// The staircase whose decision removed states first — `("controllability", …)` when
    /// uncontrollable states went, else `("observability", …)` — with its rank figures.
    pub fn deciding_staircase(&self) -> (&'static str, super::staircase::RankMargins) {
        if self.minimal.uncontrollable_removed > 0 {
            ("controllability", self.minimal.controllability)
        } else {
            ("observability", self.minimal.observability)
        }
    }

    /// A relative rank tolerance that keeps the weakest dropped coupling: a decade below
    /// its singular value relative to the scale of the decision.
    pub fn keeping_tolerance(&self) -> f64 {
        let (_, m) = self.deciding_staircase();
        0.1 * m.largest_dropped / m.scale
    }
}

/// [`minimal_realization`] of `sys` with relative rank tolerance `tol`, and an a-posteriori
/// check that removing states kept the input–output behaviour.
///
/// A staircase removes a state when a coupling singular value lies below `tol·‖[A B]‖`
/// (or `‖[A; C]‖`). For a model reached through an ill-conditioned transform, a genuine
/// coupling can be that small relative to the (non-normal) data, and removing it changes
/// the transfer function: a silently wrong model. Every removal is therefore checked by
/// [`equivalence`] of the reduced and the given model (time-scaled Markov parameters and a
/// frequency response on a grid covering every pole, each with its rounding-aware
/// tolerance). A reduction that fails the check is still returned, with the verdict in
/// [`CheckedMinimal::changed_behaviour`] so that the caller can warn with the figures.
/// Cost: the staircases, plus one equivalence check when something was removed.
pub fn minimal_checked(sys: &StateSpace, tol: Option<f64>) -> NumResult<CheckedMinimal> {
    let minimal = minimal_realization(&sys.a, &sys.b, &sys.c, &sys.d, tol)?;
    let system = sys.with_matrices(
        minimal.a.clone(),
        minimal.b.clone(),
        minimal.c.clone(),
        minimal.d.clone(),
    )?;
    let changed_behaviour = if minimal.removed > 0 {
        Some(equivalence(sys, &system)?).filter(|e| !e.equivalent)
    } else {
        None
    };
    Ok(CheckedMinimal {
        system,
        minimal,
        changed_behaviour,
    })
}

/// The `T` with `b = transform_state(a, T)` for two equivalent minimal models of equal
/// order, or an error saying why none exists.
pub fn find_transform(a: &StateSpace, b: &StateSpace) -> NumResult<DMatrix<f64>> {
    let eq = equivalence(a, b)?;
    if !eq.equivalent {
        return Err(NumError::no_solution("find_transform", eq.reason));
    }
    if a.order() != b.order() {
        return Err(NumError::no_solution(
            "find_transform",
            format!(
                "the models behave alike but have different orders ({} and {}); a similarity \
                 transform needs equal orders\nhint: compare minimal_realization of each",
                a.order(),
                b.order()
            ),
        ));
    }
    eq.transform
        .ok_or_else(|| NumError::no_solution("find_transform", eq.reason))
}

/// The similarity between two minimal models, found between their balanced forms: with the
/// power-of-two state scalings `S_a`, `S_b` of the system matrices (Parlett & Reinsch 1969
/// applied to `[[A, B], [C, 0]]`, see the staircase module, § Units) and the transform `T̃`
/// between the balanced models, `T = S_a T̃ S_b⁻¹` (exact). So a badly scaled `T` such as
/// `diag(2⁻¹³, 2¹³)` is recovered as well as the identity.
fn recover_transform(a: &StateSpace, b: &StateSpace) -> NumResult<DMatrix<f64>> {
    let balanced = |s: &StateSpace| -> NumResult<(StateSpace, Vec<f64>)> {
        let ((ab, bb, cb), state) = balanced_with_scaling(s);
        Ok((s.with_matrices(ab, bb, cb, s.d.clone())?, state))
    };
    let (ab, sa) = balanced(a)?;
    let (bb, sb) = balanced(b)?;
    let t = recover_balanced(&ab, &bb)?;
    Ok(DMatrix::from_fn(t.nrows(), t.ncols(), |i, j| {
        sa[i] * t[(i, j)] / sb[j]
    }))
}

/// Solves `A_a T = T A_b`, `T B_b = B_a`, `C_a T = C_b` for T: for minimal models the
/// solution is unique. Small orders solve the Kronecker system by least squares; larger
/// ones use `T = K_a K_b⁺` with time-scaled Krylov matrices `K = [B, αAB, …]`. Either way
/// the result is verified by transforming `a` and comparing with `b`.
fn recover_balanced(a: &StateSpace, b: &StateSpace) -> NumResult<DMatrix<f64>> {
    let n = a.order();
    if n == 0 {
        return Ok(DMatrix::zeros(0, 0));
    }
    let (m, p) = (a.inputs(), a.outputs());
    let t = if n <= 14 {
        let nn = n * n;
        let rows = nn + n * m + p * n;
        let mut k = DMatrix::<f64>::zeros(rows, nn);
        let mut rhs = DMatrix::<f64>::zeros(rows, 1);
        // vec(A_a T − T A_b) = (I ⊗ A_a − A_bᵀ ⊗ I) vec T; column-major vec, T[(i,j)] at j·n+i.
        for j in 0..n {
            for i in 0..n {
                let row = j * n + i;
                for l in 0..n {
                    k[(row, j * n + l)] += a.a[(i, l)];
                    k[(row, l * n + i)] -= b.a[(l, j)];
                }
            }
        }
        // T B_b = B_a.
        for j in 0..m {
            for i in 0..n {
                let row = nn + j * n + i;
                for l in 0..n {
                    k[(row, l * n + i)] += b.b[(l, j)];
                }
                rhs[(row, 0)] = a.b[(i, j)];
            }
        }
        // C_a T = C_b.
        for j in 0..n {
            for i in 0..p {
                let row = nn + n * m + j * p + i;
                for l in 0..n {
                    k[(row, j * n + l)] += a.c[(i, l)];
                }
                rhs[(row, 0)] = b.c[(i, j)];
            }
        }
        let svd = crate::numeric::linalg::dense::verified_svd(&k)?;
        let x = svd
            .solve(&rhs, 1e-13)
            .map_err(|e| NumError::no_solution("find_transform", e.to_string()))?;
        DMatrix::from_column_slice(n, n, x.as_slice())
    } else {
        let rho = spectral_radius(&a.a)?.max(1e-300);
        let alpha = 1.0 / rho;
        let krylov = |s: &StateSpace| {
            let mut cols = Vec::new();
            let mut v = s.b.clone();
            for _ in 0..n {
                cols.push(v.clone());
                v = &s.a * v * alpha;
            }
            let mut kk = DMatrix::zeros(n, n * m);
            for (q, c) in cols.iter().enumerate() {
                kk.columns_mut(q * m, m).copy_from(c);
            }
            kk
        };
        let ka = krylov(a);
        let kb = krylov(b);
        let kb_norm = kb.norm();
        let svd = crate::numeric::linalg::dense::verified_svd(&kb)?;
        let pinv = svd
            .pseudo_inverse(1e-14 * kb_norm)
            .map_err(|e| NumError::no_solution("find_transform", e.to_string()))?;
        ka * pinv
    };
    let rc = rcond(&t);
    if rc <= (n as f64) * f64::EPSILON {
        return Err(NumError::Singular {
            what: "the recovered transform".into(),
            rcond: rc,
        });
    }
    let tb = transform_state(a, &t)?.system;
    let err = (&tb.a - &b.a).norm() / (1.0 + b.a.norm())
        + (&tb.b - &b.b).norm() / (1.0 + b.b.norm())
        + (&tb.c - &b.c).norm() / (1.0 + b.c.norm());
    if err.is_nan() || err > 1e-6 {
        return Err(NumError::no_solution(
            "find_transform",
            format!("the recovered T reproduces b only to {err:.1e} relative"),
        ));
    }
    Ok(t)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::numeric::testing::Rng;

    fn stable(rng: &mut Rng, n: usize, m: usize, p: usize) -> StateSpace {
        let a = rng.matrix(n, n) - DMatrix::identity(n, n) * (n as f64).sqrt() * 1.5;
        StateSpace::new(a, rng.matrix(n, m), rng.matrix(p, n), rng.matrix(p, m), 0.0).unwrap()
    }

    /// `(A, B, C)` with `nu` uncontrollable states planted, `[[A₁₁, A₁₂], [0, A₂₂]]`,
    /// `B = [B₁; 0]`, seen through `T = I + 0.3·G` (well conditioned) and the state scaling
    /// `diag(scale^(k/(n−1)))` (construction).
    fn planted_uncontrollable(rng: &mut Rng, n: usize, nu: usize, scale: f64) -> StateSpace {
        let mut a = rng.matrix(n, n) - DMatrix::identity(n, n) * 2.0;
        a.view_mut((n - nu, 0), (nu, n - nu)).fill(0.0);
        let mut b = rng.matrix(n, 1);
        b.rows_mut(n - nu, nu).fill(0.0);
        let sys = StateSpace::new(a, b, rng.matrix(1, n), rng.matrix(1, 1), 0.0).unwrap();
        let g = DMatrix::identity(n, n) + rng.matrix(n, n) * 0.3;
        let d = DMatrix::from_fn(n, n, |i, j| {
            if i == j {
                scale.powf(i as f64 / (n - 1) as f64)
            } else {
                0.0
            }
        });
        transform_state(&sys, &(g * d)).unwrap().system
    }

    #[test]
    fn checked_minimal_is_quiet_on_planted_cancellations_at_every_scaling() {
        // Planted uncontrollable states, hidden by well-conditioned transforms and state
        // scalings 1e-3…1e3: removed exactly, and the removal check stays quiet (a false
        // alarm here would be a warning on a correct answer).
        let mut rng = Rng::new(77);
        for case in 0..60 {
            let n = 3 + case % 5;
            let nu = 1 + case % 2;
            for (scale, time) in [(1e-3, 1.0), (1.0, 1.0), (1e3, 1.0), (1.0, 1e-4), (1.0, 1e4)] {
                // `time` rescales time: (cA, cB, C, D) is the same model with t' = t/c.
                let base = planted_uncontrollable(&mut rng, n, nu, scale);
                let sys = base
                    .with_matrices(
                        &base.a * time,
                        &base.b * time,
                        base.c.clone(),
                        base.d.clone(),
                    )
                    .unwrap();
                let r = minimal_checked(&sys, None).unwrap();
                assert_eq!(r.minimal.removed, nu, "case {case}, n = {n}, scale {scale}");
                assert!(
                    r.changed_behaviour.is_none(),
                    "case {case}, scale {scale}: {:?}",
                    r.changed_behaviour.map(|e| e.reason)
                );
            }
        }
    }

    #[test]
    fn checked_minimal_flags_a_removal_that_changes_the_transfer_function() {
        // A minimal model seen through T of condition 1e9 (exact integers): the default
        // staircase removes two states whose coupling is 0.7 of its threshold, which
        // changes the transfer function. The check must report it; a smaller tolerance
        // keeps every state and reports nothing (construction; figures measured).
        let a = StateSpace::new(
            DMatrix::from_row_slice(3, 3, &[-1.0, 2.0, 0.0, -2.0, -1.0, 1.0, 0.0, 0.0, -5.0]),
            DMatrix::from_column_slice(3, 1, &[1.0, 0.0, 1.0]),
            DMatrix::from_row_slice(1, 3, &[1.0, 0.0, 2.0]),
            DMatrix::zeros(1, 1),
            0.0,
        )
        .unwrap();
        let t = DMatrix::from_row_slice(3, 3, &[1.0, 1e3, 0.0, 0.0, 1.0, 1e3, 0.0, 0.0, 1.0]);
        let copy = transform_state(&a, &t).unwrap().system;
        let r = minimal_checked(&copy, None).unwrap();
        assert!(r.minimal.removed > 0, "the case under test removes states");
        let e = r
            .changed_behaviour
            .clone()
            .expect("a removal that changes G is reported");
        assert!(e.markov_error > 1e-3 && e.margin > 100.0, "{}", e.reason);
        // The tolerance the warning suggests keeps every state.
        let keep = minimal_checked(&copy, Some(r.keeping_tolerance())).unwrap();
        assert_eq!(keep.minimal.removed, 0);
        // The same model on a rescaled time axis is judged alike.
        for c in [1e-4, 1e4] {
            let fast = copy
                .with_matrices(&copy.a * c, &copy.b * c, copy.c.clone(), copy.d.clone())
                .unwrap();
            let rc = minimal_checked(&fast, None).unwrap();
            assert!(
                rc.minimal.removed == 0 || rc.changed_behaviour.is_some(),
                "time scale {c}: {} states removed silently",
                rc.minimal.removed
            );
        }
        let kept = minimal_checked(&copy, Some(1e-12)).unwrap();
        assert_eq!(kept.minimal.removed, 0);
        assert!(kept.changed_behaviour.is_none());
        assert!(equivalence(&a, &kept.system).unwrap().equivalent);
    }

    #[test]
    fn transformed_model_is_equivalent_and_transform_recovered() {
        let mut rng = Rng::new(21);
        for &n in &[1usize, 2, 4, 8, 20] {
            let a = stable(&mut rng, n, 2, 2);
            let t = rng.matrix(n, n) + DMatrix::identity(n, n) * 2.5;
            let b = transform_state(&a, &t).unwrap().system;
            let eq = equivalence(&a, &b).unwrap();
            assert!(eq.equivalent, "n = {n}: {}", eq.reason);
            let got = eq.transform.expect("transform");
            assert!(
                (&got - &t).norm() <= 1e-6 * t.norm(),
                "n = {n}: T not recovered"
            );
        }
    }

    #[test]
    fn perturbed_model_is_not_equivalent() {
        let mut rng = Rng::new(4);
        let a = stable(&mut rng, 4, 1, 1);
        let mut b = a.clone();
        b.b[(0, 0)] += 1e-4;
        let eq = equivalence(&a, &b).unwrap();
        assert!(!eq.equivalent, "{}", eq.reason);
        assert!(eq.reason.contains("Markov parameter"), "{}", eq.reason);
        assert!(find_transform(&a, &b).is_err());
    }

    #[test]
    fn different_shapes_and_domains_are_verdicts() {
        let mut rng = Rng::new(9);
        let a = stable(&mut rng, 3, 1, 1);
        let b = stable(&mut rng, 3, 2, 1);
        assert!(!equivalence(&a, &b).unwrap().equivalent);
        let mut d = a.clone();
        d.dt = 0.1;
        let e = equivalence(&a, &d).unwrap();
        assert!(!e.equivalent && e.reason.contains("time domains"));
    }
}
