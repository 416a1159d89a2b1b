//! Figures: `plot`, `fig.add`, `save`, all declared. The drawing itself is `crate::plot`.

use crate::plot::{Figure as PlotFigure, MarkerShape, PlotOptions, Series};
use crate::script::convert::{fail, to_f64_vec, to_finite_vec, to_str, type_name, Rr};
use crate::script::declare::{Call, Param};
use crate::script::types::Figure;
use rhai::{Array, Dynamic, Map};

/// The x values of a plot: finite numbers.
struct Abscissae(Vec<f64>);

impl Param for Abscissae {
    const KIND: &'static str = "numbers";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        to_finite_vec(&v, call.name, arg).map(Abscissae)
    }
}

/// The y values of a plot: one series of numbers, or an array of series (`inf`/`-inf`
/// are gaps).
struct SeriesList(Vec<Vec<f64>>);

impl Param for SeriesList {
    const KIND: &'static str = "numbers | [numbers]";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        series_list(&v, call.name, arg).map(SeriesList)
    }
}

/// One series of y values (`inf`/`-inf` are gaps, NaN refused).
struct Gapped(Vec<f64>);

impl Param for Gapped {
    const KIND: &'static str = "numbers";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        gap_vec(&v, call.name, arg).map(Gapped)
    }
}

crate::builtins! {
    /// adds a series to a figure's first panel, in place
    ///
    /// x: finite numbers; y: numbers of the same length, where inf or -inf is a gap in the
    /// line (as in plot) and NaN is refused. options: #{ label, dashed, markers } — a
    /// label turns the legend on.
    ///
    /// example:
    ///     let fig = plot([0, 1], [0, 1]);
    ///     fig.add([0, 1], [1, 0], #{ label: "falling" });
    ///     fig
    #[family = "plots"]
    fn add(call, &mut fig: Figure, x: Abscissae, y: Gapped) -> () {
        add_series(&call, fig, x.0, y.0, None)
    }
    fn add(call, &mut fig: Figure, x: Abscissae, y: Gapped, options: Map) -> () {
        add_series(&call, fig, x.0, y.0, Some(&options))
    }

    /// a line plot of y against x; y may be an array of series
    ///
    /// x: array of numbers. y: array of numbers, or an array of such arrays (one series
    /// each). options: #{ title, x_label, y_label, legend, log_x, log_y, markers, width,
    /// height } — legend is an array of series names (or false); markers: true draws
    /// points instead of lines. A y value inf or -inf is a gap: the line stops before it
    /// and starts again after it (as loop_margins reports a missing margin); NaN is
    /// refused.
    ///
    /// example:
    ///     let t = linear_grid(0, 5, 101);
    ///     let y = t.map(|v| exp(-v));
    ///     plot(t, y, #{ title: "decay", x_label: "time (s)" })
    #[family = "plots"]
    fn plot(call, x: Abscissae, y: SeriesList) -> Figure {
        make_plot(x.0, y.0, None)
    }
    fn plot(call, x: Abscissae, y: SeriesList, options: Map) -> Figure {
        make_plot(x.0, y.0, Some(&options))
    }

    /// writes a figure as an SVG file (inside the analysis folder)
    ///
    /// path: relative to the analysis file; the folder must exist. As a method:
    /// fig.save(path).
    ///
    /// example:
    ///     plot([0, 1], [0, 1]).save("line.svg");
    #[family = "plots"]
    fn save(call, fig: Figure, path: String) -> () {
        call.write_file(&path, svg(&fig)?.as_bytes())
    }
}

fn opt_bool(m: &Map, key: &str, fname: &str) -> Rr<Option<bool>> {
    match m.get(key) {
        None => Ok(None),
        Some(v) => v.as_bool().map(Some).map_err(|_| {
            fail(format!(
                "{fname}: option {key} must be true or false, found {}",
                type_name(v)
            ))
        }),
    }
}

fn opt_string(m: &Map, key: &str, fname: &str) -> Rr<Option<String>> {
    m.get(key)
        .map(|v| to_str(v, fname, &format!("option {key}")))
        .transpose()
}

fn opt_size(m: &Map, key: &str, fname: &str) -> Rr<Option<u32>> {
    match m.get(key) {
        None => Ok(None),
        Some(v) => {
            let x = crate::script::convert::to_count(v, fname, &format!("option {key}"))?;
            let (lo, hi) = crate::plot::SIZE_LIMITS;
            if !(lo as usize..=hi as usize).contains(&x) {
                return Err(fail(format!(
                    "{fname}: option {key} must be {lo} to {hi} pixels, found {x}"
                )));
            }
            Ok(Some(x as u32))
        }
    }
}

const KNOWN: &[&str] = &[
    "title", "x_label", "y_label", "legend", "log_x", "log_y", "markers", "width", "height",
    "label", "dashed",
];

/// Reads the plot options map, refusing unknown keys (a typo would otherwise be silent).
pub fn options(m: &Map, fname: &str) -> Rr<PlotOptions> {
    for k in m.keys() {
        if !KNOWN.contains(&k.as_str()) {
            return Err(fail(format!(
                "{fname}: unknown option '{k}' (known: {})",
                KNOWN.join(", ")
            )));
        }
    }
    let legend = match m.get("legend") {
        Some(v) if v.is_array() => Some(true),
        _ => opt_bool(m, "legend", fname)?,
    };
    Ok(PlotOptions {
        title: opt_string(m, "title", fname)?,
        x_label: opt_string(m, "x_label", fname)?,
        y_label: opt_string(m, "y_label", fname)?,
        legend,
        log_x: opt_bool(m, "log_x", fname)?,
        log_y: opt_bool(m, "log_y", fname)?,
        width: opt_size(m, "width", fname)?,
        height: opt_size(m, "height", fname)?,
    })
}

/// Series values: numbers, where `inf`/`-inf` mark a gap in the line (the renderer skips
/// unusable points and splits the line there); NaN is refused, naming the sample.
fn gap_vec(v: &Dynamic, fname: &str, arg: &str) -> Rr<Vec<f64>> {
    let y = to_f64_vec(v, fname, arg)?;
    if let Some(k) = y.iter().position(|x| x.is_nan()) {
        return Err(fail(format!(
            "{fname}: {arg}[{k}] is NaN, expected a finite number (or inf/-inf for a gap)"
        )));
    }
    Ok(y)
}

fn series_list(y: &Dynamic, fname: &str, arg: &str) -> Rr<Vec<Vec<f64>>> {
    if let Some(a) = y.read_lock::<Array>() {
        if a.first().is_some_and(crate::script::convert::is_list) {
            return a
                .iter()
                .enumerate()
                .map(|(k, s)| gap_vec(s, fname, &format!("{arg}[{k}]")))
                .collect();
        }
    }
    Ok(vec![gap_vec(y, fname, arg)?])
}

fn labels(m: Option<&Map>, fname: &str) -> Rr<Vec<String>> {
    let Some(v) = m.and_then(|m| m.get("legend")) else {
        return Ok(Vec::new());
    };
    let Some(a) = v.read_lock::<Array>() else {
        return Ok(Vec::new());
    };
    a.iter()
        .enumerate()
        .map(|(k, s)| to_str(s, fname, &format!("legend[{k}]")))
        .collect()
}

fn make_plot(x: Vec<f64>, ys: Vec<Vec<f64>>, opts: Option<&Map>) -> Rr<Figure> {
    let f = "plot";
    for (k, s) in ys.iter().enumerate() {
        if s.len() != x.len() {
            return Err(fail(format!(
                "plot: series {k} has {} values but x has {}; they must match",
                s.len(),
                x.len()
            )));
        }
    }
    let names = labels(opts, f)?;
    let o = match opts {
        Some(m) => options(m, f)?,
        None => PlotOptions::default(),
    };
    let markers = match opts {
        Some(m) => opt_bool(m, "markers", f)?.unwrap_or(false),
        None => false,
    };
    let ys: Vec<(Vec<f64>, Option<String>)> = ys
        .into_iter()
        .enumerate()
        .map(|(k, s)| (s, names.get(k).cloned()))
        .collect();
    let mut fig = PlotFigure::line(x, ys, &o);
    if markers {
        for p in &mut fig.panels {
            for s in &mut p.series {
                s.style = crate::plot::SeriesStyle::Markers(MarkerShape::Dot);
            }
        }
    }
    Ok(Figure(fig))
}

fn add_series(
    call: &Call,
    fig: &mut Figure,
    x: Vec<f64>,
    y: Vec<f64>,
    opts: Option<&Map>,
) -> Rr<()> {
    let f = call.name;
    if x.len() != y.len() {
        return Err(call.fail(format_args!(
            "y has {} values but x has {}",
            y.len(),
            x.len()
        )));
    }
    let (label, dashed, markers) = match opts {
        Some(m) => (
            opt_string(m, "label", f)?,
            opt_bool(m, "dashed", f)?.unwrap_or(false),
            opt_bool(m, "markers", f)?.unwrap_or(false),
        ),
        None => (None, false, false),
    };
    let mut s = if markers {
        Series::markers(x, y, label.clone(), MarkerShape::Dot)
    } else {
        Series::line(x, y, label.clone())
    };
    if dashed {
        s = s.with_dashes();
    }
    let Some(panel) = fig.0.panels.first_mut() else {
        return Err(call.fail("the figure has no panel to add to"));
    };
    if label.is_some() {
        panel.legend = true;
    }
    panel.series.push(s);
    Ok(())
}

/// Renders a figure to SVG, with the error in script terms.
pub fn svg(fig: &Figure) -> Rr<String> {
    fig.0.to_svg().map_err(|e| fail(format!("figure: {e}")))
}

/// One line describing a figure (for print and the terminal transcript).
pub fn describe(fig: &Figure) -> String {
    let series: usize = fig.0.panels.iter().map(|p| p.series.len()).sum();
    format!(
        "figure{} · {} panel{} · {} series",
        fig.0
            .title
            .as_ref()
            .map(|t| format!(" “{t}”"))
            .unwrap_or_default(),
        fig.0.panels.len(),
        if fig.0.panels.len() == 1 { "" } else { "s" },
        series
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    fn arr(v: &[f64]) -> Dynamic {
        Dynamic::from_array(v.iter().map(|&x| Dynamic::from_float(x)).collect())
    }

    #[test]
    fn infinities_are_gaps_and_nan_is_refused() {
        let x = arr(&[0.0, 1.0, 2.0, 3.0, 4.0, 5.0]);
        let y = arr(&[0.0, 1.0, f64::INFINITY, 2.0, 3.0, f64::NEG_INFINITY]);
        let plot = |y: &Dynamic| {
            let x = to_finite_vec(&x, "plot", "x")?;
            make_plot(x, series_list(y, "plot", "y")?, None)
        };
        let fig = plot(&y).expect("inf is a gap");
        let svg = fig.0.to_svg().expect("renders");
        // [0, 1] and [2, 3] are drawn, the infinities are not.
        assert_eq!(svg.matches("<polyline").count(), 2);
        let e = plot(&arr(&[0.0, f64::NAN, 1.0, 2.0, 3.0, 4.0]))
            .err()
            .map(|e| e.to_string())
            .unwrap_or_default();
        assert!(e.contains("plot: y[1] is NaN"), "{e}");
    }
}
