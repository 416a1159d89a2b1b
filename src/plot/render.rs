//! `Figure::to_svg`: validate, lay out, draw.
//!
//! Drawing order inside a panel: grid (minor, then major, then zero lines), axis rules
//! and tick marks, data series in order, marks, then labels. The legend sits under the
//! figure so it never covers data.

use super::canvas::{finish_document, Align, Baseline, Canvas, Font};
use super::figure::{Figure, Mark, MarkerShape, Panel, SeriesStyle};
use super::geom::{polylines, Rect};
use super::layout::{layout, Entry, PanelFrame};
use super::theme::{self, series_colour, text_width};
use super::{PlotError, SIZE_LIMITS};

impl Figure {
    /// Render the figure as a standalone SVG document.
    ///
    /// The output is deterministic (the same figure gives the same bytes), references
    /// nothing outside itself, and uses a generic font family. Data never makes this fail:
    /// NaN, infinite and (on log axes) non-positive points are skipped, empty series draw
    /// nothing, and degenerate ranges are widened. It fails only on a figure without
    /// panels, a size outside [`SIZE_LIMITS`], or a series whose x and y lengths differ.
    pub fn to_svg(&self) -> Result<String, PlotError> {
        self.validate()?;
        let frame = layout(self);
        let mut buf = String::new();
        {
            let canvas = Canvas::new(&mut buf, self.width, self.height);
            canvas.fill(theme::BACKGROUND)?;
            if let Some(t) = &self.title {
                let font = Font {
                    bold: true,
                    ..Font::new(theme::TITLE_SIZE, theme::INK)
                };
                canvas.text(
                    t,
                    (theme::OUTER_PAD, theme::OUTER_PAD),
                    font,
                    Align::Left,
                    Baseline::Top,
                )?;
            }
            for (panel, f) in self.panels.iter().zip(&frame.panels) {
                draw_panel(&canvas, panel, f, f64::from(self.width))?;
            }
            for (entry, x, y) in &frame.legend {
                draw_legend_entry(&canvas, entry, *x, *y)?;
            }
            canvas.finish()?;
        }
        let sizes = [theme::TITLE_SIZE, theme::LABEL_SIZE, theme::TICK_SIZE];
        Ok(finish_document(
            buf,
            self.width,
            self.height,
            self.title.as_deref(),
            &sizes,
        ))
    }

    fn validate(&self) -> Result<(), PlotError> {
        if self.panels.is_empty() {
            return Err(PlotError::NoPanels);
        }
        let ok = |v: u32| (SIZE_LIMITS.0..=SIZE_LIMITS.1).contains(&v);
        if !ok(self.width) || !ok(self.height) {
            return Err(PlotError::Size {
                width: self.width,
                height: self.height,
            });
        }
        for (panel, p) in self.panels.iter().enumerate() {
            for (series, s) in p.series.iter().enumerate() {
                if s.x.len() != s.y.len() {
                    return Err(PlotError::LengthMismatch {
                        panel,
                        series,
                        x: s.x.len(),
                        y: s.y.len(),
                    });
                }
            }
        }
        Ok(())
    }
}

fn tick_font() -> Font {
    Font::new(theme::TICK_SIZE, theme::INK_SOFT)
}

fn draw_panel(canvas: &Canvas, p: &Panel, f: &PanelFrame, fig_width: f64) -> Result<(), PlotError> {
    let r = f.rect;
    // Grid: minor lines first so major ones cross over them.
    for major in [false, true] {
        let (c, w) = if major {
            (theme::GRID, theme::GRID_WIDTH)
        } else {
            (theme::GRID_MINOR, theme::GRID_MINOR_WIDTH)
        };
        for t in f.x_ticks.iter().filter(|t| t.major == major) {
            if let Some(x) =
                f.xs.px(t.value)
                    .filter(|&x| x > r.left + 0.5 && x <= r.right + 0.01)
            {
                canvas.vrule(x, r.top, r.bottom, w, c)?;
            }
        }
        for t in f.y_ticks.iter().filter(|t| t.major == major) {
            if let Some(y) =
                f.ys.px(t.value)
                    .filter(|&y| y >= r.top - 0.01 && y < r.bottom - 0.5)
            {
                canvas.hrule(r.left, r.right, y, w, c)?;
            }
        }
    }
    if !f.ys.log && f.ys.lo < 0.0 && f.ys.hi > 0.0 {
        if let Some(y) = f.ys.px(0.0) {
            canvas.hrule(r.left, r.right, y, theme::GRID_WIDTH, theme::ZERO_LINE)?;
        }
    }
    if f.x_zero_line && !f.xs.log && f.xs.lo < 0.0 && f.xs.hi > 0.0 {
        if let Some(x) = f.xs.px(0.0) {
            canvas.vrule(x, r.top, r.bottom, theme::GRID_WIDTH, theme::ZERO_LINE)?;
        }
    }

    // Axis rules on the left and bottom, with outward tick marks at labelled ticks.
    let aw = theme::AXIS_WIDTH;
    canvas.vrule(r.left, r.top, r.bottom + aw / 2.0, aw, theme::AXIS)?;
    canvas.hrule(r.left - aw / 2.0, r.right, r.bottom, aw, theme::AXIS)?;
    let tl = theme::TICK_LENGTH;
    for t in f.x_ticks.iter().filter(|t| t.label.is_some()) {
        if let Some(x) = f.xs.px(t.value) {
            canvas.vrule(x, r.bottom, r.bottom + tl, aw, theme::AXIS)?;
        }
    }
    for t in f.y_ticks.iter().filter(|t| t.label.is_some()) {
        if let Some(y) = f.ys.px(t.value) {
            canvas.hrule(r.left - tl, r.left, y, aw, theme::AXIS)?;
        }
    }

    for (i, s) in p.series.iter().enumerate() {
        let (c, wrap_dash) = series_colour(s.colour.unwrap_or(i));
        let pts: Vec<Option<(f64, f64)>> =
            s.x.iter()
                .zip(&s.y)
                .map(|(&x, &y)| Some((f.xs.px(x)?, f.ys.px(y)?)))
                .collect();
        let shape = match s.style {
            SeriesStyle::Line => None,
            SeriesStyle::Markers(m) | SeriesStyle::LineAndMarkers(m) => Some(m),
        };
        if !matches!(s.style, SeriesStyle::Markers(_)) {
            let (runs, isolated) = polylines(&pts, &r);
            for run in &runs {
                canvas.line(run, theme::LINE_WIDTH, c, s.dashed || wrap_dash)?;
            }
            if shape.is_none() {
                for q in isolated {
                    canvas.circle(q, theme::LINE_WIDTH * 1.25, c, None)?;
                }
            }
        }
        if let Some(m) = shape {
            for q in pts.iter().flatten().filter(|q| r.contains(**q)) {
                canvas.marker(m, *q, c)?;
            }
        }
    }

    for m in &p.marks {
        draw_mark(canvas, m, f)?;
    }

    // Tick labels, kept inside the canvas.
    if f.x_decor {
        let y = r.bottom + tl + theme::TICK_LABEL_GAP;
        for t in &f.x_ticks {
            let (Some(label), Some(x)) = (t.label.as_deref(), f.xs.px(t.value)) else {
                continue;
            };
            let half = 0.5 * text_width(label, theme::TICK_SIZE);
            let x = x.min(fig_width - 2.0 - half).max(2.0 + half);
            canvas.text(label, (x, y), tick_font(), Align::Center, Baseline::Top)?;
        }
        if let Some(l) = &p.x_label {
            let y = y + theme::TICK_SIZE + theme::LABEL_GAP;
            let font = Font::new(theme::LABEL_SIZE, theme::INK);
            canvas.text(
                l,
                (0.5 * (r.left + r.right), y),
                font,
                Align::Center,
                Baseline::Top,
            )?;
        }
    }
    let x = r.left - tl - theme::TICK_LABEL_GAP;
    for t in &f.y_ticks {
        let (Some(label), Some(y)) = (t.label.as_deref(), f.ys.px(t.value)) else {
            continue;
        };
        canvas.text(label, (x, y), tick_font(), Align::Right, Baseline::Center)?;
    }
    if let Some(l) = &p.y_label {
        let font = Font {
            vertical: true,
            ..Font::new(theme::LABEL_SIZE, theme::INK)
        };
        let at = (
            theme::OUTER_PAD + 0.5 * theme::LABEL_SIZE,
            0.5 * (r.top + r.bottom),
        );
        canvas.text(l, at, font, Align::Center, Baseline::Center)?;
    }
    Ok(())
}

fn mark_font() -> Font {
    Font::new(theme::TICK_SIZE, theme::MARK)
}

fn inside(r: &Rect, p: Option<(f64, f64)>) -> Option<(f64, f64)> {
    p.filter(|q| r.contains(*q))
}

fn draw_mark(canvas: &Canvas, m: &Mark, f: &PanelFrame) -> Result<(), PlotError> {
    let r = f.rect;
    let at = |x: f64, y: f64| inside(&r, f.xs.px(x).zip(f.ys.px(y)));
    let lw = theme::MARK_LINE_WIDTH;
    match m {
        Mark::VerticalLine { x, label } => {
            let Some(px) =
                f.xs.px(*x)
                    .filter(|&v| v >= r.left - 1e-6 && v <= r.right + 1e-6)
            else {
                return Ok(());
            };
            canvas.line(&[(px, r.top), (px, r.bottom)], lw, theme::MARK, true)?;
            if let Some(l) = label {
                let fits_right = px + 4.0 + text_width(l, theme::TICK_SIZE) <= r.right;
                let (x, align) = if fits_right {
                    (px + 4.0, Align::Left)
                } else {
                    (px - 4.0, Align::Right)
                };
                canvas.text(l, (x, r.top + 3.0), mark_font(), align, Baseline::Top)?;
            }
        }
        Mark::HorizontalLine { y, label } => {
            let Some(py) =
                f.ys.px(*y)
                    .filter(|&v| v >= r.top - 1e-6 && v <= r.bottom + 1e-6)
            else {
                return Ok(());
            };
            canvas.line(&[(r.left, py), (r.right, py)], lw, theme::MARK, true)?;
            if let Some(l) = label {
                let (y, base) = if py - theme::TICK_SIZE - 3.0 >= r.top {
                    (py - 3.0, Baseline::Bottom)
                } else {
                    (py + 3.0, Baseline::Top)
                };
                canvas.text(l, (r.right - 4.0, y), mark_font(), Align::Right, base)?;
            }
        }
        Mark::Point { x, y, label, shape } => {
            let Some(p) = at(*x, *y) else { return Ok(()) };
            canvas.marker(*shape, p, theme::MARK)?;
            if let Some(l) = label {
                // Below and to the left: curves through a complex plane's critical point
                // usually pass to its right.
                let d = theme::MARKER_RADIUS + 2.0;
                canvas.text(
                    l,
                    (p.0 - d, p.1 + d),
                    mark_font(),
                    Align::Right,
                    Baseline::Top,
                )?;
            }
        }
        Mark::Arrow { from, to, colour } => {
            let (Some(a), Some(b)) = (f.xs.px(from.0).zip(f.ys.px(from.1)), at(to.0, to.1)) else {
                return Ok(());
            };
            let c = colour.map_or(theme::MARK, |i| series_colour(i).0);
            canvas.arrow(a, b, c)?;
        }
        Mark::Text { x, y, text } => {
            if let Some(p) = at(*x, *y) {
                canvas.text(text, p, mark_font(), Align::Left, Baseline::Center)?;
            }
        }
    }
    Ok(())
}

fn draw_legend_entry(canvas: &Canvas, e: &Entry, x: f64, y: f64) -> Result<(), PlotError> {
    let (c, _) = series_colour(e.colour);
    let s = theme::LEGEND_SAMPLE;
    let shape: Option<MarkerShape> = match e.style {
        SeriesStyle::Line => None,
        SeriesStyle::Markers(m) | SeriesStyle::LineAndMarkers(m) => Some(m),
    };
    if !matches!(e.style, SeriesStyle::Markers(_)) {
        canvas.line(&[(x, y), (x + s, y)], theme::LINE_WIDTH, c, e.dashed)?;
    }
    if let Some(m) = shape {
        canvas.marker(m, (x + 0.5 * s, y), c)?;
    }
    let font = Font::new(theme::TICK_SIZE, theme::INK_SOFT);
    canvas.text(
        &e.label,
        (x + s + theme::LEGEND_TEXT_GAP, y),
        font,
        Align::Left,
        Baseline::Center,
    )
}
