//! Per-session state shared by the built-ins of one engine: the output sink of the
//! current cell, display style, records, and the file-access policy.
//!
//! A `Session` owns one `Arc<SessionState>`; its engine's closures hold clones, and the
//! engine's default tag carries one so that plain native functions can reach it through
//! `NativeCallContext::tag()`. Nothing here is global: two sessions never share state.

use crate::display::Style;
use crate::sandbox::{Limits, Sandbox};
use crate::script::output::Output;
use rhai::NativeCallContext;
use std::sync::atomic::AtomicU64;
use std::sync::{Arc, Mutex, MutexGuard};

/// State of one session, shared by its built-ins.
#[derive(Debug)]
pub struct SessionState {
    outputs: Mutex<Vec<Output>>,
    style: Mutex<Style>,
    records: Mutex<Vec<(String, serde_json::Value)>>,
    /// The file-access policy for this session.
    pub sandbox: Sandbox,
    /// Resource limits of this session.
    pub limits: Limits,
    /// What the session's sweeps need (function library, shard plan, log).
    pub sweep: crate::script::sweep::context::SweepContext,
    /// Operations counted so far in the current evaluation (kept by `on_progress`; used
    /// to find the line of a caught panic).
    pub operations: AtomicU64,
    /// The text of each imported file as it ran, by the name errors give it (so an error
    /// inside a module can show its line).
    modules: Mutex<std::collections::HashMap<String, Arc<str>>>,
}

/// A clonable handle, stored in the engine's default tag.
#[derive(Debug, Clone)]
pub struct StateHandle(pub Arc<SessionState>);

fn lock<T>(m: &Mutex<T>) -> MutexGuard<'_, T> {
    // A panic while holding the lock cannot leave these plain collections inconsistent,
    // so a poisoned lock is simply taken over.
    m.lock().unwrap_or_else(|p| p.into_inner())
}

impl SessionState {
    /// Fresh state with the given sandbox and limits.
    pub fn new(sandbox: Sandbox, limits: Limits) -> Self {
        SessionState {
            outputs: Mutex::new(Vec::new()),
            style: Mutex::new(Style::default()),
            records: Mutex::new(Vec::new()),
            sandbox,
            limits,
            sweep: Default::default(),
            operations: AtomicU64::new(0),
            modules: Default::default(),
        }
    }

    /// Appends an output to the current cell.
    pub fn push(&self, o: Output) {
        lock(&self.outputs).push(o);
    }

    /// Takes the outputs captured since the last call.
    pub fn take_outputs(&self) -> Vec<Output> {
        std::mem::take(&mut *lock(&self.outputs))
    }

    /// Adds a warning to the current cell.
    pub fn warn(&self, message: impl Into<String>) {
        self.push(Output::Warning(message.into()));
    }

    /// Keeps the text an imported file ran with, under the name its errors carry.
    pub fn keep_module_text(&self, file: &str, text: &str) {
        lock(&self.modules).insert(file.to_string(), Arc::from(text));
    }

    /// Line `line` (1-based) of an imported file as it ran.
    pub fn module_line(&self, file: &str, line: usize) -> Option<String> {
        let m = lock(&self.modules);
        m.get(file)?
            .lines()
            .nth(line.checked_sub(1)?)
            .map(str::to_string)
    }

    /// The display style in force.
    pub fn style(&self) -> Style {
        *lock(&self.style)
    }

    /// Changes the display style.
    pub fn set_style(&self, s: Style) {
        *lock(&self.style) = s;
    }

    /// Keeps a named result (a later record of the same name replaces the earlier one,
    /// keeping its first position).
    pub fn record(&self, name: &str, value: serde_json::Value) {
        let mut r = lock(&self.records);
        if let Some(slot) = r.iter_mut().find(|(n, _)| n == name) {
            slot.1 = value;
        } else {
            r.push((name.to_string(), value));
        }
    }

    /// All records in the order first made.
    pub fn records(&self) -> Vec<(String, serde_json::Value)> {
        lock(&self.records).clone()
    }
}

/// The session state behind a native call, if the engine carries one.
pub fn of(ctx: &NativeCallContext) -> Option<Arc<SessionState>> {
    ctx.tag()
        .and_then(|t| t.clone().try_cast::<StateHandle>())
        .map(|h| h.0)
}

/// Sends a warning to the session behind a native call (dropped when there is none).
pub fn warn(ctx: &NativeCallContext, message: impl Into<String>) {
    if let Some(s) = of(ctx) {
        s.warn(message);
    }
}

/// The display style of the session behind a native call.
pub fn style(ctx: &NativeCallContext) -> Style {
    of(ctx).map(|s| s.style()).unwrap_or_default()
}
