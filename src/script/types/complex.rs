//! `Complex` scalars and `ComplexMatrix`.

use nalgebra::DMatrix;

/// A complex scalar, as scripts see it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Complex(pub nalgebra::Complex<f64>);

/// A dense complex matrix, as scripts see it.
#[derive(Debug, Clone, PartialEq)]
pub struct ComplexMatrix(pub DMatrix<nalgebra::Complex<f64>>);

impl From<nalgebra::Complex<f64>> for Complex {
    fn from(z: nalgebra::Complex<f64>) -> Self {
        Complex(z)
    }
}
