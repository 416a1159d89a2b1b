//! Linear simulation by the exact discretised state transition, and the standard responses
//! (step, impulse, free) with an automatic horizon.
//!
//! A continuous model is never handed to an ODE solver: over one sample interval of length
//! h the state moves exactly by x⁺ = Φx + Γ₁u for an input held constant, or
//! x⁺ = Φx + (Γ₁ − Γ₂)u₀ + Γ₂u₁ for an input varying linearly from u₀ to u₁, with Φ, Γ₁, Γ₂
//! from one block exponential computed once (Van Loan 1978, see
//! [`super::discretize::hold_terms`]). The samples are then exact up to rounding, however
//! stiff the model. The loop costs n² + n·m (zero-order hold) or n² + 2n·m (linear hold)
//! multiply-adds per sample for the state and p·(n + m) for the output, with no allocation.

use super::discretize::hold_terms;
use crate::numeric::check;
use crate::numeric::error::{NumError, NumResult};
use crate::numeric::lti::properties::poles;
use crate::numeric::lti::system::StateSpace;
use nalgebra::DMatrix;

/// How a continuous model's input varies between samples.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Hold {
    /// u varies linearly from u[k] to u[k+1] (first-order, triangle hold): exact for
    /// piecewise-linear inputs. The default.
    #[default]
    Linear,
    /// u[k] is held constant on [t_k, t_k+1): exact for piecewise-constant inputs.
    Zoh,
}

/// Options of [`simulate`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct SimulationOptions {
    /// Hold of a continuous model's input (`None` = [`Hold::Linear`]); a discrete model
    /// accepts only `None` or [`Hold::Zoh`], since it steps its difference equation.
    pub hold: Option<Hold>,
    /// Keep the state trajectory (n values per sample). Leave it off for long runs whose
    /// states are not needed: outputs alone cost p values per sample.
    pub keep_states: bool,
}

impl Default for SimulationOptions {
    fn default() -> Self {
        SimulationOptions {
            hold: None,
            keep_states: true,
        }
    }
}

/// A time response: one row per sample.
#[derive(Debug, Clone, PartialEq)]
pub struct Response {
    /// Sample times in seconds.
    pub t: Vec<f64>,
    /// Outputs, N×p.
    pub y: DMatrix<f64>,
    /// States, N×n (row k is x(t_k)); `None` when not kept.
    pub x: Option<DMatrix<f64>>,
    /// Inputs, N×m.
    pub u: DMatrix<f64>,
}

/// Relative tolerance on the spacing of a uniform grid.
const UNIFORM_TOLERANCE: f64 = 1e-6;

/// Checks a time grid: at least one sample, finite, starting at t ≥ 0, strictly increasing
/// and uniform (every step within 10⁻⁶ relative of the mean step). Returns the mean step
/// (0 for a single sample).
pub fn uniform_step(t: &[f64]) -> NumResult<f64> {
    let bad = |why: String| NumError::invalid("t", why);
    if t.is_empty() {
        return Err(bad("expected at least one sample time, found none".into()));
    }
    if let Some(k) = t.iter().position(|v| !v.is_finite()) {
        return Err(bad(format!("t[{k}] is {}, expected a finite time", t[k])));
    }
    if t[0] < 0.0 {
        return Err(bad(format!("expected times ≥ 0, found t[0] = {}", t[0])));
    }
    if t.len() == 1 {
        return Ok(0.0);
    }
    for k in 1..t.len() {
        if t[k] <= t[k - 1] {
            return Err(bad(format!(
                "expected increasing times, found t[{k}] = {} after t[{}] = {}",
                t[k],
                k - 1,
                t[k - 1]
            )));
        }
    }
    let h = (t[t.len() - 1] - t[0]) / (t.len() - 1) as f64;
    for k in 1..t.len() {
        let step = t[k] - t[k - 1];
        if (step - h).abs() > UNIFORM_TOLERANCE * h {
            return Err(bad(format!(
                "expected uniformly spaced samples (step {h:.6e}), found a step of {step:.6e} \
                 from t[{}] to t[{k}]\nhint: build t with linear_grid(0, t_final, count)",
                k - 1
            )));
        }
    }
    Ok(h)
}

/// The precomputed one-step map: x⁺ = Φx + G₀u_k + G₁u_{k+1}, y = Cx + Du (column-major
/// flat storage, so the inner loops are contiguous axpy operations).
struct Stepper {
    n: usize,
    m: usize,
    p: usize,
    phi: Vec<f64>,
    g0: Vec<f64>,
    g1: Option<Vec<f64>>,
    c: Vec<f64>,
    d: Vec<f64>,
}

fn flat(m: &DMatrix<f64>) -> Vec<f64> {
    m.as_slice().to_vec()
}

impl Stepper {
    fn new(sys: &StateSpace, h: f64, hold: Option<Hold>) -> NumResult<Self> {
        let (phi, g0, g1) = if sys.is_discrete() {
            if hold == Some(Hold::Linear) {
                return Err(NumError::invalid(
                    "hold",
                    "a discrete model steps its difference equation once per sample; the \
                     linear hold applies to continuous models only",
                ));
            }
            (flat(&sys.a), flat(&sys.b), None)
        } else if h == 0.0 {
            // A single sample: no step is taken.
            (flat(&sys.a), flat(&sys.b), None)
        } else {
            let (phi, gamma1, gamma2) = hold_terms(&sys.a, &sys.b, h)?;
            match hold.unwrap_or_default() {
                Hold::Zoh => (flat(&phi), flat(&gamma1), None),
                Hold::Linear => (flat(&phi), flat(&(gamma1 - &gamma2)), Some(flat(&gamma2))),
            }
        };
        Ok(Stepper {
            n: sys.order(),
            m: sys.inputs(),
            p: sys.outputs(),
            phi,
            g0,
            g1,
            c: flat(&sys.c),
            d: flat(&sys.d),
        })
    }

    /// Runs the recurrence over `samples` steps on the column-major N×m input slice `u`:
    /// a kernel with the state size fixed at compile time for n ≤ 12 (the state stays in
    /// registers and the products unroll), the general loop otherwise.
    fn run(
        &self,
        x0: &[f64],
        u: &[f64],
        samples: usize,
        keep_states: bool,
    ) -> (Vec<f64>, Option<Vec<f64>>) {
        macro_rules! fixed {
            ($($k:literal)*) => {
                match self.n {
                    $($k => self.run_fixed::<$k>(x0, u, samples, keep_states),)*
                    _ => self.run_general(x0, u, samples, keep_states),
                }
            };
        }
        fixed!(1 2 3 4 5 6 7 8 9 10 11 12)
    }

    /// [`Stepper::run`] for a state of exactly `N` entries.
    fn run_fixed<const N: usize>(
        &self,
        x0: &[f64],
        u: &[f64],
        samples: usize,
        keep_states: bool,
    ) -> (Vec<f64>, Option<Vec<f64>>) {
        let (m, p) = (self.m, self.p);
        let columns = |flat: &[f64]| -> Vec<[f64; N]> {
            flat.chunks_exact(N)
                .map(|c| {
                    let mut a = [0.0; N];
                    a.copy_from_slice(c);
                    a
                })
                .collect()
        };
        let phi = columns(&self.phi);
        let g0 = columns(&self.g0);
        let g1 = self.g1.as_deref().map(columns);
        // Rows of C (p × N), for the output dot products.
        let c_rows: Vec<[f64; N]> = (0..p)
            .map(|i| std::array::from_fn(|j| self.c[j * p + i]))
            .collect();
        let mut y = vec![0.0; samples * p];
        let mut xs = keep_states.then(|| vec![0.0; samples * N]);
        let mut x = [0.0; N];
        x.copy_from_slice(x0);
        for k in 0..samples {
            for (i, row) in c_rows.iter().enumerate() {
                let mut s = 0.0;
                for j in 0..N {
                    s += row[j] * x[j];
                }
                for l in 0..m {
                    s += self.d[l * p + i] * u[l * samples + k];
                }
                y[i * samples + k] = s;
            }
            if let Some(xs) = xs.as_mut() {
                for (j, &v) in x.iter().enumerate() {
                    xs[j * samples + k] = v;
                }
            }
            if k + 1 == samples {
                break;
            }
            let mut xn = [0.0; N];
            for (col, &xj) in phi.iter().zip(&x) {
                for i in 0..N {
                    xn[i] += col[i] * xj;
                }
            }
            for (l, col) in g0.iter().enumerate() {
                let ul = u[l * samples + k];
                for i in 0..N {
                    xn[i] += col[i] * ul;
                }
            }
            if let Some(g1) = &g1 {
                for (l, col) in g1.iter().enumerate() {
                    let ul = u[l * samples + k + 1];
                    for i in 0..N {
                        xn[i] += col[i] * ul;
                    }
                }
            }
            x = xn;
        }
        (y, xs)
    }

    /// [`Stepper::run`] for any state size.
    fn run_general(
        &self,
        x0: &[f64],
        u: &[f64],
        samples: usize,
        keep_states: bool,
    ) -> (Vec<f64>, Option<Vec<f64>>) {
        let (n, m, p) = (self.n, self.m, self.p);
        let mut y = vec![0.0; samples * p];
        let mut xs = keep_states.then(|| vec![0.0; samples * n]);
        let mut x = x0.to_vec();
        let mut xn = vec![0.0; n];
        let mut yk = vec![0.0; p];
        let mut uk = vec![0.0; m];
        let mut uk1 = vec![0.0; m];
        for (l, v) in uk.iter_mut().enumerate() {
            *v = u[l * samples];
        }
        for k in 0..samples {
            // Output y_k = C x_k + D u_k.
            yk.iter_mut().for_each(|v| *v = 0.0);
            for (j, &xj) in x.iter().enumerate() {
                axpy(&mut yk, &self.c[j * p..(j + 1) * p], xj);
            }
            for (l, &ul) in uk.iter().enumerate() {
                axpy(&mut yk, &self.d[l * p..(l + 1) * p], ul);
            }
            for (i, &v) in yk.iter().enumerate() {
                y[i * samples + k] = v;
            }
            if let Some(xs) = xs.as_mut() {
                for (j, &v) in x.iter().enumerate() {
                    xs[j * samples + k] = v;
                }
            }
            if k + 1 == samples {
                break;
            }
            for (l, v) in uk1.iter_mut().enumerate() {
                *v = u[l * samples + k + 1];
            }
            // State x_{k+1} = Φ x_k + G₀ u_k (+ G₁ u_{k+1}).
            xn.iter_mut().for_each(|v| *v = 0.0);
            for (j, &xj) in x.iter().enumerate() {
                axpy(&mut xn, &self.phi[j * n..(j + 1) * n], xj);
            }
            for (l, &ul) in uk.iter().enumerate() {
                axpy(&mut xn, &self.g0[l * n..(l + 1) * n], ul);
            }
            if let Some(g1) = &self.g1 {
                for (l, &ul) in uk1.iter().enumerate() {
                    axpy(&mut xn, &g1[l * n..(l + 1) * n], ul);
                }
            }
            std::mem::swap(&mut x, &mut xn);
            std::mem::swap(&mut uk, &mut uk1);
        }
        (y, xs)
    }
}

/// y += a·s over equal-length slices (vectorisable: no dependency between lanes).
#[inline(always)]
fn axpy(y: &mut [f64], a: &[f64], s: f64) {
    for (yi, &ai) in y.iter_mut().zip(a) {
        *yi += ai * s;
    }
}

/// Simulates a model from state `x0` (zero when `None`) at the uniform times `t` with
/// inputs `u` (N×m, row k at t[k]).
///
/// Continuous model: exact transition over each interval for the chosen hold (see the
/// module documentation); the first sample is at t[0] with x(t[0]) = x0. Discrete model:
/// x[k+1] = A x[k] + B u[k], y[k] = C x[k] + D u[k], one step per sample; the spacing of
/// `t` must equal the model's dt (10⁻⁶ relative).
///
/// Cost: one exponential of order n + 2m, then N·(n² + 2nm + pn + pm) multiply-adds at
/// most; memory N·(p + m) values, plus N·n with `keep_states`.
///
/// Errors: a bad time grid ([`uniform_step`]), u not N×m, x0 not of length n, non-finite
/// entries, a sample spacing that differs from a discrete model's dt, the linear hold for
/// a discrete model, and a response that overflows (naming the time).
pub fn simulate(
    sys: &StateSpace,
    t: &[f64],
    u: &DMatrix<f64>,
    x0: Option<&[f64]>,
    options: SimulationOptions,
) -> NumResult<Response> {
    let (y, x) = simulate_outputs(sys, t, u, x0, options)?;
    Ok(Response {
        t: t.to_vec(),
        y,
        x,
        u: u.clone(),
    })
}

/// As [`simulate`], returning only the outputs `y` (N×p) and, with `keep_states`, the
/// states (N×n): for a caller that keeps `t` and `u` itself, so that a long simulation
/// holds one copy of its grid and input.
pub fn simulate_outputs(
    sys: &StateSpace,
    t: &[f64],
    u: &DMatrix<f64>,
    x0: Option<&[f64]>,
    options: SimulationOptions,
) -> NumResult<(DMatrix<f64>, Option<DMatrix<f64>>)> {
    let h = uniform_step(t)?;
    let (n, m, p, samples) = (sys.order(), sys.inputs(), sys.outputs(), t.len());
    if u.nrows() != samples || u.ncols() != m {
        return Err(NumError::shape(
            "u",
            format!("{samples}×{m} (one row per sample of t, one column per input)"),
            check::shape_of(u),
        ));
    }
    check::finite("u", u)?;
    let zero = vec![0.0; n];
    let x0 = x0.unwrap_or(&zero);
    if x0.len() != n {
        return Err(NumError::shape(
            "x0",
            format!("{n} values (one per state)"),
            format!("{}", x0.len()),
        ));
    }
    check::finite_values("x0", x0)?;
    if sys.is_discrete() && samples > 1 && (h - sys.dt).abs() > UNIFORM_TOLERANCE * sys.dt {
        return Err(NumError::invalid(
            "t",
            format!(
                "expected the model's sample time {} s between samples, found {h:.6e}",
                sys.dt
            ),
        ));
    }
    let stepper = Stepper::new(sys, h, options.hold)?;
    let (y, xs) = stepper.run(x0, u.as_slice(), samples, options.keep_states);
    if let Some(k) = (0..samples).find(|&k| (0..p).any(|i| !y[i * samples + k].is_finite())) {
        return Err(NumError::no_solution(
            "simulate",
            format!(
                "the response overflows the floating-point range at t = {:.6e} (an unstable \
                 model run too long)",
                t[k]
            ),
        ));
    }
    Ok((
        DMatrix::from_vec(samples, p, y),
        xs.map(|v| DMatrix::from_vec(samples, n, v)),
    ))
}

/// A time grid chosen for a model's standard responses.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Horizon {
    /// Last sample time in seconds.
    pub t_final: f64,
    /// Number of samples, t_final included.
    pub samples: usize,
}

/// Samples of a continuous grid for plots: at least this many.
pub const MIN_SAMPLES: usize = 201;
/// Samples of a continuous grid for plots: at most this many.
pub const MAX_SAMPLES: usize = 10_001;
/// Samples of a continuous grid for response metrics.
pub const DENSE_SAMPLES: usize = 20_001;
/// Most samples of a discrete model's automatic grid.
pub const MAX_DISCRETE_SAMPLES: usize = 100_001;

/// The automatic horizon of a model's responses (used when `t_final` is omitted).
///
/// Rule, on the continuous-time poles s (for a discrete model s = ln(z)/dt; poles at z = 0
/// are skipped): every stable pole asks for 7 time constants 7/|Re s| (e^{−7} ≈ 0.1 % of
/// the mode remains); an unstable pole for 4 e-folding times 4/Re s; an undamped
/// oscillation (on the imaginary axis) for 3 periods 6π/|Im s|; poles at the origin
/// (integrators) set no time scale. The horizon is the longest of these, or 10 s when no
/// pole sets one. The sample step aims at 20 samples per fastest time scale 1/|s|
/// (about 125 per period of the fastest oscillation), with the count kept between
/// [`MIN_SAMPLES`] and [`MAX_SAMPLES`] (a very stiff model therefore undersamples its
/// fastest modes; the samples stay exact). A discrete model's step is its dt, with at most
/// [`MAX_DISCRETE_SAMPLES`] samples.
pub fn auto_horizon(sys: &StateSpace) -> NumResult<Horizon> {
    let s = continuous_poles(sys)?;
    let scale = s.iter().map(|z| z.norm()).fold(0.0, f64::max).max(1.0);
    let mut t_final: f64 = 0.0;
    for z in &s {
        if z.norm() <= 1e-12 * scale {
            continue;
        }
        let on_axis = z.re.abs() <= 1e-9 * z.norm();
        let want = if on_axis {
            6.0 * std::f64::consts::PI / z.im.abs()
        } else if z.re < 0.0 {
            7.0 / -z.re
        } else {
            4.0 / z.re
        };
        t_final = t_final.max(want);
    }
    if t_final == 0.0 || !t_final.is_finite() {
        t_final = 10.0;
    }
    Ok(horizon_for(sys, t_final, &s, MIN_SAMPLES, MAX_SAMPLES))
}

/// The grid for a given `t_final` (> 0): the sample count of [`auto_horizon`]'s rule, or
/// for a discrete model every sample up to t_final. `dense` asks for [`DENSE_SAMPLES`]
/// samples of a continuous model (response metrics).
pub fn horizon_with(sys: &StateSpace, t_final: f64, dense: bool) -> NumResult<Horizon> {
    if !(t_final.is_finite() && t_final > 0.0) {
        return Err(NumError::invalid(
            "t_final",
            format!("expected a positive, finite time in seconds, found {t_final}"),
        ));
    }
    let s = continuous_poles(sys)?;
    Ok(if dense && !sys.is_discrete() {
        Horizon {
            t_final,
            samples: DENSE_SAMPLES,
        }
    } else {
        horizon_for(sys, t_final, &s, MIN_SAMPLES, MAX_SAMPLES)
    })
}

fn continuous_poles(sys: &StateSpace) -> NumResult<Vec<nalgebra::Complex<f64>>> {
    let p = poles(sys)?;
    Ok(if sys.is_discrete() {
        p.into_iter()
            .filter(|z| z.norm() > 0.0)
            .map(|z| z.ln() / sys.dt)
            .collect()
    } else {
        p
    })
}

fn horizon_for(
    sys: &StateSpace,
    t_final: f64,
    s: &[nalgebra::Complex<f64>],
    min: usize,
    max: usize,
) -> Horizon {
    if sys.is_discrete() {
        let steps = (t_final / sys.dt - 1e-9).ceil().max(1.0);
        let samples = (steps as usize + 1).min(MAX_DISCRETE_SAMPLES);
        return Horizon {
            t_final: (samples - 1) as f64 * sys.dt,
            samples,
        };
    }
    let fastest = s.iter().map(|z| z.norm()).fold(0.0, f64::max);
    let wanted = if fastest > 0.0 {
        (t_final * fastest * 20.0).ceil() + 1.0
    } else {
        min as f64
    };
    let samples = if wanted.is_finite() {
        (wanted as usize).clamp(min, max)
    } else {
        max
    };
    Horizon { t_final, samples }
}

/// The sample times of a horizon, from 0.
pub fn grid(h: Horizon) -> Vec<f64> {
    let last = (h.samples - 1).max(1) as f64;
    (0..h.samples)
        .map(|k| h.t_final * k as f64 / last)
        .collect()
}

fn checked_x0(sys: &StateSpace, x0: &[f64]) -> NumResult<()> {
    if x0.len() != sys.order() {
        return Err(NumError::shape(
            "x0",
            format!("{} values (one per state)", sys.order()),
            format!("{}", x0.len()),
        ));
    }
    Ok(())
}

/// The unit-step response from x(0) = 0, one [`Response`] per input (u_j = 1 for t ≥ 0,
/// the other inputs 0); y(0) = D includes the feedthrough. `horizon` from
/// [`auto_horizon`] or [`horizon_with`]. Exact samples (the step is piecewise constant).
pub fn step_response(sys: &StateSpace, horizon: Horizon) -> NumResult<Vec<Response>> {
    let t = grid(horizon);
    (0..sys.inputs())
        .map(|j| {
            let mut u = DMatrix::zeros(t.len(), sys.inputs());
            u.column_mut(j).fill(1.0);
            simulate(
                sys,
                &t,
                &u,
                None,
                SimulationOptions {
                    hold: Some(Hold::Zoh),
                    keep_states: true,
                },
            )
        })
        .collect()
}

/// The unit-impulse response, one [`Response`] per input.
///
/// Continuous model: the response to u_j = δ(t), i.e. the free motion from x(0⁺) = B e_j:
/// y(t) = C e^{At} B e_j for t > 0 (the sample at t = 0 is the limit from the right). The
/// feedthrough's part D e_j δ(t) is an impulse in the output and cannot be sampled: it is
/// left out (the caller may warn when D ≠ 0). The stored input is zero; the stored states
/// start at B e_j. Discrete model: the unit pulse u_j[0] = 1, giving y[0] = D e_j and
/// y[k] = C A^{k−1} B e_j.
pub fn impulse_response(sys: &StateSpace, horizon: Horizon) -> NumResult<Vec<Response>> {
    let t = grid(horizon);
    (0..sys.inputs())
        .map(|j| {
            let mut u = DMatrix::zeros(t.len(), sys.inputs());
            let options = SimulationOptions {
                hold: Some(Hold::Zoh),
                keep_states: true,
            };
            if sys.is_discrete() {
                u[(0, j)] = 1.0;
                simulate(sys, &t, &u, None, options)
            } else {
                let x0: Vec<f64> = sys.b.column(j).iter().copied().collect();
                let free = StateSpace {
                    d: DMatrix::zeros(sys.outputs(), sys.inputs()),
                    ..sys.clone()
                };
                simulate(&free, &t, &u, Some(&x0), options)
            }
        })
        .collect()
}

/// The free response from x(0) = x0 with zero input: x(t) = e^{At} x0 (continuous) or
/// x[k] = A^k x0 (discrete), y = C x.
pub fn free_response(sys: &StateSpace, x0: &[f64], horizon: Horizon) -> NumResult<Response> {
    checked_x0(sys, x0)?;
    let t = grid(horizon);
    let u = DMatrix::zeros(t.len(), sys.inputs());
    simulate(
        sys,
        &t,
        &u,
        Some(x0),
        SimulationOptions {
            hold: Some(Hold::Zoh),
            keep_states: true,
        },
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    fn first_order(tau: f64) -> StateSpace {
        StateSpace::new(
            DMatrix::from_element(1, 1, -1.0 / tau),
            DMatrix::from_element(1, 1, 1.0 / tau),
            DMatrix::from_element(1, 1, 1.0),
            DMatrix::zeros(1, 1),
            0.0,
        )
        .unwrap()
    }

    #[test]
    fn first_order_step_closed_form() {
        // y = 1 − e^{−t/τ} (closed form); exact at every sample.
        let s = first_order(2.0);
        let h = auto_horizon(&s).unwrap();
        assert!((h.t_final - 14.0).abs() < 1e-12);
        let r = &step_response(&s, h).unwrap()[0];
        for (k, &t) in r.t.iter().enumerate() {
            assert!((r.y[(k, 0)] - (1.0 - (-t / 2.0).exp())).abs() < 1e-14);
        }
    }

    #[test]
    fn linear_hold_is_exact_for_a_ramp() {
        // x' = u, u = t ⇒ x = t²/2 (closed form); the zoh gives the left Riemann sum.
        let s = crate::numeric::testing::siso(&[0.0], &[1.0], &[1.0], 0.0);
        let t: Vec<f64> = (0..11).map(|k| k as f64 * 0.1).collect();
        let u = DMatrix::from_column_slice(11, 1, &t);
        let r = simulate(&s, &t, &u, None, SimulationOptions::default()).unwrap();
        assert!((r.y[(10, 0)] - 0.5).abs() < 1e-14);
        let z = simulate(
            &s,
            &t,
            &u,
            None,
            SimulationOptions {
                hold: Some(Hold::Zoh),
                keep_states: false,
            },
        )
        .unwrap();
        assert!((z.y[(10, 0)] - 0.45).abs() < 1e-14);
        assert!(z.x.is_none());
    }

    #[test]
    fn fixed_and_general_kernels_agree() {
        // Same recurrence, two code paths: the results must agree to rounding.
        let n = 10;
        let mut seed = 3u64;
        let mut next = || {
            seed = seed.wrapping_mul(6364136223846793005).wrapping_add(1);
            ((seed >> 11) as f64 / (1u64 << 53) as f64) - 0.5
        };
        let a = DMatrix::from_fn(n, n, |i, j| next() - if i == j { 2.0 } else { 0.0 });
        let b = DMatrix::from_fn(n, 2, |_, _| next());
        let c = DMatrix::from_fn(3, n, |_, _| next());
        let d = DMatrix::from_fn(3, 2, |_, _| next());
        let s = StateSpace::new(a, b, c, d, 0.0).unwrap();
        let samples = 50;
        let u: Vec<f64> = (0..samples * 2).map(|k| (k as f64 * 0.3).sin()).collect();
        let x0: Vec<f64> = (0..n).map(|k| k as f64 * 0.1).collect();
        for hold in [Hold::Zoh, Hold::Linear] {
            let st = Stepper::new(&s, 0.05, Some(hold)).unwrap();
            let (y1, x1) = st.run_fixed::<10>(&x0, &u, samples, true);
            let (y2, x2) = st.run_general(&x0, &u, samples, true);
            let diff = |a: &[f64], b: &[f64]| {
                a.iter()
                    .zip(b)
                    .map(|(p, q)| (p - q).abs())
                    .fold(0.0, f64::max)
            };
            assert!(diff(&y1, &y2) < 1e-13);
            assert!(diff(&x1.unwrap(), &x2.unwrap()) < 1e-13);
        }
    }

    #[test]
    fn bad_grids_are_refused() {
        for (t, want) in [
            (vec![0.0, 0.1, 0.3], "uniformly spaced"),
            (vec![0.0, 0.1, 0.1], "increasing"),
            (vec![-1.0, 0.0], "≥ 0"),
            (vec![0.0, f64::NAN], "NaN"),
            (vec![], "at least one"),
        ] {
            let e = uniform_step(&t).unwrap_err().to_string();
            assert!(e.contains(want), "{e}");
        }
    }

    #[test]
    fn wrong_shapes_and_overflow() {
        let s = first_order(1.0);
        let t = [0.0, 0.1];
        let e = simulate(&s, &t, &DMatrix::zeros(3, 1), None, Default::default())
            .unwrap_err()
            .to_string();
        assert!(e.contains("u: expected 2×1"), "{e}");
        let unstable = StateSpace {
            a: DMatrix::from_element(1, 1, 800.0),
            ..s
        };
        let t: Vec<f64> = (0..101).map(|k| k as f64 * 0.1).collect();
        let e = simulate(
            &unstable,
            &t,
            &DMatrix::from_element(101, 1, 1.0),
            None,
            Default::default(),
        )
        .unwrap_err()
        .to_string();
        assert!(e.contains("overflows"), "{e}");
    }

    #[test]
    fn auto_horizon_rules() {
        // Integrator only: 10 s. Undamped oscillator ω = 2: 3 periods = 3π.
        let integ = StateSpace {
            a: DMatrix::zeros(1, 1),
            ..first_order(1.0)
        };
        assert_eq!(auto_horizon(&integ).unwrap().t_final, 10.0);
        let osc = StateSpace::new(
            DMatrix::from_row_slice(2, 2, &[0.0, 1.0, -4.0, 0.0]),
            DMatrix::from_column_slice(2, 1, &[0.0, 1.0]),
            DMatrix::from_row_slice(1, 2, &[1.0, 0.0]),
            DMatrix::zeros(1, 1),
            0.0,
        )
        .unwrap();
        let h = auto_horizon(&osc).unwrap();
        assert!(
            (h.t_final - 3.0 * std::f64::consts::PI).abs() < 1e-9,
            "{h:?}"
        );
        assert!(horizon_with(&osc, -1.0, false).is_err());
    }
}
