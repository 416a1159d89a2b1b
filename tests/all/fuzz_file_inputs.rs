//! Structured fuzzing of the files a shared folder hands to `merge` and `check`: shard
//! files and saved results files, made by real runs and then damaged (bytes replaced,
//! text cut short, numbers swapped for hostile ones such as 2⁴⁰, −1, 1e400 or 1e-320,
//! stretches copied elsewhere, values buried in deep nesting). Whatever the damage, both
//! readers must return a result or an error — never panic — and a merge that succeeds
//! must produce valid JSON of a size bounded by its inputs.
//!
//! This runs in the normal test suite (seeded, a few hundred cases per reader); the
//! libFuzzer targets in `fuzz/` cover the parser and the engine.

use proptest::prelude::*;
use serde_json::{json, Value};
use statebook::notebook::{check, sweeps};
use statebook::script::sweep::{Shard, SweepPlan};
use statebook::{Session, SessionOptions};
use std::path::PathBuf;
use std::sync::OnceLock;

/// A small sweep of our own (invented data): six spring–damper cases, one of which fails.
const STUDY: &str = r#"//== Damping over a small grid (test data)
fn spring_case(p) {
    if p.k > 2.5 && p.c > 0.35 { throw "made-up failure"; }
    let A = matrix([[0, 1], [-p.k, -p.c]]);
    #{ damping: modes(state_space(A, [[0], [1]], [[1, 0]], 0))[0].damping }
}
let t = sweep(#{ k: [1, 2, 3], c: [0.2, 0.4] }, spring_case);
"#;

fn shard_texts() -> &'static [(String, String)] {
    static TEXTS: OnceLock<Vec<(String, String)>> = OnceLock::new();
    TEXTS.get_or_init(|| {
        (1..=2)
            .map(|k| {
                let shard = Shard { index: k, count: 2 };
                let mut s = Session::new(&SessionOptions {
                    root: std::env::temp_dir(),
                    ..SessionOptions::default()
                });
                s.plan_sweeps(SweepPlan {
                    shard: Some(shard),
                    keep_log: true,
                });
                let r = statebook::notebook::run::run_text(
                    &mut s,
                    STUDY,
                    "study.sbook",
                    statebook::notebook::files::provenance("study.sbook", "x"),
                );
                assert!(!r.failed, "{:?}", statebook::notebook::run::first_error(&r));
                (
                    format!("study.shard-{k}-of-2.json"),
                    sweeps::shard_text("abc", shard, &s.sweep_logs(), Vec::new()),
                )
            })
            .collect()
    })
}

/// Numbers a hostile file may carry in place of any number.
const HOSTILE: &[&str] = &[
    "0",
    "-1",
    "1099511627776",
    "18446744073709551615",
    "18446744073709551616",
    "1e400",
    "-1e400",
    "1e-320",
    "4.9e-324",
    "1.7976931348623157e308",
    "null",
    "\"2\"",
    "[]",
    "{}",
    "true",
];

#[derive(Debug, Clone)]
enum Damage {
    /// Replace the byte at (position mod length).
    Byte(usize, u8),
    /// Keep only the first (position mod length) bytes.
    Cut(usize),
    /// Replace the k-th number literal (mod their count) by a hostile one.
    Number(usize, usize),
    /// Copy a stretch of the text to another place.
    Copy(usize, usize, usize),
    /// Bury the value after the k-th colon under `depth` levels of arrays.
    Nest(usize, usize),
}

fn damage() -> impl Strategy<Value = Damage> {
    prop_oneof![
        (any::<usize>(), any::<u8>()).prop_map(|(p, b)| Damage::Byte(p, b)),
        any::<usize>().prop_map(Damage::Cut),
        (any::<usize>(), 0..HOSTILE.len()).prop_map(|(k, h)| Damage::Number(k, h)),
        (any::<usize>(), 1usize..200, any::<usize>()).prop_map(|(a, n, b)| Damage::Copy(a, n, b)),
        (
            any::<usize>(),
            prop_oneof![Just(3usize), Just(127), Just(129), Just(5000)]
        )
            .prop_map(|(k, d)| Damage::Nest(k, d)),
    ]
}

/// Byte offsets of the number literals in a JSON text.
fn numbers(text: &str) -> Vec<(usize, usize)> {
    let b = text.as_bytes();
    let mut out = Vec::new();
    let mut i = 0;
    let mut in_string = false;
    while i < b.len() {
        let c = b[i];
        if in_string {
            if c == b'\\' {
                i += 1;
            } else if c == b'"' {
                in_string = false;
            }
            i += 1;
        } else if c == b'"' {
            in_string = true;
            i += 1;
        } else if c == b'-' || c.is_ascii_digit() {
            let start = i;
            while i < b.len() && matches!(b[i], b'0'..=b'9' | b'-' | b'+' | b'.' | b'e' | b'E') {
                i += 1;
            }
            out.push((start, i));
        } else {
            i += 1;
        }
    }
    out
}

fn apply(text: &str, d: &Damage) -> Vec<u8> {
    let mut b = text.as_bytes().to_vec();
    let n = b.len().max(1);
    match *d {
        Damage::Byte(p, x) => {
            if !b.is_empty() {
                b[p % n] = x;
            }
        }
        Damage::Cut(p) => b.truncate(p % n),
        Damage::Number(k, h) => {
            let spans = numbers(text);
            if !spans.is_empty() {
                let (s, e) = spans[k % spans.len()];
                b.splice(s..e, HOSTILE[h].bytes());
            }
        }
        Damage::Copy(a, len, at) => {
            let s = a % n;
            let e = (s + len).min(b.len());
            let piece: Vec<u8> = b[s..e].to_vec();
            let at = at % n;
            b.splice(at..at, piece);
        }
        Damage::Nest(k, depth) => {
            let colons: Vec<usize> = text.match_indices(':').map(|(i, _)| i + 1).collect();
            if !colons.is_empty() {
                let at = colons[k % colons.len()];
                let end = text[at..].find([',', '}']).map_or(text.len(), |i| at + i);
                let mut v = "[".repeat(depth).into_bytes();
                v.extend_from_slice(&text.as_bytes()[at..end]);
                v.extend("]".repeat(depth).bytes());
                b.splice(at..end, v);
            }
        }
    }
    b
}

fn results_folder() -> &'static PathBuf {
    static DIR: OnceLock<PathBuf> = OnceLock::new();
    DIR.get_or_init(|| {
        let d = std::env::temp_dir().join(format!("statebook-fuzz-check-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&d);
        std::fs::create_dir_all(&d).expect("temp dir");
        std::fs::write(d.join("a.sbook"), "let x = 1;\n").expect("analysis file");
        d
    })
}

fn records() -> Vec<(String, Value)> {
    vec![
        ("gain".into(), json!(2.5)),
        (
            "poles".into(),
            json!([{"re": -1.0, "im": 2.0}, {"re": -1.0, "im": -2.0}]),
        ),
        (
            "A".into(),
            json!({"rows": 2, "cols": 2, "data": [[0.0, 1.0], [-4.0, -0.5]]}),
        ),
        ("label".into(), json!("made-up plant")),
        ("count".into(), json!(7)),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 400, failure_persistence: None, .. ProptestConfig::default() })]

    #[test]
    fn merge_survives_any_damaged_shard(which in 0usize..2, d in damage(), d2 in proptest::option::of(damage())) {
        let mut parts: Vec<(String, String)> = shard_texts().to_vec();
        let bytes = apply(&parts[which].1, &d);
        parts[which].1 = String::from_utf8_lossy(&bytes).into_owned();
        if let Some(d2) = d2 {
            let other = 1 - which;
            let bytes = apply(&parts[other].1, &d2);
            parts[other].1 = String::from_utf8_lossy(&bytes).into_owned();
        }
        let input: usize = parts.iter().map(|p| p.1.len()).sum();
        if let Ok(merged) = sweeps::merge(&parts) {
            let merged = merged.text;
            prop_assert!(serde_json::from_str::<Value>(&merged).is_ok(), "merged text is not JSON");
            prop_assert!(merged.len() < 20 * input + 4096, "merged {} bytes from {input}", merged.len());
        }
    }

    #[test]
    fn check_survives_any_damaged_results_file(d in damage(), tol in prop_oneof![Just(1e-9), Just(0.0), Just(1e300)]) {
        let dir = results_folder();
        let base = check::results_json("a.sbook", &records(), "a.html");
        std::fs::write(dir.join("a.results.json"), apply(&base, &d)).expect("results file");
        if let Ok(report) = check::compare_with_saved(&dir.join("a.sbook"), &records(), tol) {
            prop_assert!(report.text.len() < 1 << 20, "drift table of {} bytes", report.text.len());
        }
    }
}

/// The undamaged files pass, so the damage above is what the readers meet.
#[test]
fn undamaged_files_merge_and_check() {
    let merged = sweeps::merge(shard_texts()).expect("merge").text;
    assert!(merged.contains("made-up failure"), "{merged}");
    let dir = results_folder().join("clean");
    std::fs::create_dir_all(&dir).expect("dir");
    std::fs::write(dir.join("a.sbook"), "let x = 1;\n").expect("analysis");
    std::fs::write(
        dir.join("a.results.json"),
        check::results_json("a.sbook", &records(), "a.html"),
    )
    .expect("results");
    let r = check::compare_with_saved(&dir.join("a.sbook"), &records(), 1e-9).expect("check");
    assert!(r.passed, "{}", r.text);
}
