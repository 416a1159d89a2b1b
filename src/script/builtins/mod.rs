//! One binding file per domain, mirroring `numeric/`. Each has `register` and `DOCS`;
//! `script::engine` registers them all in one place.

pub mod arith;
pub mod complex;
pub mod design;
pub mod files;
pub mod freq;
pub mod linalg;
pub mod lti;
pub mod matrix;
pub mod model_plots;
pub mod output;
pub mod plot;
pub mod stats;
pub mod sweep;
pub mod time;

use super::docs::Doc;
use crate::display::Style;
use crate::notebook::output::Output;
use rhai::Dynamic;

/// The built-ins each binding file declares with [`crate::builtins!`] (registration and
/// help page in one declaration).
pub const DECLARED: &[&[crate::script::declare::Builtin]] = &[
    freq::BUILTINS,
    stats::BUILTINS,
    matrix::BUILTINS,
    files::BUILTINS,
];

/// Help tables of the binding files not yet written as declarations.
pub const DOC_TABLES: &[&[Doc]] = &[
    crate::script::sizes::DOCS,
    arith::DOCS,
    complex::DOCS,
    matrix::DOCS,
    linalg::DOCS,
    lti::DOCS,
    output::DOCS,
    plot::DOCS,
    time::DOCS,
    design::DOCS,
    model_plots::DOCS,
    sweep::DOCS,
];

/// Display of value types defined by the domain bindings (models, responses, figures).
pub fn display_extra(v: &Dynamic, style: Style) -> Option<String> {
    use crate::script::types::{Figure, System, TransferFunction};
    if let Some(f) = v.read_lock::<Figure>() {
        return Some(plot::describe(&f));
    }
    if let Some(r) = v.read_lock::<crate::script::types::Response>() {
        return Some(r.summary());
    }
    if let Some(t) = v.read_lock::<crate::script::sweep::Table>() {
        return Some(t.display(style));
    }
    if let Some(s) = v.read_lock::<System>() {
        let s = &s.0;
        return Some(crate::display::system(
            &s.a,
            &s.b,
            &s.c,
            &s.d,
            s.dt,
            [&s.names.inputs, &s.names.outputs, &s.names.states],
            style,
        ));
    }
    if let Some(t) = v.read_lock::<TransferFunction>() {
        return Some(crate::display::transfer_function(
            &t.0.num, &t.0.den, t.0.dt, style,
        ));
    }
    None
}

/// JSON encoding of value types defined by the domain bindings.
pub fn json_extra(v: &Dynamic) -> Option<serde_json::Value> {
    use crate::script::json::{float, matrix};
    use crate::script::types::{System, TransferFunction};
    if let Some(t) = v.read_lock::<crate::script::sweep::Table>() {
        return Some(t.to_json());
    }
    if let Some(s) = v.read_lock::<System>() {
        let s = &s.0;
        return Some(serde_json::json!({
            "A": matrix(&s.a), "B": matrix(&s.b), "C": matrix(&s.c), "D": matrix(&s.d),
            "dt": float(s.dt),
        }));
    }
    if let Some(r) = v.read_lock::<crate::script::types::Response>() {
        return Some(time::response_json(&r));
    }
    if let Some(t) = v.read_lock::<TransferFunction>() {
        let list = |c: &[f64]| serde_json::Value::Array(c.iter().map(|&x| float(x)).collect());
        return Some(serde_json::json!({
            "num": list(&t.0.num), "den": list(&t.0.den), "dt": float(t.0.dt),
        }));
    }
    None
}

/// A figure value as a cell output, if `v` is a figure.
pub fn figure_output(v: &Dynamic) -> Option<Output> {
    let f = v.read_lock::<crate::script::types::Figure>()?;
    Some(match plot::svg(&f) {
        Ok(svg) => Output::Figure {
            svg,
            title: f.0.title.clone(),
        },
        Err(e) => Output::Warning(format!("the figure could not be drawn: {e}")),
    })
}
