//! What running an analysis file produces: cells with their captured outputs, in order.
//!
//! This is the hand-off between the runner (which fills it) and the writers of the
//! terminal transcript and the reports (which only read it).

use crate::script::output::Output;

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

/// Starts the machine-readable comment that both report formats carry: the SHA-256 of the
/// results file written with the report (read back by `check` to pair the two).
pub const RUN_MARKER: &str = "<!-- statebook-results: ";

/// The pairing comment for `run` (only its hexadecimal digits are kept).
pub fn run_marker(run: &str) -> String {
    let id: String = run.chars().filter(char::is_ascii_hexdigit).collect();
    format!("{RUN_MARKER}{id} -->")
}

/// The results-file hash a report carries, if any.
pub fn run_of_report(report: &str) -> Option<&str> {
    let at = report.rfind(RUN_MARKER)? + RUN_MARKER.len();
    let rest = &report[at..];
    let end = rest.find(|c: char| !c.is_ascii_hexdigit())?;
    Some(&rest[..end])
}
