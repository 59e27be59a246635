//! The HTML writer: one self-contained file, figures inline as SVG, prose
//! through pulldown-cmark with raw HTML shown as text and unsafe links made
//! text.

use super::links::safe_url;
use super::report::{ContentsEntry, MarkerAt, Report, block_marker as marker, marked_block};
use super::templates::{environment, render};
use super::writer::{About, Writer, Written};
use crate::diag::Diagnostic;
use crate::doc::markdown::markdown_options;
use pulldown_cmark::{CowStr, Event, LinkType, Parser, Tag, TagEnd};

/// The HTML writer.
pub struct Html;

impl Writer for Html {
    fn about(&self) -> &'static About {
        &About {
            name: "html",
            extension: "html",
            help: "One self-contained HTML file.",
            figures_inline: true,
        }
    }

    fn write(&self, report: &Report) -> Result<Written, Diagnostic> {
        let env = environment();
        let fragments = report
            .views
            .iter()
            .map(|v| render(&env, "block.html", report.block_context(v)))
            .collect::<Result<Vec<_>, _>>()?;
        let (body, markers) = report.body_with(|i| format!("{}\n", marker(i)));
        let numbered = report.doc.front.contents;
        let (content, headings) = prose_html(&body, &fragments, &markers, numbered);
        let contents = numbered.then(|| report.contents(headings));
        render(&env, "report.html", report.context(content, contents)).map(Written::Text)
    }
}

/// Markdown to HTML. Raw HTML written in the document is shown as text (a
/// report carries no scripts), links and images whose target could run
/// script become their text, and block markers (at the offsets in
/// `markers`) become the blocks' HTML. With `number_headings`, level 2 and 3
/// headings get ids (`section-1`, …) and are returned for the table of
/// contents.
pub(crate) fn prose_html(
    body: &str,
    fragments: &[String],
    markers: &[MarkerAt],
    number_headings: bool,
) -> (String, Vec<ContentsEntry>) {
    use pulldown_cmark::HeadingLevel;
    let mut headings: Vec<ContentsEntry> = Vec::new();
    let mut open: Option<usize> = None;
    let mut open_links: Vec<bool> = Vec::new();
    let mut events = Vec::new();
    for (event, range) in Parser::new_ext(body, markdown_options()).into_offset_iter() {
        let event = match event {
            Event::Html(h) | Event::InlineHtml(h) => {
                let block = marked_block(markers, range.start, &h);
                match block {
                    Some(i) => Event::Html(CowStr::from(format!("{}\n", fragments[i]))),
                    None => Event::Text(h),
                }
            }
            Event::Start(Tag::Link {
                link_type,
                ref dest_url,
                ..
            })
            | Event::Start(Tag::Image {
                link_type,
                ref dest_url,
                ..
            }) => {
                let live = link_type == LinkType::Email || safe_url(dest_url);
                open_links.push(live);
                if !live {
                    continue;
                }
                event
            }
            Event::End(TagEnd::Link | TagEnd::Image) => {
                if !open_links.pop().unwrap_or(true) {
                    continue;
                }
                event
            }
            Event::Start(Tag::Heading {
                level,
                id,
                classes,
                attrs,
            }) if number_headings && matches!(level, HeadingLevel::H2 | HeadingLevel::H3) => {
                let anchor = format!("section-{}", headings.len() + 1);
                headings.push(ContentsEntry {
                    level: if level == HeadingLevel::H2 { 2 } else { 3 },
                    id: id.map_or_else(|| anchor.clone(), |i| i.to_string()),
                    text: String::new(),
                });
                open = Some(headings.len() - 1);
                let id = headings[headings.len() - 1].id.clone();
                Event::Start(Tag::Heading {
                    level,
                    id: Some(CowStr::from(id)),
                    classes,
                    attrs,
                })
            }
            Event::End(TagEnd::Heading(l)) => {
                open = None;
                Event::End(TagEnd::Heading(l))
            }
            other => other,
        };
        if let (Some(i), Event::Text(t) | Event::Code(t)) = (open, &event) {
            headings[i].text.push_str(t);
        }
        events.push(event);
    }
    let mut html = String::with_capacity(body.len() * 2);
    pulldown_cmark::html::push_html(&mut html, events.into_iter());
    (html, headings)
}
