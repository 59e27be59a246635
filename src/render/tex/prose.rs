//! Markdown prose to LaTeX: headings as sections, emphasis, code, links
//! (hyperref's `\href`, only where the target is safe), lists, quotes, code
//! blocks and tables; raw HTML shown as text, images as their description,
//! and block markers (at the offsets sheaf put them) replaced by the blocks.

use super::{REF_CLOSE, REF_OPEN, fit_to_width};
use crate::doc::markdown::markdown_options;
use crate::escape::{latex_code, latex_escape, latex_url};
use crate::render::links::live_target;
use crate::render::report::{MarkerAt, marked_block};
use pulldown_cmark::{Alignment, Event, HeadingLevel, Parser, Tag, TagEnd};

/// LaTeX allows lists nested four deep; deeper items are set as paragraphs.
const MAX_LIST_DEPTH: usize = 4;

/// The prose being written and what is open in it.
#[derive(Default)]
struct Prose {
    out: String,
    /// The text of the code block being read, if one is.
    code: Option<String>,
    /// For each open link or image: whether it was written as a link.
    links: Vec<bool>,
    lists: usize,
    /// Inside a table: the column about to be written.
    column: usize,
    /// Where the open table's `tabular` starts in `out`.
    table_start: usize,
    /// Text read but not yet written: the parser splits a text at every
    /// backslash escape, and a reference must be read whole.
    text: String,
}

/// The body (with block markers at `markers`) as LaTeX.
pub(super) fn prose_latex(body: &str, fragments: &[String], markers: &[MarkerAt]) -> String {
    let mut prose = Prose::default();
    for (event, range) in Parser::new_ext(body, markdown_options()).into_offset_iter() {
        if !matches!(event, Event::Text(_)) {
            prose.flush_text();
        }
        match event {
            Event::Html(h) | Event::InlineHtml(h) => {
                let block = marked_block(markers, range.start, &h);
                match block {
                    Some(i) => {
                        prose.out.push_str(&fragments[i]);
                        prose.out.push('\n');
                    }
                    None => prose.out.push_str(&latex_escape(&h)),
                }
            }
            Event::Start(tag) => prose.start(tag),
            Event::End(tag) => prose.end(tag),
            Event::Text(t) => match &mut prose.code {
                Some(code) => code.push_str(&t),
                None => prose.text.push_str(&t),
            },
            Event::Code(t) => {
                prose
                    .out
                    .push_str(&format!("\\texttt{{{}}}", latex_code(&t)));
            }
            Event::SoftBreak => prose.out.push('\n'),
            Event::HardBreak => prose.out.push_str("\\newline\n"),
            Event::Rule => prose
                .out
                .push_str("\\par\\medskip\\noindent\\rule{\\linewidth}{0.4pt}\\par\\medskip\n\n"),
            _ => {}
        }
    }
    prose.flush_text();
    prose.out
}

impl Prose {
    fn flush_text(&mut self) {
        if !self.text.is_empty() {
            self.out.push_str(&prose_text(&self.text));
            self.text.clear();
        }
    }

    fn start(&mut self, tag: Tag) {
        let text = match tag {
            Tag::Paragraph => "",
            Tag::Heading { level, .. } => match level {
                HeadingLevel::H1 | HeadingLevel::H2 => "\\section{",
                HeadingLevel::H3 => "\\subsection{",
                HeadingLevel::H4 => "\\subsubsection{",
                _ => "\\paragraph{",
            },
            Tag::BlockQuote(_) => "\\begin{quote}\n",
            Tag::CodeBlock(_) => {
                self.code = Some(String::new());
                ""
            }
            Tag::List(start) => return self.open_list(start),
            Tag::Item if self.lists > MAX_LIST_DEPTH => "\\par\\textbullet{} ",
            Tag::Item => "\\item{} ",
            Tag::Table(alignments) => return self.open_table(&alignments),
            Tag::TableRow | Tag::TableHead => {
                self.column = 0;
                ""
            }
            Tag::TableCell => {
                self.column += 1;
                // A row's first cell is shielded from the previous row's
                // `\\`, which would read a leading `*` as its starred form.
                if self.column > 1 { " & " } else { "{}" }
            }
            Tag::Emphasis => "\\emph{",
            Tag::Strong => "\\textbf{",
            // A rule through the words, from the kernel alone: the text
            // is set in a box and struck across its width.
            Tag::Strikethrough => "{\\setbox0\\hbox{",
            Tag::Link {
                link_type,
                dest_url,
                ..
            } => {
                let target = live_target(link_type, &dest_url);
                self.links.push(target.is_some());
                let Some(url) = target else {
                    return;
                };
                self.out
                    .push_str(&format!("\\href{{{}}}{{", latex_url(&url)));
                return;
            }
            // An image's file may not exist beside the report, or be of a
            // kind pdflatex cannot read: its description stands in.
            Tag::Image { .. } => "\\emph{",
            _ => "",
        };
        self.out.push_str(text);
    }

    fn end(&mut self, tag: TagEnd) {
        let text = match tag {
            TagEnd::Paragraph => "\n\n",
            TagEnd::Heading(_) => "}\n\n",
            TagEnd::BlockQuote(_) => "\\end{quote}\n\n",
            TagEnd::CodeBlock => {
                let code = self.code.take().unwrap_or_default();
                self.out.push_str(&code_block(&code));
                return;
            }
            TagEnd::List(ordered) => {
                self.lists -= 1;
                match (self.lists >= MAX_LIST_DEPTH, ordered) {
                    (true, _) => "\\par\n",
                    (false, true) => "\\end{enumerate}\n\n",
                    (false, false) => "\\end{itemize}\n\n",
                }
            }
            TagEnd::Item => "\n",
            TagEnd::Table => "\\bottomrule\n\\end{tabular}",
            TagEnd::TableHead => " \\\\\n\\midrule\n",
            TagEnd::TableRow => " \\\\\n",
            TagEnd::Emphasis | TagEnd::Strong | TagEnd::Image => "}",
            TagEnd::Strikethrough => "}\\rlap{\\rule[0.5ex]{\\wd0}{0.4pt}}\\box0}",
            TagEnd::Link if self.links.pop().unwrap_or(false) => "}",
            _ => "",
        };
        if tag == TagEnd::Table {
            // The table was written from its opening; now it is boxed.
            let tabular = format!("{}{text}", &self.out[self.table_start..]);
            self.out.truncate(self.table_start);
            self.out.push_str(&fit_to_width(&tabular));
            self.out.push_str("\\end{center}\n\n");
            return;
        }
        self.out.push_str(text);
    }

    fn open_list(&mut self, start: Option<u64>) {
        self.lists += 1;
        if self.lists > MAX_LIST_DEPTH {
            self.out.push_str("\\par\n");
            return;
        }
        match start {
            None => self.out.push_str("\\begin{itemize}\n"),
            Some(first) => {
                self.out.push_str("\\begin{enumerate}\n");
                if first != 1 {
                    let counter = ["enumi", "enumii", "enumiii", "enumiv"][self.lists - 1];
                    // The counter steps before the first item is numbered.
                    let before = first.saturating_sub(1);
                    self.out
                        .push_str(&format!("\\setcounter{{{counter}}}{{{before}}}\n"));
                }
            }
        }
    }

    fn open_table(&mut self, alignments: &[Alignment]) {
        let spec: String = alignments
            .iter()
            .map(|a| match a {
                Alignment::Right => 'r',
                Alignment::Center => 'c',
                Alignment::Left | Alignment::None => 'l',
            })
            .collect();
        self.out.push_str("\\begin{center}\\small\n");
        self.table_start = self.out.len();
        self.out
            .push_str(&format!("\\begin{{tabular}}{{{spec}}}\n\\toprule\n"));
    }
}

/// Prose text, with the references to tables and figures that the
/// expressions left (between `REF_OPEN` and `REF_CLOSE`) as `\ref`s.
fn prose_text(text: &str) -> String {
    let mut out = String::with_capacity(text.len() + 8);
    let mut rest = text;
    while let Some(open) = rest.find(REF_OPEN) {
        let after = &rest[open + REF_OPEN.len_utf8()..];
        let Some(close) = after.find(REF_CLOSE) else {
            break;
        };
        let label = &after[..close];
        let is_label = !label.is_empty()
            && label
                .bytes()
                .all(|b| b.is_ascii_alphanumeric() || b"-.:_+".contains(&b));
        out.push_str(&latex_escape(&rest[..open]));
        if is_label {
            out.push_str(&format!("~\\ref{{{label}}}"));
        } else {
            out.push_str(&latex_escape(label));
        }
        rest = &after[close + REF_CLOSE.len_utf8()..];
    }
    out.push_str(&latex_escape(rest));
    out
}

/// A code block: typewriter lines as written, spaces kept, each line ended
/// by `\newline` (which, unlike `\\`, reads nothing after it).
fn code_block(code: &str) -> String {
    let mut out = String::from("\\begin{flushleft}\\small\\ttfamily\n");
    for line in code.trim_end_matches('\n').lines() {
        // Escaping writes a space only where the line has one.
        let escaped = latex_escape(&line.replace('\t', "    "));
        let mut previous_space = true;
        for c in escaped.chars() {
            if c == ' ' {
                out.push_str(if previous_space { "~" } else { " " });
            } else {
                out.push(c);
            }
            previous_space = c == ' ';
        }
        out.push_str("\\mbox{}\\newline\n");
    }
    out.push_str("\\end{flushleft}\n\n");
    out
}
