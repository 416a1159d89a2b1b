//! Engineer-friendly arithmetic: `1 / 2` is 0.5, math functions take ints, and ints and
//! floats mix freely. Integer division has a name of its own: `integer_quotient`.

use crate::script::convert::{fail, to_f64, Rr};
use crate::script::docs::Doc;
use rhai::{Dynamic, Engine, FLOAT, INT};

/// Help entries of this file.
pub const DOCS: &[Doc] = &[
    Doc {
        name: "integer_quotient",
        family: "numbers",
        usage: "integer_quotient(a, b) → int",
        summary: "whole-number division rounded toward zero (`/` always gives a float)",
        details: "a, b: ints; b must not be 0.",
        example: "integer_quotient(7, 2)   // 3, while 7 / 2 is 3.5",
    },
    Doc {
        name: "set_precision",
        family: "numbers",
        usage: "set_precision(digits)",
        summary: "significant digits used when numbers, matrices and models are displayed",
        details: "digits: 1 to 17 (default 6). Affects display only, never the computation.",
        example: "set_precision(10);\nshow(identity(2) / 3);",
    },
];

fn div_int(a: INT, b: INT) -> FLOAT {
    a as FLOAT / b as FLOAT
}

fn integer_quotient(a: INT, b: INT) -> Rr<INT> {
    if b == 0 {
        return Err(fail("integer_quotient: division by zero"));
    }
    a.checked_div(b)
        .ok_or_else(|| fail("integer_quotient: result overflows an int"))
}

fn pow_int(a: INT, b: INT) -> Dynamic {
    if b >= 0 && b <= u32::MAX as INT {
        if let Some(v) = a.checked_pow(b as u32) {
            return Dynamic::from_int(v);
        }
    }
    Dynamic::from_float((a as FLOAT).powf(b as FLOAT))
}

/// Registers the arithmetic overloads.
pub fn register(engine: &mut Engine) {
    engine.register_fn("/", div_int);
    engine.register_fn("integer_quotient", integer_quotient);
    engine.register_fn("**", pow_int);
    engine.register_fn("**", |a: INT, b: FLOAT| (a as FLOAT).powf(b));
    // One-argument math functions accept ints as well as floats.
    macro_rules! unary {
        ($($name:literal => $f:expr),* $(,)?) => {
            $( engine.register_fn($name, |x: INT| -> FLOAT { let g: fn(FLOAT) -> FLOAT = $f; g(x as FLOAT) }); )*
        };
    }
    unary!(
        "sin" => f64::sin, "cos" => f64::cos, "tan" => f64::tan,
        "asin" => f64::asin, "acos" => f64::acos, "atan" => f64::atan,
        "sinh" => f64::sinh, "cosh" => f64::cosh, "tanh" => f64::tanh,
        "asinh" => f64::asinh, "acosh" => f64::acosh, "atanh" => f64::atanh,
        "sqrt" => f64::sqrt, "exp" => f64::exp, "ln" => f64::ln, "log" => f64::log10,
        "log10" => f64::log10, "log2" => f64::log2, "to_degrees" => f64::to_degrees,
        "to_radians" => f64::to_radians,
    );
    engine.register_fn("log10", |x: FLOAT| x.log10());
    engine.register_fn("log2", |x: FLOAT| x.log2());
    engine.register_fn("to_degrees", |x: FLOAT| x.to_degrees());
    engine.register_fn("to_radians", |x: FLOAT| x.to_radians());
    // Two-argument functions: any mix of ints and floats.
    engine.register_fn("atan", |y: Dynamic, x: Dynamic| -> Rr<FLOAT> {
        Ok(to_f64(&y, "atan", "y")?.atan2(to_f64(&x, "atan", "x")?))
    });
    engine.register_fn("hypot", |a: Dynamic, b: Dynamic| -> Rr<FLOAT> {
        Ok(to_f64(&a, "hypot", "a")?.hypot(to_f64(&b, "hypot", "b")?))
    });
    engine.register_fn("max", |a: INT, b: FLOAT| (a as FLOAT).max(b));
    engine.register_fn("max", |a: FLOAT, b: INT| a.max(b as FLOAT));
    engine.register_fn("min", |a: INT, b: FLOAT| (a as FLOAT).min(b));
    engine.register_fn("min", |a: FLOAT, b: INT| a.min(b as FLOAT));
    engine.register_fn("to_float", |x: FLOAT| x);
    // IEEE comparisons. The engine's own float comparisons are relative to ε (so that
    // inf == inf and inf > 1e308 come out false); engineers need exact ones.
    macro_rules! compare {
        ($($op:literal => $f:expr),* $(,)?) => {$(
            {
                let f: fn(FLOAT, FLOAT) -> bool = $f;
                engine.register_fn($op, move |a: FLOAT, b: FLOAT| f(a, b));
                engine.register_fn($op, move |a: INT, b: FLOAT| f(a as FLOAT, b));
                engine.register_fn($op, move |a: FLOAT, b: INT| f(a, b as FLOAT));
            }
        )*};
    }
    compare!(
        "==" => |a, b| a == b, "!=" => |a, b| a != b, "<" => |a, b| a < b,
        "<=" => |a, b| a <= b, ">" => |a, b| a > b, ">=" => |a, b| a >= b,
    );
}
