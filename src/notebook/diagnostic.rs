//! The one renderer of script errors: `error: <what>`, then `file:line:col`, the source
//! line and a caret. Native code returns errors without a position; the engine fills in
//! the call site; this module turns the engine's error into words a user can act on.

use rhai::{EvalAltResult, ParseError, Position};

/// A script error with its position in the analysis file.
#[derive(Debug, Clone, PartialEq)]
pub struct ScriptError {
    /// What went wrong, in the user's terms (may hold a `hint:` line).
    pub message: String,
    /// 1-based line, when known.
    pub line: Option<usize>,
    /// 1-based column, when known.
    pub column: Option<usize>,
    /// Whether this is a statebook defect rather than a problem with the script.
    pub internal: bool,
}

fn pos(p: Position) -> (Option<usize>, Option<usize>) {
    (p.line(), p.position())
}

impl ScriptError {
    /// An error without a position.
    pub fn plain(message: impl Into<String>) -> Self {
        ScriptError {
            message: message.into(),
            line: None,
            column: None,
            internal: false,
        }
    }

    /// From a parse error.
    pub fn from_parse(e: &ParseError) -> Self {
        let (line, column) = pos(e.position());
        ScriptError {
            message: format!("syntax: {}", e.err_type()),
            line,
            column,
            internal: false,
        }
    }

    /// From an evaluation error, unwrapping calls into script functions so that the
    /// position is the innermost one (where the problem is) and naming the call chain.
    pub fn from_eval(e: &EvalAltResult) -> Self {
        let mut chain = Vec::new();
        let mut cur = e;
        while let EvalAltResult::ErrorInFunctionCall(name, _, inner, p) = cur {
            chain.push((name.clone(), *p));
            cur = inner;
        }
        let (line, column) = pos(cur.position());
        let mut message = describe(cur);
        for (name, p) in chain.iter().rev() {
            if let Some(l) = p.line() {
                message.push_str(&format!("\nnote: in {name}(), called at line {l}"));
            }
        }
        let (line, column) = if line.is_none() {
            chain.first().map(|(_, p)| pos(*p)).unwrap_or((None, None))
        } else {
            (line, column)
        };
        ScriptError {
            message,
            line,
            column,
            internal: false,
        }
    }

    /// Renders the error for the terminal: message, location, source line, caret.
    pub fn render(&self, file_name: &str, source: &str) -> String {
        let (head, rest) = match self.message.split_once('\n') {
            Some((h, r)) => (h.to_string(), Some(r.to_string())),
            None => (self.message.clone(), None),
        };
        let mut s = format!("error: {head}");
        if let Some(line) = self.line {
            let col = self.column.unwrap_or(1);
            s.push_str(&format!("\n  at {file_name}:{line}:{col}"));
            if let Some(text) = source.lines().nth(line.saturating_sub(1)) {
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
            s.push_str(&format!("\n  in {file_name}"));
        }
        if let Some(r) = rest {
            s.push('\n');
            s.push_str(&r);
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
    let mut v: Vec<(usize, String)> = crate::script::docs::all()
        .iter()
        .filter_map(|d| {
            let dist = edit_distance(name, d.name);
            (dist <= 2 || (d.name.starts_with(name) && name.len() >= 4))
                .then(|| (dist, d.name.to_string()))
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
            message: "solve: B: expected 2 rows, found 3\nhint: check B".into(),
            line: Some(2),
            column: Some(9),
            internal: false,
        };
        let out = e.render("plant.sbook", "let a = 1;\nlet x = solve(A, B);\n");
        assert!(out.starts_with("error: solve: B: expected 2 rows, found 3\n  at plant.sbook:2:9"));
        assert!(
            out.contains("  2 │ let x = solve(A, B);\n    │         ^"),
            "{out}"
        );
        assert!(out.ends_with("hint: check B"));
    }

    #[test]
    fn close_names() {
        assert_eq!(edit_distance("eigenvalue", "eigenvalues"), 1);
    }
}
