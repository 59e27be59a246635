//! The notes a one-factor sample raises before any test: levels left out
//! or thin, spellings, rows excluded, and the rounding of published
//! summaries.

use super::sample::Sample;
use crate::analysis::exclusions::exclusion_notes;
use crate::analysis::notes::{Note, NoteKind, all_of};
use crate::doc::block::AnovaSpec;
use crate::stats::oneway::OneWay;

/// The notes on the data, in the order a reader meets them.
pub(super) fn sample_notes(
    sample: &Sample,
    table: &OneWay,
    factor: &str,
    spec: &AnovaSpec,
) -> Vec<Note> {
    let response = &spec.model.value.response;
    let mut notes: Vec<Note> = sample
        .empty
        .iter()
        .map(|name| {
            Note::other(format!(
                "level `{name}` has no observations with a value of `{response}`; it is left out of the analysis"
            ))
        })
        .collect();
    // The table's own warnings (no error term, no variation) say a test
    // could not be made: they are never acknowledged away.
    notes.extend(all_of(NoteKind::Other, table.warnings.iter().cloned()));
    for (s, name) in sample.summaries.iter().zip(&sample.names) {
        if s.n == 1 {
            notes.push(Note::new(NoteKind::SmallLevels, format!(
                "level `{name}` has a single observation: it adds nothing to the error term, and its SD cannot be computed"
            )));
        }
    }
    notes.extend(spelling_notes(sample, factor));
    notes.extend(exclusion_notes(&sample.excluded, &spec.data.value));
    if let Some(r) = sample.rounding {
        notes.push(Note::new(NoteKind::Summary, format!(
            "These results come from published summaries (n, mean and SD per level). Checks that need the raw observations (Brown-Forsythe, Levene, Shapiro-Wilk, outliers, ranks) could not be done. Rounding the summaries to their printed digits leaves F between {} and {} ({}).",
            crate::format::fixed(r.f_low, 2),
            crate::format::fixed(r.f_high, 2),
            p_range(r.p_low, r.p_high)
        )));
    }
    notes
}

/// Level spellings that differ only in case or spacing, and numeric
/// factors with many levels for the rows.
fn spelling_notes(sample: &Sample, factor: &str) -> Vec<Note> {
    let first_lines: Vec<usize> = match (&sample.observed, &sample.raw) {
        (Some(observed), _) => observed.first_lines.clone(),
        (None, Some((_, lines))) => lines
            .iter()
            .map(|l| l.first().copied().unwrap_or(0))
            .collect(),
        (None, None) => vec![0; sample.names.len()],
    };
    let named: Vec<(&str, usize)> = sample
        .names
        .iter()
        .map(String::as_str)
        .zip(first_lines)
        .collect();
    let rows = sample.summaries.iter().map(|s| s.n).sum();
    all_of(
        NoteKind::Other,
        crate::data::levels::level_warnings(factor, &named, rows),
    )
}

/// Kruskal-Wallis with small levels.
pub(super) fn few_for_ranks() -> Note {
    Note::new(
        NoteKind::SmallLevels,
        "Some levels have fewer than five observations: the chi-squared approximation to the Kruskal-Wallis p-value is rough there.",
    )
}

/// "p between 0.012 and 0.031", or one phrase when both ends print alike
/// ("p < 0.001 throughout").
fn p_range(low: f64, high: f64) -> String {
    let (a, b) = (crate::format::p_value(low), crate::format::p_value(high));
    if a == b {
        format!("{} throughout", crate::format::p_phrase(low))
    } else {
        format!("p between {a} and {b}")
    }
}
