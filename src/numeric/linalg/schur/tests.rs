use super::*;
use crate::assert_close;
use crate::numeric::testing::Rng;

const EPS: f64 = f64::EPSILON;

fn norm1(m: &DMatrix<f64>) -> f64 {
    (0..m.ncols())
        .map(|j| m.column(j).iter().map(|x| x.abs()).sum::<f64>())
        .fold(0.0, f64::max)
}

/// LAPACK-style ratios ‖A − QTQᵀ‖₁/(n·ε·‖A‖₁) and ‖QᵀQ − I‖₁/(n·ε) (the residual tests of
/// the LAPACK test suite, threshold 30 — from memory).
fn ratios(a: &DMatrix<f64>, s: &RealSchur) -> (f64, f64) {
    let n = a.nrows();
    if n == 0 {
        return (0.0, 0.0);
    }
    let nf = n as f64;
    let back = &s.q * &s.t * s.q.transpose();
    let an = norm1(a).max(f64::MIN_POSITIVE);
    let r1 = norm1(&(a - back)) / (nf * EPS * an);
    let r2 = norm1(&(s.q.transpose() * &s.q - DMatrix::identity(n, n))) / (nf * EPS);
    (r1, r2)
}

/// Standard form: zeros below the blocks, 2×2 blocks with equal diagonal and
/// off-diagonals of opposite sign (the form produced by LAPACK's dlanv2).
fn assert_standard(s: &RealSchur) {
    assert!(quasi_triangular(&s.t).is_ok());
    for (k, size) in s.blocks() {
        if size == 2 {
            let t = &s.t;
            assert_eq!(t[(k, k)], t[(k + 1, k + 1)], "unequal diagonal at {k}");
            assert!(
                t[(k, k + 1)].signum() != t[(k + 1, k)].signum(),
                "same-sign off-diagonals at {k}"
            );
        }
    }
}

fn sorted(mut v: Vec<Complex<f64>>) -> Vec<Complex<f64>> {
    crate::numeric::order::sort_eigenvalues(&mut v);
    v
}

/// A·Qᵀ with eigenvalues σ±iω on 2×2 rotation blocks and a few real ones, hidden by a
/// random orthogonal similarity (many complex pairs by construction).
fn many_pairs(n: usize, rng: &mut Rng) -> DMatrix<f64> {
    let mut d = DMatrix::zeros(n, n);
    let mut k = 0;
    while k + 1 < n {
        let (sigma, omega) = (rng.normal(), 0.1 + rng.uniform());
        d[(k, k)] = sigma;
        d[(k + 1, k + 1)] = sigma;
        d[(k, k + 1)] = omega;
        d[(k + 1, k)] = -omega;
        k += 2;
    }
    if k < n {
        d[(k, k)] = rng.normal();
    }
    let z = rng.matrix(n, n).qr().q();
    &z * d * z.transpose()
}

#[test]
fn random_matrices_residuals_and_standard_form() {
    let mut rng = Rng::new(11);
    let mut worst = (0.0f64, 0.0f64);
    for &n in &[0usize, 1, 2, 3, 10, 57, 100] {
        for _ in 0..3 {
            let a = rng.matrix(n, n);
            let s = RealSchur::new(&a).unwrap();
            let (r1, r2) = ratios(&a, &s);
            worst = (worst.0.max(r1), worst.1.max(r2));
            assert!(r1 < 30.0 && r2 < 30.0, "n = {n}: ratios {r1}, {r2}");
            assert_standard(&s);
            assert_eq!(s.eigenvalues().len(), n);
        }
    }
    eprintln!("schur worst ratios: {worst:?}");
}

#[test]
fn empty_and_scalar() {
    let s = RealSchur::new(&DMatrix::zeros(0, 0)).unwrap();
    assert!(s.eigenvalues().is_empty() && s.blocks().is_empty());
    // 1×1: A = [−3] is its own Schur form (Q = [1]).
    let s = RealSchur::new(&DMatrix::from_element(1, 1, -3.0)).unwrap();
    assert_eq!(s.eigenvalues(), vec![Complex::new(-3.0, 0.0)]);
    assert_eq!(s.q[(0, 0)], 1.0);
}

#[test]
fn rejects_bad_input() {
    let a = DMatrix::from_row_slice(2, 2, &[1.0, f64::NAN, 0.0, 1.0]);
    assert!(matches!(
        RealSchur::new(&a),
        Err(NumError::NotFinite { row: 0, col: 1, .. })
    ));
    let b = DMatrix::zeros(2, 3);
    assert!(matches!(
        RealSchur::new(&b),
        Err(NumError::NotSquare {
            rows: 2,
            cols: 3,
            ..
        })
    ));
}

#[test]
fn rotation_block_closed_form() {
    // [[1, 2], [−8, 1]]: trace 2, determinant 17, so λ = 1 ± 4i (closed form from the
    // characteristic polynomial λ² − 2λ + 17). Standard form keeps a = 1, |b·c| = 16.
    let a = DMatrix::from_row_slice(2, 2, &[1.0, 2.0, -8.0, 1.0]);
    let s = RealSchur::new(&a).unwrap();
    assert_standard(&s);
    let ev = s.eigenvalues();
    assert!((ev[0] - Complex::new(1.0, 4.0)).norm() < 10.0 * EPS);
    assert_eq!(ev[1], ev[0].conj());
    // [[3, 1], [2, 2]]: λ² − 5λ + 4 = (λ − 1)(λ − 4), real: the block splits.
    let a = DMatrix::from_row_slice(2, 2, &[3.0, 1.0, 2.0, 2.0]);
    let s = RealSchur::new(&a).unwrap();
    assert_eq!(s.t[(1, 0)], 0.0);
    let ev = sorted(s.eigenvalues());
    assert_close!(ev[0].re, 1.0, 10.0 * EPS, 0.0);
    assert_close!(ev[1].re, 4.0, 10.0 * EPS, 0.0);
}

#[test]
fn lanv2_cases() {
    // Each case: the returned block rotated back reproduces the input
    // ([a₀ b₀; c₀ d₀] = R·S·Rᵀ, R = [cs −sn; sn cs], as documented for dlanv2), and is in
    // standard form. Inputs: generic complex, generic real, b = 0, c = 0, equal-diagonal
    // same-sign (real), tiny discriminant.
    let cases = [
        (1.0, 2.0, -3.0, 0.5),
        (4.0, 1.0, 2.0, -1.0),
        (1.0, 0.0, 5.0, 2.0),
        (1.0, 3.0, 0.0, 2.0),
        (2.0, 1.0, 4.0, 2.0),
        (1.0, 1e-9, -1e-9, 1.0 + 1e-17),
        (1e300, 1e300, -1e300, -1e300),
        (1e-300, 2e-300, -3e-300, 1e-300),
    ];
    for &(a, b, c, d) in &cases {
        let s = lanv2(a, b, c, d);
        let r = DMatrix::from_row_slice(2, 2, &[s.cs, -s.sn, s.sn, s.cs]);
        let st = DMatrix::from_row_slice(2, 2, &[s.a, s.b, s.c, s.d]);
        let back = &r * st * r.transpose();
        let orig = DMatrix::from_row_slice(2, 2, &[a, b, c, d]);
        let scale = orig.amax();
        assert!(
            (back - &orig).amax() <= 8.0 * EPS * scale,
            "case {a} {b} {c} {d}"
        );
        assert!(s.c == 0.0 || (s.a == s.d && s.b.signum() != s.c.signum()));
        // The trace is preserved: rt1 + rt2 = a + d (exact in exact arithmetic).
        assert_close!((s.rt1 + s.rt2).re, a + d, 8.0 * EPS * scale, 0.0);
    }
}

#[test]
fn cyclic_permutation_needs_exceptional_shifts() {
    // The cyclic permutation of order n stalls the double-shift iteration without
    // exceptional shifts (its Francis shifts are zero and a QR sweep reproduces the
    // matrix); its eigenvalues are the n-th roots of unity (closed form: Pⁿ = I with
    // minimal polynomial λⁿ − 1).
    for &n in &[10usize, 20, 57] {
        let p = DMatrix::from_fn(n, n, |i, j| if i == (j + 1) % n { 1.0 } else { 0.0 });
        let s = RealSchur::new(&p).unwrap();
        let (r1, r2) = ratios(&p, &s);
        assert!(r1 < 30.0 && r2 < 30.0, "n = {n}: {r1} {r2}");
        for z in s.eigenvalues() {
            assert_close!(z.norm(), 1.0, 1e-12, 0.0);
            assert!((z.powi(n as i32) - Complex::new(1.0, 0.0)).norm() < 1e-11);
        }
    }
}

#[test]
fn eigenvalues_only_agree_with_the_full_decomposition() {
    // The windowed iteration must find the spectrum of the full one: random matrices,
    // the cyclic permutation (exceptional shifts), a Jordan-like block and extreme
    // scalings (exact power-of-two prescaling).
    let mut rng = Rng::new(77);
    let mut cases: Vec<DMatrix<f64>> = Vec::new();
    for &n in &[0usize, 1, 2, 3, 4, 10, 57, 120] {
        cases.push(rng.matrix(n, n));
    }
    cases.push(DMatrix::from_fn(20, 20, |i, j| {
        if i == (j + 1) % 20 {
            1.0
        } else {
            0.0
        }
    }));
    cases.push(DMatrix::from_fn(8, 8, |i, j| {
        if j == i + 1 {
            1.0
        } else if i == j {
            2.0
        } else {
            0.0
        }
    }));
    cases.push(rng.matrix(12, 12) * 1e300);
    cases.push(rng.matrix(12, 12) * 1e-300);
    for a in &cases {
        let n = a.nrows();
        let full = sorted(RealSchur::new(a).unwrap().eigenvalues());
        let only = RealSchur::eigenvalues_only(a).unwrap();
        assert_eq!(only.len(), n);
        // Pairs are exact conjugates.
        for (k, z) in only.iter().enumerate() {
            if z.im > 0.0 {
                assert_eq!(only[k + 1], z.conj());
            }
        }
        let only = sorted(only);
        let scale = norm1(a).max(f64::MIN_POSITIVE);
        // The Jordan-like block's eigenvalue is 8-fold defective: ε^(1/8) sensitivity.
        let tol = if n == 8 { 0.1 * scale } else { 1e-10 * scale };
        for (x, y) in full.iter().zip(only.iter()) {
            assert!((x - y).norm() <= tol, "n = {n}: {x} vs {y}");
        }
    }
    assert!(RealSchur::eigenvalues_only(&DMatrix::zeros(2, 3)).is_err());
}

fn check_reorder(a: &DMatrix<f64>, select: impl Fn(Complex<f64>) -> bool + Copy) -> f64 {
    let mut s = RealSchur::new(a).unwrap();
    let before = s.eigenvalues();
    let expected = before
        .iter()
        .enumerate()
        .filter(|(k, z)| {
            // Pair members are selected together.
            let partner = if z.im > 0.0 {
                before.get(k + 1)
            } else if z.im < 0.0 {
                before.get(k - 1)
            } else {
                None
            };
            select(**z) || partner.is_some_and(|p| select(*p))
        })
        .count();
    let m = s.reorder(select).unwrap();
    assert_eq!(m, expected);
    assert_standard(&s);
    let after = s.eigenvalues();
    let n = a.nrows();
    for (k, z) in after.iter().enumerate() {
        let sel = select(*z) || select(z.conj());
        assert_eq!(sel, k < m, "eigenvalue {z} at {k}, m = {m}");
    }
    // The spectrum is unchanged (to rounding, after sorting by the house order).
    let (b, c) = (sorted(before), sorted(after));
    let scale = norm1(a).max(1.0);
    for (x, y) in b.iter().zip(c.iter()) {
        assert!((x - y).norm() < 1e-8 * scale, "{x} vs {y}");
    }
    // The leading m columns of Q span an invariant subspace: ‖A·Q₁ − Q₁·T₁₁‖ small.
    if m > 0 && m < n {
        let q1 = s.q.columns(0, m).clone_owned();
        let t11 = s.t.view((0, 0), (m, m)).clone_owned();
        let r = norm1(&(a * &q1 - &q1 * t11)) / (n as f64 * EPS * norm1(a));
        assert!(r < 30.0, "invariant subspace ratio {r}");
    }
    let (r1, r2) = ratios(a, &s);
    assert!(r1 < 30.0 && r2 < 30.0, "after reorder: {r1}, {r2}");
    r1.max(r2)
}

#[test]
fn reorder_stable_first_random() {
    let mut rng = Rng::new(2024);
    let mut worst = 0.0f64;
    for &n in &[0usize, 1, 2, 3, 10, 57, 100] {
        for _ in 0..3 {
            let a = rng.matrix(n, n);
            worst = worst.max(check_reorder(&a, |z| z.re < 0.0));
            worst = worst.max(check_reorder(&a, |z| z.re > 0.0));
        }
    }
    eprintln!("reorder worst ratio (random): {worst}");
}

#[test]
fn reorder_many_complex_pairs() {
    let mut rng = Rng::new(7);
    let mut worst = 0.0f64;
    for &n in &[2usize, 3, 10, 57] {
        for _ in 0..3 {
            let a = many_pairs(n, &mut rng);
            worst = worst.max(check_reorder(&a, |z| z.re < 0.0));
            // Select by imaginary part only: one member of each pair is chosen.
            worst = worst.max(check_reorder(&a, |z| z.im > 0.5));
        }
    }
    eprintln!("reorder worst ratio (pairs): {worst}");
}

#[test]
fn reorder_hamiltonian_stable_subspace() {
    // H = [A −G; −Q −Aᵀ] with G = BBᵀ, Q = CCᵀ is Hamiltonian: its spectrum is symmetric
    // about the imaginary axis (λ and −λ̄ both eigenvalues; Laub 1979), and with random
    // (generically stabilisable and detectable) data none lies on the axis, so exactly
    // half the eigenvalues are stable.
    let mut rng = Rng::new(1979);
    for &h in &[1usize, 5, 20, 50] {
        let a = rng.matrix(h, h);
        let b = rng.matrix(h, h);
        let c = rng.matrix(h, h);
        let mut hm = DMatrix::zeros(2 * h, 2 * h);
        hm.view_mut((0, 0), (h, h)).copy_from(&a);
        hm.view_mut((0, h), (h, h))
            .copy_from(&(-(&b * b.transpose())));
        hm.view_mut((h, 0), (h, h))
            .copy_from(&(-(&c * c.transpose())));
        hm.view_mut((h, h), (h, h)).copy_from(&(-a.transpose()));
        check_reorder(&hm, |z| z.re < 0.0);
        let mut s = RealSchur::new(&hm).unwrap();
        assert_eq!(s.reorder(|z| z.re < 0.0).unwrap(), h);
    }
}

#[test]
fn reorder_all_or_nothing_leaves_t() {
    let mut rng = Rng::new(5);
    let a = rng.matrix(10, 10);
    let s0 = RealSchur::new(&a).unwrap();
    let mut s = s0.clone();
    assert_eq!(s.reorder(|_| false).unwrap(), 0);
    assert_eq!(s, s0);
    assert_eq!(s.reorder(|_| true).unwrap(), 10);
    assert_eq!(s, s0);
}

#[test]
fn reorder_triangular_closed_form() {
    // Upper triangular T with diagonal 3, 2, 1, −1, −2: its eigenvalues are the diagonal
    // (closed form). Selecting Re < 0 must bring −1, −2 to the front in their order.
    let mut t = DMatrix::from_fn(5, 5, |i, j| if j > i { 1.0 + (i + j) as f64 } else { 0.0 });
    for (k, v) in [3.0, 2.0, 1.0, -1.0, -2.0].iter().enumerate() {
        t[(k, k)] = *v;
    }
    let mut s = RealSchur {
        q: DMatrix::identity(5, 5),
        t: t.clone(),
    };
    assert_eq!(s.reorder(|z| z.re < 0.0).unwrap(), 2);
    let ev: Vec<f64> = s.eigenvalues().iter().map(|z| z.re).collect();
    for (x, y) in ev.iter().zip([-1.0, -2.0, 3.0, 2.0, 1.0].iter()) {
        assert_close!(*x, *y, 1e-14, 0.0, "{ev:?}");
    }
    let (r1, _) = ratios(&t, &s);
    assert!(r1 < 30.0);
}

#[test]
fn reorder_close_or_equal_blocks_does_not_panic() {
    // Two identical 2×2 blocks (eigenvalues 1 ± 2i twice) coupled by a large T₁₂: the
    // swap is ill-posed. Either it succeeds with small residuals or it is refused.
    let mut t = DMatrix::zeros(4, 4);
    let blk = [[1.0, 2.0], [-2.0, 1.0]];
    for b in 0..2 {
        for i in 0..2 {
            for j in 0..2 {
                t[(2 * b + i, 2 * b + j)] = blk[i][j];
            }
        }
    }
    for i in 0..2 {
        for j in 2..4 {
            t[(i, j)] = 1e3 * (1.0 + i as f64 + j as f64);
        }
    }
    let mut s = RealSchur {
        q: DMatrix::identity(4, 4),
        t: t.clone(),
    };
    // Select only the second copy: the first block makes two calls (one per member of
    // the pair, both refused), the second block's first call is accepted.
    let calls = std::cell::Cell::new(0usize);
    let res = s.reorder(|_| {
        calls.set(calls.get() + 1);
        calls.get() > 2
    });
    match res {
        Ok(_) => {
            eprintln!("equal blocks: swap accepted");
            let (r1, r2) = ratios(&t, &s);
            assert!(r1 < 30.0 && r2 < 30.0);
        }
        Err(e) => {
            eprintln!("equal blocks: {e}");
            assert!(matches!(e, NumError::NoSolution { .. }), "{e}")
        }
    }
    // A 1×1 and a 2×2 block with a pair close to real and a huge coupling.
    let mut t = DMatrix::from_row_slice(3, 3, &[1.0, 1e8, 1e8, 0.0, 1.0, 1e-8, 0.0, -1e-8, 1.0]);
    t[(0, 0)] = 1.0;
    let mut s = RealSchur {
        q: DMatrix::identity(3, 3),
        t: t.clone(),
    };
    match s.reorder(|z| z.im != 0.0) {
        Ok(m) => {
            assert_eq!(m, 2);
            let (r1, r2) = ratios(&t, &s);
            assert!(r1 < 30.0 && r2 < 30.0, "{r1} {r2}");
        }
        Err(e) => assert!(matches!(e, NumError::NoSolution { .. }), "{e}"),
    }
}

#[test]
fn reorder_rejects_malformed_fields() {
    let mut s = RealSchur {
        q: DMatrix::identity(2, 2),
        t: DMatrix::zeros(3, 3),
    };
    assert!(matches!(
        s.reorder(|_| true),
        Err(NumError::ShapeMismatch { .. })
    ));
    let mut t = DMatrix::identity(3, 3);
    t[(2, 0)] = 1.0;
    let mut s = RealSchur {
        q: DMatrix::identity(3, 3),
        t,
    };
    assert!(matches!(
        s.reorder(|_| true),
        Err(NumError::InvalidArgument { .. })
    ));
    let mut t = DMatrix::identity(3, 3);
    t[(0, 1)] = f64::INFINITY;
    let mut s = RealSchur {
        q: DMatrix::identity(3, 3),
        t,
    };
    assert!(matches!(
        s.reorder(|_| true),
        Err(NumError::NotFinite { .. })
    ));
}

#[test]
fn small_sylvester_solves() {
    // For random blocks the computed X satisfies T₁₁X − XT₂₂ = γT₁₂ to rounding.
    let mut rng = Rng::new(3);
    for &(n1, n2) in &[(1usize, 2usize), (2, 1), (2, 2)] {
        let nd = n1 + n2;
        let mut d = rng.matrix(nd, nd);
        for i in n1..nd {
            for j in 0..n1 {
                d[(i, j)] = 0.0;
            }
        }
        let (x, g) = small_sylvester(&d, n1, n2);
        let t11 = d.view((0, 0), (n1, n1)).clone_owned();
        let t12 = d.view((0, n1), (n1, n2)).clone_owned();
        let t22 = d.view((n1, n1), (n2, n2)).clone_owned();
        let r = &t11 * &x - &x * &t22 - g * &t12;
        assert!(
            r.amax() < 100.0 * EPS * (1.0 + x.amax()) * d.amax(),
            "{n1}×{n2}: {r}"
        );
    }
}
