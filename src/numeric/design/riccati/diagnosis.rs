//! Why no stabilizing solution exists: PBH tests at the eigenvalues of `A` that name the
//! uncontrollable or unobservable mode on or beyond the stability boundary.

use super::*;

/// Relative PBH threshold and boundary band used by the diagnosis (see the doc comments).
pub(super) const PBH_TOL: f64 = 1e-6;

/// The error for a missing stabilizing solution: the modes found by PBH tests, else `cause`.
pub(super) fn no_stabilizing(
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
pub(super) fn diagnose(
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
pub(super) fn pbh_deficient(
    a: &DMatrix<f64>,
    m: &DMatrix<f64>,
    lambda: Complex<f64>,
    stacked: bool,
) -> bool {
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
