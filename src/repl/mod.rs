//! The interactive prompt: history, multi-line entry while brackets or an expression are
//! incomplete, completion of built-ins and variables, `help NAME`, and the value of each
//! expression shown. When stdin is not a terminal it reads statements line by line
//! (continuation lines included) and prints results without prompt noise, so it can be
//! scripted.

mod complete;
pub mod input;

use crate::notebook::session_log;
use crate::script::output::Output;
use crate::{Session, SessionOptions};
use complete::ReplHelper;
use input::{Command, Entry};
use rustyline::error::ReadlineError;
use std::io::{BufRead, IsTerminal, Write};
use std::path::PathBuf;
use std::sync::{Arc, Mutex};

/// Starts the REPL; returns the process exit code.
pub fn start(options: SessionOptions) -> u8 {
    let mut repl = Repl::new(options);
    if std::io::stdin().is_terminal() {
        repl.interactive()
    } else {
        repl.piped()
    }
}

struct Repl {
    session: Session,
    figures: usize,
    plots_dir: PathBuf,
    names: Arc<Mutex<Vec<String>>>,
    log: Option<std::fs::File>,
}

impl Repl {
    fn new(options: SessionOptions) -> Self {
        let plots_dir = PathBuf::from("plots");
        Repl {
            session: Session::new(&options),
            figures: 0,
            plots_dir,
            names: Arc::new(Mutex::new(Vec::new())),
            log: None,
        }
    }

    /// Runs one complete input; prints its outputs; returns false on error. Script
    /// inputs are logged before they run and their outcome after.
    fn run(&mut self, code: &str, out: &mut dyn Write, err: &mut dyn Write) -> bool {
        match input::command(code) {
            Some(Command::Help(name)) => {
                let text = match name.as_deref() {
                    None => crate::script::docs::overview(),
                    Some(n) => match crate::script::docs::find(n) {
                        Some(d) => crate::script::docs::page(&d) + "\n",
                        None => format!("no built-in named '{n}' (`help` lists them all)\n"),
                    },
                };
                let _ = write!(out, "{text}");
                return true;
            }
            Some(Command::Quit) | None => {}
        }
        self.log_input(code);
        let result = self.session.eval(code);
        let mut outputs = self.session.take_outputs();
        let ok = match result {
            Ok(v) => {
                outputs.extend(self.session.show_value(v));
                true
            }
            Err(e) => {
                let text = e.render("<repl>", code);
                self.log_status(Some(&text));
                outputs.push(Output::Error(text));
                false
            }
        };
        if ok {
            self.log_status(None);
        }
        for o in outputs {
            self.print_output(o, out, err);
        }
        if let Ok(mut n) = self.names.lock() {
            *n = self.session.variable_names();
            n.extend(self.session.function_names());
        }
        ok
    }

    fn print_output(&mut self, o: Output, out: &mut dyn Write, err: &mut dyn Write) {
        match o {
            Output::Text(t) | Output::Value(t) => {
                let _ = writeln!(out, "{t}");
            }
            Output::Note(n) => {
                let _ = writeln!(out, "{n}");
            }
            Output::Warning(w) => {
                let _ = writeln!(err, "warning: {w}");
            }
            Output::Error(e) => {
                let _ = writeln!(err, "{e}");
            }
            Output::Figure { svg, .. } => {
                self.figures += 1;
                let path = self
                    .plots_dir
                    .join(format!("figure-{:03}.svg", self.figures));
                // Judged like a script's own write: a shipped `plots` link that leads
                // outside the folder is refused, and the folder is opened by handle.
                let saved = self
                    .session
                    .sandbox()
                    .write_path(&path.to_string_lossy())
                    .map_err(|m| std::io::Error::new(std::io::ErrorKind::PermissionDenied, m))
                    .and_then(|real| crate::safe_fs::write_file(&real, svg.as_bytes(), true));
                match saved {
                    Ok(()) => {
                        let _ = writeln!(out, "figure saved to {}", path.display());
                    }
                    Err(e) => {
                        let _ =
                            writeln!(err, "error: cannot save figure to {}: {e}", path.display());
                    }
                }
            }
        }
    }

    /// Appends an input to the session log, flushed at once (before it runs, so that
    /// even a crash while running it loses nothing).
    fn log_input(&mut self, code: &str) {
        if let Some(f) = self.log.as_mut() {
            let _ = writeln!(f, "{}", session_log::input_lines(code));
            let _ = f.flush();
        }
    }

    /// Appends how the last logged input ended.
    fn log_status(&mut self, error: Option<&str>) {
        if let Some(f) = self.log.as_mut() {
            let _ = writeln!(f, "{}", session_log::status_line(error));
            let _ = f.flush();
        }
    }

    fn interactive(&mut self) -> u8 {
        let config = rustyline::Config::builder()
            .auto_add_history(false)
            .completion_type(rustyline::CompletionType::List)
            .build();
        let mut editor: rustyline::Editor<ReplHelper, rustyline::history::DefaultHistory> =
            match rustyline::Editor::with_config(config) {
                Ok(e) => e,
                Err(e) => {
                    eprintln!("error: cannot start the interactive prompt: {e}");
                    return 1;
                }
            };
        editor.set_helper(Some(ReplHelper::new(self.names.clone())));
        let history = history_path();
        if let Some(h) = &history {
            let _ = editor.load_history(h);
        }
        self.log = self.open_log(&mut std::io::stderr());
        println!(
            "statebook {} — type an expression, `help` for the built-ins, `help NAME` for one, \
             `quit` to leave",
            env!("CARGO_PKG_VERSION")
        );
        loop {
            match editor.readline("sb> ") {
                Ok(line) => {
                    if line.trim().is_empty() {
                        continue;
                    }
                    let _ = editor.add_history_entry(line.as_str());
                    if matches!(input::command(&line), Some(Command::Quit)) {
                        break;
                    }
                    let (mut o, mut e) = (std::io::stdout(), std::io::stderr());
                    self.run(&line, &mut o, &mut e);
                }
                Err(ReadlineError::Interrupted) => continue,
                Err(ReadlineError::Eof) => break,
                Err(e) => {
                    eprintln!("error: {e}");
                    break;
                }
            }
        }
        if let Some(h) = &history {
            if let Some(dir) = h.parent() {
                let _ = std::fs::create_dir_all(dir);
            }
            // Through a temporary file and a rename, like every file statebook writes. The
            // editor creates the file by name, so the name is unpredictable (a fixed name
            // could be planted in advance as a link to another file).
            let name = h.file_name().and_then(|n| n.to_str()).unwrap_or("history");
            let tmp = h.with_file_name(format!(".{name}.sbtmp-{}", crate::safe_fs::random_id()));
            if editor.save_history(&tmp).is_ok() {
                if std::fs::rename(&tmp, h).is_err() {
                    let _ = std::fs::remove_file(&tmp);
                }
            } else {
                let _ = std::fs::remove_file(&tmp);
            }
        }
        0
    }

    /// Opens the session log, or warns on `err` that none is kept (a read-only folder, a
    /// refused link).
    fn open_log(&self, err: &mut dyn Write) -> Option<std::fs::File> {
        match input::open_session_log(self.session.sandbox()) {
            Ok(f) => Some(f),
            Err(why) => {
                let _ = writeln!(err, "warning: no session log is kept: {why}");
                None
            }
        }
    }

    fn piped(&mut self) -> u8 {
        let stdin = std::io::stdin();
        let (mut out, mut err) = (std::io::stdout().lock(), std::io::stderr().lock());
        self.log = self.open_log(&mut err);
        let mut buffer = Entry::default();
        let mut failed = false;
        let mut reader = stdin.lock();
        let mut number = 0usize;
        loop {
            let mut bytes = Vec::new();
            match reader.read_until(b'\n', &mut bytes) {
                Ok(0) => break,
                Ok(_) => {}
                Err(e) => {
                    let _ = writeln!(err, "error: cannot read the input: {e}");
                    failed = true;
                    break;
                }
            }
            number += 1;
            if bytes.last() == Some(&b'\n') {
                bytes.pop();
            }
            if bytes.last() == Some(&b'\r') {
                bytes.pop();
            }
            let line = match String::from_utf8(bytes) {
                Ok(l) => l,
                Err(e) => {
                    let _ = writeln!(
                        err,
                        "error: input line {number} is not UTF-8 text (invalid byte at offset \
                         {}); it was skipped",
                        e.utf8_error().valid_up_to()
                    );
                    failed = true;
                    continue;
                }
            };
            if buffer.text().is_empty() && line.trim().is_empty() {
                continue;
            }
            buffer.push_line(&line);
            if buffer.is_incomplete() {
                continue;
            }
            if matches!(input::command(buffer.text()), Some(Command::Quit)) {
                buffer.take();
                break;
            }
            let code = buffer.take();
            failed |= !self.run(&code, &mut out, &mut err);
        }
        if !buffer.text().trim().is_empty() {
            let code = buffer.take();
            failed |= !self.run(&code, &mut out, &mut err);
        }
        let _ = out.flush();
        u8::from(failed)
    }
}

fn history_path() -> Option<PathBuf> {
    std::env::var_os("HOME").map(|h| PathBuf::from(h).join(".statebook").join("history"))
}
