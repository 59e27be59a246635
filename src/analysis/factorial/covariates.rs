//! Covariates in a linear model (analysis of covariance, specification
//! A.2-A.7): centring, the checks that refuse a covariate the data cannot
//! separate from the treatments, each covariate's common slope, the
//! balance check, the test of equal slopes and, where it fails, the
//! separate slopes with the differences between the groups' lines.

use super::cells::TreatmentCells;
use super::fit::Fitted;
use super::model::{Errors, Model};
use super::separate_slopes;
use crate::data::Observed;
use crate::data::covariates::Covariates;
use crate::diag::Diagnostic;
use crate::outcome::covariates::{
    AdjustedFamily, Covariate, CovariateDetail, CovariateGroup, FTest, SeparateSlopes, SlopesTest,
};
use crate::outcome::linear::Family;
use crate::stats::dist::f_sf;
use crate::stats::linear::{TermFactors, fit, term_row_with};
use crate::stats::oneway::GroupSummary;
use crate::stats::sum::neumaier;

/// The covariates centred at their grand means over the rows analysed.
pub(crate) struct Centred {
    pub names: Vec<String>,
    /// Per observation, each covariate minus its grand mean.
    pub rows: Vec<Vec<f64>>,
    /// Per covariate, the centred values of every observation.
    pub columns: Vec<Vec<f64>>,
    /// Each covariate's grand mean in the data's units.
    pub means: Vec<f64>,
    pub decimals: Vec<u32>,
}

impl Centred {
    /// Centring after the exact decimal shift keeps the covariate columns
    /// near orthogonal to the intercept (METHODS 2.2 N1 applied to them).
    pub fn new(c: &Covariates) -> Self {
        let mut columns = Vec::with_capacity(c.values.len());
        let mut means = Vec::with_capacity(c.values.len());
        for (values, origin) in c.values.iter().zip(&c.origins) {
            let mean = neumaier(values.iter().copied()) / values.len().max(1) as f64;
            columns.push(values.iter().map(|v| v - mean).collect::<Vec<f64>>());
            means.push(origin + mean);
        }
        let n = columns.first().map_or(0, Vec::len);
        let rows = (0..n)
            .map(|i| columns.iter().map(|c| c[i]).collect())
            .collect();
        Centred {
            names: c.names.clone(),
            rows,
            columns,
            means,
            decimals: c.decimals.clone(),
        }
    }

    /// Refuses a covariate that does not vary within the cells of the
    /// factors (`cell_of`, `cells` of them): its slope cannot be told apart
    /// from the factors' effects.
    pub fn check_varies(
        &self,
        (cell_of, cells): (&[usize], usize),
        errors: &Errors<'_>,
    ) -> Result<(), Diagnostic> {
        for (name, column) in self.names.iter().zip(&self.columns) {
            let mut by_cell: Vec<Vec<f64>> = vec![Vec::new(); cells];
            for (&c, &x) in cell_of.iter().zip(column) {
                by_cell[c].push(x);
            }
            let within = neumaier(by_cell.iter().map(|v| GroupSummary::from_values(v).ss));
            let total = GroupSummary::from_values(column).ss;
            if within.partial_cmp(&(1e-12 * total)) != Some(std::cmp::Ordering::Greater) {
                return Err(errors.model(
                    format!("the covariate `{name}` does not vary within the groups of the model's factors (each group has one value), so its slope cannot be told apart from the factors' effects"),
                    "a covariate must be measured on each unit and differ between units of the same group; remove `covariate`, or use the column as a factor",
                ));
            }
        }
        Ok(())
    }
}

/// A covariate's common slope with its SE and df.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Slope {
    pub value: f64,
    pub se: f64,
    pub df: f64,
}

impl Slope {
    /// Not estimable.
    pub const UNKNOWN: Slope = Slope {
        value: f64::NAN,
        se: f64::NAN,
        df: f64::NAN,
    };
}

/// What every engine describes a block's covariates with: the groups
/// (treatment cells with data), the covariate's spread in each, the balance
/// check and each family's means before adjustment.
pub(crate) struct Described<'a> {
    /// Each factor's level labels.
    pub labels: &'a [Vec<String>],
    pub observed: Observed<'a>,
    /// The response's origin (the observations are offsets from it).
    pub origin: f64,
    pub model: &'a Model,
    pub centred: &'a Centred,
    pub treatment: &'a TreatmentCells,
    /// The groups: labels and members.
    pub groups: Vec<(String, Vec<usize>)>,
}

impl<'a> Described<'a> {
    pub fn new(
        (labels, observed, origin): (&'a [Vec<String>], Observed<'a>, f64),
        model: &'a Model,
        centred: &'a Centred,
        treatment: &'a TreatmentCells,
    ) -> Self {
        Described {
            labels,
            observed,
            origin,
            model,
            centred,
            treatment,
            groups: groups(labels, observed, treatment),
        }
    }

    /// The treatment factors' names joined by ` × `.
    pub fn groups_of(&self) -> String {
        self.treatment
            .factors
            .iter()
            .map(|&f| self.model.factor_names[f].clone())
            .collect::<Vec<_>>()
            .join(" × ")
    }

    /// Every treatment term crossed with every covariate: the terms whose
    /// joint test is the test of equal slopes.
    pub fn slope_terms(&self) -> Vec<TermFactors> {
        let model = self.model;
        model
            .terms
            .iter()
            .filter(|t| model.is_factor_term(t) && t.iter().all(|&f| !model.is_block(f)))
            .flat_map(|t| {
                (0..self.centred.names.len()).map(move |c| {
                    let mut term = t.clone();
                    term.push(model.factor_names.len() + c);
                    term
                })
            })
            .collect()
    }
}

/// The groups (treatment cells with data): each one's label and the
/// observations in it.
fn groups(
    labels: &[Vec<String>],
    observed: Observed<'_>,
    treatment: &TreatmentCells,
) -> Vec<(String, Vec<usize>)> {
    let members = treatment.group(observed, &|i| i as f64);
    treatment
        .combos
        .iter()
        .zip(members)
        .filter(|(_, m)| !m.is_empty())
        .map(|(combo, m)| {
            let label = treatment
                .factors
                .iter()
                .zip(combo)
                .map(|(&f, &l)| labels[f][l].clone())
                .collect::<Vec<_>>()
                .join(" × ");
            (label, m.into_iter().map(|i| i as usize).collect())
        })
        .collect()
}

/// What the fixed-effects detail is computed from.
pub(super) struct Adjusting<'a> {
    pub described: Described<'a>,
    pub levels: &'a [usize],
    pub fitted: &'a Fitted,
    pub alpha: f64,
}

impl Adjusting<'_> {
    /// The block's covariate detail, with the unadjusted view of each
    /// comparison family.
    pub fn detail(&self, families: &[Family]) -> CovariateDetail {
        let d = &self.described;
        let slopes = self.slopes_test();
        let separate = slopes
            .as_ref()
            .filter(|s| s.test.p < self.alpha)
            .and_then(|_| separate_slopes::separate_slopes(self));
        d.detail(&|c| self.slope(c), (slopes, separate), families)
    }

    /// The common slope: the coefficient of the covariate's column, on the
    /// residual df.
    fn slope(&self, c: usize) -> Slope {
        let model = self.described.model;
        let v = model.factor_names.len() + c;
        let df = self.fitted.residual_df as f64;
        let Some(t) = model.terms.iter().position(|t| t == &vec![v]) else {
            return Slope {
                df,
                ..Slope::UNKNOWN
            };
        };
        let column = self.fitted.ranges[t].start;
        let mut l = vec![0.0; self.fitted.full.kept.len()];
        l[column] = 1.0;
        let (value, var) = self.fitted.estimate(&l);
        Slope {
            value,
            se: (self.fitted.mse() * var).sqrt(),
            df,
        }
    }

    /// Every treatment term crossed with every covariate, added to the
    /// model at once: the joint test that the slopes are equal.
    fn slopes_test(&self) -> Option<SlopesTest> {
        let d = &self.described;
        let mut columns = self.fitted.unweighted.clone();
        for term in &d.slope_terms() {
            let rows: Vec<Vec<f64>> = (0..d.observed.offsets.len())
                .map(|i| term_row_with(term, self.levels, d.observed.row(i), &d.centred.rows[i]))
                .collect();
            let width = rows.first().map_or(0, Vec::len);
            columns.extend((0..width).map(|j| rows.iter().map(|r| r[j]).collect::<Vec<f64>>()));
        }
        let separate = fit(&columns, d.observed.offsets);
        let df1 = separate.rank.checked_sub(self.fitted.full.rank)?;
        let df2 = d.observed.offsets.len().checked_sub(separate.rank)?;
        if df1 == 0 || df2 == 0 {
            return None;
        }
        let ss = (self.fitted.full.rss - separate.rss).max(0.0);
        let (df1, df2) = (df1 as f64, df2 as f64);
        let f = (ss / df1) / (separate.rss / df2);
        Some(SlopesTest {
            ss,
            test: FTest {
                f,
                df1,
                df2,
                p: f_sf(f, df1, df2),
            },
        })
    }
}

impl Described<'_> {
    /// The detail from each covariate's common slope, the test of equal
    /// slopes and the separate slopes, with the unadjusted view of each
    /// comparison family.
    pub fn detail(
        &self,
        slope: &dyn Fn(usize) -> Slope,
        (slopes, separate): (Option<SlopesTest>, Option<SeparateSlopes>),
        families: &[Family],
    ) -> CovariateDetail {
        CovariateDetail {
            covariates: (0..self.centred.names.len())
                .map(|c| self.covariate(c, slope(c)))
                .collect(),
            groups_of: self.groups_of(),
            slopes,
            separate,
            families: families.iter().map(|f| self.adjusted_family(f)).collect(),
        }
    }

    /// Covariate c over the groups, with its common slope.
    pub fn covariate(&self, c: usize, slope: Slope) -> Covariate {
        let column = &self.centred.columns[c];
        let mean = self.centred.means[c];
        let range = |ix: &mut dyn Iterator<Item = f64>| {
            ix.fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), x| {
                (lo.min(x), hi.max(x))
            })
        };
        let groups: Vec<CovariateGroup> = self
            .groups
            .iter()
            .map(|(label, members)| {
                let values: Vec<f64> = members.iter().map(|&i| column[i]).collect();
                let (min, max) = range(&mut values.iter().copied());
                CovariateGroup {
                    label: label.clone(),
                    n: values.len(),
                    mean: mean + GroupSummary::from_values(&values).mean,
                    min: mean + min,
                    max: mean + max,
                }
            })
            .collect();
        let (min, max) = range(&mut column.iter().copied());
        Covariate {
            name: self.centred.names[c].clone(),
            mean,
            min: mean + min,
            max: mean + max,
            decimals: self.centred.decimals[c],
            slope: slope.value,
            se: slope.se,
            df: slope.df,
            balance: self.balance(column),
            groups,
        }
    }

    /// The covariate compared among the groups by one-way F.
    fn balance(&self, column: &[f64]) -> FTest {
        let groups: Vec<GroupSummary> = self
            .groups
            .iter()
            .map(|(_, m)| {
                GroupSummary::from_values(&m.iter().map(|&i| column[i]).collect::<Vec<_>>())
            })
            .collect();
        let total = GroupSummary::from_values(column).ss;
        let within = neumaier(groups.iter().map(|g| g.ss));
        let (df1, df2) = (
            groups.len() as f64 - 1.0,
            (column.len() - groups.len()) as f64,
        );
        let f = ((total - within).max(0.0) / df1) / (within / df2);
        FTest {
            f,
            df1,
            df2,
            p: f_sf(f, df1, df2),
        }
    }

    /// A family's levels before adjustment: the observed mean response and
    /// covariate means of the observations at each level (within the
    /// family's slice).
    pub fn adjusted_family(&self, family: &Family) -> AdjustedFamily {
        let observed = self.observed;
        let factor = self.model.index_of(&family.term);
        let within = family.within.as_ref().and_then(|w| {
            let (name, level) = w.split_once('=')?;
            let f = self.model.index_of(name)?;
            Some((f, self.labels[f].iter().position(|l| l == level)?))
        });
        let members = |l: usize| -> Vec<usize> {
            (0..observed.offsets.len())
                .filter(|&i| {
                    let row = observed.row(i);
                    factor.is_some_and(|f| row[f] == l) && within.is_none_or(|(w, s)| row[w] == s)
                })
                .collect()
        };
        let level_members: Vec<Vec<usize>> = family
            .estimates
            .iter()
            .enumerate()
            .map(|(l, _)| members(l))
            .collect();
        let mean_of = |values: &[f64], m: &[usize]| {
            GroupSummary::from_values(&m.iter().map(|&i| values[i]).collect::<Vec<_>>()).mean
        };
        AdjustedFamily {
            term: family.term.clone(),
            within: family.within.clone(),
            unadjusted: level_members
                .iter()
                .map(|m| self.origin + mean_of(observed.offsets, m))
                .collect(),
            covariate_means: self
                .centred
                .columns
                .iter()
                .zip(&self.centred.means)
                .map(|(column, mean)| {
                    level_members
                        .iter()
                        .map(|m| mean + mean_of(column, m))
                        .collect()
                })
                .collect(),
        }
    }
}
