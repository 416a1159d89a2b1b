//! The matrix exponential by scaling and squaring with Padé approximants.

use crate::numeric::check;
use crate::numeric::error::{NumError, NumResult};
use crate::numeric::linalg::dense::{
    balance_reducing_norm, pow2_factors, scale_exponent, unbalance,
};
use crate::numeric::linalg::kernels::{self, one_norm};
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
/// [m/m] Padé approximant is below the unit roundoff 2⁻⁵³ in IEEE double precision. The
/// same bounds apply to the ‖Aᵖ‖₁^(1/p) estimates of Al-Mohy & Higham 2009 (their
/// Table 3.1), except that their Algorithm 5.1 scales for m = 13 to [`THETA_13_2009`].
const THETA: [(usize, f64); 5] = [
    (3, 1.495585217958292e-2),
    (5, 2.53939833006323e-1),
    (7, 9.504178996162932e-1),
    (9, 2.097847961257068e0),
    (13, 5.371920351148152e0),
];

/// The m = 13 scaling target of Al-Mohy & Higham 2009, Algorithm 5.1 (smaller than
/// θ₁₃ because the ℓ correction then only ever adds squarings).
const THETA_13_2009: f64 = 4.25;

/// Above ‖A‖₁ = 2^this the powers A², A⁴, A⁶ used by the 2009 estimates could overflow;
/// such matrices take the 2005 rule, which scales before forming any power.
const POWER_ESTIMATE_LIMIT_LOG2: f64 = 60.0;

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
    // Entries within 2^±500: a sum of n of them cannot overflow.
    let amax = kernels::max_abs(a.as_slice());
    if amax <= 2f64.powi(500) {
        return (one_norm(a), 0);
    }
    let e = scale_exponent(a);
    let (f1, f2) = pow2_factors(-e);
    let norm = a
        .column_iter()
        .map(|c| c.iter().map(|v| (v * f1 * f2).abs()).sum::<f64>())
        .fold(0.0f64, f64::max);
    (norm, e)
}

/// Even powers A², A⁴, A⁶, A⁸ of the argument of a Padé approximant, formed once as
/// needed and shared by the degree selection and the evaluation (A⁶ = A⁴A², A⁸ = A⁴A⁴).
struct Powers {
    even: Vec<DMatrix<f64>>,
}

impl Powers {
    fn new(a: &DMatrix<f64>) -> Self {
        Powers { even: vec![a * a] }
    }

    /// The first `count` (1 … 4) even powers, A², A⁴, …, forming the missing ones.
    fn up_to(&mut self, count: usize) -> &[DMatrix<f64>] {
        while self.even.len() < count.min(4) {
            let next = match self.even.as_slice() {
                [a2] => a2 * a2,
                [a2, a4] => a4 * a2,
                [_, a4, _] => a4 * a4,
                _ => break,
            };
            self.even.push(next);
        }
        &self.even[..count.min(self.even.len())]
    }
}

/// Σₖ cₖ Mₖ + c_I·I in one pass per term, without temporaries.
fn combine(terms: &[(&DMatrix<f64>, f64)], c_identity: f64) -> DMatrix<f64> {
    let n = terms[0].0.nrows();
    let mut out = DMatrix::<f64>::zeros(n, n);
    let o = out.as_mut_slice();
    // Up to four terms per pass (each output entry loaded and stored once per pass).
    for chunk in terms.chunks(4) {
        match chunk {
            [(a, ca), (b, cb), (c, cc), (d, cd)] => {
                let (a, b, c, d) = (a.as_slice(), b.as_slice(), c.as_slice(), d.as_slice());
                for i in 0..o.len() {
                    o[i] += ca * a[i] + cb * b[i] + cc * c[i] + cd * d[i];
                }
            }
            [(a, ca), (b, cb), (c, cc)] => {
                let (a, b, c) = (a.as_slice(), b.as_slice(), c.as_slice());
                for i in 0..o.len() {
                    o[i] += ca * a[i] + cb * b[i] + cc * c[i];
                }
            }
            _ => {
                for (m, c) in chunk {
                    for (oi, v) in o.iter_mut().zip(m.as_slice()) {
                        *oi += c * v;
                    }
                }
            }
        }
    }
    for i in 0..n {
        out[(i, i)] += c_identity;
    }
    out
}

/// Padé [m/m] approximant rₘ(A) = qₘ(A)⁻¹ pₘ(A) with U the odd and V the even part of pₘ,
/// from the even powers in `p` (formed as needed). pₘ(A) and qₘ(A) are polynomials in
/// the same matrix and commute, so rₘ(A) = pₘ(A) qₘ(A)⁻¹ too; it is formed that way, by
/// right division, whose column-oriented loops suit column-major storage.
fn pade(a: &DMatrix<f64>, p: &mut Powers, m: usize) -> NumResult<DMatrix<f64>> {
    let (u, v) = if m == 13 {
        let b = &B13;
        let [a2, a4, a6] = p.up_to(3) else {
            return Err(NumError::no_solution(
                "matrix exponential",
                "internal: the even powers of A were not formed",
            ));
        };
        let inner_u = a6 * combine(&[(a6, b[13]), (a4, b[11]), (a2, b[9])], 0.0);
        let u = a * combine(&[(&inner_u, 1.0), (a6, b[7]), (a4, b[5]), (a2, b[3])], b[1]);
        let inner_v = a6 * combine(&[(a6, b[12]), (a4, b[10]), (a2, b[8])], 0.0);
        let v = combine(&[(&inner_v, 1.0), (a6, b[6]), (a4, b[4]), (a2, b[2])], b[0]);
        (u, v)
    } else {
        let b: &[f64] = match m {
            3 => &B3,
            5 => &B5,
            7 => &B7,
            _ => &B9,
        };
        // Even powers A², A⁴, … up to A^(m−1).
        let powers = p.up_to(m / 2);
        let odd: Vec<(&DMatrix<f64>, f64)> = powers
            .iter()
            .enumerate()
            .map(|(k, m)| (m, b[2 * k + 3]))
            .collect();
        let even: Vec<(&DMatrix<f64>, f64)> = powers
            .iter()
            .enumerate()
            .map(|(k, m)| (m, b[2 * k + 2]))
            .collect();
        (a * combine(&odd, b[1]), combine(&even, b[0]))
    };
    let mut denominator = v.clone();
    denominator -= &u;
    let mut numerator = v;
    numerator += &u;
    kernels::right_divide(numerator, denominator).ok_or_else(|| {
        NumError::no_solution("matrix exponential", "the Padé denominator is singular")
    })
}

/// log₂ |c₂ₘ₊₁| with c₂ₘ₊₁ = (m!)² / ((2m)! (2m+1)!), the leading coefficient of the
/// backward-error series of the [m/m] Padé approximant (Al-Mohy & Higham 2009, § 4).
fn log2_leading_error_coefficient(m: usize) -> f64 {
    let log2_factorial = |k: usize| (2..=k).map(|i| (i as f64).log2()).sum::<f64>();
    2.0 * log2_factorial(m) - log2_factorial(2 * m) - log2_factorial(2 * m + 1)
}

/// log₂‖|A|ᵏ‖₁ for k = 1, 2, …, extended on demand, and brackets for higher powers.
///
/// Computed exactly, not estimated: for a non-negative matrix the 1-norm is the largest
/// entry of eᵀ|A|ᵏ = ((|A|ᵀ)ᵏ e)ᵀ, so each further power costs one vector–matrix product
/// (O(n²), a dot product per column); the vector is renormalised after each product
/// (vₖ = (|A|ᵀ)ᵏ e / ‖|A|ᵏ‖₁, largest entry 1) so that nothing overflows.
///
/// Brackets (Collatz–Wielandt): with w = |A|ᵀ vₖ and λ₋ ≤ wᵢ/vᵢ ≤ λ₊ over the entries,
/// λ₋ᵖ⁻ᵏ vₖ ≤ (|A|ᵀ)ᵖ⁻ᵏ vₖ ≤ λ₊ᵖ⁻ᵏ vₖ entrywise (|A|ᵀ is non-negative), so
/// log₂‖|A|ᵖ‖₁ lies in log₂‖|A|ᵏ‖₁ + (p − k)·[log₂λ₋, log₂λ₊]. The bracket narrows as vₖ
/// approaches the Perron vector, usually within a few products.
struct AbsPowerNorms {
    abs: DMatrix<f64>,
    v: Vec<f64>,
    log2: Vec<f64>,
    zero: bool,
}

impl AbsPowerNorms {
    fn new(a: &DMatrix<f64>) -> Self {
        AbsPowerNorms {
            abs: a.abs(),
            v: vec![1.0; a.nrows()],
            log2: Vec::new(),
            zero: false,
        }
    }

    /// w = |A|ᵀ v for the current v: wⱼ = Σᵢ vᵢ|aᵢⱼ|, one dot product per column.
    fn product(&self) -> Vec<f64> {
        let n = self.v.len();
        self.abs
            .as_slice()
            .chunks_exact(n)
            .map(|c| kernels::dot(c, &self.v))
            .collect()
    }

    /// Takes the next exact power, given w = |A|ᵀ vₖ.
    fn advance(&mut self, w: Vec<f64>) {
        let top = kernels::max_abs(&w);
        if top == 0.0 {
            self.zero = true;
            return;
        }
        let last = self.log2.last().copied().unwrap_or(0.0);
        self.log2.push(last + top.log2());
        self.v = w.into_iter().map(|x| x / top).collect();
    }

    /// An interval holding log₂‖|A|ᵖ‖₁, exact (a point) once p products have been taken.
    /// Takes products until the interval decides `settled`, or up to p.
    fn log2_norm_bracket(&mut self, p: usize, settled: impl Fn(f64, f64) -> bool) -> (f64, f64) {
        loop {
            let k = self.log2.len();
            if self.zero {
                return (f64::NEG_INFINITY, f64::NEG_INFINITY);
            }
            if k >= p {
                return (self.log2[p - 1], self.log2[p - 1]);
            }
            let w = self.product();
            let (mut lo, mut hi) = (f64::INFINITY, 0.0f64);
            for (wi, vi) in w.iter().zip(&self.v) {
                if *vi > 0.0 {
                    let r = wi / vi;
                    lo = lo.min(r);
                    hi = hi.max(r);
                } else if *wi > 0.0 {
                    hi = f64::INFINITY; // no finite upper ratio
                }
            }
            let base = self.log2.last().copied().unwrap_or(0.0);
            let steps = (p - k) as f64;
            let bracket = (base + steps * lo.log2(), base + steps * hi.log2());
            if k > 0
                && bracket.0.is_finite()
                && bracket.1.is_finite()
                && settled(bracket.0, bracket.1)
            {
                return bracket;
            }
            self.advance(w);
        }
    }

    /// log₂‖|A|ᵏ‖₁ exactly (−∞ once a power vanishes).
    #[cfg(test)]
    fn log2_norm(&mut self, k: usize) -> f64 {
        self.log2_norm_bracket(k, |_, _| false).0
    }

    /// ℓ(2⁻ˢA, m) of Al-Mohy & Higham 2009, eq. (5.1): the number of extra squarings that
    /// keeps the leading backward-error term |c₂ₘ₊₁|·‖|B|^(2m+1)‖₁/‖B‖₁ (B = 2⁻ˢA) below
    /// u = 2⁻⁵³. It guards against the norm estimates undershooting for strongly
    /// non-normal A. `log2_a_norm` is log₂‖A‖₁; scaling by 2⁻ˢ enters exactly. The value
    /// is exact: products are taken until both ends of the bracket of ‖|A|^(2m+1)‖₁ give
    /// the same ℓ (ℓ moves in steps of 2m bits of the norm, so this is usually early).
    fn ell(&mut self, m: usize, s: i32, log2_a_norm: f64) -> i32 {
        let p = 2 * m + 1;
        let of = |log2_norm: f64| {
            let log2_power = log2_norm - (p as f64) * s as f64;
            let log2_alpha =
                log2_leading_error_coefficient(m) + log2_power - (log2_a_norm - s as f64);
            let extra = ((log2_alpha + 53.0) / (2 * m) as f64).ceil();
            if extra.is_finite() {
                extra.max(0.0) as i32
            } else {
                0
            }
        };
        let (lo, hi) = self.log2_norm_bracket(p, |lo, hi| of(lo) == of(hi));
        debug_assert_eq!(of(lo), of(hi));
        of(hi)
    }
}

/// Degree and scaling from the ‖Aᵖ‖₁^(1/p) of Al-Mohy & Higham 2009, Algorithm 5.1:
/// returns rₘ(2⁻ˢA) and s. The powers A², A⁴, A⁶ are formed anyway for the approximant,
/// so their norms are exact here; ‖A⁸‖₁ ≤ ‖A⁴‖₁² and ‖A¹⁰‖₁ ≤ ‖A⁴‖₁‖A⁶‖₁ (and
/// ‖A⁶‖₁ ≤ ‖A⁴‖₁‖A²‖₁ before A⁶ exists) stand in for the paper's estimates of the rest.
/// Each is an upper bound of the exact value, so the choice is never less cautious than
/// with exact norms.
fn pade_by_power_estimates(a: &DMatrix<f64>) -> NumResult<(DMatrix<f64>, i32)> {
    let mut p = Powers::new(a);
    let mut abs_powers = AbsPowerNorms::new(a);
    let log2_a = one_norm(a).log2();
    let mut ell = |m: usize, s: i32| abs_powers.ell(m, s, log2_a);
    let n2 = p.up_to(1).first().map_or(0.0, one_norm);
    // m = 3: d₄ ≤ ‖A²‖^(1/2) and d₆ ≤ ‖A²‖^(1/2).
    if n2.sqrt() <= THETA[0].1 && ell(3, 0) == 0 {
        return Ok((pade(a, &mut p, 3)?, 0));
    }
    let n4 = p.up_to(2).last().map_or(0.0, one_norm);
    let d4 = n4.powf(0.25);
    let eta1 = d4.max((n4 * n2).powf(1.0 / 6.0));
    if eta1 <= THETA[1].1 && ell(5, 0) == 0 {
        return Ok((pade(a, &mut p, 5)?, 0));
    }
    let n6 = p.up_to(3).last().map_or(0.0, one_norm);
    let d6 = n6.powf(1.0 / 6.0);
    let d8 = d4; // ‖A⁸‖₁^(1/8) ≤ (‖A⁴‖₁²)^(1/8)
    let eta3 = d6.max(d8);
    for &(m, theta) in &THETA[2..4] {
        if eta3 <= theta && ell(m, 0) == 0 {
            return Ok((pade(a, &mut p, m)?, 0));
        }
    }
    let d10 = (n4 * n6).powf(0.1);
    let eta5 = eta3.min(d8.max(d10));
    let mut s = if eta5 > 0.0 {
        (eta5 / THETA_13_2009).log2().ceil().max(0.0) as i32
    } else {
        0
    };
    // Aᵏ·2^(−ks), exact (power-of-two factors).
    let scaled = |m: &DMatrix<f64>, k: i32, s: i32| {
        let (f1, f2) = pow2_factors(-k * s);
        m.map(|v| v * f1 * f2)
    };
    s += ell(13, s);
    if s == 0 {
        return Ok((pade(a, &mut p, 13)?, 0));
    }
    let a_s = scaled(a, 1, s);
    let mut ps = Powers {
        even: p
            .up_to(3)
            .iter()
            .zip([2, 4, 6])
            .map(|(m, k)| scaled(m, k, s))
            .collect(),
    };
    Ok((pade(&a_s, &mut ps, 13)?, s))
}

/// Degree and scaling from ‖A‖₁ alone (Higham 2005, Algorithm 2.3), for matrices whose
/// powers could overflow: returns rₘ(2⁻ˢA) and s.
fn pade_by_norm(
    a: &DMatrix<f64>,
    norm_log2: f64,
    overflow: impl Fn() -> NumError,
) -> NumResult<(DMatrix<f64>, i32)> {
    for &(m, theta) in &THETA[..4] {
        if norm_log2 <= theta.log2() {
            return Ok((pade(a, &mut Powers::new(a), m)?, 0));
        }
    }
    let s = (norm_log2 - THETA[4].1.log2()).ceil().max(0.0);
    if s > MAX_SQUARINGS as f64 {
        return Err(overflow());
    }
    let s = s as i32;
    let (f1, f2) = pow2_factors(-s);
    let scaled = a.map(|v| v * f1 * f2);
    Ok((pade(&scaled, &mut Powers::new(&scaled), 13)?, s))
}

fn is_upper_triangular(a: &DMatrix<f64>) -> bool {
    (0..a.ncols()).all(|j| a.column(j).iter().skip(j + 1).all(|v| *v == 0.0))
}

/// Sets the diagonal and first superdiagonal of `x` to those of e^(2⁻ᵏT) for upper
/// triangular T: eᵗⁱⁱ on the diagonal, and for each 2×2 block [[λ₁, t], [0, λ₂]]
/// the (1, 2) entry t·(e^λ₂ − e^λ₁)/(λ₂ − λ₁) = t·e^((λ₁+λ₂)/2)·sinh(z)/z with
/// z = (λ₂ − λ₁)/2, free of cancellation (Higham 2008, "Functions of Matrices", eq. 10.42).
fn exact_triangular_band(x: &mut DMatrix<f64>, t: &DMatrix<f64>, k: i32) {
    let n = t.nrows();
    let (f1, f2) = pow2_factors(-k);
    let sc = |v: f64| v * f1 * f2;
    for i in 0..n {
        x[(i, i)] = sc(t[(i, i)]).exp();
    }
    for i in 0..n.saturating_sub(1) {
        let (l1, l2, t12) = (sc(t[(i, i)]), sc(t[(i + 1, i + 1)]), sc(t[(i, i + 1)]));
        let z = 0.5 * (l2 - l1);
        // sinh(z)/z = 1 + z²/6 + …: below 1e-8 the correction is under 2⁻⁵³.
        let sinhc = if z.abs() < 1e-8 { 1.0 } else { z.sinh() / z };
        x[(i, i + 1)] = t12 * (0.5 * (l1 + l2)).exp() * sinhc;
    }
}

/// Matrix exponential e^A = Σ Aᵏ/k! of a square matrix, with default [`ExpmParams`].
///
/// See [`expm_with`] for the algorithm, cost and accuracy.
pub fn expm(a: &DMatrix<f64>) -> NumResult<DMatrix<f64>> {
    expm_with(a, &ExpmParams::default())
}

/// Matrix exponential e^A by scaling and squaring with Padé approximants.
///
/// Degree and scaling by Algorithm 5.1 of Al-Mohy & Higham 2009, "A new scaling and
/// squaring algorithm for the matrix exponential" (SIAM J. Matrix Anal. Appl. 31(3)), the
/// refinement of Higham 2005, "The scaling and squaring method for the matrix exponential
/// revisited" (SIAM J. Matrix Anal. Appl. 26(4)): the [m/m] Padé approximant rₘ for the
/// smallest m ∈ {3, 5, 7, 9} whose bound θₘ (Higham 2005, Table 2.3) exceeds the
/// ‖Aᵖ‖₁^(1/p) that govern its backward error and whose ℓ(A, m) correction is zero;
/// otherwise r₁₃(A/2ˢ) squared s times, s from those quantities and θ₁₃ = 4.25 plus
/// ℓ(A/2ˢ, 13) (the norms used are described at `pade_by_power_estimates`). The ‖Aᵖ‖₁
/// can be far below ‖A‖₁ᵖ for non-normal A, so this takes fewer squarings than the 2005 rule on
/// ‖A‖₁ alone and avoids over-scaling; matrices with ‖A‖₁ > 2⁶⁰, whose powers could
/// overflow, use the 2005 rule. Upper-triangular A keeps an exactly computed diagonal and
/// first superdiagonal through the squarings (the paper's Code Fragment 2.1). Optional
/// balancing (Parlett & Reinsch 1969, "Balancing a matrix for calculation of eigenvalues
/// and eigenvectors"): e^A = D e^B D⁻¹ with B = D⁻¹AD, D a power-of-two diagonal, used
/// only when ‖B‖₁ < ‖A‖₁.
///
/// Cost: πₘ ∈ {2, 3, 4, 5, 6} matrix products for m ∈ {3, 5, 7, 9, 13}, one LU
/// factorisation and right division with n right-hand sides, s further products and
/// O(n²) per power-iteration step of the ℓ correction, i.e. about (2πₘ + 8/3 + 2s)·n³
/// flops.
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
    if norm_m == 0.0 {
        return Ok(DMatrix::identity(n, n)); // e^0 = I exactly
    }
    let norm_log2 = norm_m.log2() + norm_e as f64;
    let (mut x, squarings) = if norm_log2 <= POWER_ESTIMATE_LIMIT_LOG2 {
        pade_by_power_estimates(&work)?
    } else {
        pade_by_norm(&work, norm_log2, overflow)?
    };
    // Upper-triangular A: the diagonal and first superdiagonal of every intermediate
    // power are known exactly, and replacing them stops the squarings from amplifying
    // their rounding (Al-Mohy & Higham 2009, § 2, Code Fragment 2.1).
    let triangular = is_upper_triangular(&work);
    if triangular {
        exact_triangular_band(&mut x, &work, squarings);
    }
    for j in 1..=squarings {
        NumError::deadline("matrix exponential")?;
        x = &x * &x;
        if !kernels::all_finite(x.as_slice()) {
            return Err(overflow());
        }
        if triangular {
            exact_triangular_band(&mut x, &work, squarings - j);
        }
    }
    if let Some(d) = balance_d {
        unbalance(&mut x, &d); // e^A = D e^B D⁻¹
    }
    if !kernels::all_finite(x.as_slice()) {
        return Err(overflow());
    }
    Ok(x)
}

#[cfg(test)]
mod tests;
