//! Writing a report and its results file as one pair (the `render` command's output).

use crate::notebook::check::{results_json, results_path};
use crate::notebook::output::NotebookRun;
use serde_json::Value;
use sha2::Digest;
use std::path::{Path, PathBuf};

/// Writes the report (HTML, or Markdown with figure files) and the results file as a
/// pair: all of them go to exclusive temporary files first (see `safe_fs`), and only when
/// every one is on disk are they renamed into place, the results file last. The report
/// carries the SHA-256 of its results file, so a reader (`check`) can tell a matching
/// pair from one that a crash between the renames or another render left behind. Refuses an output that would replace the analysis file, the
/// results file or any file the run read (`inputs`, real paths). Returns the paths
/// written. The caller holds the analysis file's lock ([`crate::safe_fs::lock`]).
pub fn write_outputs(
    analysis: &Path,
    output: Option<&Path>,
    markdown: bool,
    run: &NotebookRun,
    records: &[(String, Value)],
    inputs: &[PathBuf],
) -> Result<Vec<PathBuf>, String> {
    use crate::safe_fs::{prepare, resolve};
    let stem = analysis
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    let ext = if markdown { "md" } else { "html" };
    let out = output
        .map(Path::to_path_buf)
        .unwrap_or_else(|| analysis.with_extension(ext));
    let results = results_path(analysis);
    let (analysis_real, results_real) = (resolve(analysis), resolve(&results));
    let refuse_input = |p: &Path| -> Result<PathBuf, String> {
        let real = resolve(p);
        let what = if real == analysis_real {
            Some("the analysis file itself")
        } else if real == results_real {
            Some("its results file")
        } else if inputs.contains(&real) {
            Some("a file the run read")
        } else {
            None
        };
        match what {
            Some(w) => Err(format!(
                "refusing to write {}: it is {w} ({})\nhint: choose another -o path",
                p.display(),
                real.display()
            )),
            None => Ok(real),
        }
    };
    let out_real = refuse_input(&out)?;
    let report_name = match (
        out_real.parent(),
        results_real.parent(),
        out_real.file_name(),
    ) {
        (Some(a), Some(b), Some(n)) if a == b => n.to_string_lossy().into_owned(),
        _ => out_real.display().to_string(),
    };
    let name = analysis
        .file_name()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    let results_text = results_json(&name, records, &report_name);
    let mut paired = run.clone();
    paired.provenance.results_sha256 =
        crate::notebook::files::hex(&sha2::Sha256::digest(results_text.as_bytes()));
    let run = &paired;
    let mut files: Vec<(PathBuf, String)> = Vec::new();
    if markdown {
        let out_stem = out
            .file_stem()
            .map(|s| s.to_string_lossy().into_owned())
            .unwrap_or(stem.clone());
        let md = super::render_markdown(run, &out_stem);
        for (name, svg) in md.figures {
            files.push((out.with_file_name(name), svg));
        }
        files.push((out.clone(), md.text));
    } else {
        files.push((out.clone(), super::render_html(run)));
    }
    let mut pending = Vec::with_capacity(files.len() + 1);
    for (p, text) in &files {
        let real = refuse_input(p)?;
        let w = prepare(&real, text.as_bytes(), false)
            .map_err(|e| format!("cannot write {}: {e}", p.display()))?;
        pending.push((p.clone(), w));
    }
    let w = prepare(&results_real, results_text.as_bytes(), false)
        .map_err(|e| format!("cannot write {}: {e}", results.display()))?;
    pending.push((results, w));
    let mut written = Vec::with_capacity(pending.len());
    for (p, w) in pending {
        w.commit()
            .map_err(|e| format!("cannot write {}: {e}", p.display()))?;
        written.push(p);
    }
    Ok(written)
}
