//! Fuzzes the engine: an arbitrary script runs under tight limits and a short timeout in
//! a sandbox rooted at an empty scratch folder. Any panic (caught or not) is a finding;
//! errors are the expected outcome for most inputs.
#![no_main]

use libfuzzer_sys::fuzz_target;
use statebook::notebook::{files, run};
use statebook::sandbox::Limits;
use statebook::{Session, SessionOptions};

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    if text.len() > 4096 {
        return;
    }
    let root = std::env::temp_dir().join("statebook-fuzz-root");
    let _ = std::fs::create_dir_all(&root);
    let options = SessionOptions {
        root,
        limits: Limits {
            operations: 200_000,
            call_depth: 32,
            string_size: 64 * 1024,
            array_size: 10_000,
            matrix_entries: 40_000,
            timeout_seconds: 0.5,
            memory_bytes: 1 << 30,
        },
        ..SessionOptions::default()
    };
    let mut session = Session::new(&options);
    let r = run::run_text(&mut session, text, "fuzz.sbook", files::provenance("fuzz", ""));
    let _ = run::transcript(&r);
    let _ = statebook::report::render_html(&r);
});
