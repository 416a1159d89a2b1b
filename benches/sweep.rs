//! Speed-up of `sweep` on several threads for a realistic case: per case, a 20-state
//! model (a chain of ten spring–mass–damper stages, invented) is built in script, its
//! modes computed (balanced real Schur eigenvalues) and the worst damping taken.
//!
//! `cargo bench --bench sweep` prints the best wall time of 5 interleaved runs of a
//! 400-case sweep on 1 thread, on 2 threads and on every core, and the speed-ups. On a
//! machine busy with other work the speed-up shrinks: check the load first (`uptime`).

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

fn once(s: &mut Session, options: &str) -> Duration {
    let code = format!("sweep(grid, chain_case, {options}).len()");
    let t = Instant::now();
    let r = s.eval(&code);
    assert!(r.is_ok(), "{:?}", r.err().map(|e| e.message));
    t.elapsed()
}

fn main() {
    let mut s = Session::new(&SessionOptions::default());
    if let Err(e) = s.eval(SETUP) {
        eprintln!("setup failed: {}", e.message);
        return;
    }
    let configs = ["#{ parallel: false }", "#{ threads: 2 }", "#{}"];
    for c in configs {
        once(&mut s, c); // warm-up
    }
    // Interleaved rounds, so that a change in machine load hits every configuration alike;
    // the best of 5 is the least disturbed by other processes.
    let mut best = [Duration::MAX; 3];
    for _ in 0..5 {
        for (k, c) in configs.iter().enumerate() {
            best[k] = best[k].min(once(&mut s, c));
        }
    }
    let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
    let ms = |d: Duration| d.as_secs_f64() * 1e3;
    let up = |d: Duration| best[0].as_secs_f64() / d.as_secs_f64();
    println!("sweep of 400 cases (20-state modes each), best of 5:");
    println!("  1 thread    {:>8.1} ms", ms(best[0]));
    println!(
        "  2 threads   {:>8.1} ms   speed-up {:.2}×",
        ms(best[1]),
        up(best[1])
    );
    println!(
        "  {cores} cores     {:>8.1} ms   speed-up {:.2}×",
        ms(best[2]),
        up(best[2])
    );
}
