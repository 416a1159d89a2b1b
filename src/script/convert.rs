//! Conversions between rhai values and numeric-layer values, with errors that name the
//! argument and what was found.
//!
//! Engineers mix ints and floats freely and write matrices as nested arrays, so every
//! built-in takes its numeric arguments as `Dynamic` and converts them here: a number may
//! be an int or a float; a matrix may be a `Matrix`, an array of arrays of numbers, or a
//! single number (a 1×1 matrix).

use super::types::{Complex, Matrix, Vector};
use crate::numeric::NumError;
use nalgebra::DMatrix;
use rhai::{Array, Dynamic, EvalAltResult, Position, FLOAT, INT};

/// Result type of built-ins.
pub type Rr<T> = Result<T, Box<EvalAltResult>>;

/// A runtime error with a message (the engine fills in the call position).
pub fn fail(msg: impl Into<String>) -> Box<EvalAltResult> {
    Box::new(EvalAltResult::ErrorRuntime(
        Dynamic::from(msg.into()),
        Position::NONE,
    ))
}

/// Maps a numeric error to a runtime error prefixed with the built-in's name.
pub fn num(name: &str) -> impl Fn(NumError) -> Box<EvalAltResult> + '_ {
    move |e| fail(format!("{name}: {e}"))
}

/// The function pointer a value holds, if any — without copying a value of another type
/// (a `clone().try_cast()` would copy a million-row matrix only to find it is not one).
pub fn as_fnptr(v: &Dynamic) -> Option<rhai::FnPtr> {
    if v.is_fnptr() {
        v.clone().try_cast::<rhai::FnPtr>()
    } else {
        None
    }
}

/// The user-facing name of a value's type.
pub fn type_name(v: &Dynamic) -> String {
    if let Some(k) = super::types::kind_of(v) {
        k.name.into()
    } else if v.is_unit() {
        "nothing (unit)".into()
    } else {
        let t = v.type_name();
        match t {
            "i64" => "int".into(),
            "f64" => "float".into(),
            "string" | "ImmutableString" => "string".into(),
            "array" => "array".into(),
            "map" => "map".into(),
            other => other.rsplit("::").next().unwrap_or(other).to_string(),
        }
    }
}

/// A number (int or float).
pub fn to_f64(v: &Dynamic, fname: &str, arg: &str) -> Rr<f64> {
    if let Ok(x) = v.as_float() {
        Ok(x)
    } else if let Ok(i) = v.as_int() {
        Ok(i as f64)
    } else {
        Err(fail(format!(
            "{fname}: {arg} must be a number, found {}",
            type_name(v)
        )))
    }
}

/// A finite number.
pub fn to_finite(v: &Dynamic, fname: &str, arg: &str) -> Rr<f64> {
    let x = to_f64(v, fname, arg)?;
    if !x.is_finite() {
        return Err(fail(format!(
            "{fname}: {arg} is {x}, expected a finite number"
        )));
    }
    Ok(x)
}

/// A non-negative whole number (an int, or a float with an integral value).
pub fn to_count(v: &Dynamic, fname: &str, arg: &str) -> Rr<usize> {
    let x = to_f64(v, fname, arg)?;
    if !(x.is_finite() && x >= 0.0 && x.fract() == 0.0 && x <= 1e15) {
        return Err(fail(format!(
            "{fname}: {arg} must be a whole number ≥ 0, found {x}"
        )));
    }
    Ok(x as usize)
}

/// A list of numbers from an array (or a row/column `Matrix`).
pub fn to_f64_vec(v: &Dynamic, fname: &str, arg: &str) -> Rr<Vec<f64>> {
    if let Some(x) = v.read_lock::<Vector>() {
        return Ok(x.0.to_vec());
    }
    if let Some(m) = v.read_lock::<Matrix>() {
        if m.0.nrows() == 1 || m.0.ncols() == 1 {
            return Ok(m.0.iter().copied().collect());
        }
        return Err(fail(format!(
            "{fname}: {arg} must be a list of numbers, found a {}×{} matrix",
            m.0.nrows(),
            m.0.ncols()
        )));
    }
    let Some(a) = v.read_lock::<Array>() else {
        return Err(fail(format!(
            "{fname}: {arg} must be an array of numbers, found {}",
            type_name(v)
        )));
    };
    let mut out = Vec::with_capacity(a.len());
    for (k, x) in a.iter().enumerate() {
        match number_of(x) {
            Some(x) => out.push(x),
            None => return to_f64(x, fname, &format!("{arg}[{k}]")).map(|_| out),
        }
    }
    Ok(out)
}

/// A list of numbers shared with the value when it is a `Vector` (no copy), else
/// converted once as [`to_f64_vec`] does. For built-ins that only read long signals.
pub fn to_shared_vec(v: &Dynamic, fname: &str, arg: &str) -> Rr<std::sync::Arc<Vec<f64>>> {
    if let Some(x) = v.read_lock::<Vector>() {
        return Ok(x.0.clone());
    }
    to_f64_vec(v, fname, arg).map(std::sync::Arc::new)
}

/// A matrix shared with the value when it is a `Matrix` (no copy), else converted as
/// [`to_matrix`] does. For built-ins that only read large matrices.
pub fn to_shared_matrix(v: &Dynamic, fname: &str, arg: &str) -> Rr<std::sync::Arc<DMatrix<f64>>> {
    if let Some(m) = v.read_lock::<Matrix>() {
        return Ok(m.0.clone());
    }
    to_matrix(v, fname, arg).map(std::sync::Arc::new)
}

/// Whether a value is a list of values: an array or a `Vector`.
pub fn is_list(v: &Dynamic) -> bool {
    v.is_array() || v.is::<Vector>()
}

/// The value of an int or a float.
pub fn number_of(x: &Dynamic) -> Option<f64> {
    x.as_float()
        .ok()
        .or_else(|| x.as_int().ok().map(|i| i as f64))
}

/// A list of finite numbers: NaN or an infinity is refused, naming the entry.
pub fn to_finite_vec(v: &Dynamic, fname: &str, arg: &str) -> Rr<Vec<f64>> {
    let x = to_f64_vec(v, fname, arg)?;
    if let Some(k) = x.iter().position(|x| !x.is_finite()) {
        return Err(fail(format!(
            "{fname}: {arg}[{k}] is {}, expected a finite number",
            x[k]
        )));
    }
    Ok(x)
}

/// A matrix: a `Matrix`, an array of arrays of numbers (rows), or a single number.
pub fn to_matrix(v: &Dynamic, fname: &str, arg: &str) -> Rr<DMatrix<f64>> {
    if let Some(m) = v.read_lock::<Matrix>() {
        return Ok((*m.0).clone());
    }
    if let Ok(x) = v.as_float() {
        return Ok(DMatrix::from_element(1, 1, x));
    }
    if let Ok(i) = v.as_int() {
        return Ok(DMatrix::from_element(1, 1, i as f64));
    }
    if let Some(a) = v.read_lock::<Array>() {
        return rows_to_matrix(&a, fname, arg);
    }
    let hint = if v.is::<Vector>() {
        "\nhint: column(v) or row(v) makes a Matrix of a Vector"
    } else {
        ""
    };
    Err(fail(format!(
        "{fname}: {arg} must be a Matrix or an array of rows, found {}{hint}",
        type_name(v)
    )))
}

/// Refuses, before allocating, a `rows`×`cols` result larger than the session's matrix
/// size limit (`--max-matrix-entries`).
pub fn check_entries(fname: &str, rows: usize, cols: usize) -> Rr<()> {
    crate::sandbox::Limits::check_matrix(fname, rows, cols).map_err(fail)
}

/// A matrix from an array of rows, each an array of numbers of equal length.
pub fn rows_to_matrix(a: &Array, fname: &str, arg: &str) -> Rr<DMatrix<f64>> {
    if a.is_empty() {
        return Ok(DMatrix::zeros(0, 0));
    }
    if let Some(first) = a
        .first()
        .and_then(|r| r.read_lock::<Array>().map(|r| r.len()))
    {
        check_entries(fname, a.len(), first)?;
    }
    let mut rows: Vec<Vec<f64>> = Vec::with_capacity(a.len());
    for (i, r) in a.iter().enumerate() {
        let Some(ra) = r.read_lock::<Array>() else {
            if r.is::<INT>() || r.is::<FLOAT>() {
                return Err(fail(format!(
                    "{fname}: {arg} must be an array of rows (an array of arrays), found an \
                     array of numbers\nhint: write [[1, 2, 3]] for a row, or use row([...]) or \
                     column([...])"
                )));
            }
            return Err(fail(format!(
                "{fname}: {arg}[{i}] must be a row (an array of numbers), found {}",
                type_name(r)
            )));
        };
        let row: Vec<f64> = ra
            .iter()
            .enumerate()
            .map(|(j, x)| to_f64(x, fname, &format!("{arg}[{i}][{j}]")))
            .collect::<Rr<_>>()?;
        if let Some(first) = rows.first() {
            if first.len() != row.len() {
                return Err(fail(format!(
                    "{fname}: {arg}: row {i} has {} entries, expected {} like row 0",
                    row.len(),
                    first.len()
                )));
            }
        }
        rows.push(row);
    }
    let (r, c) = (rows.len(), rows[0].len());
    Ok(DMatrix::from_fn(r, c, |i, j| rows[i][j]))
}

/// A complex number from a `Complex` or a real number.
pub fn to_complex(v: &Dynamic, fname: &str, arg: &str) -> Rr<nalgebra::Complex<f64>> {
    if let Some(z) = v.read_lock::<Complex>() {
        return Ok(z.0);
    }
    to_f64(v, fname, arg)
        .map(|x| nalgebra::Complex::new(x, 0.0))
        .map_err(|_| {
            fail(format!(
                "{fname}: {arg} must be a number, found {}",
                type_name(v)
            ))
        })
}

/// A list of complex numbers from an array of `Complex` or reals.
pub fn to_complex_vec(v: &Dynamic, fname: &str, arg: &str) -> Rr<Vec<nalgebra::Complex<f64>>> {
    let Some(a) = v.read_lock::<Array>() else {
        return Err(fail(format!(
            "{fname}: {arg} must be an array, found {}",
            type_name(v)
        )));
    };
    a.iter()
        .enumerate()
        .map(|(k, x)| to_complex(x, fname, &format!("{arg}[{k}]")))
        .collect()
}

/// Wraps a matrix for the script.
pub fn matrix_value(m: DMatrix<f64>) -> Dynamic {
    Dynamic::from(Matrix::from(m))
}

/// An array of `Complex` values.
pub fn complex_array(v: &[nalgebra::Complex<f64>]) -> Array {
    v.iter().map(|z| Dynamic::from(Complex(*z))).collect()
}

/// An array of floats.
pub fn float_array(v: &[f64]) -> Array {
    v.iter().map(|&x| Dynamic::from_float(x)).collect()
}

/// Reads a string argument.
pub fn to_str(v: &Dynamic, fname: &str, arg: &str) -> Rr<String> {
    if let Some(s) = v.read_lock::<rhai::ImmutableString>() {
        return Ok(s.to_string());
    }
    Err(fail(format!(
        "{fname}: {arg} must be a string, found {}",
        type_name(v)
    )))
}

/// A model: a `System`, or a `TransferFunction` (realized minimally in state space).
pub fn to_system(
    v: &Dynamic,
    fname: &str,
    arg: &str,
) -> Rr<crate::numeric::lti::system::StateSpace> {
    if let Some(s) = v.read_lock::<super::types::System>() {
        return Ok(s.0.clone());
    }
    if let Some(t) = v.read_lock::<super::types::TransferFunction>() {
        return crate::numeric::lti::realize::from_transfer_function(&t.0).map_err(num(fname));
    }
    if let Some(rows) = v.read_lock::<Array>() {
        return tf_grid(&rows, fname, arg);
    }
    Err(fail(format!(
        "{fname}: {arg} must be a System, a TransferFunction or a grid of them, found {}",
        type_name(v)
    )))
}

/// A minimal model of a grid of transfer functions `[[g11, g12], [g21, g22]]` (rows are
/// outputs, columns inputs; a number is a static gain), by
/// [`crate::numeric::lti::realize::from_transfer_function_grid`].
fn tf_grid(rows: &Array, fname: &str, arg: &str) -> Rr<crate::numeric::lti::system::StateSpace> {
    use crate::numeric::lti::tf::TransferFunction as Tf;
    let dt = rows
        .iter()
        .filter_map(|r| r.read_lock::<Array>().map(|r| r.clone()))
        .flatten()
        .find_map(|e| {
            e.read_lock::<super::types::TransferFunction>()
                .map(|t| t.0.dt)
        })
        .unwrap_or(0.0);
    let mut grid: Vec<Vec<Tf>> = Vec::with_capacity(rows.len());
    for (i, r) in rows.iter().enumerate() {
        let Some(r) = r.read_lock::<Array>() else {
            return Err(fail(format!(
                "{fname}: {arg} must be a grid of transfer functions (an array of rows), but \
                 {arg}[{i}] is {}",
                type_name(r)
            )));
        };
        let mut row = Vec::with_capacity(r.len());
        for (j, e) in r.iter().enumerate() {
            if let Some(t) = e.read_lock::<super::types::TransferFunction>() {
                row.push(t.0.clone());
            } else if let Some(k) = number_of(e) {
                row.push(Tf::new(&[k], &[1.0], dt).map_err(num(fname))?);
            } else {
                return Err(fail(format!(
                    "{fname}: {arg}[{i}][{j}] must be a TransferFunction or a number, found {}",
                    type_name(e)
                )));
            }
        }
        grid.push(row);
    }
    crate::numeric::lti::realize::from_transfer_function_grid(&grid)
        .map(|r| r.system)
        .map_err(num(fname))
}

/// Wraps a transfer function for the script.
pub fn tf_value(t: crate::numeric::lti::tf::TransferFunction) -> Dynamic {
    Dynamic::from(super::types::TransferFunction(t))
}

/// Wraps a model for the script.
pub fn system_value(s: crate::numeric::lti::system::StateSpace) -> Dynamic {
    Dynamic::from(super::types::System(s))
}
