//! Running the cases of a sweep: one engine per worker, in parallel on a rayon pool or
//! serially, with a progress bar on stderr for long sweeps.
//!
//! Each worker builds its own engine with [`crate::script::engine::build`] and a fresh
//! [`SessionState`] carrying the session's sandbox, limits, display style, function
//! library, imported modules and deadline. A case is one call of the case function with
//! its parameter map; the operation limit applies per case. Captured variables of a
//! closure are copied for every case (they are values by then: changing one inside the
//! function changes nothing outside it, nor in the next case). Outputs a case produces
//! (print, show, note, warnings, figures) go into that case's log, never into the cell;
//! `record` inside a case function has no effect.

use super::grid::Cases;
use crate::script::engine;
use crate::script::output::Output;
use crate::script::state::SessionState;
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use rayon::prelude::*;
use rhai::{Dynamic, Engine, FnPtr, AST};
use std::io::IsTerminal;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

/// How to run the cases.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct RunOptions {
    /// Use several threads.
    pub parallel: bool,
    /// Number of threads (None: one per core).
    pub threads: Option<usize>,
    /// Stop starting new cases after the first failure.
    pub stop_on_error: bool,
    /// Allow a progress bar (drawn only when stderr is a terminal and the sweep is slow).
    pub progress: bool,
}

impl Default for RunOptions {
    fn default() -> Self {
        RunOptions {
            parallel: true,
            threads: None,
            stop_on_error: false,
            progress: true,
        }
    }
}

/// What one case gave.
#[derive(Debug, Clone)]
pub struct Outcome {
    /// The function's value, or the error as text (message and position).
    pub result: Result<Dynamic, String>,
    /// What the case printed, one output per line.
    pub log: String,
}

struct Worker {
    engine: Engine,
    state: Arc<SessionState>,
    library: Arc<AST>,
    lines: Arc<crate::script::diagnostic::LineMap>,
}

impl Worker {
    fn new(parent: &SessionState) -> Worker {
        let state = Arc::new(SessionState::new(
            parent.sandbox.clone(),
            parent.limits.clone(),
        ));
        state.set_style(parent.style());
        state.sweep.become_worker_of(&parent.sweep);
        let mut engine = engine::build(&state, parent.sweep.deadline());
        for (alias, m) in state.sweep.modules() {
            engine.register_static_module(alias, m);
        }
        Worker {
            engine,
            library: state.sweep.library(),
            lines: state.sweep.lines(),
            state,
        }
    }

    fn call(&self, f: &FnPtr, params: rhai::Map) -> Outcome {
        let mut f = f.clone();
        let curry: Vec<Dynamic> = f.curry().iter().map(Dynamic::flatten_clone).collect();
        f.set_curry(curry);
        let arg = Dynamic::from_map(params);
        // Guarded like every evaluation: a panic is this case's internal error (the panic
        // hook stays quiet on a guarded thread instead of ending the process).
        let r = crate::guard::catch(|| f.call::<Dynamic>(&self.engine, &self.library, (arg,)));
        let result = match r {
            Ok(Ok(v)) => Ok(v.flatten()),
            Ok(Err(e)) => Err(describe(&e, &self.lines)),
            Err(what) => Err(format!(
                "internal error: statebook failed on this case ({what})"
            )),
        };
        Outcome {
            result,
            log: log_text(&self.state.take_outputs()),
        }
    }
}

/// An engine error as one line: message, `(line L, column C)` and the call chain.
fn describe(e: &rhai::EvalAltResult, lines: &crate::script::diagnostic::LineMap) -> String {
    let se = crate::script::diagnostic::ScriptError::from_eval(e, lines);
    let mut lines = se.message.lines();
    let mut s = lines.next().unwrap_or("").to_string();
    if let Some(l) = se.line {
        let file = se
            .file
            .as_deref()
            .map(|f| format!("{f} "))
            .unwrap_or_default();
        s.push_str(&format!(
            " ({file}line {l}, column {})",
            se.column.unwrap_or(1)
        ));
    }
    let notes = se.call_notes("the analysis file");
    for rest in lines
        .map(str::to_string)
        .chain(se.hints.iter().map(|h| format!("hint: {h}")))
        .chain(notes.into_iter().map(|n| format!("note: {n}")))
    {
        s.push_str("; ");
        s.push_str(rest.trim());
    }
    s
}

fn log_text(outputs: &[Output]) -> String {
    let mut s = String::new();
    for o in outputs {
        let line = match o {
            Output::Text(t) | Output::Value(t) | Output::Note(t) => t.clone(),
            Output::Warning(w) => format!("warning: {w}"),
            Output::Error(e) => format!("error: {e}"),
            Output::Figure { title, .. } => {
                format!(
                    "[figure{}]",
                    title.as_ref().map(|t| format!(": {t}")).unwrap_or_default()
                )
            }
        };
        s.push_str(&line);
        s.push('\n');
    }
    s
}

/// A progress bar that appears only after half a second, only on a terminal.
struct Progress {
    bar: Option<ProgressBar>,
    start: Instant,
    shown: AtomicBool,
}

impl Progress {
    fn new(total: usize, allowed: bool) -> Progress {
        let bar = (allowed && total > 1 && std::io::stderr().is_terminal()).then(|| {
            let b = ProgressBar::with_draw_target(Some(total as u64), ProgressDrawTarget::hidden());
            if let Ok(style) = ProgressStyle::with_template(
                "sweep {pos}/{len} cases {wide_bar} {elapsed} elapsed, about {eta} left",
            ) {
                b.set_style(style);
            }
            b
        });
        Progress {
            bar,
            start: Instant::now(),
            shown: AtomicBool::new(false),
        }
    }

    fn tick(&self) {
        if let Some(b) = &self.bar {
            if !self.shown.load(Ordering::Relaxed)
                && self.start.elapsed() > Duration::from_millis(500)
                && !self.shown.swap(true, Ordering::Relaxed)
            {
                b.set_draw_target(ProgressDrawTarget::stderr());
            }
            b.inc(1);
        }
    }

    fn finish(&self) {
        if let Some(b) = &self.bar {
            b.finish_and_clear();
        }
    }
}

/// Whether a case's error ends the whole sweep: the run's deadline, its memory budget or
/// the operation budget the cases share.
fn stops_sweep(message: &str) -> bool {
    message.contains("--timeout")
        || message.contains("--max-memory")
        || message.contains("cases together exceeded the operation limit")
}

/// Runs the cases `selected` (indices into `cases`) and returns their outcomes in the same
/// order; `None` for cases not started because an earlier failure stopped the sweep.
pub fn run(
    parent: &SessionState,
    f: &FnPtr,
    cases: &Cases,
    selected: &[usize],
    opts: &RunOptions,
    show_progress: bool,
) -> Result<Vec<Option<Outcome>>, String> {
    let stop = AtomicBool::new(false);
    parent
        .sweep
        .start_shared_operations(parent.operations.load(Ordering::Relaxed));
    let progress = Progress::new(selected.len(), opts.progress && show_progress);
    let one = |w: &mut Worker, &i: &usize| -> Option<Outcome> {
        if stop.load(Ordering::Relaxed) {
            return None;
        }
        // Between cases: the deadline and the memory budget (a case's own operations
        // are checked by its engine).
        let refused = if crate::budget::cancelled()
            || parent.sweep.deadline().is_some_and(|d| Instant::now() >= d)
        {
            Some(crate::budget::timeout_message(
                parent.limits.timeout_seconds,
            ))
        } else {
            crate::budget::check("sweep").err()
        };
        if let Some(m) = refused {
            stop.store(true, Ordering::Relaxed);
            return Some(Outcome {
                result: Err(m),
                log: String::new(),
            });
        }
        let o = w.call(f, cases.map(i));
        if matches!(&o.result, Err(m) if stops_sweep(m)) {
            stop.store(true, Ordering::Relaxed);
        }
        if o.result.is_err() && opts.stop_on_error {
            stop.store(true, Ordering::Relaxed);
        }
        progress.tick();
        Some(o)
    };
    let threads = if opts.parallel { opts.threads } else { Some(1) };
    // Pool threads get the stack an evaluation gets (rayon's default is far too small for
    // recursion to the call-depth limit), so the sweep always runs on a pool of its own.
    let threads = match threads {
        None => Some(rayon::current_num_threads()),
        t => t,
    };
    let stack = crate::guard::stack_for(parent.limits.call_depth);
    // One worker per pool thread, built on first use. A thread that finds its slot busy
    // (it stole a case while waiting inside a nested sweep) builds a temporary worker.
    let on_pool = || -> Vec<Option<Outcome>> {
        let slots: Vec<Mutex<Option<Worker>>> = (0..rayon::current_num_threads())
            .map(|_| Mutex::new(None))
            .collect();
        selected
            .par_iter()
            .map(|i| {
                let k = rayon::current_thread_index().unwrap_or(0) % slots.len().max(1);
                match slots.get(k).map(Mutex::try_lock) {
                    Some(Ok(mut slot)) => {
                        let w = slot.get_or_insert_with(|| Worker::new(parent));
                        one(w, i)
                    }
                    _ => one(&mut Worker::new(parent), i),
                }
            })
            .collect()
    };
    let out = match threads {
        Some(1) => {
            let mut w = Worker::new(parent);
            selected.iter().map(|i| one(&mut w, i)).collect()
        }
        Some(n) => rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .stack_size(stack)
            .build()
            .map_err(|e| format!("sweep: cannot start {n} threads: {e}"))?
            .install(on_pool),
        None => on_pool(),
    };
    // A sweep stopped by the deadline or the budget is an error of the whole sweep.
    if let Some(Some(Outcome { result: Err(m), .. })) = out
        .iter()
        .find(|o| matches!(o, Some(Outcome { result: Err(m), .. }) if stops_sweep(m)))
    {
        progress.finish();
        return Err(m.clone());
    }
    progress.finish();
    Ok(out)
}
