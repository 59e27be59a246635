//! The checks of a one-factor block: on the raw observations where there
//! are any, else on the level summaries.

use super::sample::Sample;
use crate::analysis::checks::{summary_checks, with_residuals, with_spread_tests};
use crate::doc::block::{AnovaSpec, CheckSet};
use crate::outcome::{Checks, OutlierRow};
use crate::stats::assumptions::outliers;
use crate::stats::oneway::OneWay;

/// The checks `checks:` asks for, as far as the data allow.
pub(super) fn checks(spec: &AnovaSpec, sample: &Sample, table: &OneWay) -> Checks {
    match &sample.raw {
        _ if spec.checks == CheckSet::Summary => Checks {
            by_request: true,
            ..summary_checks(&sample.summaries, true)
        },
        Some((offsets, lines)) => {
            on_observations(sample, offsets, lines, table, spec.checks.shown())
        }
        None => summary_checks(&sample.summaries, spec.checks.shown()),
    }
}

/// Every check, on the observations and their residuals from the level
/// means.
fn on_observations(
    sample: &Sample,
    offsets: &[Vec<f64>],
    lines: &[Vec<usize>],
    table: &OneWay,
    shown: bool,
) -> Checks {
    let summaries = &sample.summaries;
    let offsets: Vec<&[f64]> = offsets.iter().map(Vec::as_slice).collect();
    let residuals: Vec<f64> = offsets
        .iter()
        .zip(summaries)
        .flat_map(|(g, s)| g.iter().map(move |y| y - s.mean))
        .collect();
    let means: Vec<f64> = summaries.iter().map(|s| s.mean).collect();
    let found = outliers(&offsets, &means, table.ms_within, table.df_within);
    let mut flagged: Vec<OutlierRow> = found
        .most_extreme
        .into_iter()
        .map(|o| OutlierRow {
            line: lines[o.level][o.index],
            level: sample.names[o.level].clone(),
            value: sample.origin + offsets[o.level][o.index],
            studentized_residual: o.studentized,
        })
        .collect();
    flagged.sort_by_key(|o| o.line);
    let checks = with_spread_tests(summary_checks(summaries, shown), &offsets, summaries);
    with_residuals(checks, &residuals, found.total, flagged)
}
