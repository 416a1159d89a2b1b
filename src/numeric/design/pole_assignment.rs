//! State-feedback pole assignment: a gain `K` with `eig(A − BK)` equal to given poles.
//!
//! * One input (or `rank B = 1`): deflation by shifted RQ steps on the controller-Hessenberg
//!   form, the orthogonal approach of Miminis & Paige (1982); any multiplicities.
//! * Several inputs: the robust method of Kautsky, Nichols & Van Dooren (1985), method 0,
//!   which uses the freedom left by several inputs to make the closed-loop eigenvectors as
//!   orthogonal as it can; a pole may be repeated at most `rank B` times.
//!
//! Controllability is checked first with an orthogonal controllability staircase
//! (Van Dooren 1981) whose rank decisions are made by the SVD.

use crate::numeric::check;
use crate::numeric::error::{NumError, NumResult};
use crate::numeric::linalg::dense;
use crate::numeric::linalg::eigen::{eigen, eigenvalues};
use crate::numeric::linalg::sylvester::fmt_complex;
use nalgebra::{Complex, DMatrix, DVector};

type C64 = Complex<f64>;

/// Tolerances of [`assign_poles_with`].
#[derive(Debug, Clone, PartialEq)]
pub struct PoleParams {
    /// Relative tolerance for conjugate closure and for counting repeated poles: `λ` counts
    /// as real when `|Im λ| ≤ tol·max(1, |λ|)`, `μ` as the partner of `λ` when
    /// `|μ − λ̄| ≤ tol·max(1, |λ|)`, and two poles as equal (multiplicity) when they are
    /// that close. Default `1e-10`. Accepted pairs are made exact conjugates (their mean).
    pub conjugate_tol: f64,
    /// Relative rank tolerance of the controllability staircase and of `rank B`: a singular
    /// value counts as zero when it is at most `rank_tol·‖[A B]‖_F`. Default `√ε ≈ 1.5e-8`,
    /// the default of the project's staircase routines.
    pub rank_tol: f64,
    /// Sweeps of the eigenvector-conditioning iteration (several inputs only; default 20).
    /// The iteration stops earlier when no vector moves by more than `1e-8` in a sweep.
    pub sweeps: usize,
}

impl Default for PoleParams {
    fn default() -> Self {
        PoleParams {
            conjugate_tol: 1e-10,
            rank_tol: 1.490_116_119_384_765_6e-8,
            sweeps: 20,
        }
    }
}

/// The result of a pole assignment.
#[derive(Debug, Clone, PartialEq)]
pub struct PoleAssignment {
    /// The feedback gain `K` (m×n): `u = −K x` gives `x' = (A − BK) x`.
    pub gain: DMatrix<f64>,
    /// The eigenvalues of `A − BK` as computed, in the house order.
    pub achieved: Vec<Complex<f64>>,
    /// 2-norm condition number of the matrix of unit-norm closed-loop eigenvectors
    /// (infinite when `A − BK` is defective, e.g. a repeated pole with one input). A pole
    /// moves by up to about this factor times a relative perturbation of `A − BK`: the
    /// robustness figure of the design.
    pub eigenvector_condition: f64,
}

/// Assigns the closed-loop poles with the default [`PoleParams`]; see
/// [`assign_poles_with`].
pub fn assign_poles(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    poles: &[Complex<f64>],
) -> NumResult<PoleAssignment> {
    assign_poles_with(a, b, poles, &PoleParams::default())
}

/// Finds a real `K` (m×n) with `eig(A − BK) = poles`, for `A` n×n, `B` n×m and exactly n
/// poles closed under complex conjugation.
///
/// **Mathematics.** Such a `K` exists for every conjugate-closed set iff `(A, B)` is
/// controllable (Wonham 1967). With one input it is unique; with several, the freedom is
/// in the closed-loop eigenvectors: `x_j` must lie in `S_j = null(U₁ᵀ(A − λ_jI))`, where
/// `B = [U₀ U₁][Z; 0]`, and then `K = Z⁻¹U₀ᵀ(A − XΛX⁻¹)`.
///
/// **Algorithm.** The model is first balanced by a diagonal power-of-two similarity (exact;
/// the system balancing of `lti::staircase`), so that decisions do not depend on the units
/// of the states, and the gain is mapped back at the end. Both paths then reduce `(A, B)`
/// by an orthogonal controllability
/// staircase (Van Dooren 1981, "The generalized eigenstructure problem in linear system
/// theory", IEEE Trans. Automatic Control 26(1)), SVD rank decisions at
/// `rank_tol·‖[A B]‖_F`; a non-trivial uncontrollable part is an error naming its modes.
///
/// * `rank B = 1`: the staircase is the controller-Hessenberg form `H = ZᵀAZ` (upper
///   Hessenberg), `Zᵀb = βe₁`. Each pole λ is deflated by one shifted RQ step on the
///   active window: `H − λI = RQ` by plane rotations from the bottom, `H ← QHQᴴ = QR + λI`
///   (still Hessenberg), `b ← Qb ∈ span(e₁, e₂)`, and the feedback coordinate of the
///   leading column is `r₁₁/β`, which makes that column `λe₁`; the window then shrinks by
///   one with input `β·s·e₁`. This is the QR-like orthogonal deflation of Miminis & Paige
///   (1982), "An algorithm for pole assignment of time invariant linear systems", Int. J.
///   Control 35(2) (see also Arnold & Datta 1998, "Single-input eigenvalue assignment
///   algorithms: a close look", SIAM J. Matrix Anal. Appl. 19(2)). Complex poles are
///   deflated in complex arithmetic, conjugates consecutively; the gain is the real part
///   of the result (its imaginary part is rounding). Repeated poles need no special care.
/// * `rank B ≥ 2`: Kautsky, Nichols & Van Dooren (1985), "Robust pole assignment in linear
///   state feedback", Int. J. Control 41(5), method 0: orthonormal bases of the `S_j` from
///   the SVD; start from distinct basis vectors for repeated poles; then sweeps that
///   replace each `x_j` by the normalised projection onto `S_j` of the vector orthogonal to
///   all other `x_i` (row j of `X⁻¹`), a conjugate pair being updated together; finally
///   `A − BK = X_r Λ_r X_r⁻¹` in the real basis (`Re x, Im x` per pair) and `K` by the
///   formula above (through the SVD of `B`, so a rank-deficient `B` is fine).
///
/// **Cost.** Staircase O(n⁴/r) with dense SVD steps (r = rank B); one input: O(n²) per
/// pole, O(n³) in all; several inputs: O(n³) per pole for the bases, O(n⁴) per sweep.
///
/// **Accuracy.** Backward stable in the one-input case (the computed `K` is exact for
/// nearby data); the achieved poles then differ from the wanted ones by about
/// `eigenvector_condition · n·ε·(‖A‖ + ‖B‖‖K‖)` for simple poles, and by about the k-th
/// root of that for a k-fold pole of a single input (a k×k Jordan block).
///
/// **Errors.** Shapes and finiteness; [`NumError::InvalidArgument`] when the number of
/// poles is not n, the set is not closed under conjugation (within `conjugate_tol`), or a
/// pole is repeated more than `rank B` times; [`NumError::NoSolution`] when `(A, B)` is
/// not controllable (naming the uncontrollable modes) or the eigenvector matrix is
/// singular.
pub fn assign_poles_with(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    poles: &[Complex<f64>],
    params: &PoleParams,
) -> NumResult<PoleAssignment> {
    let n = check::finite_square("A", a)?;
    if b.nrows() != n {
        return Err(NumError::shape(
            "B",
            format!("{n} rows like A ({n}×{n})"),
            check::shape_of(b),
        ));
    }
    check::finite("B", b)?;
    let m = b.ncols();
    if poles.len() != n {
        return Err(NumError::invalid(
            "poles",
            format!("expected {n} poles (one per state), found {}", poles.len()),
        ));
    }
    let wanted = canonical_poles(poles, params.conjugate_tol)?;
    if n == 0 {
        return Ok(PoleAssignment {
            gain: DMatrix::zeros(m, 0),
            achieved: Vec::new(),
            eigenvector_condition: 1.0,
        });
    }
    // Decide and compute on a model balanced by a diagonal power-of-two similarity
    // x = S z (exact; see `balance_system`), so that neither the rank decisions nor the
    // conditioning depend on the units of the states; then K = K̃ S⁻¹ in the user's
    // coordinates (A − BK = S (Ã − B̃K̃) S⁻¹ has the same eigenvalues).
    let none = DMatrix::zeros(0, n);
    let scaling = crate::numeric::lti::staircase::balance_system(a, b, &none);
    let (a_bal, b_bal, _) = scaling.apply_state(a, b, &none);
    let gain_bal = balanced_gain(&a_bal, &b_bal, &wanted, params)?;
    let gain = DMatrix::from_fn(m, n, |i, j| gain_bal[(i, j)] / scaling.state[j]);
    let closed = a - b * &gain;
    let achieved = eigenvalues(&closed)?;
    let eigenvector_condition = eigenvector_condition(&closed);
    Ok(PoleAssignment {
        gain,
        achieved,
        eigenvector_condition,
    })
}

/// The gain of [`assign_poles_with`] for checked data (n ≥ 1, canonical poles).
fn balanced_gain(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    wanted: &[C64],
    params: &PoleParams,
) -> NumResult<DMatrix<f64>> {
    let (n, m) = b.shape();
    let mut ab = DMatrix::zeros(n, n + m);
    ab.view_mut((0, 0), (n, n)).copy_from(a);
    ab.view_mut((0, n), (n, m)).copy_from(b);
    let tol = params.rank_tol * ab.norm();
    let bsvd = dense::svd(b)?;
    let rank = bsvd.sigma.iter().filter(|s| **s > tol).count();
    let gain = if rank <= 1 {
        // B = σ₁u₁v₁ᵀ (or B ≈ 0, which the staircase reports as uncontrollable).
        let sigma = bsvd.sigma.first().copied().unwrap_or(0.0);
        let bc = bsvd.u.columns(0, 1) * sigma;
        let st = staircase(a, &bc, tol)?;
        ensure_controllable(&st, n)?;
        let f = single_input(&st, wanted)?;
        let k = f.transpose() * st.z.transpose();
        bsvd.v.columns(0, 1) * k
    } else {
        let st = staircase(a, b, tol)?;
        ensure_controllable(&st, n)?;
        check_multiplicity(wanted, rank, params.conjugate_tol)?;
        robust(a, &bsvd, rank, wanted, params.sweeps)?
    };
    Ok(gain)
}

// ------------------------------------------------------------------------------------------
// Input checks

/// Poles with conjugate pairs made exact and adjacent (`λ` with `Im λ > 0`, then `λ̄`).
fn canonical_poles(poles: &[C64], tol: f64) -> NumResult<Vec<C64>> {
    for (k, p) in poles.iter().enumerate() {
        if !(p.re.is_finite() && p.im.is_finite()) {
            return Err(NumError::invalid(
                "poles",
                format!("entry {k} is {p}, expected a finite complex number"),
            ));
        }
    }
    let mut used = vec![false; poles.len()];
    let mut out = Vec::with_capacity(poles.len());
    for i in 0..poles.len() {
        if used[i] {
            continue;
        }
        used[i] = true;
        let p = poles[i];
        let scale = p.norm().max(1.0);
        if p.im.abs() <= tol * scale {
            out.push(C64::new(p.re, 0.0));
            continue;
        }
        let partner = (0..poles.len())
            .filter(|&j| !used[j])
            .map(|j| (j, (poles[j] - p.conj()).norm()))
            .filter(|&(_, d)| d <= tol * scale)
            .min_by(|x, y| x.1.total_cmp(&y.1));
        match partner {
            Some((j, _)) => {
                used[j] = true;
                let mean = (p + poles[j].conj()) * 0.5;
                let upper = C64::new(mean.re, mean.im.abs());
                out.push(upper);
                out.push(upper.conj());
            }
            None => {
                return Err(NumError::invalid(
                    "poles",
                    format!(
                        "not closed under complex conjugation: {} has no partner {} \
                         (relative tolerance {tol:.1e})",
                        fmt_complex(p),
                        fmt_complex(p.conj())
                    ),
                ))
            }
        }
    }
    Ok(out)
}

/// Refuses a pole repeated more than `rank` times (several inputs).
fn check_multiplicity(poles: &[C64], rank: usize, tol: f64) -> NumResult<()> {
    for p in poles {
        let count = poles
            .iter()
            .filter(|q| (**q - p).norm() <= tol * p.norm().max(1.0))
            .count();
        if count > rank {
            return Err(NumError::invalid(
                "poles",
                format!(
                    "the pole {} is repeated {count} times, but with rank B = {rank} a pole \
                     can be repeated at most {rank} times",
                    fmt_complex(*p)
                ),
            ));
        }
    }
    Ok(())
}

// ------------------------------------------------------------------------------------------
// Controllability staircase

/// `ZᵀAZ`, `ZᵀB` in staircase form, `Z`, and the dimension of the controllable part.
struct Staircase {
    a: DMatrix<f64>,
    b: DMatrix<f64>,
    z: DMatrix<f64>,
    controllable: usize,
}

/// Orthogonal controllability staircase: at each step the SVD of the current block
/// (first `B`, then the sub-block of `A` below the previous step) compresses its rows;
/// singular values at most `tol` count as zero.
fn staircase(a: &DMatrix<f64>, b: &DMatrix<f64>, tol: f64) -> NumResult<Staircase> {
    let n = a.nrows();
    let mut at = a.clone();
    let mut bt = b.clone();
    let mut z = DMatrix::<f64>::identity(n, n);
    let mut start = 0;
    let mut previous: Option<(usize, usize)> = None;
    while start < n {
        let rows = n - start;
        let block = match previous {
            None => bt.view((start, 0), (rows, bt.ncols())).into_owned(),
            Some((col, width)) => at.view((start, col), (rows, width)).into_owned(),
        };
        if block.ncols() == 0 {
            break;
        }
        let f = dense::svd(&block)?;
        let r = f.sigma.iter().filter(|s| **s > tol).count();
        if r == 0 {
            break;
        }
        let u = f.u;
        let top = u.transpose() * at.view((start, 0), (rows, n));
        at.view_mut((start, 0), (rows, n)).copy_from(&top);
        let right = at.view((0, start), (n, rows)) * &u;
        at.view_mut((0, start), (n, rows)).copy_from(&right);
        let bb = u.transpose() * bt.view((start, 0), (rows, bt.ncols()));
        bt.view_mut((start, 0), (rows, bt.ncols())).copy_from(&bb);
        let zz = z.view((0, start), (n, rows)) * &u;
        z.view_mut((0, start), (n, rows)).copy_from(&zz);
        previous = Some((start, r));
        start += r;
    }
    Ok(Staircase {
        a: at,
        b: bt,
        z,
        controllable: start,
    })
}

fn ensure_controllable(st: &Staircase, n: usize) -> NumResult<()> {
    let nc = st.controllable;
    if nc == n {
        return Ok(());
    }
    let rest = st.a.view((nc, nc), (n - nc, n - nc)).into_owned();
    let modes = eigenvalues(&rest)?;
    let list: Vec<String> = modes.iter().map(|z| fmt_complex(*z)).collect();
    Err(NumError::no_solution(
        "pole assignment",
        format!(
            "(A, B) is not controllable: the mode(s) {} cannot be moved by state feedback \
             (controllable subspace of dimension {nc} of {n})",
            list.join(", ")
        ),
    ))
}

// ------------------------------------------------------------------------------------------
// One input: RQ deflation on the controller-Hessenberg form

/// A complex plane rotation acting on columns `(j − 1, j)`: `[x, y] ← [x, y]·G`.
#[derive(Debug, Clone, Copy)]
struct Rot {
    j: usize,
    g: [C64; 4],
}

/// The feedback row `f` (in the staircase coordinates) with `eig(H − βe₁fᵀ) = poles`.
fn single_input(st: &Staircase, poles: &[C64]) -> NumResult<DVector<f64>> {
    let n = st.a.nrows();
    let zero = C64::new(0.0, 0.0);
    // Controller-Hessenberg form: entries below the subdiagonal are rounding; drop them.
    let mut h = DMatrix::from_fn(n, n, |i, j| {
        if i > j + 1 {
            zero
        } else {
            C64::new(st.a[(i, j)], 0.0)
        }
    });
    let mut bv = DVector::from_element(n, zero);
    bv[0] = C64::new(st.b[(0, 0)], 0.0);
    let mut f = DVector::from_element(n, zero);
    let mut w = DMatrix::<C64>::identity(n, n);
    for (k, &lambda) in poles.iter().enumerate() {
        let beta = bv[k];
        if beta.norm() == 0.0 {
            return Err(NumError::no_solution(
                "pole assignment",
                "(A, B) is not controllable: the input lost its reach during deflation",
            ));
        }
        for i in k..n {
            h[(i, i)] -= lambda;
        }
        let mut rots = Vec::with_capacity(n - k);
        for j in ((k + 1)..n).rev() {
            let (x, y) = (h[(j, j - 1)], h[(j, j)]);
            let rho = (x.norm_sqr() + y.norm_sqr()).sqrt();
            if rho == 0.0 {
                continue;
            }
            let rot = Rot {
                j,
                g: [y / rho, x.conj() / rho, -x / rho, y.conj() / rho],
            };
            rotate_columns(&mut h, rot);
            rotate_columns(&mut w, rot);
            h[(j, j - 1)] = zero;
            rots.push(rot);
        }
        f[k] = h[(k, k)] / beta;
        for rot in &rots {
            rotate_rows(&mut h, *rot);
            let (x, y) = (bv[rot.j - 1], bv[rot.j]);
            let g = rot.g;
            bv[rot.j - 1] = g[0].conj() * x + g[2].conj() * y;
            bv[rot.j] = g[1].conj() * x + g[3].conj() * y;
        }
        for i in k..n {
            h[(i, i)] += lambda;
        }
    }
    // Back to the staircase coordinates: f_H = f·Wᴴ.
    let out = DVector::from_fn(n, |i, _| {
        (0..n)
            .map(|j| f[j] * w[(i, j)].conj())
            .fold(zero, |s, v| s + v)
            .re
    });
    Ok(out)
}

fn rotate_columns(m: &mut DMatrix<C64>, rot: Rot) {
    let [g11, g12, g21, g22] = rot.g;
    for i in 0..m.nrows() {
        let (x, y) = (m[(i, rot.j - 1)], m[(i, rot.j)]);
        m[(i, rot.j - 1)] = x * g11 + y * g21;
        m[(i, rot.j)] = x * g12 + y * g22;
    }
}

fn rotate_rows(m: &mut DMatrix<C64>, rot: Rot) {
    let [g11, g12, g21, g22] = rot.g;
    for c in 0..m.ncols() {
        let (x, y) = (m[(rot.j - 1, c)], m[(rot.j, c)]);
        m[(rot.j - 1, c)] = g11.conj() * x + g21.conj() * y;
        m[(rot.j, c)] = g12.conj() * x + g22.conj() * y;
    }
}

// ------------------------------------------------------------------------------------------
// Several inputs: Kautsky–Nichols–Van Dooren, method 0

/// `v` minus its projection on the orthonormal vectors `basis`.
fn orthogonal_part(v: &DVector<C64>, basis: &[DVector<C64>]) -> DVector<C64> {
    let mut r = v.clone();
    for q in basis {
        let k = q.dotc(&r);
        r -= q * k;
    }
    r
}

/// Appends `r / ‖r‖` to `basis` when `r` is not zero.
fn push_unit(basis: &mut Vec<DVector<C64>>, r: &DVector<C64>) {
    let nr = r.norm();
    if nr > 0.0 && nr.is_finite() {
        basis.push(r / C64::new(nr, 0.0));
    }
}

fn robust(
    a: &DMatrix<f64>,
    bsvd: &dense::FullSvd,
    rank: usize,
    poles: &[C64],
    sweeps: usize,
) -> NumResult<DMatrix<f64>> {
    let n = a.nrows();
    let zero = C64::new(0.0, 0.0);
    let u1 = bsvd.u.columns(rank, n - rank).into_owned();
    // Orthonormal bases of S_j = null(U₁ᵀ(A − λI)), n×rank each.
    let mut bases: Vec<DMatrix<C64>> = Vec::with_capacity(n);
    for (j, &lambda) in poles.iter().enumerate() {
        if lambda.im < 0.0 {
            // Partner of the previous pole: conjugate basis.
            let conj = bases[j - 1].map(|z| z.conj());
            bases.push(conj);
            continue;
        }
        bases.push(allowed_subspace(a, &u1, lambda, rank)?);
    }
    // Initial vectors, greedily: each x_j is the basis vector of S_j farthest from the span
    // of the vectors chosen before it (for a complex pole also c_k + i·c_l, scored with its
    // conjugate, which the partner pole takes). Taking
    // the first basis vector for every pole made X singular whenever the S_j coincide —
    // with rank B = n every S_j is the whole space — and the sweeps cannot start from a
    // singular X.
    let mut x = DMatrix::from_element(n, n, zero);
    let mut chosen: Vec<DVector<C64>> = Vec::with_capacity(n);
    for j in 0..n {
        let col = if poles[j].im < 0.0 && j > 0 {
            x.column(j - 1).map(|z| z.conj())
        } else {
            let s_j = &bases[j];
            let mut candidates: Vec<DVector<C64>> =
                (0..rank).map(|k| s_j.column(k).into_owned()).collect();
            if poles[j].im > 0.0 {
                // Real candidates would make x and x̄ dependent: also try c_k + i·c_l.
                for k in 0..rank {
                    for l in 0..rank {
                        if k != l {
                            let v = s_j.column(k) + s_j.column(l) * C64::new(0.0, 1.0);
                            candidates.push(v / C64::new(2f64.sqrt(), 0.0));
                        }
                    }
                }
            }
            let score = |v: &DVector<C64>| {
                let mut basis = chosen.clone();
                let first = orthogonal_part(v, &basis);
                if poles[j].im > 0.0 {
                    push_unit(&mut basis, &first);
                    first
                        .norm()
                        .min(orthogonal_part(&v.map(|z| z.conj()), &basis).norm())
                } else {
                    first.norm()
                }
            };
            candidates
                .into_iter()
                .map(|v| (score(&v), v))
                .max_by(|p, q| p.0.total_cmp(&q.0))
                .map(|(_, v)| v)
                .unwrap_or_else(|| s_j.column(0).into_owned())
        };
        let r = orthogonal_part(&col, &chosen);
        push_unit(&mut chosen, &r);
        x.set_column(j, &col);
    }
    let unit = |v: &DVector<C64>| -> Option<DVector<C64>> {
        let nv = v.norm();
        (nv > 0.0 && nv.is_finite()).then(|| v / C64::new(nv, 0.0))
    };
    for _ in 0..sweeps {
        let mut moved = 0.0f64;
        let mut j = 0;
        while j < n {
            let pair = poles[j].im > 0.0;
            let mut e = DVector::from_element(n, zero);
            e[j] = C64::new(1.0, 0.0);
            let Some(y) = x.adjoint().lu().solve(&e) else {
                break;
            };
            let s = &bases[j];
            let mut v = s * (s.adjoint() * y);
            if !pair {
                v.apply(|z| *z = C64::new(z.re, 0.0));
            }
            if let Some(v) = unit(&v) {
                let old = x.column(j).into_owned();
                moved = moved.max(1.0 - old.dotc(&v).norm());
                x.set_column(j, &v);
                if pair {
                    x.set_column(j + 1, &v.map(|z| z.conj()));
                }
            }
            j += if pair { 2 } else { 1 };
        }
        if moved < 1e-8 {
            break;
        }
    }
    // Real basis and real block-diagonal Λ: A − BK = Xr Λr Xr⁻¹.
    let mut xr = DMatrix::zeros(n, n);
    let mut lr = DMatrix::zeros(n, n);
    let mut j = 0;
    while j < n {
        let l = poles[j];
        if l.im > 0.0 {
            for i in 0..n {
                xr[(i, j)] = x[(i, j)].re;
                xr[(i, j + 1)] = x[(i, j)].im;
            }
            lr[(j, j)] = l.re;
            lr[(j, j + 1)] = l.im;
            lr[(j + 1, j)] = -l.im;
            lr[(j + 1, j + 1)] = l.re;
            j += 2;
        } else {
            for i in 0..n {
                xr[(i, j)] = x[(i, j)].re;
            }
            lr[(j, j)] = l.re;
            j += 1;
        }
    }
    let xl = &xr * lr;
    let closed = dense::solve(&xr.transpose(), &xl.transpose())
        .map_err(|_| {
            NumError::no_solution(
                "pole assignment",
                "the closed-loop eigenvector matrix is numerically singular (a pole repeated \
                 as often as rank B with an unlucky structure, or nearly uncontrollable data)",
            )
        })?
        .transpose();
    // K = V_r Σ_r⁻¹ U₀ᵀ (A − (A − BK)).
    let u0 = bsvd.u.columns(0, rank);
    let mut t = u0.transpose() * (a - closed);
    for i in 0..rank {
        let s = bsvd.sigma[i];
        t.row_mut(i).apply(|v| *v /= s);
    }
    Ok(bsvd.v.columns(0, rank) * t)
}

/// Orthonormal basis (n×rank) of `null(U₁ᵀ(A − λI))`, from the SVD of that matrix padded
/// to a square one; real for real λ.
fn allowed_subspace(
    a: &DMatrix<f64>,
    u1: &DMatrix<f64>,
    lambda: C64,
    rank: usize,
) -> NumResult<DMatrix<C64>> {
    let n = a.nrows();
    if rank == n {
        return Ok(DMatrix::<C64>::identity(n, n));
    }
    if lambda.im == 0.0 {
        let shifted = a - DMatrix::identity(n, n) * lambda.re;
        let mut sq = DMatrix::zeros(n, n);
        sq.view_mut((0, 0), (n - rank, n))
            .copy_from(&(u1.transpose() * shifted));
        let f = dense::svd(&sq)?;
        return Ok(f.v.columns(n - rank, rank).map(|v| C64::new(v, 0.0)));
    }
    let ac = a.map(|v| C64::new(v, 0.0)) - DMatrix::<C64>::identity(n, n) * lambda;
    let mut sq = DMatrix::from_element(n, n, C64::new(0.0, 0.0));
    sq.view_mut((0, 0), (n - rank, n))
        .copy_from(&(u1.map(|v| C64::new(v, 0.0)).transpose() * ac));
    let svd = nalgebra::SVD::try_new(sq, false, true, f64::EPSILON, 200 * n + 1000).ok_or(
        NumError::NoConvergence {
            what: "singular value decomposition (pole assignment)".into(),
            iterations: 200 * n + 1000,
        },
    )?;
    let vt = svd.v_t.ok_or(NumError::NoConvergence {
        what: "singular value decomposition (pole assignment)".into(),
        iterations: 0,
    })?;
    // Rows of Vᴴ sorted by descending σ: the last `rank` rows span the null space.
    Ok(vt.rows(n - rank, rank).adjoint())
}

/// κ₂ of the unit-norm eigenvector matrix of `m` (∞ when singular or not computable).
fn eigenvector_condition(m: &DMatrix<f64>) -> f64 {
    let Ok(e) = eigen(m) else {
        return f64::INFINITY;
    };
    let n = m.nrows();
    match nalgebra::SVD::try_new(e.vectors, false, false, f64::EPSILON, 200 * n + 1000) {
        Some(svd) => {
            let s = &svd.singular_values;
            let hi = s.iter().fold(0.0f64, |x, v| x.max(*v));
            let lo = s.iter().fold(f64::INFINITY, |x, v| x.min(*v));
            if lo > 0.0 {
                hi / lo
            } else {
                f64::INFINITY
            }
        }
        None => f64::INFINITY,
    }
}

#[cfg(test)]
mod tests;
