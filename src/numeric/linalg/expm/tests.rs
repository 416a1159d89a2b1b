use super::*;
use crate::assert_close;
use crate::numeric::testing::Rng;

const SIZES: [usize; 7] = [0, 1, 2, 3, 10, 57, 100];
const EPS: f64 = f64::EPSILON;

fn id(n: usize) -> DMatrix<f64> {
    DMatrix::identity(n, n)
}

fn rel(a: &DMatrix<f64>, b: &DMatrix<f64>) -> f64 {
    (a - b).norm() / b.norm().max(1e-300)
}

#[test]
fn rotation_generator_gives_rotation() {
    // exp([[0, −ω], [ω, 0]]) = [[cos ω, −sin ω], [sin ω, cos ω]] (closed form, CHECKS.md
    // § 2). Rounding in the s squarings grows the error about linearly in ω.
    for &w in &[1e-8f64, 0.01, 0.5, 1.0, 3.0, 10.0, 100.0] {
        let g = DMatrix::from_row_slice(2, 2, &[0.0, -w, w, 0.0]);
        let r = DMatrix::from_row_slice(2, 2, &[w.cos(), -w.sin(), w.sin(), w.cos()]);
        let e = expm(&g).expect("finite");
        assert_close!(e, r, 20.0 * EPS * w.max(1.0), 0.0);
    }
}

#[test]
fn diagonal_gives_scalar_exponentials() {
    // exp(diag(d)) = diag(e^d) (power series term by term).
    let mut rng = Rng::new(11);
    for &n in &SIZES {
        let d: Vec<f64> = (0..n).map(|_| 10.0 * (rng.uniform() - 0.5)).collect();
        let a = DMatrix::from_diagonal(&nalgebra::DVector::from_vec(d.clone()));
        let e = expm(&a).expect("finite");
        let expected = DMatrix::from_diagonal(&nalgebra::DVector::from_iterator(
            n,
            d.iter().map(|v| v.exp()),
        ));
        // Relative 1e-13: qₘ(x) = pₘ(−x) is evaluated with cancellation that amplifies
        // rounding by up to pₘ(|x|)/|pₘ(−|x|)| ≈ e^|x| ≈ 200 near ‖A‖₁ = θ₁₃ (observed
        // ≤ 2.2e-14 for scalars in [−5.4, 5.4]).
        assert_close!(e, expected, 0.0, 1e-13);
    }
    // Scalars spanning the range: e^x for x = −700 … 700 (relative error of the
    // squarings grows with s ≈ log₂|x|).
    for &x in &[-700.0, -30.0, -1.0, 1e-10, 0.3, 1.0, 30.0, 700.0] {
        let e = expm(&DMatrix::from_element(1, 1, x)).expect("finite");
        assert_close!(e[(0, 0)], f64::exp(x), 0.0, 2e-13);
    }
}

#[test]
fn nilpotent_series_is_exact() {
    // N strictly upper triangular ⇒ N^n = 0 and e^N = Σ_{k<n} N^k/k! exactly.
    let mut rng = Rng::new(12);
    for &n in &[2usize, 3, 10, 57, 100] {
        let mut nil = rng.matrix(n, n) / (n as f64);
        for j in 0..n {
            for i in j..n {
                nil[(i, j)] = 0.0;
            }
        }
        let mut series = id(n);
        let mut term = id(n);
        for k in 1..n {
            term = &term * &nil / (k as f64);
            series += &term;
        }
        let e = expm(&nil).expect("finite");
        assert!(
            rel(&e, &series) <= 100.0 * n as f64 * EPS,
            "n={n}: {}",
            rel(&e, &series)
        );
    }
}

#[test]
fn exp_a_times_exp_minus_a_is_identity() {
    // e^A e^−A = I (A commutes with −A); error bound of order ε·‖e^A‖‖e^−A‖.
    let mut rng = Rng::new(13);
    for &n in &SIZES {
        for &scale in &[0.01, 1.0, 4.0] {
            let a = rng.matrix(n, n) * (scale / (n.max(1) as f64).sqrt());
            let e = expm(&a).expect("finite");
            let f = expm(&(-&a)).expect("finite");
            let err = (&e * &f - id(n)).norm();
            let bound = 1000.0 * (n.max(1) as f64) * EPS * e.norm() * f.norm();
            assert!(err <= bound, "n={n}, scale={scale}: {err} > {bound}");
        }
    }
}

#[test]
fn badly_scaled_matrix() {
    // exp([[a, b], [0, c]]) = [[e^a, b(e^a − e^c)/(a − c)], [0, e^c]] (upper-triangular
    // closed form, from the series). With D = diag(1, 1e8, 1e-8) and
    // exp(D T D⁻¹) = D exp(T) D⁻¹ the entries span 16 decades.
    let (a, b, c) = (-1.0f64, 1e6f64, -2.0f64);
    let t = DMatrix::from_row_slice(2, 2, &[a, b, 0.0, c]);
    let expected = DMatrix::from_row_slice(
        2,
        2,
        &[a.exp(), b * (a.exp() - c.exp()) / (a - c), 0.0, c.exp()],
    );
    assert_close!(expm(&t).expect("finite"), expected, 1e-300, 1e-12);

    let base = DMatrix::from_row_slice(3, 3, &[-1.0, 2.0, 0.5, 0.0, -3.0, 1.0, 0.0, 0.0, -0.5]);
    let d = [1.0, 1e8, 1e-8];
    let scaled = DMatrix::from_fn(3, 3, |i, j| base[(i, j)] * d[i] / d[j]);
    let e_base = expm(&base).expect("finite");
    let expected = DMatrix::from_fn(3, 3, |i, j| e_base[(i, j)] * d[i] / d[j]);
    // Entrywise relative accuracy needs the balancing.
    assert_close!(expm(&scaled).expect("finite"), expected, 0.0, 1e-13);
    let unbalanced = expm_with(&scaled, &ExpmParams { balance: false }).expect("finite");
    assert!(unbalanced.iter().all(|v| v.is_finite()));
}

#[test]
fn agrees_with_nalgebra_exp() {
    // nalgebra's exp() (an independent scaling-and-squaring implementation) as reference.
    let mut rng = Rng::new(14);
    for &n in &SIZES[1..] {
        for &scale in &[0.1, 1.0, 10.0] {
            let a = rng.matrix(n, n) * (scale / (n as f64).sqrt());
            let mine = expm(&a).expect("finite");
            let theirs = a.exp();
            let r = rel(&mine, &theirs);
            assert!(r <= 1e-12 * scale.max(1.0), "n={n}, scale={scale}: {r}");
        }
    }
}

#[test]
fn van_loan_block_gives_integral() {
    // exp([[A, B], [0, 0]]) = [[e^A, ∫₀¹ e^{As} ds B], [0, I]] (Van Loan 1978,
    // "Computing integrals involving the matrix exponential", IEEE Trans. Automat.
    // Control 23(3)), and ∫₀¹ e^{As} ds = A⁻¹(e^A − I) for invertible A.
    let mut rng = Rng::new(15);
    for &n in &[1usize, 2, 3, 10, 57] {
        let m = 2;
        let a = rng.matrix(n, n) / (n as f64).sqrt() - id(n) * 2.0;
        let b = rng.matrix(n, m);
        let mut big = DMatrix::zeros(n + m, n + m);
        big.view_mut((0, 0), (n, n)).copy_from(&a);
        big.view_mut((0, n), (n, m)).copy_from(&b);
        let e = expm(&big).expect("finite");
        let ea = expm(&a).expect("finite");
        let integral = a
            .clone()
            .lu()
            .solve(&((&ea - id(n)) * &b))
            .expect("invertible");
        assert!(rel(&e.view((0, n), (n, m)).into_owned(), &integral) <= 1e-12);
        assert!(rel(&e.view((0, 0), (n, n)).into_owned(), &ea) <= 1e-13);
        assert_close!(e.view((n, n), (m, m)).into_owned(), id(m), 0.0, 0.0);
        assert_close!(
            e.view((n, 0), (m, n)).into_owned(),
            DMatrix::zeros(m, n),
            0.0,
            0.0
        );
    }
}

#[test]
fn pade_coefficients_follow_the_closed_form() {
    // bₖ/b₀ = (2m−k)! m! / ((2m)! k! (m−k)!) · b₀ … i.e. ratios b_{k+1}/b_k =
    // (m−k)/((2m−k)(k+1)) (Higham 2005, § 2, from the factorial formula).
    let all: [&[f64]; 5] = [&B3, &B5, &B7, &B9, &B13];
    for b in all {
        let m = b.len() - 1;
        for k in 0..m {
            let ratio = (m - k) as f64 / (((2 * m - k) * (k + 1)) as f64);
            assert_close!(b[k + 1] / b[k], ratio, 0.0, 4.0 * EPS);
        }
    }
}

#[test]
fn leading_error_coefficients_match_the_factorial_formula() {
    // 1/|c₂ₘ₊₁| = (2m)! (2m+1)! / (m!)², evaluated exactly in integers (Python).
    let exact = [
        (3, 100800.0),
        (5, 10059033600.0),
        (7, 4487938430976000.0),
        (9, 5.914384781877412e21),
        (13, 1.1325077560602111e35),
    ];
    for (m, recip) in exact {
        let got = (-log2_leading_error_coefficient(m)).exp2();
        assert_close!(got, recip, 0.0, 1e-13);
    }
}

#[test]
fn bracketed_ell_equals_the_exact_value() {
    // ℓ from the Collatz–Wielandt brackets against ℓ from the exact norm of every power,
    // over dense, graded, non-negative, triangular, nilpotent and reducible matrices.
    let exact_ell = |a: &DMatrix<f64>, m: usize, s: i32| {
        let mut exact = AbsPowerNorms::new(a);
        let l = exact.log2_norm(2 * m + 1);
        let log2_a = one_norm(a).log2();
        let p = (2 * m + 1) as f64;
        let log2_alpha = log2_leading_error_coefficient(m) + l - p * s as f64 - (log2_a - s as f64);
        let v = ((log2_alpha + 53.0) / (2 * m) as f64).ceil();
        if v.is_finite() {
            v.max(0.0) as i32
        } else {
            0
        }
    };
    let mut rng = Rng::new(21);
    let mut cases: Vec<DMatrix<f64>> = Vec::new();
    for &n in &[1usize, 2, 5, 20, 50] {
        for &scale in &[0.01, 1.0, 8.0, 100.0] {
            cases.push(rng.matrix(n, n) * scale);
            cases.push(rng.matrix(n, n).abs() * scale);
            let mut tri = rng.matrix(n, n) * scale;
            for j in 0..n {
                for i in j + 1..n {
                    tri[(i, j)] = 0.0;
                }
            }
            cases.push(tri.clone());
            for i in 0..n {
                tri[(i, i)] = 0.0; // strictly triangular: nilpotent
            }
            cases.push(tri);
            let g = DMatrix::from_fn(n, n, |i, j| {
                rng.normal() * 10f64.powf((i as f64 - j as f64) * 0.8) * scale
            });
            cases.push(g);
        }
    }
    // Reducible: a zero column and a zero row.
    let mut red = rng.matrix(6, 6);
    red.column_mut(2).fill(0.0);
    red.row_mut(4).fill(0.0);
    cases.push(red);
    for a in &cases {
        if one_norm(a) == 0.0 {
            continue;
        }
        for m in [3usize, 5, 7, 9, 13] {
            for s in [0, 1, 3] {
                let mut bracketed = AbsPowerNorms::new(a);
                let got = bracketed.ell(m, s, one_norm(a).log2());
                assert_eq!(got, exact_ell(a, m, s), "m {m}, s {s}, A = {a}");
            }
        }
    }
}

#[test]
fn power_estimates_choose_the_cheaper_degree() {
    // A normal matrix with ‖A‖₁ far above its spectral radius: the 2005 rule scales,
    // the ‖Aᵖ‖^(1/p) estimates see ρ(A) and need no squaring. A = Q diag(λ) Qᵀ with
    // Q a Householder reflector I − 2vvᵀ (v = e/√n), so e^A = Q diag(e^λ) Qᵀ.
    let n = 40;
    let lambda: Vec<f64> = (0..n).map(|k| -1.0 + 2.0 * k as f64 / n as f64).collect();
    let v = DMatrix::from_element(n, 1, 1.0 / (n as f64).sqrt());
    let q = id(n) - &v * v.transpose() * 2.0;
    let diag = |f: &dyn Fn(f64) -> f64| {
        DMatrix::from_diagonal(&nalgebra::DVector::from_iterator(
            n,
            lambda.iter().map(|x| f(*x)),
        ))
    };
    let a = &q * diag(&|x| x) * &q;
    let expected = &q * diag(&|x| x.exp()) * &q;
    let (x, s) = pade_by_power_estimates(&a).expect("finite");
    assert_eq!(s, 0, "no squaring for spectral radius 1");
    assert!(rel(&x, &expected) <= 1e-14, "{}", rel(&x, &expected));
    let balanced = expm(&a).expect("finite");
    assert!(
        rel(&balanced, &expected) <= 1e-13,
        "{}",
        rel(&balanced, &expected)
    );
}

#[test]
fn strongly_non_normal_matrix_is_not_overscaled() {
    // exp([[a, b], [0, a]]) = e^a [[1, b], [0, 1]] (series of a Jordan block). The 2005
    // rule takes s ≈ log₂ b squarings; the 2009 estimates need far fewer, and with the
    // exact triangular band the result keeps full relative accuracy in every entry
    // (Al-Mohy & Higham 2009, §§ 1–2).
    for &b in &[1e3, 1e8, 1e16] {
        let a = DMatrix::from_row_slice(2, 2, &[1.0, b, 0.0, 1.0]);
        let e1 = 1f64.exp();
        let expected = DMatrix::from_row_slice(2, 2, &[e1, e1 * b, 0.0, e1]);
        let got = expm_with(&a, &ExpmParams { balance: false }).expect("finite");
        let (_, s) = pade_by_power_estimates(&a).expect("finite");
        assert_close!(got, expected, 0.0, 1e-14);
        let s_2005 = ((b + 1.0) / THETA[4].1).log2().ceil() as i32;
        assert!(s < s_2005, "b = {b}: s = {s}, the 2005 rule takes {s_2005}");
    }
}

#[test]
fn huge_norms_take_the_norm_rule_and_agree() {
    // Above 2^60 the norm rule runs; just below both rules must agree on e^(c·N) for
    // a nilpotent N (exact series I + cN).
    for &c in &[2f64.powi(59), 2f64.powi(62)] {
        let a = DMatrix::from_row_slice(2, 2, &[0.0, c, 0.0, 0.0]);
        let expected = DMatrix::from_row_slice(2, 2, &[1.0, c, 0.0, 1.0]);
        assert_close!(expm(&a).expect("finite"), expected, 0.0, 1e-15);
    }
}

#[test]
fn errors_and_edge_cases() {
    assert_eq!(expm(&DMatrix::zeros(0, 0)).expect("empty").shape(), (0, 0));
    assert!(matches!(
        expm(&DMatrix::zeros(2, 3)),
        Err(NumError::NotSquare { .. })
    ));
    let mut a = id(2);
    a[(0, 1)] = f64::INFINITY;
    assert!(matches!(expm(&a), Err(NumError::NotFinite { .. })));
    // e^1000 exceeds f64::MAX ≈ 1.8e308.
    assert!(matches!(
        expm(&DMatrix::from_element(1, 1, 1000.0)),
        Err(NumError::NoSolution { .. })
    ));
    // e^(−1e300) underflows to 0 legitimately; huge entries must not hang balancing.
    assert_eq!(
        expm(&DMatrix::from_element(1, 1, -1e300)).expect("underflow")[(0, 0)],
        0.0
    );
    let big = DMatrix::from_row_slice(2, 2, &[-1e300, 1e300, 0.0, -1e300]);
    assert!(expm(&big).is_ok() || matches!(expm(&big), Err(NumError::NoSolution { .. })));
    // The zero matrix gives I exactly (r₃(0) = I).
    assert_eq!(expm(&DMatrix::zeros(3, 3)).expect("finite"), id(3));
}
