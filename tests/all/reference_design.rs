//! Riccati solvers against the scipy fixtures in `tests/reference/freq.json` (cases
//! `riccati_*`; schema in `tests/reference/README.md`). Expected values are from
//! `scipy.linalg.solve_continuous_are` / `solve_discrete_are`, checked in the fixture
//! against an mpmath invariant-subspace solution; tolerances are the fixture's own.

use crate::common;

use common::fixtures::{self, Tolerance};
use nalgebra::Complex;
use statebook::numeric::design::riccati::{solve_riccati, solve_riccati_discrete, Riccati};

fn check_case(name: &str, discrete: bool) {
    let fx = fixtures::load("freq");
    let case = fixtures::case(&fx, name);
    let inputs = &case["inputs"];
    let a = fixtures::matrix(&inputs["A"]);
    let b = fixtures::matrix(&inputs["B"]);
    let q = fixtures::matrix(&inputs["Q"]);
    let r = fixtures::matrix(&inputs["R"]);
    let sol: Riccati = if discrete {
        solve_riccati_discrete(&a, &b, &q, &r)
    } else {
        solve_riccati(&a, &b, &q, &r)
    }
    .unwrap_or_else(|e| panic!("{name}: {e}"));
    let expected = &case["expected"];
    let want_x = fixtures::matrix(&expected["X"]);
    let want_k = fixtures::matrix(&expected["K"]);
    let want_poles: Vec<Complex<f64>> = fixtures::complex_vec(&expected["closed_loop_poles"]);
    fixtures::tolerance_for(case, "X").assert_matrix_close(&sol.x, &want_x, &format!("{name} X"));
    fixtures::tolerance_for(case, "K").assert_matrix_close(
        &sol.gain,
        &want_k,
        &format!("{name} K"),
    );
    // Poles: abs = rel · max|pole|, as the fixture's `why` says.
    let tol = fixtures::tolerance_for(case, "closed_loop_poles");
    let biggest = want_poles.iter().map(|z| z.norm()).fold(0.0, f64::max);
    let pole_tol = Tolerance::new(0.0, tol.rel * biggest.max(1.0));
    pole_tol.assert_complex_slice_close(
        &sol.closed_loop_poles,
        &want_poles,
        &format!("{name} closed-loop poles"),
    );
    // Residual ratio (see `Riccati::residual`): a small multiple of ε on all fixtures.
    assert!(
        sol.residual < 1e-13,
        "{name}: residual ratio {:e}",
        sol.residual
    );
}

#[test]
fn riccati_continuous_random() {
    check_case("riccati_continuous_random", false);
}

#[test]
fn riccati_continuous_double_integrator() {
    check_case("riccati_continuous_double_integrator", false);
}

#[test]
fn riccati_continuous_nearly_unstabilizable() {
    check_case("riccati_continuous_nearly_unstabilizable", false);
}

#[test]
fn riccati_discrete_random() {
    check_case("riccati_discrete_random", true);
}

#[test]
fn riccati_discrete_ill_conditioned() {
    check_case("riccati_discrete_ill_conditioned", true);
}

#[test]
fn every_riccati_fixture_is_covered() {
    let fx = fixtures::load("freq");
    let names: Vec<String> = fixtures::cases_with_prefix(&fx, "riccati_")
        .iter()
        .filter_map(|c| c["name"].as_str().map(str::to_string))
        .collect();
    let covered = [
        "riccati_continuous_random",
        "riccati_continuous_double_integrator",
        "riccati_continuous_nearly_unstabilizable",
        "riccati_discrete_random",
        "riccati_discrete_ill_conditioned",
    ];
    for n in &names {
        assert!(
            covered.contains(&n.as_str()),
            "fixture case {n} has no test here"
        );
    }
}
