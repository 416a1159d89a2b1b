//! A session: one script engine with its scope, functions, sandbox and limits, shared by
//! the notebook runner (one session per analysis file) and the REPL (one per terminal).

use super::diagnostic::{LineMap, ScriptError};
use super::output::Output;
use super::state::SessionState;
use crate::sandbox::{Limits, Sandbox};
use rhai::{Dynamic, Engine, Scope, AST};
use std::path::PathBuf;
use std::sync::Arc;
use std::time::{Duration, Instant};

/// How a session is set up.
#[derive(Debug, Clone)]
pub struct SessionOptions {
    /// The folder whose tree scripts may read and write (the analysis file's folder).
    pub root: PathBuf,
    /// Further folders scripts may read.
    pub allow_read: Vec<PathBuf>,
    /// Further folders scripts may read and write.
    pub allow_write: Vec<PathBuf>,
    /// Resource limits.
    pub limits: Limits,
}

impl Default for SessionOptions {
    fn default() -> Self {
        SessionOptions {
            root: PathBuf::from("."),
            allow_read: Vec::new(),
            allow_write: Vec::new(),
            limits: Limits::default(),
        }
    }
}

/// One scripting session: an engine, its scope, the functions defined so far, and its
/// state. Sessions share nothing, so several can run side by side.
pub struct Session {
    engine: Engine,
    scope: Scope<'static>,
    lib: AST,
    state: Arc<SessionState>,
    /// Where the evaluated pieces and the script functions start in their file.
    lines: LineMap,
}

impl Drop for Session {
    /// The scope's values are dropped on a large stack too (deeply nested data drops
    /// recursively).
    fn drop(&mut self) {
        let scope = std::mem::take(&mut self.scope);
        let stack = crate::guard::stack_for(self.state.limits.call_depth);
        let _ = crate::guard::run(stack, move || {
            crate::script::nesting::drop_flat(scope.into_iter().map(|(_, v, _)| v))
        });
    }
}

impl Session {
    /// A new session.
    pub fn new(options: &SessionOptions) -> Self {
        let mut sb = Sandbox::new(&options.root);
        for d in &options.allow_read {
            sb.allow_read(d);
        }
        for d in &options.allow_write {
            sb.allow_write(d);
        }
        crate::budget::set_budget(options.limits.memory_bytes);
        let state = Arc::new(SessionState::new(sb, options.limits.clone()));
        let deadline = (options.limits.timeout_seconds > 0.0)
            .then(|| Instant::now() + Duration::from_secs_f64(options.limits.timeout_seconds));
        let engine = crate::script::engine::build(&state, deadline);
        state.sweep.set_deadline(deadline);
        Session {
            engine,
            scope: Scope::new(),
            lib: AST::empty(),
            state,
            lines: LineMap::default(),
        }
    }

    /// Evaluates a piece of code in the session's scope and returns the value of its last
    /// expression. Functions it defines stay callable by later pieces; modules it imports
    /// stay available under their alias.
    ///
    /// The evaluation runs under the panic guard (see [`guard`]): on a large stack, and a
    /// panic becomes an internal error naming the line it happened on.
    pub fn eval(&mut self, code: &str) -> Result<Dynamic, ScriptError> {
        self.eval_at(code, 0)
    }

    /// As [`Session::eval`], for code that starts after `lines_before` lines of its file
    /// (a cell of an analysis file): error positions, and those of the functions it
    /// defines, are lines of the file.
    pub fn eval_at(&mut self, code: &str, lines_before: usize) -> Result<Dynamic, ScriptError> {
        self.lines.top = lines_before;
        self.state
            .operations
            .store(0, std::sync::atomic::Ordering::Relaxed);
        let limits = self.state.limits.clone();
        let stack = crate::guard::stack_for(limits.call_depth);
        // The scope as it was, for locating a panic. Taken and dropped on the evaluation
        // thread: cloning and dropping deeply nested data needs its large stack. Only a
        // small scope is kept: copying a large one before every cell or REPL line would
        // make a long analysis quadratic (a panic is an internal error; without the copy it
        // is reported without its line).
        let mut snapshot: Option<Scope<'static>> = None;
        let result = crate::guard::run(stack, || {
            if small_scope(&self.scope) {
                snapshot.replace(self.scope.clone());
            }
            let r = limits.enter(|| self.eval_unguarded(code));
            drop(snapshot.take());
            r
        });
        match result {
            Ok(r) => r,
            Err(what) => {
                let (line, column) = match snapshot {
                    Some(snapshot) => self.locate_panic(code, snapshot),
                    None => (None, None),
                };
                Err(ScriptError {
                    line,
                    column,
                    internal: true,
                    ..ScriptError::plain(format!(
                        "internal error: statebook failed on this input ({what})\nhint: please \
                         report it with the analysis file"
                    ))
                })
            }
        }
    }

    fn eval_unguarded(&mut self, code: &str) -> Result<Dynamic, ScriptError> {
        let ast = self
            .engine
            .compile_with_scope(&self.scope, code)
            .map_err(|e| ScriptError::from_parse(&e, self.lines.top))?;
        self.keep_imports(&ast);
        for f in ast.iter_functions() {
            self.lines
                .functions
                .insert(f.name.to_string(), self.lines.top);
        }
        let merged = self.lib.merge(&ast);
        self.state.sweep.set_library(&merged, &self.lines);
        let result = self
            .engine
            .eval_ast_with_scope::<Dynamic>(&mut self.scope, &merged);
        let mut lib = merged;
        lib.clear_statements();
        self.lib = lib;
        result.map_err(|e| {
            let mut se = ScriptError::from_eval(&e, &self.lines);
            if let (Some(f), Some(l)) = (&se.file, se.line) {
                se.file_line = self.state.module_line(f, l).map(Into::into);
            }
            se
        })
    }

    /// Finds where a caught panic happened: re-runs the code from the scope it started
    /// with, stopped by the operation limit just before the operation that panicked, and
    /// takes that stop's position. The re-run's outputs are dropped; its file writes
    /// repeat the original's (same bytes, written atomically).
    fn locate_panic(
        &mut self,
        code: &str,
        snapshot: Scope<'static>,
    ) -> (Option<usize>, Option<usize>) {
        use std::sync::atomic::Ordering;
        let ops = self.state.operations.load(Ordering::Relaxed);
        if ops < 2 {
            return (None, None);
        }
        let kept = self.state.take_outputs();
        self.engine.set_max_operations(ops - 1);
        let limits = self.state.limits.clone();
        let stack = crate::guard::stack_for(limits.call_depth);
        let replay = crate::guard::run(stack, || {
            self.scope = snapshot;
            limits.enter(|| {
                let ast = self.engine.compile_with_scope(&self.scope, code).ok()?;
                let merged = self.lib.merge(&ast);
                let e = self
                    .engine
                    .eval_ast_with_scope::<Dynamic>(&mut self.scope, &merged)
                    .err()?;
                let mut inner = &*e;
                while let rhai::EvalAltResult::ErrorInFunctionCall(_, _, i, _) = inner {
                    inner = i;
                }
                matches!(inner, rhai::EvalAltResult::ErrorTooManyOperations(_))
                    .then(|| ScriptError::from_eval(&e, &self.lines))
            })
        });
        self.engine.set_max_operations(self.state.limits.operations);
        let _ = self.state.take_outputs();
        for o in kept {
            self.state.push(o);
        }
        match replay {
            Ok(Some(e)) => (e.line, e.column),
            _ => (None, None),
        }
    }

    /// `import "name" as alias;` is scoped to one evaluation by the engine; registering
    /// the module under its alias keeps it available to later cells and REPL lines.
    /// The imports are the parsed script's top-level `import` statements (text inside a
    /// comment or a string is no import).
    fn keep_imports(&mut self, ast: &AST) {
        let imports: Vec<(String, String)> = ast
            .statements()
            .iter()
            .filter_map(|s| match s {
                rhai::Stmt::Import(b, _) => match &b.0 {
                    rhai::Expr::StringConstant(path, _) if !b.1.name.is_empty() => {
                        Some((path.to_string(), b.1.name.to_string()))
                    }
                    _ => None,
                },
                _ => None,
            })
            .collect();
        for (path, alias) in imports {
            let (path, alias) = (path.as_str(), alias.as_str());
            if let Ok(m) = self.engine.module_resolver().resolve(
                &self.engine,
                None,
                path,
                rhai::Position::NONE,
            ) {
                self.state.sweep.add_module(alias, m.clone());
                self.engine.register_static_module(alias, m);
            }
        }
    }

    /// Outputs captured since the last call (printed text, shown values, notes, figures,
    /// warnings), in order.
    pub fn take_outputs(&self) -> Vec<Output> {
        self.state.take_outputs()
    }

    /// The display of a value in this session's style.
    pub fn display(&self, v: &Dynamic) -> String {
        crate::script::show::format(v, self.state.style())
    }

    /// Shows a value as a cell output (figures as figures).
    pub fn show_value(&self, v: Dynamic) -> Option<Output> {
        if v.is_unit() {
            return None;
        }
        if let Some(o) = crate::script::builtins::figure_output(&v) {
            return Some(o);
        }
        Some(Output::Value(self.display(&v)))
    }

    /// Named results recorded so far, in the order first recorded.
    pub fn records(&self) -> Vec<(String, serde_json::Value)> {
        self.state.records()
    }

    /// The file-access policy of the session (also what its scripts have read).
    pub fn sandbox(&self) -> &Sandbox {
        &self.state.sandbox
    }

    /// The root folder of the session's sandbox.
    pub fn root(&self) -> &std::path::Path {
        self.state.sandbox.root()
    }

    /// Makes every top-level sweep take its table from `sweeps` (a merged sweep-results
    /// file) instead of running its cases. Call before running the file.
    pub fn take_sweeps_from(&self, sweeps: Vec<crate::script::sweep::log::StoredSweep>) {
        self.state.sweep.set_stored(sweeps);
    }

    /// Number of top-level sweeps the session has begun.
    pub fn sweeps_begun(&self) -> usize {
        self.state.sweep.sweeps_begun()
    }

    /// Sets how this session's sweeps run (a shard of each, and whether their cases are
    /// kept for a shard or results file). Call before running the file.
    pub fn plan_sweeps(&self, plan: crate::script::sweep::SweepPlan) {
        self.state.sweep.set_plan(plan);
    }

    /// The cases of the sweeps run so far (kept only when planned with `keep_log`).
    pub fn sweep_logs(&self) -> Vec<crate::script::sweep::log::SweepLog> {
        self.state.sweep.logs()
    }

    /// The engine itself, for tests that need a deliberately broken built-in (the panic
    /// guard's tests register one). Not part of the stable API.
    #[doc(hidden)]
    pub fn engine_mut(&mut self) -> &mut Engine {
        &mut self.engine
    }

    /// Names of the variables in scope (for completion).
    pub fn variable_names(&self) -> Vec<String> {
        self.scope.iter().map(|(n, _, _)| n.to_string()).collect()
    }

    /// Names of the script functions defined so far (for completion).
    pub fn function_names(&self) -> Vec<String> {
        self.lib
            .iter_functions()
            .map(|f| f.name.to_string())
            .collect()
    }
}

/// Values (counting the items of arrays and maps, at any depth) a scope may hold for
/// [`Session::eval`] to keep a copy of it for locating a panic.
const SNAPSHOT_VALUES: usize = 4096;

/// Whether a scope holds at most [`SNAPSHOT_VALUES`] values; stops counting there, so the
/// test costs O(1) however large the scope.
fn small_scope(scope: &Scope) -> bool {
    fn count(v: &Dynamic, left: &mut usize) -> bool {
        if *left == 0 {
            return false;
        }
        *left -= 1;
        if let Some(a) = v.read_lock::<rhai::Array>() {
            return a.iter().all(|x| count(x, left));
        }
        if let Some(m) = v.read_lock::<rhai::Map>() {
            return m.values().all(|x| count(x, left));
        }
        true
    }
    let mut left = SNAPSHOT_VALUES;
    scope.iter_raw().all(|(_, _, v)| count(v, &mut left))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn only_a_small_scope_is_copied_before_an_evaluation() {
        let mut scope = Scope::new();
        scope.push("x", 1.0_f64);
        scope.push("names", vec![Dynamic::from("a"); 10]);
        assert!(small_scope(&scope));
        let big: rhai::Array = (0..SNAPSHOT_VALUES as i64).map(Dynamic::from).collect();
        scope.push("big", big);
        assert!(!small_scope(&scope), "the count stops at the limit");
        // Deep values are built, counted and dropped on a large stack, as the session does.
        let deep_is_small = crate::guard::run(256 << 20, || {
            let mut deep = Dynamic::from(rhai::Array::new());
            for _ in 0..10 * SNAPSHOT_VALUES {
                deep = Dynamic::from(vec![deep]);
            }
            let mut nested = Scope::new();
            nested.push("deep", deep);
            small_scope(&nested)
        })
        .expect("no panic");
        assert!(!deep_is_small, "nesting counts each level");
    }
}
