//! The block cache in `<out>/.sheaf-cache`: one file per block result, named
//! by the block's key. An entry is never trusted as it is found: it carries
//! the SHA-256 of everything after its first line, the results-schema
//! number, sheaf's version and revision and its own key, and an entry that
//! does not match all of them, or does not decode, is a miss (never an error,
//! never a panic). The checksum catches damage, not forgery, which is why
//! `--confine` builds read no cache at all.

use crate::analysis::BlockResult;
use crate::results::{SCHEMA_VERSION, sha256_hex};
use std::fs;
use std::io::Read;
use std::path::Path;

/// The git revision sheaf was built from (`unknown` outside a checkout).
pub const REVISION: &str = env!("SHEAF_GIT_REVISION");

/// Entries larger than this are not read (a miss); results of even large
/// designs are a few hundred kilobytes.
pub const MAX_ENTRY_BYTES: u64 = 64 << 20;

/// What a cache folder holds besides entries: it tells git to ignore the
/// whole folder, so committing a report folder never commits the cache.
pub const GITIGNORE: &str =
    "# sheaf's block cache, lock and temporary files; never commit them.\n*\n";

/// The lines every entry for `key` starts with (after its checksum line).
fn header(key: &str) -> String {
    format!(
        "sheaf-cache 1\nschema {SCHEMA_VERSION}\nsheaf {}\nrevision {REVISION}\nkey {key}\n\n",
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
pub fn seal(key: &str, result: &BlockResult) -> Option<Vec<u8>> {
    Some(seal_payload(key, &postcard::to_allocvec(result).ok()?))
}

/// An entry around already serialized bytes (the fuzz target uses it to
/// reach the decoder with arbitrary payloads).
pub fn seal_payload(key: &str, payload: &[u8]) -> Vec<u8> {
    let mut body = header(key).into_bytes();
    body.extend_from_slice(payload);
    let mut entry = format!("{}\n", sha256_hex(&body)).into_bytes();
    entry.extend_from_slice(&body);
    entry
}

/// The block result in an entry read for `key`, or `None` when anything
/// about it does not verify.
pub fn open(key: &str, entry: &[u8]) -> Option<BlockResult> {
    let newline = entry.iter().position(|&b| b == b'\n')?;
    let (checksum, body) = (&entry[..newline], &entry[newline + 1..]);
    if checksum != sha256_hex(body).as_bytes() {
        return None;
    }
    let payload = body.strip_prefix(header(key).as_bytes())?;
    postcard::from_bytes::<BlockResult>(payload).ok()
}

/// Reads the entry for `key` from the cache folder `dir`: only a regular
/// file of bounded size, never through a symbolic link (at the folder or at
/// the entry). Anything else is a miss.
pub fn read(dir: &Path, key: &str) -> Option<Vec<u8>> {
    if !is_entry_name(key) || !crate::output::is_real_dir(dir) {
        return None;
    }
    let file = crate::output::open_regular(&dir.join(key)).ok()?;
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

#[cfg(test)]
#[path = "cache_tests.rs"]
mod tests;
