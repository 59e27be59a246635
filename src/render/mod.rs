//! Rendering stage: view models laid out by templates (embedded at compile
//! time from `templates/`), prose from pulldown-cmark. HTML escaping happens
//! in minijinja's HTML auto-escape, pulldown-cmark's writer and `html_escape`
//! (for the `code_spans` filter); Markdown escaping in `markdown_escape`.
//! Nowhere else.

pub mod inline;
mod tables;
pub mod view;

use crate::figure::PlacedFigure;
use crate::outcome::BlockResult;
use crate::provenance::Input;

use crate::diag::Diagnostic;
use crate::doc::Document;
use crate::doc::markdown::markdown_options;
use crate::escape::{css_string, html_escape, markdown_escape};
use crate::provenance::sha256_hex;
use minijinja::value::Value;
use minijinja::{AutoEscape, Environment};
use pulldown_cmark::{CowStr, Event, LinkType, Parser, Tag, TagEnd};
use serde::Serialize;

/// Output format of the report.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    Html,
    Markdown,
}

impl Format {
    pub fn extension(self) -> &'static str {
        match self {
            Format::Html => "html",
            Format::Markdown => "md",
        }
    }
}

/// The standing cautions printed at the end of every report.
pub const CAUTIONS: [&str; 5] = [
    "Statistical significance is not practical importance: judge each difference and its confidence interval against the smallest difference that matters in your setting.",
    "A difference that is not significant does not show that levels are equivalent; equivalence needs its own test.",
    "An analysis of variance assumes independent observations, normally distributed errors and equal variances across levels. The checks in this report test the last two, but a check that passes does not prove an assumption holds, and independence comes from the design, which no test can confirm.",
    "Results must be reviewed by a qualified statistician or responsible scientist before they inform decisions or submissions.",
    "Applicable regulatory guidance and local standard operating procedures take precedence over this tool's defaults.",
];

const TEMPLATES: [(&str, &str); 5] = [
    ("block.html", include_str!("../../templates/block.html")),
    ("block.md", include_str!("../../templates/block.md")),
    ("report.html", include_str!("../../templates/report.html")),
    ("report.md", include_str!("../../templates/report.md")),
    ("report.css", include_str!("../../templates/report.css")),
];

fn template_source(name: &str) -> &'static str {
    TEMPLATES
        .iter()
        .find(|(n, _)| *n == name)
        .map_or("", |(_, s)| s)
}

/// A serializable view as a template value.
pub(crate) fn to_value<T: Serialize>(x: T) -> Value {
    Value::from(minijinja::value::Serde(x))
}

fn environment() -> Environment<'static> {
    let mut env = Environment::new();
    env.set_auto_escape_callback(|name| {
        if name.ends_with(".html") {
            AutoEscape::Html
        } else if name.ends_with(".md") {
            AutoEscape::Custom("markdown".into())
        } else {
            AutoEscape::None
        }
    });
    env.set_formatter(|out, state, value| {
        if matches!(state.auto_escape(), AutoEscape::Custom(n) if n == "markdown") {
            let text = value.to_string();
            let text = if value.is_safe() {
                text
            } else {
                markdown_escape(&text)
            };
            return out.write_str(&text).map_err(minijinja::Error::from);
        }
        minijinja::escape_formatter(out, state, value)
    });
    env.add_filter("code_spans", code_spans);
    env.add_filter("css_string", |text: String| {
        Value::from_safe_string(css_string(&text))
    });
    for (name, _) in TEMPLATES {
        // The templates are ours and fixed at compile time; a syntax error is
        // caught by every test that renders a report.
        let _ = env.add_template(name, template_source(name));
    }
    env
}

/// Escapes a sentence of ours that may quote keys or names in backticks, and
/// turns those quotes into code: `<code>` in HTML, a code span in Markdown.
/// The text inside the backticks is escaped too, so data strings stay inert.
fn code_spans(state: &minijinja::State, text: String) -> Value {
    let markdown = matches!(state.auto_escape(), AutoEscape::Custom(n) if n == "markdown");
    let mut out = String::with_capacity(text.len() + 16);
    for (i, part) in text.split('`').enumerate() {
        // Odd parts sit between backticks (an unmatched last one stays plain).
        let quoted = i % 2 == 1 && text.matches('`').count() > i;
        match (markdown, quoted) {
            (true, true) if !part.contains('\n') => {
                out.push('`');
                out.push_str(part);
                out.push('`');
            }
            (true, _) => out.push_str(&markdown_escape(part)),
            (false, true) => {
                out.push_str("<code>");
                out.push_str(&html_escape(part));
                out.push_str("</code>");
            }
            (false, false) => out.push_str(&html_escape(part)),
        }
    }
    Value::from_safe_string(out)
}

fn render(env: &Environment<'_>, name: &str, ctx: Value) -> Result<String, Diagnostic> {
    env.get_template(name)
        .and_then(|t| t.render(ctx))
        .map_err(|e| Diagnostic::new(format!("internal error in template `{name}`: {e}")))
}

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
struct ContentsEntry {
    level: u8,
    id: String,
    text: String,
}

#[derive(Serialize)]
struct ContentsView {
    headings: Vec<ContentsEntry>,
    tables: Vec<ContentsEntry>,
    figures: Vec<ContentsEntry>,
}

/// A block's acknowledged notes, for the provenance section.
#[derive(Serialize)]
struct AcknowledgedView {
    id: String,
    notes: Vec<String>,
}

/// Marker standing for block `i` in the prose while it goes through the
/// Markdown parser; replaced by the block's HTML afterwards. Only a marker
/// at an offset where sheaf put one counts: the same text written in the
/// document is shown as text like any other raw HTML.
fn marker(i: usize) -> String {
    format!("<!-- sheaf-block-{i} -->")
}

/// A block marker in the body: its byte offset and the block's index.
type MarkerAt = (usize, usize);

/// Renders the report. The document's name and bytes (as read, for its
/// hash) and the results file's name appear in the provenance note.
#[allow(clippy::too_many_arguments)]
pub fn render_report(
    doc: &Document,
    results: &[BlockResult],
    figures: &[Vec<PlacedFigure>],
    inputs: &[Input],
    format: Format,
    (document_name, document_bytes): (&str, &[u8]),
    results_name: &str,
) -> Result<String, Diagnostic> {
    let env = environment();

    // Views first: they number the tables, which prose may refer to.
    let mut next_table = 1;
    let mut views = Vec::with_capacity(results.len());
    for (r, figs) in results.iter().zip(figures) {
        let mut v = match (r, r.linear()) {
            (BlockResult::Power(p), _) => tables::power_view(p, &mut next_table),
            (_, Some(outcome)) => tables::linear_view(&outcome, &mut next_table),
            (_, None) => view::BlockView::default(),
        };
        v.figures = figs
            .iter()
            .map(|p| view::FigureView {
                id: p.figure.id.clone(),
                caption: p.figure.caption.clone(),
                svg: if format == Format::Html {
                    Some(p.figure.svg.clone())
                } else {
                    None
                },
                file: p.file.clone(),
            })
            .collect();
        views.push(v);
    }
    let mut numbers: Vec<(String, String)> = Vec::new();
    for v in &views {
        for t in &v.tables {
            numbers.push((t.id.clone(), format!("Table {}", t.number)));
        }
    }
    for p in figures.iter().flatten() {
        numbers.push((p.figure.id.clone(), format!("Figure {}", p.figure.number)));
    }
    let values = inline::evaluate(doc, results, &doc.expressions, &numbers)?;

    let mut fragments = Vec::with_capacity(results.len());
    for v in &views {
        let name = if format == Format::Html {
            "block.html"
        } else {
            "block.md"
        };
        let text = render(&env, name, minijinja::context! { block => to_value(v) })?;
        fragments.push(if format == Format::Markdown {
            tidy_markdown(&text)
        } else {
            text
        });
    }

    // The body with expressions and blocks replaced, front matter dropped.
    let mut edits: Vec<(std::ops::Range<usize>, String, Option<usize>)> = Vec::new();
    for (e, v) in doc.expressions.iter().zip(&values) {
        edits.push((
            e.range.clone(),
            markdown_escape(&crate::format::typographic_minus(v)),
            None,
        ));
    }
    for (i, b) in doc.blocks.iter().enumerate() {
        let replacement = match format {
            Format::Html => format!("{}\n", marker(i)),
            Format::Markdown => fragments[i].clone(),
        };
        edits.push((b.range.clone(), replacement, Some(i)));
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

    let (content, headings) = match format {
        Format::Html => prose_html(&body, &fragments, &markers, doc.front.contents),
        Format::Markdown => (inert_links_markdown(&body).trim().to_string(), Vec::new()),
    };
    let contents = (doc.front.contents && format == Format::Html).then(|| ContentsView {
        headings,
        tables: views
            .iter()
            .flat_map(|v| &v.tables)
            .map(|t| ContentsEntry {
                level: 0,
                id: t.id.clone(),
                text: t.caption.clone(),
            })
            .collect(),
        figures: figures
            .iter()
            .flatten()
            .map(|p| ContentsEntry {
                level: 0,
                id: p.figure.id.clone(),
                text: p.figure.caption.clone(),
            })
            .collect(),
    });
    let title = doc
        .front
        .title
        .clone()
        .unwrap_or_else(|| document_name.trim_end_matches(".md").to_string());
    let ctx = minijinja::context! {
        version => crate::VERSION,
        title => title,
        front => to_value(FrontView {
            title: doc.front.title.clone(),
            author: doc.front.author.clone(),
            date: doc.front.date.clone(),
        }),
        content => Value::from_safe_string(content),
        css => Value::from_safe_string(template_source("report.css").to_string()),
        cautions => CAUTIONS.to_vec(),
        document => to_value(DocumentView { name: document_name.to_string(), sha256: sha256_hex(document_bytes) }),
        inputs => to_value(inputs.iter().map(|i| InputView { path: i.path.clone(), bytes: i.size as usize, sha256: i.sha256.clone() }).collect::<Vec<_>>()),
        choices => results.iter().map(choices_of).collect::<Vec<_>>(),
        results_name => results_name,
        paper => doc.front.paper.css(),
        acknowledged => to_value(results.iter().filter_map(|r| {
            let notes = match r {
                BlockResult::Anova(a) => &a.acknowledged,
                BlockResult::Factorial(f) => &f.acknowledged,
                BlockResult::Power(_) => return None,
            };
            (!notes.is_empty()).then(|| AcknowledgedView { id: r.id().to_string(), notes: notes.clone() })
        }).collect::<Vec<_>>()),
        contents => contents.map(to_value),
    };
    let name = if format == Format::Html {
        "report.html"
    } else {
        "report.md"
    };
    let mut text = render(&env, name, ctx)?;
    if !text.ends_with('\n') {
        text.push('\n');
    }
    Ok(text)
}

/// The analysis choices in effect for one block, as one line for the
/// provenance note: what a reviewer needs to repeat the analysis.
fn choices_of(r: &BlockResult) -> String {
    use crate::doc::block::Omnibus;
    match r {
        BlockResult::Anova(a) => {
            let method = match a.method {
                Omnibus::Anova => "one-way ANOVA",
                Omnibus::Welch => "Welch's ANOVA",
                Omnibus::Ranks => "Kruskal-Wallis",
            };
            let compare = a
                .comparison
                .as_ref()
                .map_or("no pairwise comparisons".to_string(), |c| {
                    format!("{} pairs", c.method.title())
                });
            format!(
                "`{}` (line {}): {method}; {compare}; α = {}; {} used, {} left out.",
                a.id,
                a.line,
                a.alpha,
                crate::format::counted(a.n, "observation", "observations"),
                crate::format::counted(a.exclusions.len(), "row", "rows")
            )
        }
        BlockResult::Factorial(f) => {
            let ss = match f.ss_type {
                crate::stats::linear::SsType::I => "Type I",
                crate::stats::linear::SsType::II => "Type II",
                crate::stats::linear::SsType::III => "Type III",
            };
            let compare = f
                .families
                .first()
                .map_or("no pairwise comparisons".to_string(), |c| {
                    format!("{} on marginal means", c.comparison.method.title())
                });
            format!(
                "`{}` (line {}): linear model of {} with {ss} sums of squares (sum-to-zero coding); {compare}; α = {}; {} used, {} left out.",
                f.id,
                f.line,
                f.factors.join(", "),
                f.alpha,
                crate::format::counted(f.n, "observation", "observations"),
                crate::format::counted(f.exclusions.len(), "row", "rows")
            )
        }
        BlockResult::Power(p) => format!(
            "`{}` (line {}): power of the one-way F test; α = {}.",
            p.id, p.line, p.alpha
        ),
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

/// Markdown to HTML. Raw HTML written in the document is shown as text (a
/// report carries no scripts), links and images whose target could run
/// script become their text, and block markers (at the offsets in
/// `markers`) become the blocks' HTML. With `number_headings`, level 2 and 3
/// headings get ids (`section-1`, …) and are returned for the table of
/// contents.
fn prose_html(
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
                let block = markers
                    .binary_search_by_key(&range.start, |(at, _)| *at)
                    .ok()
                    .map(|k| markers[k].1)
                    .filter(|&i| h.trim() == marker(i));
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

/// Markdown output copies prose as written, except links and images whose
/// target could run script: those become their text, escaped.
fn inert_links_markdown(body: &str) -> String {
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

/// Whether a link target may stay live: relative URLs, `#fragment`, and the
/// schemes http, https and mailto. Checked as a browser reads it (tabs and
/// newlines dropped, surrounding spaces and control characters trimmed) and
/// also after percent-decoding, so that no spelling of another scheme
/// (`javascript:`, `data:`, `vbscript:`, any case) passes; entities were
/// already decoded by the Markdown parser.
pub(crate) fn safe_url(url: &str) -> bool {
    let cleaned: String = url
        .chars()
        .filter(|c| !matches!(c, '\t' | '\n' | '\r'))
        .collect();
    let trim = |s: &str| {
        s.trim_matches(|c: char| c.is_whitespace() || c.is_control())
            .to_string()
    };
    [trim(&cleaned), trim(&percent_decode(&cleaned))]
        .iter()
        .all(|u| match u.find([':', '/', '?', '#']) {
            Some(i) if u[i..].starts_with(':') => matches!(
                u[..i].to_ascii_lowercase().as_str(),
                "http" | "https" | "mailto"
            ),
            _ => true,
        })
}

/// `%XX` sequences decoded (invalid ones left as they are).
fn percent_decode(text: &str) -> String {
    let bytes = text.as_bytes();
    let mut out = Vec::with_capacity(bytes.len());
    let mut i = 0;
    while i < bytes.len() {
        let hex = bytes
            .get(i + 1..i + 3)
            .and_then(|h| std::str::from_utf8(h).ok())
            .and_then(|h| u8::from_str_radix(h, 16).ok());
        match (bytes[i], hex) {
            (b'%', Some(b)) => {
                out.push(b);
                i += 3;
            }
            (b, _) => {
                out.push(b);
                i += 1;
            }
        }
    }
    String::from_utf8_lossy(&out).into_owned()
}

#[cfg(test)]
mod tests;
