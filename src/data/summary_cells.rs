//! Summary tables with one row per cell of one or several factors, in
//! either of two forms: published summaries (n, mean, SD or SE), or the
//! exact sums a database engine writes (n, origin, Σ(y − origin) and
//! Σ(y − origin)², as exact decimals). Both become each cell's n, mean
//! offset from a common origin, and within-cell sum of squares.

use super::decimal::{self, Number, parse_number};
use super::wide_decimal::{ExactRatio, MAX_WIDE_DIGITS, WideDecimal, WideError, cell_moments};
use super::{CsvFormat, DataError, MAX_SUMMARY_N, SummaryColumns, Table, csv};
use std::collections::BTreeMap;

/// One cell of a summary table.
#[derive(Debug, Clone, PartialEq)]
pub struct SummaryCell {
    /// The cell's level in each factor column, in the order asked for.
    pub levels: Vec<String>,
    pub n: usize,
    /// The cell mean as an offset from [`SummaryCells::origin`] (the first
    /// cell's mean).
    pub mean: f64,
    /// The within-cell sum of squares.
    pub ss: f64,
    pub line: usize,
}

/// A summary table read cell by cell.
#[derive(Debug, Clone, PartialEq)]
pub struct SummaryCells {
    pub cells: Vec<SummaryCell>,
    /// What every mean is an offset from: the first cell's mean.
    pub origin: f64,
    /// The exact-sums form's origin as an exact decimal; `None` for
    /// published summaries.
    pub exact_origin: Option<String>,
    /// Decimals of the data behind the summaries, for display.
    pub decimals: u32,
}

/// Whether a summary table is in the exact-sums form: its header names the
/// sum and squares columns.
pub fn is_exact_form(table: &Table, columns: &SummaryColumns) -> bool {
    let has = |name: &str| table.header.iter().any(|h| h == name);
    has(&columns.sum) && has(&columns.squares)
}

/// Reads a summary table in whichever form its header shows.
pub fn summary_cells(
    table: &Table,
    factors: &[&str],
    columns: &SummaryColumns,
    format: &CsvFormat,
) -> Result<SummaryCells, DataError> {
    if is_exact_form(table, columns) {
        exact_cells(table, factors, columns, format)
    } else {
        published_cells(table, factors, columns, format)
    }
}

/// A cell's levels, refusing an empty one and a cell listed twice.
struct CellKeys<'a> {
    factors: &'a [&'a str],
    columns: Vec<usize>,
    seen: BTreeMap<Vec<String>, usize>,
}

impl<'a> CellKeys<'a> {
    fn new(table: &Table, factors: &'a [&'a str]) -> Result<Self, DataError> {
        let columns = factors
            .iter()
            .map(|f| table.column(f))
            .collect::<Result<Vec<_>, _>>()?;
        Ok(CellKeys {
            factors,
            columns,
            seen: BTreeMap::new(),
        })
    }

    /// The keys of a form's cells and the index of each column it reads,
    /// once those columns (and `optional`, when present) are known to be
    /// filled in on every row.
    fn open<const N: usize>(
        table: &Table,
        factors: &'a [&'a str],
        names: [&String; N],
        optional: Option<usize>,
    ) -> Result<(Self, [usize; N]), DataError> {
        let keys = CellKeys::new(table, factors)?;
        let mut read = [0; N];
        for (i, name) in read.iter_mut().zip(names) {
            *i = table.column(name)?;
        }
        let mut used = keys.columns.clone();
        used.extend(read);
        used.extend(optional);
        table.check_cells(&used)?;
        Ok((keys, read))
    }

    /// A row's levels and its n (in column `ni`).
    fn cell(
        &mut self,
        row: &csv::Record,
        ni: usize,
        format: &CsvFormat,
    ) -> Result<(Vec<String>, usize), DataError> {
        let levels = self.levels(row, format)?;
        Ok((levels, summary_count(row, ni, format)?))
    }

    /// A row's levels; an empty cell or a missing-value marker is refused
    /// (a summary row without its level cannot be placed).
    fn levels(&mut self, row: &csv::Record, format: &CsvFormat) -> Result<Vec<String>, DataError> {
        let mut levels = Vec::with_capacity(self.columns.len());
        for (&i, factor) in self.columns.iter().zip(self.factors) {
            let level = row.fields[i].trim();
            let missing = format.missing.iter().any(|m| m.eq_ignore_ascii_case(level));
            if level.is_empty() || missing {
                let hint = if self.factors.len() == 1 {
                    "name the level of each summary row"
                } else {
                    "a summary row names its cell's level in every factor column"
                };
                let what = if level.is_empty() {
                    "is empty".to_string()
                } else {
                    format!("holds the missing-value marker `{level}`")
                };
                return Err(DataError {
                    column: Some(i + 1),
                    ..DataError::at(row.line, format!("`{factor}` {what}"))
                }
                .hint(hint));
            }
            levels.push(level.to_string());
        }
        if let Some(first) = self.seen.get(&levels) {
            let (what, unit) = match self.factors.len() {
                1 => (format!("level `{}`", levels[0]), "level"),
                _ => (format!("cell {}", levels.join(" × ")), "cell"),
            };
            return Err(
                DataError::at(row.line, format!("{what} appears twice")).hint(format!(
                    "a summary table has one row per {unit}; the first is on line {first}"
                )),
            );
        }
        self.seen.insert(levels.clone(), row.line);
        Ok(levels)
    }
}

/// A numeric cell of a summary row, with the one-factor path's wording.
pub(crate) fn summary_number(
    row: &csv::Record,
    i: usize,
    what: &str,
    format: &CsvFormat,
) -> Result<Number, DataError> {
    let raw = row.fields[i].trim();
    let text = if format.decimal_comma {
        raw.replace(',', ".")
    } else {
        raw.to_string()
    };
    let number = parse_number(&text)
        .filter(|n| n.to_f64().is_finite())
        .ok_or_else(|| DataError {
            line: Some(row.line),
            column: Some(i + 1),
            message: format!("the {what} must be a number, found `{raw}`"),
            hint: Some("a summary table needs a value in every cell: one row per level".into()),
        })?;
    if let Some(why) = decimal::beyond_range(&text, number) {
        return Err(DataError {
            line: Some(row.line),
            column: Some(i + 1),
            message: format!("the {what} `{raw}` cannot be analysed: {why}"),
            hint: Some("rescale the column (e.g. write it in other units)".into()),
        });
    }
    Ok(number)
}

/// The n of a summary row: a whole number from 1 to [`MAX_SUMMARY_N`].
pub(crate) fn summary_count(
    row: &csv::Record,
    ni: usize,
    format: &CsvFormat,
) -> Result<usize, DataError> {
    let n = summary_number(row, ni, "n", format)?.to_f64();
    let written = row.fields[ni].trim();
    if n > MAX_SUMMARY_N {
        return Err(DataError {
            column: Some(ni + 1),
            ..DataError::at(
                row.line,
                format!(
                    "n = {written} is beyond the {MAX_SUMMARY_N} observations a summary row may count"
                ),
            )
        }
        .hint("check the n column: it holds the number of observations behind each mean"));
    }
    if n.fract() != 0.0 || n < 1.0 {
        return Err(DataError {
            column: Some(ni + 1),
            ..DataError::at(
                row.line,
                format!("n must be a whole number of at least 1, found `{written}`"),
            )
        });
    }
    Ok(n as usize)
}

/// Published summaries: means made offsets from the first row's mean by
/// exact decimal subtraction (as the one-factor path does), SDs squared.
fn published_cells(
    table: &Table,
    factors: &[&str],
    columns: &SummaryColumns,
    format: &CsvFormat,
) -> Result<SummaryCells, DataError> {
    let read = [&columns.n, &columns.mean, &columns.spread];
    let (mut keys, [ni, mi, si]) = CellKeys::open(table, factors, read, None)?;
    let mut first: Option<Number> = None;
    let mut cells = Vec::with_capacity(table.rows.len());
    let mut decimals = 0;
    for row in &table.rows {
        let (levels, n) = keys.cell(row, ni, format)?;
        let mean_exact = summary_number(row, mi, "mean", format)?;
        decimals = decimals.max(mean_exact.decimals());
        let origin = *first.get_or_insert(mean_exact);
        let mean = match (mean_exact, origin) {
            (Number::Exact(m), Number::Exact(o)) => m.minus(o),
            _ => None,
        }
        .unwrap_or(mean_exact.to_f64() - origin.to_f64());
        let sd = published_sd(row, si, n, columns.spread_is_se, format)?;
        cells.push(SummaryCell {
            levels,
            n,
            mean,
            ss: (n as f64 - 1.0) * sd * sd,
            line: row.line,
        });
    }
    Ok(SummaryCells {
        cells,
        origin: first.map_or(0.0, Number::to_f64),
        exact_origin: None,
        decimals: decimals.saturating_sub(1),
    })
}

/// A row's SD (from an SE when the column holds SEs). A cell of one
/// observation has none: its spread is left empty (or a missing-value
/// marker) or written as 0.
fn published_sd(
    row: &csv::Record,
    si: usize,
    n: usize,
    spread_is_se: bool,
    format: &CsvFormat,
) -> Result<f64, DataError> {
    let written = row.fields[si].trim();
    let missing = format
        .missing
        .iter()
        .any(|m| m.eq_ignore_ascii_case(written));
    if n == 1 && missing {
        return Ok(0.0);
    }
    let spread = summary_number(row, si, "spread (SD or SE)", format)?.to_f64();
    if spread < 0.0 {
        return Err(DataError {
            column: Some(si + 1),
            ..DataError::at(row.line, "a spread cannot be negative".to_string())
        });
    }
    if n == 1 && spread != 0.0 {
        return Err(DataError {
            column: Some(si + 1),
            ..DataError::at(
                row.line,
                format!("a cell of one observation has no spread, found `{written}`"),
            )
        }
        .hint("leave the spread of a cell with n = 1 empty, or write 0"));
    }
    Ok(if spread_is_se {
        spread * (n as f64).sqrt()
    } else {
        spread
    })
}

/// The exact-sums form: every row's origin the same exact decimal; each
/// cell's mean and within-cell sum of squares computed from its sums in
/// exact integer arithmetic and rounded once.
fn exact_cells(
    table: &Table,
    factors: &[&str],
    columns: &SummaryColumns,
    format: &CsvFormat,
) -> Result<SummaryCells, DataError> {
    let ri = table.header.iter().position(|h| *h == columns.rounded);
    let sums = [&columns.n, &columns.origin, &columns.sum, &columns.squares];
    let (mut keys, [ni, oi, si, qi]) = CellKeys::open(table, factors, sums, ri)?;
    rounded_check(table, ri, format)?;
    let mut origin: Option<(WideDecimal, usize)> = None;
    let mut decimals = 0;
    let mut read = Vec::with_capacity(table.rows.len());
    for row in &table.rows {
        let (levels, n) = keys.cell(row, ni, format)?;
        let o = wide(row, oi, &columns.origin, format)?;
        match &origin {
            None => {
                decimals = o.significant_decimals();
                origin = Some((o, row.line));
            }
            Some((first, line)) if !first.same_value(&o) => {
                return Err(DataError {
                    column: Some(oi + 1),
                    ..DataError::at(
                        row.line,
                        format!(
                            "the origin `{}` differs from the one on line {line}",
                            row.fields[oi].trim()
                        ),
                    )
                }
                .hint("every cell's sums must be taken from one origin; regenerate the summaries with a single origin"));
            }
            Some(_) => {}
        }
        let sum = wide(row, si, &columns.sum, format)?;
        let squares = wide(row, qi, &columns.squares, format)?;
        decimals = decimals.max(sum.significant_decimals());
        let Some((mean, ss)) = cell_moments(n as u64, &sum, &squares) else {
            return Err(DataError {
                column: Some(qi + 1),
                ..DataError::at(
                    row.line,
                    "the sums are inconsistent: squares − sum²/n, the cell's sum of squares, is negative".to_string(),
                )
            }
            .hint("the sum of squares must be taken over the same rows and from the same origin as the sum"));
        };
        read.push((levels, n, mean, ss, row.line));
    }
    let Some((origin, _)) = origin else {
        return Ok(SummaryCells {
            cells: Vec::new(),
            origin: 0.0,
            exact_origin: None,
            decimals: 0,
        });
    };
    // Offsets from the first cell's exact mean, whatever origin the query
    // chose: an origin far from the data (0 for values near 1e12) would
    // otherwise leave each mean's f64 rounding in the differences.
    let base = read[0].2.clone();
    let origin_value = ExactRatio::of_decimal(&origin).plus(&base).to_f64();
    if !origin_value.is_finite() || origin_value.abs() > decimal::MAX_MAGNITUDE {
        return Err(DataError::at(
            table.header_line,
            "the means' magnitude is beyond the range sheaf can analyse (up to 1e100)",
        ));
    }
    let cells = read
        .into_iter()
        .map(|(levels, n, mean, ss, line)| SummaryCell {
            levels,
            n,
            mean: mean.minus(&base).to_f64(),
            ss,
            line,
        })
        .collect();
    Ok(SummaryCells {
        cells,
        origin: origin_value,
        exact_origin: Some(decimal_text(&origin)),
        decimals,
    })
}

/// The decimal as written, without trailing zeros after the point.
fn decimal_text(d: &WideDecimal) -> String {
    let scale = d.significant_decimals();
    let digits = d.digits.clone() / num_bigint::BigInt::from(10).pow(d.scale - scale);
    let magnitude = digits.magnitude().to_string();
    let sign = if digits.sign() == num_bigint::Sign::Minus {
        "-"
    } else {
        ""
    };
    if scale == 0 {
        return format!("{sign}{magnitude}");
    }
    let padded = format!("{magnitude:0>width$}", width = scale as usize + 1);
    let (int, frac) = padded.split_at(padded.len() - scale as usize);
    format!("{sign}{int}.{frac}")
}

/// An exact decimal cell of the exact-sums form.
fn wide(
    row: &csv::Record,
    i: usize,
    column: &str,
    format: &CsvFormat,
) -> Result<WideDecimal, DataError> {
    let written = row.fields[i].trim();
    WideDecimal::parse(written, format.decimal_comma).map_err(|e| {
        let message = match e {
            WideError::NotDecimal => format!(
                "`{column}` must be an exact decimal (digits with an optional point), found `{written}`"
            ),
            WideError::TooLong(k) => format!(
                "`{column}` has {k} significant digits, more than the {MAX_WIDE_DIGITS} an exact sum may carry"
            ),
        };
        DataError {
            column: Some(i + 1),
            ..DataError::at(row.line, message)
        }
        .hint("write the sums as exact decimals (a DECIMAL column), not in exponent notation")
    })
}

/// The optional count of values that had more decimals than the query
/// kept: every one must be 0, or the sums are not exact.
fn rounded_check(table: &Table, ri: Option<usize>, format: &CsvFormat) -> Result<(), DataError> {
    let Some(ri) = ri else {
        return Ok(());
    };
    let mut total: u128 = 0;
    let mut first = None;
    for row in &table.rows {
        let written = row.fields[ri].trim();
        let count = match summary_number(row, ri, "rounded count", format)? {
            Number::Exact(d) if d.scale == 0 && d.digits >= 0 => d.digits as u128,
            _ => {
                return Err(DataError {
                    column: Some(ri + 1),
                    ..DataError::at(
                        row.line,
                        format!("the rounded count must be a whole number, found `{written}`"),
                    )
                });
            }
        };
        if count > 0 {
            first.get_or_insert(row.line);
        }
        total = total.saturating_add(count);
    }
    match first {
        None => Ok(()),
        Some(line) => Err(DataError {
            column: Some(ri + 1),
            ..DataError::at(
                line,
                format!(
                    "{total} values had more decimals than the query kept; regenerate with more decimals"
                ),
            )
        }),
    }
}

#[cfg(test)]
#[path = "summary_cells_tests.rs"]
mod tests;
