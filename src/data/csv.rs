//! An RFC 4180 reader that remembers where every record starts.
//!
//! Quoted fields may hold delimiters, doubled quotes and line breaks; a UTF-8
//! byte-order mark is skipped; CRLF, LF and a lone CR all end records. Each
//! record keeps the 1-based line on which it starts, so errors can point into
//! the file. A line ends at LF, CRLF or a lone CR, wherever it stands (even
//! inside a quoted field), so that a chunked reader can count lines with
//! [`count_lines`] without parsing.

use std::fmt;

/// One parsed record and the file line where it starts.
#[derive(Debug, Clone, PartialEq)]
pub struct Record {
    pub line: usize,
    pub fields: Vec<String>,
}

/// A problem in the CSV text itself, with its 1-based line.
#[derive(Debug, Clone, PartialEq)]
pub struct CsvError {
    pub line: usize,
    pub message: String,
    pub hint: Option<String>,
}

impl fmt::Display for CsvError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "line {}: {}", self.line, self.message)
    }
}

/// Checks that `bytes` are UTF-8; the error names the line of the first bad byte.
pub fn utf8_text(bytes: &[u8], first_line: usize) -> Result<&str, CsvError> {
    std::str::from_utf8(bytes).map_err(|e| CsvError {
        line: first_line + count_lines(&bytes[..e.valid_up_to()]),
        message: "the file is not valid UTF-8".into(),
        hint: Some("save the file as UTF-8 (most spreadsheet programs offer 'CSV UTF-8')".into()),
    })
}

/// File signatures (leading bytes) of common formats that are not CSV text,
/// with what to call them and what to do.
const SIGNATURES: [(&[u8], &str, &str); 14] = [
    (
        b"PAR1",
        "a Parquet file",
        "a Parquet file is read as such when its name ends in .parquet: rename it",
    ),
    (
        b"PK\x03\x04",
        "a zip archive (an .xlsx, .xlsm or .ods workbook is one)",
        "a workbook is read as a spreadsheet when its name ends in .xlsx, .xlsm or .ods; otherwise unpack the archive",
    ),
    (
        b"PK\x05\x06",
        "an empty zip archive",
        "point `data` at the CSV file itself",
    ),
    (
        b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1",
        "a compound document (the format of .xls workbooks)",
        "a workbook is read as a spreadsheet when its name ends in .xls; otherwise export the table as CSV",
    ),
    (
        b"\x1f\x8b",
        "gzip-compressed",
        "decompress it first (e.g. `gunzip`), then point `data` at the CSV file",
    ),
    (
        b"\xfd7zXZ\x00",
        "xz-compressed",
        "decompress it first, then point `data` at the CSV file",
    ),
    (
        b"\x28\xb5\x2f\xfd",
        "zstd-compressed",
        "decompress it first, then point `data` at the CSV file",
    ),
    (
        b"7z\xbc\xaf\x27\x1c",
        "a 7z archive",
        "unpack it first, then point `data` at the CSV file",
    ),
    (
        b"%PDF-",
        "a PDF document",
        "tables in a PDF must be exported or retyped as CSV",
    ),
    (
        b"SQLite format 3\x00",
        "an SQLite database",
        "export the table as CSV (e.g. `sqlite3 -csv -header`)",
    ),
    (
        b"ARROW1",
        "an Arrow IPC (Feather) file",
        "export the table as CSV (UTF-8) from the program that wrote it",
    ),
    (
        b"\x89HDF",
        "an HDF5 file",
        "export the table as CSV (UTF-8) from the program that wrote it",
    ),
    (b"\x89PNG", "a PNG image", "point `data` at the CSV file"),
    (
        b"\xff\xd8\xff",
        "a JPEG image",
        "point `data` at the CSV file",
    ),
];

/// Refuses a file that is plainly not CSV text, saying what it is: a
/// known format by its leading bytes, UTF-16 text by its byte-order mark.
/// No signature holds a line feed, so the first chunk of a chunked read
/// holds the whole signature, as the whole file does.
pub fn not_text(bytes: &[u8]) -> Result<(), CsvError> {
    let refuse = |what: String, hint: &str| {
        Err(CsvError {
            line: 1,
            message: format!("the file is {what}, not CSV text"),
            hint: Some(hint.to_string()),
        })
    };
    if let Some((_, what, hint)) = SIGNATURES.iter().find(|(sig, _, _)| bytes.starts_with(sig)) {
        return refuse(what.to_string(), hint);
    }
    if bytes.starts_with(b"\xff\xfe") || bytes.starts_with(b"\xfe\xff") {
        return refuse(
            "UTF-16 text".into(),
            "save the file as UTF-8 (most spreadsheet programs offer 'CSV UTF-8')",
        );
    }
    Ok(())
}

/// Line ends in `bytes`: each LF, and each CR not followed by LF.
pub fn count_lines(bytes: &[u8]) -> usize {
    let lf = bytes.iter().filter(|b| **b == b'\n').count();
    let lone_cr = memchr::memchr_iter(b'\r', bytes)
        .filter(|&i| bytes.get(i + 1) != Some(&b'\n'))
        .count();
    lf + lone_cr
}

/// Splits `text` into records. Blank lines between records are skipped.
pub fn parse_records(bytes: &[u8], delimiter: u8) -> Result<Vec<Record>, CsvError> {
    not_text(bytes)?;
    let text = utf8_text(bytes, 1)?;
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    RecordParser::new(text, delimiter, 1).collect()
}

/// Reads records one at a time from `text`, which starts on `first_line`.
pub struct RecordParser<'a> {
    text: &'a str,
    delimiter: char,
    pos: usize,
    line: usize,
}

impl<'a> RecordParser<'a> {
    pub fn new(text: &'a str, delimiter: u8, first_line: usize) -> Self {
        RecordParser {
            text,
            delimiter: delimiter as char,
            pos: 0,
            line: first_line,
        }
    }

    /// Byte offset of the text not yet read.
    pub fn offset(&self) -> usize {
        self.pos
    }

    /// The line on which the text not yet read starts.
    pub fn line(&self) -> usize {
        self.line
    }

    fn parse_next(&mut self) -> Option<Result<Record, CsvError>> {
        let rest = &self.text[self.pos..];
        let mut chars = rest.char_indices().peekable();
        let mut line = self.line;
        let mut fields: Vec<String> = Vec::new();
        let mut field = String::new();
        let mut record_line = line;
        let mut in_record = false;
        let mut quoted_field = false;
        let delimiter = self.delimiter;
        let lone_cr = |next: Option<&(usize, char)>| next.map(|n| n.1) != Some('\n');

        while let Some((_, c)) = chars.next() {
            if !in_record {
                if c == '\n' || c == '\r' {
                    if c == '\n' || lone_cr(chars.peek()) {
                        line += 1;
                    }
                    continue;
                }
                in_record = true;
                record_line = line;
            }
            match c {
                '"' if field.is_empty() && !quoted_field => {
                    quoted_field = true;
                    let start_line = line;
                    loop {
                        match chars.next() {
                            None => {
                                return Some(Err(CsvError {
                                    line: start_line,
                                    message: "a quoted field is never closed".into(),
                                    hint: Some("add the closing double quote, or write a literal quote as \"\"".into()),
                                }));
                            }
                            Some((_, '"')) if chars.peek().map(|n| n.1) == Some('"') => {
                                chars.next();
                                field.push('"');
                            }
                            Some((_, '"')) => break,
                            Some((_, ch)) => {
                                if ch == '\n' || (ch == '\r' && lone_cr(chars.peek())) {
                                    line += 1;
                                }
                                field.push(ch);
                            }
                        }
                    }
                    // Only a delimiter or a line end may follow the closing quote.
                    match chars.peek().map(|n| n.1) {
                        None | Some('\n') | Some('\r') => {}
                        Some(ch) if ch == delimiter => {}
                        Some(ch) => {
                            return Some(Err(CsvError {
                                line,
                                message: format!("unexpected `{ch}` after a closing quote"),
                                hint: Some(
                                    "quote the whole field, and double any quote inside it".into(),
                                ),
                            }));
                        }
                    }
                }
                c if c == delimiter => {
                    fields.push(std::mem::take(&mut field));
                    quoted_field = false;
                }
                '\r' | '\n' => {
                    if c == '\r' && chars.peek().map(|n| n.1) == Some('\n') {
                        chars.next();
                    }
                    line += 1;
                    fields.push(field);
                    self.pos += chars.peek().map_or(rest.len(), |n| n.0);
                    self.line = line;
                    return Some(Ok(Record {
                        line: record_line,
                        fields,
                    }));
                }
                '"' => {
                    return Some(Err(CsvError {
                        line,
                        message: "a double quote inside an unquoted field".into(),
                        hint: Some("quote the whole field and write the quote as \"\"".into()),
                    }));
                }
                c => field.push(c),
            }
        }
        self.pos = self.text.len();
        self.line = line;
        in_record.then(|| {
            fields.push(field);
            Ok(Record {
                line: record_line,
                fields,
            })
        })
    }
}

impl Iterator for RecordParser<'_> {
    type Item = Result<Record, CsvError>;

    /// The next record; after an error the parser is exhausted.
    fn next(&mut self) -> Option<Self::Item> {
        let next = self.parse_next();
        if matches!(next, Some(Err(_))) {
            self.pos = self.text.len();
        }
        next
    }
}

#[cfg(test)]
#[path = "csv_tests.rs"]
mod tests;
