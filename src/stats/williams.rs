//! Williams' step-down test of dose means against a control under a
//! monotone dose response (Williams 1971, *Biometrics* 27:103–117; 1972,
//! *Biometrics* 28:519–531), with exact critical values and p-values
//! (linear-extensions.md E.1).
//!
//! Restricted means: the dose means (control excluded) fitted by weighted
//! isotonic regression in the tested direction (pool-adjacent-violators).
//! Statistic for dose i: t̄ᵢ = ±(Mᵢ − ȳ₀)/√(s²(1/rᵢ + 1/c)), positive for an
//! effect in the tested direction. Doses are tested from the highest down,
//! dose i against the i-dose null distribution, until the first that is not
//! significant.
//!
//! Null distribution. With equal dose replication r and control c = w·r,
//! P(t̄ₖ ≤ t) = E_{Z,s}[Pₖ(Z/√w + t·s·√(1 + 1/w))], where Pₖ(y) is the chance
//! that every running mean of k iid N(0, 1), taken from the top dose down,
//! stays ≤ y: P₀ = 1, Pₘ(y) = (1/m)·Σⱼ Φ(y√j)·Pₘ₋ⱼ(y) (Spitzer 1956,
//! *Trans. AMS* 82:323–339). Z, the standardised control mean, is integrated
//! by 16-node Gauss-Legendre panels on [−8.5, 8.5] narrow enough for the
//! steepest Φ(√(k/w)·z) (probabilists' Gauss-Hermite was tried and rejected:
//! with 120 nodes it misses E[Φ(4.5Z + b)] by 4e-7, a slope that w = 1/2 and
//! k = 10 already reach); s = √(χ²_ν/ν) by the shared chi-scale expectation.
//! With unequal dose replication the running means are no longer those of
//! iid steps, and the distribution comes from the recursion of
//! `williams_grid`, which uses every dose's own replication; the published
//! tables assume equal replication, so a report should say when it was used.
//!
//! Accuracy (stats::williams::tests): critical values and p-values agree
//! with the specification's independent integral within 1e-8 (its bar), and
//! the unequal-replication distribution with an independent forward-grid
//! computation within 1e-12.
//! Speed, measured in a debug build (opt-level 1) on a shared two-core
//! machine: `williams` on P.promelas (5 doses, ν = 18; 5 critical values and
//! 5 p-values) takes 62 ms, and 36 ms with doses replicated (4, 4, 3, 4, 4)
//! through the recursion; one unequal-replication cdf takes 8 ms with 10
//! doses and 60 ms with 20.

use super::chi_scale::chi_scale_expectation;
use super::dist::t_isf;
use super::dose::Direction;
use super::normal_table::NormalTable;
use super::quadrature::gauss_legendre_16;
use super::roots::brent;
use super::williams_grid::{BrownianMaximum, williams_times};

/// The smallest one-sided α accepted: the critical value is the root of
/// cdf = 1 − α, and the cdf is good to about 1e-12 absolute.
pub const WILLIAMS_MIN_ALPHA: f64 = 1e-6;
/// Half the width of the control-mean integral: 2Φ̄(8.5) = 1.9e-17.
const CONTROL_REACH: f64 = 8.5;

/// Group summaries for Williams' test.
#[derive(Debug, Clone, Copy)]
pub struct WilliamsInput<'a> {
    pub control_mean: f64,
    pub control_n: usize,
    /// Lowest dose first.
    pub dose_means: &'a [f64],
    pub dose_ns: &'a [usize],
    /// Pooled over the control and all doses.
    pub mse: f64,
    /// N − k − 1; `f64::INFINITY` for a known variance.
    pub df: f64,
    pub direction: Direction,
    /// One-sided.
    pub alpha: f64,
}

/// One dose's row, lowest dose first.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WilliamsStep {
    /// Mᵢ, the isotonic estimate of the dose mean (control not pooled).
    pub restricted_mean: f64,
    /// t̄ᵢ, positive for an effect in the tested direction.
    pub statistic: f64,
    /// t̄_{i,α}(ν, w): the critical value for i doses.
    pub critical: f64,
    /// P(t̄ ≥ observed) under the i-dose null distribution.
    pub p: f64,
    /// False for doses below the step-down stop.
    pub tested: bool,
    pub significant: bool,
    /// True when doses 1…i are not equally replicated, so the critical value
    /// and p come from the exact unequal-replication recursion.
    pub unequal_replication: bool,
}

/// Williams' test: one step per dose.
#[derive(Debug, Clone, PartialEq)]
pub struct Williams {
    pub steps: Vec<WilliamsStep>,
    /// w = c/r with equal dose replication; otherwise c over the harmonic
    /// mean of the dose replications (descriptive only: the exact
    /// computation then uses every dose's own replication).
    pub weight: f64,
    /// True when any step used the unequal-replication recursion.
    pub unequal_replication: bool,
}

/// Why Williams' test cannot be computed.
#[derive(Debug, Clone, PartialEq)]
pub enum WilliamsError {
    NoDoses,
    LengthMismatch { means: usize, ns: usize },
    EmptyGroup,
    NonFiniteMean,
    Variance(f64),
    DegreesOfFreedom(f64),
    Alpha(f64),
}

impl std::fmt::Display for WilliamsError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            WilliamsError::NoDoses => write!(f, "Williams' test needs at least one dose"),
            WilliamsError::LengthMismatch { means, ns } => write!(
                f,
                "Williams' test got {means} dose means but {ns} replication counts"
            ),
            WilliamsError::EmptyGroup => {
                write!(f, "Williams' test needs at least one value in every group")
            }
            WilliamsError::NonFiniteMean => write!(f, "a group mean is not a finite number"),
            WilliamsError::Variance(v) => write!(
                f,
                "the residual mean square must be positive and finite (got {v})"
            ),
            WilliamsError::DegreesOfFreedom(df) => write!(
                f,
                "Williams' test needs at least 1 residual degree of freedom (got {df})"
            ),
            WilliamsError::Alpha(a) => write!(
                f,
                "the one-sided level must lie between {WILLIAMS_MIN_ALPHA} and 0.5 (got {a})"
            ),
        }
    }
}

impl std::error::Error for WilliamsError {}

/// Williams' step-down test.
pub fn williams(input: &WilliamsInput) -> Result<Williams, WilliamsError> {
    validate(input)?;
    let k = input.dose_means.len();
    let c = input.control_n;
    let sign = input.direction.sign();
    let restricted = restricted_means(input.dose_means, input.dose_ns, input.direction);
    let mut steps = Vec::with_capacity(k);
    for i in 0..k {
        let ns = &input.dose_ns[..=i];
        let r = ns[i] as f64;
        let se = (input.mse * (1.0 / r + 1.0 / c as f64)).sqrt();
        let statistic = sign * (restricted[i] - input.control_mean) / se;
        let null = NullDistribution::new(c, ns, input.df);
        steps.push(WilliamsStep {
            restricted_mean: restricted[i],
            statistic,
            critical: null.critical(input.alpha),
            p: null.p(statistic),
            tested: false,
            significant: false,
            unequal_replication: null.unequal_replication(),
        });
    }
    // Step down from the highest dose; stop after the first non-significant.
    for step in steps.iter_mut().rev() {
        step.tested = true;
        step.significant = step.statistic > step.critical;
        if !step.significant {
            break;
        }
    }
    let unequal_replication = steps.iter().any(|s| s.unequal_replication);
    let harmonic = k as f64 / input.dose_ns.iter().map(|&r| 1.0 / r as f64).sum::<f64>();
    Ok(Williams {
        steps,
        weight: c as f64 / harmonic,
        unequal_replication,
    })
}

fn validate(input: &WilliamsInput) -> Result<(), WilliamsError> {
    if input.dose_means.is_empty() {
        return Err(WilliamsError::NoDoses);
    }
    if input.dose_means.len() != input.dose_ns.len() {
        return Err(WilliamsError::LengthMismatch {
            means: input.dose_means.len(),
            ns: input.dose_ns.len(),
        });
    }
    if input.control_n == 0 || input.dose_ns.contains(&0) {
        return Err(WilliamsError::EmptyGroup);
    }
    if !input.control_mean.is_finite() || input.dose_means.iter().any(|m| !m.is_finite()) {
        return Err(WilliamsError::NonFiniteMean);
    }
    if !(input.mse > 0.0 && input.mse.is_finite()) {
        return Err(WilliamsError::Variance(input.mse));
    }
    if input.df.is_nan() || input.df < 1.0 {
        return Err(WilliamsError::DegreesOfFreedom(input.df));
    }
    if !(WILLIAMS_MIN_ALPHA..=0.5).contains(&input.alpha) {
        return Err(WilliamsError::Alpha(input.alpha));
    }
    Ok(())
}

/// Williams' restricted means: the weighted isotonic fit of the dose means
/// (lowest dose first), non-increasing for a decrease and non-decreasing for
/// an increase, by pool-adjacent-violators. The control is not pooled.
/// Equal to the max-min formula Mᵢ = min_{u≤i} max_{v≥i} mean(u…v) for a
/// decrease (max-min for an increase).
pub fn restricted_means(means: &[f64], ns: &[usize], direction: Direction) -> Vec<f64> {
    // A non-decreasing fit of sign·ȳ, then back; each block keeps its
    // weight, mean and length.
    let sign = direction.sign();
    let mut blocks: Vec<(f64, f64, usize)> = Vec::with_capacity(means.len());
    for (&m, &n) in means.iter().zip(ns) {
        let mut block = (n as f64, sign * m, 1);
        while let Some(&(w, mean, len)) = blocks.last() {
            if mean <= block.1 {
                break;
            }
            blocks.pop();
            let total = w + block.0;
            block = (total, (w * mean + block.0 * block.1) / total, len + block.2);
        }
        blocks.push(block);
    }
    blocks
        .iter()
        .flat_map(|&(_, mean, len)| std::iter::repeat_n(sign * mean, len))
        .collect()
}

/// t̄_{k,α}(ν, w) with equal dose replication and control replication w
/// times the doses'.
pub fn critical_value(doses: usize, df: f64, weight: f64, alpha: f64) -> f64 {
    NullDistribution::equal(doses, df, weight).critical(alpha)
}

/// P(t̄ₖ ≤ t) with equal dose replication and control replication w times
/// the doses'.
pub fn distribution(doses: usize, df: f64, weight: f64, t: f64) -> f64 {
    NullDistribution::equal(doses, df, weight).cdf(t)
}

/// P(t̄ᵢ ≤ t) for doses 1…i with replications `dose_ns` (lowest dose first)
/// and a control of `control_n`: the exact distribution whether or not the
/// doses are equally replicated.
pub fn distribution_replicated(control_n: usize, dose_ns: &[usize], df: f64, t: f64) -> f64 {
    NullDistribution::new(control_n, dose_ns, df).cdf(t)
}

/// The null distribution of t̄ for one step, given s: P(t̄ ≤ t | s) is a
/// function of y = t·s alone.
enum Conditional {
    /// Equal dose replication: Spitzer's Pₖ averaged over the control mean.
    Equal {
        doses: usize,
        /// √(1 + 1/w): t̄'s standard error over a dose mean's.
        scale: f64,
        /// Control-mean nodes as (z/√w, weight·φ(z)).
        control: Vec<(f64, f64)>,
    },
    /// Unequal dose replication: the Brownian-maximum recursion.
    Unequal(BrownianMaximum),
}

struct NullDistribution {
    conditional: Conditional,
    doses: usize,
    df: f64,
}

impl NullDistribution {
    /// The distribution for doses 1…i with replications `ns`.
    fn new(control_n: usize, ns: &[usize], df: f64) -> NullDistribution {
        let top = ns[ns.len() - 1];
        if ns.iter().all(|&r| r == top) {
            NullDistribution::equal(ns.len(), df, control_n as f64 / top as f64)
        } else {
            NullDistribution {
                conditional: Conditional::Unequal(BrownianMaximum::new(&williams_times(
                    control_n, ns,
                ))),
                doses: ns.len(),
                df,
            }
        }
    }

    fn equal(doses: usize, df: f64, weight: f64) -> NullDistribution {
        // 16-node panels integrate φ(z)·Φ(a·z + b) to 2e-14 while a·width ≤
        // 6.4; the steepest Φ inside Pₖ has a = √(k/w), and 5 leaves margin.
        let steepest = (doses as f64 / weight).sqrt();
        let width = (5.0 / steepest).min(1.5);
        let panels = (2.0 * CONTROL_REACH / width).ceil() as usize;
        let step = 2.0 * CONTROL_REACH / panels as f64;
        let rule = gauss_legendre_16();
        let normal = NormalTable::get();
        let shrink = weight.sqrt().recip();
        let mut control = Vec::with_capacity(panels * rule.nodes.len());
        for p in 0..panels {
            let mid = -CONTROL_REACH + (p as f64 + 0.5) * step;
            for (x, w) in rule.nodes.iter().zip(&rule.weights) {
                let z = mid + 0.5 * step * x;
                control.push((z * shrink, 0.5 * step * w * normal.pdf(z)));
            }
        }
        NullDistribution {
            conditional: Conditional::Equal {
                doses,
                scale: (1.0 + 1.0 / weight).sqrt(),
                control,
            },
            doses,
            df,
        }
    }

    fn unequal_replication(&self) -> bool {
        matches!(self.conditional, Conditional::Unequal(_))
    }

    /// P(t̄ ≤ t | s) at y = t·s.
    fn given_scale(&self, y: f64) -> f64 {
        match &self.conditional {
            Conditional::Equal {
                doses,
                scale,
                control,
            } => {
                let mut running = RunningMaximum::new(*doses);
                let level = y * scale;
                let total: f64 = control
                    .iter()
                    .map(|&(shift, weight)| weight * running.cdf(shift + level))
                    .sum();
                total.clamp(0.0, 1.0)
            }
            Conditional::Unequal(maximum) => maximum.cdf(y),
        }
    }

    /// P(t̄ ≤ t).
    fn cdf(&self, t: f64) -> f64 {
        // The chi-scale expectation wants a function that grows with s:
        // P(t̄ ≤ t | s) does for t ≥ 0, its complement for t < 0.
        let means = self.doses + 1;
        if t >= 0.0 {
            chi_scale_expectation(self.df, means, |s| self.given_scale(t * s))
        } else {
            1.0 - chi_scale_expectation(self.df, means, |s| 1.0 - self.given_scale(t * s))
        }
    }

    /// P(t̄ ≥ t): absolute accuracy about 1e-12, so p below 1e-10 keeps
    /// only a few digits.
    fn p(&self, t: f64) -> f64 {
        (1.0 - self.cdf(t)).clamp(0.0, 1.0)
    }

    /// t̄_{i,α}: the root of cdf = 1 − α. t̄ᵢ is at least dose i's own t
    /// (Mᵢ lies on the far side of ȳᵢ), and by Bonferroni over the i
    /// running means at most the t quantile at α/i; both are widened by
    /// 0.1% to keep the root inside at i = 1, where they meet.
    fn critical(&self, alpha: f64) -> f64 {
        let floor = t_isf(alpha, self.df);
        let ceiling = t_isf(alpha / self.doses as f64, self.df);
        brent(
            |t| self.cdf(t) - (1.0 - alpha),
            floor - 1e-3 * floor.abs(),
            ceiling + 1e-3 * ceiling.abs(),
            1e-11,
            1e-12,
        )
    }
}

/// Spitzer's Pₖ(y) with its scratch space, reused across nodes.
struct RunningMaximum {
    roots: Vec<f64>,
    phis: Vec<f64>,
    partial: Vec<f64>,
}

impl RunningMaximum {
    fn new(doses: usize) -> RunningMaximum {
        RunningMaximum {
            roots: (0..=doses).map(|j| (j as f64).sqrt()).collect(),
            phis: vec![0.0; doses + 1],
            partial: vec![0.0; doses + 1],
        }
    }

    /// Pₖ(y) = P(every running mean of k iid N(0, 1) ≤ y). All terms are
    /// positive, so the recursion loses nothing to cancellation.
    fn cdf(&mut self, y: f64) -> f64 {
        let normal = NormalTable::get();
        let k = self.roots.len() - 1;
        for j in 1..=k {
            self.phis[j] = normal.cdf(y * self.roots[j]);
        }
        self.partial[0] = 1.0;
        for m in 1..=k {
            let mut sum = 0.0;
            for j in 1..=m {
                sum += self.phis[j] * self.partial[m - j];
            }
            self.partial[m] = sum / m as f64;
        }
        self.partial[k]
    }
}

#[cfg(test)]
#[path = "williams_tests.rs"]
mod tests;
