//! The results-file record of a block with covariates: each covariate's
//! common slope and the value means are adjusted to, the groups' covariate
//! means and ranges, the balance check, the test of equal slopes, the
//! separate slopes where it fails, and each family's unadjusted means.

use super::{OrderedMap, finite};
use crate::outcome::covariates::{CovariateDetail, FTest, SeparateSlopes};
use crate::outcome::linear::LinearOutcome;
use serde::Serialize;

/// Level → value, in design order.
type ByLevel = OrderedMap<Option<f64>>;

#[derive(Serialize)]
pub struct CovariatesRecord {
    /// The groups the balance check and the slopes test compare.
    pub groups_of: String,
    pub covariates: Vec<CovariateRecord>,
    /// Null when no residual df are left for the test.
    pub equal_slopes: Option<SlopesRecord>,
    /// One factor, one covariate, no blocks, when the slopes differ.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub separate_slopes: Option<SeparateRecord>,
    /// Each comparison family's means before adjustment.
    pub unadjusted: Vec<UnadjustedRecord>,
}

#[derive(Serialize)]
pub struct FRecord {
    pub f: Option<f64>,
    pub df1: f64,
    pub df2: f64,
    pub p: Option<f64>,
}

fn f_record(t: &FTest) -> FRecord {
    FRecord {
        f: finite(t.f),
        df1: t.df1,
        df2: t.df2,
        p: finite(t.p),
    }
}

#[derive(Serialize)]
pub struct CovariateRecord {
    pub name: String,
    /// The grand mean: every adjusted mean is predicted at this value.
    pub adjusted_to: f64,
    pub min: f64,
    pub max: f64,
    pub slope: Option<f64>,
    pub slope_se: Option<f64>,
    pub slope_df: f64,
    pub groups: Vec<GroupRecord>,
    /// The covariate compared among the groups (one-way F).
    pub balance: FRecord,
}

#[derive(Serialize)]
pub struct GroupRecord {
    pub level: String,
    pub n: usize,
    pub mean: f64,
    pub min: f64,
    pub max: f64,
}

#[derive(Serialize)]
pub struct SlopesRecord {
    pub ss: Option<f64>,
    #[serde(flatten)]
    pub test: FRecord,
}

#[derive(Serialize)]
pub struct SeparateRecord {
    /// The separate model's residual mean square and df; null in a mixed
    /// model, where each estimate carries its own df.
    pub ms: Option<f64>,
    pub df: Option<f64>,
    pub groups: Vec<SlopeRecord>,
    pub differences: Vec<DifferenceRecord>,
    pub regions: Vec<RegionRecord>,
}

#[derive(Serialize)]
pub struct SlopeRecord {
    pub level: String,
    pub slope: Option<f64>,
    pub se: Option<f64>,
    pub df: Option<f64>,
    /// The group's line at the covariate's grand mean.
    pub mean_at: Option<f64>,
    pub mean_at_se: Option<f64>,
}

#[derive(Serialize)]
pub struct DifferenceRecord {
    /// `b` minus `a`, at covariate value `at`; p unadjusted.
    pub a: String,
    pub b: String,
    pub at: f64,
    pub difference: Option<f64>,
    pub se: Option<f64>,
    pub df: Option<f64>,
    pub t: Option<f64>,
    pub p: Option<f64>,
    pub ci_lower: Option<f64>,
    pub ci_upper: Option<f64>,
}

#[derive(Serialize)]
pub struct RegionRecord {
    pub a: String,
    pub b: String,
    pub boundaries: Vec<f64>,
    /// Ranges within the observed covariate values where `b` and `a`
    /// differ at α.
    pub significant: Vec<[f64; 2]>,
}

#[derive(Serialize)]
pub struct UnadjustedRecord {
    pub term: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub within: Option<String>,
    pub means: ByLevel,
    /// Per covariate (by name), its mean at each level.
    pub covariate_means: std::collections::BTreeMap<String, ByLevel>,
}

pub fn covariates_record(o: &LinearOutcome, d: &CovariateDetail) -> CovariatesRecord {
    CovariatesRecord {
        groups_of: d.groups_of.clone(),
        covariates: d
            .covariates
            .iter()
            .map(|c| CovariateRecord {
                name: c.name.clone(),
                adjusted_to: c.mean,
                min: c.min,
                max: c.max,
                slope: finite(c.slope),
                slope_se: finite(c.se),
                slope_df: c.df,
                groups: c
                    .groups
                    .iter()
                    .map(|g| GroupRecord {
                        level: g.label.clone(),
                        n: g.n,
                        mean: g.mean,
                        min: g.min,
                        max: g.max,
                    })
                    .collect(),
                balance: f_record(&c.balance),
            })
            .collect(),
        equal_slopes: d.slopes.as_ref().map(|s| SlopesRecord {
            ss: finite(s.ss),
            test: f_record(&s.test),
        }),
        separate_slopes: d.separate.as_ref().map(separate_record),
        unadjusted: o
            .families
            .iter()
            .filter_map(|fam| {
                let a = d.family(&fam.term, fam.within.as_deref())?;
                let labels: Vec<String> = fam.estimates.iter().map(|e| e.label.clone()).collect();
                let by_level = |values: &[f64]| -> ByLevel {
                    OrderedMap(
                        labels
                            .iter()
                            .cloned()
                            .zip(values.iter().map(|&v| finite(v)))
                            .collect(),
                    )
                };
                Some(UnadjustedRecord {
                    term: fam.term.clone(),
                    within: fam.within.clone(),
                    means: by_level(&a.unadjusted),
                    covariate_means: d
                        .covariates
                        .iter()
                        .zip(&a.covariate_means)
                        .map(|(c, m)| (c.name.clone(), by_level(m)))
                        .collect(),
                })
            })
            .collect(),
    }
}

fn separate_record(s: &SeparateSlopes) -> SeparateRecord {
    let label = |i: usize| s.groups[i].label.clone();
    SeparateRecord {
        ms: finite(s.ms),
        df: finite(s.df),
        groups: s
            .groups
            .iter()
            .map(|g| SlopeRecord {
                level: g.label.clone(),
                slope: finite(g.slope),
                se: finite(g.se),
                df: finite(g.df),
                mean_at: finite(g.mean_at),
                mean_at_se: finite(g.mean_at_se),
            })
            .collect(),
        differences: s
            .differences
            .iter()
            .map(|d| DifferenceRecord {
                a: label(d.a),
                b: label(d.b),
                at: d.at,
                difference: finite(d.estimate),
                se: finite(d.se),
                df: finite(d.df),
                t: finite(d.t),
                p: finite(d.p),
                ci_lower: finite(d.lower),
                ci_upper: finite(d.upper),
            })
            .collect(),
        regions: s
            .regions
            .iter()
            .map(|r| RegionRecord {
                a: label(r.a),
                b: label(r.b),
                boundaries: r.boundaries.clone(),
                significant: r.significant.iter().map(|&(lo, hi)| [lo, hi]).collect(),
            })
            .collect(),
    }
}
