//! The cell runner: cells run in order in one session; each cell's outputs are captured
//! in order; the run stops at the first failing cell.

use super::output::{CellRun, NotebookRun, Provenance};
use super::parse::{parse, Document};
use crate::script::diagnostic::ScriptError;
use crate::script::output::Output;
use crate::Session;

/// Runs a parsed document in `session`. `file_name` is used in error locations; `source`
/// is the file's text (for the source line under an error).
pub fn run_document(
    session: &mut Session,
    doc: &Document,
    file_name: &str,
    source: &str,
    provenance: Provenance,
) -> NotebookRun {
    run_document_with(session, doc, file_name, source, provenance, false)
}

/// As [`run_document`]; with `keep_going`, a failing cell does not stop the run: its error
/// stays among its outputs and the next cell runs (a shard run, whose later cells see
/// partial sweep tables and must not keep its later sweeps from running).
pub fn run_document_with(
    session: &mut Session,
    doc: &Document,
    file_name: &str,
    source: &str,
    provenance: Provenance,
    keep_going: bool,
) -> NotebookRun {
    let mut cells = Vec::with_capacity(doc.cells.len());
    let mut failed = false;
    for cell in &doc.cells {
        let mut outputs = Vec::new();
        if cell.has_code() {
            let result = session.eval_at(&cell.code_text(), cell.first_line().saturating_sub(1));
            outputs.extend(session.take_outputs());
            match result {
                Ok(v) => outputs.extend(session.show_value(v)),
                Err(e) => {
                    outputs.push(Output::Error(e.render(file_name, source)));
                    failed = true;
                }
            }
        }
        cells.push(CellRun {
            title: cell.title.clone(),
            prose: cell.prose(),
            code: cell.code(),
            first_line: cell.first_line(),
            outputs,
        });
        if failed && !keep_going {
            break;
        }
    }
    let title = doc.title.clone().unwrap_or_else(|| {
        std::path::Path::new(file_name)
            .file_stem()
            .map(|s| s.to_string_lossy().into_owned())
            .unwrap_or_default()
    });
    NotebookRun {
        title,
        cells,
        failed,
        provenance,
    }
}

/// Parses and runs analysis-file text.
pub fn run_text(
    session: &mut Session,
    text: &str,
    file_name: &str,
    provenance: Provenance,
) -> NotebookRun {
    // CR-only and CRLF files run like LF ones, and error lines point into the same text.
    run_text_with(session, text, file_name, provenance, false)
}

/// As [`run_text`], with `keep_going` as in [`run_document_with`].
pub fn run_text_with(
    session: &mut Session,
    text: &str,
    file_name: &str,
    provenance: Provenance,
    keep_going: bool,
) -> NotebookRun {
    // CR-only and CRLF files run like LF ones, and error lines point into the same text.
    let text = crate::safe_fs::normalise_text(text);
    let doc = parse(&text);
    run_document_with(session, &doc, file_name, &text, provenance, keep_going)
}

/// Every error of a run, in cell order (one at most unless it ran with `keep_going`).
pub fn errors(run: &NotebookRun) -> Vec<&str> {
    run.cells
        .iter()
        .flat_map(|c| c.outputs.iter())
        .filter_map(|o| match o {
            Output::Error(e) => Some(e.as_str()),
            _ => None,
        })
        .collect()
}

/// The first error of a run, if it failed.
pub fn first_error(run: &NotebookRun) -> Option<&str> {
    errors(run).into_iter().next()
}

/// Formats a run for the terminal: each cell under a heading line, its outputs below.
pub fn transcript(run: &NotebookRun) -> String {
    let mut s = String::new();
    for (k, cell) in run.cells.iter().enumerate() {
        let heading = if cell.title.is_empty() {
            String::from("(preamble)")
        } else {
            cell.title.clone()
        };
        let label = format!("━━ {} · {} ", k + 1, heading);
        let fill = 72usize.saturating_sub(label.chars().count()).max(3);
        s.push_str(&label);
        s.push_str(&"━".repeat(fill));
        s.push('\n');
        for o in &cell.outputs {
            match o {
                Output::Text(t) => {
                    s.push_str(t);
                    s.push('\n');
                }
                Output::Value(v) => {
                    s.push_str(v);
                    s.push('\n');
                }
                Output::Note(n) => {
                    for line in n.lines() {
                        s.push_str("  │ ");
                        s.push_str(line);
                        s.push('\n');
                    }
                }
                Output::Figure { title, .. } => {
                    s.push_str(&format!(
                        "[figure{}] (drawn in the report: statebook render)\n",
                        title.as_ref().map(|t| format!(": {t}")).unwrap_or_default()
                    ));
                }
                Output::Warning(w) => {
                    s.push_str("warning: ");
                    s.push_str(w);
                    s.push('\n');
                }
                Output::Error(_) => {} // printed to stderr by the caller
            }
        }
        if k + 1 < run.cells.len() {
            s.push('\n');
        }
    }
    s
}

/// Convenience for tests: an error as a [`ScriptError`] rendered without a file.
pub fn render_error(e: &ScriptError) -> String {
    e.render("<input>", "")
}
