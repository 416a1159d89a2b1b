//! Builds the rhai `Engine` of one session: limits, sandboxed imports, engineer-friendly
//! arithmetic, every built-in, and the embedded standard library.

use super::builtins;
use super::show;
use super::state::{SessionState, StateHandle};
use super::types::{Complex, ComplexMatrix, Matrix};
use crate::notebook::output::Output;
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
    e.set_max_string_size(limits.string_size);
    e.set_max_array_size(limits.array_size);
    e.set_max_map_size(limits.array_size);
    e.set_max_expr_depths(256, 256);
    e.set_default_tag(Dynamic::from(StateHandle(state.clone())));

    let s = state.clone();
    e.on_print(move |t| s.push(Output::Text(t.to_string())));
    let s = state.clone();
    e.on_debug(move |t, _, _| s.push(Output::Text(t.to_string())));
    let s = state.clone();
    e.on_progress(move |ops| {
        s.operations.store(ops, Ordering::Relaxed);
        match deadline {
            Some(deadline) if ops % 4096 == 0 && Instant::now() >= deadline => {
                Some(Dynamic::from("the run exceeded its --timeout".to_string()))
            }
            _ => None,
        }
    });
    e.set_module_resolver(SandboxResolver {
        state: state.clone(),
    });

    builtins::arith::register(&mut e);
    builtins::matrix::register(&mut e);
    builtins::complex::register(&mut e);
    builtins::linalg::register(&mut e);
    builtins::lti::register(&mut e);
    builtins::output::register(&mut e, state);
    builtins::plot::register(&mut e);
    builtins::files::register(&mut e);
    builtins::time::register(&mut e);
    builtins::freq::register(&mut e);
    builtins::design::register(&mut e);
    builtins::model_plots::register(&mut e);
    builtins::sweep::register(&mut e);
    builtins::stats::register(&mut e);
    register_display(&mut e, state);
    super::nesting::register(&mut e);
    super::stdlib::load(&mut e);
    e
}

/// `to_string`/`to_debug` of the value types use the session's display style, so `print`
/// and string interpolation agree with `show`.
fn register_display(e: &mut Engine, state: &Arc<SessionState>) {
    macro_rules! disp {
        ($t:ty) => {{
            let s = state.clone();
            e.register_fn("to_string", move |v: &mut $t| {
                show::format(&Dynamic::from(v.clone()), s.style())
            });
            let s = state.clone();
            e.register_fn("to_debug", move |v: &mut $t| {
                show::format(&Dynamic::from(v.clone()), s.style())
            });
        }};
    }
    disp!(Matrix);
    disp!(Complex);
    disp!(ComplexMatrix);
    disp!(super::types::System);
    disp!(super::types::TransferFunction);
}

/// Resolves `import "name" as m;` to `name.sbook` inside the sandbox.
struct SandboxResolver {
    state: Arc<SessionState>,
}

impl ModuleResolver for SandboxResolver {
    fn resolve(
        &self,
        engine: &Engine,
        _source: Option<&str>,
        path: &str,
        pos: Position,
    ) -> Result<Shared<Module>, Box<EvalAltResult>> {
        let file = if path.ends_with(".sbook") {
            path.to_string()
        } else {
            format!("{path}.sbook")
        };
        let real = self.state.sandbox.read_path(&file).map_err(|m| {
            Box::new(EvalAltResult::ErrorInModule(
                path.to_string(),
                super::convert::fail(format!("import: {m}")),
                pos,
            ))
        })?;
        let text = std::fs::read_to_string(&real).map_err(|err| {
            Box::new(EvalAltResult::ErrorInModule(
                path.to_string(),
                super::convert::fail(format!("import: cannot read {file}: {err}")),
                pos,
            ))
        })?;
        let mut ast = engine.compile(&text).map_err(|err| {
            Box::new(EvalAltResult::ErrorInModule(
                path.to_string(),
                err.into(),
                pos,
            ))
        })?;
        ast.set_source(file.as_str());
        let m = Module::eval_ast_as_new(rhai::Scope::new(), &ast, engine)
            .map_err(|err| Box::new(EvalAltResult::ErrorInModule(path.to_string(), err, pos)))?;
        Ok(m.into())
    }
}
