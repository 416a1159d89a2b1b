//! Speed-up of `sweep` on several threads for a realistic case: per case, a 20-state
//! model (a chain of ten spring–mass–damper stages, invented) is built in script, its
//! modes computed (balanced real Schur eigenvalues) and the worst damping taken.
//!
//! `cargo bench --bench sweep` prints the median wall time of 3 runs of a 400-case sweep
//! on 1 thread, on 2 threads and on every core, and the speed-ups.

use statebook::{Session, SessionOptions};
use std::time::{Duration, Instant};

const SETUP: &str = r#"
fn chain_model(k, c, n) {
    let A = zero_matrix(2 * n, 2 * n);
    for i in 0..n {
        A.set(2 * i, 2 * i + 1, 1.0);
        A.set(2 * i + 1, 2 * i, -2.0 * k * (1.0 + 0.03 * i));
        A.set(2 * i + 1, 2 * i + 1, -2.0 * c);
        if i > 0 { A.set(2 * i + 1, 2 * i - 2, k); A.set(2 * i + 1, 2 * i - 1, c); }
        if i + 1 < n { A.set(2 * i + 1, 2 * i + 2, k); A.set(2 * i + 1, 2 * i + 3, c); }
    }
    state_space(A, zero_matrix(2 * n, 1), zero_matrix(1, 2 * n), 0)
}
fn chain_case(p) {
    let worst = 1.0;
    for m in modes(chain_model(p.k, p.c, 10)) {
        if m.damping < worst { worst = m.damping; }
    }
    #{ worst_damping: worst }
}
let grid = #{ k: linear_grid(50, 150, 20), c: linear_grid(0.05, 0.5, 20) };
"#;

fn median(mut v: Vec<Duration>) -> Duration {
    v.sort();
    v[v.len() / 2]
}

fn time(s: &mut Session, options: &str) -> Duration {
    let code = format!("sweep(grid, chain_case, {options}).len()");
    let _ = s.eval(&code); // warm-up
    median(
        (0..3)
            .map(|_| {
                let t = Instant::now();
                let r = s.eval(&code);
                assert!(r.is_ok(), "{:?}", r.err().map(|e| e.message));
                t.elapsed()
            })
            .collect(),
    )
}

fn main() {
    let mut s = Session::new(&SessionOptions::default());
    if let Err(e) = s.eval(SETUP) {
        eprintln!("setup failed: {}", e.message);
        return;
    }
    let one = time(&mut s, "#{ parallel: false }");
    let two = time(&mut s, "#{ threads: 2 }");
    let all = time(&mut s, "#{}");
    let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
    println!(
        "sweep 400 cases, 20-state modes: 1 thread {:>8.1} ms",
        one.as_secs_f64() * 1e3
    );
    println!(
        "                                 2 threads {:>7.1} ms  speed-up {:.2}×",
        two.as_secs_f64() * 1e3,
        one.as_secs_f64() / two.as_secs_f64()
    );
    println!(
        "                                 {cores} cores {:>9.1} ms  speed-up {:.2}×",
        all.as_secs_f64() * 1e3,
        one.as_secs_f64() / all.as_secs_f64()
    );
}
