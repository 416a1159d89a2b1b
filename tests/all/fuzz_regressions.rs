//! Every input the fuzzers ever crashed on (`fuzz/regressions/*`), replayed the way the
//! fuzz targets run it: through the cell parser and report writers, and through the
//! engine under tight limits. None may panic or end in an internal error. Runs in the
//! normal `cargo test`; cargo-fuzz itself is never needed here.

use statebook::notebook::files;
use statebook::notebook::parse::{parse, LineKind};
use statebook::notebook::run;
use statebook::sandbox::Limits;
use statebook::{Session, SessionOptions};
use std::path::PathBuf;

fn fuzz_limits() -> Limits {
    Limits {
        operations: 200_000,
        call_depth: 32,
        string_size: 64 * 1024,
        array_size: 10_000,
        matrix_entries: 40_000,
        timeout_seconds: 0.5,
        memory_bytes: 1 << 30,
    }
}

fn regressions() -> Vec<PathBuf> {
    let dir = PathBuf::from(concat!(env!("CARGO_MANIFEST_DIR"), "/fuzz/regressions"));
    let mut v: Vec<PathBuf> = std::fs::read_dir(&dir)
        .map(|d| d.filter_map(|e| e.ok().map(|e| e.path())).collect())
        .unwrap_or_default();
    v.retain(|p| p.is_file() && p.extension().is_none_or(|e| e != "md"));
    v.sort();
    v
}

#[test]
fn fuzz_regressions_do_not_crash() {
    let root = std::env::temp_dir().join(format!("statebook-fuzz-reg-{}", std::process::id()));
    std::fs::create_dir_all(&root).expect("root");
    let mut failures = Vec::new();
    for path in regressions() {
        let bytes = std::fs::read(&path).expect("read");
        let Ok(text) = String::from_utf8(bytes) else {
            continue;
        };
        // The parser target.
        let doc = parse(&text);
        for cell in &doc.cells {
            let padded = cell.code_text();
            let lines: Vec<&str> = padded.split('\n').collect();
            for l in cell.lines.iter().filter(|l| l.kind == LineKind::Code) {
                if lines.get(l.number - cell.first_line()).copied() != Some(l.text.as_str()) {
                    failures.push(format!("{}: line {} misplaced", path.display(), l.number));
                }
            }
        }
        // The engine target.
        let mut session = Session::new(&SessionOptions {
            root: root.clone(),
            limits: fuzz_limits(),
            ..SessionOptions::default()
        });
        let r = run::run_text(
            &mut session,
            &text,
            "fuzz.sbook",
            files::provenance("fuzz", ""),
        );
        let _ = run::transcript(&r);
        let _ = statebook::report::render_html(&r);
        if let Some(e) = run::first_error(&r) {
            if e.contains("internal error") {
                failures.push(format!("{}:\n{e}", path.display()));
            }
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n\n"));
}
