//! `sheaf verify`: is the report on disk exactly what its sources produce
//! now? Compares a fresh in-memory build with the files in the output folder
//! and explains any drift: changed inputs, changed numbers, changed text.

use crate::compile::Built;
use serde_json::Value;
use std::path::Path;

/// What differs between the files on disk and a fresh build.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Drift {
    /// Output files absent from the folder.
    pub missing: Vec<String>,
    /// Inputs whose hash differs from the one recorded (or new/removed ones).
    pub inputs: Vec<String>,
    /// The document itself changed.
    pub document: Option<String>,
    /// Numbers and fields of the results file that changed: `block: path: old → new`.
    pub numbers: Vec<String>,
    /// Lines of the report (or other outputs) that changed.
    pub text: Vec<String>,
}

impl Drift {
    pub fn is_clean(&self) -> bool {
        self.missing.is_empty()
            && self.inputs.is_empty()
            && self.document.is_none()
            && self.numbers.is_empty()
            && self.text.is_empty()
    }

    /// A short, readable account for the terminal.
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
        if let Some(d) = &self.document {
            section("document changed:", std::slice::from_ref(d));
        }
        section("inputs changed:", &self.inputs);
        section("numbers changed:", &self.numbers);
        section("text changed:", &self.text);
        out
    }
}

/// How many changed numbers and lines to list before summarising.
const LIST_LIMIT: usize = 20;

/// Compares a fresh build with the files in `dir`.
pub fn verify(built: &Built, dir: &Path) -> Drift {
    let mut drift = Drift::default();
    let mut outputs: Vec<(&str, &[u8])> = vec![
        (&built.report_name, &built.report),
        (&built.results_name, &built.results),
    ];
    outputs.extend(built.files.iter().map(|(n, b)| (n.as_str(), b.as_slice())));
    for (name, fresh) in &outputs {
        match std::fs::read(dir.join(name)) {
            Err(_) => drift.missing.push((*name).to_string()),
            Ok(old) if old.as_slice() == *fresh => {}
            Ok(old) => {
                if *name == built.results_name {
                    compare_results(&old, fresh, &mut drift);
                } else {
                    compare_text(name, &old, fresh, &mut drift);
                }
            }
        }
    }
    truncate(&mut drift.numbers);
    truncate(&mut drift.text);
    drift
}

fn truncate(items: &mut Vec<String>) {
    if items.len() > LIST_LIMIT {
        let more = items.len() - LIST_LIMIT;
        items.truncate(LIST_LIMIT);
        items.push(format!("… and {more} more"));
    }
}

fn compare_results(old: &[u8], fresh: &[u8], drift: &mut Drift) {
    let (Ok(old), Ok(new)) = (
        serde_json::from_slice::<Value>(old),
        serde_json::from_slice::<Value>(fresh),
    ) else {
        drift
            .text
            .push("the results file on disk is not valid JSON".into());
        return;
    };
    if old["document_sha256"] != new["document_sha256"] {
        drift.document = Some(format!(
            "{} (SHA-256 {} → {})",
            new["document"].as_str().unwrap_or("document"),
            short(&old["document_sha256"]),
            short(&new["document_sha256"])
        ));
    }
    let hashes = |v: &Value| -> Vec<(String, String)> {
        v["inputs"]
            .as_array()
            .map(|a| {
                a.iter()
                    .map(|i| {
                        (
                            i["path"].as_str().unwrap_or("").to_string(),
                            i["sha256"].as_str().unwrap_or("").to_string(),
                        )
                    })
                    .collect()
            })
            .unwrap_or_default()
    };
    let (was, now) = (hashes(&old), hashes(&new));
    for (path, hash) in &now {
        match was.iter().find(|(p, _)| p == path) {
            None => drift.inputs.push(format!("{path}: new input")),
            Some((_, h)) if h != hash => drift.inputs.push(format!(
                "{path}: SHA-256 {} → {}",
                &h[..h.len().min(12)],
                &hash[..hash.len().min(12)]
            )),
            _ => {}
        }
    }
    for (path, _) in &was {
        if !now.iter().any(|(p, _)| p == path) {
            drift.inputs.push(format!("{path}: no longer read"));
        }
    }
    let old_blocks = old["blocks"].as_array().cloned().unwrap_or_default();
    for block in new["blocks"].as_array().cloned().unwrap_or_default() {
        let id = block["id"].as_str().unwrap_or("?").to_string();
        match old_blocks.iter().find(|b| b["id"] == block["id"]) {
            None => drift.numbers.push(format!("{id}: new block")),
            Some(prev) => diff_values(&id, "", prev, &block, &mut drift.numbers),
        }
    }
    for prev in &old_blocks {
        if !new["blocks"]
            .as_array()
            .is_some_and(|a| a.iter().any(|b| b["id"] == prev["id"]))
        {
            drift.numbers.push(format!(
                "{}: block removed",
                prev["id"].as_str().unwrap_or("?")
            ));
        }
    }
}

fn short(v: &Value) -> String {
    v.as_str()
        .map_or_else(|| "?".into(), |s| s[..s.len().min(12)].to_string())
}

/// Records every leaf that differs, with its path inside the block.
fn diff_values(id: &str, path: &str, old: &Value, new: &Value, out: &mut Vec<String>) {
    match (old, new) {
        (Value::Object(a), Value::Object(b)) => {
            for (k, v) in b {
                let p = if path.is_empty() {
                    k.clone()
                } else {
                    format!("{path}.{k}")
                };
                diff_values(id, &p, a.get(k).unwrap_or(&Value::Null), v, out);
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
            drift.text.push(format!(
                "{name} line {}: was `{}`, now `{}`",
                i + 1,
                clip(x),
                clip(y)
            ));
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

fn clip(s: &str) -> String {
    let t = s.trim();
    if t.chars().count() > 70 {
        format!("{}…", t.chars().take(70).collect::<String>())
    } else {
        t.to_string()
    }
}
