//! The matrix exponential by scaling and squaring with Padé approximants.

use crate::numeric::check;
use crate::numeric::error::{NumError, NumResult};
use crate::numeric::linalg::dense::{balance_reducing_norm, scale_exponent, times_pow2, unbalance};
use nalgebra::DMatrix;

/// Options of [`expm_with`].
#[derive(Debug, Clone, PartialEq)]
pub struct ExpmParams {
    /// Balance A by an exact power-of-two diagonal similarity first (Parlett & Reinsch
    /// 1969), keeping it only when it lowers ‖A‖₁. Default `true`.
    pub balance: bool,
}

impl Default for ExpmParams {
    fn default() -> Self {
        ExpmParams { balance: true }
    }
}

/// θₘ of Higham 2005, Table 2.3: the largest ‖A‖₁ for which the backward error of the
/// [m/m] Padé approximant is below the unit roundoff 2⁻⁵³ in IEEE double precision.
const THETA: [(usize, f64); 5] = [
    (3, 1.495585217958292e-2),
    (5, 2.53939833006323e-1),
    (7, 9.504178996162932e-1),
    (9, 2.097847961257068e0),
    (13, 5.371920351148152e0),
];

/// Coefficients b₀ … bₘ of the [m/m] Padé numerator pₘ(x) = Σ bₖ xᵏ for eˣ, scaled to be
/// integers: bₖ ∝ (2m−k)! m! / ((2m)! k! (m−k)!) (Higham 2005, § 2; checked against that
/// formula in the tests). The denominator is qₘ(x) = pₘ(−x).
const B3: [f64; 4] = [120.0, 60.0, 12.0, 1.0];
const B5: [f64; 6] = [30240.0, 15120.0, 3360.0, 420.0, 30.0, 1.0];
const B7: [f64; 8] = [
    17297280.0, 8648640.0, 1995840.0, 277200.0, 25200.0, 1512.0, 56.0, 1.0,
];
const B9: [f64; 10] = [
    17643225600.0,
    8821612800.0,
    2075673600.0,
    302702400.0,
    30270240.0,
    2162160.0,
    110880.0,
    3960.0,
    90.0,
    1.0,
];
const B13: [f64; 14] = [
    64764752532480000.0,
    32382376266240000.0,
    7771770303897600.0,
    1187353796428800.0,
    129060195264000.0,
    10559470521600.0,
    670442572800.0,
    33522128640.0,
    1323241920.0,
    40840800.0,
    960960.0,
    16380.0,
    182.0,
    1.0,
];

/// Largest number of squarings attempted: beyond this ‖A‖₁ exceeds 2¹¹⁰⁰·θ₁₃ and the
/// double-precision exponent range is left long before.
const MAX_SQUARINGS: i32 = 1100;

/// ‖A‖₁ = maxⱼ Σᵢ |aᵢⱼ|, as (mantissa-scaled value, exponent) so that it cannot overflow:
/// the norm is `value · 2^exponent`.
fn one_norm_scaled(a: &DMatrix<f64>) -> (f64, i32) {
    let e = scale_exponent(a);
    let norm = a
        .column_iter()
        .map(|c| c.iter().map(|v| times_pow2(*v, -e).abs()).sum::<f64>())
        .fold(0.0f64, f64::max);
    (norm, e)
}

/// Padé [m/m] approximant rₘ(A) = qₘ(A)⁻¹ pₘ(A) with U the odd and V the even part of pₘ.
fn pade(a: &DMatrix<f64>, m: usize) -> NumResult<DMatrix<f64>> {
    let n = a.nrows();
    let id = DMatrix::<f64>::identity(n, n);
    let a2 = a * a;
    let (u, v) = if m == 13 {
        let b = &B13;
        let a4 = &a2 * &a2;
        let a6 = &a4 * &a2;
        let inner_u = &a6 * (&a6 * b[13] + &a4 * b[11] + &a2 * b[9]);
        let u = a * (inner_u + &a6 * b[7] + &a4 * b[5] + &a2 * b[3] + &id * b[1]);
        let inner_v = &a6 * (&a6 * b[12] + &a4 * b[10] + &a2 * b[8]);
        let v = inner_v + &a6 * b[6] + &a4 * b[4] + &a2 * b[2] + &id * b[0];
        (u, v)
    } else {
        let b: &[f64] = match m {
            3 => &B3,
            5 => &B5,
            7 => &B7,
            _ => &B9,
        };
        // Even powers I, A², A⁴, … up to A^(m−1).
        let mut powers = vec![id.clone(), a2.clone()];
        while powers.len() < m.div_ceil(2) {
            let next = &powers[powers.len() - 1] * &a2;
            powers.push(next);
        }
        let mut odd = DMatrix::<f64>::zeros(n, n);
        let mut even = DMatrix::<f64>::zeros(n, n);
        for (k, p) in powers.iter().enumerate() {
            odd += p * b[2 * k + 1];
            even += p * b[2 * k];
        }
        (a * odd, even)
    };
    let denominator = &v - &u;
    let numerator = &v + &u;
    lu_solve_blocked(denominator, numerator).ok_or_else(|| {
        NumError::no_solution("matrix exponential", "the Padé denominator is singular")
    })
}

/// Solves `M X = B` for square `M` with many right-hand sides: LU factorisation with
/// partial pivoting (nalgebra's), then forward and back substitution by blocks of rows,
/// each block's effect on the remaining rows applied as one matrix product (the blocked
/// form of LAPACK's `dtrsm`), so that most of the O(n³) work runs in the matrix-product
/// kernel. `None` when `U` has an exactly zero pivot (as `LU::solve`).
fn lu_solve_blocked(m: DMatrix<f64>, mut b: DMatrix<f64>) -> Option<DMatrix<f64>> {
    const NB: usize = 32;
    let n = m.nrows();
    let lu = m.lu();
    let (p, l, u) = lu.unpack();
    if u.diagonal().iter().any(|d| *d == 0.0) {
        return None;
    }
    p.permute_rows(&mut b);
    // Forward: L Y = P B, L unit lower triangular.
    let mut k0 = 0;
    while k0 < n {
        let k1 = (k0 + NB).min(n);
        let lkk = l.view((k0, k0), (k1 - k0, k1 - k0));
        let mut top = b.rows_mut(k0, k1 - k0);
        lkk.solve_lower_triangular_with_diag_mut(&mut top, 1.0);
        if k1 < n {
            let (top, mut rest) = b.rows_range_pair_mut(k0..k1, k1..n);
            rest.gemm(-1.0, &l.view((k1, k0), (n - k1, k1 - k0)), &top, 1.0);
        }
        k0 = k1;
    }
    // Backward: U X = Y.
    let mut k1 = n;
    while k1 > 0 {
        let k0 = k1.saturating_sub(NB);
        let ukk = u.view((k0, k0), (k1 - k0, k1 - k0));
        let mut blk = b.rows_mut(k0, k1 - k0);
        if !ukk.solve_upper_triangular_mut(&mut blk) {
            return None;
        }
        if k0 > 0 {
            let (above, blk) = b.rows_range_pair_mut(0..k0, k0..k1);
            let mut above = above;
            above.gemm(-1.0, &u.view((0, k0), (k0, k1 - k0)), &blk, 1.0);
        }
        k1 = k0;
    }
    Some(b)
}

/// Matrix exponential e^A = Σ Aᵏ/k! of a square matrix, with default [`ExpmParams`].
///
/// See [`expm_with`] for the algorithm, cost and accuracy.
pub fn expm(a: &DMatrix<f64>) -> NumResult<DMatrix<f64>> {
    expm_with(a, &ExpmParams::default())
}

/// Matrix exponential e^A by scaling and squaring with Padé approximants.
///
/// Algorithm 2.3 of Higham 2005, "The scaling and squaring method for the matrix
/// exponential revisited" (SIAM J. Matrix Anal. Appl. 26(4)): with θₘ the constants of that
/// paper's Table 2.3, use the [m/m] Padé approximant rₘ(A) for the smallest
/// m ∈ {3, 5, 7, 9} with ‖A‖₁ ≤ θₘ; otherwise s = ⌈log₂(‖A‖₁/θ₁₃)⌉, r₁₃(A/2ˢ), squared s
/// times. Optional balancing (Parlett & Reinsch 1969, "Balancing a matrix for calculation
/// of eigenvalues and eigenvectors"): e^A = D e^B D⁻¹ with B = D⁻¹AD, D a power-of-two
/// diagonal, used only when ‖B‖₁ < ‖A‖₁.
///
/// Cost: πₘ ∈ {2, 3, 4, 5, 6} matrix products for m ∈ {3, 5, 7, 9, 13}, one LU solve with
/// n right-hand sides and s further products, i.e. about (2πₘ + 8/3 + 2s)·n³ flops.
///
/// Accuracy: θₘ is chosen so that rₘ(2⁻ˢA)^(2ˢ) = e^(A+ΔA) with ‖ΔA‖₁ ≤ u‖A‖₁ in exact
/// arithmetic, u = 2⁻⁵³ (a backward-error bound); rounding in the squarings adds errors
/// that grow with s and with the non-normality of A. Fails with [`NumError::NoSolution`]
/// if e^A overflows the floating-point range.
pub fn expm_with(a: &DMatrix<f64>, params: &ExpmParams) -> NumResult<DMatrix<f64>> {
    let n = check::finite_square("A", a)?;
    if n == 0 {
        return Ok(DMatrix::zeros(0, 0));
    }
    let overflow = || {
        NumError::no_solution(
            "matrix exponential",
            "e^A overflows the floating-point range",
        )
    };

    let mut work = a.clone();
    let mut balance_d = None;
    if params.balance {
        if let Some((b, d)) = balance_reducing_norm(a) {
            work = b;
            balance_d = Some(d);
        }
    }

    let (norm_m, norm_e) = one_norm_scaled(&work);
    let norm_log2 = if norm_m > 0.0 {
        norm_m.log2() + norm_e as f64
    } else {
        f64::NEG_INFINITY
    };
    let mut result = None;
    for &(m, theta) in &THETA[..4] {
        if norm_log2 <= theta.log2() {
            result = Some(pade(&work, m)?);
            break;
        }
    }
    let mut x = match result {
        Some(x) => x,
        None => {
            let s = (norm_log2 - THETA[4].1.log2()).ceil().max(0.0);
            if s > MAX_SQUARINGS as f64 {
                return Err(overflow());
            }
            let s = s as i32;
            let scaled = work.map(|v| times_pow2(v, -s));
            let mut x = pade(&scaled, 13)?;
            for _ in 0..s {
                x = &x * &x;
                if !x.iter().all(|v| v.is_finite()) {
                    return Err(overflow());
                }
            }
            x
        }
    };
    if let Some(d) = balance_d {
        unbalance(&mut x, &d); // e^A = D e^B D⁻¹
    }
    if !x.iter().all(|v| v.is_finite()) {
        return Err(overflow());
    }
    Ok(x)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::assert_close;
    use crate::numeric::testing::Rng;

    const SIZES: [usize; 7] = [0, 1, 2, 3, 10, 57, 100];
    const EPS: f64 = f64::EPSILON;

    fn id(n: usize) -> DMatrix<f64> {
        DMatrix::identity(n, n)
    }

    fn rel(a: &DMatrix<f64>, b: &DMatrix<f64>) -> f64 {
        (a - b).norm() / b.norm().max(1e-300)
    }

    #[test]
    fn rotation_generator_gives_rotation() {
        // exp([[0, −ω], [ω, 0]]) = [[cos ω, −sin ω], [sin ω, cos ω]] (closed form, CHECKS.md
        // § 2). Rounding in the s squarings grows the error about linearly in ω.
        for &w in &[1e-8f64, 0.01, 0.5, 1.0, 3.0, 10.0, 100.0] {
            let g = DMatrix::from_row_slice(2, 2, &[0.0, -w, w, 0.0]);
            let r = DMatrix::from_row_slice(2, 2, &[w.cos(), -w.sin(), w.sin(), w.cos()]);
            let e = expm(&g).expect("finite");
            assert_close!(e, r, 20.0 * EPS * w.max(1.0), 0.0);
        }
    }

    #[test]
    fn diagonal_gives_scalar_exponentials() {
        // exp(diag(d)) = diag(e^d) (power series term by term).
        let mut rng = Rng::new(11);
        for &n in &SIZES {
            let d: Vec<f64> = (0..n).map(|_| 10.0 * (rng.uniform() - 0.5)).collect();
            let a = DMatrix::from_diagonal(&nalgebra::DVector::from_vec(d.clone()));
            let e = expm(&a).expect("finite");
            let expected = DMatrix::from_diagonal(&nalgebra::DVector::from_iterator(
                n,
                d.iter().map(|v| v.exp()),
            ));
            // Relative 1e-13: qₘ(x) = pₘ(−x) is evaluated with cancellation that amplifies
            // rounding by up to pₘ(|x|)/|pₘ(−|x|)| ≈ e^|x| ≈ 200 near ‖A‖₁ = θ₁₃ (observed
            // ≤ 2.2e-14 for scalars in [−5.4, 5.4]).
            assert_close!(e, expected, 0.0, 1e-13);
        }
        // Scalars spanning the range: e^x for x = −700 … 700 (relative error of the
        // squarings grows with s ≈ log₂|x|).
        for &x in &[-700.0, -30.0, -1.0, 1e-10, 0.3, 1.0, 30.0, 700.0] {
            let e = expm(&DMatrix::from_element(1, 1, x)).expect("finite");
            assert_close!(e[(0, 0)], f64::exp(x), 0.0, 2e-13);
        }
    }

    #[test]
    fn nilpotent_series_is_exact() {
        // N strictly upper triangular ⇒ N^n = 0 and e^N = Σ_{k<n} N^k/k! exactly.
        let mut rng = Rng::new(12);
        for &n in &[2usize, 3, 10, 57, 100] {
            let mut nil = rng.matrix(n, n) / (n as f64);
            for j in 0..n {
                for i in j..n {
                    nil[(i, j)] = 0.0;
                }
            }
            let mut series = id(n);
            let mut term = id(n);
            for k in 1..n {
                term = &term * &nil / (k as f64);
                series += &term;
            }
            let e = expm(&nil).expect("finite");
            assert!(
                rel(&e, &series) <= 100.0 * n as f64 * EPS,
                "n={n}: {}",
                rel(&e, &series)
            );
        }
    }

    #[test]
    fn exp_a_times_exp_minus_a_is_identity() {
        // e^A e^−A = I (A commutes with −A); error bound of order ε·‖e^A‖‖e^−A‖.
        let mut rng = Rng::new(13);
        for &n in &SIZES {
            for &scale in &[0.01, 1.0, 4.0] {
                let a = rng.matrix(n, n) * (scale / (n.max(1) as f64).sqrt());
                let e = expm(&a).expect("finite");
                let f = expm(&(-&a)).expect("finite");
                let err = (&e * &f - id(n)).norm();
                let bound = 1000.0 * (n.max(1) as f64) * EPS * e.norm() * f.norm();
                assert!(err <= bound, "n={n}, scale={scale}: {err} > {bound}");
            }
        }
    }

    #[test]
    fn badly_scaled_matrix() {
        // exp([[a, b], [0, c]]) = [[e^a, b(e^a − e^c)/(a − c)], [0, e^c]] (upper-triangular
        // closed form, from the series). With D = diag(1, 1e8, 1e-8) and
        // exp(D T D⁻¹) = D exp(T) D⁻¹ the entries span 16 decades.
        let (a, b, c) = (-1.0f64, 1e6f64, -2.0f64);
        let t = DMatrix::from_row_slice(2, 2, &[a, b, 0.0, c]);
        let expected = DMatrix::from_row_slice(
            2,
            2,
            &[a.exp(), b * (a.exp() - c.exp()) / (a - c), 0.0, c.exp()],
        );
        assert_close!(expm(&t).expect("finite"), expected, 1e-300, 1e-12);

        let base = DMatrix::from_row_slice(3, 3, &[-1.0, 2.0, 0.5, 0.0, -3.0, 1.0, 0.0, 0.0, -0.5]);
        let d = [1.0, 1e8, 1e-8];
        let scaled = DMatrix::from_fn(3, 3, |i, j| base[(i, j)] * d[i] / d[j]);
        let e_base = expm(&base).expect("finite");
        let expected = DMatrix::from_fn(3, 3, |i, j| e_base[(i, j)] * d[i] / d[j]);
        // Entrywise relative accuracy needs the balancing.
        assert_close!(expm(&scaled).expect("finite"), expected, 0.0, 1e-13);
        let unbalanced = expm_with(&scaled, &ExpmParams { balance: false }).expect("finite");
        assert!(unbalanced.iter().all(|v| v.is_finite()));
    }

    #[test]
    fn agrees_with_nalgebra_exp() {
        // nalgebra's exp() (an independent scaling-and-squaring implementation) as reference.
        let mut rng = Rng::new(14);
        for &n in &SIZES[1..] {
            for &scale in &[0.1, 1.0, 10.0] {
                let a = rng.matrix(n, n) * (scale / (n as f64).sqrt());
                let mine = expm(&a).expect("finite");
                let theirs = a.exp();
                let r = rel(&mine, &theirs);
                assert!(r <= 1e-12 * scale.max(1.0), "n={n}, scale={scale}: {r}");
            }
        }
    }

    #[test]
    fn van_loan_block_gives_integral() {
        // exp([[A, B], [0, 0]]) = [[e^A, ∫₀¹ e^{As} ds B], [0, I]] (Van Loan 1978,
        // "Computing integrals involving the matrix exponential", IEEE Trans. Automat.
        // Control 23(3)), and ∫₀¹ e^{As} ds = A⁻¹(e^A − I) for invertible A.
        let mut rng = Rng::new(15);
        for &n in &[1usize, 2, 3, 10, 57] {
            let m = 2;
            let a = rng.matrix(n, n) / (n as f64).sqrt() - id(n) * 2.0;
            let b = rng.matrix(n, m);
            let mut big = DMatrix::zeros(n + m, n + m);
            big.view_mut((0, 0), (n, n)).copy_from(&a);
            big.view_mut((0, n), (n, m)).copy_from(&b);
            let e = expm(&big).expect("finite");
            let ea = expm(&a).expect("finite");
            let integral = a
                .clone()
                .lu()
                .solve(&((&ea - id(n)) * &b))
                .expect("invertible");
            assert!(rel(&e.view((0, n), (n, m)).into_owned(), &integral) <= 1e-12);
            assert!(rel(&e.view((0, 0), (n, n)).into_owned(), &ea) <= 1e-13);
            assert_close!(e.view((n, n), (m, m)).into_owned(), id(m), 0.0, 0.0);
            assert_close!(
                e.view((n, 0), (m, n)).into_owned(),
                DMatrix::zeros(m, n),
                0.0,
                0.0
            );
        }
    }

    #[test]
    fn pade_coefficients_follow_the_closed_form() {
        // bₖ/b₀ = (2m−k)! m! / ((2m)! k! (m−k)!) · b₀ … i.e. ratios b_{k+1}/b_k =
        // (m−k)/((2m−k)(k+1)) (Higham 2005, § 2, from the factorial formula).
        let all: [&[f64]; 5] = [&B3, &B5, &B7, &B9, &B13];
        for b in all {
            let m = b.len() - 1;
            for k in 0..m {
                let ratio = (m - k) as f64 / (((2 * m - k) * (k + 1)) as f64);
                assert_close!(b[k + 1] / b[k], ratio, 0.0, 4.0 * EPS);
            }
        }
    }

    #[test]
    fn errors_and_edge_cases() {
        assert_eq!(expm(&DMatrix::zeros(0, 0)).expect("empty").shape(), (0, 0));
        assert!(matches!(
            expm(&DMatrix::zeros(2, 3)),
            Err(NumError::NotSquare { .. })
        ));
        let mut a = id(2);
        a[(0, 1)] = f64::INFINITY;
        assert!(matches!(expm(&a), Err(NumError::NotFinite { .. })));
        // e^1000 exceeds f64::MAX ≈ 1.8e308.
        assert!(matches!(
            expm(&DMatrix::from_element(1, 1, 1000.0)),
            Err(NumError::NoSolution { .. })
        ));
        // e^(−1e300) underflows to 0 legitimately; huge entries must not hang balancing.
        assert_eq!(
            expm(&DMatrix::from_element(1, 1, -1e300)).expect("underflow")[(0, 0)],
            0.0
        );
        let big = DMatrix::from_row_slice(2, 2, &[-1e300, 1e300, 0.0, -1e300]);
        assert!(expm(&big).is_ok() || matches!(expm(&big), Err(NumError::NoSolution { .. })));
        // The zero matrix gives I exactly (r₃(0) = I).
        assert_eq!(expm(&DMatrix::zeros(3, 3)).expect("finite"), id(3));
    }
}
