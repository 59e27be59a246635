//! The `key: value` grammar shared by analysis blocks and the front matter.
//!
//! One entry per line; blank lines are ignored; `#` at the start of a line or
//! after whitespace starts a comment; a value may be written in double quotes
//! to keep a `#` or surrounding spaces.

use crate::diag::Diagnostic;

/// One `key: value` line, with the document line it came from.
#[derive(Debug, Clone, PartialEq)]
pub struct Entry {
    pub key: String,
    pub value: String,
    /// 1-based document line.
    pub line: usize,
    /// 1-based column where the key starts.
    pub key_column: usize,
    /// 1-based column where the value starts.
    pub value_column: usize,
}

/// A parse problem with its document line and column.
#[derive(Debug, Clone, PartialEq)]
pub struct EntryError {
    pub line: usize,
    pub column: usize,
    pub message: String,
    pub hint: Option<String>,
}

/// Keys written once per item, one line each (a block's planned
/// contrasts); every other key may appear once.
pub const REPEATABLE: [&str; 1] = ["contrast"];

/// Parses `text`, whose first line is document line `first_line`.
pub fn parse_entries(text: &str, first_line: usize) -> Result<Vec<Entry>, EntryError> {
    let mut entries: Vec<Entry> = Vec::new();
    for (i, raw) in text.lines().enumerate() {
        let line = first_line + i;
        let content = strip_comment(raw);
        if content.trim().is_empty() {
            continue;
        }
        let Some((key_part, value_part)) = content.split_once(':') else {
            return Err(EntryError {
                line,
                column: 1 + raw.len() - raw.trim_start().len(),
                message: format!("expected `key: value`, found `{}`", content.trim()),
                hint: Some("write one setting per line, as `key: value`".into()),
            });
        };
        let key = key_part.trim();
        let key_column = 1 + key_part.len() - key_part.trim_start().len();
        if key.is_empty()
            || !key
                .chars()
                .all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-')
        {
            return Err(EntryError {
                line,
                column: key_column,
                message: format!("`{key}` is not a valid key"),
                hint: Some("keys are single words such as `data` or `model`".into()),
            });
        }
        let lead = value_part.len() - value_part.trim_start().len();
        let value_column = key_part.chars().count() + 2 + value_part[..lead].chars().count();
        let mut value = value_part.trim().to_string();
        if value.len() >= 2 && value.starts_with('"') && value.ends_with('"') {
            value = value[1..value.len() - 1].replace("\\\"", "\"");
        }
        if let Some(first) = entries
            .iter()
            .find(|e| e.key == key && !REPEATABLE.contains(&key))
        {
            return Err(EntryError {
                line,
                column: key_column,
                message: format!("`{key}` is given twice"),
                hint: Some(format!(
                    "the first `{key}` is on line {}; keep one",
                    first.line
                )),
            });
        }
        entries.push(Entry {
            key: key.to_string(),
            value,
            line,
            key_column,
            value_column,
        });
    }
    Ok(entries)
}

/// The line without its comment: `#` at the start or after whitespace, unless
/// inside double quotes.
fn strip_comment(line: &str) -> &str {
    let mut in_quotes = false;
    let mut prev_space = true;
    for (i, c) in line.char_indices() {
        match c {
            '"' => in_quotes = !in_quotes,
            '#' if !in_quotes && prev_space => return &line[..i],
            _ => {}
        }
        prev_space = c.is_whitespace();
    }
    line
}

/// Turns an entry problem into a diagnostic in `file`, showing the line.
pub fn entry_diagnostic(file: &str, source_line: &str, e: EntryError) -> Diagnostic {
    let mut d = Diagnostic::new(e.message)
        .at(file, Some(e.line), Some(e.column))
        .snippet(source_line);
    if let Some(h) = e.hint {
        d = d.hint(h);
    }
    d
}

#[cfg(test)]
#[path = "keyvalue_tests.rs"]
mod tests;
