//! The files a watch follows, and the content each had when it was last
//! built. A rebuild happens only when an event that can change content names
//! one of them and its SHA-256 differs from the one recorded: the build's own
//! opening and reading of its inputs, a `touch`, or a save of identical bytes
//! never rebuild.

use crate::compile::Built;
use notify::EventKind;
use notify::event::{AccessKind, AccessMode, MetadataKind, ModifyKind};
use sha2::{Digest, Sha256};
use std::collections::BTreeSet;
use std::ffi::OsString;
use std::io::Read;
use std::path::{Path, PathBuf};

/// One followed file.
#[derive(Debug, Clone)]
struct Followed {
    path: PathBuf,
    /// (canonical folder, file name) of every name the file can be changed
    /// through: its own, and its link target's when it is a symbolic link.
    places: Vec<(PathBuf, OsString)>,
    /// SHA-256 of the content last built from; `None` for a file that was
    /// missing, unreadable or not a regular file.
    hash: Option<String>,
}

/// The followed files of one watch.
#[derive(Debug, Clone, Default)]
pub struct Inputs {
    files: Vec<Followed>,
}

/// Whether an event can mean new content: writes, creations, removals and
/// renames. Opening, reading and closing a file unchanged (as every build
/// does) cannot, nor can a change of permissions or times, except the write
/// time, which the polling back end reports for writes.
pub fn can_change_content(kind: &EventKind) -> bool {
    match kind {
        EventKind::Access(AccessKind::Close(AccessMode::Write)) => true,
        EventKind::Access(_) => false,
        EventKind::Modify(ModifyKind::Metadata(m)) => *m == MetadataKind::WriteTime,
        EventKind::Modify(_) | EventKind::Create(_) | EventKind::Remove(_) => true,
        EventKind::Any | EventKind::Other => true,
    }
}

/// Lowercase hex SHA-256 of a regular file's content, read in pieces.
/// `None` for a missing or unreadable path and for anything that is not a
/// regular file after links are resolved: a FIFO, a device or a socket is
/// never read, and opening one never waits for a writer.
pub fn content_hash(path: &Path) -> Option<String> {
    if !std::fs::metadata(path).ok()?.is_file() {
        return None;
    }
    let mut file = open_without_waiting(path).ok()?;
    // The path may have been replaced between the two looks.
    if !file.metadata().ok()?.is_file() {
        return None;
    }
    let mut hasher = Sha256::new();
    let mut buffer = vec![0u8; 64 * 1024];
    loop {
        match file.read(&mut buffer) {
            Ok(0) => break,
            Ok(n) => hasher.update(&buffer[..n]),
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => {}
            Err(_) => return None,
        }
    }
    Some(
        hasher
            .finalize()
            .iter()
            .map(|b| format!("{b:02x}"))
            .collect(),
    )
}

/// Opens for reading without blocking: on Unix a FIFO opened for reading
/// waits for a writer unless asked not to.
fn open_without_waiting(path: &Path) -> std::io::Result<std::fs::File> {
    let mut options = std::fs::OpenOptions::new();
    options.read(true);
    #[cfg(unix)]
    {
        use std::os::unix::fs::OpenOptionsExt;
        options.custom_flags(libc::O_NONBLOCK);
    }
    options.open(path)
}

/// The (canonical folder, name) pairs a file can be changed through.
fn places_of(path: &Path) -> Vec<(PathBuf, OsString)> {
    let mut places = Vec::new();
    let own = path
        .parent()
        .filter(|d| !d.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    if let (Ok(dir), Some(name)) = (own.canonicalize(), path.file_name()) {
        places.push((dir, name.to_os_string()));
    }
    if let Ok(target) = path.canonicalize()
        && let (Some(dir), Some(name)) = (target.parent(), target.file_name())
    {
        let place = (dir.to_path_buf(), name.to_os_string());
        if !places.contains(&place) {
            places.push(place);
        }
    }
    places
}

impl Inputs {
    /// What a build read and the content it read: from the results file of a
    /// successful build (the hashes of exactly the bytes it used). After a
    /// failed build, the files followed before, the document and the file
    /// the error points at, so fixing a data file rebuilds too.
    pub fn after_build(
        document: &Path,
        built: Option<&Built>,
        error_file: Option<&Path>,
        before: &Inputs,
    ) -> Inputs {
        let mut inputs = Inputs::default();
        if let Some(results) =
            built.and_then(|b| serde_json::from_slice::<serde_json::Value>(&b.results).ok())
        {
            let base = document.parent().map(PathBuf::from).unwrap_or_default();
            let hash = |v: &serde_json::Value| v.as_str().map(str::to_string);
            inputs.follow(document, hash(&results["document_sha256"]));
            for i in results["inputs"].as_array().into_iter().flatten() {
                if let Some(p) = i["path"].as_str() {
                    inputs.follow(&base.join(p), hash(&i["sha256"]));
                }
            }
            return inputs;
        }
        for f in &before.files {
            inputs.follow(&f.path, f.hash.clone());
        }
        for path in [Some(document), error_file].into_iter().flatten() {
            if !inputs.files.iter().any(|f| f.path == path) {
                inputs.follow(path, content_hash(path));
            }
        }
        inputs
    }

    fn follow(&mut self, path: &Path, hash: Option<String>) {
        if self.files.iter().any(|f| f.path == path) {
            return;
        }
        self.files.push(Followed {
            path: path.to_path_buf(),
            places: places_of(path),
            hash,
        });
    }

    /// The folders to watch (not recursively): each followed name's folder.
    pub fn folders(&self) -> Vec<PathBuf> {
        let mut folders: Vec<PathBuf> = Vec::new();
        for (dir, _) in self.files.iter().flat_map(|f| &f.places) {
            if !folders.contains(dir) {
                folders.push(dir.clone());
            }
        }
        folders
    }

    /// Indexes of the followed files an event may have changed.
    pub fn touched_by(&self, event: &notify::Result<notify::Event>) -> BTreeSet<usize> {
        let Ok(event) = event else {
            return BTreeSet::new();
        };
        if !can_change_content(&event.kind) {
            return BTreeSet::new();
        }
        let mut touched = BTreeSet::new();
        for p in &event.paths {
            let (Some(dir), Some(name)) = (p.parent(), p.file_name()) else {
                continue;
            };
            let Ok(dir) = dir.canonicalize() else {
                continue;
            };
            for (i, f) in self.files.iter().enumerate() {
                if f.places.iter().any(|(d, n)| *d == dir && n == name) {
                    touched.insert(i);
                }
            }
        }
        touched
    }

    /// Hashes the touched files again and records what they hold now;
    /// true when any content differs from the last build's.
    pub fn content_changed(&mut self, touched: &BTreeSet<usize>) -> bool {
        let mut changed = false;
        for &i in touched {
            if let Some(f) = self.files.get_mut(i) {
                let now = content_hash(&f.path);
                changed |= now != f.hash;
                f.hash = now;
            }
        }
        changed
    }
}

#[cfg(test)]
#[path = "inputs_tests.rs"]
mod tests;
