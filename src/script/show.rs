//! Display of any script value, for `print`, `show`, string interpolation and the value
//! of a cell's last expression. Numeric values are formatted by [`crate::display`].

use super::types::{Complex, KINDS};
use crate::display::{self, Shown, Style};
use rhai::{Array, Dynamic, Map};

/// Deepest nesting of arrays and maps shown; deeper parts show as `…` (keeps the display
/// of pathological data linear in its size).
const MAX_DEPTH: usize = 32;

thread_local! {
    static DEPTH: std::cell::Cell<usize> = const { std::cell::Cell::new(0) };
}

/// Formats a value for the user.
pub fn format(v: &Dynamic, style: Style) -> String {
    let depth = DEPTH.with(|d| d.get());
    if depth >= MAX_DEPTH && (v.is_array() || v.is_map()) {
        return "…".into();
    }
    DEPTH.with(|d| d.set(depth + 1));
    let s = format_at_depth(v, style);
    DEPTH.with(|d| d.set(depth));
    s
}

fn format_at_depth(v: &Dynamic, style: Style) -> String {
    for k in KINDS {
        if let Some(s) = (k.show)(v, style) {
            return s;
        }
    }
    if let Ok(x) = v.as_float() {
        return display::real(x, style);
    }
    if let Ok(i) = v.as_int() {
        return i.to_string();
    }
    if let Some(a) = v.read_lock::<Array>() {
        return format_array(&a, style);
    }
    if let Some(m) = v.read_lock::<Map>() {
        return format_map(&m, style);
    }
    if v.is_unit() {
        return "()".into();
    }
    v.to_string()
}

/// Formats a value inside a list or map (single-line when it fits).
fn inline(v: &Dynamic, style: Style) -> String {
    if v.is_string() {
        return format!("{:?}", v.to_string());
    }
    format(v, style)
}

/// An array of rows of transfer functions (what `to_transfer_function` gives for a MIMO
/// model) as one grid, when it is small enough to read that way.
fn transfer_grid(a: &Array, style: Style) -> Option<String> {
    use super::types::TransferFunction;
    let mut dt = None;
    let mut cells = Vec::with_capacity(a.len());
    for row in a {
        let r = row.read_lock::<Array>()?;
        let mut line = Vec::with_capacity(r.len());
        for e in r.iter() {
            let t = e.read_lock::<TransferFunction>()?;
            dt.get_or_insert(t.0.dt);
            line.push(display::transfer_function_inline(
                &t.0.num, &t.0.den, t.0.dt, style,
            ));
        }
        cells.push(line);
    }
    let cols = cells.first().map(Vec::len)?;
    let fits = cells.len() <= display::ROWS.0 && cols <= display::COLUMNS.0;
    (cols > 0 && fits && cells.iter().all(|r| r.len() == cols))
        .then(|| display::transfer_grid(&cells, dt.unwrap_or(0.0)))
}

fn format_array(a: &Array, style: Style) -> String {
    if let Some(g) = transfer_grid(a, style) {
        return g;
    }
    if a.iter().all(|x| x.is::<Complex>()) && !a.is_empty() {
        let zs: Vec<nalgebra::Complex<f64>> = a
            .iter()
            .filter_map(|x| x.read_lock::<Complex>().map(|z| z.0))
            .collect();
        return display::complex_list(&zs, style);
    }
    if let Some(t) = table_of_maps(a, style) {
        return t;
    }
    let shown = Shown::of(a.len(), display::ROWS, style);
    let parts: Vec<(Option<usize>, String)> = shown
        .indices()
        .map(|k| {
            (
                k,
                k.map_or_else(|| "…".to_string(), |k| inline(&a[k], style)),
            )
        })
        .collect();
    let count = if shown.hidden > 0 {
        format!(" ({} items)", a.len())
    } else {
        String::new()
    };
    let texts: Vec<&str> = parts.iter().map(|(_, p)| p.as_str()).collect();
    let one = format!("[{}]{count}", texts.join(", "));
    if !one.contains('\n') && one.chars().count() <= 78 {
        return one;
    }
    if texts.iter().any(|p| p.contains('\n')) {
        // Multi-line items (matrices, models): one numbered block each.
        let mut s = format!("array of {}", a.len());
        for (k, p) in &parts {
            let label = match k {
                Some(k) => format!("[{k}] "),
                None => "… ".to_string(),
            };
            let pad = " ".repeat(label.len());
            for (i, line) in p.lines().enumerate() {
                s.push_str("\n  ");
                s.push_str(if i == 0 { &label } else { &pad });
                s.push_str(line);
            }
        }
        return s;
    }
    let mut s = String::from("[\n");
    for p in texts {
        s.push_str(&indent(p));
        s.push_str(",\n");
    }
    s.push(']');
    s.push_str(&count);
    s
}

fn format_map(m: &Map, style: Style) -> String {
    let parts: Vec<(String, String)> = m
        .iter()
        .map(|(k, v)| (k.to_string(), inline(v, style)))
        .collect();
    let one = format!(
        "#{{ {} }}",
        parts
            .iter()
            .map(|(k, v)| format!("{k}: {v}"))
            .collect::<Vec<_>>()
            .join(", ")
    );
    if parts.is_empty() {
        return "#{}".into();
    }
    if !one.contains('\n') && one.chars().count() <= 78 {
        return one;
    }
    let mut s = String::from("#{\n");
    for (k, v) in parts {
        if v.contains('\n') {
            s.push_str(&format!("  {k}:\n{}\n", indent(&indent(&v))));
        } else {
            s.push_str(&format!("  {k}: {v}\n"));
        }
    }
    s.push('}');
    s
}

fn indent(s: &str) -> String {
    s.lines()
        .map(|l| format!("  {l}"))
        .collect::<Vec<_>>()
        .join("\n")
}

/// An array of maps that all have the same keys displays as a table (e.g. `modes`).
fn table_of_maps(a: &Array, style: Style) -> Option<String> {
    let first = a.first()?.read_lock::<Map>()?.clone();
    if first.is_empty() {
        return None;
    }
    let keys: Vec<String> = first.keys().map(|k| k.to_string()).collect();
    let same_keys = |x: &Dynamic| {
        x.read_lock::<Map>().is_some_and(|m| {
            m.len() == keys.len() && keys.iter().all(|k| m.contains_key(k.as_str()))
        })
    };
    if !a.iter().all(same_keys) {
        return None;
    }
    let shown = Shown::of(a.len(), display::ROWS, style);
    let mut rows = Vec::with_capacity(shown.head + shown.tail + 1);
    for k in shown.indices() {
        let Some(k) = k else {
            rows.push(vec!["⋮".to_string(); keys.len()]);
            continue;
        };
        let m = a[k].read_lock::<Map>()?;
        if m.len() != keys.len() {
            return None;
        }
        let mut row = Vec::with_capacity(keys.len());
        for k in &keys {
            let v = m.get(k.as_str())?;
            let s = inline(v, style);
            if s.contains('\n') {
                return None;
            }
            row.push(s);
        }
        rows.push(row);
    }
    let mut t = display::table(&keys, &rows);
    if shown.hidden > 0 {
        t.push_str(&format!(
            "\n  ({} rows; show(value, #{{ all: true }}) for every row)",
            a.len()
        ));
    }
    Some(t)
}
