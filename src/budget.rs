//! Process-wide budgets that no single value's limit can give: total memory and the
//! wall-clock deadline.
//!
//! **Memory.** The global allocator counts the bytes in use (the `cap` crate's counting
//! wrapper around the system allocator, which never refuses here: a refused allocation
//! would abort the process). The budget ([`set_budget`], `--max-memory`) is checked where
//! a script can make memory grow: after every engine operation (the progress callback in
//! `script::engine`), before every matrix is allocated ([`reserve`], called by the size
//! check of `sandbox::Limits::check_matrix`), before a file is read ([`read_bounded`]),
//! and between sweep cases. A check that fails is an `error:` naming the budget.
//! Overshoot is bounded by one operation's own allocation (at most one doubling of a
//! string or array), which is why the default leaves half of physical memory free.
//!
//! **Time.** [`start_watchdog`] (called by `main` for `--timeout`) runs a thread that
//! raises the cancellation flag at the deadline — the engine's progress callback and the
//! sweep runner stop at it — and, should the run still be busy a grace period later (a
//! long native computation, or the parser on a huge file), prints the timeout error and
//! ends the process with exit code 1.

use cap::Cap;
use std::alloc::System;
use std::io::Read;
use std::path::Path;
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::time::{Duration, Instant};

#[global_allocator]
static ALLOC: Cap<System> = Cap::new(System, usize::MAX);

static BUDGET: AtomicUsize = AtomicUsize::new(usize::MAX);
static CANCELLED: AtomicBool = AtomicBool::new(false);

/// How long the watchdog waits after the deadline for the run to stop by itself.
pub const GRACE: Duration = Duration::from_millis(1000);

/// Bytes currently allocated by the process.
pub fn allocated() -> usize {
    ALLOC.allocated()
}

/// The memory budget in bytes.
pub fn budget() -> usize {
    BUDGET.load(Ordering::Relaxed)
}

/// Sets the memory budget in bytes (process-wide).
pub fn set_budget(bytes: usize) {
    BUDGET.store(bytes.max(1), Ordering::Relaxed);
}

/// The default budget: half of physical memory, between 1 GiB and 16 GiB (4 GiB when
/// physical memory cannot be read), so that a runaway analysis leaves the machine usable.
pub fn default_budget() -> usize {
    const GIB: usize = 1 << 30;
    let total = std::fs::read_to_string("/proc/meminfo").ok().and_then(|t| {
        t.lines()
            .find_map(|l| l.strip_prefix("MemTotal:"))
            .and_then(|v| v.trim().trim_end_matches("kB").trim().parse::<usize>().ok())
            .map(|kib| kib.saturating_mul(1024))
    });
    match total {
        Some(t) => (t / 2).clamp(GIB, 16 * GIB),
        None => 4 * GIB,
    }
}

/// Parses a size: bytes, or a number with a K, M or G suffix (powers of 1024; an optional
/// trailing `B` or `iB`), e.g. `2G`, `256M`, `1500000`.
pub fn parse_size(text: &str) -> Result<usize, String> {
    let t = text.trim();
    let bad =
        || format!("expected a size such as 2G, 256M, 64K or a number of bytes, found '{text}'");
    let upper = t.to_ascii_uppercase();
    let body = upper
        .strip_suffix("IB")
        .or_else(|| upper.strip_suffix('B'))
        .unwrap_or(&upper);
    let (digits, factor) = match body.chars().last() {
        Some('K') => (&body[..body.len() - 1], 1u64 << 10),
        Some('M') => (&body[..body.len() - 1], 1 << 20),
        Some('G') => (&body[..body.len() - 1], 1 << 30),
        Some('T') => (&body[..body.len() - 1], 1 << 40),
        _ => (body, 1),
    };
    let v: f64 = digits.trim().parse().map_err(|_| bad())?;
    if !(v.is_finite() && v > 0.0) {
        return Err(bad());
    }
    let bytes = v * factor as f64;
    if bytes < 1.0 || bytes > usize::MAX as f64 {
        return Err(bad());
    }
    Ok(bytes as usize)
}

/// A size in bytes for messages (MiB or GiB).
pub fn human(bytes: usize) -> String {
    let b = bytes as f64;
    if b >= (1u64 << 30) as f64 {
        format!("{:.1} GiB", b / (1u64 << 30) as f64)
    } else {
        format!("{:.0} MiB", (b / (1u64 << 20) as f64).ceil())
    }
}

fn exceeded(what: &str) -> String {
    format!(
        "{what}the run exceeded its memory budget of {} (--max-memory)\nhint: raise it with \
         --max-memory SIZE (e.g. --max-memory 8G) if the analysis really needs more",
        human(budget())
    )
}

/// The error when the process is over its memory budget, naming `what` (may be empty).
pub fn check(what: &str) -> Result<(), String> {
    if allocated() > budget() {
        Err(exceeded(&prefix(what)))
    } else {
        Ok(())
    }
}

fn prefix(what: &str) -> String {
    if what.is_empty() {
        String::new()
    } else {
        format!("{what}: ")
    }
}

/// Refuses, before allocating, `bytes` more than the memory budget has left.
pub fn reserve(what: &str, bytes: usize) -> Result<(), String> {
    match allocated().checked_add(bytes) {
        Some(total) if total <= budget() => Ok(()),
        _ => Err(format!(
            "{}{} more would exceed the memory budget of {} (--max-memory)\nhint: raise it \
             with --max-memory SIZE (e.g. --max-memory 8G) if the analysis really needs more",
            prefix(what),
            human(bytes),
            human(budget())
        )),
    }
}

/// Reads a whole text file, refusing what is not a regular file (a device such as
/// `/dev/zero`, a pipe) and a file larger than the memory budget has left. The size is
/// taken from the opened handle, and the read is bounded by it, so a file that grows or
/// is swapped meanwhile cannot make it read more.
pub fn read_bounded(path: &Path) -> Result<String, String> {
    let file = std::fs::File::open(path).map_err(|e| e.to_string())?;
    let meta = file.metadata().map_err(|e| e.to_string())?;
    if !meta.is_file() {
        return Err("not a regular file".into());
    }
    let len = usize::try_from(meta.len()).unwrap_or(usize::MAX);
    // The text and its parse need a few times the file's size.
    reserve(&format!("a file of {}", human(len)), len.saturating_mul(2))?;
    let mut bytes = Vec::with_capacity(len);
    file.take(meta.len().saturating_add(1))
        .read_to_end(&mut bytes)
        .map_err(|e| e.to_string())?;
    if bytes.len() > len {
        return Err("the file grew while it was read".into());
    }
    String::from_utf8(bytes).map_err(|_| "the file is not UTF-8 text".into())
}

/// Raises the cancellation flag: running evaluations stop at their next operation.
pub fn cancel() {
    CANCELLED.store(true, Ordering::Relaxed);
}

/// Whether the run was cancelled (its deadline passed).
pub fn cancelled() -> bool {
    CANCELLED.load(Ordering::Relaxed)
}

/// The timeout message.
pub fn timeout_message(seconds: f64) -> String {
    format!("the run exceeded its --timeout of {seconds} s")
}

/// Starts the watchdog of a run with a wall-clock limit of `seconds` (see the module
/// documentation): cancellation at the deadline, exit code 1 a [`GRACE`] later.
pub fn start_watchdog(seconds: f64) {
    if !(seconds > 0.0 && seconds.is_finite()) {
        return;
    }
    let deadline = Instant::now() + Duration::from_secs_f64(seconds.min(1e9));
    let spawned = std::thread::Builder::new()
        .name("statebook-watchdog".into())
        .spawn(move || {
            sleep_until(deadline);
            cancel();
            sleep_until(deadline + GRACE);
            eprintln!("error: {}", timeout_message(seconds));
            std::process::exit(1);
        });
    if let Err(e) = spawned {
        eprintln!("warning: cannot start the --timeout watchdog: {e}");
    }
}

fn sleep_until(t: Instant) {
    loop {
        let now = Instant::now();
        if now >= t {
            return;
        }
        std::thread::sleep(t - now);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sizes_parse() {
        assert_eq!(parse_size("2G"), Ok(2 << 30));
        assert_eq!(parse_size("256M"), Ok(256 << 20));
        assert_eq!(parse_size("64k"), Ok(64 << 10));
        assert_eq!(parse_size("1.5GiB"), Ok(3 << 29));
        assert_eq!(parse_size("1000"), Ok(1000));
        for bad in ["", "G", "-1M", "0", "abc", "1e400"] {
            assert!(parse_size(bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn allocations_are_counted() {
        // Other tests allocate and free at the same time, so only an absolute bound holds:
        // while `v` lives, at least its bytes are counted.
        let v = vec![1u8; 50 << 20];
        assert!(allocated() >= 50 << 20, "{} bytes counted", allocated());
        drop(std::hint::black_box(v));
    }

    #[test]
    fn devices_are_refused() {
        assert!(read_bounded(Path::new("/dev/zero")).is_err());
    }
}
