//! One analysis block: its lead sentence, its tables (caption above, notes
//! below), its figures (caption below), its notes as a bulleted list and
//! its warnings under "Check before use:"; then its parts (one per trait of
//! a block with several responses), each under its name.

use super::figure::figure;
use super::numbering::BULLETS;
use super::package::Relations;
use super::table::report_table;
use super::xml::{Emphasis, Props, code_spans, paragraph, plain, run};
use crate::render::view::BlockView;

/// What a block's figures are drawn with and where they are kept.
pub(super) struct Pictures<'a> {
    pub(super) dpi: u32,
    pub(super) text_area: (u32, u32),
    pub(super) relations: &'a mut Relations,
    /// Pictures placed so far (their ids run through the document).
    pub(super) placed: usize,
}

/// The body XML of one block.
pub(super) fn block_xml(view: &BlockView, pictures: &mut Pictures) -> Result<String, String> {
    let mut out = String::new();
    // A part of a block (one trait of several) opens with its name.
    if let Some(heading) = &view.heading {
        let bold = Emphasis {
            bold: true,
            ..Emphasis::default()
        };
        let props = Props {
            keep_next: true,
            ..Props::default()
        };
        out.push_str(&paragraph(&props, &run(heading, bold)));
    }
    if let Some(lead) = &view.lead {
        out.push_str(&paragraph(&Props::default(), &plain(lead)));
    }
    for table in &view.tables {
        out.push_str(&report_table(table, pictures.text_area.0));
    }
    for view in &view.figures {
        let Some(svg) = &view.svg else {
            continue;
        };
        let png = crate::figure::png(svg, pictures.dpi)
            .map_err(|e| format!("internal error drawing {}: {e}", view.id))?;
        pictures.placed += 1;
        out.push_str(&figure(
            view,
            png,
            pictures.dpi,
            pictures.placed,
            pictures.text_area,
            pictures.relations,
        ));
    }
    out.push_str(&bullets(&view.notes));
    if !view.warnings.is_empty() {
        let bold = Emphasis {
            bold: true,
            ..Emphasis::default()
        };
        let lead = Props {
            keep_next: true,
            ..Props::default()
        };
        out.push_str(&paragraph(&lead, &run("Check before use:", bold)));
        out.push_str(&bullets(&view.warnings));
    }
    for part in &view.parts {
        out.push_str(&block_xml(part, pictures)?);
    }
    Ok(out)
}

/// Sentences of ours (which may quote names in backticks) as a bulleted list.
pub(super) fn bullets(items: &[impl AsRef<str>]) -> String {
    let props = Props {
        numbering: Some((BULLETS, 0)),
        ..Props::styled("ListParagraph")
    };
    items
        .iter()
        .map(|item| paragraph(&props, &code_spans(item.as_ref())))
        .collect()
}
