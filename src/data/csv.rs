//! An RFC 4180 reader that remembers where every record starts.
//!
//! Quoted fields may hold delimiters, doubled quotes and line breaks; a UTF-8
//! byte-order mark is skipped; CRLF and LF both end records. Each record keeps
//! the 1-based line on which it starts, so errors can point into the file.

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

/// Splits `text` into records. Blank lines between records are skipped.
pub fn parse_records(bytes: &[u8], delimiter: u8) -> Result<Vec<Record>, CsvError> {
    let text = match std::str::from_utf8(bytes) {
        Ok(t) => t,
        Err(e) => {
            let line = 1 + bytes[..e.valid_up_to()]
                .iter()
                .filter(|b| **b == b'\n')
                .count();
            return Err(CsvError {
                line,
                message: "the file is not valid UTF-8".into(),
                hint: Some(
                    "save the file as UTF-8 (most spreadsheet programs offer 'CSV UTF-8')".into(),
                ),
            });
        }
    };
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let delimiter = delimiter as char;
    let mut records = Vec::new();
    let mut chars = text.chars().peekable();
    let mut line = 1;
    let mut fields: Vec<String> = Vec::new();
    let mut field = String::new();
    let mut record_line = 1;
    let mut in_record = false;
    let mut quoted_field = false;

    while let Some(c) = chars.next() {
        if !in_record {
            if c == '\n' || c == '\r' {
                if c == '\n' {
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
                            return Err(CsvError {
                                line: start_line,
                                message: "a quoted field is never closed".into(),
                                hint: Some("add the closing double quote, or write a literal quote as \"\"".into()),
                            });
                        }
                        Some('"') if chars.peek() == Some(&'"') => {
                            chars.next();
                            field.push('"');
                        }
                        Some('"') => break,
                        Some(ch) => {
                            if ch == '\n' {
                                line += 1;
                            }
                            field.push(ch);
                        }
                    }
                }
                // Only a delimiter or a line end may follow the closing quote.
                match chars.peek() {
                    None | Some('\n') | Some('\r') => {}
                    Some(ch) if *ch == delimiter => {}
                    Some(ch) => {
                        return Err(CsvError {
                            line,
                            message: format!("unexpected `{ch}` after a closing quote"),
                            hint: Some(
                                "quote the whole field, and double any quote inside it".into(),
                            ),
                        });
                    }
                }
            }
            c if c == delimiter => {
                fields.push(std::mem::take(&mut field));
                quoted_field = false;
            }
            '\r' | '\n' => {
                if c == '\r' && chars.peek() == Some(&'\n') {
                    chars.next();
                }
                line += 1;
                fields.push(std::mem::take(&mut field));
                records.push(Record {
                    line: record_line,
                    fields: std::mem::take(&mut fields),
                });
                in_record = false;
                quoted_field = false;
            }
            '"' => {
                return Err(CsvError {
                    line,
                    message: "a double quote inside an unquoted field".into(),
                    hint: Some("quote the whole field and write the quote as \"\"".into()),
                });
            }
            c => field.push(c),
        }
    }
    if in_record {
        fields.push(field);
        records.push(Record {
            line: record_line,
            fields,
        });
    }
    Ok(records)
}

#[cfg(test)]
#[path = "csv_tests.rs"]
mod tests;
