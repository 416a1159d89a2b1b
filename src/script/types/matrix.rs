//! `Matrix`: a dense real matrix (f64).

use nalgebra::DMatrix;
use std::sync::Arc;

/// A dense real matrix, as scripts see it. The entries are shared: copying the value (a
/// variable read, an argument passed to a built-in) copies a pointer, and a change to one
/// copy (`m.set(i, j, v)`) copies the entries first if another copy still holds them.
#[derive(Debug, Clone, PartialEq)]
pub struct Matrix(pub Arc<DMatrix<f64>>);

impl Matrix {
    /// The entries, for a change: unshared first if another value holds them.
    pub fn make_mut(&mut self) -> &mut DMatrix<f64> {
        Arc::make_mut(&mut self.0)
    }

    /// The entries, moved out when no other value holds them, else copied.
    pub fn into_inner(self) -> DMatrix<f64> {
        Arc::try_unwrap(self.0).unwrap_or_else(|shared| (*shared).clone())
    }
}

impl From<DMatrix<f64>> for Matrix {
    fn from(m: DMatrix<f64>) -> Self {
        Matrix(Arc::new(m))
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
