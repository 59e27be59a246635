//! The pieces of WordprocessingML every part of the body is made of: runs
//! (text with its emphasis), paragraphs with their properties, and fields.
//! Every string goes through `crate::escape::ooxml_escape` here.

use crate::escape::ooxml_escape;

/// The code style, with its face repeated on the run: a word processor
/// that applies a table style as direct formatting would otherwise set
/// code in a table in the table's face.
const CODE_STYLE: &str = r#"<w:rStyle w:val="CodeChar"/><w:rFonts w:ascii="Consolas" w:hAnsi="Consolas" w:cs="Consolas"/>"#;

/// Character formatting of a run: direct emphasis, or a character style.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub(super) struct Emphasis {
    pub(super) bold: bool,
    pub(super) italic: bool,
    pub(super) strike: bool,
    /// Inline code: the `CodeChar` character style.
    pub(super) code: bool,
    /// Inside a hyperlink: the built-in `Hyperlink` character style.
    pub(super) link: bool,
}

/// A run of text with its formatting. A tab becomes `<w:tab/>` and a line
/// break `<w:br/>`; the text keeps its spaces.
pub(super) fn run(text: &str, emphasis: Emphasis) -> String {
    if text.is_empty() {
        return String::new();
    }
    let mut props = String::new();
    if emphasis.code {
        props.push_str(CODE_STYLE);
    } else if emphasis.link {
        props.push_str(r#"<w:rStyle w:val="Hyperlink"/>"#);
    }
    if emphasis.bold {
        props.push_str("<w:b/>");
    }
    if emphasis.italic {
        props.push_str("<w:i/>");
    }
    if emphasis.strike {
        props.push_str("<w:strike/>");
    }
    let mut out = String::from("<w:r>");
    if !props.is_empty() {
        out.push_str(&format!("<w:rPr>{props}</w:rPr>"));
    }
    for (i, line) in text.split('\n').enumerate() {
        if i > 0 {
            out.push_str("<w:br/>");
        }
        for (k, piece) in line.split('\t').enumerate() {
            if k > 0 {
                out.push_str("<w:tab/>");
            }
            if !piece.is_empty() {
                out.push_str(&format!(
                    r#"<w:t xml:space="preserve">{}</w:t>"#,
                    ooxml_escape(piece)
                ));
            }
        }
    }
    out.push_str("</w:r>");
    out
}

/// Code in the `CodeChar` style at `size` half-points, as one run.
pub(super) fn code_run(text: &str, size: u32) -> String {
    format!(
        r#"<w:r><w:rPr>{CODE_STYLE}<w:sz w:val="{size}"/><w:szCs w:val="{size}"/></w:rPr><w:t xml:space="preserve">{}</w:t></w:r>"#,
        ooxml_escape(text)
    )
}

/// Plain text as one run.
pub(super) fn plain(text: &str) -> String {
    run(text, Emphasis::default())
}

/// A sentence of ours that may quote keys or names in backticks: the quoted
/// parts as inline code.
pub(super) fn code_spans(text: &str) -> String {
    let quotes = text.matches('`').count();
    let mut out = String::new();
    for (i, part) in text.split('`').enumerate() {
        // Odd parts sit between backticks (an unmatched last one stays plain).
        let code = i % 2 == 1 && quotes > i;
        let emphasis = Emphasis {
            code,
            ..Emphasis::default()
        };
        out.push_str(&run(part, emphasis));
    }
    out
}

/// Paragraph properties, written in the order the schema requires.
#[derive(Debug, Clone, Default)]
pub(super) struct Props<'a> {
    pub(super) style: Option<&'a str>,
    /// Keep with the next paragraph (a caption with its table or figure).
    pub(super) keep_next: bool,
    /// A list item: the numbering instance and the level.
    pub(super) numbering: Option<(usize, usize)>,
    /// Left indent in twentieths of a point (later paragraphs of a list item).
    pub(super) indent: Option<usize>,
    /// `right` for numbers in a table, `center` for a figure.
    pub(super) align: Option<&'a str>,
}

impl Props<'_> {
    pub(super) fn styled(style: &str) -> Props<'_> {
        Props {
            style: Some(style),
            ..Props::default()
        }
    }

    fn xml(&self) -> String {
        let mut out = String::new();
        if let Some(style) = self.style {
            out.push_str(&format!(r#"<w:pStyle w:val="{style}"/>"#));
        }
        if self.keep_next {
            out.push_str("<w:keepNext/>");
        }
        if let Some((num, level)) = self.numbering {
            out.push_str(&format!(
                r#"<w:numPr><w:ilvl w:val="{level}"/><w:numId w:val="{num}"/></w:numPr>"#
            ));
        }
        if let Some(left) = self.indent {
            out.push_str(&format!(r#"<w:ind w:left="{left}"/>"#));
        }
        if let Some(align) = self.align {
            out.push_str(&format!(r#"<w:jc w:val="{align}"/>"#));
        }
        if out.is_empty() {
            out
        } else {
            format!("<w:pPr>{out}</w:pPr>")
        }
    }
}

/// A paragraph of runs (already written), on a line of its own so that the
/// part reads and compares line by line.
pub(super) fn paragraph(props: &Props, runs: &str) -> String {
    format!("<w:p>{}{runs}</w:p>\n", props.xml())
}

/// A field (`PAGE`, `SEQ Table`) with the result shown until the word
/// processor updates it.
pub(super) fn field(instruction: &str, result: &str) -> String {
    format!(
        r#"<w:r><w:fldChar w:fldCharType="begin"/></w:r><w:r><w:instrText xml:space="preserve"> {} </w:instrText></w:r><w:r><w:fldChar w:fldCharType="separate"/></w:r>{}<w:r><w:fldChar w:fldCharType="end"/></w:r>"#,
        ooxml_escape(instruction),
        plain(result)
    )
}

/// A caption sheaf wrote as "Table 3. Means." as runs whose number is a
/// `SEQ` field (so the word processor's cross-references and lists of
/// tables find it), keeping the number sheaf gave. A caption of another
/// shape stays text.
pub(super) fn numbered_caption(caption: &str, kind: &str) -> String {
    let split = caption
        .strip_prefix(kind)
        .and_then(|rest| rest.strip_prefix(' '))
        .and_then(|rest| {
            let digits = rest.len() - rest.trim_start_matches(|c: char| c.is_ascii_digit()).len();
            let (number, after) = rest.split_at(digits);
            (digits > 0).then_some((number, after))
        });
    match split {
        Some((number, after)) => format!(
            "{}{}{}",
            plain(&format!("{kind} ")),
            field(&format!("SEQ {kind} \\* ARABIC"), number),
            plain(after)
        ),
        None => plain(caption),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn runs_escape_text_and_keep_tabs_and_breaks() {
        assert_eq!(
            plain("a<b & \"c\"\tz\nw"),
            "<w:r><w:t xml:space=\"preserve\">a&lt;b &amp; &quot;c&quot;</w:t><w:tab/><w:t xml:space=\"preserve\">z</w:t><w:br/><w:t xml:space=\"preserve\">w</w:t></w:r>"
        );
        assert_eq!(plain(""), "");
    }

    #[test]
    fn captions_keep_their_number_in_a_sequence_field() {
        let c = numbered_caption("Table 12. Means & SDs.", "Table");
        assert!(c.contains("SEQ Table \\* ARABIC"), "{c}");
        assert!(c.contains(">12</w:t>"), "{c}");
        assert!(c.contains(">. Means &amp; SDs.</w:t>"), "{c}");
        assert_eq!(
            numbered_caption("Table of means", "Table"),
            plain("Table of means")
        );
    }
}
