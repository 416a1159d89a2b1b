//! Test models with planted structure and the comparisons the staircase tests share.
//!
//! Every model is invented here from seeded random numbers; the planted zero blocks are the
//! expected values (by construction), and similarity transformations leave eigenvalues and
//! Markov parameters unchanged (common practice, no source).

use crate::numeric::testing::Rng;
use nalgebra::{Complex, DMatrix};

/// A random n×n orthogonal matrix (the Q factor of a Gaussian matrix).
pub fn random_orthogonal(rng: &mut Rng, n: usize) -> DMatrix<f64> {
    if n == 0 {
        return DMatrix::zeros(0, 0);
    }
    rng.matrix(n, n).qr().q()
}

/// A random T = U·diag(s)·Vᵀ with s from 1 to 10 (so κ₂(T) = 10) and its exact inverse.
pub fn well_conditioned(rng: &mut Rng, n: usize) -> (DMatrix<f64>, DMatrix<f64>) {
    let u = random_orthogonal(rng, n);
    let v = random_orthogonal(rng, n);
    let s: Vec<f64> = (0..n)
        .map(|i| 1.0 + 9.0 * i as f64 / (n.saturating_sub(1).max(1)) as f64)
        .collect();
    let sd = DMatrix::from_diagonal(&nalgebra::DVector::from_vec(s.clone()));
    let si = DMatrix::from_diagonal(&nalgebra::DVector::from_vec(
        s.iter().map(|x| 1.0 / x).collect(),
    ));
    (&u * sd * v.transpose(), &v * si * u.transpose())
}

/// The model in x = Q z coordinates: (Q A Qᵀ, Q B, C Qᵀ).
pub fn hide_orthogonal(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    c: &DMatrix<f64>,
    q: &DMatrix<f64>,
) -> (DMatrix<f64>, DMatrix<f64>, DMatrix<f64>) {
    (q * a * q.transpose(), q * b, c * q.transpose())
}

/// The model in x = T z coordinates: (T A T⁻¹, T B, C T⁻¹).
pub fn hide(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    c: &DMatrix<f64>,
    t: &DMatrix<f64>,
    t_inv: &DMatrix<f64>,
) -> (DMatrix<f64>, DMatrix<f64>, DMatrix<f64>) {
    (t * a * t_inv, t * b, c * t_inv)
}

/// Scales `a` to spectral norm `target` (unchanged when zero).
pub fn with_norm(a: DMatrix<f64>, target: f64) -> DMatrix<f64> {
    if a.is_empty() {
        return a;
    }
    let s = super::factor::LeftFactor::new(&a).unwrap().sigma[0];
    if s == 0.0 {
        a
    } else {
        a * (target / s)
    }
}

/// A model whose first `nc` states are controllable and the rest not:
/// A = [[A_c, A_12], [0, A_uc]], B = [B_c; 0], C random; ‖A‖₂ = 1.
pub fn planted_controllable(
    rng: &mut Rng,
    n: usize,
    nc: usize,
    m: usize,
    p: usize,
) -> (DMatrix<f64>, DMatrix<f64>, DMatrix<f64>) {
    let mut a = rng.matrix(n, n);
    a.view_mut((nc, 0), (n - nc, nc)).fill(0.0);
    let mut b = rng.matrix(n, m);
    b.view_mut((nc, 0), (n - nc, m)).fill(0.0);
    (with_norm(a, 1.0), b, rng.matrix(p, n))
}

/// A model in Kalman form with parts of sizes `[co, cō, c̄o, c̄ō]` (the pattern documented
/// in `kalman.rs`), random entries elsewhere, ‖A‖₂ = `norm`.
pub fn planted_kalman(
    rng: &mut Rng,
    sizes: [usize; 4],
    m: usize,
    p: usize,
    norm: f64,
) -> (DMatrix<f64>, DMatrix<f64>, DMatrix<f64>) {
    let n: usize = sizes.iter().sum();
    let off = [
        0,
        sizes[0],
        sizes[0] + sizes[1],
        sizes[0] + sizes[1] + sizes[2],
    ];
    let mut a = rng.matrix(n, n);
    for &(i, j) in &[(0, 1), (0, 3), (2, 0), (2, 1), (2, 3), (3, 0), (3, 1)] {
        a.view_mut((off[i], off[j]), (sizes[i], sizes[j])).fill(0.0);
    }
    let mut b = rng.matrix(n, m);
    b.view_mut((off[2], 0), (sizes[2] + sizes[3], m)).fill(0.0);
    let mut c = rng.matrix(p, n);
    for j in [1, 3] {
        c.view_mut((0, off[j]), (p, sizes[j])).fill(0.0);
    }
    (with_norm(a, norm), b, c)
}

/// Markov parameters D, CB, CAB, …: `count` of them.
pub fn markov(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    c: &DMatrix<f64>,
    d: &DMatrix<f64>,
    count: usize,
) -> Vec<DMatrix<f64>> {
    let mut out = vec![d.clone()];
    let mut x = b.clone();
    while out.len() < count {
        out.push(c * &x);
        x = a * x;
    }
    out.truncate(count);
    out
}

/// Asserts that two models have the same first `count` Markov parameters within `abs`.
pub fn assert_same_markov(
    got: (&DMatrix<f64>, &DMatrix<f64>, &DMatrix<f64>, &DMatrix<f64>),
    want: (&DMatrix<f64>, &DMatrix<f64>, &DMatrix<f64>, &DMatrix<f64>),
    count: usize,
    abs: f64,
) {
    let g = markov(got.0, got.1, got.2, got.3, count);
    let w = markov(want.0, want.1, want.2, want.3, count);
    for (k, (x, y)) in g.iter().zip(w.iter()).enumerate() {
        if let Err(msg) = crate::numeric::testing::close_report(x, y, abs, 0.0) {
            panic!("Markov parameter {k}: {msg}");
        }
    }
}

/// Sorted eigenvalues through the module's own routine.
pub fn eig(m: &DMatrix<f64>) -> Vec<Complex<f64>> {
    super::structure::sorted_eigenvalues(m).unwrap()
}

/// Asserts equal spectra up to `rel·(1 + |λ|)`, matching each wanted value greedily to the
/// nearest unused computed one.
pub fn assert_same_spectrum(got: &[Complex<f64>], want: &[Complex<f64>], rel: f64) {
    assert_eq!(got.len(), want.len(), "{got:?} vs {want:?}");
    let mut used = vec![false; got.len()];
    for w in want {
        let best = (0..got.len())
            .filter(|&i| !used[i])
            .min_by(|&i, &j| (got[i] - w).norm().total_cmp(&(got[j] - w).norm()))
            .unwrap();
        assert!(
            (got[best] - w).norm() <= rel * (1.0 + w.norm()),
            "{w} vs {}",
            got[best]
        );
        used[best] = true;
    }
}
