//! Linear algebra built-ins: decompositions, matrix functions, polynomials, grids.

use crate::numeric::linalg::{dense, eigen, expm, poly};
use crate::script::convert::{
    complex_array, fail, float_array, matrix_value, num, to_complex_vec, to_count, to_f64,
    to_f64_vec, to_matrix, Rr,
};
use crate::script::docs::Doc;
use crate::script::types::{ComplexMatrix, Matrix};
use nalgebra::DMatrix;
use rhai::{Array, Dynamic, Engine, Map, FLOAT, INT};

/// Help entries of this file.
pub const DOCS: &[Doc] = &[
    Doc {
        name: "inverse",
        family: "linear algebra",
        usage: "A.inverse() → Matrix",
        summary: "the inverse of a square, non-singular matrix",
        details: "Refuses a numerically singular matrix (reciprocal condition number below \
                  n·ε) and names its condition. To solve A X = B prefer solve(A, B).",
        example: "matrix([[2, 1], [1, 1]]).inverse()",
    },
    Doc {
        name: "determinant",
        family: "linear algebra",
        usage: "A.determinant() → float",
        summary: "the determinant of a square matrix (LU with partial pivoting)",
        details: "",
        example: "matrix([[2, 1], [1, 1]]).determinant()   // 1.0",
    },
    Doc {
        name: "rank",
        family: "linear algebra",
        usage: "A.rank()\nA.rank(tolerance)",
        summary: "numerical rank: singular values above max(rows, cols)·ε·σ₁ (or tolerance)",
        details: "tolerance: an absolute threshold on the singular values.",
        example: "matrix([[1, 2], [2, 4]]).rank()   // 1",
    },
    Doc {
        name: "norm",
        family: "linear algebra",
        usage: "A.norm() → float",
        summary: "the 2-norm (largest singular value)",
        details: "",
        example: "identity(3).norm()   // 1.0",
    },
    Doc {
        name: "condition",
        family: "linear algebra",
        usage: "A.condition() → float",
        summary: "2-norm condition number σ_max/σ_min (infinite when singular)",
        details: "",
        example: "matrix([[1, 0], [0, 1e-6]]).condition()   // 1e6",
    },
    Doc {
        name: "exp",
        family: "linear algebra",
        usage: "A.exp() → Matrix",
        summary: "the matrix exponential e^A (scaling and squaring, Padé; Al-Mohy & Higham 2009)",
        details: "",
        example: "matrix([[0, 1], [-1, 0]]).exp()   // a rotation by 1 rad",
    },
    Doc {
        name: "solve",
        family: "linear algebra",
        usage: "solve(A, B) → Matrix",
        summary: "the solution X of A X = B for square non-singular A",
        details: "",
        example: "solve(matrix([[2, 1], [1, 3]]), column([1, 2]))",
    },
    Doc {
        name: "approx_eq",
        family: "linear algebra",
        usage: "approx_eq(A, B, tol) → bool",
        summary: "whether two matrices (or numbers) agree to within tol",
        details: "True when both have the same shape and every entry differs by at most \
                  tol·max(1, |a|, |b|) (a mixed absolute/relative test).",
        example: "approx_eq(identity(2) * 1.0000000001, identity(2), 1e-9)   // true",
    },
    Doc {
        name: "eigenvalues",
        family: "linear algebra",
        usage: "eigenvalues(A) → [Complex]",
        summary: "eigenvalues of a square real matrix, complex pairs included",
        details: "Balanced, then the real Schur form. Ordered by ascending real part, then \
                  ascending imaginary part (a pair as σ−jω then σ+jω).",
        example: "eigenvalues(matrix([[0, 1], [-2, -2]]))   // [-1-1j, -1+1j]",
    },
    Doc {
        name: "eigenvectors",
        family: "linear algebra",
        usage: "eigenvectors(A) → #{ values, vectors }",
        summary: "eigenvalues with unit-norm eigenvectors (column k belongs to value k)",
        details: "vectors is a ComplexMatrix. Computed from the real Schur form by \
                  back-substitution. Nearly defective matrices give nearly parallel vectors: \
                  check vectors.condition() of the result before relying on them.",
        example: "let e = eigenvectors(matrix([[2, 0], [0, 3]]));\ne.values",
    },
    Doc {
        name: "singular_values",
        family: "linear algebra",
        usage: "singular_values(A) → [float]",
        summary: "singular values, descending",
        details: "",
        example: "singular_values(matrix([[3, 0], [0, 4]]))   // [4.0, 3.0]",
    },
    Doc {
        name: "characteristic_polynomial",
        family: "linear algebra",
        usage: "characteristic_polynomial(A) → [float]",
        summary: "coefficients of det(sI − A), highest power first, leading 1",
        details: "Computed from a Hessenberg reduction, not from powers of A.",
        example: "characteristic_polynomial(matrix([[0, 1], [-2, -3]]))   // [1, 3, 2]",
    },
    Doc {
        name: "polynomial_value",
        family: "linear algebra",
        usage: "polynomial_value(coefficients, s) → Complex",
        summary: "the value of a polynomial at a real or complex point (Horner's rule)",
        details: "coefficients: highest power first; s: a number or a Complex.",
        example: "polynomial_value([1, 3, 2], complex(0, 1))   // (j)² + 3j + 2 = 1+3j",
    },
    Doc {
        name: "polynomial_roots",
        family: "linear algebra",
        usage: "polynomial_roots(coefficients) → [Complex]",
        summary: "roots of a polynomial given highest power first",
        details: "Eigenvalues of the balanced companion matrix, polished by Newton steps on \
                  the polynomial; ordered like eigenvalues.",
        example: "polynomial_roots([1, 3, 2])   // [-2+0j, -1+0j]",
    },
    Doc {
        name: "linear_grid",
        family: "linear algebra",
        usage: "linear_grid(low, high, count) → [float]",
        summary: "count equally spaced values from low to high, both included",
        details: "",
        example: "linear_grid(0, 1, 5)   // [0, 0.25, 0.5, 0.75, 1]",
    },
    Doc {
        name: "log_grid",
        family: "linear algebra",
        usage: "log_grid(low, high, count) → [float]",
        summary: "count logarithmically spaced values from low to high, both included",
        details: "low and high are the end values themselves (not their logarithms), both > 0.",
        example: "log_grid(0.1, 100, 4)   // [0.1, 1, 10, 100]",
    },
    Doc {
        name: "block",
        family: "matrices",
        usage: "block([[A, B], [C, D]]) → Matrix",
        summary: "assembles a matrix from blocks, row of blocks by row of blocks",
        details: "Blocks in one block row must have equal heights, blocks in one block column \
                  equal widths. Numbers count as 1×1 blocks.",
        example: "block([[identity(2), column([0, 1])], [row([0, 0]), 1]])",
    },
];

fn m(v: &Dynamic, f: &str) -> Rr<DMatrix<f64>> {
    to_matrix(v, f, "A")
}

/// Registers the linear-algebra built-ins.
pub fn register(engine: &mut Engine) {
    engine.register_fn("block", |v: Dynamic| -> Rr<Dynamic> {
        let Some(outer) = v.read_lock::<Array>() else {
            return Err(fail(
                "block: expected an array of block rows, e.g. block([[A, B], [C, D]])",
            ));
        };
        let mut rows = Vec::with_capacity(outer.len());
        for (i, r) in outer.iter().enumerate() {
            let Some(ra) = r.read_lock::<Array>() else {
                return Err(fail(format!(
                    "block: block row {i} must be an array of blocks"
                )));
            };
            let row: Vec<DMatrix<f64>> = ra
                .iter()
                .enumerate()
                .map(|(j, b)| to_matrix(b, "block", &format!("block ({i}, {j})")))
                .collect::<Rr<_>>()?;
            rows.push(row);
        }
        // The result's size, before assembling (shapes are checked by the numerics).
        let total_rows: usize = rows
            .iter()
            .filter_map(|r| r.first())
            .map(|b| b.nrows())
            .sum();
        let total_cols: usize = rows
            .first()
            .map_or(0, |r| r.iter().map(|b| b.ncols()).sum());
        crate::script::convert::check_entries("block", total_rows, total_cols)?;
        crate::numeric::linalg::dense::block(&rows)
            .map(matrix_value)
            .map_err(num("block"))
    });
    engine.register_fn("inverse", |a: Dynamic| -> Rr<Dynamic> {
        dense::inverse(&m(&a, "inverse")?)
            .map(matrix_value)
            .map_err(num("inverse"))
    });
    engine.register_fn("**", |a: Matrix, k: INT| -> Rr<Dynamic> {
        dense::power(&a.0, k).map(matrix_value).map_err(num("^"))
    });
    engine.register_fn("determinant", |a: Dynamic| -> Rr<FLOAT> {
        dense::determinant(&m(&a, "determinant")?).map_err(num("determinant"))
    });
    engine.register_fn("rank", |a: Dynamic| -> Rr<INT> {
        dense::rank(&m(&a, "rank")?, None)
            .map(|r| r as INT)
            .map_err(num("rank"))
    });
    engine.register_fn("rank", |a: Dynamic, tol: Dynamic| -> Rr<INT> {
        let tol = to_f64(&tol, "rank", "tolerance")?;
        dense::rank(&m(&a, "rank")?, Some(tol))
            .map(|r| r as INT)
            .map_err(num("rank"))
    });
    engine.register_fn("norm", |a: Dynamic| -> Rr<FLOAT> {
        dense::norm2(&m(&a, "norm")?).map_err(num("norm"))
    });
    engine.register_fn("condition", |a: Dynamic| -> Rr<FLOAT> {
        dense::condition(&m(&a, "condition")?).map_err(num("condition"))
    });
    engine.register_fn("exp", |a: Matrix| -> Rr<Matrix> {
        expm::expm(&a.0).map(Matrix).map_err(num("exp"))
    });
    engine.register_fn("solve", |a: Dynamic, b: Dynamic| -> Rr<Dynamic> {
        let a = to_matrix(&a, "solve", "A")?;
        let b = to_matrix(&b, "solve", "B")?;
        dense::solve(&a, &b).map(matrix_value).map_err(num("solve"))
    });
    engine.register_fn(
        "approx_eq",
        |a: Dynamic, b: Dynamic, tol: Dynamic| -> Rr<bool> {
            let tol = to_f64(&tol, "approx_eq", "tol")?;
            let a = to_matrix(&a, "approx_eq", "A")?;
            let b = to_matrix(&b, "approx_eq", "B")?;
            dense::approx_eq(&a, &b, tol).map_err(num("approx_eq"))
        },
    );
    engine.register_fn("eigenvalues", |a: Dynamic| -> Rr<Array> {
        eigen::eigenvalues(&m(&a, "eigenvalues")?)
            .map(|v| complex_array(&v))
            .map_err(num("eigenvalues"))
    });
    engine.register_fn("eigenvectors", |a: Dynamic| -> Rr<Map> {
        let e = eigen::eigen(&m(&a, "eigenvectors")?).map_err(num("eigenvectors"))?;
        let mut out = Map::new();
        out.insert(
            "values".into(),
            Dynamic::from_array(complex_array(&e.values)),
        );
        out.insert("vectors".into(), Dynamic::from(ComplexMatrix(e.vectors)));
        Ok(out)
    });
    engine.register_fn("singular_values", |a: Dynamic| -> Rr<Array> {
        dense::singular_values(&m(&a, "singular_values")?)
            .map(|v| float_array(&v))
            .map_err(num("singular_values"))
    });
    engine.register_fn("characteristic_polynomial", |a: Dynamic| -> Rr<Array> {
        poly::characteristic_polynomial(&m(&a, "characteristic_polynomial")?)
            .map(|v| float_array(&v))
            .map_err(num("characteristic_polynomial"))
    });
    engine.register_fn("polynomial_roots", |c: Dynamic| -> Rr<Array> {
        let c = to_f64_vec(&c, "polynomial_roots", "coefficients")?;
        poly::polynomial_roots(&c)
            .map(|v| complex_array(&v))
            .map_err(num("polynomial_roots"))
    });
    engine.register_fn(
        "polynomial_value",
        |c: Dynamic, z: Dynamic| -> Rr<Dynamic> {
            let c = crate::script::convert::to_finite_vec(&c, "polynomial_value", "coefficients")?;
            let z = to_complex_vec(&Dynamic::from_array(vec![z]), "polynomial_value", "s")?;
            if !(z[0].re.is_finite() && z[0].im.is_finite()) {
                return Err(fail(format!(
                    "polynomial_value: s is {}, expected a finite number",
                    crate::display::complex(z[0].re, z[0].im, Default::default())
                )));
            }
            let v = poly::polynomial_eval(&c, z[0]);
            Ok(Dynamic::from(crate::script::types::Complex(v)))
        },
    );
    engine.register_fn(
        "linear_grid",
        |lo: Dynamic, hi: Dynamic, n: Dynamic| -> Rr<Array> {
            let f = "linear_grid";
            let (lo, hi) = (to_f64(&lo, f, "low")?, to_f64(&hi, f, "high")?);
            dense::linear_grid(lo, hi, to_count(&n, f, "count")?)
                .map(|v| float_array(&v))
                .map_err(num(f))
        },
    );
    engine.register_fn(
        "log_grid",
        |lo: Dynamic, hi: Dynamic, n: Dynamic| -> Rr<Array> {
            let f = "log_grid";
            let (lo, hi) = (to_f64(&lo, f, "low")?, to_f64(&hi, f, "high")?);
            dense::log_grid(lo, hi, to_count(&n, f, "count")?)
                .map(|v| float_array(&v))
                .map_err(num(f))
        },
    );
}
