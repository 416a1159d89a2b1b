//! Models against tests/reference/models.json (scipy ss2tf, eig of the system pencil,
//! Lyapunov solvers; first-principles constructions where scipy has no routine — each case
//! says which).

use crate::common;

use common::fixtures::{self as fx, cases_with_prefix, tolerance, tolerance_for};
use nalgebra::Complex;
use statebook::numeric::lti::system::StateSpace;
use statebook::numeric::lti::tf::horner;
use statebook::numeric::lti::{balance, properties, realize, zeros};

fn model(c: &serde_json::Value) -> StateSpace {
    let m = fx::model(&c["inputs"]);
    StateSpace::new(m.a, m.b, m.c, m.d, m.dt).expect("valid fixture model")
}

#[test]
fn transfer_functions_match_scipy_ss2tf() {
    let f = fx::load("models");
    for c in cases_with_prefix(&f, "tf_") {
        let name = c["name"].as_str().unwrap_or("?");
        let sys = model(c);
        let den = fx::f64_vec(&c["expected"]["denominator"]);
        let nums = c["expected"]["numerators_per_input"]
            .as_array()
            .expect("array");
        let grid = realize::to_transfer_function(&sys).expect(name);
        // Compare as functions of s at points on and off the axis: the per-channel minimal
        // form may cancel factors that ss2tf's common denominator keeps.
        for (j, per_input) in nums.iter().enumerate() {
            let rows = fx::matrix(per_input);
            for (i, grid_row) in grid.iter().enumerate().take(rows.nrows()) {
                let num: Vec<f64> = rows.row(i).iter().copied().collect();
                for s in [
                    Complex::new(0.0, 0.7),
                    Complex::new(0.3, 2.0),
                    Complex::new(-0.2, 5.0),
                ] {
                    let want = horner(&num, s) / horner(&den, s);
                    let got = grid_row[j].eval(s);
                    let err = (got - want).norm();
                    assert!(
                        err <= 1e-9 * (1.0 + want.norm()),
                        "{name} ({i},{j}) at {s}: {got} vs {want}"
                    );
                }
            }
        }
    }
}

#[test]
fn zeros_match_reference() {
    let f = fx::load("models");
    for c in cases_with_prefix(&f, "zeros_") {
        let name = c["name"].as_str().unwrap_or("?");
        let sys = model(c);
        let got = zeros::transmission_zeros(&sys.a, &sys.b, &sys.c, &sys.d).expect(name);
        let want = fx::complex_vec(&c["expected"]["zeros"]);
        tolerance(c).assert_complex_slice_close(&got, &want, name);
    }
}

#[test]
fn gramians_and_hankel_singular_values_match_reference() {
    let f = fx::load("models");
    for c in cases_with_prefix(&f, "gramians_") {
        let name = c["name"].as_str().unwrap_or("?");
        let sys = model(c);
        let wc = balance::controllability_gramian(&sys.a, &sys.b, sys.dt).expect(name);
        let wo = balance::observability_gramian(&sys.a, &sys.c, sys.dt).expect(name);
        let t = tolerance(c);
        t.assert_matrix_close(
            &wc,
            &fx::matrix(&c["expected"]["controllability_gramian"]),
            name,
        );
        t.assert_matrix_close(
            &wo,
            &fx::matrix(&c["expected"]["observability_gramian"]),
            name,
        );
        let hsv = balance::hankel_singular_values(&sys.a, &sys.b, &sys.c, sys.dt).expect(name);
        tolerance_for(c, "hankel_singular_values").assert_slice_close(
            &hsv,
            &fx::f64_vec(&c["expected"]["hankel_singular_values"]),
            name,
        );
    }
}

#[test]
fn markov_parameters_and_dc_gain_match_reference() {
    let f = fx::load("models");
    for c in cases_with_prefix(&f, "markov_") {
        let name = c["name"].as_str().unwrap_or("?");
        let sys = model(c);
        let count = fx::f64_of(&c["inputs"]["count"]) as usize;
        let got = sys.markov_parameters(count);
        let want = fx::matrix_vec(&c["expected"]["markov_parameters"]);
        assert_eq!(got.len(), want.len(), "{name}");
        for (g, w) in got.iter().zip(&want) {
            tolerance(c).assert_matrix_close(g, w, name);
        }
    }
    let c = fx::case(&f, "dc_gain_continuous_mimo");
    let sys = model(c);
    tolerance(c).assert_matrix_close(
        &properties::dc_gain(&sys).expect("dc gain"),
        &fx::matrix(&c["expected"]["dc_gain"]),
        "dc_gain",
    );
}
