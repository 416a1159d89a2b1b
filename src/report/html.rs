//! The HTML report: one self-contained page with inline CSS and inline SVG figures.
//!
//! The page loads nothing: no scripts, fonts, images or style sheets from anywhere. Element
//! ids come from cell positions (`cell-0`, `cell-1`, …), figures are numbered in document
//! order, and the only part of the page that may differ between two runs of the same file
//! is the provenance block at the end.

use std::fmt::Write as _;

use super::highlight::highlight;
use super::prose::markdown_to_html;
use super::{blocks, escape_html, failing_cell, inline_svg, is_empty, titles_document, Block};
use super::{CAUTION, CAUTION_HEADING};
use crate::notebook::output::{CellRun, NotebookRun, Provenance};
use crate::script::output::Output;

/// The page's style sheet, embedded at build time.
const STYLE: &str = include_str!("style.css");

/// Least number of titled cells for which the page gets a list of contents.
const CONTENTS_MIN: usize = 3;

/// Renders a run as one self-contained HTML5 document.
///
/// The same run always gives the same bytes. Prose and notes are Markdown (raw HTML in
/// them is escaped); figures are inlined as SVG; a failed run gets a banner naming the
/// cell it stopped in.
pub fn render_html(run: &NotebookRun) -> String {
    let title = if run.title.trim().is_empty() {
        "Analysis"
    } else {
        run.title.trim()
    };
    let mut page = String::with_capacity(16 * 1024);
    page.push_str("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n");
    page.push_str("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n");
    let _ = writeln!(page, "<title>{}</title>", escape_html(title));
    let _ = writeln!(
        page,
        "<style>\n{}</style>\n</head>\n<body>\n<main class=\"sheet\">",
        STYLE
    );
    let _ = writeln!(
        page,
        "<header class=\"doc-head\">\n<p class=\"kicker\">Analysis report</p>\n<h1>{}</h1>\n</header>",
        escape_html(title)
    );
    if let Some(index) = failing_cell(run) {
        push_failure_banner(&mut page, run, index);
    }
    // The contents list follows the opening cells (untitled, or titling the document).
    let mut contents_done = false;
    let mut figures = 0usize;
    for (index, cell) in run.cells.iter().enumerate() {
        if !contents_done && !cell.title.trim().is_empty() && !titles_document(run, index) {
            push_contents(&mut page, run);
            contents_done = true;
        }
        push_cell(&mut page, run, index, cell, &mut figures);
    }
    push_provenance(&mut page, &run.provenance);
    page.push_str("</main>\n</body>\n</html>\n");
    page
}

/// The banner at the top of a failed run's page.
fn push_failure_banner(page: &mut String, run: &NotebookRun, index: usize) {
    let cell = &run.cells[index];
    let name = if cell.title.trim().is_empty() {
        "the opening cell".to_string()
    } else {
        format!("the cell “{}”", escape_html(cell.title.trim()))
    };
    let _ = writeln!(
        page,
        "<div class=\"banner-failed\" role=\"alert\">\n<p><strong>This analysis stopped on an \
         error</strong> in <a href=\"#cell-{index}\">{name}</a> (line {line}). Cells after it \
         did not run; this report shows everything up to that point.</p>\n</div>",
        line = cell.first_line
    );
}

/// A list of contents, when there are enough titled cells to need one.
fn push_contents(page: &mut String, run: &NotebookRun) {
    let entries: Vec<(usize, &CellRun)> = run
        .cells
        .iter()
        .enumerate()
        .filter(|(index, cell)| !cell.title.trim().is_empty() && !titles_document(run, *index))
        .collect();
    if entries.len() < CONTENTS_MIN {
        return;
    }
    page.push_str("<nav class=\"contents\" aria-label=\"Contents\">\n<ol>\n");
    for (index, cell) in entries {
        let _ = writeln!(
            page,
            "<li><a href=\"#cell-{index}\">{}</a></li>",
            escape_html(cell.title.trim())
        );
    }
    page.push_str("</ol>\n</nav>\n");
}

/// One cell: heading, prose, code, outputs.
fn push_cell(
    page: &mut String,
    run: &NotebookRun,
    index: usize,
    cell: &CellRun,
    figures: &mut usize,
) {
    let untitled = cell.title.trim().is_empty();
    if is_empty(cell) && untitled {
        return;
    }
    let empty = is_empty(cell);
    let class = if empty { "cell cell-empty" } else { "cell" };
    let _ = writeln!(page, "<section class=\"{class}\" id=\"cell-{index}\">");
    if !untitled && !titles_document(run, index) {
        let _ = writeln!(
            page,
            "<header class=\"cell-head\">\n<h2>{}</h2>\n<span class=\"cell-line\">line {}</span>\n</header>",
            escape_html(cell.title.trim()),
            cell.first_line
        );
    }
    if !cell.prose.trim().is_empty() {
        let _ = write!(
            page,
            "<div class=\"prose\">\n{}</div>\n",
            markdown_to_html(&cell.prose, &format!("cell-{index}"))
        );
    }
    if !cell.code.trim().is_empty() {
        let _ = writeln!(
            page,
            "<pre class=\"code\"><code>{}</code></pre>",
            highlight(cell.code.trim_matches('\n'))
        );
    }
    if !cell.outputs.is_empty() {
        page.push_str("<div class=\"outputs\">\n");
        for (position, block) in blocks(&cell.outputs).into_iter().enumerate() {
            push_output(page, index, position, block, figures);
        }
        page.push_str("</div>\n");
    }
    page.push_str("</section>\n");
}

/// One output block of cell `cell`, at `position` among its blocks.
fn push_output(
    page: &mut String,
    cell: usize,
    position: usize,
    block: Block<'_>,
    figures: &mut usize,
) {
    let output = match block {
        Block::Text(text) => {
            let _ = writeln!(page, "<pre class=\"out-text\">{}</pre>", escape_html(&text));
            return;
        }
        Block::Single(output) => output,
    };
    match output {
        Output::Text(text) => {
            let _ = writeln!(page, "<pre class=\"out-text\">{}</pre>", escape_html(text));
        }
        Output::Value(value) => {
            let _ = writeln!(
                page,
                "<pre class=\"out-value\">{}</pre>",
                escape_html(value.trim_end_matches('\n'))
            );
        }
        Output::Note(markdown) => {
            let scope = format!("cell-{cell}-note-{position}");
            let _ = write!(
                page,
                "<div class=\"out-note prose\">\n{}</div>\n",
                markdown_to_html(markdown, &scope)
            );
        }
        Output::Figure { svg, title } => {
            *figures += 1;
            let caption = match title.as_deref().map(str::trim) {
                Some(title) if !title.is_empty() => {
                    format!(
                        "<span class=\"fig-num\">Figure {}</span> {}",
                        figures,
                        escape_html(title)
                    )
                }
                _ => format!("<span class=\"fig-num\">Figure {}</span>", figures),
            };
            let _ = writeln!(
                page,
                "<figure class=\"out-figure\" id=\"figure-{figures}\">\n<div class=\"fig-body\">\n{}\n</div>\n<figcaption>{caption}</figcaption>\n</figure>",
                inline_svg(svg)
            );
        }
        Output::Warning(message) => {
            let _ = writeln!(
                page,
                "<div class=\"out-warning\" role=\"note\"><span class=\"callout-tag\">warning:</span> <span class=\"callout-text\">{}</span></div>",
                escape_html(message.trim())
            );
        }
        Output::Error(message) => {
            let _ = writeln!(
                page,
                "<div class=\"out-error\" role=\"alert\">\n<p class=\"callout-tag\">The run stopped here</p>\n<pre>{}</pre>\n</div>",
                escape_html(message.trim_end())
            );
        }
    }
}

/// The closing block: where the report came from, then the safety caution.
fn push_provenance(page: &mut String, provenance: &Provenance) {
    let rows = [
        ("statebook version", escape_html(&provenance.version), false),
        ("Analysis file", escape_html(&provenance.file_name), true),
        ("SHA-256", escape_html(&provenance.sha256), true),
        ("Run on", escape_html(&provenance.date), false),
        ("Platform", escape_html(&provenance.platform), false),
        (
            "Results SHA-256",
            escape_html(&provenance.results_sha256),
            true,
        ),
    ];
    page.push_str("<footer class=\"doc-foot\">\n<section class=\"provenance\">\n");
    page.push_str("<h2>Provenance</h2>\n<dl>\n");
    for (label, value, mono) in rows {
        let value = if mono {
            format!("<code>{value}</code>")
        } else {
            value
        };
        let _ = writeln!(page, "<div><dt>{label}</dt><dd>{value}</dd></div>");
    }
    page.push_str("</dl>\n");
    let _ = writeln!(
        page,
        "{}",
        crate::notebook::output::run_marker(&provenance.results_sha256)
    );
    page.push_str("</section>\n<section class=\"caution\">\n");
    let _ = writeln!(page, "<h2>{CAUTION_HEADING}</h2>");
    for paragraph in CAUTION {
        let _ = writeln!(page, "<p>{}</p>", escape_html(paragraph));
    }
    page.push_str("</section>\n</footer>\n");
}
