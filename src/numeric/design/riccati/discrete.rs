//! The discrete-time solver: structure-preserving doubling (Chu, Fan, Lin & Wang 2004)
//! and Newton (Hewer 1971) steps, with the residual it is judged by.

use super::*;

pub(super) fn discrete_unscaled(
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
pub(super) fn sda(
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
pub(super) fn discrete_gain(
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
pub(super) fn dare_residual(
    a: &DMatrix<f64>,
    pr: &Prepared,
    x: &DMatrix<f64>,
    term: &DMatrix<f64>,
) -> DMatrix<f64> {
    a.transpose() * x * a - x - term + &pr.q
}

/// The norm of the terms of the discrete residual, `‖Q‖ + ‖X‖ + ‖A‖²‖X‖ + ‖term‖`.
pub(super) fn dare_scale(
    a: &DMatrix<f64>,
    pr: &Prepared,
    x: &DMatrix<f64>,
    term: &DMatrix<f64>,
) -> f64 {
    let an = a.norm();
    pr.q.norm() + x.norm() + an * an * x.norm() + term.norm()
}

/// One Newton (Hewer) step in correction form; returns the better of the two iterates.
/// Skipped when the residual of `x` is already at rounding level
/// ([`residual_at_rounding_level`]).
pub(super) fn hewer_step(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    pr: &Prepared,
    x: DMatrix<f64>,
) -> DMatrix<f64> {
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
pub(super) fn hewer_iterate(
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
