//! The one ordering of eigenvalues, poles and zeros used everywhere.
//!
//! Ascending real part, then ascending imaginary part, so a conjugate pair appears as
//! `σ − jω` then `σ + jω`. Real parts that agree to within `1e-12·max(1, |λ|)` count as
//! equal for the sort (LANGUAGE.md § Conventions).

use nalgebra::Complex;
use std::cmp::Ordering;

/// Relative tolerance under which two real parts count as equal when sorting.
pub const REAL_PART_TIE: f64 = 1e-12;

/// Compares two eigenvalues by the convention above.
pub fn compare(a: &Complex<f64>, b: &Complex<f64>) -> Ordering {
    let scale = 1.0f64.max(a.norm()).max(b.norm());
    if (a.re - b.re).abs() <= REAL_PART_TIE * scale {
        a.im.partial_cmp(&b.im).unwrap_or(Ordering::Equal)
    } else {
        a.re.partial_cmp(&b.re).unwrap_or(Ordering::Equal)
    }
}

/// Sorts eigenvalues in place by [`compare`]: first by exact real part, then within
/// runs of tolerance-equal real parts by imaginary part. Deterministic for a given input.
pub fn sort_eigenvalues(values: &mut [Complex<f64>]) {
    let perm = sorting_permutation(values);
    let sorted: Vec<Complex<f64>> = perm.iter().map(|&i| values[i]).collect();
    values.copy_from_slice(&sorted);
}

fn tie(a: &Complex<f64>, b: &Complex<f64>) -> bool {
    let scale = 1.0f64.max(a.norm()).max(b.norm());
    (a.re - b.re).abs() <= REAL_PART_TIE * scale
}

/// Returns the permutation that sorts `values` by [`compare`] (stable for exact ties).
pub fn sorting_permutation(values: &[Complex<f64>]) -> Vec<usize> {
    let mut sorted: Vec<(usize, Complex<f64>)> = values.iter().copied().enumerate().collect();
    sorted.sort_by(|a, b| {
        a.1.re
            .partial_cmp(&b.1.re)
            .unwrap_or(Ordering::Equal)
            .then(a.1.im.partial_cmp(&b.1.im).unwrap_or(Ordering::Equal))
    });
    let mut start = 0;
    while start < sorted.len() {
        let mut end = start + 1;
        while end < sorted.len() && tie(&sorted[end - 1].1, &sorted[end].1) {
            end += 1;
        }
        sorted[start..end].sort_by(|a, b| a.1.im.partial_cmp(&b.1.im).unwrap_or(Ordering::Equal));
        start = end;
    }
    sorted.into_iter().map(|(i, _)| i).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn conjugate_pair_negative_imaginary_first() {
        let mut v = vec![
            Complex::new(-1.0, 2.0),
            Complex::new(-3.0, 0.0),
            Complex::new(-1.0, -2.0),
        ];
        sort_eigenvalues(&mut v);
        assert_eq!(
            v,
            vec![
                Complex::new(-3.0, 0.0),
                Complex::new(-1.0, -2.0),
                Complex::new(-1.0, 2.0)
            ]
        );
    }

    #[test]
    fn near_equal_real_parts_sort_by_imaginary() {
        let mut v = vec![Complex::new(-1.0, 2.0), Complex::new(-1.0 - 1e-15, -2.0)];
        sort_eigenvalues(&mut v);
        assert_eq!(v[0].im, -2.0);
        let p = sorting_permutation(&[Complex::new(-1.0 + 1e-15, 2.0), Complex::new(-1.0, -2.0)]);
        assert_eq!(p, vec![1, 0]);
    }
}
