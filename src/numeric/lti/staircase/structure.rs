//! Structural tests: controllability, observability, their modes, and the (display-only)
//! controllability and observability matrices.

use super::{
    balance_system, check_abc, observability_unchecked, relative_tolerance, staircase_unchecked,
};
use crate::numeric::error::{NumError, NumResult};
use crate::numeric::{check, order};
use nalgebra::{Complex, DMatrix};

/// Largest number of entries [`controllability_matrix`] and [`observability_matrix`] build.
pub const MAX_KRYLOV_ENTRIES: usize = 1 << 25;

/// Whether `(A, B)` is controllable: the controllable subspace of the orthogonal
/// controllability staircase ([`super::controllability_staircase`]) is the whole state space.
///
/// Mathematics: `(A, B)` is controllable iff rank `[B, AB, …, Aⁿ⁻¹B] = n` (Kalman 1963,
/// "Mathematical description of linear dynamical systems", SIAM J. Control), decided here by
/// the staircase, never from that matrix. Cost O(n³ + n²m). A model with no states is
/// controllable.
///
/// Tolerance: relative to `‖[Ã B̃]‖_F` of the balanced pair (module documentation, § Units:
/// the decision does not depend on the units of the states or inputs), default `√ε`.
///
/// Errors: A not square; B without n rows; a NaN or infinite entry; a bad `tol`.
pub fn is_controllable(a: &DMatrix<f64>, b: &DMatrix<f64>, tol: Option<f64>) -> NumResult<bool> {
    let n = a.nrows();
    let c = DMatrix::zeros(0, a.ncols());
    check_abc(a, b, &c)?;
    let rel = relative_tolerance(tol)?;
    let (a, b, c) = balance_system(a, b, &c).apply(a, b, &c);
    Ok(staircase_unchecked(&a, &b, &c, rel, None)?.controllable == n)
}

/// Whether `(A, C)` is observable: the observable part of the observability staircase
/// ([`super::observability_staircase`]) is the whole state space.
///
/// Mathematics: by duality, `(A, C)` is observable iff `(Aᵀ, Cᵀ)` is controllable (Kalman
/// 1963). Cost O(n³ + n²p). A model with no states is observable.
///
/// Tolerance: relative to `‖[Ã; C̃]‖_F` of the balanced pair (module documentation,
/// § Units), default `√ε`.
///
/// Errors: A not square; C without n columns; a NaN or infinite entry; a bad `tol`.
pub fn is_observable(a: &DMatrix<f64>, c: &DMatrix<f64>, tol: Option<f64>) -> NumResult<bool> {
    let n = a.nrows();
    let b = DMatrix::zeros(a.ncols(), 0);
    check_abc(a, &b, c)?;
    let rel = relative_tolerance(tol)?;
    let (a, b, c) = balance_system(a, &b, c).apply(a, &b, c);
    Ok(observability_unchecked(&a, &b, &c, rel, None)?.observable == n)
}

/// The uncontrollable modes of `(A, B)`: the eigenvalues λ with rank `[A − λI, B] < n`,
/// sorted by [`crate::numeric::order`].
///
/// Mathematics: by the eigenvalue (PBH) test (Hautus 1969, "Controllability and
/// observability conditions of linear autonomous systems", Proc. Koninklijke Nederlandse
/// Akademie van Wetenschappen) these are exactly the eigenvalues of the uncontrollable block
/// `A_uc` of the controllability staircase, counted with multiplicity. Algorithm: the
/// staircase, then the eigenvalues of `A_uc` (balanced by Parlett & Reinsch 1969, then the
/// real Schur form). Cost O(n³). Empty when `(A, B)` is controllable.
///
/// Tolerance: that of the staircase on the balanced pair (module documentation, § Units).
/// The eigenvalues of `A_uc` carry the usual eigenvalue errors (ε·‖Ã‖ times their condition
/// numbers, Ã the balanced A).
///
/// Errors: as [`is_controllable`]; a Schur iteration that does not converge.
pub fn uncontrollable_modes(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    tol: Option<f64>,
) -> NumResult<Vec<Complex<f64>>> {
    let n = a.nrows();
    let c = DMatrix::zeros(0, a.ncols());
    check_abc(a, b, &c)?;
    let rel = relative_tolerance(tol)?;
    let (a, b, c) = balance_system(a, b, &c).apply(a, b, &c);
    let st = staircase_unchecked(&a, &b, &c, rel, None)?;
    let nc = st.controllable;
    sorted_eigenvalues(&st.a.view((nc, nc), (n - nc, n - nc)).clone_owned())
}

/// The unobservable modes of `(A, C)`: the eigenvalues λ with rank `[A − λI; C] < n`, sorted
/// by [`crate::numeric::order`].
///
/// Mathematics and algorithm: the dual of [`uncontrollable_modes`] — the eigenvalues of the
/// unobservable block `A_uo` of the observability staircase (Hautus 1969). Cost O(n³). Empty
/// when `(A, C)` is observable.
///
/// Tolerance: that of the observability staircase on the balanced pair.
///
/// Errors: as [`is_observable`]; a Schur iteration that does not converge.
pub fn unobservable_modes(
    a: &DMatrix<f64>,
    c: &DMatrix<f64>,
    tol: Option<f64>,
) -> NumResult<Vec<Complex<f64>>> {
    let n = a.nrows();
    let b = DMatrix::zeros(a.ncols(), 0);
    check_abc(a, &b, c)?;
    let rel = relative_tolerance(tol)?;
    let (a, b, c) = balance_system(a, &b, c).apply(a, &b, c);
    let st = observability_unchecked(&a, &b, &c, rel, None)?;
    let no = st.observable;
    sorted_eigenvalues(&st.a.view((no, no), (n - no, n - no)).clone_owned())
}

/// The controllability matrix `[B, AB, A²B, …, Aⁿ⁻¹B]` (n × n·m).
///
/// For display and teaching only. Its columns become nearly parallel as the powers grow, so
/// its computed rank is unreliable beyond small n (Paige 1981, "Properties of numerical
/// algorithms related to computing controllability", IEEE Trans. Automatic Control); every
/// decision in this crate uses the staircase instead ([`is_controllable`]). Algorithm: each
/// block is A times the previous one; cost O(n³m). Entries may overflow to infinity for
/// large ‖A‖ and n; they are returned as computed.
///
/// Errors: A not square; B without n rows; a NaN or infinite entry; more than
/// [`MAX_KRYLOV_ENTRIES`] entries.
pub fn controllability_matrix(a: &DMatrix<f64>, b: &DMatrix<f64>) -> NumResult<DMatrix<f64>> {
    let n = check::finite_square("A", a)?;
    check::rows("B", b, n)?;
    check::finite("B", b)?;
    let m = b.ncols();
    let cols = n
        .checked_mul(m)
        .filter(|&k| n.checked_mul(k).is_some_and(|e| e <= MAX_KRYLOV_ENTRIES));
    let Some(cols) = cols else {
        return Err(NumError::TooLarge {
            what: "controllability matrix".into(),
            limit: MAX_KRYLOV_ENTRIES,
        });
    };
    let mut out = DMatrix::zeros(n, cols);
    let mut block = b.clone();
    for k in 0..n {
        out.view_mut((0, k * m), (n, m)).copy_from(&block);
        if k + 1 < n {
            block = a * &block;
        }
    }
    Ok(out)
}

/// The observability matrix `[C; CA; CA²; …; CAⁿ⁻¹]` (n·p × n).
///
/// For display and teaching only, for the reasons given at [`controllability_matrix`]
/// (its dual); decisions use [`is_observable`]. Cost O(n³p).
///
/// Errors: A not square; C without n columns; a NaN or infinite entry; more than
/// [`MAX_KRYLOV_ENTRIES`] entries.
pub fn observability_matrix(a: &DMatrix<f64>, c: &DMatrix<f64>) -> NumResult<DMatrix<f64>> {
    let n = check::finite_square("A", a)?;
    check::cols("C", c, n)?;
    check::finite("C", c)?;
    Ok(controllability_matrix(&a.transpose(), &c.transpose())
        .map_err(|e| match e {
            NumError::TooLarge { limit, .. } => NumError::TooLarge {
                what: "observability matrix".into(),
                limit,
            },
            other => other,
        })?
        .transpose())
}

/// Eigenvalues of a square matrix, sorted by [`order::sort_eigenvalues`]: Parlett–Reinsch
/// balancing (Parlett & Reinsch 1969, "Balancing a matrix for calculation of eigenvalues and
/// eigenvectors", Numer. Math.) of the matrix scaled to unit largest entry, then the
/// crate's one real Schur path ([`crate::numeric::linalg::dense::real_schur`]; nalgebra's
/// iteration stalls on cyclic matrices), scaled back. Empty for 0×0.
pub(crate) fn sorted_eigenvalues(m: &DMatrix<f64>) -> NumResult<Vec<Complex<f64>>> {
    let n = m.nrows();
    if n == 0 {
        return Ok(Vec::new());
    }
    // Scaled to max |mᵢⱼ| = 1 first (an exact power of two): balancing squares row and
    // column norms and would overflow on entries near 1e±300.
    let amax = m.amax();
    if amax == 0.0 {
        return Ok(vec![Complex::new(0.0, 0.0); n]);
    }
    let scale = 2f64.powi(amax.log2().floor() as i32);
    let work = m / scale;
    let mut values: Vec<Complex<f64>> =
        crate::numeric::linalg::dense::schur_eigenvalues(&work, true)?
            .iter()
            .map(|z| z * scale)
            .collect();
    order::sort_eigenvalues(&mut values);
    Ok(values)
}

#[cfg(test)]
mod tests {
    use super::super::fixtures::*;
    use super::*;
    use crate::assert_close;
    use crate::numeric::testing::Rng;

    #[test]
    fn pbh_modes_of_diagonal_models() {
        // A = diag(−1, −2, −3), B = [1; 1; 0]: rank[A + 3I, B] = 2 < 3, so −3 is the one
        // uncontrollable mode (Hautus 1969); hidden by a random orthogonal Q.
        let mut rng = Rng::new(21);
        let a = DMatrix::from_diagonal(&nalgebra::DVector::from_vec(vec![-1.0, -2.0, -3.0]));
        let b = DMatrix::from_column_slice(3, 1, &[1.0, 1.0, 0.0]);
        let c = DMatrix::from_row_slice(1, 3, &[0.0, 1.0, 1.0]);
        let q = random_orthogonal(&mut rng, 3);
        let (ah, bh, ch) = hide_orthogonal(&a, &b, &c, &q);
        assert!(!is_controllable(&ah, &bh, None).unwrap());
        assert_same_spectrum(
            &uncontrollable_modes(&ah, &bh, None).unwrap(),
            &[(-3.0).into()],
            1e-12,
        );
        // C = [0, 1, 1] does not see the first state: −1 unobservable (dual test).
        assert!(!is_observable(&ah, &ch, None).unwrap());
        assert_same_spectrum(
            &unobservable_modes(&ah, &ch, None).unwrap(),
            &[(-1.0).into()],
            1e-12,
        );
    }

    #[test]
    fn uncontrollable_oscillation_is_a_sorted_conjugate_pair() {
        // A = blockdiag([[0, 1], [−1, 0]], −2), B = e₃: the rotation block (eigenvalues ±j)
        // is not reached (PBH, Hautus 1969). Sorted −j before +j (order.rs convention).
        let mut a = DMatrix::zeros(3, 3);
        a[(0, 1)] = 1.0;
        a[(1, 0)] = -1.0;
        a[(2, 2)] = -2.0;
        let b = DMatrix::from_column_slice(3, 1, &[0.0, 0.0, 1.0]);
        let modes = uncontrollable_modes(&a, &b, None).unwrap();
        assert_eq!(modes.len(), 2);
        assert_close!(modes[0].im, -1.0, 1e-14, 0.0);
        assert_close!(modes[1].im, 1.0, 1e-14, 0.0);
        assert_close!(modes[0].re, 0.0, 1e-14, 0.0);
        let modes = unobservable_modes(&a, &b.transpose(), None).unwrap();
        assert_eq!(modes.len(), 2);
    }

    #[test]
    fn planted_modes_at_all_sizes() {
        let mut rng = Rng::new(22);
        for n in [0usize, 1, 2, 3, 10, 30] {
            let nc = n / 2;
            let (az, bz, cz) = planted_controllable(&mut rng, n, nc, 1, 1);
            let (t, ti) = well_conditioned(&mut rng, n);
            let (a, b, _) = hide(&az, &bz, &cz, &t, &ti);
            // Planted: the eigenvalues of the zero-coupled trailing block (construction).
            let want = eig(&az.view((nc, nc), (n - nc, n - nc)).clone_owned());
            let got = uncontrollable_modes(&a, &b, None).unwrap();
            assert_same_spectrum(&got, &want, 1e-7);
            assert_eq!(is_controllable(&a, &b, None).unwrap(), nc == n);
            // Dual: (Aᵀ, Bᵀ) has the same modes unobservable.
            let got = unobservable_modes(&a.transpose(), &b.transpose(), None).unwrap();
            assert_same_spectrum(&got, &want, 1e-7);
        }
    }

    #[test]
    fn staircase_succeeds_where_the_controllability_matrix_fails() {
        // A = diag(1, …, 30), B = ones: distinct eigenvalues, each mode excited, hence
        // controllable (PBH, Hautus 1969). The Krylov matrix is a scaled Vandermonde matrix
        // of the nodes 1..30, whose computed rank falls far short of 30 (Paige 1981).
        let n = 30;
        let a = DMatrix::from_diagonal(&nalgebra::DVector::from_fn(n, |i, _| (i + 1) as f64));
        let b = DMatrix::from_element(n, 1, 1.0);
        assert!(is_controllable(&a, &b, None).unwrap());
        assert!(uncontrollable_modes(&a, &b, None).unwrap().is_empty());
        let k = controllability_matrix(&a, &b).unwrap();
        let s = super::super::factor::LeftFactor::new(&k).unwrap().sigma;
        let rank = s
            .iter()
            .filter(|&&x| x > 30.0 * f64::EPSILON * s[0])
            .count();
        assert!(rank < n, "numerical rank {rank}");
    }

    #[test]
    fn units_of_a_state_do_not_decide_controllability() {
        // A = diag(−1, −2), B = [1; δ]: for δ ≠ 0 the scaling x₂ = δ·z₂ (a similarity) gives
        // B = [1; 1] with distinct eigenvalues, controllable by the PBH test (Hautus 1969)
        // whatever δ is; δ = 0 leaves the mode −2 uncontrollable.
        let a = DMatrix::from_row_slice(2, 2, &[-1.0, 0.0, 0.0, -2.0]);
        for d in [1e-12, 1e-6, 1.0, 1e6, 1e12] {
            let b = DMatrix::from_column_slice(2, 1, &[1.0, d]);
            assert!(is_controllable(&a, &b, None).unwrap(), "δ = {d}");
            assert!(uncontrollable_modes(&a, &b, None).unwrap().is_empty());
            assert!(is_observable(&a, &b.transpose(), None).unwrap(), "δ = {d}");
        }
        let b = DMatrix::from_column_slice(2, 1, &[1.0, 0.0]);
        assert!(!is_controllable(&a, &b, None).unwrap());
        assert_eq!(
            uncontrollable_modes(&a, &b, None).unwrap(),
            vec![Complex::new(-2.0, 0.0)]
        );
    }

    #[test]
    fn krylov_matrices_by_hand() {
        // Double integrator A = [[0, 1], [0, 0]], B = [0; 1]: AB = [1; 0], so
        // [B, AB] = [[0, 1], [1, 0]]; C = [1, 0]: CA = [0, 1], [C; CA] = I (by hand).
        let a = DMatrix::from_row_slice(2, 2, &[0.0, 1.0, 0.0, 0.0]);
        let b = DMatrix::from_column_slice(2, 1, &[0.0, 1.0]);
        let c = DMatrix::from_row_slice(1, 2, &[1.0, 0.0]);
        assert_eq!(
            controllability_matrix(&a, &b).unwrap(),
            DMatrix::from_row_slice(2, 2, &[0.0, 1.0, 1.0, 0.0])
        );
        assert_eq!(
            observability_matrix(&a, &c).unwrap(),
            DMatrix::<f64>::identity(2, 2)
        );
        assert!(is_controllable(&a, &b, None).unwrap());
        assert!(is_observable(&a, &c, None).unwrap());
        // Shapes at the edges.
        assert_eq!(
            controllability_matrix(&DMatrix::zeros(0, 0), &DMatrix::zeros(0, 2))
                .unwrap()
                .shape(),
            (0, 0)
        );
        assert_eq!(
            controllability_matrix(&a, &DMatrix::zeros(2, 0))
                .unwrap()
                .shape(),
            (2, 0)
        );
        assert_eq!(
            observability_matrix(&a, &DMatrix::zeros(3, 2))
                .unwrap()
                .shape(),
            (6, 2)
        );
        assert!(is_controllable(&DMatrix::zeros(0, 0), &DMatrix::zeros(0, 1), None).unwrap());
        assert!(is_observable(&DMatrix::zeros(0, 0), &DMatrix::zeros(1, 0), None).unwrap());
        assert!(!is_controllable(&a, &DMatrix::zeros(2, 0), None).unwrap());
    }

    #[test]
    fn krylov_matrix_transforms_with_the_state() {
        // Kalman 1963: with x = T z, [T⁻¹B, T⁻¹AT·T⁻¹B, …] = T⁻¹[B, AB, …].
        let mut rng = Rng::new(23);
        for n in [1usize, 2, 3, 10] {
            let a = with_norm(rng.matrix(n, n), 1.0);
            let b = rng.matrix(n, 2);
            let (t, ti) = well_conditioned(&mut rng, n);
            let k = controllability_matrix(&a, &b).unwrap();
            let kz = controllability_matrix(&(&ti * &a * &t), &(&ti * &b)).unwrap();
            assert_close!(kz, &ti * k, 1e-12, 0.0);
        }
    }

    #[test]
    fn bad_input_is_an_error() {
        let a = DMatrix::<f64>::identity(2, 2);
        let e = is_controllable(&a, &DMatrix::zeros(1, 1), None).unwrap_err();
        assert!(matches!(e, NumError::ShapeMismatch { .. }));
        let e = is_observable(&a, &DMatrix::zeros(1, 3), None).unwrap_err();
        assert!(matches!(e, NumError::ShapeMismatch { .. }));
        let e =
            uncontrollable_modes(&DMatrix::zeros(2, 1), &DMatrix::zeros(2, 1), None).unwrap_err();
        assert!(matches!(e, NumError::NotSquare { .. }));
        let mut bad = DMatrix::zeros(2, 1);
        bad[(0, 0)] = f64::INFINITY;
        assert!(matches!(
            controllability_matrix(&a, &bad).unwrap_err(),
            NumError::NotFinite { .. }
        ));
        assert!(matches!(
            unobservable_modes(&a, &DMatrix::zeros(1, 2), Some(-1.0)).unwrap_err(),
            NumError::InvalidArgument { .. }
        ));
        // 400 states and 400 inputs would need 6.4e7 entries: refused before allocating.
        let big = DMatrix::zeros(400, 400);
        assert!(matches!(
            controllability_matrix(&big, &big).unwrap_err(),
            NumError::TooLarge { .. }
        ));
        assert!(matches!(
            observability_matrix(&big, &big).unwrap_err(),
            NumError::TooLarge { .. }
        ));
    }
}
