//! The cell format of analysis files (`.sbook`).
//!
//! - A line `//== Title` starts a new cell; the first one titles the document.
//! - Lines starting `//>` are Markdown prose belonging to the cell they sit in.
//! - Everything else is code. Both markers are comments to the script engine, so with the
//!   prose removed (or even left in) the file is an ordinary script.
//!
//! Every line keeps its 1-based position in the file, and each cell's code is handed to
//! the engine padded so that engine positions *are* file positions: an error, even one
//! raised inside a function defined in an earlier cell, points into the file.

/// What a line of an analysis file is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LineKind {
    /// A `//==` cell marker.
    Marker,
    /// A `//>` prose line.
    Prose,
    /// Script code (including blank lines and ordinary comments).
    Code,
}

/// One line with its position.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Line {
    /// 1-based line number in the file.
    pub number: usize,
    /// What the line is.
    pub kind: LineKind,
    /// The line's text without its line ending (prose: without the `//>` marker and one
    /// following space).
    pub text: String,
}

/// One cell of an analysis file.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Cell {
    /// Title after `//==` (trimmed); empty for a leading cell without a marker.
    pub title: String,
    /// The cell's lines in order, its marker line first if it has one.
    pub lines: Vec<Line>,
}

/// A parsed analysis file.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Document {
    /// The first cell marker's title, if any.
    pub title: Option<String>,
    /// Cells in file order.
    pub cells: Vec<Cell>,
    /// Total number of lines in the file.
    pub line_count: usize,
}

impl Cell {
    /// 1-based line of the cell's first line.
    pub fn first_line(&self) -> usize {
        self.lines.first().map(|l| l.number).unwrap_or(1)
    }

    /// The prose lines joined with newlines.
    pub fn prose(&self) -> String {
        let v: Vec<&str> = self
            .lines
            .iter()
            .filter(|l| l.kind == LineKind::Prose)
            .map(|l| l.text.as_str())
            .collect();
        v.join("\n")
    }

    /// The code lines joined with newlines, leading and trailing blank lines removed.
    pub fn code(&self) -> String {
        let v: Vec<&str> = self
            .lines
            .iter()
            .filter(|l| l.kind == LineKind::Code)
            .map(|l| l.text.as_str())
            .collect();
        let start = v
            .iter()
            .position(|l| !l.trim().is_empty())
            .unwrap_or(v.len());
        let end = v
            .iter()
            .rposition(|l| !l.trim().is_empty())
            .map(|e| e + 1)
            .unwrap_or(start);
        v[start..end].join("\n")
    }

    /// Whether the cell has any non-blank code.
    pub fn has_code(&self) -> bool {
        self.lines
            .iter()
            .any(|l| l.kind == LineKind::Code && !l.text.trim().is_empty())
    }

    /// The code as the engine sees it: the cell's lines with every line that is not code
    /// blank, so that line k of the text is line `first_line() + k − 1` of the file (the
    /// session adds the lines before; see `Session::eval_at`).
    pub fn code_text(&self) -> String {
        let mut s = String::new();
        for l in &self.lines {
            if l.kind == LineKind::Code {
                s.push_str(&l.text);
            }
            s.push('\n');
        }
        s
    }
}

/// Parses an analysis file. Accepts LF, CRLF and CR-only line endings and a leading
/// byte-order mark. A file with no markers is one untitled cell.
pub fn parse(text: &str) -> Document {
    let text = crate::safe_fs::normalise_text(text);
    let text = text.as_ref();
    let mut cells: Vec<Cell> = vec![Cell {
        title: String::new(),
        lines: Vec::new(),
    }];
    let mut title = None;
    let mut count = 0;
    for (k, raw) in text.split('\n').enumerate() {
        let number = k + 1;
        let raw = raw.strip_suffix('\r').unwrap_or(raw);
        if number > 1 && raw.is_empty() && k == text.split('\n').count() - 1 {
            break; // the empty piece after a final newline is not a line
        }
        count = number;
        if let Some(rest) = raw.strip_prefix("//==") {
            let t = rest.trim().to_string();
            if title.is_none() {
                title = Some(t.clone());
            }
            cells.push(Cell {
                title: t,
                lines: vec![Line {
                    number,
                    kind: LineKind::Marker,
                    text: raw.to_string(),
                }],
            });
        } else if let Some(rest) = raw.strip_prefix("//>") {
            let t = rest.strip_prefix(' ').unwrap_or(rest).to_string();
            if let Some(c) = cells.last_mut() {
                c.lines.push(Line {
                    number,
                    kind: LineKind::Prose,
                    text: t,
                });
            }
        } else if let Some(c) = cells.last_mut() {
            c.lines.push(Line {
                number,
                kind: LineKind::Code,
                text: raw.to_string(),
            });
        }
    }
    // Drop the leading untitled cell when it holds nothing but blank lines.
    if cells.len() > 1
        && cells[0]
            .lines
            .iter()
            .all(|l| l.kind == LineKind::Code && l.text.trim().is_empty())
    {
        cells.remove(0);
    }
    Document {
        title,
        cells,
        line_count: count,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cells_prose_and_positions() {
        let d = parse("//== Plant\n//> The *plant*.\nlet a = 1;\n\n//== Next\nlet b = a + 1;\n");
        assert_eq!(d.title.as_deref(), Some("Plant"));
        assert_eq!(d.cells.len(), 2);
        assert_eq!(d.cells[0].prose(), "The *plant*.");
        assert_eq!(d.cells[0].code(), "let a = 1;");
        assert_eq!(d.cells[1].first_line(), 5);
        assert_eq!(
            d.cells[1].code_text().lines().nth(1),
            Some("let b = a + 1;")
        );
        assert_eq!(d.line_count, 6);
    }

    #[test]
    fn no_markers_is_one_cell() {
        let d = parse("let x = 2;\nx * 3\n");
        assert_eq!(d.title, None);
        assert_eq!(d.cells.len(), 1);
        assert_eq!(d.cells[0].code(), "let x = 2;\nx * 3");
    }

    #[test]
    fn crlf_and_bom() {
        let d = parse("\u{feff}//== T\r\n//> prose\r\nlet x = 1;\r\n");
        assert_eq!(d.cells[0].title, "T");
        assert_eq!(d.cells[0].prose(), "prose");
        assert_eq!(d.cells[0].code(), "let x = 1;");
    }

    #[test]
    fn leading_code_before_first_marker_is_kept() {
        let d = parse("let setup = 1;\n//== A\nsetup\n");
        assert_eq!(d.cells.len(), 2);
        assert_eq!(d.cells[0].title, "");
        assert_eq!(d.cells[1].title, "A");
    }

    #[test]
    fn empty_cells_and_empty_file() {
        let d = parse("//== A\n//== B\n");
        assert_eq!(d.cells.len(), 2);
        assert!(!d.cells[0].has_code());
        let e = parse("");
        assert_eq!(e.cells.len(), 1);
        assert!(!e.cells[0].has_code());
    }
}
