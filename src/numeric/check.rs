//! Argument checks shared by every numerical routine: finiteness and shapes.
//!
//! Routines call these first so that user input never reaches code that could panic
//! (nalgebra's operators panic on shape mismatch; its SVD panics on 0×0).

use super::error::{NumError, NumResult};
use nalgebra::DMatrix;

/// Fails with [`NumError::NotFinite`] at the first NaN or infinite entry of `m`.
pub fn finite(what: &str, m: &DMatrix<f64>) -> NumResult<()> {
    for j in 0..m.ncols() {
        for i in 0..m.nrows() {
            let v = m[(i, j)];
            if !v.is_finite() {
                return Err(NumError::NotFinite {
                    what: what.to_string(),
                    row: i,
                    col: j,
                    value: v,
                });
            }
        }
    }
    Ok(())
}

/// Fails with [`NumError::NotSquare`] unless `m` is square.
pub fn square(what: &str, m: &DMatrix<f64>) -> NumResult<usize> {
    if m.nrows() != m.ncols() {
        return Err(NumError::NotSquare {
            what: what.to_string(),
            rows: m.nrows(),
            cols: m.ncols(),
        });
    }
    Ok(m.nrows())
}

/// Finite and square: the usual precondition of a decomposition.
pub fn finite_square(what: &str, m: &DMatrix<f64>) -> NumResult<usize> {
    let n = square(what, m)?;
    finite(what, m)?;
    Ok(n)
}

/// Fails unless `m` has exactly `rows`×`cols`.
pub fn dims(what: &str, m: &DMatrix<f64>, rows: usize, cols: usize) -> NumResult<()> {
    if m.nrows() != rows || m.ncols() != cols {
        return Err(NumError::shape(
            what,
            format!("{rows}×{cols}"),
            format!("{}×{}", m.nrows(), m.ncols()),
        ));
    }
    Ok(())
}

/// Fails on the first NaN or infinite entry of the vector `v`, naming its index.
pub fn finite_values(what: &str, v: &[f64]) -> NumResult<()> {
    match v.iter().position(|x| !x.is_finite()) {
        None => Ok(()),
        Some(i) => Err(NumError::NotFinite {
            what: what.into(),
            row: i,
            col: 0,
            value: v[i],
        }),
    }
}

/// Fails unless `m` (an input matrix `B`) has one row per state, `n`.
pub fn rows(what: &str, m: &DMatrix<f64>, n: usize) -> NumResult<()> {
    if m.nrows() != n {
        return Err(NumError::shape(
            what,
            format!("{n} rows (one per state, as A is {n}×{n})"),
            shape_of(m),
        ));
    }
    Ok(())
}

/// Fails unless `m` (an output matrix `C`) has one column per state, `n`.
pub fn cols(what: &str, m: &DMatrix<f64>, n: usize) -> NumResult<()> {
    if m.ncols() != n {
        return Err(NumError::shape(
            what,
            format!("{n} columns (one per state, as A is {n}×{n})"),
            shape_of(m),
        ));
    }
    Ok(())
}

/// Formats a shape the way error messages write it: `3×4`.
pub fn shape_of(m: &DMatrix<f64>) -> String {
    format!("{}×{}", m.nrows(), m.ncols())
}
