//! Document stage: front matter, analysis blocks and prose expressions,
//! each with its place in the source, checked before any data is read.
//!
//! Front matter is optional: the document's first line `---`, then
//! `key: value` lines (the same grammar as analysis blocks, not YAML), then a
//! closing `---`.

pub mod block;
mod block_checks;
pub mod block_contrasts;
pub mod block_covariance;
mod block_covariates;
mod block_display;
pub mod block_dose;
pub mod block_equivalence;
pub mod block_keys;
mod block_random;
mod block_rows;
mod block_traits;
pub mod block_transform;
pub mod block_trend;
pub mod formula;
mod front;
pub mod keytable;
pub mod keyvalue;
pub mod markdown;
pub mod power;

use crate::diag::Diagnostic;
use crate::source::LineIndex;
use crate::stats::compare::Method;
use block::{AnovaSpec, BLOCK_KINDS, Defaults, SpecError, anova_spec};
pub use front::FRONT_MATTER;
use keyvalue::{Entry, EntryError, parse_entries};
use markdown::{Expression, find_expressions, scan};
use power::{PowerSpec, power_spec};
use std::ops::Range;

/// How figures are delivered in Markdown output.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ImageFormat {
    Svg,
    Png { dpi: u32 },
}

/// Page size of the printed HTML report.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub enum Paper {
    A4,
    Letter,
}

impl Paper {
    /// The CSS `@page` size.
    pub fn css(self) -> &'static str {
        match self {
            Paper::A4 => "A4",
            Paper::Letter => "letter",
        }
    }
}

/// Document-wide settings.
#[derive(Debug, Clone, PartialEq)]
pub struct FrontMatter {
    pub title: Option<String>,
    pub author: Option<String>,
    pub date: Option<String>,
    pub alpha: f64,
    pub decimals: Option<u32>,
    pub compare: Option<Method>,
    /// How Markdown output delivers figures: SVG files, or PNG at a resolution.
    pub figures: ImageFormat,
    /// Page size when the HTML report is printed.
    pub paper: Paper,
    /// A table of contents and lists of tables and figures after the title.
    pub contents: bool,
    /// LaTeX output as a fragment for `\input` (no preamble) rather than a
    /// whole document.
    pub tex_body_only: bool,
}

impl Default for FrontMatter {
    fn default() -> Self {
        FrontMatter {
            title: None,
            author: None,
            date: None,
            alpha: 0.05,
            decimals: None,
            compare: Some(Method::Tukey),
            figures: ImageFormat::Svg,
            paper: Paper::A4,
            contents: false,
            tex_body_only: false,
        }
    }
}

/// An analysis block in the document.
#[derive(Debug, Clone, PartialEq)]
pub struct Block {
    /// The block's id: as written, or `block<N>` from its position.
    pub id: String,
    /// 1-based line of the opening fence.
    pub line: usize,
    /// Byte range of the block in the source, fences included.
    pub range: Range<usize>,
    pub spec: BlockSpec,
}

/// A checked analysis block of one of the known kinds.
#[derive(Debug, Clone, PartialEq)]
pub enum BlockSpec {
    Anova(Box<AnovaSpec>),
    Power(PowerSpec),
}

impl BlockSpec {
    /// The block's kind as written after the opening fence.
    pub fn kind(&self) -> &'static str {
        match self {
            BlockSpec::Anova(_) => "anova",
            BlockSpec::Power(_) => "power",
        }
    }

    fn id(&self) -> Option<&block::Located<String>> {
        match self {
            BlockSpec::Anova(s) => s.id.as_ref(),
            BlockSpec::Power(s) => s.id.as_ref(),
        }
    }
}

/// A parsed, checked document.
#[derive(Debug, Clone)]
pub struct Document {
    /// The name to show in messages (as the user gave it).
    pub name: String,
    pub source: String,
    pub lines: LineIndex,
    pub front: FrontMatter,
    /// Byte offset where the Markdown body starts (after the front matter).
    pub body_start: usize,
    pub blocks: Vec<Block>,
    pub expressions: Vec<Expression>,
    /// The ids of blocks left out because their keys had errors (`None`
    /// when a block's entries could not be read at all).
    pub skipped: Vec<Option<String>>,
}

impl Document {
    /// A diagnostic at a 1-based line and column of this document, with the line shown.
    pub fn error_at(
        &self,
        line: usize,
        column: Option<usize>,
        message: impl Into<String>,
    ) -> Diagnostic {
        Diagnostic::new(message)
            .at(&self.name, Some(line), column)
            .snippet(self.lines.line_text(&self.source, line))
    }

    /// Prose that quotes `head` as a block when no block has that id; `ids`
    /// are the document's block ids.
    pub fn not_a_block_id(
        &self,
        head: &str,
        ids: &[&str],
        (line, column): (usize, usize),
    ) -> Diagnostic {
        let d = self.error_at(
            line,
            Some(column),
            format!("`{head}` is not the id of an analysis block"),
        );
        match crate::diag::nearest(head, ids.iter().copied()) {
            Some(n) => d.hint(format!("did you mean `{n}`?")),
            None if ids.is_empty() => d.hint("this document has no analysis blocks to quote"),
            None => d.hint(format!(
                "the blocks in this document are {}",
                ids.join(", ")
            )),
        }
    }

    pub(crate) fn spec_error(&self, e: SpecError) -> Diagnostic {
        let mut d = self.error_at(e.line, Some(e.column), e.message);
        if let Some(h) = e.hint {
            d = d.hint(h);
        }
        d
    }

    fn entry_error(&self, e: EntryError) -> Diagnostic {
        let mut d = self.error_at(e.line, Some(e.column), e.message);
        if let Some(h) = e.hint {
            d = d.hint(h);
        }
        d
    }
}

/// Turns every lone carriage return (old Mac line ends) into a line feed,
/// leaving CRLF alone. The replacement is byte for byte, so offsets do not
/// move, and from here on every line end contains a line feed: line numbers,
/// blocks and expressions are found the same way for LF, CRLF, CR and mixed.
fn normalize_lone_cr(source: String) -> String {
    if !source.contains('\r') {
        return source;
    }
    let mut bytes = source.into_bytes();
    for i in 0..bytes.len() {
        if bytes[i] == b'\r' && bytes.get(i + 1) != Some(&b'\n') {
            bytes[i] = b'\n';
        }
    }
    // Only an ASCII byte was replaced by another, so the text is still UTF-8.
    String::from_utf8(bytes).unwrap_or_default()
}

/// Parses and checks a document. `name` is used only in messages. Every
/// problem is reported, in document order, in one diagnostic.
pub fn parse_document(name: &str, source: String) -> Result<Document, Diagnostic> {
    let (doc, errors) = read_document(name, source);
    match Diagnostic::several(errors) {
        Some(d) => Err(d),
        None => Ok(doc),
    }
}

/// Parses a document and collects every problem, in document order. A block
/// whose keys have errors is left out of `blocks` (and noted in `skipped`);
/// the other blocks are still checked.
pub fn read_document(name: &str, source: String) -> (Document, Vec<Diagnostic>) {
    let source = normalize_lone_cr(source);
    let lines = LineIndex::new(&source);
    let mut doc = Document {
        name: name.to_string(),
        source,
        lines,
        front: FrontMatter::default(),
        body_start: 0,
        blocks: Vec::new(),
        expressions: Vec::new(),
        skipped: Vec::new(),
    };
    let mut errors = Vec::new();
    let (front_entries, body_start) = match split_front_matter(&doc) {
        Ok(Section { entries, end }) => match entries {
            Ok(entries) => (entries, end),
            Err(d) => {
                errors.push(d);
                (Vec::new(), end)
            }
        },
        // Everything would be front matter: nothing else can be checked.
        Err(d) => return (doc, vec![d]),
    };
    doc.body_start = body_start;
    let (front, front_errors) = front::front_matter(&doc, &front_entries);
    doc.front = front;
    errors.extend(front_errors);

    let found = scan(&doc.source, body_start, |k| BLOCK_KINDS.contains(&k));
    if let Some(u) = &found.unclosed {
        errors.push(unclosed_fence_error(&doc, u));
    }
    let defaults = Defaults {
        compare: doc.front.compare,
    };
    for (i, fenced) in found.blocks.iter().enumerate() {
        match block_of(&doc, i, fenced, defaults) {
            Ok(block) => match duplicate_id(&doc, &block) {
                Some(d) => errors.push(d),
                None => doc.blocks.push(block),
            },
            Err((id, block_errors)) => {
                doc.skipped.push(id);
                errors.extend(block_errors);
            }
        }
    }
    let mut skip: Vec<Range<usize>> = found.code.clone();
    skip.extend(found.blocks.iter().map(|b| b.range.clone()));
    match find_expressions(&doc.source, body_start, &skip) {
        Ok(expressions) => doc.expressions = expressions,
        Err(u) => {
            let (line, col) = doc.lines.line_col(&doc.source, u.offset);
            errors.push(doc.error_at(line, Some(col), "`{{` is never closed by `}}`")
                .hint("close the expression on the same paragraph, e.g. `{{ growth.p | pvalue }}`; to show braces literally, put them in `code`"));
        }
    }
    crate::diag::in_document_order(&mut errors);
    (doc, errors)
}

/// A block left out, with its id when known, and its problems.
type Skipped = (Option<String>, Vec<Diagnostic>);

/// Reads one fenced analysis block: its entries, then its kind's keys.
fn block_of(
    doc: &Document,
    index: usize,
    fenced: &markdown::FencedBlock,
    defaults: Defaults,
) -> Result<Block, Skipped> {
    let line = doc.lines.line(fenced.range.start);
    if fenced.nested {
        let d = doc
            .error_at(
                line,
                None,
                format!("an `{}` block inside a list or quote", fenced.kind),
            )
            .hint("move the analysis block to the top level of the document (no indentation)");
        return Err((None, vec![d]));
    }
    let first_line = doc.lines.line(fenced.body_start);
    let entries =
        parse_entries(&fenced.body, first_line).map_err(|e| (None, vec![doc.entry_error(e)]))?;
    let spec = match fenced.kind.as_str() {
        "power" => power_spec(&entries, line).map(BlockSpec::Power),
        _ => anova_spec(&entries, line, defaults).map(|s| BlockSpec::Anova(Box::new(s))),
    };
    let positional = || format!("block{}", index + 1);
    let spec = spec.map_err(|errors| {
        let id = entries
            .iter()
            .find(|e| e.key == "id")
            .map_or_else(positional, |e| e.value.clone());
        let errors = errors.into_iter().map(|e| doc.spec_error(e)).collect();
        (Some(id), errors)
    })?;
    let id = spec.id().map_or_else(positional, |l| l.value.clone());
    Ok(Block {
        id,
        line,
        range: fenced.range.clone(),
        spec,
    })
}

/// An id already used by an earlier block of the document.
fn duplicate_id(doc: &Document, block: &Block) -> Option<Diagnostic> {
    let prev = doc.blocks.iter().find(|b| b.id == block.id)?;
    let at = block.spec.id().map_or(block.line, |l| l.line);
    Some(
        doc.error_at(at, None, format!("the id `{}` is already used", block.id))
            .hint(format!(
                "the block on line {} has this id; ids must be unique in a document",
                prev.line
            )),
    )
}

/// A fence whose closing line is missing: it would swallow the rest of the
/// document (prose, and any blocks after it) as code.
fn unclosed_fence_error(doc: &Document, u: &markdown::UnclosedFence) -> Diagnostic {
    let line = doc.lines.line(u.offset);
    let what = if BLOCK_KINDS.contains(&u.kind.as_str()) {
        format!("the `{}` block opened here is never closed", u.kind)
    } else {
        "the code fence opened here is never closed".to_string()
    };
    let fence = doc.lines.line_text(&doc.source, line).trim_start();
    let marks: String = fence
        .chars()
        .take_while(|c| *c == '`' || *c == '~')
        .collect();
    doc.error_at(line, Some(1), what).hint(format!(
        "end the block with a line holding only {marks}; without it everything after line {line} is read as part of the block"
    ))
}

/// The front matter's entries (or the problem reading them) and the offset
/// where the body starts.
struct Section {
    entries: Result<Vec<Entry>, Diagnostic>,
    end: usize,
}

/// Finds the front matter; an error only when it is never closed.
fn split_front_matter(doc: &Document) -> Result<Section, Diagnostic> {
    let text = &doc.source;
    let first = text.lines().next().unwrap_or("");
    if first.trim_end() != "---" {
        return Ok(Section {
            entries: Ok(Vec::new()),
            end: 0,
        });
    }
    let open_len = text.find('\n').map_or(text.len(), |i| i + 1);
    let mut offset = open_len;
    for line in text[open_len..].split_inclusive('\n') {
        if line.trim_end() == "---" {
            let inner = &text[open_len..offset];
            return Ok(Section {
                entries: parse_entries(inner, 2).map_err(|e| doc.entry_error(e)),
                end: offset + line.len(),
            });
        }
        offset += line.len();
    }
    Err(doc
        .error_at(1, Some(1), "the front matter is never closed")
        .hint("end the front matter with a line holding only `---`"))
}

#[cfg(test)]
mod tests;
