//! Complex scalars and complex matrices: construction, parts, and arithmetic.

use crate::script::convert::{fail, num, to_count, to_f64, Rr};
use crate::script::docs::Doc;
use crate::script::types::{Complex, ComplexMatrix, Matrix};
use nalgebra::Complex as C;
use rhai::{Dynamic, Engine, FLOAT, INT};

/// Help entries of this file.
pub const DOCS: &[Doc] = &[
    Doc {
        name: "complex",
        family: "numbers",
        usage: "complex(re, im) → Complex",
        summary: "a complex number re + im·j",
        details: "Parts: z.re, z.im, z.abs (modulus), z.arg (angle in radians); z.conj().\n\
                  Arithmetic with + - * / mixes freely with ints and floats.",
        example: "let z = complex(-0.5, 1.2);\nz.abs",
    },
    Doc {
        name: "conj",
        family: "numbers",
        usage: "z.conj() → Complex",
        summary: "the complex conjugate",
        details: "",
        example: "complex(1, 2).conj()",
    },
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

fn cx(re: FLOAT, im: FLOAT) -> Complex {
    Complex(C::new(re, im))
}

/// Registers complex types and operators.
pub fn register(engine: &mut Engine) {
    engine.register_type_with_name::<Complex>("Complex");
    engine.register_type_with_name::<ComplexMatrix>("ComplexMatrix");
    engine.register_fn("complex", |re: Dynamic, im: Dynamic| -> Rr<Complex> {
        Ok(cx(
            to_f64(&re, "complex", "re")?,
            to_f64(&im, "complex", "im")?,
        ))
    });
    engine.register_get("re", |z: &mut Complex| z.0.re);
    engine.register_get("im", |z: &mut Complex| z.0.im);
    engine.register_get("abs", |z: &mut Complex| z.0.norm());
    engine.register_get("arg", |z: &mut Complex| z.0.arg());
    engine.register_fn("conj", |z: Complex| Complex(z.0.conj()));
    engine.register_fn("abs", |z: Complex| z.0.norm());
    engine.register_fn("sqrt", |z: Complex| Complex(z.0.sqrt()));
    engine.register_fn("exp", |z: Complex| Complex(z.0.exp()));
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
    engine.register_get("re", |m: &mut ComplexMatrix| Matrix(m.0.map(|z| z.re)));
    engine.register_get("im", |m: &mut ComplexMatrix| Matrix(m.0.map(|z| z.im)));
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
    engine.register_fn("conj", |m: ComplexMatrix| {
        ComplexMatrix(m.0.map(|z| z.conj()))
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
