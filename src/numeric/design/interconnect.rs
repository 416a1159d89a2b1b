//! Interconnections of state-space models: series, parallel, negation and feedback.
//!
//! Every model is `x' = A x + B u, y = C x + D u` (continuous, `dt = 0`) or the discrete
//! analogue (sample time `dt > 0`). The combined model is written down directly from the
//! signal equations (block matrices, no transfer functions, no minimality reduction), so
//! its order is the sum of the orders and its poles are exactly those of the parts
//! (series, parallel) or of the closed loop (feedback).
//!
//! **State ordering.** Every combination of two models `g` and `h` has the state
//! `x = [x_g; x_h]`: first the states of the first argument, then those of the second.
//!
//! Both models must share the time domain and sample time
//! ([`crate::numeric::lti::system::same_domain`]); sizes are checked and the message
//! names the inputs and outputs of each model.

use crate::numeric::check::shape_of;
use crate::numeric::lti::system::{same_domain, SignalNames, StateSpace};
use crate::numeric::{NumError, NumResult};
use nalgebra::linalg::SVD;
use nalgebra::DMatrix;

/// The sign with which a second signal is combined: `G + H` / `G − H` in [`parallel`],
/// positive or negative feedback in [`feedback`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Sign {
    /// Added (`G + H`; positive feedback `e = u + H y`).
    Plus,
    /// Subtracted (`G − H`; negative feedback `e = u − H y`, the usual case).
    Minus,
}

impl Sign {
    /// `+1.0` or `−1.0`.
    pub fn value(self) -> f64 {
        match self {
            Sign::Plus => 1.0,
            Sign::Minus => -1.0,
        }
    }
}

/// Series connection `y = G(H u)`: `h` acts first, its output drives `g`.
///
/// **Mathematics.** With `x = [x_g; x_h]`:
/// `A = [A_g, B_g C_h; 0, A_h]`, `B = [B_g D_h; B_h]`, `C = [C_g, D_g C_h]`,
/// `D = D_g D_h`; the transfer matrix is `G(s) H(s)`.
///
/// **Algorithm and cost.** Block products, O((n_g + n_h)²·max(m, p)).
///
/// **Errors.** `h` must have as many outputs as `g` has inputs; both models must share
/// the time domain ([`same_domain`]).
pub fn series(g: &StateSpace, h: &StateSpace) -> NumResult<StateSpace> {
    same_domain("series", g, h)?;
    if h.outputs() != g.inputs() {
        return Err(NumError::shape(
            "series (g * h: h first, then g)",
            format!("h with as many outputs as g has inputs ({})", g.inputs()),
            format!(
                "h with {} outputs (h: {} outputs × {} inputs, g: {} outputs × {} inputs)",
                h.outputs(),
                h.outputs(),
                h.inputs(),
                g.outputs(),
                g.inputs()
            ),
        ));
    }
    let (ng, nh) = (g.order(), h.order());
    let n = ng + nh;
    let (m, p) = (h.inputs(), g.outputs());
    let mut a = DMatrix::zeros(n, n);
    a.view_mut((0, 0), (ng, ng)).copy_from(&g.a);
    a.view_mut((0, ng), (ng, nh)).copy_from(&(&g.b * &h.c));
    a.view_mut((ng, ng), (nh, nh)).copy_from(&h.a);
    let mut b = DMatrix::zeros(n, m);
    b.view_mut((0, 0), (ng, m)).copy_from(&(&g.b * &h.d));
    b.view_mut((ng, 0), (nh, m)).copy_from(&h.b);
    let mut c = DMatrix::zeros(p, n);
    c.view_mut((0, 0), (p, ng)).copy_from(&g.c);
    c.view_mut((0, ng), (p, nh)).copy_from(&(&g.d * &h.c));
    let d = &g.d * &h.d;
    let mut s = StateSpace::new(a, b, c, d, g.dt)?;
    s.names = SignalNames {
        inputs: h.names.inputs.clone(),
        outputs: g.names.outputs.clone(),
        states: joined_states(g, h),
    };
    Ok(s)
}

/// Parallel connection `y = G u ± H u` (`sign` [`Sign::Plus`] for `G + H`, [`Sign::Minus`]
/// for `G − H`).
///
/// **Mathematics.** With `x = [x_g; x_h]` and `σ = ±1`: `A = diag(A_g, A_h)`,
/// `B = [B_g; B_h]`, `C = [C_g, σ C_h]`, `D = D_g + σ D_h`; the transfer matrix is
/// `G(s) + σ H(s)`.
///
/// **Cost.** O((n_g + n_h)²) to assemble.
///
/// **Errors.** Both models must have the same numbers of inputs and of outputs and share
/// the time domain.
pub fn parallel(g: &StateSpace, h: &StateSpace, sign: Sign) -> NumResult<StateSpace> {
    let what = match sign {
        Sign::Plus => "parallel (g + h)",
        Sign::Minus => "parallel (g - h)",
    };
    same_domain(what, g, h)?;
    if g.inputs() != h.inputs() || g.outputs() != h.outputs() {
        return Err(NumError::shape(
            what,
            format!(
                "h with the size of g ({} outputs × {} inputs)",
                g.outputs(),
                g.inputs()
            ),
            format!("h with {} outputs × {} inputs", h.outputs(), h.inputs()),
        ));
    }
    let sg = sign.value();
    let (ng, nh) = (g.order(), h.order());
    let n = ng + nh;
    let (m, p) = (g.inputs(), g.outputs());
    let mut a = DMatrix::zeros(n, n);
    a.view_mut((0, 0), (ng, ng)).copy_from(&g.a);
    a.view_mut((ng, ng), (nh, nh)).copy_from(&h.a);
    let mut b = DMatrix::zeros(n, m);
    b.view_mut((0, 0), (ng, m)).copy_from(&g.b);
    b.view_mut((ng, 0), (nh, m)).copy_from(&h.b);
    let mut c = DMatrix::zeros(p, n);
    c.view_mut((0, 0), (p, ng)).copy_from(&g.c);
    c.view_mut((0, ng), (p, nh)).copy_from(&(&h.c * sg));
    let d = &g.d + &h.d * sg;
    let mut s = StateSpace::new(a, b, c, d, g.dt)?;
    s.names = SignalNames {
        inputs: g.names.inputs.clone(),
        outputs: g.names.outputs.clone(),
        states: joined_states(g, h),
    };
    Ok(s)
}

/// The negated model `y = −G u`: `(A, B, −C, −D)`, same states. Cost O(p·(n + m)).
pub fn negate(g: &StateSpace) -> NumResult<StateSpace> {
    let mut s = StateSpace::new(g.a.clone(), g.b.clone(), -&g.c, -&g.d, g.dt)?;
    s.names = g.names.clone();
    Ok(s)
}

/// Feedback loop `y = G e`, `e = u + σ H y` around the forward model `forward` (G, p
/// outputs × m inputs) with `feedback_path` (H, m outputs × p inputs) in the return path;
/// `sign` [`Sign::Minus`] (σ = −1) is the usual negative feedback `e = u − H y`.
///
/// **Mathematics.** The loop is well posed when `F = (I − σ D_H D_G)⁻¹` (m×m) exists
/// (equivalently `I − σ D_G D_H` is invertible; for negative feedback `I + D_H D_G`).
/// Eliminating `e = F (u + σ D_H C_G x_g + σ C_H x_h)` gives, with `x = [x_g; x_h]`,
///
/// ```text
/// A = [A_G + σ B_G F D_H C_G      σ B_G F C_H          ]
///     [B_H (C_G + σ D_G F D_H C_G) A_H + σ B_H D_G F C_H]
/// B = [B_G F; B_H D_G F]
/// C = [C_G + σ D_G F D_H C_G,  σ D_G F C_H]
/// D = D_G F
/// ```
///
/// and the transfer matrix `(I − σ G(s) H(s))⁻¹ G(s) = G(s) (I − σ H(s) G(s))⁻¹`.
///
/// **Algorithm and cost.** One m×m SVD (to judge well-posedness) and one solve, then
/// block products: O((n_G + n_H)²·(m + p) + m³).
///
/// **Tolerance.** The loop counts as algebraically singular when the reciprocal condition
/// number `σ_min/σ_max` of `I − σ D_H D_G` is at most `m·ε`; the error
/// [`NumError::Singular`] then names it (the interconnection has no state-space model).
///
/// **Errors.** `feedback_path` must have as many inputs as `forward` has outputs and as
/// many outputs as `forward` has inputs; both must share the time domain.
pub fn feedback(
    forward: &StateSpace,
    feedback_path: &StateSpace,
    sign: Sign,
) -> NumResult<StateSpace> {
    let (g, h) = (forward, feedback_path);
    same_domain("feedback", g, h)?;
    if h.inputs() != g.outputs() || h.outputs() != g.inputs() {
        return Err(NumError::shape(
            "feedback (forward, feedback_path)",
            format!(
                "a feedback path with {} outputs × {} inputs (the forward model has {} \
                 outputs × {} inputs)",
                g.inputs(),
                g.outputs(),
                g.outputs(),
                g.inputs()
            ),
            format!(
                "a feedback path with {} outputs × {} inputs",
                h.outputs(),
                h.inputs()
            ),
        ));
    }
    let sg = sign.value();
    let (ng, nh) = (g.order(), h.order());
    let n = ng + nh;
    let (m, p) = (g.inputs(), g.outputs());
    // F = (I − σ D_H D_G)⁻¹, m×m.
    let loop_matrix = DMatrix::<f64>::identity(m, m) - (&h.d * &g.d) * sg;
    let f = well_posed_inverse(&loop_matrix, sign)?;
    let fdh_cg = &f * &h.d * &g.c * sg; // σ F D_H C_G (m×n_g)
    let fch = &f * &h.c * sg; // σ F C_H (m×n_h)
    let mut a = DMatrix::zeros(n, n);
    a.view_mut((0, 0), (ng, ng))
        .copy_from(&(&g.a + &g.b * &fdh_cg));
    a.view_mut((0, ng), (ng, nh)).copy_from(&(&g.b * &fch));
    let cy_g = &g.c + &g.d * &fdh_cg; // output map of x_g (p×n_g)
    let cy_h = &g.d * &fch; // output map of x_h (p×n_h)
    a.view_mut((ng, 0), (nh, ng)).copy_from(&(&h.b * &cy_g));
    a.view_mut((ng, ng), (nh, nh))
        .copy_from(&(&h.a + &h.b * &cy_h));
    let dy = &g.d * &f; // p×m
    let mut b = DMatrix::zeros(n, m);
    b.view_mut((0, 0), (ng, m)).copy_from(&(&g.b * &f));
    b.view_mut((ng, 0), (nh, m)).copy_from(&(&h.b * &dy));
    let mut c = DMatrix::zeros(p, n);
    c.view_mut((0, 0), (p, ng)).copy_from(&cy_g);
    c.view_mut((0, ng), (p, nh)).copy_from(&cy_h);
    let mut s = StateSpace::new(a, b, c, dy, g.dt)?;
    s.names = SignalNames {
        inputs: g.names.inputs.clone(),
        outputs: g.names.outputs.clone(),
        states: joined_states(g, h),
    };
    Ok(s)
}

/// Unity negative feedback `y = G (u − y)`: [`feedback`] with the static identity gain
/// in the return path; the closed loop `(I + G(s))⁻¹ G(s)` has the states of `forward`.
///
/// **Errors.** `forward` must be square (as many outputs as inputs);
/// [`NumError::Singular`] when `I + D_G` is singular (an algebraic loop without solution).
pub fn unity_feedback(forward: &StateSpace) -> NumResult<StateSpace> {
    if forward.inputs() != forward.outputs() {
        return Err(NumError::shape(
            "unity feedback (close_loop with one model)",
            "a square forward model (as many outputs as inputs)".to_string(),
            format!(
                "{} outputs × {} inputs",
                forward.outputs(),
                forward.inputs()
            ),
        ));
    }
    let p = forward.outputs();
    let identity = StateSpace::new(
        DMatrix::zeros(0, 0),
        DMatrix::zeros(0, p),
        DMatrix::zeros(p, 0),
        DMatrix::identity(p, p),
        forward.dt,
    )?;
    feedback(forward, &identity, Sign::Minus)
}

/// State feedback `u = −K x + r` applied to `sys`, with `r` the new (reference) input.
///
/// **Mathematics.** Substituting `u = r − K x` into `x' = A x + B u`, `y = C x + D u`
/// gives `x' = (A − B K) x + B r`, `y = (C − D K) x + D r`: the same states, inputs and
/// outputs, the closed-loop poles the eigenvalues of `A − B K` (Kailath 1980, "Linear
/// Systems", the standard state-feedback substitution).
///
/// **Cost.** O(n²·m + p·n·m).
///
/// **Errors.** `K` must be m×n (inputs × states) and finite.
pub fn state_feedback(sys: &StateSpace, k: &DMatrix<f64>) -> NumResult<StateSpace> {
    let (n, m) = (sys.order(), sys.inputs());
    if k.nrows() != m || k.ncols() != n {
        return Err(NumError::shape(
            "state feedback gain K",
            format!("{m}×{n} (inputs × states of the model)"),
            shape_of(k),
        ));
    }
    crate::numeric::check::finite("K", k)?;
    let mut s = StateSpace::new(
        &sys.a - &sys.b * k,
        sys.b.clone(),
        &sys.c - &sys.d * k,
        sys.d.clone(),
        sys.dt,
    )?;
    s.names = sys.names.clone();
    Ok(s)
}

/// The model scaled by a static gain, `k·G`: `(A, B, k C, k D)`, same states. Errors on
/// a non-finite `k`. Cost O(p·(n + m)).
pub fn scale(g: &StateSpace, k: f64) -> NumResult<StateSpace> {
    if !k.is_finite() {
        return Err(NumError::invalid(
            "gain",
            format!("expected a finite number, found {k}"),
        ));
    }
    let mut s = StateSpace::new(g.a.clone(), g.b.clone(), &g.c * k, &g.d * k, g.dt)?;
    s.names = g.names.clone();
    Ok(s)
}

/// `M⁻¹` for the loop matrix `M = I − σ D_H D_G`, or [`NumError::Singular`] when its
/// reciprocal condition number is at most `m·ε`.
fn well_posed_inverse(mat: &DMatrix<f64>, sign: Sign) -> NumResult<DMatrix<f64>> {
    let m = mat.nrows();
    let name = match sign {
        Sign::Minus => "the feedback loop: I + D_feedback·D_forward",
        Sign::Plus => "the feedback loop: I − D_feedback·D_forward",
    };
    if m == 0 {
        return Ok(DMatrix::zeros(0, 0));
    }
    let sv = SVD::try_new(mat.clone(), false, false, f64::EPSILON, 200 * m + 1000).ok_or(
        NumError::NoConvergence {
            what: "singular value decomposition of the feedback loop matrix".into(),
            iterations: 200 * m + 1000,
        },
    )?;
    let smax = sv.singular_values.iter().fold(0.0f64, |a, &x| a.max(x));
    let smin = sv
        .singular_values
        .iter()
        .fold(f64::INFINITY, |a, &x| a.min(x));
    let rcond = if smax > 0.0 { smin / smax } else { 0.0 };
    if rcond <= m as f64 * f64::EPSILON {
        return Err(NumError::Singular {
            what: format!(
                "{name} ({}; the loop is algebraically singular and has no state-space model)",
                shape_of(mat)
            ),
            rcond,
        });
    }
    mat.clone().lu().try_inverse().ok_or(NumError::Singular {
        what: format!("{name} (algebraically singular loop)"),
        rcond: 0.0,
    })
}

/// Models with independent inputs and outputs side by side: the block-diagonal model
/// whose inputs are those of `models[0]`, then of `models[1]`, …, and likewise its outputs
/// and states (`A = diag(A₁, A₂, …)`, `B = diag(B₁, …)`, `C = diag(C₁, …)`,
/// `D = diag(D₁, …)`; the transfer matrix is `diag(G₁(s), G₂(s), …)`).
///
/// **Names.** When any model names its inputs (outputs, states), the result names them
/// all: the given names, and `u<k>` (`y<k>`, `x<k>`) at combined position k for a model
/// that names none. When no model names them, they stay unnamed.
///
/// **Cost.** O(N²) to assemble, N the sum of the orders.
///
/// **Errors.** No model; models of different time domains or sample times.
pub fn side_by_side(models: &[StateSpace]) -> NumResult<StateSpace> {
    let Some(first) = models.first() else {
        return Err(NumError::invalid(
            "side_by_side",
            "expected at least one model, found none",
        ));
    };
    for m in &models[1..] {
        same_domain("side_by_side", first, m)?;
    }
    let (n, mm, p) = models.iter().fold((0, 0, 0), |(n, m, p), s| {
        (n + s.order(), m + s.inputs(), p + s.outputs())
    });
    let (mut a, mut b, mut c, mut d) = (
        DMatrix::zeros(n, n),
        DMatrix::zeros(n, mm),
        DMatrix::zeros(p, n),
        DMatrix::zeros(p, mm),
    );
    let (mut x, mut u, mut y) = (0, 0, 0);
    for s in models {
        let (k, mi, pi) = (s.order(), s.inputs(), s.outputs());
        a.view_mut((x, x), (k, k)).copy_from(&s.a);
        b.view_mut((x, u), (k, mi)).copy_from(&s.b);
        c.view_mut((y, x), (pi, k)).copy_from(&s.c);
        d.view_mut((y, u), (pi, mi)).copy_from(&s.d);
        (x, u, y) = (x + k, u + mi, y + pi);
    }
    let mut out = StateSpace::new(a, b, c, d, first.dt)?;
    let names = |get: fn(&StateSpace) -> (&Vec<String>, usize), prefix: &str| {
        if models.iter().all(|s| get(s).0.is_empty()) {
            return Vec::new();
        }
        let mut all = Vec::new();
        for s in models {
            let (given, count) = get(s);
            if given.len() == count {
                all.extend(given.iter().cloned());
            } else {
                let at = all.len();
                all.extend((at..at + count).map(|k| format!("{prefix}{k}")));
            }
        }
        all
    };
    out.names = SignalNames {
        inputs: names(|s| (&s.names.inputs, s.inputs()), "u"),
        outputs: names(|s| (&s.names.outputs, s.outputs()), "y"),
        states: names(|s| (&s.names.states, s.order()), "x"),
    };
    Ok(out)
}

/// State names of `[x_g; x_h]` when both models name all their states, else none.
fn joined_states(g: &StateSpace, h: &StateSpace) -> Vec<String> {
    let named = |s: &StateSpace| s.names.states.len() == s.order();
    if named(g) && named(h) && g.order() + h.order() > 0 {
        g.names
            .states
            .iter()
            .chain(h.names.states.iter())
            .cloned()
            .collect()
    } else {
        Vec::new()
    }
}

#[cfg(test)]
mod side_by_side_tests {
    use super::*;
    use crate::numeric::testing::siso;

    #[test]
    fn models_side_by_side_are_block_diagonal_with_their_names() {
        let mut g = siso(&[-1.0], &[1.0], &[2.0], 0.5);
        g.names.inputs = vec!["torque".into()];
        g.names.outputs = vec!["speed".into()];
        let h = siso(&[0.0, 1.0, -4.0, -0.8], &[0.0, 1.0], &[1.0, 0.0], 0.0);
        let s = side_by_side(&[g.clone(), h.clone()]).expect("stacked");
        assert_eq!((s.order(), s.inputs(), s.outputs()), (3, 2, 2));
        assert_eq!(s.a[(0, 0)], -1.0);
        assert_eq!(s.a[(2, 1)], -4.0);
        assert_eq!(s.b[(0, 1)], 0.0, "independent inputs");
        assert_eq!(s.c[(0, 1)], 0.0, "independent outputs");
        assert_eq!(s.d[(0, 0)], 0.5);
        assert_eq!(s.names.inputs, ["torque", "u1"]);
        assert_eq!(s.names.outputs, ["speed", "y1"]);
        assert!(s.names.states.is_empty());
        let unnamed = side_by_side(&[h.clone(), h]).expect("stacked");
        assert!(unnamed.names.inputs.is_empty());
        assert!(side_by_side(&[]).is_err());
        let sampled = StateSpace::new(g.a.clone(), g.b.clone(), g.c.clone(), g.d.clone(), 0.1)
            .expect("valid");
        assert!(side_by_side(&[g, sampled]).is_err(), "one time domain");
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::numeric::freq::response::FrequencyEvaluator;
    use crate::numeric::testing::Rng;
    use nalgebra::Complex;

    type C64 = Complex<f64>;

    fn model(
        a: &[f64],
        b: &[f64],
        c: &[f64],
        d: &[f64],
        n: usize,
        m: usize,
        p: usize,
    ) -> StateSpace {
        StateSpace::new(
            DMatrix::from_row_slice(n, n, a),
            DMatrix::from_row_slice(n, m, b),
            DMatrix::from_row_slice(p, n, c),
            DMatrix::from_row_slice(p, m, d),
            0.0,
        )
        .unwrap()
    }

    fn random(rng: &mut Rng, n: usize, m: usize, p: usize, dt: f64) -> StateSpace {
        let a = rng.matrix(n, n) - DMatrix::identity(n, n) * 3.0;
        StateSpace::new(a, rng.matrix(n, m), rng.matrix(p, n), rng.matrix(p, m), dt).unwrap()
    }

    fn at(sys: &StateSpace, s: C64) -> DMatrix<C64> {
        FrequencyEvaluator::new(sys).unwrap().at_point(s)
    }

    fn close(a: &DMatrix<C64>, b: &DMatrix<C64>, tol: f64) {
        let err = (a - b).norm() / b.norm().max(1.0);
        assert!(err < tol, "relative difference {err:e}\n{a}\n{b}");
    }

    const POINTS: [C64; 3] = [C64::new(0.0, 0.3), C64::new(0.0, 2.5), C64::new(0.4, -1.7)];

    #[test]
    fn series_is_the_product_h_first() {
        // Source: G(s) = 1/(s + 1), H(s) = (s + 2)/(s + 3) = 1 − 1/(s + 3); the series
        // connection is the product G(s)·H(s) = (s + 2)/((s + 1)(s + 3)) (hand-derived).
        let g = model(&[-1.0], &[1.0], &[1.0], &[0.0], 1, 1, 1);
        let h = model(&[-3.0], &[1.0], &[-1.0], &[1.0], 1, 1, 1);
        let s = series(&g, &h).unwrap();
        assert_eq!(s.order(), 2);
        for z in POINTS {
            let want = (z + 2.0) / ((z + 1.0) * (z + 3.0));
            assert!((at(&s, z)[(0, 0)] - want).norm() < 1e-14);
        }
        // MIMO: G is 2×3 (2 outputs, 3 inputs), H is 3×1; the product G(s)H(s) is 2×1.
        let mut rng = Rng::new(11);
        let g = random(&mut rng, 3, 3, 2, 0.0);
        let h = random(&mut rng, 2, 1, 3, 0.0);
        let s = series(&g, &h).unwrap();
        assert_eq!((s.outputs(), s.inputs(), s.order()), (2, 1, 5));
        for z in POINTS {
            close(&at(&s, z), &(at(&g, z) * at(&h, z)), 1e-12);
        }
    }

    #[test]
    fn parallel_and_negate_are_sums() {
        // Source: the transfer matrix of a parallel connection is G(s) ± H(s), of the
        // negation −G(s) (hand-derived from the block matrices in the doc comment).
        let mut rng = Rng::new(12);
        let g = random(&mut rng, 3, 2, 2, 0.0);
        let h = random(&mut rng, 2, 2, 2, 0.0);
        let plus = parallel(&g, &h, Sign::Plus).unwrap();
        let minus = parallel(&g, &h, Sign::Minus).unwrap();
        let neg = negate(&g).unwrap();
        for z in POINTS {
            close(&at(&plus, z), &(at(&g, z) + at(&h, z)), 1e-12);
            close(&at(&minus, z), &(at(&g, z) - at(&h, z)), 1e-12);
            close(&at(&neg, z), &(-at(&g, z)), 1e-15);
        }
        assert_eq!(plus.order(), 5);
    }

    #[test]
    fn feedback_matches_the_closed_loop_formula() {
        // Source: G = 1/(s + 1), H = 2/(s + 3): negative feedback gives
        // G/(1 + G H) = (s + 3)/((s + 1)(s + 3) + 2) (hand-derived); positive feedback
        // G/(1 − G H) = (s + 3)/((s + 1)(s + 3) − 2).
        let g = model(&[-1.0], &[1.0], &[1.0], &[0.0], 1, 1, 1);
        let h = model(&[-3.0], &[1.0], &[2.0], &[0.0], 1, 1, 1);
        let neg = feedback(&g, &h, Sign::Minus).unwrap();
        let pos = feedback(&g, &h, Sign::Plus).unwrap();
        for z in POINTS {
            let want = (z + 3.0) / ((z + 1.0) * (z + 3.0) + 2.0);
            assert!((at(&neg, z)[(0, 0)] - want).norm() < 1e-14);
            let want = (z + 3.0) / ((z + 1.0) * (z + 3.0) - 2.0);
            assert!((at(&pos, z)[(0, 0)] - want).norm() < 1e-14);
        }
        // MIMO with feedthrough in both paths: (I − σ G H)⁻¹ G by a complex solve.
        let mut rng = Rng::new(13);
        let g = random(&mut rng, 3, 2, 3, 0.0);
        let h = random(&mut rng, 2, 3, 2, 0.0);
        for sign in [Sign::Minus, Sign::Plus] {
            let cl = feedback(&g, &h, sign).unwrap();
            assert_eq!((cl.outputs(), cl.inputs(), cl.order()), (3, 2, 5));
            for z in POINTS {
                let (gz, hz) = (at(&g, z), at(&h, z));
                let lhs = DMatrix::<C64>::identity(3, 3) - &gz * &hz * C64::new(sign.value(), 0.0);
                let want = lhs.lu().solve(&gz).unwrap();
                close(&at(&cl, z), &want, 1e-10);
            }
        }
    }

    #[test]
    fn unity_feedback_of_an_integrator() {
        // Source: G = k/s closed by unity negative feedback is k/(s + k): one pole at −k.
        let g = model(&[0.0], &[1.0], &[4.0], &[0.0], 1, 1, 1);
        let cl = unity_feedback(&g).unwrap();
        assert!((cl.a[(0, 0)] + 4.0).abs() < 1e-15);
        let z = C64::new(0.0, 1.0);
        assert!((at(&cl, z)[(0, 0)] - 4.0 / (z + 4.0)).norm() < 1e-15);
        // A discrete loop keeps its sample time.
        let gd = StateSpace::new(
            DMatrix::from_element(1, 1, 0.5),
            DMatrix::from_element(1, 1, 1.0),
            DMatrix::from_element(1, 1, 1.0),
            DMatrix::zeros(1, 1),
            0.1,
        )
        .unwrap();
        let cl = unity_feedback(&gd).unwrap();
        // Source: 1/(z − 0.5) in unity feedback is 1/(z + 0.5) (hand-derived).
        assert_eq!(cl.dt, 0.1);
        assert!((cl.a[(0, 0)] + 0.5).abs() < 1e-15);
    }

    #[test]
    fn sizes_domains_and_singular_loops_are_errors() {
        let mut rng = Rng::new(14);
        let g = random(&mut rng, 2, 2, 1, 0.0);
        let h = random(&mut rng, 1, 1, 3, 0.0);
        let e = series(&g, &h).unwrap_err().to_string();
        assert!(
            e.contains("as many outputs as g has inputs (2)") && e.contains("3 outputs"),
            "{e}"
        );
        let e = parallel(&g, &h, Sign::Plus).unwrap_err().to_string();
        assert!(e.contains("1 outputs × 2 inputs"), "{e}");
        let e = feedback(&g, &h, Sign::Minus).unwrap_err().to_string();
        assert!(e.contains("feedback path with 2 outputs × 1 inputs"), "{e}");
        let e = unity_feedback(&g).unwrap_err().to_string();
        assert!(e.contains("square forward model"), "{e}");
        let gd = random(&mut rng, 2, 2, 1, 0.1);
        let e = parallel(&g, &gd, Sign::Minus).unwrap_err().to_string();
        assert!(e.contains("different time domains"), "{e}");
        let gd2 = random(&mut rng, 1, 1, 1, 0.2);
        let gd1 = random(&mut rng, 1, 1, 1, 0.1);
        assert!(series(&gd1, &gd2).is_err());
        // Source: a static gain −1 closed by unity negative feedback: 1 + D = 0, so the
        // loop equation y = −(u − y) has no solution for u ≠ 0.
        let minus_one = StateSpace::new(
            DMatrix::zeros(0, 0),
            DMatrix::zeros(0, 1),
            DMatrix::zeros(1, 0),
            DMatrix::from_element(1, 1, -1.0),
            0.0,
        )
        .unwrap();
        let e = unity_feedback(&minus_one).unwrap_err();
        assert!(matches!(e, NumError::Singular { .. }), "{e}");
        assert!(e.to_string().contains("algebraically singular"), "{e}");
    }

    #[test]
    fn static_models_and_empty_states() {
        // Source: static gains combine as numbers: 2 and 3 in series give 6, in parallel
        // 5 / −1, negative feedback 2/(1 + 2·3) = 2/7.
        let k = |v: f64| {
            StateSpace::new(
                DMatrix::zeros(0, 0),
                DMatrix::zeros(0, 1),
                DMatrix::zeros(1, 0),
                DMatrix::from_element(1, 1, v),
                0.0,
            )
            .unwrap()
        };
        assert_eq!(series(&k(2.0), &k(3.0)).unwrap().d[(0, 0)], 6.0);
        assert_eq!(
            parallel(&k(2.0), &k(3.0), Sign::Plus).unwrap().d[(0, 0)],
            5.0
        );
        assert_eq!(
            parallel(&k(2.0), &k(3.0), Sign::Minus).unwrap().d[(0, 0)],
            -1.0
        );
        let fb = feedback(&k(2.0), &k(3.0), Sign::Minus).unwrap();
        assert!((fb.d[(0, 0)] - 2.0 / 7.0).abs() < 1e-16);
    }
}
