//! The `trend` key: polynomial trends over a quantitative factor's levels
//! (rates, doses, temperatures). `trend: dose` takes each level's score
//! from its name (the names must be numbers); `trend: dose = control 0,
//! low 10, high 40` gives the scores. Scores are the levels' actual
//! values, never their ranks or an assumed equal spacing.

use super::block::{SpecError, bad};
use super::block_keys::AnovaDraft;
use super::keyvalue::Entry;

/// A trend as the document writes it.
#[derive(Debug, Clone, PartialEq)]
pub struct TrendSpec {
    pub factor: String,
    /// (level, score) when given; `None` to read the level names.
    pub scores: Option<Vec<(String, f64)>>,
    pub line: usize,
    pub column: usize,
}

const HINT: &str = "write `trend: <factor>` when the levels are numbers (0, 40, 80), or give each level its value: `trend: dose = control 0, low 10, high 40`";

pub(super) fn read_trend(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let (factor, items) = match e.value.split_once('=') {
        Some((f, items)) => (f.trim(), Some(items)),
        None => (e.value.trim(), None),
    };
    if factor.is_empty() || factor.contains(char::is_whitespace) {
        return Err(bad(
            e,
            format!("`trend` must name one factor, found `{}`", e.value),
            HINT,
        ));
    }
    let scores = match items {
        None => None,
        Some(items) => {
            let mut scores: Vec<(String, f64)> = Vec::new();
            for item in items.split(',').map(str::trim).filter(|s| !s.is_empty()) {
                let parsed = item
                    .rsplit_once(char::is_whitespace)
                    .and_then(|(level, v)| {
                        let v = v.trim().replace('−', "-").parse::<f64>().ok()?;
                        v.is_finite().then(|| (level.trim().to_string(), v))
                    });
                let Some((level, score)) = parsed else {
                    return Err(bad(
                        e,
                        format!("`{item}` is not a level followed by its value"),
                        HINT,
                    ));
                };
                if scores.iter().any(|(l, _)| *l == level) {
                    return Err(bad(e, format!("`{level}` is given two values"), HINT));
                }
                scores.push((level, score));
            }
            Some(scores)
        }
    };
    d.trend = Some(TrendSpec {
        factor: factor.to_string(),
        scores,
        line: e.line,
        column: e.value_column,
    });
    Ok(())
}

/// A trend with the keys it cannot be combined with yet.
pub(super) fn trend_keys(d: &AnovaDraft) -> Vec<SpecError> {
    let Some(t) = &d.trend else {
        return match &d.plot {
            Some(e) if d.plots.kinds.contains(&super::block::PlotKind::Trend) => vec![bad(
                e,
                "`plot: trend` draws the trend that `trend` asks for".into(),
                HINT,
            )],
            _ => Vec::new(),
        };
    };
    let at = |message: String, hint: &str| SpecError {
        line: t.line,
        column: t.column,
        message,
        hint: Some(hint.into()),
    };
    let mut errors = Vec::new();
    if d.random.is_some() || d.subject.is_some() {
        errors.push(at(
            "trends with random terms or `subject` are not offered in this version".into(),
            "state the trend in a block without random terms",
        ));
    }
    if d.method.is_some_and(|m| m != super::block::Omnibus::Anova) {
        errors.push(at(
            "a trend uses the pooled error of the ANOVA, not a robust or rank method".into(),
            "remove `method`, or remove `trend`",
        ));
    }
    errors
}
