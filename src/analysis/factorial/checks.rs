//! The checks of a model with several factors, on its residuals: spread
//! across the treatment cells (or, without replicates, across one factor's
//! levels), shape, outliers. The factorial engine gives its residuals, the
//! mixed-model engine its conditional residuals.

pub(in crate::analysis) use super::cells::Source;
use super::cells::TreatmentCells;
use crate::analysis::checks::{summary_checks, with_residuals, with_spread_tests};
use crate::analysis::notes::Note;
use crate::data::Observed;
use crate::doc::block::{AnovaSpec, CheckSet};
use crate::outcome::{Checks, OutlierRow};
use crate::stats::oneway::GroupSummary;

/// What the checks read.
pub(in crate::analysis) struct Fit<'a> {
    pub data: Source<'a>,
    /// One residual per observation.
    pub residuals: &'a [f64],
    pub cells: &'a TreatmentCells,
    pub factor_names: &'a [String],
    pub levels: &'a [usize],
}

fn summaries(groups: &[Vec<f64>]) -> Vec<GroupSummary> {
    groups
        .iter()
        .map(|g| GroupSummary::from_values(g))
        .collect()
}

fn slices(groups: &[Vec<f64>]) -> Vec<&[f64]> {
    groups.iter().map(Vec::as_slice).collect()
}

/// The checks `checks:` asks for, with a note when the spread could not be
/// compared cell by cell; `outliers` gives the flagged observations (how
/// many, and the most extreme), asked only when the residuals are checked.
pub(in crate::analysis) fn checks(
    spec: &AnovaSpec,
    fit: &Fit<'_>,
    outliers: impl FnOnce() -> (usize, Vec<OutlierRow>),
) -> (Checks, Option<Note>) {
    let residuals = fit.residuals;
    let observed = match fit.data {
        Source::Observed(observed) => observed,
        Source::Cells(cells) => return (from_cell_summaries(spec, cells), None),
    };
    // Variance checks on the residuals grouped by treatment cell: within a
    // cell of the full model these are the observations less a constant.
    let cell_groups: Vec<Vec<f64>> = fit
        .cells
        .group(observed, &|i| residuals[i])
        .into_iter()
        .filter(|g| !g.is_empty())
        .collect();
    let cell_summaries = summaries(&cell_groups);
    let checks = summary_checks(&cell_summaries, spec.checks.shown());
    if spec.checks == CheckSet::Summary {
        // Only what the cell summaries allow, as asked.
        return (
            Checks {
                by_request: true,
                ..checks
            },
            None,
        );
    }
    let (checks, note) = if cell_groups.iter().all(|g| g.len() >= 2) {
        let spread = with_spread_tests(checks, &slices(&cell_groups), &cell_summaries);
        (spread, None)
    } else {
        let (spread, note) = spread_by_first_factor(checks, (fit, observed), &cell_groups);
        (spread, Some(note))
    };
    let (count, outliers) = outliers();
    (with_residuals(checks, residuals, count, outliers), note)
}

/// Summary input: what the cells' summaries allow (Bartlett over the
/// cells of two or more observations, the SD ratio); the checks on
/// residuals are marked not computed, as for one-factor summaries.
fn from_cell_summaries(spec: &AnovaSpec, cells: &[GroupSummary]) -> Checks {
    let replicated: Vec<GroupSummary> = cells.iter().filter(|s| s.n >= 2).copied().collect();
    let checks = summary_checks(&replicated, spec.checks.shown());
    Checks {
        by_request: spec.checks == CheckSet::Summary,
        ..checks
    }
}

/// Unreplicated cells (blocks): compare the spread of the residuals across
/// the levels of the first treatment factor instead, and say so.
fn spread_by_first_factor(
    checks: Checks,
    (fit, observed): (&Fit<'_>, Observed<'_>),
    cell_groups: &[Vec<f64>],
) -> (Checks, Note) {
    let first = fit.cells.factors.first().copied().unwrap_or(0);
    let mut by_level: Vec<Vec<f64>> = vec![Vec::new(); fit.levels[first]];
    for (i, &c) in observed.cell_of.iter().enumerate() {
        by_level[observed.cells[c][first]].push(fit.residuals[i]);
    }
    let checks = with_spread_tests(checks, &slices(&by_level), &summaries(&by_level));
    let single = cell_groups.iter().filter(|g| g.len() < 2).count();
    let note = first_factor_note(&fit.factor_names[first], single, cell_groups.len());
    (checks, note)
}

/// What the variance checks compare when `single` of the `cells` treatment
/// cells hold one observation: the levels of the first treatment factor.
pub(super) fn first_factor_note(name: &str, single: usize, cells: usize) -> Note {
    let note = if single == cells {
        format!(
            "With one observation per treatment cell, the variance checks compare the residuals' spread across the levels of `{name}`."
        )
    } else {
        format!(
            "{single} of the {cells} treatment cells hold a single observation, so the variance checks cannot compare every cell's spread; they compare the residuals' spread across the levels of `{name}` instead."
        )
    };
    Note::other(note)
}
