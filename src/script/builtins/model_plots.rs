//! Model figures, declared: `plot_bode`, `plot_nyquist`, `plot_poles`, `plot_root_locus`,
//! `plot_singular_values`. The curves come from `crate::numeric::freq::curves` and
//! `crate::numeric::design::root_locus`; the drawing is `crate::plot`.

use super::plot::options as plot_options;
use crate::numeric::design::root_locus;
use crate::numeric::freq::{curves, margins};
use crate::numeric::lti::system::StateSpace;
use crate::numeric::lti::{properties, zeros};
use crate::plot::{Figure as PlotFigure, FrequencyCurve, PlotOptions};
use crate::script::convert::{fail, num, to_str, type_name, Rr};
use crate::script::declare::{Model, Models};
use crate::script::types::Figure;
use rhai::{Array, Map};

crate::builtins! {
    /// magnitude (dB) above phase (degrees) over a logarithmic frequency axis
    ///
    /// models: a model or an array of models, overlaid in one figure (a MIMO model draws
    /// every channel). The frequency grid covers every pole and zero of all models and is
    /// refined where the curves bend, so resonances are resolved; the phase is unwrapped
    /// continuously. Frequencies in rad/s; a discrete model's curves end at its Nyquist
    /// frequency π/dt.
    ///
    /// options: the plot options (title, x_label, y_label, legend — an array of names, one
    /// per model, or false — width, height) and margins: true, which marks the 0 dB line,
    /// the gain and phase crossovers and the margins (see loop_margins) of the first
    /// single-input single-output model in the list.
    ///
    /// example:
    ///     let l = transfer_function([1], [1, 3, 2, 0]);
    ///     plot_bode(l, #{ margins: true, title: "loop gain" })
    #[family = "plots"]
    fn plot_bode(call, models: Models) -> Figure {
        bode(&models.0, None)
    }
    fn plot_bode(call, models: Models, options: Map) -> Figure {
        bode(&models.0, Some(&options))
    }

    /// the Nyquist curve of a SISO loop gain, with the critical point −1 and direction arrows
    ///
    /// models: a model or an array of models, overlaid. Positive frequencies solid, their
    /// mirror image (negative frequencies) dashed, arrows in the direction of increasing
    /// frequency. A loop with a pole on the imaginary axis (unit circle) has an unbounded
    /// curve: it is cut at radius 5 around the origin. options: as plot (title, legend, …).
    ///
    /// example:
    ///     plot_nyquist(transfer_function([4], [1, 3, 3, 1]))
    #[family = "plots"]
    fn plot_nyquist(call, models: Models) -> Figure {
        nyquist(&models.0, None)
    }
    fn plot_nyquist(call, models: Models, options: Map) -> Figure {
        nyquist(&models.0, Some(&options))
    }

    /// poles (crosses) and transmission zeros (rings) in the complex plane
    ///
    /// Equal scales on both axes. options: as plot (title, …).
    ///
    /// example:
    ///     plot_poles(transfer_function([1, 2], [1, 2, 5]))
    #[family = "plots"]
    fn plot_poles(call, sys: Model) -> Figure {
        pole_zero(&sys, None)
    }
    fn plot_poles(call, sys: Model, options: Map) -> Figure {
        pole_zero(&sys, Some(&options))
    }

    /// the closed-loop poles of 1 + k·L(s) = 0 for gains k from 0 to large
    ///
    /// loop_gain: a SISO model L in the unity negative feedback loop u = −k·y. Branches
    /// start at the open-loop poles (crosses) and end at the zeros (rings) or leave towards
    /// infinity (drawn out to about 4× the largest pole or zero modulus); squares mark the
    /// closed-loop poles at k = 1, the loop as given. The gain grid is adaptive: it is
    /// refined wherever a pole moves fast (near breakaway points), so the branches stay
    /// smooth. options: as plot.
    ///
    /// example:
    ///     plot_root_locus(transfer_function([1, 3], [1, 3, 2, 0]))
    #[family = "plots"]
    fn plot_root_locus(call, loop_gain: Model) -> Figure {
        locus(&loop_gain, None)
    }
    fn plot_root_locus(call, loop_gain: Model, options: Map) -> Figure {
        locus(&loop_gain, Some(&options))
    }

    /// the singular values of G(jω) in dB over frequency (the MIMO gain range)
    ///
    /// One curve per singular value, largest first: at each frequency the gain of the
    /// model lies between the smallest and largest for every input direction. Frequencies
    /// in rad/s on a logarithmic axis. options: as plot.
    ///
    /// example:
    ///     plot_singular_values(state_space([[-1, 0], [0, -3]], identity(2), [[1, 1], [0, 2]], 0))
    #[family = "plots"]
    fn plot_singular_values(call, sys: Model) -> Figure {
        sigma(&sys, None)
    }
    fn plot_singular_values(call, sys: Model, options: Map) -> Figure {
        sigma(&sys, Some(&options))
    }
}

const FREQ_LABEL: &str = "frequency (rad/s)";

/// Radius at which unbounded Nyquist curves are cut.
const NYQUIST_CLIP: f64 = 5.0;

/// The options map split into the plot options and our own `margins` flag.
fn split_options(o: Option<&Map>, f: &str, extra: &[&str]) -> Rr<(PlotOptions, Map)> {
    let Some(o) = o else {
        return Ok((PlotOptions::default(), Map::new()));
    };
    let mut plain = o.clone();
    let mut own = Map::new();
    for k in extra {
        if let Some(v) = plain.remove(*k) {
            own.insert((*k).into(), v);
        }
    }
    Ok((plot_options(&plain, f)?, own))
}

/// The `legend` option's names (one per model), empty when absent or a plain flag.
pub(crate) fn legend_names(o: Option<&Map>, f: &str) -> Rr<Vec<String>> {
    let Some(a) = o
        .and_then(|m| m.get("legend"))
        .and_then(|v| v.read_lock::<Array>().map(|a| a.clone()))
    else {
        return Ok(Vec::new());
    };
    a.iter()
        .enumerate()
        .map(|(k, s)| to_str(s, f, &format!("legend[{k}]")))
        .collect()
}

fn signal(names: &[String], k: usize, prefix: &str) -> String {
    names
        .get(k)
        .cloned()
        .unwrap_or_else(|| format!("{prefix}{k}"))
}

fn finish(mut fig: PlotFigure, o: &PlotOptions) -> Figure {
    fig.apply(o);
    Figure(fig)
}

fn bode(list: &[StateSpace], o: Option<&Map>) -> Rr<Figure> {
    let f = "plot_bode";
    let (opts, own) = split_options(o, f, &["margins"])?;
    let with_margins = match own.get("margins") {
        None => false,
        Some(b) => b.as_bool().map_err(|_| {
            fail(format!(
                "{f}: option margins must be true or false, found {}",
                type_name(b)
            ))
        })?,
    };
    let names = legend_names(o, f)?;
    let refs: Vec<&StateSpace> = list.iter().collect();
    let grid = curves::common_grid(&refs).map_err(num(f))?;
    let mut curves_out = Vec::new();
    let mut marks = Vec::new();
    for (k, sys) in list.iter().enumerate() {
        let many = list.len() > 1;
        let model_name = names
            .get(k)
            .cloned()
            .or_else(|| many.then(|| format!("model {}", k + 1)));
        let chans = curves::channel_curves(sys, &curves::model_grid(&grid, sys)).map_err(num(f))?;
        let mimo = chans.len() > 1;
        for c in &chans {
            let label = if mimo {
                let ch = format!(
                    "{} \u{2192} {}",
                    signal(&sys.names.inputs, c.input, "u"),
                    signal(&sys.names.outputs, c.output, "y")
                );
                Some(match &model_name {
                    Some(n) => format!("{n}: {ch}"),
                    None => ch,
                })
            } else {
                model_name.clone()
            };
            curves_out.push(FrequencyCurve {
                freq: c.frequency.clone(),
                magnitude_db: c.magnitude_db.clone(),
                phase_deg: c.phase_deg.clone(),
                label,
            });
        }
        if with_margins && !mimo && marks.is_empty() {
            let m = margins::loop_margins(sys).map_err(num(f))?;
            let c = &chans[0];
            marks.push(margin_marks(&m, c));
        }
    }
    if with_margins && marks.is_empty() {
        return Err(fail(format!(
            "{f}: margins: true needs a single-input single-output model"
        )));
    }
    let mut fig = PlotFigure::frequency_response(curves_out, FREQ_LABEL);
    for (gc, pc) in marks {
        fig.mark_margins(gc, pc);
    }
    Ok(finish(fig, &opts))
}

type MarginMarks = (Option<(f64, f64, f64)>, Option<(f64, f64, f64)>);

/// The positions of the margin marks on a curve: the gain crossover with its phase
/// margin and the curve's phase there, the phase crossover with its gain margin (dB) and
/// the −180° + k·360° level the unwrapped curve crosses there.
fn margin_marks(m: &margins::Margins, c: &curves::ChannelCurve) -> MarginMarks {
    let phase_at = |w: f64| -> Option<f64> {
        let i = c.frequency.iter().position(|&x| x >= w)?;
        if i == 0 {
            return c.phase_deg.first().copied();
        }
        let (w0, w1) = (c.frequency[i - 1], c.frequency[i]);
        let (p0, p1) = (c.phase_deg[i - 1], c.phase_deg[i]);
        let t = if w1 > w0 {
            (w.ln() - w0.ln()) / (w1.ln() - w0.ln())
        } else {
            0.0
        };
        Some(p0 + t * (p1 - p0))
    };
    let gc = (m.gain_crossover.is_finite() && m.gain_crossover > 0.0)
        .then(|| {
            phase_at(m.gain_crossover)
                .filter(|p| p.is_finite())
                .map(|p| (m.gain_crossover, m.phase_margin, p))
        })
        .flatten();
    let pc = (m.phase_crossover.is_finite() && m.phase_crossover > 0.0)
        .then(|| {
            phase_at(m.phase_crossover)
                .filter(|p| p.is_finite())
                .map(|p| {
                    let level = ((p + 180.0) / 360.0).round() * 360.0 - 180.0;
                    (m.phase_crossover, m.gain_margin_db, level)
                })
        })
        .flatten();
    (gc, pc)
}

fn nyquist(list: &[StateSpace], o: Option<&Map>) -> Rr<Figure> {
    let f = "plot_nyquist";
    let (opts, _) = split_options(o, f, &[])?;
    let names = legend_names(o, f)?;
    let mut data = Vec::new();
    for (k, sys) in list.iter().enumerate() {
        let (re, im) = curves::nyquist_curve(sys, NYQUIST_CLIP).map_err(num(f))?;
        let label = names
            .get(k)
            .cloned()
            .or_else(|| (list.len() > 1).then(|| format!("model {}", k + 1)));
        data.push((re, im, label));
    }
    Ok(finish(PlotFigure::nyquist(data), &opts))
}

fn pairs(v: &[nalgebra::Complex<f64>]) -> Vec<(f64, f64)> {
    v.iter().map(|z| (z.re, z.im)).collect()
}

fn pole_zero(sys: &StateSpace, o: Option<&Map>) -> Rr<Figure> {
    let f = "plot_poles";
    let (opts, _) = split_options(o, f, &[])?;
    let p = properties::poles(sys).map_err(num(f))?;
    let z = if sys.order() > 0 && sys.inputs() > 0 && sys.outputs() > 0 {
        zeros::transmission_zeros(&sys.a, &sys.b, &sys.c, &sys.d).map_err(num(f))?
    } else {
        Vec::new()
    };
    Ok(finish(
        PlotFigure::poles_zeros(&pairs(&p), &pairs(&z)),
        &opts,
    ))
}

fn locus(sys: &StateSpace, o: Option<&Map>) -> Rr<Figure> {
    let f = "plot_root_locus";
    let (opts, _) = split_options(o, f, &[])?;
    let rl = root_locus::root_locus(sys).map_err(num(f))?;
    let branches = rl
        .branches
        .iter()
        .map(|b| {
            (
                b.iter().map(|z| z.re).collect(),
                b.iter().map(|z| z.im).collect(),
            )
        })
        .collect();
    let fig = PlotFigure::root_locus(
        branches,
        &pairs(&rl.poles),
        &pairs(&rl.zeros),
        &pairs(&rl.unit_gain),
        "closed loop at k = 1",
    );
    Ok(finish(fig, &opts))
}

fn sigma(sys: &StateSpace, o: Option<&Map>) -> Rr<Figure> {
    let f = "plot_singular_values";
    let (opts, _) = split_options(o, f, &[])?;
    let grid = curves::common_grid(&[sys]).map_err(num(f))?;
    let sv = curves::singular_value_curves(sys, &grid).map_err(num(f))?;
    let db = sv
        .into_iter()
        .map(|c| {
            c.into_iter()
                .map(|x| if x > 0.0 { 20.0 * x.log10() } else { f64::NAN })
                .collect()
        })
        .collect();
    Ok(finish(
        PlotFigure::singular_values(grid, db, FREQ_LABEL),
        &opts,
    ))
}

#[cfg(test)]
mod tests {
    use super::*;
    use nalgebra::DMatrix;

    fn first_order(pole: f64, dt: f64) -> StateSpace {
        let m = |v: f64| DMatrix::from_element(1, 1, v);
        StateSpace::new(m(pole), m(1.0), m(1.0), m(0.0), dt).expect("valid model")
    }

    #[test]
    fn discrete_bode_curves_end_at_the_nyquist_frequency() {
        // A continuous lag at 1 rad/s (grid to 100 rad/s) overlaid with a discrete model,
        // dt = 0.1: the discrete curves must end at π/dt ≈ 31.4 rad/s, not at 100.
        let both = [first_order(-1.0, 0.0), first_order(0.5, 0.1)];
        let fig = bode(&both, None).expect("plots");
        let nyquist = std::f64::consts::PI / 0.1;
        let ends: Vec<f64> = fig.0.panels[0]
            .series
            .iter()
            .map(|s| s.x.iter().copied().fold(f64::NEG_INFINITY, f64::max))
            .collect();
        assert_eq!(ends.len(), 2, "{ends:?}");
        assert!(ends[0] > 99.0, "continuous curve ends at {}", ends[0]);
        assert_eq!(ends[1], nyquist, "discrete curve ends at {}", ends[1]);
        // Alone, a discrete model's curves also reach π/dt exactly.
        let fig = bode(&[first_order(0.5, 0.1)], None).expect("plots");
        let end = fig.0.panels[1].series[0]
            .x
            .iter()
            .copied()
            .fold(0.0, f64::max);
        assert_eq!(end, nyquist);
    }
}
