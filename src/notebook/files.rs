//! Reading analysis files safely and describing where a run came from.

use super::output::Provenance;
use sha2::{Digest, Sha256};
use std::path::Path;

/// Largest analysis file accepted (bytes).
pub const MAX_FILE_BYTES: u64 = 16 * 1024 * 1024;

/// The work of [`read_analysis`], with its error as text.
fn read_analysis_inner(path: &Path) -> Result<(String, String), String> {
    use std::io::Read;
    // The size is taken from the opened handle (a symlink to a device reads as size 0 by
    // path), and the read is bounded, so nothing can make it read more than the limit.
    let cannot = |e: std::io::Error| format!("cannot read {}: {}", path.display(), io_words(&e));
    let file = std::fs::File::open(path).map_err(cannot)?;
    let meta = file.metadata().map_err(cannot)?;
    if meta.is_dir() {
        return Err(format!(
            "{} is a folder, expected an analysis file",
            path.display()
        ));
    }
    if meta.len() > MAX_FILE_BYTES {
        return Err(format!(
            "{} is {} bytes, more than the {} bytes an analysis file may have",
            path.display(),
            meta.len(),
            MAX_FILE_BYTES
        ));
    }
    if !meta.is_file() {
        return Err(format!(
            "{} is not a regular file (a device, pipe or socket), expected an analysis file",
            path.display()
        ));
    }
    let mut bytes = Vec::new();
    file.take(MAX_FILE_BYTES + 1)
        .read_to_end(&mut bytes)
        .map_err(cannot)?;
    if bytes.len() as u64 > MAX_FILE_BYTES {
        return Err(format!(
            "{} grew past the {} bytes an analysis file may have while it was read",
            path.display(),
            MAX_FILE_BYTES
        ));
    }
    let sha = hex(&Sha256::digest(&bytes));
    let text = String::from_utf8(bytes).map_err(|e| {
        format!(
            "{} is not UTF-8 text (invalid byte at offset {})",
            path.display(),
            e.utf8_error().valid_up_to()
        )
    })?;
    if text.trim().is_empty() {
        return Err(format!(
            "{} is empty; an analysis file needs at least one cell\nhint: `statebook new \
             FILE` writes a starter file",
            path.display()
        ));
    }
    Ok((text, sha))
}

/// Reads an analysis file: refuses missing, empty, enormous and non-UTF-8 files with a
/// clear message. Returns the text and its bytes' SHA-256.
/// Errors: [`super::NotebookError::Read`].
pub fn read_analysis(path: &Path) -> Result<(String, String), super::NotebookError> {
    read_analysis_inner(path).map_err(super::NotebookError::Read)
}

fn io_words(e: &std::io::Error) -> String {
    match e.kind() {
        std::io::ErrorKind::NotFound => "no such file".into(),
        std::io::ErrorKind::PermissionDenied => "permission denied".into(),
        _ => e.to_string(),
    }
}

/// Lowercase hexadecimal of bytes.
pub fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|b| format!("{b:02x}")).collect()
}

/// The provenance of a run of `file_name` with content hash `sha256`, dated now.
pub fn provenance(file_name: &str, sha256: &str) -> Provenance {
    Provenance {
        version: env!("CARGO_PKG_VERSION").to_string(),
        file_name: file_name.to_string(),
        sha256: sha256.to_string(),
        date: utc_now(),
        platform: format!("{}-{}", std::env::consts::OS, std::env::consts::ARCH),
        results_sha256: String::new(),
    }
}

/// Current UTC time as `YYYY-MM-DD HH:MM UTC`.
pub fn utc_now() -> String {
    let secs = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map(|d| d.as_secs() as i64)
        .unwrap_or(0);
    let (days, rem) = (secs.div_euclid(86_400), secs.rem_euclid(86_400));
    let (y, m, d) = civil_from_days(days);
    format!(
        "{y:04}-{m:02}-{d:02} {:02}:{:02} UTC",
        rem / 3600,
        (rem % 3600) / 60
    )
}

/// Gregorian date from days since 1970-01-01 (Hinnant 2013, "chrono-Compatible Low-Level
/// Date Algorithms").
fn civil_from_days(z: i64) -> (i64, u32, u32) {
    let z = z + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097);
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let y = yoe + era * 400;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let m = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    (if m <= 2 { y + 1 } else { y }, m, d)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dates() {
        assert_eq!(civil_from_days(0), (1970, 1, 1));
        assert_eq!(civil_from_days(20_788), (2026, 12, 1)); // 2026-12-01 (calendar count)
        assert_eq!(civil_from_days(-1), (1969, 12, 31));
    }
}
