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
        name: "pi",
        family: "numbers",
        usage: "pi → float",
        summary: "the constant π = 3.14159… (a name a script can shadow with its own `let pi`)",
        details: "",
        example: "let w = 2 * pi * 50;   // 50 Hz in rad/s",
    },
    Doc {
        name: "^",
        family: "numbers",
        usage: "a ^ b → int or float\nA ^ k → Matrix",
        summary: "power: binds tighter than * and /, and to the right (2 ^ 3 ^ 2 is 2 ^ 9)",
        details: "ints: an int while the result fits, else a float; a negative exponent gives \
                  a float. A negative base with a non-integer exponent has no real value and \
                  is an error (use complex numbers). A square matrix to an int power k: \
                  repeated products; k < 0 uses the inverse. A minus sign directly in front \
                  of a power (-x ^ 2) is refused as ambiguous: write -(x ^ 2) or (-x) ^ 2. \
                  `**` is the same operator.",
        example: "let k = 3;\nprint(1 + k ^ 2);   // 10\nprint(-(k ^ 2));    // -9",
    },
    Doc {
        name: "%",
        family: "numbers",
        usage: "a % b → int or float",
        summary: "remainder with the sign of the divisor, so -90 % 360 is 270 (wrapping angles)",
        details: "a % b = a - b·floor(a / b), for ints and floats; b = 0 is an error for ints \
                  and NaN for floats.",
        example: "print(-7 % 3);   // 2",
    },
    Doc {
        name: "sin",
        family: "numbers",
        usage: "sin(x) → float",
        summary: "sine of an angle in radians",
        details: "Takes ints or floats.",
        example: "sin(pi / 6)   // 0.5",
    },
    Doc {
        name: "cos",
        family: "numbers",
        usage: "cos(x) → float",
        summary: "cosine of an angle in radians",
        details: "Takes ints or floats.",
        example: "cos(0)",
    },
    Doc {
        name: "tan",
        family: "numbers",
        usage: "tan(x) → float",
        summary: "tangent of an angle in radians",
        details: "Takes ints or floats.",
        example: "tan(pi / 4)",
    },
    Doc {
        name: "asin",
        family: "numbers",
        usage: "asin(x) → float",
        summary: "inverse sine in radians; x in [-1, 1] (outside it: an error, not NaN)",
        details: "Takes ints or floats.",
        example: "asin(1)",
    },
    Doc {
        name: "acos",
        family: "numbers",
        usage: "acos(x) → float",
        summary: "inverse cosine in radians; x in [-1, 1] (outside it: an error, not NaN)",
        details: "Takes ints or floats.",
        example: "acos(0)",
    },
    Doc {
        name: "atan",
        family: "numbers",
        usage: "atan(x) → float\natan(y, x) → float",
        summary:
            "inverse tangent in radians; atan(y, x) is the angle of the point (x, y), in (-π, π]",
        details: "Takes ints or floats.",
        example: "atan(1, -1)   // 2.356…",
    },
    Doc {
        name: "sinh",
        family: "numbers",
        usage: "sinh(x) → float",
        summary: "hyperbolic sine",
        details: "Takes ints or floats.",
        example: "sinh(1)",
    },
    Doc {
        name: "cosh",
        family: "numbers",
        usage: "cosh(x) → float",
        summary: "hyperbolic cosine",
        details: "Takes ints or floats.",
        example: "cosh(1)",
    },
    Doc {
        name: "tanh",
        family: "numbers",
        usage: "tanh(x) → float",
        summary: "hyperbolic tangent",
        details: "Takes ints or floats.",
        example: "tanh(1)",
    },
    Doc {
        name: "asinh",
        family: "numbers",
        usage: "asinh(x) → float",
        summary: "inverse hyperbolic sine",
        details: "Takes ints or floats.",
        example: "asinh(1)",
    },
    Doc {
        name: "acosh",
        family: "numbers",
        usage: "acosh(x) → float",
        summary: "inverse hyperbolic cosine; x ≥ 1",
        details: "Takes ints or floats.",
        example: "acosh(2)",
    },
    Doc {
        name: "atanh",
        family: "numbers",
        usage: "atanh(x) → float",
        summary: "inverse hyperbolic tangent; x in [-1, 1]",
        details: "Takes ints or floats.",
        example: "atanh(0.5)",
    },
    Doc {
        name: "sqrt",
        family: "numbers",
        usage: "sqrt(x) → float",
        summary: "square root; x ≥ 0 (sqrt(complex(x, 0)) for the complex root)",
        details: "Takes ints or floats.",
        example: "sqrt(2)",
    },
    Doc {
        name: "exp",
        family: "numbers",
        usage: "exp(x) → float",
        summary: "exponential e^x (of a number or a Complex; A.exp() for the matrix exponential)",
        details: "Takes ints or floats.",
        example: "exp(1)",
    },
    Doc {
        name: "ln",
        family: "numbers",
        usage: "ln(x) → float",
        summary: "natural logarithm; x ≥ 0 (ln(0) is -inf)",
        details: "Takes ints or floats.",
        example: "ln(10)",
    },
    Doc {
        name: "log",
        family: "numbers",
        usage: "log(x) → float",
        summary: "natural logarithm, the same as ln (log10 is base 10)",
        details: "Takes ints or floats.",
        example: "log(exp(2))   // 2",
    },
    Doc {
        name: "log10",
        family: "numbers",
        usage: "log10(x) → float",
        summary: "base-10 logarithm; x ≥ 0",
        details: "Takes ints or floats.",
        example: "20 * log10(2)   // 6.02 dB",
    },
    Doc {
        name: "log2",
        family: "numbers",
        usage: "log2(x) → float",
        summary: "base-2 logarithm; x ≥ 0",
        details: "Takes ints or floats.",
        example: "log2(1024)",
    },
    Doc {
        name: "hypot",
        family: "numbers",
        usage: "hypot(a, b) → float",
        summary: "√(a² + b²) without overflow or underflow in between",
        details: "Takes ints or floats.",
        example: "hypot(3, 4)",
    },
    Doc {
        name: "to_degrees",
        family: "numbers",
        usage: "to_degrees(x) → float",
        summary: "radians to degrees",
        details: "Takes ints or floats.",
        example: "to_degrees(pi)",
    },
    Doc {
        name: "to_radians",
        family: "numbers",
        usage: "to_radians(x) → float",
        summary: "degrees to radians",
        details: "Takes ints or floats.",
        example: "to_radians(180)",
    },
    Doc {
        name: "to_float",
        family: "numbers",
        usage: "to_float(x) → float",
        summary: "the number as a float",
        details: "Takes ints or floats.",
        example: "to_float(3)",
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
    Dynamic::from_float(pow_float(a as FLOAT, b as FLOAT).unwrap_or(FLOAT::NAN))
}

/// `a ^ b` for floats; a negative base with a non-integer exponent has no real value.
fn pow_float(a: FLOAT, b: FLOAT) -> Rr<FLOAT> {
    if a < 0.0 && b.is_finite() && b.fract() != 0.0 {
        return Err(fail(format!(
            "^: a negative number to a non-integer power has no real value, found {a} ^ {b}\n\
             hint: complex({a}, 0) ^ {b} gives the principal complex value"
        )));
    }
    if b.fract() == 0.0 && b.abs() <= i32::MAX as FLOAT {
        return Ok(a.powi(b as i32));
    }
    Ok(a.powf(b))
}

/// `a % b` with the sign of the divisor (floored division): periodic in `a`, as wrapping an
/// angle or an index needs; the engine's own `%` truncates (−7 % 3 would be −1).
fn modulo_int(a: INT, b: INT) -> Rr<INT> {
    if b == 0 {
        return Err(fail("%: division by zero"));
    }
    let r = a
        .checked_rem(b)
        .ok_or_else(|| fail("%: the remainder overflows an int"))?;
    Ok(if r != 0 && ((r < 0) != (b < 0)) {
        r + b
    } else {
        r
    })
}

fn modulo_float(a: FLOAT, b: FLOAT) -> FLOAT {
    let r = a % b;
    if r != 0.0 && ((r < 0.0) != (b < 0.0)) {
        r + b
    } else {
        r
    }
}

/// A one-argument function with a real domain: outside it, an error naming the domain
/// instead of a silent NaN.
fn domain(
    name: &'static str,
    f: fn(FLOAT) -> FLOAT,
    inside: fn(FLOAT) -> bool,
    what: &'static str,
) -> impl Fn(FLOAT) -> Rr<FLOAT> + Send + Sync + 'static {
    let has_complex = matches!(name, "sqrt" | "ln" | "log" | "log10");
    move |x: FLOAT| {
        if x.is_nan() || inside(x) {
            Ok(f(x))
        } else if has_complex {
            Err(fail(format!(
                "{name}: expected {what}, found {x}\n\
                 hint: {name}(complex({x}, 0)) gives the complex value"
            )))
        } else {
            Err(fail(format!("{name}: expected {what}, found {x}")))
        }
    }
}

/// Registers the arithmetic overloads.
pub fn register(engine: &mut Engine) {
    engine.register_fn("/", div_int);
    engine.register_fn("integer_quotient", integer_quotient);
    engine.register_fn("**", pow_int);
    engine.register_fn("**", |a: INT, b: FLOAT| pow_float(a as FLOAT, b));
    engine.register_fn("**", |a: FLOAT, b: INT| pow_float(a, b as FLOAT));
    engine.register_fn("**", pow_float);
    engine.register_fn("%", modulo_int);
    engine.register_fn("%", modulo_float);
    engine.register_fn("%", |a: INT, b: FLOAT| modulo_float(a as FLOAT, b));
    engine.register_fn("%", |a: FLOAT, b: INT| modulo_float(a, b as FLOAT));
    // One-argument math functions accept ints as well as floats.
    macro_rules! unary {
        ($($name:literal => $f:expr),* $(,)?) => {
            $( engine.register_fn($name, |x: INT| -> FLOAT { let g: fn(FLOAT) -> FLOAT = $f; g(x as FLOAT) }); )*
        };
    }
    unary!(
        "sin" => f64::sin, "cos" => f64::cos, "tan" => f64::tan, "atan" => f64::atan,
        "sinh" => f64::sinh, "cosh" => f64::cosh, "tanh" => f64::tanh,
        "asinh" => f64::asinh, "exp" => f64::exp, "to_degrees" => f64::to_degrees,
        "to_radians" => f64::to_radians,
    );
    // Functions with a restricted real domain, for ints and floats alike. `log` is the
    // natural logarithm, as engineers read it; `log10` is base 10.
    macro_rules! restricted {
        ($($name:literal => $f:expr, $inside:expr, $what:literal);* $(;)?) => {$(
            {
                let g = domain($name, $f, $inside, $what);
                engine.register_fn($name, move |x: INT| g(x as FLOAT));
                engine.register_fn($name, domain($name, $f, $inside, $what));
            }
        )*};
    }
    restricted!(
        "sqrt" => f64::sqrt, |x| x >= 0.0, "a number ≥ 0";
        "ln" => f64::ln, |x| x >= 0.0, "a number ≥ 0";
        "log" => f64::ln, |x| x >= 0.0, "a number ≥ 0";
        "log10" => f64::log10, |x| x >= 0.0, "a number ≥ 0";
        "log2" => f64::log2, |x| x >= 0.0, "a number ≥ 0";
        "asin" => f64::asin, |x| (-1.0..=1.0).contains(&x), "a number in [-1, 1]";
        "acos" => f64::acos, |x| (-1.0..=1.0).contains(&x), "a number in [-1, 1]";
        "acosh" => f64::acosh, |x| x >= 1.0, "a number ≥ 1";
        "atanh" => f64::atanh, |x| (-1.0..=1.0).contains(&x), "a number in [-1, 1]";
    );
    engine.register_fn("to_degrees", |x: FLOAT| x.to_degrees());
    engine.register_fn("to_radians", |x: FLOAT| x.to_radians());
    // Two-argument functions: any mix of ints and floats.
    engine.register_fn("atan", |y: Dynamic, x: Dynamic| -> Rr<FLOAT> {
        Ok(to_f64(&y, "atan", "y")?.atan2(to_f64(&x, "atan", "x")?))
    });
    engine.register_fn("hypot", |a: Dynamic, b: Dynamic| -> Rr<FLOAT> {
        Ok(to_f64(&a, "hypot", "a")?.hypot(to_f64(&b, "hypot", "b")?))
    });
    engine.register_fn("to_float", |x: FLOAT| x);
    // `pi` as a name: resolved only when the script has no variable of that name.
    #[allow(deprecated)] // the API is marked volatile, not deprecated
    engine.on_var(|name, _, ctx| {
        Ok((name == "pi" && !ctx.scope().contains(name))
            .then(|| Dynamic::from_float(std::f64::consts::PI)))
    });
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
