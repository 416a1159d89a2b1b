//! Step-response metrics: rise time, settling time, overshoot, peak and final value.

use super::simulate::{auto_horizon, horizon_with, step_response};
use crate::numeric::error::{NumError, NumResult};
use crate::numeric::lti::properties::{dc_gain, poles};
use crate::numeric::lti::system::StateSpace;

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
}

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
/// [`StepMetrics`]). Errors: fewer than two samples, lengths that differ, non-finite
/// values.
pub fn step_metrics_of(t: &[f64], y: &[f64], final_value: f64) -> NumResult<StepMetrics> {
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
    let scale = final_value.abs().max(y0.abs()).max(f64::MIN_POSITIVE);
    if change.abs() <= 1e-12 * scale {
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
        });
    }
    let r: Vec<f64> = y.iter().map(|v| (v - y0) / change).collect();
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
    })
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

/// Step metrics of every input–output pair of a stable model, from an accurate step
/// response: final values from the exact DC gain ([`dc_gain`]), the response sampled at
/// [`super::simulate::DENSE_SAMPLES`] exact points over the horizon of
/// [`auto_horizon`] (7 time constants of the slowest mode, longer than the 2 % settling
/// time of any mode), or over `t_final` when given. Interpolation errors are then about
/// (t_final/20000)²·|ÿ|, far below the figures' meaning.
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
    let horizon = match t_final {
        Some(tf) => horizon_with(sys, tf, true)?,
        None => horizon_with(sys, auto_horizon(sys)?.t_final, true)?,
    };
    let gain = dc_gain(sys)?;
    let responses = step_response(sys, horizon)?;
    let mut out = Vec::new();
    for (j, r) in responses.iter().enumerate() {
        for i in 0..sys.outputs() {
            let y: Vec<f64> = r.y.column(i).iter().copied().collect();
            out.push(ChannelMetrics {
                input: j,
                output: i,
                metrics: step_metrics_of(&r.t, &y, gain[(i, j)])?,
            });
        }
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use nalgebra::DMatrix;

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
    fn second_order_overshoot_and_peak_time() {
        // Handbook closed forms: overshoot 100·exp(−ζπ/√(1−ζ²)) %, peak time π/(ωn√(1−ζ²)).
        for (zeta, wn) in [(0.2, 3.0), (0.5, 1.0), (0.7, 10.0)] {
            let m = model_step_metrics(&second_order(zeta, wn), None).unwrap()[0].metrics;
            let root = (1.0f64 - zeta * zeta).sqrt();
            let os = 100.0 * (-zeta * std::f64::consts::PI / root).exp();
            let tp = std::f64::consts::PI / (wn * root);
            assert!(
                (m.overshoot - os).abs() < 1e-6 * os,
                "{} vs {os}",
                m.overshoot
            );
            assert!(
                (m.peak_time - tp).abs() < 1e-6 * tp,
                "{} vs {tp}",
                m.peak_time
            );
            assert!((m.final_value - 1.0).abs() < 1e-12);
        }
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
    fn flat_response_gives_nan() {
        let m = step_metrics_of(&[0.0, 1.0], &[1.0, 1.0], 1.0).unwrap();
        assert!(m.rise_time.is_nan() && m.overshoot.is_nan());
    }
}
