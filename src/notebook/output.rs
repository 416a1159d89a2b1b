//! What running an analysis file produces: cells with their captured outputs, in order.
//!
//! This is the hand-off between the runner (which fills it) and the writers of the
//! terminal transcript and the reports (which only read it).

/// One captured output of a cell, in the order it was produced.
#[derive(Debug, Clone, PartialEq)]
pub enum Output {
    /// Text from `print`.
    Text(String),
    /// A value displayed by `show` or as the cell's last expression (already formatted).
    Value(String),
    /// Markdown prose from `note`.
    Note(String),
    /// A figure: its complete SVG document and an optional title.
    Figure {
        /// The SVG document (starts with `<svg`).
        svg: String,
        /// Figure title, if any (used for alt text and captions).
        title: Option<String>,
    },
    /// A numerical-health warning (already worded, without the `warning:` prefix).
    Warning(String),
    /// The error that stopped the run, rendered with its position and source line.
    Error(String),
}

/// One cell after running.
#[derive(Debug, Clone, PartialEq)]
pub struct CellRun {
    /// The cell's title (text after `//==`), empty for an untitled leading cell.
    pub title: String,
    /// The cell's Markdown prose (from its `//>` lines), joined with newlines.
    pub prose: String,
    /// The cell's code lines, joined with newlines (prose lines removed).
    pub code: String,
    /// 1-based line in the analysis file of the cell's first line.
    pub first_line: usize,
    /// Outputs in the order they were produced.
    pub outputs: Vec<Output>,
}

/// Where a report came from: printed at its end, the only part that varies between runs.
#[derive(Debug, Clone, PartialEq)]
pub struct Provenance {
    /// statebook version.
    pub version: String,
    /// Analysis file name as given.
    pub file_name: String,
    /// SHA-256 of the analysis file's bytes, lowercase hex.
    pub sha256: String,
    /// UTC date and time of the run, `YYYY-MM-DD HH:MM UTC`.
    pub date: String,
    /// Operating system and architecture.
    pub platform: String,
    /// SHA-256 of the results file written with the report (lowercase hex; empty until
    /// `render` knows it), so that `check` can tell whether a report and a results file
    /// were written together. The results file itself stays byte-stable.
    pub results_sha256: String,
}

/// A whole run of an analysis file.
#[derive(Debug, Clone, PartialEq)]
pub struct NotebookRun {
    /// The document title (the first cell's title, or the file stem).
    pub title: String,
    /// Cells in file order (a failing run stops after the failing cell).
    pub cells: Vec<CellRun>,
    /// Whether the run stopped on an error (the error is the failing cell's last output).
    pub failed: bool,
    /// Provenance of the run.
    pub provenance: Provenance,
}
