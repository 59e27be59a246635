//! Writes a build's files atomically: each goes to a temporary file in the
//! output folder and is renamed into place only after every file was written,
//! so a failed build leaves an earlier report untouched.

use crate::compile::Built;
use crate::diag::Diagnostic;
use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};

fn io_error(path: &Path, what: &str, e: std::io::Error) -> Diagnostic {
    Diagnostic::new(format!("cannot {what} {}: {e}", path.display()))
        .hint("check that the output folder is writable")
}

/// Writes the report and results file into `dir`, creating it if needed.
/// Returns the paths written.
pub fn write_outputs(dir: &Path, built: &Built) -> Result<Vec<PathBuf>, Diagnostic> {
    if dir.exists() && !dir.is_dir() {
        return Err(Diagnostic::new(format!(
            "the output path {} is a file, not a folder",
            dir.display()
        ))
        .hint("pass a folder to -o; sheaf names the files after the document"));
    }
    fs::create_dir_all(dir).map_err(|e| io_error(dir, "create", e))?;
    let mut files = vec![
        (&built.report_name, &built.report),
        (&built.results_name, &built.results),
    ];
    files.extend(built.files.iter().map(|(n, b)| (n, b)));
    let mut staged = Vec::new();
    for (name, bytes) in files {
        let tmp = dir.join(format!(".{name}.tmp"));
        let result = fs::File::create(&tmp).and_then(|mut f| {
            f.write_all(bytes)?;
            f.sync_all()
        });
        if let Err(e) = result {
            for (t, _) in &staged {
                let _ = fs::remove_file(t);
            }
            let _ = fs::remove_file(&tmp);
            return Err(io_error(&tmp, "write", e));
        }
        staged.push((tmp, dir.join(name)));
    }
    let mut written = Vec::new();
    for (tmp, target) in staged {
        fs::rename(&tmp, &target).map_err(|e| io_error(&target, "replace", e))?;
        written.push(target);
    }
    Ok(written)
}

/// Stores block results in the cache folder. Failures are ignored: the
/// cache only saves time and is safe to delete.
pub fn write_cache(dir: &Path, entries: &[(String, Vec<u8>)]) {
    if entries.is_empty() || fs::create_dir_all(dir).is_err() {
        return;
    }
    for (key, bytes) in entries {
        let tmp = dir.join(format!(".{key}.tmp"));
        if fs::write(&tmp, bytes).is_ok() {
            let _ = fs::rename(&tmp, dir.join(key));
        }
    }
}
