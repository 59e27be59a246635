//! A block's covariates in prose: `covariates.<name>` (its common `slope`
//! and `se`, `adjusted_to`, `min`, `max`, `balance` as a test, and
//! `groups.<level>` with `n`, `mean`, `min`, `max`), `slopes` (the test of
//! equal slopes, with `differ`, and the groups' own `lines` when they
//! differ), and `observed.<term>.<level>`, each family's means before
//! adjustment (`<term>@<slice>` for slices).

use super::f_test::FTestContext;
use crate::outcome::covariates::{CovariateDetail, CovariateGroup, FTest, GroupSlope};
use crate::outcome::linear::LinearOutcome;
use serde::Serialize;
use std::collections::BTreeMap;

fn test(t: &FTest) -> FTestContext {
    FTestContext::new(t.df1, t.df2, t.f, t.p)
}

#[derive(Serialize)]
pub(super) struct GroupContext {
    n: usize,
    mean: f64,
    min: f64,
    max: f64,
}

impl From<&CovariateGroup> for GroupContext {
    fn from(g: &CovariateGroup) -> GroupContext {
        GroupContext {
            n: g.n,
            mean: g.mean,
            min: g.min,
            max: g.max,
        }
    }
}

#[derive(Serialize)]
pub(super) struct CovariateContext {
    slope: f64,
    se: f64,
    /// The slope's df.
    df: f64,
    adjusted_to: f64,
    min: f64,
    max: f64,
    balance: FTestContext,
    groups: BTreeMap<String, GroupContext>,
}

#[derive(Serialize)]
pub(super) struct LineContext {
    slope: f64,
    se: f64,
    df: f64,
    mean_at: f64,
    mean_at_se: f64,
}

impl From<&GroupSlope> for LineContext {
    fn from(g: &GroupSlope) -> LineContext {
        LineContext {
            slope: g.slope,
            se: g.se,
            df: g.df,
            mean_at: g.mean_at,
            mean_at_se: g.mean_at_se,
        }
    }
}

#[derive(Serialize)]
pub(super) struct SlopesContext {
    #[serde(flatten)]
    test: FTestContext,
    /// The test rejected at the block's α.
    differ: bool,
    /// Each group's own line, when the separate slopes were reported.
    #[serde(skip_serializing_if = "Option::is_none")]
    lines: Option<BTreeMap<String, LineContext>>,
}

#[derive(Serialize)]
pub(super) struct CovariatesContext {
    covariates: BTreeMap<String, CovariateContext>,
    #[serde(skip_serializing_if = "Option::is_none")]
    slopes: Option<SlopesContext>,
    observed: BTreeMap<String, BTreeMap<String, f64>>,
}

/// The names a block with covariates adds, when it has covariates.
pub(super) fn covariates_context(o: &LinearOutcome) -> Option<CovariatesContext> {
    let d: &CovariateDetail = o.covariates.as_deref()?;
    let covariates = d
        .covariates
        .iter()
        .map(|c| {
            let groups = c
                .groups
                .iter()
                .map(|g| (g.label.clone(), GroupContext::from(g)))
                .collect();
            let context = CovariateContext {
                slope: c.slope,
                se: c.se,
                df: c.df,
                adjusted_to: c.mean,
                min: c.min,
                max: c.max,
                balance: test(&c.balance),
                groups,
            };
            (c.name.clone(), context)
        })
        .collect();
    let lines = d.separate.as_ref().map(|s| {
        s.groups
            .iter()
            .map(|g| (g.label.clone(), LineContext::from(g)))
            .collect()
    });
    let slopes = d.slopes.as_ref().map(|s| SlopesContext {
        test: test(&s.test),
        differ: s.test.p < o.alpha,
        lines,
    });
    let observed = o
        .families
        .iter()
        .filter_map(|fam| {
            let a = d.family(&fam.term, fam.within.as_deref())?;
            let name = match &fam.within {
                Some(w) => format!("{}@{w}", fam.term),
                None => fam.term.clone(),
            };
            let by_level = fam
                .estimates
                .iter()
                .zip(&a.unadjusted)
                .map(|(e, &m)| (e.label.clone(), m))
                .collect();
            Some((name, by_level))
        })
        .collect();
    Some(CovariatesContext {
        covariates,
        slopes,
        observed,
    })
}
