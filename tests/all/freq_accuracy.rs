//! Frequency response at rounding level (issue 13, item 4): the Hessenberg evaluation
//! (`FrequencyEvaluator`, Laub 1981) against independent references.
//!
//! Sources of the expected values, per test:
//! - `dc_gain_of_a_realized_transfer_function`: the closed form G(0) = b₀/a₀ of the
//!   transfer function (ratio of the constant coefficients);
//! - `transfer_function_closed_form`: num(jω)/den(jω) by Horner's rule on the coefficients
//!   (exactly representable data, so the realization adds no rounding of its own);
//! - `scaled_copies_against_dense_solves`: a dense complex LU solve per point
//!   (`dense_point`) on the well-scaled original, compared with the evaluator on copies
//!   whose states are rescaled by exact powers of two (a similarity that changes no
//!   input–output value, common practice, no source).

use nalgebra::{Complex, DMatrix};
use statebook::numeric::freq::response::{dense_point, point_of, FrequencyEvaluator};
use statebook::numeric::lti::realize::from_transfer_function;
use statebook::numeric::lti::system::StateSpace;
use statebook::numeric::lti::tf::TransferFunction;

type C64 = Complex<f64>;

fn horner(c: &[f64], s: C64) -> C64 {
    c.iter().fold(C64::new(0.0, 0.0), |acc, &x| acc * s + x)
}

/// κ = Σ|cᵢ xᵢ| / |C x + D| of a SISO model at s, with x = (sI − A)⁻¹ B by a dense solve.
fn cancellation(sys: &StateSpace, s: C64) -> f64 {
    let n = sys.order();
    let m = DMatrix::<C64>::identity(n, n) * s - sys.a.map(|v| C64::new(v, 0.0));
    let x = m
        .lu()
        .solve(&sys.b.map(|v| C64::new(v, 0.0)))
        .expect("dense solve");
    let sum: f64 = (0..n).map(|i| (sys.c[(0, i)] * x[(i, 0)]).norm()).sum();
    let g: C64 = (0..n).map(|i| x[(i, 0)] * sys.c[(0, i)]).sum::<C64>() + sys.d[(0, 0)];
    (sum + sys.d[(0, 0)].abs()) / g.norm()
}

fn rel(a: C64, b: C64) -> f64 {
    (a - b).norm() / b.norm()
}

/// Transfer functions with integer-valued coefficients: low-passes, a lightly damped
/// anti-resonance and resonance, a band-pass.
fn cases() -> Vec<(Vec<f64>, Vec<f64>)> {
    vec![
        // 200/((s + 1)(s + 2)(s + 5)) · 10 → DC gain 200.
        (vec![2000.0], vec![1.0, 8.0, 17.0, 10.0]),
        // 200 (s² + 0.02 s + 4) / ((s² + 0.4 s + 1)(s + 4)): anti-resonance at 2 rad/s, DC 200.
        (vec![200.0, 4.0, 800.0], vec![1.0, 4.4, 2.6, 4.0]),
        // The same with a deeper notch: 200 (s² + 0.0004 s + 4)/(…), |G(2j)| ≈ 0.02.
        (vec![200.0, 0.08, 800.0], vec![1.0, 4.4, 2.6, 4.0]),
        // third-order low-pass at 10 rad/s: 1000/(s³ + 20 s² + 200 s + 1000), DC 1.
        (vec![1e3], vec![1.0, 20.0, 200.0, 1e3]),
        // (s⁴ + 3 s³ + 50 s² + 20 s + 400)/(s⁵ + 6 s⁴ + 60 s³ + 150 s² + 500 s + 2): DC 200.
        (
            vec![1.0, 3.0, 50.0, 20.0, 400.0],
            vec![1.0, 6.0, 60.0, 150.0, 500.0, 2.0],
        ),
    ]
}

#[test]
fn dc_gain_of_a_realized_transfer_function() {
    for (num, den) in cases() {
        let tf = TransferFunction::new(&num, &den, 0.0).unwrap_or_else(|e| panic!("{e}"));
        let sys = from_transfer_function(&tf).unwrap_or_else(|e| panic!("{e}"));
        let ev = FrequencyEvaluator::new(&sys).unwrap_or_else(|e| panic!("{e}"));
        let g = ev.at_frequency(0.0)[(0, 0)];
        let want = num[num.len() - 1] / den[den.len() - 1];
        let e = rel(g, C64::new(want, 0.0));
        assert!(
            e < 1e-14,
            "{num:?}/{den:?}: G(0) = {g} against {want}, relative {e:.1e}"
        );
    }
}

#[test]
fn transfer_function_closed_form() {
    let mut worst = 0.0f64;
    for (num, den) in cases() {
        let tf = TransferFunction::new(&num, &den, 0.0).unwrap_or_else(|e| panic!("{e}"));
        let sys = from_transfer_function(&tf).unwrap_or_else(|e| panic!("{e}"));
        let ev = FrequencyEvaluator::new(&sys).unwrap_or_else(|e| panic!("{e}"));
        for k in 0..=121 {
            // ω = 2 rad/s (the notches) last.
            let w = if k == 121 {
                2.0
            } else {
                10f64.powf(-3.0 + 7.0 * k as f64 / 120.0)
            };
            let s = C64::new(0.0, w);
            let want = horner(&num, s) / horner(&den, s);
            let e = rel(ev.at_point(s)[(0, 0)], want);
            worst = worst.max(e);
            // In a notch G = C x is a cancelling sum: no method with exactly rounded data
            // does better than about ε·κ, κ = Σ|cᵢ xᵢ| / |G| (x from a dense solve).
            let tol = 1e-13f64.max(4.0 * f64::EPSILON * cancellation(&sys, s));
            assert!(
                e < tol,
                "{num:?}/{den:?} at ω = {w}: relative {e:.1e} (allowed {tol:.1e})"
            );
        }
    }
    eprintln!("worst relative difference against the closed form: {worst:.1e}");
}

fn lcg(seed: &mut u64) -> f64 {
    *seed = seed
        .wrapping_mul(6364136223846793005)
        .wrapping_add(1442695040888963407);
    ((*seed >> 11) as f64 / (1u64 << 53) as f64) * 2.0 - 1.0
}

#[test]
fn scaled_copies_against_dense_solves() {
    let mut seed = 11u64;
    let mut worst = 0.0f64;
    for &n in &[2usize, 3, 5, 8, 13, 20] {
        for _ in 0..4 {
            let a = DMatrix::from_fn(n, n, |_, _| lcg(&mut seed)) / (n as f64).sqrt()
                - DMatrix::identity(n, n) * 0.7;
            let b = DMatrix::from_fn(n, 2, |_, _| lcg(&mut seed));
            let c = DMatrix::from_fn(2, n, |_, _| lcg(&mut seed));
            let d = DMatrix::from_fn(2, 2, |_, _| lcg(&mut seed));
            let sys = StateSpace::new(a.clone(), b.clone(), c.clone(), d.clone(), 0.0)
                .unwrap_or_else(|e| panic!("{e}"));
            // States rescaled by 2^k, k from −20 to 20 (exact: powers of two).
            let t: Vec<f64> = (0..n)
                .map(|i| 2f64.powi(-20 + (40 * i / (n - 1).max(1)) as i32))
                .collect();
            let scaled = StateSpace::new(
                DMatrix::from_fn(n, n, |i, j| a[(i, j)] * t[j] / t[i]),
                DMatrix::from_fn(n, 2, |i, j| b[(i, j)] / t[i]),
                DMatrix::from_fn(2, n, |i, j| c[(i, j)] * t[j]),
                d,
                0.0,
            )
            .unwrap_or_else(|e| panic!("{e}"));
            for copy in [&sys, &scaled] {
                let ev = FrequencyEvaluator::new(copy).unwrap_or_else(|e| panic!("{e}"));
                for k in 0..=40 {
                    let w = if k == 0 {
                        0.0
                    } else {
                        10f64.powf(-3.0 + 6.0 * k as f64 / 40.0)
                    };
                    let s = point_of(w, 0.0);
                    let want = dense_point(&sys, s).expect("dense solve");
                    let got = ev.at_point(s);
                    let e = (&got - &want).norm() / want.norm();
                    worst = worst.max(e);
                    assert!(e < 1e-13, "n = {n}, ω = {w}: relative {e:.1e}");
                }
            }
        }
    }
    eprintln!("worst relative difference against dense solves: {worst:.1e}");
}
