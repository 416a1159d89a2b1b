//! Geometry for the renderer: data ranges, axis scales, clipping and dashing.
//!
//! All positions here are display pixels as `f64`; rounding to the whole-unit logical
//! canvas happens only when an element is handed to plotters.

/// Magnitudes beyond this are treated like infinities (skipped), which keeps every
/// difference and product of coordinates finite.
pub const HUGE: f64 = 1e300;

/// Whether `v` can be placed on an axis (finite, not huge, positive on a log axis).
pub fn usable(v: f64, log: bool) -> bool {
    v.is_finite() && v.abs() <= HUGE && (!log || v > 0.0)
}

/// A rectangle in display pixels; `top < bottom`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Rect {
    /// Left edge.
    pub left: f64,
    /// Top edge.
    pub top: f64,
    /// Right edge.
    pub right: f64,
    /// Bottom edge.
    pub bottom: f64,
}

impl Rect {
    /// Width of the rectangle.
    pub fn width(&self) -> f64 {
        self.right - self.left
    }
    /// Height of the rectangle.
    pub fn height(&self) -> f64 {
        self.bottom - self.top
    }
    /// Whether `p` lies inside (edges included, with a hair of slack).
    pub fn contains(&self, p: (f64, f64)) -> bool {
        let e = 1e-6;
        p.0 >= self.left - e
            && p.0 <= self.right + e
            && p.1 >= self.top - e
            && p.1 <= self.bottom + e
    }
}

/// The extent of some values, or `None` when none is usable.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Extent(pub Option<(f64, f64)>);

impl Extent {
    /// Widen the extent to include `v` if it is usable on an axis of the given kind.
    pub fn add(&mut self, v: f64, log: bool) {
        if usable(v, log) {
            self.0 = Some(match self.0 {
                None => (v, v),
                Some((lo, hi)) => (lo.min(v), hi.max(v)),
            });
        }
    }
    /// The union of two extents.
    pub fn union(self, other: Extent) -> Extent {
        match (self.0, other.0) {
            (Some(a), Some(b)) => Extent(Some((a.0.min(b.0), a.1.max(b.1)))),
            (a, b) => Extent(a.or(b)),
        }
    }
}

/// Turn an extent into axis limits: empty extents get a default range, degenerate ones
/// (all values equal, or a relative spread below 1e-9) are widened around their value,
/// and `pad` (a fraction of the span, in log space on log axes) is added at both ends.
pub fn axis_limits(extent: Extent, log: bool, pad: f64) -> (f64, f64) {
    if log {
        let (lo, hi) = match extent.0 {
            None => return (1.0, 10.0),
            Some((lo, hi)) if hi / lo < 1.0 + 1e-9 => (lo / 2.0, hi * 2.0),
            Some(r) => r,
        };
        let (a, b) = (lo.log10(), hi.log10());
        let p = (b - a) * pad;
        return (10f64.powf(a - p), 10f64.powf(b + p));
    }
    let (lo, hi) = match extent.0 {
        None => return (0.0, 1.0),
        Some((lo, hi)) => (lo, hi),
    };
    let scale = lo.abs().max(hi.abs());
    if hi - lo <= scale * 1e-9 {
        let mid = 0.5 * (lo + hi);
        return if mid == 0.0 {
            (-1.0, 1.0)
        } else {
            (mid - 0.1 * mid.abs(), mid + 0.1 * mid.abs())
        };
    }
    let p = (hi - lo) * pad;
    (lo - p, hi + p)
}

/// Widen `(x, y)` limits about their centres so that one data unit has the same length
/// on both axes of a plot area of the given size (linear axes only).
pub fn equalize(x: (f64, f64), y: (f64, f64), width: f64, height: f64) -> ((f64, f64), (f64, f64)) {
    if width <= 0.0 || height <= 0.0 {
        return (x, y);
    }
    let per_px = ((x.1 - x.0) / width).max((y.1 - y.0) / height);
    let widen = |r: (f64, f64), len: f64| {
        let (mid, half) = (0.5 * (r.0 + r.1), 0.5 * per_px * len);
        (mid - half, mid + half)
    };
    (widen(x, width), widen(y, height))
}

/// A map from data values to pixel positions along one axis.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Scale {
    /// Data value at `p0`.
    pub lo: f64,
    /// Data value at `p1`.
    pub hi: f64,
    /// Logarithmic.
    pub log: bool,
    /// Pixel position of `lo`.
    pub p0: f64,
    /// Pixel position of `hi`.
    pub p1: f64,
}

impl Scale {
    fn t(&self, v: f64) -> f64 {
        if self.log {
            v.log10()
        } else {
            v
        }
    }

    /// The pixel position of `v`, or `None` when `v` cannot be placed on this axis.
    pub fn px(&self, v: f64) -> Option<f64> {
        if !usable(v, self.log) {
            return None;
        }
        let (a, b) = (self.t(self.lo), self.t(self.hi));
        let span = b - a;
        if !(span.is_finite() && span != 0.0) {
            return None;
        }
        let p = self.p0 + (self.t(v) - a) / span * (self.p1 - self.p0);
        p.is_finite().then_some(p)
    }
}

/// A point in display pixels.
pub type Pt = (f64, f64);

/// The visible part of a clipped segment, with whether each end was moved to the edge.
pub type Clipped = (Pt, Pt, bool, bool);

/// Clip the segment `a`–`b` to `r` (Liang–Barsky, 1984, "A new concept and method for
/// line clipping"). Returns the visible part and whether each end was moved.
pub fn clip(a: Pt, b: Pt, r: &Rect) -> Option<Clipped> {
    let (dx, dy) = (b.0 - a.0, b.1 - a.1);
    let (mut t0, mut t1) = (0.0f64, 1.0f64);
    for (p, q) in [
        (-dx, a.0 - r.left),
        (dx, r.right - a.0),
        (-dy, a.1 - r.top),
        (dy, r.bottom - a.1),
    ] {
        if p == 0.0 {
            if q < 0.0 {
                return None;
            }
        } else {
            let t = q / p;
            if p < 0.0 {
                t0 = t0.max(t);
            } else {
                t1 = t1.min(t);
            }
            if t0 > t1 {
                return None;
            }
        }
    }
    let at = |t: f64| (a.0 + t * dx, a.1 + t * dy);
    Some((at(t0), at(t1), t0 > 0.0, t1 < 1.0))
}

/// Split a sequence of points (`None` = skipped) into visible polylines inside `r`.
/// Points without a neighbour to join are returned separately as isolated points.
pub fn polylines(points: &[Option<Pt>], r: &Rect) -> (Vec<Vec<Pt>>, Vec<Pt>) {
    let mut runs: Vec<Vec<(f64, f64)>> = Vec::new();
    let mut isolated = Vec::new();
    let mut current: Vec<(f64, f64)> = Vec::new();
    for (i, w) in points.windows(2).enumerate() {
        let (Some(a), Some(b)) = (w[0], w[1]) else {
            if let Some(a) = w[0] {
                let joined_before = i > 0 && points[i - 1].is_some();
                if !joined_before && r.contains(a) {
                    isolated.push(a);
                }
            }
            if current.len() > 1 {
                runs.push(std::mem::take(&mut current));
            }
            current.clear();
            continue;
        };
        match clip(a, b, r) {
            None => {
                if current.len() > 1 {
                    runs.push(std::mem::take(&mut current));
                }
                current.clear();
            }
            Some((s, e, moved_start, moved_end)) => {
                if moved_start || current.is_empty() {
                    if current.len() > 1 {
                        runs.push(std::mem::take(&mut current));
                    }
                    current = vec![s];
                }
                current.push(e);
                if moved_end {
                    runs.push(std::mem::take(&mut current));
                }
            }
        }
    }
    if current.len() > 1 {
        runs.push(current);
    }
    let n = points.len();
    if let Some(Some(last)) = points.last() {
        let joined_before = n > 1 && points[n - 2].is_some();
        if !joined_before && r.contains(*last) {
            isolated.push(*last);
        }
    }
    (runs, isolated)
}

/// Cut a polyline into dashes of length `dash` separated by `gap`, the pattern running
/// on round corners.
pub fn dashes(run: &[(f64, f64)], dash: f64, gap: f64) -> Vec<Vec<(f64, f64)>> {
    let mut out = Vec::new();
    if dash <= 0.0 || gap < 0.0 {
        return vec![run.to_vec()];
    }
    let (mut on, mut left) = (true, dash);
    let mut current: Vec<(f64, f64)> = run.first().copied().into_iter().collect();
    for w in run.windows(2) {
        let (mut a, b) = (w[0], w[1]);
        let mut len = ((b.0 - a.0).powi(2) + (b.1 - a.1).powi(2)).sqrt();
        while len > left {
            let t = left / len;
            let p = (a.0 + t * (b.0 - a.0), a.1 + t * (b.1 - a.1));
            if on {
                current.push(p);
                out.push(std::mem::take(&mut current));
            } else {
                current = vec![p];
            }
            len -= left;
            a = p;
            on = !on;
            left = if on { dash } else { gap };
        }
        left -= len;
        if on {
            current.push(b);
        }
    }
    if on && current.len() > 1 {
        out.push(current);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    const R: Rect = Rect {
        left: 0.0,
        top: 0.0,
        right: 10.0,
        bottom: 10.0,
    };

    #[test]
    fn clipping_cuts_lines_at_the_edges() {
        let (s, e, ms, me) = clip((-5.0, 5.0), (5.0, 5.0), &R).expect("visible");
        assert_eq!((s, e, ms, me), ((0.0, 5.0), (5.0, 5.0), true, false));
        assert!(clip((-5.0, -5.0), (-1.0, 20.0), &R).is_none());
    }

    #[test]
    fn skipped_points_break_lines_and_lonely_points_survive() {
        let p = |x: f64, y: f64| Some((x, y));
        let pts = [
            p(1.0, 1.0),
            p(2.0, 2.0),
            None,
            p(4.0, 4.0),
            None,
            p(6.0, 6.0),
            p(7.0, 7.0),
        ];
        let (runs, isolated) = polylines(&pts, &R);
        assert_eq!(runs.len(), 2);
        assert_eq!(isolated, vec![(4.0, 4.0)]);
        let (runs, isolated) = polylines(&[p(5.0, 5.0)], &R);
        assert!(runs.is_empty());
        assert_eq!(isolated, vec![(5.0, 5.0)]);
        assert_eq!(polylines(&[], &R), (vec![], vec![]));
    }

    #[test]
    fn a_line_leaving_and_reentering_becomes_two_runs() {
        let p = |x: f64, y: f64| Some((x, y));
        let (runs, _) = polylines(&[p(1.0, 5.0), p(5.0, 50.0), p(9.0, 5.0)], &R);
        assert_eq!(runs.len(), 2);
    }

    #[test]
    fn dashes_cover_the_pattern() {
        let d = dashes(&[(0.0, 0.0), (10.0, 0.0), (10.0, 10.0)], 3.0, 2.0);
        assert_eq!(d.len(), 4);
        assert_eq!(d[0], vec![(0.0, 0.0), (3.0, 0.0)]);
        assert_eq!(d[2], vec![(10.0, 0.0), (10.0, 3.0)]);
    }

    #[test]
    fn limits_of_degenerate_and_empty_extents() {
        assert_eq!(axis_limits(Extent(None), false, 0.05), (0.0, 1.0));
        assert_eq!(
            axis_limits(Extent(Some((0.0, 0.0))), false, 0.05),
            (-1.0, 1.0)
        );
        assert_eq!(
            axis_limits(Extent(Some((2.0, 2.0))), false, 0.0),
            (1.8, 2.2)
        );
        assert_eq!(axis_limits(Extent(Some((3.0, 3.0))), true, 0.0), (1.5, 6.0));
        let (lo, hi) = axis_limits(Extent(Some((-HUGE, HUGE))), false, 0.05);
        assert!(lo.is_finite() && hi.is_finite());
    }

    #[test]
    fn scales_skip_what_they_cannot_place() {
        let s = Scale {
            lo: 1.0,
            hi: 100.0,
            log: true,
            p0: 0.0,
            p1: 200.0,
        };
        assert_eq!(s.px(10.0), Some(100.0));
        assert_eq!(s.px(0.0), None);
        assert_eq!(s.px(-1.0), None);
        assert_eq!(s.px(f64::NAN), None);
    }
}
