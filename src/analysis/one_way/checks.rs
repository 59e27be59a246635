//! The checks of a one-factor block: on the raw observations where there
//! are any, else on the level summaries.

use super::observations::Observed;
use super::sample::Sample;
use crate::analysis::checks::summary_checks;
use crate::doc::block::{AnovaSpec, CheckSet};
use crate::outcome::{Checks, OutlierRow};

/// The checks `checks:` asks for, as far as the data allow.
pub(super) fn checks(spec: &AnovaSpec, sample: &Sample) -> Checks {
    match &sample.observed {
        _ if spec.checks == CheckSet::Summary => Checks {
            by_request: true,
            ..summary_checks(&sample.summaries, true)
        },
        Some(observed) => on_observations(sample, observed, spec.checks.shown()),
        None => summary_checks(&sample.summaries, spec.checks.shown()),
    }
}

/// Every check, on the observations and their residuals from the level
/// means.
fn on_observations(sample: &Sample, observed: &Observed, shown: bool) -> Checks {
    let outliers: Vec<OutlierRow> = observed
        .outliers
        .iter()
        .map(|o| OutlierRow {
            line: o.line,
            level: sample.names[o.level].clone(),
            value: sample.origin + o.offset,
            studentized_residual: o.studentized,
        })
        .collect();
    Checks {
        from_summary: false,
        brown_forsythe: observed.brown_forsythe,
        levene: observed.levene,
        shapiro_wilk: observed.shapiro_wilk,
        skewness: observed.skewness,
        excess_kurtosis: observed.excess_kurtosis,
        outlier_count: observed.outlier_count,
        outliers,
        ..summary_checks(&sample.summaries, shown)
    }
}
