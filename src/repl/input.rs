//! Input handling shared by the interactive and the piped prompt: REPL commands,
//! incomplete-input detection and the session log.

use rhai::{Engine, LexError, ParseErrorType};
use std::path::Path;

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

/// Opens a new session log under `dir` (`session-<time>.sbook`); every accepted input is
/// appended and flushed at once, so a crash or a closed terminal loses nothing (format:
/// `notebook::session_log`). The log is appended to, so it is the one file statebook
/// writes without a temporary file and a rename.
pub fn open_session_log(dir: &Path) -> Option<std::fs::File> {
    use std::io::Write;
    std::fs::create_dir_all(dir).ok()?;
    let stamp = crate::notebook::files::utc_now().replace([' ', ':'], "-");
    let path = dir.join(format!("session-{stamp}-{}.sbook", std::process::id()));
    let mut f = std::fs::OpenOptions::new()
        .create(true)
        .append(true)
        .open(path)
        .ok()?;
    let _ = writeln!(f, "//== REPL session {}", crate::notebook::files::utc_now());
    let _ = f.flush();
    Some(f)
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
    fn commands() {
        assert_eq!(
            command("help poles"),
            Some(Command::Help(Some("poles".into())))
        );
        assert_eq!(command(" quit "), Some(Command::Quit));
        assert_eq!(command("help(1)"), None);
    }
}
