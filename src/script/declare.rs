//! One declaration per built-in.
//!
//! A built-in is written once, with the [`builtins!`] macro: its doc comment *is* its help
//! page, its `#[family = "…"]` is where `help` lists it, and its typed parameters are
//! converted before the body runs, with errors that name the built-in and the argument.
//! From that one declaration come the engine registration ([`Builtin::register`]), the
//! help page ([`Builtin::doc`]), the call forms shown by `help` and REPL completion, and
//! the checks in `tests/all/help_pages.rs`.
//!
//! ```ignore
//! builtins! {
//!     /// the H2 norm: the root-mean-square of the impulse response over all channels
//!     ///
//!     /// Continuous: √trace(C W Cᵀ) with the controllability Gramian W.
//!     ///
//!     /// example:
//!     ///     h2_norm(transfer_function([3], [1, 2]))   // 1.5 = 3/√(2·2)
//!     #[family = "frequency domain"]
//!     fn h2_norm(call, sys: Model) -> FLOAT {
//!         norms::h2_norm(&sys).map_err(call.num())
//!     }
//! }
//! ```
//!
//! Several `fn`s with the same name under one doc comment are overloads (different numbers
//! of arguments); each gives one call form on the page. A return type may carry the text
//! the page shows for it: `-> Map as "#{ value, frequency }"`.
//!
//! Doc-comment layout: the first paragraph is the one-line summary; the paragraph starting
//! `example:` (its lines indented) is the example; every other paragraph is detail.

use super::convert::{self, fail, Rr};
use super::docs::Doc;
use crate::numeric::lti::system::StateSpace;
use crate::numeric::NumError;
use nalgebra::DMatrix;
use rhai::{Array, Dynamic, Engine, EvalAltResult, FnPtr, Map, NativeCallContext, FLOAT, INT};
use std::sync::OnceLock;

/// One declared built-in: everything `help`, completion and registration need.
pub struct Builtin {
    /// The name scripts call.
    pub name: &'static str,
    /// The family `help` lists it under (one of [`super::docs::FAMILIES`]).
    pub family: &'static str,
    /// The doc comment, one line per `///` line.
    pub comment: &'static str,
    /// Call forms, one per overload (`h2_norm(sys: model) → float`).
    pub forms: &'static [Form],
    /// Registers every overload with the engine.
    pub register: fn(&mut Engine),
}

impl Builtin {
    /// The help page, parsed once from the doc comment.
    pub fn doc(&self) -> Doc {
        let (summary, details, example) = split_comment(self.comment);
        Doc {
            name: self.name,
            family: self.family,
            usage: leak(
                self.forms
                    .iter()
                    .map(Form::text)
                    .collect::<Vec<_>>()
                    .join("\n"),
            ),
            summary: leak(summary),
            details: leak(details),
            example: leak(example),
        }
    }
}

/// Help pages live for the whole process (built once, see [`pages`]).
fn leak(s: String) -> &'static str {
    Box::leak(s.into_boxed_str())
}

/// The pages of every declared built-in, built once.
pub fn pages() -> &'static [Doc] {
    static PAGES: OnceLock<Vec<Doc>> = OnceLock::new();
    PAGES.get_or_init(|| {
        super::builtins::DECLARED
            .iter()
            .flat_map(|table| table.iter())
            .map(Builtin::doc)
            .collect()
    })
}

/// Splits a doc comment into summary, details and example (see the module docs).
fn split_comment(comment: &str) -> (String, String, String) {
    let mut paragraphs: Vec<Vec<&str>> = vec![Vec::new()];
    for line in comment.lines() {
        let line = line.strip_prefix(' ').unwrap_or(line);
        if line.trim().is_empty() {
            if paragraphs.last().is_some_and(|p| !p.is_empty()) {
                paragraphs.push(Vec::new());
            }
        } else if let Some(p) = paragraphs.last_mut() {
            p.push(line);
        }
    }
    paragraphs.retain(|p| !p.is_empty());
    let mut summary = String::new();
    let mut details: Vec<String> = Vec::new();
    let mut example = String::new();
    for (k, p) in paragraphs.iter().enumerate() {
        if k == 0 {
            summary = p.iter().map(|l| l.trim()).collect::<Vec<_>>().join(" ");
        } else if let Some(first) = p[0].strip_prefix("example:") {
            let mut lines: Vec<&str> = Vec::new();
            if !first.trim().is_empty() {
                lines.push(first.trim());
            }
            let indent = p[1..]
                .iter()
                .map(|l| l.len() - l.trim_start().len())
                .min()
                .unwrap_or(0);
            lines.extend(p[1..].iter().map(|l| &l[indent.min(l.len())..]));
            example = lines.join("\n");
        } else {
            details.push(p.iter().map(|l| l.trim()).collect::<Vec<_>>().join("\n"));
        }
    }
    (summary, details.join("\n\n"), example)
}

/// The call a built-in is serving: its name (so errors are worded once, here) and the
/// engine context (for warnings and the session).
pub struct Call<'a, 'b> {
    /// The built-in's script name.
    pub name: &'static str,
    ctx: &'a NativeCallContext<'b>,
}

impl<'a, 'b> Call<'a, 'b> {
    /// A call of built-in `name` within `ctx`.
    pub fn new(ctx: &'a NativeCallContext<'b>, name: &'static str) -> Self {
        Call { name, ctx }
    }

    /// The engine context of the call.
    pub fn ctx(&self) -> &NativeCallContext<'b> {
        self.ctx
    }

    /// A run-time error `name: message`.
    pub fn fail(&self, message: impl std::fmt::Display) -> Box<EvalAltResult> {
        fail(format!("{}: {message}", self.name))
    }

    /// Maps a numeric error to `name: error`.
    pub fn num(&self) -> impl Fn(NumError) -> Box<EvalAltResult> + '_ {
        convert::num(self.name)
    }

    /// A warning `name: message` to the session.
    pub fn warn(&self, message: impl std::fmt::Display) {
        super::state::warn(self.ctx, format!("{}: {message}", self.name));
    }

    /// The sandboxed session behind the call (every file built-in needs one).
    pub fn session(&self) -> Rr<std::sync::Arc<super::state::SessionState>> {
        super::state::of(self.ctx).ok_or_else(|| self.fail("no session"))
    }

    /// Reads a text file at `path` (relative to the analysis file), judged by the session's
    /// sandbox and bounded by its memory budget: the one read path of every file built-in.
    pub fn read_text(&self, path: &str) -> Rr<String> {
        let real = self
            .session()?
            .sandbox
            .read_path(path)
            .map_err(|e| self.fail(e))?;
        crate::budget::read_bounded(&real)
            .map_err(|e| self.fail(format_args!("cannot read {path}: {e}")))
    }

    /// Writes `bytes` to `path`, judged by the session's sandbox, through an exclusive
    /// temporary in the target folder and a rename: the one write path of every file
    /// built-in.
    pub fn write_file(&self, path: &str, bytes: &[u8]) -> Rr<()> {
        let real = self
            .session()?
            .sandbox
            .write_path(path)
            .map_err(|e| self.fail(e))?;
        crate::safe_fs::write_file(&real, bytes, false)
            .map_err(|e| self.fail(format_args!("cannot write {path}: {e}")))
    }

    /// A number argument.
    pub fn number(&self, v: &Dynamic, arg: &str) -> Rr<f64> {
        convert::to_f64(v, self.name, arg)
    }

    /// A model argument (a System, or a TransferFunction realized minimally).
    pub fn system(&self, v: &Dynamic, arg: &str) -> Rr<StateSpace> {
        convert::to_system(v, self.name, arg)
    }

    /// A matrix argument.
    pub fn matrix(&self, v: &Dynamic, arg: &str) -> Rr<DMatrix<f64>> {
        convert::to_matrix(v, self.name, arg)
    }
}

/// A parameter type of a declared built-in: how a script value becomes it, and the word
/// the help page shows for it.
pub trait Param: Sized {
    /// The kind shown in call forms (`sys: model`).
    const KIND: &'static str;
    /// Converts argument `arg` of `call`.
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self>;
}

/// Any value, unconverted (the body looks at it).
impl Param for Dynamic {
    const KIND: &'static str = "value";
    fn from_arg(v: Dynamic, _: &Call, _: &str) -> Rr<Self> {
        Ok(v)
    }
}

/// A number: an int or a float.
impl Param for FLOAT {
    const KIND: &'static str = "number";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        convert::to_f64(&v, call.name, arg)
    }
}

/// A finite number (NaN and infinities refused, naming the argument).
pub struct Finite(pub f64);
impl Param for Finite {
    const KIND: &'static str = "number";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        convert::to_finite(&v, call.name, arg).map(Finite)
    }
}

/// A whole number ≥ 0 (an int, or a float with an integral value).
impl Param for usize {
    const KIND: &'static str = "count";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        convert::to_count(&v, call.name, arg)
    }
}

/// An integer.
impl Param for INT {
    const KIND: &'static str = "int";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        v.as_int().map_err(|t| {
            call.fail(format_args!(
                "{arg} must be an int, found {}",
                convert_name(t)
            ))
        })
    }
}

/// A true/false flag.
impl Param for bool {
    const KIND: &'static str = "bool";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        v.as_bool().map_err(|t| {
            call.fail(format_args!(
                "{arg} must be true or false, found {}",
                convert_name(t)
            ))
        })
    }
}

/// A list of numbers (an array, or a row or column matrix).
impl Param for Vec<f64> {
    const KIND: &'static str = "numbers";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        convert::to_f64_vec(&v, call.name, arg)
    }
}

/// A matrix: a Matrix, an array of rows, or a number.
impl Param for DMatrix<f64> {
    const KIND: &'static str = "matrix";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        convert::to_matrix(&v, call.name, arg)
    }
}

/// A model: a System, or a TransferFunction (realized minimally in state space).
pub type Model = StateSpace;
impl Param for StateSpace {
    const KIND: &'static str = "model";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        convert::to_system(&v, call.name, arg)
    }
}

/// One model or several: a System or a TransferFunction, or a non-empty array of them
/// (figures that overlay models).
pub struct Models(pub Vec<StateSpace>);
impl Param for Models {
    const KIND: &'static str = "model | [model]";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        if let Some(a) = v.read_lock::<Array>() {
            if a.is_empty() {
                return Err(call.fail(format_args!(
                    "{arg} is an empty array, expected at least one model"
                )));
            }
            return a
                .iter()
                .enumerate()
                .map(|(k, m)| convert::to_system(m, call.name, &format!("{arg}[{k}]")))
                .collect::<Rr<Vec<_>>>()
                .map(Models);
        }
        if !(v.is::<super::types::System>() || v.is::<super::types::TransferFunction>()) {
            return Err(call.fail(format_args!(
                "{arg} must be a System, a TransferFunction or an array of them, found {}",
                convert::type_name(&v)
            )));
        }
        convert::to_system(&v, call.name, arg).map(|m| Models(vec![m]))
    }
}

/// Text.
impl Param for String {
    const KIND: &'static str = "string";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        convert::to_str(&v, call.name, arg)
    }
}

/// A complex number (or a real one).
impl Param for nalgebra::Complex<f64> {
    const KIND: &'static str = "complex";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        convert::to_complex(&v, call.name, arg)
    }
}

/// A map (`#{ … }`).
impl Param for Map {
    const KIND: &'static str = "map";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        let found = convert::type_name(&v);
        v.try_cast::<Map>()
            .ok_or_else(|| call.fail(format_args!("{arg} must be a map #{{ … }}, found {found}")))
    }
}

/// An array.
impl Param for Array {
    const KIND: &'static str = "array";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        let found = convert::type_name(&v);
        v.try_cast::<Array>()
            .ok_or_else(|| call.fail(format_args!("{arg} must be an array, found {found}")))
    }
}

/// A function (a closure `|x| …` or `Fn("name")`).
impl Param for FnPtr {
    const KIND: &'static str = "function";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        convert::as_fnptr(&v).ok_or_else(|| {
            call.fail(format_args!(
                "{arg} must be a function (e.g. |x| x * 2), found {}",
                convert::type_name(&v)
            ))
        })
    }
}

/// A value of one of the script's own types ([`super::types::KINDS`]), e.g. a `Figure`.
impl<T: super::types::ValueType> Param for T {
    const KIND: &'static str = T::NAME;
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        let found = convert::type_name(&v);
        v.try_cast::<T>()
            .ok_or_else(|| call.fail(format_args!("{arg} must be a {}, found {found}", T::NAME)))
    }
}

/// The user-facing name of an engine type name (`i64` → `int`).
fn convert_name(t: &str) -> &str {
    match t {
        "i64" => "int",
        "f64" => "float",
        "string" | "ImmutableString" => "string",
        other => other.rsplit("::").next().unwrap_or(other),
    }
}

/// A return type of a declared built-in: the word its call form shows.
pub trait Returns {
    /// The kind shown after `→`.
    const KIND: &'static str;
}

macro_rules! returns {
    ($($t:ty => $k:literal),* $(,)?) => { $(impl Returns for $t { const KIND: &'static str = $k; })* };
}
returns! {
    FLOAT => "float", INT => "int", bool => "bool", Map => "map", Array => "array",
    Dynamic => "value", String => "string", rhai::ImmutableString => "string", () => "()",
}

impl<T: super::types::ValueType> Returns for T {
    const KIND: &'static str = T::NAME;
}

/// The first of a list of expressions (the name of a group of overloads).
#[doc(hidden)]
#[macro_export]
macro_rules! __first {
    ($a:expr $(, $rest:expr)*) => {
        $a
    };
}

/// Declares built-ins; see the module documentation. Expands to `pub const BUILTINS:
/// &[Builtin]` for the file it is used in.
#[macro_export]
macro_rules! builtins {
    ($(
        $(#[doc = $doc:literal])*
        #[family = $family:literal]
        $(
            fn $name:ident ($call:ident $(, &mut $recv:ident : $rty:ty)? $(, $arg:ident : $ty:ty)* $(,)?)
                -> $ret:ty $(as $ret_doc:literal)? $body:block
        )+
    )*) => {
        /// The built-ins declared in this file.
        // Parameter names are the page's names: `A`, `Q` and `R` read as in the mathematics.
        #[allow(non_snake_case)]
        pub const BUILTINS: &[$crate::script::declare::Builtin] = &[$(
            $crate::script::declare::Builtin {
                name: $crate::__first!($(stringify!($name)),+),
                family: $family,
                comment: concat!($($doc, "\n"),*),
                forms: &[$(
                    $crate::script::declare::Form {
                        name: stringify!($name),
                        receiver: $crate::__receiver!($($recv : $rty)?),
                        args: &[$((stringify!($arg), <$ty as $crate::script::declare::Param>::KIND)),*],
                        returns: $crate::__first!($($ret_doc,)? <$ret as $crate::script::declare::Returns>::KIND),
                    }
                ),+],
                register: |engine: &mut ::rhai::Engine| {
                    $(
                        // Arguments arrive as engine values and are converted by their
                        // `Param` type before the body runs; a method form takes its
                        // receiver by `&mut` (so `t.save_csv(p)` works on the value in
                        // place, uncopied).
                        engine.register_fn(
                            stringify!($name),
                            |ctx: ::rhai::NativeCallContext
                                $(, $recv: &mut $rty)?
                                $(, $arg: ::rhai::Dynamic)*|
                                -> $crate::script::convert::Rr<$ret> {
                                #[allow(unused_variables)]
                                let $call = $crate::script::declare::Call::new(&ctx, stringify!($name));
                                $(
                                    let $arg = <$ty as $crate::script::declare::Param>::from_arg(
                                        $arg, &$call, stringify!($arg),
                                    )?;
                                )*
                                $body
                            },
                        );
                    )+
                },
            }
        ),*];
    };
}

/// The receiver of a method form, as (name, type), or `None` for a function form.
#[doc(hidden)]
#[macro_export]
macro_rules! __receiver {
    () => {
        None
    };
    ($recv:ident : $rty:ty) => {
        Some((stringify!($recv), stringify!($rty)))
    };
}

/// One call form of a built-in: its parameters (name, kind) and what it returns.
pub struct Form {
    /// The name this overload is registered under (usually its built-in's; a page may
    /// group related names, as `failures`, `successes` and `filter`).
    pub name: &'static str,
    /// For a method form, the receiver as (name, type): shown as `t.name(…)`.
    pub receiver: Option<(&'static str, &'static str)>,
    /// Parameters as (name, kind).
    pub args: &'static [(&'static str, &'static str)],
    /// What the call returns, as the page shows it.
    pub returns: &'static str,
}

impl Form {
    /// `name(arg: kind, …) → returns`, or `recv.name(arg: kind, …) → returns` for a method
    /// (with `(recv: Type)` after it unless the name already says the type).
    pub fn text(&self) -> String {
        let args: Vec<String> = self.args.iter().map(|(a, k)| format!("{a}: {k}")).collect();
        let call = format!("{}({}) → {}", self.name, args.join(", "), self.returns);
        match self.receiver {
            Some((r, ty)) if r == ty.to_lowercase() => format!("{r}.{call}"),
            Some((r, ty)) => format!("{r}.{call}   ({r}: {ty})"),
            None => call,
        }
    }
}
