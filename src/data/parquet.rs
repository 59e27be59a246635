//! Apache Parquet files (`.parquet`). A block's columns are read row group
//! by row group and handed to the CSV readers as RFC 4180 text, so that
//! every per-row rule (missing values, `where`, `exclude`, exact decimals)
//! is the CSV path's own: DECIMAL columns become their exact decimal text,
//! doubles the shortest decimal that reads back as the same double, a null
//! an empty cell. The header is line 1 and row r of the file (counted from
//! 1) is line r + 1; messages name the row group and the row instead.

mod cells;
mod columns;
mod rows;

use super::reader::{FilePlace, ReadOptions, Reader};
use super::{CsvFormat, DataError, Table};
use ::parquet::file::reader::{ChunkReader, FileReader};
use ::parquet::file::serialized_reader::SerializedFileReader;
use bytes::Bytes;
use rows::RowText;
use std::io::Read;
use std::path::Path;

/// Parquet files, by the name's `.parquet` ending.
pub struct Parquet;

impl Reader for Parquet {
    fn name(&self) -> &'static str {
        "Parquet"
    }

    fn claims(&self, path: &str) -> bool {
        is_parquet(path)
    }

    fn streams_rows(&self) -> bool {
        true
    }

    fn own_keys(&self) -> &'static [&'static str] {
        &[]
    }

    /// Every column, for blocks that read whole tables (wide layouts,
    /// summary tables, several responses), within the spreadsheet limit.
    fn read(&self, bytes: &[u8], _options: ReadOptions) -> Result<Table, DataError> {
        let (file, len) = open(Bytes::copy_from_slice(bytes))?;
        let schema = file.metadata().file_metadata().schema_descr_ptr();
        let columns = columns::every(&schema)?;
        let rows: u64 = file
            .metadata()
            .row_groups()
            .iter()
            .map(|g| u64::try_from(g.num_rows()).unwrap_or(u64::MAX))
            .fold(0, u64::saturating_add);
        let limit = super::spreadsheet::MAX_CELLS;
        if rows.saturating_mul(columns.len() as u64) > limit {
            return Err(DataError {
                line: None,
                column: None,
                message: format!(
                    "the file has {rows} rows × {} columns, more than the {limit} cells sheaf reads into a table",
                    columns.len()
                ),
                hint: Some("a block in long layout with one response reads only its own columns, in row groups, whatever the file's size".into()),
            });
        }
        check_ranges(&file, len, &columns)?;
        let mut text = Vec::new();
        RowText::new(file, columns)
            .read_to_end(&mut text)
            .map_err(|e| unreadable(e.to_string()))?;
        Table::parse(&text, &CsvFormat::default())
    }

    /// Row r of the file in row group g: both named, counted from 1.
    fn place(&self, at: &FilePlace<'_>) -> Option<String> {
        let path = at.path;
        Some(match at.line {
            None => path.to_string(),
            Some(1) => format!("{path}, its column names"),
            Some(line) => {
                let row = line as u64 - 1;
                match row_group_of(Path::new(path), row) {
                    Some((group, in_group)) => format!(
                        "{path}, row {row} (row {in_group} of row group {group}; both counted from 1)"
                    ),
                    None => format!("{path}, row {row}"),
                }
            }
        })
    }
}

/// Whether a file is read as Parquet, by its name.
pub fn is_parquet(path: &str) -> bool {
    path.to_ascii_lowercase().ends_with(".parquet")
}

/// The CSV text of `columns` of the Parquet file at `path` (a header line,
/// then one line per row), decoded as it is read: one batch of rows and
/// the pages being decoded in memory, whatever the file's size. Each call
/// reads the file afresh, so a scan may take several passes.
pub fn open_rows(path: &Path, columns: &[&str]) -> Result<Box<dyn Read + Send>, DataError> {
    let (file, _) = crate::world::open_regular(path).map_err(|e| unreadable(e.to_string()))?;
    rows_of(file, columns)
}

/// [`open_rows`] for a file as a [`World`](crate::world::World) holds it:
/// in place on disk, or read whole where it lives elsewhere (memory in
/// tests). The compile stage opens a streamed Parquet file through this.
pub fn rows_in_world(
    world: &dyn crate::world::World,
    path: &str,
    columns: &[&str],
) -> Result<Box<dyn Read + Send>, DataError> {
    match world.local_file(path) {
        Some(file) => open_rows(&file, columns),
        None => {
            let bytes = world.read(path).map_err(|e| unreadable(e.to_string()))?;
            rows_of(Bytes::from(bytes), columns)
        }
    }
}

/// [`open_rows`] for a file held in memory.
pub fn rows_in_memory(bytes: Bytes, columns: &[&str]) -> Result<Box<dyn Read + Send>, DataError> {
    rows_of(bytes, columns)
}

/// The format CSV text from [`open_rows`] is written in, with the block's
/// missing-value markers (its `delimiter` and `decimal` do not apply).
pub fn text_format(block: &CsvFormat) -> CsvFormat {
    CsvFormat {
        missing: block.missing.clone(),
        ..CsvFormat::default()
    }
}

fn rows_of<R: ChunkReader + 'static>(
    source: R,
    names: &[&str],
) -> Result<Box<dyn Read + Send>, DataError> {
    let (file, len) = open(source)?;
    let schema = file.metadata().file_metadata().schema_descr_ptr();
    let columns = columns::chosen(&schema, names)?;
    check_ranges(&file, len, &columns)?;
    Ok(Box::new(RowText::new(file, columns)))
}

/// Opens a Parquet file: its magic bytes, then its footer. Returns the
/// reader and the file's length.
fn open<R: ChunkReader + 'static>(source: R) -> Result<(SerializedFileReader<R>, u64), DataError> {
    let len = source.len();
    let magic = |at: u64| {
        source
            .get_bytes(at, 4)
            .ok()
            .is_some_and(|b| &b[..] == b"PAR1")
    };
    if len < 12 || !magic(0) || !magic(len - 4) {
        return Err(DataError {
            line: None,
            column: None,
            message: "the file is not a Parquet file: it does not start and end with `PAR1`".into(),
            hint: Some(if len >= 4 && magic(0) {
                "the file is cut short (a copy or download that stopped early?): write it again"
                    .into()
            } else {
                "a file whose name ends in .parquet is read as Parquet; a CSV file needs a name ending in .csv".into()
            }),
        });
    }
    let file = guarded(|| SerializedFileReader::new(source).map_err(|e| e.to_string()))
        .map_err(unreadable)?;
    Ok((file, len))
}

/// Every column chunk to be read must lie inside the file: sizes in the
/// footer are not trusted beyond the file's length.
fn check_ranges<R: ChunkReader + 'static>(
    file: &SerializedFileReader<R>,
    len: u64,
    columns: &[columns::Column],
) -> Result<(), DataError> {
    for (g, group) in file.metadata().row_groups().iter().enumerate() {
        if group.num_rows() < 0 {
            return Err(unreadable(format!(
                "row group {} has a negative number of rows",
                g + 1
            )));
        }
        for c in columns {
            let chunk = group.column(c.leaf);
            let start = chunk
                .dictionary_page_offset()
                .unwrap_or(chunk.data_page_offset())
                .min(chunk.data_page_offset());
            let inside = u64::try_from(start).ok().and_then(|s| {
                u64::try_from(chunk.compressed_size())
                    .ok()
                    .and_then(|n| s.checked_add(n))
            });
            if inside.is_none_or(|end| end > len) {
                return Err(unreadable(format!(
                    "column `{}` in row group {} lies outside the file (the file is damaged or cut short)",
                    c.name,
                    g + 1
                )));
            }
        }
    }
    Ok(())
}

/// Runs decoding work, turning a panic inside the Parquet decoder (its
/// own checks of damaged pages end in assertions) into an error. The
/// panic's own message is not printed: the error says what happened.
pub(crate) fn guarded<T>(work: impl FnOnce() -> Result<T, String>) -> Result<T, String> {
    use std::cell::Cell;
    thread_local! {
        static DECODING: Cell<bool> = const { Cell::new(false) };
    }
    static QUIET: std::sync::Once = std::sync::Once::new();
    QUIET.call_once(|| {
        let previous = std::panic::take_hook();
        std::panic::set_hook(Box::new(move |info| {
            if !DECODING.with(Cell::get) {
                previous(info);
            }
        }));
    });
    let was = DECODING.with(|d| d.replace(true));
    let outcome = std::panic::catch_unwind(std::panic::AssertUnwindSafe(work));
    DECODING.with(|d| d.set(was));
    outcome.unwrap_or_else(|_| {
        Err("the decoder stopped on damaged data (a page's sizes or values do not agree)".into())
    })
}

fn unreadable(why: String) -> DataError {
    DataError {
        line: None,
        column: None,
        message: format!("the Parquet file cannot be read: {why}"),
        hint: Some("the file may be damaged or cut short: write it again from its source".into()),
    }
}

/// The row group (from 1) holding row `row` of the file (from 1), and the
/// row within it, from the file's footer; `None` where it cannot be read.
fn row_group_of(path: &Path, row: u64) -> Option<(usize, u64)> {
    let (file, _) = crate::world::open_regular(path).ok()?;
    let (file, _) = open(file).ok()?;
    let mut before = 0u64;
    for (g, group) in file.metadata().row_groups().iter().enumerate() {
        let n = u64::try_from(group.num_rows()).ok()?;
        if row <= before + n {
            return Some((g + 1, row - before));
        }
        before += n;
    }
    None
}
