//! Matrix construction, element access, and the operators between matrices and numbers.

use crate::numeric::linalg::ops;
use crate::script::convert::{
    check_entries, fail, float_array, matrix_value, num, to_count, to_f64, to_f64_vec, to_matrix,
    Rr,
};
use crate::script::docs::Doc;
use crate::script::state;
use crate::script::types::Matrix;
use nalgebra::DMatrix;
use rhai::{Array, Dynamic, Engine, NativeCallContext, FLOAT, INT};

/// Help entries of this file.
pub const DOCS: &[Doc] = &[
    Doc {
        name: "matrix",
        family: "matrices",
        usage: "matrix(rows) → Matrix",
        summary: "a matrix from an array of rows",
        details: "rows: an array of equally long arrays of numbers (ints or floats).",
        example: "let A = matrix([[0, 1], [-2, -3]]);",
    },
    Doc {
        name: "column",
        family: "matrices",
        usage: "column(list) → Matrix",
        summary: "a column vector (n×1) from a list of numbers",
        details: "",
        example: "let b = column([0, 1]);",
    },
    Doc {
        name: "row",
        family: "matrices",
        usage: "row(list) → Matrix",
        summary: "a row vector (1×n) from a list of numbers",
        details: "",
        example: "let c = row([1, 0]);",
    },
    Doc {
        name: "identity",
        family: "matrices",
        usage: "identity(n) → Matrix",
        summary: "the n×n identity matrix",
        details: "",
        example: "identity(3)",
    },
    Doc {
        name: "zero_matrix",
        family: "matrices",
        usage: "zero_matrix(rows, cols) → Matrix",
        summary: "a rows×cols matrix of zeros",
        details: "",
        example: "zero_matrix(2, 3)",
    },
    Doc {
        name: "filled",
        family: "matrices",
        usage: "filled(rows, cols, value) → Matrix",
        summary: "a rows×cols matrix with every entry equal to value",
        details: "",
        example: "filled(2, 2, 0.5)",
    },
    Doc {
        name: "diagonal",
        family: "matrices",
        usage: "diagonal(list) → Matrix\nA.diagonal() → array",
        summary: "builds a diagonal matrix from a list, or extracts the diagonal of a matrix",
        details: "",
        example: "diagonal([1, 2, 3]).diagonal()   // [1.0, 2.0, 3.0]",
    },
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
    Doc {
        name: "get",
        family: "matrices",
        usage: "A.get(i, j) → float",
        summary: "the entry in row i, column j (0-based)",
        details: "",
        example: "matrix([[1, 2], [3, 4]]).get(1, 0)   // 3.0",
    },
    Doc {
        name: "set",
        family: "matrices",
        usage: "A.set(i, j, value)",
        summary: "changes the entry in row i, column j (0-based)",
        details: "",
        example: "let A = identity(2);\nA.set(0, 1, 5);",
    },
    Doc {
        name: "transpose",
        family: "matrices",
        usage: "A.transpose() → Matrix",
        summary: "the transpose",
        details: "",
        example: "row([1, 2]).transpose()",
    },
    Doc {
        name: "trace",
        family: "matrices",
        usage: "A.trace() → float",
        summary: "sum of the diagonal of a square matrix",
        details: "",
        example: "identity(3).trace()   // 3.0",
    },
    Doc {
        name: "to_array",
        family: "matrices",
        usage: "A.to_array() → array of arrays",
        summary: "the entries as an array of rows of floats",
        details: "",
        example: "identity(2).to_array()",
    },
    Doc {
        name: "submatrix",
        family: "matrices",
        usage: "A.submatrix(row, col, rows, cols) → Matrix",
        summary: "the rows×cols block starting at (row, col)",
        details: "",
        example: "identity(4).submatrix(1, 1, 2, 2)",
    },
];

fn to_int_index(v: &Dynamic, fname: &str, arg: &str) -> Rr<usize> {
    to_count(v, fname, arg)
}

fn check_size(ctx: &NativeCallContext, fname: &str, r: usize, c: usize) -> Rr<()> {
    let limit = state::of(ctx)
        .map(|s| s.limits.matrix_entries)
        .unwrap_or(usize::MAX);
    match r.checked_mul(c) {
        Some(n) if n <= limit => Ok(()),
        _ => Err(fail(format!(
            "{fname}: a {r}×{c} matrix exceeds the size limit of {limit} entries\nhint: raise \
             it with --max-matrix-entries if you really mean it"
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
    Matrix(&m.0 * s)
}

/// Registers matrix construction, access and operators.
pub fn register(engine: &mut Engine) {
    engine.register_type_with_name::<Matrix>("Matrix");
    engine.register_fn("matrix", |v: Dynamic| -> Rr<Dynamic> {
        Ok(matrix_value(to_matrix(&v, "matrix", "rows")?))
    });
    engine.register_fn("column", |v: Dynamic| -> Rr<Dynamic> {
        let x = to_f64_vec(&v, "column", "list")?;
        Ok(matrix_value(DMatrix::from_column_slice(x.len(), 1, &x)))
    });
    engine.register_fn("row", |v: Dynamic| -> Rr<Dynamic> {
        let x = to_f64_vec(&v, "row", "list")?;
        Ok(matrix_value(DMatrix::from_row_slice(1, x.len(), &x)))
    });
    engine.register_fn(
        "identity",
        |ctx: NativeCallContext, n: Dynamic| -> Rr<Dynamic> {
            let n = to_count(&n, "identity", "n")?;
            check_size(&ctx, "identity", n, n)?;
            Ok(matrix_value(DMatrix::identity(n, n)))
        },
    );
    engine.register_fn(
        "zero_matrix",
        |ctx: NativeCallContext, r: Dynamic, c: Dynamic| -> Rr<Dynamic> {
            let (r, c) = (
                to_count(&r, "zero_matrix", "rows")?,
                to_count(&c, "zero_matrix", "cols")?,
            );
            check_size(&ctx, "zero_matrix", r, c)?;
            Ok(matrix_value(DMatrix::zeros(r, c)))
        },
    );
    engine.register_fn(
        "filled",
        |ctx: NativeCallContext, r: Dynamic, c: Dynamic, v: Dynamic| -> Rr<Dynamic> {
            let (r, c) = (
                to_count(&r, "filled", "rows")?,
                to_count(&c, "filled", "cols")?,
            );
            let v = to_f64(&v, "filled", "value")?;
            check_size(&ctx, "filled", r, c)?;
            Ok(matrix_value(DMatrix::from_element(r, c, v)))
        },
    );
    engine.register_fn("diagonal", |v: Dynamic| -> Rr<Dynamic> {
        // The main diagonal a_ii, i < min(rows, cols), of any rectangular matrix (nalgebra's
        // `diagonal` panics unless the matrix is square; `[[]]` is 1×0 and has none).
        let main = |m: &DMatrix<f64>| -> Vec<f64> {
            (0..m.nrows().min(m.ncols())).map(|i| m[(i, i)]).collect()
        };
        if let Some(m) = v.read_lock::<Matrix>() {
            return Ok(Dynamic::from_array(float_array(&main(&m.0))));
        }
        if let Some(a) = v.read_lock::<Array>() {
            if a.first().is_some_and(|r| r.is_array()) {
                let m = to_matrix(&v, "diagonal", "A")?;
                return Ok(Dynamic::from_array(float_array(&main(&m))));
            }
        }
        let x = to_f64_vec(&v, "diagonal", "list")?;
        check_entries("diagonal", x.len(), x.len())?;
        Ok(matrix_value(DMatrix::from_diagonal(
            &nalgebra::DVector::from_vec(x),
        )))
    });
    engine.register_get("rows", |m: &mut Matrix| m.0.nrows() as INT);
    engine.register_get("cols", |m: &mut Matrix| m.0.ncols() as INT);
    engine.register_fn(
        "get",
        |m: &mut Matrix, i: Dynamic, j: Dynamic| -> Rr<FLOAT> {
            let (i, j) = (to_int_index(&i, "get", "i")?, to_int_index(&j, "get", "j")?);
            entry(&m.0, i, j, "get")
        },
    );
    engine.register_fn(
        "set",
        |m: &mut Matrix, i: Dynamic, j: Dynamic, v: Dynamic| -> Rr<()> {
            let (i, j) = (to_int_index(&i, "set", "i")?, to_int_index(&j, "set", "j")?);
            let v = to_f64(&v, "set", "value")?;
            entry(&m.0, i, j, "set")?;
            m.0[(i, j)] = v;
            Ok(())
        },
    );
    engine.register_indexer_get(|m: &mut Matrix, idx: Array| -> Rr<FLOAT> {
        if idx.len() != 2 {
            return Err(fail("matrix index: write A[[i, j]] with two indices"));
        }
        let i = to_int_index(&idx[0], "matrix index", "i")?;
        let j = to_int_index(&idx[1], "matrix index", "j")?;
        entry(&m.0, i, j, "matrix index")
    });
    engine.register_fn("transpose", |v: Dynamic| -> Rr<Dynamic> {
        Ok(matrix_value(to_matrix(&v, "transpose", "A")?.transpose()))
    });
    engine.register_fn("trace", |v: Dynamic| -> Rr<FLOAT> {
        ops::trace(&to_matrix(&v, "trace", "A")?).map_err(num("trace"))
    });
    engine.register_fn("to_array", |m: &mut Matrix| -> Array {
        (0..m.0.nrows())
            .map(|i| {
                Dynamic::from_array(
                    (0..m.0.ncols())
                        .map(|j| Dynamic::from_float(m.0[(i, j)]))
                        .collect(),
                )
            })
            .collect()
    });
    engine.register_fn(
        "submatrix",
        |m: &mut Matrix, r0: Dynamic, c0: Dynamic, nr: Dynamic, nc: Dynamic| -> Rr<Matrix> {
            let f = "submatrix";
            let (r0, c0) = (to_count(&r0, f, "row")?, to_count(&c0, f, "col")?);
            let (nr, nc) = (to_count(&nr, f, "rows")?, to_count(&nc, f, "cols")?);
            if r0 + nr > m.0.nrows() || c0 + nc > m.0.ncols() {
                return Err(fail(format!(
                    "submatrix: a {nr}×{nc} block at ({r0}, {c0}) does not fit in the {}×{} matrix",
                    m.0.nrows(),
                    m.0.ncols()
                )));
            }
            Ok(Matrix(m.0.view((r0, c0), (nr, nc)).into_owned()))
        },
    );
    // Operators.
    engine.register_fn("+", |a: Matrix, b: Matrix| -> Rr<Matrix> {
        ops::add(&a.0, &b.0).map(Matrix).map_err(num("+"))
    });
    engine.register_fn("-", |a: Matrix, b: Matrix| -> Rr<Matrix> {
        ops::sub(&a.0, &b.0).map(Matrix).map_err(num("-"))
    });
    engine.register_fn("*", |a: Matrix, b: Matrix| -> Rr<Matrix> {
        if a.0.ncols() == b.0.nrows() {
            check_entries("*", a.0.nrows(), b.0.ncols())?;
        }
        ops::mul(&a.0, &b.0).map(Matrix).map_err(num("*"))
    });
    engine.register_fn("-", |a: Matrix| Matrix(-a.0));
    engine.register_fn("*", |a: Matrix, s: FLOAT| scale(&a, s));
    engine.register_fn("*", |a: Matrix, s: INT| scale(&a, s as FLOAT));
    engine.register_fn("*", |s: FLOAT, a: Matrix| scale(&a, s));
    engine.register_fn("*", |s: INT, a: Matrix| scale(&a, s as FLOAT));
    engine.register_fn("/", |a: Matrix, s: FLOAT| scale(&a, 1.0 / s));
    engine.register_fn("/", |a: Matrix, s: INT| scale(&a, 1.0 / s as FLOAT));
    engine.register_fn("==", |a: Matrix, b: Matrix| a.0 == b.0);
    engine.register_fn("!=", |a: Matrix, b: Matrix| a.0 != b.0);
}
