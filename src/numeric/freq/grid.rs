//! Frequency grids that cover a model's dynamics, the adaptive sweep of a SISO response
//! along such a grid, and the bracketing root finder that refines crossings found on it.
//!
//! Frequencies are angular, in rad/s. A discrete model (sample time `dt > 0`) is
//! evaluated at `z = e^{jω·dt}` for `0 < ω ≤ π/dt` (the Nyquist frequency).

use crate::numeric::freq::response::FrequencyEvaluator;
use crate::numeric::linalg::dense::{log_grid, MAX_GRID_POINTS};
use crate::numeric::linalg::eigen::eigenvalues;
use crate::numeric::lti::system::StateSpace;
use crate::numeric::lti::zeros::transmission_zeros;
use crate::numeric::{NumError, NumResult};
use nalgebra::Complex;

type C64 = Complex<f64>;

/// Damping ratio below which a pole or zero pair gets a cluster of extra grid points.
pub const CLUSTER_DAMPING: f64 = 0.5;

/// Offsets of the cluster points, in units of the half-power half-width `ζ·ωn` around a
/// lightly damped pair (both signs are used).
const CLUSTER_OFFSETS: [f64; 10] = [
    1.0 / 32.0,
    1.0 / 16.0,
    1.0 / 8.0,
    1.0 / 4.0,
    1.0 / 2.0,
    1.0,
    2.0,
    4.0,
    8.0,
    16.0,
];

/// Smallest relative half-width used for a cluster (an undamped pair, ζ = 0).
const MIN_CLUSTER_WIDTH: f64 = 1e-9;

/// Natural frequencies at most this fraction of the largest one count as zero
/// (integrators, `z = 1`), so rounding noise does not stretch the grid.
const ZERO_FREQUENCY: f64 = 1e-12;

/// A logarithmic grid of angular frequencies (rad/s, ascending, all > 0) that covers
/// every pole and finite transmission zero of `sys` and resolves its resonances.
///
/// **Mathematics.** Each pole or zero `λ` is mapped to its continuous equivalent `s = λ`
/// (continuous) or `s = ln(λ)/dt` (discrete; `λ = 0`, a pure delay, has no finite
/// frequency and is skipped), with natural frequency `ωn = |s|` and damping
/// `ζ = −Re s / |s|`. Frequencies below `1e-12·max ωn` count as zero (integrators).
///
/// **Algorithm.**
/// * Range: two decades beyond the extreme nonzero natural frequencies,
///   `[min ωn / 100, max ωn · 100]`; with no nonzero frequency (n = 0, pure integrators)
///   `[0.01, 100]` rad/s. A discrete grid always ends at the Nyquist frequency `π/dt`
///   (delays shape the phase up to there) and starts at most `10⁻³·π/dt`. The range is
///   always at least three decades wide.
/// * `points` logarithmically spaced frequencies over the range.
/// * For every pole and zero pair with `|ζ| < 0.5` (resonance or anti-resonance): its
///   damped frequency `ωn√(1 − ζ²)`, its natural frequency `ωn`, the peak frequency
///   `ωn√(1 − 2ζ²)` (when `ζ² < 1/2` and `ζ ≠ 0`) and 20 points at offsets
///   `±{1/32, …, 1, 2, 4, 8, 16}·w` about the damped frequency, `w = max(|ζ|, 10⁻⁹)·ωn`
///   the half-power half-width. Points outside the range are dropped; an undamped pair's
///   own frequency (a pole on the axis) is not included.
/// * Sorted; points within 4ε relative of each other merged.
///
/// **Cost.** The eigenvalues of A (about 25n³ flops) and the transmission zeros (QZ on
/// the reduced system pencil, O((n + max(m, p))³)); the grid itself O(points + 23·n).
///
/// **Errors.** `points` below 2 or above [`MAX_GRID_POINTS`]; failures of the eigenvalue
/// or zero computation.
pub fn auto_frequency_grid(sys: &StateSpace, points: usize) -> NumResult<Vec<f64>> {
    if !(2..=MAX_GRID_POINTS).contains(&points) {
        return Err(NumError::invalid(
            "points",
            format!("expected between 2 and {MAX_GRID_POINTS} grid points, found {points}"),
        ));
    }
    let mut features = eigenvalues(&sys.a)?;
    if sys.order() > 0 && sys.inputs() > 0 && sys.outputs() > 0 {
        features.extend(transmission_zeros(&sys.a, &sys.b, &sys.c, &sys.d)?);
    }
    let dt = sys.dt;
    let equivalents: Vec<C64> = features
        .iter()
        .filter_map(|&l| continuous_equivalent(l, dt))
        .collect();
    let top = equivalents.iter().fold(0.0f64, |m, s| m.max(s.norm()));
    let nonzero: Vec<f64> = equivalents
        .iter()
        .map(|s| s.norm())
        .filter(|&w| w > ZERO_FREQUENCY * top && w.is_finite())
        .collect();
    let (mut lo, mut hi) = if nonzero.is_empty() {
        (0.01, 100.0)
    } else {
        let min = nonzero.iter().fold(f64::INFINITY, |m, &w| m.min(w));
        let max = nonzero.iter().fold(0.0f64, |m, &w| m.max(w));
        (min / 100.0, max * 100.0)
    };
    if dt > 0.0 {
        hi = std::f64::consts::PI / dt;
    }
    lo = lo.min(hi * 1e-3).max(f64::MIN_POSITIVE);
    if !(hi.is_finite() && hi > 0.0) {
        return Err(NumError::invalid(
            "frequency grid",
            format!("the model's frequencies do not fit in floating point (upper end {hi})"),
        ));
    }
    let mut grid = log_grid(lo, hi, points)?;
    for s in &equivalents {
        let wn = s.norm();
        if s.im <= 0.0 || wn <= ZERO_FREQUENCY * top || wn.is_nan() {
            continue;
        }
        let zeta = -s.re / wn;
        if zeta.abs() >= CLUSTER_DAMPING {
            continue;
        }
        let centre = s.im;
        let width = zeta.abs().max(MIN_CLUSTER_WIDTH) * wn;
        if zeta != 0.0 {
            grid.push(centre);
            grid.push(wn);
            if 2.0 * zeta * zeta < 1.0 {
                grid.push(wn * (1.0 - 2.0 * zeta * zeta).sqrt());
            }
        }
        for &x in &CLUSTER_OFFSETS {
            grid.push(centre + x * width);
            grid.push(centre - x * width);
        }
    }
    grid.retain(|&w| w >= lo && w <= hi && w.is_finite());
    grid.sort_by(|a, b| a.total_cmp(b));
    grid.dedup_by(|b, a| (*b - *a).abs() <= 4.0 * f64::EPSILON * a.abs());
    Ok(grid)
}

/// The continuous equivalent `s` of a pole or zero: itself (continuous) or `ln(λ)/dt`
/// (discrete); `None` for `λ = 0` of a discrete model.
fn continuous_equivalent(l: C64, dt: f64) -> Option<C64> {
    if dt > 0.0 {
        if l.norm() == 0.0 {
            return None;
        }
        Some(C64::new(l.norm().ln(), l.arg()) / dt)
    } else {
        Some(l)
    }
}

/// Extends an ascending grid beyond its ends by decades while a sign change of `f` could
/// still lie outside it: downward always (when `low` is set), upward when `high` is set.
///
/// **Why.** Two decades beyond the extreme poles and zeros a SISO response is a power law
/// `c·ω^(−k)` (k the excess of poles over zeros at the origin, or at infinity), so
/// `ln|G|` is monotone there and crosses a level at most once: a high-gain loop crosses
/// `|L| = 1` far above its poles, an integrator far below them. Each direction steps by
/// factors of 10 until `f` changes sign (the crossing is then bracketed by the last two
/// points), changes by less than 1e-6 per decade (flat), moves away from zero (being
/// monotone out there, it will not return), turns non-finite, or the frequency leaves
/// [1e-300, 1e300] — at most 600 evaluations.
pub fn extend_grid(grid: &mut Vec<f64>, f: impl Fn(f64) -> f64, low: bool, high: bool) {
    let step = |grid: &mut Vec<f64>, down: bool| {
        let Some(&start) = (if down { grid.first() } else { grid.last() }) else {
            return;
        };
        let (mut w, mut fw) = (start, f(start));
        let mut added = Vec::new();
        for _ in 0..300 {
            let w1 = if down { w / 10.0 } else { w * 10.0 };
            if !(1e-300..=1e300).contains(&w1) {
                break;
            }
            let f1 = f(w1);
            if !(f1.is_finite() && fw.is_finite()) {
                break;
            }
            added.push(w1);
            // Crossed, flat, or moving away from zero (monotone: it will not come back).
            if f1 * fw <= 0.0 || (f1 - fw).abs() < 1e-6 || f1.abs() > fw.abs() {
                break;
            }
            (w, fw) = (w1, f1);
        }
        if down {
            added.reverse();
            added.append(grid);
            *grid = added;
        } else {
            grid.append(&mut added);
        }
    };
    if low {
        step(grid, true);
    }
    if high {
        step(grid, false);
    }
}

/// Limits of the adaptive sweep in [`siso_sweep`].
#[derive(Debug, Clone, PartialEq)]
pub struct SweepParams {
    /// Largest phase change between neighbouring samples, in radians (default 0.1 ≈ 5.7°);
    /// it keeps the phase unwrapping unambiguous and resolves crossings near resonances.
    pub max_phase_step: f64,
    /// Largest change of `ln|G|` between neighbours (default 0.1, about 0.87 dB).
    pub max_log_gain_step: f64,
    /// Intervals narrower than this relative width are not split further (default 1e-10).
    pub min_relative_width: f64,
    /// Cap on the number of samples (default 200 000); past it no interval is split.
    pub max_samples: usize,
}

impl Default for SweepParams {
    fn default() -> Self {
        SweepParams {
            max_phase_step: 0.1,
            max_log_gain_step: 0.1,
            min_relative_width: 1e-10,
            max_samples: 200_000,
        }
    }
}

/// One sample of a SISO response: frequency (rad/s) and the complex value.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Sample {
    /// Angular frequency, rad/s.
    pub w: f64,
    /// `G(jω)` (or `G(e^{jω·dt})`); infinite entries at a pole on the axis.
    pub value: C64,
}

impl Sample {
    /// Whether the value is finite and nonzero (its logarithm and phase exist).
    pub fn usable(&self) -> bool {
        self.value.re.is_finite() && self.value.im.is_finite() && self.value.norm() > 0.0
    }
}

/// Samples the (1, 1) entry of `ev` on `grid` and splits every interval whose phase or
/// log-gain changes by more than `params` allow, by geometric midpoints, until the
/// steps are small, the interval is narrower than `params.min_relative_width`, or the
/// sample cap is reached.
///
/// **Cost.** One O(n²) Hessenberg solve per sample; the sample count is the grid plus,
/// per unresolved interval, about log₂ of its step ratio.
///
/// Intervals with an unusable end (a pole or zero on the axis) are not split; callers
/// treat them as breaks.
pub fn siso_sweep(ev: &FrequencyEvaluator, grid: &[f64], params: &SweepParams) -> Vec<Sample> {
    let eval = |w: f64| Sample {
        w,
        value: ev.at_frequency(w)[(0, 0)],
    };
    let mut out: Vec<Sample> = Vec::with_capacity(grid.len());
    let mut stack: Vec<Sample> = grid.iter().rev().map(|&w| eval(w)).collect();
    let mut count = stack.len();
    while let Some(next) = stack.pop() {
        let Some(&prev) = out.last() else {
            out.push(next);
            continue;
        };
        let coarse = prev.usable()
            && next.usable()
            && next.w > prev.w * (1.0 + params.min_relative_width)
            && count < params.max_samples
            && {
                let ratio = next.value / prev.value;
                ratio.arg().abs() > params.max_phase_step
                    || ratio.norm().ln().abs() > params.max_log_gain_step
            };
        if coarse {
            let mid = (prev.w * next.w).sqrt();
            if mid > prev.w && mid < next.w {
                stack.push(next);
                stack.push(eval(mid));
                count += 1;
                continue;
            }
        }
        out.push(next);
    }
    out
}

/// A root of `f` in the bracket `[a, b]` with `f(a)·f(b) ≤ 0`, by Brent's method:
/// inverse quadratic / secant interpolation safeguarded by bisection (Brent 1973,
/// "Algorithms for Minimization without Derivatives", Prentice-Hall, ch. 4 — the
/// algorithm *zero*).
///
/// **Tolerance.** Stops when the bracket is narrower than `2·(2ε|x| + xtol/2)` or `f` is
/// exactly 0; with `xtol = 0` the root is found to full precision (a few ulps of `x`).
/// Convergence is guaranteed (at most about (log₂((b−a)/tol))² evaluations; superlinear
/// for smooth `f`). Returns `None` if `f(a)` and `f(b)` have the same strict sign or a
/// value is not finite.
pub fn brent_root(
    mut f: impl FnMut(f64) -> f64,
    a: f64,
    b: f64,
    fa: f64,
    fb: f64,
    xtol: f64,
) -> Option<f64> {
    if !(fa.is_finite() && fb.is_finite()) || fa * fb > 0.0 {
        return None;
    }
    if fa == 0.0 {
        return Some(a);
    }
    if fb == 0.0 {
        return Some(b);
    }
    let (mut a, mut b, mut fa, mut fb) = (a, b, fa, fb);
    let (mut c, mut fc) = (a, fa);
    let mut d = b - a;
    let mut e = d;
    for _ in 0..400 {
        if (fb > 0.0) == (fc > 0.0) {
            c = a;
            fc = fa;
            d = b - a;
            e = d;
        }
        if fc.abs() < fb.abs() {
            a = b;
            b = c;
            c = a;
            fa = fb;
            fb = fc;
            fc = fa;
        }
        let tol1 = 2.0 * f64::EPSILON * b.abs() + 0.5 * xtol;
        let xm = 0.5 * (c - b);
        if xm.abs() <= tol1 || fb == 0.0 {
            return Some(b);
        }
        if e.abs() >= tol1 && fa.abs() > fb.abs() {
            let s = fb / fa;
            let (mut p, mut q);
            if a == c {
                p = 2.0 * xm * s;
                q = 1.0 - s;
            } else {
                let qq = fa / fc;
                let r = fb / fc;
                p = s * (2.0 * xm * qq * (qq - r) - (b - a) * (r - 1.0));
                q = (qq - 1.0) * (r - 1.0) * (s - 1.0);
            }
            if p > 0.0 {
                q = -q;
            }
            p = p.abs();
            if 2.0 * p < 3.0 * xm * q - (tol1 * q).abs() && p < (0.5 * e * q).abs() {
                e = d;
                d = p / q;
            } else {
                d = xm;
                e = d;
            }
        } else {
            d = xm;
            e = d;
        }
        a = b;
        fa = fb;
        b += if d.abs() > tol1 { d } else { tol1.copysign(xm) };
        fb = f(b);
        if !fb.is_finite() {
            return None;
        }
    }
    Some(b)
}

/// `x` wrapped into `(−π, π]`.
pub fn wrap_angle(x: f64) -> f64 {
    let two_pi = 2.0 * std::f64::consts::PI;
    let mut y = x - two_pi * (x / two_pi).round();
    if y <= -std::f64::consts::PI {
        y += two_pi;
    }
    if y > std::f64::consts::PI {
        y -= two_pi;
    }
    y
}

#[cfg(test)]
mod tests {
    use super::*;
    use nalgebra::DMatrix;

    fn ss(
        a: DMatrix<f64>,
        b: DMatrix<f64>,
        c: DMatrix<f64>,
        d: DMatrix<f64>,
        dt: f64,
    ) -> StateSpace {
        StateSpace::new(a, b, c, d, dt).unwrap()
    }

    /// `k/(s² + 2ζωn s + ωn²)` in companion form.
    fn resonance(wn: f64, zeta: f64) -> StateSpace {
        ss(
            DMatrix::from_row_slice(2, 2, &[0.0, 1.0, -wn * wn, -2.0 * zeta * wn]),
            DMatrix::from_row_slice(2, 1, &[0.0, 1.0]),
            DMatrix::from_row_slice(1, 2, &[wn * wn, 0.0]),
            DMatrix::zeros(1, 1),
            0.0,
        )
    }

    #[test]
    fn covers_poles_and_zeros_by_two_decades() {
        // Source: construction — G = 1/(s + 0.5) + c/(s + 40) with c = −960/999.5 has the
        // numerator (1 + c)(s + 1000) (hand-derived), so poles −0.5, −40 and a zero at
        // −1000: the grid must run from 0.5/100 to 1000·100.
        let sys = ss(
            DMatrix::from_row_slice(2, 2, &[-0.5, 0.0, 0.0, -40.0]),
            DMatrix::from_row_slice(2, 1, &[1.0, 1.0]),
            DMatrix::from_row_slice(1, 2, &[1.0, -960.0 / 999.5]),
            DMatrix::zeros(1, 1),
            0.0,
        );
        let g = auto_frequency_grid(&sys, 300).unwrap();
        assert!((g[0] - 0.005).abs() < 1e-15, "{}", g[0]);
        assert!((g[g.len() - 1] - 1e5).abs() < 1e-6, "{}", g[g.len() - 1]);
        assert!(g.windows(2).all(|w| w[1] > w[0]));
        assert_eq!(g.len(), 300);
    }

    #[test]
    fn clusters_points_around_a_resonance() {
        // Source: ζ = 1e-4, ωn = 5: half-power half-width ζωn = 5e-4; the grid must hold
        // points within that width on both sides of the damped frequency ωn√(1 − ζ²).
        let (wn, zeta) = (5.0, 1e-4);
        let g = auto_frequency_grid(&resonance(wn, zeta), 200).unwrap();
        let wd = wn * (1.0 - zeta * zeta).sqrt();
        let near = g.iter().filter(|&&w| (w - wd).abs() <= zeta * wn).count();
        assert!(near >= 11, "{near} points within the half-power band");
        assert!(g
            .iter()
            .any(|&w| w == wn * (1.0 - 2.0 * zeta * zeta).sqrt()));
        assert!(g.windows(2).all(|w| w[1] > w[0]));
    }

    #[test]
    fn defaults_for_static_models_and_integrators() {
        // Source: the documented defaults [0.01, 100] rad/s when there is no nonzero
        // natural frequency.
        let k = ss(
            DMatrix::zeros(0, 0),
            DMatrix::zeros(0, 1),
            DMatrix::zeros(1, 0),
            DMatrix::from_element(1, 1, 2.0),
            0.0,
        );
        let g = auto_frequency_grid(&k, 50).unwrap();
        assert_eq!((g[0], g[49]), (0.01, 100.0));
        let integrator = ss(
            DMatrix::zeros(1, 1),
            DMatrix::from_element(1, 1, 1.0),
            DMatrix::from_element(1, 1, 1.0),
            DMatrix::zeros(1, 1),
            0.0,
        );
        let g = auto_frequency_grid(&integrator, 50).unwrap();
        assert_eq!((g[0], g[49]), (0.01, 100.0));
        assert!(auto_frequency_grid(&integrator, 1).is_err());
    }

    #[test]
    fn discrete_grids_end_at_nyquist() {
        // Source: the Nyquist frequency π/dt; pole z = 0.9 at dt = 0.01 has the
        // continuous equivalent ln(0.9)/0.01 ≈ −10.5, so the grid starts at 0.105.
        let sys = ss(
            DMatrix::from_element(1, 1, 0.9),
            DMatrix::from_element(1, 1, 1.0),
            DMatrix::from_element(1, 1, 1.0),
            DMatrix::zeros(1, 1),
            0.01,
        );
        let g = auto_frequency_grid(&sys, 100).unwrap();
        assert_eq!(g[g.len() - 1], std::f64::consts::PI / 0.01);
        assert!((g[0] - (-(0.9f64.ln()) / 0.01) / 100.0).abs() < 1e-12);
    }

    #[test]
    fn brent_finds_roots_to_full_precision() {
        // Source: √2 is the root of x² − 2 (closed form); cos x − x has the root
        // 0.7390851332151607 (the Dottie number, known to 16 digits).
        let r = brent_root(|x| x * x - 2.0, 0.0, 2.0, -2.0, 2.0, 0.0).unwrap();
        assert!((r - 2f64.sqrt()).abs() <= 2.0 * f64::EPSILON * 2f64.sqrt());
        let f = |x: f64| x.cos() - x;
        let r = brent_root(f, 0.0, 1.0, f(0.0), f(1.0), 0.0).unwrap();
        assert!((r - 0.739_085_133_215_160_7).abs() < 4e-16);
        assert!(brent_root(f, 0.0, 0.5, f(0.0), f(0.5), 0.0).is_none());
    }

    #[test]
    fn sweep_resolves_the_phase() {
        // Source: construction — after the adaptive sweep no neighbouring samples differ
        // by more than the phase step, even across a ζ = 1e-5 resonance.
        let sys = resonance(2.0, 1e-5);
        let ev = FrequencyEvaluator::new(&sys).unwrap();
        let grid = log_grid(0.1, 10.0, 50).unwrap();
        let p = SweepParams::default();
        let s = siso_sweep(&ev, &grid, &p);
        for w in s.windows(2) {
            let d = (w[1].value / w[0].value).arg().abs();
            assert!(d <= p.max_phase_step, "phase step {d} at {}", w[0].w);
        }
        assert!(s.windows(2).all(|w| w[1].w > w[0].w));
    }

    #[test]
    fn extension_reaches_far_crossings() {
        // Source: construction — ln|1e6/ω| changes sign at ω = 1e6 (above a grid ending
        // at 100) and ln|1e-5/ω| at ω = 1e-5 (below a grid starting at 0.01).
        let mut g = vec![0.01, 1.0, 100.0];
        extend_grid(&mut g, |w| (1e6 / w).ln(), true, true);
        assert!(g.windows(2).all(|w| w[1] > w[0]));
        assert!(
            *g.last().unwrap() >= 1e6 && g[g.len() - 2] < 1e6 * 1.0001,
            "{g:?}"
        );
        let mut g = vec![0.01, 1.0, 100.0];
        extend_grid(&mut g, |w| (1e-5 / w).ln(), true, false);
        assert!(g[0] <= 1e-5 && g[1] > 1e-5 * 0.9999, "{g:?}");
        // A flat function, or one moving away from zero, stops after one step.
        let mut g = vec![0.01, 1.0];
        extend_grid(&mut g, |_| 0.5, true, true);
        assert_eq!(g.len(), 4);
        let mut g = vec![0.01, 1.0];
        extend_grid(&mut g, |w| -(1.0 + w), false, true);
        assert_eq!(g, vec![0.01, 1.0, 10.0]);
    }

    #[test]
    fn wrap_angle_range() {
        // Source: definition of the principal value (−π, π].
        use std::f64::consts::PI;
        assert_eq!(wrap_angle(PI), PI);
        assert_eq!(wrap_angle(-PI), PI);
        assert!((wrap_angle(3.0 * PI / 2.0) + PI / 2.0).abs() < 1e-15);
    }
}
