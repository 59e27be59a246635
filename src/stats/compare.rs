//! Pairwise comparisons of level means with the pooled error term: Fisher's
//! LSD, Tukey-Kramer, Bonferroni and Holm (METHODS 3.5–3.7).

use super::dist::{f_isf, f_sf, t_isf, t_sf};
use super::ptukey::{ptukey_sf, qtukey_isf};
use std::fmt;

/// A multiple-comparison procedure.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum Method {
    /// Fisher's least significant difference: per-pair t tests, no adjustment.
    Lsd,
    /// Tukey-Kramer: studentized range, simultaneous over all pairs.
    Tukey,
    Bonferroni,
    Holm,
    /// Scheffé: F-based, valid for every contrast, so conservative for pairs.
    Scheffe,
    /// Šidák: 1 − (1 − p)^m, slightly less conservative than Bonferroni.
    Sidak,
    /// Dunnett: each treatment against one control (multivariate t).
    Dunnett,
    /// Games-Howell: unequal variances, Welch-Satterthwaite df per pair.
    GamesHowell,
    /// Dunn: rank-sum differences from the joint Kruskal-Wallis ranking.
    Dunn,
    /// Nemenyi (Wilcoxon-Nemenyi-McDonald-Thompson): rank sums within
    /// complete blocks, studentized range at ∞ df, simultaneous.
    Nemenyi,
    /// Conover's t-based comparison of rank sums within complete blocks,
    /// per pair after a significant Friedman test.
    ConoverFriedman,
}

impl Method {
    /// The name used in block keys and the results file.
    pub fn key(self) -> &'static str {
        match self {
            Method::Lsd => "lsd",
            Method::Tukey => "tukey",
            Method::Bonferroni => "bonferroni",
            Method::Holm => "holm",
            Method::Scheffe => "scheffe",
            Method::Sidak => "sidak",
            Method::Dunnett => "dunnett",
            Method::GamesHowell => "games-howell",
            Method::Dunn => "dunn",
            Method::Nemenyi => "nemenyi",
            Method::ConoverFriedman => "conover",
        }
    }

    /// The name used in prose and captions.
    pub fn title(self) -> &'static str {
        match self {
            Method::Lsd => "Fisher's LSD",
            Method::Tukey => "Tukey-Kramer",
            Method::Bonferroni => "Bonferroni",
            Method::Holm => "Holm",
            Method::Scheffe => "Scheffé",
            Method::Sidak => "Šidák",
            Method::Dunnett => "Dunnett",
            Method::GamesHowell => "Games-Howell",
            Method::Dunn => "Dunn",
            Method::Nemenyi => "Nemenyi",
            Method::ConoverFriedman => "Conover",
        }
    }

    /// The methods' sources, for the methods note in a report.
    pub fn citation(self) -> &'static str {
        match self {
            Method::Lsd => "Fisher 1935",
            Method::Tukey => "Tukey 1953; Kramer 1956",
            Method::Bonferroni => "Dunn 1961",
            Method::Holm => "Holm 1979",
            Method::Scheffe => "Scheffé 1953",
            Method::Sidak => "Šidák 1967",
            Method::Dunnett => "Dunnett 1955",
            Method::GamesHowell => "Games & Howell 1976",
            Method::Dunn => "Dunn 1964",
            Method::Nemenyi => "Nemenyi 1963; Hollander & Wolfe 1999, §7.3",
            Method::ConoverFriedman => "Conover 1999, §5.8",
        }
    }
}

impl fmt::Display for Method {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.title())
    }
}

/// n and mean of one level (the mean may be an offset: only differences matter).
#[derive(Debug, Clone, Copy)]
pub struct LevelMean {
    pub n: usize,
    pub mean: f64,
}

/// One comparison: level `a` against level `b`, diff = mean(a) − mean(b).
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Pair {
    pub a: usize,
    pub b: usize,
    pub diff: f64,
    /// Standard error of the difference, √(MSE(1/nₐ + 1/n_b)).
    pub se: f64,
    pub lower: f64,
    pub upper: f64,
    /// t = diff/se (LSD, Bonferroni, Holm, Šidák, Dunnett, Games-Howell),
    /// q = √2·|diff|/se (Tukey), F = t²/(k − 1) (Scheffé) or z (Dunn).
    pub statistic: f64,
    pub p_raw: f64,
    pub p_adj: f64,
    pub significant: bool,
    /// The pair's own degrees of freedom, where the method has them (Games-Howell).
    pub df: Option<f64>,
}

impl Pair {
    /// Level `a` against level `b` with its statistic and unadjusted p;
    /// no interval yet, not declared, adjusted p equal to the raw one.
    pub fn tested(a: usize, b: usize, (diff, se): (f64, f64), statistic: f64, p_raw: f64) -> Pair {
        Pair {
            a,
            b,
            diff,
            se,
            lower: f64::NAN,
            upper: f64::NAN,
            statistic,
            p_raw,
            p_adj: p_raw,
            significant: false,
            df: None,
        }
    }
}

/// A family of pairwise comparisons.
#[derive(Debug, Clone, PartialEq)]
pub struct Pairwise {
    pub method: Method,
    pub alpha: f64,
    pub pairs: Vec<Pair>,
    /// The critical value behind the intervals: t for LSD, Bonferroni, Šidák
    /// and Holm (which borrows Bonferroni's intervals), q for Tukey-Kramer,
    /// F for Scheffé, d for Dunnett; NaN where each pair has its own.
    pub critical: f64,
}

/// All pairs (j, i) for i < j in level order, compared with the pooled MSE
/// on `df` error degrees of freedom, by LSD, Tukey-Kramer, Bonferroni, Holm,
/// Scheffé or Šidák. (Dunnett, Games-Howell and Dunn have their own modules.)
pub fn pairwise(levels: &[LevelMean], mse: f64, df: f64, alpha: f64, method: Method) -> Pairwise {
    let means: Vec<f64> = levels.iter().map(|l| l.mean).collect();
    pairwise_with_se(
        &means,
        |a, b| (mse * (1.0 / levels[a].n as f64 + 1.0 / levels[b].n as f64)).sqrt(),
        df,
        alpha,
        method,
    )
}

/// All pairs (j, i) for i < j of any estimates whose differences have the
/// standard errors `se(a, b)` on `df` error degrees of freedom: the form
/// estimated marginal means in factorial designs need.
pub fn pairwise_with_se(
    means: &[f64],
    se: impl Fn(usize, usize) -> f64,
    df: f64,
    alpha: f64,
    method: Method,
) -> Pairwise {
    let mut family = pairwise_with_own_df(means, |a, b| (se(a, b), df), alpha, method);
    for p in &mut family.pairs {
        p.df = None;
    }
    family
}

/// The critical value behind a procedure's intervals on `df` degrees of
/// freedom, and the factor that turns a pair's SE into its half-width.
fn critical_value(method: Method, alpha: f64, (k, m): (usize, f64), df: f64) -> (f64, f64) {
    // Šidák's per-comparison level 1 − (1 − α)^(1/m), without cancellation.
    let sidak_alpha = -((-alpha).ln_1p() / m).exp_m1();
    let critical = match method {
        Method::Bonferroni | Method::Holm => t_isf(alpha / (2.0 * m), df),
        Method::Sidak => t_isf(sidak_alpha / 2.0, df),
        Method::Tukey => qtukey_isf(alpha, k, df),
        Method::Scheffe => f_isf(alpha, (k - 1) as f64, df),
        _ => t_isf(alpha / 2.0, df),
    };
    let half_width_factor = match method {
        Method::Tukey => critical / std::f64::consts::SQRT_2,
        Method::Scheffe => ((k - 1) as f64 * critical).sqrt(),
        _ => critical,
    };
    (critical, half_width_factor)
}

/// All pairs (j, i) for i < j of estimates whose differences each have
/// their own standard error and degrees of freedom, `se_df(a, b)` (mixed
/// models: a split-plot's pairs differ in both). Each pair's p and interval
/// use its own df; Tukey's with a df per pair is exact when the pairs share
/// one stratum and an approximation otherwise (mixed-models spec 4.2).
pub fn pairwise_with_own_df(
    means: &[f64],
    se_df: impl Fn(usize, usize) -> (f64, f64),
    alpha: f64,
    method: Method,
) -> Pairwise {
    let k = means.len();
    let m = k * (k - 1) / 2;
    let mut pairs = Vec::with_capacity(m);
    for i in 0..k {
        for j in (i + 1)..k {
            let (a, b) = (j, i);
            let diff = means[a] - means[b];
            let (se, df) = se_df(a, b);
            let t = diff / se;
            let p = 2.0 * t_sf(t.abs(), df);
            pairs.push(Pair {
                p_adj: f64::NAN,
                df: Some(df),
                ..Pair::tested(a, b, (diff, se), t, p)
            });
        }
    }
    let mf = m as f64;
    // Critical values by df, computed once per distinct df (the studentized
    // range quantile is costly); in first-seen order, so deterministic.
    let mut criticals: Vec<(f64, (f64, f64))> = Vec::new();
    for p in &mut pairs {
        let df = p.df.unwrap_or(f64::NAN);
        let (_, half_width_factor) =
            match criticals.iter().find(|(d, _)| d.to_bits() == df.to_bits()) {
                Some((_, c)) => *c,
                None => {
                    let c = critical_value(method, alpha, (k, mf), df);
                    criticals.push((df, c));
                    c
                }
            };
        p.lower = p.diff - half_width_factor * p.se;
        p.upper = p.diff + half_width_factor * p.se;
        match method {
            Method::Bonferroni => p.p_adj = (p.p_raw * mf).min(1.0),
            Method::Sidak => p.p_adj = -(mf * (-p.p_raw).ln_1p()).exp_m1(),
            Method::Tukey => {
                p.statistic = std::f64::consts::SQRT_2 * p.diff.abs() / p.se;
                p.p_adj = ptukey_sf(p.statistic, k, df);
            }
            Method::Scheffe => {
                p.statistic = p.statistic * p.statistic / (k - 1) as f64;
                p.p_adj = f_sf(p.statistic, (k - 1) as f64, df);
            }
            Method::Holm => {}
            _ => p.p_adj = p.p_raw,
        }
    }
    if method == Method::Holm {
        let adjusted = holm(&pairs.iter().map(|p| p.p_raw).collect::<Vec<_>>());
        for (p, adj) in pairs.iter_mut().zip(adjusted) {
            p.p_adj = adj;
        }
    }
    for p in &mut pairs {
        p.significant = p.p_adj < alpha;
    }
    // One critical value when every pair shares its df, else none.
    let critical = match criticals.as_slice() {
        [(_, (c, _))] => *c,
        [] => critical_value(method, alpha, (k, mf), f64::NAN).0,
        _ => f64::NAN,
    };
    Pairwise {
        method,
        alpha,
        pairs,
        critical,
    }
}

/// Holm's step-down adjustment (Holm 1979), returned in the input order.
pub fn holm(p: &[f64]) -> Vec<f64> {
    let m = p.len();
    let mut order: Vec<usize> = (0..m).collect();
    order.sort_by(|&a, &b| p[a].total_cmp(&p[b]).then(a.cmp(&b)));
    let mut adjusted = vec![0.0; m];
    let mut running = 0.0f64;
    for (rank, &idx) in order.iter().enumerate() {
        let value = ((m - rank) as f64 * p[idx]).min(1.0);
        running = running.max(value);
        adjusted[idx] = running;
    }
    adjusted
}

#[cfg(test)]
#[path = "compare_tests.rs"]
mod tests;
