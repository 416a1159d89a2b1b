//! Matrices and lists: a size line, then aligned columns.

use super::number::{complex as fmt_complex, real as fmt_real};
use super::{Shown, Style, COLUMNS, ROWS};
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

/// The cells of an `r`×`c` matrix as the display shows them: every entry of a small one;
/// of a large one the first and last rows and columns ([`Shown`]), with `⋮` and `…` where
/// entries are left out.
fn shown_cells(
    rows: usize,
    cols: usize,
    style: Style,
    cell: impl Fn(usize, usize) -> String,
) -> (Vec<Vec<String>>, bool) {
    let rs = Shown::of(rows, ROWS, style);
    let cs = Shown::of(cols, COLUMNS, style);
    let cells = rs
        .indices()
        .map(|i| {
            cs.indices()
                .map(|j| match (i, j) {
                    (Some(i), Some(j)) => cell(i, j),
                    (None, None) => "⋱".to_string(),
                    (None, Some(_)) => "⋮".to_string(),
                    (Some(_), None) => "…".to_string(),
                })
                .collect()
        })
        .collect();
    (cells, rs.hidden > 0 || cs.hidden > 0)
}

/// The size line of a matrix display, saying when entries are left out.
fn size_line(kind: &str, m: usize, n: usize, elided: bool) -> String {
    if elided {
        format!("{kind} {m}×{n} (first and last rows and columns; show(value, #{{ all: true }}) for every entry)")
    } else {
        format!("{kind} {m}×{n}")
    }
}

/// A real matrix: `matrix 2×3` then the aligned rows (no trailing newline); a large one
/// shows its first and last rows and columns only.
pub fn real_matrix(m: &DMatrix<f64>, style: Style) -> String {
    if m.is_empty() {
        return format!("matrix {}×{} (empty)", m.nrows(), m.ncols());
    }
    let (cells, elided) = shown_cells(m.nrows(), m.ncols(), style, |i, j| {
        fmt_real(m[(i, j)], style)
    });
    let head = size_line("matrix", m.nrows(), m.ncols(), elided);
    format!("{head}\n{}", align(&cells).trim_end_matches('\n'))
}

/// A complex matrix: `complex matrix 2×2` then the aligned rows; a large one elided as
/// [`real_matrix`].
pub fn complex_matrix(m: &DMatrix<Complex<f64>>, style: Style) -> String {
    if m.is_empty() {
        return format!("complex matrix {}×{} (empty)", m.nrows(), m.ncols());
    }
    let (cells, elided) = shown_cells(m.nrows(), m.ncols(), style, |i, j| {
        let z = m[(i, j)];
        fmt_complex(z.re, z.im, style)
    });
    let head = size_line("complex matrix", m.nrows(), m.ncols(), elided);
    format!("{head}\n{}", align_complex(&cells).trim_end_matches('\n'))
}

/// A list of reals on one line: `[1, 2.5, -3]`; a long one shows its first and last
/// values and how many there are: `[0, 0.1, …, 99.9, 100] (1001 values)`.
pub fn real_list(v: &[f64], style: Style) -> String {
    let shown = Shown::of(v.len(), ROWS, style);
    let items: Vec<String> = shown
        .indices()
        .map(|i| i.map_or_else(|| "…".to_string(), |i| fmt_real(v[i], style)))
        .collect();
    if shown.hidden > 0 {
        format!("[{}] ({} values)", items.join(", "), v.len())
    } else {
        format!("[{}]", items.join(", "))
    }
}

/// A list of complex numbers, one per line when long, else on one line.
pub fn complex_list(v: &[Complex<f64>], style: Style) -> String {
    let shown = Shown::of(v.len(), ROWS, style);
    let items: Vec<String> = shown
        .indices()
        .map(|i| match i {
            Some(i) => fmt_complex(v[i].re, v[i].im, style),
            None => "…".to_string(),
        })
        .collect();
    let count = if shown.hidden > 0 {
        format!(" ({} values)", v.len())
    } else {
        String::new()
    };
    let one_line = format!("[{}]{count}", items.join(", "));
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
    out.push_str(&count);
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
    fn a_large_matrix_shows_its_first_and_last_rows_and_columns() {
        let m = DMatrix::from_fn(2000, 2000, |i, j| (i * 2000 + j) as f64);
        let s = real_matrix(&m, Style::default());
        let lines: Vec<&str> = s.lines().collect();
        // size line, 10 head rows, the ⋮ row, 5 tail rows
        assert_eq!(lines.len(), 1 + 10 + 1 + 5, "{s}");
        assert!(
            lines[0].starts_with("matrix 2000×2000 (first and last"),
            "{s}"
        );
        let first: Vec<&str> = lines[1].split_whitespace().collect();
        assert_eq!(
            first,
            ["0", "1", "2", "3", "4", "5", "…", "1997", "1998", "1999"]
        );
        assert!(lines[11].contains('⋮') && lines[11].contains('⋱'), "{s}");
        assert!(lines[16].trim_start().starts_with("3.998e+06"), "{s}");
        let full = Style {
            full: true,
            ..Style::default()
        };
        let small = DMatrix::from_fn(25, 2, |i, _| i as f64);
        assert_eq!(real_matrix(&small, full).lines().count(), 26);
    }

    #[test]
    fn lists_elide_past_twenty_values_and_say_how_many() {
        let v: Vec<f64> = (0..20).map(f64::from).collect();
        assert!(!real_list(&v, Style::default()).contains('…'));
        let v: Vec<f64> = (0..21).map(f64::from).collect();
        let s = real_list(&v, Style::default());
        assert!(
            s.ends_with(", 20] (21 values)") && s.contains(", 9, …, 16,"),
            "{s}"
        );
    }

    #[test]
    fn empty_matrix_says_so() {
        let m = DMatrix::<f64>::zeros(0, 3);
        assert_eq!(real_matrix(&m, Style::default()), "matrix 0×3 (empty)");
    }
}
