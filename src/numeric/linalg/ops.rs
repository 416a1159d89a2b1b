//! Shape-checked elementary operations. nalgebra's operators panic on a shape mismatch;
//! these return [`NumError::ShapeMismatch`] naming both shapes instead.

use crate::numeric::check::{shape_of, square};
use crate::numeric::{NumError, NumResult};
use nalgebra::DMatrix;

/// A + B.
pub fn add(a: &DMatrix<f64>, b: &DMatrix<f64>) -> NumResult<DMatrix<f64>> {
    same_shape("matrix sum", a, b)?;
    Ok(a + b)
}

/// A − B.
pub fn sub(a: &DMatrix<f64>, b: &DMatrix<f64>) -> NumResult<DMatrix<f64>> {
    same_shape("matrix difference", a, b)?;
    Ok(a - b)
}

/// A · B (A is r×k, B must be k×c).
pub fn mul(a: &DMatrix<f64>, b: &DMatrix<f64>) -> NumResult<DMatrix<f64>> {
    if a.ncols() != b.nrows() {
        return Err(NumError::shape(
            "matrix product",
            format!(
                "the right factor to have {} rows (the left has {} columns)",
                a.ncols(),
                a.ncols()
            ),
            format!("{} * {}", shape_of(a), shape_of(b)),
        ));
    }
    Ok(a * b)
}

/// The trace (sum of the diagonal) of a square matrix.
pub fn trace(a: &DMatrix<f64>) -> NumResult<f64> {
    square("trace", a)?;
    Ok(a.trace())
}

fn same_shape(what: &str, a: &DMatrix<f64>, b: &DMatrix<f64>) -> NumResult<()> {
    if a.shape() != b.shape() {
        return Err(NumError::shape(
            what,
            "operands of the same shape",
            format!("{} and {}", shape_of(a), shape_of(b)),
        ));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shape_errors_name_both_shapes() {
        let a = DMatrix::<f64>::zeros(2, 3);
        let b = DMatrix::<f64>::zeros(2, 2);
        let e = mul(&a, &b).unwrap_err().to_string();
        assert!(e.contains("2×3 * 2×2"), "{e}");
        let e = add(&a, &b).unwrap_err().to_string();
        assert!(e.contains("2×3 and 2×2"), "{e}");
    }
}
