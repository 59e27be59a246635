//! Planned contrasts: `contrast: <name> = <level> <weight>, …`, one line
//! per contrast (levels not named weigh 0), and `contrast_adjust`, how a
//! set of them is adjusted for multiplicity (none unless asked: a small
//! set planned before the data were seen is customarily tested as is).

use super::block::{Located, SpecError, bad, one_of};
use super::block_keys::AnovaDraft;
use super::keyvalue::Entry;
use crate::stats::compare::Method;

/// One contrast as the document writes it.
#[derive(Debug, Clone, PartialEq)]
pub struct ContrastSpec {
    pub name: String,
    /// (level, weight), in the order written.
    pub weights: Vec<(String, f64)>,
    pub line: usize,
    pub column: usize,
}

/// How a set of planned contrasts is adjusted for multiplicity.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize, serde::Deserialize)]
pub enum ContrastAdjust {
    /// Planned before the data were seen: each tested as is.
    #[default]
    None,
    Bonferroni,
    Holm,
    /// Any contrast, also those suggested by the data (Scheffé 1953).
    Scheffe,
}

impl ContrastAdjust {
    pub fn key(self) -> &'static str {
        match self {
            ContrastAdjust::None => "none",
            ContrastAdjust::Bonferroni => "bonferroni",
            ContrastAdjust::Holm => "holm",
            ContrastAdjust::Scheffe => "scheffe",
        }
    }

    /// The comparison method whose adjustment this is, if any.
    pub fn method(self) -> Option<Method> {
        match self {
            ContrastAdjust::None => None,
            ContrastAdjust::Bonferroni => Some(Method::Bonferroni),
            ContrastAdjust::Holm => Some(Method::Holm),
            ContrastAdjust::Scheffe => Some(Method::Scheffe),
        }
    }
}

/// A weight: a decimal number or a fraction `a/b`, with a sign.
fn weight(text: &str) -> Option<f64> {
    let t = text.trim().replace('−', "-");
    let value = match t.split_once('/') {
        Some((a, b)) => a.trim().parse::<f64>().ok()? / b.trim().parse::<f64>().ok()?,
        None => t.parse::<f64>().ok()?,
    };
    value.is_finite().then_some(value)
}

const HINT: &str = "write `contrast: name = level weight, level weight, …`, e.g. `contrast: peat vs the rest = peat 1, coir -1/3, bark -1/3, perlite -1/3`; levels not named weigh 0";

pub(super) fn read_contrast(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let Some((name, items)) = e.value.split_once('=') else {
        return Err(bad(
            e,
            format!("`contrast` needs a name and weights, found `{}`", e.value),
            HINT,
        ));
    };
    let name = name.trim();
    if name.is_empty() {
        return Err(bad(e, "the contrast has no name before `=`".into(), HINT));
    }
    if d.contrasts.iter().any(|c| c.name == name) {
        return Err(bad(
            e,
            format!("two contrasts are named `{name}`"),
            "give each contrast a name of its own",
        ));
    }
    let mut weights: Vec<(String, f64)> = Vec::new();
    for item in items.split(',').map(str::trim).filter(|s| !s.is_empty()) {
        let parsed = item
            .rsplit_once(char::is_whitespace)
            .and_then(|(level, w)| Some((level.trim().to_string(), weight(w)?)));
        let Some((level, w)) = parsed.filter(|(l, _)| !l.is_empty()) else {
            return Err(bad(
                e,
                format!("`{item}` is not a level followed by its weight"),
                HINT,
            ));
        };
        if weights.iter().any(|(l, _)| *l == level) {
            return Err(bad(
                e,
                format!("`{level}` is given two weights in `{name}`"),
                HINT,
            ));
        }
        weights.push((level, w));
    }
    let sum: f64 = weights.iter().map(|(_, w)| w).sum();
    let scale: f64 = weights.iter().map(|(_, w)| w.abs()).sum();
    if weights.len() < 2 || scale == 0.0 {
        return Err(bad(
            e,
            format!("`{name}` compares nothing: it needs two or more levels with weights"),
            HINT,
        ));
    }
    if sum.abs() > 1e-9 * scale {
        return Err(bad(
            e,
            format!("the weights of `{name}` sum to {sum}, not 0"),
            "a contrast's weights sum to zero (e.g. 1, -1/2, -1/2): it compares levels, not their overall size",
        ));
    }
    d.contrasts.push(ContrastSpec {
        name: name.to_string(),
        weights,
        line: e.line,
        column: e.value_column,
    });
    Ok(())
}

/// Contrasts with the keys they cannot be combined with yet.
pub(super) fn contrast_keys(d: &AnovaDraft) -> Vec<SpecError> {
    let Some(first) = d.contrasts.first() else {
        return match &d.contrast_adjust {
            Some(a) => vec![SpecError {
                line: a.line,
                column: a.column,
                message: "`contrast_adjust` without any `contrast`".into(),
                hint: Some(HINT.into()),
            }],
            None => Vec::new(),
        };
    };
    let at = |message: String, hint: &str| SpecError {
        line: first.line,
        column: first.column,
        message,
        hint: Some(hint.into()),
    };
    let mut errors = Vec::new();
    if let Some(m) = d.method.filter(|m| *m != super::block::Omnibus::Anova) {
        errors.push(at(
            format!(
                "planned contrasts use the pooled error of the ANOVA, not `method: {}`",
                m.key()
            ),
            "remove `method`, or remove the contrasts",
        ));
    }
    errors
}

pub(super) fn read_contrast_adjust(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let value = one_of(
        e,
        "contrast adjustment",
        &[
            (&["none"][..], ContrastAdjust::None),
            (&["bonferroni"][..], ContrastAdjust::Bonferroni),
            (&["holm"][..], ContrastAdjust::Holm),
            (&["scheffe", "scheffé"][..], ContrastAdjust::Scheffe),
        ],
        "none (planned contrasts, each tested as is), bonferroni, holm, or scheffe (any contrast, also those suggested by the data)",
    )?;
    d.contrast_adjust = Some(Located {
        value,
        line: e.line,
        column: e.value_column,
    });
    Ok(())
}
