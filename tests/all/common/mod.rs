//! Shared helpers for integration tests (`mod common;` in a test file).
pub mod cli;
pub mod fixtures;
