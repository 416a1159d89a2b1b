//! The one file-access policy and the resource limits, in one place.
//!
//! A script reads and writes only inside its root folder tree (the analysis file's folder;
//! in the REPL, the working directory) plus folders the user widened it to on purpose
//! (`--allow-read`, `--allow-write`). A path is judged after resolving `..` and symbolic
//! links, so neither a relative escape, an absolute path nor a symlink can leave the tree.
//! Scripts cannot run programs, open sockets or read environment variables: the engine
//! offers no such functions and `eval` is disabled (see `script::engine`).
//!
//! Known gaps, kept small on purpose: the engine's own size check walks a whole array or
//! map after each change to it, so growing one element at a time is quadratic (100 000
//! `push`es take a few seconds); and a native built-in's own work (a large eigenvalue
//! problem in a loop) is not counted as operations. `--timeout` bounds both.

use std::path::{Path, PathBuf};
use std::sync::{Arc, Mutex};

/// Where a script may read and write.
#[derive(Debug, Clone)]
pub struct Sandbox {
    root: PathBuf,
    read: Vec<PathBuf>,
    write: Vec<PathBuf>,
    /// Every real path a script was allowed to read (shared by clones, e.g. sweep
    /// workers), so that a command can refuse to overwrite one of its own inputs.
    reads: Arc<Mutex<Vec<PathBuf>>>,
}

/// Resource limits for one session; defaults a normal analysis never meets.
#[derive(Debug, Clone, PartialEq)]
pub struct Limits {
    /// Script operations per cell (an endless loop stops after this many: about 0.1–1 s
    /// for simple loop bodies, a few seconds for string-heavy ones, in release builds).
    pub operations: u64,
    /// Depth of nested function calls (each evaluation's native stack is sized for it, so
    /// deep recursion is this error and never a stack overflow; see `guard`).
    pub call_depth: usize,
    /// Longest string, in bytes.
    pub string_size: usize,
    /// Longest array.
    pub array_size: usize,
    /// Largest matrix, in entries (checked before allocating).
    pub matrix_entries: usize,
    /// Wall-clock limit for a whole run, in seconds (0 = none).
    pub timeout_seconds: f64,
    /// Memory budget of the process, in bytes (see `budget`).
    pub memory_bytes: usize,
}

impl Default for Limits {
    fn default() -> Self {
        Limits {
            operations: 30_000_000,
            call_depth: 200,
            string_size: 64 * 1024 * 1024,
            array_size: 10_000_000,
            matrix_entries: 25_000_000,
            timeout_seconds: 0.0,
            memory_bytes: crate::budget::default_budget(),
        }
    }
}

thread_local! {
    /// The limits of the evaluation running on this thread (each evaluation runs on a
    /// thread of its own; see `guard`), for checks in code that has no engine context.
    static ACTIVE: std::cell::Cell<Option<(usize, usize)>> = const { std::cell::Cell::new(None) };
}

impl Limits {
    /// Runs `f` with these limits as the active ones of this thread (see [`Limits::active`]).
    pub fn enter<R>(&self, f: impl FnOnce() -> R) -> R {
        let before = ACTIVE.with(|a| a.replace(Some((self.matrix_entries, self.array_size))));
        let r = f();
        ACTIVE.with(|a| a.set(before));
        r
    }

    /// The matrix-entry and array-size limits of the evaluation on this thread (the
    /// defaults outside one).
    pub fn active() -> (usize, usize) {
        ACTIVE.with(|a| a.get()).unwrap_or_else(|| {
            let d = Limits::default();
            (d.matrix_entries, d.array_size)
        })
    }

    /// Refuses, before allocating, a `rows`×`cols` matrix larger than the active limit.
    pub fn check_matrix(what: &str, rows: usize, cols: usize) -> Result<(), String> {
        let (limit, _) = Limits::active();
        match rows.checked_mul(cols) {
            Some(n) if n <= limit => crate::budget::reserve(what, n.saturating_mul(8)),
            _ => Err(format!(
                "{what}: a {rows}×{cols} matrix exceeds the size limit of {limit} entries\nhint: \
                 raise it with --max-matrix-entries if you really mean it"
            )),
        }
    }
}

use crate::safe_fs::resolve;

impl Sandbox {
    /// A sandbox rooted at `root` (made absolute and resolved).
    pub fn new(root: &Path) -> Self {
        let abs = if root.is_absolute() {
            root.to_path_buf()
        } else {
            std::env::current_dir().unwrap_or_default().join(root)
        };
        Sandbox {
            root: resolve(&abs),
            read: Vec::new(),
            write: Vec::new(),
            reads: Arc::default(),
        }
    }

    /// Also allows reading below `dir`.
    pub fn allow_read(&mut self, dir: &Path) {
        let d = Sandbox::new(dir).root;
        self.read.push(d);
    }

    /// Also allows reading and writing below `dir`.
    pub fn allow_write(&mut self, dir: &Path) {
        let d = Sandbox::new(dir).root;
        self.write.push(d);
    }

    /// The root folder.
    pub fn root(&self) -> &Path {
        &self.root
    }

    fn judge(&self, path: &str, writing: bool) -> Result<PathBuf, String> {
        if path.is_empty() {
            return Err("the path is empty".into());
        }
        let given = Path::new(path);
        let joined = if given.is_absolute() {
            given.to_path_buf()
        } else {
            self.root.join(given)
        };
        let real = resolve(&joined);
        let inside = |dir: &PathBuf| real.starts_with(dir);
        let ok = inside(&self.root)
            || self.write.iter().any(inside)
            || (!writing && self.read.iter().any(inside));
        if ok {
            Ok(real)
        } else {
            let verb = if writing { "write" } else { "read" };
            let flag = if writing {
                "--allow-write"
            } else {
                "--allow-read"
            };
            Err(format!(
                "path '{path}' is outside the analysis folder {} (scripts may only {verb} inside \
                 it)\nhint: to allow it on purpose, run with {flag} DIR",
                self.root.display()
            ))
        }
    }

    /// The real path to read for `path` (relative to the root), or why it is refused.
    pub fn read_path(&self, path: &str) -> Result<PathBuf, String> {
        let real = self.judge(path, false)?;
        if let Ok(mut r) = self.reads.lock() {
            if !r.contains(&real) {
                r.push(real.clone());
            }
        }
        Ok(real)
    }

    /// The real paths scripts were allowed to read so far.
    pub fn files_read(&self) -> Vec<PathBuf> {
        self.reads.lock().map(|r| r.clone()).unwrap_or_default()
    }

    /// The real path to write for `path` (relative to the root), or why it is refused.
    pub fn write_path(&self, path: &str) -> Result<PathBuf, String> {
        self.judge(path, true)
    }
}

/// Writes `bytes` to `path`, a path the user named on the command line (symbolic links in
/// it are followed, as the user meant them), through an exclusive temporary file and a
/// rename (see `safe_fs`), so that a crash or a full disk never leaves a half-written file
/// in place. Scripts' writes, judged by [`Sandbox::write_path`], go to
/// `safe_fs::write_file` with the judged path directly.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> std::io::Result<()> {
    crate::safe_fs::write_file(&resolve(path), bytes, false)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn temp_tree() -> PathBuf {
        let d = std::env::temp_dir().join(format!("statebook-sandbox-{}", std::process::id()));
        std::fs::create_dir_all(d.join("inner")).ok();
        d
    }

    #[test]
    fn relative_inside_is_allowed() {
        let d = temp_tree();
        let s = Sandbox::new(&d);
        assert!(s.read_path("inner/data.csv").is_ok());
        assert!(s.read_path("inner/../data.csv").is_ok());
    }

    #[test]
    fn escapes_are_refused() {
        let d = temp_tree();
        let s = Sandbox::new(&d);
        assert!(s.read_path("../outside.csv").is_err());
        assert!(s.read_path("/etc/passwd").is_err());
        assert!(s.write_path("inner/../../x").is_err());
    }

    #[cfg(unix)]
    #[test]
    fn symlink_out_is_refused() {
        let d = temp_tree();
        let link = d.join("link-out");
        let _ = std::fs::remove_file(&link);
        std::os::unix::fs::symlink("/etc", &link).ok();
        let s = Sandbox::new(&d);
        assert!(s.read_path("link-out/passwd").is_err());
    }

    #[test]
    fn widened_on_purpose() {
        let d = temp_tree();
        let mut s = Sandbox::new(&d.join("inner"));
        assert!(s.read_path("../x").is_err());
        s.allow_read(&d);
        assert!(s.read_path("../x").is_ok());
        assert!(s.write_path("../x").is_err());
    }
}
