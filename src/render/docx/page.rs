//! The page: its size (A4 or letter, after the front matter's `paper`),
//! margins, the footer with the page number, and the document settings and
//! properties that go with it.

use super::package::FOOTER_ID;
use super::xml::{Props, field, paragraph};
use crate::doc::Paper;
use crate::escape::ooxml_escape;

/// Margins on every side: 25 mm in twentieths of a point.
const MARGIN: u32 = 1417;

/// Width and height of the page in twentieths of a point.
fn page_size(paper: Paper) -> (u32, u32) {
    match paper {
        // 210 × 297 mm.
        Paper::A4 => (11906, 16838),
        // 8.5 × 11 in.
        Paper::Letter => (12240, 15840),
    }
}

/// Width and height of the text area in twentieths of a point.
pub(super) fn text_area(paper: Paper) -> (u32, u32) {
    let (width, height) = page_size(paper);
    (width - 2 * MARGIN, height - 2 * MARGIN)
}

/// The section properties closing the body.
pub(super) fn section(paper: Paper) -> String {
    let (width, height) = page_size(paper);
    format!(
        "<w:sectPr><w:footerReference w:type=\"default\" r:id=\"{FOOTER_ID}\"/><w:pgSz w:w=\"{width}\" w:h=\"{height}\"/><w:pgMar w:top=\"{MARGIN}\" w:right=\"{MARGIN}\" w:bottom=\"{MARGIN}\" w:left=\"{MARGIN}\" w:header=\"709\" w:footer=\"709\" w:gutter=\"0\"/></w:sectPr>\n"
    )
}

/// The footer: the page number, centred.
pub(super) fn footer_xml() -> String {
    format!(
        "<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"yes\"?>\n<w:ftr xmlns:w=\"http://schemas.openxmlformats.org/wordprocessingml/2006/main\" xmlns:r=\"http://schemas.openxmlformats.org/officeDocument/2006/relationships\">\n{}</w:ftr>\n",
        paragraph(&Props::styled("Footer"), &field("PAGE", "1"))
    )
}

/// The settings: the current compatibility mode (else a word processor
/// opens the file in an older one), tab stops.
pub(super) fn settings_xml() -> String {
    "<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"yes\"?>\n<w:settings xmlns:w=\"http://schemas.openxmlformats.org/wordprocessingml/2006/main\">\n<w:defaultTabStop w:val=\"720\"/><w:characterSpacingControl w:val=\"doNotCompress\"/><w:compat><w:compatSetting w:name=\"compatibilityMode\" w:uri=\"http://schemas.microsoft.com/office/word\" w:val=\"15\"/></w:compat>\n</w:settings>\n".to_string()
}

/// The core properties: title and author, no dates (the same inputs give
/// the same bytes).
pub(super) fn core_xml(title: &str, author: Option<&str>) -> String {
    let creator = author
        .map(|a| format!("<dc:creator>{}</dc:creator>", ooxml_escape(a)))
        .unwrap_or_default();
    format!(
        "<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"yes\"?>\n<cp:coreProperties xmlns:cp=\"http://schemas.openxmlformats.org/package/2006/metadata/core-properties\" xmlns:dc=\"http://purl.org/dc/elements/1.1/\" xmlns:dcterms=\"http://purl.org/dc/terms/\" xmlns:xsi=\"http://www.w3.org/2001/XMLSchema-instance\"><dc:title>{}</dc:title>{creator}</cp:coreProperties>\n",
        ooxml_escape(title)
    )
}

/// The extended properties: which program wrote the file.
pub(super) fn app_xml() -> String {
    format!(
        "<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"yes\"?>\n<Properties xmlns=\"http://schemas.openxmlformats.org/officeDocument/2006/extended-properties\"><Application>sheaf {}</Application></Properties>\n",
        ooxml_escape(crate::VERSION)
    )
}
