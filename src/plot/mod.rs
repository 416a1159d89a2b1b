//! Figures and their SVG rendering.
//!
//! The script layer builds a [`Figure`] (panels of [`Series`] and [`Mark`]s, or one of the
//! ready-made kinds such as [`Figure::frequency_response`]) and calls
//! [`Figure::to_svg`], which returns a self-contained SVG document as a `String`: no
//! external fonts, images or links, a generic font family, and the same bytes for the same
//! figure. Saving the text is the caller's business.
//!
//! | file        | holds                                                          |
//! |-------------|----------------------------------------------------------------|
//! | `figure.rs` | the model: `Figure`, `Panel`, `Series`, `Mark`, `PlotOptions`  |
//! | `kinds.rs`  | ready-made figures: frequency response, poles/zeros, Nyquist   |
//! | `theme.rs`  | our look: palette, widths, grid, fonts, spacing                |
//! | `ticks.rs`  | nice linear, angle and log ticks with readable labels          |
//! | `geom.rs`   | ranges, scales, clipping and dashing in display pixels         |
//! | `layout.rs` | margins, panel rectangles, tick choice, legend rows            |
//! | `canvas.rs` | drawing primitives on plotters' SVG backend                    |
//! | `render.rs` | `Figure::to_svg`: draws a laid-out figure                      |
//!
//! Geometry is worked out in display pixels and drawn on a canvas [`theme::SCALE`] times
//! larger, which the SVG's `viewBox` maps back to the displayed size; plotters only draws
//! whole units, and the larger canvas keeps curves smooth.

mod canvas;
mod figure;
mod geom;
mod kinds;
mod layout;
mod render;
mod response;
pub mod theme;
pub mod ticks;

#[cfg(test)]
mod svg_tests;

pub use figure::{
    Figure, Mark, MarkerShape, Panel, PlotOptions, Series, SeriesStyle, DEFAULT_HEIGHT,
    DEFAULT_WIDTH,
};
pub use kinds::FrequencyCurve;
pub use response::ResponseCurve;

/// Smallest and largest accepted figure width or height, in CSS pixels.
pub const SIZE_LIMITS: (u32, u32) = (100, 4000);

/// Why a figure could not be drawn. Data values never cause one: unusable points are
/// skipped instead.
#[derive(Debug, Clone, PartialEq)]
pub enum PlotError {
    /// The figure has no panels.
    NoPanels,
    /// Width or height outside [`SIZE_LIMITS`].
    Size {
        /// Requested width.
        width: u32,
        /// Requested height.
        height: u32,
    },
    /// A series whose x and y have different lengths.
    LengthMismatch {
        /// Panel index, from 0 at the top.
        panel: usize,
        /// Series index within the panel, from 0.
        series: usize,
        /// Number of x values.
        x: usize,
        /// Number of y values.
        y: usize,
    },
    /// plotters reported a failure while drawing.
    Backend(String),
}

impl std::fmt::Display for PlotError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            PlotError::NoPanels => {
                write!(f, "expected a figure with at least one panel, found none")
            }
            PlotError::Size { width, height } => write!(
                f,
                "expected a figure size between {0}×{0} and {1}×{1} pixels, found {width}×{height}",
                SIZE_LIMITS.0, SIZE_LIMITS.1
            ),
            PlotError::LengthMismatch {
                panel,
                series,
                x,
                y,
            } => write!(
                f,
                "expected x and y of equal length in series {} of panel {}, found {x} and {y}",
                series + 1,
                panel + 1
            ),
            PlotError::Backend(e) => write!(f, "drawing failed: {e}"),
        }
    }
}

impl std::error::Error for PlotError {}
