//! The golden cases (tests/cases/*) and their fresh builds, shared by the
//! test files that read them.

use sheaf::compile::{DiskWorld, compile};
use sheaf::render::Format;
use std::path::{Path, PathBuf};

pub fn cases() -> Vec<PathBuf> {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/cases");
    let mut dirs: Vec<PathBuf> = std::fs::read_dir(&root)
        .expect("tests/cases exists")
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.join("report.md").is_file())
        .collect();
    dirs.sort();
    dirs
}

pub fn build(dir: &Path, format: Format) -> sheaf::compile::Built {
    let doc = dir.join("report.md");
    let bytes = std::fs::read(&doc).expect("document");
    compile(
        "report.md",
        &bytes,
        &DiskWorld {
            base: dir.to_path_buf(),
        },
        format,
    )
    .unwrap_or_else(|d| panic!("{} failed to build:\n{d}", dir.display()))
}
