//! Each level's statistics: n, mean, SD, its interval and quartiles.

use super::sample::Sample;
use crate::outcome::linear::LevelSummary;
use crate::stats::assumptions::quartiles;
use crate::stats::dist::t_isf;
use crate::stats::oneway::OneWay;

/// Standard errors and intervals: pooled under the ANOVA model, each
/// level's own under Welch (METHODS 3.17).
pub(super) fn level_rows(
    sample: &Sample,
    table: &OneWay,
    alpha: f64,
    pooled: bool,
) -> Vec<LevelSummary> {
    let t_crit = if table.df_within > 0 {
        t_isf(alpha / 2.0, table.df_within as f64)
    } else {
        f64::NAN
    };
    let origin = sample.origin;
    sample
        .summaries
        .iter()
        .zip(&sample.names)
        .enumerate()
        .map(|(i, (s, name))| {
            let mean = origin + s.mean;
            let (se, t) = if pooled {
                ((table.ms_within / s.n as f64).sqrt(), t_crit)
            } else {
                let t = if s.n > 1 {
                    t_isf(alpha / 2.0, (s.n - 1) as f64)
                } else {
                    f64::NAN
                };
                ((s.variance() / s.n as f64).sqrt(), t)
            };
            let (q1, median, q3) = match (&sample.observed, &sample.raw) {
                (Some(observed), _) => observed.quartiles[i],
                (None, Some((offsets, _))) => quartiles(&offsets[i]),
                (None, None) => (f64::NAN, f64::NAN, f64::NAN),
            };
            LevelSummary {
                name: name.clone(),
                n: s.n,
                mean,
                sd: s.variance().sqrt(),
                se,
                ci_lower: mean - t * se,
                ci_upper: mean + t * se,
                median: origin + median,
                q1: origin + q1,
                q3: origin + q3,
            }
        })
        .collect()
}
