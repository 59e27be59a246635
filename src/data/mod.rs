//! Data stage: reads a CSV file into a table, then extracts the response and
//! factor columns an analysis needs, with missing values counted and every
//! number kept to its written precision.

pub mod covariates;
pub mod csv;
pub mod decimal;
pub mod levels;
pub mod parquet;
pub mod reader;
pub mod scan;
pub mod spreadsheet;
pub mod summary_cells;
pub mod transform;
pub mod wide_decimal;

use crate::stats::oneway::GroupSummary;
use decimal::{Number, parse_number};

/// How a CSV file is written.
#[derive(Debug, Clone, PartialEq)]
pub struct CsvFormat {
    pub delimiter: u8,
    /// Numbers written with a decimal comma (3,14).
    pub decimal_comma: bool,
    /// Cell texts that mean "no value" (compared after trimming, ignoring case).
    pub missing: Vec<String>,
}

impl Default for CsvFormat {
    fn default() -> Self {
        CsvFormat {
            delimiter: b',',
            decimal_comma: false,
            missing: DEFAULT_MISSING.iter().map(|s| s.to_string()).collect(),
        }
    }
}

/// Tokens read as missing unless the block says otherwise.
pub const DEFAULT_MISSING: [&str; 6] = ["", "NA", "N/A", "NaN", ".", "-"];

/// Reads a data file into a table with the reader its name calls for.
pub fn read_table(
    path: &str,
    bytes: &[u8],
    format: &CsvFormat,
    sheet: Option<&str>,
    range: Option<&str>,
) -> Result<Table, DataError> {
    let options = reader::ReadOptions {
        csv: format,
        sheet,
        range,
    };
    reader::reader_for(path).read(bytes, options)
}

/// A problem found in a data file: where, what, and what to do.
#[derive(Debug, Clone, PartialEq)]
pub struct DataError {
    pub line: Option<usize>,
    pub column: Option<usize>,
    pub message: String,
    pub hint: Option<String>,
}

impl DataError {
    fn at(line: usize, message: impl Into<String>) -> Self {
        DataError {
            line: Some(line),
            column: None,
            message: message.into(),
            hint: None,
        }
    }

    fn hint(mut self, hint: impl Into<String>) -> Self {
        self.hint = Some(hint.into());
        self
    }
}

/// A parsed CSV file: a header and records of equal width.
#[derive(Debug, Clone)]
pub struct Table {
    pub header: Vec<String>,
    pub header_line: usize,
    pub rows: Vec<csv::Record>,
    /// Cells that hold no usable value (spreadsheet formula errors, formulas
    /// without a stored result): an error once an analysis uses one.
    pub problems: Vec<CellProblem>,
    /// The sheet, for a table read from a spreadsheet.
    pub sheet: Option<String>,
}

/// A cell that holds no usable value, and what to do about it.
#[derive(Debug, Clone, PartialEq)]
pub struct CellProblem {
    pub line: usize,
    /// Zero-based column in the table.
    pub column: usize,
    pub message: String,
    pub hint: String,
}

/// The header row: column names and the line it is on.
#[derive(Debug, Clone)]
pub(crate) struct Header {
    pub names: Vec<String>,
    pub line: usize,
}

impl Header {
    /// Checks a header record: every column named, no name twice, and a
    /// hint when a single column suggests the wrong delimiter.
    pub(crate) fn from_record(head: csv::Record, format: &CsvFormat) -> Result<Header, DataError> {
        if head.fields.iter().any(|f| f.contains('\0')) {
            return Err(DataError::at(
                head.line,
                "the file holds binary data (a NUL byte in the header), not CSV text",
            )
            .hint("point `data` at a CSV file, or export the table as CSV (UTF-8) from the program that wrote it"));
        }
        let names: Vec<String> = head.fields.iter().map(|h| h.trim().to_string()).collect();
        let mut seen = std::collections::HashSet::with_capacity(names.len());
        for (i, name) in names.iter().enumerate() {
            if name.is_empty() {
                return Err(DataError {
                    column: Some(i + 1),
                    ..DataError::at(
                        head.line,
                        format!("column {} has no name in the header row", i + 1),
                    )
                });
            }
            if !seen.insert(name.as_str()) {
                return Err(DataError::at(
                    head.line,
                    format!("the header names column `{name}` twice"),
                ));
            }
        }
        if names.len() == 1
            && format.delimiter == b','
            && (names[0].contains(';') || names[0].contains('\t'))
        {
            return Err(DataError::at(head.line, "the header has a single column".to_string())
                .hint("the file looks semicolon- or tab-separated: add `delimiter: semicolon` or `delimiter: tab` to the block"));
        }
        Ok(Header {
            names,
            line: head.line,
        })
    }

    /// Index of a named column, or an error that suggests the nearest name.
    pub(crate) fn column(&self, name: &str) -> Result<usize, DataError> {
        if let Some(i) = self.names.iter().position(|h| h == name) {
            return Ok(i);
        }
        let listed = self
            .names
            .iter()
            .map(|h| format!("`{h}`"))
            .collect::<Vec<_>>()
            .join(", ");
        let hint = if let Some(h) = self.names.iter().find(|h| h.eq_ignore_ascii_case(name)) {
            format!("column names are case-sensitive: did you mean `{h}`?")
        } else if let Some(near) = crate::diag::nearest(name, self.names.iter().map(String::as_str))
        {
            format!("did you mean `{near}`? The columns are {listed}")
        } else {
            format!("the columns are {listed}")
        };
        Err(DataError::at(self.line, format!("no column named `{name}`")).hint(hint))
    }
}

pub(crate) fn empty_file() -> DataError {
    DataError {
        line: None,
        column: None,
        message: "the file is empty".into(),
        hint: None,
    }
    .hint("a data file needs a header row naming its columns, then one row per observation")
}

pub(crate) fn width_error(
    line: usize,
    found: usize,
    width: usize,
    format: &CsvFormat,
) -> DataError {
    DataError::at(
        line,
        format!("found {found} fields where the header has {width}"),
    )
    .hint(if format.delimiter == b',' && !format.decimal_comma {
        "check for an unquoted comma inside a value (quote the field), or a decimal comma (add `decimal: comma` and `delimiter: semicolon`)"
    } else {
        "every row needs one value per header column"
    })
}

pub(crate) fn exclude_error(line: usize, header_line: usize, last_line: usize) -> DataError {
    DataError::at(line, format!("`exclude` names line {line}, which holds no data row"))
        .hint(format!("data rows are on lines {} to {last_line}; give the line numbers as they appear in the file", header_line + 1))
}

impl Table {
    /// Parses CSV bytes, checking that every record has the header's width.
    pub fn parse(bytes: &[u8], format: &CsvFormat) -> Result<Table, DataError> {
        let mut records = csv::parse_records(bytes, format.delimiter).map_err(|e| DataError {
            line: Some(e.line),
            column: None,
            message: e.message,
            hint: e.hint,
        })?;
        if records.is_empty() {
            return Err(empty_file());
        }
        let head = Header::from_record(records.remove(0), format)?;
        for r in &records {
            if r.fields.len() != head.names.len() {
                return Err(width_error(
                    r.line,
                    r.fields.len(),
                    head.names.len(),
                    format,
                ));
            }
        }
        Ok(Table {
            header: head.names,
            header_line: head.line,
            rows: records,
            problems: Vec::new(),
            sheet: None,
        })
    }

    /// Index of a named column, or an error that suggests the nearest name
    /// (and, in a spreadsheet, the row where that name stands if the table
    /// starts lower than the row read as its header).
    pub fn column(&self, name: &str) -> Result<usize, DataError> {
        if let Some(i) = self.header.iter().position(|h| h == name) {
            return Ok(i);
        }
        let error = Header {
            names: self.header.clone(),
            line: self.header_line,
        }
        .column(name)
        .err()
        .unwrap_or_else(|| DataError::at(self.header_line, format!("no column named `{name}`")));
        match (&self.sheet, self.lower_header(name)) {
            (Some(sheet), Some(line)) => Err(error.hint(format!(
                "sheet `{sheet}` is read from row {} as its header, but `{name}` stands in row {line}: give the table's cells with `range:` starting on that row (e.g. `range: A{line}:D200`)",
                self.header_line
            ))),
            (Some(sheet), None) => Err(error.hint(format!(
                "the header is read from row {} of sheet `{sheet}`, the first row with content; if the table starts lower, give its cells with `range:`",
                self.header_line
            ))),
            _ => Err(error),
        }
    }

    /// The first of the leading rows (a title block is short) holding a
    /// cell equal to `name`.
    fn lower_header(&self, name: &str) -> Option<usize> {
        self.rows
            .iter()
            .take(50)
            .find(|r| r.fields.iter().any(|f| f.trim() == name))
            .map(|r| r.line)
    }

    /// The first unusable cell (see [`CellProblem`]) in `columns` of a row
    /// still in the table, as an error.
    pub fn check_cells(&self, columns: &[usize]) -> Result<(), DataError> {
        for p in &self.problems {
            if columns.contains(&p.column)
                && self.rows.binary_search_by_key(&p.line, |r| r.line).is_ok()
            {
                return Err(DataError {
                    line: Some(p.line),
                    column: Some(p.column + 1),
                    message: p.message.clone(),
                    hint: Some(p.hint.clone()),
                });
            }
        }
        Ok(())
    }
}

/// A row left out of the analysis, and why.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Exclusion {
    pub line: usize,
    pub reason: String,
}

/// Extracts `response` split by `factor` from a table, with the same
/// per-row rules as the streaming reader (`scan`).
pub fn factor_response(
    table: &Table,
    response: &str,
    factor: &str,
    format: &CsvFormat,
) -> Result<scan::Scanned, DataError> {
    scan::scan_table(table, response, &[factor], format)
}

/// Which columns of a summary table hold n, the mean and the spread.
#[derive(Debug, Clone, PartialEq)]
pub struct SummaryColumns {
    pub n: String,
    pub mean: String,
    pub spread: String,
    /// The spread column holds standard errors (SD = SE·√n), not SDs.
    pub spread_is_se: bool,
    /// The exact-sums form (see `summary_cells`): Σ(y − origin),
    /// Σ(y − origin)², the origin, and the optional count of values the
    /// query rounded. The form is chosen when the header has `sum` and
    /// `squares`.
    pub sum: String,
    pub squares: String,
    pub origin: String,
    pub rounded: String,
}

/// One level of a summary table.
#[derive(Debug, Clone, PartialEq)]
pub struct SummaryRow {
    pub level: String,
    pub n: usize,
    pub mean: f64,
    /// The mean as written: exact when a plain decimal, so that means near
    /// 1e8 keep the digits that separate them (see `decimal`).
    pub mean_exact: Number,
    pub spread: f64,
    /// Half a unit in the last printed digit of the mean and of the spread.
    pub mean_half_unit: f64,
    pub spread_half_unit: f64,
    pub mean_decimals: u32,
    pub line: usize,
}

/// Most observations one summary row may count: 10^12 (a count is exact in
/// f64 far beyond, and no study has more); larger counts are typing errors.
pub const MAX_SUMMARY_N: f64 = 1e12;

/// Reads a summary table: one row per level with n, mean and SD (or SE).
pub fn summary_rows(
    table: &Table,
    factor: &str,
    columns: &SummaryColumns,
    format: &CsvFormat,
) -> Result<Vec<SummaryRow>, DataError> {
    let li = table.column(factor)?;
    let ni = table.column(&columns.n)?;
    let mi = table.column(&columns.mean)?;
    let si = table.column(&columns.spread)?;
    table.check_cells(&[li, ni, mi, si])?;
    let read = |row: &csv::Record, i: usize, what: &str| {
        summary_cells::summary_number(row, i, what, format)
    };
    let mut rows: Vec<SummaryRow> = Vec::with_capacity(table.rows.len());
    for row in &table.rows {
        let level = row.fields[li].trim().to_string();
        if level.is_empty() {
            return Err(DataError {
                column: Some(li + 1),
                ..DataError::at(row.line, format!("`{factor}` is empty"))
            }
            .hint("name the level of each summary row"));
        }
        if let Some(first) = rows.iter().find(|r| r.level == level) {
            return Err(
                DataError::at(row.line, format!("level `{level}` appears twice")).hint(format!(
                    "a summary table has one row per level; the first is on line {}",
                    first.line
                )),
            );
        }
        let n = summary_cells::summary_count(row, ni, format)?;
        let mean_exact = read(row, mi, "mean")?;
        let (mean, mean_decimals) = (mean_exact.to_f64(), mean_exact.decimals());
        let spread_number = read(row, si, "spread (SD or SE)")?;
        let (spread, spread_decimals) = (spread_number.to_f64(), spread_number.decimals());
        if spread < 0.0 {
            return Err(DataError {
                column: Some(si + 1),
                ..DataError::at(row.line, "a spread cannot be negative".to_string())
            });
        }
        rows.push(SummaryRow {
            level,
            n,
            mean,
            mean_exact,
            spread,
            mean_half_unit: 0.5 * 10f64.powi(-(mean_decimals as i32)),
            spread_half_unit: 0.5 * 10f64.powi(-(spread_decimals as i32)),
            mean_decimals,
            line: row.line,
        });
    }
    Ok(rows)
}

/// The levels of several crossed factors and the combinations of them the
/// data hold, shared by the row and the cell forms of such data.
#[derive(Debug, Clone, PartialEq)]
pub struct CellLayout {
    /// Per factor, its levels in order of first appearance.
    pub levels: Vec<Vec<String>>,
    /// The distinct combinations of level indices (full cells), in order of
    /// first appearance.
    pub cells: Vec<Vec<usize>>,
}

/// A response with several crossed factors, one row per observation. Rows
/// with the same levels share one entry of `cells`, so a row costs one
/// index, one value and one line however many factors there are. The
/// engines that need every observation (mixed models, covariates,
/// transformations) read this; the factorial fit reads [`FactorialData`].
#[derive(Debug, Clone, PartialEq)]
pub struct FactorialRows {
    pub layout: CellLayout,
    /// Per observation, its cell.
    pub cell_of: Vec<usize>,
    /// Per observation, the response as an offset from `origin`.
    pub offsets: Vec<f64>,
    /// Per observation, its data line.
    pub lines: Vec<usize>,
    pub origin: f64,
    pub decimals: u32,
    pub excluded: Vec<Exclusion>,
}

impl FactorialRows {
    /// The observations with their cells, borrowed.
    pub fn observed(&self) -> Observed<'_> {
        Observed {
            cells: &self.layout.cells,
            cell_of: &self.cell_of,
            offsets: &self.offsets,
            lines: &self.lines,
        }
    }

    /// Observation i's level index for each factor.
    pub fn row(&self, i: usize) -> &[usize] {
        &self.layout.cells[self.cell_of[i]]
    }

    /// Every observation's levels, one vector each (for small layouts).
    pub fn rows(&self) -> Vec<Vec<usize>> {
        self.cell_of
            .iter()
            .map(|&c| self.layout.cells[c].clone())
            .collect()
    }
}

/// A response with several crossed factors as its cells: each full cell's
/// n, mean and within-cell sum of squares are the core, enough for the
/// fit, every table of sums of squares, the marginal and cell means and
/// their comparisons. The observations themselves are kept when the data
/// had them and something needs them (residual checks, figures); summary
/// input has none.
#[derive(Debug, Clone, PartialEq)]
pub struct FactorialData {
    pub layout: CellLayout,
    /// Per full cell: n, the mean as an offset from `origin`, and the
    /// within-cell sum of squares.
    pub cell_summaries: Vec<GroupSummary>,
    /// Per full cell, the data line where it first appears.
    pub cell_lines: Vec<usize>,
    /// The observations; `None` for summary input.
    pub observations: Option<ObservationColumns>,
    pub origin: f64,
    pub decimals: u32,
    pub excluded: Vec<Exclusion>,
}

/// Per observation: its cell, its offset from the origin, its data line.
#[derive(Debug, Clone, PartialEq)]
pub struct ObservationColumns {
    pub cell_of: Vec<usize>,
    pub offsets: Vec<f64>,
    pub lines: Vec<usize>,
}

/// The observations of a [`FactorialData`] with its cells, borrowed.
#[derive(Debug, Clone, Copy)]
pub struct Observed<'a> {
    pub cells: &'a [Vec<usize>],
    pub cell_of: &'a [usize],
    pub offsets: &'a [f64],
    pub lines: &'a [usize],
}

impl Observed<'_> {
    /// Observation i's level index for each factor.
    pub fn row(&self, i: usize) -> &[usize] {
        &self.cells[self.cell_of[i]]
    }

    /// Every observation's levels, one vector each (for small layouts).
    pub fn rows(&self) -> Vec<Vec<usize>> {
        self.cell_of
            .iter()
            .map(|&c| self.cells[c].clone())
            .collect()
    }
}

impl FactorialData {
    /// The number of observations.
    pub fn n(&self) -> usize {
        self.cell_summaries.iter().map(|c| c.n).sum()
    }

    /// The observations, when the data had them.
    pub fn observed(&self) -> Option<Observed<'_>> {
        self.observations.as_ref().map(|o| Observed {
            cells: &self.layout.cells,
            cell_of: &o.cell_of,
            offsets: &o.offsets,
            lines: &o.lines,
        })
    }

    /// The cells of observations read one by one, keeping them.
    pub fn from_rows(rows: FactorialRows) -> FactorialData {
        let mut by_cell: Vec<Vec<f64>> = vec![Vec::new(); rows.layout.cells.len()];
        let mut cell_lines = vec![usize::MAX; rows.layout.cells.len()];
        for ((&c, &y), &line) in rows.cell_of.iter().zip(&rows.offsets).zip(&rows.lines) {
            by_cell[c].push(y);
            cell_lines[c] = cell_lines[c].min(line);
        }
        FactorialData {
            cell_summaries: by_cell
                .iter()
                .map(|v| GroupSummary::from_values(v))
                .collect(),
            cell_lines,
            layout: rows.layout,
            observations: Some(ObservationColumns {
                cell_of: rows.cell_of,
                offsets: rows.offsets,
                lines: rows.lines,
            }),
            origin: rows.origin,
            decimals: rows.decimals,
            excluded: rows.excluded,
        }
    }

    /// The cells of a summary table (one row per cell, each naming its
    /// level in every factor), with levels in order of first appearance.
    pub fn from_summaries(read: summary_cells::SummaryCells, factors: usize) -> FactorialData {
        let mut levels: Vec<Vec<String>> = vec![Vec::new(); factors];
        let cells = read
            .cells
            .iter()
            .map(|c| {
                (c.levels.iter().zip(levels.iter_mut()))
                    .map(|(name, known)| level_index(known, name))
                    .collect()
            })
            .collect();
        FactorialData {
            layout: CellLayout { levels, cells },
            cell_summaries: read
                .cells
                .iter()
                .map(|c| GroupSummary {
                    n: c.n,
                    mean: c.mean,
                    ss: c.ss,
                })
                .collect(),
            cell_lines: read.cells.iter().map(|c| c.line).collect(),
            observations: None,
            origin: read.origin,
            decimals: read.decimals,
            excluded: Vec::new(),
        }
    }
}

/// Extracts `response` and several factor columns; a row missing any of
/// them is left out and recorded. The same per-row rules as the chunked
/// reader, which this calls with the table's rows as one chunk.
pub fn factorial_response(
    table: &Table,
    response: &str,
    factors: &[&str],
    format: &CsvFormat,
) -> Result<FactorialRows, DataError> {
    let scanned = scan::scan_table(table, response, factors, format)?;
    Ok(factorial_from_scan(scanned, factors.len()))
}

/// Turns a scan over several factors (one level per cell, see
/// `scan::cell_key`) into one row per observation, in file order. Each
/// factor's levels come in order of first appearance among the rows with a
/// response, as `factorial_response` orders them.
pub fn factorial_from_scan(scanned: scan::Scanned, factors: usize) -> FactorialRows {
    let order = cells_in_order(&scanned);
    let layout = cell_rows(&scanned, &order, factors);
    let (cell_of, offsets, lines) = rows_in_file_order(&scanned, &order);
    FactorialRows {
        layout,
        cell_of,
        offsets,
        lines,
        origin: scanned.origin,
        decimals: scanned.decimals,
        excluded: scanned.excluded,
    }
}

/// A scan over several factors as its cells: each full cell's n, mean and
/// sum of squares as the scan summed them (exactly, for plain decimals),
/// whether or not it kept the values; the observations when it did. Cells
/// and levels come in the order `factorial_from_scan` gives them. Also
/// returns, for each scanned level, its cell (`None` when it has no value).
pub fn factorial_cells_from_scan(
    scanned: scan::Scanned,
    factors: usize,
) -> (FactorialData, Vec<Option<usize>>) {
    let order = cells_in_order(&scanned);
    let layout = cell_rows(&scanned, &order, factors);
    let mut cell_of_level = vec![None; scanned.levels.len()];
    for (c, &l) in order.iter().enumerate() {
        cell_of_level[l] = Some(c);
    }
    let kept = scanned.levels.iter().any(|l| !l.offsets.is_empty());
    let observations = kept.then(|| {
        let (cell_of, offsets, lines) = rows_in_file_order(&scanned, &order);
        ObservationColumns {
            cell_of,
            offsets,
            lines,
        }
    });
    let data = FactorialData {
        layout,
        cell_summaries: order.iter().map(|&l| scanned.levels[l].summary).collect(),
        cell_lines: (order.iter())
            .map(|&l| scanned.levels[l].first_line.unwrap_or(0))
            .collect(),
        observations,
        origin: scanned.origin,
        decimals: scanned.decimals,
        excluded: scanned.excluded,
    };
    (data, cell_of_level)
}

/// The scanned levels (cells) with a value, by the line of their first.
fn cells_in_order(scanned: &scan::Scanned) -> Vec<usize> {
    let mut order: Vec<(usize, usize)> = (scanned.levels.iter().enumerate())
        .filter_map(|(i, l)| l.first_line.filter(|_| l.summary.n > 0).map(|f| (f, i)))
        .collect();
    order.sort_unstable();
    order.into_iter().map(|(_, i)| i).collect()
}

/// Each factor's levels in order of first appearance, and each cell's
/// level indices.
fn cell_rows(scanned: &scan::Scanned, order: &[usize], factors: usize) -> CellLayout {
    let mut levels: Vec<Vec<String>> = vec![Vec::new(); factors];
    let cells = order
        .iter()
        .map(|&l| {
            (scan::cell_levels(&scanned.levels[l].name).into_iter())
                .zip(levels.iter_mut())
                .map(|(name, known)| level_index(known, &name))
                .collect()
        })
        .collect();
    CellLayout { levels, cells }
}

/// `name`'s place among the levels `known` so far, added at the end when new.
fn level_index(known: &mut Vec<String>, name: &str) -> usize {
    match known.iter().position(|l| l == name) {
        Some(i) => i,
        None => {
            known.push(name.to_string());
            known.len() - 1
        }
    }
}

/// The kept values of the cells `order` as one row per observation in file
/// order: each row's cell (its place in `order`), offset and line.
fn rows_in_file_order(
    scanned: &scan::Scanned,
    order: &[usize],
) -> (Vec<usize>, Vec<f64>, Vec<usize>) {
    let cells: Vec<&scan::ScannedLevel> = order.iter().map(|&l| &scanned.levels[l]).collect();
    // Each cell's rows are in file order already: merge the cells by line
    // (a heap over the cells), writing each row once.
    let total: usize = cells.iter().map(|c| c.lines.len()).sum();
    let (mut cell_of, mut offsets, mut lines) = (
        Vec::with_capacity(total),
        Vec::with_capacity(total),
        Vec::with_capacity(total),
    );
    let mut next = vec![0usize; cells.len()];
    let mut heap: std::collections::BinaryHeap<std::cmp::Reverse<(usize, usize)>> = (cells.iter())
        .enumerate()
        .filter_map(|(k, c)| c.lines.first().map(|&l| std::cmp::Reverse((l, k))))
        .collect();
    while let Some(std::cmp::Reverse((line, k))) = heap.pop() {
        let j = next[k];
        cell_of.push(k);
        offsets.push(cells[k].offsets[j]);
        lines.push(line);
        next[k] += 1;
        if let Some(&following) = cells[k].lines.get(j + 1) {
            heap.push(std::cmp::Reverse((following, k)));
        }
    }
    (cell_of, offsets, lines)
}

/// A row condition from `where`: `column op value`.
#[derive(Debug, Clone, PartialEq)]
pub struct Filter {
    pub column: String,
    pub op: String,
    pub value: String,
}

/// How rows are chosen before the analysis: layout, filters, exclusions.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct RowRules {
    /// `layout: wide`: one column per level; (factor, response) names.
    pub wide: Option<(String, String)>,
    pub filters: Vec<Filter>,
    /// Data lines to leave out, each with its reason.
    pub exclude: Vec<(usize, String)>,
}

impl Filter {
    pub(crate) fn keeps(&self, cell: &str) -> bool {
        let cell = cell.trim();
        let numbers = (
            parse_number(cell).map(|n| n.to_f64()),
            parse_number(&self.value).map(|n| n.to_f64()),
        );
        match (self.op.as_str(), numbers) {
            ("==", (Some(a), Some(b))) => a == b,
            ("!=", (Some(a), Some(b))) => a != b,
            ("==", _) => cell == self.value,
            ("!=", _) => cell != self.value,
            ("<", (Some(a), Some(b))) => a < b,
            ("<=", (Some(a), Some(b))) => a <= b,
            (">", (Some(a), Some(b))) => a > b,
            (">=", (Some(a), Some(b))) => a >= b,
            _ => false,
        }
    }

    pub(crate) fn text(&self) -> String {
        format!("{} {} {}", self.column, self.op, self.value)
    }
}

/// Applies the row rules: turns a wide table long, then leaves out the rows
/// that fail a filter or are excluded by line, recording each with its reason.
pub fn prepare(table: Table, rules: &RowRules) -> Result<(Table, Vec<Exclusion>), DataError> {
    let mut table = table;
    if let Some((factor, response)) = &rules.wide {
        let mut rows = Vec::new();
        for r in &table.rows {
            for (name, cell) in table.header.iter().zip(&r.fields) {
                rows.push(csv::Record {
                    line: r.line,
                    fields: vec![name.clone(), cell.clone()],
                });
            }
        }
        table = Table {
            header: vec![factor.clone(), response.clone()],
            header_line: table.header_line,
            rows,
            // Every cell of a wide table is a response.
            problems: std::mem::take(&mut table.problems)
                .into_iter()
                .map(|p| CellProblem { column: 1, ..p })
                .collect(),
            sheet: table.sheet.take(),
        };
    }
    let columns: Vec<usize> = rules
        .filters
        .iter()
        .map(|f| table.column(&f.column))
        .collect::<Result<_, _>>()?;
    let last_line = table.rows.last().map_or(0, |r| r.line);
    for (line, _) in &rules.exclude {
        if !table.rows.iter().any(|r| r.line == *line) {
            return Err(exclude_error(*line, table.header_line, last_line));
        }
    }
    let mut excluded = Vec::new();
    let mut kept = Vec::with_capacity(table.rows.len());
    for r in table.rows {
        if let Some((_, reason)) = rules.exclude.iter().find(|(l, _)| *l == r.line) {
            if !excluded.iter().any(|e: &Exclusion| e.line == r.line) {
                excluded.push(Exclusion {
                    line: r.line,
                    reason: format!("excluded: {reason}"),
                });
            }
            continue;
        }
        if let Some(f) = rules
            .filters
            .iter()
            .zip(&columns)
            .find(|(f, c)| !f.keeps(&r.fields[**c]))
            .map(|(f, _)| f)
        {
            excluded.push(Exclusion {
                line: r.line,
                reason: format!("fails `where: {}`", f.text()),
            });
            continue;
        }
        kept.push(r);
    }
    table.rows = kept;
    Ok((table, excluded))
}

pub(crate) fn quote_list(items: &[String]) -> String {
    items
        .iter()
        .map(|m| format!("`{m}`"))
        .collect::<Vec<_>>()
        .join(", ")
}

#[cfg(test)]
mod tests;
