//! The keys of an `anova` block that say how its data are read: the file,
//! its CSV dialect, summary input, layout and the rows kept.

use super::block::{SpecError, bad, list, one_of};
use super::block_keys::AnovaDraft;
use super::keyvalue::Entry;
use crate::data::{Filter, SummaryColumns};

pub(super) fn read_data(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    if e.value.is_empty() {
        return Err(bad(
            e,
            "`data` is empty".into(),
            "name a CSV file relative to the document's folder",
        ));
    }
    d.data = Some(e.clone());
    Ok(())
}

pub(super) fn read_delimiter(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let choices: [(&[&str], u8); 3] = [
        (&["comma", ","], b','),
        (&["semicolon", ";"], b';'),
        (&["tab", "\\t"], b'\t'),
    ];
    let hint = "write `comma`, `semicolon` or `tab`";
    d.csv.delimiter = one_of(e, "delimiter", &choices, hint)?;
    Ok(())
}

pub(super) fn read_decimal(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let choices: [(&[&str], bool); 2] = [(&["comma", ","], true), (&["point", "dot", "."], false)];
    d.csv.decimal_comma = one_of(e, "decimal mark", &choices, "write `point` or `comma`")?;
    d.decimal = Some(e.clone());
    Ok(())
}

pub(super) fn read_missing(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    d.csv.missing = e.value.split(',').map(|s| s.trim().to_string()).collect();
    if !d.csv.missing.iter().any(String::is_empty) {
        d.csv.missing.push(String::new());
    }
    d.missing_given = true;
    Ok(())
}

pub(super) fn read_input(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let choices: [(&[&str], bool); 2] = [(&["raw"], false), (&["summary"], true)];
    let summary = one_of(
        e,
        "input",
        &choices,
        "write `raw` (one row per observation, the default) or `summary` (n, mean and SD per level)",
    )?;
    d.input = Some((e.clone(), summary));
    Ok(())
}

/// Reads `query: cells.sql`, the SQL file (relative to the document's
/// folder) that an engine ran to write the block's summary file.
pub(super) fn read_query(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    if e.value.is_empty() {
        return Err(bad(
            e,
            "`query` is empty".into(),
            "name the SQL file that made the summary, e.g. `query: cells.sql`",
        ));
    }
    d.query = Some(e.clone());
    Ok(())
}

/// The column names of summary input when `columns` does not name them.
pub(super) fn default_summary_columns() -> SummaryColumns {
    SummaryColumns {
        n: "n".into(),
        mean: "mean".into(),
        spread: "sd".into(),
        spread_is_se: false,
        sum: "sum".into(),
        squares: "squares".into(),
        origin: "origin".into(),
        rounded: "rounded".into(),
    }
}

/// Reads `columns: n = plots, mean = yield, sd = sd_yield` (or `se = …`),
/// or the exact-sums names `sum = …, squares = …, origin = …, rounded = …`.
pub(super) fn read_columns(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let mut c = default_summary_columns();
    for part in list(&e.value) {
        let Some((key, column)) = part.split_once('=') else {
            return Err(bad(
                e,
                format!("expected `name = column`, found `{part}`"),
                "for example `columns: n = plots, mean = yield, sd = yield_sd`",
            ));
        };
        let column = column.trim().to_string();
        match key.trim().to_ascii_lowercase().as_str() {
            "n" => c.n = column,
            "mean" => c.mean = column,
            "sd" => {
                c.spread = column;
                c.spread_is_se = false;
            }
            "se" => {
                c.spread = column;
                c.spread_is_se = true;
            }
            "sum" => c.sum = column,
            "squares" => c.squares = column,
            "origin" => c.origin = column,
            "rounded" => c.rounded = column,
            other => {
                return Err(bad(
                    e,
                    format!("unknown summary column `{other}`"),
                    "name the columns for n, mean, and sd (or se); or, for exact sums, n, origin, sum, squares and rounded",
                ));
            }
        }
    }
    d.columns = Some((e.clone(), c));
    Ok(())
}

pub(super) fn read_layout(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let choices: [(&[&str], bool); 2] = [(&["long"], false), (&["wide"], true)];
    let wide = one_of(
        e,
        "layout",
        &choices,
        "write `long` (one row per observation, the default) or `wide` (one column per level)",
    )?;
    d.layout = Some((e.clone(), wide));
    Ok(())
}

/// Whether a `where` condition joins two comparisons with `or` (a value that
/// is itself the word "or", as in `state == or`, is not a join).
fn joins_with_or(part: &str) -> bool {
    let lower = part.to_ascii_lowercase();
    let is_comparison = |s: &str| ["==", "!=", "<", ">"].iter().any(|op| s.contains(op));
    lower
        .match_indices(" or ")
        .any(|(i, _)| is_comparison(&lower[..i]) && is_comparison(&lower[i + 4..]))
}

pub(super) fn read_where(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    for part in e.value.split(" and ") {
        let part = part.trim();
        if joins_with_or(part) {
            return Err(bad(
                e,
                format!(
                    "`where` joins conditions with `and` only; `or` is not supported (in `{part}`)"
                ),
                "for `site == a or site == b`, leave out the other values with `!=` joined by `and` (`site != c and site != d`), or mark the rows to keep in a column of the data and write `where: keep == yes`",
            ));
        }
        let op = ["==", "!=", "<=", ">=", "<", ">"]
            .into_iter()
            .find(|op| part.contains(op))
            .ok_or_else(|| {
                bad(
                    e,
                    format!("cannot read the condition `{part}`"),
                    "write `column == value` (or !=, <, <=, >, >=); join conditions with `and`",
                )
            })?;
        let (column, value) = part.split_once(op).unwrap_or((part, ""));
        let (column, value) = (
            column.trim().trim_matches('`'),
            value.trim().trim_matches('"'),
        );
        if column.is_empty() || value.is_empty() {
            return Err(bad(
                e,
                format!("cannot read the condition `{part}`"),
                "write `column == value`, for example `where: site == north`",
            ));
        }
        d.rows.filters.push(Filter {
            column: column.to_string(),
            op: op.to_string(),
            value: value.to_string(),
        });
    }
    Ok(())
}

pub(super) fn read_exclude(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let (lines, reason) = match e.value.split_once(':') {
        Some((l, r)) => (l, r.trim().to_string()),
        None => (e.value.as_str(), String::new()),
    };
    if reason.is_empty() {
        return Err(bad(
            e,
            "`exclude` needs a reason".into(),
            "write the data lines, a colon and the reason: `exclude: 14, 27: tray knocked over`",
        ));
    }
    for item in list(lines) {
        let line = item.parse::<usize>().map_err(|_| {
            bad(
                e,
                format!("`{item}` is not a data line number"),
                "give line numbers as in the data file, e.g. `exclude: 14, 27: reason`",
            )
        })?;
        d.rows.exclude.push((line, reason.clone()));
    }
    Ok(())
}

pub(super) fn read_sheet(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    d.sheet = Some(e.clone());
    Ok(())
}

pub(super) fn read_range(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    d.range = Some(e.clone());
    Ok(())
}
