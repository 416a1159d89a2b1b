//! Output built-ins: `show`, `note`, `record`, `to_json`, `set_precision`. They write into
//! the session's current cell, never straight to stdout.

use crate::display::Style;
use crate::script::convert::{fail, Rr};
use crate::script::docs::Doc;
use crate::script::output::Output;
use crate::script::state::{self, SessionState};
use crate::script::{json, show};
use rhai::{Dynamic, Engine, Map};
use std::sync::Arc;

/// The help page of `print`, the engine's own function (the rest are declared in
/// `BUILTINS`).
pub const DOCS: &[Doc] = &[Doc {
    name: "print",
    family: "output and files",
    usage: "print(value)",
    summary: "writes a value as plain text into the current cell's output",
    details: "",
    example: "print(\"settling time: \" + 1.25);",
}];

/// Registers the map and array forms of `to_json` (the declarations are in `BUILTINS`).
/// The engine's own `to_json` for maps (and any later one for arrays) takes these types
/// exactly, so it would be picked before a declaration (whose parameters are any value)
/// and write nested values as Rust type names.
pub fn register(engine: &mut Engine, _: &Arc<SessionState>) {
    engine.register_fn("to_json", |m: rhai::Map| to_json(Dynamic::from_map(m)));
    engine.register_fn("to_json", |a: rhai::Array| to_json(Dynamic::from_array(a)));
}

fn to_json(v: Dynamic) -> Rr<String> {
    Ok(json::encode_checked(&v, "to_json")
        .map_err(fail)?
        .to_string())
}

crate::builtins! {
    /// displays a value richly (matrices aligned, figures drawn in reports)
    ///
    /// The value of a cell's last expression is shown the same way. Long values (more
    /// than 20 rows or items, more than 12 columns) show their first and last entries
    /// around ⋮ and …; the option #{ all: true } shows every entry (to_json and write_csv
    /// also give all of them).
    ///
    /// example:
    ///     show(identity(2));
    ///     show(linear_grid(0, 1, 101), #{ all: true });
    #[family = "output and files"]
    fn show(call, value: Dynamic) -> () {
        if let Some(s) = state::of(call.ctx()) {
            emit(&s, value);
        }
        Ok(())
    }
    fn show(call, value: Dynamic, options: Map) -> () {
        let mut all = false;
        for (k, v) in &options {
            match (k.as_str(), v.as_bool()) {
                ("all", Ok(b)) => all = b,
                ("all", Err(t)) => {
                    return Err(call.fail(format_args!("option all must be true or false, found {t}")))
                }
                (other, _) => return Err(call.fail(format_args!("unknown option '{other}' (known: all)"))),
            }
        }
        if let Some(s) = state::of(call.ctx()) {
            if let Some(o) = crate::script::builtins::figure_output(&value) {
                s.push(o);
            } else {
                let style = Style { full: all, ..s.style() };
                s.push(Output::Value(show::format(&value, style)));
            }
        }
        Ok(())
    }

    /// adds Markdown prose to the current cell's output (and report)
    ///
    /// example:
    ///     note("The plant is **stable** at this operating point.");
    #[family = "output and files"]
    fn note(call, markdown: String) -> () {
        if let Some(s) = state::of(call.ctx()) {
            s.push(Output::Note(markdown));
        }
        Ok(())
    }

    /// keeps a named result; `render` saves it and `check` compares re-runs
    ///
    /// name: a string. value: any value that to_json can encode. Recording the same
    /// name again replaces the value.
    ///
    /// example:
    ///     record("dominant_pole", -0.42);
    #[family = "output and files"]
    fn record(call, name: String, value: Dynamic) -> () {
        if name.trim().is_empty() {
            return Err(call.fail("the name must not be empty"));
        }
        let value = json::encode_checked(&value, call.name).map_err(fail)?;
        if let Some(s) = state::of(call.ctx()) {
            s.record(&name, value);
        }
        Ok(())
    }

    /// the JSON encoding of a value
    ///
    /// Matrix → array of rows; Complex → {"re", "im"}; System → {A, B, C, D, dt};
    /// TransferFunction → {num, den, dt}; Response → {t, y, x, u}; () → null.
    /// Infinite and NaN floats are written as the strings "inf", "-inf", "nan".
    ///
    /// example:
    ///     to_json(complex(1, -2))   // {"re":1.0,"im":-2.0}
    #[family = "output and files"]
    fn to_json(call, value: Dynamic) -> String {
        to_json(value)
    }

    /// stops the analysis with message unless condition is true
    ///
    /// Use it for design requirements the analysis must meet, so that a failed
    /// requirement fails `run`, `render` and `check`.
    ///
    /// example:
    ///     require(is_stable(plant), "the plant must be stable");
    #[family = "output and files"]
    fn require(call, condition: bool, message: String) -> () {
        if condition {
            Ok(())
        } else {
            Err(fail(format!("requirement not met: {message}")))
        }
    }

    /// significant digits used when numbers, matrices and models are displayed
    ///
    /// digits: 1 to 17 (default 6). Affects display only, never the computation.
    ///
    /// example:
    ///     set_precision(10);
    ///     show(identity(2) / 3);
    #[family = "numbers"]
    fn set_precision(call, digits: usize) -> () {
        if !(1..=17).contains(&digits) {
            return Err(call.fail(format_args!("digits must be 1 to 17, found {digits}")));
        }
        if let Some(s) = state::of(call.ctx()) {
            s.set_style(Style::with_precision(digits));
        }
        Ok(())
    }
}

/// Shows a value in the current cell: figures as figures, everything else as text.
pub fn emit(s: &SessionState, v: Dynamic) {
    if let Some(o) = crate::script::builtins::figure_output(&v) {
        s.push(o);
        return;
    }
    s.push(Output::Value(show::format(&v, s.style())));
}
