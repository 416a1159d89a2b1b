//! Results files and the reproducibility check.
//!
//! `render` saves every `record(name, value)` of a run to `<stem>.results.json` beside the
//! analysis file (pretty JSON, names in sorted order, values encoded as `to_json` does).
//! `check` re-runs the file and compares each record with the saved one: numbers agree
//! when `|now − saved| ≤ tolerance · scale`, where `scale` is the largest magnitude of any
//! number in the saved record (so noise-level entries of a matrix do not count as drift),
//! falling back to the numbers' own magnitude for a record that is all zeros. Strings,
//! booleans, null and the shapes of arrays and objects must match exactly. A missing or
//! extra record is drift.

use serde_json::{Map, Value};
use sha2::Digest;
use std::path::{Path, PathBuf};

/// Format tag of results files.
pub const RESULTS_FORMAT: &str = "statebook-results/1";

/// The results file beside `analysis`.
pub fn results_path(analysis: &Path) -> PathBuf {
    let stem = analysis
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    analysis.with_file_name(format!("{stem}.results.json"))
}

/// The results document of a run: its records and the name of the report written with it
/// (relative to the results file's folder when it lies there).
pub fn results_json(analysis_name: &str, records: &[(String, Value)], report: &str) -> String {
    let mut sorted: Vec<&(String, Value)> = records.iter().collect();
    sorted.sort_by(|a, b| a.0.cmp(&b.0));
    let mut rec = Map::new();
    for (k, v) in sorted {
        rec.insert(k.clone(), v.clone());
    }
    let mut doc = Map::new();
    doc.insert("format".into(), Value::String(RESULTS_FORMAT.into()));
    doc.insert("analysis".into(), Value::String(analysis_name.into()));
    doc.insert("report".into(), Value::String(report.into()));
    doc.insert("records".into(), Value::Object(rec));
    let mut s = serde_json::to_string_pretty(&Value::Object(doc)).unwrap_or_default();
    s.push('\n');
    s
}

/// Largest results file or report `check` reads back (bytes).
pub const MAX_SAVED_BYTES: u64 = 256 * 1024 * 1024;

/// Outcome of a check.
#[derive(Debug, Clone, PartialEq)]
pub struct CheckReport {
    /// Whether every record matched and none was missing or extra.
    pub passed: bool,
    /// The table printed for the user.
    pub text: String,
}

/// One difference found.
#[derive(Debug, Clone, PartialEq)]
struct Drift {
    name: String,
    saved: String,
    now: String,
    relative: String,
}

/// The work of [`compare_with_saved`], with its error as text.
fn compare_with_saved_inner(
    analysis: &Path,
    records: &[(String, Value)],
    tolerance: f64,
) -> Result<CheckReport, String> {
    let path = results_path(analysis);
    let real = crate::safe_fs::resolve_folder(&path);
    // Never through a link at the name: a shipped `<stem>.results.json` link would
    // otherwise show an outside file's content in the drift table.
    let bytes = crate::safe_fs::read_no_follow(&real, MAX_SAVED_BYTES).map_err(|e| {
        format!(
            "cannot read the saved results {}: {e}\nhint: `statebook render {}` writes them",
            path.display(),
            analysis.display()
        )
    })?;
    let text = String::from_utf8_lossy(&bytes);
    let saved: Value = serde_json::from_str(&text)
        .map_err(|e| format!("{} is not a valid results file: {e}", path.display()))?;
    let Some(saved_rec) = saved.get("records").and_then(Value::as_object) else {
        return Err(format!("{} has no \"records\" object", path.display()));
    };
    check_pair(&saved, &bytes, &real, &path)?;
    Ok(compare(
        saved_rec,
        records,
        tolerance,
        &path.display().to_string(),
    ))
}

/// Compares the records of a re-run with the saved results file.
/// Errors: [`super::NotebookError::Check`].
pub fn compare_with_saved(
    analysis: &Path,
    records: &[(String, Value)],
    tolerance: f64,
) -> Result<CheckReport, super::NotebookError> {
    compare_with_saved_inner(analysis, records, tolerance).map_err(super::NotebookError::Check)
}

/// Checks that the report named by a results file carries the hash of exactly these
/// results, so that a report is never taken with another run's results (a render
/// interrupted between its renames, or two renders at once). Results files that name no
/// report (older ones) pass.
fn check_pair(saved: &Value, bytes: &[u8], real: &Path, shown: &Path) -> Result<(), String> {
    let Some(report) = saved.get("report").and_then(Value::as_str) else {
        return Ok(());
    };
    let run = super::files::hex(&sha2::Sha256::digest(bytes));
    let run = run.as_str();
    let report_path = real
        .parent()
        .map(|d| d.join(report))
        .unwrap_or_else(|| PathBuf::from(report));
    let report_real = crate::safe_fs::resolve_folder(&report_path);
    let bytes = match crate::safe_fs::read_no_follow(&report_real, MAX_SAVED_BYTES) {
        Ok(b) => b,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(()),
        Err(e) => {
            return Err(format!(
                "cannot read the report {} paired with {}: {e}",
                report_path.display(),
                shown.display()
            ))
        }
    };
    let text = String::from_utf8_lossy(&bytes);
    match super::output::run_of_report(&text) {
        Some(r) if r == run => Ok(()),
        found => Err(format!(
            "the report {} and the results {} come from different runs (the report was \
             written with results of SHA-256 {}, these have {run}): a render was interrupted \
             or two ran at once\nhint: run `statebook render` again to write a matching pair",
            report_path.display(),
            shown.display(),
            found.unwrap_or("none")
        )),
    }
}

fn compare(
    saved: &Map<String, Value>,
    now: &[(String, Value)],
    tol: f64,
    file: &str,
) -> CheckReport {
    let mut drifts = Vec::new();
    let mut matched = 0usize;
    for (name, sv) in saved {
        match now.iter().find(|(n, _)| n == name) {
            None => drifts.push(Drift {
                name: name.clone(),
                saved: short(sv),
                now: "(missing)".into(),
                relative: "-".into(),
            }),
            Some((_, nv)) => {
                let scale = max_abs(sv).max(max_abs(nv));
                let mut worst: Option<(String, String, String, f64)> = None;
                if diff(sv, nv, tol, scale, name, &mut worst) {
                    matched += 1;
                } else {
                    let (path, s, n, r) =
                        worst.unwrap_or((name.clone(), short(sv), short(nv), f64::NAN));
                    drifts.push(Drift {
                        name: path,
                        saved: s,
                        now: n,
                        relative: if r.is_nan() {
                            "-".into()
                        } else {
                            format!("{r:.2e}")
                        },
                    });
                }
            }
        }
    }
    for (name, nv) in now {
        if !saved.contains_key(name) {
            drifts.push(Drift {
                name: name.clone(),
                saved: "(not saved)".into(),
                now: short(nv),
                relative: "-".into(),
            });
        }
    }
    let passed = drifts.is_empty();
    let mut text = String::new();
    if passed {
        text.push_str(&format!(
            "check passed: {matched} record{} match {file} (relative tolerance {tol:e})\n",
            if matched == 1 { "" } else { "s" }
        ));
    } else {
        text.push_str(&format!(
            "check FAILED: {} of {} record{} drifted from {file} (relative tolerance {tol:e})\n\n",
            drifts.len(),
            saved.len().max(now.len()),
            if saved.len().max(now.len()) == 1 {
                ""
            } else {
                "s"
            }
        ));
        let headers = ["record", "saved", "now", "relative difference"].map(String::from);
        let rows: Vec<Vec<String>> = drifts
            .iter()
            .map(|d| {
                vec![
                    d.name.clone(),
                    d.saved.clone(),
                    d.now.clone(),
                    d.relative.clone(),
                ]
            })
            .collect();
        text.push_str(&crate::display::table(&headers, &rows));
        text.push('\n');
    }
    CheckReport { passed, text }
}

fn short(v: &Value) -> String {
    let s = v.to_string();
    if s.chars().count() > 40 {
        format!("{}…", s.chars().take(39).collect::<String>())
    } else {
        s
    }
}

fn max_abs(v: &Value) -> f64 {
    match v {
        Value::Number(n) => n.as_f64().map(f64::abs).unwrap_or(0.0),
        Value::Array(a) => a.iter().map(max_abs).fold(0.0, f64::max),
        Value::Object(o) => o.values().map(max_abs).fold(0.0, f64::max),
        _ => 0.0,
    }
}

/// True when `a` and `b` agree; otherwise records the worst difference found.
fn diff(
    a: &Value,
    b: &Value,
    tol: f64,
    scale: f64,
    path: &str,
    worst: &mut Option<(String, String, String, f64)>,
) -> bool {
    let mut note = |rel: f64| {
        if worst.as_ref().is_none_or(|w| w.3.is_nan() || rel > w.3) {
            *worst = Some((path.to_string(), short(a), short(b), rel));
        }
    };
    match (a, b) {
        (Value::Number(x), Value::Number(y)) => {
            let (x, y) = (
                x.as_f64().unwrap_or(f64::NAN),
                y.as_f64().unwrap_or(f64::NAN),
            );
            let d = (x - y).abs();
            let s = if scale > 0.0 {
                scale
            } else {
                x.abs().max(y.abs())
            };
            if d <= tol * s {
                true
            } else {
                note(if s > 0.0 { d / s } else { f64::INFINITY });
                false
            }
        }
        (Value::Array(x), Value::Array(y)) => {
            if x.len() != y.len() {
                note(f64::NAN);
                return false;
            }
            let mut ok = true;
            for (k, (p, q)) in x.iter().zip(y).enumerate() {
                ok &= diff(p, q, tol, scale, &format!("{path}[{k}]"), worst);
            }
            ok
        }
        (Value::Object(x), Value::Object(y)) => {
            if x.len() != y.len() || x.keys().any(|k| !y.contains_key(k)) {
                note(f64::NAN);
                return false;
            }
            let mut ok = true;
            for (k, p) in x {
                if let Some(q) = y.get(k) {
                    ok &= diff(p, q, tol, scale, &format!("{path}.{k}"), worst);
                }
            }
            ok
        }
        _ => {
            if a == b {
                true
            } else {
                note(f64::NAN);
                false
            }
        }
    }
}

/// A starter analysis file that runs and renders.
pub fn starter(stem: &str) -> String {
    let title = if stem.is_empty() {
        "New analysis".to_string()
    } else {
        stem.replace(['_', '-'], " ")
    };
    format!(
        r#"//== {title}
//> What this analysis is for, the model it uses and where the numbers come from.
//> (A starter written by `statebook new`: replace the example plant with your own.)

//== Model
//> An example plant of our own: a mass on a spring with light damping (invented numbers).
let mass = 2.0;        // kg
let stiffness = 50.0;  // N/m
let damping = 1.5;     // N·s/m
let A = matrix([[0, 1], [-stiffness / mass, -damping / mass]]);
show(A);

//== Eigenvalues
let lambda = eigenvalues(A);
show(lambda);
record("eigenvalues", lambda);
note("The real parts are negative, so the free motion decays.");
"#
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    fn saved(v: Value) -> Map<String, Value> {
        v.as_object().cloned().unwrap_or_default()
    }

    #[test]
    fn identical_records_pass() {
        let s = saved(json!({"a": 1.0, "m": [[1.0, 2.0]]}));
        let now = vec![
            ("a".to_string(), json!(1.0)),
            ("m".to_string(), json!([[1.0, 2.0]])),
        ];
        assert!(compare(&s, &now, 1e-9, "r.json").passed);
    }

    #[test]
    fn drift_is_reported_with_path_and_size() {
        let s = saved(json!({"m": [[1.0, 2.0]]}));
        let now = vec![("m".to_string(), json!([[1.0, 2.001]]))];
        let r = compare(&s, &now, 1e-9, "r.json");
        assert!(!r.passed);
        assert!(r.text.contains("m[0][1]"), "{}", r.text);
        assert!(r.text.contains("5.00e-4"), "{}", r.text);
    }

    #[test]
    fn missing_and_extra_records_fail() {
        let s = saved(json!({"a": 1.0}));
        let r = compare(&s, &[("b".to_string(), json!(1.0))], 1e-9, "r.json");
        assert!(!r.passed);
        assert!(
            r.text.contains("(missing)") && r.text.contains("(not saved)"),
            "{}",
            r.text
        );
    }

    #[test]
    fn noise_entries_do_not_drift() {
        let s = saved(json!({"m": [[1.0, 0.0]]}));
        let now = vec![("m".to_string(), json!([[1.0, 1e-17]]))];
        assert!(compare(&s, &now, 1e-9, "r.json").passed);
    }
}
