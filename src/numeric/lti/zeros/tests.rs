use super::*;
use crate::numeric::testing::Rng;

fn mat(rows: usize, cols: usize, v: &[f64]) -> DMatrix<f64> {
    DMatrix::from_row_slice(rows, cols, v)
}

fn real(v: &[f64]) -> Vec<Complex<f64>> {
    v.iter().map(|&x| Complex::new(x, 0.0)).collect()
}

/// Same length, and entrywise agreement within `tol·(1 + |w|)` in real and imaginary
/// parts (both lists sorted by the ordering convention).
fn assert_zeros(got: &[Complex<f64>], want: &[Complex<f64>], tol: f64) {
    assert_eq!(got.len(), want.len(), "got {got:?}, want {want:?}");
    for (g, w) in got.iter().zip(want) {
        let abs = tol * (1.0 + w.norm());
        crate::assert_close!(g.re, w.re, abs, 0.0);
        crate::assert_close!(g.im, w.im, abs, 0.0);
    }
}

/// Controllable companion form of (c₀ + c₁s + … + c_{n−1}s^{n−1}) /
/// (s^n + a_{n−1}s^{n−1} + … + a₀): A has ones on the superdiagonal and last row
/// [−a₀, …, −a_{n−1}], B = e_n, C = [c₀, …, c_{n−1}] (each column of C a numerator;
/// common practice, no source: C(sI − A)⁻¹e_n = C·[1, s, …, s^{n−1}]ᵀ / den(s)).
fn companion(den: &[f64], nums: &[&[f64]]) -> (DMatrix<f64>, DMatrix<f64>, DMatrix<f64>) {
    let n = den.len();
    let mut a = DMatrix::zeros(n, n);
    for k in 0..n - 1 {
        a[(k, k + 1)] = 1.0;
    }
    for (k, ak) in den.iter().enumerate() {
        a[(n - 1, k)] = -ak;
    }
    let mut b = DMatrix::zeros(n, 1);
    b[(n - 1, 0)] = 1.0;
    let c = DMatrix::from_fn(nums.len(), n, |i, j| nums[i][j]);
    (a, b, c)
}

/// σ_min(S(z)) / (‖[A B; C D]‖ + |z|) for the system matrix S(z): zero at an exact
/// zero of a model whose S(λ) has full column rank.
fn rank_drop(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    c: &DMatrix<f64>,
    d: &DMatrix<f64>,
    z: Complex<f64>,
) -> f64 {
    let (n, m, p) = (a.nrows(), b.ncols(), c.nrows());
    let mut s = DMatrix::<Complex<f64>>::zeros(n + p, n + m);
    for i in 0..n {
        for j in 0..n {
            s[(i, j)] =
                Complex::new(a[(i, j)], 0.0) - if i == j { z } else { Complex::new(0.0, 0.0) };
        }
        for j in 0..m {
            s[(i, n + j)] = Complex::new(b[(i, j)], 0.0);
        }
    }
    for i in 0..p {
        for j in 0..n {
            s[(n + i, j)] = Complex::new(c[(i, j)], 0.0);
        }
        for j in 0..m {
            s[(n + i, n + j)] = Complex::new(d[(i, j)], 0.0);
        }
    }
    let smin = s
        .singular_values()
        .iter()
        .fold(f64::INFINITY, |acc, x| acc.min(*x));
    let norm = (a.norm_squared() + b.norm_squared() + c.norm_squared() + d.norm_squared()).sqrt();
    smin / (norm + z.norm())
}

#[test]
fn siso_zeros_are_numerator_roots() {
    // G(s) = (s+2)(s−3) / ((s+1)(s+4)(s+5)) = (s² − s − 6) / (s³ + 10s² + 29s + 20):
    // companion form with den = [20, 29, 10], num = [−6, −1, 1]; zeros −2 and 3
    // (roots of the numerator, which shares no root with the denominator).
    let (a, b, c) = companion(&[20.0, 29.0, 10.0], &[&[-6.0, -1.0, 1.0]]);
    let d = DMatrix::zeros(1, 1);
    let z = transmission_zeros(&a, &b, &c, &d).expect("zeros");
    assert_zeros(&z, &real(&[-2.0, 3.0]), 1e-12);
}

#[test]
fn no_finite_zeros_for_constant_numerators() {
    // G(s) = 1 / (s+1)(s+2)(s+3)(s+4)(s+5)(s+6): numerator 1, relative degree 6, so no
    // finite zero (the infinite zero of order 6 is the classic source of spurious
    // large "zeros" when the unreduced system pencil is fed to QZ). Denominator
    // coefficients of ∏(s+k), k = 1..6: 720, 1764, 1624, 735, 175, 21 (expanded by hand).
    let (a, b, c) = companion(
        &[720.0, 1764.0, 1624.0, 735.0, 175.0, 21.0],
        &[&[1.0, 0.0, 0.0, 0.0, 0.0, 0.0]],
    );
    let d = DMatrix::zeros(1, 1);
    assert!(transmission_zeros(&a, &b, &c, &d)
        .expect("zeros")
        .is_empty());
    // Numerator s²: a double zero at the origin.
    let c2 = mat(1, 6, &[0.0, 0.0, 1.0, 0.0, 0.0, 0.0]);
    let z = transmission_zeros(&a, &b, &c2, &d).expect("zeros");
    assert_zeros(&z, &real(&[0.0, 0.0]), 1e-7);
}

#[test]
fn square_with_feedthrough() {
    // G(s) = 1 + (−6) / (s² + 3s + 2) = (s² + 3s − 4) / (s² + 3s + 2), zeros −4 and 1;
    // equivalently eig(A − B D⁻¹ C) = eig([[0, 1], [4, −3]]), λ² + 3λ − 4 = (λ+4)(λ−1).
    let (a, b, c) = companion(&[2.0, 3.0], &[&[-6.0, 0.0]]);
    let d = mat(1, 1, &[1.0]);
    let z = transmission_zeros(&a, &b, &c, &d).expect("zeros");
    assert_zeros(&z, &real(&[-4.0, 1.0]), 1e-12);
}

#[test]
fn mimo_two_by_two_hand_derived_zero() {
    // A = diag(−1, −2, −3), B = [[1,0],[0,1],[1,1]], C = [[1,0,0],[0,1,1]], D = 0.
    // A zero λ needs (A − λI)x + Bu = 0, Cx = 0. Cx = 0 gives x = (0, ξ, −ξ); the rows
    // of (A − λI)x + Bu = 0 read u₁ = 0, −(2+λ)ξ + u₂ = 0, (3+λ)ξ + u₁ + u₂ = 0, hence
    // (5 + 2λ)ξ = 0: the single zero λ = −5/2.
    let a = DMatrix::from_diagonal(&nalgebra::DVector::from_row_slice(&[-1.0, -2.0, -3.0]));
    let b = mat(3, 2, &[1.0, 0.0, 0.0, 1.0, 1.0, 1.0]);
    let c = mat(2, 3, &[1.0, 0.0, 0.0, 0.0, 1.0, 1.0]);
    let d = DMatrix::zeros(2, 2);
    let z = transmission_zeros(&a, &b, &c, &d).expect("zeros");
    assert_zeros(&z, &real(&[-2.5]), 1e-12);
    assert!(rank_drop(&a, &b, &c, &d, z[0]) < 1e-14);
}

#[test]
fn tall_model_has_only_common_zeros() {
    // Two outputs, one input, den = (s+1)(s+3)(s+4) = s³ + 8s² + 19s + 12,
    // numerators (s+2)(s+4) = s² + 6s + 8 and (s+2)(s+5) = s² + 7s + 10. In companion
    // form every solution of (A − λI)x + Bu = 0 is x = ξ(1, λ, λ²), so Cx = 0 needs both
    // numerators to vanish: the only zero is the common root −2 (−4 is a root of the
    // first channel only, so no mode is unobservable).
    let den = [12.0, 19.0, 8.0];
    let (a, b, c) = companion(&den, &[&[8.0, 6.0, 1.0], &[10.0, 7.0, 1.0]]);
    let d = DMatrix::zeros(2, 1);
    let z = transmission_zeros(&a, &b, &c, &d).expect("zeros");
    assert_zeros(&z, &real(&[-2.0]), 1e-12);
    let pencil = zero_pencil(&a, &b, &c, &d, &ZerosParams::default()).expect("pencil");
    assert_eq!(pencil.normal_rank, 1);
    // The dual (wide) model (Aᵀ, Cᵀ, Bᵀ, Dᵀ) has the same zeros (S transposed).
    let zt = transmission_zeros(
        &a.transpose(),
        &c.transpose(),
        &b.transpose(),
        &d.transpose(),
    )
    .expect("zeros");
    assert_zeros(&zt, &real(&[-2.0]), 1e-12);
    // Numerators s + 2 and s + 5 have no common root: no zero at all.
    let (a, b, c) = companion(&den, &[&[2.0, 1.0, 0.0], &[5.0, 1.0, 0.0]]);
    assert!(transmission_zeros(&a, &b, &c, &d)
        .expect("zeros")
        .is_empty());
}

#[test]
fn zero_that_cancels_a_pole_stays_a_zero_of_the_realization() {
    // G(s) = (s+1) / ((s+1)(s+2)) in companion form (den [2, 3], num [1, 1]): the mode
    // −1 is unobservable (C·(1, −1)ᵀ = 0 for the eigenvector (1, −1) of A), so S(−1)
    // drops rank: −1 is an invariant (output-decoupling) zero although G = 1/(s+2).
    let (a, b, c) = companion(&[2.0, 3.0], &[&[1.0, 1.0]]);
    let d = DMatrix::zeros(1, 1);
    let z = transmission_zeros(&a, &b, &c, &d).expect("zeros");
    assert_zeros(&z, &real(&[-1.0]), 1e-12);
    // The minimal realization of 1/(s+2) has no zero.
    let one = mat(1, 1, &[1.0]);
    assert!(transmission_zeros(&mat(1, 1, &[-2.0]), &one, &one, &d)
        .expect("zeros")
        .is_empty());
}

#[test]
fn static_gain_has_no_zeros() {
    // n = 0: S(λ) = D does not depend on λ, so there is no finite zero.
    let e = DMatrix::<f64>::zeros(0, 0);
    for (p, m) in [(2usize, 2usize), (2, 3), (3, 1), (0, 2), (2, 0)] {
        let d = Rng::new(p as u64 * 7 + m as u64).matrix(p, m);
        let z = transmission_zeros(&e, &DMatrix::zeros(0, m), &DMatrix::zeros(p, 0), &d)
            .expect("zeros");
        assert!(z.is_empty(), "{p}×{m}: {z:?}");
    }
    let z = transmission_zeros(
        &e,
        &DMatrix::zeros(0, 1),
        &DMatrix::zeros(1, 0),
        &DMatrix::zeros(1, 1),
    );
    assert!(z.expect("zeros").is_empty());
}

#[test]
fn degenerate_models_give_no_spurious_zeros() {
    // An extra input that reaches nothing (zero column in B and D) leaves the zeros of
    // the first channel, −2 and 3 (S gains a zero column, which changes no rank drop).
    let (a, b1, c) = companion(&[20.0, 29.0, 10.0], &[&[-6.0, -1.0, 1.0]]);
    let mut b = DMatrix::zeros(3, 2);
    b.set_column(0, &b1.column(0));
    let d = DMatrix::zeros(1, 2);
    let z = transmission_zeros(&a, &b, &c, &d).expect("zeros");
    assert_zeros(&z, &real(&[-2.0, 3.0]), 1e-12);
    // G ≡ 0 (C = 0, D = 0) with (A, B) controllable: S(λ) = [A − λI, B; 0, 0] has normal
    // rank n and never less (controllability, Hautus test), so no zeros.
    let c0 = DMatrix::zeros(2, 3);
    let d0 = DMatrix::zeros(2, 1);
    assert!(transmission_zeros(&a, &b1, &c0, &d0)
        .expect("zeros")
        .is_empty());
    let pencil = zero_pencil(&a, &b1, &c0, &d0, &ZerosParams::default()).expect("pencil");
    assert_eq!(pencil.normal_rank, 0);
    // Everything zero: S(λ) = [−λI, 0; 0, 0] drops rank only at λ = 0 (n-fold).
    let z = transmission_zeros(
        &DMatrix::zeros(3, 3),
        &DMatrix::zeros(3, 2),
        &DMatrix::zeros(2, 3),
        &DMatrix::zeros(2, 2),
    )
    .expect("zeros");
    assert_zeros(&z, &real(&[0.0, 0.0, 0.0]), 0.0);
}

#[test]
fn random_square_models() {
    let mut rng = Rng::new(31);
    for &(n, m) in &[(1usize, 1usize), (2, 1), (3, 2), (6, 2), (10, 3), (20, 4)] {
        let a = rng.matrix(n, n);
        let b = rng.matrix(n, m);
        let c = rng.matrix(m, n);
        // D = 0 and CB invertible (generic): n − m finite zeros (common practice, no
        // source: the infinite zeros all have order one), each a rank drop of S.
        let d = DMatrix::zeros(m, m);
        let z = transmission_zeros(&a, &b, &c, &d).expect("zeros");
        assert_eq!(z.len(), n - m, "n = {n}, m = {m}: {z:?}");
        for zk in &z {
            assert!(rank_drop(&a, &b, &c, &d, *zk) < 1e-11, "n = {n}: {zk}");
        }
        // D invertible: the zeros are the n eigenvalues of A − B D⁻¹ C (reference:
        // nalgebra's LU solve and complex_eigenvalues).
        let d = rng.matrix(m, m) + DMatrix::identity(m, m) * 3.0;
        let dic = d.clone().lu().solve(&c).expect("D invertible");
        let want: Vec<Complex<f64>> = (&a - &b * dic)
            .complex_eigenvalues()
            .iter()
            .copied()
            .collect();
        let got = transmission_zeros(&a, &b, &c, &d).expect("zeros");
        assert_eq!(got.len(), n);
        for w in &want {
            let best = got
                .iter()
                .fold(f64::INFINITY, |acc, g| acc.min((g - w).norm()));
            assert!(
                best < 1e-8 * (1.0 + w.norm()),
                "n = {n}: {w} not in {got:?}"
            );
        }
    }
}

/// A model with planted transmission zeros and exactly representable data: G(s) =
/// N(s)/d(s) with N(s) = z(s)·N₀(s), z(s) the planted zero polynomial, N₀ a random integer
/// p×m polynomial matrix (p > m, so N₀(λ) keeps full column rank for every λ
/// generically), d(s) = ∏(s − rᵢ) with distinct integer roots. Realized in the block
/// controller form (n = q·m states; common practice, no source: C(sI − A)⁻¹B =
/// Σ Nₖ sᵏ / d(s)), minimal for generic N₀, so its invariant zeros are exactly the roots
/// of z(s). The structure is then hidden by a unimodular integer similarity and output
/// mixing (exact in floating point), and for `wide` the dual model is returned.
fn planted(rng: &mut Rng, wide: bool, near_drop: bool) -> (Model, Vec<Complex<f64>>) {
    let int = |rng: &mut Rng, lo: i64, hi: i64| lo + (rng.next_u64() % (hi - lo + 1) as u64) as i64;
    let (p, m) = [(2, 1), (3, 1), (3, 2), (4, 2), (4, 3), (5, 2)][int(rng, 0, 5) as usize];
    let q = int(rng, 2, 4) as usize;
    // Planted zero polynomial: one real zero, two real zeros or a complex pair.
    let (zpoly, want): (Vec<f64>, Vec<Complex<f64>>) = match int(rng, 0, 2) {
        0 => {
            let z0 = int(rng, -6, 3) as f64;
            (vec![-z0, 1.0], vec![Complex::new(z0, 0.0)])
        }
        1 => {
            let (z0, z1) = (int(rng, -6, 3) as f64, int(rng, -6, 3) as f64 + 0.5);
            (vec![z0 * z1, -(z0 + z1), 1.0], real(&[z0, z1]))
        }
        _ => {
            let (re, im) = (int(rng, -4, 2) as f64, int(rng, 1, 3) as f64);
            (
                vec![re * re + im * im, -2.0 * re, 1.0],
                vec![Complex::new(re, -im), Complex::new(re, im)],
            )
        }
    };
    let zdeg = zpoly.len() - 1;
    let q = q.max(zdeg + 1);
    // Proper or strictly proper: N of degree q (feedthrough) or below q.
    let ndeg = if int(rng, 0, 1) == 0 { q - 1 } else { q };
    let n0deg = ndeg - zdeg;
    // N₀ = [U; R(s)] with U a constant unimodular integer matrix (unit upper
    // triangular): N₀(λ) has full column rank for every λ, so the zeros are exactly
    // the roots of z(s), and N(rᵢ) has full rank at every pole, so the realization is
    // minimal ([N(λ); d(λ)I] has full column rank for every λ).
    // With `near_drop`, in half the cases U's last pivot is a small power of two: N₀(λ)
    // then stays of full rank but close to a rank drop for every λ.
    let pivot = if !near_drop || int(rng, 0, 1) == 0 {
        1.0
    } else {
        (2.0f64).powi(-int(rng, 4, 20) as i32)
    };
    let n0: Vec<DMatrix<f64>> = (0..=n0deg)
        .map(|k| {
            DMatrix::from_fn(p, m, |i, j| {
                if i >= m {
                    int(rng, -3, 3) as f64
                } else if k > 0 {
                    0.0
                } else if i == j {
                    if i == m - 1 {
                        pivot
                    } else {
                        1.0
                    }
                } else if j > i {
                    int(rng, -2, 2) as f64
                } else {
                    0.0
                }
            })
        })
        .collect();
    let mut num = vec![DMatrix::zeros(p, m); ndeg + 1];
    for (i, zi) in zpoly.iter().enumerate() {
        for (j, nj) in n0.iter().enumerate() {
            num[i + j] += nj * *zi;
        }
    }
    // Distinct integer poles, none at a planted zero.
    let mut roots: Vec<f64> = Vec::new();
    while roots.len() < q {
        let r = int(rng, -9, 2) as f64;
        if !roots.contains(&r) && !want.iter().any(|w| (w.re - r).abs() < 0.25 && w.im == 0.0) {
            roots.push(r);
        }
    }
    let mut den = vec![1.0];
    for r in &roots {
        let mut next = vec![0.0; den.len() + 1];
        for (k, dk) in den.iter().enumerate() {
            next[k + 1] += dk;
            next[k] -= r * dk;
        }
        den = next;
    }
    // Feedthrough and the strictly proper remainder N(s) − D·d(s).
    let d = if ndeg == q {
        num[q].clone()
    } else {
        DMatrix::zeros(p, m)
    };
    let n = q * m;
    let mut a = DMatrix::zeros(n, n);
    for k in 0..q - 1 {
        for i in 0..m {
            a[(k * m + i, (k + 1) * m + i)] = 1.0;
        }
    }
    for k in 0..q {
        for i in 0..m {
            a[((q - 1) * m + i, k * m + i)] = -den[k];
        }
    }
    let mut b = DMatrix::zeros(n, m);
    for i in 0..m {
        b[((q - 1) * m + i, i)] = 1.0;
    }
    let mut c = DMatrix::zeros(p, n);
    for k in 0..q {
        let ck = &num[k] - &d * den[k];
        c.view_mut((0, k * m), (p, m)).copy_from(&ck);
    }
    // Unimodular integer similarity x = T z (T⁻¹ exact) and output mixing.
    let (mut t, mut ti) = (
        DMatrix::<f64>::identity(n, n),
        DMatrix::<f64>::identity(n, n),
    );
    for _ in 0..n {
        let (i, j) = (
            int(rng, 0, n as i64 - 1) as usize,
            int(rng, 0, n as i64 - 1) as usize,
        );
        if i == j {
            continue;
        }
        let f = [-1.0, 1.0, 2.0][int(rng, 0, 2) as usize];
        let mut e = DMatrix::identity(n, n);
        e[(i, j)] = f;
        let mut einv = DMatrix::identity(n, n);
        einv[(i, j)] = -f;
        t = &t * &e;
        ti = &einv * &ti;
    }
    let mut mix = DMatrix::<f64>::identity(p, p);
    for i in 0..p {
        let j = (i + 1 + int(rng, 0, p as i64 - 2) as usize) % p;
        let mut e = DMatrix::identity(p, p);
        e[(i, j)] = [-1.0, 1.0][int(rng, 0, 1) as usize];
        mix = &e * &mix;
    }
    let (a, b, c, d) = (&ti * &a * &t, &ti * &b, &mix * &c * &t, &mix * &d);
    let model = if wide {
        Model {
            a: a.transpose(),
            b: c.transpose(),
            c: b.transpose(),
            d: d.transpose(),
        }
    } else {
        Model { a, b, c, d }
    };
    (model, want)
}

#[test]
fn planted_zeros_of_non_square_models_are_found_and_none_invented() {
    planted_sweep(false);
}

/// Issue 13, item 5: with N₀ close to a rank drop (pivot 2⁻⁴…2⁻²⁰) the reduction loses
/// zeros of about 45 of these 1200 models, because a small kept singular value
/// amplifies rounding in later rank decisions (a larger fixed tolerance only moves the
/// boundary). Every such case must carry the ambiguity that `zeros` turns into a
/// warning with the figures; none may be silently wrong.
#[test]
fn planted_zeros_near_a_rank_drop_elsewhere_are_found_or_flagged() {
    planted_sweep(true);
}

fn planted_sweep(near_drop: bool) {
    let (mut missed, mut invented, mut failed) = (0, 0, 0);
    let (mut flagged_wrong, mut silent_wrong, mut false_alarms) = (0, 0, 0);
    let mut rng = Rng::new(2026);
    let total = 1200;
    for k in 0..total {
        let (s, want) = planted(&mut rng, k % 2 == 1, near_drop);
        let flagged = zero_pencil(&s.a, &s.b, &s.c, &s.d, &ZerosParams::default())
            .map(|p| p.ambiguity.is_some())
            .unwrap_or(false);
        let wrong = match transmission_zeros(&s.a, &s.b, &s.c, &s.d) {
            Err(e) => {
                failed += 1;
                eprintln!("case {k}: {e}");
                true
            }
            Ok(got) => {
                let found = |w: &Complex<f64>| {
                    got.iter()
                        .any(|g| (g - w).norm() <= 1e-6 * (1.0 + w.norm()))
                };
                let planted_here = |g: &Complex<f64>| {
                    want.iter()
                        .any(|w| (g - w).norm() <= 1e-6 * (1.0 + w.norm()))
                };
                let miss = want.iter().filter(|w| !found(w)).count();
                let extra = got.iter().filter(|g| !planted_here(g)).count();
                missed += miss;
                invented += extra;
                miss + extra > 0
            }
        };
        match (wrong, flagged) {
            (true, true) => flagged_wrong += 1,
            (true, false) => {
                silent_wrong += 1;
                eprintln!("case {k}: wrong without a warning");
            }
            (false, true) => false_alarms += 1,
            (false, false) => {}
        }
    }
    eprintln!(
        "near_drop {near_drop}: missed {missed}, invented {invented}, failed {failed}; \
         wrong and flagged {flagged_wrong}, wrong and silent {silent_wrong}, \
         false alarms {false_alarms} of {total}"
    );
    // Never a wrong answer without the warning; without a near rank drop, no wrong
    // answer at all and few false alarms.
    assert_eq!(silent_wrong, 0, "of {total} models");
    if !near_drop {
        assert_eq!((missed, invented, failed), (0, 0, 0), "of {total} models");
        assert!(
            false_alarms <= total / 40,
            "{false_alarms} false alarms of {total}"
        );
    }
}

#[test]
fn square_integer_models_never_fail_and_match_the_closed_form() {
    // Small-integer data puts rounding-level entries next to O(1) ones inside the
    // reduction; the one-sided Jacobi fallback of the SVD used to cycle on them ("did
    // not converge": 4 of these 2000 models). With D invertible the zeros are the n
    // eigenvalues of A − B D⁻¹ C (reference: nalgebra's LU solve and eigenvalues).
    let mut checked = 0;
    for seed in 0..2000u64 {
        let mut rng = Rng::new(seed);
        let n = 1 + (rng.next_u64() % 10) as usize;
        let m = 1 + (rng.next_u64() % 3) as usize;
        let mut int =
            |r: usize, c: usize| DMatrix::from_fn(r, c, |_, _| (rng.next_u64() % 7) as f64 - 3.0);
        let (a, b, c, d) = (int(n, n), int(n, m), int(m, n), int(m, m));
        let got = transmission_zeros(&a, &b, &c, &d)
            .unwrap_or_else(|e| panic!("seed {seed} (n = {n}, m = {m}): {e}"));
        if d.determinant().abs() < 0.5 {
            continue; // singular integer D: no closed form here
        }
        checked += 1;
        let dic = d.clone().lu().solve(&c).expect("D invertible");
        let want = (&a - &b * dic).complex_eigenvalues();
        assert_eq!(got.len(), n, "seed {seed}: {got:?}");
        for w in want.iter() {
            let best = got
                .iter()
                .fold(f64::INFINITY, |acc, g| acc.min((g - w).norm()));
            // Repeated eigenvalues of integer matrices are conditioned like √ε.
            assert!(
                best < 1e-6 * (1.0 + w.norm()),
                "seed {seed}: {w} not in {got:?}"
            );
        }
    }
    assert!(checked > 1000, "{checked}");
}

#[test]
fn random_non_square_models_have_no_zeros() {
    // A generic model with p ≠ m has no zeros (S(λ) keeps full rank for every λ;
    // common practice, no source). Naive square-ups of the pencil would invent some.
    let mut rng = Rng::new(41);
    for &(n, m, p) in &[
        (1usize, 1usize, 2usize),
        (5, 1, 2),
        (5, 2, 1),
        (8, 2, 3),
        (8, 3, 1),
        (12, 1, 4),
    ] {
        let (a, b, c) = (rng.matrix(n, n), rng.matrix(n, m), rng.matrix(p, n));
        for d in [DMatrix::zeros(p, m), rng.matrix(p, m)] {
            let z = transmission_zeros(&a, &b, &c, &d).expect("zeros");
            assert!(z.is_empty(), "n = {n}, m = {m}, p = {p}: {z:?}");
        }
    }
}

#[test]
fn zeros_invariant_under_similarity() {
    // (T⁻¹AT, T⁻¹B, CT, D) has the same zeros (common practice, no source); checked on
    // the tall model of `tall_model_has_only_common_zeros` (zero −2) and a random
    // square one.
    let mut rng = Rng::new(55);
    let (a, b, c) = companion(&[12.0, 19.0, 8.0], &[&[8.0, 6.0, 1.0], &[10.0, 7.0, 1.0]]);
    let (ra, rb, rc) = (rng.matrix(6, 6), rng.matrix(6, 2), rng.matrix(2, 6));
    for (a, b, c) in [(a, b, c), (ra, rb, rc)] {
        let (n, m, p) = (a.nrows(), b.ncols(), c.nrows());
        let d = DMatrix::zeros(p, m);
        let t = rng.matrix(n, n) + DMatrix::identity(n, n) * 4.0;
        let ti = t.clone().try_inverse().expect("T invertible");
        let z1 = transmission_zeros(&a, &b, &c, &d).expect("zeros");
        let z2 = transmission_zeros(&(&ti * &a * &t), &(&ti * &b), &(&c * &t), &d).expect("zeros");
        assert_eq!(z1.len(), z2.len(), "{z1:?} vs {z2:?}");
        for (x, y) in z1.iter().zip(&z2) {
            assert!((x - y).norm() < 1e-8 * (1.0 + x.norm()), "{z1:?} vs {z2:?}");
        }
    }
}

#[test]
fn shape_errors_name_the_argument() {
    let a = DMatrix::zeros(3, 3);
    let b = DMatrix::zeros(3, 2);
    let c = DMatrix::zeros(1, 3);
    let d = DMatrix::zeros(1, 2);
    let e = |r: NumResult<Vec<Complex<f64>>>| r.expect_err("shape").to_string();
    assert_eq!(
        e(transmission_zeros(&DMatrix::zeros(3, 2), &b, &c, &d)),
        "A: expected a square matrix, found 3×2"
    );
    assert_eq!(
        e(transmission_zeros(&a, &DMatrix::zeros(2, 2), &c, &d)),
        "B: expected 3 rows (one per state, as A is 3×3), found 2×2"
    );
    assert_eq!(
        e(transmission_zeros(&a, &b, &DMatrix::zeros(1, 4), &d)),
        "C: expected 3 columns (one per state, as A is 3×3), found 1×4"
    );
    assert_eq!(
        e(transmission_zeros(&a, &b, &c, &DMatrix::zeros(2, 1))),
        "D: expected 1×2 (outputs of C × inputs of B), found 2×1"
    );
    let mut bad = d.clone();
    bad[(0, 1)] = f64::INFINITY;
    assert_eq!(
        e(transmission_zeros(&a, &b, &c, &bad)),
        "D: entry (0, 1) is inf, expected a finite number"
    );
    let params = ZerosParams {
        rank_tolerance: Some(-1.0),
        ..ZerosParams::default()
    };
    assert!(transmission_zeros_with(&a, &b, &c, &d, &params).is_err());
}
