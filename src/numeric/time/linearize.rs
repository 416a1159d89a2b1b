//! Jacobians by central differences and the linearisation of a nonlinear model
//! dx = f(x, u), y = g(x, u) about an operating point.

use crate::numeric::check;
use crate::numeric::error::{NumError, NumResult};
use nalgebra::DMatrix;

/// A function of the state and input returning a vector (its length is the number of
/// outputs); an `Err` message is reported with the name of the function.
pub type ModelFn<'a> = dyn FnMut(&[f64], &[f64]) -> Result<Vec<f64>, String> + 'a;

/// A function f: ℝⁿ → ℝᵐ writing its m values into the slice it is given.
pub type VectorFn<'a> = dyn FnMut(&[f64], &mut [f64]) -> Result<(), String> + 'a;

/// The matrices (A, B, C, D) of a linearised model.
pub type Linearization = (DMatrix<f64>, DMatrix<f64>, DMatrix<f64>, DMatrix<f64>);

/// The step of the central difference in variable j: h_j = ε^(1/3)·max(|x_j|, 1).
fn step(xj: f64) -> f64 {
    f64::EPSILON.cbrt() * xj.abs().max(1.0)
}

/// Why a central-difference Jacobian failed: the variable perturbed, and the function's
/// message or the offending component and value.
enum DiffError {
    Failed(usize, String),
    NonFinite(usize, usize, f64),
}

/// Central differences of f: ℝⁿ → ℝᵐ at x (see [`jacobian`]).
fn central(f: &mut VectorFn<'_>, x: &[f64], m: usize) -> Result<DMatrix<f64>, DiffError> {
    let n = x.len();
    let mut jac = DMatrix::zeros(m, n);
    let mut xp = x.to_vec();
    let mut fp = vec![0.0; m];
    let mut fm = vec![0.0; m];
    for j in 0..n {
        let h = step(x[j]);
        let (hi, lo) = (x[j] + h, x[j] - h);
        for (v, out) in [(hi, &mut fp), (lo, &mut fm)] {
            xp[j] = v;
            out.iter_mut().for_each(|o| *o = f64::NAN);
            f(&xp, out).map_err(|e| DiffError::Failed(j, e))?;
            if let Some(i) = out.iter().position(|o| !o.is_finite()) {
                return Err(DiffError::NonFinite(j, i, out[i]));
            }
        }
        xp[j] = x[j];
        let d = hi - lo;
        for i in 0..m {
            jac[(i, j)] = (fp[i] - fm[i]) / d;
        }
    }
    Ok(jac)
}

/// The Jacobian J = ∂f/∂x (m×n, n = `x.len()`) of f: ℝⁿ → ℝᵐ at `x`, by central differences.
///
/// Column j is (f(x + h_j e_j) − f(x − h_j e_j)) / (2h_j) with h_j = ε^(1/3)·max(|x_j|, 1),
/// the step that balances the O(h²) truncation error against the O(ε/h) rounding error
/// (Nocedal & Wright 2006, *Numerical Optimization*, 2nd ed., §8.1); the perturbed points
/// are rounded so that the denominator is the exact distance between them. The error is
/// about ε^(2/3) ≈ 4e-11 relative to the scale of f and its third derivative. Cost: 2n
/// evaluations of f; `f` writes its m values into the slice it is given (pre-filled with
/// NaN, so an unwritten entry is reported).
///
/// Errors: a non-finite `x`, an error returned by `f` or a non-finite value from it, each
/// naming the variable perturbed.
pub fn jacobian(f: &mut VectorFn<'_>, x: &[f64], m: usize) -> NumResult<DMatrix<f64>> {
    const WHAT: &str = "jacobian";
    check::finite_values("x", x)?;
    central(f, x, m).map_err(|e| match e {
        DiffError::Failed(j, e) => NumError::invalid(
            WHAT,
            format!("the function failed when perturbing x[{j}]: {e}"),
        ),
        DiffError::NonFinite(j, i, v) => NumError::invalid(
            WHAT,
            format!(
                "the function returned {v} in component {i} when perturbing x[{j}], expected \
                 a finite number"
            ),
        ),
    })
}

/// Evaluates a model function and checks the length and finiteness of its value.
fn eval_checked(
    name: &str,
    what: &str,
    h: &mut ModelFn<'_>,
    x: &[f64],
    u: &[f64],
    expected: Option<usize>,
    out: &mut [f64],
) -> Result<usize, String> {
    let v = h(x, u).map_err(|e| format!("{name} failed: {e}"))?;
    if let Some(k) = expected {
        if v.len() != k {
            let values = if k == 1 { "value" } else { "values" };
            return Err(format!(
                "{name}: expected {k} {values} ({what}), found {}",
                v.len()
            ));
        }
    }
    if let Some(i) = v.iter().position(|o| !o.is_finite()) {
        return Err(format!(
            "{name} returned {} in component {i}, expected a finite number",
            v[i]
        ));
    }
    if out.len() == v.len() {
        out.copy_from_slice(&v);
    }
    Ok(v.len())
}

/// Linearises dx = f(x, u), y = g(x, u) at the operating point (x0, u0):
/// A = ∂f/∂x (n×n), B = ∂f/∂u (n×m), C = ∂g/∂x (p×n), D = ∂g/∂u (p×m), so that
/// δx' ≈ A δx + B δu and δy ≈ C δx + D δu near (x0, u0). (x0, u0) need not be an
/// equilibrium; f(x0, u0) ≠ 0 is the caller's concern.
///
/// `f` must return n = `x0.len()` values; the number of outputs p is taken from one
/// evaluation g(x0, u0). Each Jacobian is formed by central differences over the joint
/// variable (x, u) with the steps of [`jacobian`] (ε^(1/3)·max(|z_j|, 1); error about
/// ε^(2/3) relative). Cost: 2(n + m) + 1 evaluations of each of f and g.
///
/// Errors: non-finite x0 or u0, an error from f or g, a wrong number of values (f must
/// return n; g the same p every time) or a non-finite value.
pub fn linearize_at(
    f: &mut ModelFn<'_>,
    g: &mut ModelFn<'_>,
    x0: &[f64],
    u0: &[f64],
) -> NumResult<Linearization> {
    const WHAT: &str = "linearize_at";
    for (name, v) in [("x0", x0), ("u0", u0)] {
        if let Some(i) = v.iter().position(|e| !e.is_finite()) {
            return Err(NumError::NotFinite {
                what: name.into(),
                row: i,
                col: 0,
                value: v[i],
            });
        }
    }
    let (n, m) = (x0.len(), u0.len());
    let fail = |e: String| NumError::invalid(WHAT, e);
    eval_checked("f", "one per state", f, x0, u0, Some(n), &mut [])
        .map_err(|e| fail(format!("{e} at the operating point")))?;
    let p = eval_checked("g", "", g, x0, u0, None, &mut [])
        .map_err(|e| fail(format!("{e} at the operating point")))?;
    let z0: Vec<f64> = x0.iter().chain(u0).copied().collect();
    let var = |j: usize| {
        if j < n {
            format!("x[{j}]")
        } else {
            format!("u[{}]", j - n)
        }
    };
    let joint = |h: &mut ModelFn<'_>, name: &str, what: &str, k: usize| {
        let mut wrapped = |z: &[f64], out: &mut [f64]| {
            let (x, u) = z.split_at(n);
            eval_checked(name, what, h, x, u, Some(k), out).map(|_| ())
        };
        central(&mut wrapped, &z0, k).map_err(|e| match e {
            DiffError::Failed(j, e) => fail(format!("{e} when perturbing {}", var(j))),
            DiffError::NonFinite(j, i, v) => fail(format!(
                "{name} returned {v} in component {i} when perturbing {}",
                var(j)
            )),
        })
    };
    let jf = joint(f, "f", "one per state", n)?;
    let jg = joint(g, "g", "as at the operating point", p)?;
    let a = jf.columns(0, n).into_owned();
    let b = jf.columns(n, m).into_owned();
    let c = jg.columns(0, n).into_owned();
    let d = jg.columns(n, m).into_owned();
    Ok((a, b, c, d))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn jacobian_of_a_rectangular_map() {
        // f(x) = (x0²·x1, sin x0 + x1·x2, e^x2, x0·x1·x2): analytic Jacobian (calculus).
        let x = [0.7, -1.3, 2.1];
        let mut f = |x: &[f64], o: &mut [f64]| {
            o[0] = x[0] * x[0] * x[1];
            o[1] = x[0].sin() + x[1] * x[2];
            o[2] = x[2].exp();
            o[3] = x[0] * x[1] * x[2];
            Ok(())
        };
        let j = jacobian(&mut f, &x, 4).unwrap();
        let exact = DMatrix::from_row_slice(
            4,
            3,
            &[
                2.0 * x[0] * x[1],
                x[0] * x[0],
                0.0,
                x[0].cos(),
                x[2],
                x[1],
                0.0,
                0.0,
                x[2].exp(),
                x[1] * x[2],
                x[0] * x[2],
                x[0] * x[1],
            ],
        );
        crate::assert_close!(j, exact, 1e-9, 1e-8);
    }

    #[test]
    fn jacobian_large_arguments_and_edge_sizes() {
        // Linear map: central differences are exact up to rounding (h scales with |x|).
        let x = [1e6, -3e-7];
        let mut f = |x: &[f64], o: &mut [f64]| {
            o[0] = 2.0 * x[0];
            o[1] = -5.0 * x[1];
            Ok(())
        };
        let j = jacobian(&mut f, &x, 2).unwrap();
        crate::assert_close!(
            j,
            DMatrix::from_row_slice(2, 2, &[2.0, 0.0, 0.0, -5.0]),
            1e-9,
            1e-9
        );
        // n = 0 and m = 0: empty matrices, no evaluation.
        assert_eq!(jacobian(&mut f, &[], 2).unwrap().shape(), (2, 0));
        let mut g = |_x: &[f64], _o: &mut [f64]| Ok(());
        assert_eq!(jacobian(&mut g, &[1.0], 0).unwrap().shape(), (0, 1));
    }

    #[test]
    fn jacobian_errors() {
        let mut f = |x: &[f64], o: &mut [f64]| {
            if x[0] > 1.0 {
                return Err("out of range".into());
            }
            o[0] = x[0].ln();
            Ok(())
        };
        let e = jacobian(&mut f, &[1.0], 1).unwrap_err().to_string();
        assert_eq!(
            e,
            "jacobian: the function failed when perturbing x[0]: out of range"
        );
        let e = jacobian(&mut f, &[-1e-9], 1).unwrap_err().to_string();
        assert!(
            e.contains("returned NaN in component 0 when perturbing x[0]"),
            "{e}"
        );
        assert!(matches!(
            jacobian(&mut f, &[f64::NAN], 1),
            Err(NumError::NotFinite { .. })
        ));
    }

    #[test]
    fn pendulum_linearisation() {
        // A damped pendulum of our own: θ'' = −(g/l) sin θ − c θ' + τ/(m l²), output θ and
        // the tip height −l cos θ; g/l = 19.62, c = 0.4, m l² = 0.125. Analytic (calculus):
        // A = [[0, 1], [−(g/l) cos θ, −c]], B = [[0], [8]], C = [[1, 0], [l sin θ, 0]], D = 0.
        let (gl, c, ml2, l) = (19.62, 0.4, 0.125, 0.5);
        let mut f =
            move |x: &[f64], u: &[f64]| Ok(vec![x[1], -gl * x[0].sin() - c * x[1] + u[0] / ml2]);
        let mut g = move |x: &[f64], _u: &[f64]| Ok(vec![x[0], -l * x[0].cos()]);
        for th in [0.0, 0.6, std::f64::consts::PI] {
            let (a, b, cm, d) = linearize_at(&mut f, &mut g, &[th, 0.3], &[0.2]).unwrap();
            let ea = DMatrix::from_row_slice(2, 2, &[0.0, 1.0, -gl * th.cos(), -c]);
            crate::assert_close!(a, ea, 1e-8, 1e-8);
            crate::assert_close!(b, DMatrix::from_row_slice(2, 1, &[0.0, 8.0]), 1e-8, 1e-8);
            let ec = DMatrix::from_row_slice(2, 2, &[1.0, 0.0, l * th.sin(), 0.0]);
            crate::assert_close!(cm, ec, 1e-8, 1e-8);
            crate::assert_close!(d, DMatrix::zeros(2, 1), 1e-8, 0.0);
        }
    }

    #[test]
    fn two_input_linearisation() {
        // Our own example: f = (x0·x1 + u0², e^x0 − u0·u1 + sin x1, x2·u1 − x0³),
        // g = (x0 + 2u1, x1·x2·u0); Jacobians by calculus.
        let mut f = |x: &[f64], u: &[f64]| {
            Ok(vec![
                x[0] * x[1] + u[0] * u[0],
                x[0].exp() - u[0] * u[1] + x[1].sin(),
                x[2] * u[1] - x[0].powi(3),
            ])
        };
        let mut g = |x: &[f64], u: &[f64]| Ok(vec![x[0] + 2.0 * u[1], x[1] * x[2] * u[0]]);
        let (x, u) = ([0.5, -1.2, 2.0], [1.5, -0.7]);
        let (a, b, c, d) = linearize_at(&mut f, &mut g, &x, &u).unwrap();
        #[rustfmt::skip]
        let ea = DMatrix::from_row_slice(3, 3, &[
            x[1], x[0], 0.0,
            x[0].exp(), x[1].cos(), 0.0,
            -3.0 * x[0] * x[0], 0.0, u[1],
        ]);
        #[rustfmt::skip]
        let eb = DMatrix::from_row_slice(3, 2, &[
            2.0 * u[0], 0.0,
            -u[1], -u[0],
            0.0, x[2],
        ]);
        let ec = DMatrix::from_row_slice(2, 3, &[1.0, 0.0, 0.0, 0.0, x[2] * u[0], x[1] * u[0]]);
        let ed = DMatrix::from_row_slice(2, 2, &[0.0, 2.0, x[1] * x[2], 0.0]);
        crate::assert_close!(a, ea, 1e-9, 1e-8);
        crate::assert_close!(b, eb, 1e-9, 1e-8);
        crate::assert_close!(c, ec, 1e-9, 1e-8);
        crate::assert_close!(d, ed, 1e-9, 1e-8);
    }

    #[test]
    fn linearize_errors() {
        let mut f = |x: &[f64], _u: &[f64]| Ok(vec![x[0]]);
        let mut f3 = |_x: &[f64], _u: &[f64]| Ok(vec![1.0, 2.0, 3.0]);
        let mut g = |x: &[f64], _u: &[f64]| Ok(vec![x[0]]);
        let mut g_bad = |x: &[f64], _u: &[f64]| {
            if x[0] != 1.0 {
                Ok(vec![x[0], 0.0])
            } else {
                Ok(vec![x[0]])
            }
        };
        let mut g_err = |x: &[f64], _u: &[f64]| {
            if x[0] > 1.0 {
                Err("too big".to_string())
            } else {
                Ok(vec![0.0])
            }
        };
        let e = linearize_at(&mut f3, &mut g, &[1.0, 2.0], &[0.0])
            .unwrap_err()
            .to_string();
        assert_eq!(
            e,
            "linearize_at: f: expected 2 values (one per state), found 3 at the operating point"
        );
        let e = linearize_at(&mut f, &mut g_bad, &[1.0], &[0.0])
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("g: expected 1 value (as at the operating point), found 2"),
            "{e}"
        );
        assert!(e.ends_with("when perturbing x[0]"), "{e}");
        let e = linearize_at(&mut f, &mut g_err, &[1.0], &[])
            .unwrap_err()
            .to_string();
        assert!(e.contains("g failed: too big"), "{e}");
        assert!(matches!(
            linearize_at(&mut f, &mut g, &[1.0], &[f64::INFINITY]),
            Err(NumError::NotFinite { .. })
        ));
        // No inputs: B and D have no columns.
        let (a, b, c, d) = linearize_at(&mut f, &mut g, &[2.0], &[]).unwrap();
        assert_eq!(
            (a.shape(), b.shape(), c.shape(), d.shape()),
            ((1, 1), (1, 0), (1, 1), (1, 0))
        );
    }
}
