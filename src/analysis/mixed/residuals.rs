//! The checks of a mixed model: its conditional residuals (observations
//! less the fixed effects and the predicted unit effects) are checked as a
//! factorial model's residuals are, outliers flagged by their studentized
//! conditional residual; and each random term's predicted effects are
//! checked for shape and for units far from the rest. With a covariance
//! structure over a repeated factor, the normalised residuals take the
//! conditional residuals' place.

use super::super::factorial::cells::TreatmentCells;
use super::super::factorial::checks::{self, Fit, Source};
use super::super::factorial::residuals::flagged_rows;
use super::super::notes::Note;
use crate::data::FactorialRows;
use crate::doc::block::{AnovaSpec, CheckSet};
use crate::outcome::mixed::{FlaggedUnit, PredictedEffects};
use crate::outcome::{Checks, OutlierRow, ResidualKind};
use crate::stats::assumptions::{OUTLIER_THRESHOLD, OUTLIERS_KEPT, shapiro_wilk};
use crate::stats::extremes::Extremes;
use crate::stats::mixed::{Predictions, VarianceComponent};

/// What the checks read.
pub(super) struct Checked<'a> {
    pub spec: &'a AnovaSpec,
    pub data: &'a FactorialRows,
    /// The residuals checked, each observation's value on the scale
    /// outliers are judged by, and which residuals they are.
    pub residuals: &'a [f64],
    pub scores: &'a [f64],
    pub kind: ResidualKind,
    pub cells: &'a TreatmentCells,
    pub factor_names: &'a [String],
    pub levels: &'a [usize],
}

impl Checked<'_> {
    /// The residual checks `checks:` asks for, marked with their kind.
    pub fn checks(&self) -> (Checks, Option<Note>) {
        let fit = Fit {
            data: Source::Observed(self.data.observed()),
            residuals: self.residuals,
            cells: self.cells,
            factor_names: self.factor_names,
            levels: self.levels,
        };
        let (checks, note) = checks::checks(self.spec, &fit, || self.outliers());
        (
            Checks {
                residuals: self.kind,
                ..checks
            },
            note,
        )
    }

    /// Observations whose score (studentized conditional or normalised
    /// residual) is beyond the threshold: how many, and the most extreme
    /// with their labels.
    fn outliers(&self) -> (usize, Vec<OutlierRow>) {
        let mut flagged = Extremes::new(OUTLIERS_KEPT);
        for (i, &t) in self.scores.iter().enumerate() {
            if t.abs() > OUTLIER_THRESHOLD {
                flagged.offer(t.abs(), (i, t));
            }
        }
        flagged_rows(
            (
                self.data.observed(),
                &self.data.layout.levels,
                self.data.origin,
            ),
            flagged,
        )
    }
}

/// Each random term's predicted effects with their checks; none when the
/// residuals are not checked (`checks: summary`).
pub(super) fn predicted_effects(
    spec: &AnovaSpec,
    predictions: &Predictions,
    components: &[VarianceComponent],
    unit_names: &[Vec<String>],
) -> Vec<PredictedEffects> {
    if spec.checks == CheckSet::Summary {
        return Vec::new();
    }
    predictions
        .terms
        .iter()
        .zip(components)
        .zip(unit_names)
        .map(|((term, component), names)| {
            let z: Vec<f64> = term
                .standardized
                .iter()
                .copied()
                .filter(|v| v.is_finite())
                .collect();
            let mut flagged = Extremes::new(OUTLIERS_KEPT);
            for (k, &s) in term.standardized.iter().enumerate() {
                if s.abs() > OUTLIER_THRESHOLD {
                    flagged.offer(s.abs(), k);
                }
            }
            let flagged_count = flagged.total();
            let mut kept = flagged.into_most_extreme_first();
            kept.sort_unstable();
            PredictedEffects {
                term: term.name.clone(),
                units: term.effects.len(),
                shapiro_wilk: (!component.on_boundary)
                    .then(|| shapiro_wilk(&z).ok())
                    .flatten(),
                flagged_count,
                flagged: kept
                    .into_iter()
                    .map(|k| FlaggedUnit {
                        unit: names[k].clone(),
                        effect: term.effects[k],
                        standardized: term.standardized[k],
                    })
                    .collect(),
            }
        })
        .collect()
}

/// Plain-language notes on the predicted effects: a term whose effects
/// depart from normal, and units far from the rest.
pub(super) fn predicted_advice(predicted: &[PredictedEffects], alpha: f64) -> Vec<Note> {
    let mut notes = Vec::new();
    for p in predicted {
        if let Some(sw) = p.shapiro_wilk.filter(|sw| sw.p < alpha) {
            notes.push(Note::other(format!(
                "The predicted effects of `{}` depart from a normal distribution (Shapiro-Wilk W = {}, {}): look for a few units unlike the rest, or a grouping of units that the model leaves out.",
                p.term,
                crate::format::fixed(sw.w, 3),
                crate::format::p_phrase(sw.p)
            )));
        }
        if p.flagged_count > 0 {
            // The most extreme few, as for observations.
            let mut worst: Vec<&FlaggedUnit> = p.flagged.iter().collect();
            worst.sort_by(|a, b| b.standardized.abs().total_cmp(&a.standardized.abs()));
            let listed: Vec<String> = worst
                .into_iter()
                .take(crate::outcome::OUTLIERS_LISTED)
                .map(|u| {
                    format!(
                        "`{}` ({} SD)",
                        u.unit,
                        crate::format::typographic_minus(&crate::format::fixed(u.standardized, 1))
                    )
                })
                .collect();
            notes.push(Note::other(format!(
                "{} of `{}` {} a predicted effect beyond ±{OUTLIER_THRESHOLD} standard deviations{}: {}. Check {} records before relying on the tests that use this error.",
                crate::format::counted(p.flagged_count, "unit", "units"),
                p.term,
                if p.flagged_count == 1 { "has" } else { "have" },
                if p.flagged_count > listed.len() { " (the most extreme listed; the results file has more)" } else { "" },
                listed.join(", "),
                if p.flagged_count == 1 { "its" } else { "their" },
            )));
        }
    }
    notes
}
