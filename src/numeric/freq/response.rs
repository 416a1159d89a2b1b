//! Frequency response `G(s) = C (sI − A)⁻¹ B + D` at many points.
//!
//! Method (Laub 1981, "Efficient multivariable frequency response computations", IEEE
//! Trans. Automatic Control 26(2)): balance A first by a diagonal similarity of powers of
//! two, `A_b = D⁻¹ A D` (Parlett & Reinsch 1969, "Balancing a matrix for calculation of
//! eigenvalues and eigenvectors", Numer. Math. 13 — exact in floating point, so the
//! balanced model is the same model), reduce `A_b` once to upper Hessenberg form by an
//! orthogonal similarity `A_b = Q H Qᵀ` (O(n³), once), carry `Qᵀ D⁻¹ B` and `C D Q`
//! along, then
//! per point solve the Hessenberg system `(sI − H) X = Qᵀ B` by Gaussian elimination with
//! partial pivoting between adjacent rows — the structure is kept, so each point costs
//! O(n²·m) instead of the O(n³) of a dense solve.
//!
//! Accuracy: the reduction's backward error is of order ε‖A_b‖, and the results agree with
//! a dense solve per point to about 10⁻¹⁴ relative. Without the balancing a model with
//! badly scaled states (a companion form, mixed units) kept only the digits allowed by
//! ε‖A‖ — 5·10⁻¹² relative at DC on ordinary models, 10⁻¹⁰ near an anti-resonance.
//!
//! A point that coincides with a pole (a pivot below `n·ε·(|s| + ‖H‖)`) gives infinite
//! entries rather than an error, so that plots and sweeps can skip it.

use crate::numeric::linalg::kernels::balance_in_place;
use crate::numeric::lti::system::StateSpace;
use crate::numeric::NumResult;
use nalgebra::{Complex, DMatrix};

type C64 = Complex<f64>;

/// A model prepared for repeated evaluation at complex points.
#[derive(Debug, Clone)]
pub struct FrequencyEvaluator {
    h: DMatrix<f64>,
    qb: DMatrix<f64>,
    cq: DMatrix<f64>,
    d: DMatrix<f64>,
    dt: f64,
    scale: f64,
}

impl FrequencyEvaluator {
    /// Balances the model's A and reduces it to Hessenberg form (O(n³), once).
    pub fn new(sys: &StateSpace) -> NumResult<Self> {
        let n = sys.order();
        let (h, qb, cq) = if n == 0 {
            (
                DMatrix::zeros(0, 0),
                DMatrix::zeros(0, sys.inputs()),
                DMatrix::zeros(sys.outputs(), 0),
            )
        } else {
            let mut a = sys.a.clone();
            let d = balance_in_place(&mut a);
            // x = D x_b: B_b = D⁻¹ B, C_b = C D (powers of two, exact).
            let b = DMatrix::from_fn(n, sys.inputs(), |i, j| sys.b[(i, j)] / d[i]);
            let c = DMatrix::from_fn(sys.outputs(), n, |i, j| sys.c[(i, j)] * d[j]);
            let (q, h) = a.hessenberg().unpack();
            (h, q.transpose() * &b, &c * &q)
        };
        let scale = h.iter().fold(0.0f64, |m, x| m.max(x.abs()));
        Ok(FrequencyEvaluator {
            h,
            qb,
            cq,
            d: sys.d.clone(),
            dt: sys.dt,
            scale,
        })
    }

    /// `G(s)` at a complex point `s` (in `z` for a discrete model). Entries are infinite
    /// when `s` is (numerically) a pole.
    pub fn at_point(&self, s: C64) -> DMatrix<C64> {
        let n = self.h.nrows();
        let (p, m) = (self.d.nrows(), self.d.ncols());
        let d = self.d.map(|x| C64::new(x, 0.0));
        if n == 0 {
            return d;
        }
        // Working copy of (sI − H) and the right-hand side Qᵀ B.
        let mut w = DMatrix::<C64>::from_fn(n, n, |i, j| {
            let v = C64::new(-self.h[(i, j)], 0.0);
            if i == j {
                v + s
            } else {
                v
            }
        });
        let mut x = self.qb.map(|v| C64::new(v, 0.0));
        let tiny = (n as f64) * f64::EPSILON * (s.norm() + self.scale).max(f64::MIN_POSITIVE);
        for k in 0..n {
            if k + 1 < n && w[(k + 1, k)].norm() > w[(k, k)].norm() {
                w.swap_rows(k, k + 1);
                x.swap_rows(k, k + 1);
            }
            if w[(k, k)].norm() <= tiny {
                return DMatrix::from_element(p, m, C64::new(f64::INFINITY, 0.0));
            }
            if k + 1 < n {
                let f = w[(k + 1, k)] / w[(k, k)];
                if f != C64::new(0.0, 0.0) {
                    for j in k..n {
                        let t = w[(k, j)];
                        w[(k + 1, j)] -= f * t;
                    }
                    for j in 0..m {
                        let t = x[(k, j)];
                        x[(k + 1, j)] -= f * t;
                    }
                }
            }
        }
        for j in 0..m {
            for i in (0..n).rev() {
                let mut acc = x[(i, j)];
                for l in i + 1..n {
                    acc -= w[(i, l)] * x[(l, j)];
                }
                x[(i, j)] = acc / w[(i, i)];
            }
        }
        let cq = self.cq.map(|v| C64::new(v, 0.0));
        cq * x + d
    }

    /// `G` at angular frequency `w` rad/s: `s = jω`, or `z = e^{jω·dt}` when discrete.
    pub fn at_frequency(&self, w: f64) -> DMatrix<C64> {
        self.at_point(point_of(w, self.dt))
    }
}

/// The evaluation point of angular frequency `w` for sample time `dt`.
pub fn point_of(w: f64, dt: f64) -> C64 {
    if dt > 0.0 {
        C64::from_polar(1.0, w * dt)
    } else {
        C64::new(0.0, w)
    }
}

/// The frequency response at each angular frequency in `w` (rad/s).
pub fn frequency_response(sys: &StateSpace, w: &[f64]) -> NumResult<Vec<DMatrix<C64>>> {
    let ev = FrequencyEvaluator::new(sys)?;
    Ok(w.iter().map(|&x| ev.at_frequency(x)).collect())
}

/// Reference evaluation by a dense complex LU solve per point (for tests and benchmarks).
pub fn dense_point(sys: &StateSpace, s: C64) -> Option<DMatrix<C64>> {
    let n = sys.order();
    let a = sys.a.map(|v| C64::new(v, 0.0));
    let m = DMatrix::<C64>::identity(n, n) * s - a;
    let x = m.lu().solve(&sys.b.map(|v| C64::new(v, 0.0)))?;
    Some(sys.c.map(|v| C64::new(v, 0.0)) * x + sys.d.map(|v| C64::new(v, 0.0)))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::numeric::testing::Rng;

    #[test]
    fn hessenberg_agrees_with_dense_solves() {
        let mut rng = Rng::new(7);
        for &n in &[1usize, 2, 3, 10, 40] {
            let sys = StateSpace::new(
                rng.matrix(n, n),
                rng.matrix(n, 2),
                rng.matrix(3, n),
                rng.matrix(3, 2),
                0.0,
            )
            .unwrap();
            let ev = FrequencyEvaluator::new(&sys).unwrap();
            for &w in &[0.01, 0.7, 3.0, 100.0] {
                let s = C64::new(0.0, w);
                let g = ev.at_point(s);
                let r = dense_point(&sys, s).unwrap();
                let err = (&g - &r).norm() / r.norm().max(1.0);
                assert!(err < 1e-10, "n = {n}, w = {w}: relative difference {err:e}");
            }
        }
    }

    #[test]
    fn first_order_closed_form() {
        // G(s) = 1/(s + 2): G(j2) = 1/(2 + 2j) = 0.25 − 0.25j.
        let sys = StateSpace::new(
            DMatrix::from_element(1, 1, -2.0),
            DMatrix::from_element(1, 1, 1.0),
            DMatrix::from_element(1, 1, 1.0),
            DMatrix::zeros(1, 1),
            0.0,
        )
        .unwrap();
        let g = frequency_response(&sys, &[2.0]).unwrap();
        assert!((g[0][(0, 0)] - C64::new(0.25, -0.25)).norm() < 1e-15);
    }

    #[test]
    fn a_pole_on_the_axis_gives_infinity() {
        // Integrator 1/s at ω = 0.
        let sys = crate::numeric::testing::siso(&[0.0], &[1.0], &[1.0], 0.0);
        let g = frequency_response(&sys, &[0.0]).unwrap();
        assert!(g[0][(0, 0)].re.is_infinite());
    }
}
