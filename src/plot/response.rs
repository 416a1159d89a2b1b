//! Time-response figures: each output against time in its own panel, panels sharing the
//! time axis, several responses overlaid in matching colours.

use super::figure::{Figure, Mark, Panel, Series};

/// One response to draw: times, one y vector per output, legend text.
#[derive(Debug, Clone, PartialEq)]
pub struct ResponseCurve {
    /// Sample times in seconds.
    pub t: Vec<f64>,
    /// One vector per output, as long as `t`.
    pub outputs: Vec<Vec<f64>>,
    /// Legend text (unlabelled curves stay out of the legend).
    pub label: Option<String>,
    /// Draw as a staircase (the samples of a discrete model are held between samples).
    pub stairs: bool,
}

impl ResponseCurve {
    fn series(&self, output: usize, colour: usize) -> Option<Series> {
        let y = self.outputs.get(output)?;
        let (x, y) = if self.stairs && self.t.len() > 1 {
            let mut xs = Vec::with_capacity(2 * self.t.len());
            let mut ys = Vec::with_capacity(2 * self.t.len());
            for k in 0..self.t.len() {
                if k > 0 {
                    xs.push(self.t[k]);
                    ys.push(y[k - 1]);
                }
                xs.push(self.t[k]);
                ys.push(y[k]);
            }
            (xs, ys)
        } else {
            (self.t.clone(), y.clone())
        };
        Some(Series::line(x, y, self.label.clone()).with_colour(colour))
    }
}

impl Figure {
    /// A time-response figure: one panel per output (as many as the curve with the most
    /// outputs), each labelled with `output_names[i]` or `y[i]`, sharing the x-axis
    /// "time (s)"; curve k has palette colour k in every panel. `levels[i]`, when given,
    /// draws a dashed reference line (e.g. the final value) in panel i.
    pub fn time_response(
        curves: &[ResponseCurve],
        output_names: &[String],
        levels: &[Option<(f64, String)>],
    ) -> Figure {
        let panels_needed = curves
            .iter()
            .map(|c| c.outputs.len())
            .max()
            .unwrap_or(0)
            .max(1);
        let legend = curves.len() > 1 && curves.iter().any(|c| c.label.is_some());
        let mut panels = Vec::with_capacity(panels_needed);
        for i in 0..panels_needed {
            let series = curves
                .iter()
                .enumerate()
                .filter_map(|(k, c)| c.series(i, k))
                .collect();
            let mut panel = Panel {
                y_label: Some(
                    output_names
                        .get(i)
                        .cloned()
                        .unwrap_or_else(|| format!("y[{i}]")),
                ),
                legend: legend && i == 0,
                ..Panel::new(series)
            };
            if let Some(Some((y, label))) = levels.get(i) {
                if y.is_finite() {
                    panel.marks.push(Mark::HorizontalLine {
                        y: *y,
                        label: Some(label.clone()),
                    });
                }
            }
            panels.push(panel);
        }
        if let Some(last) = panels.last_mut() {
            last.x_label = Some("time (s)".into());
        }
        let mut fig = Figure::new(panels);
        fig.share_x = true;
        fig
    }
}
