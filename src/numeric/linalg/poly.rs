//! Real polynomials: characteristic polynomials, roots, evaluation and the arithmetic that
//! transfer functions need.
//!
//! Coefficients are stored highest power first (`[1, 6, 11, 6]` is s³ + 6s² + 11s + 6);
//! the empty slice is the zero polynomial.

use crate::numeric::check;
use crate::numeric::error::{NumError, NumResult};
use crate::numeric::linalg::dense::{balance_reducing_norm, hessenberg, schur_eigenvalues};
use crate::numeric::order;
use nalgebra::{Complex, DMatrix};

/// Largest degree [`polynomial_roots`] accepts (its companion matrix is degree × degree).
pub const MAX_ROOT_DEGREE: usize = 1000;

/// Relative tolerance of [`polynomial_from_roots`]: a root z counts as real when
/// |Im z| ≤ this·|z|, and w as the conjugate partner of z when |z − w̄| ≤ this·max(|z|, |w|).
pub const CONJUGATE_TOLERANCE: f64 = 1e-8;

/// Newton polishing steps applied to each root by [`polynomial_roots`].
const POLISH_STEPS: usize = 2;

/// Characteristic polynomial det(sI − A) of a square matrix, highest power first, leading 1.
///
/// Algorithm: exact power-of-two balancing when it lowers ‖A‖₁ (Parlett & Reinsch 1969),
/// orthogonal reduction to upper Hessenberg form H (both similarities, so the polynomial
/// is unchanged), then La Budde's recurrence on H (Wilkinson 1965, "The Algebraic
/// Eigenvalue Problem"; analysed in Rehman & Ipsen 2011, "La Budde's method for computing
/// characteristic polynomials"): with αᵢ = hᵢᵢ, βᵢ = hᵢ,ᵢ₋₁,
/// pᵢ(s) = (s − αᵢ) pᵢ₋₁(s) − Σ_{m=1}^{i−1} hᵢ₋ₘ,ᵢ βᵢ⋯βᵢ₋ₘ₊₁ pᵢ₋ₘ₋₁(s), p₀ = 1, and the
/// result is pₙ. No powers of A are formed. Cost about (10/3)n³ for the reduction plus
/// n³/6 for the recurrence.
///
/// Accuracy: Rehman & Ipsen 2011 derive running error bounds for the recurrence and show
/// that, unlike forming the polynomial from computed eigenvalues, it is not affected by
/// ill-conditioned eigenvalues; the tests observe c_n = (−1)ⁿ det A to a relative 2e-14
/// at n = 100. Coefficients that suffer cancellation are only accurate relative to the
/// size of the terms that cancel. Note that roots of
/// a high-degree polynomial are far more sensitive than the eigenvalues of A, so compute
/// eigenvalues from A, not from this polynomial. The 0×0 matrix gives `[1]`.
pub fn characteristic_polynomial(a: &DMatrix<f64>) -> NumResult<Vec<f64>> {
    let n = check::finite_square("A", a)?;
    if n == 0 {
        return Ok(vec![1.0]);
    }
    let balanced = balance_reducing_norm(a).map(|(b, _)| b);
    let (_, h) = hessenberg(balanced.as_ref().unwrap_or(a))?;
    // p[i] holds pᵢ with the lowest power first (length i + 1).
    let mut p: Vec<Vec<f64>> = Vec::with_capacity(n + 1);
    p.push(vec![1.0]);
    for i in 0..n {
        // 0-based: αᵢ = h[i][i]; βᵢ = h[i][i−1].
        let prev = &p[i];
        let mut next = vec![0.0; i + 2];
        for (k, c) in prev.iter().enumerate() {
            next[k + 1] += c;
            next[k] -= h[(i, i)] * c;
        }
        let mut beta_product = 1.0;
        for m in 1..=i {
            beta_product *= h[(i - m + 1, i - m)];
            if beta_product == 0.0 {
                break;
            }
            let factor = h[(i - m, i)] * beta_product;
            for (k, c) in p[i - m].iter().enumerate() {
                next[k] -= factor * c;
            }
        }
        p.push(next);
    }
    let mut out = p.pop().unwrap_or_else(|| vec![1.0]);
    out.reverse();
    check::finite(
        "characteristic polynomial",
        &DMatrix::from_row_slice(1, out.len(), &out),
    )
    .map_err(|_| {
        NumError::no_solution(
            "characteristic polynomial",
            "a coefficient overflows the floating-point range",
        )
    })?;
    Ok(out)
}

/// Fails unless every coefficient is finite.
fn finite_coefficients(coeffs: &[f64]) -> NumResult<()> {
    match coeffs.iter().position(|c| !c.is_finite()) {
        Some(k) => Err(NumError::invalid(
            format!("coefficient {k}"),
            format!("expected a finite number, found {}", coeffs[k]),
        )),
        None => Ok(()),
    }
}

/// The coefficients without leading (highest-power) exact zeros.
pub fn polynomial_trim(coeffs: &[f64]) -> Vec<f64> {
    let first = coeffs
        .iter()
        .position(|&c| c != 0.0)
        .unwrap_or(coeffs.len());
    coeffs[first..].to_vec()
}

/// p(z) by Horner's rule, coefficients highest power first (0 for the empty slice).
///
/// Cost 2 complex operations per coefficient. The rounding error is bounded by about
/// 2·deg·ε·Σ|cₖ||z|ᵏ (Higham 2002, "Accuracy and Stability of Numerical Algorithms",
/// ch. 5).
pub fn polynomial_eval(coeffs: &[f64], z: Complex<f64>) -> Complex<f64> {
    coeffs
        .iter()
        .fold(Complex::new(0.0, 0.0), |acc, &c| acc * z + c)
}

/// The derivative p′, highest power first (empty for a constant).
pub fn polynomial_derivative(coeffs: &[f64]) -> Vec<f64> {
    let d = coeffs.len().saturating_sub(1);
    coeffs[..d]
        .iter()
        .enumerate()
        .map(|(k, c)| c * (d - k) as f64)
        .collect()
}

/// p(z) and p′(z) together by Horner's rule.
fn eval_with_derivative(coeffs: &[f64], z: Complex<f64>) -> (Complex<f64>, Complex<f64>) {
    let zero = Complex::new(0.0, 0.0);
    coeffs
        .iter()
        .fold((zero, zero), |(p, dp), &c| (p * z + c, dp * z + p))
}

/// Up to [`POLISH_STEPS`] safeguarded Newton steps on p: a step is kept only if it lowers
/// |p|, and a root in the upper half-plane must stay there (so that its conjugate pair
/// stays exact); real roots stay real.
fn polish(coeffs: &[f64], mut z: Complex<f64>) -> Complex<f64> {
    let (mut pz, _) = eval_with_derivative(coeffs, z);
    for _ in 0..POLISH_STEPS {
        let (p, dp) = eval_with_derivative(coeffs, z);
        if dp.norm() == 0.0 || p.norm() == 0.0 {
            break;
        }
        let mut candidate = z - p / dp;
        if z.im == 0.0 {
            candidate.im = 0.0;
        } else if candidate.im <= 0.0 {
            break;
        }
        let (pc, _) = eval_with_derivative(coeffs, candidate);
        let improved = pc.norm() < pz.norm();
        if !improved || !candidate.re.is_finite() || !candidate.im.is_finite() {
            break;
        }
        z = candidate;
        pz = pc;
    }
    z
}

/// Roots of a real polynomial (coefficients highest power first), sorted by
/// [`crate::numeric::order`]; complex roots come in exact conjugate pairs.
///
/// Leading exact zeros are stripped (they do not change the polynomial); k trailing exact
/// zeros give k roots exactly at 0. The rest are the eigenvalues of the companion matrix of
/// the monic polynomial (first row −c₁/c₀ … −c_d/c₀, ones on the subdiagonal), balanced
/// (Parlett & Reinsch 1969) and reduced to real Schur form: this is backward stable in the
/// sense of Edelman & Murakami 1995, "Polynomial roots from companion matrix eigenvalues"
/// (Math. Comp. 64) — the roots are exact for a polynomial whose coefficients differ by
/// small multiples of ε times the coefficient size. Each root then gets up to two
/// safeguarded Newton steps on the original polynomial (kept only when they reduce |p|).
/// Cost about 10d³ for degree d, at most [`MAX_ROOT_DEGREE`].
///
/// Accuracy: a simple, well-separated root is accurate to about ε times its condition
/// number; a root of multiplicity m only to about ε^(1/m) relative (the cluster's mean is
/// much better). Errors: the zero polynomial (empty or all zeros), a non-finite
/// coefficient, or a leading coefficient so small that the monic coefficients overflow.
/// A non-zero constant has no roots (empty result).
pub fn polynomial_roots(coeffs: &[f64]) -> NumResult<Vec<Complex<f64>>> {
    finite_coefficients(coeffs)?;
    let p = polynomial_trim(coeffs);
    if p.is_empty() {
        return Err(NumError::invalid(
            "polynomial",
            "the zero polynomial has no well-defined roots",
        ));
    }
    let zeros_at_origin = p.iter().rev().take_while(|&&c| c == 0.0).count();
    let core = &p[..p.len() - zeros_at_origin];
    let degree = core.len() - 1;
    if degree > MAX_ROOT_DEGREE {
        return Err(NumError::TooLarge {
            what: format!("a polynomial of degree {degree}"),
            limit: MAX_ROOT_DEGREE,
        });
    }
    let mut roots: Vec<Complex<f64>> = vec![Complex::new(0.0, 0.0); zeros_at_origin];
    if degree == 1 {
        roots.push(Complex::new(-core[1] / core[0], 0.0));
    } else if degree > 1 {
        let mut companion = DMatrix::<f64>::zeros(degree, degree);
        for k in 0..degree {
            companion[(0, k)] = -core[k + 1] / core[0];
        }
        for k in 1..degree {
            companion[(k, k - 1)] = 1.0;
        }
        if companion.iter().any(|v| !v.is_finite()) {
            return Err(NumError::no_solution(
                "polynomial roots",
                "the leading coefficient is too small relative to the others (monic \
                 coefficients overflow)",
            ));
        }
        let eig = schur_eigenvalues(&companion, true)?;
        for z in eig {
            if z.im < 0.0 {
                continue; // added below as the partner of its upper-half twin
            }
            let polished = polish(core, z);
            roots.push(polished);
            if z.im > 0.0 {
                roots.push(polished.conj());
            }
        }
    }
    order::sort_eigenvalues(&mut roots);
    Ok(roots)
}

/// The monic real polynomial ∏(s − zₖ), highest power first (`[1]` for no roots).
///
/// The roots must be closed under conjugation within [`CONJUGATE_TOLERANCE`]: a root with
/// |Im z| ≤ tol·|z| is taken as real (its imaginary part dropped); every other root needs a
/// partner w with |z − w̄| ≤ tol·max(|z|, |w|) (greedy nearest match), and the pair
/// contributes the real quadratic s² − 2 Re(m) s + |m|² with m the mean of z and w̄.
/// Otherwise [`NumError::InvalidArgument`] names the unpaired root. Cost O(d²).
pub fn polynomial_from_roots(roots: &[Complex<f64>]) -> NumResult<Vec<f64>> {
    if let Some(k) = roots
        .iter()
        .position(|z| !z.re.is_finite() || !z.im.is_finite())
    {
        return Err(NumError::invalid(
            format!("root {k}"),
            format!(
                "expected a finite complex number, found {}{:+}j",
                roots[k].re, roots[k].im
            ),
        ));
    }
    let mut poly = vec![1.0];
    let mut upper = Vec::new();
    let mut lower = Vec::new();
    for &z in roots {
        if z.im.abs() <= CONJUGATE_TOLERANCE * z.norm() {
            poly = polynomial_multiply(&poly, &[1.0, -z.re]);
        } else if z.im > 0.0 {
            upper.push(z);
        } else {
            lower.push(z);
        }
    }
    let unpaired = |z: Complex<f64>| {
        NumError::invalid(
            "roots",
            format!(
                "root {}{:+}j has no complex-conjugate partner; a real polynomial needs \
                 conjugate pairs",
                z.re, z.im
            ),
        )
    };
    for u in upper {
        let best = lower
            .iter()
            .enumerate()
            .map(|(k, w)| (k, (u - w.conj()).norm()))
            .min_by(|x, y| x.1.total_cmp(&y.1));
        match best {
            Some((k, d)) if d <= CONJUGATE_TOLERANCE * u.norm().max(lower[k].norm()) => {
                let w = lower.swap_remove(k);
                let m = (u + w.conj()) * 0.5;
                poly = polynomial_multiply(&poly, &[1.0, -2.0 * m.re, m.norm_sqr()]);
            }
            _ => return Err(unpaired(u)),
        }
    }
    if let Some(&w) = lower.first() {
        return Err(unpaired(w));
    }
    Ok(poly)
}

/// Product of two polynomials (discrete convolution of the coefficients); empty if either
/// is empty (the zero polynomial). Cost len(a)·len(b).
pub fn polynomial_multiply(a: &[f64], b: &[f64]) -> Vec<f64> {
    if a.is_empty() || b.is_empty() {
        return Vec::new();
    }
    let mut out = vec![0.0; a.len() + b.len() - 1];
    for (i, x) in a.iter().enumerate() {
        for (j, y) in b.iter().enumerate() {
            out[i + j] += x * y;
        }
    }
    out
}

/// Sum of two polynomials, aligned at the constant term; length max(len a, len b). Leading
/// coefficients that cancel are kept as zeros: apply [`polynomial_trim`] when the degree
/// matters.
pub fn polynomial_add(a: &[f64], b: &[f64]) -> Vec<f64> {
    let n = a.len().max(b.len());
    let mut out = vec![0.0; n];
    for (k, x) in a.iter().enumerate() {
        out[n - a.len() + k] += x;
    }
    for (k, y) in b.iter().enumerate() {
        out[n - b.len() + k] += y;
    }
    out
}

/// Difference a − b, aligned at the constant term, as [`polynomial_add`].
pub fn polynomial_subtract(a: &[f64], b: &[f64]) -> Vec<f64> {
    let negated: Vec<f64> = b.iter().map(|y| -y).collect();
    polynomial_add(a, &negated)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::assert_close;
    use crate::numeric::linalg::dense::determinant;
    use crate::numeric::testing::Rng;

    const SIZES: [usize; 7] = [0, 1, 2, 3, 10, 57, 100];
    const EPS: f64 = f64::EPSILON;

    fn c(re: f64, im: f64) -> Complex<f64> {
        Complex::new(re, im)
    }

    /// Largest distance from each expected value to its nearest computed one, matching
    /// greedily (each computed value used once).
    fn match_error(found: &[Complex<f64>], expected: &[Complex<f64>]) -> f64 {
        assert_eq!(found.len(), expected.len());
        let mut pool = found.to_vec();
        let mut worst = 0.0f64;
        for e in expected {
            let (k, d) = pool
                .iter()
                .enumerate()
                .map(|(k, z)| (k, (z - e).norm()))
                .min_by(|x, y| x.1.total_cmp(&y.1))
                .expect("same length");
            worst = worst.max(d);
            pool.swap_remove(k);
        }
        worst
    }

    #[test]
    fn known_cubic_both_ways() {
        // (s+1)(s+2)(s+3) = s³ + 6s² + 11s + 6 (expanded by hand).
        let p = polynomial_from_roots(&[c(-1.0, 0.0), c(-2.0, 0.0), c(-3.0, 0.0)]).expect("real");
        assert_eq!(p, vec![1.0, 6.0, 11.0, 6.0]);
        let r = polynomial_roots(&p).expect("non-zero");
        assert_close!(
            r.iter().map(|z| z.re).collect::<Vec<_>>(),
            vec![-3.0, -2.0, -1.0]
        );
        assert!(r.iter().all(|z| z.im == 0.0));
        // Characteristic polynomial of its companion matrix gives it back.
        let comp =
            DMatrix::from_row_slice(3, 3, &[-6.0, -11.0, -6.0, 1.0, 0.0, 0.0, 0.0, 1.0, 0.0]);
        assert_close!(characteristic_polynomial(&comp).expect("finite"), p);
    }

    #[test]
    fn conjugate_pairs_are_exact_and_ordered() {
        // s² + 2s + 5 = (s + 1)² + 4: roots −1 ∓ 2j (quadratic formula), σ − jω first.
        let r = polynomial_roots(&[1.0, 2.0, 5.0]).expect("non-zero");
        assert_eq!(r[0], r[1].conj());
        assert!(r[0].im < 0.0);
        assert_close!(r[1].re, -1.0);
        assert_close!(r[1].im, 2.0);
        // (s² + 1)(s² + 4)(s + 0.5): ±j, ±2j, −0.5.
        let p = polynomial_multiply(
            &polynomial_multiply(&[1.0, 0.0, 1.0], &[1.0, 0.0, 4.0]),
            &[1.0, 0.5],
        );
        let r = polynomial_roots(&p).expect("non-zero");
        let expected = [
            c(-0.5, 0.0),
            c(0.0, -2.0),
            c(0.0, -1.0),
            c(0.0, 1.0),
            c(0.0, 2.0),
        ];
        assert!(match_error(&r, &expected) <= 10.0 * EPS);
        assert_eq!(r[0], c(-0.5, 0.0)); // order: ascending real part, then imaginary part
        assert_eq!(r[1].im.signum(), -1.0);
        for z in &r {
            assert!(r.contains(&z.conj()), "{z} lacks its exact conjugate");
        }
    }

    #[test]
    fn leading_and_trailing_zeros() {
        // 0·s³ + 0·s² + s − 1: root 1. s² (trailing zeros): double root at 0, exactly.
        assert_eq!(
            polynomial_roots(&[0.0, 0.0, 1.0, -1.0]).expect("non-zero"),
            vec![c(1.0, 0.0)]
        );
        assert_eq!(
            polynomial_roots(&[1.0, 0.0, 0.0]).expect("non-zero"),
            vec![c(0.0, 0.0); 2]
        );
        // 2s² − 4s = 2s(s − 2): roots 0 and 2.
        assert_eq!(
            polynomial_roots(&[2.0, -4.0, 0.0]).expect("non-zero"),
            vec![c(0.0, 0.0), c(2.0, 0.0)]
        );
        assert!(polynomial_roots(&[5.0]).expect("constant").is_empty());
        assert!(polynomial_roots(&[]).is_err());
        assert!(polynomial_roots(&[0.0, 0.0]).is_err());
        assert!(polynomial_roots(&[1.0, f64::NAN]).is_err());
        assert!(matches!(
            polynomial_roots(&[1e-300, 1e300, 1.0]),
            Err(NumError::NoSolution { .. })
        ));
    }

    #[test]
    fn wilkinson_like_products() {
        // ∏_{k=1}^{d} (s − k): integer coefficients (exact below 2⁵³ for d ≤ 15), roots
        // 1 … d, notoriously sensitive (Wilkinson 1965, ch. 2). The error of a polished
        // simple root is about ε·Σ|cᵢ|kⁱ/|p′(k)| (rounding in evaluating p near the root over
        // the slope); its maximum over k, computed in Python during development, is
        // 5.5e-13, 3.6e-9 and 2.6e-5 for d = 5, 10, 15: the bounds below.
        for &(d, tol) in &[(5usize, 1e-12), (10, 4e-9), (15, 3e-5)] {
            let roots: Vec<Complex<f64>> = (1..=d).map(|k| c(k as f64, 0.0)).collect();
            let p = polynomial_from_roots(&roots).expect("real");
            assert_eq!(p[1], -((d * (d + 1) / 2) as f64)); // −Σk (Vieta)
            let r = polynomial_roots(&p).expect("non-zero");
            let err = match_error(&r, &roots);
            assert!(err <= tol, "degree {d}: error {err} > {tol}");
        }
    }

    #[test]
    fn multiple_roots_behave_sanely() {
        // (s + 1)³ = s³ + 3s² + 3s + 1: a triple root splits by about ε^(1/3) ≈ 6e-6
        // (perturbation theory of multiple roots), yet each computed root has a tiny
        // residual: |p(z)| within 10ε·Σ|cᵢ||z|ⁱ (backward error of Horner evaluation).
        let p = [1.0, 3.0, 3.0, 1.0];
        let r = polynomial_roots(&p).expect("non-zero");
        assert_eq!(r.len(), 3);
        assert!(r.iter().all(|z| (z - c(-1.0, 0.0)).norm() <= 1e-4), "{r:?}");
        for z in &r {
            assert!(r.contains(&z.conj()));
            let scale: f64 = p
                .iter()
                .enumerate()
                .map(|(i, ci)| ci.abs() * z.norm().powi(3 - i as i32))
                .sum();
            assert!(polynomial_eval(&p, *z).norm() <= 10.0 * EPS * scale);
        }
        // (s² + 1)²: ±j double, split by about √ε.
        let r = polynomial_roots(&[1.0, 0.0, 2.0, 0.0, 1.0]).expect("non-zero");
        let expected = [c(0.0, -1.0), c(0.0, -1.0), c(0.0, 1.0), c(0.0, 1.0)];
        assert!(match_error(&r, &expected) <= 1e-7);
    }

    #[test]
    fn characteristic_polynomial_invariants() {
        // c₁ = −trace A and c_n = (−1)ⁿ det A (Vieta on det(sI − A)).
        let mut rng = Rng::new(31);
        for &n in &SIZES {
            let a = rng.matrix(n, n);
            let p = characteristic_polynomial(&a).expect("finite");
            assert_eq!(p.len(), n + 1);
            assert_eq!(p[0], 1.0);
            if n == 0 {
                continue;
            }
            assert_close!(p[1], -a.trace(), 1e-12 * n as f64, 0.0);
            let det = determinant(&a).expect("finite");
            let sign = if n % 2 == 0 { 1.0 } else { -1.0 };
            assert_close!(p[n], sign * det, 0.0, 1e-12 * n as f64); // observed ≤ 2e-14
        }
        // [[1, 2], [3, 4]]: s² − 5s − 2 (trace 5, det −2).
        let a = DMatrix::from_row_slice(2, 2, &[1.0, 2.0, 3.0, 4.0]);
        assert_close!(
            characteristic_polynomial(&a).expect("finite"),
            vec![1.0, -5.0, -2.0]
        );
        // Diagonal 1 … 8: the product ∏(s − k) (definition).
        let d = DMatrix::from_diagonal(&nalgebra::DVector::from_fn(8, |i, _| (i + 1) as f64));
        let roots: Vec<Complex<f64>> = (1..=8).map(|k| c(k as f64, 0.0)).collect();
        assert_close!(
            characteristic_polynomial(&d).expect("finite"),
            polynomial_from_roots(&roots).expect("real")
        );
        assert!(characteristic_polynomial(&DMatrix::zeros(2, 3)).is_err());
    }

    #[test]
    fn roots_of_characteristic_polynomial_reproduce_eigenvalues() {
        // Random 10×10: roots of det(sI − A) vs eigenvalues from the Schur form of A. The
        // polynomial route is less accurate (root conditioning), hence 1e-8.
        let mut rng = Rng::new(32);
        for _ in 0..5 {
            let a = rng.matrix(10, 10);
            let eig = schur_eigenvalues(&a, true).expect("finite");
            let roots = polynomial_roots(&characteristic_polynomial(&a).expect("finite"))
                .expect("non-zero");
            let err = match_error(&roots, &eig);
            assert!(err <= 1e-8, "error {err}");
        }
    }

    #[test]
    fn evaluation_and_arithmetic() {
        let p = [1.0, 6.0, 11.0, 6.0];
        assert_eq!(polynomial_eval(&p, c(2.0, 0.0)), c(60.0, 0.0)); // 8 + 24 + 22 + 6
        assert_eq!(polynomial_eval(&p, c(0.0, 1.0)), c(0.0, 10.0)); // −j − 6 + 11j + 6
        assert_eq!(polynomial_eval(&[], c(3.0, 0.0)), c(0.0, 0.0));
        assert_eq!(polynomial_derivative(&p), vec![3.0, 12.0, 11.0]);
        assert!(polynomial_derivative(&[4.0]).is_empty());
        assert_eq!(
            polynomial_multiply(&[1.0, 1.0], &[1.0, 2.0]),
            vec![1.0, 3.0, 2.0]
        );
        assert!(polynomial_multiply(&[], &[1.0]).is_empty());
        assert_eq!(
            polynomial_add(&[1.0, 3.0, 2.0], &[1.0]),
            vec![1.0, 3.0, 3.0]
        );
        assert_eq!(
            polynomial_subtract(&[1.0, 3.0], &[1.0, 3.0, 2.0]),
            vec![-1.0, -2.0, 1.0]
        );
        assert_eq!(
            polynomial_trim(&polynomial_subtract(&[1.0, 2.0], &[1.0, 1.0])),
            vec![1.0]
        );
    }

    #[test]
    fn from_roots_requires_conjugate_pairs() {
        // (s − 1 − j)(s − 1 + j) = s² − 2s + 2.
        let p = polynomial_from_roots(&[c(1.0, 1.0), c(1.0, -1.0 + 1e-12)]).expect("paired");
        assert_close!(p, vec![1.0, -2.0, 2.0], 2e-12, 0.0); // |m|² moves by ~1e-12
        let e = polynomial_from_roots(&[c(1.0, 1.0)]).expect_err("unpaired");
        assert!(e.to_string().contains("conjugate"), "{e}");
        assert!(polynomial_from_roots(&[c(1.0, 1.0), c(1.0, -1.1)]).is_err());
        assert!(polynomial_from_roots(&[c(1.0, -1.0)]).is_err());
        assert_eq!(polynomial_from_roots(&[]).expect("empty"), vec![1.0]);
        assert!(polynomial_from_roots(&[c(f64::NAN, 0.0)]).is_err());
        // Round trip on random conjugate-closed sets: roots(from_roots(z)) ≈ z.
        let mut rng = Rng::new(33);
        let mut z = Vec::new();
        for _ in 0..3 {
            let w = c(rng.normal(), rng.normal().abs() + 0.1);
            z.push(w);
            z.push(w.conj());
        }
        z.push(c(rng.normal(), 0.0));
        let r = polynomial_roots(&polynomial_from_roots(&z).expect("closed")).expect("non-zero");
        assert!(match_error(&r, &z) <= 1e-12);
    }
}
