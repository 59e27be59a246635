//! Equivalence by two one-sided tests (Schuirmann 1987): a difference d
//! with standard error SE on ν df is shown to lie inside the margins
//! (θ_L, θ_U) when both t_L = (d − θ_L)/SE exceeds and t_U = (d − θ_U)/SE
//! falls below the one-sided critical value at α, which is the same as the
//! 100(1 − 2α)% interval lying strictly inside the margins.

use super::dist::{t_cdf, t_isf, t_sf};

/// Two one-sided tests of one difference.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Tost {
    pub difference: f64,
    pub se: f64,
    pub df: f64,
    /// (d − θ_L)/SE: large when d is well above the lower margin.
    pub t_lower: f64,
    /// (d − θ_U)/SE: very negative when d is well below the upper margin.
    pub t_upper: f64,
    /// P(T ≥ t_L): the test of H₀ d ≤ θ_L.
    pub p_lower: f64,
    /// P(T ≤ t_U): the test of H₀ d ≥ θ_U.
    pub p_upper: f64,
    /// max(p_L, p_U).
    pub p: f64,
    /// The 100(1 − 2α)% interval d ± t_{1−α,ν}·SE.
    pub lower: f64,
    pub upper: f64,
    /// p < α (equivalently, the interval inside the margins).
    pub equivalent: bool,
}

/// The TOST of `difference` ± `se` on `df` against margins `lower` <
/// `upper` at one-sided level `alpha`. A zero SE or df leaves the
/// statistics NaN and nothing declared.
pub fn tost(difference: f64, se: f64, df: f64, margins: (f64, f64), alpha: f64) -> Tost {
    let usable = se > 0.0 && se.is_finite() && df > 0.0;
    let (t_lower, t_upper) = if usable {
        ((difference - margins.0) / se, (difference - margins.1) / se)
    } else {
        (f64::NAN, f64::NAN)
    };
    let p_lower = if usable { t_sf(t_lower, df) } else { f64::NAN };
    let p_upper = if usable { t_cdf(t_upper, df) } else { f64::NAN };
    let p = if usable {
        p_lower.max(p_upper)
    } else {
        f64::NAN
    };
    let half = if usable {
        t_isf(alpha, df) * se
    } else {
        f64::NAN
    };
    Tost {
        difference,
        se,
        df,
        t_lower,
        t_upper,
        p_lower,
        p_upper,
        p,
        lower: difference - half,
        upper: difference + half,
        equivalent: p < alpha,
    }
}

/// The standard error of a difference of two independent means and its
/// Welch-Satterthwaite df, from each group's variance and size.
pub fn welch_se_df(a: (f64, usize), b: (f64, usize)) -> (f64, f64) {
    let va = a.0 / a.1 as f64;
    let vb = b.0 / b.1 as f64;
    let df = (va + vb).powi(2) / (va * va / (a.1 as f64 - 1.0) + vb * vb / (b.1 as f64 - 1.0));
    ((va + vb).sqrt(), df)
}

/// The per-comparison level of `m` separate claims at familywise `alpha`
/// (Bonferroni), or `alpha` itself for one intersection-union claim
/// (Berger 1982), which needs no adjustment.
pub fn comparison_alpha(alpha: f64, m: usize, separate: bool) -> f64 {
    if separate && m > 1 {
        alpha / m as f64
    } else {
        alpha
    }
}

#[cfg(test)]
#[path = "equivalence_tests.rs"]
mod tests;
