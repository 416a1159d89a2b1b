//! The figure model: what the script layer builds and the renderer draws.
//!
//! A [`Figure`] is one or more [`Panel`]s stacked top to bottom. Each panel holds data
//! [`Series`] and annotation [`Mark`]s in data coordinates. Nothing here touches
//! plotters; [`Figure::to_svg`] (in `render.rs`) turns the model into SVG text.

/// A figure: an optional title above one or more panels stacked vertically.
#[derive(Debug, Clone, PartialEq)]
pub struct Figure {
    /// Title drawn above the first panel, left-aligned.
    pub title: Option<String>,
    /// Panels from top to bottom. A figure needs at least one.
    pub panels: Vec<Panel>,
    /// Displayed width in CSS pixels (100 to 4000).
    pub width: u32,
    /// Displayed height in CSS pixels (100 to 4000).
    pub height: u32,
    /// Give all panels the same x range (the union of theirs), draw x tick labels and the
    /// x label only under the bottom panel, and align the panels' plot areas.
    pub share_x: bool,
}

/// One set of axes.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Panel {
    /// Label under the x-axis (include the unit: `"time (s)"`).
    pub x_label: Option<String>,
    /// Label beside the y-axis.
    pub y_label: Option<String>,
    /// Logarithmic x-axis; values ≤ 0 are skipped.
    pub log_x: bool,
    /// Logarithmic y-axis; values ≤ 0 are skipped.
    pub log_y: bool,
    /// The y values are angles in degrees: prefer ticks at multiples of 15, 30, 45, 90.
    pub y_degrees: bool,
    /// One data unit spans the same length on both axes (complex-plane plots).
    pub equal_aspect: bool,
    /// List this panel's labelled series in the figure legend (drawn under the figure).
    pub legend: bool,
    /// The data, drawn in order (later series on top).
    pub series: Vec<Series>,
    /// Annotations, drawn above the data.
    pub marks: Vec<Mark>,
}

/// A data series: paired x and y values drawn as a line, markers or both.
///
/// Non-finite values (NaN, ±∞, or beyond ±1e300) and, on a log axis, values ≤ 0 are
/// skipped; a skipped point breaks a line into separate segments.
#[derive(Debug, Clone, PartialEq)]
pub struct Series {
    /// x values; must have as many entries as `y`.
    pub x: Vec<f64>,
    /// y values.
    pub y: Vec<f64>,
    /// Legend text; unlabelled series stay out of the legend.
    pub label: Option<String>,
    /// How the points are drawn.
    pub style: SeriesStyle,
    /// Palette index (wrapping round); `None` uses the series' position in its panel,
    /// so the n-th series of stacked panels (magnitude and phase) match.
    pub colour: Option<usize>,
    /// Dashed stroke for the line part.
    pub dashed: bool,
}

/// How a series is drawn.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum SeriesStyle {
    /// A line through the points.
    #[default]
    Line,
    /// A marker at each point, no line.
    Markers(MarkerShape),
    /// A line with a marker at each point.
    LineAndMarkers(MarkerShape),
}

/// Marker shapes, drawn from basic shapes so they look the same everywhere.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum MarkerShape {
    /// A filled round dot.
    #[default]
    Dot,
    /// A slanted cross with square-ended arms (poles).
    Cross,
    /// An open ring (zeros).
    Ring,
    /// An upright plus sign (reference points such as −1).
    Plus,
    /// A filled square.
    Square,
    /// A filled diamond.
    Diamond,
    /// A filled triangle pointing up.
    Triangle,
}

/// An annotation in data coordinates, drawn in the mark colour above the data.
#[derive(Debug, Clone, PartialEq)]
pub enum Mark {
    /// A dashed vertical reference line across the panel (crossover frequency, a time).
    VerticalLine {
        /// Position on the x-axis.
        x: f64,
        /// Text beside the top of the line.
        label: Option<String>,
    },
    /// A dashed horizontal reference line across the panel (0 dB, −180°, a setpoint).
    HorizontalLine {
        /// Position on the y-axis.
        y: f64,
        /// Text above the right-hand end of the line.
        label: Option<String>,
    },
    /// A marker at a point (the critical point −1 of a polar plot).
    Point {
        /// x position.
        x: f64,
        /// y position.
        y: f64,
        /// Text beside the marker.
        label: Option<String>,
        /// Marker shape.
        shape: MarkerShape,
    },
    /// An arrow from one point to another with its head at `to` (direction of travel).
    Arrow {
        /// Tail.
        from: (f64, f64),
        /// Head.
        to: (f64, f64),
        /// Palette index; `None` draws it in the mark colour.
        colour: Option<usize>,
    },
    /// Text whose left end sits at a point.
    Text {
        /// x position.
        x: f64,
        /// y position (the text is centred on it vertically).
        y: f64,
        /// The text.
        text: String,
    },
}

/// Options from the script layer (`#{ title, x_label, y_label, log_x, log_y, legend }`).
///
/// `None` leaves the figure as it is. `title`, `width` and `height` apply to the figure;
/// `x_label` to the bottom panel when the x-axis is shared, otherwise to every panel;
/// `log_x` and `legend` to every panel; `y_label` and `log_y` to the first panel only
/// (the phase panel of a frequency response keeps its linear degree axis).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct PlotOptions {
    /// Figure title.
    pub title: Option<String>,
    /// x-axis label.
    pub x_label: Option<String>,
    /// y-axis label.
    pub y_label: Option<String>,
    /// Show a legend.
    pub legend: Option<bool>,
    /// Logarithmic x-axis.
    pub log_x: Option<bool>,
    /// Logarithmic y-axis.
    pub log_y: Option<bool>,
    /// Displayed width in CSS pixels.
    pub width: Option<u32>,
    /// Displayed height in CSS pixels.
    pub height: Option<u32>,
}

/// Default displayed width: fits a report column and stays readable at 600 px.
pub const DEFAULT_WIDTH: u32 = 640;
/// Default displayed height of a one-panel figure.
pub const DEFAULT_HEIGHT: u32 = 400;

impl Series {
    /// A line through the points `(x[i], y[i])`.
    pub fn line(x: Vec<f64>, y: Vec<f64>, label: Option<String>) -> Self {
        Series {
            x,
            y,
            label,
            style: SeriesStyle::Line,
            colour: None,
            dashed: false,
        }
    }

    /// A marker at each point `(x[i], y[i])`.
    pub fn markers(x: Vec<f64>, y: Vec<f64>, label: Option<String>, shape: MarkerShape) -> Self {
        Series {
            style: SeriesStyle::Markers(shape),
            ..Series::line(x, y, label)
        }
    }

    /// The same series with palette colour `index`.
    pub fn with_colour(mut self, index: usize) -> Self {
        self.colour = Some(index);
        self
    }

    /// The same series with a dashed line.
    pub fn with_dashes(mut self) -> Self {
        self.dashed = true;
        self
    }
}

impl Panel {
    /// A linear panel holding `series`.
    pub fn new(series: Vec<Series>) -> Self {
        Panel {
            series,
            ..Panel::default()
        }
    }
}

impl Default for Figure {
    fn default() -> Self {
        Figure {
            title: None,
            panels: Vec::new(),
            width: DEFAULT_WIDTH,
            height: DEFAULT_HEIGHT,
            share_x: false,
        }
    }
}

impl Figure {
    /// A figure of the given panels at the default size (taller for several panels).
    pub fn new(panels: Vec<Panel>) -> Self {
        let extra = panels.len().saturating_sub(1).min(3) as u32;
        Figure {
            height: DEFAULT_HEIGHT + 160 * extra,
            panels,
            ..Figure::default()
        }
    }

    /// One or more lines over a common x: `ys` holds each line's y values and label.
    /// A legend is shown when any line has a label.
    pub fn line(x: Vec<f64>, ys: Vec<(Vec<f64>, Option<String>)>, options: &PlotOptions) -> Self {
        let legend = ys.iter().any(|(_, l)| l.is_some());
        let series = ys
            .into_iter()
            .map(|(y, label)| Series::line(x.clone(), y, label))
            .collect();
        let mut figure = Figure::new(vec![Panel {
            legend,
            ..Panel::new(series)
        }]);
        figure.apply(options);
        figure
    }

    /// Apply script options; see [`PlotOptions`] for what goes where.
    pub fn apply(&mut self, options: &PlotOptions) {
        if let Some(t) = &options.title {
            self.title = Some(t.clone());
        }
        if let Some(w) = options.width {
            self.width = w;
        }
        if let Some(h) = options.height {
            self.height = h;
        }
        let last = self.panels.len().saturating_sub(1);
        for (i, panel) in self.panels.iter_mut().enumerate() {
            if let Some(l) = &options.x_label {
                if !self.share_x || i == last {
                    panel.x_label = Some(l.clone());
                }
            }
            if let Some(v) = options.log_x {
                panel.log_x = v;
            }
            if let Some(v) = options.legend {
                panel.legend = v;
            }
            if i == 0 {
                if let Some(l) = &options.y_label {
                    panel.y_label = Some(l.clone());
                }
                if let Some(v) = options.log_y {
                    panel.log_y = v;
                }
            }
        }
    }
}
