//! Files from scripts: `read_csv`, `write_csv`. Paths are judged by the session's sandbox
//! (relative to the analysis file's folder, never outside it) and files are written through
//! a temporary file and a rename.

use crate::script::convert::{matrix_value, to_str, Rr};
use crate::script::declare::Call;
use nalgebra::DMatrix;
use rhai::{Array, Dynamic};

/// Splits one CSV line into cells (double quotes group, `""` is a literal quote).
fn cells(line: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut cur = String::new();
    let mut quoted = false;
    let mut chars = line.chars().peekable();
    while let Some(ch) = chars.next() {
        match (ch, quoted) {
            ('"', true) if chars.peek() == Some(&'"') => {
                cur.push('"');
                chars.next();
            }
            ('"', _) => quoted = !quoted,
            (',', false) => out.push(std::mem::take(&mut cur)),
            (c, _) => cur.push(c),
        }
    }
    out.push(cur);
    out.into_iter().map(|c| c.trim().to_string()).collect()
}

/// Parses numeric CSV text: (header, matrix). Errors name the line and column. A leading
/// byte-order mark is dropped and CRLF or CR-only line ends are read as line ends.
pub fn parse_csv(text: &str, name: &str) -> Result<(Option<Vec<String>>, DMatrix<f64>), String> {
    let text = crate::safe_fs::normalise_text(text);
    let mut header = None;
    let mut rows: Vec<Vec<f64>> = Vec::new();
    for (k, raw) in text.lines().enumerate() {
        let line = raw.trim_end_matches('\r');
        if line.trim().is_empty() {
            continue;
        }
        let c = cells(line);
        let nums: Vec<Option<f64>> = c.iter().map(|s| s.parse::<f64>().ok()).collect();
        if rows.is_empty() && header.is_none() && nums.iter().any(Option::is_none) {
            header = Some(c);
            continue;
        }
        let mut row = Vec::with_capacity(c.len());
        for (j, (cell, v)) in c.iter().zip(nums).enumerate() {
            match v {
                Some(x) if x.is_finite() => row.push(x),
                _ => {
                    return Err(format!(
                        "{name}:{}: column {} is {cell:?}, expected a finite number",
                        k + 1,
                        j + 1
                    ))
                }
            }
        }
        if let Some(first) = rows.first() {
            if first.len() != row.len() {
                return Err(format!(
                    "{name}:{}: {} cells, but the first data row has {}",
                    k + 1,
                    row.len(),
                    first.len()
                ));
            }
        }
        rows.push(row);
    }
    if let (Some(h), Some(first)) = (&header, rows.first()) {
        if h.len() != first.len() {
            return Err(format!(
                "{name}: the header has {} names but the rows have {} cells",
                h.len(),
                first.len()
            ));
        }
    }
    let (r, c) = (rows.len(), rows.first().map(Vec::len).unwrap_or(0));
    Ok((header, DMatrix::from_fn(r, c, |i, j| rows[i][j])))
}

fn quote(s: &str) -> String {
    if s.contains([',', '"', '\n']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

/// CSV text of a matrix, with an optional header row.
pub fn format_csv(m: &DMatrix<f64>, headers: Option<&[String]>) -> String {
    let mut s = String::new();
    if let Some(h) = headers {
        s.push_str(&h.iter().map(|x| quote(x)).collect::<Vec<_>>().join(","));
        s.push('\n');
    }
    for i in 0..m.nrows() {
        let row: Vec<String> = (0..m.ncols()).map(|j| format!("{:?}", m[(i, j)])).collect();
        s.push_str(&row.join(","));
        s.push('\n');
    }
    s
}

fn write(call: &Call, path: String, m: DMatrix<f64>, headers: Option<Array>) -> Rr<()> {
    let headers: Option<Vec<String>> = match headers {
        None => None,
        Some(a) => {
            let v: Vec<String> = a
                .iter()
                .enumerate()
                .map(|(k, x)| to_str(x, call.name, &format!("headers[{k}]")))
                .collect::<Rr<_>>()?;
            if v.len() != m.ncols() {
                return Err(call.fail(format_args!(
                    "{} headers for a matrix with {} columns",
                    v.len(),
                    m.ncols()
                )));
            }
            Some(v)
        }
    };
    call.write_file(&path, format_csv(&m, headers.as_deref()).as_bytes())
}

crate::builtins! {
    /// reads a numeric CSV file (an optional header row is skipped)
    ///
    /// path: relative to the analysis file, inside its folder. Cells are separated by
    /// commas; a first row that is not all numbers is taken as the header. Every other row
    /// must hold the same number of numeric cells.
    ///
    /// example:
    ///     write_csv("measured.csv", matrix([[0, 1.5], [0.1, 1.7]]), ["t", "y"]);
    ///     let data = read_csv("measured.csv");
    #[family = "output and files"]
    fn read_csv(call, path: String) -> Dynamic as "Matrix" {
        let text = call.read_text(&path)?;
        let (_, m) = parse_csv(&text, &path).map_err(|e| call.fail(e))?;
        let limit = call.session()?.limits.matrix_entries;
        if m.len() > limit {
            return Err(call.fail(format_args!("{path} has more than {limit} entries")));
        }
        Ok(matrix_value(m))
    }

    /// writes a matrix as CSV, with an optional header row
    ///
    /// headers: an array of strings, one per column. Numbers are written with 17
    /// significant digits so that read_csv gives back the same values.
    ///
    /// example:
    ///     write_csv("response.csv", matrix([[0, 1], [0.1, 0.9]]), ["t", "y"]);
    #[family = "output and files"]
    fn write_csv(call, path: String, matrix: DMatrix<f64>) -> () {
        write(&call, path, matrix, None)
    }
    fn write_csv(call, path: String, matrix: DMatrix<f64>, headers: Array) -> () {
        write(&call, path, matrix, Some(headers))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn round_trip_with_header() {
        let m = DMatrix::from_row_slice(2, 2, &[0.1, -2.5e-12, 3.0, 1.0 / 3.0]);
        let text = format_csv(&m, Some(&["t".into(), "y, output".into()]));
        let (h, back) = parse_csv(&text, "x.csv").unwrap();
        assert_eq!(h, Some(vec!["t".to_string(), "y, output".to_string()]));
        assert_eq!(back, m);
    }

    #[test]
    fn bad_cells_name_line_and_column() {
        let e = parse_csv("a,b\n1,2\n3,x\n", "d.csv").unwrap_err();
        assert!(e.contains("d.csv:3: column 2"), "{e}");
        let e = parse_csv("1,2\n3\n", "d.csv").unwrap_err();
        assert!(e.contains("d.csv:2"), "{e}");
    }
}
