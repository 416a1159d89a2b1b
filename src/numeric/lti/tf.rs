//! Rational transfer functions `G(s) = num(s) / den(s)` (or in `z` for discrete models),
//! coefficients highest power first.

use crate::numeric::linalg::poly::{polynomial_add, polynomial_multiply};
use crate::numeric::{NumError, NumResult};
use nalgebra::Complex;

/// A single-input single-output transfer function.
#[derive(Debug, Clone, PartialEq)]
pub struct TransferFunction {
    /// Numerator coefficients, highest power first (leading zeros removed).
    pub num: Vec<f64>,
    /// Denominator coefficients, highest power first, monic (leading coefficient 1).
    pub den: Vec<f64>,
    /// Sample time in seconds; 0 for continuous.
    pub dt: f64,
}

fn strip(v: &[f64]) -> Vec<f64> {
    let first = v.iter().position(|&x| x != 0.0).unwrap_or(v.len());
    let s = v[first..].to_vec();
    if s.is_empty() {
        vec![0.0]
    } else {
        s
    }
}

impl TransferFunction {
    /// A validated transfer function: finite coefficients, a non-zero denominator, and a
    /// numerator degree not above the denominator's (a proper model, realizable in state
    /// space). The denominator is scaled to be monic, the numerator with it.
    pub fn new(num: &[f64], den: &[f64], dt: f64) -> NumResult<Self> {
        for (what, v) in [("numerator", num), ("denominator", den)] {
            if let Some(k) = v.iter().position(|x| !x.is_finite()) {
                return Err(NumError::invalid(
                    what,
                    format!("coefficient {k} is {}, expected a finite number", v[k]),
                ));
            }
        }
        if num.is_empty() {
            return Err(NumError::invalid(
                "numerator",
                "needs at least one coefficient",
            ));
        }
        let den = strip(den);
        if den == [0.0] {
            return Err(NumError::invalid("denominator", "is zero"));
        }
        let num = strip(num);
        if num.len() > den.len() {
            return Err(NumError::invalid(
                "transfer_function",
                format!(
                    "the numerator has degree {} above the denominator's {}: the model is \
                     improper and has no state-space realization",
                    num.len() - 1,
                    den.len() - 1
                ),
            ));
        }
        if !(dt.is_finite() && dt >= 0.0) {
            return Err(NumError::invalid(
                "dt",
                format!("sample time must be ≥ 0 and finite, found {dt}"),
            ));
        }
        let lead = den[0];
        Ok(TransferFunction {
            num: num.iter().map(|x| x / lead).collect(),
            den: den.iter().map(|x| x / lead).collect(),
            dt,
        })
    }

    /// Degree of the denominator (the order of a minimal realization when coprime).
    pub fn order(&self) -> usize {
        self.den.len() - 1
    }

    /// The value at a complex point (Horner's rule on both polynomials).
    pub fn eval(&self, s: Complex<f64>) -> Complex<f64> {
        horner(&self.num, s) / horner(&self.den, s)
    }

    /// The variable's name: `s` or `z`.
    pub fn variable(&self) -> char {
        if self.dt > 0.0 {
            'z'
        } else {
            's'
        }
    }
}

/// Horner evaluation of a real polynomial (highest power first) at a complex point.
pub fn horner(c: &[f64], s: Complex<f64>) -> Complex<f64> {
    c.iter().fold(Complex::new(0.0, 0.0), |acc, &x| acc * s + x)
}

/// Checks that two transfer functions share a time domain (sample times equal to 1e-12
/// relative), for the operations that combine them.
fn same_time(what: &str, g: &TransferFunction, h: &TransferFunction) -> NumResult<()> {
    if (g.dt - h.dt).abs() > 1e-12 * g.dt.abs().max(h.dt.abs()) {
        let words = |dt: f64| {
            if dt > 0.0 {
                format!("discrete with dt = {dt} s")
            } else {
                "continuous".to_string()
            }
        };
        return Err(NumError::invalid(
            what,
            format!(
                "the models have different time domains: {} and {}; convert one explicitly \
                 (discretize or to_continuous)",
                words(g.dt),
                words(h.dt)
            ),
        ));
    }
    Ok(())
}

impl TransferFunction {
    /// Series connection `G(s)·H(s)`: `num_g·num_h / (den_g·den_h)` by polynomial
    /// multiplication (common factors are not cancelled, so the order is the sum of the
    /// orders, as for the state-space interconnection). Cost O(n_g·n_h).
    ///
    /// **Errors.** Different time domains.
    pub fn series(&self, h: &TransferFunction) -> NumResult<TransferFunction> {
        same_time("series (g * h)", self, h)?;
        TransferFunction::new(
            &polynomial_multiply(&self.num, &h.num),
            &polynomial_multiply(&self.den, &h.den),
            self.dt,
        )
    }

    /// Parallel connection `G(s) + σ·H(s)` with `σ = ±1` (`sign > 0` adds):
    /// `(num_g·den_h + σ num_h·den_g) / (den_g·den_h)`, no cancellation. Cost O(n_g·n_h).
    ///
    /// **Errors.** Different time domains.
    pub fn parallel(&self, h: &TransferFunction, sign: f64) -> NumResult<TransferFunction> {
        let what = if sign > 0.0 {
            "parallel (g + h)"
        } else {
            "parallel (g - h)"
        };
        same_time(what, self, h)?;
        let a = polynomial_multiply(&self.num, &h.den);
        let b: Vec<f64> = polynomial_multiply(&h.num, &self.den)
            .into_iter()
            .map(|x| x * sign.signum())
            .collect();
        TransferFunction::new(
            &polynomial_add(&a, &b),
            &polynomial_multiply(&self.den, &h.den),
            self.dt,
        )
    }

    /// The gain-scaled model `k·G(s)` (numerator times `k`). Errors on a non-finite `k`.
    pub fn scaled(&self, k: f64) -> NumResult<TransferFunction> {
        let num: Vec<f64> = self.num.iter().map(|x| x * k).collect();
        TransferFunction::new(&num, &self.den, self.dt)
    }

    /// Negative feedback `G/(1 + G·H)` around `self` with `h` in the return path:
    /// `num_g·den_h / (den_g·den_h + num_g·num_h)`, no cancellation (so the closed-loop
    /// denominator is the characteristic polynomial of the loop). Cost O(n_g·n_h).
    ///
    /// **Errors.** Different time domains; an algebraically singular loop (`1 + G(∞)H(∞)
    /// = 0`: the closed-loop denominator loses its leading term, the interconnection is
    /// improper and has no state-space model).
    pub fn negative_feedback(&self, h: &TransferFunction) -> NumResult<TransferFunction> {
        same_time("feedback (close_loop)", self, h)?;
        let num = polynomial_multiply(&self.num, &h.den);
        let den = polynomial_add(
            &polynomial_multiply(&self.den, &h.den),
            &polynomial_multiply(&self.num, &h.num),
        );
        let scale = den
            .iter()
            .fold(0.0f64, |m, x| m.max(x.abs()))
            .max(f64::MIN_POSITIVE);
        if den.len() == self.den.len() + h.den.len() - 1
            && den.first().is_some_and(|x| x.abs() <= 1e-14 * scale)
        {
            return Err(NumError::Singular {
                what: "feedback loop (1 + G(∞)·H(∞) = 0: an algebraic loop without solution)"
                    .into(),
                rcond: 0.0,
            });
        }
        TransferFunction::new(&num, &den, self.dt)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn monic_and_stripped() {
        let g = TransferFunction::new(&[0.0, 2.0, 4.0], &[2.0, 6.0, 4.0], 0.0).unwrap();
        assert_eq!(g.num, vec![1.0, 2.0]);
        assert_eq!(g.den, vec![1.0, 3.0, 2.0]);
        // G(0) = 2/2 = 1.
        assert_eq!(g.eval(Complex::new(0.0, 0.0)), Complex::new(1.0, 0.0));
    }

    #[test]
    fn improper_and_zero_denominator_are_refused() {
        assert!(TransferFunction::new(&[1.0, 0.0, 0.0], &[1.0, 1.0], 0.0).is_err());
        assert!(TransferFunction::new(&[1.0], &[0.0, 0.0], 0.0).is_err());
        assert!(TransferFunction::new(&[f64::NAN], &[1.0], 0.0).is_err());
    }
}
