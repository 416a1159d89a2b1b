//! Parameter sweeps: `sweep(grid, f)` runs a script function over many cases on every
//! core and returns a [`Table`]; `--shard K/N` runs a slice of every sweep and
//! `statebook merge` joins the slices (see `notebook::sweeps`).
//!
//! - [`grid`]: the case list (full factorial, or given cases);
//! - [`run`]: workers, each with its own engine, on a rayon pool; progress bar;
//! - [`table`]: the `Table` value (display, columns, CSV, JSON);
//! - [`log`]: cases in JSON terms, for shard and results files;
//! - [`context`]: what a session keeps for its sweeps (function library, shard plan, log).

pub mod context;
pub mod grid;
pub mod log;
pub mod run;
pub mod table;

pub use context::{Shard, SweepPlan};
pub use table::Table;

use crate::script::convert::{fail, Rr};
use crate::script::json;
use crate::script::state::SessionState;
use rhai::{Dynamic, FnPtr, Map};
use run::{Outcome, RunOptions};
use table::Row;

/// A case's results as a map: a map as it is; any other value as `#{ value: v }`;
/// `()` is an error (the function forgot to return its results).
fn results_of(v: Dynamic) -> Result<Map, String> {
    if v.is_unit() {
        return Err(
            "the case function returned nothing; it must return a map of results, \
                    e.g. #{ worst_damping: z }"
                .into(),
        );
    }
    match v.try_cast_result::<Map>() {
        Ok(m) => Ok(m),
        Err(v) => {
            let mut m = Map::new();
            m.insert("value".into(), v);
            Ok(m)
        }
    }
}

fn case_label(cases: &grid::Cases, i: usize) -> String {
    let parts: Vec<String> = cases
        .names
        .iter()
        .zip(&cases.values[i])
        .map(|(n, v)| format!("{n}: {}", json::encode(v)))
        .collect();
    format!("case {i} #{{ {} }}", parts.join(", "))
}

/// Runs a sweep in the session behind `state` (see the `sweep` built-in's help).
pub fn sweep(state: &SessionState, grid: &Dynamic, f: FnPtr, opts: &RunOptions) -> Rr<Table> {
    let cases = grid::expand(grid, state.limits.array_size)?;
    let top_level = !state.sweep.is_worker();
    let id = top_level.then(|| state.sweep.take_id());
    let plan = if top_level {
        state.sweep.plan()
    } else {
        SweepPlan::default()
    };
    let n = cases.values.len();
    if let (Some(id), Some(stored)) = (id, state.sweep.stored()) {
        // The table of a merged results file, with what a run of its cases would say.
        let table = stored_table(id, &cases, &stored).map_err(fail)?;
        if opts.stop_on_error {
            if let Some(r) = table.rows.iter().find(|r| r.error.is_some()) {
                return Err(stopped_on(&cases, r.case, r.error.as_deref().unwrap_or("")));
            }
        }
        warn_failures(state, &cases, &table);
        return Ok(table);
    }
    let selected: Vec<usize> = (0..n)
        .filter(|&i| plan.shard.is_none_or(|s| s.takes(i)))
        .collect();
    let outcomes = run::run(state, &f, &cases, &selected, opts, top_level).map_err(fail)?;

    // Results as maps, errors as text, in case order.
    let mut done: Vec<(usize, Result<Map, String>, String)> = Vec::with_capacity(n);
    for (&i, o) in selected.iter().zip(outcomes) {
        let Some(Outcome { result, log }) = o else {
            continue;
        };
        done.push((i, result.and_then(results_of), log));
    }
    if opts.stop_on_error {
        if let Some((i, Err(e), _)) = done.iter().find(|(_, r, _)| r.is_err()) {
            return Err(stopped_on(&cases, *i, e));
        }
    }
    let names: Vec<Vec<String>> = done
        .iter()
        .filter_map(|(_, r, _)| {
            r.as_ref()
                .ok()
                .map(|m| m.keys().map(|k| k.to_string()).collect())
        })
        .collect();
    let results = log::result_names(names.iter().map(Vec::as_slice));
    for r in &results {
        if cases.names.contains(r) || r == log::ERROR_COLUMN {
            return Err(fail(format!(
                "sweep: the case function returns '{r}', which is also {}\nhint: rename the \
                 result",
                if r == log::ERROR_COLUMN {
                    "the name of the error column".to_string()
                } else {
                    "a parameter name".to_string()
                }
            )));
        }
    }
    let rows: Vec<Row> = done
        .into_iter()
        .map(|(i, r, log)| {
            let mut values = cases.values[i].clone();
            let (error, res) = match r {
                Ok(m) => (None, Some(m)),
                Err(e) => (Some(e), None),
            };
            for name in &results {
                values.push(
                    res.as_ref()
                        .and_then(|m| m.get(name.as_str()).cloned())
                        .unwrap_or(Dynamic::UNIT),
                );
            }
            Row {
                case: i,
                values,
                error,
                log,
            }
        })
        .collect();
    let table = Table {
        parameters: cases.names.clone(),
        results,
        rows,
    };

    warn_failures(state, &cases, &table);
    if let (Some(id), Some(shard)) = (id, plan.shard) {
        state.warn(format!(
            "sweep {id}: shard {shard} ran {} of {n} cases; the table holds only those \
             (statebook merge joins the shards)",
            table.rows.len()
        ));
    }
    if let (Some(id), true) = (id, plan.keep_log) {
        state.sweep.push_log(sweep_log(id, &cases, &table));
    }
    Ok(table)
}

/// The error of a sweep with `stop_on_error` whose case `i` failed with `e`.
fn stopped_on(cases: &grid::Cases, i: usize, e: &str) -> Box<rhai::EvalAltResult> {
    fail(format!(
        "sweep: {} failed: {e}\nhint: without stop_on_error the other cases run and the \
         failure is listed in the table",
        case_label(cases, i)
    ))
}

/// The warning of a sweep some of whose cases failed.
fn warn_failures(state: &SessionState, cases: &grid::Cases, table: &Table) {
    let failures: Vec<&Row> = table.rows.iter().filter(|r| r.error.is_some()).collect();
    if let Some(first) = failures.first() {
        state.warn(format!(
            "sweep: {} of {} cases failed; the first is {}: {}\nhint: .failures() lists them \
             all; #{{ stop_on_error: true }} stops at the first",
            failures.len(),
            table.rows.len(),
            case_label(cases, first.case),
            first.error.as_deref().unwrap_or("")
        ));
    }
}

/// Sweep `id`'s table from a merged results file, after checking that the file holds this
/// sweep with the same case list. The rows come back from their JSON encoding (numbers,
/// strings, flags, arrays and maps exactly; see [`json::decode`]); case logs are not kept
/// in results files, so `.logs` is empty.
fn stored_table(
    id: usize,
    cases: &grid::Cases,
    stored: &[log::StoredSweep],
) -> Result<Table, String> {
    let Some(s) = stored.iter().find(|s| s.id == id) else {
        return Err(format!(
            "sweep {id}: the sweep-results file holds {} sweep{}, this run has more\nhint: \
             merge the shards of this version of the file",
            stored.len(),
            if stored.len() == 1 { "" } else { "s" }
        ));
    };
    let all: Vec<Vec<serde_json::Value>> = cases
        .values
        .iter()
        .map(|r| r.iter().map(json::encode).collect())
        .collect();
    let n = cases.values.len();
    if s.case_count != n || s.grid_sha256 != log::grid_sha256(&cases.names, &all) {
        return Err(format!(
            "sweep {id}: the sweep-results file has a different case list ({} cases there, {n} \
             here)\nhint: merge the shards of this version of the file",
            s.case_count
        ));
    }
    let column = |name: &str| -> Result<&Vec<serde_json::Value>, String> {
        match s.table.get(name) {
            Some(serde_json::Value::Array(c)) if c.len() == n => Ok(c),
            _ => Err(format!(
                "sweep {id}: the sweep-results file has no column '{name}' of {n} values"
            )),
        }
    };
    for name in &cases.names {
        column(name)?;
    }
    let results: Vec<String> = s
        .table
        .keys()
        .filter(|k| !cases.names.contains(k) && k.as_str() != log::ERROR_COLUMN)
        .cloned()
        .collect();
    let result_columns: Vec<&Vec<serde_json::Value>> = results
        .iter()
        .map(|r| column(r))
        .collect::<Result<_, _>>()?;
    let errors = match s.table.get(log::ERROR_COLUMN) {
        Some(_) => Some(column(log::ERROR_COLUMN)?),
        None => None,
    };
    let rows = (0..n)
        .map(|i| {
            let error = errors.and_then(|e| e[i].as_str()).map(str::to_string);
            let mut values = cases.values[i].clone();
            values.extend(result_columns.iter().map(|c| match error {
                Some(_) => Dynamic::UNIT,
                None => json::decode(&c[i]),
            }));
            Row {
                case: i,
                values,
                error,
                log: String::new(),
            }
        })
        .collect();
    Ok(Table {
        parameters: cases.names.clone(),
        results,
        rows,
    })
}

fn sweep_log(id: usize, cases: &grid::Cases, table: &Table) -> log::SweepLog {
    let all: Vec<Vec<serde_json::Value>> = cases
        .values
        .iter()
        .map(|r| r.iter().map(json::encode).collect())
        .collect();
    let np = table.parameters.len();
    let logged = table
        .rows
        .iter()
        .map(|r| log::CaseLog {
            case: r.case,
            parameters: all[r.case].clone(),
            results: r.error.is_none().then(|| {
                table
                    .results
                    .iter()
                    .zip(&r.values[np..])
                    .map(|(n, v)| (n.clone(), json::encode(v)))
                    .collect()
            }),
            error: r.error.clone(),
        })
        .collect();
    log::SweepLog {
        id,
        case_count: cases.values.len(),
        grid_sha256: log::grid_sha256(&cases.names, &all),
        parameters: cases.names.clone(),
        cases: logged,
    }
}
