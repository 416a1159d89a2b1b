//! Minimal realisation by two orthogonal staircase reductions.

use super::{
    balance_system, check_abc, check_d, joint_frobenius, observability_unchecked,
    relative_tolerance, staircase_unchecked, RankMargins,
};
use crate::numeric::error::NumResult;
use nalgebra::DMatrix;

/// A minimal realisation `(A_m, B_m, C_m, D)` of a model, with what was removed.
#[derive(Debug, Clone, PartialEq)]
pub struct Minimal {
    /// Minimal `A` (r×r).
    pub a: DMatrix<f64>,
    /// Minimal `B` (r×m).
    pub b: DMatrix<f64>,
    /// Minimal `C` (p×r).
    pub c: DMatrix<f64>,
    /// `D`, unchanged (p×m).
    pub d: DMatrix<f64>,
    /// States removed in all: `n − r`.
    pub removed: usize,
    /// States removed as uncontrollable: `n − nc`, nc the dimension of the controllable
    /// subspace (this includes uncontrollable states that are also unobservable).
    pub uncontrollable_removed: usize,
    /// States removed as unobservable from the controllable part: `nc − r`.
    pub unobservable_removed: usize,
    /// Rank figures of the controllability staircase of the full model.
    pub controllability: RankMargins,
    /// Rank figures of the observability staircase of the controllable part (scale
    /// `‖[A; C]‖_F` of the full model).
    pub observability: RankMargins,
}

/// A minimal realisation: the controllable and observable part of `(A, B, C, D)`.
///
/// Mathematics: a realisation is minimal iff it is controllable and observable (Kalman 1963,
/// "Mathematical description of linear dynamical systems", SIAM J. Control). Removing the
/// uncontrollable part and then the unobservable part of what is left keeps every Markov
/// parameter `D, CB, CAB, …`, hence the transfer function (continuous) or the impulse
/// response (discrete): the algebra is the same for both time domains.
///
/// Algorithm: the controllability staircase ([`super::controllability_staircase`]) of
/// `(A, B, C)`, keeping the leading nc×nc block `(A_c, B_c, C_c)`; then the observability
/// staircase ([`super::observability_staircase`]) of that, keeping its leading r×r block
/// (Van Dooren 1981, "The generalized eigenstructure problem in linear system theory", IEEE
/// Trans. Automatic Control; Varga 1981, "Numerically stable algorithm for standard
/// controllability form determination", Electronics Letters). Only orthogonal
/// transformations: the result is the exact minimal realisation of a model within a small
/// multiple of the rank thresholds of the input. The reduced state is the leading r
/// coordinates of `z = diag(Q₂, I)ᵀ Q₁ᵀ x`, for the orthogonal `Q₁` (n×n) and `Q₂` (nc×nc)
/// of the two staircases. Cost O(n³ + n²(m + p)).
///
/// Scaling: the system matrix is balanced first by power-of-two scalings of states, inputs
/// and outputs (module documentation, § Units), both staircases run on the balanced data,
/// and the result is brought back exactly: the reduced state is the leading r coordinates
/// of `z = diag(Q₂, I)ᵀ Q₁ᵀ S⁻¹ x` with `S` the diagonal state scaling, and the reduced
/// `B`, `C` carry the user's input and output units. So the decisions do not depend on the
/// units of the states.
///
/// Tolerance: relative, as in the module documentation, and always at the scale of the whole
/// (balanced) model — the first staircase decides against `tol·‖[Ã B̃]‖_F`, the second
/// against `tol·‖[Ã; C̃]‖_F` (default `tol` = [`super::DEFAULT_RANK_TOLERANCE`] = √ε for
/// both), not against the norm of the smaller controllable part, whose rounding errors come
/// from the whole of A. The returned [`RankMargins`] give the smallest kept and largest
/// dropped singular values of each, in the balanced scaling.
///
/// Errors: A not square; B, C or D of the wrong shape; a NaN or infinite entry; `tol`
/// negative or not finite; an SVD that does not converge.
pub fn minimal_realization(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    c: &DMatrix<f64>,
    d: &DMatrix<f64>,
    tol: Option<f64>,
) -> NumResult<Minimal> {
    let (n, m, p) = check_abc(a, b, c)?;
    check_d(d, p, m)?;
    let rel = relative_tolerance(tol)?;
    let sc = balance_system(a, b, c);
    let (a, b, c) = sc.apply(a, b, c);
    let st = staircase_unchecked(&a, &b, &c, rel, None)?;
    let nc = st.controllable;
    let ac = st.a.view((0, 0), (nc, nc)).clone_owned();
    let bc = st.b.rows(0, nc).clone_owned();
    let cc = st.c.columns(0, nc).clone_owned();
    // Judged at the scale of the (balanced) model: the controllable part inherits its
    // rounding errors from the whole of A.
    let scale = joint_frobenius(&[&a, &c.transpose()]);
    let ob = observability_unchecked(&ac, &bc, &cc, rel, Some(scale))?;
    let r = ob.observable;
    Ok(Minimal {
        a: ob.a.view((0, 0), (r, r)).clone_owned(),
        b: sc.unweight_b(&ob.b.rows(0, r).clone_owned()),
        c: sc.unweight_c(&ob.c.columns(0, r).clone_owned()),
        d: d.clone(),
        removed: n - r,
        uncontrollable_removed: n - nc,
        unobservable_removed: nc - r,
        controllability: st.margins,
        observability: ob.margins,
    })
}

#[cfg(test)]
mod tests {
    use super::super::fixtures::*;
    use super::*;
    use crate::assert_close;
    use crate::numeric::error::NumError;
    use crate::numeric::testing::Rng;

    /// Markov-parameter tolerance for a planted model with ‖A‖₂ ≤ 1 hidden by a transform
    /// of condition κ ≤ 10: errors of order k·n·ε·κ²·‖B‖·‖C‖ (first-order perturbation of
    /// C Aᵏ B, common practice, no source); 1e-9·‖B‖_F·‖C‖_F leaves a wide margin.
    fn markov_tol(b: &DMatrix<f64>, c: &DMatrix<f64>) -> f64 {
        1e-9 * (1.0 + b.norm()) * (1.0 + c.norm())
    }

    #[test]
    fn planted_six_states_two_uncontrollable_one_unobservable() {
        let mut rng = Rng::new(31);
        // Kalman parts [co, cō, c̄o, c̄ō] = [3, 1, 2, 0]: 2 uncontrollable, 1 unobservable
        // (by construction).
        let (az, bz, cz) = planted_kalman(&mut rng, [3, 1, 2, 0], 1, 1, 1.0);
        let d = DMatrix::from_element(1, 1, 0.5);
        let q = random_orthogonal(&mut rng, 6);
        let (t, ti) = well_conditioned(&mut rng, 6);
        for (a, b, c) in [
            hide_orthogonal(&az, &bz, &cz, &q),
            hide(&az, &bz, &cz, &t, &ti),
        ] {
            let min = minimal_realization(&a, &b, &c, &d, None).unwrap();
            assert_eq!(
                (
                    min.removed,
                    min.uncontrollable_removed,
                    min.unobservable_removed
                ),
                (3, 2, 1)
            );
            assert_eq!(min.a.shape(), (3, 3));
            assert_same_markov(
                (&min.a, &min.b, &min.c, &min.d),
                (&az, &bz, &cz, &d),
                14,
                markov_tol(&bz, &cz),
            );
            // The kept poles are those of the planted co block (construction).
            assert_same_spectrum(
                &eig(&min.a),
                &eig(&az.view((0, 0), (3, 3)).clone_owned()),
                1e-9,
            );
        }
    }

    #[test]
    fn planted_parts_at_all_sizes_mimo() {
        let mut rng = Rng::new(32);
        for (n, sizes) in [
            (1, [1, 0, 0, 0]),
            (1, [0, 0, 0, 1]),
            (2, [1, 1, 0, 0]),
            (3, [1, 0, 1, 1]),
            (10, [4, 2, 3, 1]),
            (30, [12, 6, 7, 5]),
        ] {
            for (m, p) in [(1, 1), (2, 3), (3, 2)] {
                let (az, bz, cz) = planted_kalman(&mut rng, sizes, m, p, 1.0);
                let d = rng.matrix(p, m);
                let (t, ti) = well_conditioned(&mut rng, n);
                let (a, b, c) = hide(&az, &bz, &cz, &t, &ti);
                let min = minimal_realization(&a, &b, &c, &d, None).unwrap();
                let label = format!("n = {n}, sizes {sizes:?}, m = {m}, p = {p}");
                assert_eq!(min.a.nrows(), sizes[0], "{label}");
                assert_eq!(min.uncontrollable_removed, sizes[2] + sizes[3], "{label}");
                assert_eq!(min.unobservable_removed, sizes[1], "{label}");
                assert_same_markov(
                    (&min.a, &min.b, &min.c, &min.d),
                    (&az, &bz, &cz, &d),
                    2 * n + 2,
                    markov_tol(&bz, &cz),
                );
            }
        }
    }

    #[test]
    fn minimal_model_loses_nothing() {
        let mut rng = Rng::new(33);
        for n in [1usize, 2, 3, 10, 30] {
            let a = with_norm(rng.matrix(n, n), 1.0);
            let b = rng.matrix(n, 2);
            let c = rng.matrix(2, n);
            let d = DMatrix::zeros(2, 2);
            let min = minimal_realization(&a, &b, &c, &d, None).unwrap();
            // A random model is minimal (common practice, no source).
            assert_eq!(min.removed, 0, "n = {n}");
            assert!(min.controllability.smallest_kept > 10.0 * min.controllability.threshold);
            assert_same_markov(
                (&min.a, &min.b, &min.c, &min.d),
                (&a, &b, &c, &d),
                2 * n + 2,
                markov_tol(&b, &c),
            );
            // Orthogonal transformations keep the Frobenius norm (common practice) of the
            // balanced A (a power-of-two diagonal similarity of A).
            let (ab, _, _) = balance_system(&a, &b, &c).apply(&a, &b, &c);
            assert_close!(min.a.norm(), ab.norm(), 0.0, 1e-12);
        }
    }

    #[test]
    fn no_states_and_no_signals() {
        let d = DMatrix::from_element(1, 2, 3.0);
        let min = minimal_realization(
            &DMatrix::zeros(0, 0),
            &DMatrix::zeros(0, 2),
            &DMatrix::zeros(1, 0),
            &d,
            None,
        )
        .unwrap();
        assert_eq!(
            (min.a.shape(), min.b.shape(), min.c.shape()),
            ((0, 0), (0, 2), (1, 0))
        );
        assert_eq!(min.d, d);
        assert_eq!(min.removed, 0);
        // No inputs: nothing is controllable, everything goes (Kalman 1963).
        let min = minimal_realization(
            &DMatrix::<f64>::identity(3, 3),
            &DMatrix::zeros(3, 0),
            &DMatrix::zeros(2, 3),
            &DMatrix::zeros(2, 0),
            None,
        )
        .unwrap();
        assert_eq!((min.removed, min.uncontrollable_removed), (3, 3));
        // No outputs: the controllable part is unobservable.
        let min = minimal_realization(
            &DMatrix::<f64>::identity(3, 3),
            &DMatrix::from_element(3, 1, 1.0),
            &DMatrix::zeros(0, 3),
            &DMatrix::zeros(0, 1),
            None,
        )
        .unwrap();
        assert_eq!(
            (
                min.removed,
                min.uncontrollable_removed,
                min.unobservable_removed
            ),
            (3, 2, 1)
        );
    }

    #[test]
    fn discrete_time_model_keeps_its_impulse_and_input_response() {
        // x[k+1] = A x[k] + B u[k]: the same reduction; compare a simulated response to a
        // random input sequence (the identity y = Σ Markov·u, common practice, no source).
        let mut rng = Rng::new(34);
        let (az, bz, cz) = planted_kalman(&mut rng, [4, 2, 2, 1], 2, 2, 0.9);
        let d = rng.matrix(2, 2);
        let (t, ti) = well_conditioned(&mut rng, 9);
        let (a, b, c) = hide(&az, &bz, &cz, &t, &ti);
        let min = minimal_realization(&a, &b, &c, &d, None).unwrap();
        assert_eq!(min.a.nrows(), 4);
        assert_same_markov(
            (&min.a, &min.b, &min.c, &min.d),
            (&az, &bz, &cz, &d),
            40,
            markov_tol(&bz, &cz),
        );
        let mut x = DMatrix::zeros(9, 1);
        let mut z = DMatrix::zeros(4, 1);
        for _ in 0..60 {
            let u = rng.matrix(2, 1);
            let y = &c * &x + &d * &u;
            let yr = &min.c * &z + &min.d * &u;
            assert_close!(y, yr, 1e-9, 0.0);
            x = &a * x + &b * &u;
            z = &min.a * z + &min.b * &u;
        }
    }

    #[test]
    fn bad_input_is_an_error() {
        let a = DMatrix::<f64>::identity(2, 2);
        let b = DMatrix::zeros(2, 1);
        let c = DMatrix::zeros(1, 2);
        let e = minimal_realization(&a, &b, &c, &DMatrix::zeros(2, 2), None).unwrap_err();
        assert_eq!(e.to_string(), "D: expected 1×1, found 2×2");
        let mut d = DMatrix::zeros(1, 1);
        d[(0, 0)] = f64::NAN;
        assert!(matches!(
            minimal_realization(&a, &b, &c, &d, None).unwrap_err(),
            NumError::NotFinite { .. }
        ));
        assert!(matches!(
            minimal_realization(&a, &b, &c, &DMatrix::zeros(1, 1), Some(f64::NAN)).unwrap_err(),
            NumError::InvalidArgument { .. }
        ));
    }
}
