//! Equivalence of each level with the control (linear-extensions spec F):
//! the margins put on the analysis scale, one pair of one-sided tests per
//! level with the ANOVA's MSE and df (F.2), or each pair's own variances
//! and Satterthwaite df (`method: welch`), at α/m for separate claims.

use super::notes::Note;
use crate::diag::Diagnostic;
use crate::doc::Document;
use crate::doc::block::AnovaSpec;
use crate::doc::block_equivalence::{Claim, EquivalenceSpec, MarginKind};
use crate::outcome::equivalence::{EquivalenceDetail, EquivalenceRow};
use crate::stats::dist::t_sf;
use crate::stats::equivalence::{comparison_alpha, tost, welch_se_df};
use crate::stats::oneway::GroupSummary;

/// A one-factor block's levels as the tests read them.
pub(crate) struct LevelData<'a> {
    pub names: &'a [String],
    /// Means relative to a common origin (their differences are exact).
    pub summaries: &'a [GroupSummary],
    /// Each level's mean on the data's scale (for a percentage margin).
    pub data_means: &'a [f64],
    /// The pooled error: MSE and its df.
    pub mse: f64,
    pub df: f64,
}

/// The block's equivalence tests, when it declares margins.
pub(crate) fn equivalence(
    (doc, spec): (&Document, &AnovaSpec),
    levels: &LevelData,
    alpha: f64,
    notes: &mut Vec<Note>,
) -> Result<Option<EquivalenceDetail>, Diagnostic> {
    let Some(e) = &spec.equivalence else {
        return Ok(None);
    };
    let c = control_index(doc, spec, levels.names)?;
    let control_mean = levels.data_means[c];
    let (lower, upper) = analysis_margins(doc, spec, e, control_mean)?;
    if e.margins.kind == MarginKind::Percent {
        notes.push(Note::other(
            "The equivalence margin is a percentage of the control's observed mean, so it is itself estimated from these data and varies with them: the tests treat it as fixed. Declaring the margin in units, fixed before the data are seen, avoids this.",
        ));
    }
    let m = levels.names.len() - 1;
    let level_alpha = comparison_alpha(alpha, m, e.claim == Claim::Each);
    let difference_alpha = alpha / m.max(1) as f64;
    let reference = &levels.summaries[c];
    let mut rows = Vec::with_capacity(m);
    for (i, s) in levels.summaries.iter().enumerate().filter(|(i, _)| *i != c) {
        let d = s.mean - reference.mean;
        let (se, df) = if e.welch {
            welch_pair(doc, e, levels, (i, c))?
        } else {
            let se = (levels.mse * (1.0 / s.n as f64 + 1.0 / reference.n as f64)).sqrt();
            (se, levels.df)
        };
        let t = tost(d, se, df, (lower, upper), level_alpha);
        let p_difference = if t.se > 0.0 && df > 0.0 {
            2.0 * t_sf((d / se).abs(), df)
        } else {
            f64::NAN
        };
        rows.push(EquivalenceRow {
            level: levels.names[i].clone(),
            tost: t,
            p_difference,
            different: p_difference < difference_alpha,
        });
    }
    Ok(Some(EquivalenceDetail {
        margins: e.margins.clone(),
        lower,
        upper,
        claim: e.claim,
        alpha,
        comparison_alpha: level_alpha,
        level: 1.0 - 2.0 * level_alpha,
        welch: e.welch,
        control: levels.names[c].clone(),
        control_mean,
        difference_alpha,
        rows,
    }))
}

/// The level `control` names.
fn control_index(doc: &Document, spec: &AnovaSpec, names: &[String]) -> Result<usize, Diagnostic> {
    let Some(c) = spec.control.as_ref() else {
        return Err(doc.error_at(spec.model.line, None, "equivalence tests need `control`"));
    };
    names.iter().position(|n| *n == c.value).ok_or_else(|| {
        let d = doc.error_at(
            c.line,
            Some(c.column),
            format!("the control `{}` is not a level with data", c.value),
        );
        match crate::diag::nearest(&c.value, names.iter().map(String::as_str)) {
            Some(n) => d.hint(format!("did you mean `{n}`?")),
            None => d.hint(format!("the levels are {}", names.join(", "))),
        }
    })
}

/// θ_L and θ_U on the scale the analysis runs on.
fn analysis_margins(
    doc: &Document,
    spec: &AnovaSpec,
    e: &EquivalenceSpec,
    control_mean: f64,
) -> Result<(f64, f64), Diagnostic> {
    let m = &e.margins;
    match m.kind {
        MarginKind::Units => Ok((m.lower, m.upper)),
        MarginKind::Percent if control_mean > 0.0 => {
            Ok((m.lower / 100.0 * control_mean, m.upper / 100.0 * control_mean))
        }
        MarginKind::Percent => Err(doc
            .error_at(e.line, Some(e.column), format!("a percentage margin needs a positive control mean; the control's mean is {control_mean}"))
            .hint("declare the margin in the response's units (`margin: 2`)")),
        MarginKind::Ratio => {
            let t = spec.transform.as_ref().map(|t| t.value);
            let on_scale = |r: f64| t.and_then(|t| t.apply(r));
            match (on_scale(m.lower), on_scale(m.upper)) {
                (Some(l), Some(u)) => Ok((l, u)),
                _ => Err(doc
                    .error_at(e.line, Some(e.column), "ratio margins need the analysis on the log scale")
                    .hint("add `transform: log`")),
            }
        }
    }
}

/// The Welch SE and Satterthwaite df of level `i` against the control `c`.
fn welch_pair(
    doc: &Document,
    e: &EquivalenceSpec,
    levels: &LevelData,
    (i, c): (usize, usize),
) -> Result<(f64, f64), Diagnostic> {
    let (a, b) = (&levels.summaries[i], &levels.summaries[c]);
    for (s, name) in [(a, &levels.names[i]), (b, &levels.names[c])] {
        if s.n < 2 {
            return Err(doc
                .error_at(e.line, Some(e.column), format!("Welch's equivalence test needs two or more observations in each level; `{name}` has {}", s.n))
                .hint("remove `method: welch` to use the ANOVA's pooled variance"));
        }
    }
    Ok(welch_se_df((a.variance(), a.n), (b.variance(), b.n)))
}
