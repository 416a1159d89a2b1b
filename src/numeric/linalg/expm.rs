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
    fn leading_error_coefficients_match_the_factorial_formula() {
        // 1/|c₂ₘ₊₁| = (2m)! (2m+1)! / (m!)², evaluated exactly in integers (Python).
        let exact = [
            (3, 100800.0),
            (5, 10059033600.0),
            (7, 4487938430976000.0),
            (9, 5.914384781877412e21),
            (13, 1.1325077560602111e35),
        ];
        for (m, recip) in exact {
            let got = (-log2_leading_error_coefficient(m)).exp2();
            assert_close!(got, recip, 0.0, 1e-13);
        }
    }

    #[test]
    fn bracketed_ell_equals_the_exact_value() {
        // ℓ from the Collatz–Wielandt brackets against ℓ from the exact norm of every power,
        // over dense, graded, non-negative, triangular, nilpotent and reducible matrices.
        let exact_ell = |a: &DMatrix<f64>, m: usize, s: i32| {
            let mut exact = AbsPowerNorms::new(a);
            let l = exact.log2_norm(2 * m + 1);
            let log2_a = one_norm(a).log2();
            let p = (2 * m + 1) as f64;
            let log2_alpha =
                log2_leading_error_coefficient(m) + l - p * s as f64 - (log2_a - s as f64);
            let v = ((log2_alpha + 53.0) / (2 * m) as f64).ceil();
            if v.is_finite() {
                v.max(0.0) as i32
            } else {
                0
            }
        };
        let mut rng = Rng::new(21);
        let mut cases: Vec<DMatrix<f64>> = Vec::new();
        for &n in &[1usize, 2, 5, 20, 50] {
            for &scale in &[0.01, 1.0, 8.0, 100.0] {
                cases.push(rng.matrix(n, n) * scale);
                cases.push(rng.matrix(n, n).abs() * scale);
                let mut tri = rng.matrix(n, n) * scale;
                for j in 0..n {
                    for i in j + 1..n {
                        tri[(i, j)] = 0.0;
                    }
                }
                cases.push(tri.clone());
                for i in 0..n {
                    tri[(i, i)] = 0.0; // strictly triangular: nilpotent
                }
                cases.push(tri);
                let g = DMatrix::from_fn(n, n, |i, j| {
                    rng.normal() * 10f64.powf((i as f64 - j as f64) * 0.8) * scale
                });
                cases.push(g);
            }
        }
        // Reducible: a zero column and a zero row.
        let mut red = rng.matrix(6, 6);
        red.column_mut(2).fill(0.0);
        red.row_mut(4).fill(0.0);
        cases.push(red);
        for a in &cases {
            if one_norm(a) == 0.0 {
                continue;
            }
            for m in [3usize, 5, 7, 9, 13] {
                for s in [0, 1, 3] {
                    let mut bracketed = AbsPowerNorms::new(a);
                    let got = bracketed.ell(m, s, one_norm(a).log2());
                    assert_eq!(got, exact_ell(a, m, s), "m {m}, s {s}, A = {a}");
                }
            }
        }
    }

    #[test]
    fn power_estimates_choose_the_cheaper_degree() {
        // A normal matrix with ‖A‖₁ far above its spectral radius: the 2005 rule scales,
        // the ‖Aᵖ‖^(1/p) estimates see ρ(A) and need no squaring. A = Q diag(λ) Qᵀ with
        // Q a Householder reflector I − 2vvᵀ (v = e/√n), so e^A = Q diag(e^λ) Qᵀ.
        let n = 40;
        let lambda: Vec<f64> = (0..n).map(|k| -1.0 + 2.0 * k as f64 / n as f64).collect();
        let v = DMatrix::from_element(n, 1, 1.0 / (n as f64).sqrt());
        let q = id(n) - &v * v.transpose() * 2.0;
        let diag = |f: &dyn Fn(f64) -> f64| {
            DMatrix::from_diagonal(&nalgebra::DVector::from_iterator(
                n,
                lambda.iter().map(|x| f(*x)),
            ))
        };
        let a = &q * diag(&|x| x) * &q;
        let expected = &q * diag(&|x| x.exp()) * &q;
        let (x, s) = pade_by_power_estimates(&a).expect("finite");
        assert_eq!(s, 0, "no squaring for spectral radius 1");
        assert!(rel(&x, &expected) <= 1e-14, "{}", rel(&x, &expected));
        let balanced = expm(&a).expect("finite");
        assert!(
            rel(&balanced, &expected) <= 1e-13,
            "{}",
            rel(&balanced, &expected)
        );
    }

    #[test]
    fn strongly_non_normal_matrix_is_not_overscaled() {
        // exp([[a, b], [0, a]]) = e^a [[1, b], [0, 1]] (series of a Jordan block). The 2005
        // rule takes s ≈ log₂ b squarings; the 2009 estimates need far fewer, and with the
        // exact triangular band the result keeps full relative accuracy in every entry
        // (Al-Mohy & Higham 2009, §§ 1–2).
        for &b in &[1e3, 1e8, 1e16] {
            let a = DMatrix::from_row_slice(2, 2, &[1.0, b, 0.0, 1.0]);
            let e1 = 1f64.exp();
            let expected = DMatrix::from_row_slice(2, 2, &[e1, e1 * b, 0.0, e1]);
            let got = expm_with(&a, &ExpmParams { balance: false }).expect("finite");
            let (_, s) = pade_by_power_estimates(&a).expect("finite");
            assert_close!(got, expected, 0.0, 1e-14);
            let s_2005 = ((b + 1.0) / THETA[4].1).log2().ceil() as i32;
            assert!(s < s_2005, "b = {b}: s = {s}, the 2005 rule takes {s_2005}");
        }
    }

    #[test]
    fn huge_norms_take_the_norm_rule_and_agree() {
        // Above 2^60 the norm rule runs; just below both rules must agree on e^(c·N) for
        // a nilpotent N (exact series I + cN).
        for &c in &[2f64.powi(59), 2f64.powi(62)] {
            let a = DMatrix::from_row_slice(2, 2, &[0.0, c, 0.0, 0.0]);
            let expected = DMatrix::from_row_slice(2, 2, &[1.0, c, 0.0, 1.0]);
            assert_close!(expm(&a).expect("finite"), expected, 0.0, 1e-15);
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
