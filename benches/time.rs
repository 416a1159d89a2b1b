//! Time-domain benchmarks (plain harness, medians of repeated runs; never a timed test).
//!
//! `cargo bench --bench time` prints:
//! - linear simulation of a seeded 10-state, single-input, single-output model over
//!   1,000,000 samples (zero-order and linear hold, states not kept), in ns per sample;
//! - the reference: a plain f64 multiply-add loop (y[i] += a[i]·s over contiguous arrays,
//!   the same axpy shape as the simulation's inner loop) of the same n² + n·m count per
//!   sample, measured on this machine; the ratio simulation / reference says how close the
//!   loop is to that limit (1.0 = as fast as bare multiply-adds; the simulation also does
//!   the output's p·(n + m) and, with the linear hold, another n·m);
//! - Robertson's stiff kinetics to t = 40 with the stiff method (rtol 1e-8, atol 1e-12).

use nalgebra::DMatrix;
use statebook::numeric::lti::system::StateSpace;
use statebook::numeric::time::ode::{integrate_ode, OdeMethod, OdeOptions};
use statebook::numeric::time::simulate::{simulate, Hold, SimulationOptions};
use std::hint::black_box;

mod common;
#[allow(unused_imports)]
use common::{median, time};

fn lcg(seed: &mut u64) -> f64 {
    *seed = seed
        .wrapping_mul(6364136223846793005)
        .wrapping_add(1442695040888963407);
    ((*seed >> 11) as f64 / (1u64 << 53) as f64) * 2.0 - 1.0
}

/// A stable 10-state model: random entries shifted left so every eigenvalue has Re < 0.
fn model(n: usize) -> StateSpace {
    let mut s = 7u64;
    let a = DMatrix::from_fn(n, n, |i, j| {
        0.3 * lcg(&mut s) - if i == j { 2.0 } else { 0.0 }
    });
    let b = DMatrix::from_fn(n, 1, |_, _| lcg(&mut s));
    let c = DMatrix::from_fn(1, n, |_, _| lcg(&mut s));
    StateSpace::new(a, b, c, DMatrix::zeros(1, 1), 0.0).expect("model")
}

/// `count` multiply-adds per repetition in the axpy shape of the simulation loop.
fn reference_loop(count: usize, reps: usize) -> f64 {
    let a: Vec<f64> = (0..count).map(|k| 1e-3 * k as f64).collect();
    let mut y = [0.0; 10];
    let mut s = 0.5;
    for _ in 0..reps {
        for chunk in black_box(&a).chunks_exact(10) {
            for (yi, &ai) in y.iter_mut().zip(chunk) {
                *yi += ai * s;
            }
        }
        s = black_box(y[0] * 1e-300 + 0.5);
    }
    y.iter().sum()
}

fn main() {
    let (n, m, samples) = (10usize, 1usize, 1_000_000usize);
    let sys = model(n);
    let t: Vec<f64> = (0..samples).map(|k| k as f64 * 1e-3).collect();
    let u = DMatrix::from_fn(samples, m, |k, _| ((k as f64) * 1e-3).sin());
    let madds = n * n + n * m;

    let reference = time(5, || {
        black_box(reference_loop(madds, samples));
    });
    let ref_ns = reference.as_secs_f64() * 1e9 / samples as f64;
    println!(
        "reference: {madds} multiply-adds (axpy) per sample: {ref_ns:.1} ns/sample ({:.2} ns per \
         multiply-add)",
        ref_ns / madds as f64
    );
    for (name, hold) in [("zoh", Hold::Zoh), ("linear", Hold::Linear)] {
        let d = time(5, || {
            let r = simulate(
                &sys,
                &t,
                &u,
                None,
                SimulationOptions {
                    hold: Some(hold),
                    keep_states: false,
                },
            )
            .expect("simulation");
            black_box(r.y[(samples - 1, 0)]);
        });
        let ns = d.as_secs_f64() * 1e9 / samples as f64;
        println!(
            "simulate n = {n}, m = 1, p = 1, {samples} samples, {name} hold: {:.1} ms, {ns:.1} \
             ns/sample, ratio to reference {:.2}",
            d.as_secs_f64() * 1e3,
            ns / ref_ns
        );
    }

    let mut rob = |_t: f64, y: &[f64], d: &mut [f64]| -> Result<(), String> {
        d[0] = -0.04 * y[0] + 1e4 * y[1] * y[2];
        d[1] = 0.04 * y[0] - 1e4 * y[1] * y[2] - 3e7 * y[1] * y[1];
        d[2] = 3e7 * y[1] * y[1];
        Ok(())
    };
    let options = OdeOptions {
        method: OdeMethod::Stiff,
        rtol: 1e-8,
        atol: 1e-12,
        ..OdeOptions::default()
    };
    let mut steps = 0;
    let d = time(5, || {
        let sol = integrate_ode(&mut rob, &[1.0, 0.0, 0.0], 40.0, &options).expect("robertson");
        steps = sol.stats.steps;
        black_box(sol.x.len());
    });
    println!(
        "Robertson to t = 40, stiff method (rtol 1e-8, atol 1e-12): {:.2} ms, {steps} steps",
        d.as_secs_f64() * 1e3
    );
}
