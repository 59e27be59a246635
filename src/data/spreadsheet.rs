//! Spreadsheet input (.xlsx, .xlsm, .xls, .ods) through calamine: one sheet
//! (the first, or `sheet:`), optionally a cell range (`range: A1:C31`),
//! turned into the same table a CSV file gives. Numbers are taken as
//! stored (shortest round-trip text), dates become ISO 8601 text, and each
//! row keeps its spreadsheet row number for messages.

use super::{DataError, Table, csv::Record};
use calamine::{Data, Reader, open_workbook_auto_from_rs};
use std::io::Cursor;

/// File name endings read as spreadsheets.
pub const EXTENSIONS: [&str; 4] = [".xlsx", ".xlsm", ".xls", ".ods"];

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
    if letters.is_empty() || letters.len() > 3 || digits.is_empty() {
        return None;
    }
    let col = letters.bytes().try_fold(0u32, |acc, b| {
        acc.checked_mul(26)?.checked_add(u32::from(b - b'A' + 1))
    })? - 1;
    let row = digits.parse::<u32>().ok()?.checked_sub(1)?;
    Some((row, col))
}

fn text_of(cell: &Data) -> String {
    match cell {
        Data::Empty => String::new(),
        Data::Int(i) => i.to_string(),
        // Rust prints the shortest text that reads back to the same double.
        Data::Float(f) => format!("{f}"),
        Data::String(s) => s.clone(),
        Data::Bool(b) => {
            if *b {
                "TRUE".into()
            } else {
                "FALSE".into()
            }
        }
        Data::DateTime(d) => {
            let (y, m, day, h, min, s, _) = d.to_ymd_hms_milli();
            if (h, min, s) == (0, 0, 0) {
                format!("{y:04}-{m:02}-{day:02}")
            } else {
                format!("{y:04}-{m:02}-{day:02}T{h:02}:{min:02}:{s:02}")
            }
        }
        Data::DateTimeIso(s) | Data::DurationIso(s) => s.clone(),
        Data::Error(e) => format!("#{e:?}"),
    }
}

/// Reads one sheet (and range) of a workbook into a table.
pub fn read_sheet(
    bytes: &[u8],
    sheet: Option<&str>,
    range: Option<&str>,
) -> Result<Table, DataError> {
    let mut book = open_workbook_auto_from_rs(Cursor::new(bytes.to_vec())).map_err(|e| {
        error(
            format!("cannot read the workbook: {e}"),
            "save it again as .xlsx or .ods, or export the sheet as CSV",
        )
    })?;
    let names = book.sheet_names();
    let name = match sheet {
        None => names.first().cloned().ok_or_else(|| {
            error(
                "the workbook has no sheets",
                "add a sheet with a header row",
            )
        })?,
        Some(s) => names
            .iter()
            .find(|n| n.as_str() == s)
            .cloned()
            .ok_or_else(|| {
                let listed = names
                    .iter()
                    .map(|n| format!("`{n}`"))
                    .collect::<Vec<_>>()
                    .join(", ");
                match crate::diag::nearest(s, names.iter().map(String::as_str)) {
                    Some(n) => error(
                        format!("no sheet named `{s}`"),
                        format!("did you mean `{n}`? The sheets are {listed}"),
                    ),
                    None => error(
                        format!("no sheet named `{s}`"),
                        format!("the sheets are {listed}"),
                    ),
                }
            })?,
    };
    let mut cells = book.worksheet_range(&name).map_err(|e| {
        error(
            format!("cannot read sheet `{name}`: {e}"),
            "check the sheet in a spreadsheet program",
        )
    })?;
    if let Some(r) = range {
        let (a, b) = r.split_once(':').ok_or_else(|| {
            error(
                format!("`{r}` is not a cell range"),
                "write a range such as `A1:C31`",
            )
        })?;
        let (start, end) = (cell_ref(a), cell_ref(b));
        let (Some(start), Some(end)) = (start, end) else {
            return Err(error(
                format!("`{r}` is not a cell range"),
                "write a range such as `A1:C31`",
            ));
        };
        if end.0 < start.0 || end.1 < start.1 {
            return Err(error(
                format!("the range `{r}` runs backwards"),
                "write the top-left cell first, e.g. `A1:C31`",
            ));
        }
        cells = cells.range(start, end);
    }
    let first_row = cells.start().map_or(0, |(r, _)| r as usize);
    let mut rows = cells.rows().enumerate().map(|(i, row)| Record {
        line: first_row + i + 1,
        fields: row.iter().map(text_of).collect(),
    });
    let head = rows.next().ok_or_else(|| {
        error(
            format!("sheet `{name}` is empty"),
            "a data sheet needs a header row naming its columns",
        )
    })?;
    let width = head
        .fields
        .iter()
        .rposition(|f| !f.trim().is_empty())
        .map_or(0, |i| i + 1);
    let header: Vec<String> = head.fields[..width]
        .iter()
        .map(|h| h.trim().to_string())
        .collect();
    if let Some(i) = header.iter().position(String::is_empty) {
        return Err(DataError {
            line: Some(head.line),
            column: Some(i + 1),
            message: format!("column {} has no name in the header row", i + 1),
            hint: None,
        });
    }
    let body: Vec<Record> = rows
        .filter(|r| r.fields.iter().any(|f| !f.trim().is_empty()))
        .map(|mut r| {
            r.fields.resize(width, String::new());
            r
        })
        .collect();
    Ok(Table {
        header,
        header_line: head.line,
        rows: body,
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
    }
}
