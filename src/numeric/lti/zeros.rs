//! Transmission (invariant) zeros of a state-space model x' = Ax + Bu, y = Cx + Du.
//!
//! The zeros are the finite λ at which the system matrix
//!
//! ```text
//! S(λ) = [A − λI  B]
//!        [  C     D]      ((n+p)×(n+m))
//! ```
//!
//! loses rank below its normal rank (its rank for almost every λ). For a non-square or
//! degenerate model S(λ) is a singular pencil, and its "generalized eigenvalues" computed
//! directly are meaningless; the reduction of Emami-Naeini, A. & Van Dooren, P. (1982),
//! "Computation of zeros of linear multivariable systems", Automatica 18(4), 415–430,
//! first extracts a regular square pencil with exactly the same finite zeros, whose
//! generalized eigenvalues are then computed by QZ ([`crate::numeric::linalg::qz`]).

use crate::numeric::check;
use crate::numeric::error::{NumError, NumResult};
use crate::numeric::linalg::qz;
use nalgebra::{Complex, DMatrix};

/// Tolerances of the zero computation.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ZerosParams {
    /// Relative rank tolerance: a singular value counts as zero when it is at most
    /// `rank_tolerance · ‖[A B; C D]‖_F`. `None` means `10·(n + max(m, p))·ε`.
    pub rank_tolerance: Option<f64>,
    /// Relative tolerance under which an eigenvalue of the reduced pencil counts as
    /// infinite (see [`qz::GeneralizedEigenvalue::is_infinite`]). Default √ε.
    pub infinite_tolerance: f64,
}

impl Default for ZerosParams {
    fn default() -> Self {
        ZerosParams {
            rank_tolerance: None,
            infinite_tolerance: qz::QzParams::default().infinite_tolerance,
        }
    }
}

/// The regular pencil `A_f − λB_f` (both `n_f×n_f`, B_f nonsingular up to the rank
/// tolerance) whose eigenvalues are the finite zeros of a model.
#[derive(Debug, Clone, PartialEq)]
pub struct ZeroPencil {
    /// `A_f`.
    pub a: DMatrix<f64>,
    /// `B_f`.
    pub b: DMatrix<f64>,
    /// Normal rank of the transfer matrix G(s) = C(sI − A)⁻¹B + D (the normal rank of
    /// S(λ) is n plus this), as decided by the rank tolerance.
    pub normal_rank: usize,
    /// The closest rank decision, when rounding propagated from earlier steps could have
    /// tipped it: zeros may then be missing or spurious.
    pub ambiguity: Option<Ambiguity>,
}

/// The transmission zeros of (A, B, C, D), sorted by [`crate::numeric::order`] (ascending
/// real part, then imaginary part), with default [`ZerosParams`].
///
/// Mathematics: the finite λ where S(λ) = [A − λI, B; C, D] drops below its normal rank —
/// the invariant zeros of the realization. For a minimal realization they are the
/// transmission zeros of G(s) = C(sI − A)⁻¹B + D; for a non-minimal one they also include
/// decoupling zeros: when G(s) has full normal rank, an unobservable mode (if p ≥ m) or an
/// uncontrollable mode (if p ≤ m) cancels from G(s) but stays a zero of S. Works for any
/// n ≥ 0, m, p (square or not, D zero or not).
///
/// Algorithm: see [`zero_pencil`] (Emami-Naeini & Van Dooren 1982, "Computation of zeros of
/// linear multivariable systems", Automatica), then the finite generalized eigenvalues of
/// the reduced pencil by QZ (Moler & Stewart 1973). Cost: two SVDs of at most
/// (n + max(m, p))² entries per reduction step, O((n + max(m, p))³) each, with at most n
/// steps and usually a few; then O(n_f³) for QZ on the n_f×n_f reduced pencil.
///
/// Tolerance: rank decisions treat singular values at most `10·(n + max(m, p))·ε·‖S‖_F`
/// as zero (S = [A B; C D]); the zeros are then exact for a model whose system matrix is
/// within about that distance of the input's (plus the backward error of QZ).
///
/// Errors: A not square; B without n rows, C without n columns, D not p×m; non-finite
/// entries; [`NumError::NoConvergence`] from an SVD or QZ.
pub fn transmission_zeros(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    c: &DMatrix<f64>,
    d: &DMatrix<f64>,
) -> NumResult<Vec<Complex<f64>>> {
    transmission_zeros_with(a, b, c, d, &ZerosParams::default())
}

/// [`transmission_zeros`] with explicit tolerances: `params.rank_tolerance` (relative to
/// ‖[A B; C D]‖_F) for the rank decisions of the reduction, `params.infinite_tolerance` for
/// discarding eigenvalues of the reduced pencil that are numerically infinite (see
/// [`qz::GeneralizedEigenvalue::is_infinite`]). Errors as [`zero_pencil`].
pub fn transmission_zeros_with(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    c: &DMatrix<f64>,
    d: &DMatrix<f64>,
    params: &ZerosParams,
) -> NumResult<Vec<Complex<f64>>> {
    let pencil = zero_pencil(a, b, c, d, params)?;
    qz::finite_generalized_eigenvalues(&pencil.a, &pencil.b, params.infinite_tolerance)
}

/// [`transmission_zeros`] with the closest rank decision of the reduction when rounding
/// propagated from earlier steps could have tipped it (zeros may then be missing or
/// spurious: callers warn with the figures).
pub fn transmission_zeros_checked(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    c: &DMatrix<f64>,
    d: &DMatrix<f64>,
) -> NumResult<(Vec<Complex<f64>>, Option<Ambiguity>)> {
    let params = ZerosParams::default();
    let pencil = zero_pencil(a, b, c, d, &params)?;
    let z = qz::finite_generalized_eigenvalues(&pencil.a, &pencil.b, params.infinite_tolerance)?;
    Ok((z, pencil.ambiguity))
}

/// Extracts from S(λ) = [A − λI, B; C, D] a regular pencil `A_f − λB_f` with the same finite
/// zeros (Emami-Naeini & Van Dooren 1982, "Computation of zeros of linear multivariable
/// systems", Automatica 18(4); the procedure of Van Dooren 1979, "The computation of
/// Kronecker's canonical form of a singular pencil", Linear Algebra Appl. 27).
///
/// Algorithm: (1) repeat: compress the rows of D by an SVD (U·D = [0; D̃], D̃ of full row
/// rank ρ); stop if ρ = p; compress the rows of the part C₁ of U·C beside the zero rows of
/// U·D (rank μ; if μ = 0 those rows are zero and are dropped); with an orthogonal state
/// transformation W make C₁W = [0, Ĉ], Ĉ μ×μ invertible; the μ rows [0 Ĉ 0] and the μ
/// states beside Ĉ split off a constant invertible block, leaving the smaller model
/// (A₁₁, B₁, [A₂₁; C₂₁], [B₂; D̃]) with the same zeros. This ends with D of full row rank,
/// which is the normal rank of G(s). (2) The same on the dual model (Aᵀ, Cᵀ, Bᵀ, Dᵀ), after
/// which D is square and invertible. (3) An orthogonal column compression
/// [C D]·W = [0, Y] (Y invertible) leaves A_f = ([A B]·W)(:, 1..n_f) and
/// B_f = ([I 0]·W)(:, 1..n_f). Orthogonal transformations only, so the pencil is exact for a
/// model within the rank tolerance of the input.
///
/// Tolerance: see [`ZerosParams::rank_tolerance`].
///
/// Errors: as [`transmission_zeros`]; `rank_tolerance` negative or not finite.
pub fn zero_pencil(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    c: &DMatrix<f64>,
    d: &DMatrix<f64>,
    params: &ZerosParams,
) -> NumResult<ZeroPencil> {
    let (n, m, p) = check_model(a, b, c, d)?;
    let rel = params
        .rank_tolerance
        .unwrap_or(10.0 * (n + m.max(p)) as f64 * f64::EPSILON);
    if !(rel.is_finite() && rel >= 0.0) {
        return Err(NumError::invalid(
            "rank_tolerance",
            format!("expected a finite number ≥ 0, found {rel}"),
        ));
    }
    if !(params.infinite_tolerance.is_finite() && params.infinite_tolerance >= 0.0) {
        return Err(NumError::invalid(
            "infinite_tolerance",
            format!(
                "expected a finite number ≥ 0, found {}",
                params.infinite_tolerance
            ),
        ));
    }
    let norm = frobenius(a)
        .hypot(frobenius(b))
        .hypot(frobenius(c).hypot(frobenius(d)));
    let thr = rel * norm;

    // (1) D of full row rank.
    let mut noise = Noise {
        thr,
        carried: 0.0,
        worst: None,
    };
    let first = reduce(
        Model {
            a: a.clone(),
            b: b.clone(),
            c: c.clone(),
            d: d.clone(),
        },
        &mut noise,
    )?;
    let normal_rank = first.d.nrows();
    // (2) The dual model: D square and invertible.
    let dual = reduce(
        Model {
            a: first.a.transpose(),
            b: first.c.transpose(),
            c: first.b.transpose(),
            d: first.d.transpose(),
        },
        &mut noise,
    )?;
    let (af, bf, cf, df) = (
        dual.a.transpose(),
        dual.c.transpose(),
        dual.b.transpose(),
        dual.d.transpose(),
    );
    let nf = af.nrows();
    let (pf, mf) = df.shape();
    if pf != mf {
        return Err(NumError::no_solution(
            "transmission zeros",
            format!(
                "the reduced system pencil is not square ({pf} outputs, {mf} inputs); \
                 hint: the rank tolerance {rel:e} is too close to a singular value"
            ),
        ));
    }
    // (3) [C D]·W = [0, Y]: W = Vᵀ with V·[C D]ᵀ = [0; Yᵀ].
    let mut cd = DMatrix::zeros(pf, nf + mf);
    cd.view_mut((0, 0), (pf, nf)).copy_from(&cf);
    cd.view_mut((0, nf), (pf, mf)).copy_from(&df);
    let (v, _, _) = row_compress(&cd.transpose(), thr)?;
    let w = v.transpose();
    let mut ab = DMatrix::zeros(nf, nf + mf);
    ab.view_mut((0, 0), (nf, nf)).copy_from(&af);
    ab.view_mut((0, nf), (nf, mf)).copy_from(&bf);
    let w1 = w.columns(0, nf);
    Ok(ZeroPencil {
        a: &ab * w1,
        b: w1.rows(0, nf).into_owned(),
        normal_rank,
        ambiguity: noise.worst,
    })
}

/// A model (A, B, C, D) being reduced.
struct Model {
    a: DMatrix<f64>,
    b: DMatrix<f64>,
    c: DMatrix<f64>,
    d: DMatrix<f64>,
}

/// A rank decision of the reduction that rounding could have tipped.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Ambiguity {
    /// The singular value that was counted as rank.
    pub singular_value: f64,
    /// The rounding error it may carry, propagated from earlier steps.
    pub noise: f64,
    /// The rank threshold it was compared with.
    pub threshold: f64,
}

/// Rank threshold and propagated rounding of one reduction ([`reduce`]).
#[derive(Debug, Clone, Copy)]
struct Noise {
    /// The fixed threshold every decision uses.
    thr: f64,
    /// Rounding error the current data may carry beyond `thr/10`.
    carried: f64,
    /// The closest call so far (largest noise/singular-value ratio).
    worst: Option<Ambiguity>,
}

impl Noise {
    /// Records a decision on singular values `sv` with extra noise `extra`: a value above
    /// the threshold but within the noise could be rounding counted as rank.
    fn decide(&mut self, sv: &[f64], extra: f64) {
        let noise = self.carried + extra;
        for &s in sv {
            if s > self.thr && s <= self.thr + noise {
                let worse = self
                    .worst
                    .is_none_or(|w| noise / s > w.noise / w.singular_value);
                if worse {
                    self.worst = Some(Ambiguity {
                        singular_value: s,
                        noise,
                        threshold: self.thr,
                    });
                }
            }
        }
    }
}

/// Step (1) of [`zero_pencil`]: a model with the same finite zeros and D of full row rank.
///
/// Rank decisions use one fixed threshold. Downstream of a small kept singular value they
/// see amplified rounding, which `noise` tracks so that a decision rounding could have
/// tipped is reported ([`ZeroPencil::ambiguity`]) rather than trusted silently: the state
/// split `W` of a step is computed from Ĉ, and a perturbation `δ` of Ĉ turns it by up to
/// `δ/σ_min(Ĉ)` (Wedin 1972, "Perturbation bounds in connection with singular value
/// decomposition", BIT 12, the sin θ theorem), so the next step's `C` and `D` (rows of
/// `Wᵀ[A B]`) carry errors up to `δ·‖[A B]‖/σ_min(Ĉ)`; likewise the rows of `C` beside the
/// null rows of `D` carry `δ·‖C‖/gap(D)`.
fn reduce(mut s: Model, noise: &mut Noise) -> NumResult<Model> {
    let thr = noise.thr;
    loop {
        let n = s.a.nrows();
        let p = s.c.nrows();
        if p == 0 {
            return Ok(s);
        }
        let (u, rho, dsv) = row_compress(&s.d, thr)?;
        noise.decide(&dsv, 0.0);
        let c = &u * &s.c;
        let d = &u * &s.d;
        let k = p - rho;
        if k == 0 {
            return Ok(Model {
                a: s.a,
                b: s.b,
                c,
                d,
            });
        }
        let c1 = c.rows(0, k).into_owned();
        let c2 = c.rows(k, rho).into_owned();
        let d2 = d.rows(k, rho).into_owned();
        // The null rows of D turn by δ/gap, which C₁ (their combination of C) inherits.
        let c1_extra = if rho > 0 {
            let gap = dsv[rho - 1] - dsv.get(rho).copied().unwrap_or(0.0);
            propagated(thr + noise.carried, gap, frobenius(&s.c))
        } else {
            0.0
        };
        let (v, mu, csv) = row_compress(&c1, thr)?;
        noise.decide(&csv, c1_extra);
        if mu == 0 {
            // The k rows [C₁ 0] are negligible: drop them; D̃ has full row rank.
            return Ok(Model {
                a: s.a,
                b: s.b,
                c: c2,
                d: d2,
            });
        }
        let c_hat = (&v * &c1).rows(k - mu, mu).into_owned();
        // W with Ĉ·W = [0, Ĉ₂]: W = Vᵀ for V·Ĉᵀ = [0; Ĉ₂ᵀ]. Ĉ has full row rank μ, so the
        // n − μ zero rows of V·Ĉᵀ are exactly the padding's zero singular values.
        let (wt, _, _) = row_compress(&c_hat.transpose(), thr)?;
        let w = wt.transpose();
        let ab_norm = frobenius(&s.a).hypot(frobenius(&s.b));
        noise.carried += c1_extra + propagated(thr + noise.carried, csv[mu - 1], ab_norm);
        let a = &wt * &s.a * &w;
        let b = &wt * &s.b;
        let c2 = c2 * &w;
        let n1 = n - mu;
        let m = b.ncols();
        let mut c_new = DMatrix::zeros(mu + rho, n1);
        c_new
            .view_mut((0, 0), (mu, n1))
            .copy_from(&a.view((n1, 0), (mu, n1)));
        c_new
            .view_mut((mu, 0), (rho, n1))
            .copy_from(&c2.columns(0, n1));
        let mut d_new = DMatrix::zeros(mu + rho, m);
        d_new.view_mut((0, 0), (mu, m)).copy_from(&b.rows(n1, mu));
        d_new.view_mut((mu, 0), (rho, m)).copy_from(&d2);
        s = Model {
            a: a.view((0, 0), (n1, n1)).into_owned(),
            b: b.rows(0, n1).into_owned(),
            c: c_new,
            d: d_new,
        };
    }
}

/// The error a subspace computed across a singular-value gap passes on to `norm`-sized
/// data: `(thr/10)/gap · norm` (the sin θ bound with the rounding level `thr/10`), capped at
/// `norm` (a turn of at most 90°).
fn propagated(thr: f64, gap: f64, norm: f64) -> f64 {
    if gap <= 0.0 {
        return norm;
    }
    (0.1 * thr / gap).min(1.0) * norm
}

/// Orthogonal U (r×r) with U·M = [0; M̃], M̃ of full row rank, and that rank: the number of
/// singular values of M above `thr`. Rows of U are M's left singular vectors, smallest
/// singular value first.
fn row_compress(m: &DMatrix<f64>, thr: f64) -> NumResult<(DMatrix<f64>, usize, Vec<f64>)> {
    let (r, c) = m.shape();
    if r == 0 || c == 0 {
        return Ok((DMatrix::identity(r, r), 0, Vec::new()));
    }
    // Pad a tall matrix with zero columns so that the thin SVD yields a full r×r U.
    let work = if c < r {
        let mut padded = DMatrix::zeros(r, r);
        padded.view_mut((0, 0), (r, c)).copy_from(m);
        padded
    } else {
        m.clone()
    };
    // Verified factors (nalgebra's SVD vectors can be wrong on nearly rank-deficient input).
    let svd = crate::numeric::linalg::dense::verified_svd(&work)?;
    let u = svd.u.ok_or_else(|| NumError::NoConvergence {
        what: "singular value decomposition".to_string(),
        iterations: 0,
    })?;
    let rank = svd.singular_values.iter().filter(|&&s| s > thr).count();
    Ok((
        DMatrix::from_fn(r, r, |i, j| u[(j, r - 1 - i)]),
        rank,
        svd.singular_values.as_slice().to_vec(),
    ))
}

fn check_model(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    c: &DMatrix<f64>,
    d: &DMatrix<f64>,
) -> NumResult<(usize, usize, usize)> {
    let n = check::finite_square("A", a)?;
    check::rows("B", b, n)?;
    check::cols("C", c, n)?;
    let (m, p) = (b.ncols(), c.nrows());
    if d.shape() != (p, m) {
        return Err(NumError::shape(
            "D",
            format!("{p}×{m} (outputs of C × inputs of B)"),
            check::shape_of(d),
        ));
    }
    check::finite("B", b)?;
    check::finite("C", c)?;
    check::finite("D", d)?;
    Ok((n, m, p))
}

/// Frobenius norm, scaled so that it neither overflows nor underflows.
fn frobenius(m: &DMatrix<f64>) -> f64 {
    let big = m.iter().fold(0.0f64, |acc, x| acc.max(x.abs()));
    if big == 0.0 {
        return 0.0;
    }
    big * m.iter().map(|x| (x / big) * (x / big)).sum::<f64>().sqrt()
}

#[cfg(test)]
mod tests;
