//! Standard errors of means and of differences between means (spec 5.4), by
//! the general rule: the variance of the difference written in the variance
//! components (the contrast's weights summed within each unit of each random
//! term), each component replaced by its Σ c_s E_s, so the variance is a
//! combination of stratum error mean squares with Satterthwaite df.

use super::analysis::StratumAnalysis;
use super::combination::Combination;
use super::reason::StratumId;
use crate::stats::dist::t_isf;
use crate::stats::sum::neumaier;

/// Largest interaction whose kinds of comparison are listed (2^k − 1 kinds).
const MAX_KIND_FACTORS: usize = 12;

/// A kind of pairwise comparison in the table of a fixed term: two level
/// combinations that differ in `differing` and agree in `same` (for a main
/// effect, `same` is empty: "two V means"; for V:N with differing = [N],
/// same = [V]: "two N levels at the same V").
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ComparisonKind {
    /// Index of the fixed term (model order).
    pub term: usize,
    /// Treatment factors whose levels differ between the two means.
    pub differing: Vec<usize>,
    /// Treatment factors held at the same level.
    pub same: Vec<usize>,
}

/// The SED and LSD of one kind of comparison.
#[derive(Debug, Clone, PartialEq)]
pub struct Comparison {
    pub kind: ComparisonKind,
    /// Variance of the difference as Σ c_s E_s; its df is the comparison's.
    pub variance: Combination,
    /// √ of the variance.
    pub sed: f64,
    /// t_{1−α/2, df}·SED with the Satterthwaite df.
    pub lsd: Option<f64>,
    /// Cochran & Cox's weighted critical value t' = Σ c_s E_s t_s / Σ c_s E_s,
    /// t_s on each stratum's error df (the classical alternative); `None`
    /// when a coefficient is negative.
    pub weighted_t: Option<f64>,
    /// t'·SED.
    pub weighted_lsd: Option<f64>,
}

/// Which variance a mean's standard error includes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SeBasis {
    /// The classical stratum analysis: the random terms above the stratum
    /// where the term is estimated held fixed (blocks fixed), so the variance
    /// is that stratum's error MS over the replication (oats V means:
    /// √(E_a/24) on 10 df).
    Stratum,
    /// Every random term random, as the mixed model's marginal means (oats V
    /// means: √((MS_B + 2E_a)/72), Satterthwaite df).
    AllRandom,
}

/// The standard error of a mean.
#[derive(Debug, Clone, PartialEq)]
pub struct MeanError {
    /// Variance of the mean as Σ c_s E_s, with its df.
    pub variance: Combination,
    pub se: f64,
}

impl StratumAnalysis {
    /// Every kind of comparison: one per main-effect term, and for an
    /// interaction term one per non-empty set of differing factors.
    pub fn comparison_kinds(&self) -> Vec<ComparisonKind> {
        let mut kinds = Vec::new();
        for (term, factors) in self.terms.iter().enumerate() {
            let k = factors.len();
            if k > MAX_KIND_FACTORS {
                continue;
            }
            for mask in 1usize..(1 << k) {
                let pick = |inside: bool| {
                    (0..k)
                        .filter(|i| (mask >> i & 1 == 1) == inside)
                        .map(|i| factors[i])
                        .collect::<Vec<usize>>()
                };
                kinds.push(ComparisonKind {
                    term,
                    differing: pick(true),
                    same: pick(false),
                });
            }
        }
        kinds
    }

    /// Every kind of comparison with its SED and LSDs at level `alpha`.
    pub fn comparisons(&self, alpha: f64) -> Vec<Comparison> {
        self.comparison_kinds()
            .into_iter()
            .filter_map(|kind| self.comparison(&kind, alpha))
            .collect()
    }

    /// One kind of comparison, from a representative pair (every pair of a
    /// kind has the same variance in a balanced design). `None` when a
    /// stratum it needs has no error df, or a factor has a single level.
    pub fn comparison(&self, kind: &ComparisonKind, alpha: f64) -> Option<Comparison> {
        let factors = self.terms.get(kind.term)?;
        let first: Vec<usize> = vec![0; factors.len()];
        let mut second = first.clone();
        for (i, f) in factors.iter().enumerate() {
            if kind.differing.contains(f) {
                if self.treatments.levels[*f] < 2 {
                    return None;
                }
                second[i] = 1;
            }
        }
        let a = self.mean_weights(factors, &first);
        let b = self.mean_weights(factors, &second);
        let weights: Vec<f64> = a.iter().zip(&b).map(|(x, y)| x - y).collect();
        let variance = self.contrast_variance(&weights, &vec![false; self.strata.len()])?;
        let sed = variance.value.max(0.0).sqrt();
        let lsd = variance.df.map(|df| t_isf(alpha / 2.0, df) * sed);
        let weighted_t = self.weighted_critical_value(&variance, alpha);
        Some(Comparison {
            kind: kind.clone(),
            sed,
            lsd,
            weighted_lsd: weighted_t.map(|t| t * sed),
            weighted_t,
            variance,
        })
    }

    /// The standard error of a mean of a fixed term at one combination of
    /// its levels (all level combinations share it in a balanced design).
    pub fn mean_error(&self, term: usize, basis: SeBasis) -> Option<MeanError> {
        let factors = self.terms.get(term)?;
        let weights = self.mean_weights(factors, &vec![0; factors.len()]);
        let stratum = self
            .structure
            .ids
            .iter()
            .position(|id| *id == self.term_strata[term])?;
        let held: Vec<bool> = match basis {
            SeBasis::Stratum => self.structure.above[stratum].clone(),
            SeBasis::AllRandom => vec![false; self.strata.len()],
        };
        self.mean_error_of(&weights, &held)
    }

    /// The standard error of the grand mean (the intercept), every random
    /// term random.
    pub fn grand_mean_error(&self) -> Option<MeanError> {
        let n = self.treatments.rows.len() as f64;
        let weights = vec![1.0 / n; self.treatments.rows.len()];
        self.mean_error_of(&weights, &vec![false; self.strata.len()])
    }

    fn mean_error_of(&self, weights: &[f64], held: &[bool]) -> Option<MeanError> {
        let variance = self.contrast_variance(weights, held)?;
        Some(MeanError {
            se: variance.value.max(0.0).sqrt(),
            variance,
        })
    }

    /// Weight 1/n on each observation at the given levels of the factors.
    fn mean_weights(&self, factors: &[usize], levels: &[usize]) -> Vec<f64> {
        let matches: Vec<bool> = self
            .treatments
            .rows
            .iter()
            .map(|row| factors.iter().zip(levels).all(|(&f, &l)| row[f] == l))
            .collect();
        let n = matches.iter().filter(|m| **m).count().max(1) as f64;
        matches
            .iter()
            .map(|&m| if m { 1.0 / n } else { 0.0 })
            .collect()
    }

    /// Var(Σ wᵢyᵢ) = Σ_R σ²_R Σ_units (Σ w)² + σ² Σ w², over mean squares;
    /// the random terms of `held` strata are held fixed (left out).
    fn contrast_variance(&self, weights: &[f64], held: &[bool]) -> Option<Combination> {
        let per_stratum: Vec<f64> = self
            .structure
            .partitions
            .iter()
            .enumerate()
            .map(|(g, units)| match self.structure.ids[g] {
                StratumId::Residual => neumaier(weights.iter().map(|w| w * w)),
                StratumId::Random(_) if held[g] => 0.0,
                StratumId::Random(_) => units.squared_unit_totals(weights),
            })
            .collect();
        self.over_mean_squares(&per_stratum)
    }

    fn weighted_critical_value(&self, variance: &Combination, alpha: f64) -> Option<f64> {
        let (ms, df) = self.error_mean_squares();
        let mut numerator = Vec::new();
        let mut denominator = Vec::new();
        for (s, &c) in variance.coefficients.iter().enumerate() {
            if c != 0.0 {
                let part = c * ms[s]?;
                if part < 0.0 {
                    return None;
                }
                numerator.push(part * t_isf(alpha / 2.0, df[s] as f64));
                denominator.push(part);
            }
        }
        let total = neumaier(denominator);
        (total > 0.0).then(|| neumaier(numerator) / total)
    }
}
