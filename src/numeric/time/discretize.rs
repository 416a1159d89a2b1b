//! Discretisation of continuous models (zero- and first-order hold, Tustin with optional
//! prewarping, impulse invariance, matched pole–zero mapping) and the inverse of the
//! zero-order hold.
//!
//! The hold methods use one matrix exponential of a block matrix (Van Loan 1978,
//! "Computing integrals involving the matrix exponential", IEEE Trans. Automatic Control
//! 23(3)): with
//!
//! ```text
//!         [A·dt  B·dt  0 ]            [Φ  Γ₁  Γ₂]
//! M    =  [ 0     0    I ]   e^M   =  [0  I   I ]
//!         [ 0     0    0 ]            [0  0   I ]
//! ```
//!
//! Φ = e^{A dt}, Γ₁ = ∫₀^dt e^{A s} ds B and Γ₂ = ∫₀^dt e^{A (dt − s)} B (s/dt) ds. No
//! inverse of A is formed, so models with integrators are handled like any other.

use crate::numeric::check;
use crate::numeric::error::{NumError, NumResult};
use crate::numeric::linalg::expm::expm;
use crate::numeric::linalg::logm::{logm, negative_real_axis_eigenvalue, LogmParams};
use crate::numeric::linalg::poly::{polynomial_from_roots, polynomial_roots};
use crate::numeric::lti::realize::{from_transfer_function, to_transfer_function};
use crate::numeric::lti::system::StateSpace;
use crate::numeric::lti::tf::TransferFunction;
use nalgebra::{Complex, DMatrix};

/// How a continuous model is turned into a discrete one.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Method {
    /// Zero-order hold: the input is held constant over each sample interval (exact for
    /// piecewise-constant inputs).
    Zoh,
    /// First-order (triangle) hold: the input varies linearly between samples (exact for
    /// piecewise-linear inputs).
    Foh,
    /// The bilinear (Tustin) map s = (2/dt)(z − 1)/(z + 1), or with a prewarp frequency
    /// w₀ (rad/s) s = (w₀/tan(w₀ dt/2))(z − 1)/(z + 1), which makes the discrete frequency
    /// response equal the continuous one at w₀.
    Tustin {
        /// Prewarp frequency in rad/s (0 < w₀ < π/dt), if any.
        prewarp: Option<f64>,
    },
    /// Impulse invariance: the discrete impulse response is dt times the samples of the
    /// continuous one (requires D = 0).
    Impulse,
    /// Matched pole–zero mapping z = e^{s dt} (single-input single-output only).
    Matched,
}

impl Method {
    /// The method's name as scripts write it.
    pub fn name(&self) -> &'static str {
        match self {
            Method::Zoh => "zoh",
            Method::Foh => "foh",
            Method::Tustin { .. } => "tustin",
            Method::Impulse => "impulse",
            Method::Matched => "matched",
        }
    }
}

/// The hold terms Φ = e^{A dt}, Γ₁ = ∫₀^dt e^{As} ds B and Γ₂ = ∫₀^dt e^{A(dt−s)} B s/dt ds
/// from one exponential of the (n + 2m)-square block matrix of Van Loan 1978 (see the
/// module documentation). Over one interval with u varying linearly from u₀ to u₁,
/// x(dt) = Φ x(0) + (Γ₁ − Γ₂) u₀ + Γ₂ u₁; with u held at u₀, x(dt) = Φ x(0) + Γ₁ u₀.
///
/// Cost: one exponential of order n + 2m, about 20(n + 2m)³ flops. Accuracy: that of
/// [`expm`] (backward error of order ε in ‖M‖₁).
pub fn hold_terms(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    dt: f64,
) -> NumResult<(DMatrix<f64>, DMatrix<f64>, DMatrix<f64>)> {
    let n = check::finite_square("A", a)?;
    check::finite("B", b)?;
    if b.nrows() != n {
        return Err(NumError::shape(
            "B",
            format!("{n} rows"),
            check::shape_of(b),
        ));
    }
    let m = b.ncols();
    let size = n + 2 * m;
    let mut big = DMatrix::<f64>::zeros(size, size);
    big.view_mut((0, 0), (n, n)).copy_from(&(a * dt));
    big.view_mut((0, n), (n, m)).copy_from(&(b * dt));
    for k in 0..m {
        big[(n + k, n + m + k)] = 1.0;
    }
    let e = expm(&big)?;
    Ok((
        e.view((0, 0), (n, n)).into_owned(),
        e.view((0, n), (n, m)).into_owned(),
        e.view((0, n + m), (n, m)).into_owned(),
    ))
}

/// Checks a sample time: finite and > 0.
pub fn check_dt(dt: f64) -> NumResult<()> {
    if !(dt.is_finite() && dt > 0.0) {
        return Err(NumError::invalid(
            "dt",
            format!("expected a positive sample time in seconds, found {dt}"),
        ));
    }
    Ok(())
}

/// The discrete model with sample time `dt` (seconds) of a continuous model.
///
/// - `Zoh`: Ad = Φ, Bd = Γ₁, Cd = C, Dd = D ([`hold_terms`]).
/// - `Foh` (triangle hold, Franklin, Powell & Workman's standard form): the exact
///   response to piecewise-linear inputs is x[k+1] = Φx[k] + (Γ₁ − Γ₂)u[k] + Γ₂u[k+1],
///   which looks one sample ahead; in the state coordinates ξ[k] = x(t_k) − Γ₂u[k] it is
///   causal: Ad = Φ, Bd = Γ₁ − Γ₂ + ΦΓ₂, Cd = C, Dd = D + CΓ₂. (The same realization as
///   scipy's `cont2discrete(method='foh')`.)
/// - `Tustin`: with T = dt (or T = 2 tan(w₀dt/2)/w₀ when prewarping at w₀) and
///   M = I − A T/2: Ad = M⁻¹(I + A T/2), Bd = M⁻¹ B T, Cd = C M⁻¹, Dd = D + C M⁻¹ B T/2
///   (the bilinear map s = (2/T)(z − 1)/(z + 1); Hd(e^{jw₀dt}) = H(jw₀) with prewarp).
///   Fails when A has the eigenvalue 2/T (M singular).
/// - `Impulse`: Ad = Φ, Bd = Φ B dt, Cd = C, Dd = C B dt, so that the discrete unit-pulse
///   response is hd[k] = dt·C e^{A k dt} B for every k ≥ 0 (the scaling of scipy's
///   `cont2discrete(method='impulse')`; the factor dt makes the DC gain approximate the
///   continuous one). Requires D = 0: a feedthrough would be an impulse in h(t).
/// - `Matched` (single-input single-output): on the transfer function of a minimal
///   realization, each pole p and finite zero q maps to e^{p dt}, e^{q dt}; each zero at
///   infinity (the relative degree) maps to z = −1, the Nyquist frequency, so the result
///   has as many zeros as poles; the gain matches the low-frequency gain — H(0) = Hd(1)
///   for models without poles or zeros at the origin, and otherwise the leading
///   coefficient of the expansion about s = 0 with s ≈ (z − 1)/dt. The result is the
///   companion realization of that transfer function.
///
/// Errors: a discrete input model (discretising twice is never done silently), dt not
/// positive and finite, a bad prewarp frequency, D ≠ 0 for `Impulse`, a model with several
/// inputs or outputs for `Matched`, M singular for `Tustin`.
pub fn discretize(sys: &StateSpace, dt: f64, method: Method) -> NumResult<StateSpace> {
    if sys.is_discrete() {
        return Err(NumError::invalid(
            "discretize",
            format!(
                "expected a continuous model, found a {} one; to change the sample time convert \
                 it back with to_continuous first",
                sys.domain_words()
            ),
        ));
    }
    check_dt(dt)?;
    let mut out = match method {
        Method::Zoh => {
            let (phi, g1, _) = hold_terms(&sys.a, &sys.b, dt)?;
            StateSpace::new(phi, g1, sys.c.clone(), sys.d.clone(), dt)?
        }
        Method::Foh => {
            let (phi, g1, g2) = hold_terms(&sys.a, &sys.b, dt)?;
            let bd = &g1 - &g2 + &phi * &g2;
            let dd = &sys.d + &sys.c * &g2;
            StateSpace::new(phi, bd, sys.c.clone(), dd, dt)?
        }
        Method::Tustin { prewarp } => tustin(sys, dt, prewarp)?,
        Method::Impulse => {
            if sys.d.iter().any(|&v| v != 0.0) {
                return Err(NumError::invalid(
                    "discretize",
                    "impulse-invariant discretization needs D = 0 (a feedthrough is an impulse \
                     in the impulse response, which cannot be sampled)",
                ));
            }
            let phi = expm(&(&sys.a * dt))?;
            let bd = &phi * &sys.b * dt;
            let dd = &sys.c * &sys.b * dt;
            StateSpace::new(phi, bd, sys.c.clone(), dd, dt)?
        }
        Method::Matched => matched(sys, dt)?,
    };
    out.names = sys.names.clone();
    if out.order() != sys.order() {
        out.names.states.clear();
    }
    Ok(out)
}

fn tustin(sys: &StateSpace, dt: f64, prewarp: Option<f64>) -> NumResult<StateSpace> {
    let t = match prewarp {
        None => dt,
        Some(w) => {
            let nyquist = std::f64::consts::PI / dt;
            if !(w.is_finite() && w > 0.0 && w < nyquist) {
                return Err(NumError::invalid(
                    "prewarp",
                    format!(
                        "expected a frequency in rad/s between 0 and the Nyquist frequency \
                         π/dt = {nyquist:.6}, found {w}"
                    ),
                ));
            }
            2.0 * (w * dt / 2.0).tan() / w
        }
    };
    let n = sys.order();
    if n == 0 {
        // A static gain maps to itself (nalgebra's LU panics on the empty I − A·T/2).
        return StateSpace::new(
            sys.a.clone(),
            sys.b.clone(),
            sys.c.clone(),
            sys.d.clone(),
            dt,
        );
    }
    let id = DMatrix::<f64>::identity(n, n);
    let m = &id - &sys.a * (t / 2.0);
    let p = &id + &sys.a * (t / 2.0);
    // nalgebra's SVD panics on an empty matrix; a model without states has none to check.
    let sv = if n == 0 {
        nalgebra::DVector::zeros(0)
    } else {
        m.clone().singular_values()
    };
    let smax = sv.iter().cloned().fold(0.0, f64::max);
    let smin = sv.iter().cloned().fold(f64::INFINITY, f64::min);
    if n > 0 && smin <= n as f64 * f64::EPSILON * smax {
        return Err(NumError::no_solution(
            "tustin discretization",
            format!(
                "A has an eigenvalue at 2/T = {:.6} (T = {t:.6}), which the bilinear map sends \
                 to infinity",
                2.0 / t
            ),
        ));
    }
    let lu = m.clone().lu();
    let solve = |rhs: &DMatrix<f64>| {
        lu.solve(rhs).ok_or_else(|| NumError::Singular {
            what: "I − A·T/2".into(),
            rcond: 0.0,
        })
    };
    let ad = solve(&p)?;
    let bd = solve(&(&sys.b * t))?;
    let cd = m
        .transpose()
        .lu()
        .solve(&sys.c.transpose())
        .ok_or_else(|| NumError::Singular {
            what: "I − A·T/2".into(),
            rcond: 0.0,
        })?
        .transpose();
    let dd = &sys.d + &sys.c * &bd * 0.5;
    StateSpace::new(ad, bd, cd, dd, dt)
}

/// Counts the roots within `tol` of `at` and returns the others.
fn split_roots(roots: &[Complex<f64>], at: Complex<f64>, tol: f64) -> (usize, Vec<Complex<f64>>) {
    let others: Vec<Complex<f64>> = roots
        .iter()
        .copied()
        .filter(|r| (r - at).norm() > tol)
        .collect();
    (roots.len() - others.len(), others)
}

/// Π (at − rᵢ), real for a conjugate-closed list.
fn product_at(roots: &[Complex<f64>], at: Complex<f64>) -> f64 {
    roots
        .iter()
        .fold(Complex::new(1.0, 0.0), |acc, r| acc * (at - r))
        .re
}

fn matched(sys: &StateSpace, dt: f64) -> NumResult<StateSpace> {
    if sys.inputs() != 1 || sys.outputs() != 1 {
        return Err(NumError::invalid(
            "discretize",
            format!(
                "matched pole–zero mapping needs a single-input single-output model, found {} \
                 inputs and {} outputs; discretize each channel, or use zoh",
                sys.inputs(),
                sys.outputs()
            ),
        ));
    }
    let tf = to_transfer_function(sys)?
        .into_iter()
        .next()
        .and_then(|r| r.into_iter().next())
        .ok_or_else(|| NumError::invalid("discretize", "the model has no channel"))?;
    let gain = tf.num[0];
    let n = tf.order();
    if gain == 0.0 || n == 0 {
        // A static gain, or a channel that is identically zero (its minimal realization
        // has no states).
        let k = if n == 0 { gain } else { 0.0 };
        return StateSpace::new(
            DMatrix::zeros(0, 0),
            DMatrix::zeros(0, 1),
            DMatrix::zeros(1, 0),
            DMatrix::from_element(1, 1, k),
            dt,
        );
    }
    let poles = polynomial_roots(&tf.den)?;
    let zeros = polynomial_roots(&tf.num)?;
    let scale = poles
        .iter()
        .chain(&zeros)
        .map(|z| z.norm())
        .fold(1.0, f64::max);
    let tol = 1e-10 * scale;
    let origin = Complex::new(0.0, 0.0);
    let one = Complex::new(1.0, 0.0);
    let (pole_origin, poles_rest) = split_roots(&poles, origin, tol);
    let (zero_origin, zeros_rest) = split_roots(&zeros, origin, tol);
    // Low-frequency gain: H(s) ≈ s^q·g₀ near 0, q = zeros at 0 − poles at 0.
    let q = zero_origin as i32 - pole_origin as i32;
    let g0 = gain * product_at(&zeros_rest, origin) / product_at(&poles_rest, origin);
    let mut zd: Vec<Complex<f64>> = zeros.iter().map(|z| (z * dt).exp()).collect();
    zd.extend(std::iter::repeat_n(
        Complex::new(-1.0, 0.0),
        n - zeros.len(),
    ));
    let pd: Vec<Complex<f64>> = poles.iter().map(|p| (p * dt).exp()).collect();
    let (_, zd_rest) = split_roots(&zd, one, tol * dt);
    let (_, pd_rest) = split_roots(&pd, one, tol * dt);
    // Hd(z) ≈ (z − 1)^q·kd·Π'(1 − ζ)/Π'(1 − π); match with s ≈ (z − 1)/dt.
    let kd = g0 * dt.powi(-q) * product_at(&pd_rest, one) / product_at(&zd_rest, one);
    if !kd.is_finite() {
        return Err(NumError::no_solution(
            "matched discretization",
            "the low-frequency gain cannot be matched (a pole maps onto a zero)",
        ));
    }
    let num: Vec<f64> = polynomial_from_roots(&zd)?.iter().map(|c| c * kd).collect();
    let den = polynomial_from_roots(&pd)?;
    from_transfer_function(&TransferFunction::new(&num, &den, dt)?)
}

/// The continuous model whose zero-order-hold discretization at the model's sample time
/// is `sysd` (the inverse of [`discretize`] with [`Method::Zoh`]).
///
/// Mathematics: e^{[A B; 0 0]·dt} = [Ad Bd; 0 I], so [A B] is the top block row of
/// log([Ad Bd; 0 I])/dt (principal real logarithm); C and D are kept. The logarithm is
/// computed by inverse scaling and squaring on the real Schur form
/// ([`crate::numeric::linalg::logm`]; Higham 2008, *Functions of Matrices*, ch. 11).
/// Cost about 60(n + m)³ flops.
///
/// A real continuous model exists only when Ad has no eigenvalue on the closed negative
/// real axis (0 included): such a mode cannot be a sample of e^{λt} with real dynamics of
/// the same order. The error then names the eigenvalue. The principal logarithm chooses
/// the continuous poles with |Im s| < π/dt: oscillations above the Nyquist frequency are
/// aliased and cannot be recovered.
///
/// Errors: a continuous input model; an eigenvalue of Ad on the closed negative real axis.
pub fn to_continuous(sysd: &StateSpace) -> NumResult<StateSpace> {
    if !sysd.is_discrete() {
        return Err(NumError::invalid(
            "to_continuous",
            "expected a discrete model (dt > 0), found a continuous one",
        ));
    }
    let (n, m, dt) = (sysd.order(), sysd.inputs(), sysd.dt);
    if let Some(z) = negative_real_axis_eigenvalue(&sysd.a, &LogmParams::default())? {
        let what = if z.norm() <= n as f64 * f64::EPSILON * sysd.a.norm().max(1.0) {
            "zero".to_string()
        } else {
            format!("{:.6}{:+.6}j", z.re, z.im)
        };
        return Err(NumError::no_solution(
            "to_continuous",
            format!(
                "Ad has the eigenvalue {what} on the closed negative real axis, so no real \
                 continuous model has this zero-order hold (no real matrix logarithm exists)\n\
                 hint: a sampled pole at z ≤ 0 comes from a non-hold discretization or from a \
                 mode faster than the sample rate"
            ),
        ));
    }
    let mut big = DMatrix::<f64>::zeros(n + m, n + m);
    big.view_mut((0, 0), (n, n)).copy_from(&sysd.a);
    big.view_mut((0, n), (n, m)).copy_from(&sysd.b);
    for k in 0..m {
        big[(n + k, n + k)] = 1.0;
    }
    let l = logm(&big)? / dt;
    let mut out = StateSpace::new(
        l.view((0, 0), (n, n)).into_owned(),
        l.view((0, n), (n, m)).into_owned(),
        sysd.c.clone(),
        sysd.d.clone(),
        0.0,
    )?;
    out.names = sysd.names.clone();
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::numeric::freq::response::frequency_response;

    use crate::numeric::testing::siso as model;

    #[test]
    fn zoh_of_first_order_closed_form() {
        // x' = −a x + b u: Ad = e^{−a dt}, Bd = b (1 − e^{−a dt})/a (closed form).
        let s = model(&[-2.0], &[3.0], &[1.0], 0.0);
        let d = discretize(&s, 0.1, Method::Zoh).unwrap();
        let e = (-0.2f64).exp();
        assert!((d.a[(0, 0)] - e).abs() < 1e-15);
        assert!((d.b[(0, 0)] - 1.5 * (1.0 - e)).abs() < 1e-15);
    }

    #[test]
    fn zoh_round_trip_through_to_continuous() {
        let s = model(&[0.0, 1.0, -4.0, -0.6], &[0.0, 1.0], &[1.0, 0.0], 0.2);
        let d = discretize(&s, 0.05, Method::Zoh).unwrap();
        let back = to_continuous(&d).unwrap();
        assert!((&back.a - &s.a).norm() < 1e-11, "{}", back.a);
        assert!((&back.b - &s.b).norm() < 1e-11, "{}", back.b);
    }

    #[test]
    fn to_continuous_names_negative_eigenvalue() {
        let s = StateSpace::new(
            DMatrix::from_element(1, 1, -0.5),
            DMatrix::from_element(1, 1, 1.0),
            DMatrix::from_element(1, 1, 1.0),
            DMatrix::zeros(1, 1),
            0.1,
        )
        .unwrap();
        let e = to_continuous(&s).unwrap_err().to_string();
        assert!(
            e.contains("-0.5") && e.contains("negative real axis"),
            "{e}"
        );
        let z = StateSpace {
            a: DMatrix::zeros(1, 1),
            ..s
        };
        let e = to_continuous(&z).unwrap_err().to_string();
        assert!(e.contains("zero"), "{e}");
    }

    #[test]
    fn discrete_input_and_bad_dt_are_refused() {
        let s = model(&[-1.0], &[1.0], &[1.0], 0.0);
        assert!(discretize(&s, 0.0, Method::Zoh).is_err());
        assert!(discretize(&s, f64::NAN, Method::Zoh).is_err());
        let d = discretize(&s, 0.1, Method::Zoh).unwrap();
        let e = discretize(&d, 0.1, Method::Zoh).unwrap_err().to_string();
        assert!(e.contains("expected a continuous model"), "{e}");
    }

    #[test]
    fn prewarped_tustin_matches_at_w0() {
        let s = model(&[0.0, 1.0, -9.0, -0.3], &[0.0, 1.0], &[1.0, 0.0], 0.0);
        let dt = 0.2;
        let w0 = 3.0;
        let d = discretize(&s, dt, Method::Tustin { prewarp: Some(w0) }).unwrap();
        let hc = frequency_response(&s, &[w0]).unwrap()[0][(0, 0)];
        let hd = frequency_response(&d, &[w0]).unwrap()[0][(0, 0)];
        assert!((hc - hd).norm() < 1e-10 * hc.norm(), "{hc} vs {hd}");
    }

    #[test]
    fn matched_first_order_and_integrator() {
        // 2/(s + 2): pole e^{−2dt}, zero at −1, Hd(1) = H(0) = 1 (closed form).
        let s = model(&[-2.0], &[1.0], &[2.0], 0.0);
        let dt = 0.1;
        let d = discretize(&s, dt, Method::Matched).unwrap();
        let p = (-2.0 * dt).exp();
        assert!((d.a.trace() - p).abs() < 1e-14);
        let g = crate::numeric::lti::properties::dc_gain(&d).unwrap()[(0, 0)];
        assert!((g - 1.0).abs() < 1e-13, "{g}");
        // 1/s: kd (z + 1)/(z − 1) with 2kd/dt·… → kd = dt/2.
        let i = model(&[0.0], &[1.0], &[1.0], 0.0);
        let d = discretize(&i, dt, Method::Matched).unwrap();
        assert!((d.d[(0, 0)] - dt / 2.0).abs() < 1e-14, "{}", d.d);
        let two = model(&[0.0, 1.0, 0.0, 0.0], &[0.0, 1.0], &[1.0, 0.0], 0.0);
        assert!(discretize(&two, dt, Method::Matched).is_ok());
    }

    #[test]
    fn impulse_needs_zero_d() {
        let s = model(&[-1.0], &[1.0], &[1.0], 0.5);
        assert!(discretize(&s, 0.1, Method::Impulse).is_err());
    }
}
