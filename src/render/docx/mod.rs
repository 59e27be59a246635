//! The docx writer: an Office Open XML word-processing document (ECMA-376)
//! with native, editable tables, figures as pictures, and named styles for
//! everything, so that the report can be restyled and edited in a word
//! processor. The same inputs give the same bytes: parts in a fixed order,
//! fixed dates in the archive, ids given in document order. Every string is
//! escaped by `crate::escape::ooxml_escape` (in `xml`, `package`, `page`).
//!
//! `package` writes the archive, content types and relationships; `page`
//! the page, footer, settings and properties; `styles` and `numbering`
//! their parts; `prose`, `block`, `table`, `figure` and `contents` the
//! body; `xml` the runs and paragraphs they are made of.

mod block;
mod contents;
mod figure;
mod numbering;
mod package;
mod page;
mod prose;
mod styles;
mod table;
mod xml;

use super::report::{Report, block_marker};
use super::writer::{About, Writer, Written};
use crate::diag::Diagnostic;
use crate::doc::ImageFormat;
use crate::provenance::sha256_hex;
use block::{Pictures, block_xml, bullets};
use numbering::Numbering;
use package::{Parts, Relations};
use table::{Cell, table};
use xml::{Emphasis, Props, code_spans, paragraph, plain, run};

/// The docx writer.
pub struct Docx;

/// Resolution of the pictures unless the front matter sets `dpi`.
const DEFAULT_DPI: u32 = 150;

/// The namespaces of the document part.
const DOCUMENT_NAMESPACES: &str = r#"xmlns:w="http://schemas.openxmlformats.org/wordprocessingml/2006/main" xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships" xmlns:wp="http://schemas.openxmlformats.org/drawingml/2006/wordprocessingDrawing""#;

impl Writer for Docx {
    fn about(&self) -> &'static About {
        &About {
            name: "docx",
            extension: "docx",
            help: "A word-processor document (Office Open XML) with editable tables and the figures inside.",
            figures_inline: true,
        }
    }

    fn write(&self, report: &Report) -> Result<Written, Diagnostic> {
        let front = &report.doc.front;
        let text_area = page::text_area(front.paper);
        let dpi = match front.figures {
            ImageFormat::Png { dpi } => dpi,
            ImageFormat::Svg => DEFAULT_DPI,
        };
        let mut relations = Relations::default();
        let mut numbering = Numbering::default();
        let mut pictures = Pictures {
            dpi,
            text_area,
            relations: &mut relations,
            placed: 0,
        };
        let fragments = report
            .views
            .iter()
            .map(|v| block_xml(v, &mut pictures))
            .collect::<Result<Vec<_>, _>>()
            .map_err(Diagnostic::new)?;
        let (body, markers) = report.body_with(|i| format!("{}\n", block_marker(i)));
        let targets = prose::Targets {
            relations: &mut relations,
            numbering: &mut numbering,
            text_width: text_area.0,
        };
        let (content, mut headings) = prose::prose_xml(&body, &fragments, &markers, targets);
        headings.push(("TOC1", CAUTIONS_HEADING.to_string()));
        headings.push(("TOC1", PROVENANCE_HEADING.to_string()));
        let mut document = format!(
            "<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"yes\"?>\n<w:document {DOCUMENT_NAMESPACES}>\n<w:body>\n"
        );
        document.push_str(&title_block(report));
        if front.contents {
            document.push_str(&contents::contents(
                &headings,
                &captions(report, "tables"),
                &captions(report, "figures"),
            ));
        }
        document.push_str(&content);
        document.push_str(&closing_sections(report, text_area.0));
        document.push_str(&page::section(front.paper));
        document.push_str("</w:body>\n</w:document>\n");
        let parts = Parts {
            document,
            styles: styles::styles_xml(),
            numbering: numbering.xml(),
            settings: page::settings_xml(),
            footer: page::footer_xml(),
            fonts: styles::fonts_xml(),
            core: page::core_xml(&report.title(), front.author.as_deref()),
            app: page::app_xml(),
        };
        package::archive(parts, relations)
            .map(Written::Binary)
            .map_err(Diagnostic::new)
    }

    fn parts(&self, report: &[u8]) -> Result<Vec<(String, Vec<u8>)>, String> {
        package::unpack(report)
    }
}

const CAUTIONS_HEADING: &str = "Reading these results";
const PROVENANCE_HEADING: &str = "Provenance";

/// The captions of every table (`which` = `tables`) or figure, in order.
fn captions(report: &Report, which: &str) -> Vec<String> {
    if which == "tables" {
        report
            .views
            .iter()
            .flat_map(|v| &v.tables)
            .map(|t| t.caption.clone())
            .collect()
    } else {
        report
            .figures
            .iter()
            .flatten()
            .map(|p| p.figure.caption.clone())
            .collect()
    }
}

/// The title, and the author and date under it.
fn title_block(report: &Report) -> String {
    let front = &report.doc.front;
    let mut out = paragraph(&Props::styled("Title"), &plain(&report.title()));
    if let Some(author) = &front.author {
        out.push_str(&paragraph(&Props::styled("Author"), &plain(author)));
    }
    if let Some(date) = &front.date {
        out.push_str(&paragraph(&Props::styled("Date"), &plain(date)));
    }
    out
}

fn heading(text: &str) -> String {
    paragraph(&Props::styled("Heading1"), &plain(text))
}

/// The cautions and the provenance section.
fn closing_sections(report: &Report, text_width: u32) -> String {
    let mut out = heading(CAUTIONS_HEADING);
    out.push_str(&bullets(&report.cautions()));
    out.push_str(&heading(PROVENANCE_HEADING));
    let (name, bytes) = report.document;
    let code = Emphasis {
        code: true,
        ..Emphasis::default()
    };
    let statement = [
        plain(&format!("Computed by sheaf {} from ", crate::VERSION)),
        run(name, code),
        plain(" (SHA-256 "),
        run(&sha256_hex(bytes), code),
        plain(
            "). Every number above is recomputed from these inputs on each build; the same inputs give the same report byte for byte. Full-precision values are in ",
        ),
        run(report.results_name, code),
        plain("."),
    ]
    .concat();
    out.push_str(&paragraph(&Props::default(), &statement));
    let acknowledged = "Notes the author has acknowledged (planned exclusions, and kinds listed under `acknowledge`):";
    // Each list after its lead-in, where it has items.
    for (lead, items) in [
        ("Analysis choices in effect:", report.choices()),
        (acknowledged, report.acknowledged_items()),
    ] {
        if !items.is_empty() {
            out.push_str(&paragraph(&Props::default(), &code_spans(lead)));
            out.push_str(&bullets(&items));
        }
    }
    if !report.inputs.is_empty() {
        out.push_str(&inputs_table(report, text_width));
    }
    out
}

/// Sizes (half-points) of the file names and hashes in the inputs table:
/// a SHA-256 of 64 digits in 7.5 pt fits beside a name on A4 and letter.
const PATH_SIZE: u32 = 16;
const HASH_SIZE: u32 = 15;

/// The inputs with their sizes and SHA-256.
fn inputs_table(report: &Report, text_width: u32) -> String {
    let header: Vec<Cell> = ["Input", "Bytes", "SHA-256"]
        .iter()
        .map(|l| Cell::text(l))
        .collect();
    let rows: Vec<Vec<Cell>> = report
        .inputs
        .iter()
        .map(|input| {
            vec![
                Cell::code(&input.path, PATH_SIZE),
                Cell::text(&input.size.to_string()),
                Cell::code(&input.sha256, HASH_SIZE),
            ]
        })
        .collect();
    let mut out = table(&header, &rows, &[None, Some("right"), None], text_width);
    out.push_str(&paragraph(&Props::default(), ""));
    out
}
