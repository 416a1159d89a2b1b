//! Initial-value problems x' = f(t, x), x(t0) = x0, integrated over [t0, t_final].
//!
//! Two adaptive one-step methods share one driver:
//! - explicit: the Dormand–Prince 5(4) pair (module `dormand_prince`);
//! - stiff: the three-stage Radau IIA collocation method of order 5 (module `radau_iia`),
//!   L-stable, with a finite-difference Jacobian;
//! - auto: starts explicit and switches to the stiff method for the rest of the interval
//!   once the explicit method's stiffness detector fires repeatedly.
//!
//! The right-hand side is a fallible closure, so that a script function can be integrated:
//! its error, a non-finite derivative, a step size underflow or an exhausted step budget
//! each come back as a [`NumError`] naming the time reached.

use super::dormand_prince::{self, ExplicitEnd};
use super::radau_iia;
use crate::numeric::check;
use crate::numeric::error::{NumError, NumResult};

/// Name used in error messages.
pub(super) const WHAT: &str = "integrate_ode";

/// The right-hand side f(t, x, dx): writes x' into `dx` (whose length is the state
/// dimension) or returns a message that is reported together with the time reached.
pub type OdeRhs<'a> = dyn FnMut(f64, &[f64], &mut [f64]) -> Result<(), String> + 'a;

/// Which integration method [`integrate_ode`] uses.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum OdeMethod {
    /// Start with the explicit method; switch to the stiff one when the explicit method's
    /// stiffness detector fires repeatedly (recorded in [`OdeStats::switched_to_stiff_at`]).
    #[default]
    Auto,
    /// Dormand–Prince 5(4) throughout.
    Explicit,
    /// Radau IIA of order 5 throughout.
    Stiff,
}

/// Options of [`integrate_ode`].
///
/// Tolerances act per component and per step: a step is accepted when the estimated local
/// error e satisfies sqrt(mean((e_i / (atol + rtol·|x_i|))²)) ≤ 1 (the weighted RMS norm of
/// Hairer, Nørsett & Wanner). They bound the local, not the global, error; the global error
/// is typically a small multiple of rtol on well-conditioned problems. Defaults: rtol = 1e-6
/// (about six correct digits per step), atol = 1e-9 (the size below which a component counts
/// as zero); rtol must exceed 10·ε. The stiff method, like Hairer & Wanner's RADAU5, tests
/// its order-3 embedded estimate against rtol' = 0.1·rtol^(2/3), atol' = rtol'·atol/rtol,
/// which gives global errors of the same order as the explicit method's for the same
/// (rtol, atol).
#[derive(Debug, Clone, PartialEq)]
pub struct OdeOptions {
    /// Explicit, stiff or automatic choice.
    pub method: OdeMethod,
    /// Relative tolerance (> 10·ε).
    pub rtol: f64,
    /// Absolute tolerance (> 0).
    pub atol: f64,
    /// Largest step allowed (> 0); `None` means t_final − t0.
    pub max_step: Option<f64>,
    /// First trial step (> 0); `None` chooses it from f (Hairer, Nørsett & Wanner, §II.4).
    pub initial_step: Option<f64>,
    /// Output times, ascending within [t0, t_final]; `None` returns every accepted step.
    pub samples: Option<Vec<f64>>,
    /// Cap on attempted steps (accepted plus rejected, both methods together).
    pub max_steps: usize,
}

impl Default for OdeOptions {
    fn default() -> Self {
        OdeOptions {
            method: OdeMethod::Auto,
            rtol: 1e-6,
            atol: 1e-9,
            max_step: None,
            initial_step: None,
            samples: None,
            max_steps: 100_000,
        }
    }
}

/// Work counters of one integration.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct OdeStats {
    /// Accepted steps.
    pub steps: usize,
    /// Rejected steps (error test failed, or the stiff method's Newton iteration failed).
    pub rejected: usize,
    /// Evaluations of f, including those spent on Jacobians and the initial step.
    pub f_evals: usize,
    /// Finite-difference Jacobians (n evaluations of f each).
    pub jacobian_evals: usize,
    /// Factorisations of the stiff method's iteration matrices; each counts one real and
    /// one complex n×n LU decomposition.
    pub lu_decompositions: usize,
    /// Simplified Newton iterations of the stiff method.
    pub newton_iterations: usize,
    /// Time at which [`OdeMethod::Auto`] switched to the stiff method, if it did.
    pub switched_to_stiff_at: Option<f64>,
}

/// Result of [`integrate_ode`]: times, the state at each time (one row per time) and the
/// work counters.
#[derive(Debug, Clone, PartialEq)]
pub struct OdeSolution {
    /// Output times: t0, every accepted step and t_final exactly; or the requested samples.
    pub t: Vec<f64>,
    /// State rows, `x[k]` at `t[k]`.
    pub x: Vec<Vec<f64>>,
    /// Work counters.
    pub stats: OdeStats,
}

/// Solves x' = f(t, x), x(0) = x0 on [0, t_final]: [`integrate_ode_from`] with t0 = 0
/// (same methods, cost, references, tolerances and errors).
pub fn integrate_ode(
    f: &mut OdeRhs<'_>,
    x0: &[f64],
    t_final: f64,
    options: &OdeOptions,
) -> NumResult<OdeSolution> {
    integrate_ode_from(f, 0.0, x0, t_final, options)
}

/// Solves the initial-value problem x' = f(t, x), x(t0) = x0 on [t0, t_final].
///
/// Algorithm: adaptive one-step integration with a weighted RMS error test (see
/// [`OdeOptions`] for what the tolerances mean).
/// - [`OdeMethod::Explicit`]: the Dormand–Prince 5(4) pair (Dormand & Prince 1980, "A family
///   of embedded Runge-Kutta formulae", J. Comput. Appl. Math. 6), first-same-as-last, PI
///   step-size control (Gustafsson 1991) and the order-4 continuous extension, as in the
///   DOPRI5 code of Hairer, Nørsett & Wanner, *Solving Ordinary Differential Equations I*
///   (2nd ed. 1993, §II.4–II.6). Cost: 6 evaluations of f per step, O(n) work besides.
/// - [`OdeMethod::Stiff`]: Radau IIA of order 5 with simplified Newton iterations in the
///   eigenbasis of the coefficient matrix, embedded error estimate and the collocation
///   polynomial as dense output (Hairer & Wanner, *Solving Ordinary Differential Equations
///   II*, 2nd ed. 1996, §IV.8). Cost per step: 3 evaluations of f per Newton iteration;
///   when the Jacobian is refreshed n more evaluations (forward differences) and one real
///   plus one complex n×n LU decomposition, O(n³).
/// - [`OdeMethod::Auto`]: explicit until the stiffness test of DOPRI5 (Hairer & Wanner,
///   *Solving ODEs II*, §IV.2: the estimate h·|λ| ≈ h·‖k7 − k6‖/‖y7 − y6‖ of the stages at
///   t + h, checked on every accepted step, exceeds 3.25 on 15 steps not interrupted by 6
///   non-stiff ones) fires, then stiff from that point for the rest of the interval.
///
/// Jacobian of the stiff method: forward differences, column j from
/// δ_j = √ε·max(|x_j|, 1); it is kept while the Newton iteration contracts fast (rate
/// θ ≤ 0.001) and refreshed otherwise.
///
/// Without `samples` the result holds t0, every accepted step and t_final (exactly, as the
/// last row); with `samples` it holds the dense-output values at exactly those times.
/// `t_final == t0` returns the initial state alone.
///
/// Errors: invalid arguments; the closure's error, a non-finite derivative or state, a step
/// size below 10·ε·|t| or more than `max_steps` attempted steps, each naming the time reached.
pub fn integrate_ode_from(
    f: &mut OdeRhs<'_>,
    t0: f64,
    x0: &[f64],
    t_final: f64,
    options: &OdeOptions,
) -> NumResult<OdeSolution> {
    let ctl = validate(t0, x0, t_final, options)?;
    let samples = options.samples.as_deref();
    let mut rec = Recorder::new(samples, t0, x0);
    let mut stats = OdeStats::default();
    if t_final == t0 {
        return Ok(OdeSolution {
            t: rec.t,
            x: rec.x,
            stats,
        });
    }
    let mut rhs = Rhs { f, evals: 0 };
    let mut t = t0;
    let mut x = x0.to_vec();
    let result = run(
        &mut rhs, &ctl, options, &mut t, &mut x, &mut rec, &mut stats,
    );
    stats.f_evals = rhs.evals;
    result?;
    Ok(OdeSolution {
        t: rec.t,
        x: rec.x,
        stats,
    })
}

fn run(
    rhs: &mut Rhs<'_, '_>,
    ctl: &Control,
    options: &OdeOptions,
    t: &mut f64,
    x: &mut [f64],
    rec: &mut Recorder<'_>,
    stats: &mut OdeStats,
) -> NumResult<()> {
    match options.method {
        OdeMethod::Explicit => {
            dormand_prince::integrate(rhs, ctl, false, t, x, options.initial_step, rec, stats)
                .map(|_| ())
        }
        OdeMethod::Stiff => radau_iia::integrate(rhs, ctl, t, x, options.initial_step, rec, stats),
        OdeMethod::Auto => {
            let end =
                dormand_prince::integrate(rhs, ctl, true, t, x, options.initial_step, rec, stats)?;
            match end {
                ExplicitEnd::Finished => Ok(()),
                ExplicitEnd::Stiff { h } => {
                    stats.switched_to_stiff_at = Some(*t);
                    radau_iia::integrate(rhs, ctl, t, x, Some(h), rec, stats)
                }
            }
        }
    }
}

/// Checked settings shared by both methods.
#[derive(Debug, Clone)]
pub(super) struct Control {
    pub(super) rtol: f64,
    pub(super) atol: f64,
    pub(super) max_step: f64,
    pub(super) t_final: f64,
    pub(super) max_steps: usize,
}

fn validate(t0: f64, x0: &[f64], t_final: f64, o: &OdeOptions) -> NumResult<Control> {
    if x0.is_empty() {
        return Err(NumError::invalid(
            "x0",
            "expected at least one state variable, found none",
        ));
    }
    check::finite_values("x0", x0)?;
    if !t0.is_finite() || !t_final.is_finite() {
        return Err(NumError::invalid(
            WHAT,
            format!("expected finite times, found t0 = {t0} and t_final = {t_final}"),
        ));
    }
    if t_final < t0 {
        return Err(NumError::invalid(
            "t_final",
            format!(
                "expected t_final ≥ t0 = {}, found {}",
                fmt_t(t0),
                fmt_t(t_final)
            ),
        ));
    }
    if !(o.rtol.is_finite() && o.rtol > 10.0 * f64::EPSILON) {
        return Err(NumError::invalid(
            "rtol",
            format!(
                "expected a finite number above 10·ε ≈ 2.2e-15, found {}",
                o.rtol
            ),
        ));
    }
    if !positive(o.atol) {
        return Err(NumError::invalid(
            "atol",
            format!("expected a finite positive number, found {}", o.atol),
        ));
    }
    let span = t_final - t0;
    let max_step = match o.max_step {
        None => span,
        Some(h) if positive(h) => h.min(span),
        Some(h) => {
            return Err(NumError::invalid(
                "max_step",
                format!("expected a finite positive number, found {h}"),
            ))
        }
    };
    if let Some(h) = o.initial_step {
        if !positive(h) {
            return Err(NumError::invalid(
                "initial_step",
                format!("expected a finite positive number, found {h}"),
            ));
        }
    }
    if o.max_steps == 0 {
        return Err(NumError::invalid(
            "max_steps",
            "expected at least 1, found 0",
        ));
    }
    if let Some(s) = &o.samples {
        for (k, &v) in s.iter().enumerate() {
            if !v.is_finite() || v < t0 || v > t_final {
                return Err(NumError::invalid(
                    "samples",
                    format!(
                        "expected times within [{}, {}], found {v} at index {k}",
                        fmt_t(t0),
                        fmt_t(t_final)
                    ),
                ));
            }
            if k > 0 && v < s[k - 1] {
                return Err(NumError::invalid(
                    "samples",
                    format!(
                        "expected ascending times, found {v} after {} at index {k}",
                        s[k - 1]
                    ),
                ));
            }
        }
    }
    Ok(Control {
        rtol: o.rtol,
        atol: o.atol,
        max_step,
        t_final,
        max_steps: o.max_steps,
    })
}

/// Finite and strictly positive.
fn positive(v: f64) -> bool {
    v.is_finite() && v > 0.0
}

/// Formats a time for messages with at most six significant digits: `3.2e-1`.
pub(super) fn fmt_t(t: f64) -> String {
    let s = format!("{t:.5e}");
    match s.split_once('e') {
        Some((m, e)) if m.contains('.') => {
            let m = m.trim_end_matches('0').trim_end_matches('.');
            format!("{m}e{e}")
        }
        _ => s,
    }
}

/// The wrapped right-hand side: counts evaluations and turns closure errors into
/// [`NumError`]s naming the time.
pub(super) struct Rhs<'a, 'f> {
    pub(super) f: &'a mut OdeRhs<'f>,
    pub(super) evals: usize,
}

impl Rhs<'_, '_> {
    /// Evaluates f; `Ok(false)` when the derivative has a non-finite entry (which is left
    /// in `out` for [`Rhs::non_finite`] to report).
    pub(super) fn eval_raw(&mut self, t: f64, x: &[f64], out: &mut [f64]) -> NumResult<bool> {
        self.evals += 1;
        out.iter_mut().for_each(|v| *v = f64::NAN);
        (self.f)(t, x, out).map_err(|m| {
            NumError::invalid(
                WHAT,
                format!("the right-hand side failed at t = {}: {m}", fmt_t(t)),
            )
        })?;
        Ok(out.iter().all(|v| v.is_finite()))
    }

    /// Evaluates f and fails on a non-finite derivative.
    pub(super) fn eval(&mut self, t: f64, x: &[f64], out: &mut [f64]) -> NumResult<()> {
        if self.eval_raw(t, x, out)? {
            Ok(())
        } else {
            Err(Self::non_finite(t, out))
        }
    }

    /// The error for a derivative with a non-finite entry.
    pub(super) fn non_finite(t: f64, out: &[f64]) -> NumError {
        let i = out.iter().position(|v| !v.is_finite()).unwrap_or(0);
        let v = out.get(i).copied().unwrap_or(f64::NAN);
        NumError::invalid(
            WHAT,
            format!(
                "the right-hand side returned {v} in component {i} at t = {}, expected a finite \
                 number",
                fmt_t(t)
            ),
        )
    }
}

/// Weighted RMS norm sqrt(mean((v_i / w_i)²)).
pub(super) fn rms(v: &[f64], w: &[f64]) -> f64 {
    let s: f64 = v.iter().zip(w).map(|(a, b)| (a / b) * (a / b)).sum();
    (s / v.len().max(1) as f64).sqrt()
}

/// The step-count and step-size failures shared by both methods.
pub(super) fn check_step(t: f64, h: f64, attempted: usize, ctl: &Control) -> NumResult<()> {
    if attempted >= ctl.max_steps {
        return Err(NumError::NoConvergence {
            what: format!(
                "{WHAT} (stopped at t = {} before t_final = {}; raise max_steps)",
                fmt_t(t),
                fmt_t(ctl.t_final)
            ),
            iterations: attempted,
        });
    }
    if h.is_nan() || h <= 0.0 || h < 10.0 * f64::EPSILON * t.abs() {
        return Err(NumError::invalid(
            WHAT,
            format!(
                "step size underflow at t = {} (h = {:.2e}); the solution may blow up or have \
                 a singularity there",
                fmt_t(t),
                h
            ),
        ));
    }
    Ok(())
}

/// Fails when an accepted state has a non-finite entry.
pub(super) fn check_state(t: f64, x: &[f64]) -> NumResult<()> {
    match x.iter().position(|v| !v.is_finite()) {
        None => Ok(()),
        Some(i) => Err(NumError::invalid(
            WHAT,
            format!(
                "the state became {} in component {i} at t = {}",
                x[i],
                fmt_t(t)
            ),
        )),
    }
}

/// Starting step size of Hairer, Nørsett & Wanner (Solving ODEs I, §II.4, "starting step
/// size"): h0 = 0.01·‖x‖/‖f‖, one explicit Euler step to estimate the second derivative,
/// then h = min(100·h0, (0.01 / max(‖f'‖, ‖f‖))^(1/order), max_step). Two norms and one
/// evaluation of f.
pub(super) fn initial_step(
    rhs: &mut Rhs<'_, '_>,
    ctl: &Control,
    t: f64,
    x: &[f64],
    f0: &[f64],
    order: i32,
) -> NumResult<f64> {
    let sk: Vec<f64> = x.iter().map(|v| ctl.atol + ctl.rtol * v.abs()).collect();
    let dnf = rms(f0, &sk);
    let dny = rms(x, &sk);
    let mut h = if dnf <= 1e-5 || dny <= 1e-5 {
        1e-6
    } else {
        0.01 * dny / dnf
    };
    h = h.max(100.0 * f64::EPSILON * t.abs()).min(ctl.max_step);
    let x1: Vec<f64> = x.iter().zip(f0).map(|(a, b)| a + h * b).collect();
    let mut f1 = vec![0.0; x.len()];
    if !rhs.eval_raw(t + h, &x1, &mut f1)? {
        // The Euler probe left the domain of f: start cautiously; the step-size control
        // takes over from there.
        return Ok(0.01 * h);
    }
    let d: Vec<f64> = f1.iter().zip(f0).map(|(a, b)| a - b).collect();
    let der2 = rms(&d, &sk) / h;
    let der12 = der2.max(dnf);
    let h1 = if der12 <= 1e-15 {
        (h * 1e-3).max(1e-6)
    } else {
        (0.01 / der12).powf(1.0 / f64::from(order))
    };
    Ok((100.0 * h)
        .min(h1)
        .max(100.0 * f64::EPSILON * t.abs())
        .min(ctl.max_step))
}

/// A step's interpolant, evaluated at a time inside the step.
pub(super) trait Dense {
    /// Writes the interpolated state at `t` into `out`.
    fn eval(&self, t: f64, out: &mut [f64]);
}

/// Collects the output rows: every accepted step, or the requested samples.
pub(super) struct Recorder<'s> {
    samples: Option<&'s [f64]>,
    next: usize,
    pub(super) t: Vec<f64>,
    pub(super) x: Vec<Vec<f64>>,
}

impl<'s> Recorder<'s> {
    fn new(samples: Option<&'s [f64]>, t0: f64, x0: &[f64]) -> Self {
        let mut r = Recorder {
            samples,
            next: 0,
            t: Vec::new(),
            x: Vec::new(),
        };
        match samples {
            None => {
                r.t.push(t0);
                r.x.push(x0.to_vec());
            }
            Some(s) => {
                while r.next < s.len() && s[r.next] <= t0 {
                    r.t.push(s[r.next]);
                    r.x.push(x0.to_vec());
                    r.next += 1;
                }
            }
        }
        r
    }

    /// Whether the next accepted step needs its interpolant.
    pub(super) fn wants_dense(&self) -> bool {
        self.samples.is_some_and(|s| self.next < s.len())
    }

    /// Records an accepted step ending at `t_new` with state `x_new`.
    pub(super) fn accept(&mut self, t_new: f64, x_new: &[f64], dense: &dyn Dense) {
        match self.samples {
            None => {
                self.t.push(t_new);
                self.x.push(x_new.to_vec());
            }
            Some(s) => {
                while self.next < s.len() && s[self.next] <= t_new {
                    let ts = s[self.next];
                    let mut v = x_new.to_vec();
                    if ts != t_new {
                        dense.eval(ts, &mut v);
                    }
                    self.t.push(ts);
                    self.x.push(v);
                    self.next += 1;
                }
            }
        }
    }
}

#[cfg(test)]
mod tests;
