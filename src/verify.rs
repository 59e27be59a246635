//! `sheaf verify`: is the report on disk exactly what its sources produce
//! now? Compares a fresh in-memory build with the files in the output folder
//! byte for byte, and explains any difference: outputs edited after sheaf
//! wrote them (their manifest says so), changed inputs, changed numbers,
//! changed fields, changed text.

use crate::compile::{Built, CACHE_DIR};
use crate::diag::Diagnostic;
use crate::output::{FolderLock, STAGING_PREFIX, manifest_name, open_own, outputs};
use crate::provenance::sha256_hex;
use crate::render::{FORMATS, Format};
use serde_json::Value;
use std::collections::BTreeMap;
use std::io::Read;
use std::path::Path;

/// What differs between the files on disk and a fresh build.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Drift {
    /// Output files absent from the folder.
    pub missing: Vec<String>,
    /// Outputs that do not match the manifest written with them: edited
    /// after sheaf wrote them, or left by an interrupted build.
    pub edited: Vec<String>,
    /// Inputs whose hash or size differs from the one recorded (or new/removed ones).
    pub inputs: Vec<String>,
    /// The document itself changed.
    pub document: Option<String>,
    /// Fields of the results file outside the blocks (sheaf version, schema,
    /// document name, format, layout) that differ.
    pub fields: Vec<String>,
    /// Numbers and fields of the blocks that changed: `block: path: old → new`.
    pub numbers: Vec<String>,
    /// Lines of the report (or other outputs) that changed.
    pub text: Vec<String>,
    /// Files in the folder this build does not write; worth a line, but not
    /// a drift (several documents may share a folder).
    pub unexpected: Vec<String>,
}

impl Drift {
    pub fn is_clean(&self) -> bool {
        self.missing.is_empty()
            && self.edited.is_empty()
            && self.inputs.is_empty()
            && self.document.is_none()
            && self.fields.is_empty()
            && self.numbers.is_empty()
            && self.text.is_empty()
    }

    /// A short, readable account for the terminal (notes included).
    pub fn account(&self) -> String {
        let mut out = String::new();
        let mut section = |title: &str, items: &[String]| {
            if !items.is_empty() {
                out.push_str(title);
                out.push('\n');
                for i in items {
                    out.push_str("  ");
                    out.push_str(i);
                    out.push('\n');
                }
            }
        };
        section("missing outputs:", &self.missing);
        section("edited after sheaf wrote them:", &self.edited);
        if let Some(d) = &self.document {
            section("document changed:", std::slice::from_ref(d));
        }
        section("inputs changed:", &self.inputs);
        section("results file fields changed:", &self.fields);
        section("numbers changed:", &self.numbers);
        section("text changed:", &self.text);
        section(
            "note: other files in the folder (not written by this build):",
            &self.unexpected,
        );
        out
    }
}

/// How many changed numbers and lines to list before summarising.
const LIST_LIMIT: usize = 20;

/// The format the report in `out` was built in, as its results file
/// records it (or, for results files without the field, the report present).
pub fn format_on_disk(document: &Path, out: &Path) -> Option<Format> {
    #[derive(serde::Deserialize)]
    struct Head {
        format: Option<String>,
    }
    let (_, stem) = crate::compile::names_of(document);
    let recorded = open_own(&out.join(format!("{stem}.results.json")))
        .ok()
        .and_then(|f| serde_json::from_reader::<_, Head>(std::io::BufReader::new(f)).ok())
        .and_then(|h| h.format);
    recorded.as_deref().and_then(Format::named).or_else(|| {
        FORMATS
            .iter()
            .copied()
            .find(|f| out.join(format!("{stem}.{}", f.extension())).is_file())
    })
}

/// A path as a shell word: quoted when it holds anything but plain characters.
fn shell_word(text: &str) -> String {
    let plain = |c: char| c.is_ascii_alphanumeric() || "/._-+,:@%=".contains(c);
    if !text.is_empty() && text.chars().all(plain) {
        text.to_string()
    } else {
        format!("'{}'", text.replace('\'', "'\\''"))
    }
}

/// The command that rebuilds what `verify` checked, as it was asked.
pub fn rebuild_command(document: &Path, out: &Path, format: Format, confine: bool) -> String {
    let mut command = format!(
        "sheaf build {} -o {}",
        shell_word(&document.display().to_string()),
        shell_word(&out.display().to_string())
    );
    if format != FORMATS[0] {
        command.push_str(&format!(" --to {}", format.name()));
    }
    if confine {
        command.push_str(" --confine");
    }
    command
}

/// An output read from disk: its bytes, or why it cannot be used.
enum OnDisk {
    Missing,
    NotAFile(String),
    Bytes(Vec<u8>),
}

fn read_output(path: &Path) -> OnDisk {
    match open_own(path) {
        Ok(mut f) => {
            let mut bytes = Vec::new();
            match f.read_to_end(&mut bytes) {
                Ok(_) => OnDisk::Bytes(bytes),
                Err(e) => OnDisk::NotAFile(e.to_string()),
            }
        }
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => OnDisk::Missing,
        Err(e) => OnDisk::NotAFile(e.to_string()),
    }
}

/// The name → SHA-256 lines of a manifest (`sha256sum` format).
fn parse_manifest(bytes: &[u8]) -> BTreeMap<String, String> {
    String::from_utf8_lossy(bytes)
        .lines()
        .filter_map(|line| {
            let (escaped, line) = match line.strip_prefix('\\') {
                Some(rest) => (true, rest),
                None => (false, line),
            };
            let (hash, name) = line.split_once("  ")?;
            let name = if escaped {
                name.replace("\\n", "\n").replace("\\\\", "\\")
            } else {
                name.to_string()
            };
            Some((name, hash.to_string()))
        })
        .collect()
}

/// Compares a fresh build with the files in `dir`, holding the folder's
/// reader lock so that a concurrent build's commit is never seen half done.
pub fn verify(built: &Built, dir: &Path) -> Result<Drift, Diagnostic> {
    if let Some(root) = &built.confined_to {
        crate::output::check_confined(dir, root)?;
    }
    let _lock = FolderLock::shared(&dir.join(CACHE_DIR));
    let fresh = outputs(built);
    let manifest = manifest_name(built);
    let mut drift = Drift::default();
    let mut disk: Vec<(&str, &[u8], Vec<u8>)> = Vec::new();
    for (name, bytes) in &fresh {
        match read_output(&dir.join(name)) {
            OnDisk::Missing => drift.missing.push(name.clone()),
            OnDisk::NotAFile(why) => drift.edited.push(format!(
                "{name}: cannot be read as a file sheaf wrote ({why})"
            )),
            OnDisk::Bytes(old) => disk.push((name, bytes, old)),
        }
    }
    let recorded = disk
        .iter()
        .find(|(n, _, _)| *n == manifest)
        .map(|(_, _, old)| parse_manifest(old))
        .unwrap_or_default();
    let mut results_edited = false;
    for (name, _, old) in &disk {
        if let Some(hash) = recorded.get(*name)
            && *hash != sha256_hex(old)
        {
            drift.edited.push(format!(
                "{name}: its SHA-256 is not the one {manifest} records (edited by hand, or left by an interrupted build)"
            ));
            results_edited |= *name == built.results_name;
        }
    }
    let mut explained = false;
    for (name, fresh, old) in &disk {
        if old.as_slice() == *fresh || *name == manifest {
            continue;
        }
        explained = true;
        if *name == built.results_name {
            compare_results(old, fresh, results_edited, &mut drift);
        } else if *name == built.report_name {
            compare_report(name, old, fresh, &mut drift);
        } else {
            compare_text(name, old, fresh, &mut drift);
        }
    }
    if let Some((_, fresh, old)) = disk.iter().find(|(n, _, _)| *n == manifest)
        && old.as_slice() != *fresh
        && !explained
    {
        drift
            .text
            .push(format!("{manifest} differs from a fresh build's"));
    }
    truncate(&mut drift.fields);
    truncate(&mut drift.numbers);
    truncate(&mut drift.text);
    drift.unexpected = unexpected_files(built, dir, &fresh);
    Ok(drift)
}

/// Files in `dir` that this build does not write and did not read, and
/// staging folders an interrupted build left in sheaf's own folder.
fn unexpected_files(built: &Built, dir: &Path, fresh: &[(String, Vec<u8>)]) -> Vec<String> {
    let mut found = Vec::new();
    for item in std::fs::read_dir(dir).into_iter().flatten().flatten() {
        let name = item.file_name().to_string_lossy().into_owned();
        let ours = name == CACHE_DIR || fresh.iter().any(|(n, _)| *n == name);
        let read = built
            .sources
            .iter()
            .any(|s| same_file::is_same_file(item.path(), s).unwrap_or(false));
        if !ours && !read {
            found.push(name);
        }
    }
    for item in std::fs::read_dir(dir.join(CACHE_DIR))
        .into_iter()
        .flatten()
        .flatten()
    {
        let name = item.file_name().to_string_lossy().into_owned();
        if name.starts_with(STAGING_PREFIX) {
            found.push(format!(
                "{CACHE_DIR}/{name} (left by an interrupted build; the next build removes it)"
            ));
        }
    }
    found.sort();
    truncate(&mut found);
    found
}

fn truncate(items: &mut Vec<String>) {
    if items.len() > LIST_LIMIT {
        let more = items.len() - LIST_LIMIT;
        items.truncate(LIST_LIMIT);
        items.push(format!("… and {more} more"));
    }
}

/// path → (sha256, bytes) of a results file's inputs.
fn inputs_of(v: &Value) -> BTreeMap<String, (Value, Value)> {
    v["inputs"]
        .as_array()
        .map(|a| {
            a.iter()
                .map(|i| {
                    (
                        i["path"].as_str().unwrap_or("").to_string(),
                        (i["sha256"].clone(), i["bytes"].clone()),
                    )
                })
                .collect()
        })
        .unwrap_or_default()
}

/// Inputs added, removed, or with another hash or size. When the results
/// file was edited, a differing record says so rather than blaming the input.
fn compare_inputs(old: &Value, new: &Value, edited: bool, drift: &mut Drift) {
    let (was, now) = (inputs_of(old), inputs_of(new));
    let mut lines = Vec::new();
    for (path, (hash, bytes)) in &now {
        match was.get(path) {
            None => lines.push(format!("{path}: new input")),
            Some((h, _)) if h != hash => {
                lines.push(format!("{path}: SHA-256 {} → {}", short(h), short(hash)))
            }
            Some((_, b)) if b != bytes => lines.push(format!(
                "{path}: size {} → {} bytes",
                compact(b),
                compact(bytes)
            )),
            _ => {}
        }
    }
    for path in was.keys().filter(|p| !now.contains_key(*p)) {
        lines.push(format!("{path}: no longer read"));
    }
    if edited {
        drift.fields.extend(
            lines
                .into_iter()
                .map(|l| format!("inputs: {l} (as recorded in the edited file)")),
        );
    } else {
        drift.inputs.extend(lines);
    }
}

fn compare_results(old: &[u8], fresh: &[u8], edited: bool, drift: &mut Drift) {
    let (Ok(old), Ok(new)) = (
        serde_json::from_slice::<Value>(old),
        serde_json::from_slice::<Value>(fresh),
    ) else {
        drift
            .fields
            .push("the results file on disk is not valid JSON".into());
        return;
    };
    let before = (drift.fields.len(), drift.inputs.len(), drift.numbers.len());
    if old["document_sha256"] != new["document_sha256"] && !edited {
        drift.document = Some(format!(
            "{} (SHA-256 {} → {})",
            new["document"].as_str().unwrap_or("document"),
            short(&old["document_sha256"]),
            short(&new["document_sha256"])
        ));
    }
    let top = |v: &Value| -> Value {
        let mut v = v.clone();
        if let Some(map) = v.as_object_mut() {
            map.remove("blocks");
            map.remove("inputs");
            if !edited {
                map.remove("document_sha256");
            }
        }
        v
    };
    diff_values("file", "", &top(&old), &top(&new), &mut drift.fields);
    compare_inputs(&old, &new, edited, drift);
    let old_blocks = old["blocks"].as_array().cloned().unwrap_or_default();
    let new_blocks = new["blocks"].as_array().cloned().unwrap_or_default();
    for block in &new_blocks {
        let id = block["id"].as_str().unwrap_or("?").to_string();
        match old_blocks.iter().find(|b| b["id"] == block["id"]) {
            None => drift.numbers.push(format!("{id}: new block")),
            Some(prev) => diff_values(&id, "", prev, block, &mut drift.numbers),
        }
    }
    for prev in &old_blocks {
        if !new_blocks.iter().any(|b| b["id"] == prev["id"]) {
            drift.numbers.push(format!(
                "{}: block removed",
                prev["id"].as_str().unwrap_or("?")
            ));
        }
    }
    let after = (drift.fields.len(), drift.inputs.len(), drift.numbers.len());
    if before == after && drift.document.is_none() {
        drift.fields.push(
            "the file differs from a fresh build's in layout only (spacing, order or escapes), not in any value"
                .into(),
        );
    }
}

fn short(v: &Value) -> String {
    v.as_str()
        .map_or_else(|| compact(v), |s| s.chars().take(12).collect())
}

/// Records every leaf that differs, with its path inside the block; a field
/// present on one side only is a difference too.
fn diff_values(id: &str, path: &str, old: &Value, new: &Value, out: &mut Vec<String>) {
    let join = |k: &str| {
        if path.is_empty() {
            k.to_string()
        } else {
            format!("{path}.{k}")
        }
    };
    match (old, new) {
        (Value::Object(a), Value::Object(b)) => {
            for (k, v) in b {
                match a.get(k) {
                    Some(w) => diff_values(id, &join(k), w, v, out),
                    None => out.push(format!("{id}: {}: absent → {}", join(k), compact(v))),
                }
            }
            for (k, w) in a.iter().filter(|(k, _)| !b.contains_key(*k)) {
                out.push(format!("{id}: {}: {} → absent", join(k), compact(w)));
            }
        }
        (Value::Array(a), Value::Array(b)) if a.len() == b.len() => {
            for (i, (x, y)) in a.iter().zip(b).enumerate() {
                diff_values(id, &format!("{path}[{i}]"), x, y, out);
            }
        }
        _ if old != new => out.push(format!("{id}: {path}: {} → {}", compact(old), compact(new))),
        _ => {}
    }
}

fn compact(v: &Value) -> String {
    let s = v.to_string();
    if s.chars().count() > 60 {
        format!("{}…", s.chars().take(60).collect::<String>())
    } else {
        s
    }
}

/// The report's format, known by its extension.
fn format_of(report_name: &str) -> Option<Format> {
    FORMATS
        .iter()
        .copied()
        .find(|f| report_name.ends_with(&format!(".{}", f.extension())))
}

/// Compares a report part by part as its format reads it: a text report is
/// one part, a docx the entries of its archive, each compared as text.
fn compare_report(name: &str, old: &[u8], fresh: &[u8], drift: &mut Drift) {
    let Some(writer) = format_of(name).map(Format::writer) else {
        return compare_text(name, old, fresh, drift);
    };
    let (was, now) = match (writer.parts(old), writer.parts(fresh)) {
        (Ok(was), Ok(now)) => (was, now),
        (Err(why), _) | (_, Err(why)) => {
            drift.text.push(format!("{name}: {why}"));
            return;
        }
    };
    let before = drift.text.len();
    for (part, bytes) in &now {
        let label = if part.is_empty() {
            name.to_string()
        } else {
            format!("{name}: {part}")
        };
        match was.iter().find(|(p, _)| p == part) {
            None => drift
                .text
                .push(format!("{label}: absent from the file on disk")),
            Some((_, old)) if old != bytes => {
                if std::str::from_utf8(bytes).is_ok() {
                    compare_text(&label, old, bytes, drift);
                } else {
                    drift.text.push(format!("{label} differs"));
                }
            }
            Some(_) => {}
        }
    }
    for (part, _) in was.iter().filter(|(p, _)| !now.iter().any(|(q, _)| q == p)) {
        drift
            .text
            .push(format!("{name}: {part}: not written by a fresh build"));
    }
    if drift.text.len() == before {
        drift.text.push(format!(
            "{name} holds the same parts as a fresh build's, packed differently"
        ));
    }
}

fn compare_text(name: &str, old: &[u8], fresh: &[u8], drift: &mut Drift) {
    let (old, new) = (String::from_utf8_lossy(old), String::from_utf8_lossy(fresh));
    let (a, b): (Vec<&str>, Vec<&str>) = (old.lines().collect(), new.lines().collect());
    let mut shown = 0;
    for i in 0..a.len().max(b.len()) {
        let (x, y) = (
            a.get(i).copied().unwrap_or(""),
            b.get(i).copied().unwrap_or(""),
        );
        if x != y {
            let (was, now) = excerpts(x, y);
            drift
                .text
                .push(format!("{name} line {}: was `{was}`, now `{now}`", i + 1));
            shown += 1;
            if shown == 3 {
                drift.text.push(format!("{name}: further lines differ"));
                break;
            }
        }
    }
    if shown == 0 {
        drift
            .text
            .push(format!("{name} differs (line endings or bytes)"));
    }
}

/// Characters shown of a changed line, and how many of them come before the
/// first difference.
const EXCERPT: usize = 70;
const BEFORE_CHANGE: usize = 30;

/// Excerpts of two differing lines, cut at the same place so that the first
/// differing character is in view in both (about 30 characters in).
pub fn excerpts(was: &str, now: &str) -> (String, String) {
    let (a, b): (Vec<char>, Vec<char>) = (was.chars().collect(), now.chars().collect());
    let first = a.iter().zip(&b).take_while(|(x, y)| x == y).count();
    let start = first.saturating_sub(BEFORE_CHANGE);
    let cut = |line: &[char]| {
        let end = line.len().min(start + EXCERPT);
        let mut s = String::new();
        if start > 0 {
            s.push('…');
        }
        s.extend(line.get(start..end).unwrap_or(&[]));
        if end < line.len() {
            s.push('…');
        }
        s
    };
    (cut(&a), cut(&b))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn excerpts_show_the_first_difference() {
        let prefix = "x".repeat(200);
        let (was, now) = excerpts(&format!("{prefix}A tail"), &format!("{prefix}B tail"));
        assert!(
            was.contains("A tail") && now.contains("B tail"),
            "{was} / {now}"
        );
        assert!(was.starts_with('…') && now.starts_with('…'));
        let (was, now) = excerpts("short a", "short b");
        assert_eq!((was.as_str(), now.as_str()), ("short a", "short b"));
        // A change only in spacing stays visible (nothing is trimmed).
        let (was, now) = excerpts("a  b", "a b");
        assert_ne!(was, now);
    }

    #[test]
    fn manifests_read_back_what_sha256sum_writes() {
        let m = parse_manifest(b"abc  report.html\n\\def  a\\nb\\\\c\n");
        assert_eq!(m.get("report.html").map(String::as_str), Some("abc"));
        assert_eq!(m.get("a\nb\\c").map(String::as_str), Some("def"));
    }

    #[test]
    fn rebuild_commands_say_the_format_and_quote_paths() {
        let c = rebuild_command(
            Path::new("my study/report.md"),
            Path::new("out"),
            Format::Markdown,
            true,
        );
        assert_eq!(
            c,
            "sheaf build 'my study/report.md' -o out --to md --confine"
        );
    }
}
