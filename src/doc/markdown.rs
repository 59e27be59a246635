//! Finds analysis blocks, code and inline template expressions in the
//! Markdown body, by byte range, using pulldown-cmark's offset iterator.

use pulldown_cmark::{CodeBlockKind, Event, Options, Parser, Tag, TagEnd};
use std::ops::Range;

/// Markdown extensions sheaf enables: GFM tables and strikethrough.
pub fn markdown_options() -> Options {
    Options::ENABLE_TABLES | Options::ENABLE_STRIKETHROUGH
}

/// A fenced code block whose info string names a block kind.
#[derive(Debug, Clone, PartialEq)]
pub struct FencedBlock {
    /// First word of the info string.
    pub kind: String,
    /// Byte range of the whole block, fences included, in the document.
    pub range: Range<usize>,
    /// The block's body text (between the fences).
    pub body: String,
    /// Byte offset of the body's first character in the document.
    pub body_start: usize,
    /// True when the block sits inside a list, quote or footnote.
    pub nested: bool,
}

/// What the scan found.
#[derive(Debug, Clone, Default)]
pub struct Scan {
    pub blocks: Vec<FencedBlock>,
    /// Byte ranges of every code block and code span, where template syntax
    /// is literal text.
    pub code: Vec<Range<usize>>,
}

/// Scans `text[start..]` (the body after any front matter); ranges are
/// offsets into `text`.
pub fn scan(text: &str, start: usize, is_block_kind: impl Fn(&str) -> bool) -> Scan {
    let body = &text[start..];
    let mut out = Scan::default();
    let mut depth = 0usize;
    let mut current: Option<(String, Range<usize>)> = None;
    let mut body_text = String::new();
    let mut body_start: Option<usize> = None;
    for (event, range) in Parser::new_ext(body, markdown_options()).into_offset_iter() {
        let range = (range.start + start)..(range.end + start);
        match event {
            Event::Start(
                Tag::List(_) | Tag::Item | Tag::BlockQuote(_) | Tag::FootnoteDefinition(_),
            ) => depth += 1,
            Event::End(
                TagEnd::List(_) | TagEnd::Item | TagEnd::BlockQuote(_) | TagEnd::FootnoteDefinition,
            ) => depth = depth.saturating_sub(1),
            Event::Start(Tag::CodeBlock(kind)) => {
                out.code.push(range.clone());
                if let CodeBlockKind::Fenced(info) = kind {
                    let word = info.split_whitespace().next().unwrap_or("").to_string();
                    if is_block_kind(&word) {
                        current = Some((word, range));
                        body_text.clear();
                        body_start = None;
                    }
                }
            }
            Event::Text(t) if current.is_some() => {
                body_start.get_or_insert(range.start);
                body_text.push_str(&t);
            }
            Event::End(TagEnd::CodeBlock) => {
                if let Some((kind, range)) = current.take() {
                    // An empty block has no text event: its body starts on the line after the fence.
                    let fallback = text[range.start..]
                        .find('\n')
                        .map_or(range.end, |i| range.start + i + 1);
                    out.blocks.push(FencedBlock {
                        kind,
                        range,
                        body: std::mem::take(&mut body_text),
                        body_start: body_start.unwrap_or(fallback),
                        nested: depth > 0,
                    });
                }
            }
            Event::Code(_) => out.code.push(range),
            _ => {}
        }
    }
    out
}

/// A `{{ … }}` expression in prose.
#[derive(Debug, Clone, PartialEq)]
pub struct Expression {
    /// Byte range of the whole `{{ … }}` in the document.
    pub range: Range<usize>,
    /// The text between the braces, trimmed.
    pub source: String,
}

/// An opening `{{` without its closing `}}`.
#[derive(Debug, Clone, PartialEq)]
pub struct UnclosedExpression {
    pub offset: usize,
}

/// Finds template expressions in `text[start..]`, skipping the given ranges
/// (code and analysis blocks).
pub fn find_expressions(
    text: &str,
    start: usize,
    skip: &[Range<usize>],
) -> Result<Vec<Expression>, UnclosedExpression> {
    let mut out = Vec::new();
    let mut pos = start;
    while let Some(found) = text[pos..].find("{{") {
        let open = pos + found;
        if let Some(r) = skip.iter().find(|r| r.contains(&open)) {
            pos = r.end.max(open + 2);
            continue;
        }
        // An expression ends at the first `}}`; it may not run past a blank line.
        let rest = &text[open + 2..];
        let close = rest.find("}}");
        let paragraph_end = rest.find("\n\n").unwrap_or(rest.len());
        match close {
            Some(c) if c < paragraph_end => {
                let end = open + 2 + c + 2;
                out.push(Expression {
                    range: open..end,
                    source: rest[..c].trim().to_string(),
                });
                pos = end;
            }
            _ => return Err(UnclosedExpression { offset: open }),
        }
    }
    Ok(out)
}

#[cfg(test)]
#[path = "markdown_tests.rs"]
mod tests;
