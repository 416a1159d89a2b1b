use super::*;
use crate::assert_close;
use crate::numeric::design::lyapunov::{solve_lyapunov, solve_lyapunov_discrete};
use crate::numeric::testing::Rng;

const SIZES: [usize; 6] = [0, 1, 2, 3, 10, 40];

fn random_symmetric(rng: &mut Rng, n: usize) -> DMatrix<f64> {
    let m = rng.matrix(n, n);
    &m + m.transpose()
}

/// ‖residual‖_F / (‖A‖_F ‖X‖_F ε n): the usual scaled test ratio of dense linear-algebra
/// test suites, with acceptance threshold 30 (CHECKS.md §2, from memory).
fn ratio(residual: &DMatrix<f64>, a: &DMatrix<f64>, x: &DMatrix<f64>, n: usize) -> f64 {
    let denom = a.norm() * x.norm() * f64::EPSILON * n.max(1) as f64;
    if denom == 0.0 {
        residual.norm()
    } else {
        residual.norm() / denom
    }
}

#[test]
fn scalar_closed_forms() {
    // −2a·x + q = 0 with A = [−a] gives x = q/(2a) (CHECKS.md §2 closed form).
    let (a, q) = (1.5, 4.0);
    let x = solve_lyapunov(
        &DMatrix::from_element(1, 1, -a),
        &DMatrix::from_element(1, 1, q),
    )
    .expect("scalar Lyapunov");
    assert_close!(x[(0, 0)], q / (2.0 * a));
    // a²x − x + q = 0 gives x = q/(1 − a²) (derived by hand).
    let (a, q) = (0.6, 2.0);
    let x = solve_lyapunov_discrete(
        &DMatrix::from_element(1, 1, a),
        &DMatrix::from_element(1, 1, q),
    )
    .expect("scalar Stein");
    assert_close!(x[(0, 0)], q / (1.0 - a * a));
    // a x + x b = c gives x = c/(a + b) (derived by hand).
    let x = solve_sylvester(
        &DMatrix::from_element(1, 1, 2.0),
        &DMatrix::from_element(1, 1, 3.0),
        &DMatrix::from_element(1, 1, 10.0),
    )
    .expect("scalar Sylvester");
    assert_close!(x[(0, 0)], 2.0);
}

#[test]
fn rotation_block_closed_form() {
    // A = [[σ, ω], [−ω, σ]] has A + Aᵀ = 2σI, so X = x·I solves A X + X Aᵀ + I = 0 with
    // 2σx = −1, x = −1/(2σ) (derived by hand); eigenvalues σ ± jω are a complex pair.
    let (sigma, omega) = (-0.25, 3.0);
    let a = DMatrix::from_row_slice(2, 2, &[sigma, omega, -omega, sigma]);
    let x = solve_lyapunov(&a, &DMatrix::identity(2, 2)).expect("rotation block");
    assert_close!(x, DMatrix::identity(2, 2) * (-1.0 / (2.0 * sigma)));
    // Discrete: A = ρ·rotation has A Aᵀ = ρ²I, so x = 1/(1 − ρ²) (derived by hand).
    let (rho, th) = (0.8f64, 0.7f64);
    let a = DMatrix::from_row_slice(
        2,
        2,
        &[
            rho * th.cos(),
            -rho * th.sin(),
            rho * th.sin(),
            rho * th.cos(),
        ],
    );
    let x = solve_lyapunov_discrete(&a, &DMatrix::identity(2, 2)).expect("discrete rotation");
    assert_close!(x, DMatrix::identity(2, 2) * (1.0 / (1.0 - rho * rho)));
}

#[test]
fn lyapunov_residuals_on_random_stable_matrices() {
    let mut rng = Rng::new(7);
    for &n in &SIZES {
        let a = rng.stable(n);
        let q = random_symmetric(&mut rng, n);
        let x = solve_lyapunov(&a, &q).expect("stable Lyapunov");
        let res = &a * &x + &x * a.transpose() + &q;
        let r = ratio(&res, &a, &x, n);
        assert!(r < 30.0, "n = {n}: scaled residual {r}");
        assert_eq!(x, x.transpose(), "n = {n}: symmetric result");
    }
}

#[test]
fn lyapunov_residuals_on_random_unstable_matrices() {
    // Stability is not needed, only λᵢ + λⱼ ≠ 0; Gaussian matrices have it almost surely.
    let mut rng = Rng::new(8);
    for &n in &SIZES {
        let a = rng.matrix(n, n);
        let q = random_symmetric(&mut rng, n);
        let x = solve_lyapunov(&a, &q).expect("general Lyapunov");
        let res = &a * &x + &x * a.transpose() + &q;
        let r = ratio(&res, &a, &x, n);
        assert!(r < 30.0, "n = {n}: scaled residual {r}");
    }
}

#[test]
fn discrete_residuals_on_random_matrices() {
    let mut rng = Rng::new(9);
    for &n in &SIZES {
        let a = rng.schur_stable(n, 0.9);
        let q = random_symmetric(&mut rng, n);
        let x = solve_lyapunov_discrete(&a, &q).expect("discrete Lyapunov");
        let res = &a * &x * a.transpose() - &x + &q;
        // Scale: ‖A‖² ‖X‖ + ‖X‖, the size of the two terms that cancel.
        let denom = (a.norm_squared() + 1.0) * x.norm() * f64::EPSILON * n.max(1) as f64;
        let r = if denom == 0.0 {
            res.norm()
        } else {
            res.norm() / denom
        };
        assert!(r < 30.0, "n = {n}: scaled residual {r}");
    }
}

#[test]
fn sylvester_residuals_rectangular() {
    let mut rng = Rng::new(10);
    for &(m, n) in &[(0, 3), (3, 0), (1, 2), (2, 3), (3, 10), (10, 40), (40, 1)] {
        let a = rng.matrix(m, m);
        let b = rng.matrix(n, n) + DMatrix::identity(n, n) * 3.0;
        let c = rng.matrix(m, n);
        let x = solve_sylvester(&a, &b, &c).expect("Sylvester");
        let res = &a * &x + &x * &b - &c;
        let denom = (a.norm() + b.norm()) * x.norm() * f64::EPSILON * (m + n).max(1) as f64;
        let r = if denom == 0.0 {
            res.norm()
        } else {
            res.norm() / denom
        };
        assert!(r < 30.0, "{m}×{n}: scaled residual {r}");
    }
}

#[test]
fn complex_pairs_in_a_dense_similarity() {
    // Spectrum {−1 ± 4j, −0.2 ± 1j, −3}, hidden by a random similarity; the Schur form
    // then has 2×2 blocks in nalgebra's non-standard form.
    let mut rng = Rng::new(11);
    let mut d = DMatrix::zeros(5, 5);
    d[(0, 0)] = -1.0;
    d[(0, 1)] = 4.0;
    d[(1, 0)] = -4.0;
    d[(1, 1)] = -1.0;
    d[(2, 2)] = -0.2;
    d[(2, 3)] = 1.0;
    d[(3, 2)] = -1.0;
    d[(3, 3)] = -0.2;
    d[(4, 4)] = -3.0;
    let v = rng.matrix(5, 5) + DMatrix::identity(5, 5) * 3.0;
    let vinv = v
        .clone()
        .try_inverse()
        .expect("well-conditioned test similarity");
    let a = &v * d * vinv;
    let q = random_symmetric(&mut rng, 5);
    let x = solve_lyapunov(&a, &q).expect("complex pairs");
    let res = &a * &x + &x * a.transpose() + &q;
    assert!(ratio(&res, &a, &x, 5) < 30.0);
    let x = solve_lyapunov_discrete(&(&a * 0.2), &q).expect("complex pairs, discrete");
    let a2 = &a * 0.2;
    let res = &a2 * &x * a2.transpose() - &x + &q;
    assert!(res.norm() < 1e3 * f64::EPSILON * (1.0 + a2.norm_squared()) * x.norm());
}

#[test]
fn singular_equation_is_reported() {
    // Eigenvalues 1 and −1: λ₁ + λ₂ = 0, the continuous equation is singular.
    let mut rng = Rng::new(12);
    let v = rng.matrix(3, 3) + DMatrix::identity(3, 3) * 3.0;
    let vinv = v
        .clone()
        .try_inverse()
        .expect("well-conditioned test similarity");
    let a =
        &v * DMatrix::from_diagonal(&nalgebra::DVector::from_vec(vec![1.0, -1.0, -2.0])) * &vinv;
    let q = DMatrix::identity(3, 3);
    match solve_lyapunov(&a, &q) {
        Err(NumError::NoSolution { why, .. }) => {
            assert!(why.contains("λᵢ + λⱼ ≈ 0"), "{why}");
            assert!(why.contains("relative separation"), "{why}");
        }
        other => panic!("expected a resonance error, found {other:?}"),
    }
    // Eigenvalues 2 and 0.5: λ₁λ₂ = 1, the discrete equation is singular.
    let a = &v * DMatrix::from_diagonal(&nalgebra::DVector::from_vec(vec![2.0, 0.5, 0.1])) * &vinv;
    match solve_lyapunov_discrete(&a, &q) {
        Err(NumError::NoSolution { why, .. }) => assert!(why.contains("λᵢλⱼ ≈ 1"), "{why}"),
        other => panic!("expected a resonance error, found {other:?}"),
    }
    // Sylvester with λ(A) = 2 and μ(B) = −2.
    let a = DMatrix::from_row_slice(2, 2, &[2.0, 1.0, 0.0, 5.0]);
    let b = DMatrix::from_row_slice(2, 2, &[-2.0, 0.0, 3.0, 1.0]);
    let c = DMatrix::from_element(2, 2, 1.0);
    assert!(matches!(
        solve_sylvester(&a, &b, &c),
        Err(NumError::NoSolution { .. })
    ));
    // A = 0 makes every pivot zero.
    let z = DMatrix::zeros(2, 2);
    assert!(matches!(
        solve_lyapunov(&z, &q.view((0, 0), (2, 2)).clone_owned()),
        Err(NumError::NoSolution { .. })
    ));
}

#[test]
fn near_resonance_is_reported_with_its_figure() {
    // Eigenvalues ±1 ± 1e-15 relative: far below the 1e-12 tolerance.
    let a = DMatrix::from_row_slice(2, 2, &[1.0, 1.0, 0.0, -1.0 + 1e-15]);
    let q = DMatrix::identity(2, 2);
    let err = solve_lyapunov(&a, &q).expect_err("near-resonant");
    let text = err.to_string();
    assert!(text.contains("relative separation"), "{text}");
    assert!(text.contains("e-1"), "{text}");
    // Just above the tolerance it solves: separation 1e-6 (λ = 1, −1 + 1e-6).
    let a = DMatrix::from_row_slice(2, 2, &[1.0, 1.0, 0.0, -1.0 + 1e-6]);
    let x = solve_lyapunov(&a, &q).expect("separated enough");
    let res = &a * &x + &x * a.transpose() + &q;
    assert!(ratio(&res, &a, &x, 2) < 30.0);
}

#[test]
fn argument_checks() {
    let a = DMatrix::identity(2, 2) * -1.0;
    let q = DMatrix::from_row_slice(2, 2, &[1.0, 2.0, 0.0, 1.0]);
    match solve_lyapunov(&a, &q) {
        Err(NumError::InvalidArgument { what, why }) => {
            assert_eq!(what, "Q");
            assert!(why.contains("symmetric"), "{why}");
        }
        other => panic!("expected a symmetry error, found {other:?}"),
    }
    // Rounding-level asymmetry is accepted and symmetrised.
    let q = DMatrix::from_row_slice(2, 2, &[1.0, 0.5, 0.5 + 1e-15, 1.0]);
    assert!(solve_lyapunov(&a, &q).is_ok());
    assert!(matches!(
        solve_lyapunov(&DMatrix::zeros(2, 3), &q),
        Err(NumError::NotSquare { .. })
    ));
    assert!(matches!(
        solve_lyapunov(&a, &DMatrix::identity(3, 3)),
        Err(NumError::ShapeMismatch { .. })
    ));
    let mut bad = a.clone();
    bad[(1, 0)] = f64::NAN;
    assert!(matches!(
        solve_lyapunov(&bad, &q),
        Err(NumError::NotFinite { .. })
    ));
    assert!(matches!(
        solve_sylvester(&a, &a, &DMatrix::zeros(2, 1)),
        Err(NumError::ShapeMismatch { .. })
    ));
    let mut qi = DMatrix::identity(2, 2);
    qi[(0, 0)] = f64::INFINITY;
    assert!(matches!(
        solve_lyapunov_discrete(&a, &qi),
        Err(NumError::NotFinite { .. })
    ));
}

#[test]
fn solve_small_matches_direct_inverse() {
    // A 4×4 dense system with known solution x = (1, −2, 3, −4) (constructed).
    let m = [
        [4.0, 1.0, 0.5, 0.0],
        [1.0, -3.0, 0.0, 2.0],
        [0.0, 2.0, 5.0, 1.0],
        [1.0, 0.0, 1.0, 2.0],
    ];
    let x_true = [1.0, -2.0, 3.0, -4.0];
    let mut b = [0.0; 4];
    for i in 0..4 {
        b[i] = (0..4).map(|j| m[i][j] * x_true[j]).sum();
    }
    let mut k = m;
    let x = solve_small(&mut k, &mut b, 4, 0.0).expect("regular system");
    assert_close!(x.to_vec(), x_true.to_vec(), 1e-14, 1e-14);
}
