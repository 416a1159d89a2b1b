//! The record of one sweep's cases in JSON terms, and the one encoding of a sweep table as
//! JSON (an object of columns), shared by `record`/`to_json` of a `Table`, the results file
//! of `statebook run --sweep-results` and `statebook merge`, so that they agree byte for
//! byte.

use serde::{Deserialize, Serialize};
use serde_json::{Map, Value};
use sha2::{Digest, Sha256};
use std::collections::BTreeSet;

/// The name of the extra column that holds a failed case's error message.
pub const ERROR_COLUMN: &str = "case_error";

/// One case of a sweep: its index in the full case list, its parameter values (in the
/// order of the sweep's parameter names) and its results or error.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CaseLog {
    /// 0-based index in the full (unsharded) case list.
    pub case: usize,
    /// Parameter values, in the order of [`SweepLog::parameters`].
    pub parameters: Vec<Value>,
    /// Results by name (a successful case).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub results: Option<Map<String, Value>>,
    /// What went wrong (a failed case).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub error: Option<String>,
}

/// The cases of one sweep that this run carried out.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SweepLog {
    /// 0-based position of the sweep among the run's top-level `sweep` calls.
    pub id: usize,
    /// Number of cases of the whole (unsharded) sweep.
    pub case_count: usize,
    /// SHA-256 of the full case list (names and values), so that shards that saw
    /// different grids are refused.
    pub grid_sha256: String,
    /// Parameter names, in column order.
    pub parameters: Vec<String>,
    /// The cases run, in ascending index order.
    pub cases: Vec<CaseLog>,
}

/// One sweep of a merged sweep-results file, taken in place of running its cases
/// (`statebook run|render|check FILE --sweeps-from all.json`).
#[derive(Debug, Clone, PartialEq)]
pub struct StoredSweep {
    /// Position among the run's top-level sweeps.
    pub id: usize,
    /// Number of cases.
    pub case_count: usize,
    /// SHA-256 of the case list ([`grid_sha256`]).
    pub grid_sha256: String,
    /// The complete table as an object of columns ([`table_json`]).
    pub table: Map<String, Value>,
}

/// SHA-256 (lowercase hex) of a sweep's full case list.
pub fn grid_sha256(parameters: &[String], cases: &[Vec<Value>]) -> String {
    let text = serde_json::to_string(&serde_json::json!([parameters, cases])).unwrap_or_default();
    let digest = Sha256::digest(text.as_bytes());
    digest.iter().map(|b| format!("{b:02x}")).collect()
}

/// Result names of a sweep: the sorted union of the names returned by its successful
/// cases (parameter names are refused by the caller).
pub fn result_names<'a>(results: impl Iterator<Item = &'a [String]>) -> Vec<String> {
    let mut all = BTreeSet::new();
    for names in results {
        all.extend(names.iter().cloned());
    }
    all.into_iter().collect()
}

/// A sweep table as a JSON object of columns: each parameter, then each result (null
/// where a case failed or did not return it), then — only when some case failed — a
/// `case_error` column (null where the case succeeded).
pub fn table_json<'a>(
    parameters: &[String],
    results: &[String],
    rows: impl Iterator<Item = (&'a [Value], Option<&'a Map<String, Value>>, Option<&'a str>)> + Clone,
) -> Value {
    let mut obj = Map::new();
    for (j, name) in parameters.iter().enumerate() {
        let col = rows
            .clone()
            .map(|(p, _, _)| p.get(j).cloned().unwrap_or(Value::Null))
            .collect();
        obj.insert(name.clone(), Value::Array(col));
    }
    for name in results {
        let col = rows
            .clone()
            .map(|(_, r, _)| r.and_then(|r| r.get(name)).cloned().unwrap_or(Value::Null))
            .collect();
        obj.insert(name.clone(), Value::Array(col));
    }
    if rows.clone().any(|(_, _, e)| e.is_some()) {
        let col = rows
            .map(|(_, _, e)| {
                e.map(|e| Value::String(e.to_string()))
                    .unwrap_or(Value::Null)
            })
            .collect();
        obj.insert(ERROR_COLUMN.to_string(), Value::Array(col));
    }
    Value::Object(obj)
}

impl SweepLog {
    /// The result names of the logged cases.
    pub fn result_names(&self) -> Vec<String> {
        let names: Vec<Vec<String>> = self
            .cases
            .iter()
            .filter_map(|c| c.results.as_ref().map(|r| r.keys().cloned().collect()))
            .collect();
        result_names(names.iter().map(Vec::as_slice))
    }

    /// The logged cases as a table (see [`table_json`]).
    pub fn table_json(&self) -> Value {
        let results = self.result_names();
        table_json(
            &self.parameters,
            &results,
            self.cases.iter().map(|c| {
                (
                    c.parameters.as_slice(),
                    c.results.as_ref(),
                    c.error.as_deref(),
                )
            }),
        )
    }

    /// Number of failed cases logged.
    pub fn failures(&self) -> usize {
        self.cases.iter().filter(|c| c.error.is_some()).count()
    }
}
