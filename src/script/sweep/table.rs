//! `Table`: the value a sweep returns. Columns are the parameter names, then the result
//! names; each row is one case. A failed case keeps its parameters, has `()` in its result
//! columns and carries its error message; rows also keep the text the case printed.

use super::log::{self, ERROR_COLUMN};
use crate::display::{self, Style};
use crate::script::json;
use crate::script::show;
use rhai::{Array, Dynamic, Map};

/// One case of a table.
#[derive(Debug, Clone)]
pub struct Row {
    /// 0-based index of the case in the sweep's full case list.
    pub case: usize,
    /// Parameter values then result values, in column order (`()` where missing).
    pub values: Vec<Dynamic>,
    /// The error of a failed case.
    pub error: Option<String>,
    /// What the case printed (print, show, note, warnings), one output per line.
    pub log: String,
}

/// A table of sweep results.
#[derive(Debug, Clone, Default)]
pub struct Table {
    /// Parameter names (the first columns).
    pub parameters: Vec<String>,
    /// Result names (the remaining columns).
    pub results: Vec<String>,
    /// Rows in case order.
    pub rows: Vec<Row>,
}

/// A row's parameters and (for a successful case) results in JSON terms.
type EncodedRow = (
    Vec<serde_json::Value>,
    Option<serde_json::Map<String, serde_json::Value>>,
);

impl Table {
    /// All column names: parameters, then results.
    pub fn columns(&self) -> Vec<String> {
        self.parameters
            .iter()
            .chain(&self.results)
            .cloned()
            .collect()
    }

    /// The position of a column, if it exists.
    pub fn position(&self, name: &str) -> Option<usize> {
        self.parameters
            .iter()
            .chain(&self.results)
            .position(|c| c == name)
    }

    /// One column's values in row order (`()` in result columns of failed cases).
    pub fn column(&self, name: &str) -> Option<Array> {
        let j = self.position(name)?;
        Some(self.rows.iter().map(|r| r.values[j].clone()).collect())
    }

    /// Row `i` as a map of its columns.
    pub fn row_map(&self, i: usize) -> Option<Map> {
        let r = self.rows.get(i)?;
        let mut m = Map::new();
        for (name, v) in self.columns().iter().zip(&r.values) {
            m.insert(name.as_str().into(), v.clone());
        }
        Some(m)
    }

    /// A table with the same columns and the rows for which `keep` holds.
    pub fn retain(&self, mut keep: impl FnMut(&Row) -> bool) -> Table {
        Table {
            parameters: self.parameters.clone(),
            results: self.results.clone(),
            rows: self.rows.iter().filter(|r| keep(r)).cloned().collect(),
        }
    }

    /// Number of failed cases.
    pub fn failure_count(&self) -> usize {
        self.rows.iter().filter(|r| r.error.is_some()).count()
    }

    /// The table as a JSON object of columns (see [`log::table_json`]).
    pub fn to_json(&self) -> serde_json::Value {
        let np = self.parameters.len();
        let encoded: Vec<EncodedRow> = self
            .rows
            .iter()
            .map(|r| {
                let params = r.values[..np].iter().map(json::encode).collect();
                let results = r.error.is_none().then(|| {
                    self.results
                        .iter()
                        .zip(&r.values[np..])
                        .map(|(n, v)| (n.clone(), json::encode(v)))
                        .collect()
                });
                (params, results)
            })
            .collect();
        log::table_json(
            &self.parameters,
            &self.results,
            encoded
                .iter()
                .zip(&self.rows)
                .map(|((p, r), row)| (p.as_slice(), r.as_ref(), row.error.as_deref())),
        )
    }

    fn cell(v: &Dynamic, style: Style) -> String {
        if v.is_unit() {
            return "—".into();
        }
        let s = if v.is_string() {
            v.to_string()
        } else {
            show::format(v, style)
        };
        if s.contains('\n') {
            format!("<{}>", crate::script::convert::type_name(v))
        } else {
            s
        }
    }

    /// The aligned display: a summary line, then up to 20 rows.
    pub fn display(&self, style: Style) -> String {
        let failures = self.failure_count();
        let mut s = format!(
            "table of {} case{} · parameters: {} · results: {}",
            self.rows.len(),
            if self.rows.len() == 1 { "" } else { "s" },
            list(&self.parameters),
            list(&self.results),
        );
        if failures > 0 {
            s.push_str(&format!(" · {failures} failed"));
        }
        if self.rows.is_empty() {
            return s;
        }
        let mut headers = vec!["case".to_string()];
        headers.extend(self.columns());
        if failures > 0 {
            headers.push(ERROR_COLUMN.into());
        }
        let shown = display::Shown::of(self.rows.len(), display::ROWS, style);
        let rows: Vec<Vec<String>> = shown
            .indices()
            .map(|k| {
                let Some(r) = k.map(|k| &self.rows[k]) else {
                    return vec!["⋮".to_string(); headers.len()];
                };
                let mut cells = vec![r.case.to_string()];
                cells.extend(r.values.iter().map(|v| Self::cell(v, style)));
                if failures > 0 {
                    cells.push(r.error.as_deref().map(short).unwrap_or_default());
                }
                cells
            })
            .collect();
        s.push('\n');
        s.push_str(display::table(&headers, &rows).trim_end());
        if shown.hidden > 0 {
            s.push_str(&format!(
                "\n  {} rows not shown (all of them: show(table, #{{ all: true }}), .rows, \
                 .column(name), .save_csv(path))",
                shown.hidden
            ));
        }
        s
    }

    /// The table as CSV text: a header line of column names (plus `case_error` when a case
    /// failed), then one line per row. Floats are written in their shortest exact form
    /// (`0.1`, `1e-7`), `()` as an empty field, other values as in `to_json`; fields with
    /// commas, quotes or line breaks are quoted.
    pub fn to_csv(&self) -> String {
        let failures = self.failure_count() > 0;
        let mut header = self.columns();
        if failures {
            header.push(ERROR_COLUMN.into());
        }
        let mut out = header
            .iter()
            .map(|h| csv_field(h))
            .collect::<Vec<_>>()
            .join(",");
        out.push('\n');
        for r in &self.rows {
            let mut fields: Vec<String> = r.values.iter().map(csv_value).collect();
            if failures {
                fields.push(csv_field(r.error.as_deref().unwrap_or("")));
            }
            out.push_str(&fields.join(","));
            out.push('\n');
        }
        out
    }
}

fn list(names: &[String]) -> String {
    if names.is_empty() {
        "none".into()
    } else {
        names.join(", ")
    }
}

fn short(e: &str) -> String {
    let first = e.lines().next().unwrap_or("");
    if first.chars().count() > 60 {
        format!("{}…", first.chars().take(59).collect::<String>())
    } else {
        first.to_string()
    }
}

fn csv_field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

fn csv_value(v: &Dynamic) -> String {
    if v.is_unit() {
        return String::new();
    }
    if let Ok(x) = v.as_float() {
        return if x.is_finite() {
            format!("{x:?}")
        } else if x.is_nan() {
            "nan".into()
        } else if x > 0.0 {
            "inf".into()
        } else {
            "-inf".into()
        };
    }
    if let Ok(i) = v.as_int() {
        return i.to_string();
    }
    if v.is_string() {
        return csv_field(&v.to_string());
    }
    if let Ok(b) = v.as_bool() {
        return b.to_string();
    }
    if let Some(z) = v.read_lock::<crate::script::types::Complex>() {
        let (re, im) = (z.0.re, z.0.im);
        return format!("{re:?}{}{:?}j", if im < 0.0 { "-" } else { "+" }, im.abs());
    }
    csv_field(&json::encode(v).to_string())
}

impl crate::script::types::ValueType for Table {
    const NAME: &'static str = "Table";
    fn show(&self, style: Style) -> String {
        self.display(style)
    }
    fn json(&self) -> serde_json::Value {
        self.to_json()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn table() -> Table {
        Table {
            parameters: vec!["k".into()],
            results: vec!["y".into()],
            rows: vec![
                Row {
                    case: 0,
                    values: vec![Dynamic::from_int(1), Dynamic::from_float(0.5)],
                    error: None,
                    log: String::new(),
                },
                Row {
                    case: 1,
                    values: vec![Dynamic::from_int(2), Dynamic::UNIT],
                    error: Some("bad, \"very\"".into()),
                    log: String::new(),
                },
            ],
        }
    }

    #[test]
    fn csv_quotes_and_error_column() {
        assert_eq!(
            table().to_csv(),
            "k,y,case_error\n1,0.5,\n2,,\"bad, \"\"very\"\"\"\n"
        );
    }

    #[test]
    fn json_is_an_object_of_columns() {
        assert_eq!(
            table().to_json().to_string(),
            r#"{"k":[1,2],"y":[0.5,null],"case_error":[null,"bad, \"very\""]}"#
        );
        let ok = table().retain(|r| r.error.is_none());
        assert_eq!(ok.to_json().to_string(), r#"{"k":[1],"y":[0.5]}"#);
    }

    #[test]
    fn display_has_summary_and_aligned_rows() {
        let s = table().display(Style::default());
        assert!(
            s.starts_with("table of 2 cases · parameters: k · results: y · 1 failed"),
            "{s}"
        );
        assert!(s.contains("case_error") && s.contains('—'), "{s}");
    }
}
