//! What a script produces while it runs: the captured outputs of a cell, in order. The
//! script layer fills them; the notebook runner groups them into cells and the report
//! writers read them.

/// One captured output of a cell, in the order it was produced.
#[derive(Debug, Clone, PartialEq)]
pub enum Output {
    /// Text from `print`.
    Text(String),
    /// A value displayed by `show` or as the cell's last expression (already formatted).
    Value(String),
    /// Markdown prose from `note`.
    Note(String),
    /// A figure: its complete SVG document and an optional title.
    Figure {
        /// The SVG document (starts with `<svg`).
        svg: String,
        /// Figure title, if any (used for alt text and captions).
        title: Option<String>,
    },
    /// A numerical-health warning (already worded, without the `warning:` prefix).
    Warning(String),
    /// The error that stopped the run, rendered with its position and source line.
    Error(String),
}
