//! The `transform` and `offset` keys: the scale the analysis runs on.
//! `transform: log` (or `log10`, `sqrt`, `logit`, `arcsine`) analyses the
//! transformed response and reports means back on the data's scale;
//! `logit percent` and `arcsine percent` read percentages. `transform:
//! boxcox` changes nothing: it reports the Box-Cox profile of the block's
//! model as a suggestion. `offset: 1` adds a declared constant first (log
//! and square root only); sheaf never picks one itself.

use super::block::{Located, SpecError, bad};
use super::block_keys::AnovaDraft;
use super::keyvalue::Entry;
use crate::stats::transform::{Declared, Transform};

/// What `transform` asks for.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum TransformChoice {
    /// Analyse on this scale.
    Apply(Transform, bool),
    /// Analyse as written and report the Box-Cox profile.
    BoxCox,
}

const HINT: &str = "write one of `log`, `log10`, `sqrt`, `logit`, `arcsine` or `boxcox`; add `percent` after `logit` or `arcsine` when the column holds percentages (`transform: arcsine percent`)";

pub(super) fn read_transform(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let words: Vec<&str> = e.value.split_whitespace().collect();
    let transform = match words.first().copied() {
        Some("log" | "ln") => Transform::Ln,
        Some("log10") => Transform::Log10,
        Some("sqrt") => Transform::Sqrt,
        Some("logit") => Transform::Logit,
        Some("arcsine") => Transform::Arcsine,
        Some("boxcox") if words.len() == 1 => {
            d.transform = Some((e.clone(), TransformChoice::BoxCox));
            return Ok(());
        }
        _ => {
            return Err(bad(
                e,
                format!("`transform` does not know `{}`", e.value.trim()),
                HINT,
            ));
        }
    };
    let percent = match &words[1..] {
        [] => false,
        ["percent"] if transform.takes_proportions() => true,
        _ => {
            return Err(bad(
                e,
                format!(
                    "`{}` after `{}` is not understood",
                    words[1..].join(" "),
                    words[0]
                ),
                HINT,
            ));
        }
    };
    d.transform = Some((e.clone(), TransformChoice::Apply(transform, percent)));
    Ok(())
}

pub(super) fn read_offset(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let value = e.value.trim().replace('−', "-");
    match value.parse::<f64>() {
        Ok(v) if v.is_finite() && v > 0.0 => {
            d.offset = Some((e.clone(), v));
            Ok(())
        }
        _ => Err(bad(
            e,
            format!(
                "`offset` must be a positive number, found `{}`",
                e.value.trim()
            ),
            "the constant added to every value before the transformation, e.g. `offset: 1` for counts with zeros; it is printed with the results and changes them",
        )),
    }
}

/// The transformation with the keys it cannot be combined with.
pub(super) fn transform_keys(d: &AnovaDraft) -> Vec<SpecError> {
    let mut errors = Vec::new();
    let Some((e, choice)) = &d.transform else {
        if let Some((o, _)) = &d.offset {
            errors.push(bad(
                o,
                "`offset` needs `transform: log`, `log10` or `sqrt`".into(),
                "add the transformation the offset is for, or remove `offset`",
            ));
        }
        return errors;
    };
    if let (Some((o, _)), TransformChoice::Apply(t, _)) = (&d.offset, choice)
        && !t.takes_offset()
    {
        errors.push(bad(
            o,
            format!("`offset` does not apply to `transform: {}`", t.keyword()),
            "an offset is for log and square root; proportions need none",
        ));
    }
    if let (Some((o, _)), TransformChoice::BoxCox) = (&d.offset, choice) {
        errors.push(bad(
            o,
            "`offset` with `transform: boxcox` is not offered in this version".into(),
            "Box-Cox needs positive values as written",
        ));
    }
    let unsupported = [
        (d.random.as_ref().map(|r| &r.0), "random terms"),
        (d.subject.as_ref().map(|s| &s.0), "`subject`"),
        (d.covariates.as_ref().map(|c| &c.0), "`covariate`"),
        (
            d.input.as_ref().filter(|i| i.1).map(|i| &i.0),
            "`input: summary`",
        ),
    ];
    for (entry, what) in unsupported {
        if entry.is_some() {
            errors.push(bad(
                e,
                format!("`transform` cannot be combined with {what} in this version"),
                match what {
                    "`input: summary`" => {
                        "a mean and SD cannot be transformed: give one row per observation"
                    }
                    _ => "analyse the transformed response in a block without it",
                },
            ));
        }
    }
    if d.method.is_some_and(|m| m != super::block::Omnibus::Anova) {
        errors.push(bad(
            e,
            "`transform` applies to the ANOVA, not to a robust or rank method".into(),
            "rank methods give the same result on any increasing transformation: remove `transform`, or remove `method`",
        ));
    }
    errors
}

/// The block's transformation, if it applies one.
pub(super) fn declared(d: &AnovaDraft) -> Option<Located<Declared>> {
    let (e, TransformChoice::Apply(transform, percent)) = d.transform.as_ref()? else {
        return None;
    };
    Some(Located {
        value: Declared {
            transform: *transform,
            offset: d.offset.as_ref().map_or(0.0, |o| o.1),
            percent: *percent,
        },
        line: e.line,
        column: e.value_column,
    })
}

/// Whether the block asks for the Box-Cox profile.
pub(super) fn box_cox(d: &AnovaDraft) -> bool {
    matches!(d.transform, Some((_, TransformChoice::BoxCox)))
}
