//! One pass over a CSV file for a one-factor analysis, in chunks, on every
//! core, in memory proportional to the number of levels.
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
use sha2::{Digest, Sha256};
use std::collections::{BTreeMap, HashMap};
use std::hash::{BuildHasherDefault, Hasher};
use std::io::Read;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Mutex, mpsc};

/// Target chunk size. Small enough that two workers and a short queue stay
/// well under 100 MiB, large enough that per-chunk overhead is negligible.
pub const CHUNK_BYTES: usize = 4 << 20;

/// What a one-factor scan reads, and what it keeps.
#[derive(Debug, Clone)]
pub struct ScanSpec<'a> {
    pub response: &'a str,
    pub factor: &'a str,
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
}

/// A response column split by one factor, as one pass over the file found it.
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
    /// Bytes read.
    pub bytes: u64,
}

/// Reads a one-factor response from CSV bytes. `threads` workers parse
/// chunks of `chunk_bytes`; neither changes any number in the result.
pub fn scan_one_factor(
    source: Source<'_>,
    spec: &ScanSpec<'_>,
    chunk_bytes: usize,
    threads: usize,
) -> Result<Scanned, DataError> {
    let mut chunks = Chunker::new(source, chunk_bytes.max(1));
    let first = chunks.next_chunk().map_err(io_error)?;
    let Some(first) = first else {
        return Err(super::empty_file());
    };
    let (plan, start, line) = {
        let bytes = first.bytes();
        let bom = if bytes.starts_with(b"\xef\xbb\xbf") {
            3
        } else {
            0
        };
        let text = utf8_text(&bytes[bom..], 1).map_err(csv_error)?;
        let mut parser = RecordParser::new(text, spec.format.delimiter, 1);
        let head = match parser.next() {
            None => return Err(super::empty_file()),
            Some(r) => r.map_err(csv_error)?,
        };
        let header = Header::from_record(head, spec.format)?;
        (
            RowPlan::new(&header, spec)?,
            bom + parser.offset(),
            parser.line(),
        )
    };
    let mut merged = Merged::new(spec.keep_values);
    let mut plan = plan;
    // The first chunk alone: its first value becomes the origin of every
    // later chunk, so all offsets are exact differences from one value.
    let first = Job {
        start,
        line,
        relative: false,
        chunk: first,
    };
    let absolute = !plan.exclude.is_empty();
    let first_end = if absolute {
        line + chunk_lines(&first.chunk.bytes()[start..])
    } else {
        0
    };
    let outcome = parse_chunk(&first, &plan);
    if let Ok(r) = &outcome {
        plan.origin = r.origin.map(|o| (o, o.to_f64()));
    }
    merged.add(outcome, false)?;
    let threads = if chunks.at_end() { 1 } else { threads };
    // Later chunks count their own lines, and the merge makes them absolute;
    // only `exclude` (rules by line) needs absolute lines while parsing.
    let mut next_line = first_end;
    let mut rest = std::iter::from_fn(|| {
        let chunk = match chunks.next_chunk() {
            Ok(Some(chunk)) => chunk,
            Ok(None) => return None,
            Err(e) => return Some(Err(e)),
        };
        let line = if absolute {
            let line = next_line;
            next_line += chunk_lines(chunk.bytes());
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
    if threads <= 1 {
        for job in rest.by_ref() {
            let job = job.map_err(io_error)?;
            merged.add(parse_chunk(&job, &plan), job.relative)?;
        }
    } else {
        parallel(rest, &plan, threads, &mut merged)?;
    }
    let sha256 = chunks.digest();
    merged.finish(&plan, spec, sha256, chunks.bytes_read)
}

/// A run of whole records: borrowed from memory, or read from a stream.
enum Chunk<'a> {
    Borrowed(&'a [u8]),
    Owned(Vec<u8>),
}

impl Chunk<'_> {
    fn bytes(&self) -> &[u8] {
        match self {
            Chunk::Borrowed(b) => b,
            Chunk::Owned(v) => v,
        }
    }
}

/// A chunk and where it sits in the file.
struct Job<'a> {
    /// Bytes of the chunk already read (the header, in the first chunk).
    start: usize,
    /// The line on which `chunk[start..]` begins; 0 when `relative`.
    line: usize,
    /// Lines are counted from the chunk's start; the merge adds its line.
    relative: bool,
    chunk: Chunk<'a>,
}

/// Lines in a run of whole records (see `csv::count_lines`).
fn chunk_lines(bytes: &[u8]) -> usize {
    count_lines(bytes)
}

/// Cuts a source into chunks of whole records. A chunk is the first
/// `chunk_bytes` of what is left, cut back to the last record end; a record
/// longer than that doubles the window until it fits. The same bytes give
/// the same chunks whether they are in memory or streamed.
struct Chunker<'a> {
    source: Source<'a>,
    chunk_bytes: usize,
    /// Memory: the offset of the next chunk.
    offset: usize,
    /// Stream: bytes read past the last chunk.
    carry: Vec<u8>,
    eof: bool,
    hasher: Option<Sha256>,
    bytes_read: u64,
}

impl<'a> Chunker<'a> {
    fn new(source: Source<'a>, chunk_bytes: usize) -> Self {
        let hasher = matches!(source, Source::Stream(_)).then(Sha256::new);
        Chunker {
            source,
            chunk_bytes,
            offset: 0,
            carry: Vec::new(),
            eof: false,
            hasher,
            bytes_read: 0,
        }
    }

    fn at_end(&self) -> bool {
        match &self.source {
            Source::Memory(b) => self.offset >= b.len(),
            Source::Stream(_) => self.eof && self.carry.is_empty(),
        }
    }

    fn digest(&mut self) -> Option<String> {
        self.hasher.take().map(|h| {
            h.finalize()
                .iter()
                .map(|b| format!("{b:02x}"))
                .collect::<String>()
        })
    }

    fn next_chunk(&mut self) -> std::io::Result<Option<Chunk<'a>>> {
        let chunk = match &mut self.source {
            Source::Memory(bytes) => {
                let bytes: &'a [u8] = bytes;
                let rest = &bytes[self.offset..];
                if rest.is_empty() {
                    return Ok(None);
                }
                let mut window = self.chunk_bytes;
                let end = loop {
                    if window >= rest.len() {
                        break rest.len();
                    }
                    if let Some(end) = record_end(&rest[..window]) {
                        break end;
                    }
                    window *= 2;
                };
                self.offset += end;
                self.bytes_read += end as u64;
                Chunk::Borrowed(&rest[..end])
            }
            Source::Stream(reader) => {
                let mut buf = std::mem::take(&mut self.carry);
                let mut window = self.chunk_bytes;
                let end = loop {
                    while buf.len() < window && !self.eof {
                        // read_to_end fills spare capacity without zeroing it.
                        let have = buf.len();
                        buf.reserve(window - have);
                        let n = (&mut *reader)
                            .take((window - have) as u64)
                            .read_to_end(&mut buf)?;
                        if n == 0 {
                            self.eof = true;
                        }
                        if let Some(h) = &mut self.hasher {
                            h.update(&buf[have..]);
                        }
                        self.bytes_read += n as u64;
                    }
                    if buf.is_empty() {
                        return Ok(None);
                    }
                    if buf.len() < window {
                        // The end of the file closes the last record.
                        break buf.len();
                    }
                    if let Some(end) = record_end(&buf[..window]) {
                        break end;
                    }
                    window *= 2;
                };
                let mut rest = Vec::with_capacity(self.chunk_bytes);
                rest.extend_from_slice(&buf[end..]);
                buf.truncate(end);
                self.carry = rest;
                Chunk::Owned(buf)
            }
        };
        Ok(Some(chunk))
    }
}

/// Just past the last line feed in `bytes` that is outside quotes (`bytes`
/// starts outside quotes, at a record's start); `None` if there is none.
fn record_end(bytes: &[u8]) -> Option<usize> {
    if memchr::memchr(b'"', bytes).is_none() {
        return memchr::memrchr(b'\n', bytes).map(|i| i + 1);
    }
    // A doubled quote toggles twice, so parity says whether we are inside.
    let mut inside = false;
    let mut end = None;
    for i in memchr::memchr2_iter(b'"', b'\n', bytes) {
        if bytes[i] == b'"' {
            inside = !inside;
        } else if !inside {
            end = Some(i + 1);
        }
    }
    end
}

/// A producer thread feeds `threads` workers; this thread merges in order.
fn parallel<'a>(
    jobs: impl Iterator<Item = std::io::Result<Job<'a>>> + Send,
    plan: &RowPlan,
    threads: usize,
    merged: &mut Merged,
) -> Result<(), DataError> {
    type Outcome = (Result<ChunkResult, DataError>, bool);
    let stop = AtomicBool::new(false);
    // A short queue bounds the bytes in flight: queued + one per worker.
    let (job_tx, job_rx) = mpsc::sync_channel::<(usize, std::io::Result<Job<'a>>)>(2);
    let (out_tx, out_rx) = mpsc::channel::<(usize, Outcome)>();
    let job_rx = Mutex::new(job_rx);
    std::thread::scope(|scope| {
        let stop = &stop;
        scope.spawn(move || {
            for (i, job) in jobs.enumerate() {
                if stop.load(Ordering::Relaxed) || job_tx.send((i, job)).is_err() {
                    break;
                }
            }
        });
        for _ in 0..threads {
            let out_tx = out_tx.clone();
            let job_rx = &job_rx;
            scope.spawn(move || {
                loop {
                    let next = match job_rx.lock() {
                        Ok(rx) => rx.recv(),
                        Err(_) => break,
                    };
                    let Ok((i, job)) = next else { break };
                    if stop.load(Ordering::Relaxed) {
                        break;
                    }
                    let outcome = match job {
                        Ok(job) => (parse_chunk(&job, plan), job.relative),
                        Err(e) => (Err(io_error(e)), false),
                    };
                    if out_tx.send((i, outcome)).is_err() {
                        break;
                    }
                }
            });
        }
        drop(out_tx);
        let mut waiting: BTreeMap<usize, Outcome> = BTreeMap::new();
        let mut next = 0;
        let result = (|| {
            for (i, outcome) in out_rx.iter() {
                waiting.insert(i, outcome);
                while let Some((outcome, relative)) = waiting.remove(&next) {
                    merged.add(outcome, relative)?;
                    next += 1;
                }
            }
            Ok(())
        })();
        if result.is_err() {
            // Nothing more is needed: stop the workers, and take queued jobs
            // until the producer sees the flag and hangs up.
            stop.store(true, Ordering::Relaxed);
            drop(out_rx);
            if let Ok(rx) = job_rx.lock() {
                while rx.recv().is_ok() {}
            }
        }
        result
    })
}

/// Columns and rules resolved against the header.
struct RowPlan {
    width: usize,
    header_line: usize,
    response: (usize, String),
    factor: (usize, String),
    filters: Vec<(usize, Filter)>,
    exclude: HashMap<usize, String>,
    format: CsvFormat,
    keep_values: bool,
    delimiter: u8,
    /// The file's origin once known (the first chunk's first value).
    origin: Option<(Number, f64)>,
    /// Bit n set when a missing-value marker is n bytes long (n < 64).
    missing_lengths: u64,
    /// The first bytes of the markers, lowercased.
    missing_first: [bool; 256],
}

fn missing_first(format: &CsvFormat) -> [bool; 256] {
    let mut first = [false; 256];
    for m in &format.missing {
        if let Some(&b) = m.as_bytes().first() {
            first[usize::from(b.to_ascii_lowercase())] = true;
        }
    }
    first
}

fn missing_lengths(format: &CsvFormat) -> u64 {
    format.missing.iter().fold(0, |bits, m| {
        bits | if m.len() < 64 { 1 << m.len() } else { 0 }
    })
}

/// `str::trim`, skipping the work when the ends are plainly not blank.
fn trim(cell: &str) -> &str {
    let b = cell.as_bytes();
    let solid = |c: &u8| *c > b' ' && *c < 0x80;
    if b.first().is_some_and(solid) && b.last().is_some_and(solid) {
        cell
    } else {
        cell.trim()
    }
}

impl RowPlan {
    fn new(header: &Header, spec: &ScanSpec<'_>) -> Result<RowPlan, DataError> {
        Ok(RowPlan {
            width: header.names.len(),
            header_line: header.line,
            response: (header.column(spec.response)?, spec.response.to_string()),
            factor: (header.column(spec.factor)?, spec.factor.to_string()),
            filters: spec
                .filters
                .iter()
                .map(|f| Ok((header.column(&f.column)?, f.clone())))
                .collect::<Result<_, DataError>>()?,
            exclude: spec.exclude.iter().cloned().collect(),
            format: spec.format.clone(),
            keep_values: spec.keep_values,
            delimiter: spec.format.delimiter,
            origin: None,
            missing_lengths: missing_lengths(spec.format),
            missing_first: missing_first(spec.format),
        })
    }

    /// For rows already split into fields (the table path).
    fn for_table(
        width: usize,
        header_line: usize,
        response: (usize, &str),
        factor: (usize, &str),
        format: &CsvFormat,
    ) -> RowPlan {
        RowPlan {
            width,
            header_line,
            response: (response.0, response.1.to_string()),
            factor: (factor.0, factor.1.to_string()),
            filters: Vec::new(),
            exclude: HashMap::new(),
            format: format.clone(),
            keep_values: true,
            delimiter: format.delimiter,
            origin: None,
            missing_lengths: missing_lengths(format),
            missing_first: missing_first(format),
        }
    }

    fn is_missing(&self, cell: &str) -> bool {
        // Most cells are longer than every marker: one bit test says so.
        if cell.len() < 64 && self.missing_lengths & (1 << cell.len()) == 0 {
            return false;
        }
        if let Some(&first) = cell.as_bytes().first()
            && !self.missing_first[usize::from(first.to_ascii_lowercase())]
        {
            return false;
        }
        self.format
            .missing
            .iter()
            .any(|m| m.len() == cell.len() && m.eq_ignore_ascii_case(cell))
    }
}

/// A short multiplicative hash for level names (the standard SipHash is
/// several times slower on 3-byte keys). Only lookups use it; nothing is
/// ever listed in hash order.
#[derive(Default)]
struct ShortHasher(u64);

impl Hasher for ShortHasher {
    fn write(&mut self, bytes: &[u8]) {
        for chunk in bytes.chunks(8) {
            let mut word = [0u8; 8];
            word[..chunk.len()].copy_from_slice(chunk);
            self.0 = (self.0.rotate_left(5) ^ u64::from_le_bytes(word))
                .wrapping_mul(0x51_7c_c1_b7_27_22_0a_95);
        }
    }

    fn finish(&self) -> u64 {
        self.0
    }
}

type LevelMap = HashMap<Box<str>, usize, BuildHasherDefault<ShortHasher>>;

/// A level name's first 8 bytes (zero-padded) and its length: equal keys
/// mean equal names when the names are at most 8 bytes long.
fn short_key(name: &str) -> (u64, usize) {
    // A shift loop, not copy_from_slice: a variable-length copy becomes a
    // call to memcpy, which cost a third of the row time.
    let b = name.as_bytes();
    let word = b
        .iter()
        .take(8)
        .enumerate()
        .fold(0u64, |w, (k, &c)| w | u64::from(c) << (8 * k));
    (word, b.len())
}

/// What one chunk held, with lines already absolute.
struct ChunkResult {
    names: Vec<String>,
    summaries: Vec<GroupSummary>,
    offsets: Vec<Vec<f64>>,
    lines: Vec<Vec<usize>>,
    origin: Option<Number>,
    decimals: u32,
    excluded: Vec<Exclusion>,
    exclude_hits: Vec<usize>,
    last_line: usize,
    /// The line just after the chunk, numbered as the chunk's lines are
    /// (from 0 when they are relative).
    end_line: usize,
}

/// Reads rows of one chunk (or one table): the per-row rules in one place.
struct RowAccumulator<'p> {
    plan: &'p RowPlan,
    index: LevelMap,
    /// Per level, its first 8 bytes and its length.
    keys: Vec<(u64, usize)>,
    names: Vec<String>,
    /// Per level: kept values (every value when values are kept, else
    /// only those outside the exact sums).
    offsets: Vec<Vec<f64>>,
    lines: Vec<Vec<usize>>,
    /// Per level: exact sums of the values in the origin's decimals.
    sums: Vec<ExactSums>,
    /// Per level: values that could not enter the exact sums.
    inexact: Vec<usize>,
    origin: Option<(Number, f64)>,
    /// The origin's digits and scale when they fit in 64 bits.
    plain_origin: Option<(i64, u32)>,
    decimals: u32,
    excluded: Vec<Exclusion>,
    exclude_hits: Vec<usize>,
    last_line: usize,
}

fn plain_of(n: Number) -> Option<(i64, u32)> {
    match n {
        Number::Exact(d) => i64::try_from(d.digits).ok().map(|v| (v, d.scale)),
        Number::Float(_) => None,
    }
}

impl<'p> RowAccumulator<'p> {
    fn new(plan: &'p RowPlan) -> Self {
        RowAccumulator {
            plan,
            index: LevelMap::default(),
            keys: Vec::new(),
            names: Vec::new(),
            offsets: Vec::new(),
            lines: Vec::new(),
            sums: Vec::new(),
            inexact: Vec::new(),
            origin: plan.origin,
            plain_origin: plan.origin.and_then(|o| plain_of(o.0)),
            decimals: 0,
            excluded: Vec::new(),
            exclude_hits: Vec::new(),
            last_line: 0,
        }
    }

    fn level(&mut self, name: &str) -> usize {
        let key = short_key(name);
        // Few levels (the usual case): a scan of 8-byte keys, no hashing.
        if self.keys.len() <= 32 {
            for (i, k) in self.keys.iter().enumerate() {
                if *k == key && (name.len() <= 8 || self.names[i] == name) {
                    return i;
                }
            }
            if self.keys.len() < 32 {
                return self.add_level(name, key);
            }
        }
        match self.index.get(name) {
            Some(&i) => i,
            None => self.add_level(name, key),
        }
    }

    fn add_level(&mut self, name: &str, key: (u64, usize)) -> usize {
        let i = self.names.len();
        if self.keys.len() == 32 {
            // From here on the map answers; it learns the first 32 too.
            for (j, n) in self.names.iter().enumerate() {
                self.index.insert(n.as_str().into(), j);
            }
        }
        if self.keys.len() >= 32 {
            self.index.insert(name.into(), i);
        }
        self.keys.push(key);
        self.names.push(name.to_string());
        self.offsets.push(Vec::new());
        self.lines.push(Vec::new());
        self.sums.push(ExactSums::default());
        self.inexact.push(0);
        i
    }

    /// One record: `fields` in header order, starting on `line`.
    fn row(&mut self, fields: &[&str], line: usize) -> Result<(), DataError> {
        if !self.admit(fields.len(), line)? {
            return Ok(());
        }
        let plan = self.plan;
        if let Some((_, f)) = plan.filters.iter().find(|(c, f)| !f.keeps(fields[*c])) {
            self.excluded.push(Exclusion {
                line,
                reason: format!("fails `where: {}`", f.text()),
            });
            return Ok(());
        }
        self.cells(fields[plan.factor.0], fields[plan.response.0], line)
    }

    /// The width check and `exclude`; false when the row is left out.
    fn admit(&mut self, width: usize, line: usize) -> Result<bool, DataError> {
        let plan = self.plan;
        self.last_line = line;
        if width != plan.width {
            return Err(super::width_error(line, width, plan.width, &plan.format));
        }
        if !plan.exclude.is_empty()
            && let Some(reason) = plan.exclude.get(&line)
        {
            self.exclude_hits.push(line);
            self.excluded.push(Exclusion {
                line,
                reason: format!("excluded: {reason}"),
            });
            return Ok(false);
        }
        Ok(true)
    }

    /// The factor and response cells of an admitted row.
    fn cells(
        &mut self,
        factor_cell: &str,
        response_cell: &str,
        line: usize,
    ) -> Result<(), DataError> {
        let plan = self.plan;
        let g = trim(factor_cell);
        if plan.is_missing(g) {
            self.excluded.push(Exclusion {
                line,
                reason: format!("`{}` is missing", plan.factor.1),
            });
            return Ok(());
        }
        // A level is registered even when its response is missing, so that a
        // level with no usable rows is reported rather than silently lost.
        let level = self.level(g);
        let y = trim(response_cell);
        if plan.is_missing(y) {
            self.excluded.push(Exclusion {
                line,
                reason: format!("`{}` is missing", plan.response.1),
            });
            return Ok(());
        }
        let offset = match plain_parts(y, plan.format.decimal_comma) {
            Some((digits, scale)) => {
                self.decimals = self.decimals.max(scale);
                if self.origin.is_none() {
                    self.set_origin(Number::Exact(super::decimal::Decimal {
                        digits: i128::from(digits),
                        scale,
                    }));
                }
                // The usual case: as many decimals as the origin, close to it.
                if let Some((o, os)) = self.plain_origin
                    && os == scale
                    && scale <= ExactSums::MAX_SCALE
                    && let Some(d) = digits.checked_sub(o)
                    && d.unsigned_abs() < ExactSums::MAX_UNITS
                {
                    self.sums[level].add(d, scale);
                    if plan.keep_values {
                        let offset = plain_difference(digits, o, scale).unwrap_or(f64::NAN);
                        self.offsets[level].push(offset);
                        self.lines[level].push(line);
                    }
                    return Ok(());
                }
                match self.plain_origin {
                    Some((o, os)) if os == scale => plain_difference(digits, o, scale),
                    _ => None,
                }
                .unwrap_or_else(|| {
                    self.offset(Number::Exact(super::decimal::Decimal {
                        digits: i128::from(digits),
                        scale,
                    }))
                })
            }
            None => {
                let number =
                    response_number(y, &plan.format, &plan.response.1, plan.response.0, line)?;
                self.decimals = self.decimals.max(number.decimals());
                if self.origin.is_none() {
                    self.set_origin(number);
                }
                self.offset(number)
            }
        };
        self.inexact[level] += 1;
        self.offsets[level].push(offset);
        if plan.keep_values {
            self.lines[level].push(line);
        }
        Ok(())
    }

    fn set_origin(&mut self, origin: Number) {
        self.origin = Some((origin, origin.to_f64()));
        self.plain_origin = plain_of(origin);
    }

    fn offset(&self, number: Number) -> f64 {
        match self.origin {
            Some((origin, origin_f64)) => offset_from(number, origin, origin_f64),
            None => f64::NAN,
        }
    }

    fn finish(self) -> ChunkResult {
        let keep = self.plan.keep_values;
        let summaries = (0..self.names.len())
            .map(|l| {
                let exact = self.sums[l].summary();
                match (self.inexact[l], keep) {
                    (0, _) => exact,
                    // Every value is at hand: summarise them together.
                    (_, true) => GroupSummary::from_values(&self.offsets[l]),
                    (_, false) => exact.merge(&GroupSummary::from_values(&self.offsets[l])),
                }
            })
            .collect();
        ChunkResult {
            names: self.names,
            summaries,
            offsets: if keep { self.offsets } else { Vec::new() },
            lines: if keep { self.lines } else { Vec::new() },
            origin: self.origin.map(|o| o.0),
            decimals: self.decimals,
            excluded: self.excluded,
            exclude_hits: self.exclude_hits,
            last_line: self.last_line,
            end_line: 0,
        }
    }
}

/// Σd and Σd² of values d in units of the origin's last decimal, in exact
/// integers: the level's mean and sum of squares then come from one exact
/// expression, n·Σd² − (Σd)², rounded once, with no cancellation at all.
/// Every 2^20 values the sums are folded into `spilled` (Chan et al.'s
/// merge), which bounds the integers well inside 128 bits.
#[derive(Debug, Clone, Copy, Default)]
struct ExactSums {
    n: u64,
    sum: i128,
    squares: i128,
    spilled: Option<GroupSummary>,
    /// The values' decimals (the origin's).
    scale: u32,
}

impl ExactSums {
    /// |d| below 2^40 units, at most 2^20 of them: Σd² < 2^100 and
    /// n·Σd² < 2^120, (Σd)² < 2^120.
    const MAX_UNITS: u64 = 1 << 40;
    const FOLD_AT: u64 = 1 << 20;
    /// 10^(2·scale) must be exact in f64.
    const MAX_SCALE: u32 = 11;

    fn add(&mut self, d: i64, scale: u32) {
        self.scale = scale;
        let d = i128::from(d);
        self.n += 1;
        self.sum += d;
        self.squares += d * d;
        if self.n == Self::FOLD_AT {
            self.fold();
        }
    }

    fn fold(&mut self) {
        let part = self.exact_part(self.scale);
        self.spilled = Some(match self.spilled {
            Some(s) => s.merge(&part),
            None => part,
        });
        self.n = 0;
        self.sum = 0;
        self.squares = 0;
    }

    fn exact_part(&self, scale: u32) -> GroupSummary {
        if self.n == 0 {
            return GroupSummary {
                n: 0,
                mean: f64::NAN,
                ss: f64::NAN,
            };
        }
        let unit = exact_power(scale).unwrap_or(f64::NAN);
        let n = self.n as f64;
        let centred = i128::from(self.n) * self.squares - self.sum * self.sum;
        // One division when the divisor is an exact integer in f64, so the
        // result is correctly rounded; else two.
        let divide = |top: i128, by: f64| {
            if n * by < 9_007_199_254_740_992.0 {
                top as f64 / (n * by)
            } else {
                top as f64 / n / by
            }
        };
        GroupSummary {
            n: self.n as usize,
            mean: divide(self.sum, unit),
            ss: divide(centred, unit * unit),
        }
    }

    /// The summary of every value added, as offsets.
    fn summary(&self) -> GroupSummary {
        let rest = self.exact_part(self.scale);
        match self.spilled {
            Some(spilled) => spilled.merge(&rest),
            None => rest,
        }
    }
}

/// `number − origin`: exact before the final rounding when both are plain
/// decimals (see `decimal`), else in f64.
fn offset_from(number: Number, origin: Number, origin_f64: f64) -> f64 {
    match (number, origin) {
        (Number::Exact(d), Number::Exact(o)) => {
            d.minus(o).unwrap_or_else(|| number.to_f64() - origin_f64)
        }
        _ => number.to_f64() - origin_f64,
    }
}

/// A response cell that the plain reader refused: a number in another
/// spelling, or an error that says what was found and what to write.
fn response_number(
    y: &str,
    format: &CsvFormat,
    response: &str,
    column: usize,
    line: usize,
) -> Result<Number, DataError> {
    let text = if format.decimal_comma {
        y.replace(',', ".")
    } else {
        y.to_string()
    };
    if let Some(n) = parse_number(&text) {
        return Ok(n);
    }
    let lowered = text.to_ascii_lowercase();
    let non_finite = ["inf", "+inf", "-inf", "infinity", "-infinity"].contains(&lowered.as_str());
    let hint = if non_finite {
        "infinite values cannot enter an analysis of variance; correct or remove the row"
            .to_string()
    } else if !format.decimal_comma && y.contains(',') {
        "for a decimal comma add `decimal: comma` to the block".to_string()
    } else {
        format!(
            "write a number, or one of the missing-value markers {}",
            quote_list(&format.missing)
        )
    };
    Err(DataError {
        line: Some(line),
        column: Some(column + 1),
        message: format!("`{response}` must be a number, found `{y}`"),
        hint: Some(hint),
    })
}

/// Parses one chunk. Plain chunks (no quotes, no lone CR) are split with
/// memchr; others go through the full RFC 4180 reader.
fn parse_chunk(job: &Job<'_>, plan: &RowPlan) -> Result<ChunkResult, DataError> {
    let bytes = &job.chunk.bytes()[job.start..];
    let text = utf8_text(bytes, job.line).map_err(csv_error)?;
    let mut acc = RowAccumulator::new(plan);
    let end_line;
    let plain = memchr::memchr(b'"', bytes).is_none()
        && memchr::memchr_iter(b'\r', bytes).all(|i| bytes.get(i + 1) == Some(&b'\n'));
    if plain && plan.filters.is_empty() {
        end_line = plain_cells(bytes, text, job.line, plan, &mut acc)?;
    } else if plain {
        let mut fields: Vec<&str> = Vec::with_capacity(plan.width);
        let mut line = job.line;
        let mut from = 0;
        // A plain loop beats a vectorised search here: fields are short.
        let delimiter = plan.delimiter;
        for (i, &b) in bytes.iter().enumerate() {
            if b != delimiter && b != b'\n' {
                continue;
            }
            if b == b'\n' {
                close_record(text, &mut fields, from..i, line, &mut acc)?;
                line += 1;
            } else {
                fields.push(&text[from..i]);
            }
            from = i + 1;
        }
        if from < bytes.len() || !fields.is_empty() {
            close_record(text, &mut fields, from..bytes.len(), line, &mut acc)?;
        }
        end_line = line;
    } else {
        let mut parser = RecordParser::new(text, plan.delimiter, job.line);
        for record in parser.by_ref() {
            let record = record.map_err(csv_error)?;
            let fields: Vec<&str> = record.fields.iter().map(String::as_str).collect();
            acc.row(&fields, record.line)?;
        }
        end_line = parser.line();
    }
    Ok(ChunkResult {
        end_line,
        ..acc.finish()
    })
}

/// The plain reader without `where` filters: picks out the factor and
/// response cells as it goes, without collecting fields. Returns the line
/// after the chunk.
fn plain_cells(
    bytes: &[u8],
    text: &str,
    first_line: usize,
    plan: &RowPlan,
    acc: &mut RowAccumulator<'_>,
) -> Result<usize, DataError> {
    let (fi, yi) = (plan.factor.0, plan.response.0);
    let delimiter = plan.delimiter;
    let mut line = first_line;
    let (mut field, mut from) = (0, 0);
    let (mut g, mut y) = (0..0, 0..0);
    let mut end_record = |field: usize,
                          from: usize,
                          end: usize,
                          g: &mut std::ops::Range<usize>,
                          y: &mut std::ops::Range<usize>,
                          line: usize| {
        let end = if end > from && bytes[end - 1] == b'\r' {
            end - 1
        } else {
            end
        };
        if field == 0 && end == from {
            return Ok(()); // a blank line
        }
        if field == fi {
            *g = from..end;
        } else if field == yi {
            *y = from..end;
        }
        if acc.admit(field + 1, line)? {
            acc.cells(&text[g.clone()], &text[y.clone()], line)?;
        }
        Ok::<(), DataError>(())
    };
    let mut step = |i: usize,
                    field: &mut usize,
                    from: &mut usize,
                    g: &mut std::ops::Range<usize>,
                    y: &mut std::ops::Range<usize>,
                    line: &mut usize| {
        if bytes[i] == delimiter {
            if *field == fi {
                *g = *from..i;
            } else if *field == yi {
                *y = *from..i;
            }
            *field += 1;
        } else {
            end_record(*field, *from, i, g, y, *line)?;
            *line += 1;
            *field = 0;
        }
        *from = i + 1;
        Ok::<(), DataError>(())
    };
    // Eight bytes at a time: a word's delimiters and line feeds as a bit
    // mask (exact zero-byte detection, Mycroft's trick without false hits).
    let words = bytes.chunks_exact(8);
    let tail = words.remainder().len();
    let spread = |b: u8| u64::from(b) * 0x0101_0101_0101_0101;
    let (delims, feeds) = (spread(delimiter), spread(b'\n'));
    let zero_bytes = |v: u64| {
        const LOW7: u64 = 0x7f7f_7f7f_7f7f_7f7f;
        !(((v & LOW7).wrapping_add(LOW7)) | v | LOW7)
    };
    for (k, word) in words.enumerate() {
        let w = u64::from_le_bytes(word.try_into().unwrap_or([0; 8]));
        let mut hits = zero_bytes(w ^ delims) | zero_bytes(w ^ feeds);
        while hits != 0 {
            let i = k * 8 + (hits.trailing_zeros() / 8) as usize;
            step(i, &mut field, &mut from, &mut g, &mut y, &mut line)?;
            hits &= hits - 1;
        }
    }
    let tail_start = bytes.len() - tail;
    for (i, &b) in bytes.iter().enumerate().skip(tail_start) {
        if b == delimiter || b == b'\n' {
            step(i, &mut field, &mut from, &mut g, &mut y, &mut line)?;
        }
    }
    if from < bytes.len() || field > 0 {
        end_record(field, from, bytes.len(), &mut g, &mut y, line)?;
    }
    Ok(line)
}

/// Ends a record of the plain reader at `last` (its last field); a blank
/// line is skipped.
fn close_record<'t>(
    text: &'t str,
    fields: &mut Vec<&'t str>,
    last: std::ops::Range<usize>,
    line: usize,
    acc: &mut RowAccumulator<'_>,
) -> Result<(), DataError> {
    let end = match text[last.clone()].strip_suffix('\r') {
        Some(t) => last.start + t.len(),
        None => last.end,
    };
    if fields.is_empty() && end == last.start {
        return Ok(());
    }
    fields.push(&text[last.start..end]);
    let done = acc.row(fields, line);
    fields.clear();
    done
}

/// The chunks merged so far, in file order.
struct Merged {
    keep_values: bool,
    index: LevelMap,
    levels: Vec<ScannedLevel>,
    origin: Option<(Number, f64)>,
    decimals: u32,
    excluded: Vec<Exclusion>,
    exclude_hits: Vec<usize>,
    last_line: usize,
    /// The line the next chunk starts on.
    next_line: usize,
}

impl Merged {
    fn new(keep_values: bool) -> Self {
        Merged {
            keep_values,
            index: LevelMap::default(),
            levels: Vec::new(),
            origin: None,
            decimals: 0,
            excluded: Vec::new(),
            exclude_hits: Vec::new(),
            last_line: 0,
            next_line: 1,
        }
    }

    /// Adds the next chunk's outcome. A chunk with `relative` lines gets
    /// the line it starts on; an error is returned with its absolute line.
    /// Offsets are from the file's origin, unless the first chunk had no
    /// value at all: then they are from the chunk's own first value and are
    /// moved to the file's origin by one shift.
    fn add(
        &mut self,
        outcome: Result<ChunkResult, DataError>,
        relative: bool,
    ) -> Result<(), DataError> {
        let base = if relative { self.next_line } else { 0 };
        let mut chunk = outcome.map_err(|mut e| {
            if let Some(line) = &mut e.line {
                *line += base;
            }
            e
        })?;
        if relative {
            for e in &mut chunk.excluded {
                e.line += base;
            }
            for lines in &mut chunk.lines {
                for line in lines.iter_mut() {
                    *line += base;
                }
            }
            chunk.last_line += base;
            self.next_line += chunk.end_line;
        } else {
            self.next_line = chunk.end_line;
        }
        let shift = match (chunk.origin, self.origin) {
            (None, _) => 0.0,
            (Some(o), None) => {
                self.origin = Some((o, o.to_f64()));
                0.0
            }
            (Some(o), Some((global, global_f64))) => offset_from(o, global, global_f64),
        };
        for (local, name) in chunk.names.into_iter().enumerate() {
            let g = match self.index.get(name.as_str()) {
                Some(&g) => g,
                None => {
                    self.index.insert(name.as_str().into(), self.levels.len());
                    self.levels.push(ScannedLevel {
                        name,
                        summary: GroupSummary {
                            n: 0,
                            mean: f64::NAN,
                            ss: f64::NAN,
                        },
                        offsets: Vec::new(),
                        lines: Vec::new(),
                    });
                    self.levels.len() - 1
                }
            };
            let mut part = chunk.summaries[local];
            if shift != 0.0 {
                part.mean += shift;
            }
            let level = &mut self.levels[g];
            level.summary = level.summary.merge(&part);
            if self.keep_values {
                if shift != 0.0 {
                    level
                        .offsets
                        .extend(chunk.offsets[local].iter().map(|v| v + shift));
                } else {
                    level.offsets.extend_from_slice(&chunk.offsets[local]);
                }
                level.lines.extend_from_slice(&chunk.lines[local]);
            }
        }
        self.decimals = self.decimals.max(chunk.decimals);
        self.excluded.extend(chunk.excluded);
        self.exclude_hits.extend(chunk.exclude_hits);
        self.last_line = self.last_line.max(chunk.last_line);
        Ok(())
    }

    fn finish(
        self,
        plan: &RowPlan,
        spec: &ScanSpec<'_>,
        sha256: Option<String>,
        bytes: u64,
    ) -> Result<Scanned, DataError> {
        for (line, _) in spec.exclude {
            if !self.exclude_hits.contains(line) {
                return Err(super::exclude_error(
                    *line,
                    plan.header_line,
                    self.last_line,
                ));
            }
        }
        Ok(Scanned {
            levels: self.levels,
            origin: self.origin.map_or(0.0, |o| o.1),
            decimals: self.decimals,
            excluded: self.excluded,
            sha256,
            bytes,
        })
    }
}

/// Reads `response` split by `factor` from a table (spreadsheets, wide
/// layouts: rows already chosen by `data::prepare`) with the same per-row
/// rules as the file reader.
pub fn scan_table(
    table: &super::Table,
    response: &str,
    factor: &str,
    format: &CsvFormat,
) -> Result<Scanned, DataError> {
    let yi = table.column(response)?;
    let fi = table.column(factor)?;
    let plan = RowPlan::for_table(
        table.header.len(),
        table.header_line,
        (yi, response),
        (fi, factor),
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
    let spec = ScanSpec {
        response: &plan.response.1,
        factor: &plan.factor.1,
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

#[cfg(test)]
#[path = "scan_tests.rs"]
mod tests;
