//! Builds the rhai `Engine` of one session: limits, sandboxed imports, engineer-friendly
//! arithmetic, every built-in, and the embedded standard library.

use super::builtins;
use super::state::{SessionState, StateHandle};
use crate::script::output::Output;
use rhai::{Dynamic, Engine, EvalAltResult, Module, ModuleResolver, Position, Shared};
use std::sync::atomic::Ordering;
use std::sync::Arc;
use std::time::Instant;

/// Builds the engine for a session. `deadline` is the wall-clock end of the run, if any.
pub fn build(state: &Arc<SessionState>, deadline: Option<Instant>) -> Engine {
    let mut e = Engine::new();
    let limits = &state.limits;
    e.set_fast_operators(false);
    e.disable_symbol("eval");
    super::syntax::install(&mut e);
    e.set_max_operations(limits.operations);
    e.set_max_call_levels(limits.call_depth);
    // The engine's size limits are off (0): they are one switch with a walk over the
    // whole value after each change to it (quadratic growth). The memory budget, checked
    // in the progress callback after every operation, bounds the total; `sizes` keeps
    // the per-string and per-array limits where values grow, in O(1).
    e.set_max_string_size(0);
    e.set_max_array_size(0);
    e.set_max_map_size(0);
    e.set_max_expr_depths(256, 256);
    e.set_default_tag(Dynamic::from(StateHandle(state.clone())));

    let s = state.clone();
    e.on_print(move |t| s.push(Output::Text(t.to_string())));
    let s = state.clone();
    e.on_debug(move |t, _, _| s.push(Output::Text(t.to_string())));
    let s = state.clone();
    let timeout = limits.timeout_seconds;
    let operations = limits.operations;
    e.on_progress(move |ops| {
        s.operations.store(ops, Ordering::Relaxed);
        // Every operation: two relaxed atomic loads (cancellation by the watchdog, bytes
        // allocated); the clock every 256 operations.
        let late = crate::budget::cancelled()
            || (ops % 256 == 0 && deadline.is_some_and(|d| Instant::now() >= d));
        if late {
            return Some(Dynamic::from(crate::budget::timeout_message(timeout)));
        }
        if let Err(m) = crate::budget::check("") {
            return Some(Dynamic::from(m));
        }
        // The cases of a sweep share one operation budget (counted in batches of 1024).
        if ops % 1024 == 0 && s.sweep.count_shared_operations(1024) > operations {
            return Some(Dynamic::from(format!(
                "the sweep's cases together exceeded the operation limit of {operations}\nhint: \
                 raise it with --max-operations if the sweep really needs more"
            )));
        }
        None
    });
    e.set_module_resolver(SandboxResolver {
        state: state.clone(),
        active: Default::default(),
    });

    builtins::arith::register(&mut e);
    builtins::matrix::register(&mut e);
    builtins::complex::register(&mut e);
    builtins::linalg::register(&mut e);
    builtins::lti::register(&mut e);
    builtins::output::register(&mut e, state);
    builtins::time::register(&mut e);
    builtins::design::register(&mut e);
    builtins::sweep::register(&mut e);
    for table in builtins::DECLARED {
        for b in table.iter() {
            (b.register)(&mut e);
        }
    }
    register_display(&mut e, state);
    super::nesting::register(&mut e);
    super::sizes::register(&mut e, limits.string_size, limits.array_size);
    builtins::vector::register(&mut e, limits.array_size);
    super::stdlib::load(&mut e);
    // The core package's `sleep` has no place in a sandboxed analysis: it holds a run
    // past any deadline (and panicked on sleep(1e300)). Registered functions take
    // precedence over the package's.
    let refuse = || -> Result<(), Box<EvalAltResult>> {
        Err(super::convert::fail(
            "sleep is not available in an analysis (it would only hold up the run)",
        ))
    };
    e.register_fn("sleep", move |_: rhai::INT| refuse());
    e.register_fn("sleep", move |_: rhai::FLOAT| refuse());
    e
}

/// `to_string`/`to_debug` of the value types use the session's display style, so `print`
/// and string interpolation agree with `show`.
fn register_display(e: &mut Engine, state: &Arc<SessionState>) {
    let s = state.clone();
    let style: super::types::StyleSource = Arc::new(move || s.style());
    for k in super::types::KINDS {
        (k.register)(e, style.clone());
    }
}

/// Resolves `import "name" as m;` to `name.sbook` inside the sandbox.
struct SandboxResolver {
    state: Arc<SessionState>,
    /// The files being imported right now, outermost first (a cycle or a chain deeper
    /// than [`MAX_IMPORT_DEPTH`] is refused: each nested import starts a fresh engine
    /// state, so no call-depth limit bounds it and the native stack would overflow).
    active: std::sync::Mutex<Vec<String>>,
}

/// Deepest chain of nested imports.
pub const MAX_IMPORT_DEPTH: usize = 16;

fn in_module(path: &str, message: String, pos: Position) -> Box<EvalAltResult> {
    Box::new(EvalAltResult::ErrorInModule(
        path.to_string(),
        super::convert::fail(message),
        pos,
    ))
}

impl ModuleResolver for SandboxResolver {
    fn resolve(
        &self,
        engine: &Engine,
        _source: Option<&str>,
        path: &str,
        pos: Position,
    ) -> Result<Shared<Module>, Box<EvalAltResult>> {
        let file = crate::script::diagnostic::module_file(path);
        let real = self.state.sandbox.read_path(&file).map_err(|m| {
            Box::new(EvalAltResult::ErrorInModule(
                path.to_string(),
                super::convert::fail(format!("import: {m}")),
                pos,
            ))
        })?;
        let key = real.display().to_string();
        {
            let mut active = self.active.lock().unwrap_or_else(|p| p.into_inner());
            if active.contains(&key) {
                let chain: Vec<&str> = active.iter().map(String::as_str).collect();
                return Err(in_module(
                    path,
                    format!(
                        "import: {file} imports itself (cycle: {} → {key})",
                        chain.join(" → ")
                    ),
                    pos,
                ));
            }
            if active.len() >= MAX_IMPORT_DEPTH {
                return Err(in_module(
                    path,
                    format!("import: imports nested more than {MAX_IMPORT_DEPTH} deep"),
                    pos,
                ));
            }
            active.push(key);
        }
        let r = self.load(engine, path, &file, &real, pos);
        self.active.lock().unwrap_or_else(|p| p.into_inner()).pop();
        r
    }
}

impl SandboxResolver {
    fn load(
        &self,
        engine: &Engine,
        path: &str,
        file: &str,
        real: &std::path::Path,
        pos: Position,
    ) -> Result<Shared<Module>, Box<EvalAltResult>> {
        let text = crate::budget::read_bounded(real)
            .map_err(|err| in_module(path, format!("import: cannot read {file}: {err}"), pos))?;
        let text = crate::safe_fs::normalise_text(&text);
        self.state.keep_module_text(file, &text);
        let mut ast = engine.compile(&*text).map_err(|err| {
            Box::new(EvalAltResult::ErrorInModule(
                path.to_string(),
                err.into(),
                pos,
            ))
        })?;
        ast.set_source(file);
        let m = Module::eval_ast_as_new(rhai::Scope::new(), &ast, engine)
            .map_err(|err| Box::new(EvalAltResult::ErrorInModule(path.to_string(), err, pos)))?;
        Ok(m.into())
    }
}
