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
    fn commands() {
        assert_eq!(
            command("help poles"),
            Some(Command::Help(Some("poles".into())))
        );
        assert_eq!(command(" quit "), Some(Command::Quit));
        assert_eq!(command("help(1)"), None);
    }
}
