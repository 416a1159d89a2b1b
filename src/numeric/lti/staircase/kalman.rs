//! The four-part Kalman decomposition from orthonormal bases of the controllable and the
//! unobservable subspaces.

use super::factor::{row_jacobi, LeftFactor};
use super::{
    balance_system, check_abc, check_d, joint_frobenius, observability_unchecked,
    relative_tolerance, staircase_unchecked,
};
use crate::numeric::error::{NumError, NumResult};
use crate::numeric::lti::system::StateSpace;
use crate::numeric::lti::transform::Transformed;
use nalgebra::DMatrix;

/// Dimensions of the four parts of a Kalman decomposition, in their order in the new state.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct KalmanSizes {
    /// Controllable and observable (the minimal part).
    pub controllable_observable: usize,
    /// Controllable, unobservable.
    pub controllable_unobservable: usize,
    /// Uncontrollable, observable.
    pub uncontrollable_observable: usize,
    /// Uncontrollable, unobservable.
    pub uncontrollable_unobservable: usize,
}

impl KalmanSizes {
    /// The sizes as `[co, cō, c̄o, c̄ō]`.
    pub fn as_array(&self) -> [usize; 4] {
        [
            self.controllable_observable,
            self.controllable_unobservable,
            self.uncontrollable_observable,
            self.uncontrollable_unobservable,
        ]
    }
}

/// A Kalman decomposition: `x = T z`, new model `(T⁻¹AT, T⁻¹B, CT, D)` in the block
/// pattern of [`kalman_decomposition`].
#[derive(Debug, Clone, PartialEq)]
pub struct Kalman {
    /// `T⁻¹ A T` with its structural zero blocks set to exactly zero (n×n).
    pub a: DMatrix<f64>,
    /// `T⁻¹ B` with its structural zero rows set to exactly zero (n×m).
    pub b: DMatrix<f64>,
    /// `C T` with its structural zero columns set to exactly zero (p×n).
    pub c: DMatrix<f64>,
    /// `D`, unchanged (p×m).
    pub d: DMatrix<f64>,
    /// The transformation `T` (n×n), old state `x = T z`; columns of unit length.
    pub t: DMatrix<f64>,
    /// Its inverse `T⁻¹`, from a singular value decomposition of the decomposition's
    /// transformation in balanced coordinates (the diagonal scaling is undone exactly).
    pub t_inv: DMatrix<f64>,
    /// Sizes of the four parts.
    pub sizes: KalmanSizes,
    /// The 2-norm condition number κ₂(T) = σ_max/σ_min (1 for n = 0). Large means the
    /// controllable and the unobservable subspaces are nearly, but not exactly, overlapping:
    /// the decomposition is then fragile.
    pub condition: f64,
    /// Frobenius norm of the entries set to zero in the structural blocks, relative to
    /// `‖[T⁻¹AT, T⁻¹B; CT, 0]‖_F`. Of the order of the rank tolerance for a well-posed
    /// model; far above it when the rank decisions were inconsistent (a nearly degenerate
    /// model for which `tol` sits between two plausible answers).
    pub structure_residual: f64,
}

impl Kalman {
    /// The decomposition as a change of coordinates of `sys` (its time domain and signal
    /// names kept), with the condition of `T` up to the units of the states.
    pub fn transformed(&self, sys: &StateSpace) -> NumResult<Transformed> {
        Transformed::from_parts(
            sys,
            (self.a.clone(), self.b.clone(), self.c.clone()),
            self.t.clone(),
            self.t_inv.clone(),
        )
    }
}

/// The Kalman decomposition of `(A, B, C, D)` into controllable/observable parts.
///
/// Mathematics (Kalman 1963, "Mathematical description of linear dynamical systems", SIAM
/// J. Control): let R be the controllable subspace and N the unobservable subspace; both
/// are A-invariant, `range B ⊆ R` and `N ⊆ ker C`. With `x = T z`,
/// `T = [T_co, T_cō, T_c̄o, T_c̄ō]`, `span[T_co, T_cō] = R`, `span T_cō = R ∩ N` and
/// `span[T_cō, T_c̄ō] = N`, the new model is, in the order `[co, cō, c̄o, c̄ō]`,
///
/// ```text
/// T⁻¹AT = [A11  0   A13  0  ]   T⁻¹B = [B1]   CT = [C1  0  C3  0]
///         [A21 A22  A23 A24 ]          [B2]
///         [ 0   0   A33  0  ]          [ 0]
///         [ 0   0   A43 A44 ]          [ 0]
/// ```
///
/// (columns 1–2 map into R: zero rows 3–4; columns 2 and 4 map into N: zero rows 1 and 3;
/// B maps into R; C vanishes on N). `(A11, B1, C1, D)` is a minimal realisation; every
/// Markov parameter equals `C1 A11ᵏ B1`.
///
/// Algorithm: (1) the controllability staircase gives an orthonormal basis `V_c` of R and
/// `V_c̄` of R⊥; (2) the observability staircase of the controllable part `(A_c, C_c)` splits
/// `V_c` into `T_co` and an orthonormal basis `T_cō` of R ∩ N (a state of R is unobservable
/// exactly when its staircase coordinates are unobservable for `(A_c, C_c)`), so the rank
/// decisions agree with [`super::minimal_realization`]; (3) the observability staircase of
/// the full model gives an orthonormal basis `V_uo` of N; (4) `T_c̄ō` is the dominant left
/// singular subspace of `V_uo` with the `T_cō` components removed (the orthogonal complement
/// of R ∩ N in N); (5) `T_c̄o` is an orthonormal basis of (R + N)⊥, the part of R⊥ orthogonal
/// to the projection of `T_c̄ō` onto R⊥ (the trailing left singular vectors of that
/// projection). All four blocks have orthonormal columns, and `T_c̄o` is orthogonal to the
/// other three, so κ₂(T) depends only on the principal angles (Björck & Golub 1973,
/// "Numerical methods for computing angles between linear subspaces", Math. Comp.) between
/// `T_co` and `T_c̄ō`; `T` is orthogonal when either is empty. (6) `T⁻¹` from a one-sided
/// Jacobi SVD of T (Hestenes 1958). The structural zeros are then set exactly. Cost
/// O(n³ + n²(m + p)): three staircases, two SVDs of at most n×n, and the products.
///
/// Scaling: as in [`super::minimal_realization`], steps (1)–(6) run on the balanced system
/// matrix (module documentation, § Units): with the diagonal state scaling `S` and the
/// transformation `T̃` found there, each block of `S T̃` is orthonormalised by a QR
/// factorisation, `S T̃ = T R` with `R` block-diagonal, so `T⁻¹ = R T̃⁻¹ S⁻¹`: the blocks
/// of `T` are orthonormal bases of the same subspaces in the user's coordinates (T is
/// orthogonal for a minimal model), the block pattern is the same and the decisions do not
/// depend on the units of the states.
///
/// Tolerance: that of the staircases (module documentation), at the scale of the whole
/// (balanced) model, exactly as in [`super::minimal_realization`]: controllability against
/// `tol·‖[Ã B̃]‖_F`, both observability staircases against `tol·‖[Ã; C̃]‖_F` (default `tol`
/// = [`super::DEFAULT_RANK_TOLERANCE`] = √ε). See also `structure_residual`.
///
/// Errors: A not square; B, C or D of the wrong shape; a NaN or infinite entry; `tol`
/// negative or not finite; an SVD that does not converge; [`NumError::Singular`] if T is
/// numerically singular (σ_min ≤ n·ε·σ_max), which needs inconsistent rank decisions.
pub fn kalman_decomposition(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    c: &DMatrix<f64>,
    d: &DMatrix<f64>,
    tol: Option<f64>,
) -> NumResult<Kalman> {
    let (n, m, p) = check_abc(a, b, c)?;
    check_d(d, p, m)?;
    let sc = balance_system(a, b, c);
    let (a, b, c) = sc.apply(a, b, c);
    let (a, b, c) = (&a, &b, &c);
    // (1) controllable subspace R and its complement.
    let st = staircase_unchecked(a, b, c, relative_tolerance(tol)?, None)?;
    let nc = st.controllable;
    let vc = st.q.columns(0, nc).clone_owned();
    let vcb = st.q.columns(nc, n - nc).clone_owned();
    // (2) split R into co and R ∩ N.
    let ac = st.a.view((0, 0), (nc, nc)).clone_owned();
    let bc = st.b.rows(0, nc).clone_owned();
    let cc = st.c.columns(0, nc).clone_owned();
    let rel_o = relative_tolerance(tol)?;
    let scale_o = joint_frobenius(&[a, &c.transpose()]);
    let oc = observability_unchecked(&ac, &bc, &cc, rel_o, Some(scale_o))?;
    let n_co = oc.observable;
    let n_cuo = nc - n_co;
    let x_co = &vc * oc.q.columns(0, n_co);
    let x_cuo = &vc * oc.q.columns(n_co, n_cuo);
    // (3) unobservable subspace N.
    let ob = observability_unchecked(a, b, c, rel_o, Some(scale_o))?;
    let n_uo = n - ob.observable;
    let v_uo = ob.q.columns(ob.observable, n_uo).clone_owned();
    // (4) the complement of R ∩ N in N.
    let n_ucuo = n_uo.saturating_sub(n_cuo).min(n - nc);
    let w = &v_uo - &x_cuo * (x_cuo.transpose() * &v_uo);
    let x_ucuo = LeftFactor::new(&w)?
        .full(n)
        .columns(0, n_ucuo)
        .clone_owned();
    // (5) (R + N)⊥ inside R⊥: the left null space of the R⊥-coordinates of T_c̄ō.
    let g = vcb.transpose() * &x_ucuo;
    let h = LeftFactor::new(&g)?.full(n - nc);
    let n_uco = n - nc - n_ucuo;
    let x_uco = &vcb * h.columns(n_ucuo, n_uco);
    let sizes = KalmanSizes {
        controllable_observable: n_co,
        controllable_unobservable: n_cuo,
        uncontrollable_observable: n_uco,
        uncontrollable_unobservable: n_ucuo,
    };
    let mut t = DMatrix::zeros(n, n);
    let mut col = 0;
    for part in [&x_co, &x_cuo, &x_uco, &x_ucuo] {
        t.columns_mut(col, part.ncols()).copy_from(part);
        col += part.ncols();
    }
    // (6) the inverse and the condition number (balanced coordinates).
    let (t_inv, _) = inverse_by_svd(&t)?;
    let mut at = &t_inv * a * &t;
    let mut bt = &t_inv * b;
    let mut ct = c * &t;
    let total = joint_frobenius(&[&at, &bt, &ct]);
    let discarded = zero_structure(&mut at, &mut bt, &mut ct, sizes);
    let structure_residual = if total > 0.0 { discarded / total } else { 0.0 };
    // Back to the user's coordinates. Each block of S T̃ spans the user-coordinate subspace
    // of its part; orthonormalise it within the block: S T̃_k = Q_k R_k (QR), T = [Q_k] with
    // orthonormal blocks, T = S T̃ R⁻¹ and T⁻¹ = R T̃⁻¹ S⁻¹ with R = blockdiag(R_k) upper
    // triangular; the new model is R (·) R⁻¹ of the balanced one (same block pattern).
    let st = sc.state_matrix() * &t;
    let mut t_user = DMatrix::zeros(n, n);
    let mut r = DMatrix::zeros(n, n);
    let mut off = 0;
    for len in sizes.as_array() {
        if len > 0 {
            let qr = st.columns(off, len).clone_owned().qr();
            t_user.columns_mut(off, len).copy_from(&qr.q());
            r.view_mut((off, off), (len, len)).copy_from(&qr.r());
        }
        off += len;
    }
    let singular = || NumError::Singular {
        what: "a block of the Kalman transformation T".into(),
        rcond: 0.0,
    };
    let mut t_inv_user = &r * t_inv;
    for (j, &sj) in sc.state.iter().enumerate() {
        t_inv_user.column_mut(j).scale_mut(1.0 / sj);
    }
    // M R⁻¹ = (R⁻ᵀ Mᵀ)ᵀ.
    let right_inv = |m: &DMatrix<f64>| -> NumResult<DMatrix<f64>> {
        Ok(r.tr_solve_upper_triangular(&m.transpose())
            .ok_or_else(singular)?
            .transpose())
    };
    let at = right_inv(&(&r * at))?;
    let bt = sc.unweight_b(&(&r * bt));
    let ct = sc.unweight_c(&right_inv(&ct)?);
    let condition = condition_number(&t_user)?;
    let (t, t_inv) = (t_user, t_inv_user);
    Ok(Kalman {
        a: at,
        b: bt,
        c: ct,
        d: d.clone(),
        t,
        t_inv,
        sizes,
        condition,
        structure_residual,
    })
}

/// `T⁻¹` and κ₂(T) from the one-sided Jacobi SVD `T = U W`, `W Wᵀ = diag(σ²)`, so
/// `T⁻¹ = Wᵀ diag(σ⁻²) Uᵀ`; an error if σ_min ≤ n·ε·σ_max.
fn inverse_by_svd(t: &DMatrix<f64>) -> NumResult<(DMatrix<f64>, f64)> {
    let n = t.nrows();
    if n == 0 {
        return Ok((DMatrix::zeros(0, 0), 1.0));
    }
    let (s, u, w) = row_jacobi(t)?;
    let smax = s.first().copied().unwrap_or(0.0);
    let smin = s.last().copied().unwrap_or(0.0);
    if smin.is_nan() || smin <= n as f64 * f64::EPSILON * smax {
        return Err(NumError::Singular {
            what: "the Kalman transformation T".into(),
            rcond: if smax > 0.0 { smin / smax } else { 0.0 },
        });
    }
    let mut wt = w.transpose();
    for (j, &sj) in s.iter().enumerate() {
        wt.column_mut(j).scale_mut(1.0 / (sj * sj));
    }
    Ok((wt * u.transpose(), smax / smin))
}

/// κ₂(T) = σ_max/σ_min from the one-sided Jacobi singular values (1 for n = 0).
fn condition_number(t: &DMatrix<f64>) -> NumResult<f64> {
    if t.nrows() == 0 {
        return Ok(1.0);
    }
    let (s, _, _) = row_jacobi(t)?;
    let smax = s.first().copied().unwrap_or(0.0);
    let smin = s.last().copied().unwrap_or(0.0);
    Ok(if smin > 0.0 {
        smax / smin
    } else {
        f64::INFINITY
    })
}

/// Sets the structural zero blocks of the Kalman form exactly to zero; returns the
/// Frobenius norm of what was removed.
fn zero_structure(
    a: &mut DMatrix<f64>,
    b: &mut DMatrix<f64>,
    c: &mut DMatrix<f64>,
    sizes: KalmanSizes,
) -> f64 {
    let s = sizes.as_array();
    let off = [0, s[0], s[0] + s[1], s[0] + s[1] + s[2]];
    let mut sum = 0.0;
    let mut clear = |m: &mut DMatrix<f64>, r0: usize, c0: usize, rows: usize, cols: usize| {
        let mut v = m.view_mut((r0, c0), (rows, cols));
        sum += v.norm_squared();
        v.fill(0.0);
    };
    for &(i, j) in &[(0, 1), (0, 3), (2, 0), (2, 1), (2, 3), (3, 0), (3, 1)] {
        clear(a, off[i], off[j], s[i], s[j]);
    }
    let m = b.ncols();
    clear(b, off[2], 0, s[2] + s[3], m);
    let p = c.nrows();
    clear(c, 0, off[1], p, s[1]);
    clear(c, 0, off[3], p, s[3]);
    sum.sqrt()
}

#[cfg(test)]
mod tests {
    use super::super::fixtures::*;
    use super::*;
    use crate::assert_close;
    use crate::numeric::testing::Rng;

    /// The blocks of `m` (rows `rs`, columns `cs`) as a matrix.
    fn block(m: &DMatrix<f64>, rs: (usize, usize), cs: (usize, usize)) -> DMatrix<f64> {
        m.view((rs.0, cs.0), (rs.1, cs.1)).clone_owned()
    }

    /// Checks the pattern of `kalman_decomposition` (derived in its doc comment) on
    /// `T⁻¹AT`, `T⁻¹B`, `CT` recomputed from the returned T, relative to the model's size.
    fn check_pattern(a: &DMatrix<f64>, b: &DMatrix<f64>, c: &DMatrix<f64>, k: &Kalman, rel: f64) {
        let s = k.sizes.as_array();
        let off = [0, s[0], s[0] + s[1], s[0] + s[1] + s[2]];
        let at = &k.t_inv * a * &k.t;
        let bt = &k.t_inv * b;
        let ct = c * &k.t;
        let scale = 1.0 + joint_frobenius(&[&at, &bt, &ct]);
        for &(i, j) in &[(0, 1), (0, 3), (2, 0), (2, 1), (2, 3), (3, 0), (3, 1)] {
            let blk = block(&at, (off[i], s[i]), (off[j], s[j]));
            assert!(
                blk.norm() <= rel * scale,
                "A block ({i}, {j}): {:e}",
                blk.norm()
            );
            assert!(block(&k.a, (off[i], s[i]), (off[j], s[j]))
                .iter()
                .all(|&x| x == 0.0));
        }
        assert!(block(&bt, (off[2], s[2] + s[3]), (0, b.ncols())).norm() <= rel * scale);
        for j in [1, 3] {
            assert!(block(&ct, (0, c.nrows()), (off[j], s[j])).norm() <= rel * scale);
        }
        let n = a.nrows();
        assert_close!(
            &k.t * &k.t_inv,
            DMatrix::<f64>::identity(n, n),
            rel * k.condition,
            0.0
        );
        assert_close!(at, k.a, rel * scale, 0.0);
        assert!(k.structure_residual <= rel, "{:e}", k.structure_residual);
        // Columns of T have unit length (orthonormal blocks, by construction).
        for j in 0..n {
            assert_close!(k.t.column(j).norm(), 1.0, 1e-12, 0.0);
        }
    }

    #[test]
    fn planted_structure_is_recovered_behind_a_random_transform() {
        let mut rng = Rng::new(41);
        let cases: Vec<[usize; 4]> = vec![
            [0, 0, 0, 0],
            [1, 0, 0, 0],
            [0, 1, 0, 0],
            [0, 0, 1, 0],
            [0, 0, 0, 1],
            [1, 1, 0, 0],
            [0, 1, 0, 1],
            [1, 0, 1, 1],
            [1, 1, 1, 0],
            [3, 2, 3, 2],
            [2, 3, 2, 3],
            [10, 7, 8, 5],
        ];
        for sizes in cases {
            for (m, p) in [(1, 1), (2, 2), (3, 1)] {
                let n: usize = sizes.iter().sum();
                let (az, bz, cz) = planted_kalman(&mut rng, sizes, m, p, 1.0);
                let d = rng.matrix(p, m);
                let (t, ti) = well_conditioned(&mut rng, n);
                let (a, b, c) = hide(&az, &bz, &cz, &t, &ti);
                let k = kalman_decomposition(&a, &b, &c, &d, None).unwrap();
                // Planted sizes (by construction of planted_kalman).
                assert_eq!(k.sizes.as_array(), sizes, "m = {m}, p = {p}");
                check_pattern(&a, &b, &c, &k, 1e-10);
                // Similarity keeps the Markov parameters (common practice, no source).
                let tol = 1e-9 * (1.0 + bz.norm()) * (1.0 + cz.norm());
                assert_same_markov(
                    (&k.a, &k.b, &k.c, &k.d),
                    (&az, &bz, &cz, &d),
                    2 * n + 2,
                    tol,
                );
                // ... and so does the minimal part alone (Kalman 1963).
                let r = sizes[0];
                let (a11, b1, c1) = (
                    block(&k.a, (0, r), (0, r)),
                    k.b.rows(0, r).clone_owned(),
                    k.c.columns(0, r).clone_owned(),
                );
                assert_same_markov((&a11, &b1, &c1, &k.d), (&az, &bz, &cz, &d), 2 * n + 2, tol);
                assert!(k.condition.is_finite() && k.condition >= 1.0);
            }
        }
    }

    #[test]
    fn controllable_and_unobservable_subspaces_at_forty_five_degrees() {
        // A = −I (2×2), B = e₁, C = [1, 1]: R = span e₁, N = span(e₁ − e₂), R ∩ N = 0, so
        // sizes [1, 0, 0, 1] and T = [±e₁, ±(e₁ − e₂)/√2]. Its Gram matrix [[1, c], [c, 1]],
        // c = 1/√2, gives κ₂(T) = √((1 + c)/(1 − c)) = 1 + √2 (derived by hand).
        let a = -DMatrix::<f64>::identity(2, 2);
        let b = DMatrix::from_column_slice(2, 1, &[1.0, 0.0]);
        let c = DMatrix::from_row_slice(1, 2, &[1.0, 1.0]);
        let d = DMatrix::zeros(1, 1);
        let k = kalman_decomposition(&a, &b, &c, &d, None).unwrap();
        assert_eq!(k.sizes.as_array(), [1, 0, 0, 1]);
        assert_close!(k.condition, 1.0 + 2f64.sqrt(), 0.0, 1e-12);
        check_pattern(&a, &b, &c, &k, 1e-14);
    }

    #[test]
    fn minimal_and_trivial_models() {
        let mut rng = Rng::new(42);
        for n in [1usize, 2, 3, 10, 30] {
            let a = with_norm(rng.matrix(n, n), 1.0);
            let b = rng.matrix(n, 2);
            let c = rng.matrix(1, n);
            let d = DMatrix::zeros(1, 2);
            let k = kalman_decomposition(&a, &b, &c, &d, None).unwrap();
            // A random model is minimal (common practice); T is then orthogonal.
            assert_eq!(k.sizes.as_array(), [n, 0, 0, 0]);
            assert_close!(k.condition, 1.0, 0.0, 1e-12);
            check_pattern(&a, &b, &c, &k, 1e-12);
            // Nothing reaches or leaves a model with B = 0, C = 0 (definitions).
            let k = kalman_decomposition(&a, &(&b * 0.0), &(&c * 0.0), &d, None).unwrap();
            assert_eq!(k.sizes.as_array(), [0, 0, 0, n]);
        }
        let k = kalman_decomposition(
            &DMatrix::zeros(0, 0),
            &DMatrix::zeros(0, 1),
            &DMatrix::zeros(1, 0),
            &DMatrix::zeros(1, 1),
            None,
        )
        .unwrap();
        assert_eq!(
            (k.sizes, k.t.shape(), k.condition),
            (KalmanSizes::default(), (0, 0), 1.0)
        );
    }

    #[test]
    fn extreme_scales_and_degenerate_shapes_do_not_panic() {
        // Never panic on user input (house rule): huge, tiny, zero and rank-deficient data.
        let mut rng = Rng::new(43);
        for s in [1e-300, 1e-150, 1.0, 1e150, 1e300] {
            for (n, m, p) in [(1, 1, 1), (3, 1, 2), (5, 3, 0), (4, 0, 2), (6, 2, 2)] {
                let mut a = rng.matrix(n, n) * s;
                a.row_mut(0).fill(0.0);
                let b = rng.matrix(n, m) * s;
                let c = rng.matrix(p, n) * s;
                let d = DMatrix::zeros(p, m);
                let k = kalman_decomposition(&a, &b, &c, &d, None);
                if let Ok(k) = k {
                    assert_eq!(k.sizes.as_array().iter().sum::<usize>(), n);
                }
                let min = super::super::minimal_realization(&a, &b, &c, &d, None).unwrap();
                assert!(min.a.nrows() <= n);
                let _ = super::super::uncontrollable_modes(&a, &b, None);
                let _ = super::super::unobservable_modes(&a, &c, None);
                let _ = super::super::controllability_matrix(&a, &b).unwrap();
            }
        }
    }

    #[test]
    fn bad_input_is_an_error() {
        let a = DMatrix::<f64>::identity(2, 2);
        let b = DMatrix::zeros(2, 1);
        let c = DMatrix::zeros(1, 2);
        let e = kalman_decomposition(&a, &b, &c, &DMatrix::zeros(1, 2), None).unwrap_err();
        assert_eq!(e.to_string(), "D: expected 1×1, found 1×2");
        let e = kalman_decomposition(&a, &DMatrix::zeros(3, 1), &c, &DMatrix::zeros(1, 1), None)
            .unwrap_err();
        assert!(matches!(e, NumError::ShapeMismatch { .. }));
        let e = kalman_decomposition(&a, &b, &c, &DMatrix::zeros(1, 1), Some(-0.5)).unwrap_err();
        assert!(matches!(e, NumError::InvalidArgument { .. }));
    }
}
