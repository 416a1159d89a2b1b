//! Command-line integration tests: the binary as a user runs it.

use std::process::Output;

use crate::common;
use common::cli::{bin, text};

fn temp_dir(name: &str) -> std::path::PathBuf {
    common::cli::temp_dir("cli", name)
}

fn run_file(dir: &std::path::Path, name: &str, body: &str, args: &[&str]) -> Output {
    let f = dir.join(name);
    std::fs::write(&f, body).expect("write");
    bin().args(args).arg(&f).output().expect("run")
}

#[test]
fn run_prints_cells_and_exits_zero() {
    let d = temp_dir("run");
    let out = run_file(
        &d,
        "a.sbook",
        "//== One\nlet A = identity(2) * 3;\nA\n",
        &["run"],
    );
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let s = text(&out.stdout);
    assert!(s.contains("One") && s.contains("matrix 2×2"), "{s}");
}

#[test]
fn script_error_exits_one_with_location_and_caret() {
    let d = temp_dir("err");
    let out = run_file(
        &d,
        "bad.sbook",
        "//== X\nlet A = identity(2);\nlet B = A * row([1, 2, 3]);\n",
        &["run"],
    );
    assert_eq!(out.status.code(), Some(1));
    let e = text(&out.stderr);
    assert!(e.starts_with("error: "), "{e}");
    assert!(e.contains("bad.sbook:3:11"), "{e}");
    assert!(e.contains("2×2 * 1×3"), "{e}");
    assert!(e.contains('^'), "{e}");
}

#[test]
fn bad_command_line_exits_two() {
    let out = bin().arg("frobnicate").output().expect("run");
    assert_eq!(out.status.code(), Some(2));
    let out = bin().args(["run"]).output().expect("run");
    assert_eq!(out.status.code(), Some(2));
}

#[test]
fn missing_and_non_utf8_files_are_clear_errors() {
    let d = temp_dir("files");
    let out = bin()
        .args(["run"])
        .arg(d.join("nope.sbook"))
        .output()
        .expect("run");
    assert_eq!(out.status.code(), Some(1));
    assert!(text(&out.stderr).contains("no such file"));
    let f = d.join("binary.sbook");
    std::fs::write(&f, [0x66, 0xff, 0xfe, 0x0a]).expect("write");
    let out = bin().args(["run"]).arg(&f).output().expect("run");
    assert_eq!(out.status.code(), Some(1));
    assert!(
        text(&out.stderr).contains("not UTF-8"),
        "{}",
        text(&out.stderr)
    );
}

#[test]
fn help_lists_families_and_pages() {
    let out = bin().arg("help").output().expect("run");
    assert_eq!(out.status.code(), Some(0));
    let s = text(&out.stdout);
    assert!(
        s.contains("linear algebra") && s.contains("eigenvalues"),
        "{s}"
    );
    assert!(s.contains("db"), "stdlib functions are listed: {s}");
    let out = bin().args(["help", "solve"]).output().expect("run");
    let s = text(&out.stdout);
    assert!(
        s.contains("solve(A: matrix, B: matrix) → Matrix") && s.contains("example:"),
        "{s}"
    );
    let out = bin().args(["help", "no_such_thing"]).output().expect("run");
    assert_eq!(out.status.code(), Some(1));
}

#[test]
fn version_flag() {
    let out = bin().arg("--version").output().expect("run");
    assert_eq!(out.status.code(), Some(0));
    assert!(text(&out.stdout).contains(env!("CARGO_PKG_VERSION")));
}

#[test]
fn repl_on_piped_input_with_continued_lines() {
    let input = "let A = matrix([[1, 2],\n    [3, 4]]);\nA.determinant()\nfn twice(x) {\n  x * 2\n}\ntwice(21)\nhelp trace\n";
    let out = common::cli::repl_piped(&temp_dir("repl"), input);
    let s = text(&out.stdout);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    assert!(s.contains("-2"), "{s}");
    assert!(s.contains("42"), "{s}");
    assert!(s.contains("sum of the diagonal"), "{s}");
    assert!(!s.contains("sb>"), "no prompt noise on piped input: {s}");
}

#[test]
fn repl_piped_error_sets_exit_code_and_continues() {
    let out = common::cli::repl_piped(&temp_dir("repl2"), "identity(2).inverse(\n1 +\n;\n7 * 6\n");
    assert_eq!(out.status.code(), Some(1));
    assert!(text(&out.stdout).contains("42"));
    assert!(text(&out.stderr).contains("error:"));
}

#[test]
fn every_family_is_listed_by_help() {
    let out = bin().arg("help").output().expect("run");
    let s = text(&out.stdout);
    for name in [
        "state_space",
        "modal_realization",
        "equivalence",
        "read_csv",
        "db",
    ] {
        assert!(s.contains(name), "help lists {name}: {s}");
    }
}

#[test]
fn print_of_a_model_uses_its_display() {
    let d = temp_dir("printmodel");
    let out = run_file(
        &d,
        "m.sbook",
        "print(state_space([[-1]], [[1]], [[1]], 0));\n",
        &["run"],
    );
    assert!(
        text(&out.stdout).contains("state-space model · continuous"),
        "{}",
        text(&out.stdout)
    );
}
