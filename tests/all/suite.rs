//! The script-level suite: every `tests/suite/<area>/*.sbook` file is run by one harness.
//!
//! Expectations are comments in the file:
//! - `//! expect-output: TEXT` — the run's transcript contains TEXT;
//! - `//! expect-no-output: TEXT` — the run's transcript does not contain TEXT (a warning
//!   that must stay quiet);
//! - `//! expect-error: TEXT` — the run fails and its error contains TEXT;
//! - `//! expect-error-line: N` — the error points at line N of the file.
//!
//! A file without `expect-error` must run without error. Most files check their numbers
//! in-script with `require(...)`, which fails the run when a check does not hold.

use statebook::notebook::{files, run};
use statebook::{Session, SessionOptions};
use std::path::{Path, PathBuf};

fn suite_files(dir: &Path, out: &mut Vec<PathBuf>) {
    let Ok(entries) = std::fs::read_dir(dir) else {
        return;
    };
    let mut paths: Vec<PathBuf> = entries.filter_map(|e| e.ok().map(|e| e.path())).collect();
    paths.sort();
    for p in paths {
        if p.is_dir() {
            suite_files(&p, out);
        } else if p.extension().is_some_and(|e| e == "sbook") {
            out.push(p);
        }
    }
}

fn expectations(text: &str, key: &str) -> Vec<String> {
    text.lines()
        .filter_map(|l| l.trim().strip_prefix("//!")?.trim().strip_prefix(key))
        .map(|s| s.trim_start_matches(':').trim().to_string())
        .collect()
}

fn check_file(path: &Path) -> Result<(), String> {
    let (text, sha) = files::read_analysis(path)?;
    let name = path.display().to_string();
    let root = path.parent().unwrap_or(Path::new(".")).to_path_buf();
    let mut session = Session::new(&SessionOptions {
        root,
        ..SessionOptions::default()
    });
    let r = run::run_text(&mut session, &text, &name, files::provenance(&name, &sha));
    let transcript = run::transcript(&r);
    let error = run::first_error(&r).map(str::to_string);
    let want_errors = expectations(&text, "expect-error:");
    let want_lines = expectations(&text, "expect-error-line:");
    match (&error, want_errors.is_empty()) {
        (Some(e), true) => return Err(format!("unexpected error:\n{e}")),
        (None, false) => return Err(format!("expected an error containing {want_errors:?}")),
        (Some(e), false) => {
            for w in &want_errors {
                if !e.contains(w.as_str()) {
                    return Err(format!("error does not contain {w:?}:\n{e}"));
                }
            }
            for l in &want_lines {
                let at = format!(":{l}:");
                if !e.lines().nth(1).is_some_and(|loc| loc.contains(&at)) {
                    return Err(format!("error does not point at line {l}:\n{e}"));
                }
            }
        }
        (None, true) => {}
    }
    for w in expectations(&text, "expect-output:") {
        if !transcript.contains(&w) {
            return Err(format!("output does not contain {w:?}:\n{transcript}"));
        }
    }
    for w in expectations(&text, "expect-no-output:") {
        if transcript.contains(&w) {
            return Err(format!("output contains {w:?}:\n{transcript}"));
        }
    }
    Ok(())
}

#[test]
fn script_suite() {
    let mut files_found = Vec::new();
    suite_files(
        Path::new(concat!(env!("CARGO_MANIFEST_DIR"), "/tests/suite")),
        &mut files_found,
    );
    assert!(!files_found.is_empty(), "no suite files found");
    let mut failures = Vec::new();
    for f in &files_found {
        if let Err(m) = check_file(f) {
            failures.push(format!("{}: {m}", f.display()));
        }
    }
    assert!(
        failures.is_empty(),
        "{} of {} suite files failed:\n\n{}",
        failures.len(),
        files_found.len(),
        failures.join("\n\n")
    );
}

#[test]
fn demo_scripts_run_cleanly() {
    let mut demos = Vec::new();
    suite_files(
        Path::new(concat!(env!("CARGO_MANIFEST_DIR"), "/demo-scripts")),
        &mut demos,
    );
    assert!(!demos.is_empty());
    for d in demos {
        let (text, sha) = files::read_analysis(&d).unwrap_or_default();
        let name = d.display().to_string();
        let root = d.parent().unwrap_or(Path::new(".")).to_path_buf();
        let mut session = Session::new(&SessionOptions {
            root,
            ..SessionOptions::default()
        });
        let r = run::run_text(&mut session, &text, &name, files::provenance(&name, &sha));
        assert!(
            !r.failed,
            "{}:\n{}",
            d.display(),
            run::first_error(&r).unwrap_or("")
        );
    }
}
