//! Estimated marginal means from the mixed model, each with its own SE and
//! df, and their pairwise comparisons, each pair with its own SED and df
//! (a split-plot's pairs of varieties and pairs of nitrogen rates differ in
//! both); letters from the pairwise decisions.

use super::detail::whole_if_whole;
use crate::analysis::MAX_COMPARED_LEVELS;
use crate::analysis::compare::{Declared, comparison_result, letters, protect};
use crate::analysis::factorial::model::Model;
use crate::outcome::linear::{Estimate, Family};
use crate::outcome::procedure_note::ProcedureNote;
use crate::stats::compare::{Method, pairwise_with_own_df};
use crate::stats::dist::t_isf;
use crate::stats::dunnett::Sides;
use crate::stats::linear::{TermFactors, grid_average};
use crate::stats::mixed::{ContrastTest, Ddf, FixedDesign, FixedInference};

/// What the families read.
pub(super) struct Estimating<'a> {
    pub fit: &'a FixedInference,
    pub design: &'a FixedDesign,
    pub ddf: Ddf,
    pub terms: &'a [TermFactors],
    /// Levels of each fixed factor, and their labels.
    pub levels: &'a [usize],
    pub labels: &'a [Vec<String>],
    pub model: &'a Model,
    /// Observations in each combination of the fixed factors' levels.
    pub count: &'a dyn Fn(&[Option<usize>]) -> usize,
    pub origin: f64,
    pub alpha: f64,
}

/// A set of means: one factor's levels (or every cell), with other
/// factors held at one level.
pub(super) struct Slice {
    /// The factors whose level combinations are the means.
    pub vary: Vec<usize>,
    /// A factor held at one level (`within`).
    pub within: Option<(usize, usize)>,
}

impl Estimating<'_> {
    /// lβ for a weight row over the full design.
    pub(super) fn contrast(&self, full: &[f64]) -> Option<ContrastTest> {
        let l = self.design.restrict(full).ok()?;
        self.fit.contrast(&l, self.ddf).ok()
    }

    /// Every level combination of `slice.vary`, first factor slowest.
    fn combos(&self, slice: &Slice) -> Vec<Vec<usize>> {
        slice.vary.iter().fold(vec![Vec::new()], |acc, &f| {
            acc.iter()
                .flat_map(|c| {
                    (0..self.levels[f]).map(move |l| {
                        let mut c = c.clone();
                        c.push(l);
                        c
                    })
                })
                .collect()
        })
    }

    /// The grid weights of one mean of the slice.
    fn weights(&self, slice: &Slice, combo: &[usize]) -> (Vec<f64>, Vec<Option<usize>>) {
        let mut fixed = vec![None; self.levels.len()];
        for (&f, &l) in slice.vary.iter().zip(combo) {
            fixed[f] = Some(l);
        }
        if let Some((w, s)) = slice.within {
            fixed[w] = Some(s);
        }
        (grid_average(self.terms, self.levels, &fixed), fixed)
    }

    /// The slice's means with their SEs, df and intervals, and their weights.
    pub fn estimates(&self, slice: &Slice) -> (Vec<Estimate>, Vec<Vec<f64>>) {
        let mut estimates = Vec::new();
        let mut all_weights = Vec::new();
        for combo in self.combos(slice) {
            let (w, fixed) = self.weights(slice, &combo);
            let label = slice
                .vary
                .iter()
                .zip(&combo)
                .map(|(&f, &l)| self.labels[f][l].clone())
                .collect::<Vec<_>>()
                .join(" × ");
            let c = self.contrast(&w);
            let (mean, se, df) = c.map_or((f64::NAN, f64::NAN, f64::NAN), |c| {
                (self.origin + c.estimate, c.se, whole_if_whole(c.df))
            });
            let half = t_isf(self.alpha / 2.0, df) * se;
            estimates.push(Estimate {
                label,
                n: (self.count)(&fixed),
                mean,
                se,
                df: Some(df),
                ci_lower: mean - half,
                ci_upper: mean + half,
            });
            all_weights.push(w);
        }
        (estimates, all_weights)
    }

    /// The slice's means compared pairwise by `method`; `protect_p` is the
    /// p of the F test guarding Fisher's LSD (`None`: unprotected).
    pub fn family(
        &self,
        term: &str,
        slice: &Slice,
        method: Method,
        protect_p: Option<f64>,
    ) -> Family {
        let (estimates, weights) = self.estimates(slice);
        let k = estimates.len();
        // Each pair's SE and df, from the difference of the two weight rows.
        let mut se_df = vec![vec![(f64::NAN, f64::NAN); k]; k];
        for a in 0..k {
            for b in 0..a {
                let d: Vec<f64> = weights[a]
                    .iter()
                    .zip(&weights[b])
                    .map(|(x, y)| x - y)
                    .collect();
                if let Some(c) = self.contrast(&d) {
                    se_df[a][b] = (c.se, whole_if_whole(c.df));
                }
            }
        }
        let means: Vec<f64> = estimates.iter().map(|e| e.mean - self.origin).collect();
        let mut pairs =
            pairwise_with_own_df(&means, |a, b| se_df[a.max(b)][a.min(b)], self.alpha, method);
        let mut notes = vec![ProcedureNote::MixedOwnDf];
        if method == Method::Tukey {
            notes.push(ProcedureNote::MixedTukeyApproximate);
        }
        if method == Method::Holm {
            notes.push(ProcedureNote::Holm);
        }
        let mut withheld = false;
        if method == Method::Lsd
            && let Some(p) = protect_p
            && protect(&mut pairs.pairs, p, self.alpha)
        {
            withheld = true;
            notes.push(ProcedureNote::ProtectionWithheld {
                term: Some(term.to_string()),
                alpha: self.alpha,
            });
        }
        let declared = Declared {
            letters: letters(&pairs.pairs, &means),
            withheld,
            notes,
        };
        let within = slice
            .within
            .map(|(w, s)| format!("{}={}", self.model.factor_names[w], self.labels[w][s]));
        Family {
            term: term.to_string(),
            within,
            estimates,
            comparison: Some(comparison_result(
                method,
                pairs,
                (self.alpha, f64::NAN),
                declared,
                None,
                Sides::Two,
            )),
        }
    }

    /// Whether a factor has few enough levels to compare.
    pub fn comparable(&self, f: usize) -> bool {
        self.levels[f] <= MAX_COMPARED_LEVELS
    }
}
