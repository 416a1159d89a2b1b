//! Rational transfer functions `G(s) = num(s) / den(s)` (or in `z` for discrete models),
//! coefficients highest power first.

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
