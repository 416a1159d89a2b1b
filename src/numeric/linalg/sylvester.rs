//! Sylvester matrix equations by the Schur method of Bartels & Stewart, and the
//! quasi-triangular kernel the Lyapunov solvers share.
//!
//! * [`solve_sylvester`]: `A X + X B = C`.
//! * The Lyapunov equations `A X + X Aᵀ + Q = 0` and `A X Aᵀ − X + Q = 0` live in
//!   [`crate::numeric::design::lyapunov`] (where `help` lists them) and use the kernel here.
//!
//! All three reduce the coefficient matrices to real Schur form once, solve the
//! quasi-triangular equation block by block (each 1×1 or 2×2 diagonal block pair is a
//! dense Kronecker system of order at most 4, solved by Gaussian elimination with complete
//! pivoting) and transform back. Each block pair is judged **on its own scale** (see
//! [`MatrixEquationParams::resonance_tol`]): its smallest pivot — `|λ + μ|` for a pair of
//! 1×1 blocks, `|λμ − 1|` in the discrete form — is compared with
//! `max(tol·(|λ| + |μ|), 16ε‖A‖)` (continuous) or `max(tol·(1 + |λ||μ|),
//! 8ε‖A‖(|λ| + |μ|))` (discrete), the larger of a relative separation and the rounding
//! level of the computed eigenvalues. At or below that floor the equation is singular to
//! working precision and the routines return [`NumError::NoSolution`] naming the figures
//! instead of a huge, meaningless solution; a stiff but well-posed equation (eigenvalues
//! −1e6 and −1e-6, so that λ + μ = −2e-6 for the slow pair) is solved.

use crate::numeric::check;
use crate::numeric::error::{NumError, NumResult};
use crate::numeric::linalg::kernels;
use crate::numeric::linalg::schur::{block_eigenvalue, quasi_blocks, RealSchur, SchurParams};
use nalgebra::{Complex, DMatrix};

/// Tolerances of the matrix-equation solvers (this file and
/// [`crate::numeric::linalg::hammarling`]).
#[derive(Debug, Clone, PartialEq)]
pub struct MatrixEquationParams {
    /// Relative separation below which the equation counts as singular, judged **per
    /// diagonal block pair** of the Schur forms, never against one global norm. The block
    /// pivot `p` of the pair with eigenvalues `λ` (of `A`) and `μ` (of `B`, or of `A` again
    /// for Lyapunov) is rejected when
    ///
    /// * continuous (`λ + μ ≈ 0`): `|p| ≤ max(resonance_tol·(|λ| + |μ|), 8ε(‖A‖_F + ‖B‖_F))`;
    /// * discrete (`λμ ≈ 1`): `|p| ≤ max(resonance_tol·(1 + |λ||μ|),
    ///   8ε(‖A‖_F·|μ| + ‖B‖_F·|λ|))`.
    ///
    /// The first term is the relative separation of the pair; the second is the rounding
    /// level of the computed `λ + μ` (or `λμ`): a backward-stable Schur form moves a
    /// well-conditioned eigenvalue by a small multiple of `ε‖A‖` (Wilkinson 1965), so a
    /// pivot below it may stand for an exact zero. The norms are those of the balanced
    /// matrices for Lyapunov equations. With the same constants as
    /// [`crate::numeric::linalg::hammarling::stability_violation`], every matrix that test
    /// accepts as stable gives pivots of real eigenvalue pairs above the floor (for a
    /// complex pair the pivot of complete pivoting estimates the separation), so a Gramian
    /// is not refused here after the stability check passed. Bartels & Stewart (1972) test the pivots of the
    /// small block systems the same way; Golub, Nash & Van Loan (1979), "A Hessenberg–Schur
    /// method for the problem AX + XB = C", IEEE Trans. Automatic Control 24, bound the
    /// forward error by `ε‖A‖/sep`, which is why the floor is relative to each pair and
    /// not to ‖A‖ alone: a stiff `diag(−1e6, −1e-6)` has a slow pair with
    /// `λ + μ = −2e-6` known to full relative accuracy. Default `1e-12`.
    pub resonance_tol: f64,
    /// Largest accepted `‖Q − Qᵀ‖_F / ‖Q‖_F` for the symmetric right-hand side of a
    /// Lyapunov equation (default `1e-10`); the symmetric part of `Q` is used.
    pub symmetry_tol: f64,
    /// Cap on the QR iterations of the Schur decomposition (and of the SVD in
    /// [`crate::numeric::lti::balance`]), per row of the matrix (default 100; the total cap
    /// is this times `n`, at least 10).
    pub schur_iterations_per_row: usize,
}

impl Default for MatrixEquationParams {
    fn default() -> Self {
        MatrixEquationParams {
            resonance_tol: 1e-12,
            symmetry_tol: 1e-10,
            schur_iterations_per_row: 100,
        }
    }
}

/// Solves the Sylvester equation `A X + X B = C` with the default
/// [`MatrixEquationParams`]; see [`solve_sylvester_with`].
pub fn solve_sylvester(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    c: &DMatrix<f64>,
) -> NumResult<DMatrix<f64>> {
    solve_sylvester_with(a, b, c, &MatrixEquationParams::default())
}

/// Solves the Sylvester equation `A X + X B = C` for `X` (m×n), with `A` m×m, `B` n×n and
/// `C` m×n.
///
/// **Mathematics.** The equation has a unique solution iff `λᵢ(A) + μⱼ(B) ≠ 0` for all
/// eigenvalue pairs. With real Schur forms `A = U S Uᵀ`, `B = V R Vᵀ` it becomes
/// `S Y + Y R = Uᵀ C V`, `X = U Y Vᵀ`, which is solved block by block: row blocks of `S`
/// from the bottom, column blocks of `R` from the left, each diagonal block pair being a
/// Kronecker system `(I ⊗ Sₖₖ + Rₗₗᵀ ⊗ I) vec Yₖₗ = vec(rhs)` of order ≤ 4.
///
/// **Algorithm.** Bartels & Stewart (1972), "Solution of the matrix equation AX + XB = C",
/// Comm. ACM 15(9). The 2×2 Schur blocks need not be in standard form: every block system
/// is solved as a general dense system by Gaussian elimination with complete pivoting.
///
/// **Cost.** Two real Schur decompositions (about 25m³ + 25n³ flops) plus
/// `O(m²n + mn²)` for the back substitution and the transformations.
///
/// **Tolerance.** Every block pair is judged on its own scale as described in
/// [`MatrixEquationParams::resonance_tol`]; at or below the floor the result is
/// [`NumError::NoSolution`] naming the separation and the offending eigenvalues.
pub fn solve_sylvester_with(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    c: &DMatrix<f64>,
    params: &MatrixEquationParams,
) -> NumResult<DMatrix<f64>> {
    let m = check::finite_square("A", a)?;
    let n = check::finite_square("B", b)?;
    check::dims("C", c, m, n)?;
    check::finite("C", c)?;
    if m == 0 || n == 0 {
        return Ok(DMatrix::zeros(m, n));
    }
    let (u, s) = real_schur(a, "A", params)?;
    let (v, r) = real_schur(b, "B", params)?;
    let g = u.transpose() * c * &v;
    let floor = Floor::new(params, a.norm(), b.norm());
    let y = solve_quasi_triangular(&s, &r, g, Kind::Continuous, &floor).map_err(|res| {
        resonance_error(
            "Sylvester equation A X + X B = C",
            "A and −B have (nearly) common eigenvalues, λᵢ + μⱼ ≈ 0",
            &res,
            params,
        )
    })?;
    let x = &u * y * v.transpose();
    finite_solution("Sylvester equation A X + X B = C", x)
}

/// Which quasi-triangular equation a block solve belongs to.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum Kind {
    /// `S Z + Z R = G`.
    Continuous,
    /// `S Z R − Z = G`.
    Discrete,
}

/// Rounding level of a computed eigenvalue per unit of the matrix norm: a backward-stable
/// Schur form moves a well-conditioned eigenvalue by a small multiple of `ε‖A‖` (Wilkinson
/// 1965, *The Algebraic Eigenvalue Problem*, ch. 2). The same constant as
/// [`crate::numeric::linalg::hammarling::stability_violation`] judges stability with.
pub(crate) const EIGENVALUE_ROUNDING: f64 = 8.0 * f64::EPSILON;

/// The pivot floor of one block pair, from the relative tolerance and the rounding levels
/// of the two coefficient matrices (see [`MatrixEquationParams::resonance_tol`]).
#[derive(Debug, Clone, Copy)]
pub(crate) struct Floor {
    /// Relative separation tolerance.
    tol: f64,
    /// Absolute rounding level of an eigenvalue of `S`: 8ε‖S‖_F.
    round_s: f64,
    /// Absolute rounding level of an eigenvalue of `R`: 8ε‖R‖_F.
    round_r: f64,
}

impl Floor {
    pub(crate) fn new(params: &MatrixEquationParams, norm_s: f64, norm_r: f64) -> Floor {
        Floor {
            tol: params.resonance_tol,
            round_s: EIGENVALUE_ROUNDING * norm_s,
            round_r: EIGENVALUE_ROUNDING * norm_r,
        }
    }

    /// `(floor, local scale)` for a pair of diagonal blocks whose eigenvalues have moduli
    /// `rs` (block of `S`) and `rr` (block of `R`).
    fn for_pair(&self, kind: Kind, rs: f64, rr: f64) -> (f64, f64) {
        match kind {
            Kind::Continuous => {
                let local = rs + rr;
                ((self.tol * local).max(self.round_s + self.round_r), local)
            }
            Kind::Discrete => {
                let local = 1.0 + rs * rr;
                (
                    (self.tol * local).max(self.round_s * rr + self.round_r * rs),
                    local,
                )
            }
        }
    }
}

/// The largest eigenvalue modulus of each diagonal block of a quasi-triangular matrix.
pub(crate) fn block_radii(t: &DMatrix<f64>, blocks: &[(usize, usize)]) -> Vec<f64> {
    blocks
        .iter()
        .map(|&(k, size)| {
            if size == 1 {
                return t[(k, k)].abs();
            }
            let z = block_eigenvalue(t, k, size);
            if z.im != 0.0 {
                z.norm()
            } else {
                // A real pair in an unsplit block: the other root from the trace.
                let other = t[(k, k)] + t[(k + 1, k + 1)] - z.re;
                z.re.abs().max(other.abs())
            }
        })
        .collect()
}

/// A block pivot that fell to the floor: where, and how small.
#[derive(Debug, Clone)]
pub(crate) struct Resonance {
    /// Absolute value of the rejected pivot.
    pivot: f64,
    /// The floor it fell to.
    floor: f64,
    /// The local scale of the pair (`|λ| + |μ|`, or `1 + |λ||μ|` for the discrete form).
    local: f64,
    /// An eigenvalue of the diagonal block of `S` involved.
    lambda: Complex<f64>,
    /// An eigenvalue of the diagonal block of `R` involved.
    mu: Complex<f64>,
}

/// Real Schur decomposition `A = Q T Qᵀ` with an iteration cap, as `(Q, T)`.
///
/// [`RealSchur::with_params`] (Francis double-shift QR organised as in `dlahqr`, with
/// `params.schur_iterations_per_row` sweeps allowed per deflation): `T` is upper
/// quasi-triangular with exact zeros below its 1×1/2×2 diagonal blocks, every 2×2 block in
/// standard form. Fails with [`NumError::NoConvergence`] at the cap.
pub(crate) fn real_schur(
    a: &DMatrix<f64>,
    what: &str,
    params: &MatrixEquationParams,
) -> NumResult<(DMatrix<f64>, DMatrix<f64>)> {
    let n = a.nrows();
    if n == 0 {
        return Ok((DMatrix::zeros(0, 0), DMatrix::zeros(0, 0)));
    }
    let schur_params = SchurParams {
        iterations_per_row: params.schur_iterations_per_row.max(1),
    };
    let RealSchur { q, t } = RealSchur::with_params(a, &schur_params).map_err(|e| match e {
        NumError::NoConvergence { iterations, .. } => NumError::NoConvergence {
            what: format!("real Schur decomposition of {what}"),
            iterations,
        },
        other => other,
    })?;
    check::finite(what, &t)?;
    check::finite(what, &q)?;
    Ok((q, t))
}

/// Solves `S Z + Z R = G` (continuous) or `S Z R − Z = G` (discrete) for upper
/// quasi-triangular `S` (m×m) and `R` (n×n); `floor` gives the pivot floor of each block
/// pair.
pub(crate) fn solve_quasi_triangular(
    s: &DMatrix<f64>,
    r: &DMatrix<f64>,
    g: DMatrix<f64>,
    kind: Kind,
    floor: &Floor,
) -> Result<DMatrix<f64>, Resonance> {
    if kind == Kind::Continuous {
        return solve_continuous_by_columns(s, r, g, floor);
    }
    let (m, n) = (s.nrows(), r.nrows());
    let sb = quasi_blocks(s).map_err(|_| no_schur())?;
    let rb = quasi_blocks(r).map_err(|_| no_schur())?;
    let s_radii = block_radii(s, &sb);
    let r_radii = block_radii(r, &rb);
    let mut z = g;
    // Discrete only: V = Z R, filled block by block as Z becomes known.
    let mut v = match kind {
        Kind::Discrete => DMatrix::zeros(m, n),
        Kind::Continuous => DMatrix::zeros(0, 0),
    };
    for (kb, &(k0, p)) in sb.iter().enumerate().rev() {
        let k1 = k0 + p;
        for (lb, &(l0, q)) in rb.iter().enumerate() {
            let l1 = l0 + q;
            let (threshold, local) = floor.for_pair(kind, s_radii[kb], r_radii[lb]);
            let mut rhs = z.view((k0, l0), (p, q)).clone_owned();
            match kind {
                Kind::Continuous => {
                    if k1 < m {
                        rhs -= s.view((k0, k1), (p, m - k1)) * z.view((k1, l0), (m - k1, q));
                    }
                    if l0 > 0 {
                        rhs -= z.view((k0, 0), (p, l0)) * r.view((0, l0), (l0, q));
                    }
                }
                Kind::Discrete => {
                    if l0 > 0 {
                        let partial = z.view((k0, 0), (p, l0)) * r.view((0, l0), (l0, q));
                        rhs -= s.view((k0, k0), (p, p)) * partial;
                    }
                    if k1 < m {
                        rhs -= s.view((k0, k1), (p, m - k1)) * v.view((k1, l0), (m - k1, q));
                    }
                }
            }
            let skk = s.view((k0, k0), (p, p)).clone_owned();
            let rll = r.view((l0, l0), (q, q)).clone_owned();
            let block =
                solve_block(&skk, &rll, &rhs, kind, threshold).map_err(|pivot| Resonance {
                    pivot,
                    floor: threshold,
                    local,
                    lambda: block_eigenvalue(s, k0, p),
                    mu: block_eigenvalue(r, l0, q),
                })?;
            z.view_mut((k0, l0), (p, q)).copy_from(&block);
            if kind == Kind::Discrete {
                let vkl = z.view((k0, 0), (p, l1)) * r.view((0, l0), (l1, q));
                v.view_mut((k0, l0), (p, q)).copy_from(&vkl);
            }
        }
    }
    Ok(z)
}

/// Solves `S Z + Z R = G` for upper quasi-triangular `S` (m×m) and `R` (n×n), block
/// column by block column of `Z` (the column-oriented ordering of Bartels & Stewart's
/// back-substitution): for the block column `l` of `R`, first `G[:, l] − Z[:, <l]·R[<l, l]`,
/// then the quasi-triangular system `S·Z[:, l] + Z[:, l]·R[l, l] = …` from the bottom block
/// up, each solved block updating the rows above it by a column of `S`. Every inner loop
/// runs down a contiguous column of the column-major storage, and 1×1 blocks allocate
/// nothing. `floor` gives the pivot floor of each block pair.
fn solve_continuous_by_columns(
    s: &DMatrix<f64>,
    r: &DMatrix<f64>,
    g: DMatrix<f64>,
    floor: &Floor,
) -> Result<DMatrix<f64>, Resonance> {
    let m = s.nrows();
    let sb = quasi_blocks(s).map_err(|_| no_schur())?;
    let rb = quasi_blocks(r).map_err(|_| no_schur())?;
    let s_radii = block_radii(s, &sb);
    let r_radii = block_radii(r, &rb);
    let mut z = g;
    if m == 0 {
        return Ok(z);
    }
    let sd = s.as_slice();
    for (lb, &(l0, q)) in rb.iter().enumerate() {
        // Right-hand side: columns l0..l0+q minus Z[:, 0..l0]·R[0..l0, l0..l0+q].
        {
            let (left, right) = z.as_mut_slice().split_at_mut(l0 * m);
            for jj in 0..q {
                let col = &mut right[jj * m..(jj + 1) * m];
                for t in 0..l0 {
                    let rt = r[(t, l0 + jj)];
                    if rt != 0.0 {
                        kernels::axpy(col, -rt, &left[t * m..(t + 1) * m]);
                    }
                }
            }
        }
        for (kb, &(k0, p)) in sb.iter().enumerate().rev() {
            let (threshold, local) = floor.for_pair(Kind::Continuous, s_radii[kb], r_radii[lb]);
            let resonance = |pivot| Resonance {
                pivot,
                floor: threshold,
                local,
                lambda: block_eigenvalue(s, k0, p),
                mu: block_eigenvalue(r, l0, q),
            };
            let mut x = [0.0f64; 4];
            if p == 1 && q == 1 {
                let k = s[(k0, k0)] + r[(l0, l0)];
                let a = k.abs();
                if a.is_nan() {
                    return Err(resonance(0.0));
                }
                if a <= threshold {
                    return Err(resonance(a));
                }
                x[0] = z[(k0, l0)] / k;
            } else {
                let mut kk = [[0.0f64; 4]; 4];
                let mut b = [0.0f64; 4];
                // vec is column-major: entry (i, j) of the p×q block sits at i + p·j.
                for j in 0..q {
                    for i in 0..p {
                        let row = i + p * j;
                        b[row] = z[(k0 + i, l0 + j)];
                        for jj in 0..q {
                            for ii in 0..p {
                                let from_s = if jj == j { s[(k0 + i, k0 + ii)] } else { 0.0 };
                                let from_r = if ii == i { r[(l0 + jj, l0 + j)] } else { 0.0 };
                                kk[row][ii + p * jj] = from_s + from_r;
                            }
                        }
                    }
                }
                x = solve_small(&mut kk, &mut b, p * q, threshold).map_err(resonance)?;
            }
            // Store the block and update the rows above it: Z[0..k0, l] −= S[0..k0, k]·X.
            for jj in 0..q {
                let col = &mut z.as_mut_slice()[(l0 + jj) * m..(l0 + jj + 1) * m];
                for ii in 0..p {
                    let xv = x[ii + p * jj];
                    col[k0 + ii] = xv;
                    if xv != 0.0 {
                        let sc = &sd[(k0 + ii) * m..(k0 + ii) * m + k0];
                        kernels::axpy(&mut col[..k0], -xv, sc);
                    }
                }
            }
        }
    }
    Ok(z)
}

fn no_schur() -> Resonance {
    Resonance {
        pivot: f64::NAN,
        floor: f64::NAN,
        local: f64::NAN,
        lambda: Complex::new(f64::NAN, 0.0),
        mu: Complex::new(f64::NAN, 0.0),
    }
}

/// Solves one block system `Sₖₖ Y + Y Rₗₗ = rhs` or `Sₖₖ Y Rₗₗ − Y = rhs` (p, q ≤ 2) by
/// its Kronecker form; `Err(|pivot|)` when a pivot is at or below `threshold`.
fn solve_block(
    skk: &DMatrix<f64>,
    rll: &DMatrix<f64>,
    rhs: &DMatrix<f64>,
    kind: Kind,
    threshold: f64,
) -> Result<DMatrix<f64>, f64> {
    let (p, q) = (skk.nrows(), rll.nrows());
    let dim = p * q;
    let mut k = [[0.0f64; 4]; 4];
    let mut b = [0.0f64; 4];
    // vec is column-major: entry (i, j) of the p×q block sits at i + p·j.
    for j in 0..q {
        for i in 0..p {
            let row = i + p * j;
            b[row] = rhs[(i, j)];
            for jj in 0..q {
                for ii in 0..p {
                    let col = ii + p * jj;
                    k[row][col] = match kind {
                        Kind::Continuous => {
                            let from_s = if jj == j { skk[(i, ii)] } else { 0.0 };
                            let from_r = if ii == i { rll[(jj, j)] } else { 0.0 };
                            from_s + from_r
                        }
                        Kind::Discrete => {
                            let identity = if row == col { 1.0 } else { 0.0 };
                            skk[(i, ii)] * rll[(jj, j)] - identity
                        }
                    };
                }
            }
        }
    }
    let x = solve_small(&mut k, &mut b, dim, threshold)?;
    Ok(DMatrix::from_fn(p, q, |i, j| x[i + p * j]))
}

/// Gaussian elimination with complete pivoting on a dense system of order `dim ≤ 4`.
/// Returns the solution, or `Err(|pivot|)` for the first pivot at or below `threshold`.
fn solve_small(
    k: &mut [[f64; 4]; 4],
    b: &mut [f64; 4],
    dim: usize,
    threshold: f64,
) -> Result<[f64; 4], f64> {
    let mut col_perm = [0usize, 1, 2, 3];
    for step in 0..dim {
        let (mut pr, mut pc, mut best) = (step, step, -1.0f64);
        for (i, row) in k.iter().enumerate().take(dim).skip(step) {
            for (j, value) in row.iter().enumerate().take(dim).skip(step) {
                if value.abs() > best {
                    best = value.abs();
                    pr = i;
                    pc = j;
                }
            }
        }
        if best <= threshold || best.is_nan() {
            return Err(best.max(0.0));
        }
        k.swap(step, pr);
        b.swap(step, pr);
        for row in k.iter_mut().take(dim) {
            row.swap(step, pc);
        }
        col_perm.swap(step, pc);
        let pivot = k[step][step];
        let pivot_row = k[step];
        let pivot_rhs = b[step];
        for (row, rhs) in k.iter_mut().zip(b.iter_mut()).take(dim).skip(step + 1) {
            let factor = row[step] / pivot;
            if factor != 0.0 {
                for (entry, &p) in row.iter_mut().zip(pivot_row.iter()).take(dim).skip(step) {
                    *entry -= factor * p;
                }
                *rhs -= factor * pivot_rhs;
            }
        }
    }
    let mut y = [0.0f64; 4];
    for i in (0..dim).rev() {
        let mut acc = b[i];
        for j in i + 1..dim {
            acc -= k[i][j] * y[j];
        }
        y[i] = acc / k[i][i];
    }
    let mut x = [0.0f64; 4];
    for i in 0..dim {
        x[col_perm[i]] = y[i];
    }
    Ok(x)
}

pub(crate) fn resonance_error(
    what: &str,
    cause: &str,
    res: &Resonance,
    params: &MatrixEquationParams,
) -> NumError {
    if res.pivot.is_nan() {
        return NumError::NoConvergence {
            what: "real Schur decomposition (a diagonal block larger than 2×2 remained)"
                .to_string(),
            iterations: 0,
        };
    }
    let separation = if res.local > 0.0 {
        res.pivot / res.local
    } else {
        0.0
    };
    let relative_floor = if res.local > 0.0 {
        res.floor / res.local
    } else {
        params.resonance_tol
    };
    NumError::no_solution(
        what,
        format!(
            "{cause}: for the eigenvalues near {} and {} the relative separation \
             {separation:.3e} (block pivot {:.3e}) is at or below the floor \
             {relative_floor:.1e}, the larger of the tolerance {:.1e} and the rounding level \
             of the computed eigenvalues; the solution is not unique or is dominated by \
             rounding",
            fmt_complex(res.lambda),
            fmt_complex(res.mu),
            res.pivot,
            params.resonance_tol,
        ),
    )
}

/// Formats a complex number compactly for messages: `-1.500000`, `-0.500000+2.000000i`;
/// parts of magnitude below 1e-3 or from 1e7 on in exponent form (`-1.000000e-6`), so that
/// a slow or fast eigenvalue is not printed as `-0.000000` or as a long digit string.
pub(crate) fn fmt_complex(z: Complex<f64>) -> String {
    fn part(x: f64) -> String {
        let a = x.abs();
        if a == 0.0 || (1e-3..1e7).contains(&a) || !a.is_finite() {
            format!("{x:.6}")
        } else {
            format!("{x:.6e}")
        }
    }
    if z.im == 0.0 {
        part(z.re)
    } else if z.im > 0.0 {
        format!("{}+{}i", part(z.re), part(z.im))
    } else {
        format!("{}-{}i", part(z.re), part(-z.im))
    }
}

/// `(Q + Qᵀ)/2` after checking `‖Q − Qᵀ‖_F ≤ tol·‖Q‖_F`.
pub(crate) fn symmetric_part(what: &str, q: &DMatrix<f64>, tol: f64) -> NumResult<DMatrix<f64>> {
    let qt = q.transpose();
    let asym = (q - &qt).norm();
    let size = q.norm();
    if asym > tol * size {
        let rel = asym / size;
        return Err(NumError::invalid(
            what,
            format!(
                "expected a symmetric matrix, found ‖{what} − {what}ᵀ‖/‖{what}‖ = {rel:.3e} \
                 (tolerance {tol:.1e})"
            ),
        ));
    }
    Ok((q + qt) * 0.5)
}

pub(crate) fn finite_solution(what: &str, x: DMatrix<f64>) -> NumResult<DMatrix<f64>> {
    if x.iter().all(|v| v.is_finite()) {
        Ok(x)
    } else {
        Err(NumError::no_solution(
            what,
            "the solution overflows the floating-point range",
        ))
    }
}

/// `J Sᵀ J` (J the reversal permutation): element (i, j) is `S[n−1−j, n−1−i]`.
pub(crate) fn reverse_transpose(s: &DMatrix<f64>) -> DMatrix<f64> {
    let n = s.nrows();
    DMatrix::from_fn(n, n, |i, j| s[(n - 1 - j, n - 1 - i)])
}

/// `M J`: the columns of `M` in reverse order.
pub(crate) fn reverse_columns(m: &DMatrix<f64>) -> DMatrix<f64> {
    let n = m.ncols();
    DMatrix::from_fn(m.nrows(), n, |i, j| m[(i, n - 1 - j)])
}

#[cfg(test)]
mod tests;
