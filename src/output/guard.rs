//! Where outputs may go: checks made before anything is written. No output
//! may replace a file the build read, no symbolic link is followed into or
//! out of sheaf's own folders, and under `--confine` the output folder must
//! lie inside the document's folder tree.

use crate::diag::Diagnostic;
use std::fs;
use std::path::{Component, Path, PathBuf};

fn refuse(message: String) -> Diagnostic {
    Diagnostic::new(message)
        .hint("--confine keeps outputs inside the document's folder: pass an -o folder there")
}

/// `.` for the empty path (a bare file name's parent).
fn or_here(path: &Path) -> &Path {
    if path.as_os_str().is_empty() {
        Path::new(".")
    } else {
        path
    }
}

/// Under `--confine`: the output folder is not a link and resolves inside
/// `root`; when it does not exist yet, its nearest existing ancestor does and
/// the rest of its path only goes down.
pub fn check_confined(dir: &Path, root: &Path) -> Result<(), Diagnostic> {
    let shown = dir.display();
    if fs::symlink_metadata(dir).is_ok_and(|m| m.file_type().is_symlink()) {
        return Err(refuse(format!(
            "the output folder {shown} is a symbolic link, which --confine does not follow"
        )));
    }
    let root = or_here(root)
        .canonicalize()
        .map_err(|e| Diagnostic::new(format!("cannot resolve the document's folder: {e}")))?;
    let mut existing = or_here(dir).to_path_buf();
    while fs::symlink_metadata(&existing).is_err() {
        // A missing last component must be a plain name (`..` of a
        // missing folder cannot be resolved).
        if !matches!(
            existing.components().next_back(),
            Some(Component::Normal(_))
        ) {
            return Err(refuse(format!(
                "the output folder {shown} leaves the document's folder"
            )));
        }
        existing = or_here(existing.parent().unwrap_or(Path::new(""))).to_path_buf();
    }
    let resolved = existing
        .canonicalize()
        .map_err(|e| Diagnostic::new(format!("cannot resolve the output folder {shown}: {e}")))?;
    if !resolved.starts_with(&root) {
        return Err(refuse(format!(
            "the output folder {shown} is outside the document's folder"
        )));
    }
    Ok(())
}

/// Refuses to write when an output name in `dir` is a folder, or is (or
/// links to) a file the build read, or when the build read anything inside
/// sheaf's own folder `own` (its leftovers and stale entries are removed).
pub fn check_targets(
    dir: &Path,
    names: &[&str],
    own: &Path,
    sources: &[PathBuf],
) -> Result<(), Diagnostic> {
    for name in names {
        let target = dir.join(name);
        let Ok(meta) = fs::symlink_metadata(&target) else {
            continue;
        };
        if meta.is_dir() {
            return Err(Diagnostic::new(format!(
                "cannot write {}: a folder of that name is in the way",
                target.display()
            ))
            .hint("move the folder, or write the outputs to another folder with -o"));
        }
        for source in sources {
            if same_file::is_same_file(&target, source).unwrap_or(false) {
                return Err(replaces_input(&target, source));
            }
        }
    }
    if let Ok(own) = own.canonicalize() {
        for source in sources {
            if source.canonicalize().is_ok_and(|s| s.starts_with(&own)) {
                return Err(replaces_input(&own, source));
            }
        }
    }
    Ok(())
}

fn replaces_input(target: &Path, source: &Path) -> Diagnostic {
    Diagnostic::new(format!(
        "refusing to write {}: it would replace {}, which this build reads",
        target.display(),
        source.display()
    ))
    .hint("write the outputs to a folder of their own, e.g. -o out; nothing was written")
}
