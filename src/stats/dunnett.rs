//! Dunnett's many-to-one comparisons (Dunnett 1955, *JASA* 50:1096–1121).
//!
//! Under H₀ the statistics Tᵢ = (ȳᵢ − ȳ₀)/SEᵢ are multivariate t with the
//! product correlation ρᵢⱼ = λᵢλⱼ, λᵢ = √(nᵢ/(nᵢ + n₀)), so the joint
//! probability reduces to a one-dimensional normal integral inside the
//! chi-scale expectation (Dunnett 1989, AS 251). Both are done by
//! deterministic Gauss-Legendre quadrature: no random numbers, so the same
//! data always give the same p (METHODS 3.10).

use super::chi_scale::chi_scale_expectation;
use super::compare::{Method, Pair, Pairwise};
use super::dist::{t_isf, t_sf};
use super::normal_table::NormalTable;
use super::quadrature::gauss_legendre_16;
use super::roots::brent;

/// The smallest α whose critical value is solved to about 1e-9 relative:
/// the root is found on cdf = 1 − α, so the cdf's absolute error becomes a
/// relative error in α that grows as α falls. Measured with one treatment,
/// where d is the t quantile exactly: below 2e-9 at α = 1e-5 for 3 to 30
/// df; 1.2e-8 at α = 1e-6 and 3 df, 1e-7 at 1e-8 and 30 df, 8e-4 at 1e-12.
pub const DUNNETT_MIN_ALPHA: f64 = 1e-5;

/// One- or two-sided alternative.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum Sides {
    Two,
    /// Treatments above the control.
    Greater,
    /// Treatments below the control.
    Less,
}

/// P(max |Tᵢ| ≤ d) (two-sided) or P(max Tᵢ ≤ d) (one-sided) for the
/// product-correlated multivariate t with ν df.
pub fn dunnett_cdf(d: f64, lambdas: &[f64], df: f64, sides: Sides) -> f64 {
    if d <= 0.0 && sides == Sides::Two {
        return 0.0;
    }
    let rule = gauss_legendre_16();
    // Φ and φ from the table (a few ulps): the product runs over every
    // treatment at every node of both integrals.
    let normal = NormalTable::get();
    let scales: Vec<(f64, f64)> = lambdas.iter().map(|&l| (l, (1.0 - l * l).sqrt())).collect();
    let normal_part = |x: f64| -> f64 {
        // ∫ φ(z) Πᵢ [...] dz over [−8.5, 8.5] on panels 0.5 wide.
        let mut total = 0.0;
        for p in 0..34 {
            let a = -8.5 + 0.5 * p as f64;
            total += rule.integrate(a, a + 0.5, |z| {
                let mut prod = normal.pdf(z);
                for &(l, s) in &scales {
                    let upper = (l * z + x) / s;
                    prod *= match sides {
                        Sides::Two => {
                            // Φ(upper) − Φ(lower) without cancellation near 1.
                            let lower = (l * z - x) / s;
                            if lower >= 0.0 {
                                normal.sf(lower) - normal.sf(upper)
                            } else {
                                normal.cdf(upper) - normal.cdf(lower)
                            }
                        }
                        _ => normal.cdf(upper),
                    };
                }
                prod
            });
        }
        total
    };
    chi_scale_expectation(df, lambdas.len() + 1, |s| normal_part(d * s))
}

/// Dunnett's comparisons of each treatment with `control`, pooled MSE on ν df.
/// Pairs are (treatment, control) in level order.
pub fn dunnett(
    levels: &[(usize, f64)],
    control: usize,
    mse: f64,
    df: f64,
    alpha: f64,
    sides: Sides,
) -> Pairwise {
    let n0 = levels[control].0 as f64;
    let comparisons: Vec<ToControl> = (0..levels.len())
        .filter(|&i| i != control)
        .map(|i| {
            let n = levels[i].0 as f64;
            ToControl {
                level: i,
                diff: levels[i].1 - levels[control].1,
                se: (mse * (1.0 / n + 1.0 / n0)).sqrt(),
                lambda: (n / (n + n0)).sqrt(),
            }
        })
        .collect();
    dunnett_general(&comparisons, control, df, alpha, sides)
}

/// One treatment's comparison with the control: its difference, the SE of
/// the difference, and its λ (the correlation of two comparisons is λᵢλⱼ).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ToControl {
    pub level: usize,
    pub diff: f64,
    pub se: f64,
    pub lambda: f64,
}

/// Dunnett's comparisons from given differences, SEs and λs on one df: the
/// form a mixed model gives when its comparisons with the control share
/// one df and have the product correlation.
pub fn dunnett_general(
    comparisons: &[ToControl],
    control: usize,
    df: f64,
    alpha: f64,
    sides: Sides,
) -> Pairwise {
    let lambdas: Vec<f64> = comparisons.iter().map(|c| c.lambda).collect();
    // Bracket: the critical value lies between the single comparison's t
    // quantile and Bonferroni's over the m treatments (equal for m = 1, so
    // both are widened by 0.1% to leave the root inside).
    let (m, tails) = (
        lambdas.len() as f64,
        if sides == Sides::Two { 2.0 } else { 1.0 },
    );
    let (floor, ceiling) = (
        t_isf(alpha / tails, df) * 0.999,
        t_isf(alpha / (tails * m), df) * 1.001,
    );
    let critical = brent(
        |d| dunnett_cdf(d, &lambdas, df, sides) - (1.0 - alpha),
        floor.max(1e-3),
        ceiling,
        1e-12,
        1e-11,
    );
    let pairs = comparisons
        .iter()
        .map(|c| {
            let (diff, se) = (c.diff, c.se);
            let t = diff / se;
            let p = match sides {
                Sides::Two => 1.0 - dunnett_cdf(t.abs(), &lambdas, df, sides),
                Sides::Greater => 1.0 - dunnett_cdf(t, &lambdas, df, sides),
                Sides::Less => 1.0 - dunnett_cdf(-t, &lambdas, df, sides),
            };
            let p = if lambdas.len() == 1 {
                // m = 1 is the t test; use the t tail for full accuracy.
                match sides {
                    Sides::Two => 2.0 * t_sf(t.abs(), df),
                    Sides::Greater => t_sf(t, df),
                    Sides::Less => t_sf(-t, df),
                }
            } else {
                p.clamp(0.0, 1.0)
            };
            let (lower, upper) = match sides {
                Sides::Two => (diff - critical * se, diff + critical * se),
                Sides::Greater => (diff - critical * se, f64::INFINITY),
                Sides::Less => (f64::NEG_INFINITY, diff + critical * se),
            };
            Pair {
                lower,
                upper,
                significant: p < alpha,
                ..Pair::tested(c.level, control, (diff, se), t, p)
            }
        })
        .collect();
    Pairwise {
        method: Method::Dunnett,
        alpha,
        pairs,
        critical,
    }
}

#[cfg(test)]
#[path = "dunnett_tests.rs"]
mod tests;
