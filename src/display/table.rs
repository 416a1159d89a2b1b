//! Plain tables with a header row, for `modes`, step metrics and sweep results.

/// Formats a table: a header line, a rule, then rows; columns padded to their widths,
/// text left-aligned and numbers (cells starting with a digit, sign or dot) right-aligned.
pub fn table(headers: &[String], rows: &[Vec<String>]) -> String {
    let cols = headers
        .len()
        .max(rows.iter().map(Vec::len).max().unwrap_or(0));
    let mut width = vec![0usize; cols];
    for (j, h) in headers.iter().enumerate() {
        width[j] = width[j].max(h.chars().count());
    }
    for r in rows {
        for (j, c) in r.iter().enumerate() {
            width[j] = width[j].max(c.chars().count());
        }
    }
    let numeric = |c: &str| {
        c.starts_with(|ch: char| ch.is_ascii_digit() || ch == '-' || ch == '+' || ch == '.')
            || c == "inf"
            || c == "nan"
    };
    let fmt_row = |cells: &[String]| -> String {
        let mut line = String::from(" ");
        for (j, w) in width.iter().enumerate() {
            let c = cells.get(j).map(String::as_str).unwrap_or("");
            let pad = w - c.chars().count();
            line.push(' ');
            if numeric(c) {
                line.push_str(&" ".repeat(pad));
                line.push_str(c);
            } else {
                line.push_str(c);
                line.push_str(&" ".repeat(pad));
            }
            line.push(' ');
        }
        line.trim_end().to_string()
    };
    let mut out = fmt_row(headers);
    out.push('\n');
    let rule: usize = width.iter().map(|w| w + 2).sum::<usize>();
    out.push_str("  ");
    out.push_str(&"─".repeat(rule.saturating_sub(1)));
    for r in rows {
        out.push('\n');
        out.push_str(&fmt_row(r));
    }
    out
}
