//! The Cholesky factor of a stable Lyapunov equation's solution, computed directly.
//!
//! * [`lyapunov_cholesky`]: `A P + P Aᵀ + B Bᵀ = 0` with `A` Hurwitz (every Re λ < 0).
//! * [`lyapunov_cholesky_discrete`]: `A P Aᵀ − P + B Bᵀ = 0` with `A` Schur-stable
//!   (every |λ| < 1).
//!
//! Both return an **upper-triangular** `U` with non-negative diagonal and `P = U Uᵀ`.
//! Forming `P` and then factoring it fails when `P` is numerically singular — the usual
//! case for Gramians of lightly controllable models — while the factor computed directly
//! stays accurate: the recursion never divides by an entry of `U`.

use crate::numeric::check;
use crate::numeric::error::{NumError, NumResult};
use crate::numeric::linalg::dense::balance_reducing_norm;
use crate::numeric::linalg::schur::quasi_blocks;
use crate::numeric::linalg::sylvester::{
    fmt_complex, real_schur, MatrixEquationParams, EIGENVALUE_ROUNDING,
};
use nalgebra::{Complex, DMatrix};

type C64 = Complex<f64>;

/// Upper-triangular factor `U` of the solution `P = U Uᵀ` of `A P + P Aᵀ + B Bᵀ = 0`, with
/// the default [`MatrixEquationParams`]; see [`lyapunov_cholesky_with`].
pub fn lyapunov_cholesky(a: &DMatrix<f64>, b: &DMatrix<f64>) -> NumResult<DMatrix<f64>> {
    lyapunov_cholesky_with(a, b, &MatrixEquationParams::default())
}

/// Upper-triangular factor `U` (non-negative diagonal) of the solution `P = U Uᵀ` of the
/// stable continuous Lyapunov equation `A P + P Aᵀ + B Bᵀ = 0`; `A` n×n Hurwitz, `B` n×m
/// (any m ≥ 0). `P` is the controllability Gramian of `(A, B)`; call with `(Aᵀ, Cᵀ)` for
/// the observability Gramian `Aᵀ Q + Q A + Cᵀ C = 0`.
///
/// **Mathematics.** With a complex Schur form `A = W S Wᴴ` (S upper triangular) and an
/// upper-triangular `G` with `G Gᴴ = (Wᴴ B)(Wᴴ B)ᴴ`, partition off the last row and column:
/// `S = [S₁ s; 0 λ]`, `G = [G₁ g; 0 γ]`, `Ũ = [Ũ₁ u; 0 τ]`. Matching the blocks of
/// `S Ũ Ũᴴ + Ũ Ũᴴ Sᴴ = −G Gᴴ` gives `τ = |γ| / √(−2 Re λ)`, then with
/// `α = √(−2 Re λ)·γ/|γ|` the triangular solve `(S₁ + λ̄ I) u = −(ᾱ g + τ s)`, and the
/// smaller problem `S₁ Ũ₁ Ũ₁ᴴ + Ũ₁ Ũ₁ᴴ S₁ᴴ = −[G₁ y][G₁ y]ᴴ` with `y = g − α u`,
/// whose right-hand factor is made triangular again by Givens rotations. Finally
/// `P = X Xᴴ` with `X = W Ũ`; as `P` is real, `P = [Re X  Im X][Re X  Im X]ᵀ`, and an RQ
/// factorisation of that n×2n matrix (by a QR of its reversed transpose) gives the real
/// triangular `U`.
///
/// **Algorithm.** Hammarling (1982), "Numerical solution of the stable, non-negative
/// definite Lyapunov equation", IMA J. Numer. Anal. 2 — the complex form of the method,
/// applied to the complex Schur form obtained from nalgebra's real Schur form by a 2×2
/// unitary triangularisation of each 2×2 block.
///
/// **Cost.** One real Schur decomposition (about 25n³ flops), `O(n² m)` for the initial
/// triangular factor of `B`, `O(n³)` complex flops for the recursion and one QR of a
/// 2n×n matrix.
///
/// **Scaling.** `A` is balanced first (Parlett & Reinsch 1969, a power-of-two diagonal
/// similarity `Ã = D⁻¹AD`; then `U = D Ũ`), so neither the margin nor the accuracy depends
/// on the units of the states.
///
/// **Tolerance.** `A` must be stable with margin: an eigenvalue with
/// `−2 Re λ ≤ 2·max(params.resonance_tol·|λ|, 8ε‖Ã‖_F)` (the `λ + λ̄ ≈ 0` resonance of
/// the Lyapunov equation, judged against the eigenvalue's own size) gives
/// [`NumError::NoSolution`] naming the eigenvalue; so does an unstable one.
pub fn lyapunov_cholesky_with(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    params: &MatrixEquationParams,
) -> NumResult<DMatrix<f64>> {
    factor_impl(a, b, false, params)
}

/// Upper-triangular factor `U` of the solution `P = U Uᵀ` of `A P Aᵀ − P + B Bᵀ = 0`, with
/// the default [`MatrixEquationParams`]; see [`lyapunov_cholesky_discrete_with`].
pub fn lyapunov_cholesky_discrete(a: &DMatrix<f64>, b: &DMatrix<f64>) -> NumResult<DMatrix<f64>> {
    lyapunov_cholesky_discrete_with(a, b, &MatrixEquationParams::default())
}

/// Upper-triangular factor `U` (non-negative diagonal) of the solution `P = U Uᵀ` of the
/// stable discrete Lyapunov equation `A P Aᵀ − P + B Bᵀ = 0`; `A` n×n Schur-stable, `B`
/// n×m.
///
/// **Mathematics.** As [`lyapunov_cholesky_with`] on `S Ũ Ũᴴ Sᴴ − Ũ Ũᴴ + G Gᴴ = 0`: the
/// last row and column give `τ = |γ| / √(1 − |λ|²)`, then with
/// `α = √(1 − |λ|²)·γ/|γ|` the triangular solve `(λ̄ S₁ − I) u = −(ᾱ g + λ̄ τ s)`, and the
/// smaller problem has right-hand factor `[G₁ y]` with `y = α v − λ g`,
/// `v = S₁ u + τ s`.
///
/// **Algorithm.** Hammarling (1982), "Numerical solution of the stable, non-negative
/// definite Lyapunov equation", IMA J. Numer. Anal. 2 (its discrete-time section), in
/// complex arithmetic as above.
///
/// **Cost.** As [`lyapunov_cholesky_with`].
///
/// **Tolerance.** An eigenvalue with
/// `1 − |λ|² ≤ max(params.resonance_tol·(1 + |λ|²), 16ε‖Ã‖_F)` (the `λλ̄ ≈ 1` resonance;
/// Ã the balanced A) or `|λ| ≥ 1` gives [`NumError::NoSolution`].
pub fn lyapunov_cholesky_discrete_with(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    params: &MatrixEquationParams,
) -> NumResult<DMatrix<f64>> {
    factor_impl(a, b, true, params)
}

fn factor_impl(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    discrete: bool,
    params: &MatrixEquationParams,
) -> NumResult<DMatrix<f64>> {
    let n = check::finite_square("A", a)?;
    if b.nrows() != n {
        return Err(NumError::shape(
            "B",
            format!("{n} rows"),
            format!("{} rows ({})", b.nrows(), check::shape_of(b)),
        ));
    }
    check::finite("B", b)?;
    if n == 0 {
        return Ok(DMatrix::zeros(0, 0));
    }
    // Balance first (a power-of-two diagonal similarity Ã = D⁻¹AD, B̃ = D⁻¹B, so P = D P̃ D
    // and U = D Ũ stays upper triangular): the Schur form, the stability margin and the
    // recursion then do not depend on the units of the states.
    if let Some((ab, d)) = balance_reducing_norm(a) {
        let bb = DMatrix::from_fn(n, b.ncols(), |i, j| b[(i, j)] / d[i]);
        let mut u = factor_balanced(&ab, &bb, discrete, params)?;
        for (i, di) in d.iter().enumerate() {
            u.row_mut(i).scale_mut(*di);
        }
        return Ok(u);
    }
    factor_balanced(a, b, discrete, params)
}

/// [`factor_impl`] on a balanced (or already well-scaled) `A`, n ≥ 1, checked arguments.
fn factor_balanced(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    discrete: bool,
    params: &MatrixEquationParams,
) -> NumResult<DMatrix<f64>> {
    let n = a.nrows();
    let (q, t) = real_schur(a, "A", params)?;
    let (w, s) = complex_schur(q, t)?;
    check_stability(&s, a, discrete, params)?;
    // Initial triangular factor: G Gᴴ = (Wᴴ B)(Wᴴ B)ᴴ.
    let bt = w.adjoint() * b.map(|v| C64::new(v, 0.0));
    let mut g = DMatrix::<C64>::zeros(n, n);
    for col in bt.column_iter() {
        let mut y: Vec<C64> = col.iter().copied().collect();
        absorb_column(&mut g, &mut y, n);
    }
    let mut u = DMatrix::<C64>::zeros(n, n);
    for k in (0..n).rev() {
        let lambda = s[(k, k)];
        let beta = if discrete {
            let r = lambda.norm();
            ((1.0 - r) * (1.0 + r)).sqrt()
        } else {
            (-2.0 * lambda.re).sqrt()
        };
        let gamma = g[(k, k)];
        let tau = gamma.norm() / beta;
        let alpha = if gamma.norm() > 0.0 {
            gamma * (beta / gamma.norm())
        } else {
            C64::new(beta, 0.0)
        };
        u[(k, k)] = C64::new(tau, 0.0);
        if k == 0 {
            break;
        }
        // Right-hand side and triangular solve for the column u above the diagonal.
        let lc = lambda.conj();
        let ac = alpha.conj();
        let mut col = vec![C64::new(0.0, 0.0); k];
        for i in 0..k {
            col[i] = if discrete {
                -(g[(i, k)] * ac + lc * s[(i, k)] * tau)
            } else {
                -(g[(i, k)] * ac + s[(i, k)] * tau)
            };
        }
        for i in (0..k).rev() {
            let mut acc = col[i];
            for j in i + 1..k {
                acc -= if discrete {
                    lc * s[(i, j)] * col[j]
                } else {
                    s[(i, j)] * col[j]
                };
            }
            let diag = if discrete {
                lc * s[(i, i)] - 1.0
            } else {
                s[(i, i)] + lc
            };
            col[i] = acc / diag;
        }
        // The new column y of the right-hand factor of the leading k×k problem.
        let mut y = vec![C64::new(0.0, 0.0); k];
        for i in 0..k {
            y[i] = if discrete {
                let mut v = s[(i, k)] * tau;
                for j in i..k {
                    v += s[(i, j)] * col[j];
                }
                alpha * v - lambda * g[(i, k)]
            } else {
                g[(i, k)] - alpha * col[i]
            };
            u[(i, k)] = col[i];
        }
        absorb_column(&mut g, &mut y, k);
    }
    // P = X Xᴴ with X = W Ũ; realify and make triangular by an RQ factorisation.
    let x = w * u;
    Ok(real_upper_factor(&x))
}

/// Converts the real Schur form `A = Q T Qᵀ` to a complex Schur form `A = W S Wᴴ` with `S`
/// upper triangular, by a 2×2 unitary triangularisation of every 2×2 diagonal block.
fn complex_schur(q: DMatrix<f64>, t: DMatrix<f64>) -> NumResult<(DMatrix<C64>, DMatrix<C64>)> {
    let n = t.nrows();
    let blocks = quasi_blocks(&t)?;
    let mut w = q.map(|v| C64::new(v, 0.0));
    let mut s = t.map(|v| C64::new(v, 0.0));
    for (k, size) in blocks {
        if size != 2 {
            continue;
        }
        let (a, b) = (s[(k, k)], s[(k, k + 1)]);
        let (c, d) = (s[(k + 1, k)], s[(k + 1, k + 1)]);
        // One eigenvalue of [[a, b], [c, d]] and an eigenvector for it.
        let mean = (a + d) * 0.5;
        let disc = ((a - d) * (a - d) * 0.25 + b * c).sqrt();
        let lambda = mean + disc;
        let v1 = [b, lambda - a];
        let v2 = [lambda - d, c];
        let n1 = (v1[0].norm_sqr() + v1[1].norm_sqr()).sqrt();
        let n2 = (v2[0].norm_sqr() + v2[1].norm_sqr()).sqrt();
        let (v, nv) = if n1 >= n2 { (v1, n1) } else { (v2, n2) };
        if nv.is_nan() || nv <= 0.0 {
            // A scalar multiple of the identity: already triangular.
            s[(k + 1, k)] = C64::new(0.0, 0.0);
            continue;
        }
        let (x0, x1) = (v[0] / nv, v[1] / nv);
        // Z = [[x0, −x̄1], [x1, x̄0]] is unitary with first column the eigenvector.
        let z = [[x0, -x1.conj()], [x1, x0.conj()]];
        // S ← Zᴴ S on rows k, k+1.
        for j in 0..n {
            let (r0, r1) = (s[(k, j)], s[(k + 1, j)]);
            s[(k, j)] = z[0][0].conj() * r0 + z[1][0].conj() * r1;
            s[(k + 1, j)] = z[0][1].conj() * r0 + z[1][1].conj() * r1;
        }
        // S ← S Z and W ← W Z on columns k, k+1.
        for m in [&mut s, &mut w] {
            for i in 0..n {
                let (c0, c1) = (m[(i, k)], m[(i, k + 1)]);
                m[(i, k)] = c0 * z[0][0] + c1 * z[1][0];
                m[(i, k + 1)] = c0 * z[0][1] + c1 * z[1][1];
            }
        }
        s[(k + 1, k)] = C64::new(0.0, 0.0);
    }
    Ok((w, s))
}

/// Stability check on the diagonal of the complex Schur factor.
fn check_stability(
    s: &DMatrix<C64>,
    a: &DMatrix<f64>,
    discrete: bool,
    params: &MatrixEquationParams,
) -> NumResult<()> {
    let what = if discrete {
        "stable discrete Lyapunov equation A P Aᵀ − P + B Bᵀ = 0"
    } else {
        "stable Lyapunov equation A P + P Aᵀ + B Bᵀ = 0"
    };
    let eigs: Vec<C64> = s.diagonal().iter().copied().collect();
    match stability_violation(&eigs, a.norm(), discrete, params) {
        Some(why) => Err(NumError::no_solution(what, why)),
        None => Ok(()),
    }
}

/// Why a matrix with eigenvalues `eigs` is not stable with margin, or `None` when it is.
///
/// Each eigenvalue is judged against **its own scale**, not against ‖A‖: continuous, every
/// `−2 Re λ > 2·max(resonance_tol·|λ|, 8ε·norm_a)`; discrete, every
/// `1 − |λ|² > max(resonance_tol·(1 + |λ|²), 16ε·norm_a)`. `norm_a` must be the Frobenius
/// norm of the **balanced** matrix (Parlett–Reinsch, see
/// [`crate::numeric::linalg::dense::balance_reducing_norm`]), so that it measures the
/// rounding errors of the eigenvalues and not the units of the states: a stiff
/// `diag(−1e6, −1e-6)` is stable, a computed integrator (λ at rounding level) is not. The
/// relative part `resonance_tol·|λ|` is a damping ratio below which the mode counts as on
/// the boundary (default 1e-12).
pub(crate) fn stability_violation(
    eigs: &[C64],
    norm_a: f64,
    discrete: bool,
    params: &MatrixEquationParams,
) -> Option<String> {
    let round = EIGENVALUE_ROUNDING * norm_a;
    for &z in eigs {
        if discrete {
            let r = z.norm();
            if r >= 1.0 {
                return Some(format!(
                    "A is not Schur-stable: eigenvalue {} has modulus {:.6} ≥ 1",
                    fmt_complex(z),
                    r
                ));
            }
        } else if z.re >= 0.0 {
            return Some(format!(
                "A is not Hurwitz (continuous-time stable): eigenvalue {} has real part \
                 {:.6e} ≥ 0",
                fmt_complex(z),
                z.re
            ));
        }
    }
    for &z in eigs {
        if discrete {
            let r = z.norm();
            let margin = (1.0 - r) * (1.0 + r);
            let floor = (params.resonance_tol * (1.0 + r * r)).max(2.0 * round);
            if margin <= floor {
                return Some(format!(
                    "A is on the unit circle to working precision: eigenvalue {} has \
                     1 − |λ|² = {margin:.3e}, at or below the tolerance {floor:.3e}",
                    fmt_complex(z)
                ));
            }
        } else {
            let margin = -2.0 * z.re;
            let floor = 2.0 * (params.resonance_tol * z.norm()).max(round);
            if margin <= floor {
                return Some(format!(
                    "A is on the imaginary axis to working precision: eigenvalue {} has \
                     −2 Re λ = {margin:.3e}, at or below the tolerance {floor:.3e}",
                    fmt_complex(z)
                ));
            }
        }
    }
    None
}

/// Replaces the leading `k×k` upper-triangular `G` (`G[0..k, 0..k]`) by an upper-triangular
/// `Ĝ` with `Ĝ Ĝᴴ = G Gᴴ + y yᴴ` (`y` of length ≥ k, only its first k entries are used and
/// they are destroyed), by Givens rotations from the right, bottom row first.
fn absorb_column(g: &mut DMatrix<C64>, y: &mut [C64], k: usize) {
    for j in (0..k).rev() {
        let a = g[(j, j)];
        let b = y[j];
        if b.norm() == 0.0 {
            continue;
        }
        let r = a.norm().hypot(b.norm());
        // [a b] Z = [r 0] with Z = [[ā, −b], [b̄, a]] / r (unitary).
        let (ac, bc) = (a.conj() / r, b.conj() / r);
        let (a1, b1) = (a / r, b / r);
        for i in 0..=j {
            let (gi, yi) = (g[(i, j)], y[i]);
            g[(i, j)] = gi * ac + yi * bc;
            y[i] = -gi * b1 + yi * a1;
        }
        y[j] = C64::new(0.0, 0.0);
    }
}

/// Real upper-triangular `U` with non-negative diagonal and `U Uᵀ = Re(X Xᴴ)`, from an RQ
/// factorisation of `[Re X  Im X]` computed as a QR of its reversed transpose.
fn real_upper_factor(x: &DMatrix<C64>) -> DMatrix<f64> {
    let n = x.nrows();
    // N = Mᵀ J with M = [Re X  Im X] (n×2n): N[i, j] = M[n−1−j, i].
    let nmat = DMatrix::from_fn(2 * n, n, |i, j| {
        let row = n - 1 - j;
        if i < n {
            x[(row, i)].re
        } else {
            x[(row, i - n)].im
        }
    });
    let r1 = nmat.qr().r();
    // U = J R₁ᵀ J: U[i, j] = R₁[n−1−j, n−1−i].
    let mut u = DMatrix::from_fn(n, n, |i, j| r1[(n - 1 - j, n - 1 - i)]);
    for j in 0..n {
        if u[(j, j)] < 0.0 {
            for i in 0..=j {
                u[(i, j)] = -u[(i, j)];
            }
        }
    }
    u
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::assert_close;
    use crate::numeric::design::lyapunov::{solve_lyapunov, solve_lyapunov_discrete};
    use crate::numeric::testing::Rng;

    const SIZES: [usize; 6] = [0, 1, 2, 3, 10, 40];

    fn assert_upper_with_nonnegative_diagonal(u: &DMatrix<f64>) {
        for j in 0..u.ncols() {
            assert!(u[(j, j)] >= 0.0, "diagonal entry {j} is {}", u[(j, j)]);
            for i in j + 1..u.nrows() {
                assert_eq!(u[(i, j)], 0.0, "entry ({i}, {j}) below the diagonal");
            }
        }
    }

    #[test]
    fn scalar_closed_forms() {
        // a p + p a + b² = 0 with a = −2, b = 3: p = 9/4, u = √p = 1.5 (derived by hand).
        let u = lyapunov_cholesky(
            &DMatrix::from_element(1, 1, -2.0),
            &DMatrix::from_element(1, 1, 3.0),
        )
        .expect("scalar");
        assert_close!(u[(0, 0)], 1.5);
        // a² p − p + b² = 0 with a = 0.6, b = 0.8: p = 0.64/0.64 = 1, u = 1 (derived by hand).
        let u = lyapunov_cholesky_discrete(
            &DMatrix::from_element(1, 1, 0.6),
            &DMatrix::from_element(1, 1, -0.8),
        )
        .expect("scalar discrete");
        assert_close!(u[(0, 0)], 1.0);
    }

    #[test]
    fn rotation_block_closed_form() {
        // A = [[σ, ω], [−ω, σ]], B = I: P = −1/(2σ)·I (A + Aᵀ = 2σI; derived by hand), so
        // U = √(−1/(2σ))·I; the Schur form has one 2×2 block (eigenvalues σ ± jω).
        let (sigma, omega) = (-0.125, 2.0);
        let a = DMatrix::from_row_slice(2, 2, &[sigma, omega, -omega, sigma]);
        let u = lyapunov_cholesky(&a, &DMatrix::identity(2, 2)).expect("rotation");
        let expected = DMatrix::identity(2, 2) * (-1.0 / (2.0 * sigma)).sqrt();
        assert_close!(&u * u.transpose(), &expected * &expected, 1e-14, 1e-14);
    }

    #[test]
    fn factor_matches_bartels_stewart_continuous() {
        let mut rng = Rng::new(21);
        for &n in &SIZES {
            for &m in &[1usize, 3] {
                let a = rng.stable(n);
                let b = rng.matrix(n, m);
                let u = lyapunov_cholesky(&a, &b).expect("stable");
                assert_upper_with_nonnegative_diagonal(&u);
                // Reference: Bartels–Stewart on the same equation (this crate, sylvester.rs).
                let x = solve_lyapunov(&a, &(&b * b.transpose())).expect("reference");
                let p = &u * u.transpose();
                let tol = 1e-11 * x.norm().max(1e-300);
                assert!(
                    (&p - &x).norm() <= tol,
                    "n = {n}, m = {m}: ‖UUᵀ − X‖ = {}",
                    (&p - &x).norm()
                );
                // Residual of the factored solution itself.
                let res = &a * &p + &p * a.transpose() + &b * b.transpose();
                let denom = a.norm() * p.norm() * f64::EPSILON * n.max(1) as f64;
                assert!(
                    n == 0 || res.norm() / denom < 30.0,
                    "n = {n}: ratio {}",
                    res.norm() / denom
                );
            }
        }
    }

    #[test]
    fn factor_matches_bartels_stewart_discrete() {
        let mut rng = Rng::new(22);
        for &n in &SIZES {
            for &m in &[1usize, 2] {
                let a = rng.schur_stable(n, 0.95);
                let b = rng.matrix(n, m);
                let u = lyapunov_cholesky_discrete(&a, &b).expect("stable");
                assert_upper_with_nonnegative_diagonal(&u);
                // Reference: the Schur recursion of sylvester.rs.
                let x = solve_lyapunov_discrete(&a, &(&b * b.transpose())).expect("reference");
                let p = &u * u.transpose();
                let tol = 1e-11 * x.norm().max(1e-300);
                assert!(
                    (&p - &x).norm() <= tol,
                    "n = {n}, m = {m}: ‖UUᵀ − X‖ = {}",
                    (&p - &x).norm()
                );
            }
        }
    }

    #[test]
    fn wide_and_empty_b() {
        let mut rng = Rng::new(23);
        let a = rng.stable(4);
        // More inputs than states.
        let b = rng.matrix(4, 9);
        let u = lyapunov_cholesky(&a, &b).expect("wide B");
        let x = solve_lyapunov(&a, &(&b * b.transpose())).expect("reference");
        assert!((&u * u.transpose() - &x).norm() <= 1e-12 * x.norm());
        // No inputs: P = 0.
        let u = lyapunov_cholesky(&a, &DMatrix::zeros(4, 0)).expect("empty B");
        assert_eq!(u, DMatrix::zeros(4, 4));
    }

    #[test]
    fn rank_deficient_gramian_still_factors() {
        // Uncontrollable modes: A block-diagonal with the input reaching only the first
        // block, so P = diag(P₁, 0) is singular (rank 2 of 4). A Cholesky of P would fail.
        let mut rng = Rng::new(24);
        let a1 = DMatrix::from_row_slice(2, 2, &[-1.0, 2.0, -3.0, -0.5]);
        let a2 = DMatrix::from_row_slice(2, 2, &[-2.0, 0.0, 1.0, -4.0]);
        let mut a = DMatrix::zeros(4, 4);
        a.view_mut((0, 0), (2, 2)).copy_from(&a1);
        a.view_mut((2, 2), (2, 2)).copy_from(&a2);
        let mut b = DMatrix::zeros(4, 1);
        b[(0, 0)] = 1.0;
        b[(1, 0)] = -0.5;
        // Hide the structure by an orthogonal change of basis.
        let q = rng.matrix(4, 4).qr().q();
        let (a, b) = (&q * &a * q.transpose(), &q * &b);
        for discrete in [false, true] {
            let (u, x) = if discrete {
                let ad = &a * 0.2;
                (
                    lyapunov_cholesky_discrete(&ad, &b).expect("rank deficient"),
                    solve_lyapunov_discrete(&ad, &(&b * b.transpose())).expect("reference"),
                )
            } else {
                (
                    lyapunov_cholesky(&a, &b).expect("rank deficient"),
                    solve_lyapunov(&a, &(&b * b.transpose())).expect("reference"),
                )
            };
            assert!((&u * u.transpose() - &x).norm() <= 1e-12 * x.norm());
            // Two singular values of U are zero to rounding (rank 2 by construction).
            let sv = u.singular_values();
            let mut sv: Vec<f64> = sv.iter().copied().collect();
            sv.sort_by(|p, q| q.total_cmp(p));
            assert!(
                sv[1] > 1e-3 && sv[2] < 1e-13 * sv[0],
                "singular values {sv:?}"
            );
        }
    }

    #[test]
    fn instability_is_reported() {
        let a = DMatrix::from_row_slice(2, 2, &[0.1, 1.0, -1.0, 0.1]);
        let b = DMatrix::identity(2, 2);
        match lyapunov_cholesky(&a, &b) {
            Err(NumError::NoSolution { why, .. }) => assert!(why.contains("not Hurwitz"), "{why}"),
            other => panic!("expected an instability error, found {other:?}"),
        }
        let a = DMatrix::from_row_slice(2, 2, &[0.5, 0.0, 0.3, -1.2]);
        match lyapunov_cholesky_discrete(&a, &b) {
            Err(NumError::NoSolution { why, .. }) => {
                assert!(why.contains("not Schur-stable"), "{why}")
            }
            other => panic!("expected an instability error, found {other:?}"),
        }
        // A pole on the imaginary axis (an integrator).
        let a = DMatrix::from_row_slice(2, 2, &[0.0, 1.0, 0.0, -1.0]);
        assert!(matches!(
            lyapunov_cholesky(&a, &b),
            Err(NumError::NoSolution { .. })
        ));
        // Shape and finiteness checks.
        assert!(matches!(
            lyapunov_cholesky(&DMatrix::identity(2, 2), &DMatrix::zeros(3, 1)),
            Err(NumError::ShapeMismatch { .. })
        ));
        let mut bad = DMatrix::identity(2, 2) * -1.0;
        bad[(0, 1)] = f64::NAN;
        assert!(matches!(
            lyapunov_cholesky(&bad, &b),
            Err(NumError::NotFinite { .. })
        ));
    }
}
