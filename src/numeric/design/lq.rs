//! Linear-quadratic regulator and steady-state Kalman estimator of a state-space model.
//!
//! Both are thin layers over [`crate::numeric::design::riccati`]: the regulator solves the
//! control Riccati equation of `(A, B, Q, R)`, the estimator the dual (filter) equation of
//! `(Aᵀ, Cᵀ, W, V)`. The time domain follows `sys.dt` (0: continuous, > 0: discrete).

use crate::numeric::check;
use crate::numeric::design::riccati::{solve_impl, RiccatiParams, Roles, Time};
use crate::numeric::error::{NumError, NumResult};
use crate::numeric::lti::system::StateSpace;
use nalgebra::{Complex, DMatrix};

/// A linear-quadratic state-feedback regulator.
#[derive(Debug, Clone, PartialEq)]
pub struct Lq {
    /// The optimal gain `K` (m×n); the control law is `u = −K x`.
    pub gain: DMatrix<f64>,
    /// The stabilizing Riccati solution `X` (n×n); the optimal cost from `x₀` is `x₀ᵀXx₀`.
    pub riccati: DMatrix<f64>,
    /// Eigenvalues of `A − BK`, in the house order.
    pub closed_loop_poles: Vec<Complex<f64>>,
}

/// A steady-state (Kalman) estimator.
#[derive(Debug, Clone, PartialEq)]
pub struct Estimator {
    /// The estimator gain `L` (n×p).
    pub gain: DMatrix<f64>,
    /// The steady-state estimation-error covariance `P` (n×n); for a discrete model the
    /// one-step *prediction* (a priori) covariance.
    pub covariance: DMatrix<f64>,
    /// Eigenvalues of `A − LC` (the error dynamics), in the house order.
    pub estimator_poles: Vec<Complex<f64>>,
}

/// The linear-quadratic regulator of `sys`: the state feedback `u = −Kx` that minimises
/// `∫₀^∞ (xᵀQx + uᵀRu) dt` (continuous, `sys.dt = 0`) or `Σₖ (xₖᵀQxₖ + uₖᵀRuₖ)`
/// (discrete), with `Q` n×n symmetric positive semidefinite and `R` m×m symmetric positive
/// definite.
///
/// **Mathematics.** `K = R⁻¹BᵀX` with `X` the stabilizing solution of
/// `AᵀX + XA − XBR⁻¹BᵀX + Q = 0`, or `K = (R + BᵀXB)⁻¹BᵀXA` with `X` that of
/// `AᵀXA − X − AᵀXB(R + BᵀXB)⁻¹BᵀXA + Q = 0` (Kalman 1960, "Contributions to the theory of
/// optimal control", Bol. Soc. Mat. Mexicana). `C` and `D` play no part.
///
/// **Algorithm, cost, tolerances.** Those of
/// [`crate::numeric::design::riccati::solve_riccati_with`] (Laub's Schur method plus a
/// Kleinman step, about 200n³ flops) or
/// [`crate::numeric::design::riccati::solve_riccati_discrete_with`] (structure-preserving
/// doubling plus Hewer steps), with the default [`RiccatiParams`].
///
/// **Errors.** Shapes of `Q` (n×n) and `R` (m×m), symmetry and definiteness, and
/// [`NumError::NoSolution`] naming an uncontrollable unstable mode or a mode on the
/// stability boundary unseen by `Q`.
pub fn lq_regulator(sys: &StateSpace, q: &DMatrix<f64>, r: &DMatrix<f64>) -> NumResult<Lq> {
    let params = RiccatiParams::default();
    let sol = solve_impl(time_of(sys), &sys.a, &sys.b, q, r, &params, &Roles::CONTROL)?;
    Ok(Lq {
        gain: sol.gain,
        riccati: sol.x,
        closed_loop_poles: sol.closed_loop_poles,
    })
}

/// The steady-state Kalman estimator of `sys` for the noise model
/// `x' = Ax + Bu + w`, `y = Cx + Du + v` (continuous) or `x[k+1] = Ax[k] + Bu[k] + w[k]`,
/// `y[k] = Cx[k] + Du[k] + v[k]` (discrete), with `w` and `v` zero-mean, white and
/// uncorrelated, `cov w = W` (n×n, symmetric positive semidefinite, entering the state
/// equation as given) and `cov v = V` (p×p, symmetric positive definite).
///
/// **Mathematics.** Continuous (Kalman & Bucy 1961, "New results in linear filtering and
/// prediction theory", J. Basic Engineering 83): `P` is the stabilizing solution of
/// `AP + PAᵀ − PCᵀV⁻¹CP + W = 0`, the estimator is `x̂' = Ax̂ + Bu + L(y − Cx̂ − Du)` with
/// `L = PCᵀV⁻¹`. Discrete (Kalman 1960, "A new approach to linear filtering and prediction
/// problems", J. Basic Engineering 82), *predictor form*: `P` is the stabilizing solution
/// of `APAᵀ − P − APCᵀ(V + CPCᵀ)⁻¹CPAᵀ + W = 0` (the a priori covariance of the
/// one-step prediction), the estimator is
/// `x̂[k+1] = Ax̂[k] + Bu[k] + L(y[k] − Cx̂[k] − Du[k])` with `L = APCᵀ(V + CPCᵀ)⁻¹`. (The
/// filter, or current-estimate, gain is `M = PCᵀ(V + CPCᵀ)⁻¹`, and `L = AM`.) In both
/// cases the error dynamics are `A − LC`, whose eigenvalues are returned.
///
/// **Algorithm.** Duality: the filter equation is the control equation of
/// `(Aᵀ, Cᵀ, W, V)`, whose gain is `Lᵀ`; solved as in [`lq_regulator`], with the same cost
/// and tolerances.
///
/// **Errors.** Shapes of `W` (n×n) and `V` (p×p), symmetry, `W` indefinite, `V` not
/// positive definite, and [`NumError::NoSolution`] naming an unobservable unstable mode of
/// `(C, A)` or a boundary mode not excited by `W`.
pub fn lq_estimator(sys: &StateSpace, w: &DMatrix<f64>, v: &DMatrix<f64>) -> NumResult<Estimator> {
    let n = sys.order();
    let p = sys.outputs();
    check::dims("W", w, n, n)?;
    check::dims("V", v, p, p)?;
    let at = sys.a.transpose();
    let ct = sys.c.transpose();
    let params = RiccatiParams::default();
    let sol = solve_impl(time_of(sys), &at, &ct, w, v, &params, &Roles::ESTIMATION)?;
    if sol.gain.nrows() != p {
        return Err(NumError::shape(
            "estimator gain",
            format!("{p} rows"),
            check::shape_of(&sol.gain),
        ));
    }
    Ok(Estimator {
        gain: sol.gain.transpose(),
        covariance: sol.x,
        estimator_poles: sol.closed_loop_poles,
    })
}

/// The Riccati equation of a model's time domain.
fn time_of(sys: &StateSpace) -> Time {
    if sys.is_discrete() {
        Time::Discrete
    } else {
        Time::Continuous
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::assert_close;
    use crate::numeric::linalg::eigen::eigenvalues;
    use crate::numeric::testing::Rng;

    fn m(rows: usize, cols: usize, v: &[f64]) -> DMatrix<f64> {
        DMatrix::from_row_slice(rows, cols, v)
    }

    fn double_integrator(dt: f64) -> StateSpace {
        StateSpace::new(
            m(2, 2, &[0.0, 1.0, 0.0, 0.0]),
            m(2, 1, &[0.0, 1.0]),
            m(1, 2, &[1.0, 0.0]),
            m(1, 1, &[0.0]),
            dt,
        )
        .unwrap()
    }

    #[test]
    fn regulator_double_integrator_gain() {
        // Closed form derived in riccati.rs (double_integrator_closed_form): Q = I, R = 1
        // gives K = [1, √3] and X = [[√3, 1], [1, √3]].
        let sys = double_integrator(0.0);
        let lq = lq_regulator(&sys, &DMatrix::identity(2, 2), &m(1, 1, &[1.0])).unwrap();
        let s3 = 3f64.sqrt();
        assert_close!(lq.gain, m(1, 2, &[1.0, s3]), 1e-14, 1e-14);
        assert_close!(lq.riccati, m(2, 2, &[s3, 1.0, 1.0, s3]), 1e-14, 1e-14);
        assert!(lq.closed_loop_poles.iter().all(|z| z.re < 0.0));
    }

    #[test]
    fn estimator_double_integrator_closed_form() {
        // Dual of the regulator: AP + PAᵀ − PCᵀCP + I = 0 with C = [1, 0] is the control
        // equation of (Aᵀ, Cᵀ) = ([[0, 0], [1, 0]], [1; 0]), which is the double integrator
        // with its states swapped. Swapping the closed form gives P = [[√3, 1], [1, √3]]
        // and L = PCᵀ = [√3; 1]; A − LC = [[−√3, 1], [−1, 0]], characteristic polynomial
        // s² + √3 s + 1.
        let sys = double_integrator(0.0);
        let est = lq_estimator(&sys, &DMatrix::identity(2, 2), &m(1, 1, &[1.0])).unwrap();
        let s3 = 3f64.sqrt();
        assert_close!(est.covariance, m(2, 2, &[s3, 1.0, 1.0, s3]), 1e-14, 1e-14);
        assert_close!(est.gain, m(2, 1, &[s3, 1.0]), 1e-14, 1e-14);
        let err = &sys.a - &est.gain * &sys.c;
        let poles = eigenvalues(&err).unwrap();
        for (x, y) in poles.iter().zip(&est.estimator_poles) {
            assert!((x - y).norm() < 1e-14);
        }
    }

    #[test]
    fn discrete_estimator_satisfies_its_equation() {
        // Residual of the predictor Riccati equation and of the gain formula, on a random
        // 4-state, 2-output model (residual check, relative to the size of the terms).
        let mut rng = Rng::new(31);
        let a = rng.matrix(4, 4) * 0.6;
        let c = rng.matrix(2, 4);
        let sys = StateSpace::new(
            a.clone(),
            rng.matrix(4, 1),
            c.clone(),
            DMatrix::zeros(2, 1),
            0.1,
        )
        .unwrap();
        let g = rng.matrix(4, 4);
        let w = &g * g.transpose();
        let v = m(2, 2, &[0.5, 0.1, 0.1, 0.3]);
        let est = lq_estimator(&sys, &w, &v).unwrap();
        let p = &est.covariance;
        let s = &v + &c * p * c.transpose();
        let l_expected = &a * p * c.transpose() * s.clone().try_inverse().unwrap();
        assert_close!(est.gain, l_expected, 1e-12, 1e-10);
        let res = &a * p * a.transpose() - p - &l_expected * &s * l_expected.transpose() + &w;
        let scale = (&a * p * a.transpose()).norm() + p.norm() + w.norm();
        assert!(
            res.norm() / scale < 1e-14,
            "residual {}",
            res.norm() / scale
        );
        assert!(est.estimator_poles.iter().all(|z| z.norm() < 1.0));
    }

    #[test]
    fn discrete_regulator_uses_discrete_equation() {
        // Scalar discrete model a = 2, b = 1, q = 0, r = 1: x = r(a² − 1)/b² = 3 (closed
        // form in riccati.rs), closed-loop pole 1/a = 0.5.
        let sys = StateSpace::new(
            m(1, 1, &[2.0]),
            m(1, 1, &[1.0]),
            m(1, 1, &[1.0]),
            m(1, 1, &[0.0]),
            1.0,
        )
        .unwrap();
        let lq = lq_regulator(&sys, &m(1, 1, &[0.0]), &m(1, 1, &[1.0])).unwrap();
        assert_close!(lq.riccati[(0, 0)], 3.0, 1e-14, 1e-13);
        assert_close!(lq.closed_loop_poles[0].re, 0.5, 1e-14, 1e-13);
    }

    #[test]
    fn errors_name_the_estimator_arguments() {
        let sys = double_integrator(0.0);
        let e = lq_estimator(&sys, &DMatrix::identity(3, 3), &m(1, 1, &[1.0])).unwrap_err();
        assert!(e.to_string().starts_with("W:"), "{e}");
        let e = lq_estimator(&sys, &DMatrix::identity(2, 2), &m(1, 1, &[-1.0])).unwrap_err();
        assert!(e.to_string().starts_with("V:"), "{e}");
        // Unobservable unstable mode: x₂' = x₂ not seen by y = x₁ (decoupled).
        let bad = StateSpace::new(
            m(2, 2, &[-1.0, 0.0, 0.0, 1.0]),
            m(2, 1, &[1.0, 1.0]),
            m(1, 2, &[1.0, 0.0]),
            m(1, 1, &[0.0]),
            0.0,
        )
        .unwrap();
        let e = lq_estimator(&bad, &DMatrix::identity(2, 2), &m(1, 1, &[1.0]))
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("not detectable") && e.contains("1.000000"),
            "{e}"
        );
        let e = lq_regulator(
            &sys,
            &DMatrix::identity(2, 2),
            &m(2, 2, &[1.0, 0.0, 0.0, 1.0]),
        )
        .unwrap_err();
        assert!(e.to_string().starts_with("R:"), "{e}");
    }
}
