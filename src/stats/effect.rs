//! Effect sizes and the noncentral F distribution: η², partial η², ω²,
//! Cohen's f, a confidence interval for partial η² by inverting the
//! noncentral F (Steiger 2004), and one-way power (METHODS 3.16, 3.18).

use super::dist::{f_cdf, f_isf};
use super::roots::brent;
use super::special::{inc_beta_pair, ln_beta, ln_gamma};

/// λ/2 beyond which `ncf_cdf` uses Patnaik's approximation.
const PATNAIK_FROM: f64 = 1e7;

/// Noncentral F cdf P(F ≤ x; d1, d2, λ) as a Poisson mixture of incomplete
/// betas, summed outward from the Poisson mode (Lenth 1987, AS 226). One
/// incomplete beta is evaluated, at the mode; its neighbours follow from
/// I_x(a + 1, b) = I_x(a, b) − x^a y^b / (a·B(a, b)), whose terms are all
/// positive, so the absolute error stays at rounding level however many
/// terms a large λ needs (a million observations give λ in the millions).
pub fn ncf_cdf(x: f64, d1: f64, d2: f64, nc: f64) -> f64 {
    if x <= 0.0 {
        return 0.0;
    }
    if x.is_infinite() {
        return 1.0;
    }
    let half = nc / 2.0;
    if half > PATNAIK_FROM {
        // The series needs a few √λ terms each way; beyond here that is too
        // many (and beyond 2^53 the term index stops changing in f64). The
        // numerator χ²_{d1}(λ) is then c·χ²_ν with the same mean and variance
        // (Patnaik 1949, Biometrika 36:202-232), c = (d1 + 2λ)/(d1 + λ) and
        // ν = (d1 + λ)²/(d1 + 2λ); its error shrinks like 1/√λ, far below
        // what an interval for partial η² is printed to at such λ.
        let c = (d1 + 2.0 * nc) / (d1 + nc);
        let nu = (d1 + nc) * (d1 + nc) / (d1 + 2.0 * nc);
        return f_cdf(x * d1 / (c * nu), nu, d2);
    }
    let denom = d2 + d1 * x;
    let (bx, by) = (d1 * x / denom, d2 / denom);
    let b = d2 / 2.0;
    let ln_x = if bx > 0.5 { (-by).ln_1p() } else { bx.ln() };
    let ln_y = if by > 0.5 { (-bx).ln_1p() } else { by.ln() };
    let mode = half.floor();
    let a_mode = d1 / 2.0 + mode;
    let i_mode = inc_beta_pair(a_mode, b, bx, by).0;
    // x^a y^b / (a·B(a, b)), the step from I_x(a, b) to I_x(a + 1, b).
    let g_mode = (a_mode * ln_x + b * ln_y - a_mode.ln() - ln_beta(a_mode, b)).exp();
    let w_mode = if half > 0.0 {
        (-half + mode * half.ln() - ln_gamma(mode + 1.0)).exp()
    } else {
        1.0
    };
    let mut total = w_mode * i_mode;
    if half <= 0.0 {
        return total.clamp(0.0, 1.0);
    }
    // Downward from the mode: I grows by g(a − 1) at each step.
    let (mut w, mut i, mut g, mut j) = (w_mode, i_mode, g_mode, mode);
    while j >= 1.0 {
        let a = d1 / 2.0 + j;
        g *= a / (bx * (a - 1.0 + b));
        i = (i + g).min(1.0);
        w *= j / half;
        j -= 1.0;
        let t = w * i;
        total += t;
        if t < 1e-17 * total.max(1e-300) && mode - j > 5.0 {
            break;
        }
    }
    // Upward: I shrinks by g(a) at each step.
    let (mut w, mut i, mut g, mut j) = (w_mode, i_mode, g_mode, mode);
    loop {
        let a = d1 / 2.0 + j;
        i = (i - g).max(0.0);
        g *= bx * (a + b) / (a + 1.0);
        j += 1.0;
        w *= half / j;
        let t = w * i;
        total += t;
        // Poisson weights beyond the mode fall off; stop once negligible.
        if (t < 1e-17 * total.max(1e-300) && j - mode > 5.0) || j - mode > 1e7 {
            break;
        }
    }
    total.clamp(0.0, 1.0)
}

/// Effect sizes of one term.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct EffectSizes {
    pub eta_sq: f64,
    pub partial_eta_sq: f64,
    /// May be negative: an estimate consistent with no effect.
    pub omega_sq: f64,
    pub cohens_f: f64,
    /// Confidence interval for partial η² at level `level`.
    pub partial_eta_sq_ci: (f64, f64),
    pub level: f64,
}

/// Effect sizes for a one-way term from its ANOVA quantities; the interval
/// for partial η² is at confidence `level` (Steiger 2004, *Psychol. Methods*
/// 9:164–182).
pub fn one_way_effects(
    ss_effect: f64,
    ss_error: f64,
    df1: f64,
    df2: f64,
    f_obs: f64,
    level: f64,
) -> EffectSizes {
    let ss_total = ss_effect + ss_error;
    let ms_error = ss_error / df2;
    let eta_sq = ss_effect / ss_total;
    let partial_eta_sq = ss_effect / (ss_effect + ss_error);
    let omega_sq = (ss_effect - df1 * ms_error) / (ss_total + ms_error);
    let cohens_f = (partial_eta_sq / (1.0 - partial_eta_sq)).sqrt();
    let (lo, hi) = noncentrality_interval(f_obs, df1, df2, level);
    let to_eta = |lambda: f64| lambda / (lambda + df1 + df2 + 1.0);
    EffectSizes {
        eta_sq,
        partial_eta_sq,
        omega_sq,
        cohens_f,
        partial_eta_sq_ci: (to_eta(lo), to_eta(hi)),
        level,
    }
}

/// The confidence interval for the noncentrality λ given an observed F:
/// λ_L solves cdf(F_obs; λ) = 1 − (1 − level)/2 and λ_U solves it at
/// (1 − level)/2; a bound is 0 when even λ = 0 cannot reach its target.
pub fn noncentrality_interval(f_obs: f64, df1: f64, df2: f64, level: f64) -> (f64, f64) {
    if !f_obs.is_finite() || !crate::stats::is_positive(df2) {
        return (f64::NAN, f64::NAN);
    }
    let tail = (1.0 - level) / 2.0;
    let solve = |target: f64| -> f64 {
        let g = |lambda: f64| ncf_cdf(f_obs, df1, df2, lambda) - target;
        if g(0.0) <= 0.0 {
            return 0.0;
        }
        // The cdf falls as λ grows: widen the bracket geometrically.
        let mut hi = (f_obs * df1).max(1.0);
        while g(hi) > 0.0 && hi < 1e7 {
            hi *= 2.0;
        }
        brent(g, 0.0, hi, 1e-10, 1e-10)
    };
    (solve(1.0 - tail), solve(tail))
}

/// Power of the one-way F test with k groups of n, Cohen's f and level α:
/// P(F > F_crit) under noncentrality λ = f²·k·n (Cohen 1988, ch. 8).
pub fn one_way_power(k: usize, n_per_group: usize, f: f64, alpha: f64) -> f64 {
    let d1 = (k - 1) as f64;
    let d2 = (k * n_per_group - k) as f64;
    if d2 < 1.0 {
        return f64::NAN;
    }
    let crit = f_isf(alpha, d1, d2);
    1.0 - ncf_cdf(crit, d1, d2, f * f * (k * n_per_group) as f64)
}

/// The smallest n per group whose power reaches `target`, with the power
/// there; `None` beyond 10⁶ per group.
pub fn one_way_sample_size(k: usize, f: f64, alpha: f64, target: f64) -> Option<(usize, f64)> {
    let mut hi = 2;
    while one_way_power(k, hi, f, alpha) < target {
        hi *= 2;
        if hi > 1_000_000 {
            return None;
        }
    }
    let mut lo = (hi / 2).max(2);
    if one_way_power(k, lo, f, alpha) >= target {
        return Some((lo, one_way_power(k, lo, f, alpha)));
    }
    // Power rises with n: bisect on whole numbers.
    while hi - lo > 1 {
        let mid = (lo + hi) / 2;
        if one_way_power(k, mid, f, alpha) >= target {
            hi = mid
        } else {
            lo = mid
        }
    }
    Some((hi, one_way_power(k, hi, f, alpha)))
}

#[cfg(test)]
#[path = "effect_tests.rs"]
mod tests;
