//! Layout: data ranges, panel rectangles, margins that fit the tick labels, tick choice
//! and legend rows, all in display pixels.
//!
//! Margins depend on tick labels and tick labels on the space left by the margins, so
//! the horizontal layout is repeated (at most four times) until the margins settle. The
//! right margin always makes room for half of the last x tick label, so a log axis's
//! final decade label is never clipped.

use super::figure::{Figure, Mark, Panel, SeriesStyle};
use super::geom::{axis_limits, equalize, usable, Extent, Rect, Scale};
use super::theme::{self, text_width};
use super::ticks::{angle_ticks, linear_ticks, log_ticks, stepped_ticks, Tick};

/// A laid-out panel.
#[derive(Debug, Clone)]
pub struct PanelFrame {
    /// The plot area.
    pub rect: Rect,
    /// x data → pixels.
    pub xs: Scale,
    /// y data → pixels.
    pub ys: Scale,
    /// Ticks along x (grid lines always, labels only when `x_decor`).
    pub x_ticks: Vec<Tick>,
    /// Ticks along y.
    pub y_ticks: Vec<Tick>,
    /// Draw x tick labels and the x label under this panel.
    pub x_decor: bool,
    /// Emphasise the x = 0 line (complex-plane panels).
    pub x_zero_line: bool,
}

/// A legend entry: text, palette index, dashed, style.
#[derive(Debug, Clone, PartialEq)]
pub struct Entry {
    /// Label text.
    pub label: String,
    /// Palette index.
    pub colour: usize,
    /// Dashed line sample.
    pub dashed: bool,
    /// Line, markers or both.
    pub style: SeriesStyle,
}

/// The whole figure laid out.
#[derive(Debug, Clone)]
pub struct Frame {
    /// Panels top to bottom.
    pub panels: Vec<PanelFrame>,
    /// Legend entries with their position: (entry, left x, centre y).
    pub legend: Vec<(Entry, f64, f64)>,
}

/// Vertical space taken by x tick labels and the x label under a panel.
fn x_decor_height(p: &Panel) -> f64 {
    let labels = theme::TICK_LENGTH + theme::TICK_LABEL_GAP + theme::TICK_SIZE;
    labels
        + if p.x_label.is_some() {
            theme::LABEL_GAP + theme::LABEL_SIZE
        } else {
            0.0
        }
}

fn has_markers(p: &Panel) -> bool {
    p.series
        .iter()
        .any(|s| !matches!(s.style, SeriesStyle::Line))
        || p.marks
            .iter()
            .any(|m| matches!(m, Mark::Point { .. } | Mark::Text { .. }))
}

/// The extents of a panel's drawable data and marks.
fn extents(p: &Panel) -> (Extent, Extent) {
    let (mut ex, mut ey) = (Extent::default(), Extent::default());
    let mut both = |x: f64, y: f64| {
        if usable(x, p.log_x) && usable(y, p.log_y) {
            ex.add(x, p.log_x);
            ey.add(y, p.log_y);
        }
    };
    for s in &p.series {
        for (&x, &y) in s.x.iter().zip(&s.y) {
            both(x, y);
        }
    }
    for m in &p.marks {
        match m {
            Mark::Point { x, y, .. } | Mark::Text { x, y, .. } => both(*x, *y),
            Mark::Arrow { from, to, .. } => {
                both(from.0, from.1);
                both(to.0, to.1);
            }
            Mark::VerticalLine { .. } | Mark::HorizontalLine { .. } => {}
        }
    }
    for m in &p.marks {
        match m {
            Mark::VerticalLine { x, .. } => ex.add(*x, p.log_x),
            Mark::HorizontalLine { y, .. } => ey.add(*y, p.log_y),
            _ => {}
        }
    }
    (ex, ey)
}

/// Data limits of each panel before the plot areas are known.
fn limits(fig: &Figure) -> Vec<((f64, f64), (f64, f64))> {
    let ext: Vec<(Extent, Extent)> = fig.panels.iter().map(extents).collect();
    let shared = ext.iter().fold(Extent::default(), |acc, e| acc.union(e.0));
    let own_x_pad = |p: &Panel| {
        if p.equal_aspect {
            0.08
        } else if has_markers(p) {
            0.04
        } else {
            0.0
        }
    };
    // Shared x-axes need the same padding too, or the panels' ranges differ.
    let shared_x_pad = fig.panels.iter().map(own_x_pad).fold(0.0, f64::max);
    fig.panels
        .iter()
        .zip(&ext)
        .map(|(p, (ex, ey))| {
            let mut ex = *ex;
            let mut x_pad = own_x_pad(p);
            if fig.share_x && shared.0.is_some_and(|(lo, _)| usable(lo, p.log_x)) {
                ex = shared;
                x_pad = shared_x_pad;
            }
            let y_pad = if p.equal_aspect {
                0.08
            } else if p.log_y {
                0.04
            } else {
                0.06
            };
            if p.equal_aspect && !p.log_x && !p.log_y {
                return framed_equal(ex, *ey, x_pad, y_pad);
            }
            (
                axis_limits(ex, p.log_x, x_pad),
                axis_limits(*ey, p.log_y, y_pad),
            )
        })
        .collect()
}

/// The centre of an extent whose values are all (nearly) equal, or `None` when it has a
/// spread (or no values).
fn degenerate_centre(e: Extent) -> Option<f64> {
    let (lo, hi) = e.0?;
    (hi - lo <= lo.abs().max(hi.abs()) * 1e-9).then_some(0.5 * (lo + hi))
}

/// Limits of an equal-aspect (complex-plane) panel framed by its data: an axis whose
/// values are all equal (poles on the real axis) borrows the other axis's span instead
/// of a fixed unit range, so data a hundredth of a unit apart stays apart; a single
/// point gets ±10 % of its modulus (±1 at the origin).
fn framed_equal(ex: Extent, ey: Extent, x_pad: f64, y_pad: f64) -> ((f64, f64), (f64, f64)) {
    let around = |mid: f64, half: f64| (mid - half, mid + half);
    match (degenerate_centre(ex), degenerate_centre(ey)) {
        (Some(mx), Some(my)) => {
            let m = mx.abs().max(my.abs());
            let half = if m > 0.0 { 0.1 * m } else { 1.0 };
            (around(mx, half), around(my, half))
        }
        (None, Some(my)) if ex.0.is_some() => {
            let xl = axis_limits(ex, false, x_pad);
            (xl, around(my, 0.5 * (xl.1 - xl.0)))
        }
        (Some(mx), None) if ey.0.is_some() => {
            let yl = axis_limits(ey, false, y_pad);
            (around(mx, 0.5 * (yl.1 - yl.0)), yl)
        }
        _ => (axis_limits(ex, false, x_pad), axis_limits(ey, false, y_pad)),
    }
}

/// Whether neighbouring tick labels along `scale` would touch.
fn crowded(ticks: &[Tick], scale: &Scale, horizontal: bool) -> bool {
    let labelled: Vec<(f64, f64)> = ticks
        .iter()
        .filter_map(|t| {
            Some((
                scale.px(t.value)?,
                text_width(t.label.as_deref()?, theme::TICK_SIZE),
            ))
        })
        .collect();
    labelled.windows(2).any(|w| {
        let gap = (w[1].0 - w[0].0).abs();
        if horizontal {
            gap < 0.5 * (w[0].1 + w[1].1) + 10.0
        } else {
            gap < theme::TICK_SIZE * 1.6
        }
    })
}

/// Ticks along one axis, thinned until their labels do not collide.
fn choose_ticks(scale: &Scale, degrees: bool, horizontal: bool) -> Vec<Tick> {
    let len = (scale.p1 - scale.p0).abs();
    let spacing = if horizontal {
        theme::TICK_SPACING_X
    } else {
        theme::TICK_SPACING_Y
    };
    let mut target = ((len / spacing).round() as usize).clamp(2, 10);
    loop {
        let ticks = if scale.log {
            log_ticks(scale.lo, scale.hi, target, len / 45.0)
        } else if degrees {
            angle_ticks(scale.lo, scale.hi, target)
        } else {
            linear_ticks(scale.lo, scale.hi, target)
        };
        if target <= 2 || !crowded(&ticks, scale, horizontal) {
            return ticks;
        }
        target -= 1;
    }
}

/// The spacing of a run of evenly stepped ticks.
fn step_of(ticks: &[Tick]) -> Option<f64> {
    let labelled: Vec<f64> = ticks
        .iter()
        .filter(|t| t.label.is_some())
        .map(|t| t.value)
        .collect();
    labelled.get(1).zip(labelled.first()).map(|(b, a)| b - a)
}

/// On an equal-aspect panel, give both axes one step so grid cells come out square: the
/// coarsest 1-2-5 step between the two axes' own steps that still leaves four labels on
/// each axis without crowding, else the finer of the two.
fn square_grid(xs: &Scale, ys: &Scale, x: &mut Vec<Tick>, y: &mut Vec<Tick>) {
    let (Some(sx), Some(sy)) = (step_of(x), step_of(y)) else {
        return;
    };
    let (fine, coarse) = (sx.min(sy), sx.max(sy));
    if coarse - fine <= 1e-9 * coarse {
        return;
    }
    let power = 10f64.powf(fine.log10().floor());
    let mut candidates: Vec<f64> = [1.0, 2.0, 5.0, 10.0, 20.0, 50.0, 100.0]
        .iter()
        .map(|m| m * power)
        .filter(|&s| s >= fine * (1.0 - 1e-9) && s <= coarse * (1.0 + 1e-9))
        .collect();
    candidates.reverse();
    candidates.push(fine);
    let labels = |t: &[Tick]| t.iter().filter(|t| t.label.is_some()).count();
    for (k, &step) in candidates.iter().enumerate() {
        let (nx, ny) = (
            stepped_ticks(xs.lo, xs.hi, step),
            stepped_ticks(ys.lo, ys.hi, step),
        );
        let last = k + 1 == candidates.len();
        let enough = labels(&nx) >= 4 && labels(&ny) >= 4;
        if (enough || last) && !crowded(&nx, xs, true) && !crowded(&ny, ys, false) {
            (*x, *y) = (nx, ny);
            return;
        }
    }
}

/// Lay out the legend entries in rows starting at `left`, no wider than `width`.
fn legend_rows(entries: &[Entry], width: f64) -> Vec<Vec<(usize, f64)>> {
    let mut rows: Vec<Vec<(usize, f64)>> = Vec::new();
    let mut x = 0.0;
    for (i, e) in entries.iter().enumerate() {
        let w =
            theme::LEGEND_SAMPLE + theme::LEGEND_TEXT_GAP + text_width(&e.label, theme::TICK_SIZE);
        if rows.is_empty() || (x > 0.0 && x + w > width) {
            rows.push(Vec::new());
            x = 0.0;
        }
        if let Some(row) = rows.last_mut() {
            row.push((i, x));
        }
        x += w + theme::LEGEND_ENTRY_GAP;
    }
    rows
}

/// The legend entries of the panels that ask for a legend, without repeats.
fn legend_entries(fig: &Figure) -> Vec<Entry> {
    let mut out: Vec<Entry> = Vec::new();
    for p in fig.panels.iter().filter(|p| p.legend) {
        for (i, s) in p.series.iter().enumerate() {
            let Some(label) = &s.label else { continue };
            let colour = s.colour.unwrap_or(i);
            let dashed = s.dashed || theme::series_colour(colour).1;
            let e = Entry {
                label: label.clone(),
                colour,
                dashed,
                style: s.style,
            };
            if !out.contains(&e) {
                out.push(e);
            }
        }
    }
    out
}

/// Lay out `fig` (already validated: at least one panel, sensible size).
pub fn layout(fig: &Figure) -> Frame {
    let (w, h) = (f64::from(fig.width), f64::from(fig.height));
    let n = fig.panels.len();
    let lims = limits(fig);
    let entries = legend_entries(fig);
    let y_label_space = if fig.panels.iter().any(|p| p.y_label.is_some()) {
        theme::LABEL_SIZE + theme::LABEL_GAP
    } else {
        0.0
    };
    let decor: Vec<bool> = (0..n).map(|i| !fig.share_x || i == n - 1).collect();
    let top0 = theme::OUTER_PAD
        + if fig.title.is_some() {
            theme::TITLE_SIZE + theme::TITLE_GAP
        } else {
            theme::TICK_SIZE * 0.5
        };

    let (mut left, mut right) = (theme::OUTER_PAD + y_label_space + 30.0, theme::OUTER_PAD);
    let mut frame = Frame {
        panels: Vec::new(),
        legend: Vec::new(),
    };
    for _pass in 0..4 {
        let rows = legend_rows(&entries, w - left - theme::OUTER_PAD);
        let legend_h = if rows.is_empty() {
            0.0
        } else {
            theme::LEGEND_GAP + rows.len() as f64 * theme::LEGEND_ROW
        };
        let decor_h: Vec<f64> = fig
            .panels
            .iter()
            .zip(&decor)
            .map(|(p, &d)| if d { x_decor_height(p) } else { 0.0 })
            .collect();
        let fixed = top0
            + theme::OUTER_PAD
            + legend_h
            + decor_h.iter().sum::<f64>()
            + theme::PANEL_GAP * (n - 1) as f64;
        let ph = ((h - fixed) / n as f64).max(30.0);

        let mut panels = Vec::with_capacity(n);
        let mut cursor = top0;
        for (i, p) in fig.panels.iter().enumerate() {
            let rect = Rect {
                left,
                top: cursor,
                right: (w - right).max(left + 30.0),
                bottom: cursor + ph,
            };
            cursor = rect.bottom + decor_h[i] + theme::PANEL_GAP;
            let (mut xl, mut yl) = lims[i];
            if p.equal_aspect && !p.log_x && !p.log_y {
                (xl, yl) = equalize(xl, yl, rect.width(), rect.height());
            }
            let xs = Scale {
                lo: xl.0,
                hi: xl.1,
                log: p.log_x,
                p0: rect.left,
                p1: rect.right,
            };
            let ys = Scale {
                lo: yl.0,
                hi: yl.1,
                log: p.log_y,
                p0: rect.bottom,
                p1: rect.top,
            };
            let mut x_ticks = choose_ticks(&xs, false, true);
            let mut y_ticks = choose_ticks(&ys, p.y_degrees, false);
            if p.equal_aspect && !p.log_x && !p.log_y {
                square_grid(&xs, &ys, &mut x_ticks, &mut y_ticks);
            }
            let x_zero_line = p.equal_aspect;
            panels.push(PanelFrame {
                rect,
                xs,
                ys,
                x_ticks,
                y_ticks,
                x_decor: decor[i],
                x_zero_line,
            });
        }

        let widest_y = panels
            .iter()
            .flat_map(|f| f.y_ticks.iter().filter_map(|t| t.label.as_deref()))
            .map(|l| text_width(l, theme::TICK_SIZE))
            .fold(0.0, f64::max);
        let overhang = panels
            .iter()
            .filter(|f| f.x_decor)
            .flat_map(|f| {
                f.x_ticks.iter().filter_map(move |t| {
                    let half = 0.5 * text_width(t.label.as_deref()?, theme::TICK_SIZE);
                    Some(f.xs.px(t.value)? + half - f.rect.right)
                })
            })
            .fold(0.0, f64::max);
        let new_left = theme::OUTER_PAD
            + y_label_space
            + widest_y
            + theme::TICK_LABEL_GAP
            + theme::TICK_LENGTH;
        let new_right = theme::OUTER_PAD + overhang.max(0.0);
        let legend_top = cursor - theme::PANEL_GAP + theme::LEGEND_GAP;
        let entries = &entries;
        frame = Frame {
            panels,
            legend: rows
                .iter()
                .enumerate()
                .flat_map(|(r, row)| {
                    let y = legend_top + (r as f64 + 0.5) * theme::LEGEND_ROW;
                    row.iter()
                        .map(move |&(i, x)| (entries[i].clone(), left + x, y))
                })
                .collect(),
        };
        let settled = (new_left - left).abs() < 0.5 && (new_right - right).abs() < 0.5;
        left = new_left;
        right = new_right;
        if settled {
            break;
        }
    }
    frame
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pole_plot_frames_poles_close_to_the_origin() {
        let fig = Figure::poles_zeros(&[(-0.05, 0.0), (-0.02, 0.0)], &[]);
        let ((x0, x1), (y0, y1)) = limits(&fig)[0];
        // Both poles inside with a margin, and the frame about their spread, not ±1.
        assert!(x0 < -0.05 && x1 > -0.02, "x range {x0}..{x1}");
        assert!(x1 - x0 < 0.1, "x range {x0}..{x1} far wider than the data");
        assert!(y0 < 0.0 && y1 > 0.0 && y1 - y0 < 0.1, "y range {y0}..{y1}");
        // After equal scaling in a plot area the poles are still far apart in pixels.
        let ((x0, x1), _) = equalize((x0, x1), (y0, y1), 500.0, 350.0);
        let px = |v: f64| (v - x0) / (x1 - x0) * 500.0;
        assert!(
            px(-0.02) - px(-0.05) > 100.0,
            "poles {} px apart",
            px(-0.02) - px(-0.05)
        );
        // A single pole off the origin is framed around itself.
        let fig = Figure::poles_zeros(&[(-0.05, 0.0)], &[]);
        let ((x0, x1), (y0, y1)) = limits(&fig)[0];
        assert!(
            x0 < -0.05 && x1 > -0.05 && x1 - x0 < 0.02,
            "x range {x0}..{x1}"
        );
        assert!(y1 - y0 < 0.02, "y range {y0}..{y1}");
    }
}
