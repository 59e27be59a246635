//! One-way analysis of variance with unequal group sizes.
//!
//! Works on group summaries (n, mean, sum of squared deviations), which a
//! streaming reader can produce in one pass and merge; the raw values are
//! needed only for the optional self-check of the total sum of squares.
//! Values are offsets from a common origin (see `data::decimal`), and every
//! sum is a two-pass, compensated one (METHODS 2.2, N2).

use super::dist::{f_isf, f_sf};
use super::sum::neumaier;

/// n, mean and Σ(x − mean)² of one group.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GroupSummary {
    pub n: usize,
    pub mean: f64,
    pub ss: f64,
}

impl GroupSummary {
    /// Two-pass summary with the correction term −(Σd)²/n (Chan, Golub &
    /// LeVeque 1983), which removes the first-order error of the mean.
    pub fn from_values(values: &[f64]) -> Self {
        let n = values.len();
        if n == 0 {
            return GroupSummary {
                n,
                mean: f64::NAN,
                ss: f64::NAN,
            };
        }
        let mean = neumaier(values.iter().copied()) / n as f64;
        let dev_sum = neumaier(values.iter().map(|x| x - mean));
        let ss =
            neumaier(values.iter().map(|x| (x - mean) * (x - mean))) - dev_sum * dev_sum / n as f64;
        GroupSummary {
            n,
            mean: mean + dev_sum / n as f64,
            ss: ss.max(0.0),
        }
    }

    /// Combines the summaries of two disjoint parts of one group (Chan, Golub
    /// & LeVeque 1983), so a reader can summarise a file chunk by chunk and
    /// merge the chunks in a fixed order.
    pub fn merge(&self, other: &GroupSummary) -> GroupSummary {
        if self.n == 0 {
            return *other;
        }
        if other.n == 0 {
            return *self;
        }
        let (na, nb) = (self.n as f64, other.n as f64);
        let n = na + nb;
        let delta = other.mean - self.mean;
        GroupSummary {
            n: self.n + other.n,
            mean: self.mean + delta * nb / n,
            ss: self.ss + other.ss + delta * delta * na * nb / n,
        }
    }

    /// Sample variance (divisor n − 1); NaN for n < 2.
    pub fn variance(&self) -> f64 {
        if self.n < 2 {
            f64::NAN
        } else {
            self.ss / (self.n - 1) as f64
        }
    }
}

/// The one-way ANOVA table and what was noticed while computing it.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct OneWay {
    pub k: usize,
    pub n: usize,
    pub df_between: usize,
    pub df_within: usize,
    pub ss_between: f64,
    pub ss_within: f64,
    pub ss_total: f64,
    pub ms_between: f64,
    /// The mean squared error; NaN when there are no residual df.
    pub ms_within: f64,
    pub f: f64,
    pub p: f64,
    pub f_crit: f64,
    pub r_squared: f64,
    /// Grand mean, as an offset like the group means.
    pub grand_mean: f64,
    pub warnings: Vec<String>,
}

/// Why a one-way ANOVA cannot be computed at all.
#[derive(Debug, Clone, PartialEq)]
pub enum OneWayError {
    TooFewLevels(usize),
}

/// The ANOVA from group summaries. `total_ss`, when given, is Σ(x − x̄)²
/// computed directly from the raw values; it is used as a self-check.
pub fn one_way(
    groups: &[GroupSummary],
    alpha: f64,
    total_ss: Option<f64>,
) -> Result<OneWay, OneWayError> {
    let present: Vec<&GroupSummary> = groups.iter().filter(|g| g.n > 0).collect();
    let k = present.len();
    if k < 2 {
        return Err(OneWayError::TooFewLevels(k));
    }
    let n: usize = present.iter().map(|g| g.n).sum();
    let grand_mean = neumaier(present.iter().map(|g| g.n as f64 * g.mean)) / n as f64;
    let ss_between = neumaier(
        present
            .iter()
            .map(|g| g.n as f64 * (g.mean - grand_mean).powi(2)),
    );
    let ss_within = neumaier(present.iter().map(|g| g.ss));
    let df_between = k - 1;
    let df_within = n - k;
    let ms_between = ss_between / df_between as f64;
    let mut warnings = Vec::new();
    let ss_total = ss_between + ss_within;
    if let Some(direct) = total_ss
        && (direct - ss_total).abs() > 1e-9 * direct.max(f64::MIN_POSITIVE)
    {
        warnings.push(format!(
                "self-check: the total sum of squares computed directly ({direct:e}) differs from between + within ({ss_total:e}) by more than 1e-9 relative"
            ));
    }
    let (ms_within, f, p, f_crit);
    if df_within == 0 {
        ms_within = f64::NAN;
        f = f64::NAN;
        p = f64::NAN;
        f_crit = f64::NAN;
        warnings.push(
            "no residual degrees of freedom: every level has a single observation, so F cannot be computed".into(),
        );
    } else {
        ms_within = ss_within / df_within as f64;
        f_crit = f_isf(alpha, df_between as f64, df_within as f64);
        if ss_within == 0.0 {
            if ss_between > 0.0 {
                f = f64::INFINITY;
                p = 0.0;
                warnings.push(
                    "F is not finite: there is no variation within the levels; check the data"
                        .into(),
                );
            } else {
                f = f64::NAN;
                p = f64::NAN;
                warnings.push("F is undefined: every observation has the same value".into());
            }
        } else {
            f = ms_between / ms_within;
            p = f_sf(f, df_between as f64, df_within as f64);
        }
    }
    let r_squared = if ss_total > 0.0 {
        ss_between / ss_total
    } else {
        f64::NAN
    };
    Ok(OneWay {
        k,
        n,
        df_between,
        df_within,
        ss_between,
        ss_within,
        ss_total,
        ms_between,
        ms_within,
        f,
        p,
        f_crit,
        r_squared,
        grand_mean,
        warnings,
    })
}

/// Σ(x − x̄)² over all values of all groups, computed directly (two-pass).
pub fn total_sum_of_squares<'a>(groups: impl IntoIterator<Item = &'a [f64]> + Clone) -> f64 {
    let all = || groups.clone().into_iter().flat_map(|g| g.iter().copied());
    let n = all().count();
    if n == 0 {
        return f64::NAN;
    }
    GroupSummary::from_values(&all().collect::<Vec<_>>()).ss
}

#[cfg(test)]
#[path = "oneway_tests.rs"]
mod tests;
