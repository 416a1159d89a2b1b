//! The script-level suite: every `tests/suite/<area>/*.sbook` file is run by one harness.
//!
//! Expectations are comments in the file:
//! - `//! expect-output: TEXT` — the run's transcript contains TEXT;
//! - `//! expect-no-output: TEXT` — the run's transcript does not contain TEXT (a warning
//!   that must stay quiet);
//! - `//! expect-error: TEXT` — the run fails and its error contains TEXT;
//! - `//! expect-error-line: N` — the error points at line N of the file.
//!
//! A file that starts with `//! cases` holds several named cases, one per cell (`//==
//! title`): each cell with an `//! expect-error: TEXT` runs on its own (the other error
//! cases blanked, so line numbers stay those of the file; cells without expectations are
//! shared helpers), and `//! expect-error-at: LINE:COL` checks where its error points.
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

/// The cells of a file as line ranges `[start, end)` (a cell starts at a `//==` line).
fn cells(text: &str) -> Vec<(usize, usize)> {
    let lines: Vec<&str> = text.lines().collect();
    let mut starts: Vec<usize> = (0..lines.len())
        .filter(|&i| lines[i].trim_start().starts_with("//=="))
        .collect();
    if starts.first() != Some(&0) {
        starts.insert(0, 0);
    }
    let mut out = Vec::new();
    for (k, &s) in starts.iter().enumerate() {
        out.push((s, starts.get(k + 1).copied().unwrap_or(lines.len())));
    }
    out
}

/// A `//! cases` file: every error case on its own, the other cases blanked.
fn check_cases(path: &Path, text: &str) -> Result<(), String> {
    let lines: Vec<&str> = text.lines().collect();
    let cells = cells(text);
    let block = |c: &(usize, usize)| lines[c.0..c.1].join("\n");
    let cases: Vec<usize> = (0..cells.len())
        .filter(|&k| !expectations(&block(&cells[k]), "expect-error:").is_empty())
        .collect();
    if cases.is_empty() {
        return Err("a `//! cases` file without an expect-error case".into());
    }
    let name = path.display().to_string();
    let root = path.parent().unwrap_or(Path::new(".")).to_path_buf();
    for &k in &cases {
        let own = block(&cells[k]);
        let title = lines[cells[k].0]
            .trim_start_matches("//==")
            .trim()
            .to_string();
        let kept: Vec<&str> = (0..lines.len())
            .map(|i| {
                let other_case = cases
                    .iter()
                    .any(|&j| j != k && (cells[j].0..cells[j].1).contains(&i));
                if other_case {
                    ""
                } else {
                    lines[i]
                }
            })
            .collect();
        let case_text = kept.join("\n") + "\n";
        let mut session = Session::new(&SessionOptions {
            root: root.clone(),
            ..SessionOptions::default()
        });
        let r = run::run_text(
            &mut session,
            &case_text,
            &name,
            files::provenance(&name, ""),
        );
        let Some(e) = run::first_error(&r) else {
            return Err(format!(
                "case '{title}': expected an error, the run succeeded"
            ));
        };
        for w in expectations(&own, "expect-error:") {
            if !e.contains(w.as_str()) {
                return Err(format!(
                    "case '{title}': error does not contain {w:?}:\n{e}"
                ));
            }
        }
        for at in expectations(&own, "expect-error-at:") {
            let want = format!(":{at}");
            if !e
                .lines()
                .nth(1)
                .is_some_and(|loc| loc.trim_end().ends_with(&want))
            {
                return Err(format!(
                    "case '{title}': error does not point at {at}:\n{e}"
                ));
            }
        }
    }
    Ok(())
}

fn check_file(path: &Path) -> Result<(), String> {
    let (text, sha) = files::read_analysis(path).map_err(|e| e.to_string())?;
    if text.lines().next().is_some_and(|l| l.trim() == "//! cases") {
        return check_cases(path, &text);
    }
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
