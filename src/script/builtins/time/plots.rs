//! `plot_response` and `plot_step`: time-response figures (the drawing is
//! `crate::plot::Figure::time_response`).

use super::sim;
use crate::numeric::lti::properties::dc_gain;
use crate::numeric::lti::system::StateSpace;
use crate::plot::{Figure as PlotFigure, ResponseCurve};
use crate::script::builtins::model_plots::legend_names;
use crate::script::builtins::plot::options;
use crate::script::convert::{fail, num, to_system, type_name, Rr};
use crate::script::types::{Figure, Response};
use rhai::{Array, Dynamic, Map};

fn curve(r: &Response, label: Option<String>) -> ResponseCurve {
    let d = &r.data;
    ResponseCurve {
        t: d.t.to_vec(),
        outputs: (0..d.y.ncols())
            .map(|i| d.y.column(i).iter().copied().collect())
            .collect(),
        label,
        stairs: r.dt > 0.0,
    }
}

fn responses_of(v: &Dynamic) -> Rr<Vec<Response>> {
    if let Some(r) = v.read_lock::<Response>() {
        return Ok(vec![r.clone()]);
    }
    let Some(a) = v.read_lock::<Array>() else {
        return Err(fail(format!(
            "plot_response: expected a Response or an array of them, found {}",
            type_name(v)
        )));
    };
    if a.is_empty() {
        return Err(fail("plot_response: the array of responses is empty"));
    }
    a.iter()
        .enumerate()
        .map(|(k, x)| {
            x.read_lock::<Response>().map(|r| r.clone()).ok_or_else(|| {
                fail(format!(
                    "plot_response: element {k} must be a Response, found {}",
                    type_name(x)
                ))
            })
        })
        .collect()
}

fn plot_response(v: &Dynamic, o: Option<&Map>) -> Rr<Figure> {
    let rs = responses_of(v)?;
    let many = rs.len() > 1;
    let curves: Vec<ResponseCurve> = rs
        .iter()
        .enumerate()
        .map(|(k, r)| {
            let label = r
                .label
                .clone()
                .or_else(|| many.then(|| format!("response {k}")));
            curve(r, label)
        })
        .collect();
    let names = rs.iter().map(|r| &r.outputs).max_by_key(|n| n.len());
    let mut fig = PlotFigure::time_response(&curves, names.map_or(&[][..], |v| &v[..]), &[]);
    if let Some(m) = o {
        fig.apply(&options(m, "plot_response")?);
    }
    Ok(Figure(fig))
}

fn systems_of(v: &Dynamic) -> Rr<Vec<StateSpace>> {
    if let Some(a) = v.read_lock::<Array>() {
        if a.is_empty() {
            return Err(fail("plot_step: the array of models is empty"));
        }
        return a
            .iter()
            .enumerate()
            .map(|(k, s)| to_system(s, "plot_step", &format!("models[{k}]")))
            .collect();
    }
    Ok(vec![to_system(v, "plot_step", "sys")?])
}

fn plot_step(v: &Dynamic, o: Option<&Map>) -> Rr<Figure> {
    let f = "plot_step";
    let systems = systems_of(v)?;
    let names_given = legend_names(o, f)?;
    // One horizon for all: the longest automatic one, so the curves share the axis.
    let mut t_final: f64 = 0.0;
    for s in &systems {
        t_final = t_final.max(sim::auto_horizon(s).map_err(num(f))?.t_final);
    }
    let many_systems = systems.len() > 1;
    let mut curves = Vec::new();
    for (k, s) in systems.iter().enumerate() {
        let h = sim::horizon_with(s, t_final, false).map_err(num(f))?;
        let rs = sim::step_response(s, h).map_err(num(f))?;
        let many_inputs = rs.len() > 1;
        for (j, data) in rs.into_iter().enumerate() {
            let input = s
                .names
                .inputs
                .get(j)
                .cloned()
                .unwrap_or_else(|| format!("input {j}"));
            let label = match (names_given.get(k), many_systems, many_inputs) {
                (Some(n), _, true) => Some(format!("{n}, {input}")),
                (Some(n), _, false) => Some(n.clone()),
                (None, true, true) => Some(format!("model {k}, {input}")),
                (None, true, false) => Some(format!("model {k}")),
                (None, false, true) => Some(input),
                (None, false, false) => None,
            };
            let r = Response {
                data: data.into(),
                kind: "step response".into(),
                outputs: s.names.outputs.clone(),
                label: None,
                dt: s.dt,
            };
            curves.push(curve(&r, label));
        }
    }
    let names = systems
        .iter()
        .map(|s| &s.names.outputs)
        .max_by_key(|n| n.len())
        .cloned()
        .unwrap_or_default();
    // A single-input model alone gets its final value drawn in each output's panel.
    let levels: Vec<Option<(f64, String)>> = match systems.as_slice() {
        [s] if s.inputs() == 1 => {
            let g = dc_gain(s).map_err(num(f))?;
            (0..s.outputs())
                .map(|i| Some((g[(i, 0)], "final value".to_string())))
                .collect()
        }
        _ => Vec::new(),
    };
    let mut fig = PlotFigure::time_response(&curves, &names, &levels);
    fig.title = Some("step response".into());
    if let Some(m) = o {
        fig.apply(&options(m, f)?);
    }
    Ok(Figure(fig))
}

crate::builtins! {
    /// each output against time in its own panel; several responses overlaid
    ///
    /// Panels share the time axis; output names come from the model's signal names.
    /// Legends: a response's input name, else "response k". Discrete responses are drawn as
    /// staircases. options as plot.
    ///
    /// example:
    ///     let pd = discretize(plant, 0.1);
    ///     plot_response([step_response(plant), step_response(pd)])
    #[family = "plots"]
    fn plot_response(call, responses: Dynamic) -> Figure {
        plot_response(&responses, None)
    }
    fn plot_response(call, responses: Dynamic, options: Map) -> Figure {
        plot_response(&responses, Some(&options))
    }

    /// step responses of one or more models, one panel per output
    ///
    /// A common automatic horizon (the longest of the models'). A single-input model alone
    /// also shows its final value (dc_gain) as a dashed line. options: as plot (title,
    /// legend — an array of names, one per model, or false — width, height).
    ///
    /// example:
    ///     plot_step([plant, discretize(plant, 0.2)], #{ legend: ["continuous", "sampled"] })
    #[family = "plots"]
    fn plot_step(call, models: Dynamic) -> Figure {
        plot_step(&models, None)
    }
    fn plot_step(call, models: Dynamic, options: Map) -> Figure {
        plot_step(&models, Some(&options))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::script::convert::system_value;
    use nalgebra::DMatrix;

    fn lag(pole: f64) -> Dynamic {
        let m = |v: f64| DMatrix::from_element(1, 1, v);
        system_value(StateSpace::new(m(pole), m(1.0), m(1.0), m(0.0), 0.0).expect("valid model"))
    }

    #[test]
    fn legend_names_the_models() {
        let both = Dynamic::from_array(vec![lag(-1.0), lag(-3.0)]);
        let mut o = Map::new();
        o.insert(
            "legend".into(),
            Dynamic::from_array(vec!["slow".into(), "fast".into()]),
        );
        let fig = plot_step(&both, Some(&o)).expect("plots");
        let labels: Vec<Option<String>> = fig.0.panels[0]
            .series
            .iter()
            .map(|s| s.label.clone())
            .collect();
        assert!(labels.contains(&Some("slow".into())), "{labels:?}");
        assert!(labels.contains(&Some("fast".into())), "{labels:?}");
        assert!(fig.0.to_svg().expect("renders").contains("slow"));
    }
}
