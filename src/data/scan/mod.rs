//! One pass over a CSV file in long layout, in chunks, on every core: a
//! response split by one factor, or by the cells of several (each cell a
//! level, see `rows::cell_key`). Without kept values the memory is
//! proportional to the number of levels.
//!
//! The bytes are cut into chunks of about [`CHUNK_BYTES`] at record ends
//! (never inside a quoted field). A producer reads (and, for a stream,
//! hashes) the chunks; workers turn each chunk into per-level summaries,
//! and optionally the values themselves; the caller's thread merges the
//! chunk results strictly in file order. Chunk boundaries depend only on the
//! bytes and the chunk size, and the merge order is fixed, so every number is
//! the same whatever the number of threads.
//!
//! The per-row rules (`exclude`, `where`, missing values, the level, the
//! response) live in [`RowAccumulator`], which the in-memory table path
//! shares, so both paths read a row the same way.

use super::csv::{CsvError, RecordParser, count_lines, utf8_text};
use super::decimal::{Number, exact_power, parse_number, plain_difference, plain_parts};
use super::{CsvFormat, DataError, Exclusion, Filter, Header, quote_list};
use crate::stats::oneway::GroupSummary;
use cells::*;
use chunks::*;
use merge::*;
use parse::*;
use rows::*;
use sha2::{Digest, Sha256};
use std::collections::{BTreeMap, HashMap};
use std::hash::{BuildHasherDefault, Hasher};
use std::io::Read;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Mutex, mpsc};

/// Target chunk size. Small enough that two workers and a short queue stay
/// well under 100 MiB, large enough that per-chunk overhead is negligible.
pub const CHUNK_BYTES: usize = 4 << 20;

/// What a scan reads, and what it keeps.
#[derive(Debug, Clone)]
pub struct ScanSpec<'a> {
    pub response: &'a str,
    /// One factor, or several: then each level is a cell (see `cell_levels`).
    pub factors: &'a [&'a str],
    pub format: &'a CsvFormat,
    pub filters: &'a [Filter],
    /// Data lines to leave out, each with its reason.
    pub exclude: &'a [(usize, String)],
    /// Keep every value and its line (checks, ranks, plots need them);
    /// otherwise only per-level summaries are kept.
    pub keep_values: bool,
}

/// Where the bytes come from.
pub enum Source<'a> {
    Memory(&'a [u8]),
    /// Read in chunks and hashed on the way (SHA-256).
    Stream(Box<dyn Read + Send + 'a>),
}

/// One level as scanned.
#[derive(Debug, Clone, PartialEq)]
pub struct ScannedLevel {
    pub name: String,
    /// n, mean and sum of squares, with the mean as an offset from `origin`.
    pub summary: GroupSummary,
    /// Offsets from `origin`, in file order (empty unless values are kept).
    pub offsets: Vec<f64>,
    /// The data line of each kept value.
    pub lines: Vec<usize>,
    /// The data line of its first value, kept or not (`None`: every row
    /// of the level lacked a response).
    pub first_line: Option<usize>,
}

impl ScannedLevel {
    /// A level named before any of its values is seen.
    pub(super) fn empty(name: String) -> ScannedLevel {
        ScannedLevel {
            name,
            summary: GroupSummary {
                n: 0,
                mean: f64::NAN,
                ss: f64::NAN,
            },
            offsets: Vec::new(),
            lines: Vec::new(),
            first_line: None,
        }
    }
}

/// A response column split by one factor (or by cells), as one pass over
/// the file found it.
#[derive(Debug, Clone, PartialEq)]
pub struct Scanned {
    /// Levels in order of first appearance in the file.
    pub levels: Vec<ScannedLevel>,
    /// Every offset and mean is relative to this value (see `decimal`).
    pub origin: f64,
    /// Most digits after the decimal point among the response values.
    pub decimals: u32,
    /// Rows left out, in line order.
    pub excluded: Vec<Exclusion>,
    /// SHA-256 of the bytes, in hex, when they were read from a stream.
    pub sha256: Option<String>,
    /// XXH3 (64 bits) of the same bytes: what a later pass compares to
    /// tell that the file has not changed (see [`Hashing`]).
    pub fingerprint: Option<u64>,
    /// Bytes read.
    pub bytes: u64,
}

pub use merge::{Visit, changed_error};
pub use rows::{cell_key, cell_levels};

/// Reads a response split by one factor (or by the cells of several) from
/// CSV bytes, a stream hashed with SHA-256 and fingerprinted. `threads`
/// workers parse chunks of `chunk_bytes`; neither changes any number in
/// the result.
pub fn scan_file(
    source: Source<'_>,
    spec: &ScanSpec<'_>,
    chunk_bytes: usize,
    threads: usize,
) -> Result<Scanned, DataError> {
    scan_first(source, spec, (chunk_bytes, threads), Hashing::Both)
}

/// [`scan_file`] with the hashing chosen: text generated from another file
/// (a Parquet file's rows), whose own hash the caller records, needs only
/// the fingerprint later passes compare.
pub fn scan_first(
    source: Source<'_>,
    spec: &ScanSpec<'_>,
    (chunk_bytes, threads): (usize, usize),
    hashing: Hashing,
) -> Result<Scanned, DataError> {
    let merged = Merged::new(spec.keep_values);
    scan_pass(source, spec, chunk_bytes, threads, merged, hashing)
}

/// What a pass over a stream hashes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Hashing {
    /// The first pass: SHA-256 for the record and the fingerprint.
    Both,
    /// A later pass that checks the bytes: only the fingerprint (a few
    /// percent of SHA-256's time; a file rewritten between passes, not
    /// crafted to collide, changes it).
    Fingerprint,
    Nothing,
}

/// Reads the same bytes again for a later pass: each value with its line
/// goes to `visit` (the level in the order of `levels`, the first pass's;
/// a run of that level's offsets in file order; their lines) instead of
/// being kept, so memory does not grow with the rows. A level the first
/// pass did not find is an error: the bytes changed. A stream is
/// fingerprinted only when `verify` is set (to compare with the first
/// pass's fingerprint); the result's summaries and byte count let the
/// caller compare the rest.
pub fn rescan(
    source: Source<'_>,
    spec: &ScanSpec<'_>,
    levels: &[String],
    verify: bool,
    threads: usize,
    visit: Visit<'_>,
) -> Result<Scanned, DataError> {
    let spec = ScanSpec {
        keep_values: true,
        ..spec.clone()
    };
    scan_pass(
        source,
        &spec,
        CHUNK_BYTES,
        threads,
        Merged::again(levels, visit),
        if verify {
            Hashing::Fingerprint
        } else {
            Hashing::Nothing
        },
    )
}

/// One pass: the header, then every chunk merged in file order.
fn scan_pass(
    source: Source<'_>,
    spec: &ScanSpec<'_>,
    chunk_bytes: usize,
    threads: usize,
    mut merged: Merged<'_>,
    hashing: Hashing,
) -> Result<Scanned, DataError> {
    let mut chunks = Chunker::new(source, chunk_bytes.max(1));
    if hashing != Hashing::Both {
        chunks.hasher = None;
    }
    if hashing == Hashing::Nothing {
        chunks.fingerprint = None;
    }
    // The header: the first record, after any blank lines (which may fill
    // whole chunks when chunks are small).
    let mut line = 1;
    let mut bom = true;
    let (plan, first, start, line) = loop {
        let Some(chunk) = chunks.next_chunk().map_err(io_error)? else {
            return Err(crate::data::empty_file());
        };
        let bytes = chunk.bytes();
        if bom {
            super::csv::not_text(bytes).map_err(csv_error)?;
        }
        let skip = if bom && bytes.starts_with(b"\xef\xbb\xbf") {
            3
        } else {
            0
        };
        bom = false;
        let text = utf8_text(&bytes[skip..], line).map_err(csv_error)?;
        let mut parser = RecordParser::new(text, spec.format.delimiter, line);
        match parser.next() {
            None => line = parser.line(),
            Some(head) => {
                let header = Header::from_record(head.map_err(csv_error)?, spec.format)?;
                let (start, line) = (skip + parser.offset(), parser.line());
                break (RowPlan::new(&header, spec)?, chunk, start, line);
            }
        }
    };
    let mut plan = plan;
    let absolute = !plan.exclude.is_empty();
    let first_end = if absolute {
        line + count_lines(&first.bytes()[start..])
    } else {
        0
    };
    let threads = if chunks.at_end() { 1 } else { threads };
    let first = Job {
        start,
        line,
        relative: false,
        chunk: first,
    };
    // Later chunks count their own lines, and the merge makes them absolute;
    // only `exclude` (rules by line) needs absolute lines while parsing.
    let mut next_line = first_end;
    let later = std::iter::from_fn(|| {
        let chunk = match chunks.next_chunk() {
            Ok(Some(chunk)) => chunk,
            Ok(None) => return None,
            Err(e) => return Some(Err(e)),
        };
        let line = if absolute {
            let line = next_line;
            next_line += count_lines(chunk.bytes());
            line
        } else {
            0
        };
        Some(Ok(Job {
            start: 0,
            line,
            relative: !absolute,
            chunk,
        }))
    });
    let mut rest = std::iter::once(Ok(first)).chain(later);
    // Chunks are read one by one until one has a value (the first, unless
    // the file opens with many rows of missing values): its first value is
    // the origin every later chunk subtracts, exactly.
    while plan.origin.is_none() {
        let Some(job) = rest.next() else { break };
        let job = job.map_err(io_error)?;
        let outcome = parse_chunk(&job, &plan);
        if let Ok(r) = &outcome {
            plan.origin = r.origin.map(|o| (o, o.to_f64()));
        }
        merged.add(outcome, job.relative)?;
    }
    if threads <= 1 {
        for job in rest.by_ref() {
            let job = job.map_err(io_error)?;
            merged.add(parse_chunk(&job, &plan), job.relative)?;
        }
    } else {
        parallel(rest, &plan, threads, &mut merged)?;
    }
    let sha256 = chunks.digest();
    let mut scanned = merged.finish(&plan, spec, sha256, chunks.bytes_read)?;
    scanned.fingerprint = chunks.fingerprint();
    Ok(scanned)
}

/// Reads `response` split by `factor` from a table (spreadsheets, wide
/// layouts: rows already chosen by `data::prepare`) with the same per-row
/// rules as the file reader.
pub fn scan_table(
    table: &crate::data::Table,
    response: &str,
    factors: &[&str],
    format: &CsvFormat,
) -> Result<Scanned, DataError> {
    let yi = table.column(response)?;
    let columns: Vec<(usize, &str)> = factors
        .iter()
        .map(|f| Ok((table.column(f)?, *f)))
        .collect::<Result<_, DataError>>()?;
    let used: Vec<usize> = std::iter::once(yi)
        .chain(columns.iter().map(|(c, _)| *c))
        .collect();
    table.check_cells(&used)?;
    let plan = RowPlan::for_table(
        table.header.len(),
        table.header_line,
        (yi, response),
        &columns,
        format,
    );
    let rows = table
        .rows
        .iter()
        .map(|r| (r.line, r.fields.iter().map(String::as_str).collect()));
    scan_rows(&plan, rows)
}

/// Reads already-split rows with the same per-row rules; rows are one chunk.
fn scan_rows<'r>(
    plan: &RowPlan,
    rows: impl Iterator<Item = (usize, Vec<&'r str>)>,
) -> Result<Scanned, DataError> {
    let mut acc = RowAccumulator::new(plan);
    for (line, fields) in rows {
        acc.row(&fields, line)?;
    }
    let mut merged = Merged::new(true);
    merged.add(Ok(acc.finish()), false)?;
    let names: Vec<&str> = plan.factors.iter().map(|(_, f)| f.as_str()).collect();
    let spec = ScanSpec {
        response: &plan.response.1,
        factors: &names,
        format: &plan.format,
        filters: &[],
        exclude: &[],
        keep_values: true,
    };
    merged.finish(plan, &spec, None, 0)
}

fn csv_error(e: CsvError) -> DataError {
    DataError {
        line: Some(e.line),
        column: None,
        message: e.message,
        hint: e.hint,
    }
}

fn io_error(e: std::io::Error) -> DataError {
    DataError {
        line: None,
        column: None,
        message: format!("reading the file failed: {e}"),
        hint: None,
    }
}

mod cells;
mod chunks;
mod merge;
mod parse;
mod rows;

#[cfg(test)]
mod tests;
