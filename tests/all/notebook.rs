//! Analysis files end to end: run, render, check, new, CSV, and path refusals.

use statebook::notebook::{files, run};
use statebook::script::output::Output;
use statebook::{Session, SessionOptions};
use std::path::Path;

use crate::common;
use common::cli::{bin, text};

fn temp_dir(name: &str) -> std::path::PathBuf {
    common::cli::temp_dir("nb", name)
}

const ANALYSIS: &str = "//== Damped spring (invented numbers)
//> The model has **two** states.
let A = matrix([[0, 1], [-4, -0.8]]);
fn decay(t) { exp(-0.4 * t) }
//== Figure
let t = linear_grid(0, 10, 50);
plot(t, t.map(|v| decay(v)), #{ title: \"envelope\" })
//== Records
record(\"eigenvalues\", eigenvalues(A));
record(\"trace\", A.trace());
print(\"done\");
";

fn run_in(dir: &Path, src: &str) -> statebook::notebook::output::NotebookRun {
    let mut s = Session::new(&SessionOptions {
        root: dir.to_path_buf(),
        ..SessionOptions::default()
    });
    run::run_text(&mut s, src, "x.sbook", files::provenance("x.sbook", "0"))
}

#[test]
fn runner_shares_scope_and_functions_across_cells_in_order() {
    let d = temp_dir("runner");
    let r = run_in(&d, "//== A\nlet x = 2;\nfn twice(v) { v * 2 }\nprint(\"a\");\n//== B\nprint(twice(x));\nshow(x + 1);\nnote(\"n\");\nx * 10\n");
    assert!(!r.failed);
    assert_eq!(r.cells.len(), 2);
    assert_eq!(r.cells[0].outputs, vec![Output::Text("a".into())]);
    assert_eq!(
        r.cells[1].outputs,
        vec![
            Output::Text("4".into()),
            Output::Value("3".into()),
            Output::Note("n".into()),
            Output::Value("20".into())
        ]
    );
}

#[test]
fn render_writes_a_self_contained_report_and_results() {
    let d = temp_dir("render");
    let f = d.join("spring.sbook");
    std::fs::write(&f, ANALYSIS).expect("write");
    let out = bin().arg("render").arg(&f).output().expect("run");
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let html = std::fs::read_to_string(d.join("spring.html")).expect("report");
    assert_eq!(html.matches("<svg").count(), 1, "one inline svg per figure");
    let without_ns = html.replace("http://www.w3.org/2000/svg", "");
    assert!(
        !without_ns.contains("http://") && !without_ns.contains("https://"),
        "no external references"
    );
    assert!(html.contains("<strong>two</strong>"), "Markdown rendered");
    assert!(html.contains("Damped spring"));
    let results = std::fs::read_to_string(d.join("spring.results.json")).expect("results");
    assert!(results.contains("\"eigenvalues\"") && results.contains("\"trace\""));
    // Byte-stable apart from the provenance block.
    let out = bin().arg("render").arg(&f).output().expect("run");
    assert_eq!(out.status.code(), Some(0));
    let again = std::fs::read_to_string(d.join("spring.html")).expect("report");
    let cut = |s: &str| s.split("provenance").next().unwrap_or("").to_string();
    assert_eq!(cut(&html), cut(&again));
    assert_eq!(
        results,
        std::fs::read_to_string(d.join("spring.results.json")).expect("results")
    );
}

#[test]
fn markdown_report_writes_figures_beside_it() {
    let d = temp_dir("md");
    let f = d.join("spring.sbook");
    std::fs::write(&f, ANALYSIS).expect("write");
    let out = bin()
        .args(["render", "--format", "md"])
        .arg(&f)
        .output()
        .expect("run");
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let md = std::fs::read_to_string(d.join("spring.md")).expect("md");
    let svgs: Vec<_> = std::fs::read_dir(&d)
        .expect("dir")
        .filter_map(|e| e.ok())
        .filter(|e| e.path().extension().is_some_and(|x| x == "svg"))
        .collect();
    assert_eq!(svgs.len(), 1);
    let name = svgs[0].file_name().to_string_lossy().into_owned();
    assert!(md.contains(&name), "{md}");
}

#[test]
fn check_passes_then_reports_drift_and_missing_records() {
    let d = temp_dir("check");
    let f = d.join("spring.sbook");
    std::fs::write(&f, ANALYSIS).expect("write");
    assert_eq!(
        bin()
            .arg("render")
            .arg(&f)
            .output()
            .expect("run")
            .status
            .code(),
        Some(0)
    );
    let out = bin().arg("check").arg(&f).output().expect("run");
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}{}",
        text(&out.stdout),
        text(&out.stderr)
    );
    assert!(text(&out.stdout).contains("check passed"));
    // Drift: the analysis changes a number.
    std::fs::write(&f, ANALYSIS.replace("-0.8", "-0.81")).expect("write");
    let out = bin().arg("check").arg(&f).output().expect("run");
    assert_eq!(out.status.code(), Some(1));
    let s = text(&out.stdout);
    assert!(
        s.contains("check FAILED") && s.contains("trace") && s.contains("relative difference"),
        "{s}"
    );
    // A record disappears.
    std::fs::write(&f, ANALYSIS.replace("record(\"trace\", A.trace());", "")).expect("write");
    let out = bin().arg("check").arg(&f).output().expect("run");
    assert_eq!(out.status.code(), Some(1));
    assert!(text(&out.stdout).contains("(missing)"));
    // A tolerance flag loosens the comparison.
    std::fs::write(&f, ANALYSIS.replace("-0.8", "-0.8000000001")).expect("write");
    let out = bin()
        .args(["check", "--tolerance", "1e-6"])
        .arg(&f)
        .output()
        .expect("run");
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stdout));
}

#[test]
fn a_failing_cell_stops_render_and_keeps_the_old_report() {
    let d = temp_dir("fail");
    let f = d.join("a.sbook");
    std::fs::write(&f, ANALYSIS).expect("write");
    assert_eq!(
        bin()
            .arg("render")
            .arg(&f)
            .output()
            .expect("run")
            .status
            .code(),
        Some(0)
    );
    let before = std::fs::read_to_string(d.join("a.html")).expect("report");
    std::fs::write(
        &f,
        format!("{ANALYSIS}//== Broken\nlet bad = identity(2) * row([1, 2, 3]);\n"),
    )
    .expect("write");
    let out = bin().arg("render").arg(&f).output().expect("run");
    assert_eq!(out.status.code(), Some(1));
    assert!(
        text(&out.stderr).contains("a.sbook:13:"),
        "{}",
        text(&out.stderr)
    );
    assert_eq!(
        before,
        std::fs::read_to_string(d.join("a.html")).expect("report")
    );
}

#[test]
fn new_writes_a_starter_that_runs_and_never_overwrites() {
    let d = temp_dir("new");
    let f = d.join("fresh.sbook");
    assert_eq!(
        bin()
            .arg("new")
            .arg(&f)
            .output()
            .expect("run")
            .status
            .code(),
        Some(0)
    );
    assert_eq!(
        bin()
            .arg("render")
            .arg(&f)
            .output()
            .expect("run")
            .status
            .code(),
        Some(0)
    );
    assert_eq!(
        bin()
            .arg("check")
            .arg(&f)
            .output()
            .expect("run")
            .status
            .code(),
        Some(0)
    );
    assert_eq!(
        bin()
            .arg("new")
            .arg(&f)
            .output()
            .expect("run")
            .status
            .code(),
        Some(1)
    );
}

#[test]
fn csv_round_trip_and_path_refusals() {
    let d = temp_dir("csv");
    std::fs::create_dir_all(d.join("data")).expect("dir");
    let r = run_in(
        &d,
        "let m = matrix([[0, 1.5], [0.1, -2e-9]]);\nwrite_csv(\"data/out.csv\", m, [\"t\", \"y\"]);\nlet back = read_csv(\"data/out.csv\");\nrequire(back == m, \"round trip\");\n",
    );
    assert!(!r.failed, "{:?}", run::first_error(&r));
    for (code, what) in [
        (
            "read_csv(\"../outside.csv\")",
            "outside the analysis folder",
        ),
        ("read_csv(\"/etc/passwd\")", "outside the analysis folder"),
        (
            "write_csv(\"../x.csv\", identity(2))",
            "outside the analysis folder",
        ),
        (
            "write_csv(\"/tmp/statebook-x.csv\", identity(2))",
            "outside the analysis folder",
        ),
    ] {
        let r = run_in(&d, code);
        let e = run::first_error(&r).unwrap_or_default().to_string();
        assert!(r.failed && e.contains(what), "{code}: {e}");
    }
}

/// Every demo whose results are committed re-checks cleanly on this machine: the numbers a
/// colleague gets are the numbers that were saved.
#[test]
fn committed_demo_results_still_check() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-scripts");
    let mut checked = 0;
    for e in std::fs::read_dir(&dir)
        .expect("demo-scripts")
        .filter_map(|e| e.ok())
    {
        let p = e.path();
        if p.extension().is_some_and(|x| x == "sbook") {
            let stem = p
                .file_stem()
                .map(|s| s.to_string_lossy().into_owned())
                .unwrap_or_default();
            if dir.join(format!("{stem}.results.json")).exists() {
                let out = bin().arg("check").arg(&p).output().expect("run");
                assert_eq!(
                    out.status.code(),
                    Some(0),
                    "{}:\n{}{}",
                    p.display(),
                    text(&out.stdout),
                    text(&out.stderr)
                );
                checked += 1;
            }
        }
    }
    assert!(checked >= 1, "no demo has committed results");
}

#[test]
fn errors_in_a_long_file_point_at_their_own_lines() {
    // Past the engine's 65 535-line positions, and through a function defined cells
    // earlier, called directly and from a sweep case.
    let mut src = String::from("//== Helpers\nfn boom(x) {\n    x.inverse()\n}\n");
    src.push_str("//== Filler\n");
    for k in 0..70_000 {
        src.push_str(&format!("//> note {k}\n"));
    }
    src.push_str(
        "//== A sweep\nlet t = sweep(#{ k: [1, 2] }, |p| boom(zero_matrix(2, 2)));\n\
         require(t.errors[0].contains(\"line 3\"), t.errors[0]);\n\
         //== Late\nlet m = boom(zero_matrix(2, 2));\n",
    );
    let call_line = src.lines().count();
    assert!(call_line > 70_000);
    let dir = temp_dir("long-file-lines");
    let r = run_in(&dir, &src);
    let e = run::first_error(&r).expect("the late cell fails");
    assert!(
        e.contains("x.sbook:3:"),
        "the error is inside boom, line 3: {e}"
    );
    assert!(
        e.contains(&format!("called at line {call_line}")),
        "the call is on line {call_line}: {e}"
    );
    let _ = std::fs::remove_dir_all(&dir);
}
