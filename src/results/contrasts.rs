//! The results-file record of a block's planned contrasts.

use super::{OrderedMap, finite};
use crate::outcome::contrasts::ContrastDetail;
use serde::Serialize;

#[derive(Serialize)]
pub struct ContrastsRecord {
    pub factor: String,
    /// "none", "bonferroni", "holm" or "scheffe".
    pub adjustment: &'static str,
    pub orthogonal: bool,
    /// The multiplier of the intervals' SE; null when the contrasts have
    /// different df (a mixed model), each interval then on its own.
    pub critical_value: Option<f64>,
    /// "kenward-roger" or "satterthwaite" when each contrast's SE and df
    /// come from a mixed model; null for a fixed-effects model's pooled
    /// error.
    pub df_method: Option<&'static str>,
    /// All contrasts at once; null for one contrast or a dependent set.
    pub joint: Option<JointRecord>,
    pub contrasts: Vec<ContrastRecord>,
}

#[derive(Serialize)]
pub struct JointRecord {
    pub f: Option<f64>,
    pub df1: f64,
    pub df2: f64,
    pub p: Option<f64>,
}

#[derive(Serialize)]
pub struct ContrastRecord {
    pub name: String,
    /// Level → weight, in the order written.
    pub weights: OrderedMap<f64>,
    pub estimate: Option<f64>,
    pub se: Option<f64>,
    pub df: f64,
    pub t: Option<f64>,
    pub p: Option<f64>,
    /// Null when the set is not adjusted.
    pub p_adj: Option<f64>,
    pub ci_lower: Option<f64>,
    pub ci_upper: Option<f64>,
    /// The positive weights sum to 1: a difference of averages in the
    /// response's units.
    pub in_response_units: bool,
}

pub fn contrasts_record(c: &ContrastDetail) -> ContrastsRecord {
    ContrastsRecord {
        factor: c.factor.clone(),
        adjustment: c.adjust.key(),
        orthogonal: c.orthogonal,
        critical_value: finite(c.critical),
        df_method: c.own_df.map(|m| m.key()),
        joint: c.joint.as_ref().map(|j| JointRecord {
            f: finite(j.f),
            df1: j.df1,
            df2: j.df2,
            p: finite(j.p),
        }),
        contrasts: c
            .contrasts
            .iter()
            .map(|k| ContrastRecord {
                name: k.name.clone(),
                weights: OrderedMap(k.weights.clone()),
                estimate: finite(k.estimate),
                se: finite(k.se),
                df: k.df,
                t: finite(k.t),
                p: finite(k.p),
                p_adj: k.p_adj.and_then(finite),
                ci_lower: finite(k.lower),
                ci_upper: finite(k.upper),
                in_response_units: k.data_units,
            })
            .collect(),
    }
}
