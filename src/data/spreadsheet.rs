//! Spreadsheet input (.xlsx, .xlsm, .xls, .ods) through calamine: one sheet
//! (the first, or `sheet:`), optionally a cell range (`range: A1:C31`),
//! turned into the same table a CSV file gives. Numbers are taken as
//! stored (shortest round-trip text), dates become ISO 8601 text, and each
//! row keeps its spreadsheet row number for messages.
//!
//! A workbook is a small file that can describe a huge table, so every size
//! is checked before anything that size is allocated: the bytes its zip
//! parts unpack to ([`MAX_UNPACKED_BYTES`], counted while inflating, not
//! taken from the declared sizes), the cells of the sheet's used area or of
//! the `range` ([`MAX_CELLS`]), and the sheet limits of Office Open XML.
//! Cells are collected sparsely and the table is laid out only once its
//! area is known to be within bounds.

use super::{CellProblem, DataError, Table, csv::Record};
use calamine::{Data, DataRef, Reader, Sheets, open_workbook_auto_from_rs};
use std::io::{Cursor, Read};

/// File name endings read as spreadsheets.
pub const EXTENSIONS: [&str; 4] = [".xlsx", ".xlsm", ".xls", ".ods"];

/// Most bytes the parts of a zip-based workbook (.xlsx, .xlsm, .ods) may
/// unpack to, all parts together.
pub const MAX_UNPACKED_BYTES: u64 = 256 << 20;

/// Most cells (rows × columns) of the area read: the used area of the
/// sheet, or the `range`.
pub const MAX_CELLS: u64 = 10_000_000;

/// The sheet limits of Office Open XML (ECMA-376): rows and columns.
const SHEET_ROWS: u32 = 1 << 20;
const SHEET_COLUMNS: u32 = 1 << 14;

/// True when `path` names a spreadsheet.
pub fn is_spreadsheet(path: &str) -> bool {
    let lower = path.to_ascii_lowercase();
    EXTENSIONS.iter().any(|e| lower.ends_with(e))
}

fn error(message: impl Into<String>, hint: impl Into<String>) -> DataError {
    DataError {
        line: None,
        column: None,
        message: message.into(),
        hint: Some(hint.into()),
    }
}

/// "B3" → (row 2, column 1), zero-based.
fn cell_ref(text: &str) -> Option<(u32, u32)> {
    let text = text.trim().to_ascii_uppercase();
    let letters: String = text
        .chars()
        .take_while(|c| c.is_ascii_alphabetic())
        .collect();
    let digits = &text[letters.len()..];
    if letters.is_empty() || letters.len() > 3 || digits.is_empty() || digits.len() > 9 {
        return None;
    }
    let col = letters.bytes().try_fold(0u32, |acc, b| {
        acc.checked_mul(26)?.checked_add(u32::from(b - b'A' + 1))
    })? - 1;
    let row = digits.parse::<u32>().ok()?.checked_sub(1)?;
    Some((row, col))
}

/// (row 2, column 1), zero-based → "B3".
pub fn cell_name(row: u64, column: u64) -> String {
    format!("{}{}", column_letters(column), row + 1)
}

/// Column 0 → "A", 27 → "AB".
fn column_letters(column: u64) -> String {
    let mut letters = Vec::new();
    let mut n = column + 1;
    while n > 0 {
        let rem = ((n - 1) % 26) as u8;
        letters.push(char::from(b'A' + rem));
        n = (n - 1) / 26;
    }
    letters.iter().rev().collect()
}

/// A cell's text, or what is wrong with it.
enum CellText {
    Text(String),
    /// A formula error such as `#DIV/0!`.
    Error(String),
    /// A cell element with no value: a formula whose result was never
    /// stored (a file written by a program that does not calculate).
    NoValue,
}

fn date_text(d: &calamine::ExcelDateTime) -> String {
    let (y, m, day, h, min, s, _) = d.to_ymd_hms_milli();
    if (h, min, s) == (0, 0, 0) {
        format!("{y:04}-{m:02}-{day:02}")
    } else {
        format!("{y:04}-{m:02}-{day:02}T{h:02}:{min:02}:{s:02}")
    }
}

fn bool_text(b: bool) -> String {
    if b { "TRUE".into() } else { "FALSE".into() }
}

fn text_of(cell: &Data) -> CellText {
    CellText::Text(match cell {
        Data::Empty => String::new(),
        Data::Int(i) => i.to_string(),
        // Rust prints the shortest text that reads back to the same double.
        Data::Float(f) => format!("{f}"),
        Data::String(s) => s.clone(),
        Data::Bool(b) => bool_text(*b),
        Data::DateTime(d) => date_text(d),
        Data::DateTimeIso(s) | Data::DurationIso(s) => s.clone(),
        Data::Error(e) => return CellText::Error(e.to_string()),
    })
}

fn text_of_ref(cell: DataRef<'_>) -> CellText {
    CellText::Text(match cell {
        // The reader hands out a cell only for an element with content, so
        // an empty one held a formula and no stored result.
        DataRef::Empty => return CellText::NoValue,
        DataRef::Int(i) => i.to_string(),
        DataRef::Float(f) => format!("{f}"),
        DataRef::String(s) => s,
        DataRef::SharedString(s) => s.to_string(),
        DataRef::Bool(b) => bool_text(b),
        DataRef::DateTime(d) => date_text(&d),
        DataRef::DateTimeIso(s) | DataRef::DurationIso(s) => s,
        DataRef::Error(e) => return CellText::Error(e.to_string()),
    })
}

/// A zip-based workbook's parts, inflated into nothing while counting: the
/// declared sizes cannot be trusted, so the bytes themselves are counted,
/// and the count stops just past the limit.
fn check_unpacked(bytes: &[u8]) -> Result<(), DataError> {
    let Ok(mut archive) = zip::ZipArchive::new(Cursor::new(bytes)) else {
        // Not a readable zip: calamine says what is wrong with it.
        return Ok(());
    };
    let mut total: u64 = 0;
    for i in 0..archive.len() {
        let Ok(part) = archive.by_index(i) else {
            continue;
        };
        let name = part.name().to_string();
        let declared = part.size();
        let budget = MAX_UNPACKED_BYTES - total;
        let is_sheet = name.starts_with("xl/worksheets/") && name.ends_with(".xml");
        let mut references = ReferenceCheck::default();
        let inflated = if declared > budget {
            declared
        } else if is_sheet {
            std::io::copy(&mut part.take(budget + 1), &mut references).unwrap_or(0)
        } else {
            std::io::copy(&mut part.take(budget + 1), &mut std::io::sink()).unwrap_or(0)
        };
        if let Some(bad) = references.bad {
            return Err(error(
                format!(
                    "the sheet part `{name}` holds the cell reference `{bad}`, which is not a cell of a worksheet"
                ),
                "a worksheet has columns A to XFD and rows 1 to 1048576; the file is damaged or was not written by a spreadsheet program: save it again, or export the sheet as CSV",
            ));
        }
        total += inflated.min(budget + 1);
        if total > MAX_UNPACKED_BYTES {
            return Err(error(
                format!(
                    "the workbook unpacks to more than {} MiB (its part `{name}` alone to {})",
                    MAX_UNPACKED_BYTES >> 20,
                    if declared > budget {
                        format!("{declared} bytes, as declared")
                    } else {
                        "more than the rest of that budget".to_string()
                    }
                ),
                "sheaf reads workbooks whose parts unpack to at most 256 MiB; export the sheet as CSV, which is read in chunks whatever its size",
            ));
        }
    }
    Ok(())
}

/// Checks, while a sheet part inflates, that every `r="…"` attribute (cells
/// and rows) is a reference a worksheet can hold. The spreadsheet library
/// accumulates an overlong reference in 32 bits, which overflows (a panic in
/// checked builds, a wrong cell otherwise); refusing it first is cheaper than
/// trusting it.
#[derive(Default)]
struct ReferenceCheck {
    /// How much of ` r="` has been matched, then 4 while inside the value.
    matched: usize,
    value: Vec<u8>,
    bad: Option<String>,
}

impl ReferenceCheck {
    const OPEN: &'static [u8] = b" r=\"";

    fn finish_value(&mut self) {
        let v = &self.value;
        let letters = v.iter().take_while(|b| b.is_ascii_alphabetic()).count();
        let digits = &v[letters..];
        let column_ok =
            letters <= 3 && (letters < 3 || v[..3].to_ascii_uppercase().as_slice() <= &b"XFD"[..]);
        let row_ok = !digits.is_empty()
            && digits.len() <= 7
            && digits.iter().all(u8::is_ascii_digit)
            && std::str::from_utf8(digits)
                .ok()
                .and_then(|d| d.parse::<u32>().ok())
                .is_some_and(|r| (1..=1_048_576).contains(&r));
        if !(column_ok && row_ok) && self.bad.is_none() {
            let shown: String = String::from_utf8_lossy(v).chars().take(40).collect();
            self.bad = Some(shown);
        }
        self.value.clear();
    }
}

impl std::io::Write for ReferenceCheck {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        for &b in buf {
            if self.matched == Self::OPEN.len() {
                if b == b'"' {
                    self.finish_value();
                    self.matched = 0;
                } else if self.value.len() <= 16 {
                    self.value.push(b);
                } else {
                    // Longer than any reference: judge what was read.
                    self.finish_value();
                    self.matched = 0;
                }
            } else if b == Self::OPEN[self.matched] {
                self.matched += 1;
            } else {
                self.matched = usize::from(b == Self::OPEN[0]);
            }
        }
        Ok(buf.len())
    }

    fn flush(&mut self) -> std::io::Result<()> {
        Ok(())
    }
}

/// The cells with content of one sheet, sparsely, as (row, column, text).
type Cells = Vec<(u32, u32, CellText)>;

/// Reads the sheet's cells without laying out its used area: for .xlsx a
/// stream of cells (at most [`MAX_CELLS`] of them); other formats through
/// calamine's whole-sheet reader, which their formats bound.
fn sheet_cells(book: &mut Sheets<Cursor<&[u8]>>, name: &str) -> Result<Cells, DataError> {
    let failed = |e: String| {
        error(
            format!("cannot read sheet `{name}`: {e}"),
            "check the sheet in a spreadsheet program, or export it as CSV",
        )
    };
    let mut cells = Vec::new();
    if let Sheets::Xlsx(x) = book {
        let mut reader = x
            .worksheet_cells_reader(name)
            .map_err(|e| failed(e.to_string()))?;
        while let Some(cell) = reader.next_cell().map_err(|e| failed(e.to_string()))? {
            let (row, col) = cell.get_position();
            if cells.len() as u64 >= MAX_CELLS {
                return Err(error(
                    format!("sheet `{name}` has more than {MAX_CELLS} cells with content"),
                    "export the sheet as CSV, which is read in chunks whatever its size",
                ));
            }
            cells.push((row, col, text_of_ref(cell.get_value().clone())));
        }
        return Ok(cells);
    }
    let range = book
        .worksheet_range(name)
        .map_err(|e| failed(e.to_string()))?;
    for (row, col, value) in range.used_cells() {
        let (r0, c0) = range.start().unwrap_or((0, 0));
        cells.push((r0 + row as u32, c0 + col as u32, text_of(value)));
    }
    Ok(cells)
}

/// The area read, zero-based and inclusive: the `range`, or the used area.
#[derive(Clone, Copy)]
struct Area {
    start: (u32, u32),
    end: (u32, u32),
}

impl Area {
    fn rows(self) -> u64 {
        u64::from(self.end.0 - self.start.0) + 1
    }
    fn columns(self) -> u64 {
        u64::from(self.end.1 - self.start.1) + 1
    }
    fn text(self) -> String {
        format!(
            "{}:{}",
            cell_name(self.start.0.into(), self.start.1.into()),
            cell_name(self.end.0.into(), self.end.1.into())
        )
    }
    fn contains(self, row: u32, col: u32) -> bool {
        (self.start.0..=self.end.0).contains(&row) && (self.start.1..=self.end.1).contains(&col)
    }
}

/// Parses and checks `range:` against the sheet limits and [`MAX_CELLS`].
fn requested_area(r: &str, sheet: &str) -> Result<Area, DataError> {
    let not_a_range = || {
        error(
            format!("`{r}` is not a cell range"),
            "write a range such as `A1:C31`",
        )
    };
    let (a, b) = r.split_once(':').ok_or_else(not_a_range)?;
    let (Some(start), Some(end)) = (cell_ref(a), cell_ref(b)) else {
        return Err(not_a_range());
    };
    if end.0 < start.0 || end.1 < start.1 {
        return Err(error(
            format!("the range `{r}` runs backwards"),
            "write the top-left cell first, e.g. `A1:C31`",
        ));
    }
    if end.0 >= SHEET_ROWS || end.1 >= SHEET_COLUMNS {
        return Err(error(
            format!(
                "the range `{r}` of sheet `{sheet}` reaches beyond the last cell a sheet can have (XFD1048576)"
            ),
            "give the cells that hold the table, e.g. `range: A1:D200`",
        ));
    }
    let area = Area { start, end };
    check_area(area, sheet, "the range")?;
    Ok(area)
}

fn check_area(area: Area, sheet: &str, what: &str) -> Result<(), DataError> {
    let cells = area.rows() * area.columns();
    if cells > MAX_CELLS {
        return Err(error(
            format!(
                "{what} {} of sheet `{sheet}` spans {} rows × {} columns = {cells} cells, more than the {MAX_CELLS} sheaf reads",
                area.text(),
                area.rows(),
                area.columns()
            ),
            if what == "the range" {
                "give a `range:` that covers only the table's cells, e.g. `range: A1:D200`"
            } else {
                "a stray cell far from the table widens the used area: clear it, or give the table's cells with `range:` (e.g. `range: A1:D200`)"
            },
        ));
    }
    Ok(())
}

/// Picks the sheet: the named one, or the first.
fn sheet_name(names: &[String], sheet: Option<&str>) -> Result<String, DataError> {
    let Some(s) = sheet else {
        return names.first().cloned().ok_or_else(|| {
            error(
                "the workbook has no sheets",
                "add a sheet with a header row",
            )
        });
    };
    if let Some(n) = names.iter().find(|n| n.as_str() == s) {
        return Ok(n.clone());
    }
    let listed = names
        .iter()
        .map(|n| format!("`{n}`"))
        .collect::<Vec<_>>()
        .join(", ");
    Err(
        match crate::diag::nearest(s, names.iter().map(String::as_str)) {
            Some(n) => error(
                format!("no sheet named `{s}`"),
                format!("did you mean `{n}`? The sheets are {listed}"),
            ),
            None => error(
                format!("no sheet named `{s}`"),
                format!("the sheets are {listed}"),
            ),
        },
    )
}

/// Reads one sheet (and range) of a workbook into a table.
pub fn read_sheet(
    bytes: &[u8],
    sheet: Option<&str>,
    range: Option<&str>,
) -> Result<Table, DataError> {
    check_unpacked(bytes)?;
    let mut book = open_workbook_auto_from_rs(Cursor::new(bytes)).map_err(|e| {
        error(
            format!("cannot read the workbook: {e}"),
            "save it again as .xlsx or .ods, or export the sheet as CSV",
        )
    })?;
    let name = sheet_name(&book.sheet_names(), sheet)?;
    let requested = range.map(|r| requested_area(r, &name)).transpose()?;
    let mut cells = sheet_cells(&mut book, &name)?;
    if let Some(area) = requested {
        cells.retain(|(r, c, _)| area.contains(*r, *c));
    }
    let has_content = |t: &CellText| !matches!(t, CellText::Text(s) if s.trim().is_empty());
    let area = match requested {
        Some(area) => area,
        None => {
            let used = cells.iter().filter(|(_, _, t)| has_content(t));
            let (mut start, mut end) = ((u32::MAX, u32::MAX), (0, 0));
            for (r, c, _) in used {
                start = (start.0.min(*r), start.1.min(*c));
                end = (end.0.max(*r), end.1.max(*c));
            }
            if start.0 == u32::MAX {
                return Err(error(
                    format!("sheet `{name}` is empty"),
                    "a data sheet needs a header row naming its columns",
                ));
            }
            let area = Area { start, end };
            check_area(area, &name, "the used area")?;
            area
        }
    };
    lay_out(cells, area, &name)
}

/// Lays the cells of `area` out as a table: its first row is the header,
/// and the header's last named column sets the width.
fn lay_out(mut cells: Cells, area: Area, sheet: &str) -> Result<Table, DataError> {
    cells.sort_by_key(|(r, c, _)| (*r, *c));
    let header_row = area.start.0;
    let head: Vec<(u32, String)> = cells
        .iter()
        .filter(|(r, c, _)| *r == header_row && area.contains(*r, *c))
        .filter_map(|(_, c, t)| match t {
            CellText::Text(s) if !s.trim().is_empty() => Some((*c - area.start.1, s.clone())),
            _ => None,
        })
        .collect();
    let Some(&(last, _)) = head.last() else {
        return Err(error(
            format!(
                "the first row of the area read ({}, row {}) of sheet `{sheet}` is empty",
                area.text(),
                header_row + 1
            ),
            "the first row must name the columns; give the table's cells with `range:`",
        ));
    };
    let width = last as usize + 1;
    let mut header = vec![String::new(); width];
    for (c, s) in head {
        header[c as usize] = s.trim().to_string();
    }
    if let Some(i) = header.iter().position(String::is_empty) {
        return Err(DataError {
            line: Some(header_row as usize + 1),
            column: Some(i + 1),
            message: format!("column {} has no name in the header row", i + 1),
            hint: Some(
                "name every column of the header row, or give the table's cells with `range:`"
                    .into(),
            ),
        });
    }
    let mut rows: Vec<Record> = Vec::new();
    let mut problems = Vec::new();
    for (r, c, text) in cells {
        // Cells outside the area read (beside a `range`) are not the table's.
        if r == header_row || !area.contains(r, c) {
            continue;
        }
        let col = (c - area.start.1) as usize;
        if col >= width {
            continue;
        }
        let line = r as usize + 1;
        if rows.last().is_none_or(|row| row.line != line) {
            rows.push(Record {
                line,
                fields: vec![String::new(); width],
            });
        }
        let Some(row) = rows.last_mut() else { continue };
        match text {
            CellText::Text(s) => row.fields[col] = s,
            CellText::Error(e) => {
                problems.push(CellProblem {
                    line,
                    column: col,
                    message: format!(
                        "cell {} of sheet `{sheet}` holds the formula error `{e}`, not a value",
                        cell_name(r.into(), c.into())
                    ),
                    hint: "correct the formula (or its inputs) in the workbook, or clear the cell to mark the value missing".into(),
                });
                row.fields[col] = e;
            }
            CellText::NoValue => problems.push(CellProblem {
                line,
                column: col,
                message: format!(
                    "cell {} of sheet `{sheet}` holds a formula whose result was never stored in the file",
                    cell_name(r.into(), c.into())
                ),
                hint: "open the workbook in a spreadsheet program and save it (which stores every result), or export the sheet as CSV".into(),
            }),
        }
    }
    let flagged: std::collections::BTreeSet<usize> = problems.iter().map(|p| p.line).collect();
    rows.retain(|r| r.fields.iter().any(|f| !f.trim().is_empty()) || flagged.contains(&r.line));
    Ok(Table {
        header,
        header_line: header_row as usize + 1,
        rows,
        problems,
        sheet: Some(sheet.to_string()),
    })
}

#[cfg(test)]
mod tests {
    #[test]
    fn cell_references() {
        assert_eq!(super::cell_ref("A1"), Some((0, 0)));
        assert_eq!(super::cell_ref("c31"), Some((30, 2)));
        assert_eq!(super::cell_ref("AA10"), Some((9, 26)));
        assert_eq!(super::cell_ref("1A"), None);
        assert_eq!(super::cell_ref("A99999999999"), None);
    }

    #[test]
    fn cell_names_invert_references() {
        for (text, row, col) in [
            ("A1", 0, 0),
            ("Z9", 8, 25),
            ("AA10", 9, 26),
            ("XFD1048576", 1_048_575, 16_383),
        ] {
            assert_eq!(super::cell_name(row, col), text);
            assert_eq!(super::cell_ref(text), Some((row as u32, col as u32)));
        }
    }
}
