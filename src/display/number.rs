//! Numbers: a general format with a fixed count of significant digits.

use super::Style;

/// Formats a real number with `style.precision` significant digits, trailing zeros
/// trimmed; exponent notation (`1.5e-08`, `3.2e+07`) below 1e-4 and from 1e6 in magnitude.
/// Zero (including −0) prints as `0`; non-finite values as `inf`, `-inf`, `nan`.
pub fn real(x: f64, style: Style) -> String {
    if x.is_nan() {
        return "nan".into();
    }
    if x.is_infinite() {
        return if x > 0.0 { "inf".into() } else { "-inf".into() };
    }
    if x == 0.0 {
        return "0".into();
    }
    let p = style.precision.clamp(1, 17);
    let mag = x.abs();
    // Decimal exponent after rounding to p significant digits.
    let sci = format!("{:.*e}", p - 1, x);
    let (mantissa, exp) = match sci.split_once('e') {
        Some((m, e)) => (m.to_string(), e.parse::<i32>().unwrap_or(0)),
        None => (sci.clone(), 0),
    };
    if !(1e-4..1e6).contains(&mag) || !(-4..6).contains(&exp) {
        let m = trim_zeros(&mantissa);
        let sign = if exp < 0 { '-' } else { '+' };
        return format!("{m}e{sign}{:02}", exp.abs());
    }
    let decimals = (p as i32 - 1 - exp).max(0) as usize;
    trim_zeros(&format!("{:.*}", decimals, x))
}

fn trim_zeros(s: &str) -> String {
    if s.contains('.') {
        let t = s.trim_end_matches('0').trim_end_matches('.');
        if t == "-0" {
            "0".into()
        } else {
            t.to_string()
        }
    } else {
        s.to_string()
    }
}

/// Formats a complex number the engineering way: `-0.5+1.3229j`, `2-0.1j`, `0+1j`.
pub fn complex(re: f64, im: f64, style: Style) -> String {
    let r = real(re, style);
    let i = real(im, style);
    if i.starts_with('-') {
        format!("{r}{i}j")
    } else {
        format!("{r}+{i}j")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn s(x: f64) -> String {
        real(x, Style::default())
    }

    #[test]
    fn general_format() {
        assert_eq!(s(0.1 + 0.2), "0.3");
        assert_eq!(s(1.0), "1");
        assert_eq!(s(-2.5), "-2.5");
        assert_eq!(s(123456.0), "123456");
        assert_eq!(s(1234567.0), "1.23457e+06");
        assert_eq!(s(1.5e-8), "1.5e-08");
        assert_eq!(s(0.00012345), "0.00012345");
        assert_eq!(s(-0.0), "0");
        assert_eq!(s(f64::INFINITY), "inf");
        assert_eq!(s(999999.9), "1e+06");
    }

    #[test]
    fn complex_with_j() {
        let st = Style::with_precision(5);
        assert_eq!(complex(-0.5, 1.3228757, st), "-0.5+1.3229j");
        assert_eq!(complex(2.0, -0.1, st), "2-0.1j");
        assert_eq!(complex(0.0, 1.0, st), "0+1j");
    }
}
