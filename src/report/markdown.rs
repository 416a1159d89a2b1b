//! The Markdown report: one text file, plus one SVG file per figure for the caller to
//! write beside it.
//!
//! Code goes in fenced blocks, printed text and values in fenced text blocks, figures
//! become image links to files named from the stem and the figure's place
//! (`<stem>-fig-<cell>-<n>.svg`, the cell index zero-padded to two digits, `n` counting
//! from 1 within the cell). Prose and notes are copied as written, with headings moved
//! down two levels so that they sit under the cell titles.

use std::fmt::Write as _;

use super::{blocks, failing_cell, figure_file_name, inline_svg, is_empty, titles_document, Block};
use super::{CAUTION, CAUTION_HEADING};
use crate::notebook::output::{CellRun, NotebookRun};
use crate::script::output::Output;

/// A Markdown report and the figure files it links to.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct MarkdownReport {
    /// The Markdown text.
    pub text: String,
    /// `(file name, SVG document)` for every figure, in document order. The caller writes
    /// each one beside the Markdown file under exactly that name.
    pub figures: Vec<(String, String)>,
}

/// Renders a run as Markdown; `stem` names the figure files (usually the report's stem).
///
/// The same run and stem always give the same text and the same figure files.
pub fn render_markdown(run: &NotebookRun, stem: &str) -> MarkdownReport {
    let title = if run.title.trim().is_empty() {
        "Analysis"
    } else {
        run.title.trim()
    };
    let mut report = MarkdownReport {
        text: String::new(),
        figures: Vec::new(),
    };
    let _ = writeln!(report.text, "# {}\n", escape_inline(title));
    if let Some(index) = failing_cell(run) {
        let cell = &run.cells[index];
        let name = if cell.title.trim().is_empty() {
            "the opening cell".to_string()
        } else {
            format!("the cell “{}”", escape_inline(cell.title.trim()))
        };
        let _ = writeln!(
            report.text,
            "> **This analysis stopped on an error** in {name} (line {}). Cells after it did \
             not run; this report shows everything up to that point.\n",
            cell.first_line
        );
    }
    for (index, cell) in run.cells.iter().enumerate() {
        push_cell(&mut report, run, index, cell, stem);
    }
    push_provenance(&mut report.text, run);
    report
}

/// One cell: heading, prose, code, outputs.
fn push_cell(
    report: &mut MarkdownReport,
    run: &NotebookRun,
    index: usize,
    cell: &CellRun,
    stem: &str,
) {
    let untitled = cell.title.trim().is_empty();
    if untitled && is_empty(cell) {
        return;
    }
    let text = &mut report.text;
    if !untitled && !titles_document(run, index) {
        let _ = writeln!(text, "## {}\n", escape_inline(cell.title.trim()));
    }
    if !cell.prose.trim().is_empty() {
        let prose = super::sanitize_markdown(cell.prose.trim());
        let _ = writeln!(text, "{}\n", demote_headings(&prose));
    }
    if !cell.code.trim().is_empty() {
        push_fenced(text, "rhai", cell.code.trim_matches('\n'));
    }
    let mut in_cell = 0usize;
    for block in blocks(&cell.outputs) {
        let output = match block {
            Block::Text(printed) => {
                push_fenced(&mut report.text, "text", &printed);
                continue;
            }
            Block::Single(output) => output,
        };
        let text = &mut report.text;
        match output {
            Output::Text(printed) => push_fenced(text, "text", printed),
            Output::Value(value) => push_fenced(text, "text", value.trim_end_matches('\n')),
            Output::Note(markdown) => {
                let note = super::sanitize_markdown(markdown.trim());
                let _ = writeln!(text, "{}\n", demote_headings(&note));
            }
            Output::Figure { svg, title } => {
                in_cell += 1;
                let number = report.figures.len() + 1;
                let name = figure_file_name(stem, index, in_cell);
                let title = title.as_deref().map(str::trim).filter(|t| !t.is_empty());
                let alt = title.map_or_else(|| format!("Figure {number}"), escape_inline);
                let _ = writeln!(text, "![{alt}]({})\n", link_destination(&name));
                match title {
                    Some(title) => {
                        let _ = writeln!(text, "*Figure {number}.* {}\n", escape_inline(title));
                    }
                    None => {
                        let _ = writeln!(text, "*Figure {number}.*\n");
                    }
                }
                let mut file = inline_svg(svg).to_string();
                file.push('\n');
                report.figures.push((name, file));
            }
            Output::Warning(message) => {
                let message = message.trim().replace('\n', "\n> ");
                let _ = writeln!(text, "> **warning:** {message}\n");
            }
            Output::Error(message) => {
                let _ = writeln!(text, "**The run stopped here:**\n");
                push_fenced(text, "text", message.trim_end());
            }
        }
    }
}

/// The closing block: provenance, then the safety caution.
fn push_provenance(text: &mut String, run: &NotebookRun) {
    let p = &run.provenance;
    let _ = writeln!(text, "---\n\n## Provenance\n");
    let _ = writeln!(text, "- statebook version: {}", escape_inline(&p.version));
    let _ = writeln!(text, "- Analysis file: {}", code_span(&p.file_name));
    let _ = writeln!(text, "- SHA-256: {}", code_span(&p.sha256));
    let _ = writeln!(text, "- Run on: {}", escape_inline(&p.date));
    let _ = writeln!(text, "- Platform: {}", escape_inline(&p.platform));
    let _ = writeln!(
        text,
        "- Results SHA-256: {}\n",
        code_span(&p.results_sha256)
    );
    let _ = writeln!(
        text,
        "{}\n",
        crate::notebook::output::run_marker(&p.results_sha256)
    );
    let _ = writeln!(text, "## {CAUTION_HEADING}\n");
    let paragraphs: Vec<&str> = CAUTION.to_vec();
    let _ = writeln!(text, "{}", paragraphs.join("\n\n"));
}

/// Appends a fenced block, with a fence longer than any backtick run inside the content.
fn push_fenced(text: &mut String, info: &str, content: &str) {
    let fence = "`".repeat(longest_run(content, '`').max(2) + 1);
    let _ = writeln!(text, "{fence}{info}\n{content}\n{fence}\n");
}

/// A code span that survives backticks inside `content`.
fn code_span(content: &str) -> String {
    let ticks = "`".repeat(longest_run(content, '`') + 1);
    let pad = if content.starts_with('`') || content.ends_with('`') {
        " "
    } else {
        ""
    };
    format!("{ticks}{pad}{content}{pad}{ticks}")
}

/// The length of the longest run of `ch` in `text`.
fn longest_run(text: &str, ch: char) -> usize {
    let (mut best, mut current) = (0, 0);
    for c in text.chars() {
        current = if c == ch { current + 1 } else { 0 };
        best = best.max(current);
    }
    best
}

/// Escapes characters that Markdown would read as markup in a line of plain text.
fn escape_inline(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for ch in text.chars() {
        if "\\`*_[]<>#|".contains(ch) {
            out.push('\\');
        }
        out.push(if ch == '\n' { ' ' } else { ch });
    }
    out
}

/// A link destination for a file name, in angle brackets when it holds spaces or brackets.
fn link_destination(name: &str) -> String {
    if name.contains(|c: char| c.is_whitespace() || "()<>".contains(c)) {
        format!("<{}>", name.replace('<', "%3C").replace('>', "%3E"))
    } else {
        name.to_string()
    }
}

/// Moves ATX headings (`# …`) in Markdown two levels down (to at most six `#`), leaving
/// fenced code blocks alone.
fn demote_headings(markdown: &str) -> String {
    let mut out = String::with_capacity(markdown.len() + 16);
    let mut fence: Option<(char, usize)> = None;
    for line in markdown.lines() {
        let body = line.trim_start_matches(' ');
        let indent = line.len() - body.len();
        let marker = body.chars().next().filter(|c| *c == '`' || *c == '~');
        if let Some(c) = marker.filter(|_| indent < 4) {
            let run = body.chars().take_while(|x| *x == c).count();
            match fence {
                None if run >= 3 => fence = Some((c, run)),
                Some((open, len)) if open == c && run >= len && body.trim_end().len() == run => {
                    fence = None
                }
                _ => {}
            }
        } else if fence.is_none() && indent < 4 {
            let hashes = body.chars().take_while(|c| *c == '#').count();
            let rest = &body[hashes..];
            if (1..=6).contains(&hashes) && (rest.is_empty() || rest.starts_with([' ', '\t'])) {
                let _ = writeln!(out, "{}{rest}", "#".repeat((hashes + 2).min(6)));
                continue;
            }
        }
        out.push_str(line);
        out.push('\n');
    }
    out.truncate(out.trim_end_matches('\n').len());
    out
}
