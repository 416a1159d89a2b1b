//! Drawing primitives on plotters' SVG backend, taking display-pixel `f64` positions.
//!
//! Positions are multiplied by [`SCALE`] and rounded onto the logical canvas here and
//! nowhere else. Straight rules (grid, axes, ticks) become thin filled rectangles, so
//! `<polyline>` elements in the output are only ever data lines, dashes, reference lines
//! and arrow shafts.

use plotters::coord::Shift;
use plotters::prelude::{
    Circle, DrawingArea, IntoDrawingArea, PathElement, Polygon, RGBColor, Rectangle, SVGBackend,
    ShapeStyle, TextStyle,
};
use plotters::style::text_anchor::{HPos, Pos, VPos};
use plotters::style::{Color, FontDesc, FontFamily, FontStyle, FontTransform};

use super::figure::MarkerShape;
use super::geom::dashes;
use super::theme::{self, Rgb, SCALE};
use super::PlotError;

/// Horizontal text alignment.
pub use plotters::style::text_anchor::HPos as Align;
/// Vertical text alignment.
pub use plotters::style::text_anchor::VPos as Baseline;

/// plotters writes `font-size` as the requested size divided by this factor.
const PLOTTERS_FONT_FACTOR: f64 = 1.24;

fn backend_error<E: std::fmt::Display>(e: E) -> PlotError {
    PlotError::Backend(e.to_string())
}

fn colour(c: Rgb) -> RGBColor {
    RGBColor(c.0, c.1, c.2)
}

fn unit(v: f64) -> i32 {
    (v * SCALE).round() as i32
}

fn point(p: (f64, f64)) -> (i32, i32) {
    (unit(p.0), unit(p.1))
}

/// Text options.
#[derive(Debug, Clone, Copy)]
pub struct Font {
    /// Size in display pixels.
    pub size: f64,
    /// Colour.
    pub colour: Rgb,
    /// Bold weight.
    pub bold: bool,
    /// Rotated a quarter turn anticlockwise (reads bottom to top).
    pub vertical: bool,
}

impl Font {
    /// Upright regular text.
    pub fn new(size: f64, colour: Rgb) -> Self {
        Font {
            size,
            colour,
            bold: false,
            vertical: false,
        }
    }
}

/// A drawing surface over an SVG string.
pub struct Canvas<'a> {
    area: DrawingArea<SVGBackend<'a>, Shift>,
}

impl<'a> Canvas<'a> {
    /// A canvas of `width × height` display pixels writing into `buf`.
    pub fn new(buf: &'a mut String, width: u32, height: u32) -> Self {
        let size = (
            unit(f64::from(width)) as u32,
            unit(f64::from(height)) as u32,
        );
        Canvas {
            area: SVGBackend::with_string(buf, size).into_drawing_area(),
        }
    }

    /// Close the document.
    pub fn finish(self) -> Result<(), PlotError> {
        self.area.present().map_err(backend_error)
    }

    /// Fill the whole canvas.
    pub fn fill(&self, c: Rgb) -> Result<(), PlotError> {
        self.area.fill(&colour(c)).map_err(backend_error)
    }

    /// Fill the rectangle with corners `a` and `b`.
    pub fn rect(&self, a: (f64, f64), b: (f64, f64), c: Rgb) -> Result<(), PlotError> {
        let style = colour(c).filled();
        let (a, b) = (point(a), point(b));
        let (a, b) = ((a.0.min(b.0), a.1.min(b.1)), (a.0.max(b.0), a.1.max(b.1)));
        let b = (b.0.max(a.0 + 1), b.1.max(a.1 + 1));
        self.area
            .draw(&Rectangle::new([a, b], style))
            .map_err(backend_error)
    }

    /// A horizontal rule at `y` from `x0` to `x1`, `width` thick.
    pub fn hrule(&self, x0: f64, x1: f64, y: f64, width: f64, c: Rgb) -> Result<(), PlotError> {
        self.rect((x0, y - width / 2.0), (x1, y + width / 2.0), c)
    }

    /// A vertical rule at `x` from `y0` to `y1`, `width` thick.
    pub fn vrule(&self, x: f64, y0: f64, y1: f64, width: f64, c: Rgb) -> Result<(), PlotError> {
        self.rect((x - width / 2.0, y0), (x + width / 2.0, y1), c)
    }

    /// A polyline; repeated points (after rounding) are dropped.
    pub fn path(&self, points: &[(f64, f64)], width: f64, c: Rgb) -> Result<(), PlotError> {
        let mut pts: Vec<(i32, i32)> = points.iter().map(|&p| point(p)).collect();
        pts.dedup();
        if pts.len() < 2 {
            return Ok(());
        }
        let style = ShapeStyle {
            color: colour(c).to_rgba(),
            filled: false,
            stroke_width: stroke(width),
        };
        self.area
            .draw(&PathElement::new(pts, style))
            .map_err(backend_error)
    }

    /// A polyline, dashed with the theme's pattern when `dashed` is set.
    pub fn line(
        &self,
        points: &[(f64, f64)],
        width: f64,
        c: Rgb,
        dashed: bool,
    ) -> Result<(), PlotError> {
        if !dashed {
            return self.path(points, width, c);
        }
        for d in dashes(points, theme::DASH.0, theme::DASH.1) {
            self.path(&d, width, c)?;
        }
        Ok(())
    }

    /// A filled polygon.
    pub fn polygon(&self, points: &[(f64, f64)], c: Rgb) -> Result<(), PlotError> {
        let pts: Vec<(i32, i32)> = points.iter().map(|&p| point(p)).collect();
        self.area
            .draw(&Polygon::new(pts, colour(c).filled()))
            .map_err(backend_error)
    }

    /// A circle, filled or as a ring of the given stroke width.
    pub fn circle(
        &self,
        centre: (f64, f64),
        r: f64,
        c: Rgb,
        fill: Option<f64>,
    ) -> Result<(), PlotError> {
        let style = match fill {
            None => colour(c).filled(),
            Some(w) => ShapeStyle {
                color: colour(c).to_rgba(),
                filled: false,
                stroke_width: stroke(w),
            },
        };
        let radius = unit(r).max(1) as u32;
        self.area
            .draw(&Circle::new(point(centre), radius, style))
            .map_err(backend_error)
    }

    /// Text anchored at `at` with the given alignment.
    pub fn text(
        &self,
        s: &str,
        at: (f64, f64),
        font: Font,
        h: HPos,
        v: VPos,
    ) -> Result<(), PlotError> {
        if s.is_empty() {
            return Ok(());
        }
        let style = if font.bold {
            FontStyle::Bold
        } else {
            FontStyle::Normal
        };
        let size = font.size * SCALE * PLOTTERS_FONT_FACTOR;
        let mut desc = FontDesc::new(FontFamily::SansSerif, size, style);
        if font.vertical {
            desc = desc.transform(FontTransform::Rotate270);
        }
        let style: TextStyle = desc.color(&colour(font.colour)).pos(Pos::new(h, v));
        self.area
            .draw_text(s, &style, point(at))
            .map_err(backend_error)
    }

    /// A marker of the given shape centred on `p`.
    pub fn marker(&self, shape: MarkerShape, p: (f64, f64), c: Rgb) -> Result<(), PlotError> {
        let r = theme::MARKER_RADIUS;
        let shifted = |pts: &[(f64, f64)]| -> Vec<(f64, f64)> {
            pts.iter().map(|q| (p.0 + q.0, p.1 + q.1)).collect()
        };
        match shape {
            MarkerShape::Dot => self.circle(p, r * 0.8, c, None),
            MarkerShape::Ring => self.circle(p, r * 0.9, c, Some(theme::MARKER_STROKE)),
            MarkerShape::Square => self.rect(
                (p.0 - r * 0.75, p.1 - r * 0.75),
                (p.0 + r * 0.75, p.1 + r * 0.75),
                c,
            ),
            MarkerShape::Diamond => {
                self.polygon(&shifted(&[(0.0, -r), (r, 0.0), (0.0, r), (-r, 0.0)]), c)
            }
            MarkerShape::Triangle => self.polygon(
                &shifted(&[(0.0, -r), (r * 0.95, r * 0.7), (-r * 0.95, r * 0.7)]),
                c,
            ),
            MarkerShape::Plus => self.polygon(&shifted(&plus(r * 1.05, 0.0)), c),
            MarkerShape::Cross => {
                self.polygon(&shifted(&plus(r * 1.2, std::f64::consts::FRAC_PI_4)), c)
            }
        }
    }

    /// An arrow from `from` to `to` with a filled head at `to`. A head is drawn even when
    /// the two points nearly coincide (direction arrows along a curve).
    pub fn arrow(&self, from: (f64, f64), to: (f64, f64), c: Rgb) -> Result<(), PlotError> {
        let (dx, dy) = (to.0 - from.0, to.1 - from.1);
        let len = (dx * dx + dy * dy).sqrt();
        if !(len > 1e-9 && len.is_finite()) {
            return Ok(());
        }
        let (ux, uy) = (dx / len, dy / len);
        let (l, hw) = (theme::ARROW_LENGTH, theme::ARROW_HALF_WIDTH);
        let base = (to.0 - ux * l * 0.8, to.1 - uy * l * 0.8);
        if len > l {
            self.path(&[from, base], theme::MARK_LINE_WIDTH, c)?;
        }
        let back = (to.0 - ux * l, to.1 - uy * l);
        self.polygon(
            &[
                to,
                (back.0 - uy * hw, back.1 + ux * hw),
                base,
                (back.0 + uy * hw, back.1 - ux * hw),
            ],
            c,
        )
    }
}

/// A plus-shaped outline of half-length `a` rotated by `angle`, centred on the origin.
fn plus(a: f64, angle: f64) -> Vec<(f64, f64)> {
    let t = theme::MARKER_STROKE * 0.6;
    let pts = [
        (t, a),
        (t, t),
        (a, t),
        (a, -t),
        (t, -t),
        (t, -a),
        (-t, -a),
        (-t, -t),
        (-a, -t),
        (-a, t),
        (-t, t),
        (-t, a),
    ];
    let (s, c) = angle.sin_cos();
    pts.iter()
        .map(|&(x, y)| (x * c - y * s, x * s + y * c))
        .collect()
}

fn stroke(width: f64) -> u32 {
    unit(width).max(1) as u32
}

/// Fix up plotters' SVG text: give the root element its displayed size over the larger
/// logical `viewBox`, add a `<title>` for screen readers, and write font sizes exactly.
pub fn finish_document(
    svg: String,
    width: u32,
    height: u32,
    title: Option<&str>,
    sizes: &[f64],
) -> String {
    let (lw, lh) = (unit(f64::from(width)), unit(f64::from(height)));
    let old = format!("<svg width=\"{lw}\" height=\"{lh}\" viewBox=\"0 0 {lw} {lh}\"");
    let new = format!(
        "<svg width=\"{width}\" height=\"{height}\" viewBox=\"0 0 {lw} {lh}\" role=\"img\" \
         style=\"max-width:100%;height:auto\""
    );
    let mut svg = svg.replacen(&old, &new, 1);
    if let (Some(t), Some(end)) = (title, svg.find(">\n")) {
        let mut escaped = String::new();
        for ch in t.chars() {
            match ch {
                '<' => escaped.push_str("&lt;"),
                '>' => escaped.push_str("&gt;"),
                '&' => escaped.push_str("&amp;"),
                other => escaped.push(other),
            }
        }
        svg.insert_str(end + 2, &format!("<title>{escaped}</title>\n"));
    }
    for &s in sizes {
        let written = s * SCALE * PLOTTERS_FONT_FACTOR / PLOTTERS_FONT_FACTOR;
        let exact = (s * SCALE * 100.0).round() / 100.0;
        svg = svg.replace(
            &format!("font-size=\"{written}\""),
            &format!("font-size=\"{exact}\""),
        );
    }
    svg
}
