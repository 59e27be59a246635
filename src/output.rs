//! Writes a build's files as one set.
//!
//! Every check comes first (see `guard`): nothing is written when an output
//! would replace an input, when sheaf's own folder is a link, or when
//! `--confine` forbids the output folder. Then, holding the folder's lock:
//! leftovers of a killed build are removed; every file is written and synced
//! in a fresh staging folder (a new folder with an unpredictable name inside
//! `.sheaf-cache`, files created exclusively, so no planted link is
//! followed); the files are renamed into place, figures first, then the
//! report, the results file and last the manifest `<name>.sha256`, which
//! lists the SHA-256 of every other output (`sha256sum -c` reads it).
//! POSIX has no rename of several files at once; what a crash leaves at each
//! point, and how it is detected and repaired, is in DEVELOPERS.md.

mod guard;
mod lock;

pub use crate::world::{is_real_dir, open_own};
pub use guard::check_confined;
pub use lock::{FolderLock, LOCK_FILE, LOCK_WAIT};

use crate::cache;
use crate::compile::{Built, CACHE_DIR};
use crate::diag::Diagnostic;
use crate::provenance::sha256_hex;
use std::fs::{self, OpenOptions};
use std::io::Write;
use std::path::{Path, PathBuf};

/// Names of staging folders inside the cache folder.
pub const STAGING_PREFIX: &str = "staging-";

fn io_error(path: &Path, what: &str, e: std::io::Error) -> Diagnostic {
    Diagnostic::new(format!("cannot {what} {}: {e}", path.display()))
        .hint("check that the output folder is writable; the earlier report stays in place")
}

/// The manifest's file name for a build: `<name>.sha256` beside the report.
pub fn manifest_name(built: &Built) -> String {
    let stem = built
        .results_name
        .strip_suffix(".results.json")
        .unwrap_or(&built.results_name);
    format!("{stem}.sha256")
}

/// A name as `sha256sum` writes it: a backslash or line feed in the name is
/// escaped, and the line then starts with a backslash.
fn manifest_line(name: &str, bytes: &[u8]) -> String {
    let hash = sha256_hex(bytes);
    if name.contains(['\\', '\n']) {
        let escaped = name.replace('\\', "\\\\").replace('\n', "\\n");
        format!("\\{hash}  {escaped}\n")
    } else {
        format!("{hash}  {name}\n")
    }
}

/// Every output of a build in the order they are committed: figures, the
/// report, the results file, and the manifest that lists all the others.
pub fn outputs(built: &Built) -> Vec<(String, Vec<u8>)> {
    let mut files: Vec<(String, Vec<u8>)> = built.files.clone();
    files.push((built.report_name.clone(), built.report.clone()));
    files.push((built.results_name.clone(), built.results.clone()));
    let manifest: String = files
        .iter()
        .map(|(name, bytes)| manifest_line(name, bytes))
        .collect();
    files.push((manifest_name(built), manifest.into_bytes()));
    files
}

/// Checks everything that can be checked before writing (see the module
/// comment). Returns sheaf's own folder inside `dir`.
fn preflight(dir: &Path, built: &Built, names: &[&str]) -> Result<PathBuf, Diagnostic> {
    if fs::metadata(dir).is_ok_and(|m| !m.is_dir()) {
        return Err(Diagnostic::new(format!(
            "the output path {} is a file, not a folder",
            dir.display()
        ))
        .hint("pass a folder to -o; sheaf names the files after the document"));
    }
    if let Some(root) = &built.confined_to {
        check_confined(dir, root)?;
    }
    let own = dir.join(CACHE_DIR);
    if fs::symlink_metadata(&own).is_ok_and(|m| !m.is_dir()) {
        return Err(Diagnostic::new(format!(
            "{} is not a folder (a symbolic link or a file); sheaf keeps its cache and lock there",
            own.display()
        ))
        .hint("delete it; sheaf creates the folder itself"));
    }
    guard::check_targets(dir, names, &own, &built.sources)?;
    Ok(own)
}

/// Creates `dir` and sheaf's folder `own` in it.
fn prepare(dir: &Path, own: &Path, built: &Built) -> Result<(), Diagnostic> {
    fs::create_dir_all(dir).map_err(|e| io_error(dir, "create", e))?;
    if let Some(root) = &built.confined_to {
        // Created folders are checked again, resolved.
        check_confined(dir, root)?;
    }
    match fs::create_dir(own) {
        Ok(()) => {}
        Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists && is_real_dir(own) => {}
        Err(e) => return Err(io_error(own, "create", e)),
    }
    Ok(())
}

/// Writes the `.gitignore` of sheaf's folder (through the staging folder)
/// when it is missing or different.
fn write_gitignore(own: &Path, staging: &Path) -> Result<(), Diagnostic> {
    let ignore = own.join(".gitignore");
    let current = open_own(&ignore).ok().and_then(|f| {
        let mut text = String::new();
        std::io::Read::read_to_string(&mut std::io::Read::take(f, 4096), &mut text).ok()?;
        Some(text)
    });
    if current.as_deref() != Some(cache::GITIGNORE) {
        let staged = stage(staging, ".gitignore", cache::GITIGNORE.as_bytes())?;
        fs::rename(staged, &ignore).map_err(|e| io_error(&ignore, "write", e))?;
    }
    Ok(())
}

/// Removes what a killed build left in sheaf's folder: staging folders.
/// Links are removed as links.
fn remove_leftovers(own: &Path) {
    let Ok(listing) = fs::read_dir(own) else {
        return;
    };
    for item in listing.flatten() {
        let name = item.file_name().to_string_lossy().into_owned();
        if !name.starts_with(STAGING_PREFIX) {
            continue;
        }
        let path = item.path();
        if is_real_dir(&path) {
            let _ = fs::remove_dir_all(&path);
        } else {
            let _ = fs::remove_file(&path);
        }
    }
}

/// Earlier versions wrote `.<name>.tmp` beside each output; a killed build
/// of theirs may have left some (or a link planted at such a name). Removes
/// those of this document's outputs (`.<stem>.….tmp`, `.<stem>-….tmp`).
fn remove_old_temporaries(dir: &Path, built: &Built) {
    let stem = built
        .results_name
        .strip_suffix(".results.json")
        .unwrap_or(&built.results_name);
    let Ok(listing) = fs::read_dir(dir) else {
        return;
    };
    for item in listing.flatten() {
        let name = item.file_name().to_string_lossy().into_owned();
        let ours = name
            .strip_prefix('.')
            .and_then(|n| n.strip_suffix(".tmp"))
            .and_then(|n| n.strip_prefix(stem))
            .is_some_and(|rest| rest.starts_with(['.', '-']));
        if ours && item.file_type().is_ok_and(|t| !t.is_dir()) {
            let _ = fs::remove_file(item.path());
        }
    }
}

/// Writes `bytes` to a new file `name` in the fresh folder `staging`.
fn stage(staging: &Path, name: &str, bytes: &[u8]) -> Result<PathBuf, Diagnostic> {
    let path = staging.join(name);
    let mut file = OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(&path)
        .map_err(|e| io_error(&path, "create", e))?;
    file.write_all(bytes)
        .and_then(|()| file.sync_all())
        .map_err(|e| io_error(&path, "write", e))?;
    Ok(path)
}

/// Makes renames in `dir` durable (where folders can be synced).
fn sync_dir(dir: &Path) {
    if let Ok(d) = fs::File::open(dir) {
        let _ = d.sync_all();
    }
}

/// Stores new cache entries (staged like outputs) and drops the ones this
/// build did not use. Failures are ignored: the cache only saves time.
fn store_cache(own: &Path, staging: &Path, built: &Built) {
    for (key, bytes) in &built.cache_entries {
        if !cache::is_entry_name(key) {
            continue;
        }
        if let Ok(path) = stage(staging, key, bytes) {
            let _ = fs::rename(path, own.join(key));
        }
    }
    cache::collect_garbage(own, &built.cache_keys);
    sync_dir(own);
}

/// Writes the build's outputs into `dir` (created if needed) as one set, and
/// updates the block cache there. Returns the paths written.
pub fn write_outputs(dir: &Path, built: &Built) -> Result<Vec<PathBuf>, Diagnostic> {
    let files = outputs(built);
    let names: Vec<&str> = files.iter().map(|(n, _)| n.as_str()).collect();
    let own = preflight(dir, built, &names)?;
    prepare(dir, &own, built)?;
    let _lock = FolderLock::exclusive(&own, dir)?;
    remove_leftovers(&own);
    remove_old_temporaries(dir, built);
    let staging = tempfile::Builder::new()
        .prefix(STAGING_PREFIX)
        .tempdir_in(&own)
        .map_err(|e| io_error(&own, "create a staging folder in", e))?;
    let mut staged = Vec::with_capacity(files.len());
    for (name, bytes) in &files {
        staged.push((stage(staging.path(), name, bytes)?, dir.join(name)));
    }
    write_gitignore(&own, staging.path())?;
    sync_dir(staging.path());
    let mut written = Vec::with_capacity(staged.len());
    for (from, to) in staged {
        fs::rename(&from, &to).map_err(|e| {
            Diagnostic::new(format!("cannot replace {}: {e}", to.display())).hint(
                "the folder may now mix files of two builds (its manifest shows which); build again",
            )
        })?;
        written.push(to);
    }
    sync_dir(dir);
    store_cache(&own, staging.path(), built);
    Ok(written)
}
