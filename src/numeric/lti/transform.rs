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

/// The reciprocal condition of a basis up to the units of the states: `rcond(D·t)` with
/// `D` scaling each row (`rows`, for `x = T z`) or `rcond(t·D)` each column (for `z = S x`)
/// to unit 2-norm by a power of two. A diagonal change of state units alone changes `T` by
/// exactly such a `D`, and the companion form computed from it not at all, so neither the
/// refusal nor the warning may depend on it (with states spread over 1e±6 the raw
/// condition overflows to a refusal). Used by the companion and modal forms.
pub(crate) fn rcond_up_to_state_units(t: &DMatrix<f64>, rows: bool) -> f64 {
    let mut e = t.clone();
    let n = if rows { e.nrows() } else { e.ncols() };
    for k in 0..n {
        let norm = if rows {
            e.row(k).norm()
        } else {
            e.column(k).norm()
        };
        if norm > 0.0 && norm.is_finite() {
            let f = 2f64.powi(-(norm.log2().round() as i32));
            if rows {
                e.row_mut(k).scale_mut(f);
            } else {
                e.column_mut(k).scale_mut(f);
            }
        }
    }
    rcond(&e)
}

/// Condition number above which a transform earns a warning.
pub const WARN_CONDITION: f64 = 1e8;

/// A change of state coordinates `x = T z` and the model in the new coordinates: what every
/// coordinate change of `lti` returns (`transform_state`, the companion, modal and Jordan
/// forms), so that callers read the model, `T`, `T⁻¹` and the conditioning one way.
#[derive(Debug, Clone)]
pub struct Transformed {
    /// The model in the new coordinates, `(T⁻¹AT, T⁻¹B, CT, D)`.
    pub system: StateSpace,
    /// `T` (old state `x = T z`).
    pub t: DMatrix<f64>,
    /// `T⁻¹` (`z = T⁻¹ x`).
    pub t_inv: DMatrix<f64>,
    /// The condition number of `T` that bounds the rounding the change adds (for a basis
    /// built from the model, taken up to the units of the states where the method says so).
    /// Above [`WARN_CONDITION`] the caller warns.
    pub condition: f64,
}

impl Transformed {
    /// The model `(a, b, c, D)` of `sys` in the coordinates `x = t z` (`t_inv` = `t⁻¹`),
    /// its time domain and signal names kept and the old state names dropped, with the
    /// condition of `t` up to the units of the states ([`rcond_up_to_state_units`]): the
    /// one way a coordinate change built from the model (balanced form, Kalman
    /// decomposition) becomes a [`Transformed`].
    pub fn from_parts(
        sys: &StateSpace,
        (a, b, c): (DMatrix<f64>, DMatrix<f64>, DMatrix<f64>),
        t: DMatrix<f64>,
        t_inv: DMatrix<f64>,
    ) -> NumResult<Transformed> {
        let rc = rcond_up_to_state_units(&t, true);
        let mut system = sys.with_matrices(a, b, c, sys.d.clone())?;
        system.names.states.clear();
        Ok(Transformed {
            system,
            t,
            t_inv,
            condition: if rc > 0.0 { 1.0 / rc } else { f64::INFINITY },
        })
    }

    /// Whether the change is ill-conditioned enough to say so (`condition` above
    /// [`WARN_CONDITION`]); the rounding it may add is about `condition·ε` relative.
    pub fn ill_conditioned(&self) -> bool {
        self.condition > WARN_CONDITION
    }
}

/// Applies `x = T z`. Refuses a `T` of the wrong size, with non-finite entries, or
/// numerically singular (reciprocal condition below n·ε, judged by the SVD — LU's
/// pivots miss exactly singular matrices). Returns the new model with `T`, `T⁻¹` and
/// cond₂(T) so the caller can warn above [`WARN_CONDITION`]. T⁻¹ is applied to the model
/// by LU solves, not by multiplying with the formed inverse. Cost O(n³).
pub fn transform_state(sys: &StateSpace, t: &DMatrix<f64>) -> NumResult<Transformed> {
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
    let t_inv = solve(&DMatrix::identity(n, n))?;
    let mut out = sys.with_matrices(a, b, c, sys.d.clone())?;
    out.names.states.clear();
    Ok(Transformed {
        system: out,
        t: t.clone(),
        t_inv,
        condition: if rc > 0.0 { 1.0 / rc } else { f64::INFINITY },
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
        let tr = transform_state(&sys, &t).unwrap();
        assert!(tr.condition < 1e3);
        let err = (&tr.t * &tr.t_inv - DMatrix::<f64>::identity(4, 4)).norm();
        assert!(err < 1e-12, "T·T⁻¹ − I = {err:e}");
        let new = tr.system;
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
