//! Binding a block to its data: where the rows come from (memory or a
//! stream), reading them with the document's row rules, the design order and
//! display labels of levels, and data-file errors that point into the file.

use crate::data::parquet;
use crate::data::scan::{
    CHUNK_BYTES, Hashing, ScanSpec, Scanned, Source, Visit, rescan, scan_first,
};
use crate::data::{DataError, Exclusion, Table, prepare};
use crate::diag::Diagnostic;
use crate::doc::block::AnovaSpec;
use crate::doc::{Block, Document};
use crate::provenance::Input;

/// Where a block's data come from.
pub enum Data<'a> {
    /// In memory, shared by the blocks that read the file.
    Loaded(&'a Input),
    /// A large CSV file, read in chunks while it is hashed; `reopen` opens
    /// it again for checks that need more than one pass.
    Stream {
        path: &'a str,
        reader: Box<dyn std::io::Read + Send + 'a>,
        reopen: Reopen<'a>,
    },
}

/// Opens a streamed file again, from its start.
pub type Reopen<'a> = &'a dyn Fn() -> std::io::Result<Box<dyn std::io::Read + Send>>;

/// Where a later pass finds the bytes a block's first pass read.
#[derive(Clone, Copy)]
pub(crate) enum Again<'a> {
    Memory(&'a [u8]),
    /// A Parquet file held in memory, decoded again for each pass.
    Columnar(&'a bytes::Bytes),
    /// A streamed file; `true` when it is Parquet (its rows arrive as CSV
    /// text in `parquet::text_format`).
    Reopen(Reopen<'a>, bool),
}

impl<'a> Data<'a> {
    pub(crate) fn again(&self) -> Again<'a> {
        match self {
            Data::Loaded(input) if parquet::is_parquet(&input.path) => {
                static NONE: bytes::Bytes = bytes::Bytes::new();
                Again::Columnar(input.bytes.as_ref().unwrap_or(&NONE))
            }
            Data::Loaded(input) => Again::Memory(input.bytes.as_deref().unwrap_or_default()),
            Data::Stream { path, reopen, .. } => Again::Reopen(*reopen, parquet::is_parquet(path)),
        }
    }
}

/// What a first pass saw, for later passes to compare with: the levels in
/// the order found, their counts, the bytes and their hash.
pub(crate) struct FirstPass {
    pub names: Vec<String>,
    pub counts: Vec<usize>,
    pub bytes: u64,
    /// The bytes' fingerprint, when the first pass read a stream.
    pub fingerprint: Option<u64>,
}

impl FirstPass {
    pub(crate) fn of(scanned: &Scanned) -> FirstPass {
        FirstPass {
            names: scanned.levels.iter().map(|l| l.name.clone()).collect(),
            counts: scanned.levels.iter().map(|l| l.summary.n).collect(),
            bytes: scanned.bytes,
            fingerprint: scanned.fingerprint,
        }
    }
}

/// A later pass over a block's CSV data (see `data::scan::rescan`). The
/// bytes must be the ones the first pass read: the same size and levels
/// with the same counts on every pass, and on a pass that `verify`s, when
/// the first one hashed them, the same fingerprint; else a clear error.
pub(crate) fn rescan_csv(
    again: Again<'_>,
    spec: &ScanSpec<'_>,
    first: &FirstPass,
    verify: bool,
    visit: Visit<'_>,
) -> Result<(), DataError> {
    let (source, columnar) = match again {
        Again::Memory(bytes) => (Source::Memory(bytes), false),
        Again::Columnar(bytes) => (
            Source::Stream(parquet::rows_in_memory(bytes.clone(), &scan_columns(spec))?),
            true,
        ),
        Again::Reopen(open, columnar) => (
            Source::Stream(open().map_err(|e| DataError {
                line: None,
                column: None,
                message: format!("opening the file again for a later pass failed: {e}"),
                hint: None,
            })?),
            columnar,
        ),
    };
    let text_format = parquet::text_format(spec.format);
    let spec = ScanSpec {
        format: if columnar { &text_format } else { spec.format },
        ..spec.clone()
    };
    let verify = verify && first.fingerprint.is_some();
    let seen = rescan(source, &spec, &first.names, verify, reader_threads(), visit)?;
    let counts = seen.levels.iter().map(|l| l.summary.n);
    if seen.bytes != first.bytes
        || !counts.eq(first.counts.iter().copied())
        || (verify && seen.fingerprint != first.fingerprint)
    {
        return Err(crate::data::scan::changed_error());
    }
    Ok(())
}

/// Whether a block reads raw observations from a CSV file in long layout,
/// which the chunked reader (`data::scan`) handles.
pub(crate) fn reads_csv_rows(spec: &AnovaSpec) -> bool {
    spec.summary.is_none()
        && spec.rows.wide.is_none()
        && crate::data::reader::reader_for(&spec.data.value).streams_rows()
}

/// Whether a block can read its data file as a stream: a one-factor model
/// on raw observations in a CSV file, in long layout.
pub fn streams(spec: &AnovaSpec) -> bool {
    let model = &spec.model.value;
    model.terms.len() == 1 && model.terms[0].factors.len() == 1 && reads_csv_rows(spec)
}

/// Reads a block's CSV data with the chunked reader, from memory or from a
/// stream; a streamed file also comes back as the `Input` that records it.
pub(crate) fn scan_csv(
    data: Data<'_>,
    spec: &ScanSpec<'_>,
) -> Result<(Scanned, Option<Input>), DataError> {
    let columnar = parquet::is_parquet(match &data {
        Data::Loaded(input) => &input.path,
        Data::Stream { path, .. } => path,
    });
    let (source, path) = match data {
        Data::Loaded(input) if columnar => {
            let bytes = input.bytes.clone().unwrap_or_default();
            let rows = parquet::rows_in_memory(bytes, &scan_columns(spec))?;
            (Source::Stream(rows), None)
        }
        Data::Loaded(input) => (
            Source::Memory(input.bytes.as_deref().unwrap_or_default()),
            None,
        ),
        Data::Stream { path, reader, .. } => (Source::Stream(reader), Some(path)),
    };
    // A Parquet file arrives as CSV text in a fixed format of its own.
    let text_format = parquet::text_format(spec.format);
    let spec = ScanSpec {
        format: if columnar { &text_format } else { spec.format },
        ..spec.clone()
    };
    // The report records a Parquet file's own hash, not its text's.
    let hashing = if columnar {
        Hashing::Fingerprint
    } else {
        Hashing::Both
    };
    let scanned = scan_first(source, &spec, (CHUNK_BYTES, reader_threads()), hashing)?;
    let input = path.map(|path| Input {
        path: path.to_string(),
        sha256: scanned.sha256.clone().unwrap_or_default(),
        size: scanned.bytes,
        bytes: None,
    });
    Ok((scanned, input))
}

/// The columns a scan reads: its factors, its response, and those its
/// `where` filters test.
fn scan_columns<'a>(spec: &ScanSpec<'a>) -> Vec<&'a str> {
    let mut columns: Vec<&str> = spec.factors.to_vec();
    columns.push(spec.response);
    columns.extend(spec.filters.iter().map(|f| f.column.as_str()));
    columns
}

/// Every column a block names (responses, factors, covariates, blocks,
/// random terms, the subject, filters): what a columnar file is read for.
pub fn block_columns(spec: &AnovaSpec) -> Vec<&str> {
    let model = &spec.model.value;
    let mut columns: Vec<&str> = model.responses.iter().map(String::as_str).collect();
    columns.extend(model.factors());
    let listed = [&spec.covariates, &spec.blocks];
    columns.extend(
        listed
            .into_iter()
            .flatten()
            .flat_map(|l| l.value.iter().map(String::as_str)),
    );
    if let Some(random) = &spec.random {
        columns.extend(
            random
                .value
                .iter()
                .flat_map(|t| t.factors.iter().map(String::as_str)),
        );
    }
    columns.extend(spec.subject.as_ref().map(|s| s.value.as_str()));
    columns.extend(spec.rows.filters.iter().map(|f| f.column.as_str()));
    columns
}

/// Worker threads for reading large files; the results never depend on it.
pub(crate) fn reader_threads() -> usize {
    std::thread::available_parallelism().map_or(1, |n| n.get().min(8))
}

/// Turns a data-file problem into a diagnostic pointing into the data file,
/// with a note at the block that named it.
pub(crate) fn data_error(
    doc: &Document,
    block: &Block,
    data_line: usize,
    display_path: &str,
    e: DataError,
) -> Diagnostic {
    let sheet = match &block.spec {
        crate::doc::BlockSpec::Anova(spec) => spec.sheet.as_deref(),
        _ => None,
    };
    let reader = crate::data::reader::reader_for(display_path);
    let at = crate::data::reader::FilePlace {
        path: display_path,
        sheet,
        line: e.line,
        column: e.column,
    };
    let mut d = match reader.place(&at) {
        Some(place) => Diagnostic::new(e.message).at(&place, None, None),
        None => Diagnostic::new(e.message).at(display_path, e.line, e.column),
    };
    if let Some(h) = e.hint {
        d = d.hint(h);
    }
    d.note(format!(
        "read by the block `{}` at {}:{}",
        block.id, doc.name, data_line
    ))
}

/// Every level named in `labels` must be a level with data: a misspelt name
/// would otherwise leave its level unrenamed without a word.
pub(crate) fn check_labels(
    doc: &Document,
    spec: &AnovaSpec,
    levels: &[&str],
) -> Result<(), Diagnostic> {
    let Some((line, column)) = spec.labels_at else {
        return Ok(());
    };
    let Some((from, _)) = spec
        .labels
        .iter()
        .find(|(from, _)| !levels.contains(&from.as_str()))
    else {
        return Ok(());
    };
    let at = list_item_column(doc, line, column, |item| {
        item.split_once('=').is_some_and(|(f, _)| f.trim() == from)
    });
    let known = levels
        .iter()
        .map(|l| format!("`{l}`"))
        .collect::<Vec<_>>()
        .join(", ");
    let d = doc.error_at(
        line,
        Some(at),
        format!("`labels` renames `{from}`, which is not a level with data"),
    );
    Err(match crate::diag::nearest(from, levels.iter().copied()) {
        Some(n) => d.hint(format!("did you mean `{n}`? The levels are {known}")),
        None => d.hint(format!("the levels are {known}")),
    })
}

/// The 1-based column of the first item of a comma-separated value that
/// `is_item` accepts, on a document line whose value starts at `value_column`;
/// the value's own column when none does.
fn list_item_column(
    doc: &Document,
    line: usize,
    value_column: usize,
    is_item: impl Fn(&str) -> bool,
) -> usize {
    let text = doc.lines.line_text(&doc.source, line);
    let Some((start, _)) = text.char_indices().nth(value_column.saturating_sub(1)) else {
        return value_column;
    };
    let mut offset = start;
    for part in text[start..].split(',') {
        if is_item(part.trim()) {
            let lead = part.len() - part.trim_start().len();
            return 1 + text[..offset + lead].chars().count();
        }
        offset += part.len() + 1;
    }
    value_column
}

/// Renames levels for display (`labels`); names not listed stay as they are.
pub(crate) fn apply_labels(names: &mut [String], labels: &[(String, String)]) {
    for n in names.iter_mut() {
        if let Some((_, to)) = labels.iter().find(|(from, _)| from == n) {
            *n = to.clone();
        }
    }
}

/// Reads a block's data file (CSV or spreadsheet) and applies its row rules
/// (`layout`, `where`, `exclude`); returns the rows and those left out.
pub(crate) fn read_rows(
    doc: &Document,
    block: &Block,
    spec: &AnovaSpec,
    input: &Input,
    display_path: &str,
) -> Result<(Table, Vec<Exclusion>), Diagnostic> {
    let fail = |e| data_error(doc, block, spec.data.line, display_path, e);
    let table = crate::data::read_table(
        &input.path,
        input.bytes.as_deref().unwrap_or_default(),
        &spec.csv,
        spec.sheet.as_deref(),
        spec.range.as_deref(),
    )
    .map_err(fail)?;
    prepare(table, &spec.rows).map_err(fail)
}

/// The design order of the levels found in the data: `levels` if given (it
/// must name exactly the data's levels), else first appearance.
pub(crate) fn design_order(
    doc: &Document,
    spec: &AnovaSpec,
    found: &[&str],
    factor: &str,
    path: &str,
) -> Result<Vec<usize>, Diagnostic> {
    let Some(listed) = &spec.levels else {
        return Ok((0..found.len()).collect());
    };
    let found_text = found
        .iter()
        .map(|l| format!("`{l}`"))
        .collect::<Vec<_>>()
        .join(", ");
    for name in &listed.value {
        if !found.contains(&name.as_str()) {
            let column = list_item_column(doc, listed.line, listed.column, |item| item == name);
            let d = doc.error_at(
                listed.line,
                Some(column),
                format!("level `{name}` does not occur in column `{factor}` of {path}"),
            );
            return Err(match crate::diag::nearest(name, found.iter().copied()) {
                Some(n) => d.hint(format!(
                    "did you mean `{n}`? The levels in the data are {found_text}"
                )),
                None => d.hint(format!("the levels in the data are {found_text}")),
            });
        }
    }
    if let Some(extra) = found.iter().find(|f| !listed.value.iter().any(|l| l == *f)) {
        return Err(doc
            .error_at(
                listed.line,
                Some(listed.column),
                format!("level `{extra}` occurs in the data but is not listed in `levels`"),
            )
            .hint(format!("list every level: the data have {found_text}")));
    }
    Ok(listed
        .value
        .iter()
        .filter_map(|name| found.iter().position(|f| f == name))
        .collect())
}

pub(crate) fn formula_text(f: &crate::doc::formula::Formula) -> String {
    let terms: Vec<String> = f.terms.iter().map(|t| t.to_string()).collect();
    format!("{} ~ {}", f.response, terms.join(" + "))
}

/// Decimals shown for means: the block's `decimals`, the document's, or one
/// more than the data's own precision (at most six).
pub(crate) fn decimals_shown(doc: &Document, spec: &AnovaSpec, data_decimals: u32) -> u32 {
    spec.decimals
        .or(doc.front.decimals)
        .unwrap_or((data_decimals + 1).min(6))
}

/// What shapes the presentation only.
pub fn presentation(spec: &AnovaSpec, decimals: u32) -> crate::outcome::linear::Presentation {
    crate::outcome::linear::Presentation {
        decimals,
        caption: spec.caption.clone(),
        order: spec.order,
        show: spec.show,
        plots: spec.plots.clone(),
    }
}
