//! The plan stage, between the document and the data: the document read
//! with every block's keys and the front-matter defaults resolved, then every
//! check that needs no data contents (prose that names no block, `date:
//! today` without a clock, data files that cannot be opened), for all blocks,
//! before any data are read. A document's errors are reported together, in
//! document order; the build stops here when there are any.

use crate::diag::{Diagnostic, in_document_order};
use crate::doc::{BlockSpec, Document, read_document};
use crate::world::World;

/// Reads and checks a document. `doc_display` names it in messages.
pub fn plan(
    doc_display: &str,
    doc_bytes: &[u8],
    world: &dyn World,
) -> Result<Document, Diagnostic> {
    let source = decode(doc_display, doc_bytes)?;
    let (mut doc, mut errors) = read_document(doc_display, source);
    errors.extend(unknown_block_ids(&doc));
    errors.extend(unopenable_data(&doc, world));
    in_document_order(&mut errors);
    if let Err(d) = resolve_today(&mut doc, world) {
        errors.push(d);
    }
    match Diagnostic::several(errors) {
        Some(d) => Err(d),
        None => Ok(doc),
    }
}

/// The document's text: UTF-8, without a byte-order mark.
fn decode(doc_display: &str, doc_bytes: &[u8]) -> Result<String, Diagnostic> {
    let source = String::from_utf8(doc_bytes.to_vec()).map_err(|e| {
        // Line ends as the document stage counts them: LF, CRLF or a lone CR.
        let before = &doc_bytes[..e.utf8_error().valid_up_to()];
        let line = 1 + before
            .iter()
            .enumerate()
            .filter(|&(i, b)| *b == b'\n' || (*b == b'\r' && doc_bytes.get(i + 1) != Some(&b'\n')))
            .count();
        Diagnostic::new("the document is not valid UTF-8")
            .at(doc_display, Some(line), None)
            .hint("save the document as UTF-8")
    })?;
    // A byte-order mark is not part of the text (editors on some systems add one).
    Ok(source
        .strip_prefix('\u{feff}')
        .map(str::to_string)
        .unwrap_or(source))
}

/// `date: today` becomes the world's date.
fn resolve_today(doc: &mut Document, world: &dyn World) -> Result<(), Diagnostic> {
    let today = doc
        .front
        .date
        .as_deref()
        .is_some_and(|d| d.eq_ignore_ascii_case("today"));
    if today {
        doc.front.date = Some(world.today().ok_or_else(|| {
            Diagnostic::new("`date: today` needs a clock, and none is available here")
                .hint("write the date itself, or set SOURCE_DATE_EPOCH")
        })?);
    }
    Ok(())
}

/// Prose that quotes a block that is not in the document (`{{ grwth.f }}`):
/// an expression whose first name is followed by `.` or `[` names a block.
/// Left to the rendering stage when a block could not be read at all, since
/// its id is then unknown.
fn unknown_block_ids(doc: &Document) -> Vec<Diagnostic> {
    if doc.skipped.iter().any(Option::is_none) {
        return Vec::new();
    }
    let ids: Vec<&str> = doc
        .blocks
        .iter()
        .map(|b| b.id.as_str())
        .chain(doc.skipped.iter().flatten().map(String::as_str))
        .collect();
    let mut errors = Vec::new();
    for e in &doc.expressions {
        let head: String = e
            .source
            .chars()
            .take_while(|c| c.is_ascii_alphanumeric() || *c == '_')
            .collect();
        let names_a_block = e.source[head.len()..].trim_start().starts_with(['.', '[']);
        // A number (`455.125`) is not a name.
        let is_name = head.starts_with(|c: char| c.is_ascii_alphabetic() || c == '_');
        if !is_name || !names_a_block || ids.contains(&head.as_str()) {
            continue;
        }
        let at = doc.lines.line_col(&doc.source, e.range.start);
        errors.push(doc.not_a_block_id(&head, &ids, at));
    }
    errors
}

/// Every data file that cannot be opened, once per file, at the first block
/// that names it. Opening reads nothing.
fn unopenable_data(doc: &Document, world: &dyn World) -> Vec<Diagnostic> {
    let mut seen: Vec<&str> = Vec::new();
    let mut errors = Vec::new();
    for block in &doc.blocks {
        let BlockSpec::Anova(spec) = &block.spec else {
            continue;
        };
        let data = &spec.data;
        if seen.contains(&data.value.as_str()) {
            continue;
        }
        seen.push(&data.value);
        if let Err(e) = world.probe(&data.value) {
            errors.push(unreadable(
                doc,
                world,
                e,
                &data.value,
                (data.line, data.column),
            ));
        }
    }
    errors
}

/// A data file that cannot be opened or read, at the `data` line naming it.
pub fn unreadable(
    doc: &Document,
    world: &dyn World,
    e: std::io::Error,
    path: &str,
    (line, column): (usize, usize),
) -> Diagnostic {
    let reason = match e.kind() {
        std::io::ErrorKind::NotFound => "no such file".to_string(),
        _ => e.to_string(),
    };
    doc.error_at(
        line,
        Some(column),
        format!("cannot read data file `{path}`: {reason}"),
    )
    .hint(format!(
        "paths are relative to the document's folder; looked for {}",
        world.display(path)
    ))
}

#[cfg(test)]
#[path = "plan_tests.rs"]
mod tests;
