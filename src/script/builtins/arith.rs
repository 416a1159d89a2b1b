//! Engineer-friendly arithmetic: `1 / 2` is 0.5, math functions take ints, and ints and
//! floats mix freely. Integer division has a name of its own: `integer_quotient`.

use crate::script::convert::{fail, Rr};
use crate::script::docs::Doc;
use rhai::{Dynamic, Engine, FLOAT, INT};

/// The pages of the operators `^` and `%` and of the constant `pi`, registered by hand in
/// [`register`]: an operator or a name read as a variable is not a function a declaration
/// can describe. The functions of this file are declared in `BUILTINS`.
pub const DOCS: &[Doc] = &[
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
];

fn div_int(a: INT, b: INT) -> FLOAT {
    a as FLOAT / b as FLOAT
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

/// A one-argument function with a restricted real domain: outside it, an error naming the
/// domain instead of a silent NaN.
struct Domain {
    name: &'static str,
    f: fn(FLOAT) -> FLOAT,
    inside: fn(FLOAT) -> bool,
    what: &'static str,
}

impl Domain {
    fn apply(&self, x: FLOAT) -> Rr<FLOAT> {
        let name = self.name;
        let what = self.what;
        if x.is_nan() || (self.inside)(x) {
            Ok((self.f)(x))
        } else if matches!(name, "sqrt" | "ln" | "log" | "log10") {
            Err(fail(format!(
                "{name}: expected {what}, found {x}\n\
                 hint: {name}(complex({x}, 0)) gives the complex value"
            )))
        } else {
            Err(fail(format!("{name}: expected {what}, found {x}")))
        }
    }
}

const SQRT: Domain = Domain {
    name: "sqrt",
    f: f64::sqrt,
    inside: |x| x >= 0.0,
    what: "a number ≥ 0",
};
const LN: Domain = Domain {
    name: "ln",
    f: f64::ln,
    inside: |x| x >= 0.0,
    what: "a number ≥ 0",
};
const LOG: Domain = Domain {
    name: "log",
    f: f64::ln,
    inside: |x| x >= 0.0,
    what: "a number ≥ 0",
};
const LOG10: Domain = Domain {
    name: "log10",
    f: f64::log10,
    inside: |x| x >= 0.0,
    what: "a number ≥ 0",
};
const LOG2: Domain = Domain {
    name: "log2",
    f: f64::log2,
    inside: |x| x >= 0.0,
    what: "a number ≥ 0",
};
const ASIN: Domain = Domain {
    name: "asin",
    f: f64::asin,
    inside: |x| (-1.0..=1.0).contains(&x),
    what: "a number in [-1, 1]",
};
const ACOS: Domain = Domain {
    name: "acos",
    f: f64::acos,
    inside: |x| (-1.0..=1.0).contains(&x),
    what: "a number in [-1, 1]",
};
const ACOSH: Domain = Domain {
    name: "acosh",
    f: f64::acosh,
    inside: |x| x >= 1.0,
    what: "a number ≥ 1",
};
const ATANH: Domain = Domain {
    name: "atanh",
    f: f64::atanh,
    inside: |x| (-1.0..=1.0).contains(&x),
    what: "a number in [-1, 1]",
};

/// The functions with a restricted domain. The engine has float forms of its own (its
/// `log` is base 10, its `sqrt(-1.0)` is NaN); [`register`] overrides those with exact
/// float forms, which the engine picks before any declaration (whose parameters take any
/// value). Both forms run [`Domain::apply`].
const RESTRICTED: &[Domain] = &[SQRT, LN, LOG, LOG10, LOG2, ASIN, ACOS, ACOSH, ATANH];

/// Registers the operators, `pi`, and the exact float forms of the [`RESTRICTED`]
/// functions (the functions themselves are declared in `BUILTINS`).
pub fn register(engine: &mut Engine) {
    engine.register_fn("/", div_int);
    engine.register_fn("**", pow_int);
    engine.register_fn("**", |a: INT, b: FLOAT| pow_float(a as FLOAT, b));
    engine.register_fn("**", |a: FLOAT, b: INT| pow_float(a, b as FLOAT));
    engine.register_fn("**", pow_float);
    engine.register_fn("%", modulo_int);
    engine.register_fn("%", modulo_float);
    engine.register_fn("%", |a: INT, b: FLOAT| modulo_float(a as FLOAT, b));
    engine.register_fn("%", |a: FLOAT, b: INT| modulo_float(a, b as FLOAT));
    for d in RESTRICTED {
        engine.register_fn(d.name, move |x: FLOAT| d.apply(x));
    }
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

crate::builtins! {
    /// whole-number division rounded toward zero (`/` always gives a float)
    ///
    /// a, b: ints; b must not be 0.
    ///
    /// example:
    ///     integer_quotient(7, 2)   // 3, while 7 / 2 is 3.5
    #[family = "numbers"]
    fn integer_quotient(call, a: INT, b: INT) -> INT {
        if b == 0 {
            return Err(call.fail("division by zero"));
        }
        a.checked_div(b)
            .ok_or_else(|| call.fail("result overflows an int"))
    }

    /// sine of an angle in radians
    ///
    /// example:
    ///     sin(pi / 6)   // 0.5
    #[family = "numbers"]
    fn sin(call, x: FLOAT) -> FLOAT {
        Ok(x.sin())
    }

    /// cosine of an angle in radians
    ///
    /// example:
    ///     cos(0)
    #[family = "numbers"]
    fn cos(call, x: FLOAT) -> FLOAT {
        Ok(x.cos())
    }

    /// tangent of an angle in radians
    ///
    /// example:
    ///     tan(pi / 4)
    #[family = "numbers"]
    fn tan(call, x: FLOAT) -> FLOAT {
        Ok(x.tan())
    }

    /// inverse sine in radians; x in [-1, 1] (outside it: an error, not NaN)
    ///
    /// example:
    ///     asin(1)
    #[family = "numbers"]
    fn asin(call, x: FLOAT) -> FLOAT {
        ASIN.apply(x)
    }

    /// inverse cosine in radians; x in [-1, 1] (outside it: an error, not NaN)
    ///
    /// example:
    ///     acos(0)
    #[family = "numbers"]
    fn acos(call, x: FLOAT) -> FLOAT {
        ACOS.apply(x)
    }

    /// inverse tangent in radians; atan(y, x) is the angle of the point (x, y), in (-π, π]
    ///
    /// example:
    ///     atan(1, -1)   // 2.356…
    #[family = "numbers"]
    fn atan(call, x: FLOAT) -> FLOAT {
        Ok(x.atan())
    }
    fn atan(call, y: FLOAT, x: FLOAT) -> FLOAT {
        Ok(y.atan2(x))
    }

    /// hyperbolic sine
    ///
    /// example:
    ///     sinh(1)
    #[family = "numbers"]
    fn sinh(call, x: FLOAT) -> FLOAT {
        Ok(x.sinh())
    }

    /// hyperbolic cosine
    ///
    /// example:
    ///     cosh(1)
    #[family = "numbers"]
    fn cosh(call, x: FLOAT) -> FLOAT {
        Ok(x.cosh())
    }

    /// hyperbolic tangent
    ///
    /// example:
    ///     tanh(1)
    #[family = "numbers"]
    fn tanh(call, x: FLOAT) -> FLOAT {
        Ok(x.tanh())
    }

    /// inverse hyperbolic sine
    ///
    /// example:
    ///     asinh(1)
    #[family = "numbers"]
    fn asinh(call, x: FLOAT) -> FLOAT {
        Ok(x.asinh())
    }

    /// inverse hyperbolic cosine; x ≥ 1
    ///
    /// example:
    ///     acosh(2)
    #[family = "numbers"]
    fn acosh(call, x: FLOAT) -> FLOAT {
        ACOSH.apply(x)
    }

    /// inverse hyperbolic tangent; x in [-1, 1]
    ///
    /// example:
    ///     atanh(0.5)
    #[family = "numbers"]
    fn atanh(call, x: FLOAT) -> FLOAT {
        ATANH.apply(x)
    }

    /// square root; x ≥ 0 (sqrt(complex(x, 0)) for the complex root)
    ///
    /// example:
    ///     sqrt(2)
    #[family = "numbers"]
    fn sqrt(call, x: FLOAT) -> FLOAT {
        SQRT.apply(x)
    }

    /// natural logarithm; x ≥ 0 (ln(0) is -inf)
    ///
    /// example:
    ///     ln(10)
    #[family = "numbers"]
    fn ln(call, x: FLOAT) -> FLOAT {
        LN.apply(x)
    }

    /// natural logarithm, the same as ln (log10 is base 10)
    ///
    /// example:
    ///     log(exp(2))   // 2
    #[family = "numbers"]
    fn log(call, x: FLOAT) -> FLOAT {
        LOG.apply(x)
    }

    /// base-10 logarithm; x ≥ 0
    ///
    /// example:
    ///     20 * log10(2)   // 6.02 dB
    #[family = "numbers"]
    fn log10(call, x: FLOAT) -> FLOAT {
        LOG10.apply(x)
    }

    /// base-2 logarithm; x ≥ 0
    ///
    /// example:
    ///     log2(1024)
    #[family = "numbers"]
    fn log2(call, x: FLOAT) -> FLOAT {
        LOG2.apply(x)
    }

    /// √(a² + b²) without overflow or underflow in between
    ///
    /// example:
    ///     hypot(3, 4)
    #[family = "numbers"]
    fn hypot(call, a: FLOAT, b: FLOAT) -> FLOAT {
        Ok(a.hypot(b))
    }

    /// radians to degrees
    ///
    /// example:
    ///     to_degrees(pi)
    #[family = "numbers"]
    fn to_degrees(call, x: FLOAT) -> FLOAT {
        Ok(x.to_degrees())
    }

    /// degrees to radians
    ///
    /// example:
    ///     to_radians(180)
    #[family = "numbers"]
    fn to_radians(call, x: FLOAT) -> FLOAT {
        Ok(x.to_radians())
    }

    /// the number as a float
    ///
    /// example:
    ///     to_float(3)
    #[family = "numbers"]
    fn to_float(call, x: FLOAT) -> FLOAT {
        Ok(x)
    }
}
