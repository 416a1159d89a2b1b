//! REPL session logs and turning one into an analysis file.
//!
//! The REPL appends every input to `.statebook/sessions/session-*.sbook` *before* running
//! it (flushed at once), then a status line after it. Each line the log adds is an
//! ordinary comment, so a log is itself a valid analysis file:
//!
//! ```text
//! //== REPL session 2026-05-01 09:30 UTC
//! //~ input 1
//! let A = matrix([[0, 1], [-2, -3]]);
//! //~ ok
//! //~ input 1
//! A.inverse(
//! //~ error: syntax: …
//! ```
//!
//! The number after `input` counts the input's lines, which are taken verbatim: an input
//! that itself holds a line such as `//~ ok` cannot end its entry early. (Logs written
//! before the count, with a bare `//~ input`, are still read, by markers.) An input
//! without a status line is one the session never finished (the terminal was closed, or
//! statebook stopped while running it).

/// Marks the start of an input in a session log.
pub const INPUT: &str = "//~ input";
/// Marks an input that ran without error.
pub const OK: &str = "//~ ok";
/// Starts the line that marks an input that failed; the error's first line follows.
pub const ERROR: &str = "//~ error: ";

/// How one input of a session ended.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Status {
    /// Ran without error.
    Ok,
    /// Failed with this error (first line).
    Failed(String),
    /// No status was logged: the session ended while it ran.
    Unfinished,
}

/// One logged input.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Entry {
    /// 1-based line of the input's first line in the log.
    pub line: usize,
    /// The input's text.
    pub code: String,
    /// How it ended.
    pub status: Status,
}

/// The log lines for an input: its marker with the line count, then the input verbatim.
pub fn input_lines(code: &str) -> String {
    let n = code.split('\n').count();
    format!("{INPUT} {n}\n{code}")
}

/// The log lines for a status (after an input).
pub fn status_line(error: Option<&str>) -> String {
    match error {
        None => OK.to_string(),
        Some(e) => {
            let first = e.lines().next().unwrap_or("").trim();
            let first = first.strip_prefix("error: ").unwrap_or(first);
            format!("{ERROR}{first}")
        }
    }
}

/// Reads the inputs of a session log, or says why the text is not one.
pub fn entries(log: &str) -> Result<Vec<Entry>, String> {
    let mut out: Vec<Entry> = Vec::new();
    let mut current: Option<Entry> = None;
    let mut seen_marker = false;
    let lines: Vec<&str> = log.split('\n').collect();
    let mut k = 0;
    while k < lines.len() {
        let line = lines[k].trim_end_matches('\r');
        let counted = line
            .strip_prefix(INPUT)
            .and_then(|r| r.strip_prefix(' '))
            .and_then(|n| n.trim().parse::<usize>().ok());
        if let Some(n) = counted {
            seen_marker = true;
            out.extend(current.take());
            let end = (k + 1 + n).min(lines.len());
            let code: Vec<&str> = lines[k + 1..end]
                .iter()
                .map(|l| l.trim_end_matches('\r'))
                .collect();
            // A counted input is complete; only a status line may follow it.
            current = Some(Entry {
                line: k + 2,
                code: code.join("\n"),
                status: Status::Unfinished,
            });
            k = end;
            if let Some(next) = lines.get(k).map(|l| l.trim_end_matches('\r')) {
                if next == OK || next.starts_with(ERROR) {
                    if let Some(mut e) = current.take() {
                        e.status = status_of(next);
                        out.push(e);
                    }
                    k += 1;
                }
            }
            if let Some(e) = current.take() {
                out.push(e);
            }
            continue;
        }
        if line == INPUT {
            seen_marker = true;
            out.extend(current.take());
            current = Some(Entry {
                line: k + 2,
                code: String::new(),
                status: Status::Unfinished,
            });
        } else if line == OK || line.starts_with(ERROR) {
            seen_marker = true;
            if let Some(mut e) = current.take() {
                e.status = status_of(line);
                out.push(e);
            }
        } else if let Some(e) = current.as_mut() {
            if !e.code.is_empty() {
                e.code.push('\n');
            }
            e.code.push_str(line);
        }
        k += 1;
    }
    out.extend(current);
    if !seen_marker {
        return Err(format!(
            "this is not a statebook session log (no `{INPUT}` lines)\nhint: session logs \
             are under .statebook/sessions/ in the folder the REPL ran in"
        ));
    }
    Ok(out)
}

fn status_of(line: &str) -> Status {
    match line.strip_prefix(ERROR) {
        Some(why) => Status::Failed(why.to_string()),
        None => Status::Ok,
    }
}

/// What [`to_analysis`] kept and left out.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Summary {
    /// Inputs kept.
    pub kept: usize,
    /// Log lines of the inputs left out, with why.
    pub left_out: Vec<(usize, String)>,
}

/// The work of [`to_analysis`], with its error as text.
fn to_analysis_inner(log: &str, log_name: &str, title: &str) -> Result<(String, Summary), String> {
    let entries = entries(log)?;
    let mut body = String::new();
    let mut summary = Summary {
        kept: 0,
        left_out: Vec::new(),
    };
    for e in &entries {
        match &e.status {
            Status::Ok if !e.code.trim().is_empty() => {
                body.push_str(e.code.trim_end());
                body.push('\n');
                summary.kept += 1;
            }
            Status::Ok => {}
            Status::Failed(why) => summary.left_out.push((e.line, format!("failed: {why}"))),
            Status::Unfinished => summary
                .left_out
                .push((e.line, "never finished (the session ended)".into())),
        }
    }
    let title = title.replace(['\n', '\r'], " ");
    let mut text = format!("//== {}\n", title.trim());
    text.push_str(&format!(
        "//> Made from the REPL session log `{}`: {} input{} kept.\n",
        log_name.replace('`', "'"),
        summary.kept,
        if summary.kept == 1 { "" } else { "s" }
    ));
    if !summary.left_out.is_empty() {
        text.push_str("//> Left out:\n");
        for (line, why) in &summary.left_out {
            text.push_str(&format!(
                "//> - the input at log line {line} ({})\n",
                why.replace('\n', " ")
            ));
        }
    }
    text.push_str("\n//== Session\n");
    text.push_str(&body);
    Ok((text, summary))
}

/// Turns a session log into an analysis file: a title cell naming where it came from,
/// then every input that ran without error, in order. Inputs that failed or never
/// finished are left out and listed (with their log lines) in the title cell's prose.
/// Errors: [`super::NotebookError::SessionLog`].
pub fn to_analysis(
    log: &str,
    log_name: &str,
    title: &str,
) -> Result<(String, Summary), super::NotebookError> {
    to_analysis_inner(log, log_name, title).map_err(super::NotebookError::SessionLog)
}

#[cfg(test)]
mod tests {
    use super::*;

    const LOG: &str = "//== REPL session 2026-05-01 09:30 UTC\n//~ input\nlet a = 2;\n//~ ok\n\
                       //~ input\nlet b = a +\n    1;\n//~ ok\n//~ input\nnope(1)\n\
                       //~ error: function not found: nope\n//~ input\nb * 3\n//~ ok\n\
                       //~ input\nloop {}\n";

    #[test]
    fn reads_inputs_and_statuses() {
        let e = entries(LOG).unwrap();
        assert_eq!(e.len(), 5);
        assert_eq!(e[1].code, "let b = a +\n    1;");
        assert_eq!(e[1].line, 6);
        assert_eq!(
            e[2].status,
            Status::Failed("function not found: nope".into())
        );
        assert_eq!(e[4].status, Status::Unfinished);
    }

    #[test]
    fn keeps_what_ran_and_lists_the_rest() {
        let (text, s) = to_analysis(LOG, "session.sbook", "My session").unwrap();
        assert_eq!(s.kept, 3);
        assert_eq!(s.left_out.len(), 2);
        assert!(text.starts_with("//== My session\n"), "{text}");
        assert!(
            text.contains("let a = 2;\nlet b = a +\n    1;\nb * 3\n"),
            "{text}"
        );
        assert!(
            !text.contains("nope(1)\n") && !text.contains("loop {}"),
            "{text}"
        );
        assert!(
            text.contains("log line 10 (failed: function not found"),
            "{text}"
        );
    }

    #[test]
    fn an_input_holding_a_marker_line_stays_whole() {
        let code = "let s = \"a\n//~ ok\n//~ input\nb\";";
        let log = format!(
            "//== REPL session\n{}\n{}\n{}\n{}\n",
            input_lines(code),
            status_line(None),
            input_lines("s.len()"),
            status_line(Some("error: boom"))
        );
        let e = entries(&log).unwrap();
        assert_eq!(e.len(), 2, "{e:?}");
        assert_eq!(e[0].code, code);
        assert_eq!(e[0].status, Status::Ok);
        assert_eq!(e[1].status, Status::Failed("boom".into()));
    }

    #[test]
    fn refuses_what_is_not_a_log() {
        assert!(entries("let a = 1;\n").is_err());
    }

    #[test]
    fn status_lines() {
        assert_eq!(status_line(None), OK);
        assert_eq!(
            status_line(Some("error: boom\n  at x:1:1")),
            "//~ error: boom"
        );
    }
}
