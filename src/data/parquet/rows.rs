//! A Parquet file's chosen columns as CSV text, produced as it is read: a
//! header line naming the columns, then each row group's rows, a batch at a
//! time. Memory holds one batch of text and the pages being decoded,
//! whatever the number of rows.

use super::cells::{self, Cells};
use super::columns::{Column, Kind};
use ::parquet::column::reader::{ColumnReader, ColumnReaderImpl};
use ::parquet::data_type::DataType;
use ::parquet::file::reader::{ChunkReader, FileReader};
use ::parquet::file::serialized_reader::SerializedFileReader;
use std::io::Read;

/// Rows decoded at a time (per column).
const BATCH: usize = 8192;

/// The rows of a Parquet file as CSV text; see the module comment.
pub(super) struct RowText<R: ChunkReader + 'static> {
    file: SerializedFileReader<R>,
    columns: Vec<Column>,
    /// The next row group to open (0-based).
    next_group: usize,
    /// The open row group's column readers and the rows still to read.
    readers: Vec<ColumnReader>,
    rows_left: usize,
    /// Rows of the open row group already read, and rows before it.
    group_row: usize,
    file_row: u64,
    cells: Vec<Cells>,
    levels: Vec<i16>,
    out: Vec<u8>,
    at: usize,
}

impl<R: ChunkReader + 'static> RowText<R> {
    /// Starts with the header line.
    pub(super) fn new(file: SerializedFileReader<R>, columns: Vec<Column>) -> Self {
        let mut header = String::new();
        for (k, c) in columns.iter().enumerate() {
            if k > 0 {
                header.push(',');
            }
            cells::text(&c.name, &mut header);
        }
        header.push('\n');
        RowText {
            file,
            cells: columns.iter().map(|_| Cells::default()).collect(),
            columns,
            next_group: 0,
            readers: Vec::new(),
            rows_left: 0,
            group_row: 0,
            file_row: 0,
            levels: Vec::with_capacity(BATCH),
            out: header.into_bytes(),
            at: 0,
        }
    }

    /// Writes the next batch of rows into `out`; false at the end.
    fn fill(&mut self) -> Result<bool, String> {
        while self.rows_left == 0 {
            if self.next_group >= self.file.num_row_groups() {
                return Ok(false);
            }
            self.open_group()?;
        }
        let n = self.rows_left.min(BATCH);
        // A row whose only cell is empty would be a blank line, which CSV
        // skips: there a missing value is written as an empty quoted field.
        let lone = self.columns.len() == 1;
        for k in 0..self.columns.len() {
            let column = &self.columns[k];
            let place = || {
                format!(
                    "column `{}` in row group {}, rows {} to {} of the group",
                    column.name,
                    self.next_group,
                    self.group_row + 1,
                    self.group_row + n
                )
            };
            let batch = Batch {
                rows: n,
                max_def: column.max_def,
                lone,
                group_row: self.group_row,
                file_row: self.file_row,
            };
            read_cells(
                &mut self.readers[k],
                column.kind,
                &batch,
                &mut self.cells[k],
                &mut self.levels,
            )
            .map_err(|e| format!("{}: {e}", place()))?;
        }
        for row in 0..n {
            for (k, c) in self.cells.iter().enumerate() {
                if k > 0 {
                    self.out.push(b',');
                }
                self.out.extend_from_slice(c.get(row).as_bytes());
            }
            self.out.push(b'\n');
        }
        self.rows_left -= n;
        self.group_row += n;
        self.file_row += n as u64;
        Ok(true)
    }

    fn open_group(&mut self) -> Result<(), String> {
        let g = self.next_group;
        self.next_group += 1;
        let group = self
            .file
            .get_row_group(g)
            .map_err(|e| format!("row group {}: {e}", g + 1))?;
        self.rows_left = usize::try_from(group.metadata().num_rows())
            .map_err(|_| format!("row group {} has a negative number of rows", g + 1))?;
        self.group_row = 0;
        self.readers = self
            .columns
            .iter()
            .map(|c| group.get_column_reader(c.leaf))
            .collect::<Result<_, _>>()
            .map_err(|e| format!("row group {}: {e}", g + 1))?;
        Ok(())
    }
}

impl<R: ChunkReader + 'static> Read for RowText<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        while self.at == self.out.len() {
            self.out.clear();
            self.at = 0;
            if !super::guarded(|| self.fill()).map_err(std::io::Error::other)? {
                return Ok(0);
            }
        }
        let n = buf.len().min(self.out.len() - self.at);
        buf[..n].copy_from_slice(&self.out[self.at..self.at + n]);
        self.at += n;
        Ok(n)
    }
}

/// What a batch of one column is.
struct Batch {
    rows: usize,
    max_def: i16,
    /// The only column written.
    lone: bool,
    /// Rows before the batch, in its row group and in the file.
    group_row: usize,
    file_row: u64,
}

/// Reads a batch of one column into `cells`, as its kind is written.
fn read_cells(
    reader: &mut ColumnReader,
    kind: Kind,
    batch: &Batch,
    cells: &mut Cells,
    levels: &mut Vec<i16>,
) -> Result<(), String> {
    use ColumnReader as C;
    let text = |bytes: &[u8], out: &mut String| match std::str::from_utf8(bytes) {
        Ok(s) => {
            cells::text(s, out);
            Ok(())
        }
        Err(_) => Err("a string that is not UTF-8 text".to_string()),
    };
    let wide = |bytes: &[u8], scale: u32, out: &mut String| match cells::unscaled(bytes) {
        Some(v) => {
            cells::decimal(v, scale, out);
            Ok(())
        }
        None => Err("a decimal of more than 38 digits".to_string()),
    };
    match (reader, kind) {
        (C::BoolColumnReader(r), _) => typed(r, batch, cells, levels, |v, out| {
            out.push_str(if *v { "true" } else { "false" });
            Ok(())
        }),
        (C::Int32ColumnReader(r), kind) => typed(r, batch, cells, levels, |v, out| {
            match kind {
                Kind::Decimal(scale) => cells::decimal(i128::from(*v), scale, out),
                Kind::Date => cells::date(i64::from(*v), out),
                Kind::UInt32 => cells::integer(*v as u32, out),
                _ => cells::integer(*v, out),
            }
            Ok(())
        }),
        (C::Int64ColumnReader(r), kind) => typed(r, batch, cells, levels, |v, out| {
            match kind {
                Kind::Decimal(scale) => cells::decimal(i128::from(*v), scale, out),
                Kind::Timestamp { unit, utc } => cells::timestamp(*v, unit, utc, out),
                Kind::UInt64 => cells::integer(*v as u64, out),
                _ => cells::integer(*v, out),
            }
            Ok(())
        }),
        (C::FloatColumnReader(r), _) => typed(r, batch, cells, levels, |v, out| {
            cells::float(*v, out);
            Ok(())
        }),
        (C::DoubleColumnReader(r), _) => typed(r, batch, cells, levels, |v, out| {
            cells::double(*v, out);
            Ok(())
        }),
        (C::ByteArrayColumnReader(r), Kind::Decimal(scale)) => {
            typed(r, batch, cells, levels, |v, out| {
                wide(v.as_ref(), scale, out)
            })
        }
        (C::ByteArrayColumnReader(r), _) => {
            typed(r, batch, cells, levels, |v, out| text(v.as_ref(), out))
        }
        (C::FixedLenByteArrayColumnReader(r), Kind::Decimal(scale)) => {
            typed(r, batch, cells, levels, |v, out| {
                wide(v.as_ref(), scale, out)
            })
        }
        // The schema check lets no other type through.
        _ => Err("values of a type sheaf does not read".into()),
    }
}

/// Reads `batch.rows` rows of one column and writes each present value
/// with `write`; a missing value is an empty cell.
fn typed<T: DataType>(
    reader: &mut ColumnReaderImpl<T>,
    batch: &Batch,
    cells: &mut Cells,
    levels: &mut Vec<i16>,
    mut write: impl FnMut(&T::T, &mut String) -> Result<(), String>,
) -> Result<(), String> {
    let n = batch.rows;
    let nullable = batch.max_def > 0;
    let mut values: Vec<T::T> = Vec::with_capacity(n);
    levels.clear();
    let mut records = 0;
    while records < n {
        let def = if nullable { Some(&mut *levels) } else { None };
        let (read, _, _) = reader
            .read_records(n - records, def, None, &mut values)
            .map_err(|e| e.to_string())?;
        if read == 0 {
            return Err("the column holds fewer values than its row group has rows".into());
        }
        records += read;
    }
    cells.clear();
    let mut next = values.iter();
    for row in 0..n {
        if !nullable || levels.get(row) == Some(&batch.max_def) {
            let value = next
                .next()
                .ok_or("fewer values than the definition levels announce")?;
            write(value, &mut cells.text).map_err(|e| {
                format!(
                    "row {} of the group (row {} of the file) holds {e}",
                    batch.group_row + row + 1,
                    batch.file_row + row as u64 + 1
                )
            })?;
        } else if batch.lone {
            cells.text.push_str("\"\"");
        }
        cells.end();
    }
    Ok(())
}
