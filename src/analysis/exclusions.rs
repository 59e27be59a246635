//! Rows left out of an analysis, told in plain sentences: one per kind of
//! exclusion, with the data lines as ranges.

use super::notes::{Note, NoteKind};
use crate::data::Exclusion;

/// How many runs of consecutive lines an exclusion note names before it
/// summarises the rest (the results file keeps every line).
const EXCLUSION_RUNS_LISTED: usize = 24;

/// Why rows were left out: a missing value, or the document's own rules
/// (`exclude` lines with their reason, `where` filters).
fn why(e: &Exclusion) -> (NoteKind, String) {
    if e.reason.ends_with("is missing") {
        (NoteKind::Missing, "because a value was missing".to_string())
    } else {
        (NoteKind::Planned, format!("by the document ({})", e.reason))
    }
}

/// One plain sentence per kind of exclusion, each with its data lines.
pub(crate) fn exclusion_notes(excluded: &[Exclusion], path: &str) -> Vec<Note> {
    // One pass: the lines of each kind, kinds in order of first appearance.
    let mut kinds: Vec<((NoteKind, String), Vec<usize>)> = Vec::new();
    for e in excluded {
        let k = why(e);
        match kinds.iter_mut().find(|(seen, _)| *seen == k) {
            Some((_, lines)) => lines.push(e.line),
            None => kinds.push((k, vec![e.line])),
        }
    }
    kinds
        .into_iter()
        .map(|((kind, phrase), mut lines)| {
            lines.dedup();
            let count = lines.len();
            let (rows, were) = if count == 1 {
                ("row", "was")
            } else {
                ("rows", "were")
            };
            let text = format!(
                "{} {rows} of {path} {were} left out {phrase} ({}).",
                crate::format::count(count),
                line_ranges(&lines)
            );
            Note::new(kind, text)
        })
        .collect()
}

/// Runs of consecutive lines; two neighbours read better as two lines than
/// as a range.
fn runs(lines: &[usize]) -> Vec<(usize, usize)> {
    let mut runs: Vec<(usize, usize)> = Vec::new();
    for &line in lines {
        match runs.last_mut() {
            Some((_, end)) if line == *end + 1 => *end = line,
            _ => runs.push((line, line)),
        }
    }
    runs.into_iter()
        .flat_map(|(a, b)| {
            if b == a + 1 {
                vec![(a, a), (b, b)]
            } else {
                vec![(a, b)]
            }
        })
        .collect()
}

/// "line 7", "lines 3, 5–9 and 12", or the first runs and a count of the
/// rest: runs of consecutive lines are written as ranges.
pub(crate) fn line_ranges(lines: &[usize]) -> String {
    let runs = runs(lines);
    let text = |&(a, b): &(usize, usize)| {
        if a == b {
            a.to_string()
        } else {
            format!("{a}–{b}")
        }
    };
    let word = if lines.len() == 1 { "line" } else { "lines" };
    let shown: Vec<String> = runs.iter().take(EXCLUSION_RUNS_LISTED).map(text).collect();
    if runs.len() <= EXCLUSION_RUNS_LISTED {
        let listed = match shown.split_last() {
            Some((last, rest)) if !rest.is_empty() => format!("{} and {last}", rest.join(", ")),
            _ => shown.join(""),
        };
        return format!("{word} {listed}");
    }
    let rest: usize = runs[EXCLUSION_RUNS_LISTED..]
        .iter()
        .map(|(a, b)| b - a + 1)
        .sum();
    format!(
        "lines {}, and {} more up to line {}; the results file lists every line",
        shown.join(", "),
        crate::format::count(rest),
        runs.last().map_or(0, |r| r.1)
    )
}
