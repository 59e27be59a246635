//! Covariates in a mixed model (linear-extensions specification A with the
//! mixed-models specification's inference): each covariate's common slope
//! with its own SE and df, the test of equal slopes by refitting with every
//! treatment term crossed with the covariates (a joint Wald F with the
//! block's df method), and, where that rejects, each treatment cell's own
//! slope and its line at the covariate's mean, with the differences between
//! the lines there. The groups, the balance check and the means before
//! adjustment are described as for fixed effects.

use super::detail::whole_if_whole;
use crate::analysis::factorial::covariates::{Described, Slope};
use crate::analysis::factorial::separate_slopes::difference_region;
use crate::outcome::covariates::{
    CovariateDetail, DifferenceRegion, FTest, GroupSlope, LineDifference, SeparateSlopes,
    SlopesTest,
};
use crate::outcome::linear::Family;
use crate::stats::dist::{t_isf, t_sf};
use crate::stats::linear::{
    Layout, TermFactors, design_matrix_with, grid_average_with, term_columns,
};
use crate::stats::mixed::{Ddf, FixedDesign, FixedInference};

/// Above this many groups the separate slopes are not listed.
const MAX_GROUPS: usize = 12;

/// The fixed-effects inference of the model refitted with another design
/// (the same random terms or covariance structure); `None` when it fails.
pub(super) type Refit<'a> = dyn Fn(&FixedDesign) -> Option<FixedInference> + 'a;

/// Intervals of the grid on which the difference between two lines is
/// followed along the covariate before its crossings are refined.
const REGION_GRID: usize = 200;

/// Line b minus line a as weight rows: at the covariate's mean, and per
/// unit of the covariate.
struct LinePair {
    at: Vec<f64>,
    slope: Vec<f64>,
}

impl LinePair {
    /// The difference's weights at centred covariate value u.
    fn at_value(&self, u: f64) -> Vec<f64> {
        self.at
            .iter()
            .zip(&self.slope)
            .map(|(a, s)| a + u * s)
            .collect()
    }
}

/// What the detail is computed from.
pub(super) struct MixedCovariates<'a> {
    pub described: Described<'a>,
    pub fit: &'a FixedInference,
    pub design: &'a FixedDesign,
    /// The fixed factors' levels and each observation's levels.
    pub layout: &'a Layout,
    pub ddf: Ddf,
    pub alpha: f64,
    pub refit: &'a Refit<'a>,
}

/// A refitted model with one slope per group: its design, inference and
/// terms.
struct Separate {
    design: FixedDesign,
    fit: FixedInference,
    terms: Vec<TermFactors>,
}

impl MixedCovariates<'_> {
    /// The block's covariate detail, with the unadjusted view of each
    /// comparison family.
    pub fn detail(&self, families: &[Family]) -> CovariateDetail {
        let d = &self.described;
        let separate_fit = self.refit_with_slopes();
        let slopes = separate_fit.as_ref().and_then(|s| self.slopes_test(s));
        let separate = match (&slopes, &separate_fit) {
            (Some(t), Some(s)) if t.test.p < self.alpha => self.separate_slopes(s),
            _ => None,
        };
        d.detail(&|c| self.slope(c), (slopes, separate), families)
    }

    /// lβ for a weight row over a full design, with its SE and own df (NaN
    /// where it is not estimable).
    fn estimate(&self, design: &FixedDesign, fit: &FixedInference, full: &[f64]) -> Slope {
        design
            .restrict(full)
            .ok()
            .and_then(|l| fit.contrast(&l, self.ddf).ok())
            .map_or(Slope::UNKNOWN, |c| Slope {
                value: c.estimate,
                se: c.se,
                df: whole_if_whole(c.df),
            })
    }

    /// The common slope: the coefficient of the covariate's column.
    fn slope(&self, c: usize) -> Slope {
        let model = self.described.model;
        let v = model.factor_names.len() + c;
        let Some(t) = model.terms.iter().position(|t| t == &vec![v]) else {
            return Slope::UNKNOWN;
        };
        let mut l = vec![0.0; self.design.kept.len()];
        l[self.design.term_ranges[t].start] = 1.0;
        self.estimate(self.design, self.fit, &l)
    }

    /// The model refitted with every treatment term crossed with every
    /// covariate.
    fn refit_with_slopes(&self) -> Option<Separate> {
        let d = &self.described;
        let mut terms = d.model.terms.clone();
        terms.extend(d.slope_terms());
        let full = design_matrix_with(self.layout, &d.centred.rows, &terms);
        let design = FixedDesign::from_columns(full, term_columns(&terms, &self.layout.levels));
        let fit = (self.refit)(&design)?;
        Some(Separate { design, fit, terms })
    }

    /// The joint Wald test of the added terms.
    fn slopes_test(&self, s: &Separate) -> Option<SlopesTest> {
        let added = self.described.model.terms.len()..s.terms.len();
        let rows: Vec<Vec<f64>> = added
            .filter_map(|t| s.design.type3_rows(t).ok())
            .flatten()
            .collect();
        if rows.is_empty() {
            return None;
        }
        let test = s.fit.wald(&rows, self.ddf).ok()?;
        Some(SlopesTest {
            ss: f64::NAN,
            test: FTest {
                f: test.f,
                df1: test.df_num as f64,
                df2: whole_if_whole(test.df_den),
                p: test.p_value,
            },
        })
    }

    /// Each group's own slope and line at the covariate's mean, and the
    /// differences between the lines there (one covariate, few groups,
    /// every added column estimable).
    fn separate_slopes(&self, s: &Separate) -> Option<SeparateSlopes> {
        let d = &self.described;
        if d.centred.names.len() != 1 || d.groups.len() > MAX_GROUPS || d.groups.len() < 2 {
            return None;
        }
        if s.design.kept.iter().any(|k| !k) {
            return None;
        }
        let fixed_count = self.layout.levels.len();
        let rows: Vec<(Vec<f64>, Vec<f64>)> = d
            .groups
            .iter()
            .map(|(_, members)| {
                let first = d.observed.row(members[0]);
                let mut fixed = vec![None; fixed_count];
                for &f in &d.treatment.factors {
                    fixed[f] = Some(first[f]);
                }
                let at = grid_average_with(&s.terms, &self.layout.levels, &fixed, &[0.0]);
                let one = grid_average_with(&s.terms, &self.layout.levels, &fixed, &[1.0]);
                let slope = one.iter().zip(&at).map(|(a, b)| a - b).collect();
                (slope, at)
            })
            .collect();
        let groups: Vec<GroupSlope> = d
            .groups
            .iter()
            .zip(&rows)
            .map(|((label, _), (slope, at))| {
                let (b, m) = (
                    self.estimate(&s.design, &s.fit, slope),
                    self.estimate(&s.design, &s.fit, at),
                );
                GroupSlope {
                    label: label.clone(),
                    slope: b.value,
                    se: b.se,
                    df: b.df,
                    mean_at: d.origin + m.value,
                    mean_at_se: m.se,
                }
            })
            .collect();
        let mut differences = Vec::new();
        let mut regions = Vec::new();
        for a in 0..rows.len() {
            for b in a + 1..rows.len() {
                let pair = LinePair {
                    at: rows[b]
                        .1
                        .iter()
                        .zip(&rows[a].1)
                        .map(|(x, y)| x - y)
                        .collect(),
                    slope: rows[b]
                        .0
                        .iter()
                        .zip(&rows[a].0)
                        .map(|(x, y)| x - y)
                        .collect(),
                };
                differences.push(self.difference(s, &pair.at, (a, b)));
                regions.push(self.region(s, &pair, (a, b)));
            }
        }
        Some(SeparateSlopes {
            ms: f64::NAN,
            df: f64::NAN,
            groups,
            differences,
            regions,
        })
    }

    /// Where along the observed covariate range line b and line a differ at
    /// α (Johnson and Neyman 1936, with each value's own df): the test
    /// statistic is followed over a grid and each crossing of its critical
    /// value refined by bisection. Boundaries outside the data are not
    /// sought (they would be extrapolation).
    fn region(&self, s: &Separate, pair: &LinePair, (a, b): (usize, usize)) -> DifferenceRegion {
        let d = &self.described;
        let column = &d.centred.columns[0];
        let (lo, hi) = (column.iter()).fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), &x| {
            (l.min(x), h.max(x))
        });
        // |D(u)|/SE(u) above the critical t at u's own df: positive where
        // the lines differ.
        let excess = |u: f64| {
            let e = self.estimate(&s.design, &s.fit, &pair.at_value(u));
            e.value.abs() / e.se - t_isf(self.alpha / 2.0, e.df)
        };
        let points: Vec<(f64, f64)> = (0..=REGION_GRID)
            .map(|i| {
                let u = lo + (hi - lo) * i as f64 / REGION_GRID as f64;
                (u, excess(u))
            })
            .collect();
        let mut boundaries = Vec::new();
        for w in points.windows(2) {
            let ((mut u0, mut e0), (mut u1, _)) = (w[0], w[1]);
            if (w[0].1 > 0.0) == (w[1].1 > 0.0) || !w[0].1.is_finite() || !w[1].1.is_finite() {
                continue;
            }
            while u1 - u0 > 1e-12 * (hi - lo).max(f64::MIN_POSITIVE) {
                let mid = 0.5 * (u0 + u1);
                let em = excess(mid);
                if (em > 0.0) == (e0 > 0.0) {
                    (u0, e0) = (mid, em);
                } else {
                    u1 = mid;
                }
            }
            boundaries.push(0.5 * (u0 + u1));
        }
        difference_region((a, b), &boundaries, (lo, hi), d.centred.means[0], excess)
    }

    /// Line b minus line a at the covariate's mean, with its own df.
    fn difference(&self, s: &Separate, l: &[f64], (a, b): (usize, usize)) -> LineDifference {
        let e = self.estimate(&s.design, &s.fit, l);
        let t = e.value / e.se;
        let half = t_isf(self.alpha / 2.0, e.df) * e.se;
        LineDifference {
            a,
            b,
            at: self.described.centred.means[0],
            estimate: e.value,
            se: e.se,
            df: e.df,
            t,
            p: 2.0 * t_sf(t.abs(), e.df),
            lower: e.value - half,
            upper: e.value + half,
        }
    }
}
