//! Shard files and sweep-results files, and `statebook merge`.
//!
//! `statebook run FILE --shard K/N` writes a **shard file** (default: beside FILE, named
//! `<stem>.shard-K-of-N.json`) holding, for every top-level sweep of the run (in call
//! order, ids 0, 1, …), the cases of its slice — case index, parameter values, results or
//! error — with the sweep's case count and the SHA-256 of its full case list, plus the
//! analysis file's SHA-256 and the statebook version.
//!
//! `statebook merge PARTS… -o OUT` checks that the parts are the N distinct shards of one
//! N-way split of the same file (same SHA-256, same version, same sweeps with the same case
//! lists), that none is missing or given twice, and writes the **sweep-results file**:
//! for every sweep its id, case count, failure count and complete table as an object of
//! columns (the encoding of `record(name, table)`). `statebook run FILE --sweep-results
//! OUT` without `--shard` writes the same file from one run, byte for byte.

use crate::script::sweep::log::SweepLog;
use crate::script::sweep::Shard;
use serde::{Deserialize, Serialize};
use serde_json::{json, Value};
use std::path::{Path, PathBuf};

/// The `format` tag of shard files.
pub const SHARD_FORMAT: &str = "statebook-sweep-shard";
/// The `format` tag of sweep-results files.
pub const RESULTS_FORMAT: &str = "statebook-sweep-results";
/// Version of both formats.
pub const VERSION: u32 = 1;

/// The contents of a shard file.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ShardFile {
    /// Always [`SHARD_FORMAT`].
    pub format: String,
    /// Format version.
    pub version: u32,
    /// statebook version that ran the shard.
    pub statebook_version: String,
    /// SHA-256 of the analysis file's bytes.
    pub file_sha256: String,
    /// Which slice this is.
    pub shard: ShardId,
    /// Every top-level sweep of the run, with the cases of this slice.
    pub sweeps: Vec<SweepLog>,
    /// The cells that failed in the shard run (a shard run goes on past them: they saw the
    /// partial tables of the slice). Absent when none failed.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub failed_cells: Vec<CellFailure>,
}

/// A cell that failed in a shard run.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct CellFailure {
    /// The line of the error (0 when unknown).
    pub line: usize,
    /// The error's first line.
    pub message: String,
}

/// The merged sweep results and what the merge has to tell about them.
#[derive(Debug, Clone, PartialEq)]
pub struct Merged {
    /// The sweep-results file.
    pub text: String,
    /// Warnings for the user (cells that failed in the shard runs).
    pub warnings: Vec<String>,
}

/// `K/N` as stored in a shard file.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct ShardId {
    /// 1-based slice number.
    pub index: usize,
    /// Number of slices.
    pub count: usize,
}

/// Where a shard's file goes by default: beside the analysis file.
pub fn default_shard_path(file: &Path, shard: Shard) -> PathBuf {
    let stem = file
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "analysis".into());
    file.with_file_name(format!(
        "{stem}.shard-{}-of-{}.json",
        shard.index, shard.count
    ))
}

fn version() -> String {
    env!("CARGO_PKG_VERSION").to_string()
}

fn pretty(v: &impl Serialize) -> String {
    let mut s = serde_json::to_string_pretty(v).unwrap_or_default();
    s.push('\n');
    s
}

/// The text of a shard file (compact JSON on one line: it is read by `merge`, not people).
pub fn shard_text(
    file_sha256: &str,
    shard: Shard,
    sweeps: &[SweepLog],
    failed_cells: Vec<CellFailure>,
) -> String {
    let mut s = serde_json::to_string(&ShardFile {
        format: SHARD_FORMAT.into(),
        version: VERSION,
        statebook_version: version(),
        file_sha256: file_sha256.into(),
        shard: ShardId {
            index: shard.index,
            count: shard.count,
        },
        sweeps: sweeps.to_vec(),
        failed_cells,
    })
    .unwrap_or_default();
    s.push('\n');
    s
}

/// The text of a sweep-results file from complete sweep logs.
pub fn results_text(file_sha256: &str, statebook_version: &str, sweeps: &[SweepLog]) -> String {
    let list: Vec<Value> = sweeps
        .iter()
        .map(|s| {
            json!({
                "id": s.id,
                "case_count": s.case_count,
                "grid_sha256": s.grid_sha256,
                "failures": s.failures(),
                "table": s.table_json(),
            })
        })
        .collect();
    pretty(&json!({
        "format": RESULTS_FORMAT,
        "version": VERSION,
        "statebook_version": statebook_version,
        "file_sha256": file_sha256,
        "sweeps": list,
    }))
}

/// The results-file text of a complete (unsharded) run.
pub fn run_results_text(file_sha256: &str, sweeps: &[SweepLog]) -> String {
    results_text(file_sha256, &version(), sweeps)
}

/// Reads a sweep-results file (from `merge` or `run --sweep-results`) for a run of the
/// analysis file with SHA-256 `file_sha256`: its sweeps, to be taken in place of running
/// their cases. Refused (naming the reason) when it is not such a file or comes from
/// another version of the analysis file.
pub fn parse_results(
    name: &str,
    text: &str,
    file_sha256: &str,
) -> Result<Vec<crate::script::sweep::log::StoredSweep>, String> {
    use crate::script::sweep::log::StoredSweep;
    let v: Value =
        serde_json::from_str(text).map_err(|e| format!("{name} is not valid JSON: {e}"))?;
    if v.get("format").and_then(Value::as_str) != Some(RESULTS_FORMAT) {
        return Err(format!(
            "{name} is not a statebook sweep-results file (expected \"format\": \
             \"{RESULTS_FORMAT}\"; merge the shards into one first)"
        ));
    }
    if v.get("version").and_then(Value::as_u64) != Some(u64::from(VERSION)) {
        return Err(format!(
            "{name} has a sweep-results version this statebook does not read"
        ));
    }
    let sha = v.get("file_sha256").and_then(Value::as_str).unwrap_or("");
    if sha != file_sha256 {
        return Err(format!(
            "{name} comes from another version of the analysis file (SHA-256 {} vs {})\nhint: \
             run the shards and the merge again on this version",
            short(sha),
            short(file_sha256)
        ));
    }
    let bad = |what: &str| format!("{name} is not a valid sweep-results file ({what})");
    let sweeps = v
        .get("sweeps")
        .and_then(Value::as_array)
        .ok_or_else(|| bad("no sweeps"))?;
    sweeps
        .iter()
        .map(|s| {
            let num = |k: &str| s.get(k).and_then(Value::as_u64).map(|x| x as usize);
            Ok(StoredSweep {
                id: num("id").ok_or_else(|| bad("a sweep without id"))?,
                case_count: num("case_count").ok_or_else(|| bad("a sweep without case_count"))?,
                grid_sha256: s
                    .get("grid_sha256")
                    .and_then(Value::as_str)
                    .ok_or_else(|| bad("a sweep without grid_sha256: made by an older statebook"))?
                    .to_string(),
                table: s
                    .get("table")
                    .and_then(Value::as_object)
                    .cloned()
                    .ok_or_else(|| bad("a sweep without a table"))?,
            })
        })
        .collect()
}

/// Reads a shard file's text (`name` is used in messages).
pub fn parse_shard(name: &str, text: &str) -> Result<ShardFile, String> {
    let v: Value =
        serde_json::from_str(text).map_err(|e| format!("{name} is not valid JSON: {e}"))?;
    if v.get("format").and_then(Value::as_str) != Some(SHARD_FORMAT) {
        return Err(format!(
            "{name} is not a statebook shard file (expected \"format\": \"{SHARD_FORMAT}\")"
        ));
    }
    if v.get("version").and_then(Value::as_u64) != Some(u64::from(VERSION)) {
        return Err(format!(
            "{name} has shard-file version {}, this statebook reads version {VERSION}",
            v.get("version").map(Value::to_string).unwrap_or_default()
        ));
    }
    serde_json::from_value(v).map_err(|e| format!("{name} is not a valid shard file: {e}"))
}

/// The work of [`merge`], with its error as text.
fn merge_inner(parts: &[(String, String)]) -> Result<Merged, String> {
    let Some(((first_name, _), _)) = parts.split_first() else {
        return Err("no shard files given".into());
    };
    let shards: Vec<ShardFile> = parts
        .iter()
        .map(|(n, t)| parse_shard(n, t))
        .collect::<Result<_, _>>()?;
    let first = &shards[0];
    let n = first.shard.count;
    // Validated before anything is sized by it: a shard file may claim any count.
    // (Up to 1024 the missing ones are listed below, one by one.)
    if n > parts.len() && n > 1024 {
        return Err(format!(
            "{first_name} is one of {n} shards, but {} shard file{} given: merge needs all \
             {n}, each once",
            parts.len(),
            if parts.len() == 1 { " was" } else { "s were" }
        ));
    }
    let mut owner: Vec<Option<&str>> = vec![None; n];
    for ((name, _), s) in parts.iter().zip(&shards) {
        if s.file_sha256 != first.file_sha256 {
            return Err(format!(
                "{name} comes from a different analysis file than {first_name} (SHA-256 {} vs \
                 {})\nhint: run every shard on the same version of the file",
                short(&s.file_sha256),
                short(&first.file_sha256)
            ));
        }
        if s.statebook_version != first.statebook_version {
            return Err(format!(
                "{name} was made by statebook {}, {first_name} by {}; run every shard with the \
                 same statebook",
                s.statebook_version, first.statebook_version
            ));
        }
        if s.shard.count != n {
            return Err(format!(
                "{name} is shard {}/{}, but {first_name} is one of {n}: the shards come from \
                 different splits",
                s.shard.index, s.shard.count
            ));
        }
        let k = s.shard.index;
        if k == 0 || k > n {
            return Err(format!("{name} names shard {k}/{n}, which does not exist"));
        }
        if let Some(other) = owner[k - 1] {
            return Err(format!("shard {k}/{n} is given twice: {other} and {name}"));
        }
        owner[k - 1] = Some(name);
    }
    let missing: Vec<String> = (1..=n)
        .filter(|k| owner[k - 1].is_none())
        .map(|k| k.to_string())
        .collect();
    if !missing.is_empty() {
        return Err(format!(
            "missing shard{} {} of {n}",
            if missing.len() == 1 { "" } else { "s" },
            missing.join(", ")
        ));
    }
    for ((name, _), s) in parts.iter().zip(&shards) {
        if s.sweeps.len() != first.sweeps.len() {
            return Err(format!(
                "{name} has {} sweeps, {first_name} has {}: the runs differed",
                s.sweeps.len(),
                first.sweeps.len()
            ));
        }
    }
    let mut merged: Vec<SweepLog> = Vec::with_capacity(first.sweeps.len());
    for (j, base) in first.sweeps.iter().enumerate() {
        // Capacity from the cases the shards hold, never from the count a file claims.
        let held: usize = shards
            .iter()
            .filter_map(|s| s.sweeps.get(j))
            .map(|sw| sw.cases.len())
            .sum();
        let mut log = SweepLog {
            cases: Vec::with_capacity(held.min(base.case_count)),
            ..base.clone()
        };
        for ((name, _), s) in parts.iter().zip(&shards) {
            let Some(sw) = s.sweeps.get(j) else {
                continue; // counts were checked above
            };
            if sw.id != base.id
                || sw.case_count != base.case_count
                || sw.grid_sha256 != base.grid_sha256
                || sw.parameters != base.parameters
            {
                return Err(format!(
                    "sweep {} in {name} has a different case list than in {first_name}: the \
                     runs differed (does a grid depend on an earlier sweep's sharded results?)",
                    base.id
                ));
            }
            for c in &sw.cases {
                if c.case >= base.case_count || c.case % n != s.shard.index - 1 {
                    return Err(format!(
                        "{name}: case {} of sweep {} does not belong to shard {}/{n}",
                        c.case, base.id, s.shard.index
                    ));
                }
            }
            log.cases.extend(sw.cases.iter().cloned());
        }
        log.cases.sort_by_key(|c| c.case);
        let complete = log.cases.len() == base.case_count
            && log.cases.iter().enumerate().all(|(i, c)| c.case == i);
        if !complete {
            return Err(format!(
                "sweep {}: the shards hold {} cases, expected each of {} exactly once",
                base.id,
                log.cases.len(),
                base.case_count
            ));
        }
        merged.push(log);
    }
    // One warning per failing line (every shard of a deterministic file fails at the same
    // lines; their messages differ only by the size of their slice).
    let mut warnings: Vec<String> = Vec::new();
    let mut lines_seen: Vec<usize> = Vec::new();
    for ((name, _), s) in parts.iter().zip(&shards) {
        for f in &s.failed_cells {
            if lines_seen.contains(&f.line) {
                continue;
            }
            lines_seen.push(f.line);
            let failed = shards
                .iter()
                .filter(|o| o.failed_cells.iter().any(|x| x.line == f.line))
                .count();
            warnings.push(format!(
                "line {} failed in {failed} of the {n} shard runs (first: {name}: {}); it saw \
                 only its shard's slice of the sweeps: render with --sweeps-from to run it on \
                 the merged tables",
                f.line, f.message,
            ));
        }
    }
    Ok(Merged {
        text: results_text(&first.file_sha256, &first.statebook_version, &merged),
        warnings,
    })
}

/// Merges shard files (name, text) into the sweep-results file of the whole run.
/// Errors: [`super::NotebookError::Merge`].
pub fn merge(parts: &[(String, String)]) -> Result<Merged, super::NotebookError> {
    merge_inner(parts).map_err(super::NotebookError::Merge)
}

fn short(sha: &str) -> &str {
    sha.get(..12).unwrap_or(sha)
}
