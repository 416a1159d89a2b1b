//! Loading and converting the reference fixtures in `tests/reference/*.json`.
//!
//! The fixtures are written by the Python generators in `tests/reference/`
//! (numpy/scipy/mpmath are the references; see `tests/reference/README.md` for the
//! schema). The Rust tests only read the JSON: they never need Python.
//!
//! Conventions of the JSON: real matrices are arrays of rows; a complex number is
//! `[re, im]`; complex vectors/matrices are nested arrays of such pairs; floats are
//! exact binary64 values (shortest round-trip text). `null` stands for "none"
//! (e.g. an infinite gain margin).
//!
//! Usage from an integration test:
//! ```ignore
//! mod common;
//! use common::fixtures::{self, Tolerance};
//! let fx = fixtures::load("linalg");
//! let c = fixtures::case(&fx, "eig_random_5x5");
//! let a = fixtures::matrix(&c["inputs"]["A"]);
//! let want = fixtures::complex_vec(&c["expected"]["eigenvalues"]);
//! let tol = fixtures::tolerance(c);
//! ```
#![allow(dead_code)]

use nalgebra::{Complex, DMatrix};
use serde_json::Value;
use std::path::PathBuf;

/// The folder holding the fixture files: `<crate root>/tests/reference`.
pub fn reference_dir() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests")
        .join("reference")
}

/// Load a fixture by name: `"linalg"` or `"linalg.json"`.
pub fn load(name: &str) -> Value {
    let file = if name.ends_with(".json") {
        name.to_string()
    } else {
        format!("{name}.json")
    };
    let path = reference_dir().join(&file);
    let text = std::fs::read_to_string(&path)
        .unwrap_or_else(|e| panic!("cannot read fixture {}: {e}", path.display()));
    serde_json::from_str(&text)
        .unwrap_or_else(|e| panic!("fixture {} is not valid JSON: {e}", path.display()))
}

/// All cases of a fixture.
pub fn cases(fixture: &Value) -> &Vec<Value> {
    fixture["cases"]
        .as_array()
        .expect("fixture has no \"cases\" array")
}

/// The names of all cases (handy for loops and for error messages).
pub fn case_names(fixture: &Value) -> Vec<String> {
    cases(fixture)
        .iter()
        .filter_map(|c| c["name"].as_str().map(str::to_string))
        .collect()
}

/// The case called `name`; panics with the list of available names if absent.
pub fn case<'a>(fixture: &'a Value, name: &str) -> &'a Value {
    cases(fixture)
        .iter()
        .find(|c| c["name"].as_str() == Some(name))
        .unwrap_or_else(|| {
            panic!(
                "no case {name:?} in fixture {:?}; available: {:?}",
                fixture["generator"].as_str().unwrap_or("?"),
                case_names(fixture)
            )
        })
}

/// Cases whose name starts with `prefix` (e.g. all `"eig_"` cases).
pub fn cases_with_prefix<'a>(fixture: &'a Value, prefix: &str) -> Vec<&'a Value> {
    cases(fixture)
        .iter()
        .filter(|c| c["name"].as_str().is_some_and(|n| n.starts_with(prefix)))
        .collect()
}

// ------------------------------------------------------------------ scalars and vectors

/// A number (integers are accepted too).
pub fn f64_of(v: &Value) -> f64 {
    v.as_f64()
        .unwrap_or_else(|| panic!("expected a number, found {v}"))
}

/// A number or `null` (`None`).
pub fn opt_f64(v: &Value) -> Option<f64> {
    if v.is_null() {
        None
    } else {
        Some(f64_of(v))
    }
}

/// An array of numbers.
pub fn f64_vec(v: &Value) -> Vec<f64> {
    v.as_array()
        .unwrap_or_else(|| panic!("expected an array of numbers, found {v}"))
        .iter()
        .map(f64_of)
        .collect()
}

/// A complex number stored as `[re, im]`.
pub fn complex(v: &Value) -> Complex<f64> {
    match v.as_array().map(|a| a.as_slice()) {
        Some([re, im]) => Complex::new(f64_of(re), f64_of(im)),
        _ => panic!("expected a complex number [re, im], found {v}"),
    }
}

/// An array of `[re, im]` pairs.
pub fn complex_vec(v: &Value) -> Vec<Complex<f64>> {
    v.as_array()
        .unwrap_or_else(|| panic!("expected an array of [re, im], found {v}"))
        .iter()
        .map(complex)
        .collect()
}

// ------------------------------------------------------------------ matrices

fn rows_of(v: &Value) -> &Vec<Value> {
    v.as_array()
        .unwrap_or_else(|| panic!("expected a matrix (array of rows), found {v}"))
}

/// A real matrix stored as an array of rows.
pub fn matrix(v: &Value) -> DMatrix<f64> {
    let rows: Vec<Vec<f64>> = rows_of(v).iter().map(f64_vec).collect();
    let r = rows.len();
    let c = rows.first().map_or(0, Vec::len);
    assert!(
        rows.iter().all(|row| row.len() == c),
        "ragged matrix in fixture"
    );
    DMatrix::from_fn(r, c, |i, j| rows[i][j])
}

/// A complex matrix stored as an array of rows of `[re, im]`.
pub fn complex_matrix(v: &Value) -> DMatrix<Complex<f64>> {
    let rows: Vec<Vec<Complex<f64>>> = rows_of(v).iter().map(complex_vec).collect();
    let r = rows.len();
    let c = rows.first().map_or(0, Vec::len);
    assert!(
        rows.iter().all(|row| row.len() == c),
        "ragged complex matrix in fixture"
    );
    DMatrix::from_fn(r, c, |i, j| rows[i][j])
}

/// An array of real matrices (e.g. Markov parameters, per-input responses).
pub fn matrix_vec(v: &Value) -> Vec<DMatrix<f64>> {
    rows_of(v).iter().map(matrix).collect()
}

/// An array of complex matrices (e.g. a frequency response, one p x m matrix per w).
pub fn complex_matrix_vec(v: &Value) -> Vec<DMatrix<Complex<f64>>> {
    rows_of(v).iter().map(complex_matrix).collect()
}

/// The model stored in a case's inputs as `A, B, C, D, dt`.
pub struct Model {
    pub a: DMatrix<f64>,
    pub b: DMatrix<f64>,
    pub c: DMatrix<f64>,
    pub d: DMatrix<f64>,
    pub dt: f64,
}

/// Read `A, B, C, D` and `dt` (0 when absent) from an object such as `case["inputs"]`.
pub fn model(v: &Value) -> Model {
    Model {
        a: matrix(&v["A"]),
        b: matrix(&v["B"]),
        c: matrix(&v["C"]),
        d: matrix(&v["D"]),
        dt: v.get("dt").map_or(0.0, f64_of),
    }
}

// ------------------------------------------------------------------ tolerances

/// A suggested tolerance: `|actual - expected| <= abs + rel * |expected|`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Tolerance {
    pub rel: f64,
    pub abs: f64,
}

impl Tolerance {
    pub fn new(rel: f64, abs: f64) -> Self {
        Tolerance { rel, abs }
    }

    /// The allowed error for an expected value of magnitude `expected_magnitude`.
    pub fn allowed(&self, expected_magnitude: f64) -> f64 {
        self.abs + self.rel * expected_magnitude
    }

    pub fn close(&self, actual: f64, expected: f64) -> bool {
        (actual - expected).abs() <= self.allowed(expected.abs())
    }

    pub fn close_complex(&self, actual: Complex<f64>, expected: Complex<f64>) -> bool {
        (actual - expected).norm() <= self.allowed(expected.norm())
    }

    /// Panics with a message naming `what` when the values differ beyond the tolerance.
    pub fn assert_close(&self, actual: f64, expected: f64, what: &str) {
        assert!(
            self.close(actual, expected),
            "{what}: got {actual:e}, expected {expected:e}, |diff| = {:e} > {:e}",
            (actual - expected).abs(),
            self.allowed(expected.abs())
        );
    }

    pub fn assert_slice_close(&self, actual: &[f64], expected: &[f64], what: &str) {
        assert_eq!(actual.len(), expected.len(), "{what}: length differs");
        for (k, (a, e)) in actual.iter().zip(expected).enumerate() {
            self.assert_close(*a, *e, &format!("{what}[{k}]"));
        }
    }

    /// Elementwise comparison of real matrices.
    pub fn assert_matrix_close(&self, actual: &DMatrix<f64>, expected: &DMatrix<f64>, what: &str) {
        assert_eq!(actual.shape(), expected.shape(), "{what}: shape differs");
        for i in 0..expected.nrows() {
            for j in 0..expected.ncols() {
                self.assert_close(
                    actual[(i, j)],
                    expected[(i, j)],
                    &format!("{what}[({i}, {j})]"),
                );
            }
        }
    }

    /// Index-by-index comparison of complex vectors (e.g. sorted eigenvalues).
    pub fn assert_complex_slice_close(
        &self,
        actual: &[Complex<f64>],
        expected: &[Complex<f64>],
        what: &str,
    ) {
        assert_eq!(actual.len(), expected.len(), "{what}: length differs");
        for (k, (a, e)) in actual.iter().zip(expected).enumerate() {
            assert!(
                self.close_complex(*a, *e),
                "{what}[{k}]: got {a}, expected {e}, |diff| = {:e} > {:e}",
                (a - e).norm(),
                self.allowed(e.norm())
            );
        }
    }

    /// Elementwise comparison of complex matrices.
    pub fn assert_complex_matrix_close(
        &self,
        actual: &DMatrix<Complex<f64>>,
        expected: &DMatrix<Complex<f64>>,
        what: &str,
    ) {
        assert_eq!(actual.shape(), expected.shape(), "{what}: shape differs");
        for i in 0..expected.nrows() {
            for j in 0..expected.ncols() {
                let (a, e) = (actual[(i, j)], expected[(i, j)]);
                assert!(
                    self.close_complex(a, e),
                    "{what}[({i}, {j})]: got {a}, expected {e}"
                );
            }
        }
    }
}

fn tolerance_from(v: &Value) -> Tolerance {
    Tolerance {
        rel: f64_of(&v["rel"]),
        abs: f64_of(&v["abs"]),
    }
}

/// The case's suggested tolerance (`tolerance.rel`, `tolerance.abs`).
pub fn tolerance(case: &Value) -> Tolerance {
    tolerance_from(&case["tolerance"])
}

/// The tolerance for one expected key: `per_key_tolerance[key]` when the case has
/// one, else the case's tolerance.
pub fn tolerance_for(case: &Value, key: &str) -> Tolerance {
    match case.get("per_key_tolerance").and_then(|p| p.get(key)) {
        Some(t) => tolerance_from(t),
        None => tolerance(case),
    }
}

/// The one-line reason recorded beside the tolerance.
pub fn tolerance_reason(case: &Value) -> &str {
    case["tolerance"]["why"].as_str().unwrap_or("")
}

/// The exact library call (or first-principles method) that produced the expected values.
pub fn source(case: &Value) -> &str {
    case["function"].as_str().unwrap_or("")
}
