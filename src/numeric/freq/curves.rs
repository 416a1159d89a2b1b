//! Frequency-response curves for figures: Bode magnitude and continuously unwrapped
//! phase, Nyquist curves, and singular values over frequency.
//!
//! All curves share one idea: sample on [`auto_frequency_grid`] (every pole and zero
//! covered, resonances clustered), and for SISO channels let [`siso_sweep`] split the
//! intervals where the phase or the log-gain moves too fast, so that lines look smooth
//! and the phase unwraps without ambiguity (Laub 1981 evaluation, one O(n²) Hessenberg
//! solve per point).

use super::grid::{auto_frequency_grid, siso_sweep, SweepParams};
use super::response::FrequencyEvaluator;
use crate::numeric::linalg::eigen::eigenvalues;
use crate::numeric::lti::system::StateSpace;
use crate::numeric::{NumError, NumResult};
use nalgebra::Complex;
use std::f64::consts::PI;

type C64 = Complex<f64>;

/// Base points of a plotting grid (before clusters and adaptive refinement).
pub const PLOT_GRID_POINTS: usize = 400;

/// The adaptive-sweep limits used for plotting: about 3° of phase and 0.4 dB per step,
/// at most 6000 samples per curve.
pub fn plot_sweep_params() -> SweepParams {
    SweepParams {
        max_phase_step: 0.05,
        max_log_gain_step: 0.05,
        min_relative_width: 1e-9,
        max_samples: 6000,
    }
}

/// A common plotting grid (rad/s, ascending) for several models: the union of their
/// automatic grids, so every model's poles, zeros and resonances are covered and the
/// curves span the same range.
///
/// **Errors.** An empty list; failures of [`auto_frequency_grid`].
pub fn common_grid(models: &[&StateSpace]) -> NumResult<Vec<f64>> {
    if models.is_empty() {
        return Err(NumError::invalid("models", "expected at least one model"));
    }
    let mut grid = Vec::new();
    for m in models {
        grid.extend(auto_frequency_grid(m, PLOT_GRID_POINTS)?);
    }
    grid.sort_by(|a, b| a.total_cmp(b));
    grid.dedup_by(|b, a| (*b - *a).abs() <= 1e-12 * a.abs());
    Ok(grid)
}

/// The part of a common grid that belongs to `sys`: a discrete model's response is
/// periodic in ω with period 2π/dt, so its curves end at the Nyquist frequency π/dt —
/// points above it (from other models of a common grid) are dropped and π/dt itself is
/// included. A continuous model keeps the whole grid.
pub fn model_grid(grid: &[f64], sys: &StateSpace) -> Vec<f64> {
    if sys.dt <= 0.0 {
        return grid.to_vec();
    }
    let nyquist = PI / sys.dt;
    let mut out: Vec<f64> = grid.iter().copied().filter(|&w| w < nyquist).collect();
    if nyquist.is_finite() {
        out.push(nyquist);
    }
    out
}

/// One channel's frequency response on a (possibly refined) grid.
#[derive(Debug, Clone, PartialEq)]
pub struct ChannelCurve {
    /// Output index (0-based).
    pub output: usize,
    /// Input index (0-based).
    pub input: usize,
    /// Angular frequencies, rad/s, ascending.
    pub frequency: Vec<f64>,
    /// Complex values `G_ij(jω)` (or at `e^{jω·dt}`); non-finite at a pole on the axis.
    pub value: Vec<C64>,
    /// `20·log₁₀|G_ij|` in dB; NaN where the value is zero or not finite.
    pub magnitude_db: Vec<f64>,
    /// Phase in degrees, unwrapped continuously along the curve (see [`unwrap_phase`]);
    /// NaN where the value is zero or not finite.
    pub phase_deg: Vec<f64>,
}

/// The response of every channel `(i, j)` of `sys` on `grid`, refined per channel by
/// [`siso_sweep`] with [`plot_sweep_params`]. Cost: one Hessenberg reduction per channel
/// (O(n³)) plus O(n²) per sample.
pub fn channel_curves(sys: &StateSpace, grid: &[f64]) -> NumResult<Vec<ChannelCurve>> {
    let params = plot_sweep_params();
    let mut out = Vec::new();
    for i in 0..sys.outputs() {
        for j in 0..sys.inputs() {
            let ch = sys.channel(i, j)?;
            let ev = FrequencyEvaluator::new(&ch)?;
            let samples = siso_sweep(&ev, grid, &params);
            let frequency: Vec<f64> = samples.iter().map(|s| s.w).collect();
            let value: Vec<C64> = samples.iter().map(|s| s.value).collect();
            let magnitude_db: Vec<f64> = value
                .iter()
                .map(|z| {
                    let a = z.norm();
                    if a > 0.0 && a.is_finite() {
                        20.0 * a.log10()
                    } else {
                        f64::NAN
                    }
                })
                .collect();
            let mut phase_deg: Vec<f64> = unwrap_phase(&value)
                .into_iter()
                .map(f64::to_degrees)
                .collect();
            anchor_low_frequency(&frequency, &magnitude_db, &mut phase_deg);
            out.push(ChannelCurve {
                output: i,
                input: j,
                frequency,
                value,
                magnitude_db,
                phase_deg,
            });
        }
    }
    Ok(out)
}

/// Most frequencies accepted by [`bode_at`].
pub const MAX_BODE_FREQUENCIES: usize = 100_000;

/// The Bode curve of a SISO model at the frequencies `w` (rad/s, positive, strictly
/// ascending): exactly the numbers [`channel_curves`] draws. `w` is merged into the
/// model's plotting grid ([`common_grid`]), the union is swept and unwrapped as for the
/// figure (so the phase is anchored on the low-frequency asymptote and unwraps through
/// resonances between the requested points), and the samples at `w` are returned.
///
/// **Errors.** A model that is not 1×1; an empty, non-finite, non-positive or
/// non-ascending `w`, or more than [`MAX_BODE_FREQUENCIES`]; failures of the grid.
pub fn bode_at(sys: &StateSpace, w: &[f64]) -> NumResult<ChannelCurve> {
    if sys.outputs() != 1 || sys.inputs() != 1 {
        return Err(NumError::invalid(
            "sys",
            format!(
                "expected a single-input single-output model, found {} outputs × {} inputs",
                sys.outputs(),
                sys.inputs()
            ),
        ));
    }
    if w.is_empty() || w.len() > MAX_BODE_FREQUENCIES {
        return Err(NumError::invalid(
            "w",
            format!(
                "expected 1 to {MAX_BODE_FREQUENCIES} frequencies, found {}",
                w.len()
            ),
        ));
    }
    for (k, &x) in w.iter().enumerate() {
        if !(x.is_finite() && x > 0.0) {
            return Err(NumError::invalid(
                "w",
                format!("frequency {k} is {x}, expected a positive finite number in rad/s"),
            ));
        }
        if k > 0 && x <= w[k - 1] {
            return Err(NumError::invalid(
                "w",
                format!(
                    "frequencies must be strictly ascending; w[{k}] = {x} follows {}",
                    w[k - 1]
                ),
            ));
        }
    }
    let mut grid = common_grid(&[sys])?;
    grid.extend_from_slice(w);
    grid.sort_by(|a, b| a.total_cmp(b));
    grid.dedup();
    let full = channel_curves(sys, &grid)?
        .pop()
        .ok_or_else(|| NumError::invalid("sys", "the model has no channel"))?;
    let mut out = ChannelCurve {
        output: 0,
        input: 0,
        frequency: Vec::with_capacity(w.len()),
        value: Vec::with_capacity(w.len()),
        magnitude_db: Vec::with_capacity(w.len()),
        phase_deg: Vec::with_capacity(w.len()),
    };
    let mut next = w.iter().copied().peekable();
    for k in 0..full.frequency.len() {
        if next.peek() == Some(&full.frequency[k]) {
            next.next();
            out.frequency.push(full.frequency[k]);
            out.value.push(full.value[k]);
            out.magnitude_db.push(full.magnitude_db[k]);
            out.phase_deg.push(full.phase_deg[k]);
        }
    }
    if out.frequency.len() != w.len() {
        return Err(NumError::invalid(
            "w",
            "a requested frequency was lost from the sweep",
        ));
    }
    Ok(out)
}

/// Shifts an unwrapped phase curve by a multiple of 360° so that it starts on the
/// low-frequency asymptote: below every nonzero pole and zero G(jω) ≈ K·(jω)^k, k the
/// number of zeros minus poles at the origin, whose phase is k·90° (K > 0) or
/// k·90° − 180° (K < 0). k is read off the slope of the first two magnitude samples
/// (20·k dB per decade); of the 360°-shifts of the first phase, the one closest to
/// k·90° − 90° (midway between the two cases) is kept. Without this a double integrator's
/// principal angle +180° made 1/(s²(s + 1)) start at +180° instead of −180°.
fn anchor_low_frequency(w: &[f64], mag_db: &[f64], phase_deg: &mut [f64]) {
    let usable: Vec<usize> = (0..w.len())
        .filter(|&k| w[k] > 0.0 && mag_db[k].is_finite() && phase_deg[k].is_finite())
        .take(2)
        .collect();
    let [k0, k1] = usable[..] else {
        return;
    };
    let decades = (w[k1] / w[k0]).log10();
    if decades <= 0.0 {
        return;
    }
    let k = ((mag_db[k1] - mag_db[k0]) / (20.0 * decades)).round();
    let target = 90.0 * k - 90.0;
    let first = phase_deg[k0];
    let shift = 360.0 * ((target - first) / 360.0).round();
    if shift != 0.0 {
        phase_deg.iter_mut().for_each(|p| *p += shift);
    }
}

/// The phase of each value in radians, unwrapped continuously: the first usable value
/// keeps its principal angle in (−π, π]; each next one is the angle closest to its
/// predecessor (steps of 2π removed). Zero or non-finite values give NaN and do not
/// reset the reference, so the curve continues across them. The grid must be fine
/// enough that true steps stay below π (the plotting sweep keeps them below 0.05 rad
/// except across a pole or zero on the axis, where the true jump is ±π and either
/// branch is as good).
pub fn unwrap_phase(values: &[C64]) -> Vec<f64> {
    let mut prev: Option<f64> = None;
    values
        .iter()
        .map(|z| {
            if !(z.norm() > 0.0 && z.re.is_finite() && z.im.is_finite()) {
                return f64::NAN;
            }
            let a = z.arg();
            let v = match prev {
                None => a,
                Some(p) => a + 2.0 * PI * ((p - a) / (2.0 * PI)).round(),
            };
            prev = Some(v);
            v
        })
        .collect()
}

/// The singular values of `G(jω)` at each frequency of `grid`, descending at each point:
/// entry `k` of the result is the k-th largest singular value along the grid (one curve
/// per singular value, `min(p, m)` curves). Non-finite responses (a pole on the axis)
/// give NaN. Cost O(n³) once plus O(n²·m + p·m·min(p, m)) per frequency.
pub fn singular_value_curves(sys: &StateSpace, grid: &[f64]) -> NumResult<Vec<Vec<f64>>> {
    let ev = FrequencyEvaluator::new(sys)?;
    let k = sys.inputs().min(sys.outputs());
    let mut curves = vec![Vec::with_capacity(grid.len()); k];
    for &w in grid {
        let g = ev.at_frequency(w);
        let finite = g.iter().all(|z| z.re.is_finite() && z.im.is_finite());
        let sv: Vec<f64> = if finite && k > 0 {
            let mut s: Vec<f64> = g.singular_values().iter().copied().collect();
            s.sort_by(|a, b| b.total_cmp(a));
            s
        } else {
            vec![f64::NAN; k]
        };
        for (c, v) in curves.iter_mut().zip(sv) {
            c.push(v);
        }
    }
    Ok(curves)
}

/// Whether `sys` has a pole on the stability boundary (imaginary axis, unit circle) to
/// within `1e-9` relative: then its Nyquist curve is unbounded near that frequency.
pub fn has_boundary_pole(sys: &StateSpace) -> NumResult<bool> {
    let poles = eigenvalues(&sys.a)?;
    Ok(poles.iter().any(|l| {
        if sys.is_discrete() {
            (l.norm() - 1.0).abs() <= 1e-9
        } else {
            l.re.abs() <= 1e-9 * l.norm().max(1.0)
        }
    }))
}

/// The Nyquist curve of a SISO loop over increasing positive frequency: the refined
/// samples of [`channel_curves`] as `(re, im)`; when the loop has a pole on the stability
/// boundary (the curve is unbounded), points farther than `clip_radius` from the origin
/// become NaN (a break in the line). Discrete curves end at the Nyquist frequency.
///
/// **Errors.** A model that is not SISO; failures of the grid computation.
pub fn nyquist_curve(sys: &StateSpace, clip_radius: f64) -> NumResult<(Vec<f64>, Vec<f64>)> {
    if sys.inputs() != 1 || sys.outputs() != 1 {
        return Err(NumError::invalid(
            "nyquist curve",
            format!(
                "expected a single-input single-output loop gain, found {} outputs × {} inputs",
                sys.outputs(),
                sys.inputs()
            ),
        ));
    }
    let grid = common_grid(&[sys])?;
    let curve = channel_curves(sys, &grid)?
        .into_iter()
        .next()
        .ok_or_else(|| NumError::invalid("nyquist curve", "the model has no channel"))?;
    let clip = has_boundary_pole(sys)?;
    let keep = |z: &C64| !clip || z.norm() <= clip_radius;
    let re = curve
        .value
        .iter()
        .map(|z| if keep(z) { z.re } else { f64::NAN })
        .collect();
    let im = curve
        .value
        .iter()
        .map(|z| if keep(z) { z.im } else { f64::NAN })
        .collect();
    Ok((re, im))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::numeric::testing::siso;
    use nalgebra::DMatrix;

    #[test]
    fn double_integrator_phase_starts_at_minus_180() {
        // 1/(s²(s + 1)): G(jω) ≈ −1/ω² at low frequency, so the phase starts at −180° and
        // falls to −270° (closed form: −180° − atan ω). Main started it at +180°.
        let sys = crate::numeric::testing::siso(
            &[0.0, 1.0, 0.0, 0.0, 0.0, 1.0, 0.0, 0.0, -1.0],
            &[0.0, 0.0, 1.0],
            &[1.0, 0.0, 0.0],
            0.0,
        );
        let grid = common_grid(&[&sys]).unwrap();
        let c = &channel_curves(&sys, &grid).unwrap()[0];
        for (w, p) in c.frequency.iter().zip(&c.phase_deg) {
            let want = -180.0 - w.atan().to_degrees();
            assert!(
                (p - want).abs() < 1e-6,
                "phase {p} at ω = {w}, expected {want}"
            );
        }
    }

    #[test]
    fn third_order_lag_phase_unwraps_to_minus_270() {
        // 1/(s(s+1)(s+2)): companion form; phase −90° at low, −270° at high frequency.
        let sys = siso(
            &[0.0, 1.0, 0.0, 0.0, 0.0, 1.0, 0.0, -2.0, -3.0],
            &[0.0, 0.0, 1.0],
            &[1.0, 0.0, 0.0],
            0.0,
        );
        let grid = common_grid(&[&sys]).unwrap();
        let c = &channel_curves(&sys, &grid).unwrap()[0];
        let first = c.phase_deg[0];
        let last = *c.phase_deg.last().unwrap();
        assert!((first + 90.0).abs() < 1.0, "first phase {first}");
        assert!((last + 270.0).abs() < 1.0, "last phase {last}");
        // Monotone decreasing phase: no 360° jumps.
        for w in c.phase_deg.windows(2) {
            assert!(w[1] <= w[0] + 1e-9 && w[0] - w[1] < 5.0);
        }
    }

    #[test]
    fn singular_values_of_a_diagonal_model_are_the_channel_gains() {
        // diag(1/(s+1), 2/(s+3)) at ω = 0: singular values 1 and 2/3.
        let sys = StateSpace::new(
            DMatrix::from_row_slice(2, 2, &[-1.0, 0.0, 0.0, -3.0]),
            DMatrix::identity(2, 2),
            DMatrix::from_row_slice(2, 2, &[1.0, 0.0, 0.0, 2.0]),
            DMatrix::zeros(2, 2),
            0.0,
        )
        .unwrap();
        let s = singular_value_curves(&sys, &[0.0]).unwrap();
        assert!((s[0][0] - 1.0).abs() < 1e-15 && (s[1][0] - 2.0 / 3.0).abs() < 1e-15);
    }

    #[test]
    fn an_integrator_loop_is_clipped() {
        let sys = siso(&[0.0], &[1.0], &[1.0], 0.0);
        let (re, im) = nyquist_curve(&sys, 5.0).unwrap();
        assert!(re.iter().any(|x| x.is_nan()));
        assert!(re
            .iter()
            .zip(&im)
            .filter(|(a, _)| a.is_finite())
            .all(|(a, b)| a.hypot(*b) <= 5.0));
    }
}
