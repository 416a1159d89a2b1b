//! Linear algebra built-ins: decompositions, matrix functions, polynomials, grids.

use crate::numeric::linalg::{dense, eigen, expm, poly};
use crate::script::convert::{
    check_entries, complex_array, float_array, num, to_finite_vec, type_name, Rr,
};
use crate::script::declare::{Call, Param};
use crate::script::types::{Complex, ComplexMatrix, Matrix, Vector};
use nalgebra::DMatrix;
use rhai::{Array, Dynamic, Engine, Map, FLOAT, INT};

/// Registers the power operator `A ^ k` (the rest are declared in `BUILTINS`).
pub fn register(engine: &mut Engine) {
    engine.register_fn("**", |a: Matrix, k: INT| -> Rr<Matrix> {
        dense::power(&a.0, k).map(Matrix::from).map_err(num("^"))
    });
}

/// The blocks of `block([[A, B], [C, D]])`: an array of block rows, each an array of
/// matrices or numbers.
struct Blocks(Vec<Vec<DMatrix<f64>>>);

impl Param for Blocks {
    const KIND: &'static str = "[[Matrix | number]]";
    fn from_arg(v: Dynamic, call: &Call, _: &str) -> Rr<Self> {
        let Some(outer) = v.read_lock::<Array>() else {
            return Err(call.fail("expected an array of block rows, e.g. block([[A, B], [C, D]])"));
        };
        let mut rows = Vec::with_capacity(outer.len());
        for (i, r) in outer.iter().enumerate() {
            let Some(ra) = r.read_lock::<Array>() else {
                return Err(call.fail(format_args!("block row {i} must be an array of blocks")));
            };
            let row: Vec<DMatrix<f64>> = ra
                .iter()
                .enumerate()
                .map(|(j, b)| call.matrix(b, &format!("block ({i}, {j})")))
                .collect::<Rr<_>>()?;
            rows.push(row);
        }
        Ok(Blocks(rows))
    }
}

/// What `exp` takes: a number, a Complex, or a `Matrix` value itself (not an array of rows,
/// which would be ambiguous with an array of numbers).
enum Exponent {
    Number(f64),
    Complex(nalgebra::Complex<f64>),
    Matrix(DMatrix<f64>),
}

impl Param for Exponent {
    const KIND: &'static str = "number | Complex | Matrix";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        if let Some(m) = v.read_lock::<Matrix>() {
            return Ok(Exponent::Matrix((*m.0).clone()));
        }
        if let Some(z) = v.read_lock::<Complex>() {
            return Ok(Exponent::Complex(z.0));
        }
        if v.is_int() || v.is_float() {
            return call.number(&v, arg).map(Exponent::Number);
        }
        Err(call.fail(format_args!(
            "{arg} must be a number, a Complex or a Matrix, found {}",
            type_name(&v)
        )))
    }
}

/// Polynomial coefficients, highest power first, every one finite.
struct Coefficients(Vec<f64>);

impl Param for Coefficients {
    const KIND: &'static str = "[number]";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        to_finite_vec(&v, call.name, arg).map(Coefficients)
    }
}

crate::builtins! {
    /// assembles a matrix from blocks, row of blocks by row of blocks
    ///
    /// Blocks in one block row must have equal heights, blocks in one block column
    /// equal widths. Numbers count as 1×1 blocks.
    ///
    /// example:
    ///     block([[identity(2), column([0, 1])], [row([0, 0]), 1]])
    #[family = "matrices"]
    fn block(call, blocks: Blocks) -> Matrix {
        let rows = blocks.0;
        // The result's size, before assembling (shapes are checked by the numerics).
        let total_rows: usize = rows
            .iter()
            .filter_map(|r| r.first())
            .map(|b| b.nrows())
            .sum();
        let total_cols: usize = rows
            .first()
            .map_or(0, |r| r.iter().map(|b| b.ncols()).sum());
        check_entries(call.name, total_rows, total_cols)?;
        dense::block(&rows).map(Matrix::from).map_err(call.num())
    }

    /// the inverse of a square, non-singular matrix
    ///
    /// Refuses a numerically singular matrix (reciprocal condition number below n·ε) and
    /// names its condition. To solve A X = B prefer solve(A, B). As a method: A.inverse().
    ///
    /// example:
    ///     matrix([[2, 1], [1, 1]]).inverse()
    #[family = "linear algebra"]
    fn inverse(call, A: DMatrix<f64>) -> Matrix {
        dense::inverse(&A).map(Matrix::from).map_err(call.num())
    }

    /// the determinant of a square matrix (LU with partial pivoting)
    ///
    /// As a method: A.determinant().
    ///
    /// example:
    ///     matrix([[2, 1], [1, 1]]).determinant()   // 1.0
    #[family = "linear algebra"]
    fn determinant(call, A: DMatrix<f64>) -> FLOAT {
        dense::determinant(&A).map_err(call.num())
    }

    /// numerical rank: singular values above max(rows, cols)·ε·σ₁ (or tolerance)
    ///
    /// tolerance: an absolute threshold on the singular values. As a method: A.rank().
    ///
    /// example:
    ///     matrix([[1, 2], [2, 4]]).rank()   // 1
    #[family = "linear algebra"]
    fn rank(call, A: DMatrix<f64>) -> INT {
        dense::rank(&A, None).map(|r| r as INT).map_err(call.num())
    }
    fn rank(call, A: DMatrix<f64>, tolerance: FLOAT) -> INT {
        dense::rank(&A, Some(tolerance))
            .map(|r| r as INT)
            .map_err(call.num())
    }

    /// the 2-norm (largest singular value)
    ///
    /// As a method: A.norm().
    ///
    /// example:
    ///     identity(3).norm()   // 1.0
    #[family = "linear algebra"]
    fn norm(call, A: DMatrix<f64>) -> FLOAT {
        dense::norm2(&A).map_err(call.num())
    }

    /// 2-norm condition number σ_max/σ_min (infinite when singular)
    ///
    /// As a method: A.condition().
    ///
    /// example:
    ///     matrix([[1, 0], [0, 1e-6]]).condition()   // 1e6
    #[family = "linear algebra"]
    fn condition(call, A: DMatrix<f64>) -> FLOAT {
        dense::condition(&A).map_err(call.num())
    }

    /// the exponential: e^x of a number or a Complex, the matrix exponential e^A of a Matrix
    ///
    /// Of a Matrix (square): scaling and squaring with Padé approximants (Al-Mohy &
    /// Higham 2009). As a method: A.exp().
    ///
    /// example:
    ///     exp(1);                           // 2.71828…
    ///     exp(complex(0, pi));              // −1 + 0j, up to rounding
    ///     matrix([[0, 1], [-1, 0]]).exp()   // a rotation by 1 rad
    #[family = "linear algebra"]
    fn exp(call, x: Exponent) -> Dynamic as "float | Complex | Matrix" {
        Ok(match x {
            Exponent::Number(x) => Dynamic::from_float(x.exp()),
            Exponent::Complex(z) => Dynamic::from(Complex(z.exp())),
            Exponent::Matrix(A) => Dynamic::from(Matrix::from(expm::expm(&A).map_err(call.num())?)),
        })
    }

    /// the solution X of A X = B for square non-singular A
    ///
    /// example:
    ///     solve(matrix([[2, 1], [1, 3]]), column([1, 2]))
    #[family = "linear algebra"]
    fn solve(call, A: DMatrix<f64>, B: DMatrix<f64>) -> Matrix {
        dense::solve(&A, &B).map(Matrix::from).map_err(call.num())
    }

    /// whether two matrices (or numbers) agree to within tol
    ///
    /// True when both have the same shape and every entry differs by at most
    /// tol·max(1, |a|, |b|) (a mixed absolute/relative test).
    ///
    /// example:
    ///     approx_eq(identity(2) * 1.0000000001, identity(2), 1e-9)   // true
    #[family = "linear algebra"]
    fn approx_eq(call, A: DMatrix<f64>, B: DMatrix<f64>, tol: FLOAT) -> bool {
        dense::approx_eq(&A, &B, tol).map_err(call.num())
    }

    /// eigenvalues of a square real matrix, complex pairs included
    ///
    /// Balanced, then the real Schur form. Ordered by ascending real part, then ascending
    /// imaginary part (a pair as σ−jω then σ+jω).
    ///
    /// example:
    ///     eigenvalues(matrix([[0, 1], [-2, -2]]))   // [-1-1j, -1+1j]
    #[family = "linear algebra"]
    fn eigenvalues(call, A: DMatrix<f64>) -> Array as "[Complex]" {
        eigen::eigenvalues(&A)
            .map(|v| complex_array(&v))
            .map_err(call.num())
    }

    /// eigenvalues with unit-norm eigenvectors (column k belongs to value k)
    ///
    /// vectors is a ComplexMatrix. Computed from the real Schur form by back-substitution.
    /// Nearly defective matrices give nearly parallel vectors: check vectors.condition()
    /// of the result before relying on them.
    ///
    /// example:
    ///     let e = eigenvectors(matrix([[2, 0], [0, 3]]));
    ///     e.values
    #[family = "linear algebra"]
    fn eigenvectors(call, A: DMatrix<f64>) -> Map as "#{ values, vectors }" {
        let e = eigen::eigen(&A).map_err(call.num())?;
        let mut out = Map::new();
        out.insert(
            "values".into(),
            Dynamic::from_array(complex_array(&e.values)),
        );
        out.insert("vectors".into(), Dynamic::from(ComplexMatrix(e.vectors)));
        Ok(out)
    }

    /// singular values, descending
    ///
    /// example:
    ///     singular_values(matrix([[3, 0], [0, 4]]))   // [4.0, 3.0]
    #[family = "linear algebra"]
    fn singular_values(call, A: DMatrix<f64>) -> Array as "[float]" {
        dense::singular_values(&A)
            .map(|v| float_array(&v))
            .map_err(call.num())
    }

    /// coefficients of det(sI − A), highest power first, leading 1
    ///
    /// Computed from a Hessenberg reduction, not from powers of A.
    ///
    /// example:
    ///     characteristic_polynomial(matrix([[0, 1], [-2, -3]]))   // [1, 3, 2]
    #[family = "linear algebra"]
    fn characteristic_polynomial(call, A: DMatrix<f64>) -> Array as "[float]" {
        poly::characteristic_polynomial(&A)
            .map(|v| float_array(&v))
            .map_err(call.num())
    }

    /// the value of a polynomial at a real or complex point (Horner's rule)
    ///
    /// coefficients: highest power first; s: a number or a Complex.
    ///
    /// example:
    ///     polynomial_value([1, 3, 2], complex(0, 1))   // (j)² + 3j + 2 = 1+3j
    #[family = "linear algebra"]
    fn polynomial_value(call, coefficients: Coefficients, s: nalgebra::Complex<f64>)
        -> Dynamic as "Complex"
    {
        if !(s.re.is_finite() && s.im.is_finite()) {
            return Err(call.fail(format_args!(
                "s is {}, expected a finite number",
                crate::display::complex(s.re, s.im, Default::default())
            )));
        }
        Ok(Dynamic::from(Complex(poly::polynomial_eval(
            &coefficients.0,
            s,
        ))))
    }

    /// roots of a polynomial given highest power first
    ///
    /// Eigenvalues of the balanced companion matrix, polished by Newton steps on the
    /// polynomial; ordered like eigenvalues.
    ///
    /// example:
    ///     polynomial_roots([1, 3, 2])   // [-2+0j, -1+0j]
    #[family = "linear algebra"]
    fn polynomial_roots(call, coefficients: Vec<f64>) -> Array as "[Complex]" {
        poly::polynomial_roots(&coefficients)
            .map(|v| complex_array(&v))
            .map_err(call.num())
    }

    /// count equally spaced values from low to high, both included
    ///
    /// example:
    ///     linear_grid(0, 1, 5)   // [0, 0.25, 0.5, 0.75, 1]
    #[family = "linear algebra"]
    fn linear_grid(call, low: FLOAT, high: FLOAT, count: usize) -> Vector {
        dense::linear_grid(low, high, count)
            .map(Vector::from)
            .map_err(call.num())
    }

    /// count logarithmically spaced values from low to high, both included
    ///
    /// low and high are the end values themselves (not their logarithms), both > 0.
    ///
    /// example:
    ///     log_grid(0.1, 100, 4)   // [0.1, 1, 10, 100]
    #[family = "linear algebra"]
    fn log_grid(call, low: FLOAT, high: FLOAT, count: usize) -> Vector {
        dense::log_grid(low, high, count)
            .map(Vector::from)
            .map_err(call.num())
    }
}
