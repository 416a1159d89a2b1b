use super::*;
use crate::assert_close;
use crate::numeric::testing::Rng;

fn m(rows: usize, cols: usize, v: &[f64]) -> DMatrix<f64> {
    DMatrix::from_row_slice(rows, cols, v)
}

/// Residual-ratio threshold for well-conditioned random cases: a small multiple of n·ε
/// (the scaled-residual idea of LAPACK-style tests; the factor 100 is our choice).
fn threshold(n: usize) -> f64 {
    100.0 * n as f64 * f64::EPSILON
}

#[test]
fn double_integrator_closed_form() {
    // A = [[0, 1], [0, 0]], B = [0; 1], Q = I, R = 1. Writing X = [[p, q], [q, s]], the
    // equation AᵀX + XA − XBBᵀX + I = 0 reads entrywise
    //   (1,1): −q² + 1 = 0,  (1,2): p − q·s = 0,  (2,2): 2q − s² + 1 = 0.
    // X ⪰ 0 and stabilizing give q = 1, s = √3, p = √3, so X = [[√3, 1], [1, √3]] and
    // K = BᵀX = [1, √3] (closed loop s² + √3 s + 1, poles −√3/2 ± i/2).
    let a = m(2, 2, &[0.0, 1.0, 0.0, 0.0]);
    let b = m(2, 1, &[0.0, 1.0]);
    let s3 = 3f64.sqrt();
    let sol = solve_riccati(&a, &b, &DMatrix::identity(2, 2), &m(1, 1, &[1.0])).unwrap();
    assert_close!(sol.x, m(2, 2, &[s3, 1.0, 1.0, s3]), 1e-14, 1e-14);
    assert_close!(sol.gain, m(1, 2, &[1.0, s3]), 1e-14, 1e-14);
    let p = &sol.closed_loop_poles;
    assert_close!(p[0].re, -s3 / 2.0, 1e-14, 1e-14);
    assert_close!(p[0].im, -0.5, 1e-14, 1e-14);
    assert!(sol.residual < threshold(2), "residual {}", sol.residual);
}

#[test]
fn scalar_continuous_closed_form() {
    // Scalar: 2a·x − (b²/r)·x² + q = 0, whose stabilizing root (a − b²x/r < 0) is
    // x = (a + √(a² + b²q/r))·r/b².
    for &(a, b, q, r) in &[
        (1.0, 1.0, 1.0, 1.0),
        (-2.0, 0.5, 3.0, 0.1),
        (5.0, 2.0, 0.0, 4.0),
    ] {
        let sol = solve_riccati(
            &m(1, 1, &[a]),
            &m(1, 1, &[b]),
            &m(1, 1, &[q]),
            &m(1, 1, &[r]),
        )
        .unwrap();
        let want = (a + (a * a + b * b * q / r).sqrt()) * r / (b * b);
        assert_close!(sol.x[(0, 0)], want, 1e-14, 1e-14);
        assert!(sol.closed_loop_poles[0].re < 0.0);
    }
}

#[test]
fn scalar_discrete_closed_form() {
    // Scalar: x = a²x − a²b²x²/(r + b²x) + q. Multiplying by (r + b²x):
    //   b²x² + (r − a²r − q·b²)·x − q·r = 0, so with c = r(1 − a²) − q·b²
    //   x = (−c + √(c² + 4b²qr)) / (2b²), the non-negative (stabilizing) root.
    for &(a, b, q, r) in &[
        (1.2, 1.0, 1.0, 1.0),
        (0.5, 2.0, 3.0, 0.1),
        (-3.0, 0.5, 0.0, 2.0),
    ] {
        let sol = solve_riccati_discrete(
            &m(1, 1, &[a]),
            &m(1, 1, &[b]),
            &m(1, 1, &[q]),
            &m(1, 1, &[r]),
        )
        .unwrap();
        let c = r * (1.0 - a * a) - q * b * b;
        let want = (-c + (c * c + 4.0 * b * b * q * r).sqrt()) / (2.0 * b * b);
        assert_close!(sol.x[(0, 0)], want, 1e-14, 1e-13);
        assert!(sol.closed_loop_poles[0].norm() < 1.0);
    }
}

#[test]
fn double_integrator_discrete_residual_and_stability() {
    // Sampled double integrator (dt = 0.1, zero-order hold: A = [[1, dt], [0, 1]],
    // B = [dt²/2; dt]); both poles at z = 1, the case doubling handles without
    // inverting anything. Checked by residual and closed-loop stability.
    let dt = 0.1;
    let a = m(2, 2, &[1.0, dt, 0.0, 1.0]);
    let b = m(2, 1, &[dt * dt / 2.0, dt]);
    let sol = solve_riccati_discrete(&a, &b, &DMatrix::identity(2, 2), &m(1, 1, &[1.0])).unwrap();
    assert!(sol.residual < threshold(2), "residual {}", sol.residual);
    assert!(sol.closed_loop_poles.iter().all(|z| z.norm() < 1.0));
}

/// A random stabilizable problem: A with eigenvalues in both half planes, B n×m
/// (random B makes (A, B) controllable with probability one), Q = CᵀC + 0.1·I, R SPD.
fn random_problem(rng: &mut Rng, n: usize, m: usize, scale: f64) -> [DMatrix<f64>; 4] {
    let a = rng.matrix(n, n) * scale;
    let b = rng.matrix(n, m);
    let c = rng.matrix(n, n);
    let q = c.transpose() * c + DMatrix::identity(n, n) * 0.1;
    let l = rng.matrix(m, m);
    let r = &l * l.transpose() + DMatrix::identity(m, m);
    [a, b, q, r]
}

#[test]
fn random_continuous_residual_ratio() {
    // Single-input random models of order 40 are numerically almost uncontrollable:
    // ‖X‖ grows roughly geometrically with n (about 1e5 at n = 10, 1e13 at n = 30 in a
    // trial), so U₁₁ is singular to working precision at n = 40 and m = 1. Order 40 is
    // therefore tested with 5 and 20 inputs.
    let mut rng = Rng::new(11);
    for &n in &[1usize, 2, 3, 10, 40] {
        let inputs: &[usize] = if n >= 40 { &[5, 20] } else { &[1, 2, 5] };
        for &m in inputs.iter().filter(|&&m| m <= n.max(1)) {
            let [a, b, q, r] = random_problem(&mut rng, n, m, 1.0);
            let sol = solve_riccati(&a, &b, &q, &r)
                .unwrap_or_else(|e| panic!("n={n} m={m}: {e}\nA={a}B={b}Q={q}R={r}"));
            assert!(
                sol.residual < threshold(n),
                "n={n} m={m}: residual {}",
                sol.residual
            );
            assert!(sol.closed_loop_poles.iter().all(|z| z.re < 0.0));
            // X symmetric positive semidefinite (Q ≻ 0 here, so positive definite).
            let e = SymmetricEigen::new(sol.x.clone());
            assert!(e.eigenvalues.iter().all(|v| *v > 0.0), "n={n}: X not PD");
            // K = R⁻¹BᵀX, checked as R K = BᵀX.
            let lhs = &r * &sol.gain;
            let rhs = b.transpose() * &sol.x;
            assert_close!(lhs, rhs, 1e-11 * rhs.amax().max(1.0), 1e-10);
        }
    }
}

#[test]
fn random_discrete_residual_ratio() {
    let mut rng = Rng::new(12);
    for &n in &[1usize, 2, 3, 10, 40] {
        for m in [1, n.div_ceil(2)] {
            // Scale 1.2/√n puts the spectral radius of A near 1.2: modes on both sides
            // of the unit circle.
            let [a, b, q, r] = random_problem(&mut rng, n, m, 1.2 / (n as f64).sqrt());
            let sol = solve_riccati_discrete(&a, &b, &q, &r).unwrap();
            assert!(
                sol.residual < threshold(n),
                "n={n} m={m}: residual {}",
                sol.residual
            );
            assert!(sol.closed_loop_poles.iter().all(|z| z.norm() < 1.0));
        }
    }
}

#[test]
fn discrete_singular_a() {
    // A nilpotent (singular): methods that invert A fail here. Residual check.
    let a = m(3, 3, &[0.0, 1.0, 0.0, 0.0, 0.0, 1.0, 0.0, 0.0, 0.0]);
    let b = m(3, 1, &[0.0, 0.0, 1.0]);
    let sol = solve_riccati_discrete(&a, &b, &DMatrix::identity(3, 3), &m(1, 1, &[0.5])).unwrap();
    assert!(sol.residual < threshold(3), "residual {}", sol.residual);
}

/// A chain of `k` lightly damped oscillators (ω_i = i, ζ = 0.001), coupled by springs,
/// force input on the first mass only.
fn lightly_damped_chain(k: usize) -> (DMatrix<f64>, DMatrix<f64>) {
    let n = 2 * k;
    let mut a = DMatrix::zeros(n, n);
    for i in 0..k {
        let w = (i + 1) as f64;
        a[(2 * i, 2 * i + 1)] = 1.0;
        a[(2 * i + 1, 2 * i)] = -w * w;
        a[(2 * i + 1, 2 * i + 1)] = -2.0 * 0.001 * w;
        if i + 1 < k {
            a[(2 * i + 1, 2 * i + 2)] = 0.5;
            a[(2 * i + 3, 2 * i)] = 0.5;
        }
    }
    let mut b = DMatrix::zeros(n, 1);
    b[(1, 0)] = 1.0;
    (a, b)
}

#[test]
fn ill_conditioned_chain_small_r() {
    // Lightly damped chain, cheap control (R = 1e-8): ‖X‖ and ‖K‖ are large and the
    // Hamiltonian badly scaled; the relative residual must still be small. The
    // threshold 1e3·n·ε allows for the condition of the problem (our choice).
    let (a, b) = lightly_damped_chain(5);
    let n = a.nrows();
    for &r in &[1e-8, 1.0, 1e6] {
        let sol = solve_riccati(&a, &b, &DMatrix::identity(n, n), &m(1, 1, &[r])).unwrap();
        assert!(
            sol.residual < 1e3 * n as f64 * f64::EPSILON,
            "r={r}: residual {}",
            sol.residual
        );
        assert!(sol.closed_loop_poles.iter().all(|z| z.re < 0.0));
    }
}

#[test]
fn continuous_u11_condition_matches_graph_identity() {
    // For α = 1 (‖Q‖_F = ‖G‖_F) the Schur basis and the identity U₁₁ = (I + X²)^{-1/2}
    // describe the same subspace, so their conditions agree.
    let a = m(2, 2, &[0.0, 1.0, -2.0, 0.3]);
    let b = m(2, 2, &[1.0, 0.0, 0.0, 1.0]);
    let q = DMatrix::identity(2, 2);
    let sol = solve_riccati(&a, &b, &q, &DMatrix::identity(2, 2)).unwrap();
    assert_close!(sol.u11_condition, graph_condition(&sol.x), 1e-12, 1e-12);
}

#[test]
fn uncontrollable_unstable_mode_is_named() {
    // Mode 1 is unstable and B does not reach it.
    let a = m(2, 2, &[1.0, 0.0, 0.0, -1.0]);
    let b = m(2, 1, &[0.0, 1.0]);
    let q = DMatrix::identity(2, 2);
    let r = m(1, 1, &[1.0]);
    let e = solve_riccati(&a, &b, &q, &r).unwrap_err().to_string();
    assert!(
        e.contains("not stabilizable") && e.contains("1.000000"),
        "{e}"
    );
    let ad = m(2, 2, &[1.5, 0.0, 0.0, 0.5]);
    let e = solve_riccati_discrete(&ad, &b, &q, &r)
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("not stabilizable") && e.contains("1.500000"),
        "{e}"
    );
}

#[test]
fn unobservable_mode_on_boundary_is_named() {
    // Continuous: oscillator poles ±2i, Q = 0 sees nothing; the Hamiltonian has its
    // eigenvalues on the imaginary axis.
    let a = m(2, 2, &[0.0, 1.0, -4.0, 0.0]);
    let b = m(2, 1, &[0.0, 1.0]);
    let q = DMatrix::zeros(2, 2);
    let r = m(1, 1, &[1.0]);
    let e = solve_riccati(&a, &b, &q, &r).unwrap_err().to_string();
    assert!(
        e.contains("imaginary axis") && e.contains("unobservable"),
        "{e}"
    );
    // Integrator 0 unseen by Q = diag(0, 1) on a decoupled stable second state.
    let a2 = m(2, 2, &[0.0, 0.0, 0.0, -1.0]);
    let b2 = m(2, 1, &[1.0, 1.0]);
    let q2 = m(2, 2, &[0.0, 0.0, 0.0, 1.0]);
    let e = solve_riccati(&a2, &b2, &q2, &r).unwrap_err().to_string();
    assert!(e.contains("unobservable") && e.contains("0.000000"), "{e}");
    // Discrete: a rotation (poles e^{±i}) with Q = 0.
    let (c, s) = (1f64.cos(), 1f64.sin());
    let ad = m(2, 2, &[c, -s, s, c]);
    let e = solve_riccati_discrete(&ad, &b, &q, &r)
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("unit circle") && e.contains("unobservable"),
        "{e}"
    );
}

#[test]
fn undetectable_unstable_mode_still_solved() {
    // Q = 0 with A unstable: the stabilizing solution exists (it mirrors the unstable
    // poles). Scalar closed forms: continuous x = 2a·r/b² (pole −a), discrete
    // x = r(a² − 1)/b² (pole 1/a), from the formulas of the scalar tests with q = 0.
    let (a, b, r) = (2.0, 1.0, 1.0);
    let z = m(1, 1, &[0.0]);
    let c = solve_riccati(&m(1, 1, &[a]), &m(1, 1, &[b]), &z, &m(1, 1, &[r])).unwrap();
    assert_close!(c.x[(0, 0)], 2.0 * a * r / (b * b), 1e-14, 1e-14);
    let d = solve_riccati_discrete(&m(1, 1, &[a]), &m(1, 1, &[b]), &z, &m(1, 1, &[r])).unwrap();
    assert_close!(d.x[(0, 0)], r * (a * a - 1.0) / (b * b), 1e-14, 1e-13);
    assert_close!(d.closed_loop_poles[0].re, 1.0 / a, 1e-14, 1e-13);
}

#[test]
fn bad_input_is_named() {
    let a = DMatrix::identity(2, 2);
    let b = m(2, 1, &[1.0, 1.0]);
    let q = DMatrix::identity(2, 2);
    let r = m(1, 1, &[1.0]);
    let e = solve_riccati(&m(2, 3, &[0.0; 6]), &b, &q, &r).unwrap_err();
    assert!(matches!(e, NumError::NotSquare { .. }));
    let e = solve_riccati(&a, &m(3, 1, &[1.0; 3]), &q, &r)
        .unwrap_err()
        .to_string();
    assert!(e.starts_with("B:"), "{e}");
    let e = solve_riccati(&a, &b, &m(2, 2, &[1.0, 2.0, 0.0, 1.0]), &r).unwrap_err();
    assert!(e.to_string().contains("symmetric"), "{e}");
    let e = solve_riccati(&a, &b, &m(2, 2, &[1.0, 0.0, 0.0, -1.0]), &r).unwrap_err();
    assert!(e.to_string().contains("positive semidefinite"), "{e}");
    let e = solve_riccati_discrete(&a, &b, &q, &m(1, 1, &[0.0])).unwrap_err();
    assert!(
        e.to_string().starts_with("R:") && e.to_string().contains("definite"),
        "{e}"
    );
    let e = solve_riccati(&a, &b, &q, &m(2, 2, &[1.0; 4])).unwrap_err();
    assert!(e.to_string().starts_with("R:"), "{e}");
    let e = solve_riccati(&a, &b, &m(2, 2, &[f64::NAN, 0.0, 0.0, 1.0]), &r).unwrap_err();
    assert!(matches!(e, NumError::NotFinite { .. }));
}

#[test]
fn empty_and_inputless() {
    let z = DMatrix::zeros(0, 0);
    let sol = solve_riccati(&z, &DMatrix::zeros(0, 1), &z, &m(1, 1, &[1.0])).unwrap();
    assert_eq!(sol.gain.shape(), (1, 0));
    // No inputs, stable A: the equation is the Lyapunov equation AᵀX + XA + Q = 0;
    // scalar a = −1, q = 2 gives x = q/(2|a|) = 1.
    let sol = solve_riccati(
        &m(1, 1, &[-1.0]),
        &DMatrix::zeros(1, 0),
        &m(1, 1, &[2.0]),
        &z,
    )
    .unwrap();
    assert_close!(sol.x[(0, 0)], 1.0, 1e-14, 1e-14);
    // Discrete scalar a = 0.5, q = 0.75: x = q/(1 − a²) = 1.
    let sol = solve_riccati_discrete(
        &m(1, 1, &[0.5]),
        &DMatrix::zeros(1, 0),
        &m(1, 1, &[0.75]),
        &z,
    )
    .unwrap();
    assert_close!(sol.x[(0, 0)], 1.0, 1e-14, 1e-14);
}
