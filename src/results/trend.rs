//! The results-file record of a block's polynomial trend.

use super::finite;
use crate::outcome::trend::{
    FiellerSet, Optimum, TrendDetail, TrendRow, TrendVerdict, degree_name,
};
use serde::Serialize;

#[derive(Serialize)]
pub struct TrendRecord {
    pub factor: String,
    /// Level → score, in level order.
    pub scores: Vec<ScoreRecord>,
    /// `linear`, `quadratic`, `cubic` as the levels allow.
    pub components: Vec<RowRecord>,
    /// After each shown degree that leaves df.
    pub lack_of_fit: Vec<RowRecord>,
    pub treatment_ss: Option<f64>,
    pub treatment_df: f64,
    pub error_ss: Option<f64>,
    pub error_ms: Option<f64>,
    /// Null in a mixed model, where each row has its own `error_df`.
    pub error_df: Option<f64>,
    /// "kenward-roger" or "satterthwaite" when each row is tested with its
    /// own df in a mixed model; null for the pooled error.
    pub df_method: Option<&'static str>,
    /// The degree the rule chose; null with `no_trend` or
    /// `not_polynomial` in `verdict`.
    pub degree: Option<usize>,
    /// "degree", "no_trend" or "not_polynomial".
    pub verdict: &'static str,
    /// One-factor blocks and mixed models, with a chosen degree.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub curve: Option<CurveRecord>,
}

#[derive(Serialize)]
pub struct ScoreRecord {
    pub level: String,
    pub score: f64,
}

#[derive(Serialize)]
pub struct RowRecord {
    pub term: String,
    pub degree: usize,
    pub df: f64,
    pub ss: Option<f64>,
    pub ms: Option<f64>,
    pub f: Option<f64>,
    pub p: Option<f64>,
    /// The denominator df of `f`.
    pub error_df: Option<f64>,
}

#[derive(Serialize)]
pub struct CurveRecord {
    pub degree: usize,
    /// ŷ = Σ coefficients[j]·xʲ in the factor's units.
    pub coefficients: Vec<Option<f64>>,
    pub se: Vec<Option<f64>>,
    pub ms: Option<f64>,
    pub df: f64,
    /// A quadratic's turning point.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub optimum: Option<OptimumRecord>,
}

#[derive(Serialize)]
pub struct OptimumRecord {
    pub x: Option<f64>,
    /// "maximum" or "minimum".
    pub kind: &'static str,
    pub within_range: bool,
    pub level: f64,
    /// "bounded" (`lower` to `upper`), "two_half_lines" (below `lower` and
    /// above `upper`) or "whole_line" (both null).
    pub set: &'static str,
    pub lower: Option<f64>,
    pub upper: Option<f64>,
}

fn optimum_record(o: &Optimum) -> OptimumRecord {
    let (set, lower, upper) = match o.set {
        FiellerSet::Bounded(l, u) => ("bounded", finite(l), finite(u)),
        FiellerSet::TwoHalfLines(l, u) => ("two_half_lines", finite(l), finite(u)),
        FiellerSet::WholeLine => ("whole_line", None, None),
    };
    OptimumRecord {
        x: finite(o.x),
        kind: if o.maximum { "maximum" } else { "minimum" },
        within_range: o.within_range,
        level: o.level,
        set,
        lower,
        upper,
    }
}

fn row(r: &TrendRow, term: String) -> RowRecord {
    RowRecord {
        term,
        degree: r.degree,
        df: r.df,
        ss: finite(r.ss),
        ms: finite(r.ss / r.df),
        f: finite(r.f),
        p: finite(r.p),
        error_df: finite(r.error_df),
    }
}

pub fn trend_record(t: &TrendDetail) -> TrendRecord {
    let (degree, verdict) = match t.verdict {
        TrendVerdict::Degree(d) => (Some(d), "degree"),
        TrendVerdict::NoTrend => (None, "no_trend"),
        TrendVerdict::NotPolynomial => (None, "not_polynomial"),
    };
    TrendRecord {
        factor: t.factor.clone(),
        scores: t
            .scores
            .iter()
            .map(|(l, s)| ScoreRecord {
                level: l.clone(),
                score: *s,
            })
            .collect(),
        components: t
            .components
            .iter()
            .map(|c| row(c, degree_name(c.degree)))
            .collect(),
        lack_of_fit: t
            .lack_of_fit
            .iter()
            .map(|c| row(c, format!("after {}", degree_name(c.degree))))
            .collect(),
        treatment_ss: finite(t.treatment_ss),
        treatment_df: t.treatment_df,
        error_ss: finite(t.error_ms * t.error_df),
        error_ms: finite(t.error_ms),
        error_df: finite(t.error_df),
        df_method: t.df_method.map(|m| m.key()),
        degree,
        verdict,
        curve: t.curve.as_ref().map(|c| CurveRecord {
            degree: c.degree,
            coefficients: c.coefficients.iter().map(|&v| finite(v)).collect(),
            se: c.se.iter().map(|&v| finite(v)).collect(),
            ms: finite(c.ms),
            df: c.df,
            optimum: c.optimum.as_ref().map(optimum_record),
        }),
    }
}
