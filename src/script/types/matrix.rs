//! `Matrix`: a dense real matrix (f64).

use nalgebra::DMatrix;

/// A dense real matrix, as scripts see it.
#[derive(Debug, Clone, PartialEq)]
pub struct Matrix(pub DMatrix<f64>);

impl From<DMatrix<f64>> for Matrix {
    fn from(m: DMatrix<f64>) -> Self {
        Matrix(m)
    }
}
