//! The statebook look: palette, line widths, grid, fonts and spacing, in one place.
//!
//! Every length here is in display pixels (CSS px of the finished SVG); the renderer
//! multiplies by [`SCALE`] to reach the logical canvas it draws on.
//!
//! The palette is our own. Its six colours keep a CIELAB distance (ΔE*ab) of at least
//! 25 between every pair under simulated protanopia, deuteranopia and tritanopia
//! (Machado, Oliveira & Fernandes 2009, "A physiologically-based model for simulation
//! of color vision deficiency", severity 1.0) as well as normal vision; the test at the
//! bottom of this file checks that. The darker and lighter members alternate so that the
//! first few series also separate on a greyscale print, and every colour stands out
//! against white (contrast ratio at least 2.8). Series past the sixth reuse the colours
//! with a dashed stroke.

/// Logical canvas units per display pixel. plotters draws on whole units, so a canvas
/// four times larger than the displayed size keeps flat curves free of visible steps.
pub const SCALE: f64 = 4.0;

/// An sRGB colour.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Rgb(pub u8, pub u8, pub u8);

/// Series colours, in the order series are given them.
pub const PALETTE: [Rgb; 6] = [
    Rgb(0x1A, 0x43, 0x96), // ink blue
    Rgb(0xD7, 0x89, 0x1A), // amber
    Rgb(0x2F, 0xA6, 0x75), // leaf green
    Rgb(0x7D, 0x1E, 0x58), // wine
    Rgb(0x8C, 0x95, 0xC9), // periwinkle
    Rgb(0x5B, 0x45, 0x17), // umber
];

/// The colour of palette entry `index` (wrapping round) and whether the wrap asks for a
/// dashed stroke to keep the series apart.
pub fn series_colour(index: usize) -> (Rgb, bool) {
    (
        PALETTE[index % PALETTE.len()],
        (index / PALETTE.len()) % 2 == 1,
    )
}

/// Page background (the whole figure, plot areas included).
pub const BACKGROUND: Rgb = Rgb(0xFF, 0xFF, 0xFF);
/// Titles, axis labels and annotations.
pub const INK: Rgb = Rgb(0x26, 0x2B, 0x33);
/// Tick labels and legend text.
pub const INK_SOFT: Rgb = Rgb(0x4B, 0x53, 0x5E);
/// The left and bottom axis rules and tick marks.
pub const AXIS: Rgb = Rgb(0x6B, 0x74, 0x80);
/// Major grid lines.
pub const GRID: Rgb = Rgb(0xE1, 0xE5, 0xEB);
/// Minor grid lines (log axes).
pub const GRID_MINOR: Rgb = Rgb(0xF0, 0xF2, 0xF5);
/// The zero line of an axis whose range straddles zero.
pub const ZERO_LINE: Rgb = Rgb(0xB4, 0xBC, 0xC6);
/// Marks: reference lines, points, arrows and text placed by the caller.
pub const MARK: Rgb = Rgb(0x26, 0x2B, 0x33);

/// The font stack: a generic family only, so nothing is fetched and any system renders it.
pub const FONT_FAMILY: &str = "sans-serif";
/// Figure title size.
pub const TITLE_SIZE: f64 = 15.0;
/// Axis label size.
pub const LABEL_SIZE: f64 = 13.0;
/// Tick label, legend and mark label size.
pub const TICK_SIZE: f64 = 12.0;
/// Average advance of one character, as a fraction of the font size (layout estimate).
pub const CHAR_WIDTH: f64 = 0.58;

/// Series line width.
pub const LINE_WIDTH: f64 = 2.0;
/// Width of reference lines placed as marks.
pub const MARK_LINE_WIDTH: f64 = 1.25;
/// Major grid line width.
pub const GRID_WIDTH: f64 = 1.0;
/// Minor grid line width.
pub const GRID_MINOR_WIDTH: f64 = 0.75;
/// Axis rule width.
pub const AXIS_WIDTH: f64 = 1.0;
/// Tick mark length (drawn outwards from the axis rules).
pub const TICK_LENGTH: f64 = 4.0;
/// Dash pattern of dashed series and reference lines: (dash, gap).
pub const DASH: (f64, f64) = (7.0, 4.5);

/// Marker size: the half-width of a marker's bounding square.
pub const MARKER_RADIUS: f64 = 5.5;
/// Stroke of the outline markers (ring, cross arms are filled shapes).
pub const MARKER_STROKE: f64 = 1.75;
/// Arrow head length along the direction of travel.
pub const ARROW_LENGTH: f64 = 11.0;
/// Arrow head half-width.
pub const ARROW_HALF_WIDTH: f64 = 5.0;

/// Space round the whole figure.
pub const OUTER_PAD: f64 = 12.0;
/// Space between a tick label and its axis.
pub const TICK_LABEL_GAP: f64 = 6.0;
/// Space between tick labels and an axis label.
pub const LABEL_GAP: f64 = 6.0;
/// Space below the title.
pub const TITLE_GAP: f64 = 10.0;
/// Vertical gap between stacked panels that share their x-axis.
pub const PANEL_GAP: f64 = 14.0;
/// Legend: length of the line sample, gap to the text, space between entries, row height.
pub const LEGEND_SAMPLE: f64 = 26.0;
/// Gap between a legend sample and its text.
pub const LEGEND_TEXT_GAP: f64 = 6.0;
/// Space between legend entries on one row.
pub const LEGEND_ENTRY_GAP: f64 = 20.0;
/// Height of one legend row.
pub const LEGEND_ROW: f64 = 18.0;
/// Space between the lowest axis decoration and the legend.
pub const LEGEND_GAP: f64 = 10.0;

/// Target spacing of labelled ticks along x and y, in display pixels.
pub const TICK_SPACING_X: f64 = 90.0;
/// Target spacing of labelled ticks along y.
pub const TICK_SPACING_Y: f64 = 45.0;

/// Estimated width of `text` at font size `size` (no font metrics are available).
pub fn text_width(text: &str, size: f64) -> f64 {
    text.chars().count() as f64 * size * CHAR_WIDTH
}

/// `#RRGGBB` of a colour.
pub fn hex(c: Rgb) -> String {
    format!("#{:02X}{:02X}{:02X}", c.0, c.1, c.2)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn linear(c: u8) -> f64 {
        let c = f64::from(c) / 255.0;
        if c <= 0.04045 {
            c / 12.92
        } else {
            ((c + 0.055) / 1.055).powf(2.4)
        }
    }

    fn lab(rgb: [f64; 3]) -> [f64; 3] {
        let [r, g, b] = rgb;
        let x = 0.4124 * r + 0.3576 * g + 0.1805 * b;
        let y = 0.2126 * r + 0.7152 * g + 0.0722 * b;
        let z = 0.0193 * r + 0.1192 * g + 0.9505 * b;
        let f = |t: f64| {
            if t > 0.008856 {
                t.cbrt()
            } else {
                7.787 * t + 16.0 / 116.0
            }
        };
        let (fx, fy, fz) = (f(x / 0.95047), f(y), f(z / 1.08883));
        [116.0 * fy - 16.0, 500.0 * (fx - fy), 200.0 * (fy - fz)]
    }

    // Simulation matrices for severity 1.0 on linear RGB, from Machado, Oliveira &
    // Fernandes (2009), "A physiologically-based model for simulation of color vision
    // deficiency", IEEE TVCG 15(6).
    const SIMULATIONS: [[[f64; 3]; 3]; 4] = [
        [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]],
        [
            [0.152286, 1.052583, -0.204868],
            [0.114503, 0.786281, 0.099216],
            [-0.003882, -0.048116, 1.051998],
        ],
        [
            [0.367322, 0.860646, -0.227968],
            [0.280085, 0.672501, 0.047413],
            [-0.011820, 0.042940, 0.968881],
        ],
        [
            [1.255528, -0.076749, -0.178779],
            [-0.078411, 0.930809, 0.147602],
            [0.004733, 0.691367, 0.303900],
        ],
    ];

    fn simulate(c: Rgb, m: &[[f64; 3]; 3]) -> [f64; 3] {
        let v = [linear(c.0), linear(c.1), linear(c.2)];
        let mut out = [0.0; 3];
        for (o, row) in out.iter_mut().zip(m) {
            *o = (row[0] * v[0] + row[1] * v[1] + row[2] * v[2]).clamp(0.0, 1.0);
        }
        lab(out)
    }

    #[test]
    fn palette_stays_distinct_under_colour_vision_deficiencies() {
        for m in &SIMULATIONS {
            for (i, &ci) in PALETTE.iter().enumerate() {
                for (j, &cj) in PALETTE.iter().enumerate().skip(i + 1) {
                    let (a, b) = (simulate(ci, m), simulate(cj, m));
                    let de =
                        ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2) + (a[2] - b[2]).powi(2))
                            .sqrt();
                    assert!(de >= 25.0, "colours {i} and {j}: ΔE {de:.1}");
                }
            }
        }
    }

    #[test]
    fn palette_contrasts_with_white() {
        for (i, c) in PALETTE.iter().enumerate() {
            let y = 0.2126 * linear(c.0) + 0.7152 * linear(c.1) + 0.0722 * linear(c.2);
            let ratio = 1.05 / (y + 0.05);
            assert!(ratio >= 2.8, "colour {i}: contrast {ratio:.2}");
        }
    }

    #[test]
    fn series_past_the_palette_are_dashed() {
        assert_eq!(series_colour(0), (PALETTE[0], false));
        assert_eq!(series_colour(PALETTE.len()), (PALETTE[0], true));
        assert_eq!(series_colour(2 * PALETTE.len() + 1), (PALETTE[1], false));
    }
}
