//! Document stage: front matter, analysis blocks and prose expressions,
//! each with its place in the source, checked before any data is read.
//!
//! Front matter is optional: the document's first line `---`, then
//! `key: value` lines (the same grammar as analysis blocks, not YAML), then a
//! closing `---`.

pub mod block;
pub mod formula;
pub mod keyvalue;
pub mod markdown;
pub mod power;

use crate::diag::Diagnostic;
use crate::source::LineIndex;
use crate::stats::compare::Method;
use block::{
    AnovaSpec, BLOCK_KINDS, Defaults, SpecError, anova_spec, parse_alpha, parse_compare,
    parse_decimals,
};
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

/// Keys accepted in the front matter.
pub const FRONT_MATTER_KEYS: [&str; 10] = [
    "title", "author", "date", "alpha", "decimals", "compare", "figures", "dpi", "paper",
    "contents",
];

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

    fn spec_error(&self, e: SpecError) -> Diagnostic {
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

/// Parses and checks a document. `name` is used only in messages.
pub fn parse_document(name: &str, source: String) -> Result<Document, Diagnostic> {
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
    };
    let (front_entries, body_start) = split_front_matter(&doc)?;
    doc.body_start = body_start;
    doc.front = front_matter(&doc, &front_entries)?;
    let defaults = Defaults {
        compare: doc.front.compare,
    };

    let found = scan(&doc.source, body_start, |k| BLOCK_KINDS.contains(&k));
    if let Some(u) = &found.unclosed {
        return Err(unclosed_fence_error(&doc, u));
    }
    let mut blocks = Vec::new();
    for (i, fenced) in found.blocks.iter().enumerate() {
        let line = doc.lines.line(fenced.range.start);
        if fenced.nested {
            return Err(doc
                .error_at(
                    line,
                    None,
                    format!("an `{}` block inside a list or quote", fenced.kind),
                )
                .hint(
                    "move the analysis block to the top level of the document (no indentation)",
                ));
        }
        let first_line = doc.lines.line(fenced.body_start);
        let entries = parse_entries(&fenced.body, first_line).map_err(|e| doc.entry_error(e))?;
        let spec = match fenced.kind.as_str() {
            "power" => BlockSpec::Power(power_spec(&entries, line).map_err(|e| doc.spec_error(e))?),
            _ => BlockSpec::Anova(Box::new(
                anova_spec(&entries, line, defaults).map_err(|e| doc.spec_error(e))?,
            )),
        };
        let id = spec
            .id()
            .map_or_else(|| format!("block{}", i + 1), |l| l.value.clone());
        if let Some(prev) = blocks.iter().find(|b: &&Block| b.id == id) {
            let at = spec.id().map_or(line, |l| l.line);
            return Err(doc
                .error_at(at, None, format!("the id `{id}` is already used"))
                .hint(format!(
                    "the block on line {} has this id; ids must be unique in a document",
                    prev.line
                )));
        }
        blocks.push(Block {
            id,
            line,
            range: fenced.range.clone(),
            spec,
        });
    }
    let mut skip: Vec<Range<usize>> = found.code.clone();
    skip.extend(blocks.iter().map(|b| b.range.clone()));
    doc.expressions = find_expressions(&doc.source, body_start, &skip).map_err(|u| {
        let (line, col) = doc.lines.line_col(&doc.source, u.offset);
        doc.error_at(line, Some(col), "`{{` is never closed by `}}`")
            .hint("close the expression on the same paragraph, e.g. `{{ growth.p | pvalue }}`; to show braces literally, put them in `code`")
    })?;
    doc.blocks = blocks;
    Ok(doc)
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

/// Returns the front-matter entries and where the body starts.
fn split_front_matter(doc: &Document) -> Result<(Vec<Entry>, usize), Diagnostic> {
    let text = &doc.source;
    let first = text.lines().next().unwrap_or("");
    if first.trim_end() != "---" {
        return Ok((Vec::new(), 0));
    }
    let open_len = text.find('\n').map_or(text.len(), |i| i + 1);
    let mut offset = open_len;
    for line in text[open_len..].split_inclusive('\n') {
        if line.trim_end() == "---" {
            let inner = &text[open_len..offset];
            let entries = parse_entries(inner, 2).map_err(|e| doc.entry_error(e))?;
            return Ok((entries, offset + line.len()));
        }
        offset += line.len();
    }
    Err(doc
        .error_at(1, Some(1), "the front matter is never closed")
        .hint("end the front matter with a line holding only `---`"))
}

fn front_matter(doc: &Document, entries: &[Entry]) -> Result<FrontMatter, Diagnostic> {
    let mut f = FrontMatter::default();
    for e in entries {
        match e.key.as_str() {
            "title" => f.title = Some(e.value.clone()),
            "author" => f.author = Some(e.value.clone()),
            "date" => f.date = Some(e.value.clone()),
            "alpha" => f.alpha = parse_alpha(e).map_err(|x| doc.spec_error(x))?,
            "decimals" => f.decimals = Some(parse_decimals(e).map_err(|x| doc.spec_error(x))?),
            "compare" => f.compare = parse_compare(e).map_err(|x| doc.spec_error(x))?,
            "figures" => {
                f.figures = match e.value.to_ascii_lowercase().as_str() {
                    "svg" => ImageFormat::Svg,
                    "png" => ImageFormat::Png { dpi: 150 },
                    _ => {
                        return Err(doc
                            .error_at(
                                e.line,
                                Some(e.value_column),
                                format!("unknown figure format `{}`", e.value),
                            )
                            .hint("write `svg` (the default) or `png`"));
                    }
                };
            }
            "dpi" => {}
            "paper" => {
                f.paper = match e.value.to_ascii_lowercase().as_str() {
                    "a4" => Paper::A4,
                    "letter" => Paper::Letter,
                    _ => {
                        return Err(doc
                            .error_at(
                                e.line,
                                Some(e.value_column),
                                format!("unknown paper size `{}`", e.value),
                            )
                            .hint("write `a4` (the default) or `letter`"));
                    }
                };
            }
            "contents" => {
                f.contents = match e.value.to_ascii_lowercase().as_str() {
                    "yes" => true,
                    "no" => false,
                    _ => {
                        return Err(doc
                            .error_at(
                                e.line,
                                Some(e.value_column),
                                format!("`contents` takes `yes` or `no`, found `{}`", e.value),
                            )
                            .hint("`contents: yes` adds a table of contents and lists of tables and figures"));
                    }
                };
            }
            other => {
                let mut d = doc.error_at(
                    e.line,
                    Some(e.key_column),
                    format!("unknown front-matter key `{other}`"),
                );
                d = match crate::diag::nearest(other, FRONT_MATTER_KEYS) {
                    Some(k) => d.hint(format!("did you mean `{k}`?")),
                    None => d.hint(format!(
                        "the front matter takes {}",
                        FRONT_MATTER_KEYS.join(", ")
                    )),
                };
                return Err(d);
            }
        }
    }
    if let Some(e) = entries.iter().find(|e| e.key == "dpi") {
        let dpi = match e.value.trim().parse::<u32>() {
            Ok(d) if (72..=600).contains(&d) => d,
            _ => {
                return Err(doc
                    .error_at(
                        e.line,
                        Some(e.value_column),
                        format!(
                            "`dpi` must be a whole number from 72 to 600, found `{}`",
                            e.value
                        ),
                    )
                    .hint("for example `dpi: 300` for print"));
            }
        };
        match f.figures {
            ImageFormat::Png { .. } => f.figures = ImageFormat::Png { dpi },
            ImageFormat::Svg => {
                return Err(doc
                    .error_at(
                        e.line,
                        Some(e.key_column),
                        "`dpi` applies to `figures: png`",
                    )
                    .hint("add `figures: png`, or remove `dpi`"));
            }
        }
    }
    Ok(f)
}

#[cfg(test)]
mod tests;
