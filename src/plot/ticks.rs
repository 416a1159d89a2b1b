//! Tick placement and tick labels.
//!
//! Linear axes take "nice" steps of 1, 2 or 5 times a power of ten; angle axes (degrees)
//! prefer 15, 30, 45, 90 and 180; log axes label whole decades and add minor ticks at
//! 2…9 times each decade. Tick values are computed as `i · step` from an integer `i`,
//! never by accumulation, and labels are formatted from the step, so no label ever reads
//! `0.30000000000000004`. Very large or very small magnitudes switch to `2×10⁵` notation, with one exponent
//! for the whole axis.
//! Negative numbers use the typographic minus sign (U+2212).

/// One tick on an axis.
#[derive(Debug, Clone, PartialEq)]
pub struct Tick {
    /// Position in data units.
    pub value: f64,
    /// The label, or `None` for an unlabelled (minor) tick.
    pub label: Option<String>,
    /// Major ticks get a grid line of full strength, minor ones a faint one.
    pub major: bool,
}

impl Tick {
    fn major(value: f64, label: String) -> Self {
        Tick {
            value,
            label: Some(label),
            major: true,
        }
    }
    fn minor(value: f64) -> Self {
        Tick {
            value,
            label: None,
            major: false,
        }
    }
}

/// At most this many ticks are ever produced for one axis.
const MAX_TICKS: f64 = 200.0;

/// Nice ticks on the linear range `lo..=hi` aiming at about `target` labelled ticks.
///
/// The range is taken as given (callers widen degenerate ranges first); a range that is
/// empty, reversed or not finite gives no ticks.
pub fn linear_ticks(lo: f64, hi: f64, target: usize) -> Vec<Tick> {
    let step = match nice_step(lo, hi, target, &[1.0, 2.0, 5.0]) {
        Some(s) => s,
        None => return Vec::new(),
    };
    stepped(lo, hi, step)
}

/// Ticks for an axis in degrees: steps of 15, 30, 45, 90, 180 or 360 where they give a
/// sensible count, otherwise the linear choice.
pub fn angle_ticks(lo: f64, hi: f64, target: usize) -> Vec<Tick> {
    let span = hi - lo;
    if !(span.is_finite() && span > 0.0) {
        return Vec::new();
    }
    let target = target.max(2) as f64;
    let candidates = [15.0, 30.0, 45.0, 90.0, 180.0, 360.0];
    let fits = |s: f64| span / s <= target + 1.0 && span / s >= 1.0;
    match candidates.iter().copied().find(|&s| fits(s)) {
        Some(step) if span >= 45.0 => stepped(lo, hi, step),
        _ => linear_ticks(lo, hi, target as usize),
    }
}

/// The step of the form `m · 10ᵏ` (m from `mantissas`) whose tick count comes closest to
/// `target` (by ratio); on a tie the smaller step wins.
fn nice_step(lo: f64, hi: f64, target: usize, mantissas: &[f64]) -> Option<f64> {
    let span = hi - lo;
    if !(span.is_finite() && span > 0.0) {
        return None;
    }
    let target = target.max(1) as f64;
    let power = 10f64.powf((span / target).log10().floor());
    let mut best: Option<(f64, f64)> = None;
    for scale in [0.1, 1.0, 10.0] {
        for m in mantissas {
            let step = m * power * scale;
            let miss = (span / step / target).ln().abs();
            if step > 0.0 && step.is_finite() && best.is_none_or(|(_, b)| miss < b - 1e-9) {
                best = Some((step, miss));
            }
        }
    }
    best.map(|(s, _)| s)
}

/// Labelled ticks at every multiple of `step` inside `lo..=hi`.
pub fn stepped_ticks(lo: f64, hi: f64, step: f64) -> Vec<Tick> {
    if !(step > 0.0 && step.is_finite() && lo.is_finite() && hi.is_finite()) {
        return Vec::new();
    }
    stepped(lo, hi, step)
}

fn stepped(lo: f64, hi: f64, step: f64) -> Vec<Tick> {
    let first = (lo / step - 1e-9).ceil();
    let last = (hi / step + 1e-9).floor();
    if !(first.is_finite() && last.is_finite()) || last - first > MAX_TICKS {
        return Vec::new();
    }
    let values: Vec<f64> = (0..=(last - first) as i64)
        .map(|k| {
            let v = (first + k as f64) * step;
            if v.abs() < step * 1e-9 {
                0.0
            } else {
                v
            }
        })
        .collect();
    let largest = values.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    // One exponent for the whole axis, taken from its largest label.
    let exponent =
        (!(1e-3..1e5).contains(&largest)).then(|| (largest.log10() + 1e-9).floor() as i32);
    values
        .into_iter()
        .map(|v| Tick::major(v, format_tick(v, step, exponent)))
        .collect()
}

/// The label of tick `v` on an axis with spacing `step`, written as a multiple of
/// `10^exponent` when one is given.
fn format_tick(v: f64, step: f64, exponent: Option<i32>) -> String {
    if v == 0.0 {
        return "0".to_string();
    }
    let step_power = (step.log10() + 1e-9).floor() as i32;
    match exponent {
        Some(power) => {
            let decimals = (power - step_power).clamp(0, 6) as usize;
            let mantissa = trim_zeros(format!("{:.decimals$}", v / 10f64.powi(power)));
            format!("{}×10{}", minus(&mantissa), superscript(power))
        }
        None => {
            let decimals = (-step_power).max(0) as usize;
            minus(&trim_zeros(format!("{v:.decimals$}")))
        }
    }
}

/// `1.50` → `1.5`, `2.0` → `2`; integers are left alone.
fn trim_zeros(s: String) -> String {
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// Ticks on a log axis over the positive range `lo..=hi`, aiming at about `target`
/// labelled ticks.
///
/// Whole decades are labelled (every second, fifth… decade when there are many); minor
/// ticks at 2…9 per decade are added while the axis spans no more than `minor_limit`
/// decades. A range narrower than two decade ticks labels 1-2-5 mantissas instead, or
/// every integer mantissa when that gives fewer than three labels.
pub fn log_ticks(lo: f64, hi: f64, target: usize, minor_limit: f64) -> Vec<Tick> {
    if !(lo > 0.0 && hi > lo && lo.is_finite() && hi.is_finite()) {
        return Vec::new();
    }
    let (dlo, dhi) = (lo.log10(), hi.log10());
    let first = (dlo - 1e-9).ceil() as i32;
    let last = (dhi + 1e-9).floor() as i32;
    let decades = last - first + 1;
    let inside = |v: f64| v >= lo * (1.0 - 1e-9) && v <= hi * (1.0 + 1e-9);
    let plain = first >= -4 && last <= 5;

    if decades >= 2 {
        let target = target.max(2) as i32;
        let every = [1, 2, 5, 10, 20, 50, 100, 200, 500]
            .into_iter()
            .find(|k| (decades + k - 1) / k <= target)
            .unwrap_or(1000);
        let mut ticks = Vec::new();
        for d in (first - 1)..=last {
            let base = 10f64.powi(d);
            if d >= first && d.rem_euclid(every) == 0 {
                ticks.push(Tick::major(base, decade_label(d, plain)));
            } else if d >= first {
                ticks.push(Tick::minor(base));
            }
            if dhi - dlo <= minor_limit && every == 1 {
                for m in 2..=9 {
                    let v = f64::from(m) * base;
                    if inside(v) {
                        ticks.push(Tick::minor(v));
                    }
                }
            }
        }
        ticks.sort_by(|a, b| a.value.total_cmp(&b.value));
        return ticks;
    }

    // Narrow range: label mantissas inside the (at most one) decade boundary.
    for mantissas in [&[1, 2, 5][..], &[1, 2, 3, 4, 5, 6, 7, 8, 9][..]] {
        let mut ticks = Vec::new();
        for d in (first - 1)..=last {
            for m in 1..=9 {
                let v = f64::from(m) * 10f64.powi(d);
                if !inside(v) {
                    continue;
                }
                if mantissas.contains(&m) {
                    ticks.push(Tick::major(v, mantissa_label(m, d, plain)));
                } else {
                    ticks.push(Tick::minor(v));
                }
            }
        }
        if ticks.iter().filter(|t| t.major).count() >= 3 {
            return ticks;
        }
    }
    // Narrower than one mantissa step: linear ticks read best.
    linear_ticks(lo, hi, target)
}

fn decade_label(d: i32, plain: bool) -> String {
    if plain {
        mantissa_label(1, d, true)
    } else {
        format!("10{}", superscript(d))
    }
}

fn mantissa_label(m: i32, d: i32, plain: bool) -> String {
    if plain {
        let decimals = (-d).max(0) as usize;
        format!("{:.decimals$}", f64::from(m) * 10f64.powi(d))
    } else {
        format!("{m}×10{}", superscript(d))
    }
}

/// `n` written in superscript digits (with a superscript minus).
pub fn superscript(n: i32) -> String {
    const DIGITS: [char; 10] = ['⁰', '¹', '²', '³', '⁴', '⁵', '⁶', '⁷', '⁸', '⁹'];
    let mut out = String::new();
    if n < 0 {
        out.push('⁻');
    }
    for c in n.unsigned_abs().to_string().chars() {
        let d = c.to_digit(10).unwrap_or(0) as usize;
        out.push(DIGITS[d]);
    }
    out
}

/// Replace an ASCII hyphen-minus sign with the typographic minus.
fn minus(s: &str) -> String {
    s.replace('-', "\u{2212}")
}

#[cfg(test)]
mod tests {
    use super::*;

    fn labels(ticks: &[Tick]) -> Vec<&str> {
        ticks.iter().filter_map(|t| t.label.as_deref()).collect()
    }

    #[test]
    fn unit_range_gives_tenths_in_steps_of_two() {
        let t = linear_ticks(0.0, 1.0, 6);
        assert_eq!(labels(&t), ["0", "0.2", "0.4", "0.6", "0.8", "1"]);
        assert!((t[3].value - 0.6).abs() < 1e-15);
    }

    #[test]
    fn no_float_noise_in_labels() {
        let t = linear_ticks(0.0, 0.35, 4);
        assert_eq!(labels(&t), ["0", "0.1", "0.2", "0.3"]);
    }

    #[test]
    fn range_spanning_zero_has_an_exact_zero_and_minus_signs() {
        let t = linear_ticks(-2.5, 2.5, 5);
        assert_eq!(labels(&t), ["\u{2212}2", "\u{2212}1", "0", "1", "2"]);
        assert!(t
            .iter()
            .any(|t| t.value == 0.0 && t.value.is_sign_positive()));
    }

    #[test]
    fn tiny_and_huge_ranges_switch_to_exponents() {
        let t = linear_ticks(0.0, 4e5, 4);
        assert_eq!(labels(&t), ["0", "1×10⁵", "2×10⁵", "3×10⁵", "4×10⁵"]);
        let t = linear_ticks(1.2e-6, 1.6e-6, 4);
        assert_eq!(
            labels(&t),
            ["1.2×10⁻⁶", "1.3×10⁻⁶", "1.4×10⁻⁶", "1.5×10⁻⁶", "1.6×10⁻⁶"]
        );
        let t = linear_ticks(-1e-6, 1e-6, 4);
        let m = "\u{2212}";
        assert_eq!(
            labels(&t),
            [
                format!("{m}1×10⁻⁶"),
                format!("{m}0.5×10⁻⁶"),
                "0".into(),
                "0.5×10⁻⁶".into(),
                "1×10⁻⁶".into()
            ]
        );
        let t = linear_ticks(-1e300, 1e300, 4);
        assert!(labels(&t).contains(&"\u{2212}1×10³⁰⁰"), "{:?}", labels(&t));
    }

    #[test]
    fn narrow_range_far_from_zero_keeps_its_digits() {
        let t = linear_ticks(1000.1, 1000.5, 4);
        assert_eq!(
            labels(&t),
            ["1000.1", "1000.2", "1000.3", "1000.4", "1000.5"]
        );
    }

    #[test]
    fn degenerate_ranges_give_no_ticks_instead_of_panicking() {
        assert!(linear_ticks(1.0, 1.0, 5).is_empty());
        assert!(linear_ticks(f64::NAN, 1.0, 5).is_empty());
        assert!(linear_ticks(0.0, f64::INFINITY, 5).is_empty());
        assert!(linear_ticks(2.0, 1.0, 5).is_empty());
        assert!(log_ticks(-1.0, 1.0, 5, 6.0).is_empty());
        assert!(log_ticks(0.0, 1.0, 5, 6.0).is_empty());
        assert!(angle_ticks(3.0, 3.0, 5).is_empty());
    }

    #[test]
    fn log_decades_with_readable_labels_and_minor_ticks() {
        let t = log_ticks(0.01, 1000.0, 8, 6.0);
        assert_eq!(labels(&t), ["0.01", "0.1", "1", "10", "100", "1000"]);
        let minors: Vec<f64> = t.iter().filter(|t| !t.major).map(|t| t.value).collect();
        assert_eq!(minors.len(), 5 * 8);
        assert!(minors.iter().any(|&v| (v - 0.02).abs() < 1e-12));
        assert!(t.windows(2).all(|w| w[0].value < w[1].value));
    }

    #[test]
    fn log_far_decades_use_superscripts_and_thin_out() {
        let t = log_ticks(1e-9, 1e9, 6, 6.0);
        let l = labels(&t);
        assert!(l.len() <= 6 && l.len() >= 3, "{l:?}");
        assert!(l.contains(&"10⁰"), "{l:?}");
        assert!(l.iter().all(|s| s.starts_with("10")));
        assert!(t
            .iter()
            .all(|t| t.major || t.value.log10().fract().abs() < 1e-9));
    }

    #[test]
    fn log_range_inside_one_decade_labels_mantissas() {
        let t = log_ticks(2.0, 8.0, 5, 6.0);
        assert_eq!(labels(&t), ["2", "3", "4", "5", "6", "7", "8"]);
        let t = log_ticks(0.5, 3.0, 5, 6.0);
        assert_eq!(labels(&t), ["0.5", "1", "2"]);
    }

    #[test]
    fn angle_axis_uses_multiples_of_45_or_90() {
        let t = angle_ticks(-270.0, 0.0, 5);
        let m = "\u{2212}";
        let expected: Vec<String> = ["270", "225", "180", "135", "90", "45"]
            .iter()
            .map(|v| format!("{m}{v}"))
            .collect();
        assert_eq!(
            labels(&t)[..6],
            expected.iter().map(String::as_str).collect::<Vec<_>>()[..]
        );
        assert_eq!(labels(&t)[6], "0");
        let t = angle_ticks(-10.0, 10.0, 5);
        assert_eq!(labels(&t), ["\u{2212}10", "\u{2212}5", "0", "5", "10"]);
    }

    #[test]
    fn superscripts() {
        assert_eq!(superscript(-12), "⁻¹²");
        assert_eq!(superscript(0), "⁰");
    }
}
