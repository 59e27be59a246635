//! Welch's heteroscedastic one-way ANOVA (Welch 1951, *Biometrika*
//! 38:330–336) and the Games-Howell pairwise procedure (Games & Howell 1976,
//! *J. Educ. Stat.* 1:113–125), both from group summaries (METHODS 3.12, 3.9).

use super::compare::{Method, Pair, Pairwise};
use super::dist::f_sf;
use super::oneway::GroupSummary;
use super::ptukey::{ptukey_sf, qtukey_isf_many};
use super::sum::neumaier;

/// Welch's F* with its (fractional) degrees of freedom.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct WelchAnova {
    pub f: f64,
    pub df1: f64,
    pub df2: f64,
    pub p: f64,
}

/// Welch's ANOVA; `Err(i)` names the first level with n < 2 or no spread,
/// for which the statistic is undefined.
pub fn welch_anova(groups: &[GroupSummary]) -> Result<WelchAnova, usize> {
    if let Some(bad) = groups
        .iter()
        .position(|g| g.n < 2 || !crate::stats::is_positive(g.variance()))
    {
        return Err(bad);
    }
    let k = groups.len() as f64;
    let w: Vec<f64> = groups.iter().map(|g| g.n as f64 / g.variance()).collect();
    let w_sum = neumaier(w.iter().copied());
    let weighted_mean = neumaier(w.iter().zip(groups).map(|(w, g)| w * g.mean)) / w_sum;
    let a = neumaier(
        w.iter()
            .zip(groups)
            .map(|(w, g)| w * (g.mean - weighted_mean).powi(2)),
    ) / (k - 1.0);
    let lambda = neumaier(
        w.iter()
            .zip(groups)
            .map(|(w, g)| (1.0 - w / w_sum).powi(2) / (g.n as f64 - 1.0)),
    );
    let f = a / (1.0 + 2.0 * (k - 2.0) * lambda / (k * k - 1.0));
    let df1 = k - 1.0;
    let df2 = (k * k - 1.0) / (3.0 * lambda);
    Ok(WelchAnova {
        f,
        df1,
        df2,
        p: f_sf(f, df1, df2),
    })
}

/// Games-Howell comparisons of every pair, each with its own Welch-Satterthwaite
/// df. Pairs involving a level with n < 2 get NaN and are not declared.
pub fn games_howell(groups: &[GroupSummary], alpha: f64) -> Pairwise {
    let k = groups.len();
    let mut pairs = Vec::with_capacity(k * (k - 1) / 2);
    for i in 0..k {
        for j in (i + 1)..k {
            let (a, b) = (j, i);
            let (ga, gb) = (&groups[a], &groups[b]);
            let va = ga.variance() / ga.n as f64;
            let vb = gb.variance() / gb.n as f64;
            let se = (va + vb).sqrt();
            let diff = ga.mean - gb.mean;
            let df =
                (va + vb).powi(2) / (va * va / (ga.n as f64 - 1.0) + vb * vb / (gb.n as f64 - 1.0));
            let t = diff / se;
            let p = if se > 0.0 && df.is_finite() {
                ptukey_sf(std::f64::consts::SQRT_2 * t.abs(), k, df)
            } else {
                f64::NAN
            };
            pairs.push(Pair {
                significant: p < alpha,
                df: Some(df),
                ..Pair::tested(a, b, (diff, se), t, p)
            });
        }
    }
    // Each pair has its own ν and so its own critical value.
    let usable = |p: &Pair| p.se > 0.0 && p.df.is_some_and(f64::is_finite);
    let dfs: Vec<f64> = pairs
        .iter()
        .map(|p| {
            if usable(p) {
                p.df.unwrap_or(f64::NAN)
            } else {
                f64::NAN
            }
        })
        .collect();
    let critical = qtukey_isf_many(alpha, k, &dfs);
    for (pair, q) in pairs.iter_mut().zip(critical) {
        if q.is_finite() {
            let half = q / std::f64::consts::SQRT_2 * pair.se;
            pair.lower = pair.diff - half;
            pair.upper = pair.diff + half;
        }
    }
    Pairwise {
        method: Method::GamesHowell,
        alpha,
        pairs,
        critical: f64::NAN,
    }
}

#[cfg(test)]
#[path = "welch_tests.rs"]
mod tests;
