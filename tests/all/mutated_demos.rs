//! A few hundred deterministically mutated copies of the demo scripts and the script
//! suite, run in-process: each run ends in success or a script error (exit code 0 or 1
//! for the binary), never a panic or an internal error, and all of them together finish
//! within a loose time bound.

use statebook::notebook::{files, run};
use statebook::sandbox::Limits;
use statebook::{Session, SessionOptions};
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

/// A small deterministic generator (SplitMix64).
struct Rng(u64);

impl Rng {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }
    fn below(&mut self, n: usize) -> usize {
        if n == 0 {
            0
        } else {
            (self.next() % n as u64) as usize
        }
    }
}

const INSERTS: &[&str] = &[
    "0",
    "-1",
    "1e308",
    "-1e308",
    "1e-320",
    "(0.0 / 0.0)",
    "(1.0 / 0.0)",
    "100000",
    "[]",
    "[[]]",
    "\"\"",
    "()",
    "#{}",
    "9223372036854775807",
    "-9223372036854775808",
    "0.5",
    "identity(0)",
    "zero_matrix(0, 3)",
    "[[1, 2], [3]]",
    "[[0.0 / 0.0]]",
];

fn mutate(text: &str, rng: &mut Rng) -> String {
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    for _ in 0..1 + rng.below(3) {
        if lines.is_empty() {
            break;
        }
        let i = rng.below(lines.len());
        match rng.below(7) {
            0 => {
                lines.remove(i);
            }
            1 => {
                let l = lines[i].clone();
                lines.insert(i, l);
            }
            2 => {
                let j = rng.below(lines.len());
                lines.swap(i, j);
            }
            3 => {
                // Flip one character.
                let mut chars: Vec<char> = lines[i].chars().collect();
                if !chars.is_empty() {
                    let k = rng.below(chars.len());
                    let pool = b"0123456789()[]{},;.+-*/=<>!\"' xyzAEne_";
                    chars[k] = pool[rng.below(pool.len())] as char;
                }
                lines[i] = chars.into_iter().collect();
            }
            _ => {
                // Replace a number (or insert a value) with something nasty.
                let what = INSERTS[rng.below(INSERTS.len())];
                let l = &lines[i];
                let digits: Vec<usize> = l
                    .char_indices()
                    .filter(|(_, c)| c.is_ascii_digit())
                    .map(|(k, _)| k)
                    .collect();
                lines[i] = if digits.is_empty() {
                    format!("{l} {what}")
                } else {
                    let k = digits[rng.below(digits.len())];
                    format!("{}{what}{}", &l[..k], &l[k + 1..])
                };
            }
        }
    }
    lines.join("\n") + "\n"
}

fn sources() -> Vec<(PathBuf, String)> {
    let base = Path::new(env!("CARGO_MANIFEST_DIR"));
    let mut out = Vec::new();
    for dir in ["demo-scripts", "tests/suite/matrices", "tests/suite/errors"] {
        let Ok(entries) = std::fs::read_dir(base.join(dir)) else {
            continue;
        };
        let mut paths: Vec<PathBuf> = entries.filter_map(|e| e.ok().map(|e| e.path())).collect();
        paths.sort();
        for p in paths {
            if p.extension().is_some_and(|e| e == "sbook") {
                if let Ok(t) = std::fs::read_to_string(&p) {
                    out.push((p, t));
                }
            }
        }
    }
    out
}

#[test]
fn mutated_demo_scripts_never_crash() {
    let sources = sources();
    assert!(!sources.is_empty());
    let root = std::env::temp_dir().join(format!("statebook-mutants-{}", std::process::id()));
    std::fs::create_dir_all(&root).expect("root");
    let limits = Limits {
        operations: 2_000_000,
        timeout_seconds: 5.0,
        ..Limits::default()
    };
    let start = Instant::now();
    let mut rng = Rng(0x5EED_F00D);
    let mut failures = Vec::new();
    let (mut ok, mut errors) = (0, 0);
    for k in 0..300 {
        let (path, text) = &sources[k % sources.len()];
        let mutant = mutate(text, &mut rng);
        let mut session = Session::new(&SessionOptions {
            root: root.clone(),
            limits: limits.clone(),
            ..SessionOptions::default()
        });
        let r = run::run_text(
            &mut session,
            &mutant,
            "mutant.sbook",
            files::provenance("m", ""),
        );
        let _ = run::transcript(&r);
        match run::first_error(&r) {
            Some(e) if e.contains("internal error") => failures.push(format!(
                "mutant {k} of {}:\n{e}\n---\n{mutant}",
                path.display()
            )),
            Some(_) => errors += 1,
            None => ok += 1,
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n\n"));
    assert!(
        ok > 0 && errors > 0,
        "ok {ok}, errors {errors}: the mutations should mix"
    );
    assert!(
        start.elapsed() < Duration::from_secs(60),
        "{:?}",
        start.elapsed()
    );
}
