//! Planned contrasts in prose: `contrasts.<name>` with `estimate`, `se`,
//! `t`, `df`, `p`, `p_adj`, `lower`, `upper` and a `statement`, and
//! `contrast_set` (`orthogonal`, and the joint test's `f`, `df1`, `df2`,
//! `p`, `statement` when there is one).

use crate::format::{df_text, f_statement, fixed, p_phrase};
use crate::outcome::linear::LinearOutcome;
use serde::Serialize;
use std::collections::BTreeMap;

#[derive(Serialize)]
pub(super) struct ContrastContext {
    estimate: f64,
    se: f64,
    t: f64,
    df: f64,
    p: f64,
    p_adj: Option<f64>,
    lower: f64,
    upper: f64,
    /// "t(27) = 3.10, p = 0.004".
    statement: String,
}

#[derive(Serialize)]
pub(super) struct SetContext {
    orthogonal: bool,
    #[serde(skip_serializing_if = "Option::is_none")]
    f: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    df1: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    df2: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    p: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    statement: Option<String>,
}

#[derive(Serialize)]
pub(super) struct ContrastsContext {
    contrasts: BTreeMap<String, ContrastContext>,
    contrast_set: SetContext,
}

pub(super) fn contrasts_context(o: &LinearOutcome) -> Option<ContrastsContext> {
    let d = o.contrasts.as_deref()?;
    let contrasts = d
        .contrasts
        .iter()
        .map(|c| {
            let p = c.p_adj.unwrap_or(c.p);
            let statement = format!("t({}) = {}, {}", df_text(c.df), fixed(c.t, 2), p_phrase(p));
            let context = ContrastContext {
                estimate: c.estimate,
                se: c.se,
                t: c.t,
                df: c.df,
                p: c.p,
                p_adj: c.p_adj,
                lower: c.lower,
                upper: c.upper,
                statement,
            };
            (c.name.clone(), context)
        })
        .collect();
    let joint = d.joint.as_ref();
    Some(ContrastsContext {
        contrasts,
        contrast_set: SetContext {
            orthogonal: d.orthogonal,
            f: joint.map(|j| j.f),
            df1: joint.map(|j| j.df1),
            df2: joint.map(|j| j.df2),
            p: joint.map(|j| j.p),
            statement: joint.map(|j| f_statement(j.df1, j.df2, j.f, j.p)),
        },
    })
}
