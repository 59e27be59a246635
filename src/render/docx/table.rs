//! Tables as native, editable Word tables in the `ReportTable` style: a
//! header row that repeats on every page a table runs over, rows that do
//! not split across pages, numbers right-aligned, and column widths from
//! the cells' lengths, scaled down to the text width when the table would
//! be wider. A report table has its caption above ("Table 3. …", the number
//! a `SEQ` field) and its notes below.

use super::xml::{Props, code_run, code_spans, numbered_caption, paragraph, plain};
use crate::render::view::TableView;

/// One cell: its runs (written) and its text, for the column's width.
pub(super) struct Cell {
    pub(super) runs: String,
    pub(super) text: String,
    /// Set in a monospaced face at this size (half-points), which the
    /// width follows.
    pub(super) mono: Option<u32>,
}

impl Cell {
    pub(super) fn text(text: &str) -> Cell {
        Cell {
            runs: plain(text),
            text: text.to_string(),
            mono: None,
        }
    }

    /// Code (a file name, a hash) in a monospaced face of `size` half-points.
    pub(super) fn code(text: &str, size: u32) -> Cell {
        Cell {
            runs: code_run(text, size),
            text: text.to_string(),
            mono: Some(size),
        }
    }

    /// The width of its text and of its longest word.
    fn widths(&self) -> (u32, u32) {
        match self.mono {
            // 0.6 em a character, the width of the common monospaced faces.
            Some(size) => {
                let width = self.text.chars().count() as u32 * size * 6;
                let word = self
                    .text
                    .split_whitespace()
                    .map(|w| w.chars().count())
                    .max();
                (width, word.unwrap_or(0) as u32 * size * 6)
            }
            None => (text_width(&self.text), longest_word(&self.text)),
        }
    }
}

/// How wide a text of 9 pt type is taken to be, in twentieths of a point:
/// narrow characters 1/3 em, digits 0.64 em, capitals and wide signs
/// 0.78 em, the rest (most small letters) 0.58 em. These are the widths of
/// the wider common faces (those a word processor uses when the styles'
/// fonts are missing), so the columns hold their text in any of them.
fn text_width(text: &str) -> u32 {
    text.chars()
        .map(|c| match c {
            ' ' | '.' | ',' | ':' | ';' | '\'' | '|' | '!' | '(' | ')' | '[' | ']' | 'i' | 'j'
            | 'l' | 't' | 'f' | 'r' => 60,
            '0'..='9' => 115,
            'm' | 'w' | '%' | '−' | '—' | '×' | '±' | '≤' | '≥' => 140,
            c if c.is_uppercase() => 140,
            _ => 105,
        })
        .sum()
}

/// The width of a text's longest word.
fn longest_word(text: &str) -> u32 {
    text.split_whitespace().map(text_width).max().unwrap_or(0)
}

/// Left and right padding of a cell (the style's cell margins) and a little
/// slack.
const CELL_PADDING: u32 = 2 * 85 + 60;

/// What a column asks for: the width of its longest cell (a header may
/// wrap between words, so it asks for its longest word, in bold a fifth
/// wider), and the least it can take without breaking a word.
fn column_needs(header: &[Cell], rows: &[Vec<Cell>]) -> Vec<(u32, u32)> {
    (0..header.len())
        .map(|k| {
            let heading = longest_word(&header[k].text);
            let heading = heading + heading / 5;
            let cells = rows.iter().filter_map(|r| r.get(k));
            let (mut full, mut word) = (heading.max(100), heading);
            for cell in cells {
                let (width, longest) = cell.widths();
                full = full.max(width);
                word = word.max(longest);
            }
            (full + CELL_PADDING, word + CELL_PADDING)
        })
        .collect()
}

/// The narrowest a text column is made when its words cannot all fit
/// (about five characters and the padding).
const NARROWEST: u32 = 500 + CELL_PADDING;

/// Column widths in twentieths of a point: each as wide as its longest
/// cell. A table wider than `text_width` narrows its widest text columns
/// first, keeping columns of numbers whole: down to their longest words if
/// that is enough (text wraps between words), else further (long words
/// break). Only where the numbers alone are too wide does every column
/// shrink in proportion.
fn widths(
    header: &[Cell],
    rows: &[Vec<Cell>],
    align: &[Option<&str>],
    text_width: u32,
) -> Vec<u32> {
    let needs = column_needs(header, rows);
    let full: Vec<u32> = needs.iter().map(|n| n.0).collect();
    if full.iter().sum::<u32>() <= text_width {
        return full;
    }
    let numeric = |k: usize| align.get(k).copied().flatten() == Some("right");
    // The widths with text columns capped at `cap`, and never below their
    // longest word (`whole_words`) or `NARROWEST`.
    let capped = |cap: u32, whole_words: bool| -> Vec<u32> {
        needs
            .iter()
            .enumerate()
            .map(|(k, &(full, word))| {
                let floor = if whole_words { word } else { NARROWEST };
                if numeric(k) {
                    full
                } else {
                    full.min(cap.max(floor))
                }
            })
            .collect()
    };
    let fits =
        |cap: u32, whole_words: bool| capped(cap, whole_words).iter().sum::<u32>() <= text_width;
    let Some(whole_words) = [true, false].into_iter().find(|&w| fits(0, w)) else {
        let total: u32 = full.iter().sum();
        return full
            .iter()
            .map(|&w| (u64::from(w) * u64::from(text_width) / u64::from(total)) as u32)
            .collect();
    };
    // The widest cap that fits, by bisection (the sum grows with the cap).
    let (mut low, mut high) = (0, full.iter().copied().max().unwrap_or(0));
    while low < high {
        let mid = (low + high).div_ceil(2);
        if fits(mid, whole_words) {
            low = mid;
        } else {
            high = mid - 1;
        }
    }
    capped(low, whole_words)
}

/// Tables of at most this many rows are kept on one page.
const KEEP_TOGETHER_ROWS: usize = 20;

/// One row: header rows repeat on each page and carry the rule below them.
fn row(cells: &[Cell], widths: &[u32], align: &[Option<&str>], header: bool, keep: bool) -> String {
    let mut out = String::from("<w:tr><w:trPr><w:cantSplit/>");
    if header {
        out.push_str("<w:tblHeader/>");
    }
    out.push_str("</w:trPr>");
    for (k, width) in widths.iter().enumerate() {
        let borders = if header {
            r#"<w:tcBorders><w:bottom w:val="single" w:sz="6" w:space="0" w:color="000000"/></w:tcBorders>"#
        } else {
            ""
        };
        let props = Props {
            style: Some(if header { "TableHeading" } else { "TableText" }),
            keep_next: keep,
            align: align.get(k).copied().flatten(),
            ..Props::default()
        };
        let runs = cells.get(k).map_or("", |c| c.runs.as_str());
        out.push_str(&format!(
            r#"<w:tc><w:tcPr><w:tcW w:w="{width}" w:type="dxa"/>{borders}</w:tcPr>{}</w:tc>"#,
            paragraph(&props, runs).trim_end()
        ));
    }
    out.push_str("</w:tr>\n");
    out
}

/// A table: header row, body rows, each column's alignment (`right`,
/// `center`, or the style's, left).
pub(super) fn table(
    header: &[Cell],
    rows: &[Vec<Cell>],
    align: &[Option<&str>],
    text_width: u32,
) -> String {
    let widths = widths(header, rows, align, text_width);
    let total: u32 = widths.iter().sum();
    let mut out = format!(
        r#"<w:tbl><w:tblPr><w:tblStyle w:val="ReportTable"/><w:tblW w:w="{total}" w:type="dxa"/><w:tblLayout w:type="fixed"/><w:tblLook w:val="0620" w:firstRow="1" w:lastRow="0" w:firstColumn="0" w:lastColumn="0" w:noHBand="1" w:noVBand="1"/></w:tblPr><w:tblGrid>"#
    );
    for w in &widths {
        out.push_str(&format!(r#"<w:gridCol w:w="{w}"/>"#));
    }
    out.push_str("</w:tblGrid>\n");
    // A short table stays on one page with its caption: each row keeps
    // with the next (a longer one runs on, its header repeated).
    let short = rows.len() <= KEEP_TOGETHER_ROWS;
    out.push_str(&row(header, &widths, align, true, true));
    for (k, cells) in rows.iter().enumerate() {
        out.push_str(&row(
            cells,
            &widths,
            align,
            false,
            short && k + 1 < rows.len(),
        ));
    }
    out.push_str("</w:tbl>\n");
    out
}

/// A report table: caption above, the table, its notes below.
pub(super) fn report_table(view: &TableView, text_width: u32) -> String {
    let caption = Props {
        keep_next: true,
        ..Props::styled("TableCaption")
    };
    let mut out = paragraph(&caption, &numbered_caption(&view.caption, "Table"));
    let header: Vec<Cell> = view.columns.iter().map(|c| Cell::text(&c.label)).collect();
    let align: Vec<Option<&str>> = view
        .columns
        .iter()
        .map(|c| c.numeric.then_some("right"))
        .collect();
    let rows: Vec<Vec<Cell>> = view
        .rows
        .iter()
        .map(|r| r.iter().map(|c| Cell::text(&c.text)).collect())
        .collect();
    out.push_str(&table(&header, &rows, &align, text_width));
    for note in &view.footnotes {
        out.push_str(&paragraph(&Props::styled("TableNote"), &code_spans(note)));
    }
    if view.footnotes.is_empty() {
        // Word needs a paragraph between two tables, else it joins them.
        out.push_str(&paragraph(&Props::styled("TableNote"), ""));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn text_columns_give_way_before_numbers_and_words_stay_whole() {
        let header = [Cell::text("Comparison"), Cell::text("p")];
        let rows = vec![vec![
            Cell::text("a long description of what was compared here"),
            Cell::text("0.001"),
        ]];
        let align = [None, Some("right")];
        let full = widths(&header, &rows, &align, 100_000);
        assert_eq!(full[1], text_width("0.001") + CELL_PADDING);
        // On 3000 twips the number keeps its width, the text takes the rest.
        let narrow = widths(&header, &rows, &align, 3000);
        assert_eq!(narrow[1], full[1]);
        assert!(narrow.iter().sum::<u32>() <= 3000, "{narrow:?}");
        assert!(narrow[0] >= longest_word("description") + CELL_PADDING);
        // Too narrow for the words: every column shrinks in proportion.
        let tiny = widths(&header, &rows, &align, 1000);
        assert!(tiny.iter().sum::<u32>() <= 1000, "{tiny:?}");
    }
}
