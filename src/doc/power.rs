//! `power` blocks: planning a one-way experiment. Give the effect (Cohen's f,
//! or expected means and a common SD) and either a target power (sheaf finds
//! the smallest n per group) or n per group (sheaf gives the power).

use super::block::{Located, SpecError, parse_alpha};
use super::keyvalue::Entry;
use crate::data::decimal::{Decimal, Number, parse_number};

/// Every key a `power` block accepts.
pub const POWER_KEYS: [&str; 7] = ["id", "groups", "effect", "alpha", "power", "n", "caption"];

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

/// Checks a `power` block's entries. `fence_line` is the opening fence's line.
pub fn power_spec(entries: &[Entry], fence_line: usize) -> Result<PowerSpec, SpecError> {
    for e in entries {
        if !POWER_KEYS.contains(&e.key.as_str()) {
            let hint = match crate::diag::nearest(&e.key, POWER_KEYS) {
                Some(k) => format!("did you mean `{k}`?"),
                None => format!("a power block takes {}", POWER_KEYS.join(", ")),
            };
            return Err(SpecError {
                line: e.line,
                column: e.key_column,
                message: format!("unknown key `{}`", e.key),
                hint: Some(hint),
            });
        }
    }
    let get = |key: &str| entries.iter().find(|e| e.key == key);
    let missing = |key: &str, example: &str| SpecError {
        line: fence_line,
        column: 1,
        message: format!("this power block has no `{key}`"),
        hint: Some(format!("add a line such as `{example}`")),
    };
    let id = get("id").map(super::block::parse_id).transpose()?;
    let effect_entry = get("effect").ok_or_else(|| missing("effect", "effect: f = 0.25"))?;
    let effect = parse_effect(effect_entry)?;
    let groups = match get("groups") {
        Some(e) => match e.value.trim().parse::<usize>() {
            Ok(k) if (2..=1000).contains(&k) => k,
            _ => {
                return Err(bad(
                    e,
                    format!(
                        "`groups` must be a whole number from 2 to 1000, found `{}`",
                        e.value
                    ),
                    "for example `groups: 4`",
                ));
            }
        },
        None => match &effect {
            EffectInput::Means { means, .. } => means.len(),
            EffectInput::CohensF(_) => return Err(missing("groups", "groups: 4")),
        },
    };
    if let (EffectInput::Means { means, .. }, Some(e)) = (&effect, get("groups"))
        && means.len() != groups
    {
        return Err(bad(
            e,
            format!(
                "`groups` is {groups} but the effect lists {} means",
                means.len()
            ),
            "give one expected mean per group",
        ));
    }
    let alpha = get("alpha").map(parse_alpha).transpose()?;
    let goal = match (get("power"), get("n")) {
        (Some(p), None) => match number(&p.value) {
            Some(v) if v > 0.0 && v < 1.0 => PowerGoal::SampleSize { power: v },
            _ => {
                return Err(bad(
                    p,
                    format!(
                        "`power` must be a number between 0 and 1, found `{}`",
                        p.value
                    ),
                    "for example `power: 0.8`",
                ));
            }
        },
        (None, Some(n)) => match n.value.trim().parse::<usize>() {
            Ok(v) if v >= 2 => PowerGoal::Power { n_per_group: v },
            _ => {
                return Err(bad(
                    n,
                    format!(
                        "`n` must be a whole number of at least 2, found `{}`",
                        n.value
                    ),
                    "n is the number of observations per group",
                ));
            }
        },
        (Some(_), Some(n)) => {
            return Err(bad(
                n,
                "give `power` (to find n) or `n` (to find the power), not both".into(),
                "remove one of them",
            ));
        }
        (None, None) => return Err(missing("power", "power: 0.8")),
    };
    Ok(PowerSpec {
        id,
        groups,
        effect,
        alpha,
        goal,
        caption: get("caption").map(|e| e.value.clone()),
    })
}

#[cfg(test)]
#[path = "power_tests.rs"]
mod tests;
