//! The help text of every built-in, in one registry: it drives `statebook help`, the
//! REPL's completion and the reference listing. The pages come from the declarations'
//! doc comments (`script::declare`), from the binding files' `DOCS` for what is registered
//! by hand, and from the standard library.

/// One built-in's documentation.
#[derive(Debug, Clone, Copy)]
pub struct Doc {
    /// The name scripts call.
    pub name: &'static str,
    /// The family it is listed under by `help`.
    pub family: &'static str,
    /// Call forms, one per line (e.g. `solve(A, B) → Matrix`).
    pub usage: &'static str,
    /// One-line summary (shown by completion and the family listing).
    pub summary: &'static str,
    /// Arguments with units and further detail (may be empty).
    pub details: &'static str,
    /// A short example in the statebook language.
    pub example: &'static str,
}

/// The order in which families are listed.
pub const FAMILIES: &[&str] = &[
    "numbers",
    "lists and text",
    "matrices",
    "linear algebra",
    "models",
    "transforms",
    "equivalence",
    "time domain",
    "frequency domain",
    "design",
    "parameter studies",
    "plots",
    "output and files",
    "library",
];

/// Every documented built-in (the binding files' `DOCS`, plus the stdlib's).
pub fn all() -> Vec<Doc> {
    let mut v: Vec<Doc> = Vec::new();
    for part in super::builtins::DOC_TABLES {
        v.extend_from_slice(part);
    }
    v.extend_from_slice(super::declare::pages());
    v.extend(crate::script::stdlib::docs());
    v
}

/// Every name `help` knows, with the summary of its page: the page names, and the further
/// names a declared page groups (`successes` and `filter` on the page `failures`). Drives
/// REPL completion and "did you mean".
pub fn names() -> Vec<(&'static str, &'static str)> {
    let pages = all();
    let mut v: Vec<(&'static str, &'static str)> =
        pages.iter().map(|d| (d.name, d.summary)).collect();
    for table in super::builtins::DECLARED {
        for b in table.iter() {
            let summary = pages
                .iter()
                .find(|d| d.name == b.name)
                .map(|d| d.summary)
                .unwrap_or("");
            for f in b.forms.iter().filter(|f| f.name != b.name) {
                v.push((f.name, summary));
            }
        }
    }
    v.sort_unstable();
    v.dedup_by(|a, b| a.0 == b.0);
    v
}

/// The documentation of one name, if any: the page of that name, or else the page whose
/// usage or details show it as a property or method (`sys.dt` is on the page of `A`,
/// `table.logs` on the page of `Table`).
pub fn find(name: &str) -> Option<Doc> {
    let docs = all();
    let name = if name == "**" { "^" } else { name };
    if let Some(d) = docs.iter().find(|d| d.name == name) {
        return Some(*d);
    }
    // A page that shows a call form of the name (`name(` or `.name`) before one that only
    // mentions it in passing.
    let form = format!("{name}(");
    let has_form = |d: &Doc| {
        d.usage.lines().any(|l| l.trim_start().starts_with(&form)) || mentions_member(d.usage, name)
    };
    if let Some(d) = docs.iter().find(|d| has_form(d)) {
        return Some(*d);
    }
    docs.into_iter().find(|d| mentions_member(d.details, name))
}

/// Whether `text` shows `.name` as a whole word (a property or a method).
fn mentions_member(text: &str, name: &str) -> bool {
    let pat = format!(".{name}");
    let word = |c: char| c.is_alphanumeric() || c == '_';
    text.match_indices(&pat).any(|(i, _)| {
        let before = text[..i].chars().next_back();
        let after = text[i + pat.len()..].chars().next();
        before.is_some_and(word) && !after.is_some_and(word)
    })
}

/// The full help page of one built-in.
pub fn page(d: &Doc) -> String {
    let mut s = format!("{} — {}\n\n", d.name, d.summary);
    for line in d.usage.lines() {
        s.push_str("  ");
        s.push_str(line.trim());
        s.push('\n');
    }
    if !d.details.is_empty() {
        s.push('\n');
        for line in d.details.lines() {
            if !line.trim().is_empty() {
                s.push_str("  ");
                s.push_str(line.trim_end());
            }
            s.push('\n');
        }
    }
    if !d.example.is_empty() {
        s.push_str("\nexample:\n");
        for line in d.example.lines() {
            s.push_str("  ");
            s.push_str(line);
            s.push('\n');
        }
    }
    s.push_str(&format!("\nfamily: {}", d.family));
    s
}

/// The listing of all built-ins by family.
pub fn overview() -> String {
    let docs = all();
    let mut s = String::from("statebook built-ins by family (`help NAME` for one of them)\n");
    for fam in FAMILIES {
        let mut in_family: Vec<&Doc> = docs.iter().filter(|d| d.family == *fam).collect();
        if in_family.is_empty() {
            continue;
        }
        in_family.sort_by_key(|d| d.name);
        s.push_str(&format!("\n{fam}\n"));
        let width = in_family.iter().map(|d| d.name.len()).max().unwrap_or(0);
        for d in in_family {
            s.push_str(&format!("  {:width$}  {}\n", d.name, d.summary));
        }
    }
    s
}
