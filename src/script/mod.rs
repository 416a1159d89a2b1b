//! The rhai binding layer: value types, conversions, the built-ins and the engine.
//! Thin wrappers: convert, call `numeric/`, convert back.

pub mod builtins;
pub mod convert;
pub mod declare;
pub mod diagnostic;
pub mod docs;
pub mod engine;
pub mod json;
pub mod nesting;
pub mod output;
pub mod session;
pub mod show;
pub mod sizes;
pub mod state;
pub mod stdlib;
pub mod sweep;
pub mod syntax;
pub mod types;
