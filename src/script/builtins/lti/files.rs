//! `save_model` / `load_model`: models in a documented, versioned JSON format of our own
//! (see docs/model-format.md), read and written inside the sandbox.

use crate::numeric::lti::system::StateSpace;
use crate::numeric::lti::tf::TransferFunction as Tf;
use crate::script::convert::Rr;
use crate::script::declare::Call;
use crate::script::types::{System, TransferFunction};
use rhai::Dynamic;
use serde_json::{json, Value};

/// The format tag of model files.
pub const FORMAT: &str = "statebook-model";
/// The current format version.
pub const VERSION: i64 = 1;

fn matrix_json(m: &nalgebra::DMatrix<f64>) -> Value {
    crate::script::json::matrix(m)
}

/// Encodes a model as a model-file document.
fn encode(call: &Call, v: &Dynamic) -> Rr<Value> {
    if let Some(s) = v.read_lock::<System>() {
        let s = &s.0;
        return Ok(json!({
            "format": FORMAT,
            "version": VERSION,
            "kind": "state_space",
            "dt": s.dt,
            "A": matrix_json(&s.a),
            "B": matrix_json(&s.b),
            "C": matrix_json(&s.c),
            "D": matrix_json(&s.d),
            "names": { "inputs": s.names.inputs, "outputs": s.names.outputs, "states": s.names.states },
        }));
    }
    if let Some(t) = v.read_lock::<TransferFunction>() {
        return Ok(json!({
            "format": FORMAT,
            "version": VERSION,
            "kind": "transfer_function",
            "dt": t.0.dt,
            "num": t.0.num,
            "den": t.0.den,
        }));
    }
    Err(call.fail(format_args!(
        "expected a System or TransferFunction, found {}",
        crate::script::convert::type_name(v)
    )))
}

fn matrix_of(
    call: &Call,
    v: &Value,
    key: &str,
    rows_hint: usize,
    cols_hint: usize,
) -> Rr<nalgebra::DMatrix<f64>> {
    let Some(rows) = v.get(key).and_then(Value::as_array) else {
        return Err(call.fail(format_args!("the file has no matrix \"{key}\"")));
    };
    if rows.is_empty() {
        return Ok(nalgebra::DMatrix::zeros(rows_hint, cols_hint));
    }
    let mut data: Vec<Vec<f64>> = Vec::new();
    for (i, r) in rows.iter().enumerate() {
        let Some(r) = r.as_array() else {
            return Err(call.fail(format_args!("{key}[{i}] is not a row")));
        };
        let row: Option<Vec<f64>> = r.iter().map(Value::as_f64).collect();
        let Some(row) = row else {
            return Err(call.fail(format_args!("{key}[{i}] has a non-numeric entry")));
        };
        if data.first().is_some_and(|f| f.len() != row.len()) {
            return Err(call.fail(format_args!("{key} has rows of different lengths")));
        }
        data.push(row);
    }
    let (r, c) = (data.len(), data[0].len());
    Ok(nalgebra::DMatrix::from_fn(r, c, |i, j| data[i][j]))
}

fn strings(v: &Value, key: &str) -> Vec<String> {
    v.get("names")
        .and_then(|n| n.get(key))
        .and_then(Value::as_array)
        .map(|a| {
            a.iter()
                .filter_map(|s| s.as_str().map(str::to_string))
                .collect()
        })
        .unwrap_or_default()
}

/// Decodes a model-file document.
fn decode(call: &Call, v: &Value) -> Rr<Dynamic> {
    if v.get("format").and_then(Value::as_str) != Some(FORMAT) {
        return Err(
            call.fail("not a statebook model file (missing \"format\": \"statebook-model\")")
        );
    }
    let version = v.get("version").and_then(Value::as_i64).unwrap_or(0);
    if version != VERSION {
        return Err(call.fail(format_args!("model file version {version} is not supported (this statebook reads version {VERSION})"
        )));
    }
    let dt = v.get("dt").and_then(Value::as_f64).unwrap_or(0.0);
    match v.get("kind").and_then(Value::as_str) {
        Some("state_space") => {
            let a = matrix_of(call, v, "A", 0, 0)?;
            let n = a.nrows();
            let b = matrix_of(call, v, "B", n, 0)?;
            let c = matrix_of(call, v, "C", 0, n)?;
            let d = matrix_of(call, v, "D", c.nrows(), b.ncols())?;
            let mut s = StateSpace::new(a, b, c, d, dt).map_err(call.num())?;
            let (ins, outs, sts) = (
                strings(v, "inputs"),
                strings(v, "outputs"),
                strings(v, "states"),
            );
            if ins.len() == s.inputs() {
                s.names.inputs = ins;
            }
            if outs.len() == s.outputs() {
                s.names.outputs = outs;
            }
            if sts.len() == s.order() {
                s.names.states = sts;
            }
            Ok(Dynamic::from(System(s)))
        }
        Some("transfer_function") => {
            let list = |k: &str| -> Rr<Vec<f64>> {
                v.get(k)
                    .and_then(Value::as_array)
                    .and_then(|a| a.iter().map(Value::as_f64).collect::<Option<Vec<f64>>>())
                    .ok_or_else(|| call.fail(format_args!("\"{k}\" must be an array of numbers")))
            };
            Tf::new(&list("num")?, &list("den")?, dt)
                .map(|t| Dynamic::from(TransferFunction(t)))
                .map_err(call.num())
        }
        other => Err(call.fail(format_args!("unknown model kind {other:?}"))),
    }
}

crate::builtins! {
    /// writes a model as a versioned statebook JSON model file
    ///
    /// model: a System or a TransferFunction; path: inside the project folder. The format
    /// is documented in docs/model-format.md.
    ///
    /// example:
    ///     save_model(plant, "plant.model.json");
    #[family = "output and files"]
    fn save_model(call, model: Dynamic, path: String) -> () {
        let doc = encode(&call, &model)?;
        let mut text = serde_json::to_string_pretty(&doc).unwrap_or_default();
        text.push('\n');
        call.write_file(&path, text.as_bytes())
    }

    /// reads a statebook JSON model file
    ///
    /// path: inside the project folder. The format is documented in docs/model-format.md.
    ///
    /// example:
    ///     save_model(plant, "plant.model.json");
    ///     let p = load_model("plant.model.json");
    #[family = "output and files"]
    fn load_model(call, path: String) -> Dynamic as "System | TransferFunction" {
        let text = call.read_text(&path)?;
        let v: Value = serde_json::from_str(&text)
            .map_err(|e| call.fail(format_args!("{path} is not valid JSON: {e}")))?;
        decode(&call, &v)
    }
}
