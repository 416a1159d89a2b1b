//! `to_json`: the JSON encoding of script values, shared by `to_json`, records and the
//! results file.
//!
//! `Matrix` → array of rows; `Complex` → `{"re": …, "im": …}`; `ComplexMatrix` → rows of
//! such objects; maps → objects (keys in sorted order, as rhai keeps them); arrays →
//! arrays; `()` → `null`. JSON has no infinities or NaN, so those floats are written as
//! the strings `"inf"`, `"-inf"` and `"nan"`. Every value type encodes itself through
//! [`crate::script::types::ValueType::json`].

use super::types::KINDS;
use rhai::{Array, Dynamic, Map};
use serde_json::{json, Value};

/// A float as JSON (non-finite values as strings).
pub fn float(x: f64) -> Value {
    if x.is_finite() {
        json!(x)
    } else if x.is_nan() {
        json!("nan")
    } else if x > 0.0 {
        json!("inf")
    } else {
        json!("-inf")
    }
}

/// A script value from its JSON encoding: the inverse of [`encode`] for numbers (ints
/// stay ints, floats floats, `"inf"`, `"-inf"` and `"nan"` become those floats), strings,
/// booleans, `null` (as `()`), arrays and maps. Matrices, complex numbers and models come
/// back as their encodings (arrays of rows, `{re, im}` maps, maps of matrices).
pub fn decode(v: &Value) -> Dynamic {
    match v {
        Value::Null => Dynamic::UNIT,
        Value::Bool(b) => Dynamic::from_bool(*b),
        Value::Number(n) => match n.as_i64() {
            Some(i) if !n.is_f64() => Dynamic::from_int(i),
            _ => Dynamic::from_float(n.as_f64().unwrap_or(f64::NAN)),
        },
        Value::String(s) => match s.as_str() {
            "inf" => Dynamic::from_float(f64::INFINITY),
            "-inf" => Dynamic::from_float(f64::NEG_INFINITY),
            "nan" => Dynamic::from_float(f64::NAN),
            _ => Dynamic::from(s.clone()),
        },
        Value::Array(a) => Dynamic::from_array(a.iter().map(decode).collect()),
        Value::Object(o) => Dynamic::from_map(
            o.iter()
                .map(|(k, v)| (k.as_str().into(), decode(v)))
                .collect::<Map>(),
        ),
    }
}

/// A real matrix as an array of rows.
pub fn matrix(m: &nalgebra::DMatrix<f64>) -> Value {
    Value::Array(
        (0..m.nrows())
            .map(|i| Value::Array((0..m.ncols()).map(|j| float(m[(i, j)])).collect()))
            .collect(),
    )
}

/// A complex number as `{"re", "im"}`.
pub fn complex(z: nalgebra::Complex<f64>) -> Value {
    json!({"re": float(z.re), "im": float(z.im)})
}

/// Deepest nesting of arrays and maps that `to_json` and `record` encode (the encoding,
/// its text and its later drop are all recursive).
pub const MAX_NESTING: usize = 256;

/// Whether `v` nests arrays and maps deeper than `max` levels (looks no deeper than that).
pub fn nested_deeper_than(v: &Dynamic, max: usize) -> bool {
    if !(v.is_array() || v.is_map()) {
        return false;
    }
    if max == 0 {
        return true;
    }
    if let Some(a) = v.read_lock::<Array>() {
        return a.iter().any(|x| nested_deeper_than(x, max - 1));
    }
    if let Some(m) = v.read_lock::<Map>() {
        return m.values().any(|x| nested_deeper_than(x, max - 1));
    }
    false
}

/// Encodes a value for `to_json`/`record`, refusing pathologically deep nesting.
pub fn encode_checked(v: &Dynamic, fname: &str) -> Result<Value, String> {
    if nested_deeper_than(v, MAX_NESTING) {
        return Err(format!(
            "{fname}: the value nests arrays or maps deeper than {MAX_NESTING} levels"
        ));
    }
    Ok(encode(v))
}

/// Encodes any script value.
pub fn encode(v: &Dynamic) -> Value {
    if v.is_unit() {
        return Value::Null;
    }
    for k in KINDS {
        if let Some(j) = (k.json)(v) {
            return j;
        }
    }
    if let Ok(x) = v.as_float() {
        return float(x);
    }
    if let Ok(i) = v.as_int() {
        return json!(i);
    }
    if let Ok(b) = v.as_bool() {
        return json!(b);
    }
    if v.is_string() {
        return json!(v.to_string());
    }
    if let Some(a) = v.read_lock::<Array>() {
        return Value::Array(a.iter().map(encode).collect());
    }
    if let Some(m) = v.read_lock::<Map>() {
        let mut obj = serde_json::Map::new();
        for (k, x) in m.iter() {
            obj.insert(k.to_string(), encode(x));
        }
        return Value::Object(obj);
    }
    json!(v.to_string())
}
