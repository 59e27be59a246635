//! The block cache in `<out>/.sheaf-cache`: one file per block result, named
//! by the block's key. An entry is never trusted as it is found: it carries
//! the SHA-256 of everything after its first line, the results-schema
//! number, sheaf's version and revision and its own key, and an entry that
//! does not match all of them, or does not decode, is a miss (never an error,
//! never a panic). The checksum catches damage, not forgery, which is why
//! `--confine` builds read no cache at all.

use crate::provenance::sha256_hex;
use crate::world::{DiskWorld, World};
use serde::Serialize;
use serde::de::DeserializeOwned;
use std::fs;
use std::io::Read;
use std::path::{Path, PathBuf};

/// The block cache's folder inside the output folder.
pub const CACHE_DIR: &str = ".sheaf-cache";

/// The git revision sheaf was built from (`unknown` outside a checkout).
pub const REVISION: &str = env!("SHEAF_GIT_REVISION");

/// Entries larger than this are not read (a miss); results of even large
/// designs are a few hundred kilobytes.
pub const MAX_ENTRY_BYTES: u64 = 64 << 20;

/// What a cache folder holds besides entries: it tells git to ignore the
/// whole folder, so committing a report folder never commits the cache.
pub const GITIGNORE: &str =
    "# sheaf's block cache, lock and temporary files; never commit them.\n*\n";

/// What the cache can hold: a value with the number of its layout, raised
/// whenever the layout changes so that older entries become misses.
pub trait Cacheable: Serialize + DeserializeOwned {
    const SCHEMA: u32;
}

/// The lines every entry for `key` starts with (after its checksum line).
fn header<T: Cacheable>(key: &str) -> String {
    format!(
        "sheaf-cache 1\nschema {}\nsheaf {}\nrevision {REVISION}\nkey {key}\n\n",
        T::SCHEMA,
        crate::VERSION
    )
}

/// Whether `name` has the form of an entry's file name (a SHA-256 in hex).
pub fn is_entry_name(name: &str) -> bool {
    name.len() == 64
        && name
            .bytes()
            .all(|b| b.is_ascii_digit() || (b'a'..=b'f').contains(&b))
}

/// The bytes of a cache entry holding `result` under `key`.
pub fn seal<T: Cacheable>(key: &str, result: &T) -> Option<Vec<u8>> {
    Some(seal_payload::<T>(key, &postcard::to_allocvec(result).ok()?))
}

/// An entry around already serialized bytes (the fuzz target uses it to
/// reach the decoder with arbitrary payloads).
pub fn seal_payload<T: Cacheable>(key: &str, payload: &[u8]) -> Vec<u8> {
    let mut body = header::<T>(key).into_bytes();
    body.extend_from_slice(payload);
    let mut entry = format!("{}\n", sha256_hex(&body)).into_bytes();
    entry.extend_from_slice(&body);
    entry
}

/// The value in an entry read for `key`, or `None` when anything
/// about it does not verify.
pub fn open<T: Cacheable>(key: &str, entry: &[u8]) -> Option<T> {
    let newline = entry.iter().position(|&b| b == b'\n')?;
    let (checksum, body) = (&entry[..newline], &entry[newline + 1..]);
    if checksum != sha256_hex(body).as_bytes() {
        return None;
    }
    let payload = body.strip_prefix(header::<T>(key).as_bytes())?;
    postcard::from_bytes::<T>(payload).ok()
}

/// Reads the entry for `key` from the cache folder `dir`: only a regular
/// file of bounded size, never through a symbolic link (at the folder or at
/// the entry). Anything else is a miss.
pub fn read(dir: &Path, key: &str) -> Option<Vec<u8>> {
    if !is_entry_name(key) || !crate::world::is_real_dir(dir) {
        return None;
    }
    let file = crate::world::open_own(&dir.join(key)).ok()?;
    let mut bytes = Vec::new();
    file.take(MAX_ENTRY_BYTES + 1)
        .read_to_end(&mut bytes)
        .ok()?;
    (bytes.len() as u64 <= MAX_ENTRY_BYTES).then_some(bytes)
}

/// Removes every entry of `dir` that the build just written did not use,
/// and entries' temporary files from earlier versions (`.<key>.tmp`).
/// Links are removed as links; other names are left alone.
pub fn collect_garbage(dir: &Path, used: &[String]) {
    let Ok(listing) = fs::read_dir(dir) else {
        return;
    };
    for item in listing.flatten() {
        let name = item.file_name().to_string_lossy().into_owned();
        let stale_entry = is_entry_name(&name) && !used.contains(&name);
        let old_temporary = name
            .strip_prefix('.')
            .and_then(|n| n.strip_suffix(".tmp"))
            .is_some_and(is_entry_name);
        let is_dir = item.file_type().is_ok_and(|t| t.is_dir());
        if (stale_entry || old_temporary) && !is_dir {
            let _ = fs::remove_file(item.path());
        }
    }
}

/// Files on disk with a block cache: results of unchanged blocks are reused.
/// The cache is safe to delete and never changes the output: an entry that
/// does not verify is a miss (see `cache`).
pub struct CachedDisk {
    pub disk: DiskWorld,
    pub cache: PathBuf,
}

impl World for CachedDisk {
    fn read(&self, path: &str) -> std::io::Result<Vec<u8>> {
        self.disk.read(path)
    }

    fn open(&self, path: &str) -> std::io::Result<(Box<dyn Read + Send>, u64)> {
        self.disk.open(path)
    }

    fn display(&self, path: &str) -> String {
        self.disk.display(path)
    }

    fn cache_get(&self, key: &str) -> Option<Vec<u8>> {
        read(&self.cache, key)
    }

    fn today(&self) -> Option<String> {
        self.disk.today()
    }

    fn progress(&self, message: &str) {
        self.disk.progress(message)
    }
}

#[cfg(test)]
#[path = "cache_tests.rs"]
mod tests;
