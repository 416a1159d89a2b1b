//! What the script layer costs on top of the kernels: the same work run from analysis
//! text through a `Session` (the engine, the conversions, the value types).
//!
//! Jobs (names as in the JSON):
//! - `script_simulate_discrete` (n = 10, 1e6 samples): `simulate(sysd, t, u)` from a
//!   script, `t` from `linear_grid` and `u` a Vector, against the kernel job
//!   `simulate_discrete` on the same model (target: within 1.3×);
//! - `script_simulate_memory`: the peak of allocated bytes during that call (the
//!   allocator's own count, sampled every 0.2 ms) over the bytes of t, u and y;
//! - `script_push` (1e5 and 1e6 `push`es): linear growth means 10× the pushes ≤ 12× time;
//! - `script_loop_call` / `script_loop_bare` (100 000 steps): a loop that calls a small
//!   built-in (`A.get(0, 0)`) per step and the same loop without the call; the difference
//!   per step is what one built-in call costs;
//! - `script_nesting` (`a = [a]`, depths 1000, 2000, 4000): the engine copies the whole
//!   value on every read, so this grows with depth²;
//! - `script_cells` (2000, 4000, 8000 one-line cells) and `script_lets` (5000, 10000,
//!   20000 `let` lines in one cell): the cost of long analysis files.

use super::{measure, Bench, Rng};
use serde_json::json;
use statebook::notebook::{files, run};
use statebook::{Session, SessionOptions};
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::sync::Arc;
use std::time::Duration;

fn session() -> Session {
    Session::new(&SessionOptions::default())
}

fn eval(s: &mut Session, code: &str) {
    if let Err(e) = s.eval(code) {
        panic!("benchmark script failed: {}", e.message);
    }
}

/// A matrix literal of the script language, with every digit of each entry.
fn literal(m: &nalgebra::DMatrix<f64>) -> String {
    let rows: Vec<String> = (0..m.nrows())
        .map(|i| {
            let r: Vec<String> = (0..m.ncols()).map(|j| format!("{:e}", m[(i, j)])).collect();
            format!("[{}]", r.join(", "))
        })
        .collect();
    format!("matrix([{}])", rows.join(", "))
}

/// The peak of bytes allocated above the level at the start while `f` runs.
fn peak_bytes(f: impl FnOnce()) -> usize {
    let base = statebook::budget::allocated();
    let peak = Arc::new(AtomicUsize::new(0));
    let done = Arc::new(AtomicBool::new(false));
    let watcher = {
        let (peak, done) = (peak.clone(), done.clone());
        std::thread::spawn(move || {
            while !done.load(Ordering::Relaxed) {
                let now = statebook::budget::allocated().saturating_sub(base);
                peak.fetch_max(now, Ordering::Relaxed);
                std::thread::sleep(Duration::from_micros(200));
            }
        })
    };
    f();
    let now = statebook::budget::allocated().saturating_sub(base);
    peak.fetch_max(now, Ordering::Relaxed);
    done.store(true, Ordering::Relaxed);
    let _ = watcher.join();
    peak.load(Ordering::Relaxed)
}

/// The script-layer jobs; `ad`, `bd`, `cm`, `dt` are the discrete simulation model of
/// the kernel job `simulate_discrete`.
pub fn script_layer(
    b: &mut Bench,
    ad: &nalgebra::DMatrix<f64>,
    bd: &nalgebra::DMatrix<f64>,
    cm: &nalgebra::DMatrix<f64>,
    dt: f64,
) {
    let q = b.opts.quick;
    if b.wanted("script_sim") {
        let steps = 1_000_000usize;
        let mut s = session();
        eval(
            &mut s,
            &format!(
                "let sysd = state_space({}, {}, {}, [[0]], {dt:e});\n\
                 let t = linear_grid(0, {}, {steps});\n\
                 let u = linear_grid(0, {}, {steps}).map(|k| sin(k));",
                literal(ad),
                literal(bd),
                literal(cm),
                (steps - 1) as f64 * dt,
                (steps - 1) as f64 * 0.01,
            ),
        );
        let t = measure(q, || {
            eval(
                &mut s,
                "let r = simulate(sysd, t, u, (), #{ states: false });",
            )
        });
        b.record("script_simulate_discrete", 10, t, json!({"steps": steps}));
        eval(&mut s, "r = ();");
        let peak = peak_bytes(|| {
            eval(
                &mut s,
                "let r = simulate(sysd, t, u, (), #{ states: false });",
            );
        });
        // t and u are held before the call; the call adds y (and whatever it copies).
        let data = 3 * steps * 8;
        let held = 2 * steps * 8;
        b.record(
            "script_simulate_memory",
            10,
            (Duration::ZERO, 1, 1),
            json!({"steps": steps, "peak_bytes_added": peak, "bytes_t_u_y": data,
                   "ratio": (peak + held) as f64 / data as f64}),
        );
    }
    if b.wanted("script_push") {
        for count in [100_000usize, 1_000_000] {
            let mut s = session();
            let code = format!("let a = []; for i in 0..{count} {{ a.push(i); }} a.len()");
            let t = measure(q, || eval(&mut s, &code));
            b.record("script_push", count, t, json!({}));
        }
    }
    if b.wanted("script_loop") {
        let steps = 100_000;
        let mut s = session();
        eval(&mut s, "let A = identity(2);");
        let call = format!("let x = 0.0; for i in 0..{steps} {{ x += A.get(0, 0); }} x");
        let bare = format!("let x = 0.0; for i in 0..{steps} {{ x += 1.0; }} x");
        let tc = measure(q, || eval(&mut s, &call));
        let tb = measure(q, || eval(&mut s, &bare));
        let per_call = (tc.0.as_secs_f64() - tb.0.as_secs_f64()) / steps as f64;
        b.record(
            "script_loop_call",
            steps,
            tc,
            json!({"iterations_per_s": steps as f64 / tc.0.as_secs_f64(),
                   "ns_per_call": per_call * 1e9}),
        );
        b.record("script_loop_bare", steps, tb, json!({}));
    }
    if b.wanted("script_nesting") {
        for depth in [1000usize, 2000, 4000] {
            let mut s = session();
            let code = format!("let a = []; for i in 0..{depth} {{ a = [a]; }} 0");
            let t = measure(true, || eval(&mut s, &code));
            b.record("script_nesting", depth, t, json!({}));
        }
    }
    if b.wanted("script_cells") || b.wanted("script_lets") {
        let dir = std::env::temp_dir().join(format!("statebook-bench-{}", std::process::id()));
        let _ = std::fs::create_dir_all(&dir);
        let mut rng = Rng(7);
        let mut file = |name: &str, n: usize, text: String| {
            let t = measure(true, || {
                let mut s = Session::new(&SessionOptions {
                    root: dir.clone(),
                    ..SessionOptions::default()
                });
                let prov = files::provenance("bench.sbook", "");
                let r = run::run_text(&mut s, &text, "bench.sbook", prov);
                assert!(run::first_error(&r).is_none(), "the generated file runs");
            });
            b.record(name, n, t, json!({"bytes": text.len()}));
        };
        for n in [2000usize, 4000, 8000] {
            let text: String = (0..n)
                .map(|k| format!("//== cell {k}\nlet v{k} = {};\n", rng.normal()))
                .collect();
            file("script_cells", n, text);
        }
        for n in [5000usize, 10000, 20000] {
            let mut text = String::from("//== one long cell\n");
            for k in 0..n {
                text.push_str(&format!("let v{k} = {};\n", rng.normal()));
            }
            file("script_lets", n, text);
        }
        let _ = std::fs::remove_dir_all(&dir);
    }
}
