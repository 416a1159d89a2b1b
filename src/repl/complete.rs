//! The rustyline helper: completion of built-ins, variables and functions, and the
//! multi-line validator.

use super::input::Entry;
use rustyline::completion::{Completer, Pair};
use rustyline::highlight::Highlighter;
use rustyline::hint::Hinter;
use rustyline::validate::{ValidationContext, ValidationResult, Validator};
use rustyline::{Context, Helper};
use std::sync::{Arc, Mutex};

/// Completion and validation for the prompt.
pub struct ReplHelper {
    names: Arc<Mutex<Vec<String>>>,
    /// The entry as last validated, so a long paste is scanned once, not once a line.
    entry: Mutex<Entry>,
}

impl ReplHelper {
    /// A helper reading session names (variables, functions) from `names`.
    pub fn new(names: Arc<Mutex<Vec<String>>>) -> Self {
        ReplHelper {
            names,
            entry: Mutex::default(),
        }
    }
}

impl Completer for ReplHelper {
    type Candidate = Pair;

    fn complete(
        &self,
        line: &str,
        pos: usize,
        _ctx: &Context<'_>,
    ) -> rustyline::Result<(usize, Vec<Pair>)> {
        let upto = &line[..pos.min(line.len())];
        let start = upto
            .char_indices()
            .rev()
            .find(|(_, c)| !(c.is_alphanumeric() || *c == '_'))
            .map(|(i, c)| i + c.len_utf8())
            .unwrap_or(0);
        let word = &upto[start..];
        if word.is_empty() {
            return Ok((pos, Vec::new()));
        }
        let mut out: Vec<Pair> = Vec::new();
        for (name, summary) in crate::script::docs::names() {
            if name.starts_with(word) {
                out.push(Pair {
                    display: format!("{name:28} {summary}"),
                    replacement: name.to_string(),
                });
            }
        }
        if let Ok(names) = self.names.lock() {
            for n in names.iter() {
                if n.starts_with(word) && !out.iter().any(|p| &p.replacement == n) {
                    out.push(Pair {
                        display: n.clone(),
                        replacement: n.clone(),
                    });
                }
            }
        }
        out.sort_by(|a, b| a.replacement.cmp(&b.replacement));
        out.dedup_by(|a, b| a.replacement == b.replacement);
        Ok((start, out))
    }
}

impl Validator for ReplHelper {
    fn validate(&self, ctx: &mut ValidationContext<'_>) -> rustyline::Result<ValidationResult> {
        let mut entry = self.entry.lock().unwrap_or_else(|p| p.into_inner());
        entry.set(ctx.input());
        if entry.is_incomplete() {
            Ok(ValidationResult::Incomplete)
        } else {
            Ok(ValidationResult::Valid(None))
        }
    }
}

impl Hinter for ReplHelper {
    type Hint = String;
}

impl Highlighter for ReplHelper {}

impl Helper for ReplHelper {}
