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

impl super::ValueType for Matrix {
    const NAME: &'static str = "Matrix";
    fn show(&self, style: crate::display::Style) -> String {
        crate::display::real_matrix(&self.0, style)
    }
    fn json(&self) -> serde_json::Value {
        crate::script::json::matrix(&self.0)
    }
}
