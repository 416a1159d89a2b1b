//! Property tests over random stable models and well-conditioned transforms (proptest):
//! every transform keeps the Markov parameters and the eigenvalues (a fact of the trade:
//! a similarity transformation leaves the input–output behaviour unchanged);
//! `equivalence(sys, transformed)` holds and `find_transform` recovers T; a slightly
//! perturbed model is not equivalent.

use nalgebra::DMatrix;
use proptest::prelude::*;
use statebook::numeric::linalg::eigen::eigenvalues;
use statebook::numeric::lti::equivalence::{equivalence, find_transform};
use statebook::numeric::lti::system::StateSpace;
use statebook::numeric::lti::{balance, modal, realize, transform};

fn entries(n: usize) -> impl Strategy<Value = Vec<f64>> {
    proptest::collection::vec(-1.0f64..1.0, n)
}

/// A random stable model of order 1..=6 with 1–2 inputs and outputs, and a
/// well-conditioned T = 2I + 0.5·R.
fn case() -> impl Strategy<Value = (StateSpace, DMatrix<f64>)> {
    (1usize..=6, 1usize..=2, 1usize..=2).prop_flat_map(|(n, m, p)| {
        (
            entries(n * n),
            entries(n * m),
            entries(p * n),
            entries(p * m),
            entries(n * n),
        )
            .prop_map(move |(a, b, c, d, t)| {
                let a = DMatrix::from_vec(n, n, a) - DMatrix::identity(n, n) * (1.0 + n as f64);
                let sys = StateSpace::new(
                    a,
                    DMatrix::from_vec(n, m, b) + DMatrix::from_element(n, m, 0.3),
                    DMatrix::from_vec(p, n, c) + DMatrix::from_element(p, n, 0.3),
                    DMatrix::from_vec(p, m, d),
                    0.0,
                )
                .expect("valid");
                let t = DMatrix::identity(n, n) * 2.0 + DMatrix::from_vec(n, n, t) * 0.5;
                (sys, t)
            })
    })
}

fn same_behaviour(a: &StateSpace, b: &StateSpace) -> Result<(), TestCaseError> {
    let k = a.order() + b.order() + 1;
    for (p, q) in a
        .markov_parameters(k)
        .iter()
        .zip(b.markov_parameters(k).iter())
    {
        let scale = 1.0 + p.norm();
        prop_assert!(
            (p - q).norm() <= 1e-7 * scale.powi(2),
            "Markov parameters differ"
        );
    }
    Ok(())
}

fn same_spectrum(a: &DMatrix<f64>, b: &DMatrix<f64>) -> Result<(), TestCaseError> {
    let (ea, eb) = (eigenvalues(a).expect("eig"), eigenvalues(b).expect("eig"));
    prop_assert_eq!(ea.len(), eb.len());
    for z in &ea {
        let d = eb
            .iter()
            .map(|w| (w - z).norm())
            .fold(f64::INFINITY, f64::min);
        prop_assert!(
            d <= 1e-7 * (1.0 + z.norm()),
            "eigenvalue {} moved by {:e}",
            z,
            d
        );
    }
    Ok(())
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 48, .. ProptestConfig::default() })]

    #[test]
    fn transforms_keep_behaviour_and_spectrum((sys, t) in case()) {
        let moved = transform::transform_state(&sys, &t).unwrap().system;
        same_behaviour(&sys, &moved)?;
        same_spectrum(&sys.a, &moved.a)?;
        let m = modal::modal_realization(&sys).unwrap();
        same_behaviour(&sys, &m.form.system)?;
        same_spectrum(&sys.a, &m.form.system.a)?;
        if let Ok(b) = balance::balanced_realization(&sys.a, &sys.b, &sys.c, &sys.d, 0.0) {
            let bs = StateSpace::new(b.a, b.b, b.c, b.d, 0.0).unwrap();
            same_behaviour(&sys, &bs)?;
        }
        if sys.inputs() == 1 && sys.outputs() == 1 {
            if let Ok(c) = realize::controllable_companion(&sys).map(|t| t.system) {
                same_behaviour(&sys, &c)?;
            }
            if let Ok(o) = realize::observable_companion(&sys).map(|t| t.system) {
                same_behaviour(&sys, &o)?;
            }
        }
    }

    #[test]
    fn equivalence_holds_and_transform_is_recovered((sys, t) in case()) {
        let moved = transform::transform_state(&sys, &t).unwrap().system;
        let e = equivalence(&sys, &moved).unwrap();
        prop_assert!(e.equivalent, "{}", e.reason);
        if let Ok(found) = find_transform(&sys, &moved) {
            prop_assert!((&found - &t).norm() <= 1e-5 * t.norm(), "T not recovered");
        }
    }

    #[test]
    fn perturbed_model_is_not_equivalent((sys, _t) in case()) {
        let mut other = sys.clone();
        other.c[(0, 0)] += 1e-3 * (1.0 + sys.c[(0, 0)].abs());
        let e = equivalence(&sys, &other).unwrap();
        prop_assert!(!e.equivalent, "{}", e.reason);
    }
}
