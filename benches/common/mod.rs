//! Timing helpers shared by the plain benchmark harnesses.

use std::time::{Duration, Instant};

/// The median of a set of durations.
pub fn median(mut v: Vec<Duration>) -> Duration {
    v.sort();
    v[v.len() / 2]
}

/// Median wall time of `runs` calls of `f`, after one warm-up call.
pub fn time<F: FnMut()>(runs: usize, mut f: F) -> Duration {
    f();
    median(
        (0..runs)
            .map(|_| {
                let t = Instant::now();
                f();
                t.elapsed()
            })
            .collect(),
    )
}
