//! What a `Vector` (a block of reals: grids, sample times, signals) does in a script: it
//! behaves like an array of floats — `v[i]`, `v[i] = x`, `len`, `for x in v`, `map`,
//! `filter`, `push`, `to_array` — and adds elementwise arithmetic, which arrays lack.
//!
//! The operators are elementwise, as a signal engineer expects: `v + w`, `v - w`, `v * w`,
//! `v / w` between vectors of equal length, and `+ - * /` with a number on either side.
//! (A `Matrix` keeps the matrix product; `column(v)` makes a vector a column.)

use crate::script::convert::{fail, number_of, to_f64, Rr};
use crate::script::docs::Doc;
use crate::script::types::Vector;
use rhai::{Array, Dynamic, Engine, FnPtr, NativeCallContext, FLOAT, INT};

/// Help pages of the Vector operations registered here by hand (indexing, iteration and
/// operators cannot be declared as functions).
pub const DOCS: &[Doc] = &[
    Doc {
        name: "Vector",
        family: "lists and text",
        usage: "v[i] → float · v[i] = x · v.len() · for x in v { … } · v.map(f) · v.push(x) \
                · v.to_array()\nv + w, v - w, v * w, v / w (elementwise) · v * 2, 1 - v, -v",
        summary: "a list of reals held as numbers (grids, sample times, signals)",
        details: "linear_grid, log_grid, a response's .t and frequency grids return Vectors. \
                  They behave like arrays of floats: v[i] reads entry i (a negative i counts \
                  from the end), v.len() is the count, for x in v iterates, v.map(f) and \
                  v.filter(f) call a function per value (map gives a Vector when every \
                  result is a number, else an array). Arithmetic is elementwise between \
                  Vectors of equal length and with numbers. Passing a Vector to a built-in \
                  shares its numbers (no copy); every built-in that takes a list of numbers \
                  also takes an array. to_array() gives an ordinary array; column(v) and \
                  row(v) give a Matrix.",
        example: "let t = linear_grid(0, 1, 5);\nlet y = 1 - t * t;\ny[4]   // 0",
    },
    Doc {
        name: "to_array",
        family: "lists and text",
        usage: "v.to_array() → array",
        summary: "the values of a Vector as an ordinary array of floats",
        details: "For the engine's own array functions (sort, reverse, splice, …).",
        example: "linear_grid(0, 1, 3).to_array().len()",
    },
];

/// Entry `i` of a vector of `len` (negative counts from the end), or an error.
fn position(i: INT, len: usize) -> Rr<usize> {
    let k = if i < 0 { len as INT + i } else { i };
    if k < 0 || k as u64 >= len as u64 {
        return Err(fail(format!(
            "index {i} is outside the Vector of {len} value{}",
            if len == 1 { "" } else { "s" }
        )));
    }
    Ok(k as usize)
}

fn zip(op: &str, a: &Vector, b: &Vector, f: impl Fn(f64, f64) -> f64) -> Rr<Vector> {
    if a.0.len() != b.0.len() {
        return Err(fail(format!(
            "{op}: the Vectors have {} and {} values; elementwise {op} needs equal lengths",
            a.0.len(),
            b.0.len()
        )));
    }
    Ok(a.0
        .iter()
        .zip(b.0.iter())
        .map(|(&x, &y)| f(x, y))
        .collect::<Vec<_>>()
        .into())
}

fn each(a: &Vector, f: impl Fn(f64) -> f64) -> Vector {
    a.0.iter().map(|&x| f(x)).collect::<Vec<_>>().into()
}

/// Registers indexing, iteration, the list methods and the operators of `Vector`;
/// `array_size` is the session's `--max-array-size` (0: none), checked by `push`.
pub fn register(e: &mut Engine, array_size: usize) {
    e.register_iterator::<Vector>();
    e.register_indexer_get(|v: &mut Vector, i: INT| -> Rr<FLOAT> {
        Ok(v.0[position(i, v.0.len())?])
    });
    e.register_indexer_set(|v: &mut Vector, i: INT, x: Dynamic| -> Rr<()> {
        let k = position(i, v.0.len())?;
        v.make_mut()[k] = to_f64(&x, "Vector", "the new value")?;
        Ok(())
    });
    e.register_fn("len", |v: &mut Vector| v.0.len() as INT);
    e.register_fn("to_array", |v: &mut Vector| -> Array {
        v.0.iter().map(|&x| Dynamic::from_float(x)).collect()
    });
    e.register_fn("push", move |v: &mut Vector, x: Dynamic| -> Rr<()> {
        let x = to_f64(&x, "push", "the value")?;
        if array_size > 0 && v.0.len() >= array_size {
            return Err(fail(format!(
                "push: the Vector would exceed --max-array-size ({array_size} values)"
            )));
        }
        v.make_mut().push(x);
        Ok(())
    });
    e.register_fn(
        "map",
        |ctx: NativeCallContext, v: &mut Vector, f: FnPtr| -> Rr<Dynamic> {
            let mut out = Vec::with_capacity(v.0.len());
            for &x in v.0.iter() {
                out.push(f.call_within_context::<Dynamic>(&ctx, (x,))?);
            }
            if let Some(numbers) = out.iter().map(number_of).collect::<Option<Vec<f64>>>() {
                return Ok(Dynamic::from(Vector::from(numbers)));
            }
            Ok(Dynamic::from_array(out))
        },
    );
    e.register_fn(
        "filter",
        |ctx: NativeCallContext, v: &mut Vector, f: FnPtr| -> Rr<Vector> {
            let mut out = Vec::new();
            for &x in v.0.iter() {
                let keep = f.call_within_context::<Dynamic>(&ctx, (x,))?;
                match keep.as_bool() {
                    Ok(true) => out.push(x),
                    Ok(false) => {}
                    Err(t) => {
                        return Err(fail(format!(
                            "filter: the function must return true or false, found {t}"
                        )))
                    }
                }
            }
            Ok(out.into())
        },
    );
    e.register_fn("==", |a: Vector, b: Vector| a.0 == b.0);
    e.register_fn("!=", |a: Vector, b: Vector| a.0 != b.0);
    e.register_fn("-", |a: Vector| each(&a, |x| -x));

    macro_rules! elementwise {
        ($($op:literal => $f:expr),* $(,)?) => {$(
            e.register_fn($op, |a: Vector, b: Vector| zip($op, &a, &b, $f));
            e.register_fn($op, |a: Vector, s: FLOAT| each(&a, |x| $f(x, s)));
            e.register_fn($op, |a: Vector, s: INT| each(&a, |x| $f(x, s as f64)));
            e.register_fn($op, |s: FLOAT, a: Vector| each(&a, |x| $f(s, x)));
            e.register_fn($op, |s: INT, a: Vector| each(&a, |x| $f(s as f64, x)));
        )*};
    }
    elementwise! {
        "+" => |x: f64, y: f64| x + y,
        "-" => |x: f64, y: f64| x - y,
        "*" => |x: f64, y: f64| x * y,
        "/" => |x: f64, y: f64| x / y,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn positions_count_from_either_end_and_refuse_outside() {
        assert_eq!(position(0, 3).ok(), Some(0));
        assert_eq!(position(-1, 3).ok(), Some(2));
        assert!(position(3, 3).is_err());
        assert!(position(-4, 3).is_err());
        assert!(position(0, 0).is_err());
    }
}
