//! The LaTeX writer: a document for pdflatex, or with `tex: body` in the
//! front matter a fragment for `\input` into the author's own document.
//! Tables are booktabs `table` floats labelled after their ids, figures PNG
//! files beside the report, and every string is escaped by
//! `crate::escape::latex_escape` and its siblings.

mod block;
mod prose;

use super::report::{Report, block_marker};
use super::writer::{About, FigureFile, Writer, Written};
use crate::diag::Diagnostic;
use crate::doc::ImageFormat;
use crate::escape::{latex_code, latex_escape, latex_label};
use crate::figure::{Figure, png};
use crate::provenance::sha256_hex;

/// The LaTeX writer.
pub struct Tex;

/// Resolution of the PNG figures unless the front matter sets `dpi`.
const DEFAULT_DPI: u32 = 150;

/// Around a reference to a table or figure in an expression's value, until
/// the prose is written: the label between them becomes `\ref{label}`.
/// (Characters of Unicode's private use area, which no text means.)
const REF_OPEN: char = '\u{E000}';
const REF_CLOSE: char = '\u{E001}';

/// What the report needs in the preamble, for a fragment's opening comment.
const FRAGMENT_PACKAGES: [&str; 5] = [
    "\\usepackage[utf8]{inputenc}",
    "\\usepackage[T1]{fontenc}",
    "\\usepackage{booktabs}",
    "\\usepackage{graphicx}",
    "\\usepackage{hyperref}",
];

impl Writer for Tex {
    fn about(&self) -> &'static About {
        &About {
            name: "tex",
            extension: "tex",
            help: "LaTeX for pdflatex, with figures as PNG files (`tex: body` in the front matter writes a fragment for \\input).",
            figures_inline: false,
        }
    }

    fn figure_file(&self, stem: &str, figure: &Figure, images: ImageFormat) -> FigureFile {
        let dpi = match images {
            ImageFormat::Png { dpi } => dpi,
            ImageFormat::Svg => DEFAULT_DPI,
        };
        let name = format!("{}.png", file_stem(&format!("{stem}-{}", figure.id)));
        Ok(Some((name, png(&figure.svg, dpi)?)))
    }

    fn cross_reference(&self, kind: &str, _number: usize, id: &str) -> String {
        let prefix = if kind == "Table" { "tab:" } else { "fig:" };
        format!("{kind}{REF_OPEN}{}{REF_CLOSE}", latex_label(prefix, id))
    }

    fn write(&self, report: &Report) -> Result<Written, Diagnostic> {
        let fragments: Vec<String> = report.views.iter().map(block::block_latex).collect();
        let (body, markers) = report.body_with(|i| format!("{}\n", block_marker(i)));
        let content = prose::prose_latex(&body, &fragments, &markers);
        let front = &report.doc.front;
        let mut out = if front.tex_body_only {
            fragment_opening()
        } else {
            document_opening(report)
        };
        out.push_str(content.trim());
        out.push_str("\n\n");
        out.push_str(&closing_sections(report));
        if !front.tex_body_only {
            out.push_str("\\end{document}\n");
        }
        Ok(Written::Text(out))
    }
}

/// A figure file's name without characters LaTeX or a file system could
/// misread: ASCII letters, digits and `-` kept, other bytes as `+XX`.
fn file_stem(name: &str) -> String {
    latex_label("", name)
        .replace('.', "+2E")
        .replace(':', "+3A")
        .replace('_', "+5F")
}

/// The comment atop a fragment: what it is and the packages it needs.
fn fragment_opening() -> String {
    let mut out = format!(
        "% The body of a report written by sheaf {}, for \\input into a LaTeX document.\n% Its preamble needs:\n",
        crate::VERSION
    );
    for package in FRAGMENT_PACKAGES {
        out.push_str(&format!("%   {package}\n"));
    }
    out.push('\n');
    out
}

/// The preamble, the title block and, with `contents: yes`, the contents.
fn document_opening(report: &Report) -> String {
    let front = &report.doc.front;
    let paper = match front.paper {
        crate::doc::Paper::A4 => "a4paper",
        crate::doc::Paper::Letter => "letterpaper",
    };
    let mut out = format!(
        "% Written by sheaf {}. Run pdflatex until it no longer asks for a rerun (twice;\n% three times with a table of contents), so that references find their numbers.\n",
        crate::VERSION
    );
    for line in [
        "\\documentclass[11pt]{article}",
        &format!("\\usepackage[{paper},margin=25mm]{{geometry}}"),
        "\\usepackage[utf8]{inputenc}",
        "\\usepackage[T1]{fontenc}",
        "\\usepackage{lmodern}",
        "\\usepackage{booktabs}",
        "\\usepackage{graphicx}",
        "\\usepackage[hidelinks]{hyperref}",
        // Reports hold many tables and figures; LaTeX holds 18 waiting
        // floats unless told otherwise.
        "\\extrafloats{100}",
        // Long names in typewriter type cannot be hyphenated.
        "\\setlength{\\emergencystretch}{2em}",
    ] {
        out.push_str(line);
        out.push('\n');
    }
    let optional = |v: &Option<String>| v.as_deref().map(latex_escape).unwrap_or_default();
    out.push_str(&format!(
        "\\title{{{}}}\n\\author{{{}}}\n\\date{{{}}}\n",
        latex_escape(&report.title()),
        optional(&front.author),
        optional(&front.date)
    ));
    out.push_str("\n\\begin{document}\n\\maketitle\n");
    if front.contents {
        out.push_str("\\tableofcontents\n\\listoftables\n\\listoffigures\n\\clearpage\n");
    }
    out.push('\n');
    out
}

/// An unnumbered section (listed in the contents when there are any).
fn unnumbered_section(title: &str) -> String {
    format!("\\section*{{{title}}}\n\\addcontentsline{{toc}}{{section}}{{{title}}}\n")
}

/// The cautions and the provenance section.
fn closing_sections(report: &Report) -> String {
    let mut out = unnumbered_section("Reading these results");
    out.push_str(&block::itemize(&report.cautions()));
    out.push_str(&unnumbered_section("Provenance"));
    let (name, bytes) = report.document;
    out.push_str(&format!(
        "Computed by sheaf {} from \\texttt{{{}}} (SHA-256 \\texttt{{{}}}). Every number above is recomputed from these inputs on each build; the same inputs give the same report byte for byte. Full-precision values are in \\texttt{{{}}}.\n\n",
        crate::VERSION,
        latex_code(name),
        hash(&sha256_hex(bytes)),
        latex_code(report.results_name)
    ));
    let choices = report.choices();
    if !choices.is_empty() {
        out.push_str("Analysis choices in effect:\n");
        out.push_str(&block::itemize(&choices));
    }
    let acknowledged = report.acknowledged_items();
    if !acknowledged.is_empty() {
        out.push_str("Notes the author has acknowledged (planned exclusions, and kinds listed under \\texttt{acknowledge}):\n");
        out.push_str(&block::itemize(&acknowledged));
    }
    if !report.inputs.is_empty() {
        out.push_str(&inputs_table(report));
    }
    out
}

/// The inputs with their sizes and SHA-256, as a table (not a float).
fn inputs_table(report: &Report) -> String {
    let mut tabular = String::from(
        "\\begin{tabular}{@{}lrl@{}}\n\\toprule\nInput & Bytes & SHA-256 \\\\\n\\midrule\n",
    );
    for input in report.inputs {
        tabular.push_str(&block::row(&[
            format!("\\texttt{{{}}}", latex_code(&input.path)),
            input.size.to_string(),
            format!("\\texttt{{{}}}", latex_escape(&input.sha256)),
        ]));
    }
    tabular.push_str("\\bottomrule\n\\end{tabular}");
    format!(
        "\\begin{{center}}\\small\n{}\\end{{center}}\n",
        fit_to_width(&tabular)
    )
}

/// A SHA-256 in typewriter type, breakable between groups of 16 digits.
fn hash(hex: &str) -> String {
    let groups: Vec<String> = hex
        .as_bytes()
        .chunks(16)
        .map(|g| latex_escape(&String::from_utf8_lossy(g)))
        .collect();
    groups.join("\\allowbreak{}")
}

/// Sets `material` (a `tabular`) in a box and scales it down to the line
/// width when it is wider, so no table runs into the margin; narrower
/// tables keep their size. Needs only graphicx.
fn fit_to_width(material: &str) -> String {
    format!(
        "\\sbox0{{{material}}}%\n\\ifdim\\wd0>\\linewidth\\resizebox{{\\linewidth}}{{!}}{{\\usebox0}}\\else\\usebox0\\fi\n"
    )
}

/// A sentence of ours that may quote keys or names in backticks: the quoted
/// parts in typewriter type, all of it escaped.
fn code_spans(text: &str) -> String {
    let quotes = text.matches('`').count();
    let mut out = String::with_capacity(text.len() + 16);
    for (i, part) in text.split('`').enumerate() {
        // Odd parts sit between backticks (an unmatched last one stays plain).
        if i % 2 == 1 && quotes > i {
            out.push_str(&format!("\\texttt{{{}}}", latex_code(part)));
        } else {
            out.push_str(&latex_escape(part));
        }
    }
    out
}
