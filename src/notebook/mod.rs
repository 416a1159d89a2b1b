//! Analysis files: the cell parser, the runner that captures outputs per cell, the
//! results file and the reproducibility check.

pub mod check;
pub mod files;
pub mod output;
pub mod parse;
pub mod run;
pub mod session_log;
pub mod sweeps;
