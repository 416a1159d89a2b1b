//! Eigenvalues and eigenvectors of a real square matrix, via the real Schur form.
//!
//! References:
//! - Parlett & Reinsch 1969, "Balancing a matrix for calculation of eigenvalues and
//!   eigenvectors" (diagonal similarity scaling, here nalgebra's `balance_parlett_reinsch`).
//! - Francis 1961/62, "The QR transformation" (the real Schur form, see
//!   [`crate::numeric::linalg::schur`]).
//! - Eigenvectors by back-substitution in the quasi-triangular factor, by the method of
//!   LAPACK's `dtrevc`; complex division by Smith 1962, "Algorithm 116: Complex division".

use crate::numeric::check;
use crate::numeric::error::{NumError, NumResult};
use crate::numeric::linalg::schur::RealSchur;
use crate::numeric::order;
use nalgebra::{Complex, DMatrix, DVector};

type C64 = Complex<f64>;

/// Eigenvalues and right eigenvectors: `A·vₖ = λₖ·vₖ` for column `k` of `vectors`.
#[derive(Debug, Clone, PartialEq)]
pub struct Eigen {
    /// Eigenvalues, ascending real part then ascending imaginary part
    /// ([`crate::numeric::order`]); a conjugate pair appears as `σ − jω`, `σ + jω` and its
    /// members are exact conjugates.
    pub values: Vec<Complex<f64>>,
    /// Column `k` is an eigenvector of `values[k]`, of unit 2-norm, scaled so that its
    /// component of largest modulus (the first one on ties) is real and positive. The
    /// columns of a conjugate pair are exact conjugates; columns of real eigenvalues are
    /// real.
    pub vectors: DMatrix<Complex<f64>>,
}

/// The eigenvalues of a real square matrix `A`, sorted by the house order (ascending real
/// part, then ascending imaginary part); a conjugate pair is returned as exact conjugates
/// `σ − jω`, `σ + jω`.
///
/// Algorithm: exact power-of-two prescaling if the entries are extreme, balancing by
/// diagonal similarity (Parlett & Reinsch 1969, "Balancing a matrix for calculation of
/// eigenvalues and eigenvectors"; nalgebra's variant, no permutations), the real Schur form
/// ([`RealSchur::eigenvalues_only`], Francis double-shift QR) whose 2×2 blocks are put in
/// standard form `[a b; c a]` (the method of `dlanv2`) and read as `a ± i·√(|b|·|c|)`.
///
/// Cost: about 10·n³ flops (neither the orthogonal factor nor the off-diagonal part of the
/// Schur form is computed: [`RealSchur::eigenvalues_only`]).
/// Tolerance: backward stable — the values are exact for some `A + E` with
/// `‖E‖ ≈ c·n·ε·‖D⁻¹AD‖` (D the balancing scaling); a simple eigenvalue's error is about
/// that times its condition number, and a k-fold defective one moves by about `‖E‖^(1/k)`.
///
/// Errors: [`NumError::NotSquare`], [`NumError::NotFinite`], and those of
/// [`RealSchur::eigenvalues_only`]. A 0×0 matrix gives an empty list.
pub fn eigenvalues(a: &DMatrix<f64>) -> NumResult<Vec<Complex<f64>>> {
    let prep = Prepared::new(a)?;
    if prep.n == 0 {
        return Ok(Vec::new());
    }
    let mut values: Vec<C64> = RealSchur::eigenvalues_only(&prep.balanced)?
        .into_iter()
        .map(|z| z * prep.scale)
        .collect();
    order::sort_eigenvalues(&mut values);
    Ok(values)
}

/// Eigenvalues and right eigenvectors of a real square matrix `A`: `A·V = V·Λ`, column `k`
/// of `V` belonging to `values[k]`, values sorted by the house order and the columns
/// permuted with them; each column has unit 2-norm and its largest-modulus component real
/// and positive.
///
/// Algorithm: balancing and the standardised real Schur form `D⁻¹AD = Q T Qᵀ` as in
/// [`eigenvalues`]; for each eigenvalue `λ` of `T`, an eigenvector of `T` by
/// back-substitution through the 1×1/2×2 diagonal blocks of `T − λI` (complex arithmetic,
/// the method of LAPACK's `dtrevc`); pivots of modulus below `max(ε·‖T‖_F, n·SAFMIN/ε)` are
/// raised to that floor, which keeps repeated and clustered eigenvalues from dividing by
/// zero, and the partial solution is rescaled whenever the next update could overflow; then
/// `v = D·Q·x`, normalised. The vector of `λ̄` is the conjugate of that of `λ`.
///
/// Cost: about 25·n³ (Schur form) + n³/3 (back-substitution) + 4·n³ (back-transformation)
/// flops.
///
/// Tolerance: each column satisfies `‖A·v − λ·v‖ ≲ c·n·ε·‖A‖` (for well-scaled A; with
/// balancing the bound holds for `D⁻¹AD`); the vectors themselves are accurate only to
/// about `ε‖A‖` divided by the gap to the nearest other eigenvalue, and for a repeated or
/// nearly defective eigenvalue the columns may be nearly parallel (the residual stays
/// small).
///
/// Errors: as [`eigenvalues`]. A 0×0 matrix gives empty values and a 0×0 matrix of vectors.
pub fn eigen(a: &DMatrix<f64>) -> NumResult<Eigen> {
    let prep = Prepared::new(a)?;
    let n = prep.n;
    if n == 0 {
        return Ok(Eigen {
            values: Vec::new(),
            vectors: DMatrix::zeros(0, 0),
        });
    }
    let schur = RealSchur::new(&prep.balanced)?;
    let (values, x) = triangular_eigenvectors(&schur.t);
    // Back-transform v = Q·x (real and imaginary parts separately).
    let xr = x.map(|z| z.re);
    let xi = x.map(|z| z.im);
    let vr = &schur.q * xr;
    let vi = &schur.q * xi;
    let mut v = DMatrix::from_fn(n, n, |i, j| Complex::new(vr[(i, j)], vi[(i, j)]));
    // Undo the balancing: A·(D y) = λ·(D y).
    for i in 0..n {
        let di = prep.balance[i];
        for j in 0..n {
            v[(i, j)] *= di;
        }
    }
    // Normalise: each real column or the first column of a pair, whose partner becomes its
    // exact conjugate.
    let mut k = 0;
    while k < n {
        let mut col: Vec<C64> = v.column(k).iter().copied().collect();
        normalize(&mut col);
        if values[k].im == 0.0 {
            for (i, z) in col.iter().enumerate() {
                v[(i, k)] = Complex::new(z.re, 0.0);
            }
            k += 1;
        } else {
            for (i, z) in col.iter().enumerate() {
                v[(i, k)] = *z;
                v[(i, k + 1)] = z.conj();
            }
            k += 2;
        }
    }
    let values: Vec<C64> = values.into_iter().map(|z| z * prep.scale).collect();
    let perm = order::sorting_permutation(&values);
    let sorted_values: Vec<C64> = perm.iter().map(|&p| values[p]).collect();
    let vectors = DMatrix::from_fn(n, n, |i, j| v[(i, perm[j])]);
    Ok(Eigen {
        values: sorted_values,
        vectors,
    })
}

/// A checked, prescaled and balanced copy of the input: `A = scale · D·balanced·D⁻¹`.
struct Prepared {
    n: usize,
    balanced: DMatrix<f64>,
    balance: DVector<f64>,
    scale: f64,
}

impl Prepared {
    fn new(a: &DMatrix<f64>) -> NumResult<Prepared> {
        let n = check::finite_square("A", a)?;
        let mut balanced = a.clone();
        let amax = if n == 0 { 0.0 } else { a.amax() };
        // Power-of-two prescaling (exact) keeps the squared row and column norms of the
        // balancing loop from overflowing or underflowing.
        let mut scale = 1.0;
        if amax > 0.0 && !(2f64.powi(-400)..=2f64.powi(400)).contains(&amax) {
            // Two factors each way: a single 2^−e is infinite for subnormal entries
            // (|a| < 2^−1022 gives e ≤ −1023) and 2^e may be subnormal itself.
            let e = amax.log2().floor() as i32;
            scale = crate::numeric::linalg::dense::times_pow2(1.0, e);
            let (f1, f2) = crate::numeric::linalg::dense::pow2_factors(-e);
            balanced *= f1;
            balanced *= f2;
        }
        check::finite("A (prescaled)", &balanced)?;
        // Our bounded Parlett–Reinsch sweep (a fixed number of sweeps, non-finite norms
        // skipped): nalgebra's loops until convergence, forever on infinite entries.
        let balance = if n == 0 {
            DVector::zeros(0)
        } else {
            DVector::from_vec(crate::numeric::linalg::kernels::balance_in_place(
                &mut balanced,
            ))
        };
        check::finite("A (balanced)", &balanced)?;
        if balance.iter().any(|d| !d.is_finite() || *d <= 0.0) {
            return Err(NumError::invalid(
                "A",
                "balancing failed: the entries span too wide a range",
            ));
        }
        Ok(Prepared {
            n,
            balanced,
            balance,
            scale,
        })
    }
}

/// Eigenvalues (in the diagonal order of `T`) and eigenvectors of a standardised
/// quasi-upper-triangular `T`: column `k` of the result is zero below the block of
/// eigenvalue `k` and scaled so that its largest `|re| + |im|` is 1. For a pair
/// `a ± i·w` (w > 0) the first column belongs to `a + i·w` and the second is its conjugate.
fn triangular_eigenvectors(t: &DMatrix<f64>) -> (Vec<C64>, DMatrix<C64>) {
    let n = t.nrows();
    let ulp = f64::EPSILON;
    let smlnum = f64::MIN_POSITIVE * (n as f64 / ulp);
    let bignum = (1.0 - ulp) / smlnum;
    let smin = (ulp * t.norm()).max(smlnum);
    // colnorm[j] = Σ_{i<j} |t_ij|: the growth bound of an update with column j.
    let colnorm: Vec<f64> = (0..n)
        .map(|j| (0..j).map(|i| t[(i, j)].abs()).sum())
        .collect();
    let solver = Solver {
        t,
        colnorm: &colnorm,
        smin,
        bignum,
    };
    let mut values = vec![Complex::new(0.0, 0.0); n];
    let mut vectors = DMatrix::from_element(n, n, Complex::new(0.0, 0.0));
    let mut k = 0;
    while k < n {
        if k + 1 < n && t[(k + 1, k)] != 0.0 {
            // Pair a ± i·w from the standard block [a b; c a]; (B − λI)x = 0 for
            // x = (1, i·w/b) or (i·w/c, 1), whichever divides by the larger of |b|, |c|.
            let (a, b, c) = (t[(k, k)], t[(k, k + 1)], t[(k + 1, k)]);
            let w = b.abs().sqrt() * c.abs().sqrt();
            let lambda = Complex::new(a, w);
            let mut x = vec![Complex::new(0.0, 0.0); k + 2];
            if b.abs() >= c.abs() {
                x[k] = Complex::new(1.0, 0.0);
                x[k + 1] = Complex::new(0.0, w / b);
            } else {
                x[k] = Complex::new(0.0, w / c);
                x[k + 1] = Complex::new(1.0, 0.0);
            }
            let (x0, x1) = (x[k], x[k + 1]);
            for (i, xi) in x.iter_mut().enumerate().take(k) {
                *xi = -(x0 * t[(i, k)] + x1 * t[(i, k + 1)]);
            }
            solver.back_substitute(&mut x, k, lambda);
            let s = 1.0 / x.iter().fold(0.0f64, |m, z| m.max(norm1(*z)));
            for (i, z) in x.iter().enumerate() {
                vectors[(i, k)] = z * s;
                vectors[(i, k + 1)] = (z * s).conj();
            }
            values[k] = lambda;
            values[k + 1] = lambda.conj();
            k += 2;
        } else {
            let lambda = Complex::new(t[(k, k)], 0.0);
            let mut x = vec![Complex::new(0.0, 0.0); k + 1];
            x[k] = Complex::new(1.0, 0.0);
            for (i, xi) in x.iter_mut().enumerate().take(k) {
                *xi = Complex::new(-t[(i, k)], 0.0);
            }
            solver.back_substitute(&mut x, k, lambda);
            let s = 1.0 / x.iter().fold(0.0f64, |m, z| m.max(norm1(*z)));
            for (i, z) in x.iter().enumerate() {
                vectors[(i, k)] = Complex::new(z.re * s, 0.0);
            }
            values[k] = lambda;
            k += 1;
        }
    }
    (values, vectors)
}

/// Back-substitution in `T[0..m, 0..m] − λI` with pivot floor and overflow guards.
struct Solver<'a> {
    t: &'a DMatrix<f64>,
    colnorm: &'a [f64],
    smin: f64,
    bignum: f64,
}

impl Solver<'_> {
    /// On entry `x[0..m]` holds the right-hand side and `x[m..]` the eigenvector's own
    /// components; on exit `x[0..m]` solves `(T₁₁ − λI)·x₁ = s·rhs` where the whole vector
    /// has been multiplied by the same `s ≤ 1` whenever overflow threatened.
    fn back_substitute(&self, x: &mut [C64], m: usize, lambda: C64) {
        let t = self.t;
        let mut j = m;
        while j > 0 {
            let last = j - 1;
            if last >= 1 && t[(last, last - 1)] != 0.0 {
                let j1 = last - 1;
                let c = [
                    [
                        Complex::new(t[(j1, j1)], 0.0) - lambda,
                        Complex::new(t[(j1, last)], 0.0),
                    ],
                    [
                        Complex::new(t[(last, j1)], 0.0),
                        Complex::new(t[(last, last)], 0.0) - lambda,
                    ],
                ];
                let (mut sol, s) = self.solve2(c, [x[j1], x[last]]);
                if s != 1.0 {
                    scale_all(x, s);
                }
                let xnorm = norm1(sol[0]).max(norm1(sol[1]));
                if xnorm > 1.0 {
                    let beta = self.colnorm[j1].max(self.colnorm[last]);
                    if beta > self.bignum / xnorm {
                        sol = [sol[0] / xnorm, sol[1] / xnorm];
                        scale_all(x, 1.0 / xnorm);
                    }
                }
                x[j1] = sol[0];
                x[last] = sol[1];
                for i in 0..j1 {
                    x[i] -= sol[0] * t[(i, j1)] + sol[1] * t[(i, last)];
                }
                j = j1;
            } else {
                let (mut xj, s) = self.solve1(Complex::new(t[(last, last)], 0.0) - lambda, x[last]);
                if s != 1.0 {
                    scale_all(x, s);
                }
                let xnorm = norm1(xj);
                if xnorm > 1.0 && self.colnorm[last] > self.bignum / xnorm {
                    xj /= xnorm;
                    scale_all(x, 1.0 / xnorm);
                }
                x[last] = xj;
                for i in 0..last {
                    x[i] -= xj * t[(i, last)];
                }
                j = last;
            }
        }
    }

    /// `x = s·b / p` with `|p|` raised to `smin` and `s ≤ 1` chosen against overflow.
    fn solve1(&self, p: C64, b: C64) -> (C64, f64) {
        let p = if norm1(p) < self.smin {
            Complex::new(self.smin, 0.0)
        } else {
            p
        };
        let (cnorm, bnorm) = (norm1(p), norm1(b));
        let mut s = 1.0;
        if cnorm < 1.0 && bnorm > 1.0 && bnorm > self.bignum * cnorm {
            s = 1.0 / bnorm;
        }
        (cdiv(b * s, p), s)
    }

    /// Solves the 2×2 complex system `c·x = s·b` by Gaussian elimination with complete
    /// pivoting, pivots raised to `smin`, `s ≤ 1` chosen against overflow.
    fn solve2(&self, c: [[C64; 2]; 2], b: [C64; 2]) -> ([C64; 2], f64) {
        let (mut ip, mut jp, mut cmax) = (0, 0, -1.0);
        for (i, row) in c.iter().enumerate() {
            for (j, z) in row.iter().enumerate() {
                if norm1(*z) > cmax {
                    cmax = norm1(*z);
                    ip = i;
                    jp = j;
                }
            }
        }
        if cmax < self.smin {
            // Use smin·I.
            let bnorm = norm1(b[0]).max(norm1(b[1]));
            let mut s = 1.0;
            if self.smin < 1.0 && bnorm > 1.0 && bnorm > self.bignum * self.smin {
                s = 1.0 / bnorm;
            }
            return ([b[0] * (s / self.smin), b[1] * (s / self.smin)], s);
        }
        let (iq, jq) = (1 - ip, 1 - jp);
        let u11 = c[ip][jp];
        let u12 = c[ip][jq];
        let l21 = cdiv(c[iq][jp], u11);
        let mut u22 = c[iq][jq] - l21 * u12;
        if norm1(u22) < self.smin {
            u22 = Complex::new(self.smin, 0.0);
        }
        let br1 = b[ip];
        let br2 = b[iq] - l21 * br1;
        let u11r = cdiv(Complex::new(1.0, 0.0), u11);
        let bbnd = norm1(br1 * (u22 * u11r)).max(norm1(br2));
        let mut s = 1.0;
        if bbnd > 1.0 && norm1(u22) < 1.0 && bbnd >= self.bignum * norm1(u22) {
            s = 1.0 / bbnd;
        }
        let x2 = cdiv(br2 * s, u22);
        let x1 = br1 * s * u11r - x2 * (u11r * u12);
        let mut x = [Complex::new(0.0, 0.0); 2];
        x[jp] = x1;
        x[jq] = x2;
        (x, s)
    }
}

/// An eigenvalue with an estimate of its rounding error.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BoundedEigenvalue {
    /// The computed eigenvalue.
    pub value: C64,
    /// About how far rounding alone may have moved it: `κ(λ)·δ`, with `δ = n·ε·‖D⁻¹AD‖_F`
    /// the backward error of the balanced Schur form and `κ(λ) = ‖x‖‖y‖/|yᴴx|` the
    /// eigenvalue's condition number in balanced coordinates, capped at `√(δ·‖D⁻¹AD‖_F)`
    /// (the movement of a double defective eigenvalue) where κ is very large or infinite.
    pub error: f64,
}

/// The eigenvalues of `A` (house order) each with a first-order bound on its rounding
/// error, so that callers can tell a computed `8e-12` from a pole at the origin.
///
/// Method: the condition number of a simple eigenvalue, `κ = ‖x‖‖y‖/|yᴴx|` with right and
/// left eigenvectors x, y (Wilkinson 1965, *The Algebraic Eigenvalue Problem*, §2.8;
/// Golub & Van Loan, *Matrix Computations*, 4th ed., §7.2.2), times the backward error of
/// the Schur form. Both are taken in the balanced coordinates `D⁻¹AD` in which the
/// eigenvalues are computed, so the bound does not depend on how the user scaled the
/// states. Right vectors come from the Schur form of `D⁻¹AD`, left vectors from that of
/// its transpose (matched to the nearest eigenvalue); for a defective or nearly defective
/// eigenvalue κ is huge and the bound is capped at `√(δ·‖·‖)`, the perturbation of a
/// double one.
///
/// Cost: about twice [`eigen`]. Errors: as [`eigenvalues`].
pub fn eigenvalues_with_bounds(a: &DMatrix<f64>) -> NumResult<Vec<BoundedEigenvalue>> {
    let prep = Prepared::new(a)?;
    let n = prep.n;
    if n == 0 {
        return Ok(Vec::new());
    }
    let vectors_of = |m: &DMatrix<f64>| -> NumResult<(Vec<C64>, DMatrix<C64>)> {
        let schur = RealSchur::new(m)?;
        let (values, x) = triangular_eigenvectors(&schur.t);
        let vr = &schur.q * x.map(|z| z.re);
        let vi = &schur.q * x.map(|z| z.im);
        Ok((
            values,
            DMatrix::from_fn(n, n, |i, j| Complex::new(vr[(i, j)], vi[(i, j)])),
        ))
    };
    let (values, x) = vectors_of(&prep.balanced)?;
    let (left_values, w) = vectors_of(&prep.balanced.transpose())?;
    let fro = prep.balanced.norm();
    let delta = n as f64 * f64::EPSILON * fro;
    let cap = (delta * fro).sqrt();
    let mut used = vec![false; n];
    let mut out = Vec::with_capacity(n);
    for (k, &lambda) in values.iter().enumerate() {
        // The nearest unused left eigenvalue (for a conjugate pair, its own member).
        let j = (0..n)
            .filter(|&j| !used[j])
            .min_by(|&i, &j| {
                (left_values[i] - lambda)
                    .norm()
                    .total_cmp(&(left_values[j] - lambda).norm())
            })
            .unwrap_or(k);
        used[j] = true;
        // yᴴ(D⁻¹AD) = λyᴴ with y = conj(w), so yᴴx = wᵀx.
        let dot: C64 = (0..n).map(|i| w[(i, j)] * x[(i, k)]).sum();
        let norms = w.column(j).norm() * x.column(k).norm();
        let kappa = norms / dot.norm();
        let error = if kappa.is_finite() {
            (kappa * delta).min(cap)
        } else {
            cap
        };
        out.push(BoundedEigenvalue {
            value: lambda * prep.scale,
            error: error * prep.scale,
        });
    }
    let vals: Vec<C64> = out.iter().map(|b| b.value).collect();
    let perm = order::sorting_permutation(&vals);
    Ok(perm.iter().map(|&p| out[p]).collect())
}

fn scale_all(x: &mut [C64], s: f64) {
    for z in x.iter_mut() {
        *z *= s;
    }
}

/// `|re| + |im|`, the cheap modulus used for pivoting and scaling decisions.
fn norm1(z: C64) -> f64 {
    z.re.abs() + z.im.abs()
}

/// Complex division without intermediate overflow (Smith 1962, "Algorithm 116: Complex
/// division"). `b` must be non-zero.
fn cdiv(a: C64, b: C64) -> C64 {
    if b.im.abs() <= b.re.abs() {
        let r = b.im / b.re;
        let den = b.re + b.im * r;
        Complex::new((a.re + a.im * r) / den, (a.im - a.re * r) / den)
    } else {
        let r = b.re / b.im;
        let den = b.im + b.re * r;
        Complex::new((a.re * r + a.im) / den, (a.im * r - a.re) / den)
    }
}

/// Unit 2-norm (computed after scaling by the largest entry), then the phase that makes the
/// first component of largest modulus real and positive.
fn normalize(v: &mut [C64]) {
    let amax = v
        .iter()
        .fold(0.0f64, |m, z| m.max(z.re.abs()).max(z.im.abs()));
    if amax == 0.0 || !amax.is_finite() {
        return;
    }
    for z in v.iter_mut() {
        *z /= amax;
    }
    let norm = v.iter().map(|z| z.norm_sqr()).sum::<f64>().sqrt();
    let mut best = 0;
    let mut best_mod = -1.0;
    for (i, z) in v.iter().enumerate() {
        let m = z.norm_sqr();
        if m > best_mod {
            best_mod = m;
            best = i;
        }
    }
    let pivot = v[best];
    let phase = pivot.conj() / pivot.norm();
    for z in v.iter_mut() {
        *z = *z * phase / norm;
    }
    v[best] = Complex::new(pivot.norm() / norm, 0.0);
}

#[cfg(test)]
mod tests;
