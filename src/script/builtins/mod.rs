//! One binding file per domain, mirroring `numeric/`. Each declares its built-ins in
//! `BUILTINS` (see `script::declare`); what a declaration cannot describe (properties,
//! methods that change a value in place, operators, value types) is registered by hand in
//! its `register` and documented in its `DOCS`. `script::engine` registers them all in one
//! place.

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
pub mod vector;
pub mod wire;

use super::docs::Doc;
use crate::script::output::Output;
use rhai::Dynamic;

/// The built-ins each binding file declares with [`crate::builtins!`] (registration and
/// help page in one declaration).
pub const DECLARED: &[&[crate::script::declare::Builtin]] = &[
    freq::BUILTINS,
    stats::BUILTINS,
    matrix::BUILTINS,
    linalg::BUILTINS,
    design::BUILTINS,
    wire::BUILTINS,
    lti::BUILTINS,
    lti::FILE_BUILTINS,
    files::BUILTINS,
    complex::BUILTINS,
    output::BUILTINS,
    time::BUILTINS,
    time::PLOT_BUILTINS,
    sweep::BUILTINS,
    plot::BUILTINS,
    model_plots::BUILTINS,
    arith::BUILTINS,
];

/// The hand-written pages: properties, in-place methods, operators and value types.
pub const DOC_TABLES: &[&[Doc]] = &[
    crate::script::sizes::DOCS,
    arith::DOCS,
    complex::DOCS,
    matrix::DOCS,
    lti::DOCS,
    output::DOCS,
    time::DOCS,
    design::DOCS,
    sweep::DOCS,
    vector::DOCS,
];

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
