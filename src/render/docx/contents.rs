//! The table of contents and the lists of tables and figures (with
//! `contents: yes`): fields the word processor fills in with page numbers
//! when told to update them, holding meanwhile the entries without page
//! numbers, so that the list reads right before any update.

use super::xml::{Props, paragraph, plain};
use crate::escape::ooxml_escape;

/// One entry: its style (`TOC1`, `TOC2`, `TableofFigures`) and text.
pub(super) type Entry = (&'static str, String);

/// A field over several paragraphs: the instruction, then the entries as
/// its result. An empty list gets one empty paragraph as its result.
fn field_paragraphs(instruction: &str, entries: &[Entry]) -> String {
    let begin = format!(
        "<w:r><w:fldChar w:fldCharType=\"begin\"/></w:r><w:r><w:instrText xml:space=\"preserve\"> {} </w:instrText></w:r><w:r><w:fldChar w:fldCharType=\"separate\"/></w:r>",
        ooxml_escape(instruction)
    );
    let end = "<w:r><w:fldChar w:fldCharType=\"end\"/></w:r>";
    let mut out = String::new();
    let last = entries.len().saturating_sub(1);
    if entries.is_empty() {
        return paragraph(&Props::default(), &format!("{begin}{end}"));
    }
    for (k, (style, text)) in entries.iter().enumerate() {
        let mut runs = String::new();
        if k == 0 {
            runs.push_str(&begin);
        }
        runs.push_str(&plain(text));
        if k == last {
            runs.push_str(end);
        }
        out.push_str(&paragraph(&Props::styled(style), &runs));
    }
    out
}

/// A heading above a list that is not itself listed in the contents.
fn list_heading(text: &str) -> String {
    paragraph(&Props::styled("TOCHeading"), &plain(text))
}

/// The contents and the lists, each under its heading.
pub(super) fn contents(headings: &[Entry], tables: &[String], figures: &[String]) -> String {
    let mut out = list_heading("Contents");
    out.push_str(&field_paragraphs("TOC \\o \"1-2\" \\h \\z \\u", headings));
    for (title, kind, captions) in [("Tables", "Table", tables), ("Figures", "Figure", figures)] {
        if captions.is_empty() {
            continue;
        }
        out.push_str(&list_heading(title));
        let entries: Vec<Entry> = captions
            .iter()
            .map(|c| ("TableofFigures", c.clone()))
            .collect();
        out.push_str(&field_paragraphs(
            &format!("TOC \\h \\z \\c \"{kind}\""),
            &entries,
        ));
    }
    out.push_str("<w:p><w:r><w:br w:type=\"page\"/></w:r></w:p>\n");
    out
}
