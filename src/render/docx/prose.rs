//! Markdown prose to WordprocessingML: headings in the built-in heading
//! styles, paragraphs with emphasis, inline code and hyperlinks (only where
//! the target is safe), bulleted and numbered lists, quotes, code blocks,
//! rules and tables; raw HTML shown as text, images as their description,
//! and block markers (at the offsets sheaf put them) replaced by the blocks.

use super::contents::Entry;
use super::numbering::{BULLETS, LEVEL_INDENT, MAX_LEVEL, Numbering};
use super::package::Relations;
use super::table::{Cell, table};
use super::xml::{Emphasis, Props, paragraph, plain, run};
use crate::doc::markdown::markdown_options;
use crate::render::links::live_target;
use crate::render::report::{MarkerAt, marked_block};
use pulldown_cmark::{Alignment, Event, HeadingLevel, LinkType, Parser, Tag, TagEnd};

/// A paragraph being written: its properties and runs so far.
struct Open {
    style: Option<&'static str>,
    numbering: Option<(usize, usize)>,
    indent: Option<usize>,
    runs: String,
}

/// A Markdown table being read.
#[derive(Default)]
struct TableBuild {
    align: Vec<Option<&'static str>>,
    header: Vec<Cell>,
    rows: Vec<Vec<Cell>>,
    row: Vec<Cell>,
    /// The cell being read.
    cell: Option<Cell>,
}

/// Where the parts the prose refers to are kept.
pub(super) struct Targets<'a> {
    pub(super) relations: &'a mut Relations,
    pub(super) numbering: &'a mut Numbering,
    pub(super) text_width: u32,
}

/// The prose being written and what is open in it.
struct Prose<'a> {
    out: String,
    targets: Targets<'a>,
    open: Option<Open>,
    bold: usize,
    italic: usize,
    strike: usize,
    /// For each open link or image: whether it was written as a link.
    links: Vec<bool>,
    /// The numbering instance of each open list.
    lists: Vec<usize>,
    /// The next paragraph starts a list item (and carries its number).
    item_starts: bool,
    quotes: usize,
    /// The text of the code block being read, if one is.
    code: Option<String>,
    table: Option<TableBuild>,
    /// Headings of the first two levels, for the contents.
    headings: Vec<Entry>,
    /// Whether the open paragraph is a heading listed in `headings`.
    in_heading: bool,
}

/// The body (with block markers at `markers`) as body XML, and its
/// headings of the first two levels for the contents.
pub(super) fn prose_xml(
    body: &str,
    fragments: &[String],
    markers: &[MarkerAt],
    targets: Targets,
) -> (String, Vec<Entry>) {
    let mut prose = Prose {
        out: String::new(),
        targets,
        open: None,
        bold: 0,
        italic: 0,
        strike: 0,
        links: Vec::new(),
        lists: Vec::new(),
        item_starts: false,
        quotes: 0,
        code: None,
        table: None,
        headings: Vec::new(),
        in_heading: false,
    };
    for (event, range) in Parser::new_ext(body, markdown_options()).into_offset_iter() {
        match event {
            Event::Html(h) | Event::InlineHtml(h) => {
                let block = marked_block(markers, range.start, &h);
                match block {
                    Some(i) => {
                        prose.close();
                        prose.out.push_str(&fragments[i]);
                    }
                    None => prose.raw_html(&h),
                }
            }
            Event::Start(tag) => prose.start(tag),
            Event::End(tag) => prose.end(tag),
            Event::Text(t) => match &mut prose.code {
                Some(code) => code.push_str(&t),
                None => prose.text(&t),
            },
            Event::Code(t) => {
                prose.heading_text(&t);
                let emphasis = Emphasis {
                    code: true,
                    ..prose.emphasis()
                };
                prose.push_runs(&run(&t, emphasis), &t);
            }
            Event::SoftBreak => prose.text(" "),
            Event::HardBreak => prose.push_runs("<w:r><w:br/></w:r>", " "),
            Event::Rule => {
                prose.close();
                prose.out.push_str(
                    "<w:p><w:pPr><w:pBdr><w:bottom w:val=\"single\" w:sz=\"6\" w:space=\"1\" w:color=\"auto\"/></w:pBdr></w:pPr></w:p>\n",
                );
            }
            _ => {}
        }
    }
    prose.close();
    (prose.out, prose.headings)
}

/// The paragraph style of a Markdown heading level (`#` and `##` both
/// head sections, as in the LaTeX output).
fn heading_style(level: HeadingLevel) -> &'static str {
    match level {
        HeadingLevel::H1 | HeadingLevel::H2 => "Heading1",
        HeadingLevel::H3 => "Heading2",
        HeadingLevel::H4 => "Heading3",
        _ => "Heading4",
    }
}

impl Prose<'_> {
    fn emphasis(&self) -> Emphasis {
        Emphasis {
            bold: self.bold > 0,
            italic: self.italic > 0,
            strike: self.strike > 0,
            code: false,
            link: self.links.last() == Some(&true),
        }
    }

    /// Text of an open heading, for the contents.
    fn heading_text(&mut self, text: &str) {
        if self.in_heading
            && let Some((_, heading)) = self.headings.last_mut()
        {
            heading.push_str(text);
        }
    }

    /// Raw HTML, shown as text: an HTML block comes a line at a time, and
    /// its lines stay lines.
    fn raw_html(&mut self, html: &str) {
        let line = html.trim_end_matches('\n');
        let continues = self.open.as_ref().is_some_and(|o| !o.runs.is_empty());
        if continues && html.ends_with('\n') {
            self.push_runs("<w:r><w:br/></w:r>", " ");
        }
        self.text(line);
    }

    /// Text in the current emphasis.
    fn text(&mut self, text: &str) {
        self.heading_text(text);
        let runs = run(text, self.emphasis());
        self.push_runs(&runs, text);
    }

    /// Runs into the open table cell, else the open paragraph (opened if
    /// none is).
    fn push_runs(&mut self, runs: &str, text: &str) {
        if let Some(cell) = self.table.as_mut().and_then(|t| t.cell.as_mut()) {
            cell.runs.push_str(runs);
            cell.text.push_str(text);
            return;
        }
        if self.open.is_none() {
            self.open_paragraph(None);
        }
        if let Some(open) = &mut self.open {
            open.runs.push_str(runs);
        }
    }

    /// Opens a paragraph: a heading, else one whose style follows from
    /// where it stands (a list item, a quote, plain prose).
    fn open_paragraph(&mut self, heading: Option<&'static str>) {
        self.close();
        let level = self.lists.len().saturating_sub(1).min(MAX_LEVEL);
        let (style, numbering, indent) = match (heading, self.lists.last()) {
            (Some(style), _) => (Some(style), None, None),
            (None, Some(&num)) if self.item_starts => {
                (Some("ListParagraph"), Some((num, level)), None)
            }
            (None, Some(_)) => (
                Some("ListParagraph"),
                None,
                Some(LEVEL_INDENT * (level + 1)),
            ),
            (None, None) if self.quotes > 0 => (Some("Quote"), None, None),
            (None, None) => (None, None, None),
        };
        self.item_starts = false;
        self.open = Some(Open {
            style,
            numbering,
            indent,
            runs: String::new(),
        });
    }

    /// Writes the open paragraph, if any.
    fn close(&mut self) {
        self.in_heading = false;
        if let Some(open) = self.open.take() {
            let props = Props {
                style: open.style,
                numbering: open.numbering,
                indent: open.indent,
                ..Props::default()
            };
            self.out.push_str(&paragraph(&props, &open.runs));
        }
    }

    fn start(&mut self, tag: Tag) {
        match tag {
            Tag::Paragraph => self.open_paragraph(None),
            Tag::Heading { level, .. } => {
                let style = heading_style(level);
                self.open_paragraph(Some(style));
                let entry = match style {
                    "Heading1" => Some("TOC1"),
                    "Heading2" => Some("TOC2"),
                    _ => None,
                };
                if let Some(entry) = entry {
                    self.headings.push((entry, String::new()));
                    self.in_heading = true;
                }
            }
            Tag::BlockQuote(_) => {
                self.close();
                self.quotes += 1;
            }
            Tag::CodeBlock(_) => {
                self.close();
                self.code = Some(String::new());
            }
            Tag::List(start) => {
                self.close();
                let num = match start {
                    None => BULLETS,
                    Some(first) => self.targets.numbering.numbered(first),
                };
                self.lists.push(num);
            }
            Tag::Item => {
                self.close();
                self.item_starts = true;
            }
            Tag::Table(alignments) => {
                self.close();
                self.table = Some(TableBuild {
                    align: alignments
                        .iter()
                        .map(|a| match a {
                            Alignment::Right => Some("right"),
                            Alignment::Center => Some("center"),
                            Alignment::Left | Alignment::None => None,
                        })
                        .collect(),
                    ..TableBuild::default()
                });
            }
            Tag::TableCell => {
                if let Some(t) = &mut self.table {
                    t.cell = Some(Cell {
                        runs: String::new(),
                        text: String::new(),
                        mono: None,
                    });
                }
            }
            Tag::Emphasis => self.italic += 1,
            Tag::Strong => self.bold += 1,
            Tag::Strikethrough => self.strike += 1,
            Tag::Link {
                link_type,
                dest_url,
                ..
            } => self.open_link(link_type, &dest_url),
            // An image's file may not be beside the report: its
            // description stands in, in italics.
            Tag::Image { .. } => {
                self.links.push(false);
                self.italic += 1;
            }
            _ => {}
        }
    }

    fn open_link(&mut self, link_type: LinkType, dest_url: &str) {
        let target = live_target(link_type, dest_url);
        self.links.push(target.is_some());
        let Some(url) = target else {
            return;
        };
        let id = self.targets.relations.hyperlink(&url);
        self.push_runs(&format!("<w:hyperlink r:id=\"{id}\">"), "");
    }

    fn end(&mut self, tag: TagEnd) {
        match tag {
            TagEnd::Paragraph | TagEnd::Heading(_) | TagEnd::Item => self.close(),
            TagEnd::BlockQuote(_) => {
                self.close();
                self.quotes = self.quotes.saturating_sub(1);
            }
            TagEnd::CodeBlock => {
                let code = self.code.take().unwrap_or_default();
                for line in code.trim_end_matches('\n').split('\n') {
                    self.out
                        .push_str(&paragraph(&Props::styled("CodeBlock"), &plain(line)));
                }
            }
            TagEnd::List(_) => {
                self.close();
                self.lists.pop();
            }
            TagEnd::TableCell => {
                if let Some(t) = &mut self.table
                    && let Some(cell) = t.cell.take()
                {
                    t.row.push(cell);
                }
            }
            TagEnd::TableHead => {
                if let Some(t) = &mut self.table {
                    t.header = std::mem::take(&mut t.row);
                }
            }
            TagEnd::TableRow => {
                if let Some(t) = &mut self.table {
                    let row = std::mem::take(&mut t.row);
                    t.rows.push(row);
                }
            }
            TagEnd::Table => self.end_table(),
            TagEnd::Emphasis => self.italic = self.italic.saturating_sub(1),
            TagEnd::Strong => self.bold = self.bold.saturating_sub(1),
            TagEnd::Strikethrough => self.strike = self.strike.saturating_sub(1),
            TagEnd::Link => self.close_link(),
            TagEnd::Image => {
                self.links.pop();
                self.italic = self.italic.saturating_sub(1);
            }
            _ => {}
        }
    }

    /// Closes the innermost link, where it was written as one.
    fn close_link(&mut self) {
        if self.links.pop().unwrap_or(false) {
            self.push_runs("</w:hyperlink>", "");
        }
    }

    fn end_table(&mut self) {
        let Some(t) = self.table.take() else {
            return;
        };
        self.out.push_str(&table(
            &t.header,
            &t.rows,
            &t.align,
            self.targets.text_width,
        ));
        // Word needs a paragraph between two tables, else it joins them.
        self.out.push_str(&paragraph(&Props::default(), ""));
    }
}
