//! Property tests over seeded random matrices (proptest).
//! - exp(A)·exp(−A) = I (the exponential of commuting A, −A multiplies; a fact of the trade)
//! - det(AB) = det A · det B (multiplicativity of the determinant)
//! - eigenvalues are unchanged by a similarity transformation T⁻¹AT (a fact of the trade)

use nalgebra::DMatrix;
use proptest::prelude::*;
use statebook::numeric::linalg::{dense, eigen, expm};

fn matrix(n: usize, scale: f64) -> impl Strategy<Value = DMatrix<f64>> {
    proptest::collection::vec(-1.0f64..1.0, n * n)
        .prop_map(move |v| DMatrix::from_vec(n, n, v) * scale)
}

fn sized(max: usize, scale: f64) -> impl Strategy<Value = DMatrix<f64>> {
    (1..=max).prop_flat_map(move |n| matrix(n, scale))
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 64, .. ProptestConfig::default() })]

    #[test]
    fn exponential_inverse_is_exponential_of_negative(a in sized(12, 2.0)) {
        let n = a.nrows();
        let e = expm::expm(&a).unwrap();
        let f = expm::expm(&(-&a)).unwrap();
        let err = (&e * &f - DMatrix::identity(n, n)).norm();
        // Rounding grows with the condition of e^A: allow n·ε·‖e^A‖·‖e^−A‖·100.
        let bound = 100.0 * n as f64 * f64::EPSILON * e.norm() * f.norm();
        prop_assert!(err <= bound, "‖e^A e^−A − I‖ = {err:e} > {bound:e}");
    }

    #[test]
    fn determinant_is_multiplicative(a in sized(10, 1.0), seed in any::<u64>()) {
        let n = a.nrows();
        let b = DMatrix::from_fn(n, n, |i, j| ((seed as f64) * 1e-19 + (i * 7 + j * 3) as f64).sin());
        let lhs = dense::determinant(&(&a * &b)).unwrap();
        let rhs = dense::determinant(&a).unwrap() * dense::determinant(&b).unwrap();
        let scale = (a.norm() * b.norm()).powi(n as i32).max(1e-300);
        prop_assert!((lhs - rhs).abs() <= 1e-12 * scale, "{lhs} vs {rhs}");
    }

    #[test]
    fn similarity_keeps_eigenvalues(a in sized(10, 1.0), t in sized(10, 1.0)) {
        let n = a.nrows();
        // A well-conditioned T: identity plus a small random part of the same size.
        let t = DMatrix::identity(n, n) * 2.0 + t.resize(n, n, 0.0) * 0.5;
        let b = dense::solve(&t, &(&a * &t)).unwrap();
        let ea = eigen::eigenvalues(&a).unwrap();
        let eb = eigen::eigenvalues(&b).unwrap();
        // Compare as multisets (the sort is stable only up to the real-part tie tolerance).
        for z in &ea {
            let d = eb.iter().map(|w| (w - z).norm()).fold(f64::INFINITY, f64::min);
            prop_assert!(d <= 1e-8 * (1.0 + a.norm()), "eigenvalue {z} moved by {d:e}");
        }
    }
}
