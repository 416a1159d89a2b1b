//! Display of models: a state-space model as its partitioned system matrix with labelled
//! rules, a transfer function as numerator over denominator.

use super::number::real;
use super::Style;
use nalgebra::DMatrix;

/// Cell widths left and right of the decimal point (or exponent).
fn split(cell: &str) -> (usize, usize) {
    let cut = cell.find(['.', 'e']).unwrap_or(cell.len());
    let l = cell[..cut].chars().count();
    (l, cell.chars().count() - l)
}

/// The header line of a state-space model.
pub fn system_header(n: usize, m: usize, p: usize, dt: f64, style: Style) -> String {
    let domain = if dt > 0.0 {
        format!("discrete, dt = {} s", real(dt, style))
    } else {
        "continuous".to_string()
    };
    let plural = |k: usize, w: &str| format!("{k} {w}{}", if k == 1 { "" } else { "s" });
    format!(
        "state-space model · {domain} · {} · {} · {}",
        plural(n, "state"),
        plural(m, "input"),
        plural(p, "output")
    )
}

/// A state-space model: header, then `[A B; C D]` with rules labelled A, B, C, D, then
/// the signal names when given.
#[allow(clippy::too_many_arguments)]
pub fn system(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    c: &DMatrix<f64>,
    d: &DMatrix<f64>,
    dt: f64,
    names: [&[String]; 3],
    style: Style,
) -> String {
    let (n, m, p) = (a.nrows(), b.ncols(), c.nrows());
    let mut out = system_header(n, m, p, dt, style);
    let cols = n + m;
    let cell = |x: f64| real(x, style);
    let top: Vec<Vec<String>> = (0..n)
        .map(|i| {
            (0..n)
                .map(|j| cell(a[(i, j)]))
                .chain((0..m).map(|j| cell(b[(i, j)])))
                .collect()
        })
        .collect();
    let bottom: Vec<Vec<String>> = (0..p)
        .map(|i| {
            (0..n)
                .map(|j| cell(c[(i, j)]))
                .chain((0..m).map(|j| cell(d[(i, j)])))
                .collect()
        })
        .collect();
    let mut left = vec![0usize; cols];
    let mut right = vec![0usize; cols];
    for row in top.iter().chain(bottom.iter()) {
        for (j, s) in row.iter().enumerate() {
            let (l, r) = split(s);
            left[j] = left[j].max(l);
            right[j] = right[j].max(r);
        }
    }
    let width = |j: usize| left[j] + right[j];
    let state_w: usize = (0..n).map(|j| width(j) + 2).sum::<usize>();
    let input_w: usize = (n..cols).map(|j| width(j) + 2).sum::<usize>();
    let rule = |l: &str, r: &str| -> String {
        let mut s = String::from("  ");
        if n > 0 {
            let lab = format!("┄ {l} ");
            s.push_str(&lab);
            s.push_str(&"┄".repeat((state_w + 1).saturating_sub(lab.chars().count())));
        }
        if m > 0 {
            s.push_str(if n > 0 { "┼" } else { "" });
            let lab = format!("┄ {r} ");
            s.push_str(&lab);
            s.push_str(&"┄".repeat((input_w + 1).saturating_sub(lab.chars().count())));
        }
        s
    };
    let line = |row: &[String]| -> String {
        let mut s = String::from("  ");
        for (j, c) in row.iter().enumerate() {
            if j == n && n > 0 {
                s.push_str(" │");
            }
            let (l, r) = split(c);
            s.push_str("  ");
            s.push_str(&" ".repeat(left[j] - l));
            s.push_str(c);
            s.push_str(&" ".repeat(right[j] - r));
        }
        s.trim_end().to_string()
    };
    if n > 0 {
        out.push('\n');
        out.push_str(&rule("A", "B").replacen('┼', "┬", 1));
        for r in &top {
            out.push('\n');
            out.push_str(&line(r));
        }
    }
    if p > 0 {
        out.push('\n');
        out.push_str(&rule("C", "D"));
        for r in &bottom {
            out.push('\n');
            out.push_str(&line(r));
        }
    }
    let [inputs, outputs, states] = names;
    let mut named = Vec::new();
    for (what, v) in [("inputs", inputs), ("outputs", outputs), ("states", states)] {
        if !v.is_empty() {
            named.push(format!("{what}: {}", v.join(", ")));
        }
    }
    if !named.is_empty() {
        out.push_str("\n  ");
        out.push_str(&named.join(" · "));
    }
    out
}

/// A polynomial in `var`, highest power first: `2 s^2 - 0.5 s + 1`.
pub fn polynomial(c: &[f64], var: char, style: Style) -> String {
    let deg = c.len().saturating_sub(1);
    let mut s = String::new();
    for (k, &x) in c.iter().enumerate() {
        if x == 0.0 {
            continue;
        }
        let power = deg - k;
        let mag = x.abs();
        let coef = if mag == 1.0 && power > 0 {
            String::new()
        } else {
            real(mag, style)
        };
        let term = match (power, coef.is_empty()) {
            (0, _) => coef,
            (1, true) => var.to_string(),
            (1, false) => format!("{coef} {var}"),
            (_, true) => format!("{var}^{power}"),
            (_, false) => format!("{coef} {var}^{power}"),
        };
        if s.is_empty() {
            if x < 0.0 {
                s.push('-');
            }
        } else {
            s.push_str(if x < 0.0 { " - " } else { " + " });
        }
        s.push_str(&term);
    }
    if s.is_empty() {
        "0".into()
    } else {
        s
    }
}

/// A transfer function on one line: `(s + 0.5) / (s^2 + 4 s + 3)` (a constant
/// denominator of 1 is left out: `0.5`).
pub fn transfer_function_inline(num: &[f64], den: &[f64], dt: f64, style: Style) -> String {
    let var = if dt > 0.0 { 'z' } else { 's' };
    let wrap = |c: &[f64]| {
        let p = polynomial(c, var, style);
        if c.iter().filter(|&&x| x != 0.0).count() > 1 {
            format!("({p})")
        } else {
            p
        }
    };
    if den.len() == 1 && den[0] == 1.0 {
        return polynomial(num, var, style);
    }
    format!("{} / {}", wrap(num), wrap(den))
}

/// A grid of transfer functions (rows are outputs, columns inputs): a size line, then
/// one aligned row per output of one-line entries.
pub fn transfer_grid(cells: &[Vec<String>], dt: f64) -> String {
    let rows = cells.len();
    let cols = cells.first().map_or(0, Vec::len);
    let domain = if dt > 0.0 {
        format!("discrete (dt = {dt} s)")
    } else {
        "continuous".to_string()
    };
    let mut width = vec![0usize; cols];
    for r in cells {
        for (j, c) in r.iter().enumerate() {
            width[j] = width[j].max(c.chars().count());
        }
    }
    let mut out = format!(
        "transfer functions {rows}×{cols} · {domain} · row i = output i, column j = input j"
    );
    for r in cells {
        out.push_str("\n  ");
        let line: Vec<String> = r
            .iter()
            .enumerate()
            .map(|(j, c)| format!("{c:<w$}", w = width[j]))
            .collect();
        out.push_str(line.join("   ").trim_end());
    }
    out
}

/// A transfer function: a header line, then the numerator centred over a rule over the
/// denominator.
pub fn transfer_function(num: &[f64], den: &[f64], dt: f64, style: Style) -> String {
    let var = if dt > 0.0 { 'z' } else { 's' };
    let top = polynomial(num, var, style);
    let bottom = polynomial(den, var, style);
    let w = top.chars().count().max(bottom.chars().count());
    let centre = |t: &str| {
        let pad = (w - t.chars().count()) / 2;
        format!("  {}{t}", " ".repeat(pad))
    };
    let domain = if dt > 0.0 {
        format!("discrete, dt = {} s", real(dt, style))
    } else {
        "continuous".into()
    };
    format!(
        "transfer function · {domain}\n{}\n  {}\n{}",
        centre(&top),
        "─".repeat(w),
        centre(&bottom)
    )
}

#[cfg(test)]
mod tests {

    #[test]
    fn one_line_transfer_functions_bracket_sums_only() {
        let st = Style::default();
        assert_eq!(
            transfer_function_inline(&[2.0], &[1.0, 1.0], 0.0, st),
            "2 / (s + 1)"
        );
        assert_eq!(
            transfer_function_inline(&[1.0, 0.0], &[1.0, -0.5], 0.1, st),
            "z / (z - 0.5)"
        );
        assert_eq!(transfer_function_inline(&[0.5], &[1.0], 0.0, st), "0.5");
        let g = transfer_grid(
            &[
                vec!["a".into(), "bb".into()],
                vec!["ccc".into(), "d".into()],
            ],
            0.0,
        );
        assert_eq!(
            g,
            "transfer functions 2×2 · continuous · row i = output i, column j = input j\n  a     bb\n  ccc   d"
        );
    }

    use super::*;

    #[test]
    fn polynomials_read_naturally() {
        let st = Style::default();
        assert_eq!(polynomial(&[1.0, 3.0, 2.0], 's', st), "s^2 + 3 s + 2");
        assert_eq!(polynomial(&[-1.0, 0.0, -0.5], 'z', st), "-z^2 - 0.5");
        assert_eq!(polynomial(&[0.0], 's', st), "0");
        assert_eq!(polynomial(&[2.0, -1.0], 's', st), "2 s - 1");
    }

    #[test]
    fn system_block_layout() {
        let a = DMatrix::from_row_slice(2, 2, &[0.0, 1.0, -2.0, -3.0]);
        let b = DMatrix::from_column_slice(2, 1, &[0.0, 1.0]);
        let c = DMatrix::from_row_slice(1, 2, &[1.0, 0.0]);
        let d = DMatrix::zeros(1, 1);
        let s = system(&a, &b, &c, &d, 0.0, [&[], &[], &[]], Style::default());
        let lines: Vec<&str> = s.lines().collect();
        assert_eq!(
            lines[0],
            "state-space model · continuous · 2 states · 1 input · 1 output"
        );
        assert!(lines[1].contains("A") && lines[1].contains("┬") && lines[1].contains("B"));
        assert!(lines[4].contains("C") && lines[4].contains("┼"));
        assert_eq!(lines.len(), 6);
        // The separator sits in the same column on every row.
        let bar = lines[2].find('│');
        assert!(bar.is_some() && lines[3].find('│') == bar && lines[5].find('│') == bar);
    }

    #[test]
    fn transfer_function_centred() {
        let s = transfer_function(&[1.0], &[1.0, 3.0, 2.0], 0.0, Style::default());
        assert_eq!(
            s,
            "transfer function · continuous\n        1\n  ─────────────\n  s^2 + 3 s + 2"
        );
    }
}
