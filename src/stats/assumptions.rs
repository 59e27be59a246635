//! Assumption checks for a one-way layout: homogeneity of variance
//! (Brown-Forsythe, Levene, Bartlett), normality of residuals (Shapiro-Wilk,
//! skewness, excess kurtosis) and outlying observations (METHODS 3.13, 3.14).

use super::dist::{chi2_sf, normal_isf, normal_sf, t_sf};
use super::extremes::Extremes;
use super::oneway::{GroupSummary, one_way};
use super::sum::neumaier;

/// An F test on (k − 1, N − k) df.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct FTest {
    pub statistic: f64,
    pub df1: f64,
    pub df2: f64,
    pub p: f64,
}

/// A χ² test.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct ChiSquareTest {
    pub statistic: f64,
    pub df: f64,
    pub p: f64,
}

/// Where Levene's absolute deviations are taken from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Center {
    /// Levene (1960): deviations from each level's mean.
    Mean,
    /// Brown & Forsythe (1974): deviations from each level's median.
    Median,
}

/// The values of the given ranks (0-based, any order) in `values` sorted,
/// by repeated selection: linear time instead of a full sort, and the same
/// numbers, since an order statistic is one of the values.
fn order_statistics(values: &[f64], ranks: &[usize]) -> Vec<f64> {
    let mut wanted = ranks.to_vec();
    wanted.sort_unstable();
    wanted.dedup();
    let mut v = values.to_vec();
    let mut found = Vec::with_capacity(wanted.len());
    let mut start = 0;
    for &r in &wanted {
        // Everything before `start` is at most the previous order statistic.
        let (_, x, _) = v[start..].select_nth_unstable_by(r - start, f64::total_cmp);
        found.push(*x);
        start = r + 1;
    }
    ranks
        .iter()
        .map(|r| found[wanted.partition_point(|w| w < r)])
        .collect()
}

/// The median of a sample (mean of the two middle values for even n).
pub fn median(values: &[f64]) -> f64 {
    if values.is_empty() {
        return f64::NAN;
    }
    let m = values.len() / 2;
    if values.len() % 2 == 1 {
        order_statistics(values, &[m])[0]
    } else {
        let v = order_statistics(values, &[m - 1, m]);
        0.5 * (v[0] + v[1])
    }
}

/// First quartile, median and third quartile by linear interpolation between
/// order statistics (Hyndman & Fan 1996, type 7; numpy's default).
pub fn quartiles(values: &[f64]) -> (f64, f64, f64) {
    if values.is_empty() {
        return (f64::NAN, f64::NAN, f64::NAN);
    }
    let last = values.len() - 1;
    let place = |q: f64| {
        let h = last as f64 * q;
        let lo = h.floor() as usize;
        (lo, (lo + 1).min(last), h - lo as f64)
    };
    let places = [place(0.25), place(0.5), place(0.75)];
    let ranks: Vec<usize> = places.iter().flat_map(|&(lo, hi, _)| [lo, hi]).collect();
    let v = order_statistics(values, &ranks);
    let at = |i: usize| {
        let (_, _, frac) = places[i];
        let (lo, hi) = (v[2 * i], v[2 * i + 1]);
        lo + frac * (hi - lo)
    };
    (at(0), at(1), at(2))
}

/// Levene's test (`Center::Mean`) or the Brown-Forsythe test
/// (`Center::Median`): a one-way ANOVA F on |y − centreᵢ|. `None` when it is
/// undefined (fewer than two levels, no residual df, or no spread at all).
pub fn levene(groups: &[&[f64]], center: Center) -> Option<FTest> {
    let deviations: Vec<GroupSummary> = groups
        .iter()
        .map(|g| {
            let c = match center {
                Center::Mean => neumaier(g.iter().copied()) / g.len() as f64,
                Center::Median => median(g),
            };
            let z: Vec<f64> = g.iter().map(|y| (y - c).abs()).collect();
            GroupSummary::from_values(&z)
        })
        .collect();
    let t = one_way(&deviations, 0.05, None).ok()?;
    (t.f.is_finite() && t.df_within > 0).then_some(FTest {
        statistic: t.f,
        df1: t.df_between as f64,
        df2: t.df_within as f64,
        p: t.p,
    })
}

/// Bartlett's test (Bartlett 1937) from group summaries; `None` when a level
/// has fewer than two observations or no spread.
pub fn bartlett(groups: &[GroupSummary]) -> Option<ChiSquareTest> {
    let k = groups.len();
    if k < 2
        || groups
            .iter()
            .any(|g| g.n < 2 || !crate::stats::is_positive(g.variance()))
    {
        return None;
    }
    let n: usize = groups.iter().map(|g| g.n).sum();
    let nu = (n - k) as f64;
    let pooled = neumaier(groups.iter().map(|g| g.ss)) / nu;
    let numerator =
        nu * pooled.ln() - neumaier(groups.iter().map(|g| (g.n - 1) as f64 * g.variance().ln()));
    let correction = 1.0
        + (neumaier(groups.iter().map(|g| 1.0 / (g.n - 1) as f64)) - 1.0 / nu)
            / (3.0 * (k - 1) as f64);
    let statistic = numerator / correction;
    let df = (k - 1) as f64;
    Some(ChiSquareTest {
        statistic,
        df,
        p: chi2_sf(statistic, df),
    })
}

/// Shapiro-Wilk W and its p-value.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct ShapiroWilk {
    pub w: f64,
    pub p: f64,
    pub n: usize,
}

/// Why Shapiro-Wilk was not computed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum ShapiroWilkSkip {
    TooFew,
    TooMany,
    NoSpread,
    /// Only summaries (n, mean, SD) were given.
    Summary,
}

/// Shapiro & Wilk (1965) W with Royston's (1992, 1995; AS R94) coefficients
/// and p-value approximation, valid for 3 ≤ n ≤ 5000.
pub fn shapiro_wilk(values: &[f64]) -> Result<ShapiroWilk, ShapiroWilkSkip> {
    let n = values.len();
    if n < 3 {
        return Err(ShapiroWilkSkip::TooFew);
    }
    if n > 5000 {
        return Err(ShapiroWilkSkip::TooMany);
    }
    let mut x = values.to_vec();
    x.sort_by(f64::total_cmp);
    let mean = neumaier(x.iter().copied()) / n as f64;
    let ss = neumaier(x.iter().map(|v| (v - mean) * (v - mean)));
    if !crate::stats::is_positive(ss) || x[0] == x[n - 1] {
        return Err(ShapiroWilkSkip::NoSpread);
    }
    let a = shapiro_wilk_coefficients(n);
    let w = (neumaier(a.iter().zip(&x).map(|(a, x)| a * (x - mean))).powi(2) / ss).min(1.0);
    let nf = n as f64;
    let p = if n == 3 {
        // Exact for n = 3 (Shapiro & Wilk 1965).
        let p = 6.0 / std::f64::consts::PI * (w.sqrt().asin() - 0.75f64.sqrt().asin());
        p.clamp(0.0, 1.0)
    } else if n <= 11 {
        let gamma = -2.273 + 0.459 * nf;
        let mu = 0.5440 - 0.39978 * nf + 0.025054 * nf * nf - 0.0006714 * nf.powi(3);
        let sigma = (1.3822 - 0.77857 * nf + 0.062767 * nf * nf - 0.0020322 * nf.powi(3)).exp();
        let l = (1.0 - w).ln();
        if l >= gamma {
            0.0
        } else {
            normal_sf((-(gamma - l).ln() - mu) / sigma)
        }
    } else {
        let ln_n = nf.ln();
        let mu = -1.5861 - 0.31082 * ln_n - 0.083751 * ln_n * ln_n + 0.0038915 * ln_n.powi(3);
        let sigma = (-0.4803 - 0.082676 * ln_n + 0.0030302 * ln_n * ln_n).exp();
        normal_sf(((1.0 - w).ln() - mu) / sigma)
    };
    Ok(ShapiroWilk { w, p, n })
}

/// Royston's approximation to the Shapiro-Wilk coefficients a₁…aₙ.
pub fn shapiro_wilk_coefficients(n: usize) -> Vec<f64> {
    if n == 3 {
        let r = std::f64::consts::FRAC_1_SQRT_2;
        return vec![-r, 0.0, r];
    }
    let nf = n as f64;
    // mᵢ = Φ⁻¹((i − 3/8)/(n + 1/4)) = −isf(·).
    let m: Vec<f64> = (1..=n)
        .map(|i| -normal_isf((i as f64 - 0.375) / (nf + 0.25)))
        .collect();
    let mm: f64 = neumaier(m.iter().map(|v| v * v));
    let norm = mm.sqrt();
    let u = 1.0 / nf.sqrt();
    let poly = |c: &[f64; 6]| c[0] + u * (c[1] + u * (c[2] + u * (c[3] + u * (c[4] + u * c[5]))));
    let an = poly(&[
        m[n - 1] / norm,
        0.221157,
        -0.147981,
        -2.071190,
        4.434685,
        -2.706056,
    ]);
    let mut a = vec![0.0; n];
    if n > 5 {
        let an1 = poly(&[
            m[n - 2] / norm,
            0.042981,
            -0.293762,
            -1.752461,
            5.682633,
            -3.582633,
        ]);
        let phi = (mm - 2.0 * m[n - 1].powi(2) - 2.0 * m[n - 2].powi(2))
            / (1.0 - 2.0 * an * an - 2.0 * an1 * an1);
        for i in 2..n - 2 {
            a[i] = m[i] / phi.sqrt();
        }
        a[n - 1] = an;
        a[n - 2] = an1;
        a[0] = -an;
        a[1] = -an1;
    } else {
        let phi = (mm - 2.0 * m[n - 1].powi(2)) / (1.0 - 2.0 * an * an);
        for i in 1..n - 1 {
            a[i] = m[i] / phi.sqrt();
        }
        a[n - 1] = an;
        a[0] = -an;
    }
    a
}

/// Bias-adjusted sample skewness G₁ and excess kurtosis G₂ (the estimators
/// most statistics packages print; scipy's `bias=False`). NaN when
/// undefined (n < 3, n < 4 for kurtosis, or no spread).
pub fn skewness_kurtosis(values: &[f64]) -> (f64, f64) {
    let n = values.len() as f64;
    if values.len() < 3 {
        return (f64::NAN, f64::NAN);
    }
    let mean = neumaier(values.iter().copied()) / n;
    let m2 = neumaier(values.iter().map(|v| (v - mean).powi(2))) / n;
    let m3 = neumaier(values.iter().map(|v| (v - mean).powi(3))) / n;
    let m4 = neumaier(values.iter().map(|v| (v - mean).powi(4))) / n;
    shape_of_moments(values.len(), m2, m3, m4)
}

/// G₁ and G₂ (as [`skewness_kurtosis`]) from n and the central moments
/// m₂, m₃, m₄ (divisor n).
pub fn shape_of_moments(count: usize, m2: f64, m3: f64, m4: f64) -> (f64, f64) {
    let n = count as f64;
    if count < 3 || !crate::stats::is_positive(m2) {
        return (f64::NAN, f64::NAN);
    }
    let g1 = m3 / m2.powf(1.5);
    let skew = g1 * (n * (n - 1.0)).sqrt() / (n - 2.0);
    let kurt = if count < 4 {
        f64::NAN
    } else {
        let g2 = m4 / (m2 * m2) - 3.0;
        ((n + 1.0) * g2 + 6.0) * (n - 1.0) / ((n - 2.0) * (n - 3.0))
    };
    (skew, kurt)
}

/// The central moments m₂, m₃, m₄ (divisor n) from the power sums Σr,
/// Σr², Σr³, Σr⁴ of n values r whose mean is near zero (residuals), so that
/// expanding the powers loses nothing that matters.
pub fn central_moments(count: usize, sums: [f64; 4]) -> (f64, f64, f64) {
    let n = count as f64;
    let [s1, s2, s3, s4] = sums.map(|s| s / n);
    let m = s1;
    let m2 = s2 - m * m;
    let m3 = s3 - 3.0 * m * s2 + 2.0 * m * m * m;
    let m4 = s4 - 4.0 * m * s3 + 6.0 * m * m * s2 - 3.0 * m * m * m * m;
    (m2, m3, m4)
}

/// An observation whose externally studentized residual is beyond the threshold.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Outlier {
    /// Index of the level.
    pub level: usize,
    /// Index of the observation within its level.
    pub index: usize,
    pub residual: f64,
    pub studentized: f64,
    /// Two-sided p of the studentized residual, Bonferroni-adjusted over N.
    pub p_bonferroni: f64,
}

/// |Externally studentized residual| beyond which an observation is flagged
/// (METHODS 4.4: flag, never exclude).
pub const OUTLIER_THRESHOLD: f64 = 3.0;

/// How many flagged observations are kept for reports and the results file;
/// the count of all of them is kept beside (a large skewed file can flag
/// hundreds of thousands, and nothing a reader sees may grow with the rows).
pub const OUTLIERS_KEPT: usize = 100;

/// Flagged observations: how many in all, and the most extreme of them.
#[derive(Debug, Clone, PartialEq)]
pub struct Flagged {
    pub total: usize,
    /// At most [`OUTLIERS_KEPT`], most extreme first (ties in data order).
    pub most_extreme: Vec<Outlier>,
}

/// Externally studentized residuals of a one-way model: each observation's
/// residual divided by an error estimate that leaves it out,
/// tᵢ = rᵢ √((ν − 1)/(ν − rᵢ²)) with rᵢ = eᵢ/√(MSE(1 − 1/nⱼ)). Levels of one
/// observation have no studentized residual.
pub fn outliers(groups: &[&[f64]], means: &[f64], mse: f64, df: usize) -> Flagged {
    let n_total: usize = groups.iter().map(|g| g.len()).sum();
    let nu = df as f64;
    let mut kept = Extremes::new(OUTLIERS_KEPT);
    if df >= 2 && crate::stats::is_positive(mse) {
        for (level, (g, mean)) in groups.iter().zip(means).enumerate() {
            if g.len() < 2 {
                continue;
            }
            let leverage = 1.0 / g.len() as f64;
            for (index, y) in g.iter().enumerate() {
                let e = y - mean;
                let t = externally_studentized(e, mse, leverage, nu);
                if t.abs() > OUTLIER_THRESHOLD {
                    let p = (2.0 * t_sf(t.abs(), nu - 1.0) * n_total as f64).min(1.0);
                    let outlier = Outlier {
                        level,
                        index,
                        residual: e,
                        studentized: t,
                        p_bonferroni: p,
                    };
                    kept.offer(t.abs(), outlier);
                }
            }
        }
    }
    Flagged {
        total: kept.total(),
        most_extreme: kept.into_most_extreme_first(),
    }
}

/// |Residual| at or below which the externally studentized residual is
/// certainly within ±[`OUTLIER_THRESHOLD`] (|t| grows with |e|), a little
/// below the exact bound so that rounding never hides a flagged value: only
/// residuals beyond it need their t computed.
pub fn outlier_screen(mse: f64, h: f64, nu: f64) -> f64 {
    let c = OUTLIER_THRESHOLD;
    // t² > c² ⟺ r² > c²ν/(ν − 1 + c²), with r = e/√(MSE(1 − h)).
    let r = (c * c * nu / (nu - 1.0 + c * c)).sqrt();
    r * (mse * (1.0 - h)).sqrt() * (1.0 - 1e-9)
}

/// The externally studentized residual of a residual `e` with leverage `h`,
/// given the mean square error and its df ν.
pub fn externally_studentized(e: f64, mse: f64, h: f64, nu: f64) -> f64 {
    let r = e / (mse * (1.0 - h)).sqrt();
    r * ((nu - 1.0) / (nu - r * r)).max(0.0).sqrt()
}

#[cfg(test)]
#[path = "assumptions_tests.rs"]
mod tests;
