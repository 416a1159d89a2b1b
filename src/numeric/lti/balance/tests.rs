use super::*;
use crate::assert_close;
use crate::numeric::testing::Rng;

type C64 = Complex<f64>;

/// A random model; `A` shifted (dt = 0) or scaled (dt > 0) to be stable with margin.
fn random_model(
    rng: &mut Rng,
    n: usize,
    m: usize,
    p: usize,
    dt: f64,
) -> (DMatrix<f64>, DMatrix<f64>, DMatrix<f64>, DMatrix<f64>) {
    let mut a = rng.matrix(n, n);
    if n > 0 {
        let eigs = a.complex_eigenvalues();
        if dt == 0.0 {
            let abscissa = eigs.iter().map(|z| z.re).fold(f64::MIN, f64::max);
            a -= DMatrix::identity(n, n) * (abscissa + 0.3);
        } else {
            let rho = eigs.iter().map(|z| z.norm()).fold(0.0, f64::max);
            a *= 0.9 / rho;
        }
    }
    (a, rng.matrix(n, m), rng.matrix(p, n), rng.matrix(p, m))
}

/// `G` at `s` (dt = 0) or `z` (dt > 0): `C (sI − A)⁻¹ B + D` by a complex LU solve.
fn response(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    c: &DMatrix<f64>,
    d: &DMatrix<f64>,
    s: C64,
) -> DMatrix<C64> {
    let n = a.nrows();
    let dc = d.map(|v| C64::new(v, 0.0));
    if n == 0 {
        return dc;
    }
    let m = DMatrix::from_fn(n, n, |i, j| {
        let v = C64::new(-a[(i, j)], 0.0);
        if i == j {
            v + s
        } else {
            v
        }
    });
    let x = m
        .lu()
        .solve(&b.map(|v| C64::new(v, 0.0)))
        .expect("s is not a pole");
    c.map(|v| C64::new(v, 0.0)) * x + dc
}

/// The largest singular value of `G − Gᵣ` over a dense sweep (4001 points: log-spaced
/// 1e-4…1e4 rad/s plus ω = 0 for dt = 0, uniform θ ∈ [0, π] for dt > 0), refined by a
/// golden-section search around the best grid point.
fn sweep_error(
    full: (&DMatrix<f64>, &DMatrix<f64>, &DMatrix<f64>, &DMatrix<f64>),
    red: &Truncated,
    dt: f64,
) -> f64 {
    let point = |x: f64| -> C64 {
        if dt == 0.0 {
            C64::new(0.0, x)
        } else {
            C64::from_polar(1.0, x)
        }
    };
    let err = |x: f64| -> f64 {
        let s = point(x);
        let g = response(full.0, full.1, full.2, full.3, s);
        let gr = response(&red.a, &red.b, &red.c, &red.d, s);
        (g - gr)
            .singular_values()
            .iter()
            .copied()
            .fold(0.0, f64::max)
    };
    let grid: Vec<f64> = if dt == 0.0 {
        std::iter::once(0.0)
            .chain((0..4000).map(|k| 10f64.powf(-4.0 + 8.0 * k as f64 / 3999.0)))
            .collect()
    } else {
        (0..4001)
            .map(|k| std::f64::consts::PI * k as f64 / 4000.0)
            .collect()
    };
    let values: Vec<f64> = grid.iter().map(|&x| err(x)).collect();
    let (k, mut best) = values
        .iter()
        .copied()
        .enumerate()
        .fold((0, 0.0), |acc, (i, v)| if v > acc.1 { (i, v) } else { acc });
    let (mut lo, mut hi) = (grid[k.saturating_sub(1)], grid[(k + 1).min(grid.len() - 1)]);
    let ratio = 0.5 * (5f64.sqrt() - 1.0);
    for _ in 0..60 {
        let x1 = hi - ratio * (hi - lo);
        let x2 = lo + ratio * (hi - lo);
        let (e1, e2) = (err(x1), err(x2));
        best = best.max(e1).max(e2);
        if e1 > e2 {
            hi = x2;
        } else {
            lo = x1;
        }
    }
    best
}

fn markov(a: &DMatrix<f64>, b: &DMatrix<f64>, c: &DMatrix<f64>, k: usize) -> DMatrix<f64> {
    let mut x = b.clone();
    for _ in 0..k {
        x = a * x;
    }
    c * x
}

#[test]
fn first_order_closed_forms() {
    // G(s) = bc/(s − a): P = b²/(−2a), Q = c²/(−2a), σ = |bc|/(2|a|) (derived by hand).
    let (a, b, c) = (-2.0, 3.0, 2.0);
    let (am, bm, cm) = (
        DMatrix::from_element(1, 1, a),
        DMatrix::from_element(1, 1, b),
        DMatrix::from_element(1, 1, c),
    );
    let p = controllability_gramian(&am, &bm, 0.0).expect("P");
    let q = observability_gramian(&am, &cm, 0.0).expect("Q");
    assert_close!(p[(0, 0)], 9.0 / 4.0);
    assert_close!(q[(0, 0)], 1.0);
    let hsv = hankel_singular_values(&am, &bm, &cm, 0.0).expect("hsv");
    assert_close!(hsv, vec![1.5]);
    // Discrete x[k+1] = a x + b u: P = b²/(1 − a²), Q = c²/(1 − a²),
    // σ = |bc|/(1 − a²) (derived by hand); a = 0.5, b = 3, c = 2 gives σ = 8.
    let ad = DMatrix::from_element(1, 1, 0.5);
    let hsv = hankel_singular_values(&ad, &bm, &cm, 0.1).expect("hsv");
    assert_close!(hsv, vec![8.0]);
    let p = controllability_gramian(&ad, &bm, 0.1).expect("P");
    assert_close!(p[(0, 0)], 12.0);
}

#[test]
fn balanced_gramians_are_diagonal_and_equal() {
    let mut rng = Rng::new(31);
    for &dt in &[0.0, 0.1] {
        for &n in &[0usize, 1, 2, 3, 10, 40] {
            // Few inputs make the Hankel singular values of a large random model decay
            // below the minimality tolerance; use as many inputs and outputs as states.
            let (m, p) = if n > 3 { (n, n) } else { (2, 3) };
            let (a, b, c, d) = random_model(&mut rng, n, m, p, dt);
            let bal = balanced_realization(&a, &b, &c, &d, dt).expect("minimal random model");
            let sigma = DMatrix::from_diagonal(&nalgebra::DVector::from_vec(
                bal.hankel_singular_values.clone(),
            ));
            for w in bal.hankel_singular_values.windows(2) {
                assert!(w[0] >= w[1], "descending");
            }
            // Independent check: Gramians of the balanced model by Bartels–Stewart.
            let p = controllability_gramian(&bal.a, &bal.b, dt).expect("P");
            let q = observability_gramian(&bal.a, &bal.c, dt).expect("Q");
            let top = bal.hankel_singular_values.first().copied().unwrap_or(1.0);
            let tol = 1e-9 * top;
            assert_close!(p, sigma, tol, 1e-9);
            assert_close!(q, sigma, tol, 1e-9);
            // T⁻¹ T = I (construction, § Mathematics of balanced_realization_with).
            assert_close!(&bal.t_inv * &bal.t, DMatrix::identity(n, n), 1e-10, 0.0);
            // Markov parameters D, CB, CAB, … are invariant under x = T z (CHECKS.md §3,
            // common practice, no source).
            assert_eq!(bal.d, d);
            for k in 0..6 {
                let g0 = markov(&a, &b, &c, k);
                let g1 = markov(&bal.a, &bal.b, &bal.c, k);
                let scale = g0.norm().max(1.0);
                assert_close!(g1, g0, 1e-10 * scale, 1e-10);
            }
            // The Hankel singular values agree with the direct function.
            let hsv = hankel_singular_values(&a, &b, &c, dt).expect("hsv");
            assert_close!(hsv, bal.hankel_singular_values.clone(), 1e-12 * top, 1e-10);
        }
    }
}

#[test]
fn truncation_error_between_sigma_and_bound() {
    let mut rng = Rng::new(32);
    for &dt in &[0.0, 0.5] {
        for &(n, order) in &[(2usize, 1usize), (3, 1), (10, 4), (40, 12)] {
            let (a, b, c, d) = random_model(&mut rng, n, 2, 2, dt);
            let red = balanced_truncation(&a, &b, &c, &d, dt, order).expect("truncation");
            assert_eq!(red.a.shape(), (order, order));
            assert_eq!(red.b.shape(), (order, 2));
            assert_eq!(red.c.shape(), (2, order));
            let hsv = &red.hankel_singular_values;
            let bound: f64 = 2.0 * hsv[order..].iter().sum::<f64>();
            assert_close!(red.error_bound, bound);
            let e = sweep_error((&a, &b, &c, &d), &red, dt);
            // Glover 1984 (dt = 0) and Al-Saggaf & Franklin 1987 (dt > 0): e ≤ 2Σσ; the
            // Hankel-norm lower bound σᵣ₊₁ ≤ ‖G − Gᵣ‖∞ (Glover 1984).
            assert!(
                e <= red.error_bound * (1.0 + 1e-9),
                "n = {n}, dt = {dt}: {e} > bound"
            );
            assert!(
                e >= hsv[order] * (1.0 - 1e-6),
                "n = {n}, dt = {dt}: {e} < σ = {}",
                hsv[order]
            );
            // The reduced model is stable (a property of balanced truncation with
            // σᵣ > σᵣ₊₁).
            assert!(controllability_gramian(&red.a, &red.b, dt).is_ok());
        }
    }
}

#[test]
fn order_zero_and_full_order() {
    let mut rng = Rng::new(33);
    let (a, b, c, d) = random_model(&mut rng, 5, 1, 2, 0.0);
    let red = balanced_truncation(&a, &b, &c, &d, 0.0, 0).expect("order 0");
    assert_eq!(red.a.shape(), (0, 0));
    assert_eq!(red.b.shape(), (0, 1));
    assert_eq!(red.c.shape(), (2, 0));
    let total: f64 = red.hankel_singular_values.iter().sum();
    assert_close!(red.error_bound, 2.0 * total);
    let e = sweep_error((&a, &b, &c, &d), &red, 0.0);
    assert!(e <= red.error_bound && e >= red.hankel_singular_values[0] * (1.0 - 1e-6));
    for order in [5, 9] {
        let red = balanced_truncation(&a, &b, &c, &d, 0.0, order).expect("full order");
        assert_eq!((red.a.clone(), red.error_bound), (a.clone(), 0.0));
        assert_eq!(red.hankel_singular_values.len(), 5);
    }
}

/// A 6-state model with two uncontrollable modes, hidden by an orthogonal change of
/// basis (constructed: the input reaches only the first four states).
fn non_minimal(rng: &mut Rng, dt: f64) -> (DMatrix<f64>, DMatrix<f64>, DMatrix<f64>, DMatrix<f64>) {
    let (a1, b1, _, _) = random_model(rng, 4, 2, 2, dt);
    let mut a = DMatrix::zeros(6, 6);
    a.view_mut((0, 0), (4, 4)).copy_from(&a1);
    let (l1, l2) = if dt == 0.0 { (-1.5, -0.7) } else { (0.3, -0.6) };
    a[(4, 4)] = l1;
    a[(5, 5)] = l2;
    a[(4, 5)] = 0.4;
    let mut b = DMatrix::zeros(6, 2);
    b.view_mut((0, 0), (4, 2)).copy_from(&b1);
    let c = rng.matrix(2, 6);
    let d = rng.matrix(2, 2);
    let q = rng.matrix(6, 6).qr().q();
    (&q * a * q.transpose(), &q * b, c * q.transpose(), d)
}

#[test]
fn non_minimal_models() {
    let mut rng = Rng::new(34);
    for &dt in &[0.0, 1.0] {
        let (a, b, c, d) = non_minimal(&mut rng, dt);
        match balanced_realization(&a, &b, &c, &d, dt) {
            Err(NumError::NoSolution { why, .. }) => {
                assert!(why.contains("not minimal"), "{why}");
                assert!(why.contains("σ6"), "{why}");
                assert!(why.contains("rank 4"), "{why}");
            }
            other => panic!("expected a non-minimality error, found {other:?}"),
        }
        let hsv = hankel_singular_values(&a, &b, &c, dt).expect("hsv");
        assert!(hsv[4] < 1e-13 * hsv[0] && hsv[3] > 1e-6 * hsv[0], "{hsv:?}");
        // Order = numerical rank: the error is at the rounding level (bound ≈ 0).
        let red = balanced_truncation(&a, &b, &c, &d, dt, 4).expect("order = rank");
        let e = sweep_error((&a, &b, &c, &d), &red, dt);
        assert!(e <= red.error_bound + 1e-10 * hsv[0], "e = {e}");
        let red = balanced_truncation(&a, &b, &c, &d, dt, 2).expect("order < rank");
        let e = sweep_error((&a, &b, &c, &d), &red, dt);
        assert!(e <= red.error_bound * (1.0 + 1e-9) + 1e-12);
        match balanced_truncation(&a, &b, &c, &d, dt, 5) {
            Err(NumError::NoSolution { why, .. }) => {
                assert!(why.contains("numerical rank 4"), "{why}")
            }
            other => panic!("expected a rank error, found {other:?}"),
        }
    }
}

#[test]
fn unstable_models_have_infinite_gramians() {
    // det = −1.6 < 0: one eigenvalue is positive (≈ 0.46).
    let a = DMatrix::from_row_slice(2, 2, &[0.2, 1.0, 1.0, -3.0]);
    let b = DMatrix::from_row_slice(2, 1, &[0.0, 1.0]);
    let c = DMatrix::from_row_slice(1, 2, &[1.0, 0.0]);
    let d = DMatrix::zeros(1, 1);
    for err in [
        controllability_gramian(&a, &b, 0.0).expect_err("unstable"),
        observability_gramian(&a, &c, 0.0).expect_err("unstable"),
        hankel_singular_values(&a, &b, &c, 0.0).expect_err("unstable"),
        balanced_realization(&a, &b, &c, &d, 0.0)
            .map(|_| ())
            .expect_err("unstable"),
        balanced_truncation(&a, &b, &c, &d, 0.0, 1)
            .map(|_| ())
            .expect_err("unstable"),
    ] {
        let text = err.to_string();
        assert!(
            text.contains("infinite") && text.contains("not Hurwitz"),
            "{text}"
        );
    }
    // Discrete: eigenvalue 1.1 is outside the unit circle.
    let ad = DMatrix::from_row_slice(2, 2, &[1.1, 0.0, 0.5, 0.2]);
    let text = controllability_gramian(&ad, &b, 0.01)
        .expect_err("unstable")
        .to_string();
    assert!(
        text.contains("infinite") && text.contains("Schur-stable"),
        "{text}"
    );
    let text = hankel_singular_values(&ad, &b, &c, 0.01)
        .expect_err("unstable")
        .to_string();
    assert!(text.contains("infinite"), "{text}");
}

#[test]
fn argument_checks() {
    let a = DMatrix::identity(2, 2) * -1.0;
    let b = DMatrix::zeros(2, 1);
    let c = DMatrix::zeros(1, 2);
    let d = DMatrix::zeros(1, 1);
    assert!(matches!(
        controllability_gramian(&a, &b, -1.0),
        Err(NumError::InvalidArgument { .. })
    ));
    assert!(matches!(
        hankel_singular_values(&a, &b, &c, f64::NAN),
        Err(NumError::InvalidArgument { .. })
    ));
    assert!(matches!(
        balanced_realization(&a, &DMatrix::zeros(3, 1), &c, &d, 0.0),
        Err(NumError::ShapeMismatch { .. })
    ));
    assert!(matches!(
        balanced_realization(&a, &b, &c, &DMatrix::zeros(2, 1), 0.0),
        Err(NumError::ShapeMismatch { .. })
    ));
    assert!(matches!(
        observability_gramian(&a, &DMatrix::zeros(1, 3), 0.0),
        Err(NumError::ShapeMismatch { .. })
    ));
    let mut bad = c.clone();
    bad[(0, 1)] = f64::INFINITY;
    assert!(matches!(
        balanced_truncation(&a, &b, &bad, &d, 0.0, 1),
        Err(NumError::NotFinite { .. })
    ));
    // B = 0: every Hankel singular value is zero, the model is not minimal.
    assert_eq!(
        hankel_singular_values(&a, &b, &c, 0.0).expect("hsv"),
        vec![0.0, 0.0]
    );
    assert!(matches!(
        balanced_realization(&a, &b, &c, &d, 0.0),
        Err(NumError::NoSolution { .. })
    ));
    // Empty state: trivial results.
    let e = DMatrix::zeros(0, 0);
    let bal = balanced_realization(&e, &DMatrix::zeros(0, 1), &DMatrix::zeros(1, 0), &d, 0.0)
        .expect("empty");
    assert!(bal.hankel_singular_values.is_empty() && bal.t.is_empty());
}
