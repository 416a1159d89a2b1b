//! The integration tests, one binary with a module per area (one link instead of one per
//! file). `common` holds the shared helpers; `reference_*` compare with outside
//! references (fixtures in `tests/reference/`); `suite` runs every `tests/suite/**.sbook`;
//! `security_*`, `safety_limits` and `sandbox_cli` drive the real binary on hostile input.

mod cli;
mod common;
mod freq_accuracy;
mod fuzz_file_inputs;
mod fuzz_regressions;
mod help_pages;
mod mutated_demos;
mod notebook;
mod nothing_lost;
mod properties_linalg;
mod properties_models;
mod reference_design;
mod reference_freq;
mod reference_linalg;
mod reference_models;
mod reference_time;
mod safety_limits;
mod sandbox_cli;
mod scale_invariance;
mod scale_invariance_design;
mod security_files;
mod security_limits;
mod step_metrics_exact;
mod suite;
mod sweep;
