//! Analysis files: the cell parser, the runner that captures outputs per cell, the
//! results file and the reproducibility check.

pub mod check;
pub mod files;
pub mod output;
pub mod parse;
pub mod run;
pub mod session_log;
pub mod sweeps;

/// Why a notebook operation failed, by what it was doing. `Display` gives the words the
/// command line prints after `error:` (they may carry `hint:` lines).
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum NotebookError {
    /// An analysis file (or a session log) could not be read as one.
    Read(String),
    /// A session log could not be turned into an analysis file.
    SessionLog(String),
    /// Shard files that do not merge into one sweep's results.
    Merge(String),
    /// The saved results (or the report paired with them) could not be compared.
    Check(String),
}

impl NotebookError {
    /// The words of the error.
    pub fn message(&self) -> &str {
        match self {
            NotebookError::Read(m)
            | NotebookError::SessionLog(m)
            | NotebookError::Merge(m)
            | NotebookError::Check(m) => m,
        }
    }
}

impl std::fmt::Display for NotebookError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.message())
    }
}

impl std::error::Error for NotebookError {}
