//! The Markdown writer: the document's prose as written, blocks as
//! Markdown tables, figures as files beside the report.

use super::links::safe_url;
use super::report::Report;
use super::templates::{environment, render};
use super::writer::{About, FigureFile, Writer, Written};
use crate::diag::Diagnostic;
use crate::doc::ImageFormat;
use crate::doc::markdown::markdown_options;
use crate::escape::markdown_escape;
use crate::figure::{Figure, png};
use pulldown_cmark::{Event, LinkType, Parser, Tag, TagEnd};

/// The Markdown writer.
pub struct Markdown;

impl Writer for Markdown {
    fn about(&self) -> &'static About {
        &About {
            name: "md",
            extension: "md",
            help: "Markdown, with figures as separate files.",
            figures_inline: false,
        }
    }

    fn figure_file(&self, stem: &str, figure: &Figure, images: ImageFormat) -> FigureFile {
        Ok(Some(match images {
            ImageFormat::Svg => (
                format!("{stem}-{}.svg", figure.id),
                figure.svg.clone().into_bytes(),
            ),
            ImageFormat::Png { dpi } => {
                (format!("{stem}-{}.png", figure.id), png(&figure.svg, dpi)?)
            }
        }))
    }

    fn write(&self, report: &Report) -> Result<Written, Diagnostic> {
        let env = environment();
        let fragments = report
            .views
            .iter()
            .map(|v| render(&env, "block.md", report.block_context(v)).map(|t| tidy_markdown(&t)))
            .collect::<Result<Vec<_>, _>>()?;
        let (body, _) = report.body_with(|i| fragments[i].clone());
        let content = inert_links_markdown(&body).trim().to_string();
        render(&env, "report.md", report.context(content, None)).map(Written::Text)
    }
}

/// One blank line between paragraphs and tables, one newline at the end.
fn tidy_markdown(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    let mut blank_run = 0;
    for line in text.trim().lines() {
        if line.trim().is_empty() {
            blank_run += 1;
            if blank_run > 1 {
                continue;
            }
        } else {
            blank_run = 0;
        }
        out.push_str(line.trim_end());
        out.push('\n');
    }
    out
}

/// Markdown output copies prose as written, except links and images whose
/// target could run script: those become their text, escaped.
pub(crate) fn inert_links_markdown(body: &str) -> String {
    let mut edits: Vec<(std::ops::Range<usize>, String)> = Vec::new();
    // The outermost unsafe link being read: its range and its text so far.
    let mut current: Option<(std::ops::Range<usize>, String, usize)> = None;
    for (event, range) in Parser::new_ext(body, markdown_options()).into_offset_iter() {
        match (&mut current, event) {
            (
                None,
                Event::Start(
                    Tag::Link {
                        link_type,
                        dest_url,
                        ..
                    }
                    | Tag::Image {
                        link_type,
                        dest_url,
                        ..
                    },
                ),
            ) if link_type != LinkType::Email && !safe_url(&dest_url) => {
                current = Some((range, String::new(), 0));
            }
            (Some((_, _, depth)), Event::Start(Tag::Link { .. } | Tag::Image { .. })) => {
                *depth += 1;
            }
            (Some((_, text, _)), Event::Text(t) | Event::Code(t)) => text.push_str(&t),
            (Some((_, _, depth)), Event::End(TagEnd::Link | TagEnd::Image)) => {
                if *depth > 0 {
                    *depth -= 1;
                } else if let Some((range, text, _)) = current.take() {
                    edits.push((range, markdown_escape(&text)));
                }
            }
            _ => {}
        }
    }
    let mut out = String::with_capacity(body.len());
    let mut pos = 0;
    for (range, text) in edits {
        out.push_str(&body[pos..range.start]);
        out.push_str(&text);
        pos = range.end;
    }
    out.push_str(&body[pos..]);
    out
}
