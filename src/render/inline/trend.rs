//! A block's trend in prose: `trend.linear`, `trend.quadratic`,
//! `trend.cubic` and `trend.deviations` (after the highest degree shown),
//! each a test with `ss`, `f`, `df1`, `df2` (the row's own in a mixed
//! model), `p` and `statement`;
//! `trend.lack_of_fit.<degree name>` after each degree; `trend.degree`
//! (null without a chosen degree) and `trend.curve` (`coefficients` and
//! `se` from the constant up, `ms`, `df`).

use super::f_test::FTestContext;
use crate::outcome::linear::LinearOutcome;
use crate::outcome::trend::{TrendRow, TrendVerdict, degree_name};
use serde::Serialize;
use std::collections::BTreeMap;

#[derive(Serialize)]
pub(super) struct RowContext {
    ss: f64,
    #[serde(flatten)]
    test: FTestContext,
}

#[derive(Serialize)]
pub(super) struct CurveContext {
    coefficients: Vec<f64>,
    se: Vec<f64>,
    ms: f64,
    df: f64,
    #[serde(skip_serializing_if = "Option::is_none")]
    optimum: Option<OptimumContext>,
}

/// `trend.curve.optimum`: `x`, and the Fieller limits `lower` and `upper`
/// (null when the set is not an interval).
#[derive(Serialize)]
pub(super) struct OptimumContext {
    x: f64,
    lower: Option<f64>,
    upper: Option<f64>,
}

#[derive(Serialize)]
pub(super) struct TrendContext {
    #[serde(flatten)]
    components: BTreeMap<String, RowContext>,
    #[serde(skip_serializing_if = "Option::is_none")]
    deviations: Option<RowContext>,
    lack_of_fit: BTreeMap<String, RowContext>,
    degree: Option<usize>,
    #[serde(skip_serializing_if = "Option::is_none")]
    curve: Option<CurveContext>,
}

pub(super) fn trend_context(o: &LinearOutcome) -> Option<TrendContext> {
    let t = o.trend.as_deref()?;
    let row = |r: &TrendRow| RowContext {
        ss: r.ss,
        test: FTestContext::new(r.df, r.error_df, r.f, r.p),
    };
    let highest = t.components.last().map_or(0, |c| c.degree);
    Some(TrendContext {
        components: t
            .components
            .iter()
            .map(|c| (degree_name(c.degree), row(c)))
            .collect(),
        deviations: t.lack_of_fit_after(highest).map(row),
        lack_of_fit: t
            .lack_of_fit
            .iter()
            .map(|c| (degree_name(c.degree), row(c)))
            .collect(),
        degree: match t.verdict {
            TrendVerdict::Degree(d) => Some(d),
            _ => None,
        },
        curve: t.curve.as_ref().map(|c| CurveContext {
            coefficients: c.coefficients.clone(),
            se: c.se.clone(),
            ms: c.ms,
            df: c.df,
            optimum: c.optimum.as_ref().map(|o| {
                let (lower, upper) = match o.set {
                    crate::outcome::trend::FiellerSet::Bounded(l, u) => (Some(l), Some(u)),
                    _ => (None, None),
                };
                OptimumContext {
                    x: o.x,
                    lower,
                    upper,
                }
            }),
        }),
    })
}
