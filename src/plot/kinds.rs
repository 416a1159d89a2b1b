//! Ready-made figures for the plots the language offers: frequency responses, pole–zero
//! maps and Nyquist plots. Each is an ordinary [`Figure`] that callers may adjust further.

use super::figure::{Figure, Mark, MarkerShape, Panel, Series};
use super::geom::usable;

/// One system's frequency response: magnitude in dB and phase in degrees over `freq`.
#[derive(Debug, Clone, PartialEq)]
pub struct FrequencyCurve {
    /// Frequencies (positive; others are skipped on the log axis).
    pub freq: Vec<f64>,
    /// Magnitude in dB at each frequency.
    pub magnitude_db: Vec<f64>,
    /// Phase in degrees at each frequency.
    pub phase_deg: Vec<f64>,
    /// Legend text.
    pub label: Option<String>,
}

impl Panel {
    /// An empty complex-plane panel: equal aspect, axes labelled "real" and "imaginary".
    pub fn complex_plane() -> Self {
        Panel {
            x_label: Some("real".into()),
            y_label: Some("imaginary".into()),
            equal_aspect: true,
            ..Panel::default()
        }
    }

    /// `count` arrows along the curve `(x, y)` at equal steps of arc length, pointing in
    /// the direction of increasing index. Unusable points are skipped; a curve without
    /// length gets no arrows.
    pub fn direction_arrows(
        x: &[f64],
        y: &[f64],
        count: usize,
        colour: Option<usize>,
    ) -> Vec<Mark> {
        let pts: Vec<(f64, f64)> = x
            .iter()
            .zip(y)
            .filter(|(a, b)| usable(**a, false) && usable(**b, false))
            .map(|(a, b)| (*a, *b))
            .collect();
        let seg = |w: &[(f64, f64)]| ((w[1].0 - w[0].0).powi(2) + (w[1].1 - w[0].1).powi(2)).sqrt();
        let total: f64 = pts.windows(2).map(seg).sum();
        if !(total > 0.0 && total.is_finite()) || count == 0 {
            return Vec::new();
        }
        let mut marks = Vec::with_capacity(count);
        let (mut walked, mut k) = (0.0, 0);
        for w in pts.windows(2) {
            let len = seg(w);
            while k < count && len > 0.0 {
                let target = total * (k as f64 + 0.5) / count as f64;
                if target > walked + len {
                    break;
                }
                let t = (target - walked) / len;
                let (d0, d1) = (w[1].0 - w[0].0, w[1].1 - w[0].1);
                let to = (w[0].0 + t * d0, w[0].1 + t * d1);
                let from = (to.0 - 1e-3 * d0, to.1 - 1e-3 * d1);
                marks.push(Mark::Arrow { from, to, colour });
                k += 1;
            }
            walked += len;
        }
        marks
    }
}

impl Figure {
    /// Magnitude (dB) above phase (degrees) on a shared logarithmic frequency axis;
    /// `freq_label` names the frequency unit, e.g. `"frequency (rad/s)"`.
    pub fn frequency_response(curves: Vec<FrequencyCurve>, freq_label: &str) -> Self {
        let legend = curves.iter().any(|c| c.label.is_some());
        let mut magnitude = Panel {
            y_label: Some("magnitude (dB)".into()),
            log_x: true,
            legend,
            ..Panel::default()
        };
        let mut phase = Panel {
            x_label: Some(freq_label.into()),
            y_label: Some("phase (deg)".into()),
            log_x: true,
            y_degrees: true,
            ..Panel::default()
        };
        for c in curves {
            phase
                .series
                .push(Series::line(c.freq.clone(), c.phase_deg, c.label.clone()));
            magnitude
                .series
                .push(Series::line(c.freq, c.magnitude_db, c.label));
        }
        Figure {
            share_x: true,
            ..Figure::new(vec![magnitude, phase])
        }
    }

    /// Poles (slanted crosses) and zeros (rings) in the complex plane, given as
    /// `(re, im)` pairs.
    pub fn poles_zeros(poles: &[(f64, f64)], zeros: &[(f64, f64)]) -> Self {
        let mut panel = Panel {
            legend: true,
            ..Panel::complex_plane()
        };
        let split = |v: &[(f64, f64)]| -> (Vec<f64>, Vec<f64>) { v.iter().copied().unzip() };
        let (px, py) = split(poles);
        let (zx, zy) = split(zeros);
        panel
            .series
            .push(Series::markers(px, py, Some("poles".into()), MarkerShape::Cross).with_colour(0));
        if !zeros.is_empty() {
            panel.series.push(
                Series::markers(zx, zy, Some("zeros".into()), MarkerShape::Ring).with_colour(3),
            );
        }
        Figure {
            height: 480,
            ..Figure::new(vec![panel])
        }
    }

    /// Nyquist plot: each curve `(re, im, label)` over increasing positive frequency is
    /// drawn solid, its mirror image (negative frequencies) dashed in the same colour,
    /// both with direction arrows, and the critical point −1 is marked.
    pub fn nyquist(curves: Vec<(Vec<f64>, Vec<f64>, Option<String>)>) -> Self {
        let legend = curves.iter().any(|c| c.2.is_some());
        let mut panel = Panel {
            legend,
            ..Panel::complex_plane()
        };
        for (i, (re, im, label)) in curves.into_iter().enumerate() {
            let mirror_re: Vec<f64> = re.iter().rev().copied().collect();
            let mirror_im: Vec<f64> = im.iter().rev().map(|v| -v).collect();
            panel
                .marks
                .extend(Panel::direction_arrows(&re, &im, 2, Some(i)));
            panel
                .marks
                .extend(Panel::direction_arrows(&mirror_re, &mirror_im, 2, Some(i)));
            panel
                .series
                .push(Series::line(re, im, label).with_colour(i));
            panel.series.push(
                Series::line(mirror_re, mirror_im, None)
                    .with_colour(i)
                    .with_dashes(),
            );
        }
        panel.marks.push(Mark::Point {
            x: -1.0,
            y: 0.0,
            label: Some("\u{2212}1".into()),
            shape: MarkerShape::Plus,
        });
        Figure {
            height: 480,
            ..Figure::new(vec![panel])
        }
    }

    /// Root locus: each branch `(re, im)` as a line (NaN entries break it), the open-loop
    /// poles as crosses where the branches start and the zeros as rings where they end.
    /// `marked` (e.g. the closed-loop poles at the nominal gain) are drawn as squares with
    /// the legend text `marked_label`.
    pub fn root_locus(
        branches: Vec<(Vec<f64>, Vec<f64>)>,
        poles: &[(f64, f64)],
        zeros: &[(f64, f64)],
        marked: &[(f64, f64)],
        marked_label: &str,
    ) -> Self {
        let mut fig = Figure::poles_zeros(poles, zeros);
        if let Some(panel) = fig.panels.first_mut() {
            let markers = std::mem::take(&mut panel.series);
            for (re, im) in branches {
                panel.series.push(Series::line(re, im, None).with_colour(4));
            }
            for mut m in markers {
                m.label = m.label.map(|l| format!("open-loop {l}"));
                panel.series.push(m);
            }
            if !marked.is_empty() {
                let (x, y): (Vec<f64>, Vec<f64>) = marked.iter().copied().unzip();
                panel.series.push(
                    Series::markers(x, y, Some(marked_label.into()), MarkerShape::Square)
                        .with_colour(2),
                );
            }
        }
        fig
    }

    /// Singular values over frequency: one line per singular value (in dB) on a
    /// logarithmic frequency axis, largest first.
    pub fn singular_values(freq: Vec<f64>, curves_db: Vec<Vec<f64>>, freq_label: &str) -> Self {
        let count = curves_db.len();
        let mut panel = Panel {
            x_label: Some(freq_label.into()),
            y_label: Some("singular value (dB)".into()),
            log_x: true,
            legend: count > 1,
            ..Panel::default()
        };
        for (k, c) in curves_db.into_iter().enumerate() {
            let label = match k {
                0 => "largest".to_string(),
                _ if k + 1 == count => "smallest".to_string(),
                _ => format!("σ{}", k + 1),
            };
            panel
                .series
                .push(Series::line(freq.clone(), c, Some(label)));
        }
        Figure::new(vec![panel])
    }

    /// Marks the stability margins on a frequency-response figure (magnitude panel first,
    /// phase panel second): the 0 dB line; at the gain crossover `gc` a vertical line in
    /// both panels labelled with the phase margin `pm` (degrees) and a point on the phase
    /// curve at `gc_phase`; at the phase crossover `pc` a vertical line labelled with the
    /// gain margin `gm_db` and a point at `−gm_db` dB, and the phase level `pc_level`
    /// (−180° + k·360°) as a horizontal line. Missing crossovers (None) are left out.
    pub fn mark_margins(
        &mut self,
        gain_crossover: Option<(f64, f64, f64)>,
        phase_crossover: Option<(f64, f64, f64)>,
    ) {
        let [magnitude, phase] = match self.panels.as_mut_slice() {
            [a, b, ..] => [a, b],
            _ => return,
        };
        magnitude.marks.push(Mark::HorizontalLine {
            y: 0.0,
            label: Some("0 dB".into()),
        });
        if let Some((gc, pm, gc_phase)) = gain_crossover {
            magnitude
                .marks
                .push(Mark::VerticalLine { x: gc, label: None });
            phase.marks.push(Mark::VerticalLine {
                x: gc,
                label: Some(format!("PM {pm:.1}\u{b0}")),
            });
            phase.marks.push(Mark::Point {
                x: gc,
                y: gc_phase,
                label: None,
                shape: MarkerShape::Dot,
            });
        }
        if let Some((pc, gm_db, level)) = phase_crossover {
            magnitude.marks.push(Mark::VerticalLine {
                x: pc,
                label: Some(format!("GM {gm_db:.1} dB")),
            });
            magnitude.marks.push(Mark::Point {
                x: pc,
                y: -gm_db,
                label: None,
                shape: MarkerShape::Dot,
            });
            phase.marks.push(Mark::VerticalLine { x: pc, label: None });
            phase.marks.push(Mark::HorizontalLine {
                y: level,
                label: Some(format!("{level:.0}\u{b0}").replace('-', "\u{2212}")),
            });
        }
    }
}
