//! The continuous-time solver: the Schur method on the Hamiltonian (Laub 1979) and one
//! Newton (Kleinman 1968) step, with the residual it is judged by.

use super::*;

pub(super) fn continuous_unscaled(
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

/// The norm of the terms of the continuous residual, `‖Q‖ + 2‖A‖‖X‖ + ‖X‖²‖G‖`: what the
/// residual is measured against.
pub(super) fn care_scale(a: &DMatrix<f64>, pr: &Prepared, x: &DMatrix<f64>) -> f64 {
    pr.q.norm() + 2.0 * a.norm() * x.norm() + x.norm_squared() * pr.g.norm()
}

/// `AᵀX + XA − XGX + Q`.
pub(super) fn care_residual(a: &DMatrix<f64>, pr: &Prepared, x: &DMatrix<f64>) -> DMatrix<f64> {
    let xa = x * a;
    xa.transpose() + xa - x * &pr.g * x + &pr.q
}

/// One Newton (Kleinman) step in correction form; returns the better of the two iterates.
/// Skipped when the residual of `x` is already at rounding level
/// ([`residual_at_rounding_level`]).
pub(super) fn kleinman_step(a: &DMatrix<f64>, pr: &Prepared, x: DMatrix<f64>) -> DMatrix<f64> {
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
pub(super) fn continuous_gain(
    b: &DMatrix<f64>,
    pr: &Prepared,
    x: &DMatrix<f64>,
) -> NumResult<DMatrix<f64>> {
    match &pr.r_chol {
        None => Ok(DMatrix::zeros(0, pr.n)),
        Some(chol) => Ok(chol.solve(&(b.transpose() * x))),
    }
}
