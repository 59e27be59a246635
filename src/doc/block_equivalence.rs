//! The `margin` and `claim` keys: equivalence of each level with the
//! control by two one-sided tests (linear-extensions spec F). `margin: 2`
//! is ±2 in the response's units, `margin: -1.5, 2` an asymmetric pair,
//! `margin: 3%` ±3 % of the control's observed mean, and `margin: ratio
//! 0.80, 1.25` limits for the ratio of geometric means (with `transform:
//! log`). `claim: each` (the default) makes one claim per level, with
//! Bonferroni's adjustment; `claim: all` makes one claim that every level
//! is equivalent, an intersection-union test that needs none.

use super::block::{Omnibus, SpecError, bad};
use super::block_keys::AnovaDraft;
use super::keyvalue::Entry;
use crate::stats::transform::Transform;

/// What a margin is measured in.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum MarginKind {
    /// The response's own units.
    Units,
    /// Percent of the control's observed mean.
    Percent,
    /// Limits of the ratio of geometric means (the analysis on the log scale).
    Ratio,
}

impl MarginKind {
    /// The name the results file uses.
    pub fn key(self) -> &'static str {
        match self {
            MarginKind::Units => "units",
            MarginKind::Percent => "percent",
            MarginKind::Ratio => "ratio",
        }
    }
}

/// The equivalence margins as declared, before any data are seen.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Margins {
    pub kind: MarginKind,
    /// θ_L and θ_U in the kind's terms: units, percent, or ratio limits.
    pub lower: f64,
    pub upper: f64,
    /// The two numbers as written (`0.80`, `1.25`), for printing as given;
    /// one when a single margin was written.
    pub written: Vec<String>,
}

impl Margins {
    /// Symmetric margins (±θ), printed as one number.
    pub fn symmetric(&self) -> bool {
        self.written.len() == 1 && self.kind != MarginKind::Ratio
    }
}

/// Which claim the tests support.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum Claim {
    /// A separate claim for each level: Bonferroni over the levels.
    Each,
    /// One claim that every level is equivalent (intersection-union).
    All,
}

impl Claim {
    pub fn key(self) -> &'static str {
        match self {
            Claim::Each => "each",
            Claim::All => "all",
        }
    }
}

/// A checked equivalence request.
#[derive(Debug, Clone, PartialEq)]
pub struct EquivalenceSpec {
    pub margins: Margins,
    pub claim: Claim,
    /// SEs from each pair's own variances with Satterthwaite df
    /// (`method: welch`) instead of the ANOVA's pooled MSE.
    pub welch: bool,
    pub line: usize,
    pub column: usize,
}

const HINT: &str = "write the margin in the response's units (`margin: 2` for ±2, `margin: -1.5, 2` for asymmetric limits), as a percentage of the control's mean (`margin: 3%`), or as ratio limits with `transform: log` (`margin: ratio 0.80, 1.25`)";

/// One number of the value, with its column in the document.
struct Number<'a> {
    text: &'a str,
    value: f64,
    column: usize,
}

fn numbers<'a>(e: &Entry, rest: &'a str, offset: usize) -> Result<Vec<Number<'a>>, SpecError> {
    let mut out = Vec::new();
    let mut at = offset;
    for part in rest.split(',') {
        let text = part.trim();
        let column = e.value_column + at + (part.len() - part.trim_start().len());
        at += part.len() + 1;
        let value = text.replace('−', "-").parse::<f64>();
        match value {
            Ok(v) if v.is_finite() => out.push(Number {
                text,
                value: v,
                column,
            }),
            _ => {
                return Err(SpecError {
                    column,
                    ..bad(e, format!("`{text}` is not a number"), HINT)
                });
            }
        }
    }
    Ok(out)
}

fn at(e: &Entry, n: &Number, message: String, hint: &str) -> SpecError {
    SpecError {
        column: n.column,
        ..bad(e, message, hint)
    }
}

pub(super) fn read_margin(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let value = e.value.as_str();
    let (kind, rest, offset) = match value.trim_start().strip_prefix("ratio") {
        Some(rest) => (MarginKind::Ratio, rest, value.len() - rest.len()),
        None => (MarginKind::Units, value, 0),
    };
    let percent = kind == MarginKind::Units && rest.contains('%');
    let kind = if percent { MarginKind::Percent } else { kind };
    let cleaned = rest.replace('%', " ");
    if rest.trim().is_empty() {
        return Err(bad(e, "`margin` needs a value".into(), HINT));
    }
    let found = numbers(e, &cleaned, offset)?;
    let margins = match (kind, found.as_slice()) {
        (MarginKind::Ratio, [r]) => {
            ratio_limit(e, r)?;
            let (l, u) = if r.value < 1.0 {
                (r.value, 1.0 / r.value)
            } else {
                (1.0 / r.value, r.value)
            };
            (l, u)
        }
        (MarginKind::Ratio, [l, u]) => {
            ratio_limit(e, l)?;
            ratio_limit(e, u)?;
            if l.value >= 1.0 {
                return Err(at(
                    e,
                    l,
                    format!("the lower ratio limit {} is not below 1", l.text),
                    "ratio limits lie either side of 1, such as `ratio 0.80, 1.25`",
                ));
            }
            if u.value <= 1.0 {
                return Err(at(
                    e,
                    u,
                    format!("the upper ratio limit {} is not above 1", u.text),
                    "ratio limits lie either side of 1, such as `ratio 0.80, 1.25`",
                ));
            }
            (l.value, u.value)
        }
        (_, [m]) => {
            if m.value <= 0.0 {
                return Err(at(
                    e,
                    m,
                    format!("a single margin must be positive, found {}", m.text),
                    "a single number θ means ±θ; write two numbers for asymmetric limits (`margin: -1.5, 2`)",
                ));
            }
            (-m.value, m.value)
        }
        (_, [l, u]) => {
            if l.value >= 0.0 {
                return Err(at(
                    e,
                    l,
                    format!("the lower margin must be negative, found {}", l.text),
                    "the lower limit is the largest decrease that still counts as equivalent: `margin: -1.5, 2`",
                ));
            }
            if u.value <= 0.0 {
                return Err(at(
                    e,
                    u,
                    format!("the upper margin must be positive, found {}", u.text),
                    "the upper limit is the largest increase that still counts as equivalent: `margin: -1.5, 2`",
                ));
            }
            (l.value, u.value)
        }
        _ => {
            return Err(bad(
                e,
                format!(
                    "`margin` takes one or two numbers, found `{}`",
                    value.trim()
                ),
                HINT,
            ));
        }
    };
    d.margin = Some((
        e.clone(),
        Margins {
            kind,
            lower: margins.0,
            upper: margins.1,
            written: found.iter().map(|n| n.text.to_string()).collect(),
        },
    ));
    Ok(())
}

fn ratio_limit(e: &Entry, n: &Number) -> Result<(), SpecError> {
    if n.value <= 0.0 || n.value == 1.0 {
        return Err(at(
            e,
            n,
            format!("a ratio limit must be positive and not 1, found {}", n.text),
            "ratio limits lie either side of 1, such as `ratio 0.80, 1.25`",
        ));
    }
    Ok(())
}

pub(super) fn read_claim(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let choices: [(&[&str], Claim); 2] = [(&["each"], Claim::Each), (&["all"], Claim::All)];
    let claim = super::block::one_of(
        e,
        "`claim`",
        &choices,
        "write `each` (a separate claim per level, Bonferroni-adjusted) or `all` (one claim that every level is equivalent to the control)",
    )?;
    d.claim = Some((e.clone(), claim));
    Ok(())
}

/// The margins with the keys they need and those they cannot be combined with.
pub(super) fn equivalence_keys(
    d: &AnovaDraft,
    model: &super::formula::Formula,
    fence_line: usize,
) -> Vec<SpecError> {
    let mut errors = Vec::new();
    let Some((e, m)) = &d.margin else {
        if let Some(p) = &d.plot
            && d.plots.kinds.contains(&super::block::PlotKind::Equivalence)
        {
            errors.push(bad(
                p,
                "`plot: equivalence` draws the equivalence tests that `margin` asks for".into(),
                "add `margin: …` and `control: <level>`, or remove `equivalence` from `plot`",
            ));
        }
        if let Some((c, _)) = &d.claim {
            errors.push(bad(
                c,
                "`claim` applies only to equivalence tests".into(),
                "add `margin: …` (the equivalence margin) and `control: <level>`, or remove `claim`",
            ));
        }
        return errors;
    };
    if d.control.is_none() {
        errors.push(SpecError {
            line: e.line.max(fence_line),
            column: 1,
            message: "equivalence tests need the reference level".into(),
            hint: Some("add `control: <level>`, the current product or reference each level is compared with".into()),
        });
    }
    let refused = [
        (d.random.as_ref().map(|r| &r.0), "random terms"),
        (
            d.subject.as_ref().map(|s| &s.0),
            "`subject` (repeated measures)",
        ),
        (d.covariates.as_ref().map(|c| &c.0), "`covariate`"),
        (d.covariance.as_ref().map(|c| &c.0), "`covariance`"),
    ];
    for (entry, what) in refused {
        if entry.is_some() {
            errors.push(bad(
                e,
                format!("equivalence tests cannot be combined with {what} in this version"),
                "test equivalence in a one-factor block without it",
            ));
        }
    }
    if model.several() {
        errors.push(bad(
            e,
            "equivalence tests take one response in this version".into(),
            "write one block per response",
        ));
    } else if model.terms.len() != 1 || model.terms[0].factors.len() != 1 {
        errors.push(bad(
            e,
            "equivalence tests need a model with one treatment factor in this version".into(),
            "write the model as `response ~ factor`",
        ));
    }
    if d.method == Some(Omnibus::Ranks) {
        errors.push(bad(
            e,
            "equivalence tests on ranks are not offered in this version".into(),
            "remove `method: ranks` (or use `method: welch` for unequal variances)",
        ));
    }
    errors.extend(transform_fits(d, e, m));
    errors
}

/// Ratio margins need the log scale, and the log scale needs ratio margins.
fn transform_fits(d: &AnovaDraft, e: &Entry, m: &Margins) -> Vec<SpecError> {
    use super::block_transform::TransformChoice;
    let log = matches!(
        d.transform,
        Some((
            _,
            TransformChoice::Apply(Transform::Ln | Transform::Log10, false)
        ))
    ) && d.offset.is_none();
    let applied = matches!(d.transform, Some((_, TransformChoice::Apply(..))));
    match (m.kind, log, applied) {
        (MarginKind::Ratio, false, _) => vec![bad(
            e,
            "ratio margins need the analysis on the log scale".into(),
            "add `transform: log` (without `offset`) to the block, so that the ratio of geometric means is what is tested",
        )],
        (MarginKind::Units | MarginKind::Percent, _, true) => vec![bad(
            e,
            "on a transformed scale the margins must be ratio limits".into(),
            "with `transform: log` write `margin: ratio 0.80, 1.25`; margins in the data's units do not carry over to another scale",
        )],
        _ => Vec::new(),
    }
}

/// The checked request, when the block declares margins.
pub(super) fn located_equivalence(d: &AnovaDraft) -> Option<EquivalenceSpec> {
    let (e, margins) = d.margin.as_ref()?;
    Some(EquivalenceSpec {
        margins: margins.clone(),
        claim: d.claim.as_ref().map_or(Claim::Each, |c| c.1),
        welch: d.method == Some(Omnibus::Welch),
        line: e.line,
        column: e.value_column,
    })
}
