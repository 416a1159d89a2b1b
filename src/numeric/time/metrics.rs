//! Step-response metrics: rise time, settling time, overshoot, peak and final value.

use super::discretize::hold_terms;
use super::simulate::{auto_horizon, horizon_with, step_response, Horizon, DENSE_SAMPLES};
use crate::numeric::error::{NumError, NumResult};
use crate::numeric::lti::properties::{dc_gain, poles};
use crate::numeric::lti::system::StateSpace;
use nalgebra::DMatrix;

/// Metrics of one step response y(t) that starts at y₀ = y(t₀) and settles at y_f.
///
/// With the normalised response r(t) = (y(t) − y₀)/(y_f − y₀):
/// - `rise_time`: from the first time r reaches 0.1 to the first later time it reaches
///   0.9 (10–90 % rise);
/// - `settling_time`: the last time |y − y_f| leaves the band 0.02·|y_f − y₀| (2 %),
///   measured from t₀ (0 when the response never leaves it);
/// - `overshoot`: 100·max(0, max r − 1), in percent of the change;
/// - `peak`, `peak_time`: the value of y where r is largest, and its time (for a
///   monotone response, the last sample);
/// - `final_value`: y_f.
///
/// Crossing times are refined by linear interpolation between the samples that bracket
/// them, the peak by the parabola through the largest sample and its neighbours. Entries
/// that are undefined are NaN: all of them except `final_value`, `peak` and `peak_time`
/// when y_f = y₀ (no change to measure); `rise_time` when r never reaches 0.9 within the
/// samples; `settling_time` when the last sample is still outside the band.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StepMetrics {
    /// 10–90 % rise time in seconds.
    pub rise_time: f64,
    /// 2 % settling time in seconds.
    pub settling_time: f64,
    /// Overshoot in percent of the change.
    pub overshoot: f64,
    /// Peak value.
    pub peak: f64,
    /// Time of the peak in seconds.
    pub peak_time: f64,
    /// Final value.
    pub final_value: f64,
    /// Why some entries are NaN, when they are.
    pub note: Option<&'static str>,
}

/// The note of a response whose final value equals its initial one.
pub const NO_CHANGE_NOTE: &str = "the final value equals the initial value (to 1e-8 of the \
     response's largest excursion): the relative metrics are undefined";

/// The first time after index `from` at which r crosses `level` upwards, interpolated.
fn crossing(t: &[f64], r: &[f64], level: f64, from: usize) -> Option<(f64, usize)> {
    for k in from..r.len() {
        if r[k] >= level {
            if k == 0 {
                return Some((t[0], 0));
            }
            let (r0, r1) = (r[k - 1], r[k]);
            let frac = if r1 > r0 {
                (level - r0) / (r1 - r0)
            } else {
                1.0
            };
            return Some((t[k - 1] + frac.clamp(0.0, 1.0) * (t[k] - t[k - 1]), k));
        }
    }
    None
}

/// Metrics of sampled values `y` at times `t` settling at `final_value` (see
/// [`StepMetrics`]). With `interpolate` false (a discrete model's samples, which are all
/// there is of its response) every figure is read off the samples: crossings and the
/// settling time are sample times, the peak is the largest sample. Errors: fewer than two
/// samples, lengths that differ, non-finite values.
pub fn step_metrics_of(
    t: &[f64],
    y: &[f64],
    final_value: f64,
    interpolate: bool,
) -> NumResult<StepMetrics> {
    if t.len() != y.len() {
        return Err(NumError::shape(
            "y",
            format!("{} values like t", t.len()),
            format!("{}", y.len()),
        ));
    }
    if t.len() < 2 {
        return Err(NumError::invalid(
            "step_metrics",
            "expected a response with at least two samples",
        ));
    }
    if let Some(k) = y.iter().position(|v| !v.is_finite()) {
        return Err(NumError::invalid(
            "step_metrics",
            format!("the response is {} at t = {}", y[k], t[k]),
        ));
    }
    if !final_value.is_finite() {
        return Err(NumError::invalid(
            "step_metrics",
            format!("the final value is {final_value}: the response does not settle"),
        ));
    }
    let y0 = y[0];
    let change = final_value - y0;
    let nan = f64::NAN;
    // No change to measure: compared with the response's own largest excursion, so that a
    // final value of rounding size (a zero at the origin) is not taken for a step.
    let excursion = y.iter().map(|v| (v - y0).abs()).fold(0.0, f64::max);
    let scale = final_value.abs().max(y0.abs()).max(f64::MIN_POSITIVE);
    if change.abs() <= 1e-12 * scale || change.abs() <= 1e-8 * excursion {
        let (k, peak) =
            y.iter().enumerate().fold(
                (0, y0),
                |acc, (k, &v)| if v.abs() > acc.1.abs() { (k, v) } else { acc },
            );
        return Ok(StepMetrics {
            rise_time: nan,
            settling_time: nan,
            overshoot: nan,
            peak,
            peak_time: t[k],
            final_value,
            note: Some(NO_CHANGE_NOTE),
        });
    }
    let r: Vec<f64> = y.iter().map(|v| (v - y0) / change).collect();
    if !interpolate {
        return Ok(sampled_metrics(t, &r, y0, change, final_value));
    }
    let rise_time = match crossing(t, &r, 0.1, 0) {
        Some((t10, k)) => match crossing(t, &r, 0.9, k) {
            Some((t90, _)) => t90 - t10,
            None => nan,
        },
        None => nan,
    };
    // Settling: last sample outside the band, then the interpolated exit time.
    let band = 0.02;
    let dev: Vec<f64> = r.iter().map(|v| (v - 1.0).abs()).collect();
    let settling_time = match dev.iter().rposition(|&e| e > band) {
        None => 0.0,
        Some(k) if k + 1 == dev.len() => nan,
        Some(k) => {
            let (e0, e1) = (dev[k], dev[k + 1]);
            let frac = if e0 > e1 {
                (e0 - band) / (e0 - e1)
            } else {
                0.0
            };
            t[k] + frac.clamp(0.0, 1.0) * (t[k + 1] - t[k]) - t[0]
        }
    };
    let (kp, rp) =
        r.iter().enumerate().fold(
            (0, f64::NEG_INFINITY),
            |acc, (k, &v)| if v > acc.1 { (k, v) } else { acc },
        );
    let (mut peak_r, mut peak_time) = (rp, t[kp]);
    if kp > 0 && kp + 1 < r.len() {
        // Vertex of the parabola through the three samples around the largest one.
        let (a, b, c) = (r[kp - 1], r[kp], r[kp + 1]);
        let denom = a - 2.0 * b + c;
        if denom < 0.0 {
            let off = 0.5 * (a - c) / denom;
            let h = t[kp + 1] - t[kp];
            peak_time = t[kp] + off * h;
            peak_r = b - 0.25 * (a - c) * off;
        }
    }
    Ok(StepMetrics {
        rise_time,
        settling_time,
        overshoot: 100.0 * (peak_r - 1.0).max(0.0),
        peak: y0 + peak_r * change,
        peak_time,
        final_value,
        note: None,
    })
}

/// [`step_metrics_of`] without interpolation: the normalised samples `r` read as they are.
fn sampled_metrics(t: &[f64], r: &[f64], y0: f64, change: f64, final_value: f64) -> StepMetrics {
    let nan = f64::NAN;
    let first = |level: f64, from: usize| (from..r.len()).find(|&k| r[k] >= level);
    let rise_time = match first(0.1, 0) {
        Some(k10) => first(0.9, k10).map_or(nan, |k90| t[k90] - t[k10]),
        None => nan,
    };
    let settling_time = match r.iter().rposition(|v| (v - 1.0).abs() > 0.02) {
        None => 0.0,
        Some(k) if k + 1 == r.len() => nan,
        Some(k) => t[k + 1] - t[0],
    };
    let (kp, rp) =
        r.iter().enumerate().fold(
            (0, f64::NEG_INFINITY),
            |acc, (k, &v)| if v > acc.1 { (k, v) } else { acc },
        );
    StepMetrics {
        rise_time,
        settling_time,
        overshoot: 100.0 * (rp - 1.0).max(0.0),
        peak: y0 + rp * change,
        peak_time: t[kp],
        final_value,
        note: None,
    }
}

/// Metrics of one input–output pair of a model's step response.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ChannelMetrics {
    /// Input index (0-based).
    pub input: usize,
    /// Output index (0-based).
    pub output: usize,
    /// The metrics.
    pub metrics: StepMetrics,
}

/// Most samples of the grid that brackets the events of a continuous response.
pub const MAX_METRIC_SAMPLES: usize = 4_000_001;

/// Step metrics of every input–output pair of a stable model.
///
/// Final values come from the exact DC gain ([`dc_gain`]). A discrete model's figures are
/// read off its samples (no interpolation between them). A continuous model's figures come
/// from its exact response y(t) = C Γ(t) e_j + D e_j, Γ(t) = ∫₀ᵗ e^{Aτ} dτ B, and
/// y'(t) = C e^{At} B e_j, both from one block exponential at the time asked (Van Loan
/// 1978, [`hold_terms`]): exact samples on a grid of at least 8 points per radian of the
/// fastest mode (at most [`MAX_METRIC_SAMPLES`]) bracket every event, then bisection on
/// the exact response locates it to 10⁻¹³ relative — the 10 % and 90 % crossings on
/// r(t) − level, the peak on y'(t) = 0 (every sampled local maximum near the largest is
/// refined, the largest exact value wins), the last exit from the 2 % band on
/// |r(t) − 1| − 0.02 after refining the sampled extrema close to the band.
///
/// Horizon: `t_final` when given, else twice [`auto_horizon`] (14 time constants of the
/// slowest mode, which covers the settling of repeated poles), doubled up to four times
/// while the response has not settled within it.
///
/// Errors: a model that is not stable (its step response does not settle: the message
/// names the offending pole) — metrics of such a response are meaningless.
pub fn model_step_metrics(
    sys: &StateSpace,
    t_final: Option<f64>,
) -> NumResult<Vec<ChannelMetrics>> {
    let p = poles(sys)?;
    let bad = p.iter().find(|z| {
        if sys.is_discrete() {
            z.norm() >= 1.0
        } else {
            z.re >= 0.0
        }
    });
    if let Some(z) = bad {
        return Err(NumError::invalid(
            "step_metrics",
            format!(
                "the step response does not settle: the model has the pole {:.6}{:+.6}j, which \
                 is not strictly stable",
                z.re, z.im
            ),
        ));
    }
    let gain = dc_gain(sys)?;
    let fastest = p.iter().map(|z| z.norm()).fold(0.0, f64::max);
    let mut tf = match t_final {
        Some(tf) => horizon_with(sys, tf, true)?.t_final,
        None => 2.0 * auto_horizon(sys)?.t_final,
    };
    let mut attempts = if t_final.is_some() { 0 } else { 4 };
    loop {
        let horizon = if sys.is_discrete() {
            horizon_with(sys, tf, true)?
        } else {
            let wanted = (tf * fastest * 8.0).ceil() + 1.0;
            let samples = if wanted.is_finite() {
                (wanted as usize).clamp(DENSE_SAMPLES, MAX_METRIC_SAMPLES)
            } else {
                MAX_METRIC_SAMPLES
            };
            Horizon {
                t_final: tf,
                samples,
            }
        };
        let responses = step_response(sys, horizon)?;
        let mut out = Vec::new();
        for (j, r) in responses.iter().enumerate() {
            for i in 0..sys.outputs() {
                let y: Vec<f64> = r.y.column(i).iter().copied().collect();
                let sampled = step_metrics_of(&r.t, &y, gain[(i, j)], !sys.is_discrete())?;
                let metrics = if sys.is_discrete() || sampled.note.is_some() {
                    sampled
                } else {
                    Exact::new(sys, i, j)?.refine(&r.t, &y, sampled)?
                };
                out.push(ChannelMetrics {
                    input: j,
                    output: i,
                    metrics,
                });
            }
        }
        let unsettled = out
            .iter()
            .any(|c| c.metrics.settling_time.is_nan() && c.metrics.note.is_none());
        if !unsettled || attempts == 0 {
            return Ok(out);
        }
        attempts -= 1;
        tf *= 2.0;
    }
}

/// The exact step response of one channel of a continuous model at any time.
struct Exact<'a> {
    sys: &'a StateSpace,
    b: DMatrix<f64>,
    i: usize,
    j: usize,
}

impl<'a> Exact<'a> {
    fn new(sys: &'a StateSpace, i: usize, j: usize) -> NumResult<Self> {
        Ok(Exact {
            sys,
            b: sys.b.columns(j, 1).into_owned(),
            i,
            j,
        })
    }

    /// (y(t), y'(t)).
    fn at(&self, t: f64) -> NumResult<(f64, f64)> {
        let (phi, gamma, _) = hold_terms(&self.sys.a, &self.b, t)?;
        let c = self.sys.c.rows(self.i, 1);
        let y = (c * gamma)[(0, 0)] + self.sys.d[(self.i, self.j)];
        let dy = (c * (phi * &self.b))[(0, 0)];
        Ok((y, dy))
    }

    /// A root of f in [lo, hi] where f(lo) and f(hi) differ in sign, by bisection to
    /// 10⁻¹³ relative.
    fn bisect(&self, mut lo: f64, mut hi: f64, f: impl Fn(f64, f64) -> f64) -> NumResult<f64> {
        let (y, dy) = self.at(lo)?;
        let flo = f(y, dy);
        for _ in 0..200 {
            if hi - lo <= 1e-13 * hi.abs().max(f64::MIN_POSITIVE) {
                break;
            }
            let mid = 0.5 * (lo + hi);
            let (y, dy) = self.at(mid)?;
            if (f(y, dy) > 0.0) == (flo > 0.0) {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        Ok(0.5 * (lo + hi))
    }

    /// Replaces the sampled figures by the exact ones (see [`model_step_metrics`]).
    fn refine(&self, t: &[f64], y: &[f64], m: StepMetrics) -> NumResult<StepMetrics> {
        let y0 = y[0];
        let change = m.final_value - y0;
        let r: Vec<f64> = y.iter().map(|v| (v - y0) / change).collect();
        let rn = |yv: f64| (yv - y0) / change;
        let n = r.len();
        let mut out = m;
        let first = |level: f64, from: usize| (from..n).find(|&k| r[k] >= level);
        let cross = |level: f64, k: usize| -> NumResult<f64> {
            if k == 0 {
                return Ok(t[0]);
            }
            self.bisect(t[k - 1], t[k], |yv, _| rn(yv) - level)
        };
        if let Some(k10) = first(0.1, 0) {
            if let Some(k90) = first(0.9, k10) {
                out.rise_time = cross(0.9, k90)? - cross(0.1, k10)?;
            }
        }
        // Peak: refine sampled local maxima close to the largest sample.
        let (kp, rp) =
            r.iter().enumerate().fold(
                (0, f64::NEG_INFINITY),
                |a, (k, &v)| if v > a.1 { (k, v) } else { a },
            );
        let near = rp - 0.5 * (rp - 1.0).abs().max(1e-3);
        let mut candidates: Vec<usize> = (1..n - 1)
            .filter(|&k| r[k] >= r[k - 1] && r[k] >= r[k + 1] && r[k] >= near)
            .take(64)
            .collect();
        if kp > 0 && kp + 1 < n && !candidates.contains(&kp) {
            candidates.push(kp);
        }
        let (mut best_r, mut best_t) = (rp, t[kp]);
        for k in candidates {
            let (_, dl) = self.at(t[k - 1])?;
            let (_, dr) = self.at(t[k + 1])?;
            if dl / change > 0.0 && dr / change < 0.0 {
                let tp = self.bisect(t[k - 1], t[k + 1], |_, dy| dy / change)?;
                let (yp, _) = self.at(tp)?;
                let v = rn(yp);
                if v > best_r || (v >= best_r - 1e-12 && tp < best_t && best_t == t[kp]) {
                    best_r = v;
                    best_t = tp;
                }
            }
        }
        out.peak = y0 + best_r * change;
        out.peak_time = best_t;
        out.overshoot = 100.0 * (best_r - 1.0).max(0.0);
        // Settling: the last sample outside the band, then sampled extrema close to it.
        let band = 0.02;
        let dev: Vec<f64> = r.iter().map(|v| (v - 1.0).abs()).collect();
        if let Some(mut kout) = dev.iter().rposition(|&e| e > band) {
            if kout + 1 < n {
                let mut exit_lo = t[kout];
                for k in kout + 1..n - 1 {
                    if dev[k] > 0.9 * band && dev[k] >= dev[k - 1] && dev[k] >= dev[k + 1] {
                        let (_, dl) = self.at(t[k - 1])?;
                        let (_, dr) = self.at(t[k + 1])?;
                        let s = (r[k] - 1.0).signum();
                        if (dl / change) * s > 0.0 && (dr / change) * s < 0.0 {
                            let te = self.bisect(t[k - 1], t[k + 1], |_, dy| dy / change)?;
                            let (ye, _) = self.at(te)?;
                            if (rn(ye) - 1.0).abs() > band {
                                kout = k;
                                exit_lo = te;
                            }
                        }
                    }
                }
                let te = self.bisect(exit_lo, t[kout + 1], |yv, _| (rn(yv) - 1.0).abs() - band)?;
                out.settling_time = te - t[0];
            }
        }
        Ok(out)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn second_order(zeta: f64, wn: f64) -> StateSpace {
        StateSpace::new(
            DMatrix::from_row_slice(2, 2, &[0.0, 1.0, -wn * wn, -2.0 * zeta * wn]),
            DMatrix::from_column_slice(2, 1, &[0.0, wn * wn]),
            DMatrix::from_row_slice(1, 2, &[1.0, 0.0]),
            DMatrix::zeros(1, 1),
            0.0,
        )
        .unwrap()
    }

    #[test]
    fn first_order_rise_and_settling() {
        // τ·ln 9 (10–90 % rise) and τ·ln 50 (2 % settling), closed forms.
        let tau = 0.5;
        let s = StateSpace::new(
            DMatrix::from_element(1, 1, -1.0 / tau),
            DMatrix::from_element(1, 1, 2.0 / tau),
            DMatrix::from_element(1, 1, 1.0),
            DMatrix::zeros(1, 1),
            0.0,
        )
        .unwrap();
        let m = model_step_metrics(&s, None).unwrap()[0].metrics;
        assert!(
            (m.rise_time - tau * 9f64.ln()).abs() < 1e-6,
            "{}",
            m.rise_time
        );
        assert!(
            (m.settling_time - tau * 50f64.ln()).abs() < 1e-6,
            "{}",
            m.settling_time
        );
        assert_eq!(m.overshoot, 0.0);
        assert!((m.final_value - 2.0).abs() < 1e-12);
    }

    #[test]
    fn unstable_model_is_refused() {
        let s = second_order(-0.1, 1.0);
        let e = model_step_metrics(&s, None).unwrap_err().to_string();
        assert!(e.contains("does not settle"), "{e}");
    }

    #[test]
    fn discrete_samples_are_not_interpolated() {
        // Samples only (main fitted a parabola through the largest one and its neighbours).
        let t = [0.0, 1.0, 2.0, 3.0, 4.0];
        let y = [0.0, 0.7, 1.3, 0.9, 1.0];
        let m = step_metrics_of(&t, &y, 1.0, false).unwrap();
        assert_eq!((m.peak, m.peak_time), (1.3, 2.0));
        assert_eq!(m.rise_time, 1.0); // first sample ≥ 0.1 at t = 1, first ≥ 0.9 at t = 2
        assert_eq!(m.settling_time, 4.0); // last sample outside the band is at t = 3
    }

    #[test]
    fn flat_response_gives_nan() {
        let m = step_metrics_of(&[0.0, 1.0], &[1.0, 1.0], 1.0, true).unwrap();
        assert!(m.rise_time.is_nan() && m.overshoot.is_nan());
    }
}
