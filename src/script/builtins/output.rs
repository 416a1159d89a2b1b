//! Output built-ins: `show`, `note`, `record`, `to_json`, `set_precision`. They write into
//! the session's current cell, never straight to stdout.

use crate::display::Style;
use crate::notebook::output::Output;
use crate::script::convert::{fail, to_count, to_str, Rr};
use crate::script::docs::Doc;
use crate::script::state::{self, SessionState};
use crate::script::{json, show};
use rhai::{Dynamic, Engine, NativeCallContext};
use std::sync::Arc;

/// Help entries of this file.
pub const DOCS: &[Doc] = &[
    Doc {
        name: "print",
        family: "output and files",
        usage: "print(value)",
        summary: "writes a value as plain text into the current cell's output",
        details: "",
        example: "print(\"settling time: \" + 1.25);",
    },
    Doc {
        name: "show",
        family: "output and files",
        usage: "show(value)",
        summary: "displays a value richly (matrices aligned, figures drawn in reports)",
        details: "The value of a cell's last expression is shown the same way.",
        example: "show(identity(2));",
    },
    Doc {
        name: "note",
        family: "output and files",
        usage: "note(markdown)",
        summary: "adds Markdown prose to the current cell's output (and report)",
        details: "",
        example: "note(\"The plant is **stable** at this operating point.\");",
    },
    Doc {
        name: "record",
        family: "output and files",
        usage: "record(name, value)",
        summary: "keeps a named result; `render` saves it and `check` compares re-runs",
        details: "name: a string. value: any value that to_json can encode. Recording the same \
                  name again replaces the value.",
        example: "record(\"dominant_pole\", -0.42);",
    },
    Doc {
        name: "to_json",
        family: "output and files",
        usage: "to_json(value) → string",
        summary: "the JSON encoding of a value",
        details: "Matrix → array of rows; Complex → {\"re\", \"im\"}; System → {A, B, C, D, dt}; \
                  TransferFunction → {num, den, dt}; Response → {t, y, x, u}; () → null. \
                  Infinite and NaN floats are written as the strings \"inf\", \"-inf\", \"nan\".",
        example: "to_json(complex(1, -2))   // {\"re\":1.0,\"im\":-2.0}",
    },
    Doc {
        name: "require",
        family: "output and files",
        usage: "require(condition, message)",
        summary: "stops the analysis with message unless condition is true",
        details: "Use it for design requirements the analysis must meet, so that a failed \
                  requirement fails `run`, `render` and `check`.",
        example: "require(is_stable(plant), \"the plant must be stable\");",
    },
];

/// Registers the output built-ins of one session.
pub fn register(engine: &mut Engine, st: &Arc<SessionState>) {
    let s = st.clone();
    engine.register_fn("show", move |ctx: NativeCallContext, v: Dynamic| {
        emit(&s, &ctx, v);
    });
    engine.register_fn("note", |ctx: NativeCallContext, v: Dynamic| -> Rr<()> {
        let text = to_str(&v, "note", "markdown")?;
        if let Some(s) = state::of(&ctx) {
            s.push(Output::Note(text));
        }
        Ok(())
    });
    engine.register_fn(
        "record",
        |ctx: NativeCallContext, name: Dynamic, v: Dynamic| -> Rr<()> {
            let name = to_str(&name, "record", "name")?;
            if name.trim().is_empty() {
                return Err(fail("record: the name must not be empty"));
            }
            let value = json::encode_checked(&v, "record").map_err(fail)?;
            if let Some(s) = state::of(&ctx) {
                s.record(&name, value);
            }
            Ok(())
        },
    );
    fn to_json(v: Dynamic) -> Rr<String> {
        Ok(json::encode_checked(&v, "to_json")
            .map_err(fail)?
            .to_string())
    }
    engine.register_fn("to_json", to_json);
    // The engine's own `to_json` for maps (and any later one for arrays) would otherwise
    // be picked for these types and write nested values as Rust type names.
    engine.register_fn("to_json", |m: rhai::Map| to_json(Dynamic::from_map(m)));
    engine.register_fn("to_json", |a: rhai::Array| to_json(Dynamic::from_array(a)));
    engine.register_fn("require", |c: Dynamic, m: Dynamic| -> Rr<()> {
        let Ok(ok) = c.as_bool() else {
            return Err(fail(format!(
                "require: condition must be true or false, found {}",
                crate::script::convert::type_name(&c)
            )));
        };
        if ok {
            Ok(())
        } else {
            Err(fail(format!(
                "requirement not met: {}",
                to_str(&m, "require", "message")?
            )))
        }
    });
    engine.register_fn(
        "set_precision",
        |ctx: NativeCallContext, d: Dynamic| -> Rr<()> {
            let d = to_count(&d, "set_precision", "digits")?;
            if !(1..=17).contains(&d) {
                return Err(fail(format!(
                    "set_precision: digits must be 1 to 17, found {d}"
                )));
            }
            if let Some(s) = state::of(&ctx) {
                s.set_style(Style { precision: d });
            }
            Ok(())
        },
    );
}

/// Shows a value in the current cell: figures as figures, everything else as text.
pub fn emit(s: &SessionState, _ctx: &NativeCallContext, v: Dynamic) {
    if let Some(o) = crate::script::builtins::figure_output(&v) {
        s.push(o);
        return;
    }
    s.push(Output::Value(show::format(&v, s.style())));
}
