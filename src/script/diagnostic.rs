//! The one renderer of script errors: `error: <what>`, then `file:line:col`, the source
//! line and a caret. Native code returns errors without a position; the engine fills in
//! the call site; this module turns the engine's error into words a user can act on.

use rhai::{EvalAltResult, ParseError, Position};

/// A script error with its position in the analysis file (or in a file it imports).
#[derive(Debug, Clone, PartialEq)]
pub struct ScriptError {
    /// What went wrong, in the user's terms (without its hints).
    pub message: Box<str>,
    /// What to try, one line each (shown after the location as `hint: …`).
    pub hints: Box<[Box<str>]>,
    /// 1-based line, when known.
    pub line: Option<usize>,
    /// 1-based column, when known.
    pub column: Option<usize>,
    /// Whether this is a statebook defect rather than a problem with the script.
    pub internal: bool,
    /// The imported file `line` and `column` are in (`None`: the file being run).
    pub file: Option<Box<str>>,
    /// The text of that line of the imported file (the session kept the text it ran).
    pub file_line: Option<Box<str>>,
    /// The function calls and imports that led to the error, innermost first.
    pub calls: Box<[CallSite]>,
}

/// One step of the way to an error: a call of a script function or an import.
#[derive(Debug, Clone, PartialEq)]
pub struct CallSite {
    /// `in f()` or `in module m`.
    pub what: String,
    /// The file holding the call or the import (`None`: the file being run).
    pub file: Option<String>,
    /// 1-based line of the call in that file.
    pub line: usize,
    /// 1-based column of the call.
    pub column: usize,
}

fn pos(p: Position) -> (Option<usize>, Option<usize>) {
    (p.line(), p.position())
}

/// Where evaluated pieces of the file being run start in it. Each cell is compiled on its
/// own (not padded with the lines before it, which made a long file quadratic and, past
/// the engine's 65 535-line positions, placed errors on the wrong line), so a position
/// the engine reports is a line of its piece: of the code being evaluated (`top`) or of
/// the cell that defined the script function it is in (`functions`, by name; a later
/// definition of the same name replaces an earlier one, as it does for calls).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct LineMap {
    /// Lines of the file before the code being evaluated.
    pub top: usize,
    /// Lines of the file before the cell that defined each script function.
    pub functions: std::collections::HashMap<String, usize>,
}

impl LineMap {
    /// The line in the file of line `line` of the piece of `function` (`None`: the code
    /// being evaluated).
    fn shift(&self, function: Option<&str>, line: usize) -> usize {
        let before = function
            .and_then(|f| self.functions.get(f).copied())
            .unwrap_or(self.top);
        line.saturating_add(before)
    }
}

/// The file an `import "path"` reads (as the module resolver names it).
pub fn module_file(path: &str) -> String {
    if path.ends_with(".sbook") {
        path.to_string()
    } else {
        format!("{path}.sbook")
    }
}

impl ScriptError {
    /// An error without a position. `hint: …` lines of `message` (as numeric errors and
    /// built-ins word them) become [`ScriptError::hints`].
    pub fn plain(message: impl Into<String>) -> Self {
        let message = message.into();
        let (hints, lines): (Vec<&str>, Vec<&str>) =
            message.lines().partition(|l| l.starts_with("hint: "));
        ScriptError {
            message: lines.join("\n").into(),
            hints: hints
                .iter()
                .map(|h| h.trim_start_matches("hint: ").into())
                .collect(),
            line: None,
            column: None,
            internal: false,
            file: None,
            file_line: None,
            calls: Box::new([]),
        }
    }

    /// From a parse error in code that starts after `lines_before` lines of its file.
    pub fn from_parse(e: &ParseError, lines_before: usize) -> Self {
        let (line, column) = pos(e.position());
        ScriptError {
            line: line.map(|l| l + lines_before),
            column,
            ..ScriptError::plain(format!("syntax: {}", e.err_type()))
        }
    }

    /// From an evaluation error, unwrapping calls into script functions and imports so
    /// that the position is the innermost one (where the problem is), in the file it is
    /// in, and naming the way there. A call's position is in the file of the function
    /// (or module) around it; the engine tags each call with the file its function was
    /// defined in (the module's source name; empty for the file being run).
    ///
    /// Lines of the file being run are placed by `lines` ([`LineMap`]).
    pub fn from_eval(e: &EvalAltResult, lines: &LineMap) -> Self {
        let mut calls = Vec::new();
        let mut file: Option<String> = None;
        // The script function of the file being run whose code holds the current position
        // (`None`: the code being evaluated).
        let mut owner: Option<&str> = None;
        let mut cur = e;
        // Module prefixes for errors whose innermost part has no position of its own.
        let mut modules = Vec::new();
        loop {
            match cur {
                EvalAltResult::ErrorInFunctionCall(name, source, inner, p) => {
                    if let (Some(l), c) = pos(*p) {
                        let line = if file.is_none() {
                            lines.shift(owner, l)
                        } else {
                            l
                        };
                        calls.push(CallSite {
                            what: format!("in {name}()"),
                            file: file.clone(),
                            line,
                            column: c.unwrap_or(1),
                        });
                    }
                    file = (!source.is_empty()).then(|| source.to_string());
                    owner = Some(name.as_str());
                    cur = inner;
                }
                EvalAltResult::ErrorInModule(name, inner, p) => {
                    if let (Some(l), c) = pos(*p) {
                        let line = if file.is_none() {
                            lines.shift(owner, l)
                        } else {
                            l
                        };
                        calls.push(CallSite {
                            what: format!("in module {name}"),
                            file: file.clone(),
                            line,
                            column: c.unwrap_or(1),
                        });
                    }
                    modules.push(name.clone());
                    file = Some(module_file(name));
                    cur = inner;
                }
                _ => break,
            }
        }
        calls.reverse();
        let (mut line, mut column) = pos(cur.position());
        if file.is_none() {
            line = line.map(|l| lines.shift(owner, l));
        }
        let mut message = describe(cur);
        if line.is_none() {
            // No position of its own: the nearest call or import is where it happened.
            if let Some(c) = calls.first() {
                (line, column, file) = (Some(c.line), Some(c.column), c.file.clone());
                if c.what.starts_with("in module") {
                    // "in module m: import: cannot read m.sbook" — the import itself.
                    if let Some(m) = modules.last() {
                        message = format!("in module {m}: {message}");
                    }
                }
                calls.remove(0);
            }
        }
        ScriptError {
            line,
            column,
            file: file.map(Into::into),
            calls: calls.into(),
            ..ScriptError::plain(message)
        }
    }

    /// The notes naming the way to the error, innermost first. `main` names the file
    /// being run; a call inside it, on the way to an error inside it, keeps the short
    /// form `called at line L`.
    pub fn call_notes(&self, main: &str) -> Vec<String> {
        self.calls
            .iter()
            .map(|c| {
                let verb = if c.what.starts_with("in module") {
                    "imported"
                } else {
                    "called"
                };
                match (&c.file, &self.file) {
                    (None, None) => format!("{}, {verb} at line {}", c.what, c.line),
                    (f, _) => format!(
                        "{}, {verb} from {}:{}:{}",
                        c.what,
                        f.as_deref().unwrap_or(main),
                        c.line,
                        c.column
                    ),
                }
            })
            .collect()
    }

    /// Renders the error for the terminal: message, location, source line, caret, and
    /// the calls that led there. `source` is the text of `file_name`; an error inside an
    /// imported file shows that file's name and line instead.
    pub fn render(&self, file_name: &str, source: &str) -> String {
        let (head, rest) = match self.message.split_once('\n') {
            Some((h, r)) => (h.to_string(), Some(r.to_string())),
            None => (self.message.to_string(), None),
        };
        let mut s = format!("error: {head}");
        let shown = self.file.as_deref().unwrap_or(file_name);
        if let Some(line) = self.line {
            let col = self.column.unwrap_or(1);
            s.push_str(&format!("\n  at {shown}:{line}:{col}"));
            let text = match &self.file {
                Some(_) => self.file_line.as_deref().map(str::to_string),
                None => source
                    .lines()
                    .nth(line.saturating_sub(1))
                    .map(str::to_string),
            };
            if let Some(text) = text {
                let text = text.trim_end_matches('\r');
                let num = line.to_string();
                let pad = " ".repeat(num.len());
                let caret_at: String = text
                    .chars()
                    .take(col.saturating_sub(1))
                    .map(|c| if c == '\t' { '\t' } else { ' ' })
                    .collect();
                s.push_str(&format!("\n  {num} │ {text}\n  {pad} │ {caret_at}^"));
            }
        } else {
            s.push_str(&format!("\n  in {shown}"));
        }
        if let Some(r) = rest {
            s.push('\n');
            s.push_str(&r);
        }
        for h in &self.hints {
            s.push_str("\nhint: ");
            s.push_str(h);
        }
        for n in self.call_notes(file_name) {
            s.push_str("\nnote: ");
            s.push_str(&n);
        }
        s
    }
}

/// Whether some page shows `name` as a property (`x.name` not followed by `(`).
fn is_property(name: &str) -> bool {
    let pat = format!(".{name}");
    crate::script::docs::all().iter().any(|d| {
        [d.usage, d.details].iter().any(|text| {
            text.match_indices(&pat).any(|(i, _)| {
                let after = text[i + pat.len()..].chars().next();
                !after.is_some_and(|c| c.is_alphanumeric() || c == '_' || c == '(')
            })
        })
    })
}

/// Words for one (innermost) engine error.
fn describe(e: &EvalAltResult) -> String {
    use EvalAltResult as E;
    match e {
        E::ErrorRuntime(v, _) => {
            if v.is_string() {
                v.to_string()
            } else {
                format!("thrown: {v}")
            }
        }
        E::ErrorFunctionNotFound(sig, _) => {
            let sig = friendly_types(sig);
            let name = sig
                .split(['(', ' '])
                .next()
                .unwrap_or("")
                .trim()
                .to_string();
            let page = crate::script::docs::find(&name);
            let own_page = page.is_some_and(|d| d.name == name);
            if page.is_some() && !own_page && is_property(&name) {
                // `order(sys)` for the property `sys.order`.
                format!(
                    "{name} is a property, not a function: write value.{name} (e.g. \
                     sys.{name})\nhint: `help {name}` shows it"
                )
            } else if page.is_some() {
                format!(
                    "{name} cannot take these arguments: {sig}\nhint: `help {name}` shows how \
                     to call it"
                )
            } else {
                let close = suggestions(&name);
                if close.is_empty() {
                    format!("unknown function: {sig}")
                } else {
                    format!(
                        "unknown function: {sig}\nhint: did you mean {}?",
                        close.join(", ")
                    )
                }
            }
        }
        E::ErrorVariableNotFound(name, _) => format!("unknown variable: {name}"),
        E::ErrorParsing(t, _) => format!("syntax: {t}"),
        E::ErrorTooManyOperations(_) => "the script exceeded its operation limit (an endless \
             loop?)\nhint: raise the limit with --max-operations N if the work is genuine"
            .into(),
        E::ErrorStackOverflow(_) => "function calls nested too deeply (runaway recursion?)\n\
             hint: raise the limit with --max-call-depth N if the recursion is genuine"
            .into(),
        E::ErrorDataTooLarge(what, _) => format!(
            "{what} exceeds its size limit\nhint: raise it with --max-string-size or \
             --max-array-size if you mean it"
        ),
        E::ErrorTerminated(v, _) => {
            if v.is_string() {
                v.to_string()
            } else {
                "the run was stopped".into()
            }
        }
        E::ErrorInModule(name, inner, _) => format!("in module {name}: {}", describe(inner)),
        E::ErrorMismatchDataType(want, got, _) => {
            format!(
                "expected {}, found {}",
                friendly_types(want),
                friendly_types(got)
            )
        }
        E::ErrorMismatchOutputType(want, got, _) => {
            format!(
                "expected {}, found {}",
                friendly_types(want),
                friendly_types(got)
            )
        }
        other => {
            let s = other.to_string();
            let s = s.rfind(" (line ").map(|k| &s[..k]).unwrap_or(&s);
            friendly_types(s)
        }
    }
}

/// Replaces Rust type names in engine messages with the names scripts use.
fn friendly_types(s: &str) -> String {
    s.replace("i64", "int")
        .replace("f64", "float")
        .replace("alloc::string::String", "string")
        .replace("ImmutableString", "string")
        .replace("rhai::", "")
        .replace("&mut ", "")
}

/// Built-in names close to `name` (edit distance ≤ 2, or sharing a prefix).
fn suggestions(name: &str) -> Vec<String> {
    if name.len() < 3 {
        return Vec::new();
    }
    let mut v: Vec<(usize, String)> = crate::script::docs::names()
        .into_iter()
        .filter_map(|(n, _)| {
            let dist = edit_distance(name, n);
            (dist <= 2 || (n.starts_with(name) && name.len() >= 4)).then(|| (dist, n.to_string()))
        })
        .collect();
    v.sort();
    v.dedup();
    v.into_iter().take(3).map(|(_, n)| n).collect()
}

fn edit_distance(a: &str, b: &str) -> usize {
    let a: Vec<char> = a.chars().collect();
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    for i in 1..=a.len() {
        let mut cur = vec![i; b.len() + 1];
        for j in 1..=b.len() {
            let cost = usize::from(a[i - 1] != b[j - 1]);
            cur[j] = (prev[j] + 1).min(cur[j - 1] + 1).min(prev[j - 1] + cost);
        }
        prev = cur;
    }
    prev[b.len()]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn render_points_at_the_column() {
        let e = ScriptError {
            line: Some(2),
            column: Some(9),
            ..ScriptError::plain("solve: B: expected 2 rows, found 3\nhint: check B")
        };
        let out = e.render("plant.sbook", "let a = 1;\nlet x = solve(A, B);\n");
        assert!(out.starts_with("error: solve: B: expected 2 rows, found 3\n  at plant.sbook:2:9"));
        assert!(
            out.contains("  2 │ let x = solve(A, B);\n    │         ^"),
            "{out}"
        );
        assert!(out.ends_with("hint: check B"));
        assert_eq!(e.hints.len(), 1, "hints are data on the diagnostic");
        assert_eq!(&*e.hints[0], "check B");
        assert_eq!(&*e.message, "solve: B: expected 2 rows, found 3");
    }

    #[test]
    fn close_names() {
        assert_eq!(edit_distance("eigenvalue", "eigenvalues"), 1);
    }
}
