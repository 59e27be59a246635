//! Applying a declared transformation to scanned observations. Each value
//! is rebuilt from the origin and its exact offset (the original value to
//! within one rounding, never the shifted one: a log is not shift
//! invariant), transformed, and the levels are summarised again on the new
//! scale. The arithmetic means on the data's scale are kept for the report.

use super::DataError;
use super::scan::Scanned;
use crate::stats::oneway::GroupSummary;
use crate::stats::sum::neumaier;
use crate::stats::transform::{Declared, Transform};

/// How many offending lines an error lists before it counts the rest.
const LINES_SHOWN: usize = 8;

/// What the values must be, for the error message.
fn domain(t: &Declared) -> &'static str {
    match (t.transform, t.offset > 0.0) {
        (Transform::Ln | Transform::Log10, false) => "values above 0",
        (Transform::Ln | Transform::Log10, true) => "values above minus the offset",
        (Transform::Sqrt, _) => "values of 0 or more",
        (Transform::Logit, false) if t.percent => "percentages strictly between 0 and 100",
        (Transform::Logit, _) => "proportions strictly between 0 and 1",
        (Transform::Arcsine, _) if t.percent => "percentages from 0 to 100",
        (Transform::Arcsine, _) => "proportions from 0 to 1",
    }
}

fn hint(t: &Declared, values: &[f64]) -> String {
    match t.transform {
        Transform::Ln | Transform::Log10 | Transform::Sqrt => "declare a constant added to every value first, e.g. `offset: 1` (it is printed with the results and changes them), or leave those rows out with `exclude`".into(),
        Transform::Logit | Transform::Arcsine if !t.percent && values.iter().any(|&v| v > 1.0 && v <= 100.0) => format!(
            "if the column holds percentages, write `transform: {} percent`",
            t.transform.keyword()
        ),
        Transform::Logit => "the logit of 0 or 1 is infinite: leave those rows out with `exclude`, or analyse the counts behind the proportions".into(),
        Transform::Arcsine => "check the column: a proportion lies between 0 and 1".into(),
    }
}

/// Transforms every kept value of `scanned` in place (levels, origin and
/// summaries on the new scale) and returns each level's arithmetic mean on
/// the data's scale. Values the transformation cannot take are an error
/// naming their lines.
pub fn transform_scanned(
    scanned: &mut Scanned,
    t: &Declared,
    response: &str,
) -> Result<Vec<f64>, DataError> {
    let origin = scanned.origin;
    let mut bad: Vec<(usize, f64)> = Vec::new();
    let mut first: Option<(usize, f64)> = None;
    let mut arithmetic = Vec::with_capacity(scanned.levels.len());
    let mut transformed: Vec<Vec<f64>> = Vec::with_capacity(scanned.levels.len());
    for level in &scanned.levels {
        let values: Vec<f64> = level.offsets.iter().map(|d| origin + d).collect();
        arithmetic.push(neumaier(values.iter().copied()) / values.len() as f64);
        let mut z = Vec::with_capacity(values.len());
        for (&y, &line) in values.iter().zip(&level.lines) {
            match t.apply(y) {
                Some(v) => {
                    z.push(v);
                    if first.is_none_or(|(l, _)| line < l) {
                        first = Some((line, v));
                    }
                }
                None => bad.push((line, y)),
            }
        }
        transformed.push(z);
    }
    if !bad.is_empty() {
        return Err(domain_error(t, response, bad, scanned.decimals));
    }
    let z_origin = first.map_or(0.0, |f| f.1);
    for (level, z) in scanned.levels.iter_mut().zip(transformed) {
        level.offsets = z.iter().map(|v| v - z_origin).collect();
        level.summary = GroupSummary::from_values(&level.offsets);
    }
    scanned.origin = z_origin;
    Ok(arithmetic)
}

fn domain_error(
    t: &Declared,
    response: &str,
    mut bad: Vec<(usize, f64)>,
    decimals: u32,
) -> DataError {
    bad.sort_by_key(|b| b.0);
    let values: Vec<f64> = bad.iter().map(|b| b.1).collect();
    let shown: Vec<String> = bad
        .iter()
        .take(LINES_SHOWN)
        .map(|(line, y)| format!("{y:.*} on line {line}", decimals as usize))
        .collect();
    let more = match bad.len().saturating_sub(LINES_SHOWN) {
        0 => String::new(),
        n => format!(" and {n} more"),
    };
    DataError {
        line: Some(bad[0].0),
        column: None,
        message: format!(
            "`transform: {}` needs {} in `{response}`; found {}{more}",
            t.transform.keyword(),
            domain(t),
            shown.join(", ")
        ),
        hint: Some(hint(t, &values)),
    }
}

/// Transforms every observation of a factorial layout in place and returns,
/// per factor and level, the arithmetic mean on the data's scale.
pub fn transform_factorial(
    data: &mut super::FactorialRows,
    t: &Declared,
    response: &str,
) -> Result<Vec<Vec<f64>>, DataError> {
    let origin = data.origin;
    let mut sums: Vec<Vec<(usize, crate::stats::sum::NeumaierSum)>> = data
        .layout
        .levels
        .iter()
        .map(|l| vec![(0, Default::default()); l.len()])
        .collect();
    let mut bad = Vec::new();
    let mut z = Vec::with_capacity(data.offsets.len());
    for (i, (&d, &line)) in data.offsets.iter().zip(&data.lines).enumerate() {
        let y = origin + d;
        for (f, &level) in data.layout.cells[data.cell_of[i]].iter().enumerate() {
            sums[f][level].0 += 1;
            sums[f][level].1.add(y);
        }
        match t.apply(y) {
            Some(v) => z.push(v),
            None => bad.push((line, y)),
        }
    }
    if !bad.is_empty() {
        return Err(domain_error(t, response, bad, data.decimals));
    }
    // Observations are in file order: the first is the earliest line.
    let z_origin = z.first().copied().unwrap_or(0.0);
    data.offsets = z.iter().map(|v| v - z_origin).collect();
    data.origin = z_origin;
    Ok(sums
        .into_iter()
        .map(|f| f.into_iter().map(|(n, s)| s.value() / n as f64).collect())
        .collect())
}
