//! Interconnection of named models by signal name ("wiring"): any number of parts, summing
//! junctions with signs and gains, external inputs, kept outputs.
//!
//! **The wiring language.** A part's signals are referred to as `part.signal`, where
//! `signal` is a name given by `name_signals` or, for a part that leaves them unnamed, the
//! position `u0, u1, …` (inputs) and `y0, y1, …` (outputs). A part with exactly one input
//! (output) may be referred to by its bare name where an input (output) is meant.
//! External inputs are plain names. A connection is one equation
//!
//! ```text
//! part.input = [±] [gain *] signal  ± [gain *] signal  …
//! ```
//!
//! whose right side sums part outputs and external inputs. An output of the wired model
//! is a signal (named by its own name, or `part.signal` when two kept outputs share a
//! name) or `name = sum`, where the sum may also read the value arriving at a part input.
//!
//! **Mathematics.** Stack the parts side by side: `x' = A x + B U`, `Y = C x + D U` with
//! `U` all part inputs, `Y` all part outputs. The connections say `U = M Y + N r` (`r` the
//! external inputs). Eliminating the outputs, `(I − D M) Y = C x + D N r`; when
//! `W = I − D M` is invertible (`F = W⁻¹`)
//!
//! ```text
//! Y = F C x + F D N r,      U = M F C x + (M F D N + N) r,
//! x' = (A + B M F C) x + B (M F D N + N) r,
//! ```
//!
//! and a kept output `z = G_Y Y + G_U U + G_r r` follows by substitution. This is the
//! standard linear fractional elimination of an interconnection (e.g. Zhou, Doyle &
//! Glover 1996, "Robust and Optimal Control", ch. 10); the order of the result is the sum
//! of the parts' orders and its poles are those of the interconnection.
//!
//! **Algebraic loops.** A cycle of direct feedthrough (an output reaching, through
//! connections and `D` entries, its own part's input) is an algebraic loop. Without one,
//! `W` is unit triangular after a permutation and always invertible. With one, `W` is
//! judged on its Parlett–Reinsch balanced form (a diagonal similarity, so the verdict does
//! not depend on the units of the signals): singular (an error naming the signals in the
//! loop) when its reciprocal condition number is at most `p·ε`, a note when below
//! [`ALGEBRAIC_LOOP_WARNING`].

use crate::numeric::design::interconnect::side_by_side;
use crate::numeric::linalg::dense::balance_reducing_norm;
use crate::numeric::lti::system::{SignalNames, StateSpace};
use crate::numeric::{NumError, NumResult};
use nalgebra::linalg::SVD;
use nalgebra::DMatrix;

/// Reciprocal condition number of the balanced `I − D M` below which a solvable algebraic
/// loop is reported: the elimination may then lose up to `−log10(rcond)` digits.
pub const ALGEBRAIC_LOOP_WARNING: f64 = 1e-8;

/// One named model of an interconnection.
#[derive(Debug, Clone)]
pub struct Part {
    /// The name used to refer to its signals (`name.signal`).
    pub name: String,
    /// The model.
    pub model: StateSpace,
}

/// What to wire: external input names, connection equations, kept outputs.
#[derive(Debug, Clone, Default)]
pub struct WireSpec {
    /// External inputs of the wired model, in order.
    pub inputs: Vec<String>,
    /// Connections `part.input = sum`, one per driven input.
    pub connections: Vec<String>,
    /// Outputs of the wired model: `signal` or `name = sum`.
    pub outputs: Vec<String>,
}

/// The wired model and the notes (unused signals, ill-conditioned algebraic loops) that
/// the caller should show as warnings.
#[derive(Debug, Clone)]
pub struct Wired {
    /// The interconnection; inputs named by the external inputs, outputs by the kept
    /// outputs, states `part.state`.
    pub model: StateSpace,
    /// Legitimate but noteworthy findings.
    pub notes: Vec<String>,
}

/// A signal a sum can read.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Signal {
    /// External input k.
    External(usize),
    /// Stacked part output k.
    Output(usize),
    /// Stacked part input k (only in kept outputs).
    Input(usize),
}

/// The parts with their stacked signal positions and the names by which they are found.
struct Layout<'a> {
    parts: &'a [Part],
    input_at: Vec<usize>,
    output_at: Vec<usize>,
    externals: &'a [String],
}

impl Layout<'_> {
    fn part(&self, name: &str) -> Option<usize> {
        self.parts.iter().position(|p| p.name == name)
    }

    fn input_names(&self, k: usize) -> Vec<String> {
        SignalNames::or_positional(
            &self.parts[k].model.names.inputs,
            self.parts[k].model.inputs(),
            "u",
        )
    }

    fn output_names(&self, k: usize) -> Vec<String> {
        SignalNames::or_positional(
            &self.parts[k].model.names.outputs,
            self.parts[k].model.outputs(),
            "y",
        )
    }

    /// The stacked index of `part.signal` among inputs (`want_input`) or outputs.
    fn find(&self, k: usize, signal: &str, want_input: bool) -> Option<usize> {
        let (names, at) = if want_input {
            (self.input_names(k), self.input_at[k])
        } else {
            (self.output_names(k), self.output_at[k])
        };
        let given = if want_input {
            &self.parts[k].model.names.inputs
        } else {
            &self.parts[k].model.names.outputs
        };
        if let Some(j) = names.iter().position(|n| n == signal) {
            return Some(at + j);
        }
        // The positional name also works when it clashes with no given name.
        let prefix = if want_input { 'u' } else { 'y' };
        let j: usize = signal.strip_prefix(prefix)?.parse().ok()?;
        (j < names.len() && !given.iter().any(|g| g == signal)).then_some(at + j)
    }

    /// The display name `part.signal` of a stacked input or output.
    fn qualified(&self, s: Signal) -> String {
        match s {
            Signal::External(k) => self.externals[k].clone(),
            Signal::Output(i) => {
                let k = owner(&self.output_at, i);
                format!(
                    "{}.{}",
                    self.parts[k].name,
                    self.output_names(k)[i - self.output_at[k]]
                )
            }
            Signal::Input(i) => {
                let k = owner(&self.input_at, i);
                format!(
                    "{}.{}",
                    self.parts[k].name,
                    self.input_names(k)[i - self.input_at[k]]
                )
            }
        }
    }

    /// The short name (`signal`) of a kept output.
    fn short(&self, s: Signal) -> String {
        let q = self.qualified(s);
        match s {
            Signal::External(_) => q,
            _ => q.split_once('.').map(|(_, b)| b.to_string()).unwrap_or(q),
        }
    }

    /// Resolves a reference on the right side of a sum.
    fn resolve(&self, r: &str, allow_inputs: bool, line: &str) -> NumResult<Signal> {
        let bad = |why: String| NumError::invalid("wire", format!("in '{line}': {why}"));
        if let Some((part, signal)) = r.split_once('.') {
            let Some(k) = self.part(part) else {
                return Err(bad(format!(
                    "unknown part '{part}' (parts: {})",
                    self.part_list()
                )));
            };
            if let Some(i) = self.find(k, signal, false) {
                return Ok(Signal::Output(i));
            }
            if let Some(i) = self.find(k, signal, true) {
                if allow_inputs {
                    return Ok(Signal::Input(i));
                }
                return Err(bad(format!(
                    "'{r}' is an input; a connection reads outputs and external inputs \
                     (use the signal that drives {r})"
                )));
            }
            return Err(bad(format!(
                "part '{part}' has no signal '{signal}' (outputs: {}; inputs: {})",
                self.output_names(k).join(", "),
                self.input_names(k).join(", ")
            )));
        }
        if let Some(k) = self.externals.iter().position(|e| e == r) {
            return Ok(Signal::External(k));
        }
        if let Some(k) = self.part(r) {
            let p = &self.parts[k].model;
            if p.outputs() == 1 {
                return Ok(Signal::Output(self.output_at[k]));
            }
            return Err(bad(format!(
                "part '{r}' has {} outputs; name one as {r}.<output> ({})",
                p.outputs(),
                self.output_names(k).join(", ")
            )));
        }
        Err(bad(format!(
            "unknown signal '{r}' (external inputs: {}; parts: {})",
            or_none(&self.externals.join(", ")),
            self.part_list()
        )))
    }

    /// Resolves the left side of a connection: one part input.
    fn resolve_input(&self, r: &str, line: &str) -> NumResult<usize> {
        let bad = |why: String| NumError::invalid("wire", format!("in '{line}': {why}"));
        let (part, signal) = match r.split_once('.') {
            Some((a, b)) => (a, Some(b)),
            None => (r, None),
        };
        let Some(k) = self.part(part) else {
            if self.externals.iter().any(|e| e == r) {
                return Err(bad(format!(
                    "'{r}' is an external input; the left side is the part input it drives"
                )));
            }
            return Err(bad(format!(
                "unknown part '{part}' (parts: {})",
                self.part_list()
            )));
        };
        let m = &self.parts[k].model;
        match signal {
            Some(s) => self.find(k, s, true).ok_or_else(|| {
                bad(format!(
                    "part '{part}' has no input '{s}' (inputs: {})",
                    or_none(&self.input_names(k).join(", "))
                ))
            }),
            None if m.inputs() == 1 => Ok(self.input_at[k]),
            None => Err(bad(format!(
                "part '{part}' has {} inputs; name one as {part}.<input> ({})",
                m.inputs(),
                or_none(&self.input_names(k).join(", "))
            ))),
        }
    }

    fn part_list(&self) -> String {
        self.parts
            .iter()
            .map(|p| p.name.as_str())
            .collect::<Vec<_>>()
            .join(", ")
    }
}

fn or_none(s: &str) -> &str {
    if s.is_empty() {
        "none"
    } else {
        s
    }
}

/// The part owning stacked position `i` given each part's first position.
fn owner(starts: &[usize], i: usize) -> usize {
    starts.iter().rposition(|&s| s <= i).unwrap_or(0)
}

/// A parsed sum: (gain, reference) terms.
type Sum = Vec<(f64, String)>;

/// Splits `lhs = rhs` (the `=` optional where `allow_bare`).
fn split_equation(line: &str, allow_bare: bool) -> NumResult<(Option<&str>, &str)> {
    match line.split_once('=') {
        Some((l, r)) => {
            let l = l.trim();
            if l.is_empty() || !is_reference(l) {
                return Err(NumError::invalid(
                    "wire",
                    format!("in '{line}': the left side must be one signal name, found '{l}'"),
                ));
            }
            Ok((Some(l), r))
        }
        None if allow_bare => Ok((None, line)),
        None => Err(NumError::invalid(
            "wire",
            format!("in '{line}': expected 'part.input = sum of signals'"),
        )),
    }
}

fn is_name_char(c: char) -> bool {
    c.is_alphanumeric() || c == '_'
}

fn is_reference(s: &str) -> bool {
    let mut parts = s.split('.');
    let ok = |p: &str| !p.is_empty() && p.chars().all(is_name_char);
    let first = parts.next().is_some_and(ok);
    let rest: Vec<&str> = parts.collect();
    first && rest.len() <= 1 && rest.iter().all(|p| ok(p))
}

/// Parses `[±] [gain *] ref (± [gain *] ref)*`.
fn parse_sum(text: &str, line: &str) -> NumResult<Sum> {
    let bad = |why: String| NumError::invalid("wire", format!("in '{line}': {why}"));
    let mut terms = Sum::new();
    let mut rest = text.trim();
    if rest.is_empty() {
        return Err(bad("the right side is empty".into()));
    }
    let mut first = true;
    while !rest.is_empty() {
        let mut sign = 1.0;
        if let Some(r) = rest.strip_prefix('+') {
            rest = r.trim_start();
        } else if let Some(r) = rest.strip_prefix('-') {
            sign = -1.0;
            rest = r.trim_start();
        } else if !first {
            return Err(bad(format!("expected + or - before '{rest}'")));
        }
        first = false;
        // The term runs to the next + or - that is not part of a number's exponent.
        let bytes: Vec<char> = rest.chars().collect();
        let mut end = bytes.len();
        for (i, &c) in bytes.iter().enumerate() {
            let exponent = i > 0 && matches!(bytes[i - 1], 'e' | 'E') && {
                let head: String = bytes[..i - 1].iter().collect();
                head.trim().parse::<f64>().is_ok()
            };
            if (c == '+' || c == '-') && !exponent {
                end = i;
                break;
            }
        }
        let term: String = bytes[..end].iter().collect();
        rest = rest[term.len()..].trim_start();
        let term = term.trim();
        let (gain, reference) = match term.split_once('*') {
            Some((g, r)) => {
                let g = g.trim();
                let value: f64 = g
                    .parse()
                    .ok()
                    .filter(|v: &f64| v.is_finite())
                    .ok_or_else(|| bad(format!("'{g}' is not a finite number (gain * signal)")))?;
                (value, r.trim())
            }
            None => (1.0, term),
        };
        if !is_reference(reference) {
            return Err(bad(format!(
                "'{reference}' is not a signal name (part.signal, a part, or an external input)"
            )));
        }
        terms.push((sign * gain, reference.to_string()));
    }
    Ok(terms)
}

/// Wires `parts` as `spec` says; see the module documentation for the language and the
/// mathematics.
///
/// **Errors.** No parts, parts of different time domains, a part name used twice or not a
/// plain name, an external input named like a part, unknown parts or signals (listing the
/// known ones), an input driven twice, part inputs left undriven, a kept output name used
/// twice, an algebraic loop without a solution (naming its signals).
///
/// **Notes** (returned, not errors): part outputs used nowhere, external inputs that
/// drive nothing, an ill-conditioned but solvable algebraic loop.
///
/// **Cost.** O(N²·(M + P) + P³) for N states, M part inputs and P part outputs.
pub fn wire(parts: &[Part], spec: &WireSpec) -> NumResult<Wired> {
    if parts.is_empty() {
        return Err(NumError::invalid(
            "wire",
            "expected at least one part, found none",
        ));
    }
    for (k, p) in parts.iter().enumerate() {
        if p.name.is_empty() || !p.name.chars().all(is_name_char) {
            return Err(NumError::invalid(
                "wire",
                format!("part name '{}' must be letters, digits and _", p.name),
            ));
        }
        if parts[..k].iter().any(|q| q.name == p.name) {
            return Err(NumError::invalid(
                "wire",
                format!("part '{}' given twice", p.name),
            ));
        }
    }
    for (k, e) in spec.inputs.iter().enumerate() {
        if e.is_empty() || !e.chars().all(is_name_char) {
            return Err(NumError::invalid(
                "wire",
                format!("external input name '{e}' must be letters, digits and _"),
            ));
        }
        if parts.iter().any(|p| &p.name == e) {
            return Err(NumError::invalid(
                "wire",
                format!("'{e}' is both an external input and a part; rename one"),
            ));
        }
        if spec.inputs[..k].contains(e) {
            return Err(NumError::invalid(
                "wire",
                format!("external input '{e}' given twice"),
            ));
        }
    }
    let models: Vec<StateSpace> = parts.iter().map(|p| p.model.clone()).collect();
    let stacked = side_by_side(&models)?;
    let starts = |f: fn(&StateSpace) -> usize| {
        let mut at = Vec::with_capacity(parts.len());
        let mut s = 0;
        for m in &models {
            at.push(s);
            s += f(m);
        }
        at
    };
    let layout = Layout {
        parts,
        input_at: starts(StateSpace::inputs),
        output_at: starts(StateSpace::outputs),
        externals: &spec.inputs,
    };
    let (n, mu, py, nr) = (
        stacked.order(),
        stacked.inputs(),
        stacked.outputs(),
        spec.inputs.len(),
    );

    // U = M Y + N r from the connections.
    let mut m = DMatrix::<f64>::zeros(mu, py);
    let mut nmat = DMatrix::<f64>::zeros(mu, nr);
    let mut driven_by: Vec<Option<&str>> = vec![None; mu];
    let mut used_output = vec![false; py];
    let mut used_external = vec![false; nr];
    for line in &spec.connections {
        let (lhs, rhs) = split_equation(line, false)?;
        let target = layout.resolve_input(lhs.unwrap_or_default(), line)?;
        if let Some(first) = driven_by[target] {
            return Err(NumError::invalid(
                "wire",
                format!(
                    "input {} is driven twice: by '{first}' and by '{line}' (sum the \
                     signals in one connection)",
                    layout.qualified(Signal::Input(target))
                ),
            ));
        }
        driven_by[target] = Some(line);
        for (gain, r) in parse_sum(rhs, line)? {
            match layout.resolve(&r, false, line)? {
                Signal::Output(j) => {
                    m[(target, j)] += gain;
                    used_output[j] = true;
                }
                Signal::External(j) => {
                    nmat[(target, j)] += gain;
                    used_external[j] = true;
                }
                Signal::Input(_) => unreachable!("inputs are refused in connections"),
            }
        }
    }
    let undriven: Vec<String> = (0..mu)
        .filter(|&i| driven_by[i].is_none())
        .map(|i| layout.qualified(Signal::Input(i)))
        .collect();
    if !undriven.is_empty() {
        return Err(NumError::invalid(
            "wire",
            format!(
                "{} not driven: {} (connect each, e.g. '{} = <signal>', or drive it from \
                 an external input listed in inputs)",
                if undriven.len() == 1 {
                    "this input is"
                } else {
                    "these inputs are"
                },
                undriven.join(", "),
                undriven[0]
            ),
        ));
    }

    // Kept outputs: z = G_Y Y + G_U U + G_r r.
    if spec.outputs.is_empty() {
        return Err(NumError::invalid(
            "wire",
            "no outputs kept: list the signals the wired model should output",
        ));
    }
    let q = spec.outputs.len();
    let (mut gy, mut gu, mut gr) = (
        DMatrix::<f64>::zeros(q, py),
        DMatrix::<f64>::zeros(q, mu),
        DMatrix::<f64>::zeros(q, nr),
    );
    let mut out_names: Vec<(String, Option<String>)> = Vec::with_capacity(q);
    for (k, line) in spec.outputs.iter().enumerate() {
        let (name, rhs) = split_equation(line, true)?;
        let terms = parse_sum(rhs, line)?;
        let mut single = None;
        for (gain, r) in &terms {
            let s = layout.resolve(r, true, line)?;
            match s {
                Signal::Output(j) => {
                    gy[(k, j)] += gain;
                    used_output[j] = true;
                }
                Signal::Input(j) => gu[(k, j)] += gain,
                Signal::External(j) => {
                    gr[(k, j)] += gain;
                    used_external[j] = true;
                }
            }
            single = Some(s);
        }
        match name {
            Some(nm) => out_names.push((nm.to_string(), None)),
            None if terms.len() == 1 && terms[0].0 == 1.0 => {
                let s = single.expect("one term");
                out_names.push((layout.short(s), Some(layout.qualified(s))));
            }
            None => {
                return Err(NumError::invalid(
                    "wire",
                    format!(
                        "in '{line}': name a combined output, as 'name = {}'",
                        rhs.trim()
                    ),
                ))
            }
        }
    }
    let outputs = output_names(&out_names)?;

    let mut notes = Vec::new();
    let unused: Vec<String> = (0..py)
        .filter(|&j| !used_output[j])
        .map(|j| layout.qualified(Signal::Output(j)))
        .collect();
    if !unused.is_empty() {
        notes.push(format!(
            "part outputs used nowhere (neither connected nor kept): {}",
            unused.join(", ")
        ));
    }
    let idle: Vec<&str> = (0..nr)
        .filter(|&j| !used_external[j])
        .map(|j| spec.inputs[j].as_str())
        .collect();
    if !idle.is_empty() {
        notes.push(format!(
            "external inputs that drive nothing: {}",
            idle.join(", ")
        ));
    }

    // Eliminate the outputs: F = (I − D M)⁻¹.
    let dm = &stacked.d * &m;
    let w = DMatrix::<f64>::identity(py, py) - &dm;
    let looped = in_loops(&dm);
    let f = if looped.is_empty() {
        // Unit triangular after a permutation: exact, well conditioned.
        w.clone().lu().try_inverse().ok_or_else(|| {
            NumError::invalid(
                "wire",
                "internal: a loop-free interconnection did not invert",
            )
        })?
    } else {
        let names: Vec<String> = looped
            .iter()
            .map(|&j| layout.qualified(Signal::Output(j)))
            .collect();
        let rc = balanced_rcond(&w)?;
        if rc <= py as f64 * f64::EPSILON {
            return Err(NumError::Singular {
                what: format!(
                    "wire: the algebraic loop through {} (direct feedthrough all the way \
                     round) has no solution; break it with a dynamic part or change a gain",
                    names.join(", ")
                ),
                rcond: rc,
            });
        }
        if rc < ALGEBRAIC_LOOP_WARNING {
            notes.push(format!(
                "the algebraic loop through {} is nearly singular (reciprocal condition \
                 {rc:.1e}): up to {:.0} digits of the wired model may be lost",
                names.join(", "),
                -rc.log10()
            ));
        }
        w.clone().lu().try_inverse().ok_or(NumError::Singular {
            what: format!("wire: the algebraic loop through {}", names.join(", ")),
            rcond: 0.0,
        })?
    };
    let fc = &f * &stacked.c; // Y from x
    let fdn = &f * &stacked.d * &nmat; // Y from r
    let ux = &m * &fc; // U from x
    let ur = &m * &fdn + &nmat; // U from r
    let a = &stacked.a + &stacked.b * &ux;
    let b = &stacked.b * &ur;
    let c = &gy * &fc + &gu * &ux;
    let d = &gy * &fdn + &gu * &ur + &gr;
    debug_assert_eq!(a.nrows(), n);
    let mut model = StateSpace::new(a, b, c, d, stacked.dt)?;
    let states = parts
        .iter()
        .flat_map(|p| {
            SignalNames::or_positional(&p.model.names.states, p.model.order(), "x")
                .into_iter()
                .map(move |s| format!("{}.{s}", p.name))
        })
        .collect();
    model.names = SignalNames {
        inputs: spec.inputs.clone(),
        outputs,
        states,
    };
    Ok(Wired { model, notes })
}

/// Output names: the short name, or the qualified one when two kept outputs share it.
fn output_names(names: &[(String, Option<String>)]) -> NumResult<Vec<String>> {
    let count = |s: &str| names.iter().filter(|(n, _)| n == s).count();
    let out: Vec<String> = names
        .iter()
        .map(|(short, q)| match q {
            Some(q) if count(short) > 1 => q.clone(),
            _ => short.clone(),
        })
        .collect();
    for (k, o) in out.iter().enumerate() {
        if out[..k].contains(o) {
            return Err(NumError::invalid(
                "wire",
                format!("output '{o}' kept twice; give one a name ('name = signal')"),
            ));
        }
    }
    Ok(out)
}

/// The outputs on a cycle of `dm` (output j depends directly on output i when
/// `dm[(j, i)] ≠ 0`), by transitive closure of the dependency pattern (P ≤ a few hundred).
fn in_loops(dm: &DMatrix<f64>) -> Vec<usize> {
    let p = dm.nrows();
    let mut reach = vec![vec![false; p]; p];
    for j in 0..p {
        for i in 0..p {
            reach[i][j] = dm[(j, i)] != 0.0; // i reaches j
        }
    }
    for k in 0..p {
        let through = reach[k].clone();
        for row in reach.iter_mut() {
            if row[k] {
                for (r, &t) in row.iter_mut().zip(&through) {
                    *r |= t;
                }
            }
        }
    }
    (0..p).filter(|&i| reach[i][i]).collect()
}

/// `σ_min/σ_max` of the Parlett–Reinsch balanced `w` (units-free loop conditioning).
fn balanced_rcond(w: &DMatrix<f64>) -> NumResult<f64> {
    let b = balance_reducing_norm(w)
        .map(|(b, _)| b)
        .unwrap_or_else(|| w.clone());
    let p = b.nrows();
    let sv = SVD::try_new(b, false, false, f64::EPSILON, 200 * p + 1000).ok_or(
        NumError::NoConvergence {
            what: "singular value decomposition of the wiring loop matrix".into(),
            iterations: 200 * p + 1000,
        },
    )?;
    let smax = sv.singular_values.iter().fold(0.0f64, |a, &x| a.max(x));
    let smin = sv
        .singular_values
        .iter()
        .fold(f64::INFINITY, |a, &x| a.min(x));
    Ok(if smax > 0.0 { smin / smax } else { 0.0 })
}

#[cfg(test)]
#[path = "wire_tests.rs"]
mod tests;
