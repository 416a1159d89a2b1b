//! What a session's sweeps need beyond the engine: the function library and imported
//! modules (so that worker engines can call the script's functions), the run's deadline,
//! the shard plan, and the log of the sweeps run so far (for shard and results files).
//!
//! It lives in [`SessionState`](crate::script::state::SessionState), one per session; a
//! worker's state gets a copy of the library and modules and is marked as a worker, so
//! that sweeps nested inside a case function run whole, unlogged and unsharded.

use super::log::SweepLog;
use crate::script::diagnostic::LineMap;
use rhai::{Module, Shared, AST};
use std::sync::atomic::{AtomicBool, AtomicU64, AtomicUsize, Ordering};
use std::sync::{Arc, Mutex, MutexGuard};
use std::time::Instant;

/// One slice of every sweep: the cases whose index `i` has `i mod count == index − 1`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Shard {
    /// 1-based slice number `K`.
    pub index: usize,
    /// Number of slices `N`.
    pub count: usize,
}

impl Shard {
    /// Parses `K/N` with `1 ≤ K ≤ N`.
    pub fn parse(text: &str) -> Result<Shard, String> {
        let bad = || format!("expected K/N with 1 ≤ K ≤ N (e.g. 2/8), found '{text}'");
        let (k, n) = text.trim().split_once('/').ok_or_else(bad)?;
        let index: usize = k.trim().parse().map_err(|_| bad())?;
        let count: usize = n.trim().parse().map_err(|_| bad())?;
        if index == 0 || index > count {
            return Err(bad());
        }
        Ok(Shard { index, count })
    }

    /// Whether case `i` (0-based) belongs to this slice (round-robin, so that cases that
    /// are slow in one corner of a grid spread over all slices).
    pub fn takes(&self, case: usize) -> bool {
        case % self.count == self.index - 1
    }
}

impl std::fmt::Display for Shard {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}/{}", self.index, self.count)
    }
}

/// How the sweeps of a run are carried out.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct SweepPlan {
    /// Run only this slice of every sweep.
    pub shard: Option<Shard>,
    /// Keep every case's parameters and results for a shard or results file.
    pub keep_log: bool,
}

fn lock<T>(m: &Mutex<T>) -> MutexGuard<'_, T> {
    m.lock().unwrap_or_else(|p| p.into_inner())
}

/// The sweep-related part of a session's state.
#[derive(Default)]
pub struct SweepContext {
    library: Mutex<Arc<AST>>,
    lines: Mutex<Arc<LineMap>>,
    modules: Mutex<Vec<(String, Shared<Module>)>>,
    deadline: Mutex<Option<Instant>>,
    plan: Mutex<SweepPlan>,
    stored: Mutex<Option<Arc<Vec<super::log::StoredSweep>>>>,
    next_id: AtomicUsize,
    log: Mutex<Vec<SweepLog>>,
    worker: AtomicBool,
    shared_ops: Mutex<Option<Arc<AtomicU64>>>,
}

impl std::fmt::Debug for SweepContext {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("SweepContext")
            .field("plan", &*lock(&self.plan))
            .field("sweeps_run", &self.next_id.load(Ordering::Relaxed))
            .field("worker", &self.worker.load(Ordering::Relaxed))
            .finish_non_exhaustive()
    }
}

impl SweepContext {
    /// Keeps the function definitions of `ast` (statements dropped) for worker engines,
    /// with where they are in the file.
    pub fn set_library(&self, ast: &AST, lines: &LineMap) {
        *lock(&self.library) = Arc::new(ast.clone_functions_only());
        *lock(&self.lines) = Arc::new(LineMap {
            top: 0,
            functions: lines.functions.clone(),
        });
    }

    /// Where the script functions of the library are in the file.
    pub fn lines(&self) -> Arc<LineMap> {
        lock(&self.lines).clone()
    }

    /// The script functions defined so far.
    pub fn library(&self) -> Arc<AST> {
        lock(&self.library).clone()
    }

    /// Keeps a module imported under `alias`, so that workers can resolve `alias::f`.
    pub fn add_module(&self, alias: &str, module: Shared<Module>) {
        let mut m = lock(&self.modules);
        m.retain(|(a, _)| a != alias);
        m.push((alias.to_string(), module));
    }

    /// Modules imported so far, with their aliases.
    pub fn modules(&self) -> Vec<(String, Shared<Module>)> {
        lock(&self.modules).clone()
    }

    /// Sets the wall-clock end of the run (workers stop at it too).
    pub fn set_deadline(&self, deadline: Option<Instant>) {
        *lock(&self.deadline) = deadline;
    }

    /// The wall-clock end of the run, if any.
    pub fn deadline(&self) -> Option<Instant> {
        *lock(&self.deadline)
    }

    /// Sets how the sweeps of this session run.
    pub fn set_plan(&self, plan: SweepPlan) {
        *lock(&self.plan) = plan;
    }

    /// How the sweeps of this session run.
    pub fn plan(&self) -> SweepPlan {
        *lock(&self.plan)
    }

    /// Takes every top-level sweep's table from `sweeps` (a merged results file) instead
    /// of running its cases.
    pub fn set_stored(&self, sweeps: Vec<super::log::StoredSweep>) {
        *lock(&self.stored) = Some(Arc::new(sweeps));
    }

    /// The stored sweeps, if the tables come from a results file.
    pub fn stored(&self) -> Option<Arc<Vec<super::log::StoredSweep>>> {
        lock(&self.stored).clone()
    }

    /// Number of top-level sweeps begun so far.
    pub fn sweeps_begun(&self) -> usize {
        self.next_id.load(Ordering::Relaxed)
    }

    /// Makes this the state of a worker of `parent`: same library, modules and deadline;
    /// its own sweeps are nested ones.
    pub fn become_worker_of(&self, parent: &SweepContext) {
        *lock(&self.library) = parent.library();
        *lock(&self.modules) = parent.modules();
        *lock(&self.deadline) = parent.deadline();
        *lock(&self.shared_ops) = lock(&parent.shared_ops).clone();
        self.worker.store(true, Ordering::Relaxed);
    }

    /// Starts the one operation budget that all cases of a top-level sweep share, with
    /// `used` operations already spent by the cell that runs it (a nested sweep keeps the
    /// budget of the sweep it runs in).
    pub fn start_shared_operations(&self, used: u64) {
        let mut s = lock(&self.shared_ops);
        if !(self.is_worker() && s.is_some()) {
            *s = Some(Arc::new(AtomicU64::new(used)));
        }
    }

    /// Adds `n` operations to the shared budget of the sweep this worker runs for and
    /// returns the total so far (0 outside a sweep's worker).
    pub fn count_shared_operations(&self, n: u64) -> u64 {
        if !self.is_worker() {
            return 0;
        }
        match &*lock(&self.shared_ops) {
            Some(c) => c.fetch_add(n, Ordering::Relaxed).saturating_add(n),
            None => 0,
        }
    }

    /// Whether this state belongs to a worker (sweeps in it are nested).
    pub fn is_worker(&self) -> bool {
        self.worker.load(Ordering::Relaxed)
    }

    /// The id of the next top-level sweep (0, 1, 2 … in call order).
    pub fn take_id(&self) -> usize {
        self.next_id.fetch_add(1, Ordering::Relaxed)
    }

    /// Keeps the log of one sweep.
    pub fn push_log(&self, log: SweepLog) {
        lock(&self.log).push(log);
    }

    /// The logs of the sweeps run so far, in call order.
    pub fn logs(&self) -> Vec<SweepLog> {
        lock(&self.log).clone()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shard_syntax_and_slices() {
        let s = Shard::parse("2/4").unwrap();
        assert_eq!(s, Shard { index: 2, count: 4 });
        assert!(s.takes(1) && s.takes(5) && !s.takes(0) && !s.takes(2));
        for bad in ["0/4", "5/4", "1", "a/b", "1/0", "-1/3", ""] {
            assert!(Shard::parse(bad).is_err(), "{bad}");
        }
        // Every case is in exactly one slice.
        for i in 0..50 {
            let owners = (1..=7)
                .filter(|&k| Shard { index: k, count: 7 }.takes(i))
                .count();
            assert_eq!(owners, 1);
        }
    }
}
