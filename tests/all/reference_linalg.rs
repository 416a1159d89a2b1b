//! Linear algebra against the reference fixtures in tests/reference/linalg.json
//! (numpy/scipy/mpmath; each case names the library call that produced it and why its
//! tolerance is what it is — see tests/reference/README.md).

use crate::common;

use common::fixtures::{self as fx, case, cases_with_prefix, tolerance};
use statebook::numeric::linalg::{dense, eigen, expm, logm, poly};

fn load() -> serde_json::Value {
    fx::load("linalg")
}

#[test]
fn eigenvalues_match_reference() {
    let f = load();
    let cs = cases_with_prefix(&f, "eig_");
    assert!(cs.len() >= 6);
    for c in cs {
        let name = c["name"].as_str().unwrap_or("?");
        let a = fx::matrix(&c["inputs"]["A"]);
        let want = fx::complex_vec(&c["expected"]["eigenvalues"]);
        let got = eigen::eigenvalues(&a).expect(name);
        tolerance(c).assert_complex_slice_close(&got, &want, name);
    }
}

#[test]
fn singular_values_match_reference() {
    let f = load();
    for c in cases_with_prefix(&f, "svd_") {
        let name = c["name"].as_str().unwrap_or("?");
        let a = fx::matrix(&c["inputs"]["A"]);
        let got = dense::singular_values(&a).expect(name);
        tolerance(c).assert_slice_close(
            &got,
            &fx::f64_vec(&c["expected"]["singular_values"]),
            name,
        );
    }
}

#[test]
fn exponential_matches_reference() {
    let f = load();
    for c in cases_with_prefix(&f, "expm_") {
        let name = c["name"].as_str().unwrap_or("?");
        let a = fx::matrix(&c["inputs"]["A"]);
        let got = expm::expm(&a).expect(name);
        tolerance(c).assert_matrix_close(&got, &fx::matrix(&c["expected"]["expm"]), name);
    }
}

#[test]
fn logarithm_matches_reference() {
    let f = load();
    for c in cases_with_prefix(&f, "logm_") {
        let name = c["name"].as_str().unwrap_or("?");
        let a = fx::matrix(&c["inputs"]["A"]);
        let got = logm::logm(&a).expect(name);
        tolerance(c).assert_matrix_close(&got, &fx::matrix(&c["expected"]["logm"]), name);
    }
}

#[test]
fn inverse_determinant_solve_match_reference() {
    let f = load();
    let c = case(&f, "inverse_well_conditioned_6x6");
    let a = fx::matrix(&c["inputs"]["A"]);
    tolerance(c).assert_matrix_close(
        &dense::inverse(&a).expect("inverse"),
        &fx::matrix(&c["expected"]["inverse"]),
        "inverse",
    );
    for name in [
        "determinant_well_conditioned_6x6",
        "determinant_integer_4x4",
    ] {
        let c = case(&f, name);
        let a = fx::matrix(&c["inputs"]["A"]);
        tolerance(c).assert_close(
            dense::determinant(&a).expect(name),
            fx::f64_of(&c["expected"]["determinant"]),
            name,
        );
    }
    let c = case(&f, "solve_well_conditioned_6x6_two_rhs");
    let x = dense::solve(
        &fx::matrix(&c["inputs"]["A"]),
        &fx::matrix(&c["inputs"]["B"]),
    )
    .expect("solve");
    tolerance(c).assert_matrix_close(&x, &fx::matrix(&c["expected"]["X"]), "solve");
}

#[test]
fn characteristic_polynomial_matches_reference() {
    let f = load();
    for c in cases_with_prefix(&f, "charpoly_") {
        let name = c["name"].as_str().unwrap_or("?");
        let got = poly::characteristic_polynomial(&fx::matrix(&c["inputs"]["A"])).expect(name);
        tolerance(c).assert_slice_close(&got, &fx::f64_vec(&c["expected"]["coefficients"]), name);
    }
}

#[test]
fn polynomial_roots_match_reference() {
    let f = load();
    for c in cases_with_prefix(&f, "roots_") {
        let name = c["name"].as_str().unwrap_or("?");
        let got = poly::polynomial_roots(&fx::f64_vec(&c["inputs"]["coefficients"])).expect(name);
        tolerance(c).assert_complex_slice_close(
            &got,
            &fx::complex_vec(&c["expected"]["roots"]),
            name,
        );
    }
}

#[test]
fn rank_matches_reference() {
    let f = load();
    for c in cases_with_prefix(&f, "rank_") {
        let name = c["name"].as_str().unwrap_or("?");
        let got = dense::rank(&fx::matrix(&c["inputs"]["A"]), None).expect(name);
        assert_eq!(got as f64, fx::f64_of(&c["expected"]["rank"]), "{name}");
    }
}
