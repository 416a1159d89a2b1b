//! The script-visible value types. Each wraps a numeric-layer value; the wrappers are
//! what rhai stores in a `Dynamic`.
//!
//! # Adding a value type
//! Implement [`ValueType`] beside the type (its user-facing name, its display and its JSON
//! encoding) and add `kind::<YourType>()` to [`KINDS`]. Everything that dispatches on a
//! value's type — the engine's type name, `print`/`show`/string interpolation, `to_json`
//! and the results file, and the type named in argument errors — reads that one list.

mod complex;
mod matrix;
mod model;
mod response;
mod vector;

pub use complex::{Complex, ComplexMatrix};
pub use matrix::Matrix;
pub use model::{Figure, System, TransferFunction};
pub use response::{Response, Samples};
pub use vector::Vector;

use crate::display::Style;
use rhai::Dynamic;

/// A value type that scripts can hold; see the module documentation.
pub trait ValueType: Clone + Send + Sync + 'static {
    /// The name users see: in argument errors, in the engine's own messages, in `help`.
    const NAME: &'static str;
    /// The display used by `print`, `show`, string interpolation and cell values.
    fn show(&self, style: Style) -> String;
    /// The JSON encoding (LANGUAGE.md § Output, records and files), at any depth.
    fn json(&self) -> serde_json::Value;
}

/// One value type, type-erased for dispatch on a `Dynamic`.
pub struct Kind {
    /// [`ValueType::NAME`].
    pub name: &'static str,
    /// Whether a value holds this type.
    pub is: fn(&Dynamic) -> bool,
    /// Its display, if the value holds this type.
    pub show: fn(&Dynamic, Style) -> Option<String>,
    /// Its JSON, if the value holds this type.
    pub json: fn(&Dynamic) -> Option<serde_json::Value>,
    /// Registers the type with the engine under its name, with `to_string`/`to_debug`
    /// that use the display style `style` returns (so `print` and interpolation agree
    /// with `show`).
    pub register: fn(&mut rhai::Engine, StyleSource),
}

/// Where the registered `to_string` finds the session's display style.
pub type StyleSource = std::sync::Arc<dyn Fn() -> Style + Send + Sync>;

fn is<T: ValueType>(v: &Dynamic) -> bool {
    v.is::<T>()
}

fn show<T: ValueType>(v: &Dynamic, style: Style) -> Option<String> {
    v.read_lock::<T>().map(|x| x.show(style))
}

fn json<T: ValueType>(v: &Dynamic) -> Option<serde_json::Value> {
    v.read_lock::<T>().map(|x| x.json())
}

fn register<T: ValueType>(engine: &mut rhai::Engine, style: StyleSource) {
    engine.register_type_with_name::<T>(T::NAME);
    let s = style.clone();
    engine.register_fn("to_string", move |v: &mut T| v.show(s()));
    engine.register_fn("to_debug", move |v: &mut T| v.show(style()));
}

/// The [`Kind`] of a value type.
pub const fn kind<T: ValueType>() -> Kind {
    Kind {
        name: T::NAME,
        is: is::<T>,
        show: show::<T>,
        json: json::<T>,
        register: register::<T>,
    }
}

/// Every value type scripts can hold, besides the engine's own (numbers, strings, arrays,
/// maps, functions).
pub const KINDS: &[Kind] = &[
    kind::<Matrix>(),
    kind::<Vector>(),
    kind::<Complex>(),
    kind::<ComplexMatrix>(),
    kind::<System>(),
    kind::<TransferFunction>(),
    kind::<Response>(),
    kind::<Figure>(),
    kind::<crate::script::sweep::Table>(),
];

/// The kind of a value, if it holds one of [`KINDS`].
pub fn kind_of(v: &Dynamic) -> Option<&'static Kind> {
    KINDS.iter().find(|k| (k.is)(v))
}
