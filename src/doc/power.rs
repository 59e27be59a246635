//! `power` blocks: planning a one-way experiment. Give the effect (Cohen's f,
//! or expected means and a common SD) and either a target power (sheaf finds
//! the smallest n per group) or n per group (sheaf gives the power).

use super::block::{Located, SpecError, parse_alpha};
use super::keytable::KeyTable;
use super::keyvalue::Entry;
use crate::data::decimal::{Decimal, Number, parse_number};

/// How the effect was given.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub enum EffectInput {
    CohensF(f64),
    /// Expected level means and the common within-level SD.
    Means {
        means: Vec<f64>,
        sd: f64,
        /// Each mean less the first, subtracted as exact decimals: means
        /// near 1e8 parsed as f64 would already have lost the digits that
        /// separate them (see `data::decimal`). Boxed: the block result
        /// that holds this stays small.
        #[serde(skip)]
        #[allow(clippy::box_collection)]
        deviations: Option<Box<Vec<f64>>>,
    },
}

/// What to solve for.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum PowerGoal {
    /// Smallest n per group reaching this power.
    SampleSize { power: f64 },
    /// Power at this n per group.
    Power { n_per_group: usize },
}

/// A checked `power` block.
#[derive(Debug, Clone, PartialEq)]
pub struct PowerSpec {
    pub id: Option<Located<String>>,
    pub groups: usize,
    pub effect: EffectInput,
    pub alpha: Option<f64>,
    pub goal: PowerGoal,
    pub caption: Option<String>,
}

impl EffectInput {
    /// Cohen's f = σ_m/σ with σ_m the SD of the means about their average
    /// (divisor k, equal n; Cohen 1988, §8.2).
    pub fn cohens_f(&self) -> f64 {
        match self {
            EffectInput::CohensF(f) => *f,
            EffectInput::Means {
                means,
                sd,
                deviations,
            } => {
                // f is invariant to a common shift; the exact deviations
                // keep it exact wherever the means were plain decimals.
                let values = match deviations {
                    Some(d) if d.len() == means.len() => d,
                    _ => means,
                };
                let k = values.len() as f64;
                let m = values.iter().sum::<f64>() / k;
                (values.iter().map(|x| (x - m) * (x - m)).sum::<f64>() / k).sqrt() / sd
            }
        }
    }
}

fn bad(e: &Entry, message: String, hint: &str) -> SpecError {
    SpecError {
        line: e.line,
        column: e.value_column,
        message,
        hint: Some(hint.to_string()),
    }
}

fn number(text: &str) -> Option<f64> {
    text.trim().parse::<f64>().ok().filter(|v| v.is_finite())
}

/// Each listed mean less the first, exact before the final rounding; `None`
/// unless every mean is a plain decimal.
fn exact_deviations(means_text: &str) -> Option<Vec<f64>> {
    let exact: Option<Vec<Decimal>> = means_text
        .split(',')
        .map(|t| match parse_number(t) {
            Some(Number::Exact(d)) => Some(d),
            _ => None,
        })
        .collect();
    let exact = exact?;
    let first = *exact.first()?;
    exact.iter().map(|d| d.minus(first)).collect()
}

/// Reads `f = 0.25`, `0.25`, or `means = 20, 22, 23, 25 and sd = 3`.
fn parse_effect(e: &Entry) -> Result<EffectInput, SpecError> {
    let hint = "write `effect: f = 0.25`, or `effect: means = 20, 22, 23, 25 and sd = 3`";
    let v = e.value.trim();
    let after = |prefix: &str| {
        v.strip_prefix(prefix)
            .map(|r| r.trim_start().trim_start_matches('=').trim())
    };
    if let Some(rest) = after("means") {
        let (means_text, sd_text) = rest
            .split_once(" and ")
            .ok_or_else(|| bad(e, "the expected means need a common SD".into(), hint))?;
        let means: Option<Vec<f64>> = means_text.split(',').map(number).collect();
        let means = means.ok_or_else(|| {
            bad(
                e,
                format!("cannot read the means `{}`", means_text.trim()),
                hint,
            )
        })?;
        let sd_value = sd_text
            .trim()
            .strip_prefix("sd")
            .map(|r| r.trim_start().trim_start_matches('=').trim());
        let sd = sd_value
            .and_then(number)
            .filter(|s| *s > 0.0)
            .ok_or_else(|| {
                bad(
                    e,
                    format!("cannot read a positive SD in `{}`", sd_text.trim()),
                    hint,
                )
            })?;
        if means.len() < 2 {
            return Err(bad(e, "give at least two expected means".into(), hint));
        }
        let deviations = exact_deviations(means_text).map(Box::new);
        return Ok(EffectInput::Means {
            means,
            sd,
            deviations,
        });
    }
    let f_text = after("f").unwrap_or(v);
    match number(f_text) {
        Some(f) if f > 0.0 => Ok(EffectInput::CohensF(f)),
        _ => Err(bad(e, format!("cannot read the effect `{v}`"), hint)),
    }
}

/// A `power` block as its entries give it, before the keys are checked
/// against each other.
#[derive(Debug, Default)]
pub struct PowerDraft {
    id: Option<Located<String>>,
    groups: Option<(Entry, usize)>,
    effect: Option<EffectInput>,
    alpha: Option<f64>,
    power: Option<(Entry, f64)>,
    n: Option<(Entry, usize)>,
    caption: Option<String>,
}

/// Every key a `power` block accepts, in the order hints list them.
pub const POWER: KeyTable<PowerDraft> = KeyTable {
    section: "a power block",
    unknown: "unknown key",
    keys: &[
        ("id", |e, d| {
            d.id = Some(super::block::parse_id(e)?);
            Ok(())
        }),
        ("groups", read_groups),
        ("effect", |e, d| {
            d.effect = Some(parse_effect(e)?);
            Ok(())
        }),
        ("alpha", |e, d| {
            d.alpha = Some(parse_alpha(e)?);
            Ok(())
        }),
        ("power", read_power),
        ("n", read_n),
        ("caption", |e, d| {
            d.caption = Some(e.value.clone());
            Ok(())
        }),
    ],
};

fn read_groups(e: &Entry, d: &mut PowerDraft) -> Result<(), SpecError> {
    match e.value.trim().parse::<usize>() {
        Ok(k) if (2..=1000).contains(&k) => {
            d.groups = Some((e.clone(), k));
            Ok(())
        }
        _ => Err(bad(
            e,
            format!(
                "`groups` must be a whole number from 2 to 1000, found `{}`",
                e.value
            ),
            "for example `groups: 4`",
        )),
    }
}

fn read_power(e: &Entry, d: &mut PowerDraft) -> Result<(), SpecError> {
    match number(&e.value) {
        Some(v) if v > 0.0 && v < 1.0 => {
            d.power = Some((e.clone(), v));
            Ok(())
        }
        _ => Err(bad(
            e,
            format!(
                "`power` must be a number between 0 and 1, found `{}`",
                e.value
            ),
            "for example `power: 0.8`",
        )),
    }
}

fn read_n(e: &Entry, d: &mut PowerDraft) -> Result<(), SpecError> {
    match e.value.trim().parse::<usize>() {
        Ok(v) if v >= 2 => {
            d.n = Some((e.clone(), v));
            Ok(())
        }
        _ => Err(bad(
            e,
            format!(
                "`n` must be a whole number of at least 2, found `{}`",
                e.value
            ),
            "n is the number of observations per group",
        )),
    }
}

/// Checks a `power` block's entries. `fence_line` is the opening fence's
/// line. Every problem found is returned.
pub fn power_spec(entries: &[Entry], fence_line: usize) -> Result<PowerSpec, Vec<SpecError>> {
    let mut d = PowerDraft::default();
    let errors = POWER.apply(entries, &mut d);
    if !errors.is_empty() {
        return Err(errors);
    }
    let missing = |key: &str, example: &str| SpecError {
        line: fence_line,
        column: 1,
        message: format!("this power block has no `{key}`"),
        hint: Some(format!("add a line such as `{example}`")),
    };
    let mut errors = Vec::new();
    let goal = match (&d.power, &d.n) {
        (Some((_, power)), None) => Some(PowerGoal::SampleSize { power: *power }),
        (None, Some((_, n))) => Some(PowerGoal::Power { n_per_group: *n }),
        (Some(_), Some((n, _))) => {
            errors.push(bad(
                n,
                "give `power` (to find n) or `n` (to find the power), not both".into(),
                "remove one of them",
            ));
            None
        }
        (None, None) => {
            errors.push(missing("power", "power: 0.8"));
            None
        }
    };
    let Some(effect) = d.effect else {
        errors.insert(0, missing("effect", "effect: f = 0.25"));
        return Err(errors);
    };
    let groups = match (&effect, &d.groups) {
        (EffectInput::Means { means, .. }, Some((e, groups))) if means.len() != *groups => {
            errors.push(bad(
                e,
                format!(
                    "`groups` is {groups} but the effect lists {} means",
                    means.len()
                ),
                "give one expected mean per group",
            ));
            None
        }
        (_, Some((_, groups))) => Some(*groups),
        (EffectInput::Means { means, .. }, None) => Some(means.len()),
        (EffectInput::CohensF(_), None) => {
            errors.insert(0, missing("groups", "groups: 4"));
            None
        }
    };
    let (Some(groups), Some(goal), true) = (groups, goal, errors.is_empty()) else {
        return Err(errors);
    };
    Ok(PowerSpec {
        id: d.id,
        groups,
        effect,
        alpha: d.alpha,
        goal,
        caption: d.caption,
    })
}

#[cfg(test)]
#[path = "power_tests.rs"]
mod tests;
