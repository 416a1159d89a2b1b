//! Matrix construction, element access, and the operators between matrices and numbers.

use crate::numeric::linalg::ops;
use crate::script::convert::{
    check_entries, fail, float_array, matrix_value, num, to_count, to_f64_vec, Rr,
};
use crate::script::declare::Call;
use crate::script::docs::Doc;
use crate::script::state;
use crate::script::types::{Matrix, Vector};
use nalgebra::DMatrix;
use rhai::{Array, Dynamic, Engine, FLOAT, INT};

/// Help pages of the property getters registered by hand in [`register`] (methods and the
/// rest are declared in `BUILTINS`).
pub const DOCS: &[Doc] = &[
    Doc {
        name: "rows",
        family: "matrices",
        usage: "A.rows → int",
        summary: "number of rows",
        details: "",
        example: "identity(3).rows",
    },
    Doc {
        name: "cols",
        family: "matrices",
        usage: "A.cols → int",
        summary: "number of columns",
        details: "",
        example: "zero_matrix(2, 5).cols",
    },
];

fn to_int_index(v: &Dynamic, fname: &str, arg: &str) -> Rr<usize> {
    to_count(v, fname, arg)
}

fn check_size(call: &Call, r: usize, c: usize) -> Rr<()> {
    let limit = state::of(call.ctx())
        .map(|s| s.limits.matrix_entries)
        .unwrap_or(usize::MAX);
    match r.checked_mul(c) {
        Some(n) if n <= limit => Ok(()),
        _ => Err(call.fail(format_args!(
            "a {r}×{c} matrix exceeds the size limit of {limit} entries\nhint: raise it with \
             --max-matrix-entries if you really mean it"
        ))),
    }
}

fn entry(m: &DMatrix<f64>, i: usize, j: usize, fname: &str) -> Rr<f64> {
    if i >= m.nrows() || j >= m.ncols() {
        return Err(fail(format!(
            "{fname}: index ({i}, {j}) is outside the {}×{} matrix",
            m.nrows(),
            m.ncols()
        )));
    }
    Ok(m[(i, j)])
}

fn scale(m: &Matrix, s: FLOAT) -> Matrix {
    Matrix::from(&*m.0 * s)
}

/// Registers matrix construction, access and operators.
pub fn register(engine: &mut Engine) {
    engine.register_get("rows", |m: &mut Matrix| m.0.nrows() as INT);
    engine.register_get("cols", |m: &mut Matrix| m.0.ncols() as INT);
    engine.register_indexer_get(|m: &mut Matrix, idx: Array| -> Rr<FLOAT> {
        if idx.len() != 2 {
            return Err(fail("matrix index: write A[[i, j]] with two indices"));
        }
        let i = to_int_index(&idx[0], "matrix index", "i")?;
        let j = to_int_index(&idx[1], "matrix index", "j")?;
        entry(&m.0, i, j, "matrix index")
    });
    // Operators.
    engine.register_fn("+", |a: Matrix, b: Matrix| -> Rr<Matrix> {
        ops::add(&a.0, &b.0).map(Matrix::from).map_err(num("+"))
    });
    engine.register_fn("-", |a: Matrix, b: Matrix| -> Rr<Matrix> {
        ops::sub(&a.0, &b.0).map(Matrix::from).map_err(num("-"))
    });
    engine.register_fn("*", |a: Matrix, b: Matrix| -> Rr<Matrix> {
        if a.0.ncols() == b.0.nrows() {
            check_entries("*", a.0.nrows(), b.0.ncols())?;
        }
        ops::mul(&a.0, &b.0).map(Matrix::from).map_err(num("*"))
    });
    engine.register_fn("-", |a: Matrix| Matrix::from(-a.into_inner()));
    engine.register_fn("*", |a: Matrix, s: FLOAT| scale(&a, s));
    engine.register_fn("*", |a: Matrix, s: INT| scale(&a, s as FLOAT));
    engine.register_fn("*", |s: FLOAT, a: Matrix| scale(&a, s));
    engine.register_fn("*", |s: INT, a: Matrix| scale(&a, s as FLOAT));
    engine.register_fn("/", |a: Matrix, s: FLOAT| scale(&a, 1.0 / s));
    engine.register_fn("/", |a: Matrix, s: INT| scale(&a, 1.0 / s as FLOAT));
    engine.register_fn("==", |a: Matrix, b: Matrix| a.0 == b.0);
    engine.register_fn("!=", |a: Matrix, b: Matrix| a.0 != b.0);
}

crate::builtins! {
    /// the entry in row i, column j (0-based)
    ///
    /// A[[i, j]] reads the same entry.
    ///
    /// example:
    ///     matrix([[1, 2], [3, 4]]).get(1, 0)   // 3.0
    #[family = "matrices"]
    fn get(call, &mut A: Matrix, i: usize, j: usize) -> FLOAT {
        entry(&A.0, i, j, call.name)
    }

    /// changes the entry in row i, column j (0-based), in place
    ///
    /// example:
    ///     let A = identity(2);
    ///     A.set(0, 1, 5);
    #[family = "matrices"]
    fn set(call, &mut A: Matrix, i: usize, j: usize, value: FLOAT) -> () {
        entry(&A.0, i, j, call.name)?;
        A.make_mut()[(i, j)] = value;
        Ok(())
    }

    /// column j (0-based) of a matrix as a Vector: one signal of a response or a CSV file
    ///
    /// example:
    ///     let r = step_response(plant);
    ///     let y0 = column_of(r.y, 0);
    ///     y0[-1]
    #[family = "matrices"]
    fn column_of(call, &mut A: Matrix, j: usize) -> Vector {
        if j >= A.0.ncols() {
            return Err(call.fail(format_args!(
                "column {j} is outside the {}×{} matrix",
                A.0.nrows(),
                A.0.ncols()
            )));
        }
        Ok(Vector::from(A.0.column(j).iter().copied().collect::<Vec<_>>()))
    }

    /// row i (0-based) of a matrix as a Vector
    ///
    /// example:
    ///     row_of(matrix([[1, 2], [3, 4]]), 1)   // [3, 4]
    #[family = "matrices"]
    fn row_of(call, &mut A: Matrix, i: usize) -> Vector {
        if i >= A.0.nrows() {
            return Err(call.fail(format_args!(
                "row {i} is outside the {}×{} matrix",
                A.0.nrows(),
                A.0.ncols()
            )));
        }
        Ok(Vector::from(A.0.row(i).iter().copied().collect::<Vec<_>>()))
    }

    /// the entries as an array of rows of floats
    ///
    /// example:
    ///     identity(2).to_array()
    #[family = "matrices"]
    fn to_array(call, &mut A: Matrix) -> Array {
        Ok((0..A.0.nrows())
            .map(|i| Dynamic::from_array((0..A.0.ncols()).map(|j| Dynamic::from_float(A.0[(i, j)])).collect()))
            .collect())
    }

    /// a matrix from an array of rows
    ///
    /// rows: an array of equally long arrays of numbers (ints or floats).
    ///
    /// example:
    ///     let A = matrix([[0, 1], [-2, -3]]);
    #[family = "matrices"]
    fn matrix(call, rows: DMatrix<f64>) -> Dynamic as "Matrix" {
        Ok(matrix_value(rows))
    }

    /// a column vector (n×1) from a list of numbers
    ///
    /// example:
    ///     let b = column([0, 1]);
    #[family = "matrices"]
    fn column(call, list: Vec<f64>) -> Dynamic as "Matrix" {
        Ok(matrix_value(DMatrix::from_column_slice(list.len(), 1, &list)))
    }

    /// a row vector (1×n) from a list of numbers
    ///
    /// example:
    ///     let c = row([1, 0]);
    #[family = "matrices"]
    fn row(call, list: Vec<f64>) -> Dynamic as "Matrix" {
        Ok(matrix_value(DMatrix::from_row_slice(1, list.len(), &list)))
    }

    /// the n×n identity matrix
    ///
    /// example:
    ///     identity(3)
    #[family = "matrices"]
    fn identity(call, n: usize) -> Dynamic as "Matrix" {
        check_size(&call, n, n)?;
        Ok(matrix_value(DMatrix::identity(n, n)))
    }

    /// a rows×cols matrix of zeros
    ///
    /// example:
    ///     zero_matrix(2, 3)
    #[family = "matrices"]
    fn zero_matrix(call, rows: usize, cols: usize) -> Dynamic as "Matrix" {
        check_size(&call, rows, cols)?;
        Ok(matrix_value(DMatrix::zeros(rows, cols)))
    }

    /// a rows×cols matrix with every entry equal to value
    ///
    /// example:
    ///     filled(2, 2, 0.5)
    #[family = "matrices"]
    fn filled(call, rows: usize, cols: usize, value: FLOAT) -> Dynamic as "Matrix" {
        check_size(&call, rows, cols)?;
        Ok(matrix_value(DMatrix::from_element(rows, cols, value)))
    }

    /// builds a diagonal matrix from a list, or extracts the diagonal of a matrix
    ///
    /// A list of numbers gives the square matrix with it on the diagonal; a Matrix (or an
    /// array of rows) gives its main diagonal a_ii, i < min(rows, cols), as an array. As a
    /// method: A.diagonal().
    ///
    /// example:
    ///     diagonal([1, 2, 3]).diagonal()   // [1.0, 2.0, 3.0]
    #[family = "matrices"]
    fn diagonal(call, list_or_matrix: Dynamic) -> Dynamic as "Matrix | array" {
        let v = list_or_matrix;
        // The main diagonal of any rectangular matrix (nalgebra's `diagonal` panics unless
        // the matrix is square; `[[]]` is 1×0 and has none).
        let main = |m: &DMatrix<f64>| -> Vec<f64> {
            (0..m.nrows().min(m.ncols())).map(|i| m[(i, i)]).collect()
        };
        if let Some(m) = v.read_lock::<Matrix>() {
            return Ok(Dynamic::from_array(float_array(&main(&m.0))));
        }
        if let Some(a) = v.read_lock::<Array>() {
            if a.first().is_some_and(|r| r.is_array()) {
                let m = call.matrix(&v, "A")?;
                return Ok(Dynamic::from_array(float_array(&main(&m))));
            }
        }
        let x = to_f64_vec(&v, call.name, "list")?;
        check_entries(call.name, x.len(), x.len())?;
        Ok(matrix_value(DMatrix::from_diagonal(
            &nalgebra::DVector::from_vec(x),
        )))
    }

    /// the transpose
    ///
    /// As a method: A.transpose().
    ///
    /// example:
    ///     row([1, 2]).transpose()
    #[family = "matrices"]
    fn transpose(call, A: DMatrix<f64>) -> Dynamic as "Matrix" {
        Ok(matrix_value(A.transpose()))
    }

    /// sum of the diagonal of a square matrix
    ///
    /// As a method: A.trace().
    ///
    /// example:
    ///     identity(3).trace()   // 3.0
    #[family = "matrices"]
    fn trace(call, A: DMatrix<f64>) -> FLOAT {
        ops::trace(&A).map_err(call.num())
    }

    /// the rows×cols block starting at (row, col)
    ///
    /// As a method: A.submatrix(row, col, rows, cols); indices are 0-based.
    ///
    /// example:
    ///     identity(4).submatrix(1, 1, 2, 2)
    #[family = "matrices"]
    fn submatrix(call, A: DMatrix<f64>, row: usize, col: usize, rows: usize, cols: usize)
        -> Matrix
    {
        if row + rows > A.nrows() || col + cols > A.ncols() {
            return Err(call.fail(format_args!(
                "a {rows}×{cols} block at ({row}, {col}) does not fit in the {}×{} matrix",
                A.nrows(),
                A.ncols()
            )));
        }
        Ok(Matrix::from(A.view((row, col), (rows, cols)).into_owned()))
    }
}
