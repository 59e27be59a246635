//! Covariates: numeric columns that enter a model as straight lines. They
//! are read as trailing factor columns (so a row missing one is left out
//! and counted like a row missing a factor), then each distinct text is
//! read as an exact decimal and the factor cells are rebuilt without them.

use super::decimal::{Number, parse_number, parse_plain};
use super::{DataError, FactorialRows};

/// The covariates of the analysed rows, each value as an offset from the
/// column's first value (exact decimal subtraction, as for the response).
#[derive(Debug, Clone, PartialEq)]
pub struct Covariates {
    pub names: Vec<String>,
    /// `values[c][i]`: covariate c of observation i, minus `origins[c]`.
    pub values: Vec<Vec<f64>>,
    pub origins: Vec<f64>,
    /// Digits after the decimal point, the most any value has.
    pub decimals: Vec<u32>,
}

/// One covariate text read as a number, with a comma as the decimal mark
/// where the file uses one.
fn read_number(text: &str, decimal_comma: bool) -> Option<Number> {
    let t = text.trim();
    let n = parse_plain(t, decimal_comma).or_else(|| match decimal_comma {
        true => parse_number(&t.replace(',', ".")),
        false => parse_number(t),
    })?;
    n.to_f64().is_finite().then_some(n)
}

/// `value − origin` computed exactly where both are exact decimals.
fn offset(value: Number, origin: Number) -> f64 {
    match (value, origin) {
        (Number::Exact(v), Number::Exact(o)) => v
            .minus(o)
            .unwrap_or_else(|| value.to_f64() - origin.to_f64()),
        _ => value.to_f64() - origin.to_f64(),
    }
}

/// Splits the last `names.len()` factor columns of `data` off as
/// covariates: each of their levels must be a number. The remaining
/// factors keep their levels; their cells are rebuilt over them alone.
pub fn split_covariates(
    data: FactorialRows,
    names: &[&str],
    decimal_comma: bool,
) -> Result<(FactorialRows, Covariates), DataError> {
    let factors = data.layout.levels.len() - names.len();
    let mut values = vec![Vec::with_capacity(data.offsets.len()); names.len()];
    let mut origins: Vec<Option<Number>> = vec![None; names.len()];
    let mut decimals = vec![0u32; names.len()];
    // Each covariate level's number, read once.
    let mut numbers: Vec<Vec<Option<Number>>> = (0..names.len())
        .map(|c| {
            data.layout.levels[factors + c]
                .iter()
                .map(|t| read_number(t, decimal_comma))
                .collect()
        })
        .collect();
    for i in 0..data.offsets.len() {
        let row = data.row(i);
        for (c, name) in names.iter().enumerate() {
            let level = row[factors + c];
            let Some(number) = numbers[c][level] else {
                let text = &data.layout.levels[factors + c][level];
                return Err(DataError::at(
                    data.lines[i],
                    format!("covariate `{name}` must be a number, found `{text}`"),
                )
                .hint("a covariate is a measured number (an initial weight, a stand count); write numbers only, or leave the cell empty to drop the row"));
            };
            let origin = *origins[c].get_or_insert(number);
            decimals[c] = decimals[c].max(number.decimals());
            values[c].push(offset(number, origin));
        }
    }
    numbers.clear();
    let origins = origins
        .iter()
        .map(|o| o.map_or(0.0, Number::to_f64))
        .collect();
    let covariates = Covariates {
        names: names.iter().map(|s| s.to_string()).collect(),
        values,
        origins,
        decimals,
    };
    Ok((without_covariate_columns(data, factors), covariates))
}

/// The data with only the first `factors` factors: cells merged where they
/// differed only in a covariate, in order of first appearance.
fn without_covariate_columns(mut data: FactorialRows, factors: usize) -> FactorialRows {
    let mut cells: Vec<Vec<usize>> = Vec::new();
    let mut index: std::collections::BTreeMap<Vec<usize>, usize> = Default::default();
    let old_to_new: Vec<usize> = data
        .layout
        .cells
        .iter()
        .map(|cell| {
            let key = cell[..factors].to_vec();
            *index.entry(key.clone()).or_insert_with(|| {
                cells.push(key);
                cells.len() - 1
            })
        })
        .collect();
    // Cells are numbered in order of first appearance in the file.
    let mut order: Vec<Option<usize>> = vec![None; cells.len()];
    let mut renumbered = Vec::with_capacity(cells.len());
    for c in data.cell_of.iter_mut() {
        let merged = old_to_new[*c];
        *c = *order[merged].get_or_insert_with(|| {
            renumbered.push(cells[merged].clone());
            renumbered.len() - 1
        });
    }
    data.layout.cells = renumbered;
    data.layout.levels.truncate(factors);
    data
}

#[cfg(test)]
#[path = "covariates_tests.rs"]
mod tests;
