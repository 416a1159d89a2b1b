//! Tests of whole SVG documents: well-formedness, self-containment, byte stability and
//! survival of awkward data.

use super::*;

/// A simple well-formedness check: starts with `<svg`, tags balance, nothing dangles.
fn assert_balanced(svg: &str) {
    assert!(
        svg.starts_with("<svg "),
        "starts with: {:?}",
        &svg[..svg.len().min(40)]
    );
    let mut stack: Vec<String> = Vec::new();
    let mut rest = svg;
    while let Some(start) = rest.find('<') {
        let end = rest[start..]
            .find('>')
            .map(|e| start + e)
            .expect("unclosed tag");
        let tag = &rest[start + 1..end];
        assert!(!tag.contains('<'), "nested '<' in {tag:?}");
        if let Some(name) = tag.strip_prefix('/') {
            assert_eq!(stack.pop().as_deref(), Some(name), "mismatched </{name}>");
        } else if !tag.ends_with('/') {
            let name = tag.split_whitespace().next().expect("tag name");
            stack.push(name.to_string());
        }
        rest = &rest[end + 1..];
    }
    assert!(stack.is_empty(), "unclosed: {stack:?}");
    assert!(svg.trim_end().ends_with("</svg>"));
}

/// The only URI allowed is the SVG namespace, which a standalone file requires.
fn assert_self_contained(svg: &str) {
    let without_ns = svg.replacen("xmlns=\"http://www.w3.org/2000/svg\"", "", 1);
    assert!(!without_ns.contains("http"), "external reference");
    assert!(!without_ns.contains("xmlns"), "a second namespace");
    for bad in ["<image", "href", "@import", "url(", "<script", "font-face"] {
        assert!(!svg.contains(bad), "found {bad}");
    }
}

fn render(fig: &Figure) -> String {
    let svg = fig.to_svg().expect("renders");
    assert_balanced(&svg);
    assert_self_contained(&svg);
    svg
}

fn count(svg: &str, needle: &str) -> usize {
    svg.matches(needle).count()
}

fn step_like(n: usize) -> Vec<f64> {
    (0..n).map(|i| i as f64 * 0.05).collect()
}

fn three_lines() -> Figure {
    let t = step_like(101);
    let ys = [0.4, 0.7, 1.0]
        .iter()
        .map(|z| {
            let y = t
                .iter()
                .map(|&t| 1.0 - (-t / z).exp() * (3.0 * t).cos())
                .collect();
            (y, Some(format!("ζ = {z}")))
        })
        .collect();
    let options = PlotOptions {
        title: Some("Step <response> & more".into()),
        x_label: Some("time (s)".into()),
        ..PlotOptions::default()
    };
    Figure::line(t, ys, &options)
}

#[test]
fn documents_are_balanced_self_contained_and_sized() {
    let svg = render(&three_lines());
    assert!(svg.starts_with("<svg width=\"640\" height=\"400\" viewBox=\"0 0 2560 1600\""));
    assert!(svg.contains("<title>Step &lt;response&gt; &amp; more</title>"));
    assert!(svg.contains("font-family=\"sans-serif\""));
    assert!(
        !svg.contains("font-size=\"57.0"),
        "font sizes are written exactly"
    );
}

#[test]
fn rendering_is_byte_stable() {
    let a = render(&three_lines());
    let b = render(&three_lines().clone());
    assert_eq!(a, b);
}

#[test]
fn one_polyline_per_solid_series_segment() {
    let fig = Figure::line(
        step_like(50),
        vec![(step_like(50), None), (vec![1.0; 50], None)],
        &PlotOptions::default(),
    );
    assert_eq!(count(&render(&fig), "<polyline"), 2);
    // A NaN in the middle splits a line in two.
    let mut y = step_like(50);
    y[20] = f64::NAN;
    y[35] = f64::INFINITY;
    let fig = Figure::line(step_like(50), vec![(y, None)], &PlotOptions::default());
    assert_eq!(count(&render(&fig), "<polyline"), 3);
}

#[test]
fn awkward_data_still_renders() {
    let nan = f64::NAN;
    let cases: Vec<(Vec<f64>, Vec<f64>)> = vec![
        (vec![], vec![]),
        (vec![1.0], vec![2.0]),
        (vec![nan, nan], vec![nan, 1.0]),
        (vec![0.0, 1.0, 2.0], vec![3.0, 3.0, 3.0]),
        (vec![5.0, 5.0], vec![0.0, 0.0]),
        (vec![0.0, 1.0], vec![1e-300, 1e300]),
        (vec![-1e308, 1e308], vec![f64::MAX, f64::MIN]),
        (vec![0.0, 1e-14], vec![1.0, 1.0 + 1e-15]),
    ];
    for (x, y) in cases {
        for (log_x, log_y) in [(false, false), (true, false), (false, true), (true, true)] {
            let mut fig = Figure::line(
                x.clone(),
                vec![(y.clone(), Some("s".into()))],
                &PlotOptions::default(),
            );
            fig.panels[0].log_x = log_x;
            fig.panels[0].log_y = log_y;
            fig.panels[0].equal_aspect = !log_x && !log_y;
            fig.panels[0].marks.push(Mark::VerticalLine {
                x: 0.5,
                label: Some("m".into()),
            });
            render(&fig);
        }
    }
}

#[test]
fn log_axis_skips_non_positive_values_but_draws_the_rest() {
    let x = vec![-1.0, 0.0, 0.1, 1.0, 10.0, 100.0];
    let y = vec![1.0, 2.0, 3.0, 4.0, 5.0, 6.0];
    let opts = PlotOptions {
        log_x: Some(true),
        ..PlotOptions::default()
    };
    let svg = render(&Figure::line(x, vec![(y, None)], &opts));
    assert_eq!(count(&svg, "<polyline"), 1);
    assert!(svg.contains(">\n100\n</text>"), "decade label present");
}

#[test]
fn last_log_label_fits_inside_the_canvas() {
    let f: Vec<f64> = (0..=40)
        .map(|i| 10f64.powf(-1.0 + i as f64 * 0.1))
        .collect();
    let curve = FrequencyCurve {
        magnitude_db: f.iter().map(|w| -20.0 * w.log10()).collect(),
        phase_deg: f.iter().map(|w| -w.atan().to_degrees()).collect(),
        freq: f,
        label: None,
    };
    let svg = render(&Figure::frequency_response(
        vec![curve],
        "frequency (rad/s)",
    ));
    // The label "1000" is centred on its tick; its estimated half-width must fit.
    let pos = svg.find(">\n1000\n</text>").expect("last decade label");
    let open = svg[..pos].rfind("<text").expect("its tag");
    let x: f64 = svg[open..pos]
        .split("x=\"")
        .nth(1)
        .and_then(|s| s.split('"').next())
        .and_then(|s| s.parse().ok())
        .expect("x attribute");
    let half = theme::text_width("1000", theme::TICK_SIZE) * 0.5 * theme::SCALE;
    assert!(x + half <= 640.0 * theme::SCALE, "x {x}");
}

#[test]
fn marks_and_marker_shapes_render() {
    let poles = [(-1.0, 2.0), (-1.0, -2.0), (-3.0, 0.0)];
    let zeros = [(-2.0, 0.0)];
    let svg = render(&Figure::poles_zeros(&poles, &zeros));
    assert_eq!(
        count(&svg, "<polyline"),
        0,
        "markers are filled shapes and rings"
    );
    assert!(count(&svg, "<polygon") >= 3);
    let w: Vec<f64> = (0..200)
        .map(|i| 10f64.powf(-2.0 + i as f64 * 0.02))
        .collect();
    let (re, im): (Vec<f64>, Vec<f64>) = w
        .iter()
        .map(|w| {
            let d = (1.0 - w * w).powi(2) + (0.8 * w).powi(2);
            ((1.0 - w * w) * 2.0 / d, -0.8 * w * 2.0 / d)
        })
        .unzip();
    let mut fig = Figure::nyquist(vec![(re, im, Some("L(jω)".into()))]);
    fig.panels[0].marks.push(Mark::Text {
        x: 0.5,
        y: 0.5,
        text: "note".into(),
    });
    fig.panels[0].marks.push(Mark::HorizontalLine {
        y: 0.0,
        label: Some("axis".into()),
    });
    let svg = render(&fig);
    assert!(svg.contains("\u{2212}1"));
}

#[test]
fn errors_for_bad_structure() {
    let empty = Figure::default();
    assert_eq!(empty.to_svg(), Err(PlotError::NoPanels));
    let mut fig = three_lines();
    fig.width = 10;
    assert!(matches!(fig.to_svg(), Err(PlotError::Size { .. })));
    let mut fig = three_lines();
    fig.panels[0].series[1].y.pop();
    let err = fig.to_svg().expect_err("mismatch");
    assert_eq!(
        err.to_string(),
        "expected x and y of equal length in series 2 of panel 1, found 101 and 100"
    );
}

#[test]
fn many_series_wrap_the_palette_with_dashes() {
    let x = step_like(10);
    let ys = (0..8)
        .map(|k| {
            (
                x.iter().map(|v| v + k as f64).collect(),
                Some(format!("s{k}")),
            )
        })
        .collect();
    let svg = render(&Figure::line(x, ys, &PlotOptions::default()));
    assert!(
        count(&svg, "<polyline") > 8,
        "the 7th and 8th series are dashed"
    );
}

#[test]
fn options_go_where_documented() {
    let mut fig = Figure::frequency_response(vec![], "f");
    fig.apply(&PlotOptions {
        x_label: Some("ω (rad/s)".into()),
        y_label: Some("gain (dB)".into()),
        legend: Some(false),
        ..PlotOptions::default()
    });
    assert_eq!(fig.panels[0].x_label, None);
    assert_eq!(fig.panels[1].x_label.as_deref(), Some("ω (rad/s)"));
    assert_eq!(fig.panels[0].y_label.as_deref(), Some("gain (dB)"));
    assert_eq!(fig.panels[1].y_label.as_deref(), Some("phase (deg)"));
    render(&fig);
}

#[test]
fn direction_arrows_follow_the_curve() {
    let marks = Panel::direction_arrows(&[0.0, 1.0, 2.0], &[0.0, 0.0, 0.0], 2, None);
    assert_eq!(marks.len(), 2);
    let Mark::Arrow { from, to, .. } = &marks[0] else {
        panic!("an arrow")
    };
    assert!(to.0 > from.0 && (to.0 - 0.5).abs() < 1e-12);
    assert!(Panel::direction_arrows(&[1.0], &[1.0], 3, None).is_empty());
    assert!(Panel::direction_arrows(&[f64::NAN, 1.0], &[1.0, 1.0], 3, None).is_empty());
}

/// A small seeded generator (64-bit LCG, Knuth's MMIX constants), so the test needs no
/// crates and always sees the same data.
struct Lcg(u64);

impl Lcg {
    fn next(&mut self) -> u64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        self.0 >> 33
    }
    fn pick<T: Copy>(&mut self, from: &[T]) -> T {
        from[self.next() as usize % from.len()]
    }
}

#[test]
fn seeded_random_figures_with_awkward_values_all_render() {
    let pool = [
        0.0,
        -0.0,
        1.0,
        -1.0,
        1e-300,
        -1e-300,
        1e300,
        5e-324,
        f64::MAX,
        f64::MIN,
        f64::NAN,
        f64::INFINITY,
        f64::NEG_INFINITY,
        0.1,
        3.0,
        1e6,
        -2.5e-7,
        42.0,
    ];
    let shapes = [
        MarkerShape::Dot,
        MarkerShape::Cross,
        MarkerShape::Ring,
        MarkerShape::Plus,
    ];
    let mut rng = Lcg(20240611);
    for case in 0..300 {
        let mut panels = Vec::new();
        for _ in 0..1 + rng.next() % 3 {
            let mut panel = Panel {
                log_x: rng.next().is_multiple_of(3),
                log_y: rng.next().is_multiple_of(3),
                y_degrees: rng.next().is_multiple_of(4),
                equal_aspect: rng.next().is_multiple_of(4),
                legend: rng.next().is_multiple_of(2),
                y_label: (rng.next().is_multiple_of(2)).then(|| "y".to_string()),
                x_label: (rng.next().is_multiple_of(2)).then(|| "x".to_string()),
                ..Panel::default()
            };
            for k in 0..rng.next() % 4 {
                let n = [0, 1, 2, 3, 10][rng.next() as usize % 5];
                let (mut x, mut y) = (Vec::new(), Vec::new());
                for i in 0..n {
                    let smooth = rng.next().is_multiple_of(2);
                    x.push(if smooth { i as f64 } else { rng.pick(&pool) });
                    y.push(if smooth {
                        (i as f64).sin()
                    } else {
                        rng.pick(&pool)
                    });
                }
                let style = match rng.next() % 3 {
                    0 => SeriesStyle::Line,
                    1 => SeriesStyle::Markers(rng.pick(&shapes)),
                    _ => SeriesStyle::LineAndMarkers(rng.pick(&shapes)),
                };
                let label = Some(format!("series {k}"));
                panel.series.push(Series {
                    style,
                    dashed: k == 2,
                    ..Series::line(x, y, label)
                });
            }
            let (a, b) = (rng.pick(&pool), rng.pick(&pool));
            panel.marks.push(match rng.next() % 5 {
                0 => Mark::VerticalLine {
                    x: a,
                    label: Some("v".into()),
                },
                1 => Mark::HorizontalLine {
                    y: b,
                    label: Some("h".into()),
                },
                2 => Mark::Point {
                    x: a,
                    y: b,
                    label: Some("p".into()),
                    shape: MarkerShape::Plus,
                },
                3 => Mark::Arrow {
                    from: (a, b),
                    to: (b, a),
                    colour: Some(1),
                },
                _ => Mark::Text {
                    x: a,
                    y: b,
                    text: "t".into(),
                },
            });
            panels.push(panel);
        }
        let mut fig = Figure::new(panels);
        fig.share_x = rng.next().is_multiple_of(2);
        fig.title = (rng.next().is_multiple_of(2)).then(|| format!("case {case}"));
        fig.width = rng.pick(&[100, 240, 640, 1200]);
        fig.height = rng.pick(&[100, 300, 800]);
        render(&fig);
    }
}
