//! Helpers shared by the tests that drive the `statebook` binary.
#![allow(dead_code)]

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};

/// The binary under test.
pub fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_statebook"))
}

/// A fresh, empty temporary folder named after the suite and the case.
pub fn temp_dir(suite: &str, name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("statebook-{suite}-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).expect("temp dir");
    d
}

/// Process output as text.
pub fn text(b: &[u8]) -> String {
    String::from_utf8_lossy(b).into_owned()
}

/// The REPL (`statebook` with no arguments) run in `dir` with `input` piped to it.
pub fn repl_piped(dir: &Path, input: impl AsRef<[u8]>) -> Output {
    let mut child = bin()
        .current_dir(dir)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("spawn");
    child
        .stdin
        .take()
        .expect("stdin")
        .write_all(input.as_ref())
        .expect("write");
    child.wait_with_output().expect("wait")
}
