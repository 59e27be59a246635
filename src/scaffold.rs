//! `sheaf new`: a small study folder (report, data, README) from an invented
//! example, ready to build. The files live in `templates/scaffold/` and are
//! embedded at compile time.

use crate::diag::Diagnostic;
use std::path::{Path, PathBuf};

const FILES: [(&str, &str); 3] = [
    ("report.md", include_str!("../templates/scaffold/report.md")),
    (
        "data/yield.csv",
        include_str!("../templates/scaffold/data/yield.csv"),
    ),
    ("README.md", include_str!("../templates/scaffold/README.md")),
];

/// Creates the study folder; refuses a folder that already holds files.
pub fn create(folder: &Path) -> Result<Vec<PathBuf>, Diagnostic> {
    if folder.is_file() {
        return Err(Diagnostic::new(format!("{} is a file", folder.display()))
            .hint("give the name of a new folder"));
    }
    if folder.is_dir()
        && std::fs::read_dir(folder)
            .map(|mut d| d.next().is_some())
            .unwrap_or(true)
    {
        return Err(Diagnostic::new(format!(
            "{} already exists and is not empty",
            folder.display()
        ))
        .hint("choose a new folder name; sheaf new never overwrites files"));
    }
    let mut written = Vec::new();
    for (name, text) in FILES {
        let path = folder.join(name);
        if let Some(parent) = path.parent() {
            std::fs::create_dir_all(parent)
                .map_err(|e| Diagnostic::new(format!("cannot create {}: {e}", parent.display())))?;
        }
        std::fs::write(&path, text)
            .map_err(|e| Diagnostic::new(format!("cannot write {}: {e}", path.display())))?;
        written.push(path);
    }
    Ok(written)
}
