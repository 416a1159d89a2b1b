//! One binding file per domain, mirroring `numeric/`. Each has `register` and `DOCS`;
//! `script::engine` registers them all in one place.

pub mod arith;
pub mod complex;
pub mod linalg;
pub mod matrix;
pub mod output;
pub mod plot;

use super::docs::Doc;
use crate::display::Style;
use crate::notebook::output::Output;
use rhai::Dynamic;

/// Every binding file's help table.
pub const DOC_TABLES: &[&[Doc]] = &[
    arith::DOCS,
    complex::DOCS,
    matrix::DOCS,
    linalg::DOCS,
    output::DOCS,
    plot::DOCS,
];

/// Display of value types defined by the domain bindings (models, responses, figures).
pub fn display_extra(v: &Dynamic, _style: Style) -> Option<String> {
    if let Some(f) = v.read_lock::<crate::script::types::Figure>() {
        return Some(plot::describe(&f));
    }
    None
}

/// JSON encoding of value types defined by the domain bindings.
pub fn json_extra(_v: &Dynamic) -> Option<serde_json::Value> {
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
