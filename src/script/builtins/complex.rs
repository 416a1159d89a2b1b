//! Complex scalars and complex matrices: construction, parts, and arithmetic.

use crate::script::convert::{fail, num, to_count, type_name, Rr};
use crate::script::declare::{Call, Param};
use crate::script::docs::Doc;
use crate::script::types::{Complex, ComplexMatrix, Matrix};
use nalgebra::Complex as C;
use rhai::{Dynamic, Engine, FLOAT, INT};

/// Help pages of the parts, registered by hand in [`register`] as properties (`z.re`,
/// `M.im`, …); the functions are declared in `BUILTINS`.
pub const DOCS: &[Doc] = &[
    Doc {
        name: "re",
        family: "numbers",
        usage: "z.re → float\nM.re → Matrix",
        summary: "real part of a complex number or complex matrix",
        details: "",
        example: "complex(1, 2).re",
    },
    Doc {
        name: "im",
        family: "numbers",
        usage: "z.im → float\nM.im → Matrix",
        summary: "imaginary part of a complex number or complex matrix",
        details: "",
        example: "complex(1, 2).im",
    },
    Doc {
        name: "abs",
        family: "numbers",
        usage: "z.abs → float",
        summary: "modulus of a complex number",
        details: "",
        example: "complex(3, 4).abs   // 5.0",
    },
    Doc {
        name: "arg",
        family: "numbers",
        usage: "z.arg → float",
        summary: "angle of a complex number in radians, in (−π, π]",
        details: "",
        example: "complex(0, 1).arg   // 1.5708",
    },
];

/// A Complex or a ComplexMatrix value (what `conj` takes).
enum ComplexValue {
    Scalar(Complex),
    Matrix(ComplexMatrix),
}

impl Param for ComplexValue {
    const KIND: &'static str = "Complex | ComplexMatrix";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        if let Some(z) = v.read_lock::<Complex>() {
            return Ok(ComplexValue::Scalar(*z));
        }
        if let Some(m) = v.read_lock::<ComplexMatrix>() {
            return Ok(ComplexValue::Matrix(m.clone()));
        }
        Err(call.fail(format_args!(
            "{arg} must be a Complex or a ComplexMatrix, found {}",
            type_name(&v)
        )))
    }
}

crate::builtins! {
    /// a complex number re + im·j
    ///
    /// Parts: z.re, z.im, z.abs (modulus), z.arg (angle in radians); z.conj().
    /// Arithmetic with + - * / mixes freely with ints and floats.
    ///
    /// example:
    ///     let z = complex(-0.5, 1.2);
    ///     z.abs
    #[family = "numbers"]
    fn complex(call, re: FLOAT, im: FLOAT) -> Complex {
        Ok(cx(re, im))
    }

    /// the complex conjugate
    ///
    /// Of a Complex, or entry by entry of a ComplexMatrix. As a method: z.conj().
    ///
    /// example:
    ///     complex(1, 2).conj()
    #[family = "numbers"]
    fn conj(call, z: ComplexValue) -> Dynamic as "Complex | ComplexMatrix" {
        Ok(match z {
            ComplexValue::Scalar(z) => Dynamic::from(Complex(z.0.conj())),
            ComplexValue::Matrix(m) => Dynamic::from(ComplexMatrix(m.0.map(|z| z.conj()))),
        })
    }
}

fn cx(re: FLOAT, im: FLOAT) -> Complex {
    Complex(C::new(re, im))
}

/// Registers the parts (properties), the operators, and the Complex overloads of the
/// number functions of `arith` (typed, beside their number forms); the functions of this
/// file are declared in `BUILTINS`.
pub fn register(engine: &mut Engine) {
    engine.register_get("re", |z: &mut Complex| z.0.re);
    engine.register_get("im", |z: &mut Complex| z.0.im);
    engine.register_get("abs", |z: &mut Complex| z.0.norm());
    engine.register_get("arg", |z: &mut Complex| z.0.arg());
    engine.register_fn("abs", |z: Complex| z.0.norm());
    engine.register_fn("sqrt", |z: Complex| Complex(z.0.sqrt()));
    engine.register_fn("ln", |z: Complex| Complex(z.0.ln()));
    engine.register_fn("log", |z: Complex| Complex(z.0.ln()));
    engine.register_fn("log10", |z: Complex| Complex(z.0.log10()));
    macro_rules! binary {
        ($op:literal, $f:expr) => {{
            let f: fn(C<f64>, C<f64>) -> C<f64> = $f;
            engine.register_fn($op, move |a: Complex, b: Complex| Complex(f(a.0, b.0)));
            engine.register_fn($op, move |a: Complex, b: FLOAT| {
                Complex(f(a.0, C::new(b, 0.0)))
            });
            engine.register_fn($op, move |a: Complex, b: INT| {
                Complex(f(a.0, C::new(b as FLOAT, 0.0)))
            });
            engine.register_fn($op, move |a: FLOAT, b: Complex| {
                Complex(f(C::new(a, 0.0), b.0))
            });
            engine.register_fn($op, move |a: INT, b: Complex| {
                Complex(f(C::new(a as FLOAT, 0.0), b.0))
            });
        }};
    }
    binary!("+", |a, b| a + b);
    binary!("-", |a, b| a - b);
    binary!("*", |a, b| a * b);
    binary!("/", |a, b| a / b);
    engine.register_fn("-", |a: Complex| Complex(-a.0));
    engine.register_fn("==", |a: Complex, b: Complex| a.0 == b.0);
    engine.register_fn("!=", |a: Complex, b: Complex| a.0 != b.0);
    engine.register_fn("**", |a: Complex, b: INT| Complex(a.0.powi(b as i32)));
    engine.register_fn("**", |a: Complex, b: FLOAT| Complex(a.0.powf(b)));

    // Complex matrices.
    engine.register_get("re", |m: &mut ComplexMatrix| {
        Matrix::from(m.0.map(|z| z.re))
    });
    engine.register_get("im", |m: &mut ComplexMatrix| {
        Matrix::from(m.0.map(|z| z.im))
    });
    engine.register_get("rows", |m: &mut ComplexMatrix| m.0.nrows() as INT);
    engine.register_get("cols", |m: &mut ComplexMatrix| m.0.ncols() as INT);
    engine.register_fn(
        "get",
        |m: &mut ComplexMatrix, i: Dynamic, j: Dynamic| -> Rr<Complex> {
            let (i, j) = (to_count(&i, "get", "i")?, to_count(&j, "get", "j")?);
            if i >= m.0.nrows() || j >= m.0.ncols() {
                return Err(fail(format!(
                    "get: index ({i}, {j}) is outside the {}×{} matrix",
                    m.0.nrows(),
                    m.0.ncols()
                )));
            }
            Ok(Complex(m.0[(i, j)]))
        },
    );
    engine.register_fn("transpose", |m: ComplexMatrix| {
        ComplexMatrix(m.0.transpose())
    });
    engine.register_fn(
        "*",
        |a: ComplexMatrix, b: ComplexMatrix| -> Rr<ComplexMatrix> {
            if a.0.ncols() != b.0.nrows() {
                return Err(num("*")(crate::numeric::NumError::shape(
                    "complex matrix product",
                    "matching inner dimensions",
                    format!(
                        "{}×{} * {}×{}",
                        a.0.nrows(),
                        a.0.ncols(),
                        b.0.nrows(),
                        b.0.ncols()
                    ),
                )));
            }
            Ok(ComplexMatrix(a.0 * b.0))
        },
    );
    engine.register_fn("*", |a: ComplexMatrix, s: Complex| ComplexMatrix(a.0 * s.0));
    engine.register_fn("*", |s: Complex, a: ComplexMatrix| ComplexMatrix(a.0 * s.0));
    engine.register_fn("*", |a: ComplexMatrix, s: FLOAT| {
        ComplexMatrix(a.0 * C::new(s, 0.0))
    });
    engine.register_fn("*", |s: FLOAT, a: ComplexMatrix| {
        ComplexMatrix(a.0 * C::new(s, 0.0))
    });
    engine.register_fn(
        "+",
        |a: ComplexMatrix, b: ComplexMatrix| -> Rr<ComplexMatrix> {
            if a.0.shape() != b.0.shape() {
                return Err(fail("+: complex matrices of different shapes"));
            }
            Ok(ComplexMatrix(a.0 + b.0))
        },
    );
    engine.register_fn(
        "-",
        |a: ComplexMatrix, b: ComplexMatrix| -> Rr<ComplexMatrix> {
            if a.0.shape() != b.0.shape() {
                return Err(fail("-: complex matrices of different shapes"));
            }
            Ok(ComplexMatrix(a.0 - b.0))
        },
    );
    engine.register_fn("*", |a: Matrix, b: ComplexMatrix| -> Rr<ComplexMatrix> {
        if a.0.ncols() != b.0.nrows() {
            return Err(fail("*: inner dimensions differ"));
        }
        Ok(ComplexMatrix(a.0.map(|x| C::new(x, 0.0)) * b.0))
    });
}
