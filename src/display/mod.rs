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
pub use model::{
    polynomial, system, system_header, transfer_function, transfer_function_inline, transfer_grid,
};
pub use number::{complex, real};
pub use table::table;

/// Display settings (adjustable from a script with `set_precision`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Style {
    /// Significant digits shown (1–17).
    pub precision: usize,
    /// Show every entry of long values (`show(value, #{ all: true })`) instead of the first
    /// and last ones around an elision mark.
    pub full: bool,
}

impl Default for Style {
    fn default() -> Self {
        Style {
            precision: 6,
            full: false,
        }
    }
}

impl Style {
    /// This style with `precision` significant digits.
    pub fn with_precision(precision: usize) -> Self {
        Style {
            precision,
            ..Style::default()
        }
    }
}

/// Which items of a sequence of `len` a display shows: every one when the sequence is
/// short (at most `all` items, or `style.full`), else the first `head`, an elision mark and
/// the last `tail`. One rule for the rows of matrices, arrays, vectors and tables, so that a
/// 2000×2000 matrix prints in milliseconds and every display says what it left out.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Shown {
    /// Items shown from the start.
    pub head: usize,
    /// Items shown from the end (0: none left out).
    pub tail: usize,
    /// Items left out between them.
    pub hidden: usize,
}

/// Rows (and array items) shown at most before eliding: first 10 and last 5.
pub const ROWS: (usize, usize, usize) = (20, 10, 5);
/// Matrix columns shown at most before eliding: first 6 and last 3.
pub const COLUMNS: (usize, usize, usize) = (12, 6, 3);

impl Shown {
    /// The items of `len` shown under the limit `(all, head, tail)`.
    pub fn of(len: usize, (all, head, tail): (usize, usize, usize), style: Style) -> Self {
        if style.full || len <= all {
            return Shown {
                head: len,
                tail: 0,
                hidden: 0,
            };
        }
        Shown {
            head,
            tail,
            hidden: len - head - tail,
        }
    }

    /// The indices shown, in order (`None` marks the place of the elision).
    pub fn indices(&self) -> impl Iterator<Item = Option<usize>> + '_ {
        let start = 0..self.head;
        let end = self.head + self.hidden..self.head + self.hidden + self.tail;
        let mark = (self.hidden > 0).then_some(None);
        start.map(Some).chain(mark).chain(end.map(Some))
    }
}
