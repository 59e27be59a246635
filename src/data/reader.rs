//! Data formats: each is one reader (one file) registered in `READERS`,
//! chosen by the file's name. A reader turns a file's bytes into a table of
//! typed cells and says how a place in the file is named in messages.

use super::{CsvFormat, DataError, Table, spreadsheet};

/// What a block asks of the file beyond its columns.
#[derive(Debug, Clone, Copy)]
pub struct ReadOptions<'a> {
    pub csv: &'a CsvFormat,
    /// The sheet and cell range of a workbook.
    pub sheet: Option<&'a str>,
    pub range: Option<&'a str>,
}

/// A data format.
pub trait Reader: Sync {
    /// The format as a reader knows it ("CSV", "spreadsheet").
    fn name(&self) -> &'static str;
    /// Whether this reader takes a file, by its name.
    fn claims(&self, path: &str) -> bool;
    /// Whether rows can be read in chunks as they stream past, with exact
    /// decimals (the long-layout path of `data::scan`).
    fn streams_rows(&self) -> bool;
    /// Block keys that apply only to this format (`sheet`, `range`).
    fn own_keys(&self) -> &'static [&'static str];
    /// Reads the whole file into a table.
    fn read(&self, bytes: &[u8], options: ReadOptions) -> Result<Table, DataError>;
    /// Names a place in the file for messages; `None` where the usual
    /// `path:line:column` says it.
    fn place(&self, at: &FilePlace<'_>) -> Option<String>;
}

/// A place in a data file, as an error reports it.
pub struct FilePlace<'a> {
    pub path: &'a str,
    /// The sheet a block named (workbooks).
    pub sheet: Option<&'a str>,
    pub line: Option<usize>,
    pub column: Option<usize>,
}

/// Delimited text (RFC 4180), the format of every file no other reader claims.
pub struct Csv;

impl Reader for Csv {
    fn name(&self) -> &'static str {
        "CSV"
    }

    fn claims(&self, _path: &str) -> bool {
        true
    }

    fn streams_rows(&self) -> bool {
        true
    }

    fn own_keys(&self) -> &'static [&'static str] {
        &[]
    }

    fn read(&self, bytes: &[u8], options: ReadOptions) -> Result<Table, DataError> {
        Table::parse(bytes, options.csv)
    }

    fn place(&self, _: &FilePlace<'_>) -> Option<String> {
        None
    }
}

/// Workbooks (.xlsx, .xlsm, .xls, .ods): one sheet, optionally a range.
pub struct Spreadsheet;

impl Reader for Spreadsheet {
    fn name(&self) -> &'static str {
        "spreadsheet"
    }

    fn claims(&self, path: &str) -> bool {
        spreadsheet::is_spreadsheet(path)
    }

    fn streams_rows(&self) -> bool {
        false
    }

    fn own_keys(&self) -> &'static [&'static str] {
        &["sheet", "range"]
    }

    fn read(&self, bytes: &[u8], options: ReadOptions) -> Result<Table, DataError> {
        spreadsheet::read_sheet(bytes, options.sheet, options.range)
    }

    /// A workbook has rows and cells, not lines: name them, with the sheet.
    fn place(&self, at: &FilePlace<'_>) -> Option<String> {
        let FilePlace {
            path,
            sheet,
            line,
            column,
        } = *at;
        let sheet = sheet.map_or_else(|| "the first sheet".to_string(), |s| format!("sheet `{s}`"));
        Some(match (line, column) {
            (Some(row), Some(column)) => {
                format!("{path}, {sheet}, row {row}, column {column} of the table")
            }
            (Some(row), None) => format!("{path}, {sheet}, row {row}"),
            _ => path.to_string(),
        })
    }
}

/// Every data format, most specific first: the first that claims a file
/// reads it, and CSV claims every file. A new format is a reader in its own
/// file and one line here.
pub const READERS: &[&dyn Reader] = &[&Spreadsheet, &super::parquet::Parquet, &Csv];

/// The reader of the file at `path`.
pub fn reader_for(path: &str) -> &'static dyn Reader {
    READERS
        .iter()
        .copied()
        .find(|r| r.claims(path))
        .unwrap_or(&Csv)
}

/// Keys that some format takes but the reader of `path` does not, with
/// the formats that take them.
pub fn foreign_keys(path: &str) -> Vec<(&'static str, &'static dyn Reader)> {
    let own = reader_for(path);
    READERS
        .iter()
        .filter(|r| r.name() != own.name())
        .flat_map(|r| r.own_keys().iter().map(move |k| (*k, *r)))
        .collect()
}
