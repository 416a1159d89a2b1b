use super::*;
use crate::assert_close;
use crate::numeric::testing::Rng;

const EPS: f64 = f64::EPSILON;

fn cnorm1(m: &DMatrix<C64>) -> f64 {
    (0..m.ncols())
        .map(|j| m.column(j).iter().map(|z| z.norm()).sum::<f64>())
        .fold(0.0, f64::max)
}

fn complexify(a: &DMatrix<f64>) -> DMatrix<C64> {
    a.map(|x| Complex::new(x, 0.0))
}

/// ‖A·V − V·Λ‖₁ / (n·ε·‖A‖₁·‖V‖₁): the LAPACK-style scaled residual, to stay below 30
/// (the test-ratio threshold of the LAPACK test suite — from memory).
fn residual_ratio(a: &DMatrix<f64>, e: &Eigen) -> f64 {
    let n = a.nrows();
    if n == 0 {
        return 0.0;
    }
    let ac = complexify(a);
    let lam = DMatrix::from_fn(n, n, |i, j| {
        if i == j {
            e.values[i]
        } else {
            Complex::new(0.0, 0.0)
        }
    });
    let r = &ac * &e.vectors - &e.vectors * lam;
    cnorm1(&r) / (n as f64 * EPS * cnorm1(&ac).max(f64::MIN_POSITIVE) * cnorm1(&e.vectors))
}

/// The conventions of [`Eigen`]: sorted values, exact conjugate pairs (values and
/// vectors), unit columns, largest component real positive, real vectors for real values.
fn assert_conventions(e: &Eigen) {
    let n = e.values.len();
    let mut sorted = e.values.clone();
    order::sort_eigenvalues(&mut sorted);
    assert_eq!(sorted, e.values);
    for k in 0..n {
        let col: Vec<C64> = e.vectors.column(k).iter().copied().collect();
        let norm = col.iter().map(|z| z.norm_sqr()).sum::<f64>().sqrt();
        assert_close!(
            norm,
            1.0,
            10.0 * EPS * (n as f64).max(1.0),
            0.0,
            "column {k}"
        );
        let big = col.iter().fold(0.0f64, |m, z| m.max(z.norm()));
        let first = col.iter().position(|z| z.norm() == big).unwrap();
        assert!(
            col[first].im == 0.0 && col[first].re > 0.0,
            "phase of column {k}"
        );
        let z = e.values[k];
        if z.im == 0.0 {
            assert!(
                col.iter().all(|c| c.im == 0.0),
                "real value {z} has a complex vector"
            );
        } else {
            // The partner is present as the exact conjugate, with the conjugate vector
            // (not necessarily adjacent: the house order sorts tied real parts by
            // imaginary part).
            let partner = (0..n).find(|&j| {
                e.values[j] == z.conj()
                    && (0..n).all(|i| e.vectors[(i, j)] == e.vectors[(i, k)].conj())
            });
            assert!(partner.is_some(), "no conjugate partner for {z} at {k}");
        }
    }
}

fn close_sets(got: &[C64], want: &[C64], tol: f64) {
    assert_eq!(got.len(), want.len());
    let mut w = want.to_vec();
    order::sort_eigenvalues(&mut w);
    for (g, x) in got.iter().zip(w.iter()) {
        assert!((g - x).norm() <= tol, "{g} vs {x} (tolerance {tol:e})");
    }
}

fn orthogonal(n: usize, rng: &mut Rng) -> DMatrix<f64> {
    rng.matrix(n, n).qr().q()
}

#[test]
fn random_matrices_small_residual() {
    let mut rng = Rng::new(99);
    let mut worst = 0.0f64;
    for &n in &[0usize, 1, 2, 3, 10, 57, 100] {
        for _ in 0..3 {
            let a = rng.matrix(n, n);
            let e = eigen(&a).unwrap();
            let r = residual_ratio(&a, &e);
            worst = worst.max(r);
            assert!(r < 30.0, "n = {n}: ratio {r}");
            assert_conventions(&e);
            // eigenvalues() takes the same path and returns the same numbers.
            assert_eq!(eigenvalues(&a).unwrap(), e.values);
        }
    }
    eprintln!("eigen worst ratio (random): {worst}");
}

#[test]
fn empty_nan_and_shape() {
    let e = eigen(&DMatrix::zeros(0, 0)).unwrap();
    assert!(e.values.is_empty() && e.vectors.shape() == (0, 0));
    assert!(eigenvalues(&DMatrix::zeros(0, 0)).unwrap().is_empty());
    let mut a = DMatrix::identity(3, 3);
    a[(1, 2)] = f64::NAN;
    assert!(matches!(
        eigen(&a),
        Err(NumError::NotFinite { row: 1, col: 2, .. })
    ));
    assert!(matches!(
        eigenvalues(&a),
        Err(NumError::NotFinite { row: 1, col: 2, .. })
    ));
    a[(1, 2)] = f64::NEG_INFINITY;
    assert!(matches!(eigen(&a), Err(NumError::NotFinite { .. })));
    assert!(matches!(
        eigen(&DMatrix::zeros(2, 3)),
        Err(NumError::NotSquare { .. })
    ));
}

#[test]
fn rotation_generator_closed_form() {
    // [[0, ω], [−ω, 0]] has λ = ∓iω with v = (1, ∓i)/√2 (closed form: ω·y = λ·1 gives
    // y = λ/ω). Sorted: −iω first.
    let w = 3.0;
    let a = DMatrix::from_row_slice(2, 2, &[0.0, w, -w, 0.0]);
    let e = eigen(&a).unwrap();
    assert!((e.values[0] - Complex::new(0.0, -w)).norm() < 4.0 * EPS * w);
    assert_eq!(e.values[1], e.values[0].conj());
    let h = std::f64::consts::FRAC_1_SQRT_2;
    let want = [Complex::new(h, 0.0), Complex::new(0.0, -h)];
    for (i, w) in want.iter().enumerate() {
        assert!((e.vectors[(i, 0)] - w).norm() < 4.0 * EPS);
        assert_eq!(e.vectors[(i, 1)], e.vectors[(i, 0)].conj());
    }
}

#[test]
fn companion_closed_form() {
    // (λ+1)(λ+2)(λ+3)(λ²+2λ+5) = λ⁵ + 8λ⁴ + 28λ³ + 58λ² + 67λ + 30 (expanded by hand);
    // roots −3, −2, −1 ∓ 2i, −1 in the house order (−1 ± 2i and −1 tie on the real part
    // and sort by imaginary part).
    let c = [8.0, 28.0, 58.0, 67.0, 30.0];
    let a = DMatrix::from_fn(5, 5, |i, j| {
        if i == 0 {
            -c[j]
        } else if i == j + 1 {
            1.0
        } else {
            0.0
        }
    });
    let want = [
        Complex::new(-3.0, 0.0),
        Complex::new(-2.0, 0.0),
        Complex::new(-1.0, -2.0),
        Complex::new(-1.0, 0.0),
        Complex::new(-1.0, 2.0),
    ];
    let got = eigenvalues(&a).unwrap();
    for (g, w) in got.iter().zip(want.iter()) {
        assert!((g - w).norm() < 1e-12, "{got:?}");
    }
    let e = eigen(&a).unwrap();
    assert!(residual_ratio(&a, &e) < 30.0);
    assert_conventions(&e);
}

#[test]
fn triangular_and_zero_closed_form() {
    // Diagonal matrix: values are the diagonal, vectors the unit vectors (closed form).
    let a = DMatrix::from_diagonal(&DVector::from_vec(vec![3.0, -1.0, 2.0]));
    let e = eigen(&a).unwrap();
    let v: Vec<f64> = e.values.iter().map(|z| z.re).collect();
    assert_eq!(v, vec![-1.0, 2.0, 3.0]);
    for (k, &row) in [1usize, 2, 0].iter().enumerate() {
        assert_eq!(e.vectors[(row, k)], Complex::new(1.0, 0.0));
    }
    // Zero matrix: n-fold eigenvalue 0, the identity as eigenvectors.
    let e = eigen(&DMatrix::zeros(4, 4)).unwrap();
    assert!(e.values.iter().all(|z| *z == Complex::new(0.0, 0.0)));
    assert_eq!(e.vectors, complexify(&DMatrix::identity(4, 4)));
}

#[test]
fn many_complex_pairs() {
    // Z·blockdiag([σₖ ωₖ; −ωₖ σₖ])·Zᵀ, Z orthogonal: eigenvalues σₖ ± iωₖ (closed form of
    // a 2×2 rotation block; a similarity keeps them).
    let mut rng = Rng::new(17);
    let mut worst = 0.0f64;
    for &n in &[2usize, 3, 10, 57] {
        let mut d = DMatrix::zeros(n, n);
        let mut want = Vec::new();
        let mut k = 0;
        while k + 1 < n {
            let (s, w) = (rng.normal(), 0.2 + rng.uniform());
            d[(k, k)] = s;
            d[(k + 1, k + 1)] = s;
            d[(k, k + 1)] = w;
            d[(k + 1, k)] = -w;
            want.push(Complex::new(s, w));
            want.push(Complex::new(s, -w));
            k += 2;
        }
        if k < n {
            d[(k, k)] = rng.normal();
            want.push(Complex::new(d[(k, k)], 0.0));
        }
        let z = orthogonal(n, &mut rng);
        let a = &z * d * z.transpose();
        let e = eigen(&a).unwrap();
        close_sets(&e.values, &want, 1e-12);
        let r = residual_ratio(&a, &e);
        worst = worst.max(r);
        assert!(r < 30.0, "n = {n}: {r}");
        assert_conventions(&e);
    }
    eprintln!("eigen worst ratio (pairs): {worst}");
}

#[test]
fn thirty_fold_semisimple_eigenvalue() {
    // Z·diag(2 (30 times), 10 others)·Zᵀ: eigenvalue 2 is semisimple, so it is perturbed
    // only by O(ε‖A‖) (normal matrix: Bauer–Fike); then a non-normal variant
    // Z·[2I B; 0 R]·Zᵀ, still semisimple since the 2-block is diagonal.
    let mut rng = Rng::new(30);
    let n = 40;
    let mut worst = 0.0f64;
    for non_normal in [false, true] {
        let mut d = DMatrix::zeros(n, n);
        for k in 0..30 {
            d[(k, k)] = 2.0;
        }
        for k in 30..n {
            d[(k, k)] = -3.0 + 0.5 * (k - 30) as f64 + 0.1 * rng.uniform();
        }
        if non_normal {
            for i in 0..n {
                for j in 30.max(i + 1)..n {
                    d[(i, j)] = rng.normal();
                }
            }
        }
        let z = orthogonal(n, &mut rng);
        let a = &z * &d * z.transpose();
        let e = eigen(&a).unwrap();
        let r = residual_ratio(&a, &e);
        worst = worst.max(r);
        assert!(r < 30.0, "non-normal {non_normal}: ratio {r}");
        assert_conventions(&e);
        let twos = e
            .values
            .iter()
            .filter(|z| (*z - Complex::new(2.0, 0.0)).norm() < 1e-10)
            .count();
        assert_eq!(twos, 30, "{:?}", e.values);
    }
    eprintln!("eigen worst ratio (30-fold): {worst}");
}

#[test]
fn nearly_defective_jordan_block() {
    // J = I + N + δ·e₁₀e₁ᵀ (N the shift): (J − I)¹⁰ = δ·I, so λₖ = 1 + δ^(1/10)·e^(2πik/10)
    // (closed form), a circle of radius 0.1 for δ = 1e-10. The eigenvalue condition is
    // about |λ − 1|/(10δ) = 1e8, hence the 1e-6 tolerance.
    let n = 10;
    let delta = 1e-10;
    let mut a = DMatrix::from_fn(n, n, |i, j| if i == j || j == i + 1 { 1.0 } else { 0.0 });
    a[(n - 1, 0)] = delta;
    let want: Vec<C64> = (0..n)
        .map(|k| {
            let th = 2.0 * std::f64::consts::PI * k as f64 / n as f64;
            Complex::new(1.0 + 0.1 * th.cos(), 0.1 * th.sin())
        })
        .collect();
    let e = eigen(&a).unwrap();
    close_sets(&e.values, &want, 1e-6);
    assert!(residual_ratio(&a, &e) < 30.0);
    assert_conventions(&e);
    // The exact Jordan block (δ = 0) and a random 1e-10 perturbation of it: no panic,
    // small residual (the vectors are nearly parallel).
    let mut rng = Rng::new(8);
    let mut worst = 0.0f64;
    for perturb in [0.0, 1e-10] {
        let mut j = DMatrix::from_fn(n, n, |i, k| if i == k || k == i + 1 { 1.0 } else { 0.0 });
        j += perturb * rng.matrix(n, n);
        let e = eigen(&j).unwrap();
        let r = residual_ratio(&j, &e);
        worst = worst.max(r);
        assert!(r < 30.0, "perturbation {perturb}: {r}");
        assert!(e
            .vectors
            .iter()
            .all(|z| z.re.is_finite() && z.im.is_finite()));
    }
    eprintln!("eigen worst ratio (Jordan): {worst}");
}

#[test]
fn widely_spread_magnitudes_balanced() {
    // A = D·M·D⁻¹ with D = diag(10^(−4 … 4)): entries from about 1e-8 to 1e8 and the
    // same eigenvalues as M (similarity, common practice). Balancing recovers them
    // to nearly M's accuracy; without it the error would be about ε·‖A‖ ≈ 1e-8.
    let mut rng = Rng::new(123);
    for &n in &[3usize, 10, 30] {
        let m = rng.matrix(n, n);
        let dd: Vec<f64> = (0..n)
            .map(|i| 10f64.powf(-4.0 + 8.0 * i as f64 / (n - 1) as f64))
            .collect();
        let a = DMatrix::from_fn(n, n, |i, j| m[(i, j)] * dd[i] / dd[j]);
        let want = eigenvalues(&m).unwrap();
        let got = eigenvalues(&a).unwrap();
        let scale = want.iter().fold(0.0f64, |s, z| s.max(z.norm()));
        close_sets(&got, &want, 1e-11 * scale);
        let e = eigen(&a).unwrap();
        assert_conventions(&e);
        // Columnwise residual of the balanced problem, mapped back: ‖D⁻¹(Av − λv)‖ is
        // small relative to ‖D⁻¹AD‖·‖D⁻¹v‖ (the backward error balancing guarantees).
        let ac = complexify(&a);
        let mb = complexify(&m);
        for k in 0..n {
            let v = e.vectors.column(k).clone_owned();
            let r = &ac * &v - &v * e.values[k];
            let rb = DMatrix::from_fn(n, 1, |i, _| r[(i, 0)] / dd[i]);
            let vb = DMatrix::from_fn(n, 1, |i, _| v[(i, 0)] / dd[i]);
            let ratio = cnorm1(&rb) / (n as f64 * EPS * cnorm1(&mb) * cnorm1(&vb));
            assert!(ratio < 30.0, "n = {n}, column {k}: {ratio}");
        }
    }
}

#[test]
fn extreme_scaling_is_exact_enough() {
    // λ(s·A) = s·λ(A) (common practice): scale by 1e300 and 1e-300, where the squared
    // norms inside balancing would overflow or underflow without prescaling.
    let mut rng = Rng::new(4);
    let a = rng.matrix(6, 6);
    let base = eigenvalues(&a).unwrap();
    for s in [1e300, 1e-300] {
        let got = eigenvalues(&(&a * s)).unwrap();
        let want: Vec<C64> = base.iter().map(|z| z * s).collect();
        let scale = want.iter().fold(0.0f64, |m, z| m.max(z.norm()));
        close_sets(&got, &want, 1e-12 * scale);
        let e = eigen(&(&a * s)).unwrap();
        assert_conventions(&e);
    }
}
