//! Summary statistics of a list of numbers: smallest, largest, sum, mean, median, sample
//! standard deviation and percentiles.
//!
//! Every routine refuses an empty list and a NaN entry (naming its index): a NaN would
//! otherwise vanish from a minimum or poison a mean without a word. Infinities are allowed
//! and give the limits one expects (the mean of `[1, inf]` is `inf`).

use super::error::{NumError, NumResult};

fn checked(_what: &str, x: &[f64]) -> NumResult<()> {
    if x.is_empty() {
        return Err(NumError::invalid(
            "x",
            "expected at least one number, found none",
        ));
    }
    if let Some(k) = x.iter().position(|v| v.is_nan()) {
        return Err(NumError::invalid(
            "x",
            format!("entry {k} is NaN, expected a number"),
        ));
    }
    Ok(())
}

/// The smallest entry.
pub fn min(x: &[f64]) -> NumResult<f64> {
    checked("min", x)?;
    Ok(x.iter().copied().fold(f64::INFINITY, f64::min))
}

/// The largest entry.
pub fn max(x: &[f64]) -> NumResult<f64> {
    checked("max", x)?;
    Ok(x.iter().copied().fold(f64::NEG_INFINITY, f64::max))
}

/// The sum by Neumaier's compensated summation (Neumaier 1974, "Rundungsfehleranalyse
/// einiger Verfahren zur Summation endlicher Summen", ZAMM 54), whose error bound does not
/// grow with the length of the list (about 2ε·Σ|xᵢ|), unlike a plain running sum.
pub fn sum(x: &[f64]) -> NumResult<f64> {
    checked("sum", x)?;
    Ok(neumaier(x))
}

fn neumaier(x: &[f64]) -> f64 {
    let mut s = 0.0_f64;
    let mut c = 0.0_f64;
    for &v in x {
        let t = s + v;
        if s.abs() >= v.abs() {
            c += (s - t) + v;
        } else {
            c += (v - t) + s;
        }
        s = t;
    }
    if s.is_finite() {
        s + c
    } else {
        s
    }
}

/// The arithmetic mean (compensated sum divided by the count).
pub fn mean(x: &[f64]) -> NumResult<f64> {
    checked("mean", x)?;
    Ok(neumaier(x) / x.len() as f64)
}

/// The sample standard deviation √(Σ(xᵢ − x̄)² / (n − 1)) by the two-pass algorithm with
/// the correction term of Chan, Golub & LeVeque 1983 ("Algorithms for computing the
/// sample variance: analysis and recommendations", The American Statistician 37); it
/// needs at least two numbers.
pub fn std_dev(x: &[f64]) -> NumResult<f64> {
    checked("std_dev", x)?;
    if x.len() < 2 {
        return Err(NumError::invalid(
            "x",
            "the sample standard deviation needs at least two numbers, found one",
        ));
    }
    let m = neumaier(x) / x.len() as f64;
    if !m.is_finite() {
        return Ok(f64::NAN);
    }
    let d: Vec<f64> = x.iter().map(|v| v - m).collect();
    let sq: Vec<f64> = d.iter().map(|v| v * v).collect();
    let corr = neumaier(&d);
    let var = (neumaier(&sq) - corr * corr / x.len() as f64) / (x.len() - 1) as f64;
    Ok(var.max(0.0).sqrt())
}

/// The p-th percentile (p in [0, 100]) by linear interpolation between the order
/// statistics: position h = (n − 1)·p/100 in the sorted list, value
/// x₍⌊h⌋₎ + (h − ⌊h⌋)(x₍⌊h⌋+1₎ − x₍⌊h⌋₎) — definition 7 of Hyndman & Fan 1996 ("Sample
/// quantiles in statistical packages", The American Statistician 50). p = 50 is the median.
pub fn percentile(x: &[f64], p: f64) -> NumResult<f64> {
    checked("percentile", x)?;
    if !(0.0..=100.0).contains(&p) {
        return Err(NumError::invalid(
            "p",
            format!("expected p between 0 and 100, found {p}"),
        ));
    }
    let mut s = x.to_vec();
    s.sort_by(f64::total_cmp);
    let h = (s.len() - 1) as f64 * p / 100.0;
    let lo = h.floor() as usize;
    let hi = (lo + 1).min(s.len() - 1);
    let f = h - lo as f64;
    if f == 0.0 || s[lo] == s[hi] {
        return Ok(s[lo]);
    }
    Ok(s[lo] + f * (s[hi] - s[lo]))
}

/// The median (the 50th percentile: the middle value, or the mean of the two middle ones).
pub fn median(x: &[f64]) -> NumResult<f64> {
    checked("median", x)?;
    percentile(x, 50.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn closed_forms() {
        let x = [4.0, 1.0, 3.0, 2.0];
        assert_eq!(min(&x).ok(), Some(1.0));
        assert_eq!(max(&x).ok(), Some(4.0));
        assert_eq!(sum(&x).ok(), Some(10.0));
        assert_eq!(mean(&x).ok(), Some(2.5));
        assert_eq!(median(&x).ok(), Some(2.5));
        assert_eq!(median(&[3.0, 1.0, 2.0]).ok(), Some(2.0));
        // Sample standard deviation of 1, 2, 3, 4: √(5/3) (Σ(x − 2.5)² = 5, n − 1 = 3).
        let s = std_dev(&x).unwrap_or(f64::NAN);
        assert!((s - (5.0_f64 / 3.0).sqrt()).abs() < 1e-15);
        // Definition 7: p = 25 on 1..4 is at h = 0.75, between 1 and 2.
        assert_eq!(percentile(&x, 25.0).ok(), Some(1.75));
        assert_eq!(percentile(&x, 0.0).ok(), Some(1.0));
        assert_eq!(percentile(&x, 100.0).ok(), Some(4.0));
    }

    #[test]
    fn nan_and_empty_are_refused() {
        assert!(min(&[1.0, f64::NAN]).is_err());
        assert!(max(&[f64::NAN]).is_err());
        assert!(mean(&[]).is_err());
        assert!(std_dev(&[1.0]).is_err());
        assert!(percentile(&[1.0], 101.0).is_err());
        assert_eq!(max(&[1.0, f64::INFINITY]).ok(), Some(f64::INFINITY));
    }

    #[test]
    fn compensated_sum_and_shifted_variance() {
        // 1 + 1e-16·10⁴ terms: a plain running sum stays at 1; the true sum is 1 + 1e-12.
        let mut x = vec![1.0];
        x.extend(std::iter::repeat_n(1e-16, 10_000));
        let s = sum(&x).unwrap_or(f64::NAN);
        assert!((s - (1.0 + 1e-12)).abs() < 1e-15, "{s}");
        // A large offset does not destroy the variance: 1e9 + {1, 2, 3, 4}.
        let y: Vec<f64> = [1.0, 2.0, 3.0, 4.0].iter().map(|v| v + 1e9).collect();
        let sd = std_dev(&y).unwrap_or(f64::NAN);
        assert!((sd - (5.0_f64 / 3.0).sqrt()).abs() < 1e-6, "{sd}");
    }
}
