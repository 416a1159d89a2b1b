//! Files from scripts: `read_csv`, `write_csv`. Paths are judged by the session's sandbox
//! (relative to the analysis file's folder, never outside it) and files are written through
//! a temporary file and a rename.

use crate::script::convert::{fail, matrix_value, to_matrix, to_str, Rr};
use crate::script::docs::Doc;
use crate::script::state;
use nalgebra::DMatrix;
use rhai::{Array, Dynamic, Engine, NativeCallContext};

/// Help entries of this file.
pub const DOCS: &[Doc] = &[
    Doc {
        name: "read_csv",
        family: "output and files",
        usage: "read_csv(path) → Matrix",
        summary: "reads a numeric CSV file (an optional header row is skipped)",
        details: "path: relative to the analysis file, inside its folder. Cells are separated \
                  by commas; a first row that is not all numbers is taken as the header. Every \
                  other row must hold the same number of numeric cells.",
        example: "write_csv(\"measured.csv\", matrix([[0, 1.5], [0.1, 1.7]]), [\"t\", \"y\"]);\nlet data = read_csv(\"measured.csv\");",
    },
    Doc {
        name: "write_csv",
        family: "output and files",
        usage: "write_csv(path, matrix)\nwrite_csv(path, matrix, headers)",
        summary: "writes a matrix as CSV, with an optional header row",
        details: "headers: an array of strings, one per column. Numbers are written with 17 \
                  significant digits so that read_csv gives back the same values.",
        example: "write_csv(\"response.csv\", matrix([[0, 1], [0.1, 0.9]]), [\"t\", \"y\"]);",
    },
];

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

fn write(
    ctx: &NativeCallContext,
    path: &Dynamic,
    m: &Dynamic,
    headers: Option<&Dynamic>,
) -> Rr<()> {
    let f = "write_csv";
    let path = to_str(path, f, "path")?;
    let m = to_matrix(m, f, "matrix")?;
    let headers: Option<Vec<String>> = match headers {
        None => None,
        Some(h) => {
            let Some(a) = h.read_lock::<Array>() else {
                return Err(fail("write_csv: headers must be an array of strings"));
            };
            let v: Vec<String> = a
                .iter()
                .enumerate()
                .map(|(k, x)| to_str(x, f, &format!("headers[{k}]")))
                .collect::<Rr<_>>()?;
            if v.len() != m.ncols() {
                return Err(fail(format!(
                    "write_csv: {} headers for a matrix with {} columns",
                    v.len(),
                    m.ncols()
                )));
            }
            Some(v)
        }
    };
    let Some(st) = state::of(ctx) else {
        return Err(fail("write_csv: no session"));
    };
    let real = st
        .sandbox
        .write_path(&path)
        .map_err(|e| fail(format!("write_csv: {e}")))?;
    let text = format_csv(&m, headers.as_deref());
    crate::safe_fs::write_file(&real, text.as_bytes(), false)
        .map_err(|e| fail(format!("write_csv: cannot write {path}: {e}")))
}

/// Registers the file built-ins.
pub fn register(engine: &mut Engine) {
    engine.register_fn(
        "read_csv",
        |ctx: NativeCallContext, path: Dynamic| -> Rr<Dynamic> {
            let path = to_str(&path, "read_csv", "path")?;
            let Some(st) = state::of(&ctx) else {
                return Err(fail("read_csv: no session"));
            };
            let real = st
                .sandbox
                .read_path(&path)
                .map_err(|e| fail(format!("read_csv: {e}")))?;
            let text = crate::budget::read_bounded(&real)
                .map_err(|e| fail(format!("read_csv: cannot read {path}: {e}")))?;
            let (_, m) = parse_csv(&text, &path).map_err(|e| fail(format!("read_csv: {e}")))?;
            let limit = st.limits.matrix_entries;
            if m.len() > limit {
                return Err(fail(format!(
                    "read_csv: {path} has more than {limit} entries"
                )));
            }
            Ok(matrix_value(m))
        },
    );
    engine.register_fn(
        "write_csv",
        |ctx: NativeCallContext, p: Dynamic, m: Dynamic| write(&ctx, &p, &m, None),
    );
    engine.register_fn(
        "write_csv",
        |ctx: NativeCallContext, p: Dynamic, m: Dynamic, h: Dynamic| write(&ctx, &p, &m, Some(&h)),
    );
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
