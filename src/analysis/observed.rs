//! Descriptive summaries of the observations that figures draw: each
//! level's spread, the observed means of treatment-factor pairs, and the
//! residuals' normal scores. Figures compute no statistics of their own.

use crate::doc::block::{PlotKind, PlotSpec};
use crate::outcome::linear::{
    Estimate, LevelSpread, LevelSummary, NormalQq, Observation, Observed, TwoWayMeans,
};
use crate::stats::assumptions::quartiles;
use crate::stats::dist::{normal_isf, t_isf};

/// The residual stratum a pooled interval is taken from.
pub(crate) struct PooledError {
    pub ms: f64,
    pub df: f64,
    pub alpha: f64,
}

/// What the summaries of a factorial fit's observations need.
pub(crate) struct FactorialLayout<'a> {
    /// Number of levels of each factor.
    pub level_counts: Vec<usize>,
    /// The treatment factors (the blocks have no spreads).
    pub treatments: &'a [usize],
    pub plots: &'a PlotSpec,
    pub error: PooledError,
}

impl Observed {
    /// One factor: the engine's level statistics, and the Q-Q coordinates
    /// when a Q-Q plot is asked for.
    pub(crate) fn one_factor(
        levels: &[LevelSummary],
        observations: &[Observation],
        plots: &PlotSpec,
    ) -> Self {
        let spreads = levels
            .iter()
            .map(|l| LevelSpread {
                n: l.n,
                mean: l.mean,
                q1: l.q1,
                median: l.median,
                q3: l.q3,
            })
            .collect();
        Observed {
            spreads: vec![spreads],
            two_way: Vec::new(),
            qq: normal_qq(observations, plots),
        }
    }

    /// Several factors: each treatment factor's level spreads, the observed
    /// means of every pair of treatment factors (when an interaction plot is
    /// asked for) and the Q-Q coordinates (when a Q-Q plot is).
    pub(crate) fn factorial(layout: FactorialLayout<'_>, observations: &[Observation]) -> Self {
        if observations.is_empty() {
            return Observed::default();
        }
        let FactorialLayout {
            level_counts,
            treatments,
            plots,
            error,
        } = layout;
        let spreads = (0..level_counts.len())
            .map(|f| {
                if treatments.contains(&f) {
                    factor_spreads(observations, f, level_counts[f])
                } else {
                    Vec::new()
                }
            })
            .collect();
        let mut two_way = Vec::new();
        if plots.kinds.contains(&PlotKind::Interaction) {
            for (i, &a) in treatments.iter().enumerate() {
                for &b in &treatments[i + 1..] {
                    let (a, b) = (a.min(b), a.max(b));
                    two_way.push(pair_means(observations, [a, b], &level_counts, &error));
                }
            }
        }
        Observed {
            spreads,
            two_way,
            qq: normal_qq(observations, plots),
        }
    }
}

/// The values at each level of factor `f`, in observation order.
fn values_by_level(observations: &[Observation], f: usize, levels: usize) -> Vec<Vec<f64>> {
    let mut values = vec![Vec::new(); levels];
    for o in observations {
        if let Some(v) = o.levels.get(f).and_then(|&l| values.get_mut(l)) {
            v.push(o.value);
        }
    }
    values
}

fn mean(values: &[f64]) -> f64 {
    values.iter().sum::<f64>() / values.len().max(1) as f64
}

fn factor_spreads(observations: &[Observation], f: usize, levels: usize) -> Vec<LevelSpread> {
    values_by_level(observations, f, levels)
        .iter()
        .map(|v| {
            let (q1, median, q3) = quartiles(v);
            LevelSpread {
                n: v.len(),
                mean: if v.is_empty() { f64::NAN } else { mean(v) },
                q1,
                median,
                q3,
            }
        })
        .collect()
}

/// Observed means of the level pairs of two factors, each with a pooled
/// interval (mean ± t × √(MS / n)).
fn pair_means(
    observations: &[Observation],
    factors: [usize; 2],
    level_counts: &[usize],
    error: &PooledError,
) -> TwoWayMeans {
    let (na, nb) = (level_counts[factors[0]], level_counts[factors[1]]);
    let mut values = vec![Vec::new(); na * nb];
    for o in observations {
        if let (Some(&a), Some(&b)) = (o.levels.get(factors[0]), o.levels.get(factors[1]))
            && a < na
            && b < nb
        {
            values[a * nb + b].push(o.value);
        }
    }
    let t = t_isf(error.alpha / 2.0, error.df);
    let estimates = values
        .iter()
        .enumerate()
        .map(|(k, v)| {
            let label = format!("{}:{}", k / nb, k % nb);
            if v.is_empty() {
                return Estimate {
                    label,
                    n: 0,
                    mean: f64::NAN,
                    se: f64::NAN,
                    ci_lower: f64::NAN,
                    ci_upper: f64::NAN,
                    df: None,
                };
            }
            let m = mean(v);
            let se = (error.ms / v.len() as f64).sqrt();
            Estimate {
                label,
                n: v.len(),
                mean: m,
                se,
                ci_lower: m - t * se,
                ci_upper: m + t * se,
                df: None,
            }
        })
        .collect();
    TwoWayMeans { factors, estimates }
}

/// Blom plotting positions, (i − 3/8) / (n + 1/4), as standard normal
/// quantiles, and the line through the residuals' quartiles.
fn normal_qq(observations: &[Observation], plots: &PlotSpec) -> Option<NormalQq> {
    if observations.is_empty() || !plots.kinds.contains(&PlotKind::Qq) {
        return None;
    }
    let mut residuals: Vec<f64> = observations
        .iter()
        .map(|o| o.residual)
        .filter(|v| v.is_finite())
        .collect();
    residuals.sort_by(f64::total_cmp);
    let n = residuals.len() as f64;
    let scores = (0..residuals.len())
        .map(|r| -normal_isf((r as f64 + 1.0 - 0.375) / (n + 0.25)))
        .collect();
    let line = (residuals.len() >= 4).then(|| {
        let (q1, _, q3) = quartiles(&residuals);
        let z = normal_isf(0.25); // Φ⁻¹(0.75)
        ((q1 + q3) / 2.0, (q3 - q1) / (2.0 * z))
    });
    Some(NormalQq {
        residuals,
        scores,
        line,
    })
}
