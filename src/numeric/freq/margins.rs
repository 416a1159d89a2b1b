//! Stability margins of a SISO loop gain `L`: gain and phase margins, their crossover
//! frequencies, the delay margin, every crossing, and closed-loop stability.
//!
//! The loop is closed by unity negative feedback, `1/(1 + L)`; the critical point of the
//! Nyquist curve is `−1`.

use crate::numeric::design::interconnect::unity_feedback;
use crate::numeric::freq::grid::{
    auto_frequency_grid, brent_root, extend_grid, siso_sweep, wrap_angle, Sample, SweepParams,
};
use crate::numeric::freq::response::FrequencyEvaluator;
use crate::numeric::linalg::eigen::eigenvalues;
use crate::numeric::linalg::hammarling::stability_violation;
use crate::numeric::linalg::sylvester::MatrixEquationParams;
use crate::numeric::lti::system::StateSpace;
use crate::numeric::{NumError, NumResult};
use nalgebra::Complex;
use std::f64::consts::PI;

type C64 = Complex<f64>;

/// Base points of the automatic grid on which crossings are searched (before the adaptive
/// refinement of [`siso_sweep`]).
pub const MARGIN_GRID_POINTS: usize = 2000;

/// Largest residual accepted at a refined crossing (ln|L| for a gain crossing, radians
/// of phase for a phase crossing); a larger one marks a jump (a pole or zero on the axis),
/// not a crossing.
const CROSSING_RESIDUAL: f64 = 1e-6;

/// Crossings closer than this relative distance are one crossing.
const SAME_CROSSING: f64 = 1e-9;

/// The stability margins of a loop gain (see [`loop_margins`] for the rules).
#[derive(Debug, Clone, PartialEq)]
pub struct Margins {
    /// Gain margin as a ratio `1/|L(jω_pc)|` at [`Margins::phase_crossover`]; `∞` when the
    /// phase never reaches −180° (mod 360°).
    pub gain_margin: f64,
    /// `20·log₁₀(gain_margin)` in dB (`∞` with it).
    pub gain_margin_db: f64,
    /// Phase margin `180° + ∠L(jω_gc)`, wrapped into (−180°, 180°], in degrees, at
    /// [`Margins::gain_crossover`]; `∞` when `|L|` never crosses 1.
    pub phase_margin: f64,
    /// The gain crossover (rad/s, `|L| = 1`) of the reported phase margin; NaN when there
    /// is none.
    pub gain_crossover: f64,
    /// The phase crossover (rad/s, phase −180° mod 360°) of the reported gain margin; NaN
    /// when there is none; `∞` for the limit ω → ∞ of a continuous loop with `D < 0`.
    pub phase_crossover: f64,
    /// Delay margin in seconds: the smallest added delay `e^{−sτ}` that makes the closed
    /// loop unstable; `∞` when there is no gain crossover, 0 when the closed loop is
    /// already unstable.
    pub delay_margin: f64,
    /// Every gain crossover (rad/s), ascending.
    pub gain_crossovers: Vec<f64>,
    /// Every phase crossover (rad/s), ascending.
    pub phase_crossovers: Vec<f64>,
    /// The gain margin at each phase crossover (same order).
    pub gain_margins: Vec<f64>,
    /// The phase margin (degrees) at each gain crossover (same order).
    pub phase_margins: Vec<f64>,
    /// Whether the unity negative feedback loop `L/(1 + L)` is stable (its poles, the
    /// eigenvalues of the feedback interconnection, strictly inside the stability region).
    pub stable_closed_loop: bool,
}

/// Gain, phase and delay margins of a SISO loop gain `L` (`x' = A x + B u`, `y = C x + D u`,
/// or the discrete analogue), every crossover, and closed-loop stability.
///
/// **Mathematics.** With `L(ω) = L(jω)` (continuous) or `L(e^{jω·dt})` (discrete, for
/// `0 < ω ≤ π/dt`):
/// * gain crossovers `ω_gc`: `|L(ω)| = 1`; phase margin there `PM = 180° + ∠L(ω_gc)`,
///   wrapped into (−180°, 180°] (so it does not depend on how the phase was unwrapped);
/// * phase crossovers `ω_pc`: the continuously unwrapped phase `φ(ω)` equals
///   `−180° + k·360°` (L on the negative real axis); gain margin there `1/|L(ω_pc)|`.
///   The ends of the Nyquist curve count too: ω = 0 when `L(0)` is finite and negative;
///   ω = π/dt (discrete) when `L(−1)` is negative; ω = ∞ (continuous) when `D < 0`;
/// * **reported gain margin**: the phase crossover whose margin is closest to 1 in dB,
///   i.e. the least `|20 log₁₀ GM|` (ties: the lower frequency) — the smallest relative
///   gain change, up or down, that puts the Nyquist curve through −1;
/// * **reported phase margin**: the gain crossover with the least `|PM|`;
/// * **delay margin**: a delay τ turns `L(ω_gc)` by `−ω_gc·τ`; crossover `i` reaches
///   −1 first at `τᵢ = (PMᵢ mod 360°)[rad] / ω_gc,i` (PM mapped into [0°, 360°)); the delay
///   margin is `min τᵢ` for a stable closed loop, 0 for an unstable one, ∞ without gain
///   crossovers. For a discrete loop the same formula holds in seconds with `ω` in rad/s
///   (a delay of τ seconds is `e^{−jωτ}`; an integer delay of k samples destabilises once
///   `k·dt ≥ τ`);
/// * closed-loop stability: the poles of `L/(1 + L)` from [`unity_feedback`] (its A),
///   stable when every eigenvalue has `Re λ < 0` (`|λ| < 1`) with the margin of the
///   Lyapunov solvers (`−2 Re λ > 10⁻¹²·2‖A‖_F`, resp. `1 − |λ|² > 10⁻¹²(1 + ‖A‖_F²)`).
///   An algebraically singular loop (`1 + D = 0`) counts as not stable.
///
/// **Algorithm.** `L` is reduced to Hessenberg form once ([`FrequencyEvaluator`], Laub
/// 1981) and sampled on [`auto_frequency_grid`] (`MARGIN_GRID_POINTS` points plus
/// clusters at resonances), extended by decades ([`extend_grid`]) where `|L|` could
/// still cross 1 beyond its ends (a high-gain loop, an integrator), then [`siso_sweep`]
/// splits intervals until the phase moves by
/// at most 0.1 rad and `ln|L|` by at most 0.1 per step, so the phase is unwrapped
/// unambiguously along the grid. Every sign change of `ln|L|` and every level crossing of
/// the unwrapped phase is refined by Brent's method ([`brent_root`]; Brent 1973,
/// "Algorithms for Minimization without Derivatives") to full precision; a refined point
/// whose residual exceeds 1e-6 is a jump at a pole or zero on the axis and is dropped.
///
/// **Cost.** O(n³) once (Hessenberg form, eigenvalues for the grid and the closed loop,
/// transmission zeros), then O(n²) per sample and per root-finder step: a few thousand
/// samples and about 10–40 steps per crossing.
///
/// **Limits.** A crossing pair closer together than the resolved sweep (a tangency of
/// `|L|` to 1, or two crossings within 1e-10 relative) can be missed. Phase crossings
/// are searched on the extended grid only; beyond it the phase is constant to within
/// about 1% of a radian (two decades past every pole and zero).
///
/// **Errors.** A loop gain that is not SISO; failures of the eigenvalue computations.
pub fn loop_margins(loop_gain: &StateSpace) -> NumResult<Margins> {
    let l = loop_gain;
    if l.inputs() != 1 || l.outputs() != 1 {
        return Err(NumError::invalid(
            "loop_gain",
            format!(
                "expected a single-input single-output loop gain, found {} outputs × {} \
                 inputs; hint: take one channel first",
                l.outputs(),
                l.inputs()
            ),
        ));
    }
    let ev = FrequencyEvaluator::new(l)?;
    let mut grid = auto_frequency_grid(l, MARGIN_GRID_POINTS)?;
    extend_grid(
        &mut grid,
        |w| ev.at_frequency(w)[(0, 0)].norm().ln(),
        true,
        !l.is_discrete(),
    );
    let samples = siso_sweep(&ev, &grid, &SweepParams::default());
    let value = |w: f64| ev.at_frequency(w)[(0, 0)];

    let gain_crossovers = gain_crossings(&samples, &value);
    let phase_crossovers = phase_crossings(&samples, &value, l, &ev);

    let phase_margins: Vec<f64> = gain_crossovers
        .iter()
        .map(|&w| wrap_angle(PI + value(w).arg()).to_degrees())
        .collect();
    let gain_margins: Vec<f64> = phase_crossovers
        .iter()
        .map(|&w| {
            let v = if w.is_infinite() {
                l.d[(0, 0)].abs()
            } else if l.is_discrete() && w == PI / l.dt {
                ev.at_point(C64::new(-1.0, 0.0))[(0, 0)].norm()
            } else {
                value(w).norm()
            };
            1.0 / v
        })
        .collect();

    let stable_closed_loop = closed_loop_stable(l)?;

    let (gain_margin, phase_crossover) = pick(&gain_margins, &phase_crossovers, |g| g.ln().abs());
    let (phase_margin, gain_crossover) = pick(&phase_margins, &gain_crossovers, f64::abs);
    let delay_margin = if gain_crossovers.is_empty() {
        f64::INFINITY
    } else if !stable_closed_loop {
        0.0
    } else {
        gain_crossovers
            .iter()
            .zip(&phase_margins)
            .map(|(&w, &pm)| pm.rem_euclid(360.0).to_radians() / w)
            .fold(f64::INFINITY, f64::min)
    };
    Ok(Margins {
        gain_margin,
        gain_margin_db: if gain_margin.is_infinite() {
            f64::INFINITY
        } else {
            20.0 * gain_margin.log10()
        },
        phase_margin,
        gain_crossover,
        phase_crossover,
        delay_margin,
        gain_crossovers,
        phase_crossovers,
        gain_margins,
        phase_margins,
        stable_closed_loop,
    })
}

/// The margin minimising `key` and its frequency (first on ties); `(∞, NaN)` if none.
fn pick(margins: &[f64], freqs: &[f64], key: impl Fn(f64) -> f64) -> (f64, f64) {
    let mut best: Option<(f64, f64, f64)> = None;
    for (&m, &w) in margins.iter().zip(freqs) {
        let k = key(m);
        if best.is_none_or(|(bk, _, _)| k < bk) {
            best = Some((k, m, w));
        }
    }
    best.map_or((f64::INFINITY, f64::NAN), |(_, m, w)| (m, w))
}

/// Every refined root of `ln|L(ω)| = 0` between usable neighbouring samples.
fn gain_crossings(samples: &[Sample], value: &impl Fn(f64) -> C64) -> Vec<f64> {
    let f = |w: f64| value(w).norm().ln();
    let mut out = Vec::new();
    for pair in samples.windows(2) {
        let (s0, s1) = (pair[0], pair[1]);
        if !(s0.usable() && s1.usable()) {
            continue;
        }
        let (f0, f1) = (s0.value.norm().ln(), s1.value.norm().ln());
        if f0 == 0.0 {
            out.push(s0.w);
        } else if f1 == 0.0 {
            out.push(s1.w);
        } else if f0 * f1 < 0.0 {
            if let Some(w) = brent_root(f, s0.w, s1.w, f0, f1, 0.0) {
                let r = f(w);
                if r.is_finite() && r.abs() <= CROSSING_RESIDUAL {
                    out.push(w);
                }
            }
        }
    }
    merged(out)
}

/// Every refined crossing of the unwrapped phase through −π + 2πk, plus the ends of the
/// Nyquist curve that lie on the negative real axis.
fn phase_crossings(
    samples: &[Sample],
    value: &impl Fn(f64) -> C64,
    l: &StateSpace,
    ev: &FrequencyEvaluator,
) -> Vec<f64> {
    let mut out = Vec::new();
    // ω = 0: L(0) is real for a real model.
    let v0 = ev.at_point(C64::new(if l.is_discrete() { 1.0 } else { 0.0 }, 0.0))[(0, 0)];
    if v0.re.is_finite() && v0.im.is_finite() && v0.re < 0.0 {
        out.push(0.0);
    }
    // Unwrapped phase along the sweep; a break (unusable sample) restarts it.
    let mut phase: Option<f64> = None;
    let two_pi = 2.0 * PI;
    for (k, s) in samples.iter().enumerate() {
        if !s.usable() {
            phase = None;
            continue;
        }
        let Some(prev_phase) = phase else {
            phase = Some(s.value.arg());
            continue;
        };
        let prev = samples[k - 1];
        let phi1 = prev_phase + (s.value / prev.value).arg();
        phase = Some(phi1);
        // Levels −π + 2πj in "turns" t = (φ + π)/2π: a crossing where floor(t) changes.
        let (t0, t1) = ((prev_phase + PI) / two_pi, (phi1 + PI) / two_pi);
        if t0.fract() == 0.0 {
            out.push(prev.w);
            continue;
        }
        if t0.floor() == t1.floor() && t1.fract() != 0.0 {
            continue;
        }
        let level = -PI + two_pi * t0.max(t1).floor();
        let h = |w: f64| prev_phase + (value(w) / prev.value).arg() - level;
        let (h0, h1) = (prev_phase - level, phi1 - level);
        if let Some(w) = brent_root(h, prev.w, s.w, h0, h1, 0.0) {
            let r = h(w);
            if r.is_finite() && r.abs() <= CROSSING_RESIDUAL {
                out.push(w);
            }
        }
    }
    if l.is_discrete() {
        let v = ev.at_point(C64::new(-1.0, 0.0))[(0, 0)];
        if v.re.is_finite() && v.im.is_finite() && v.re < 0.0 {
            out.push(PI / l.dt);
        }
    } else if l.d[(0, 0)] < 0.0 {
        out.push(f64::INFINITY);
    }
    merged(out)
}

/// Sorted, with crossings closer than [`SAME_CROSSING`] relative merged (the first kept).
fn merged(mut w: Vec<f64>) -> Vec<f64> {
    w.sort_by(|a, b| a.total_cmp(b));
    w.dedup_by(|b, a| *b == *a || (*b - *a).abs() <= SAME_CROSSING * a.abs());
    w
}

/// Whether the unity negative feedback loop around `l` is stable (see [`loop_margins`]).
fn closed_loop_stable(l: &StateSpace) -> NumResult<bool> {
    let cl = match unity_feedback(l) {
        Ok(cl) => cl,
        Err(NumError::Singular { .. }) => return Ok(false),
        Err(e) => return Err(e),
    };
    let eigs = eigenvalues(&cl.a)?;
    Ok(stability_violation(
        &eigs,
        cl.a.norm(),
        cl.is_discrete(),
        &MatrixEquationParams::default(),
    )
    .is_none())
}

#[cfg(test)]
mod tests {
    use super::*;
    use nalgebra::DMatrix;
    use serde_json::Value;

    /// Controllable companion realisation of num/den (highest power first, `den[0] ≠ 0`,
    /// `num` no longer than `den`): `A` with first row `−a₁ … −aₙ` and ones below the
    /// diagonal, `B = e₁`, `C = b₁ − b₀a₁, …`, `D = b₀` (textbook construction).
    fn from_polynomials(num: &[f64], den: &[f64], dt: f64) -> StateSpace {
        let n = den.len() - 1;
        let lead = den[0];
        let a_coef: Vec<f64> = den.iter().map(|x| x / lead).collect();
        let mut b_coef = vec![0.0; n + 1 - num.len()];
        b_coef.extend(num.iter().map(|x| x / lead));
        let mut a = DMatrix::zeros(n, n);
        for j in 0..n {
            a[(0, j)] = -a_coef[j + 1];
        }
        for i in 1..n {
            a[(i, i - 1)] = 1.0;
        }
        let mut b = DMatrix::zeros(n, 1);
        if n > 0 {
            b[(0, 0)] = 1.0;
        }
        let c = DMatrix::from_fn(1, n, |_, j| b_coef[j + 1] - b_coef[0] * a_coef[j + 1]);
        StateSpace::new(a, b, c, DMatrix::from_element(1, 1, b_coef[0]), dt).unwrap()
    }

    fn close(a: f64, b: f64, rel: f64) -> bool {
        (a - b).abs() <= rel * b.abs().max(1e-300) || a == b
    }

    #[test]
    fn third_order_type_one_loop() {
        // L = 1/(s(s + 1)(s + 2)) = 1/(s³ + 3s² + 2s).
        let l = from_polynomials(&[1.0], &[1.0, 3.0, 2.0, 0.0], 0.0);
        let m = loop_margins(&l).unwrap();
        // Source: derivation. L(jω) = 1/(−3ω² + j(2ω − ω³)); the phase is −180° where the
        // imaginary part vanishes, ω² = 2, and there L = 1/(−6), so GM = 6 = 15.563 dB.
        assert!(
            close(m.phase_crossover, 2f64.sqrt(), 1e-13),
            "{}",
            m.phase_crossover
        );
        assert!(close(m.gain_margin, 6.0, 1e-12), "{}", m.gain_margin);
        assert!(close(m.gain_margin_db, 20.0 * 6f64.log10(), 1e-12));
        assert!((m.gain_margin_db - 15.563).abs() < 5e-4);
        // Source: derivation. |L(jω)|² = 1/(ω²(ω² + 1)(ω² + 4)) = 1 means x³ + 5x² + 4x − 1 = 0
        // for x = ω²; solved here by bisection on [0, 1] (f(0) = −1 < 0 < f(1) = 9), an
        // independent method. PM = 180° − 90° − atan ω − atan(ω/2).
        let f = |x: f64| ((x + 5.0) * x + 4.0) * x - 1.0;
        let (mut lo, mut hi) = (0.0f64, 1.0f64);
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if f(mid) < 0.0 {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        let wc = (0.5 * (lo + hi)).sqrt();
        assert!(
            (m.gain_crossover - wc).abs() < 1e-10,
            "{} vs {wc}",
            m.gain_crossover
        );
        assert!((m.gain_crossover - 0.446).abs() < 1e-3);
        let pm = 90.0 - wc.atan().to_degrees() - (wc / 2.0).atan().to_degrees();
        assert!(
            (m.phase_margin - pm).abs() < 1e-9,
            "{} vs {pm}",
            m.phase_margin
        );
        assert!((m.phase_margin - 53.4).abs() < 0.05);
        assert!(close(m.delay_margin, pm.to_radians() / wc, 1e-9));
        // Source: Routh on s³ + 3s² + 2s + 1: 3·2 > 1, so the closed loop is stable.
        assert!(m.stable_closed_loop);
        assert_eq!((m.gain_crossovers.len(), m.phase_crossovers.len()), (1, 1));
    }

    #[test]
    fn first_order_lag_has_infinite_gain_margin() {
        // L = 2/(s + 1). Source: derivation. The phase −atan ω never reaches −180°, so
        // GM = ∞; |L| = 1 at ω = √3 where PM = 180° − 60° = 120°; delay margin
        // (2π/3)/√3 s.
        let l = from_polynomials(&[2.0], &[1.0, 1.0], 0.0);
        let m = loop_margins(&l).unwrap();
        assert_eq!(m.gain_margin, f64::INFINITY);
        assert_eq!(m.gain_margin_db, f64::INFINITY);
        assert!(m.phase_crossover.is_nan() && m.phase_crossovers.is_empty());
        assert!(close(m.gain_crossover, 3f64.sqrt(), 1e-14));
        assert!(close(m.phase_margin, 120.0, 1e-13));
        assert!(close(m.delay_margin, 2.0 * PI / 3.0 / 3f64.sqrt(), 1e-13));
        assert!(m.stable_closed_loop);
        // Source: |L| = 0.5/|jω + 1| < 1 everywhere: no gain crossover, both margins ∞.
        let m = loop_margins(&from_polynomials(&[0.5], &[1.0, 1.0], 0.0)).unwrap();
        assert_eq!(
            (m.phase_margin, m.delay_margin),
            (f64::INFINITY, f64::INFINITY)
        );
        assert!(m.gain_crossover.is_nan());
    }

    #[test]
    fn resonant_loop_has_three_gain_crossings() {
        // L = k ωn² / (s (s² + 2ζωn s + ωn²)) with k = 0.5, ωn = 10, ζ = 0.02.
        let (k, wn, z) = (0.5, 10.0, 0.02);
        let l = from_polynomials(&[k * wn * wn], &[1.0, 2.0 * z * wn, wn * wn, 0.0], 0.0);
        let m = loop_margins(&l).unwrap();
        // Source: derivation. |L|² = 1 ⇔ x((ωn² − x)² + 4ζ²ωn² x) = k²ωn⁴ with x = ω²,
        // a cubic whose roots are found here by a sign scan plus bisection. The resonance
        // peak |L| ≈ k/(2ζωn) = 1.25 > 1 gives two crossings near ωn besides the one
        // near k.
        let f = |x: f64| {
            x * ((wn * wn - x).powi(2) + 4.0 * z * z * wn * wn * x) - (k * wn * wn).powi(2)
        };
        let mut roots = Vec::new();
        let xs: Vec<f64> = (0..=200_000).map(|i| i as f64 * 2e-3).collect();
        for p in xs.windows(2) {
            if f(p[0]) * f(p[1]) < 0.0 {
                let (mut lo, mut hi) = (p[0], p[1]);
                for _ in 0..200 {
                    let mid = 0.5 * (lo + hi);
                    if (f(mid) < 0.0) == (f(lo) < 0.0) {
                        lo = mid;
                    } else {
                        hi = mid;
                    }
                }
                roots.push((0.5 * (lo + hi)).sqrt());
            }
        }
        assert_eq!(roots.len(), 3);
        assert_eq!(m.gain_crossovers.len(), 3, "{:?}", m.gain_crossovers);
        for (a, b) in m.gain_crossovers.iter().zip(&roots) {
            assert!(close(*a, *b, 1e-12), "{a} vs {b}");
        }
        // Source: derivation. At ω = ωn the factor s² + 2ζωn s + ωn² equals j·2ζωn², so
        // L(jωn) = k ωn² / (jωn · j 2ζωn²) = −k/(2ζωn) = −1.25: a phase crossover with
        // GM = 0.8, and the closed loop s³ + 0.4s² + 100s + 50 fails Routh (0.4·100 < 50).
        assert!(
            m.phase_crossovers.iter().any(|&w| close(w, wn, 1e-13)),
            "{:?}",
            m.phase_crossovers
        );
        assert!(close(m.gain_margin, 0.8, 1e-12), "{}", m.gain_margin);
        assert!(!m.stable_closed_loop);
        assert_eq!(m.delay_margin, 0.0);
        // The reported phase margin is the smallest in magnitude of the three.
        let least = m
            .phase_margins
            .iter()
            .fold(f64::INFINITY, |a, &b| a.min(b.abs()));
        assert_eq!(m.phase_margin.abs(), least);
    }

    #[test]
    fn discrete_loops() {
        let dt = 0.1;
        // L(z) = 1/(z − 0.5). Source: derivation. |e^{jθ} − 0.5|² = 1.25 − cos θ = 1 gives
        // θ_gc = acos(0.25), where e^{jθ} − 0.5 = −0.25 + j√15/4, so PM = atan(√15) in
        // degrees; at the Nyquist frequency L(−1) = −1/1.5, GM = 1.5 (closed-loop pole
        // 0.5 − K leaves the unit circle at K = 1.5).
        let l = from_polynomials(&[1.0], &[1.0, -0.5], dt);
        let m = loop_margins(&l).unwrap();
        let theta = 0.25f64.acos();
        assert!(
            close(m.gain_crossover, theta / dt, 1e-13),
            "{}",
            m.gain_crossover
        );
        assert!(close(
            m.phase_margin,
            15f64.sqrt().atan().to_degrees(),
            1e-12
        ));
        assert!(
            close(m.phase_crossover, PI / dt, 1e-15),
            "{}",
            m.phase_crossover
        );
        assert!(close(m.gain_margin, 1.5, 1e-14));
        assert!(close(
            m.delay_margin,
            15f64.sqrt().atan() / (theta / dt),
            1e-12
        ));
        assert!(m.stable_closed_loop);
        // L(z) = 0.25/(z(z − 0.5)). Source: derivation. With an extra gain g the closed-loop
        // polynomial is z² − 0.5z + 0.25g; for g > 1/4 its complex pair has |z|² = 0.25g,
        // so it reaches the unit circle at g = 4 (GM = 4), at z = 0.25 ± j√(1 − 0.0625),
        // i.e. cos θ_pc = 0.25.
        let dt = 0.05;
        let l = from_polynomials(&[0.25], &[1.0, -0.5, 0.0], dt);
        let m = loop_margins(&l).unwrap();
        assert!(close(m.gain_margin, 4.0, 1e-12), "{}", m.gain_margin);
        assert!(close(m.phase_crossover, 0.25f64.acos() / dt, 1e-12));
        assert!(m.stable_closed_loop);
    }

    #[test]
    fn negative_static_and_non_minimum_phase_ends() {
        // Source: L = −0.5/(s + 1): L(0) = −0.5 lies on the negative real axis, a phase
        // crossover at ω = 0 with GM = 2 (closed loop s + 1 − 0.5g is unstable for g > 2).
        let l = from_polynomials(&[-0.5], &[1.0, 1.0], 0.0);
        let m = loop_margins(&l).unwrap();
        assert_eq!(m.phase_crossover, 0.0);
        assert!(close(m.gain_margin, 2.0, 1e-15));
        assert!(m.stable_closed_loop);
        // Source: L = 0.5(1 − s)/(1 + s) → −0.5 as ω → ∞: GM = 2 at ω = ∞ (closed loop
        // (1 − 0.5g)s + 1 + 0.5g loses stability at g = 2); |L| = 0.5 always.
        let l = from_polynomials(&[-0.5, 0.5], &[1.0, 1.0], 0.0);
        let m = loop_margins(&l).unwrap();
        assert_eq!(m.phase_crossover, f64::INFINITY);
        assert!(close(m.gain_margin, 2.0, 1e-15));
        assert!(m.gain_crossovers.is_empty());
    }

    #[test]
    fn crossings_far_beyond_the_poles() {
        // Source: derivation. L = 1e4/(s + 1): |L| = 1 at ω = √(1e8 − 1), far above the
        // grid's 100 rad/s; PM = 180° − atan ω.
        let l = from_polynomials(&[1e4], &[1.0, 1.0], 0.0);
        let m = loop_margins(&l).unwrap();
        let wc = (1e8f64 - 1.0).sqrt();
        assert!(close(m.gain_crossover, wc, 1e-13), "{}", m.gain_crossover);
        assert!(close(m.phase_margin, 180.0 - wc.atan().to_degrees(), 1e-12));
        // Source: derivation. L = 1e-4/(s(s + 1)): |L|² = 1e-8/(ω²(ω² + 1)) = 1 at
        // x = ω² = (−1 + √(1 + 4e-8))/2, far below the grid's 0.01 rad/s.
        let l = from_polynomials(&[1e-4], &[1.0, 1.0, 0.0], 0.0);
        let m = loop_margins(&l).unwrap();
        let x = 2e-8 / (1.0 + (1.0 + 4e-8f64).sqrt()); // the same root, without cancellation
        assert!(
            close(m.gain_crossover, x.sqrt(), 1e-12),
            "{}",
            m.gain_crossover
        );
        assert!(close(
            m.phase_margin,
            90.0 - x.sqrt().atan().to_degrees(),
            1e-12
        ));
    }

    #[test]
    fn mimo_is_an_error() {
        let s = StateSpace::new(
            DMatrix::from_element(1, 1, -1.0),
            DMatrix::from_element(1, 2, 1.0),
            DMatrix::from_element(1, 1, 1.0),
            DMatrix::zeros(1, 2),
            0.0,
        )
        .unwrap();
        let e = loop_margins(&s).unwrap_err().to_string();
        assert!(
            e.contains("loop_gain") && e.contains("1 outputs × 2 inputs"),
            "{e}"
        );
    }

    fn fixture_value(v: &Value) -> Option<f64> {
        v.as_f64()
    }

    #[test]
    fn reference_fixtures() {
        // Source: tests/reference/freq.json, cases margins_* (gen_freq.py: scipy brentq on
        // ln|L| and on the continuous phase, bracketed by a logspace(-4, 4, 20001) sweep).
        // Fixture null = infinite margin / no crossover. Delay margin: the fixture gives
        // null when PM ≤ 0; our documented rule gives 0 for an unstable closed loop.
        let text = include_str!("../../../tests/reference/freq.json");
        let fx: Value = serde_json::from_str(text).unwrap();
        let cases: Vec<&Value> = fx["cases"]
            .as_array()
            .unwrap()
            .iter()
            .filter(|c| c["name"].as_str().unwrap().starts_with("margins_"))
            .collect();
        assert_eq!(cases.len(), 4);
        for c in cases {
            let name = c["name"].as_str().unwrap();
            let vec = |k: &str| -> Vec<f64> {
                c["inputs"][k]
                    .as_array()
                    .unwrap()
                    .iter()
                    .map(|x| x.as_f64().unwrap())
                    .collect()
            };
            let l = from_polynomials(&vec("numerator"), &vec("denominator"), 0.0);
            let m = loop_margins(&l).unwrap();
            let rel = c["tolerance"]["rel"].as_f64().unwrap();
            let abs = c["tolerance"]["abs"].as_f64().unwrap();
            let e = &c["expected"];
            let check = |key: &str, got: f64, none: f64| {
                let ok = match fixture_value(&e[key]) {
                    Some(want) => (got - want).abs() <= abs + rel * want.abs(),
                    None => got == none || (none.is_nan() && got.is_nan()),
                };
                assert!(ok, "{name}: {key} = {got}, expected {}", e[key]);
            };
            check("gain_margin", m.gain_margin, f64::INFINITY);
            check("gain_margin_db", m.gain_margin_db, f64::INFINITY);
            check("phase_margin", m.phase_margin, f64::INFINITY);
            check("gain_crossover", m.gain_crossover, f64::NAN);
            check("phase_crossover", m.phase_crossover, f64::NAN);
            if e["delay_margin"].is_null() && m.phase_margin <= 0.0 {
                assert_eq!(m.delay_margin, 0.0, "{name}");
                assert!(!m.stable_closed_loop, "{name}");
            } else {
                check("delay_margin", m.delay_margin, f64::INFINITY);
            }
            // "Single crossovers only" (fixture notes).
            assert_eq!(m.gain_crossovers.len(), 1, "{name}");
            assert!(m.phase_crossovers.len() <= 1, "{name}");
        }
    }
}
