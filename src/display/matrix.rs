//! Matrices and lists: a size line, then aligned columns.

use super::number::{complex as fmt_complex, real as fmt_real};
use super::Style;
use nalgebra::{Complex, DMatrix};

/// Where a cell is aligned: the width left of the decimal point (or of the exponent, or
/// of the whole cell), and the width from there on.
fn split(cell: &str) -> (usize, usize) {
    let cut = cell.find(['.', 'e']).unwrap_or(cell.len());
    let l = cell[..cut].chars().count();
    (l, cell.chars().count() - l)
}

/// Aligns cells column by column on the decimal point; rows indented by two spaces,
/// columns separated by at least three spaces.
pub(crate) fn align(cells: &[Vec<String>]) -> String {
    let cols = cells.iter().map(Vec::len).max().unwrap_or(0);
    let mut left = vec![0usize; cols];
    let mut right = vec![0usize; cols];
    for row in cells {
        for (j, c) in row.iter().enumerate() {
            let (l, r) = split(c);
            left[j] = left[j].max(l);
            right[j] = right[j].max(r);
        }
    }
    let mut out = String::new();
    for row in cells {
        let mut line = String::from("  ");
        for (j, c) in row.iter().enumerate() {
            let (l, r) = split(c);
            if j > 0 {
                line.push_str("   ");
            }
            line.push_str(&" ".repeat(left[j] - l));
            line.push_str(c);
            line.push_str(&" ".repeat(right[j] - r));
        }
        out.push_str(line.trim_end());
        out.push('\n');
    }
    out
}

/// Complex cells align on their real part's decimal point, so a column of complex
/// numbers reads down cleanly; they are padded to a common width.
fn align_complex(cells: &[Vec<String>]) -> String {
    let cols = cells.iter().map(Vec::len).max().unwrap_or(0);
    let mut width = vec![0usize; cols];
    for row in cells {
        for (j, c) in row.iter().enumerate() {
            width[j] = width[j].max(c.chars().count());
        }
    }
    let mut out = String::new();
    for row in cells {
        let mut line = String::from("  ");
        for (j, c) in row.iter().enumerate() {
            if j > 0 {
                line.push_str("   ");
            }
            line.push_str(&" ".repeat(width[j] - c.chars().count()));
            line.push_str(c);
        }
        out.push_str(line.trim_end());
        out.push('\n');
    }
    out
}

/// A real matrix: `matrix 2×3` then the aligned rows (no trailing newline).
pub fn real_matrix(m: &DMatrix<f64>, style: Style) -> String {
    let head = format!("matrix {}×{}", m.nrows(), m.ncols());
    if m.is_empty() {
        return format!("{head} (empty)");
    }
    let cells: Vec<Vec<String>> = (0..m.nrows())
        .map(|i| (0..m.ncols()).map(|j| fmt_real(m[(i, j)], style)).collect())
        .collect();
    format!("{head}\n{}", align(&cells).trim_end_matches('\n'))
}

/// A complex matrix: `complex matrix 2×2` then the aligned rows.
pub fn complex_matrix(m: &DMatrix<Complex<f64>>, style: Style) -> String {
    let head = format!("complex matrix {}×{}", m.nrows(), m.ncols());
    if m.is_empty() {
        return format!("{head} (empty)");
    }
    let cells: Vec<Vec<String>> = (0..m.nrows())
        .map(|i| {
            (0..m.ncols())
                .map(|j| {
                    let z = m[(i, j)];
                    fmt_complex(z.re, z.im, style)
                })
                .collect()
        })
        .collect();
    format!("{head}\n{}", align_complex(&cells).trim_end_matches('\n'))
}

/// A list of reals on one line: `[1, 2.5, -3]`.
pub fn real_list(v: &[f64], style: Style) -> String {
    let items: Vec<String> = v.iter().map(|&x| fmt_real(x, style)).collect();
    format!("[{}]", items.join(", "))
}

/// A list of complex numbers, one per line when long, else on one line.
pub fn complex_list(v: &[Complex<f64>], style: Style) -> String {
    let items: Vec<String> = v.iter().map(|z| fmt_complex(z.re, z.im, style)).collect();
    let one_line = format!("[{}]", items.join(", "));
    if one_line.chars().count() <= 78 {
        return one_line;
    }
    let mut out = String::from("[\n");
    for it in items {
        out.push_str("  ");
        out.push_str(&it);
        out.push_str(",\n");
    }
    out.push(']');
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn columns_align_on_decimal_point() {
        let m = DMatrix::from_row_slice(2, 2, &[1.5, -20.0, 0.25, 3.0]);
        let s = real_matrix(&m, Style::default());
        assert_eq!(s, "matrix 2×2\n  1.5    -20\n  0.25     3");
    }

    #[test]
    fn empty_matrix_says_so() {
        let m = DMatrix::<f64>::zeros(0, 3);
        assert_eq!(real_matrix(&m, Style::default()), "matrix 0×3 (empty)");
    }
}
