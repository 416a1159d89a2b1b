use super::*;
use crate::numeric::testing::Rng;

fn c(re: f64, im: f64) -> C64 {
    C64::new(re, im)
}

/// Greedy nearest matching of achieved to wanted poles; returns the largest distance.
fn worst_mismatch(wanted: &[C64], achieved: &[C64]) -> f64 {
    let mut free: Vec<C64> = achieved.to_vec();
    let mut worst = 0.0f64;
    for w in wanted {
        let (k, d) = free
            .iter()
            .enumerate()
            .map(|(k, z)| (k, (z - w).norm()))
            .min_by(|x, y| x.1.total_cmp(&y.1))
            .unwrap();
        worst = worst.max(d);
        free.remove(k);
    }
    worst
}

/// The first-order accuracy bound for simple poles (see `assign_poles_with`): a
/// backward error of c·n·ε·(‖A‖ + ‖B‖‖K‖) magnified by the eigenvector condition. The
/// constant c = 100 is our choice (a LAPACK-style test ratio of order 1–100).
fn bound(a: &DMatrix<f64>, b: &DMatrix<f64>, r: &PoleAssignment) -> f64 {
    let n = a.nrows() as f64;
    100.0 * n * f64::EPSILON * r.eigenvector_condition * (a.norm() + b.norm() * r.gain.norm())
}

/// Poles spread in the left half plane: reals and pairs, distinct.
fn target(n: usize) -> Vec<C64> {
    let mut p = Vec::new();
    let mut k = 0;
    while p.len() < n {
        let re = -1.0 - 0.5 * k as f64;
        if p.len() + 2 <= n && k % 2 == 1 {
            p.push(c(re, 1.0 + 0.3 * k as f64));
            p.push(c(re, -1.0 - 0.3 * k as f64));
        } else {
            p.push(c(re, 0.0));
        }
        k += 1;
    }
    p
}

#[test]
fn single_input_random_orders() {
    let mut rng = Rng::new(21);
    for &n in &[1usize, 2, 3, 10] {
        let a = rng.matrix(n, n);
        let b = rng.matrix(n, 1);
        let want = target(n);
        let r = assign_poles(&a, &b, &want).unwrap();
        let err = worst_mismatch(&want, &r.achieved);
        let tol = bound(&a, &b, &r);
        assert!(err <= tol, "n={n}: error {err:e} > bound {tol:e}");
    }
}

#[test]
fn full_rank_input_matrix() {
    // rank B = n: every S_j is the whole space and K = B⁻¹(A − XΛX⁻¹) exists for any
    // poles, repeated up to n times. Refused before (X started singular). Cases: A = 0
    // with B = I, a random A with a random B, and states scaled by 1e∓3.
    let mut rng = Rng::new(77);
    for &n in &[1usize, 2, 3, 5] {
        let cases = [
            (DMatrix::zeros(n, n), DMatrix::identity(n, n)),
            (
                rng.matrix(n, n),
                rng.matrix(n, n) + DMatrix::identity(n, n) * 2.0,
            ),
        ];
        for (a, b) in cases {
            let t = DMatrix::from_fn(n, n, |i, j| {
                if i != j {
                    0.0
                } else if i % 2 == 0 {
                    1e-3
                } else {
                    1e3
                }
            });
            let ti = t.map(|v| if v == 0.0 { 0.0 } else { 1.0 / v });
            let scaled = (&ti * &a * &t, &ti * &b);
            for (a, b) in [(a.clone(), b.clone()), scaled] {
                let repeated = vec![c(-2.0, 0.0); n];
                for want in [target(n), repeated] {
                    let r = assign_poles(&a, &b, &want)
                        .unwrap_or_else(|e| panic!("n = {n}: {e}\nA = {a}B = {b}"));
                    let err = worst_mismatch(&want, &r.achieved);
                    let tol = bound(&a, &b, &r).max(1e-9);
                    assert!(err <= tol, "n={n}: error {err:e} > {tol:e}");
                }
            }
        }
    }
}

#[test]
fn double_integrator_closed_form() {
    // A = [[0, 1], [0, 0]], b = [0; 1]: A − bK = [[0, 1], [−k₁, −k₂]] has characteristic
    // polynomial s² + k₂s + k₁, so poles −1 ± i (s² + 2s + 2) need K = [2, 2].
    let a = DMatrix::from_row_slice(2, 2, &[0.0, 1.0, 0.0, 0.0]);
    let b = DMatrix::from_row_slice(2, 1, &[0.0, 1.0]);
    let r = assign_poles(&a, &b, &[c(-1.0, 1.0), c(-1.0, -1.0)]).unwrap();
    crate::assert_close!(
        r.gain,
        DMatrix::from_row_slice(1, 2, &[2.0, 2.0]),
        1e-14,
        1e-14
    );
}

#[test]
fn single_input_repeated_pole() {
    // A 4-fold pole at −2 with one input: the closed loop is one 4×4 Jordan block, so
    // individual poles are only accurate to about (ε·‖closed loop‖)^{1/4}, while the
    // mean of the cluster (the trace/4) is well conditioned.
    let mut rng = Rng::new(22);
    let a = rng.matrix(4, 4);
    let b = rng.matrix(4, 1);
    let want = vec![c(-2.0, 0.0); 4];
    let r = assign_poles(&a, &b, &want).unwrap();
    let scale = a.norm() + b.norm() * r.gain.norm();
    let err = worst_mismatch(&want, &r.achieved);
    assert!(
        err <= 10.0 * (f64::EPSILON * scale).powf(0.25),
        "error {err:e}"
    );
    let mean = r.achieved.iter().fold(c(0.0, 0.0), |s, z| s + z) / 4.0;
    assert!(
        (mean - c(-2.0, 0.0)).norm() <= 1e3 * f64::EPSILON * scale,
        "mean {mean}"
    );
    assert!(r.eigenvector_condition > 1e3);
}

#[test]
fn multi_input_random_and_repeated() {
    let mut rng = Rng::new(23);
    for &(n, m) in &[(3usize, 2usize), (6, 3), (10, 4)] {
        let a = rng.matrix(n, n);
        let b = rng.matrix(n, m);
        let want = target(n);
        let r = assign_poles(&a, &b, &want).unwrap();
        let err = worst_mismatch(&want, &r.achieved);
        assert!(err <= bound(&a, &b, &r), "n={n} m={m}: error {err:e}");
        assert!(
            r.eigenvector_condition < 1e6,
            "cond {}",
            r.eigenvector_condition
        );
    }
    // Repeated poles, multiplicity ≤ rank B = 3: a triple real pole and a double pair.
    let (n, m) = (7, 3);
    let a = rng.matrix(n, n);
    let b = rng.matrix(n, m);
    let want = vec![
        c(-1.0, 0.0),
        c(-1.0, 0.0),
        c(-1.0, 0.0),
        c(-2.0, 1.0),
        c(-2.0, -1.0),
        c(-2.0, 1.0),
        c(-2.0, -1.0),
    ];
    let r = assign_poles(&a, &b, &want).unwrap();
    let err = worst_mismatch(&want, &r.achieved);
    assert!(err <= bound(&a, &b, &r), "repeated: error {err:e}");
    assert!(r.eigenvector_condition.is_finite());
}

#[test]
fn rank_deficient_b_uses_the_single_input_path() {
    // B with two equal columns has rank 1: the problem is single-input (B = σ u vᵀ).
    let mut rng = Rng::new(24);
    let a = rng.matrix(3, 3);
    let col = rng.matrix(3, 1);
    let mut b = DMatrix::zeros(3, 2);
    b.set_column(0, &col.column(0));
    b.set_column(1, &col.column(0));
    let want = vec![c(-1.0, 0.0), c(-2.0, 0.0), c(-3.0, 0.0)];
    let r = assign_poles(&a, &b, &want).unwrap();
    assert!(worst_mismatch(&want, &r.achieved) <= bound(&a, &b, &r));
}

#[test]
fn errors_are_named() {
    let a = DMatrix::from_row_slice(2, 2, &[0.0, 1.0, 0.0, 0.0]);
    let b = DMatrix::from_row_slice(2, 1, &[0.0, 1.0]);
    let e = assign_poles(&a, &b, &[c(-1.0, 1.0), c(-1.0, 2.0)])
        .unwrap_err()
        .to_string();
    assert!(e.contains("conjugation"), "{e}");
    let e = assign_poles(&a, &b, &[c(-1.0, 0.0)])
        .unwrap_err()
        .to_string();
    assert!(e.contains("expected 2 poles"), "{e}");
    // Uncontrollable: diag(1, 3) with B = e₁ cannot move the mode 3.
    let a2 = DMatrix::from_row_slice(2, 2, &[1.0, 0.0, 0.0, 3.0]);
    let b2 = DMatrix::from_row_slice(2, 1, &[1.0, 0.0]);
    let e = assign_poles(&a2, &b2, &[c(-1.0, 0.0), c(-2.0, 0.0)])
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("not controllable") && e.contains("3.000000"),
        "{e}"
    );
    // Multiplicity above rank B (= 2).
    let b3 = DMatrix::from_row_slice(3, 2, &[1.0, 0.0, 0.0, 1.0, 1.0, 1.0]);
    let a3 = DMatrix::from_row_slice(3, 3, &[0.0, 1.0, 0.0, 0.0, 0.0, 1.0, 1.0, 2.0, 3.0]);
    let e = assign_poles(&a3, &b3, &[c(-1.0, 0.0); 3])
        .unwrap_err()
        .to_string();
    assert!(e.contains("repeated 3 times"), "{e}");
    let e = assign_poles(&a, &DMatrix::zeros(3, 1), &[c(-1.0, 0.0); 2]).unwrap_err();
    assert!(e.to_string().starts_with("B:"), "{e}");
    let e = assign_poles(&a, &b, &[c(f64::NAN, 0.0), c(-1.0, 0.0)]).unwrap_err();
    assert!(e.to_string().contains("finite"), "{e}");
}
