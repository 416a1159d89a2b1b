//! The panic guard at the engine boundary, and the one panic hook of the binary.
//!
//! Numerics never panic on user input by design; this is the net under that rule. Every
//! evaluation runs on its own thread with a large stack ([`STACK_BYTES`]), so that the
//! engine's call-depth and expression-depth limits are reached long before the native
//! stack runs out, and inside `catch_unwind`, so that a missed case becomes an internal
//! error that names the line (see `Session::eval`) instead of a crash.
//!
//! [`install_panic_hook`] (called by `main`) keeps caught panics quiet (their message
//! goes into the internal-error report) and turns a panic anywhere else into an
//! `error: internal error …` message and exit code 1, never Rust's 101.

use std::cell::{Cell, RefCell};

/// Stack size of the thread each evaluation runs on (virtual memory; only the pages used
/// are ever touched).
pub const STACK_BYTES: usize = 64 * 1024 * 1024;

/// Native stack reserved per level of script function calls: the deepest frames measured
/// (a recursive function whose body builds nested arrays and maps inside a nested
/// expression) take ~8 KiB a level in release builds; this leaves a fourfold margin.
pub const STACK_PER_CALL_LEVEL: usize = 32 * 1024;

/// Highest call-depth limit accepted (its stack is reserved as virtual memory).
pub const MAX_CALL_DEPTH: usize = 20_000;

/// The stack an evaluation with call-depth limit `call_depth` runs on.
pub fn stack_for(call_depth: usize) -> usize {
    STACK_BYTES.max(call_depth.saturating_mul(STACK_PER_CALL_LEVEL))
}

thread_local! {
    static GUARDED: Cell<bool> = const { Cell::new(false) };
    static LAST_PANIC: RefCell<Option<String>> = const { RefCell::new(None) };
}

/// The words of a panic payload and, when known, where in statebook it happened.
fn describe(info: &std::panic::PanicHookInfo<'_>) -> String {
    let payload = info.payload();
    let what = payload
        .downcast_ref::<String>()
        .cloned()
        .or_else(|| payload.downcast_ref::<&str>().map(|s| s.to_string()))
        .unwrap_or_else(|| "unknown".into());
    match info.location() {
        // statebook's own files are named relative to the crate root; a panic inside a
        // dependency would name a path on the build machine, which helps no user.
        Some(l) if l.file().starts_with("src/") => format!("{what}, at {}:{}", l.file(), l.line()),
        _ => what,
    }
}

/// Installs the process-wide panic hook: quiet inside a guarded evaluation (the message
/// is kept for the error report); elsewhere an internal-error message on stderr and exit
/// code 1.
pub fn install_panic_hook() {
    std::panic::set_hook(Box::new(|info| {
        let text = describe(info);
        if GUARDED.with(Cell::get) {
            LAST_PANIC.with(|p| *p.borrow_mut() = Some(text));
            return;
        }
        eprintln!(
            "error: internal error: statebook failed ({text})\nhint: please report it with \
             the analysis file or the commands that led to it"
        );
        std::process::exit(1);
    }));
}

/// Runs `f` on this thread under `catch_unwind`, marked as guarded (the panic hook then
/// keeps quiet instead of ending the process). Returns the panic's description when it
/// panicked. Sweep workers run each case through this.
pub fn catch<R>(f: impl FnOnce() -> R) -> Result<R, String> {
    let was = GUARDED.with(|g| g.replace(true));
    let r = std::panic::catch_unwind(std::panic::AssertUnwindSafe(f));
    GUARDED.with(|g| g.set(was));
    r.map_err(|payload| {
        LAST_PANIC
            .with(|p| p.borrow_mut().take())
            .unwrap_or_else(|| {
                payload
                    .downcast_ref::<String>()
                    .cloned()
                    .or_else(|| payload.downcast_ref::<&str>().map(|s| s.to_string()))
                    .unwrap_or_else(|| "unknown".into())
            })
    })
}

/// Runs `f` on a fresh thread with a stack of `stack_bytes`, catching panics. Returns the
/// panic's description when it panicked.
pub fn run<R: Send>(stack_bytes: usize, f: impl FnOnce() -> R + Send) -> Result<R, String> {
    std::thread::scope(|s| {
        let worker = std::thread::Builder::new()
            .name("statebook-eval".into())
            .stack_size(stack_bytes)
            .spawn_scoped(s, || catch(f));
        match worker {
            Ok(handle) => handle
                .join()
                .unwrap_or_else(|_| Err("the evaluation thread failed".into())),
            Err(e) => Err(format!("cannot start the evaluation thread: {e}")),
        }
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn values_and_panics() {
        assert_eq!(run(STACK_BYTES, || 2 + 2), Ok(4));
        let e = run(STACK_BYTES, || -> i32 { panic!("boom") }).unwrap_err();
        assert!(e.contains("boom"), "{e}");
    }

    #[test]
    fn deep_native_recursion_fits() {
        fn depth(n: u64) -> u64 {
            let pad = std::hint::black_box([n; 64]);
            if n == 0 {
                0
            } else {
                1 + depth(n - 1) + pad[63] - n
            }
        }
        // ~0.5 KiB a frame: far more than the default 2 MiB test thread would hold.
        assert_eq!(run(STACK_BYTES, || depth(40_000)), Ok(40_000));
    }
}
