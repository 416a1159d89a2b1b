//! Formatting of values for the terminal and reports: numbers, complex numbers, matrices
//! and tables. Pure functions of the value and a [`Style`]; no rhai, no I/O.
//!
//! The layout is our own: a size line (`matrix 2×3`), then the rows indented by two
//! spaces with columns aligned on the decimal point. Numbers use a general format with a
//! fixed count of significant digits, switching to exponent notation for very large and
//! very small magnitudes so that both stay readable side by side.

mod matrix;
mod model;
mod number;
mod table;

pub use matrix::{complex_list, complex_matrix, real_list, real_matrix};
pub use model::{polynomial, system, system_header, transfer_function};
pub use number::{complex, real};
pub use table::table;

/// Display settings (adjustable from a script with `set_precision`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Style {
    /// Significant digits shown (1–17).
    pub precision: usize,
}

impl Default for Style {
    fn default() -> Self {
        Style { precision: 6 }
    }
}
