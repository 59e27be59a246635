//! The report before it is written: every block's view, the prose with its
//! expressions evaluated, the figures and the provenance, in no format yet.
//! Writers (`html`, `markdown`) read it.

use super::templates::{template_source, to_value};
use super::view::BlockView;
use super::writer::Writer;
use super::{
    CAUTIONS, EQUIVALENCE_CAUTION, FRIEDMAN_CAUTION, NOEC_CAUTION, RANDOM_TERMS_CAUTION,
    TRAITS_CAUTION, choices_of, inline, tables, view,
};
use crate::diag::Diagnostic;
use crate::doc::Document;
use crate::escape::markdown_escape;
use crate::figure::PlacedFigure;
use crate::outcome::BlockResult;
use crate::provenance::{Input, sha256_hex};
use minijinja::value::Value;
use serde::Serialize;

#[derive(Serialize)]
struct InputView {
    path: String,
    bytes: usize,
    sha256: String,
}

#[derive(Serialize)]
struct DocumentView {
    name: String,
    sha256: String,
}

#[derive(Serialize)]
struct FrontView {
    title: Option<String>,
    author: Option<String>,
    date: Option<String>,
}

/// One line of the table of contents or of the lists of tables and figures.
#[derive(Serialize)]
pub(crate) struct ContentsEntry {
    pub(crate) level: u8,
    pub(crate) id: String,
    pub(crate) text: String,
}

#[derive(Serialize)]
pub(crate) struct ContentsView {
    headings: Vec<ContentsEntry>,
    tables: Vec<ContentsEntry>,
    figures: Vec<ContentsEntry>,
}

/// A block's acknowledged notes, for the provenance section.
#[derive(Serialize)]
pub(crate) struct AcknowledgedView {
    pub(crate) id: String,
    pub(crate) notes: Vec<String>,
}

/// Everything a writer needs, in no particular format.
pub struct Report<'a> {
    pub doc: &'a Document,
    pub results: &'a [BlockResult],
    pub figures: &'a [Vec<PlacedFigure>],
    pub inputs: &'a [Input],
    /// The document's name and bytes (as read, for its hash).
    pub document: (&'a str, &'a [u8]),
    pub results_name: &'a str,
    /// One view per block, with its figures, tables numbered through the document.
    pub views: Vec<BlockView>,
    /// The value of each prose expression, in document order.
    pub values: Vec<String>,
}

/// A block marker in the body: its byte offset and the block's index.
pub(crate) type MarkerAt = (usize, usize);

/// Marker standing for block `i` in the prose while it goes through the
/// Markdown parser; replaced by the block's text afterwards. Only a marker
/// at an offset where sheaf put one counts: the same text written in the
/// document is shown as text like any other raw HTML.
pub(crate) fn block_marker(i: usize) -> String {
    format!("<!-- sheaf-block-{i} -->")
}

/// The block whose marker is the raw HTML `html` found at offset `start`
/// of the prose, if sheaf put one there.
pub(crate) fn marked_block(markers: &[MarkerAt], start: usize, html: &str) -> Option<usize> {
    markers
        .binary_search_by_key(&start, |(at, _)| *at)
        .ok()
        .map(|k| markers[k].1)
        .filter(|&i| html.trim() == block_marker(i))
}

impl<'a> Report<'a> {
    /// The standing cautions, and the one on random terms where a block
    /// has them.
    pub(crate) fn cautions(&self) -> Vec<&'static str> {
        let mut cautions = CAUTIONS.to_vec();
        if self
            .results
            .iter()
            .any(|r| r.linear().is_some_and(|o| o.equivalence.is_some()))
        {
            // The equivalence tests answer the standing caution where every
            // block declares margins; otherwise both stand.
            let every = self
                .results
                .iter()
                .all(|r| r.linear().is_none_or(|o| o.equivalence.is_some()));
            match every {
                true => cautions[1] = EQUIVALENCE_CAUTION,
                false => cautions.insert(2, EQUIVALENCE_CAUTION),
            }
        }
        if self
            .results
            .iter()
            .any(|r| r.linear().is_some_and(|o| o.mixed.is_some()))
        {
            cautions.insert(3, RANDOM_TERMS_CAUTION);
        }
        if self
            .results
            .iter()
            .any(|r| matches!(r, BlockResult::Traits(_)))
        {
            cautions.insert(2, TRAITS_CAUTION);
        }
        if self
            .results
            .iter()
            .any(|r| r.linear().is_some_and(|o| o.friedman.is_some()))
        {
            cautions.insert(2, FRIEDMAN_CAUTION);
        }
        if self
            .results
            .iter()
            .any(|r| r.linear().is_some_and(|o| o.dose.is_some()))
        {
            // Before the review and regulatory cautions, which close the list.
            let at = cautions
                .iter()
                .position(|c| *c == CAUTIONS[3])
                .unwrap_or(cautions.len());
            cautions.insert(at, NOEC_CAUTION);
        }
        cautions
    }

    /// The report of what it is built from, before its views and values.
    /// The document's name and bytes (as read, for its hash) and the
    /// results file's name appear in the provenance note.
    pub fn of(
        doc: &'a Document,
        results: &'a [BlockResult],
        figures: &'a [Vec<PlacedFigure>],
        inputs: &'a [Input],
        document: (&'a str, &'a [u8]),
        results_name: &'a str,
    ) -> Report<'a> {
        Report {
            doc,
            results,
            figures,
            inputs,
            document,
            results_name,
            views: Vec::new(),
            values: Vec::new(),
        }
    }

    /// Builds the views (which number the tables prose may refer to) and
    /// evaluates the prose expressions.
    pub fn assembled(self, writer: &dyn Writer) -> Result<Report<'a>, Diagnostic> {
        let (doc, results, figures) = (self.doc, self.results, self.figures);
        let figures_inline = writer.about().figures_inline;
        let mut next_table = 1;
        let mut views = Vec::with_capacity(results.len());
        for (r, figs) in results.iter().zip(figures) {
            let mut v = match (r, r.linear()) {
                (BlockResult::Power(p), _) => tables::power_view(p, &mut next_table),
                (BlockResult::Traits(t), _) => tables::traits_view(t, &mut next_table),
                (_, Some(outcome)) => tables::linear_view(outcome, &mut next_table),
                (_, None) => view::BlockView::default(),
            };
            let figure_views = figs.iter().map(|p| view::FigureView {
                id: p.figure.id.clone(),
                caption: p.figure.caption.clone(),
                svg: figures_inline.then(|| p.figure.svg.clone()),
                file: p.file.clone(),
            });
            if v.parts.is_empty() {
                v.figures = figure_views.collect();
            } else {
                // A part's figures carry its id first (`growth-yield-box`).
                for f in figure_views {
                    let part = v.parts.iter_mut().find(|p| {
                        f.id.strip_prefix(p.id.as_str())
                            .is_some_and(|rest| rest.starts_with('-'))
                    });
                    match part {
                        Some(part) => part.figures.push(f),
                        None => v.figures.push(f),
                    }
                }
            }
            views.push(v);
        }
        let mut numbers: Vec<(String, String)> = Vec::new();
        for v in &views {
            for t in v.all_tables() {
                let name = writer.cross_reference("Table", t.number, &t.id);
                numbers.push((t.id.clone(), name));
            }
        }
        for p in figures.iter().flatten() {
            let name = writer.cross_reference("Figure", p.figure.number, &p.figure.id);
            numbers.push((p.figure.id.clone(), name));
        }
        let values = inline::evaluate(doc, results, &doc.expressions, &numbers)?;
        Ok(Report {
            views,
            values,
            ..self
        })
    }

    /// The template context of one block.
    pub fn block_context(&self, view: &BlockView) -> Value {
        minijinja::context! { block => to_value(view) }
    }

    /// The body (front matter dropped) with expressions replaced by their
    /// values and each block by `block(i)`; with the offset of each block.
    pub fn body_with(&self, block: impl Fn(usize) -> String) -> (String, Vec<MarkerAt>) {
        let doc = self.doc;
        let mut edits: Vec<(std::ops::Range<usize>, String, Option<usize>)> = Vec::new();
        for (e, v) in doc.expressions.iter().zip(&self.values) {
            edits.push((
                e.range.clone(),
                markdown_escape(&crate::format::typographic_minus(v)),
                None,
            ));
        }
        for (i, b) in doc.blocks.iter().enumerate() {
            edits.push((b.range.clone(), block(i), Some(i)));
        }
        edits.sort_by_key(|(r, _, _)| r.start);
        let mut body = String::with_capacity(doc.source.len());
        let mut markers: Vec<MarkerAt> = Vec::new();
        let mut pos = doc.body_start;
        for (range, text, block) in edits {
            body.push_str(&doc.source[pos..range.start]);
            if let Some(i) = block {
                markers.push((body.len(), i));
            }
            body.push_str(&text);
            pos = range.end;
        }
        body.push_str(&doc.source[pos..]);
        (body, markers)
    }

    /// The lists of sections, tables and figures for the table of contents.
    pub(crate) fn contents(&self, headings: Vec<ContentsEntry>) -> ContentsView {
        let entry = |id: &str, text: &str| ContentsEntry {
            level: 0,
            id: id.to_string(),
            text: text.to_string(),
        };
        ContentsView {
            headings,
            tables: self
                .views
                .iter()
                .flat_map(|v| v.all_tables())
                .map(|t| entry(&t.id, &t.caption))
                .collect(),
            figures: self
                .figures
                .iter()
                .flatten()
                .map(|p| entry(&p.figure.id, &p.figure.caption))
                .collect(),
        }
    }

    /// The report template's context around the written `content`.
    pub(crate) fn context(&self, content: String, contents: Option<ContentsView>) -> Value {
        let (document_name, document_bytes) = self.document;
        let front = &self.doc.front;
        let title = self.title();
        let inputs: Vec<InputView> = self
            .inputs
            .iter()
            .map(|i| InputView {
                path: i.path.clone(),
                bytes: i.size as usize,
                sha256: i.sha256.clone(),
            })
            .collect();
        minijinja::context! {
            version => crate::VERSION,
            title => title,
            front => to_value(FrontView {
                title: front.title.clone(),
                author: front.author.clone(),
                date: front.date.clone(),
            }),
            content => Value::from_safe_string(content),
            css => Value::from_safe_string(template_source("report.css").to_string()),
            cautions => self.cautions(),
            document => to_value(DocumentView {
                name: document_name.to_string(),
                sha256: sha256_hex(document_bytes),
            }),
            inputs => to_value(inputs),
            choices => self.choices(),
            results_name => self.results_name,
            paper => front.paper.css(),
            acknowledged => to_value(self.acknowledged()),
            contents => contents.map(to_value),
        }
    }

    /// The report's title: the front matter's, else the document's name.
    pub(crate) fn title(&self) -> String {
        self.doc
            .front
            .title
            .clone()
            .unwrap_or_else(|| self.document.0.trim_end_matches(".md").to_string())
    }

    /// Each block's acknowledged notes, for the provenance section.
    pub(crate) fn acknowledged(&self) -> Vec<AcknowledgedView> {
        self.results
            .iter()
            .flat_map(|r| r.linear_outcomes())
            .filter_map(|o| {
                let notes = o.acknowledged.clone();
                (!notes.is_empty()).then(|| AcknowledgedView {
                    id: o.id.clone(),
                    notes,
                })
            })
            .collect()
    }

    /// The acknowledged notes as list items (`` `id`: note ``), for the
    /// writers that set the provenance section themselves.
    pub(crate) fn acknowledged_items(&self) -> Vec<String> {
        self.acknowledged()
            .into_iter()
            .flat_map(|b| b.notes.into_iter().map(move |n| format!("`{}`: {n}", b.id)))
            .collect()
    }

    /// The analysis choices in effect, a line per block.
    pub(crate) fn choices(&self) -> Vec<String> {
        self.results.iter().map(choices_of).collect()
    }
}
