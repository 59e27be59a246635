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

/// A fenced code block that runs to the end of the document because its
/// closing fence is missing.
#[derive(Debug, Clone, PartialEq)]
pub struct UnclosedFence {
    /// Byte offset of the opening fence.
    pub offset: usize,
    /// The opening fence's first info word (empty for a bare fence).
    pub kind: String,
}

/// What the scan found.
#[derive(Debug, Clone, Default)]
pub struct Scan {
    pub blocks: Vec<FencedBlock>,
    /// Byte ranges of every code block and code span, where template syntax
    /// is literal text, in document order.
    pub code: Vec<Range<usize>>,
    /// The first fenced code block whose closing fence is missing, if any.
    pub unclosed: Option<UnclosedFence>,
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
                    if out.unclosed.is_none() && !fence_is_closed(text, &range) {
                        out.unclosed = Some(UnclosedFence {
                            offset: range.start,
                            kind: word.clone(),
                        });
                    }
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

/// Whether a fenced code block (its byte range, fences included) ends with a
/// closing fence. Without one the block silently swallows the rest of the
/// document, or of the list or quote holding it, when that ends the document.
fn fence_is_closed(text: &str, range: &Range<usize>) -> bool {
    let block = &text[range.clone()];
    let strip = |line: &str| {
        line.trim_start_matches(|c: char| c == '>' || c.is_whitespace())
            .to_string()
    };
    let opening = strip(block.lines().next().unwrap_or(""));
    let Some(fence_char) = opening.chars().next().filter(|c| *c == '`' || *c == '~') else {
        return true;
    };
    let fence_len = opening.chars().take_while(|c| *c == fence_char).count();
    let last = block.lines().skip(1).last().map(strip);
    let closes = last.is_some_and(|l| {
        let run = l.chars().take_while(|c| *c == fence_char).count();
        run >= fence_len && l[run..].trim().is_empty()
    });
    // A block ended early by its container (a list item that stops) is closed.
    closes || !text[range.end..].trim().is_empty()
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
    // `skip` is searched with a cursor that only moves forward, and the end
    // of the current paragraph is found once per paragraph, so the scan is
    // linear in the text however many expressions a paragraph holds.
    let mut skip: Vec<&Range<usize>> = skip.iter().collect();
    skip.sort_by_key(|r| r.start);
    let mut next_skip = 0;
    let mut paragraph_end = start;
    let mut out = Vec::new();
    let mut pos = start;
    while let Some(found) = text[pos..].find("{{") {
        let open = pos + found;
        while next_skip < skip.len() && skip[next_skip].end <= open {
            next_skip += 1;
        }
        if let Some(r) = skip[next_skip..]
            .iter()
            .take_while(|r| r.start <= open)
            .find(|r| r.contains(&open))
        {
            pos = r.end.max(open + 2);
            continue;
        }
        // An expression ends at the first `}}`; it may not run past a blank line.
        if paragraph_end < open + 2 {
            paragraph_end = text[open + 2..]
                .find("\n\n")
                .map_or(text.len(), |i| open + 2 + i);
        }
        let close = text[open + 2..paragraph_end].find("}}");
        match close {
            Some(c) => {
                let end = open + 2 + c + 2;
                out.push(Expression {
                    range: open..end,
                    source: text[open + 2..open + 2 + c].trim().to_string(),
                });
                pos = end;
            }
            None => return Err(UnclosedExpression { offset: open }),
        }
    }
    Ok(out)
}

#[cfg(test)]
#[path = "markdown_tests.rs"]
mod tests;
