use super::*;
use crate::numeric::testing::Rng;

const EPS: f64 = f64::EPSILON;

fn mat(rows: usize, cols: usize, v: &[f64]) -> DMatrix<f64> {
    DMatrix::from_row_slice(rows, cols, v)
}

/// Greedy matching: the largest distance from each expected value to a distinct
/// computed one (the lists must have equal length).
fn match_distance(expected: &[Complex<f64>], computed: &[Complex<f64>]) -> f64 {
    assert_eq!(
        expected.len(),
        computed.len(),
        "{expected:?} vs {computed:?}"
    );
    let mut used = vec![false; computed.len()];
    let mut worst = 0.0f64;
    for e in expected {
        let mut best = (f64::INFINITY, 0);
        for (k, c) in computed.iter().enumerate() {
            if !used[k] && (e - c).norm() < best.0 {
                best = ((e - c).norm(), k);
            }
        }
        used[best.1] = true;
        worst = worst.max(best.0);
    }
    worst
}

fn complexify(m: &DMatrix<f64>) -> DMatrix<Complex<f64>> {
    m.map(|x| Complex::new(x, 0.0))
}

/// Scaled test ratios of a generalized Schur form, each required below 30 (common
/// practice, no source): ‖A − QSZᵀ‖/(n ε ‖A‖), ‖QᵀQ − I‖/(n ε), and the exact
/// structure of S and T.
fn check_schur(a: &DMatrix<f64>, b: &DMatrix<f64>, f: &Qz) {
    let n = a.nrows();
    let nn = n.max(1) as f64;
    let ra = (a - &f.q * &f.s * f.z.transpose()).norm() / (nn * EPS * a.norm().max(1e-300));
    let rb = (b - &f.q * &f.t * f.z.transpose()).norm() / (nn * EPS * b.norm().max(1e-300));
    let id = DMatrix::<f64>::identity(n, n);
    let oq = (f.q.transpose() * &f.q - &id).norm() / (nn * EPS);
    let oz = (f.z.transpose() * &f.z - &id).norm() / (nn * EPS);
    assert!(
        ra < 30.0 && rb < 30.0 && oq < 30.0 && oz < 30.0,
        "{ra} {rb} {oq} {oz}"
    );
    for j in 0..n {
        for i in j + 1..n {
            assert_eq!(f.t[(i, j)], 0.0, "T({i},{j})");
            if i > j + 1 {
                assert_eq!(f.s[(i, j)], 0.0, "S({i},{j})");
            }
        }
    }
    for j in 0..n.saturating_sub(2) {
        assert!(
            f.s[(j + 1, j)] == 0.0 || f.s[(j + 2, j + 1)] == 0.0,
            "two subdiagonals at {j}"
        );
    }
    // A nonzero subdiagonal marks a complex pair; its members are conjugate.
    for j in 0..n.saturating_sub(1) {
        if f.s[(j + 1, j)] != 0.0 {
            let (e0, e1) = (f.eigenvalues[j], f.eigenvalues[j + 1]);
            assert!(e0.alpha.im < 0.0 && e1.alpha == e0.alpha.conj() && e0.beta == e1.beta);
        }
    }
    assert!(f.eigenvalues.iter().all(|e| e.beta >= 0.0));
}

/// σ_min(βA − αB)/(|β|‖A‖ + |α|‖B‖) for every eigenvalue: zero for an exact eigenvalue,
/// of the order of the backward error n·ε for a computed one.
fn det_check(a: &DMatrix<f64>, b: &DMatrix<f64>, eig: &[GeneralizedEigenvalue]) -> f64 {
    let (ca, cb) = (complexify(a), complexify(b));
    let mut worst = 0.0f64;
    for e in eig {
        let m = &ca * Complex::new(e.beta, 0.0) - &cb * e.alpha;
        let smin = m
            .singular_values()
            .iter()
            .fold(f64::INFINITY, |acc, s| acc.min(*s));
        let scale = e.beta.abs() * a.norm() + e.alpha.norm() * b.norm();
        worst = worst.max(smin / scale);
    }
    worst
}

#[test]
fn empty_pencil() {
    let z = DMatrix::<f64>::zeros(0, 0);
    let f = Qz::new(&z, &z).expect("0×0");
    assert!(f.eigenvalues.is_empty() && f.q.is_empty() && f.s.is_empty());
    assert!(finite_generalized_eigenvalues(&z, &z, 1e-8)
        .expect("0×0")
        .is_empty());
}

#[test]
fn one_by_one_has_non_negative_beta() {
    // 3x = λ(−2)x gives λ = −1.5 (closed form).
    let f = Qz::new(&mat(1, 1, &[3.0]), &mat(1, 1, &[-2.0])).expect("1×1");
    assert_eq!(f.eigenvalues[0].beta, 2.0);
    assert_eq!(f.eigenvalues[0].value(), Some(Complex::new(-1.5, 0.0)));
    check_schur(&mat(1, 1, &[3.0]), &mat(1, 1, &[-2.0]), &f);
}

#[test]
fn closed_form_two_by_two() {
    // det([[0,1],[−2,−3]] − λ·diag(2,1)) = (−2λ)(−3−λ) + 2 = 2λ² + 6λ + 2, so
    // λ = (−3 ± √5)/2 (quadratic formula).
    let a = mat(2, 2, &[0.0, 1.0, -2.0, -3.0]);
    let b = mat(2, 2, &[2.0, 0.0, 0.0, 1.0]);
    let got = finite_generalized_eigenvalues(&a, &b, 1e-8).expect("2×2");
    let r5 = 5.0f64.sqrt();
    let want = [
        Complex::new((-3.0 - r5) / 2.0, 0.0),
        Complex::new((-3.0 + r5) / 2.0, 0.0),
    ];
    assert!(match_distance(&want, &got) < 10.0 * EPS, "{got:?}");
    assert!(got[0].re < got[1].re);
    check_schur(&a, &b, &Qz::new(&a, &b).expect("2×2"));
}

#[test]
fn rotation_generator_gives_conjugate_pair() {
    // det([[0,1],[−1,0]] − λ·diag(1,4)) = 4λ² + 1, so λ = ±j/2 (closed form); the pair
    // stays a 2×2 block of S with the negative imaginary part first.
    let a = mat(2, 2, &[0.0, 1.0, -1.0, 0.0]);
    let b = mat(2, 2, &[1.0, 0.0, 0.0, 4.0]);
    let f = Qz::new(&a, &b).expect("2×2");
    check_schur(&a, &b, &f);
    assert_ne!(f.s[(1, 0)], 0.0);
    let got = f.finite_eigenvalues(1e-8).expect("tol");
    assert!(
        (got[0] - Complex::new(0.0, -0.5)).norm() < 10.0 * EPS,
        "{got:?}"
    );
    assert!(
        (got[1] - Complex::new(0.0, 0.5)).norm() < 10.0 * EPS,
        "{got:?}"
    );
}

#[test]
fn identity_b_reproduces_standard_eigenvalues() {
    // With B = I the pencil's eigenvalues are those of A; reference: nalgebra's
    // complex_eigenvalues (real Schur form), an independent computation.
    let mut rng = Rng::new(11);
    for &n in &[1usize, 2, 3, 10, 40] {
        let a = rng.matrix(n, n);
        let b = DMatrix::identity(n, n);
        let want: Vec<Complex<f64>> = a.complex_eigenvalues().iter().copied().collect();
        let got = finite_generalized_eigenvalues(&a, &b, 1e-8).expect("QZ");
        let dist = match_distance(&want, &got);
        assert!(dist < 1e-9 * a.norm(), "n = {n}: distance {dist}");
        let f = Qz::new(&a, &b).expect("QZ");
        check_schur(&a, &b, &f);
    }
}

#[test]
fn random_pencils_residuals() {
    let mut rng = Rng::new(2024);
    for &n in &[0usize, 1, 2, 3, 10, 40] {
        for _ in 0..3 {
            let a = rng.matrix(n, n);
            let b = rng.matrix(n, n);
            let f = Qz::new(&a, &b).expect("QZ");
            check_schur(&a, &b, &f);
            let d = det_check(&a, &b, &f.eigenvalues);
            assert!(d <= 100.0 * n as f64 * EPS, "n = {n}: σ_min ratio {d}");
            // The eigenvalues-only path gives the same values.
            let only = generalized_eigenvalues(&a, &b).expect("QZ");
            let lam = |v: &[GeneralizedEigenvalue]| -> Vec<Complex<f64>> {
                v.iter().filter_map(|e| e.value()).collect()
            };
            let scale = a.norm() / b.norm().max(1e-300);
            assert!(match_distance(&lam(&f.eigenvalues), &lam(&only)) <= 1e-6 * scale);
        }
    }
}

#[test]
fn hessenberg_triangular_form() {
    let mut rng = Rng::new(5);
    for &n in &[0usize, 1, 2, 3, 10, 40] {
        let a = rng.matrix(n, n);
        let b = rng.matrix(n, n);
        let ht = hessenberg_triangular(&a, &b).expect("HT");
        let nn = n.max(1) as f64;
        let ra = (&a - &ht.q * &ht.h * ht.z.transpose()).norm() / (nn * EPS * a.norm().max(1.0));
        let rb = (&b - &ht.q * &ht.t * ht.z.transpose()).norm() / (nn * EPS * b.norm().max(1.0));
        assert!(ra < 30.0 && rb < 30.0, "n = {n}: {ra} {rb}");
        for j in 0..n {
            for i in j + 1..n {
                assert_eq!(ht.t[(i, j)], 0.0);
                if i > j + 1 {
                    assert_eq!(ht.h[(i, j)], 0.0);
                }
            }
        }
    }
}

/// A = U·A₀·V, B = U·diag(I_r, 0)·V with orthogonal U, V (QR of Gaussian matrices).
/// Writing x = [x₁; x₂], A₀x = λ diag(I, 0)x gives x₂ = −A₂₂⁻¹A₂₁x₁ and
/// (A₁₁ − A₁₂A₂₂⁻¹A₂₁)x₁ = λx₁: r finite eigenvalues (those of the Schur complement)
/// and n − r infinite ones (derivation in this comment).
#[test]
fn singular_b_gives_infinite_eigenvalues() {
    let mut rng = Rng::new(77);
    for &(n, r) in &[(1usize, 0usize), (3, 1), (6, 4), (10, 7), (40, 33)] {
        let a0 = rng.matrix(n, n);
        let u = rng.matrix(n, n).qr().q();
        let v = rng.matrix(n, n).qr().q();
        let mut b0 = DMatrix::zeros(n, n);
        for i in 0..r {
            b0[(i, i)] = 1.0;
        }
        let a = &u * &a0 * &v;
        let b = &u * &b0 * &v;
        let k = n - r;
        let a22inv = a0
            .view((r, r), (k, k))
            .into_owned()
            .try_inverse()
            .expect("A22");
        let schur = a0.view((0, 0), (r, r)).into_owned()
            - a0.view((0, r), (r, k)) * a22inv * a0.view((r, 0), (k, r));
        // (nalgebra's complex_eigenvalues panics on a 0×0 matrix.)
        let want: Vec<Complex<f64>> = if r == 0 {
            Vec::new()
        } else {
            schur.complex_eigenvalues().iter().copied().collect()
        };
        let f = Qz::new(&a, &b).expect("QZ");
        check_schur(&a, &b, &f);
        let tol = QzParams::default().infinite_tolerance;
        let infinite = f
            .eigenvalues
            .iter()
            .filter(|e| e.is_infinite(tol, a.norm(), b.norm()))
            .count();
        assert_eq!(infinite, n - r, "n = {n}, r = {r}");
        let got = f.finite_eigenvalues(tol).expect("tol");
        let scale = 1.0 + want.iter().fold(0.0f64, |m, w| m.max(w.norm()));
        assert!(
            match_distance(&want, &got) < 1e-8 * scale * a.norm(),
            "{want:?} {got:?}"
        );
    }
}

#[test]
fn zero_b_is_all_infinite_and_zero_a_all_zero() {
    // B = 0: det(A − λ·0) = det A ≠ 0, no finite eigenvalue. A = 0, B invertible:
    // det(−λB) = 0 only at λ = 0 (n-fold). Closed forms.
    let mut rng = Rng::new(3);
    let a = rng.matrix(5, 5);
    let zero = DMatrix::zeros(5, 5);
    let f = Qz::new(&a, &zero).expect("QZ");
    assert!(f
        .eigenvalues
        .iter()
        .all(|e| e.beta == 0.0 && e.value().is_none()));
    let g = finite_generalized_eigenvalues(&zero, &a, 1e-8).expect("QZ");
    assert_eq!(g.len(), 5);
    assert!(g.iter().all(|z| z.norm() == 0.0));
}

#[test]
fn nilpotent_b_gives_index_two_infinite_eigenvalue() {
    // det(I − λN) = 1 for N = [[0,1],[0,0]]: no finite eigenvalue; the eigenvalue at
    // infinity has a 2×2 Jordan block (closed form).
    let a = DMatrix::identity(2, 2);
    let b = mat(2, 2, &[0.0, 1.0, 0.0, 0.0]);
    let f = Qz::new(&a, &b).expect("QZ");
    check_schur(&a, &b, &f);
    assert!(f
        .finite_eigenvalues(QzParams::default().infinite_tolerance)
        .expect("tol")
        .is_empty());
}

#[test]
fn singular_pencil_reports_indeterminate_pair() {
    // A = diag(1, 0), B = diag(1, 0): det(A − λB) ≡ 0 (singular pencil). The second
    // pair is (0, 0) and is not reported as finite; the first gives λ = 1 (closed form).
    let a = mat(2, 2, &[1.0, 0.0, 0.0, 0.0]);
    let f = Qz::new(&a, &a).expect("QZ");
    assert!(f
        .eigenvalues
        .iter()
        .any(|e| e.alpha.norm() == 0.0 && e.beta == 0.0));
    let got = f.finite_eigenvalues(1e-8).expect("tol");
    assert_eq!(got, vec![Complex::new(1.0, 0.0)]);
}

#[test]
fn cyclic_permutation_needs_exceptional_shifts() {
    // The cyclic shift P (P e_k = e_{k+1 mod n}) has the n-th roots of unity as
    // eigenvalues (closed form); plain shifts stall on it (the standard case for
    // exceptional shifts).
    for &n in &[3usize, 4, 6, 10] {
        let mut p = DMatrix::zeros(n, n);
        for k in 0..n {
            p[((k + 1) % n, k)] = 1.0;
        }
        let want: Vec<Complex<f64>> = (0..n)
            .map(|k| Complex::from_polar(1.0, 2.0 * std::f64::consts::PI * k as f64 / n as f64))
            .collect();
        let b = DMatrix::identity(n, n);
        let f = Qz::new(&p, &b).expect("QZ");
        check_schur(&p, &b, &f);
        let got = f.finite_eigenvalues(1e-8).expect("tol");
        assert!(match_distance(&want, &got) < 1e-12, "n = {n}: {got:?}");
    }
}

#[test]
fn jordan_block_converges() {
    // A = 2I + N (8×8 Jordan block), B = I: eigenvalue 2, eightfold and defective, so a
    // backward error ε moves it by about ε^(1/8) ≈ 0.011 (perturbation theory).
    let n = 8;
    let mut a = DMatrix::identity(n, n) * 2.0;
    for k in 0..n - 1 {
        a[(k, k + 1)] = 1.0;
    }
    let b = DMatrix::identity(n, n);
    let f = Qz::new(&a, &b).expect("QZ");
    check_schur(&a, &b, &f);
    let got = f.finite_eigenvalues(1e-8).expect("tol");
    assert_eq!(got.len(), n);
    assert!(
        got.iter()
            .all(|z| (z - Complex::new(2.0, 0.0)).norm() < 0.05),
        "{got:?}"
    );
}

#[test]
fn badly_scaled_b_still_backward_stable() {
    // B = diag(1, 1e-9, 1e9, 1, 1e-5) rotated: the eigenvalues spread over many decades,
    // the decomposition residuals must stay at rounding level.
    let mut rng = Rng::new(8);
    let d = [1.0, 1e-9, 1e9, 1.0, 1e-5];
    let u = rng.matrix(5, 5).qr().q();
    let b = &u * DMatrix::from_diagonal(&nalgebra::DVector::from_row_slice(&d)) * u.transpose();
    let a = rng.matrix(5, 5);
    let f = Qz::new(&a, &b).expect("QZ");
    check_schur(&a, &b, &f);
}

#[test]
fn regression_real_split_with_nearly_singular_t() {
    // A 2×2 pencil with B of rank one (det B ≈ 0 to 16 digits), found by a random
    // sweep: splitting the real 2×2 block through H·T⁻¹ lost the small eigenvalue to
    // cancellation and left an error of 10⁻² in B − QTZᵀ. The block is now split with
    // the homogeneous roots of det(H − λT).
    let a = mat(
        2,
        2,
        &[
            0.08699113787210977,
            0.589069060436963,
            -0.7156932168203933,
            0.46391568516889636,
        ],
    );
    let b = mat(
        2,
        2,
        &[
            0.0019522479510091818,
            0.11056678293945243,
            0.0181248904038861,
            1.026514496814761,
        ],
    );
    let f = Qz::new(&a, &b).expect("QZ");
    check_schur(&a, &b, &f);
    assert!(det_check(&a, &b, &f.eigenvalues) < 100.0 * EPS);
    // B is singular to rounding, so one diagonal entry of T is at rounding level.
    assert!(f.t[(0, 0)].abs().min(f.t[(1, 1)].abs()) < 1e-14, "{}", f.t);
}

#[test]
fn extreme_scaling_converges() {
    // ‖A‖ ≈ 10¹⁵⁰, ‖B‖ ≈ 10⁻¹⁵⁰: the eigenvalues are those of (A₀, B₀) times 10³⁰⁰
    // (homogeneity); the shifts must not overflow.
    let mut rng = Rng::new(21);
    let (a0, b0) = (rng.matrix(9, 9), rng.matrix(9, 9));
    let (a, b) = (&a0 * 1e150, &b0 * 1e-150);
    let f = Qz::new(&a, &b).expect("QZ");
    check_schur(&a, &b, &f);
    let want = Qz::new(&a0, &b0)
        .expect("QZ")
        .finite_eigenvalues(1e-8)
        .expect("tol");
    let got: Vec<Complex<f64>> = f
        .finite_eigenvalues(1e-8)
        .expect("tol")
        .iter()
        .map(|z| z / 1e300)
        .collect();
    let scale = want.iter().fold(1.0f64, |m, w| m.max(w.norm()));
    assert!(
        match_distance(&want, &got) < 1e-9 * scale,
        "{want:?} {got:?}"
    );
}

#[test]
fn argument_errors() {
    let a = DMatrix::<f64>::zeros(2, 3);
    let b = DMatrix::<f64>::zeros(2, 2);
    assert!(matches!(Qz::new(&a, &b), Err(NumError::NotSquare { .. })));
    let a = DMatrix::<f64>::zeros(3, 3);
    let e = Qz::new(&a, &b).expect_err("size mismatch");
    assert_eq!(e.to_string(), "B: expected 3×3 (the size of A), found 2×2");
    let mut c = DMatrix::<f64>::zeros(2, 2);
    c[(1, 0)] = f64::NAN;
    assert!(matches!(
        Qz::new(&b, &c),
        Err(NumError::NotFinite { row: 1, col: 0, .. })
    ));
    assert!(finite_generalized_eigenvalues(&b, &b, -1.0).is_err());
    let p = QzParams {
        sweeps_per_eigenvalue: 0,
        ..QzParams::default()
    };
    assert!(Qz::with_params(&b, &b, &p).is_err());
}

#[test]
fn iteration_cap_reports_no_convergence() {
    // One sweep per eigenvalue (10 in all) cannot converge a random 10×10 pencil, which
    // needs two to four sweeps per eigenvalue (observed; common practice, no source).
    let mut rng = Rng::new(9);
    let a = rng.matrix(10, 10);
    let b = rng.matrix(10, 10);
    let p = QzParams {
        sweeps_per_eigenvalue: 1,
        ..QzParams::default()
    };
    match Qz::with_params(&a, &b, &p) {
        Err(NumError::NoConvergence { iterations, .. }) => assert_eq!(iterations, 10),
        other => panic!("expected NoConvergence, got {other:?}"),
    }
}
