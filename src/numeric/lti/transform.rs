//! Similarity transformations `x = T z`: the new model is `(T⁻¹AT, T⁻¹B, CT, D)`, with
//! the same input–output behaviour, eigenvalues and Markov parameters.

use super::system::StateSpace;
use crate::numeric::check::{finite, shape_of};
use crate::numeric::{NumError, NumResult};
use nalgebra::DMatrix;

/// Reciprocal condition (σ_min/σ_max) of a square matrix; 0 when singular.
pub fn rcond(t: &DMatrix<f64>) -> f64 {
    if t.is_empty() {
        return 1.0;
    }
    let sv = t.clone().singular_values();
    let smax = sv.iter().cloned().fold(0.0, f64::max);
    let smin = sv.iter().cloned().fold(f64::INFINITY, f64::min);
    if smax == 0.0 {
        0.0
    } else {
        smin / smax
    }
}

/// Condition number above which a transform earns a warning.
pub const WARN_CONDITION: f64 = 1e8;

/// Applies `x = T z`. Refuses a `T` of the wrong size, with non-finite entries, or
/// numerically singular (reciprocal condition below n·ε, judged by the SVD — LU's
/// pivots miss exactly singular matrices). Returns the new model and cond₂(T) so the
/// caller can warn above [`WARN_CONDITION`]. T⁻¹ is applied by LU solves, not by forming
/// the inverse. Cost O(n³).
pub fn transform_state(sys: &StateSpace, t: &DMatrix<f64>) -> NumResult<(StateSpace, f64)> {
    let n = sys.order();
    if t.nrows() != n || t.ncols() != n {
        return Err(NumError::shape(
            "T",
            format!("{n}×{n} (the model's order)"),
            shape_of(t),
        ));
    }
    finite("T", t)?;
    let rc = rcond(t);
    if rc <= (n.max(1) as f64) * f64::EPSILON {
        return Err(NumError::Singular {
            what: "T".into(),
            rcond: rc,
        });
    }
    let lu = t.clone().lu();
    let solve = |m: &DMatrix<f64>| {
        lu.solve(m).ok_or_else(|| NumError::Singular {
            what: "T".into(),
            rcond: rc,
        })
    };
    let a = solve(&(&sys.a * t))?;
    let b = solve(&sys.b)?;
    let c = &sys.c * t;
    let mut out = sys.with_matrices(a, b, c, sys.d.clone())?;
    out.names.states.clear();
    Ok((out, if rc > 0.0 { 1.0 / rc } else { f64::INFINITY }))
}

/// The warning for an ill-conditioned transform, if cond(T) exceeds the threshold.
pub fn condition_warning(what: &str, cond: f64) -> Option<String> {
    (cond > WARN_CONDITION).then(|| {
        format!(
            "{what}: the transform T is ill-conditioned (condition number {cond:.2e}); the new \
             model's entries may carry errors up to about {:.0e} relative",
            cond * f64::EPSILON
        )
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::numeric::testing::Rng;

    #[test]
    fn markov_parameters_survive() {
        let mut rng = Rng::new(3);
        let sys = StateSpace::new(
            rng.matrix(4, 4),
            rng.matrix(4, 2),
            rng.matrix(3, 4),
            rng.matrix(3, 2),
            0.0,
        )
        .unwrap();
        let t = rng.matrix(4, 4) + DMatrix::identity(4, 4) * 3.0;
        let (new, cond) = transform_state(&sys, &t).unwrap();
        assert!(cond < 1e3);
        for (p, q) in sys
            .markov_parameters(6)
            .iter()
            .zip(new.markov_parameters(6).iter())
        {
            assert!((p - q).norm() <= 1e-10 * (1.0 + p.norm()));
        }
    }

    #[test]
    fn singular_transform_is_refused() {
        let sys = StateSpace::new(
            DMatrix::identity(2, 2),
            DMatrix::zeros(2, 1),
            DMatrix::zeros(1, 2),
            DMatrix::zeros(1, 1),
            0.0,
        )
        .unwrap();
        let t = DMatrix::from_row_slice(2, 2, &[1.0, 2.0, 2.0, 4.0]);
        let e = transform_state(&sys, &t).unwrap_err().to_string();
        assert!(e.contains("singular"), "{e}");
        assert!(transform_state(&sys, &DMatrix::identity(3, 3)).is_err());
    }
}
