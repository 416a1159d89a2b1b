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

impl super::ValueType for Complex {
    const NAME: &'static str = "Complex";
    fn show(&self, style: crate::display::Style) -> String {
        crate::display::complex(self.0.re, self.0.im, style)
    }
    fn json(&self) -> serde_json::Value {
        crate::script::json::complex(self.0)
    }
}

impl super::ValueType for ComplexMatrix {
    const NAME: &'static str = "ComplexMatrix";
    fn show(&self, style: crate::display::Style) -> String {
        crate::display::complex_matrix(&self.0, style)
    }
    fn json(&self) -> serde_json::Value {
        let m = &self.0;
        let z = crate::script::json::complex;
        serde_json::Value::Array(
            (0..m.nrows())
                .map(|i| serde_json::Value::Array((0..m.ncols()).map(|j| z(m[(i, j)])).collect()))
                .collect(),
        )
    }
}
