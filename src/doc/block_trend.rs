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
    // With random terms or `subject` the trend runs over a fixed factor's
    // marginal means; a random factor or the subject has none.
    let subject = d
        .subject
        .as_ref()
        .is_some_and(|(_, s)| s.factors == [t.factor.clone()]);
    let fixed = d
        .model
        .as_ref()
        .is_some_and(|m| (m.value.terms.iter()).any(|term| term.factors.contains(&t.factor)));
    let random = (d.random.as_ref())
        .is_some_and(|(_, terms)| terms.iter().any(|term| term.factors.contains(&t.factor)));
    if subject || (random && !fixed) {
        errors.push(at(
            format!(
                "`{}` is {}: a trend runs over the levels of a fixed treatment factor",
                t.factor,
                if subject {
                    "the subject"
                } else {
                    "a random factor"
                }
            ),
            "name a factor of `model` whose levels are amounts (rates, doses, times)",
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
