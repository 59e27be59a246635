//! The per-row rules and what one chunk accumulates: levels, values,
//! exact sums, exclusions.

use super::*;

/// Columns and rules resolved against the header.
pub(super) struct RowPlan {
    pub(super) width: usize,
    pub(super) header_line: usize,
    pub(super) response: (usize, String),
    /// The factor columns; with more than one, a row's level is its cell,
    /// keyed by [`cell_key`].
    pub(super) factors: Vec<(usize, String)>,
    pub(super) filters: Vec<(usize, Filter)>,
    pub(super) exclude: HashMap<usize, String>,
    pub(super) format: CsvFormat,
    pub(super) keep_values: bool,
    pub(super) delimiter: u8,
    /// The file's origin once known (the first chunk's first value).
    pub(super) origin: Option<(Number, f64)>,
    /// Bit n set when a missing-value marker is n bytes long (n < 64).
    pub(super) missing_lengths: u64,
    /// The first bytes of the markers, lowercased.
    pub(super) missing_first: [bool; 256],
}

pub(super) fn missing_first(format: &CsvFormat) -> [bool; 256] {
    let mut first = [false; 256];
    for m in &format.missing {
        if let Some(&b) = m.as_bytes().first() {
            first[usize::from(b.to_ascii_lowercase())] = true;
        }
    }
    first
}

pub(super) fn missing_lengths(format: &CsvFormat) -> u64 {
    format.missing.iter().fold(0, |bits, m| {
        bits | if m.len() < 64 { 1 << m.len() } else { 0 }
    })
}

/// The key of a cell of several factors: each level as `<bytes>:<text>`,
/// so that no level text can be confused with the joints.
pub fn cell_key<'a>(levels: impl Iterator<Item = &'a str>) -> String {
    let mut key = String::new();
    push_cell_key(&mut key, levels);
    key
}

/// Writes a [`cell_key`] into `key` (cleared first), so that a reader can
/// reuse one buffer for every row instead of allocating a key each.
pub(super) fn push_cell_key<'a>(key: &mut String, levels: impl Iterator<Item = &'a str>) {
    key.clear();
    for level in levels {
        push_decimal(key, level.len());
        key.push(':');
        key.push_str(level);
    }
}

/// Appends n in decimal digits (the formatting machinery cost a fifth of
/// a two-factor scan).
fn push_decimal(key: &mut String, n: usize) {
    let mut digits = [0u8; 20];
    let (mut at, mut rest) = (digits.len(), n);
    loop {
        at -= 1;
        digits[at] = b'0' + (rest % 10) as u8;
        rest /= 10;
        if rest == 0 {
            break;
        }
    }
    key.extend(digits[at..].iter().map(|&d| char::from(d)));
}

/// The levels of a [`cell_key`].
pub fn cell_levels(mut key: &str) -> Vec<String> {
    let mut levels = Vec::new();
    while let Some((len, rest)) = key.split_once(':') {
        let len: usize = len.parse().unwrap_or(rest.len()).min(rest.len());
        let end = (0..=len)
            .rev()
            .find(|&i| rest.is_char_boundary(i))
            .unwrap_or(0);
        levels.push(rest[..end].to_string());
        key = &rest[end..];
    }
    levels
}

/// `str::trim`, skipping the work when the ends are plainly not blank.
pub(super) fn trim(cell: &str) -> &str {
    let b = cell.as_bytes();
    let solid = |c: &u8| *c > b' ' && *c < 0x80;
    if b.first().is_some_and(solid) && b.last().is_some_and(solid) {
        cell
    } else {
        cell.trim()
    }
}

impl RowPlan {
    pub(super) fn new(header: &Header, spec: &ScanSpec<'_>) -> Result<RowPlan, DataError> {
        Ok(RowPlan {
            width: header.names.len(),
            header_line: header.line,
            response: (header.column(spec.response)?, spec.response.to_string()),
            factors: spec
                .factors
                .iter()
                .map(|f| Ok((header.column(f)?, f.to_string())))
                .collect::<Result<_, DataError>>()?,
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
    pub(super) fn for_table(
        width: usize,
        header_line: usize,
        response: (usize, &str),
        factors: &[(usize, &str)],
        format: &CsvFormat,
    ) -> RowPlan {
        RowPlan {
            width,
            header_line,
            response: (response.0, response.1.to_string()),
            factors: factors.iter().map(|(c, f)| (*c, f.to_string())).collect(),
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

    pub(super) fn is_missing(&self, cell: &str) -> bool {
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
pub(super) struct ShortHasher(u64);

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

pub(super) type LevelMap = HashMap<Box<str>, usize, BuildHasherDefault<ShortHasher>>;

/// A level name's first 8 bytes (zero-padded) and its length: equal keys
/// mean equal names when the names are at most 8 bytes long.
pub(super) fn short_key(name: &str) -> (u64, usize) {
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
pub(super) struct ChunkResult {
    pub(super) names: Vec<String>,
    pub(super) summaries: Vec<GroupSummary>,
    pub(super) offsets: Vec<Vec<f64>>,
    pub(super) lines: Vec<Vec<usize>>,
    /// Per level, the line of its first value (`usize::MAX`: none).
    pub(super) first_lines: Vec<usize>,
    pub(super) origin: Option<Number>,
    pub(super) decimals: u32,
    pub(super) excluded: Vec<Exclusion>,
    pub(super) exclude_hits: Vec<usize>,
    pub(super) last_line: usize,
    /// The line just after the chunk, numbered as the chunk's lines are
    /// (from 0 when they are relative).
    pub(super) end_line: usize,
}

/// Reads rows of one chunk (or one table): the per-row rules in one place.
pub(super) struct RowAccumulator<'p> {
    pub(super) plan: &'p RowPlan,
    pub(super) index: LevelMap,
    /// Per level, its first 8 bytes and its length.
    pub(super) keys: Vec<(u64, usize)>,
    pub(super) names: Vec<String>,
    /// Per level: kept values (every value when values are kept, else
    /// only those outside the exact sums).
    pub(super) offsets: Vec<Vec<f64>>,
    pub(super) lines: Vec<Vec<usize>>,
    /// Per level, the line of its first value (`usize::MAX`: none yet).
    pub(super) first_lines: Vec<usize>,
    /// The cell key of the row being read (one buffer for every row).
    pub(super) key: String,
    /// The cells met, by each factor's level (several factors).
    pub(super) cell_index: CellIndex,
    /// Per level: exact sums of the values in the origin's decimals.
    pub(super) sums: Vec<ExactSums>,
    /// Per level: values that could not enter the exact sums.
    pub(super) inexact: Vec<usize>,
    /// Per level: those values themselves, kept or not.
    pub(super) loose: Vec<Vec<f64>>,
    pub(super) origin: Option<(Number, f64)>,
    /// The origin's digits and scale when they fit in 64 bits.
    pub(super) plain_origin: Option<(i64, u32)>,
    pub(super) decimals: u32,
    pub(super) excluded: Vec<Exclusion>,
    pub(super) exclude_hits: Vec<usize>,
    pub(super) last_line: usize,
}

pub(super) fn plain_of(n: Number) -> Option<(i64, u32)> {
    match n {
        Number::Exact(d) => i64::try_from(d.digits).ok().map(|v| (v, d.scale)),
        Number::Float(_) => None,
    }
}

impl<'p> RowAccumulator<'p> {
    pub(super) fn new(plan: &'p RowPlan) -> Self {
        RowAccumulator {
            plan,
            index: LevelMap::default(),
            keys: Vec::new(),
            names: Vec::new(),
            offsets: Vec::new(),
            lines: Vec::new(),
            first_lines: Vec::new(),
            key: String::new(),
            cell_index: CellIndex::default(),
            sums: Vec::new(),
            inexact: Vec::new(),
            loose: Vec::new(),
            origin: plan.origin,
            plain_origin: plan.origin.and_then(|o| plain_of(o.0)),
            decimals: 0,
            excluded: Vec::new(),
            exclude_hits: Vec::new(),
            last_line: 0,
        }
    }

    pub(super) fn level(&mut self, name: &str) -> usize {
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

    /// The level of a row's cell of several factors: found by each
    /// factor's level when the cell was met before, else by its cell key
    /// (the same level either way: the key decides).
    fn cell_level(&mut self, factor_cells: &[&str]) -> usize {
        let combination = self.cell_index.combination(factor_cells);
        if let Some(level) = combination.and_then(|c| self.cell_index.get(c)) {
            return level;
        }
        let mut key = std::mem::take(&mut self.key);
        push_cell_key(&mut key, factor_cells.iter().map(|c| trim(c)));
        let level = self.level(&key);
        self.key = key;
        if let Some(c) = combination {
            self.cell_index.insert(c, level);
        }
        level
    }

    pub(super) fn add_level(&mut self, name: &str, key: (u64, usize)) -> usize {
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
        self.first_lines.push(usize::MAX);
        self.sums.push(ExactSums::default());
        self.inexact.push(0);
        self.loose.push(Vec::new());
        i
    }

    /// One record: `fields` in header order, starting on `line`.
    pub(super) fn row(&mut self, fields: &[&str], line: usize) -> Result<(), DataError> {
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
        if let [(c, _)] = plan.factors.as_slice() {
            return self.cells(&[fields[*c]], fields[plan.response.0], line);
        }
        // A few factors (the usual case) without allocating per row.
        let mut inline = [""; 8];
        let listed: Vec<&str>;
        let factor_cells: &[&str] = if plan.factors.len() <= inline.len() {
            for (cell, (c, _)) in inline.iter_mut().zip(&plan.factors) {
                *cell = fields[*c];
            }
            &inline[..plan.factors.len()]
        } else {
            listed = plan.factors.iter().map(|(c, _)| fields[*c]).collect();
            &listed
        };
        self.cells(factor_cells, fields[plan.response.0], line)
    }

    /// The width check and `exclude`; false when the row is left out.
    pub(super) fn admit(&mut self, width: usize, line: usize) -> Result<bool, DataError> {
        let plan = self.plan;
        self.last_line = line;
        if width != plan.width {
            return Err(crate::data::width_error(
                line,
                width,
                plan.width,
                &plan.format,
            ));
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
    pub(super) fn cells(
        &mut self,
        factor_cells: &[&str],
        response_cell: &str,
        line: usize,
    ) -> Result<(), DataError> {
        let plan = self.plan;
        for (cell, (_, name)) in factor_cells.iter().zip(&plan.factors) {
            if plan.is_missing(trim(cell)) {
                self.excluded.push(Exclusion {
                    line,
                    reason: format!("`{name}` is missing"),
                });
                return Ok(());
            }
        }
        // A level is registered even when its response is missing, so that a
        // level with no usable rows is reported rather than silently lost.
        let level = match factor_cells {
            [g] => self.level(trim(g)),
            _ => self.cell_level(factor_cells),
        };
        let y = trim(response_cell);
        if plan.is_missing(y) {
            self.excluded.push(Exclusion {
                line,
                reason: format!("`{}` is missing", plan.response.1),
            });
            return Ok(());
        }
        if self.first_lines[level] == usize::MAX {
            self.first_lines[level] = line;
        }
        let offset = match plain_parts(y, plan.format.decimal_comma) {
            Some((digits, scale)) => {
                self.decimals = self.decimals.max(scale);
                if self.origin.is_none() {
                    self.set_origin(Number::Exact(crate::data::decimal::Decimal {
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
                    self.offset(Number::Exact(crate::data::decimal::Decimal {
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
        self.loose[level].push(offset);
        if plan.keep_values {
            self.offsets[level].push(offset);
            self.lines[level].push(line);
        }
        Ok(())
    }

    pub(super) fn set_origin(&mut self, origin: Number) {
        self.origin = Some((origin, origin.to_f64()));
        self.plain_origin = plain_of(origin);
    }

    pub(super) fn offset(&self, number: Number) -> f64 {
        match self.origin {
            Some((origin, origin_f64)) => offset_from(number, origin, origin_f64),
            None => f64::NAN,
        }
    }

    pub(super) fn finish(self) -> ChunkResult {
        let keep = self.plan.keep_values;
        // The same summary whether values are kept or not, so that a block
        // that keeps them and one that reads the file again agree exactly.
        let summaries = (0..self.names.len())
            .map(|l| {
                let exact = self.sums[l].summary();
                match self.inexact[l] {
                    0 => exact,
                    _ => exact.merge(&GroupSummary::from_values(&self.loose[l])),
                }
            })
            .collect();
        ChunkResult {
            names: self.names,
            summaries,
            offsets: if keep { self.offsets } else { Vec::new() },
            lines: if keep { self.lines } else { Vec::new() },
            first_lines: self.first_lines,
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
pub(super) struct ExactSums {
    pub(super) n: u64,
    pub(super) sum: i128,
    pub(super) squares: i128,
    pub(super) spilled: Option<GroupSummary>,
    /// The values' decimals (the origin's).
    pub(super) scale: u32,
}

impl ExactSums {
    /// |d| below 2^40 units, at most 2^20 of them: Σd² < 2^100 and
    /// n·Σd² < 2^120, (Σd)² < 2^120.
    const MAX_UNITS: u64 = 1 << 40;
    const FOLD_AT: u64 = 1 << 20;
    /// 10^(2·scale) must be exact in f64.
    const MAX_SCALE: u32 = 11;

    pub(super) fn add(&mut self, d: i64, scale: u32) {
        self.scale = scale;
        let d = i128::from(d);
        self.n += 1;
        self.sum += d;
        self.squares += d * d;
        if self.n == Self::FOLD_AT {
            self.fold();
        }
    }

    pub(super) fn fold(&mut self) {
        let part = self.exact_part(self.scale);
        self.spilled = Some(match self.spilled {
            Some(s) => s.merge(&part),
            None => part,
        });
        self.n = 0;
        self.sum = 0;
        self.squares = 0;
    }

    pub(super) fn exact_part(&self, scale: u32) -> GroupSummary {
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
    pub(super) fn summary(&self) -> GroupSummary {
        let rest = self.exact_part(self.scale);
        match self.spilled {
            Some(spilled) => spilled.merge(&rest),
            None => rest,
        }
    }
}

/// `number − origin`: exact before the final rounding when both are plain
/// decimals (see `decimal`), else in f64.
pub(super) fn offset_from(number: Number, origin: Number, origin_f64: f64) -> f64 {
    match (number, origin) {
        (Number::Exact(d), Number::Exact(o)) => {
            d.minus(o).unwrap_or_else(|| number.to_f64() - origin_f64)
        }
        _ => number.to_f64() - origin_f64,
    }
}

/// A cell's text for a message: at most 40 characters.
pub(crate) fn short(text: &str) -> String {
    if text.chars().count() > 40 {
        format!("{}…", text.chars().take(40).collect::<String>())
    } else {
        text.to_string()
    }
}

/// A response cell that the plain reader refused: a number in another
/// spelling, or an error that says what was found and what to write.
pub(super) fn response_number(
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
        return match crate::data::decimal::beyond_range(&text, n) {
            None => Ok(n),
            Some(why) => Err(DataError {
                line: Some(line),
                column: Some(column + 1),
                message: format!("`{response}` = `{}` cannot be analysed: {why}", short(y)),
                hint: Some(
                    "rescale the column (e.g. write it in other units) or round it to the digits that were measured".into(),
                ),
            }),
        };
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
        message: format!("`{response}` must be a number, found `{}`", short(y)),
        hint: Some(hint),
    })
}
