//! Input handling shared by the interactive and the piped prompt: REPL commands,
//! incomplete-input detection and the session log.

use rhai::{Engine, LexError, ParseErrorType};

/// A REPL command (as opposed to script code).
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Command {
    /// `help` or `help NAME`.
    Help(Option<String>),
    /// `quit` or `exit`.
    Quit,
}

/// Recognises `help`, `help NAME`, `quit` and `exit`.
pub fn command(line: &str) -> Option<Command> {
    let t = line.trim().trim_end_matches(';').trim();
    match t {
        "quit" | "exit" | "quit()" | "exit()" => return Some(Command::Quit),
        "help" | "help()" => return Some(Command::Help(None)),
        _ => {}
    }
    let rest = t.strip_prefix("help ")?;
    let name = rest.trim();
    (!name.is_empty() && name.chars().all(|c| c.is_alphanumeric() || c == '_'))
        .then(|| Command::Help(Some(name.to_string())))
}

/// Lines an entry may have before [`Entry`] judges it by its open brackets alone (a
/// paste of a long matrix literal) instead of parsing it again after every line.
const PARSED_LINES: usize = 64;

/// What a scan of an entry has seen so far: the depth of open brackets outside strings
/// and comments, and whether it ends inside a string, a character or a block comment.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
struct Scan {
    depth: i64,
    mode: Mode,
    /// A construct the scan does not follow (a backtick string with `${…}`): judged by the
    /// parser.
    unsure: bool,
}

#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
enum Mode {
    #[default]
    Code,
    Text {
        quote: u8,
        escaped: bool,
    },
    LineComment,
    BlockComment(u32),
}

impl Scan {
    /// Scans `bytes` on from this state. Every resumption point is the end of a line, so
    /// no two-byte token (`//`, `/*`, `*/`) is split.
    fn feed(&mut self, bytes: &[u8]) {
        let mut i = 0;
        while i < bytes.len() {
            let b = bytes[i];
            let next = bytes.get(i + 1).copied();
            match self.mode {
                Mode::Code => match (b, next) {
                    (b'/', Some(b'/')) => {
                        self.mode = Mode::LineComment;
                        i += 1;
                    }
                    (b'/', Some(b'*')) => {
                        self.mode = Mode::BlockComment(1);
                        i += 1;
                    }
                    (b'"' | b'\'', _) => {
                        self.mode = Mode::Text {
                            quote: b,
                            escaped: false,
                        }
                    }
                    (b'`', _) => self.unsure = true,
                    (b'(' | b'[' | b'{', _) => self.depth += 1,
                    (b')' | b']' | b'}', _) => self.depth -= 1,
                    _ => {}
                },
                Mode::Text { quote, escaped } => {
                    self.mode = if escaped {
                        Mode::Text {
                            quote,
                            escaped: false,
                        }
                    } else if b == b'\\' {
                        Mode::Text {
                            quote,
                            escaped: true,
                        }
                    } else if b == quote {
                        Mode::Code
                    } else {
                        self.mode
                    };
                }
                Mode::LineComment => {
                    if b == b'\n' {
                        self.mode = Mode::Code;
                    }
                }
                Mode::BlockComment(k) => match (b, next) {
                    (b'*', Some(b'/')) => {
                        self.mode = if k == 1 {
                            Mode::Code
                        } else {
                            Mode::BlockComment(k - 1)
                        };
                        i += 1;
                    }
                    (b'/', Some(b'*')) => {
                        self.mode = Mode::BlockComment(k + 1);
                        i += 1;
                    }
                    _ => {}
                },
            }
            i += 1;
        }
    }

    /// Surely unfinished: inside brackets, a string or a block comment.
    fn open(&self) -> bool {
        !self.unsure
            && (self.depth > 0 || matches!(self.mode, Mode::Text { .. } | Mode::BlockComment(_)))
    }
}

/// An entry being typed or pasted line by line, judged complete or not in time linear in
/// its length: short entries by the parser ([`is_incomplete`]); past [`PARSED_LINES`]
/// lines, an entry still inside brackets, a string or a block comment is unfinished
/// without parsing it again (the scan resumes where it stopped), and only an entry whose
/// brackets have closed is parsed.
#[derive(Debug, Default)]
pub struct Entry {
    text: String,
    lines: usize,
    scan: Scan,
}

impl Entry {
    /// The text so far.
    pub fn text(&self) -> &str {
        &self.text
    }

    /// Appends one line.
    pub fn push_line(&mut self, line: &str) {
        let start = self.text.len();
        if !self.text.is_empty() {
            self.text.push('\n');
        }
        self.text.push_str(line);
        self.lines += 1;
        self.scan.feed(&self.text.as_bytes()[start..]);
    }

    /// Takes the text out, leaving an empty entry.
    pub fn take(&mut self) -> String {
        let text = std::mem::take(&mut self.text);
        *self = Entry::default();
        text
    }

    /// Whether the entry is unfinished.
    pub fn is_incomplete(&self) -> bool {
        if self.lines > PARSED_LINES && self.scan.open() {
            return true;
        }
        is_incomplete(&self.text)
    }

    /// Makes this entry hold `text` (the editor's whole buffer), scanning only what was
    /// added when `text` extends the text held.
    pub fn set(&mut self, text: &str) {
        let grew_by_lines = text.len() > self.text.len()
            && text.starts_with(self.text.as_str())
            && text.as_bytes()[self.text.len()] == b'\n';
        if grew_by_lines || text == self.text {
            let added = &text[self.text.len()..];
            self.text.push_str(added);
            self.lines += added.matches('\n').count();
            self.scan.feed(added.as_bytes());
        } else {
            *self = Entry::default();
            self.text.push_str(text);
            self.lines = text.matches('\n').count() + 1;
            self.scan.feed(text.as_bytes());
        }
    }
}

/// Whether `code` is an unfinished statement: a parse error at the very end of the input
/// (an open bracket, a missing operand) or an unterminated string.
pub fn is_incomplete(code: &str) -> bool {
    if command(code).is_some() {
        return false;
    }
    let engine = Engine::new_raw();
    let Err(e) = engine.compile(code) else {
        return false;
    };
    match e.err_type() {
        ParseErrorType::UnexpectedEOF => true,
        ParseErrorType::BadInput(LexError::UnterminatedString) => true,
        _ => {
            let p = e.position();
            let lines: Vec<&str> = code.lines().collect();
            let last_line = lines.len().max(1);
            let last_len = lines.last().map(|l| l.chars().count()).unwrap_or(0);
            match (p.line(), p.position()) {
                (None, _) => true,
                (Some(l), c) => l > last_line || (l == last_line && c.unwrap_or(0) > last_len),
            }
        }
    }
}

/// Opens a new session log `.statebook/sessions/session-<time>-<pid>.sbook` in the
/// sandbox's root; every accepted input is appended and flushed at once, so a crash or a
/// closed terminal loses nothing (format: `notebook::session_log`). The path is judged
/// like a script's write (a shipped link leading outside is refused) and the file is
/// created exclusively through folder handles (see `safe_fs`). Returns why no log could
/// be opened.
pub fn open_session_log(sandbox: &crate::sandbox::Sandbox) -> Result<std::fs::File, String> {
    use std::io::Write;
    let stamp = crate::notebook::files::utc_now().replace([' ', ':'], "-");
    let mut last = String::new();
    for attempt in 0..4 {
        let suffix = if attempt == 0 {
            String::new()
        } else {
            format!("-{}", crate::safe_fs::random_id())
        };
        let name = format!(
            ".statebook/sessions/session-{stamp}-{}{suffix}.sbook",
            std::process::id()
        );
        let real = sandbox.write_path(&name)?;
        match crate::safe_fs::create_append(&real, true) {
            Ok(mut f) => {
                let _ = writeln!(f, "//== REPL session {}", crate::notebook::files::utc_now());
                let _ = f.flush();
                return Ok(f);
            }
            Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => {
                last = e.to_string();
            }
            Err(e) => return Err(format!("cannot create {}: {e}", real.display())),
        }
    }
    Err(last)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn open_brackets_are_incomplete() {
        assert!(is_incomplete("let A = matrix([[1, 2],"));
        assert!(is_incomplete("fn f(x) {"));
        assert!(is_incomplete("let s = \"abc"));
        assert!(is_incomplete("1 +"));
        assert!(!is_incomplete("let A = 1;"));
        assert!(!is_incomplete("1 + 2"));
        assert!(!is_incomplete("let = ;"));
    }

    #[test]
    fn a_long_entry_is_judged_by_its_brackets_and_agrees_with_the_parser() {
        let mut e = Entry::default();
        e.push_line("let big = [");
        for k in 0..1000 {
            e.push_line(&format!("  {k}, // row {k} [not a bracket]"));
            assert!(e.is_incomplete());
        }
        e.push_line("  \"a ] in a string\", /* ] */");
        assert!(e.is_incomplete());
        e.push_line("];");
        assert!(!e.is_incomplete(), "closed");
        assert!(!is_incomplete(e.text()));
        // An open string or block comment is unfinished as well.
        for open in ["\"abc", "/* note"] {
            let mut e = Entry::default();
            for _ in 0..100 {
                e.push_line("let a = 1;");
            }
            e.push_line(open);
            assert!(e.is_incomplete(), "{open}");
        }
        // The parser agrees on the open string (an open block comment it runs as it is;
        // a long entry waits for the comment to close).
        let mut e = Entry::default();
        e.push_line("let s = \"abc");
        assert!(e.is_incomplete() && is_incomplete(e.text()));
    }

    #[test]
    fn the_editor_buffer_is_scanned_only_where_it_grew() {
        let mut e = Entry::default();
        e.set("let m = matrix([");
        let s = e.scan;
        e.set("let m = matrix([\n[1, 2],");
        assert_eq!(e.scan, s, "[1, 2] opened and closed");
        e.set("let m = matrix([\n[1, 2], /");
        e.set("let m = matrix([\n[1, 2], // ]");
        assert_eq!(
            e.scan.mode,
            Mode::LineComment,
            "a line that grew is scanned again"
        );
        e.set("let x = 1;");
        assert_eq!(e.scan.depth, 0, "another buffer starts afresh");
        assert_eq!(e.text(), "let x = 1;");
    }

    #[test]
    fn commands() {
        assert_eq!(
            command("help poles"),
            Some(Command::Help(Some("poles".into())))
        );
        assert_eq!(command(" quit "), Some(Command::Quit));
        assert_eq!(command("help(1)"), None);
    }
}
