//! Covariates in a linear model (analysis of covariance, specification
//! A.2-A.7): centring, the checks that refuse a covariate the data cannot
//! separate from the treatments, each covariate's common slope, the
//! balance check, the test of equal slopes and, where it fails, the
//! separate slopes with the differences between the groups' lines.

use super::cells::TreatmentCells;
use super::fit::Fitted;
use super::model::{Errors, Model};
use super::separate_slopes;
use crate::data::covariates::Covariates;
use crate::data::{FactorialData, Observed};
use crate::diag::Diagnostic;
use crate::outcome::covariates::{
    AdjustedFamily, Covariate, CovariateDetail, CovariateGroup, FTest, SlopesTest,
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
    /// factors: its slope cannot be told apart from the factors' effects.
    pub fn check_varies(
        &self,
        observed: Observed<'_>,
        errors: &Errors<'_>,
    ) -> Result<(), Diagnostic> {
        for (name, column) in self.names.iter().zip(&self.columns) {
            let mut by_cell: Vec<Vec<f64>> = vec![Vec::new(); observed.cells.len()];
            for (&c, &x) in observed.cell_of.iter().zip(column) {
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

/// What the detail is computed from.
pub(super) struct Adjusting<'a> {
    pub data: &'a FactorialData,
    /// The observations: covariates vary within the cells.
    pub observed: Observed<'a>,
    pub model: &'a Model,
    pub levels: &'a [usize],
    pub fitted: &'a Fitted,
    pub centred: &'a Centred,
    pub treatment: &'a TreatmentCells,
    pub alpha: f64,
    /// The groups (treatment cells with data): labels and members, found
    /// once with `groups`.
    pub groups: Vec<(String, Vec<usize>)>,
}

/// The groups (treatment cells with data): each one's label and the
/// observations in it.
pub(super) fn groups(
    (data, observed): (&FactorialData, Observed<'_>),
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
                .map(|(&f, &l)| data.levels[f][l].clone())
                .collect::<Vec<_>>()
                .join(" × ");
            (label, m.into_iter().map(|i| i as usize).collect())
        })
        .collect()
}

impl Adjusting<'_> {
    /// The block's covariate detail, with the unadjusted view of each
    /// comparison family.
    pub fn detail(&self, families: &[Family]) -> CovariateDetail {
        let groups_of = self
            .treatment
            .factors
            .iter()
            .map(|&f| self.model.factor_names[f].clone())
            .collect::<Vec<_>>()
            .join(" × ");
        let slopes = self.slopes_test();
        let separate = slopes
            .as_ref()
            .filter(|s| s.test.p < self.alpha)
            .and_then(|_| separate_slopes::separate_slopes(self));
        CovariateDetail {
            covariates: (0..self.centred.names.len())
                .map(|c| self.covariate(c))
                .collect(),
            groups_of,
            slopes,
            separate,
            families: families.iter().map(|f| self.adjusted_family(f)).collect(),
        }
    }

    fn covariate(&self, c: usize) -> Covariate {
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
        let (slope, se) = self.slope(c);
        Covariate {
            name: self.centred.names[c].clone(),
            mean,
            min: mean + min,
            max: mean + max,
            decimals: self.centred.decimals[c],
            slope,
            se,
            balance: self.balance(column),
            groups,
        }
    }

    /// The common slope: the coefficient of the covariate's column.
    fn slope(&self, c: usize) -> (f64, f64) {
        let v = self.model.factor_names.len() + c;
        let Some(t) = self.model.terms.iter().position(|t| t == &vec![v]) else {
            return (f64::NAN, f64::NAN);
        };
        let column = self.fitted.ranges[t].start;
        let mut l = vec![0.0; self.fitted.full.kept.len()];
        l[column] = 1.0;
        let (value, var) = self.fitted.estimate(&l);
        (value, (self.fitted.mse() * var).sqrt())
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

    /// Every treatment term crossed with every covariate, added to the
    /// model at once: the joint test that the slopes are equal.
    fn slopes_test(&self) -> Option<SlopesTest> {
        let extra: Vec<TermFactors> = self
            .model
            .terms
            .iter()
            .filter(|t| self.model.is_factor_term(t) && t.iter().all(|&f| !self.model.is_block(f)))
            .flat_map(|t| {
                (0..self.centred.names.len()).map(move |c| {
                    let mut term = t.clone();
                    term.push(self.model.factor_names.len() + c);
                    term
                })
            })
            .collect();
        let mut columns = self.fitted.unweighted.clone();
        for term in &extra {
            let rows: Vec<Vec<f64>> = (0..self.observed.offsets.len())
                .map(|i| {
                    term_row_with(
                        term,
                        self.levels,
                        self.observed.row(i),
                        &self.centred.rows[i],
                    )
                })
                .collect();
            let width = rows.first().map_or(0, Vec::len);
            columns.extend((0..width).map(|j| rows.iter().map(|r| r[j]).collect::<Vec<f64>>()));
        }
        let separate = fit(&columns, self.observed.offsets);
        let df1 = separate.rank.checked_sub(self.fitted.full.rank)?;
        let df2 = self.observed.offsets.len().checked_sub(separate.rank)?;
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

    /// A family's levels before adjustment: the observed mean response and
    /// covariate means of the observations at each level (within the
    /// family's slice).
    fn adjusted_family(&self, family: &Family) -> AdjustedFamily {
        let (data, observed) = (self.data, self.observed);
        let factor = self.model.index_of(&family.term);
        let within = family.within.as_ref().and_then(|w| {
            let (name, level) = w.split_once('=')?;
            let f = self.model.index_of(name)?;
            Some((f, data.levels[f].iter().position(|l| l == level)?))
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
                .map(|m| data.origin + mean_of(observed.offsets, m))
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
