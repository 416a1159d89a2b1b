//! Step metrics from the exact response (issue 13, item 3). Sources of the expected values:
//! - second order ωn²/(s² + 2ζωn s + ωn²): overshoot 100·exp(−ζπ/√(1−ζ²)) % and peak time
//!   π/(ωn√(1−ζ²)) (closed forms of the standard second-order step response); rise and
//!   settling times from the closed-form response
//!   y(t) = 1 − e^{−ζωn t}(cos ωd t + ζ/√(1−ζ²) sin ωd t), checked at the reported times
//!   (the response equals the level there, and is on the right side just before/after);
//! - fast + slow and triple-pole models: the response evaluated exactly by the matrix
//!   exponential (nalgebra's `exp`, independent of the code under test) on a fine grid.

use nalgebra::DMatrix;
use statebook::assert_close;
use statebook::numeric::lti::system::StateSpace;
use statebook::numeric::time::metrics::model_step_metrics;
use std::f64::consts::PI;

fn second_order(zeta: f64, wn: f64) -> StateSpace {
    StateSpace::new(
        DMatrix::from_row_slice(2, 2, &[0.0, 1.0, -wn * wn, -2.0 * zeta * wn]),
        DMatrix::from_column_slice(2, 1, &[0.0, wn * wn]),
        DMatrix::from_row_slice(1, 2, &[1.0, 0.0]),
        DMatrix::zeros(1, 1),
        0.0,
    )
    .unwrap_or_else(|e| panic!("{e}"))
}

fn closed(zeta: f64, wn: f64, t: f64) -> f64 {
    let root = (1.0 - zeta * zeta).sqrt();
    let wd = wn * root;
    1.0 - (-zeta * wn * t).exp() * ((wd * t).cos() + zeta / root * (wd * t).sin())
}

/// Time rescaled: ωn from 1e-3 to 1e3 rad/s gives the same overshoot and times scaled by
/// 1/ωn (the closed forms), to 1e-8 relative.
#[test]
fn second_order_metrics_follow_a_rescaled_time_axis() {
    for &zeta in &[1e-3, 0.2, 0.7] {
        let root = (1.0f64 - zeta * zeta).sqrt();
        let os = 100.0 * (-zeta * PI / root).exp();
        let at_one = model_step_metrics(&second_order(zeta, 1.0), None)
            .unwrap_or_else(|e| panic!("{e}"))[0]
            .metrics;
        for &wn in &[1e-3, 3.0, 10.0, 1e3] {
            let m = model_step_metrics(&second_order(zeta, wn), None)
                .unwrap_or_else(|e| panic!("{e}"))[0]
                .metrics;
            let tp = PI / (wn * root);
            assert_close!(m.overshoot, os, 0.0, 1e-8, "ζ = {zeta}, ωn = {wn}");
            assert_close!(m.peak_time, tp, 0.0, 1e-8, "ζ = {zeta}, ωn = {wn}");
            for (got, unit) in [
                (m.rise_time, at_one.rise_time),
                (m.settling_time, at_one.settling_time),
            ] {
                let want = unit / wn;
                assert_close!(
                    got,
                    want,
                    0.0,
                    1e-8,
                    "ζ = {zeta}, ωn = {wn}: {got} vs {want}"
                );
            }
            assert_close!(m.final_value, 1.0, 1e-12, 0.0);
        }
    }
}

#[test]
fn second_order_closed_forms_from_light_to_heavy_damping() {
    for &zeta in &[1e-5, 1e-4, 1e-3, 0.01, 0.1, 0.3, 0.5, 0.7, 0.9] {
        let wn = 1.0;
        let m = model_step_metrics(&second_order(zeta, wn), None).unwrap_or_else(|e| panic!("{e}"))
            [0]
        .metrics;
        let root = (1.0f64 - zeta * zeta).sqrt();
        let os = 100.0 * (-zeta * PI / root).exp();
        let tp = PI / (wn * root);
        assert_close!(
            m.overshoot,
            os,
            0.0,
            1e-8,
            "ζ = {zeta}: overshoot {} vs {os}",
            m.overshoot
        );
        assert_close!(
            m.peak_time,
            tp,
            0.0,
            1e-8,
            "ζ = {zeta}: peak time {} vs {tp}",
            m.peak_time
        );
        // Rise: the crossings of 0.1 and 0.9 lie before the first peak, where y is increasing.
        let t10 = bisect(|t| closed(zeta, wn, t) - 0.1, 0.0, tp);
        let t90 = bisect(|t| closed(zeta, wn, t) - 0.9, 0.0, tp);
        let rise = t90 - t10;
        assert_close!(
            m.rise_time,
            rise,
            0.0,
            1e-8,
            "ζ = {zeta}: rise {} vs {rise}",
            m.rise_time
        );
        // Settling: |y − 1| = 0.02 at the reported time, and within the band on a fine grid
        // after it up to where the envelope e^{−ζωn t}/√(1−ζ²) guarantees it.
        let ts = m.settling_time;
        let dev = |t: f64| (closed(zeta, wn, t) - 1.0).abs();
        assert_close!(
            dev(ts),
            0.02,
            1e-7,
            0.0,
            "ζ = {zeta}: deviation {} at ts = {ts}",
            dev(ts)
        );
        let t_env = (0.02 * root).ln() / (-zeta * wn);
        let steps = 200_000;
        for k in 1..=steps {
            let t = ts + (t_env - ts).max(0.0) * k as f64 / steps as f64;
            assert!(
                dev(t) <= 0.02 + 1e-9,
                "ζ = {zeta}: leaves the band at t = {t} after ts = {ts}"
            );
        }
        // The sampled-before-ts side: a fine look one period before ts finds |y − 1| ≥ 0.02.
        let before = (0..2000)
            .map(|k| dev(ts - 2.0 * PI * k as f64 / 2000.0))
            .fold(0.0, f64::max);
        assert!(
            before >= 0.02 - 1e-9,
            "ζ = {zeta}: settled before ts = {ts}"
        );
    }
}

fn bisect(f: impl Fn(f64) -> f64, mut lo: f64, mut hi: f64) -> f64 {
    let flo = f(lo) > 0.0;
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if (f(mid) > 0.0) == flo {
            lo = mid
        } else {
            hi = mid
        }
    }
    0.5 * (lo + hi)
}

/// y(t) = C A⁻¹(e^{At} − I) B + D by nalgebra's matrix exponential.
fn exact(sys: &StateSpace, t: f64) -> f64 {
    let ainv = sys.a.clone().try_inverse().expect("stable A is invertible");
    let e = (&sys.a * t).exp();
    (&sys.c * ainv * (e - DMatrix::identity(sys.order(), sys.order())) * &sys.b)[(0, 0)]
        + sys.d[(0, 0)]
}

#[test]
fn fast_resonance_beside_a_slow_lag() {
    // A drive (invented): resonance ωr = 1000 rad/s (a 6 ms period), ζ = 0.2, in series with
    // the lag–lead (100 s + 1)/(70 s + 1): early gain 100/70, final value 1.
    let (w, z) = (1000.0, 0.2);
    let a = DMatrix::from_row_slice(
        3,
        3,
        &[
            0.0,
            1.0,
            0.0,
            -w * w,
            -2.0 * z * w,
            0.0,
            1.0 / 70.0,
            0.0,
            -1.0 / 70.0,
        ],
    );
    // Output (100 s + 1)/(70 s + 1) of the resonance output x₁: y = (100/70) x₁ + (1 − 100/70) x₃.
    let sys = StateSpace::new(
        a,
        DMatrix::from_column_slice(3, 1, &[0.0, w * w, 0.0]),
        DMatrix::from_row_slice(1, 3, &[100.0 / 70.0, 0.0, 1.0 - 100.0 / 70.0]),
        DMatrix::zeros(1, 1),
        0.0,
    )
    .unwrap_or_else(|e| panic!("{e}"));
    let m = model_step_metrics(&sys, None).unwrap_or_else(|e| panic!("{e}"))[0].metrics;
    // Fine exact look at the first 20 ms.
    let (mut best, mut tbest) = (f64::NEG_INFINITY, 0.0);
    for k in 0..=200_000 {
        let t = 0.02 * k as f64 / 200_000.0;
        let y = exact(&sys, t);
        if y > best {
            best = y;
            tbest = t;
        }
    }
    let os = 100.0 * (best - 1.0);
    assert!(os > 40.0, "reference overshoot {os}");
    assert_close!(
        m.overshoot,
        os,
        0.0,
        1e-6,
        "overshoot {} vs {os}",
        m.overshoot
    );
    assert_close!(
        m.peak_time,
        tbest,
        1e-6,
        0.0,
        "peak time {} vs {tbest}",
        m.peak_time
    );
}

#[test]
fn triple_pole_settles_within_the_horizon() {
    // 1/(s + 1)³ as a chain of three lags; settling from the exact response on a fine grid.
    let a = DMatrix::from_row_slice(3, 3, &[-1.0, 0.0, 0.0, 1.0, -1.0, 0.0, 0.0, 1.0, -1.0]);
    let sys = StateSpace::new(
        a,
        DMatrix::from_column_slice(3, 1, &[1.0, 0.0, 0.0]),
        DMatrix::from_row_slice(1, 3, &[0.0, 0.0, 1.0]),
        DMatrix::zeros(1, 1),
        0.0,
    )
    .unwrap_or_else(|e| panic!("{e}"));
    let m = model_step_metrics(&sys, None).unwrap_or_else(|e| panic!("{e}"))[0].metrics;
    // Monotone response: the settling time is the crossing of 0.98.
    let ts = bisect(|t| exact(&sys, t) - 0.98, 0.0, 30.0);
    assert_close!(
        m.settling_time,
        ts,
        0.0,
        1e-8,
        "settling {} vs {ts}",
        m.settling_time
    );
    let t10 = bisect(|t| exact(&sys, t) - 0.1, 0.0, 30.0);
    let t90 = bisect(|t| exact(&sys, t) - 0.9, 0.0, 30.0);
    assert_close!(m.rise_time, (t90 - t10), 0.0, 1e-8, "rise {}", m.rise_time);
}

#[test]
fn final_value_of_zero_gives_nan_with_a_note() {
    // s/(s + 1)² as ξ₁' = −ξ₁ + u, x₂' = −x₂ + ξ₁, y = ξ₁ − x₂ with ξ₁ = 10⁻³ x₁: the step
    // response returns to 0 (the computed DC gain is 0 or of rounding size).
    let sys = StateSpace::new(
        DMatrix::from_row_slice(2, 2, &[-1.0, 0.0, 1e-3, -1.0]),
        DMatrix::from_column_slice(2, 1, &[1e3, 0.0]),
        DMatrix::from_row_slice(1, 2, &[1e-3, -1.0]),
        DMatrix::zeros(1, 1),
        0.0,
    )
    .unwrap_or_else(|e| panic!("{e}"));
    let m = model_step_metrics(&sys, None).unwrap_or_else(|e| panic!("{e}"))[0].metrics;
    assert!(m.overshoot.is_nan() && m.rise_time.is_nan(), "{m:?}");
    assert!(m.note.is_some());
}
