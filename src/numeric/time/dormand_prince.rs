//! The explicit Dormand–Prince 5(4) Runge–Kutta pair with PI step-size control, the
//! order-4 continuous extension and a stiffness detector; used by
//! [`super::ode::integrate_ode`].
//!
//! Reference: J. R. Dormand & P. J. Prince 1980, "A family of embedded Runge-Kutta
//! formulae", J. Comput. Appl. Math. 6, 19–26 (the coefficients); the step-size
//! controller, dense output and stiffness test follow the DOPRI5 code of E. Hairer,
//! S. P. Nørsett & G. Wanner, *Solving Ordinary Differential Equations I* (2nd ed. 1993),
//! §II.4–II.6 and §IV.2; the PI controller is K. Gustafsson 1991, "Control theoretic
//! techniques for stepsize selection in explicit Runge-Kutta methods", ACM TOMS 17.

// Index loops mirror the published formulas stage by stage and component by component.
#![allow(clippy::needless_range_loop)]

use super::ode::{
    check_state, check_step, initial_step, rms, Control, Dense, OdeStats, Recorder, Rhs,
};
use crate::numeric::error::NumResult;

/// Nodes c2..c7 (c1 = 0, c7 = 1).
const C: [f64; 7] = [0.0, 1.0 / 5.0, 3.0 / 10.0, 4.0 / 5.0, 8.0 / 9.0, 1.0, 1.0];

/// Coefficients a_ij (row i = stage 2..7); row 7 is the 5th-order weights b (FSAL).
const A: [[f64; 6]; 7] = [
    [0.0; 6],
    [1.0 / 5.0, 0.0, 0.0, 0.0, 0.0, 0.0],
    [3.0 / 40.0, 9.0 / 40.0, 0.0, 0.0, 0.0, 0.0],
    [44.0 / 45.0, -56.0 / 15.0, 32.0 / 9.0, 0.0, 0.0, 0.0],
    [
        19372.0 / 6561.0,
        -25360.0 / 2187.0,
        64448.0 / 6561.0,
        -212.0 / 729.0,
        0.0,
        0.0,
    ],
    [
        9017.0 / 3168.0,
        -355.0 / 33.0,
        46732.0 / 5247.0,
        49.0 / 176.0,
        -5103.0 / 18656.0,
        0.0,
    ],
    [
        35.0 / 384.0,
        0.0,
        500.0 / 1113.0,
        125.0 / 192.0,
        -2187.0 / 6784.0,
        11.0 / 84.0,
    ],
];

/// Error weights e = b − b̂ over the seven stages.
const E: [f64; 7] = [
    71.0 / 57600.0,
    0.0,
    -71.0 / 16695.0,
    71.0 / 1920.0,
    -17253.0 / 339200.0,
    22.0 / 525.0,
    -1.0 / 40.0,
];

/// Weights of the dense-output coefficient of Hairer, Nørsett & Wanner (DOPRI5, §II.6).
const D: [f64; 7] = [
    -12715105075.0 / 11282082432.0,
    0.0,
    87487479700.0 / 32700410799.0,
    -10690763975.0 / 1880347072.0,
    701980252875.0 / 199316789632.0,
    -1453857185.0 / 822651844.0,
    69997945.0 / 29380423.0,
];

/// Step-size controller constants of DOPRI5: safety factor, bounds on h_new/h and the PI
/// exponent β (Lund stabilisation).
const SAFE: f64 = 0.9;
const FAC_MIN: f64 = 0.2;
const FAC_MAX: f64 = 10.0;
const BETA: f64 = 0.04;
/// Stiffness test: h·|λ| above this counts as a stiff step; after this many stiff steps
/// (interrupted by fewer than `NONSTIFF_RESET` non-stiff ones) the problem is declared stiff.
const STIFF_BOUND: f64 = 3.25;
const STIFF_COUNT: usize = 15;
const NONSTIFF_RESET: usize = 6;

/// How the explicit integration ended.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) enum ExplicitEnd {
    /// Reached t_final.
    Finished,
    /// The stiffness detector fired; the next step size proposed is `h`.
    Stiff { h: f64 },
}

/// Stage storage of one step.
pub(super) struct Work {
    k: [Vec<f64>; 7],
    tmp: Vec<f64>,
    /// Stage 6 argument (for the stiffness test).
    y6: Vec<f64>,
    /// The 5th-order result.
    pub(super) y1: Vec<f64>,
    /// The local error estimate h·Σ e_i k_i.
    pub(super) err: Vec<f64>,
}

impl Work {
    pub(super) fn new(n: usize) -> Self {
        let z = vec![0.0; n];
        Work {
            k: std::array::from_fn(|_| z.clone()),
            tmp: z.clone(),
            y6: z.clone(),
            y1: z.clone(),
            err: z,
        }
    }
}

/// One attempted step from (t, y) with `w.k[0] = f(t, y)`: stages 2–7, the 5th-order
/// result `w.y1`, its derivative `w.k[6]` (first stage of the next step) and `w.err`.
pub(super) fn attempt(
    rhs: &mut Rhs<'_, '_>,
    t: f64,
    y: &[f64],
    h: f64,
    w: &mut Work,
) -> NumResult<()> {
    let n = y.len();
    for s in 1..7 {
        for i in 0..n {
            let mut acc = 0.0;
            for j in 0..s {
                acc += A[s][j] * w.k[j][i];
            }
            w.tmp[i] = y[i] + h * acc;
        }
        let ts = if s == 6 { t + h } else { t + C[s] * h };
        rhs.eval(ts, &w.tmp, &mut w.k[s])?;
        if s == 5 {
            w.y6.copy_from_slice(&w.tmp);
        }
    }
    w.y1.copy_from_slice(&w.tmp);
    for i in 0..n {
        let mut acc = 0.0;
        for j in 0..7 {
            acc += E[j] * w.k[j][i];
        }
        w.err[i] = h * acc;
    }
    Ok(())
}

/// The continuous extension of one step: y(t_old + θh) ≈
/// r0 + θ(r1 + (1−θ)(r2 + θ(r3 + (1−θ) r4))), order 4.
pub(super) struct DpDense {
    t_old: f64,
    h: f64,
    r: [Vec<f64>; 5],
}

impl DpDense {
    fn new(n: usize) -> Self {
        DpDense {
            t_old: 0.0,
            h: 1.0,
            r: std::array::from_fn(|_| vec![0.0; n]),
        }
    }

    /// Fills the coefficients from an accepted step (before `w.k[0]` is overwritten).
    pub(super) fn fill(&mut self, t_old: f64, h: f64, y: &[f64], w: &Work) {
        self.t_old = t_old;
        self.h = h;
        for i in 0..y.len() {
            let ydiff = w.y1[i] - y[i];
            let bspl = h * w.k[0][i] - ydiff;
            let mut d = 0.0;
            for j in 0..7 {
                d += D[j] * w.k[j][i];
            }
            self.r[0][i] = y[i];
            self.r[1][i] = ydiff;
            self.r[2][i] = bspl;
            self.r[3][i] = ydiff - h * w.k[6][i] - bspl;
            self.r[4][i] = h * d;
        }
    }
}

impl Dense for DpDense {
    fn eval(&self, t: f64, out: &mut [f64]) {
        let th = (t - self.t_old) / self.h;
        let th1 = 1.0 - th;
        let r = &self.r;
        for (i, o) in out.iter_mut().enumerate() {
            *o = r[0][i] + th * (r[1][i] + th1 * (r[2][i] + th * (r[3][i] + th1 * r[4][i])));
        }
    }
}

/// Integrates from (t, y) to `ctl.t_final` (updating both), recording accepted steps.
/// With `detect_stiffness` it stops early when the problem has been found stiff.
#[allow(clippy::too_many_arguments)]
pub(super) fn integrate(
    rhs: &mut Rhs<'_, '_>,
    ctl: &Control,
    detect_stiffness: bool,
    t: &mut f64,
    y: &mut [f64],
    h0: Option<f64>,
    rec: &mut Recorder<'_>,
    stats: &mut OdeStats,
) -> NumResult<ExplicitEnd> {
    let n = y.len();
    let mut w = Work::new(n);
    let mut dense = DpDense::new(n);
    rhs.eval(*t, y, &mut w.k[0])?;
    let mut h = match h0 {
        Some(h) => h.min(ctl.max_step),
        None => initial_step(rhs, ctl, *t, y, &w.k[0].clone(), 5)?,
    };
    let expo1 = 0.2 - BETA * 0.75;
    let mut facold: f64 = 1e-4;
    let mut reject = false;
    let mut last = false;
    let (mut stiff_steps, mut nonstiff_steps) = (0usize, 0usize);
    let mut sk = vec![0.0; n];
    loop {
        let attempted = stats.steps + stats.rejected;
        if (*t + 1.01 * h - ctl.t_final) >= 0.0 {
            h = ctl.t_final - *t;
            last = true;
        }
        check_step(*t, h, attempted, ctl)?;
        attempt(rhs, *t, y, h, &mut w)?;
        for i in 0..n {
            sk[i] = ctl.atol + ctl.rtol * y[i].abs().max(w.y1[i].abs());
        }
        let mut err = rms(&w.err, &sk);
        if !err.is_finite() {
            err = 1e10;
        }
        let fac11 = err.powf(expo1);
        // Lund stabilisation: PI control with the previous accepted error.
        let fac = (fac11 / facold.powf(BETA) / SAFE).clamp(1.0 / FAC_MAX, 1.0 / FAC_MIN);
        let mut hnew = h / fac;
        if err <= 1.0 {
            facold = err.max(1e-4);
            stats.steps += 1;
            if detect_stiffness {
                let mut num = 0.0;
                let mut den = 0.0;
                for i in 0..n {
                    num += (w.k[6][i] - w.k[5][i]).powi(2);
                    den += (w.y1[i] - w.y6[i]).powi(2);
                }
                if den > 0.0 && h * (num / den).sqrt() > STIFF_BOUND {
                    nonstiff_steps = 0;
                    stiff_steps += 1;
                } else {
                    nonstiff_steps += 1;
                    if nonstiff_steps == NONSTIFF_RESET {
                        stiff_steps = 0;
                    }
                }
            }
            let t_old = *t;
            *t = if last { ctl.t_final } else { *t + h };
            check_state(*t, &w.y1)?;
            if rec.wants_dense() {
                dense.fill(t_old, h, y, &w);
            }
            rec.accept(*t, &w.y1, &dense);
            y.copy_from_slice(&w.y1);
            let (first, rest) = w.k.split_at_mut(1);
            first[0].copy_from_slice(&rest[5]);
            if last {
                return Ok(ExplicitEnd::Finished);
            }
            hnew = hnew.min(ctl.max_step);
            if reject {
                hnew = hnew.min(h);
            }
            reject = false;
            if stiff_steps >= STIFF_COUNT {
                return Ok(ExplicitEnd::Stiff { h: hnew });
            }
        } else {
            hnew = h / (1.0 / FAC_MIN).min(fac11 / SAFE);
            reject = true;
            last = false;
            stats.rejected += 1;
        }
        h = hnew;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::numeric::time::ode::OdeRhs;

    #[test]
    fn order_conditions() {
        // Butcher's order conditions (Hairer, Nørsett & Wanner, Solving ODEs I, §II.2):
        // row sums equal c; b satisfies the conditions up to order 5 and b̂ = b − e those up
        // to order 4 (checked here: all 8 trees of order ≤ 4 and 4 of the 9 of order 5).
        let mut b = [0.0; 7];
        b[..6].copy_from_slice(&A[6]);
        let bh: Vec<f64> = b.iter().zip(E).map(|(x, e)| x - e).collect();
        for (s, row) in A.iter().enumerate() {
            crate::assert_close!(row.iter().sum::<f64>(), C[s], 1e-15, 0.0);
        }
        let c = C;
        let ac = |v: &[f64]| -> Vec<f64> {
            (0..7)
                .map(|i| (0..i.min(6)).map(|j| A[i][j] * v[j]).sum())
                .collect()
        };
        let dot = |x: &[f64], y: &[f64]| x.iter().zip(y).map(|(a, b)| a * b).sum::<f64>();
        let pw = |k: i32| c.iter().map(|x| x.powi(k)).collect::<Vec<f64>>();
        for (w, order) in [(b.to_vec(), 5), (bh.clone(), 4)] {
            for k in 0..order {
                crate::assert_close!(dot(&w, &pw(k)), 1.0 / f64::from(k + 1), 1e-14, 0.0);
            }
            crate::assert_close!(dot(&w, &ac(&pw(1))), 1.0 / 6.0, 1e-14, 0.0);
            crate::assert_close!(dot(&w, &ac(&pw(2))), 1.0 / 12.0, 1e-14, 0.0);
            crate::assert_close!(dot(&w, &ac(&ac(&pw(1)))), 1.0 / 24.0, 1e-14, 0.0);
            let cac: Vec<f64> = c.iter().zip(ac(&pw(1))).map(|(x, y)| x * y).collect();
            crate::assert_close!(dot(&w, &cac), 1.0 / 8.0, 1e-14, 0.0);
            if order == 5 {
                crate::assert_close!(dot(&w, &ac(&pw(3))), 1.0 / 20.0, 1e-14, 0.0);
                crate::assert_close!(dot(&w, &ac(&ac(&ac(&pw(1))))), 1.0 / 120.0, 1e-14, 0.0);
                crate::assert_close!(dot(&w, &ac(&ac(&pw(2)))), 1.0 / 60.0, 1e-14, 0.0);
            }
        }
        // The embedded solution is not of order 5.
        assert!((dot(&bh, &pw(4)) - 0.2).abs() > 1e-6);
    }

    /// x' = −x + sin t; closed form through (0, 1): x = (3/2)e^(−t) + (sin t − cos t)/2.
    fn forced(t: f64, x: &[f64], d: &mut [f64]) -> Result<(), String> {
        d[0] = -x[0] + t.sin();
        Ok(())
    }

    fn exact(t: f64) -> f64 {
        1.5 * (-t).exp() + 0.5 * (t.sin() - t.cos())
    }

    /// Global error at t = 2 of m fixed steps of the 5th-order result.
    fn fixed(m: usize) -> f64 {
        let mut f = forced;
        let g: &mut OdeRhs<'_> = &mut f;
        let mut rhs = Rhs { f: g, evals: 0 };
        let mut w = Work::new(1);
        let h = 2.0 / m as f64;
        let mut y = vec![1.0];
        for k in 0..m {
            let t = k as f64 * h;
            rhs.eval(t, &y, &mut w.k[0]).unwrap();
            attempt(&mut rhs, t, &y, h, &mut w).unwrap();
            y.copy_from_slice(&w.y1);
        }
        y[0] - exact(2.0)
    }

    #[test]
    fn convergence_order_five() {
        // Halving h divides the global error by about 2^5 = 32 for a 5th-order method
        // (Hairer, Nørsett & Wanner, Solving ODEs I, §II.3).
        let (e1, e2, e3) = (fixed(20), fixed(40), fixed(80));
        let p1 = (e1 / e2).abs().log2();
        let p2 = (e2 / e3).abs().log2();
        // Observed 5.34 and 5.19: the next error term still shows at these step sizes.
        assert!(
            (p1 - 5.0).abs() < 0.45 && (p2 - 5.0).abs() < 0.3,
            "{p1} {p2}"
        );
    }

    #[test]
    fn dense_output_order_four() {
        // One step from the exact point (0.5, x(0.5)): the continuous extension at θ = 0.37
        // has local error O(h^5) (order 4; Hairer, Nørsett & Wanner, Solving ODEs I, §II.6),
        // so halving h divides it by about 32. At θ = 0 and θ = 1 it reproduces the step's
        // ends.
        let mut f = forced;
        let g: &mut OdeRhs<'_> = &mut f;
        let mut rhs = Rhs { f: g, evals: 0 };
        let mut w = Work::new(1);
        let mut dense = DpDense::new(1);
        let t = 0.5;
        let y = [exact(t)];
        let mut errs = Vec::new();
        for h in [0.2, 0.1, 0.05] {
            rhs.eval(t, &y, &mut w.k[0]).unwrap();
            attempt(&mut rhs, t, &y, h, &mut w).unwrap();
            dense.fill(t, h, &y, &w);
            let mut v = [0.0];
            dense.eval(t + 0.37 * h, &mut v);
            errs.push((v[0] - exact(t + 0.37 * h)).abs());
            dense.eval(t, &mut v);
            crate::assert_close!(v[0], y[0]);
            dense.eval(t + h, &mut v);
            crate::assert_close!(v[0], w.y1[0]);
        }
        let p1 = (errs[0] / errs[1]).log2();
        let p2 = (errs[1] / errs[2]).log2();
        assert!(p1 > 4.6 && p2 > 4.7, "{p1} {p2}");
    }

    #[test]
    fn error_estimate_is_fifth_order_local() {
        // The embedded estimate is the local error of the 4th-order solution, O(h^5): halving
        // h divides it by about 32 (Hairer, Nørsett & Wanner, Solving ODEs I, §II.4).
        let mut f = |t: f64, x: &[f64], d: &mut [f64]| {
            d[0] = x[0] * t.cos();
            Ok(())
        };
        let g: &mut OdeRhs<'_> = &mut f;
        let mut rhs = Rhs { f: g, evals: 0 };
        let mut w = Work::new(1);
        let mut est = Vec::new();
        for h in [0.1, 0.05, 0.025] {
            rhs.eval(0.3, &[1.0], &mut w.k[0]).unwrap();
            attempt(&mut rhs, 0.3, &[1.0], h, &mut w).unwrap();
            est.push(w.err[0].abs());
        }
        let p = (est[1] / est[2]).log2();
        assert!((p - 5.0).abs() < 0.3, "{p}");
    }
}
