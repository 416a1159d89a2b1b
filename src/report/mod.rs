//! Report writers: one self-contained HTML page, or Markdown with figure files beside it.
//!
//! Both writers only read a [`NotebookRun`]; neither touches the file system, the clock or
//! the environment. Everything they write is a function of the run alone, so a re-run that
//! gives the same outputs gives a byte-identical report apart from the provenance block
//! (which carries the date and platform recorded in the run).
//!
//! | file | role |
//! |---|---|
//! | `html.rs` | the HTML page: layout, callouts, figures, provenance |
//! | `prose.rs` | Markdown prose → HTML (pulldown-cmark; raw HTML escaped, never passed on) |
//! | `highlight.rs` | a small tokenizer that colours script code |
//! | `markdown.rs` | the Markdown report and its figure files |
//! | `style.css` | the page's look, embedded at build time |

mod highlight;
mod html;
mod markdown;
mod pair;
pub use pair::write_outputs;
mod prose;
#[cfg(test)]
mod tests;

pub use html::render_html;
pub use markdown::{render_markdown, MarkdownReport};
pub use prose::sanitize_markdown;

use crate::notebook::output::{CellRun, NotebookRun};
use crate::script::output::Output;

/// Heading of the closing caution, in both report formats.
const CAUTION_HEADING: &str = "Before you rely on these results";

/// The closing caution, one plain-text paragraph per entry, in both report formats.
const CAUTION: [&str; 3] = [
    "This report describes a linear model, not the machine. Every number in it is only \
     as good as the model behind it: its parameters, the operating point it was derived \
     at, and the range over which a linear description holds. Saturation, friction, \
     backlash, delays, quantisation, noise and faults are absent unless they were modelled.",
    "Validate any controller or estimator designed here on the real hardware before \
     trusting it: start with conservative gains, enforce safe limits on travel, speed, \
     current and temperature, and keep a tested way to stop the machine within reach.",
    "Where a failure could harm people, property or the environment, follow the \
     functional-safety standards and local codes that apply to the application, and have \
     the design reviewed and approved by a licensed professional engineer.",
];

/// Escapes text for HTML element content and attribute values.
fn escape_html(text: &str) -> String {
    let mut out = String::with_capacity(text.len() + text.len() / 8);
    push_escaped(&mut out, text);
    out
}

/// Appends `text` to `out`, escaped for HTML content and attributes.
fn push_escaped(out: &mut String, text: &str) {
    for ch in text.chars() {
        match ch {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            _ => out.push(ch),
        }
    }
}

/// One thing to show under a cell's code: consecutive printed lines are merged into one
/// block so that a loop of `print` calls reads as one listing.
enum Block<'a> {
    /// Printed text, lines joined with newlines.
    Text(String),
    /// Any other output, shown on its own.
    Single(&'a Output),
}

/// Groups a cell's outputs into display blocks, in order.
fn blocks(outputs: &[Output]) -> Vec<Block<'_>> {
    let mut result: Vec<Block<'_>> = Vec::new();
    for output in outputs {
        if let Output::Text(text) = output {
            let line = text.strip_suffix('\n').unwrap_or(text);
            if let Some(Block::Text(previous)) = result.last_mut() {
                previous.push('\n');
                previous.push_str(line);
            } else {
                result.push(Block::Text(line.to_string()));
            }
        } else {
            result.push(Block::Single(output));
        }
    }
    result
}

/// Whether a cell has nothing to show besides its title.
fn is_empty(cell: &CellRun) -> bool {
    cell.code.trim().is_empty() && cell.prose.trim().is_empty() && cell.outputs.is_empty()
}

/// The index of the cell a failed run stopped in: the last cell holding an error, else the
/// last cell. `None` when the run did not fail or has no cells.
fn failing_cell(run: &NotebookRun) -> Option<usize> {
    if !run.failed || run.cells.is_empty() {
        return None;
    }
    let with_error = run
        .cells
        .iter()
        .rposition(|cell| cell.outputs.iter().any(|o| matches!(o, Output::Error(_))));
    Some(with_error.unwrap_or(run.cells.len() - 1))
}

/// Whether cell `index` is the one whose title is already the document title (the first
/// titled cell, when its title equals the run's), so that it needs no heading of its own.
fn titles_document(run: &NotebookRun, index: usize) -> bool {
    let first_titled = run.cells.iter().position(|cell| !cell.title.is_empty());
    first_titled == Some(index) && run.cells[index].title.trim() == run.title.trim()
}

/// A figure's SVG without any XML prolog or document type line, ready to inline.
fn inline_svg(svg: &str) -> &str {
    let mut rest = svg.trim_start_matches('\u{feff}').trim_start();
    loop {
        let skip = if rest.starts_with("<?") {
            rest.find("?>").map(|end| end + 2)
        } else if rest.starts_with("<!DOCTYPE") || rest.starts_with("<!doctype") {
            rest.find('>').map(|end| end + 1)
        } else {
            None
        };
        match skip {
            Some(end) => rest = rest[end..].trim_start(),
            None => return rest.trim_end(),
        }
    }
}

/// The file name of figure `number` (1-based, within its cell) of cell `cell` (0-based).
fn figure_file_name(stem: &str, cell: usize, number: usize) -> String {
    format!("{stem}-fig-{cell:02}-{number}.svg")
}
