//! Rational approximations of a transport delay `e^{−sτ}`.

use super::tf::TransferFunction;
use crate::numeric::{NumError, NumResult};

/// Highest order of a delay approximation (beyond it the coefficients span more than the
/// double range a monic denominator can hold for short delays, and nothing is gained).
pub const MAX_DELAY_ORDER: usize = 10;

/// The diagonal Padé approximant of order `n` of the delay `e^{−sτ}`:
/// `P(−sτ)/P(sτ)` with `P(x) = Σₖ cₖ xᵏ`, `cₖ = (2n−k)! n! / ((2n)! k! (n−k)!)`
/// (Padé 1892; e.g. Golub & Van Loan, *Matrix Computations*, §9.3.1 for the same
/// coefficients in the matrix exponential). All-pass: `|P(−jωτ)/P(jωτ)| = 1` at every
/// frequency, so only the phase is approximate; its error stays below 0.1° for
/// `ωτ ≤ 1` (n = 2), `ωτ ≤ 2` (n = 3), `ωτ ≤ 3` (n = 5) and grows fast beyond
/// ([`phase_error_deg`] gives it at any frequency).
///
/// **Errors.** `τ` not finite and > 0, `n` = 0 or above [`MAX_DELAY_ORDER`].
pub fn pade(tau: f64, n: usize) -> NumResult<TransferFunction> {
    if !(tau.is_finite() && tau > 0.0) {
        return Err(NumError::invalid(
            "seconds",
            format!("expected a delay > 0 s, found {tau}"),
        ));
    }
    if n == 0 || n > MAX_DELAY_ORDER {
        return Err(NumError::invalid(
            "order",
            format!("expected an order from 1 to {MAX_DELAY_ORDER}, found {n}"),
        ));
    }
    let c = coefficients(n);
    // Monic from the start, highest power first: the coefficient of sᵏ is
    // (cₖ/cₙ)·τ^(k−n) (the numerator's times (−1)ᵏ: `P(−sτ)`). Forming cₖτᵏ first would
    // underflow for a short delay (τ¹⁰ = 0 for τ = 1e−35) and silently drop the leading
    // power; this way a delay too short to represent overflows and is refused.
    let scale = |k: usize| c[k] / c[n] / tau.powi((n - k) as i32);
    let num: Vec<f64> = (0..=n)
        .rev()
        .map(|k| scale(k) * if k % 2 == 1 { -1.0 } else { 1.0 })
        .collect();
    let den: Vec<f64> = (0..=n).rev().map(scale).collect();
    if num.iter().chain(&den).any(|x| !x.is_finite()) {
        return Err(NumError::invalid(
            "seconds",
            format!(
                "a delay of {tau} s is too short for an approximation of order {n}: its \
                 coefficients overflow (use a lower order)"
            ),
        ));
    }
    TransferFunction::new(&num, &den, 0.0)
}

/// `cₖ = (2n−k)! n! / ((2n)! k! (n−k)!)`, k = 0…n, by the ratio
/// `cₖ₊₁/cₖ = (n−k) / ((2n−k)(k+1))` (no factorials formed).
fn coefficients(n: usize) -> Vec<f64> {
    let mut c = vec![1.0; n + 1];
    for k in 0..n {
        c[k + 1] = c[k] * (n - k) as f64 / (((2 * n - k) * (k + 1)) as f64);
    }
    c
}

/// The phase error in degrees of [`pade`]`(τ, n)` at `ω` rad/s: the approximant's phase
/// minus the delay's `−ωτ`, wrapped into (−180°, 180°].
pub fn phase_error_deg(tau: f64, n: usize, w: f64) -> f64 {
    let c = coefficients(n);
    let x = w * tau;
    // P(jx) = Σ cₖ (jx)ᵏ; the approximant's phase is −2·arg P(jx).
    let (mut re, mut im) = (0.0, 0.0);
    for (k, &ck) in c.iter().enumerate() {
        let v = ck * x.powi(k as i32);
        match k % 4 {
            0 => re += v,
            1 => im += v,
            2 => re -= v,
            _ => im -= v,
        }
    }
    let phase = -2.0 * im.atan2(re);
    let err = (phase + x).to_degrees();
    let wrapped = (err + 180.0).rem_euclid(360.0) - 180.0;
    if wrapped == -180.0 {
        180.0
    } else {
        wrapped
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::assert_close;

    #[test]
    fn coefficients_are_the_pade_ones() {
        assert_eq!(coefficients(1), [1.0, 0.5]);
        let c3 = coefficients(3);
        assert_close!(c3[1], 0.5, 0.0, 1e-15);
        assert_close!(c3[2], 0.1, 0.0, 1e-15);
        assert_close!(c3[3], 1.0 / 120.0, 0.0, 1e-15);
    }

    #[test]
    fn the_approximant_is_all_pass_and_its_phase_error_matches_the_table() {
        // Reference values: scipy/numpy evaluation of the same approximants.
        for (n, wt, err) in [
            (2, 2.0, 1.9717),
            (3, 3.0, 0.8566),
            (4, 5.0, 1.9936),
            (5, 5.0, 0.1506),
        ] {
            for tau in [1e-6, 1.0, 1e3] {
                let got = phase_error_deg(tau, n, wt / tau);
                assert!(
                    (got - err).abs() < 1e-3,
                    "n {n}, ωτ {wt}, τ {tau}: {got} vs {err}"
                );
            }
        }
        let g = pade(0.01, 3).expect("approximant");
        let at = |s, c: &[f64]| crate::numeric::linalg::poly::polynomial_eval(c, s);
        for w in [1.0, 100.0, 1e4] {
            let s = nalgebra::Complex::new(0.0, w);
            let mag = (at(s, &g.num) / at(s, &g.den)).norm();
            assert_close!(mag, 1.0, 0.0, 1e-12, "all-pass at {w} rad/s");
        }
    }

    #[test]
    fn short_and_long_delays_keep_their_order_or_are_refused() {
        // Rescaled time: the approximant in other units has the same degree and the same
        // all-pass magnitude; a delay too short for the doubles is refused.
        use crate::numeric::linalg::poly::polynomial_eval;
        for tau in [1e-9, 1e-3, 1.0, 1e4] {
            let g = pade(tau, 6).expect("approximant");
            assert_eq!((g.num.len(), g.den.len()), (7, 7), "τ = {tau}");
            let s = nalgebra::Complex::new(0.0, 2.0 / tau);
            let v = polynomial_eval(&g.num, s) / polynomial_eval(&g.den, s);
            assert_close!(v.norm(), 1.0, 0.0, 1e-12, "τ = {tau}");
            // The phase, not only the gain: unit gain at s = 0 and the delay's lag
            // (within the approximant's error) at ωτ = 2.
            let zero = nalgebra::Complex::new(0.0, 0.0);
            let dc = polynomial_eval(&g.num, zero) / polynomial_eval(&g.den, zero);
            assert_close!(dc.re, 1.0, 0.0, 1e-12, "unit gain at s = 0, τ = {tau}");
            assert!(
                (v.arg() + 2.0).abs() < 1e-4,
                "τ = {tau}: phase {} rad",
                v.arg()
            );
        }
        // Odd orders too: the numerator's leading sign is (−1)ⁿ.
        let g3 = pade(0.5, 3).expect("approximant");
        assert_eq!(g3.num[0].signum(), -1.0);
        let s = nalgebra::Complex::new(0.0, 2.0);
        let v = polynomial_eval(&g3.num, s) / polynomial_eval(&g3.den, s);
        assert!(
            (v.arg() + 1.0).abs() < 1e-3,
            "ωτ = 1: phase {} rad",
            v.arg()
        );
        assert!(
            pade(1e-35, 10).is_err(),
            "refused, not cut to a lower degree"
        );
    }

    #[test]
    fn bad_delays_and_orders_are_refused() {
        assert!(pade(0.0, 2).is_err());
        assert!(pade(f64::NAN, 2).is_err());
        assert!(pade(1.0, 0).is_err());
        assert!(pade(1.0, MAX_DELAY_ORDER + 1).is_err());
    }
}
