//! Nothing lost, no bad file crashes: the REPL's session log (piped input), turning it
//! into an analysis file, and clear errors for empty, enormous and non-UTF-8 files.

use std::path::{Path, PathBuf};
use std::process::Output;

use crate::common;
use common::cli::{bin, text};

fn temp_dir(name: &str) -> std::path::PathBuf {
    common::cli::temp_dir("lost", name)
}

fn repl(dir: &Path, input: &str) -> Output {
    common::cli::repl_piped(dir, input)
}

fn the_log(dir: &Path) -> PathBuf {
    let logs: Vec<PathBuf> = std::fs::read_dir(dir.join(".statebook/sessions"))
        .expect("a session log folder")
        .filter_map(|e| e.ok().map(|e| e.path()))
        .collect();
    assert_eq!(logs.len(), 1, "{logs:?}");
    logs[0].clone()
}

#[test]
fn session_log_keeps_every_input_and_becomes_an_analysis() {
    let d = temp_dir("session");
    let out = repl(
        &d,
        "let A = matrix([[0, 1],\n   [-2, -3]]);\nhelp trace\nnot_a_function(A)\nlet p = eigenvalues(A);\np.len()\n",
    );
    assert_eq!(out.status.code(), Some(1), "{}", text(&out.stderr));
    let log = the_log(&d);
    let logged = std::fs::read_to_string(&log).expect("log");
    assert!(
        logged.contains("let A = matrix([[0, 1],\n   [-2, -3]]);\n//~ ok"),
        "{logged}"
    );
    assert!(
        logged.contains("not_a_function(A)\n//~ error: "),
        "{logged}"
    );
    assert!(
        !logged.contains("help trace"),
        "REPL commands are not script: {logged}"
    );

    let target = d.join("from-repl.sbook");
    let out = bin()
        .args(["from-session"])
        .arg(&log)
        .arg("-o")
        .arg(&target)
        .output()
        .expect("run");
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    assert!(
        text(&out.stdout).contains("3 inputs kept, 1 left out"),
        "{}",
        text(&out.stdout)
    );
    let analysis = std::fs::read_to_string(&target).expect("analysis");
    assert!(analysis.starts_with("//== from repl\n"), "{analysis}");
    assert!(!analysis.contains("not_a_function(A)\n"), "{analysis}");
    // The analysis runs.
    let out = bin().arg("run").arg(&target).output().expect("run");
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    assert!(text(&out.stdout).contains('2'), "{}", text(&out.stdout));

    // It never overwrites.
    let out = bin()
        .args(["from-session"])
        .arg(&log)
        .arg("-o")
        .arg(&target)
        .output()
        .expect("run");
    assert_eq!(out.status.code(), Some(1));
    assert!(text(&out.stderr).contains("never overwrites"));
    assert_eq!(std::fs::read_to_string(&target).expect("kept"), analysis);
}

#[test]
fn from_session_refuses_what_is_not_a_log() {
    let d = temp_dir("notlog");
    let f = d.join("plain.sbook");
    std::fs::write(&f, "//== X\nlet a = 1;\n").expect("write");
    let out = bin()
        .args(["from-session"])
        .arg(&f)
        .arg("-o")
        .arg(d.join("out.sbook"))
        .output()
        .expect("run");
    assert_eq!(out.status.code(), Some(1));
    assert!(text(&out.stderr).contains("not a statebook session log"));
    assert!(!d.join("out.sbook").exists());
}

#[test]
fn empty_enormous_and_non_utf8_files_are_clear_errors() {
    let d = temp_dir("files");
    let empty = d.join("empty.sbook");
    std::fs::write(&empty, "").expect("write");
    let blank = d.join("blank.sbook");
    std::fs::write(&blank, "\n  \n").expect("write");
    let big = d.join("big.sbook");
    let f = std::fs::File::create(&big).expect("create");
    f.set_len(statebook::notebook::files::MAX_FILE_BYTES + 1)
        .expect("sparse file");
    let bad = d.join("latin1.sbook");
    std::fs::write(&bad, b"//== Caf\xe9\nlet a = 1;\n").expect("write");
    for (file, words) in [
        (&empty, "is empty"),
        (&blank, "is empty"),
        (&big, "more than the"),
        (&bad, "not UTF-8 text (invalid byte at offset 8)"),
    ] {
        for cmd in ["run", "render", "check"] {
            let out = bin().arg(cmd).arg(file).output().expect("run");
            assert_eq!(out.status.code(), Some(1), "{cmd} {}", file.display());
            let e = text(&out.stderr);
            assert!(e.starts_with("error: ") && e.contains(words), "{e}");
        }
    }
}

#[test]
fn call_depth_beyond_the_stack_is_bad_usage() {
    let d = temp_dir("depth");
    let f = d.join("a.sbook");
    std::fs::write(
        &f,
        "//== A\nfn f(n) { if n == 0 { 0 } else { 1 + f(n - 1) } }\nf(10000)\n",
    )
    .expect("write");
    let out = bin()
        .args(["--max-call-depth", "100000000", "run"])
        .arg(&f)
        .output()
        .expect("run");
    assert_eq!(out.status.code(), Some(2), "{}", text(&out.stderr));
    let out = bin()
        .args(["--max-call-depth", "20000", "run"])
        .arg(&f)
        .output()
        .expect("run");
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    assert!(text(&out.stdout).contains("10000"));
}

#[test]
fn runaway_scripts_exit_one_never_crash() {
    let d = temp_dir("runaway");
    for (body, words) in [
        ("loop {}", "operation limit"),
        ("fn f(n) { f(n + 1) }\nf(0)", "nested too deeply"),
        ("let s = \"ab\"; loop { s += s; }", "--max-string-size"),
    ] {
        let f = d.join("r.sbook");
        std::fs::write(&f, format!("//== R\n{body}\n")).expect("write");
        let out = bin().arg("run").arg(&f).output().expect("run");
        assert_eq!(out.status.code(), Some(1), "{body}: {}", text(&out.stderr));
        assert!(text(&out.stderr).contains(words), "{}", text(&out.stderr));
    }
    let f = d.join("t.sbook");
    std::fs::write(&f, "//== T\nlet x = 0; loop { x += 1; }\n").expect("write");
    let out = bin()
        .args(["--timeout", "0.5", "--max-operations", "0", "run"])
        .arg(&f)
        .output()
        .expect("run");
    assert_eq!(out.status.code(), Some(1));
    assert!(
        text(&out.stderr).contains("--timeout"),
        "{}",
        text(&out.stderr)
    );
}
