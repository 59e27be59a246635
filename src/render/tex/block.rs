//! One analysis block in LaTeX: its lead sentence, tables as `table` floats
//! (caption above, booktabs rules, numbers right-aligned, notes below),
//! figures as `figure` floats of the PNG files beside the report, notes and
//! warnings as lists.

use super::{code_spans, fit_to_width};
use crate::escape::{latex_escape, latex_label};
use crate::render::view::{BlockView, FigureView, TableView};

/// The LaTeX of one block.
pub(super) fn block_latex(view: &BlockView) -> String {
    let mut out = String::new();
    if let Some(heading) = &view.heading {
        out.push_str("\\par\\noindent\\textbf{");
        out.push_str(&latex_escape(heading));
        out.push_str("}\\par\n\n");
    }
    if let Some(lead) = &view.lead {
        out.push_str(&latex_escape(lead));
        out.push_str("\n\n");
    }
    for table in &view.tables {
        out.push_str(&table_float(table));
    }
    for figure in &view.figures {
        out.push_str(&figure_float(figure));
    }
    if !view.notes.is_empty() {
        out.push_str(&itemize(&view.notes));
    }
    if !view.warnings.is_empty() {
        out.push_str("\\par\\noindent\\textbf{Check before use:}\n");
        out.push_str(&itemize(&view.warnings));
    }
    for part in &view.parts {
        out.push_str(&block_latex(part));
    }
    out
}

/// Sentences of ours (which may quote names in backticks) as a list.
pub(super) fn itemize(items: &[impl AsRef<str>]) -> String {
    let mut out = String::from("\\begin{itemize}\n");
    for item in items {
        out.push_str("\\item{} ");
        out.push_str(&code_spans(item.as_ref()));
        out.push('\n');
    }
    out.push_str("\\end{itemize}\n\n");
    out
}

/// A caption without the number sheaf writes before it (`Table 2. `), which
/// LaTeX adds itself.
fn caption_body<'a>(caption: &'a str, kind: &str) -> &'a str {
    let Some(rest) = caption.strip_prefix(kind) else {
        return caption;
    };
    let digits = rest.trim_start_matches(|c: char| c.is_ascii_digit());
    match digits.strip_prefix(". ") {
        Some(body) if digits.len() < rest.len() => body,
        _ => caption,
    }
}

/// Rows in one float: with the caption, header and notes, a float of 40
/// rows in small type fits an A4 or letter page and most thesis layouts.
const ROWS_PER_FLOAT: usize = 40;

/// A table as floats: caption and label above, the rules and cells in a box
/// scaled down to the line width when wider, the notes below. A table too
/// long for one page is cut into floats of `ROWS_PER_FLOAT` rows, each
/// after the first headed "Table n (continued)" and repeating the header.
fn table_float(table: &TableView) -> String {
    let label = latex_label("tab:", &table.id);
    let header: Vec<String> = table
        .columns
        .iter()
        .map(|c| latex_escape(&c.label))
        .collect();
    let spec: String = table
        .columns
        .iter()
        .map(|c| if c.numeric { 'r' } else { 'l' })
        .collect();
    let chunks: Vec<&[Vec<_>]> = if table.rows.is_empty() {
        vec![&table.rows[..]]
    } else {
        table.rows.chunks(ROWS_PER_FLOAT).collect()
    };
    let mut out = String::new();
    for (k, rows) in chunks.iter().enumerate() {
        out.push_str("\\begin{table}[htbp]\n\\centering\n");
        if k == 0 {
            // Captions stand above tables: the space goes below them instead.
            out.push_str(
                "\\setlength{\\abovecaptionskip}{0pt}\\setlength{\\belowcaptionskip}{6pt}\n",
            );
            out.push_str(&format!(
                "\\caption{{{}}}\\label{{{label}}}\n",
                latex_escape(caption_body(&table.caption, "Table "))
            ));
        } else {
            out.push_str(&format!(
                "{{\\small Table~\\ref{{{label}}} (continued)}}\\par\\smallskip\n"
            ));
        }
        out.push_str("\\small\n");
        let mut tabular = format!("\\begin{{tabular}}{{@{{}}{spec}@{{}}}}\n\\toprule\n");
        tabular.push_str(&row(&header));
        tabular.push_str("\\midrule\n");
        for cells in rows.iter() {
            let texts: Vec<String> = cells.iter().map(|c| latex_escape(&c.text)).collect();
            tabular.push_str(&row(&texts));
        }
        tabular.push_str("\\bottomrule\n\\end{tabular}");
        out.push_str(&fit_to_width(&tabular));
        if k + 1 == chunks.len() {
            for note in &table.footnotes {
                out.push_str("\\par\\smallskip{\\raggedright\\footnotesize ");
                out.push_str(&code_spans(note));
                out.push_str("\\par}\n");
            }
        }
        out.push_str("\\end{table}\n\n");
    }
    out
}

/// One table row. A first cell that starts with `*` is shielded from the
/// previous row's `\\`, which would read it as its starred form.
pub(super) fn row(cells: &[String]) -> String {
    let mut line = cells.join(" & ");
    if line.starts_with('*') {
        line.insert_str(0, "{}");
    }
    line.push_str(" \\\\\n");
    line
}

/// A figure as a float: the PNG at most the line width and 40% of the page
/// height, its caption below.
fn figure_float(figure: &FigureView) -> String {
    let Some(file) = &figure.file else {
        return String::new();
    };
    format!(
        "\\begin{{figure}}[htbp]\n\\centering\n\\includegraphics[width=0.8\\linewidth,height=0.4\\textheight,keepaspectratio]{{{file}}}\n\\caption{{{}}}\\label{{{}}}\n\\end{{figure}}\n\n",
        latex_escape(caption_body(&figure.caption, "Figure ")),
        latex_label("fig:", &figure.id)
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn captions_lose_only_a_leading_number() {
        assert_eq!(caption_body("Table 12. Means.", "Table "), "Means.");
        assert_eq!(caption_body("Table of means.", "Table "), "Table of means.");
        assert_eq!(
            caption_body("Figure 3. Box plots.", "Figure "),
            "Box plots."
        );
        assert_eq!(caption_body("Table 3 means", "Table "), "Table 3 means");
    }
}
