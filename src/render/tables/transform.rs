//! Tables of a transformed response (linear-extensions spec C.5): the means
//! on both scales, each number labelled with its scale, and the Box-Cox
//! profile when the author asked for it. SEs are printed on the analysis
//! scale only: back on the data's scale the interval is not symmetric.

use super::keys::Keys;
use super::{cell, col, display_order, family_subject, family_table_id, text};
use crate::doc::block::Order;
use crate::format::capitalised;
use crate::format::{alpha_text, confidence_label, fixed, significant};
use crate::outcome::linear::{Family, LinearOutcome};
use crate::outcome::transform::{TransformDetail, Wording};
use crate::render::view::{Column, TableView};
use crate::stats::compare::Method;
use crate::stats::transform::{BoxCox, Declared, Transform};

/// The response in words as the report names it: the data's name, with
/// the scale it was analysed on.
pub fn scale_phrase(t: &Declared) -> String {
    format!("analysed on the {} scale", t.scale())
}

/// What a back-transformed mean is, in plain words.
fn plain_words(t: &Declared) -> String {
    let name = t.back_name();
    match t.transform {
        Transform::Ln | Transform::Log10 if t.offset == 0.0 => format!(
            "A {name} is the typical value when effects multiply: the back-transformed mean of the logs, which lies below the arithmetic mean whenever values vary. Differences between levels become ratios."
        ),
        Transform::Ln | Transform::Log10 => format!(
            "A {name} is the back-transformed mean of the logs less the declared offset of {}; it lies below the arithmetic mean whenever values vary.",
            significant(t.offset, 6)
        ),
        Transform::Sqrt => format!(
            "The {name} is the square of the mean of the square roots; it lies below the arithmetic mean whenever values vary."
        ),
        Transform::Logit => "A back-transformed proportion is the proportion at the mean logit, a median-type value rather than the average proportion; differences between levels become odds ratios.".into(),
        Transform::Arcsine => "A back-transformed proportion is sin² of the mean arcsine square root, not the average proportion.".into(),
    }
}

/// The footnote every table of a transformed block carries.
pub fn scale_footnote(o: &LinearOutcome, t: &Declared) -> String {
    let analysed = super::measure(o);
    format!(
        "Analysis of {analysed}, on the {} scale: means, SEs and differences of {analysed}; the {} and its limits are back-transformed point by point, so the interval is not symmetric and no SE is given on the data's scale. {}",
        t.scale(),
        t.back_name(),
        plain_words(t)
    )
}

/// A family's means on both scales, with letters or the mark against a
/// control: n, arithmetic mean, mean and SE on the analysis scale, the
/// back-transformed mean and interval.
pub fn transformed_means_table(
    o: &LinearOutcome,
    family: &Family,
    t: &Declared,
    keys: &Keys,
    number: usize,
) -> TableView {
    let d = o.presentation.decimals;
    let back_d = o.transform.as_deref().map_or(d, |x| x.data_decimals);
    let one_factor = o.is_one_factor();
    let key = |label: &str, q: &str| match one_factor {
        true => keys.level(label, q),
        false => keys.estimate(family, label, q),
    };
    let letters = family.comparison.as_ref().filter(|c| !c.letters.is_empty());
    let dunnett = (family.comparison.as_ref()).filter(|c| c.method == Method::Dunnett);
    let means: Vec<f64> = family.estimates.iter().map(|e| e.mean).collect();
    let arithmetic = |i: usize| {
        (family.within.is_none())
            .then(|| o.transform.as_deref()?.arithmetic_mean(&family.term, i))
            .flatten()
    };
    let rows = display_order(o.presentation.order, &means)
        .into_iter()
        .map(|i| {
            let e = &family.estimates[i];
            let back = TransformDetail::back(t, e.mean, e.ci_lower, e.ci_upper);
            let mut row = vec![
                text(e.label.clone()),
                cell(e.n.to_string(), key(&e.label, "n")),
            ];
            if let Some(a) = arithmetic(i) {
                row.push(cell(fixed(a, back_d), key(&e.label, "arithmetic_mean")));
            }
            row.push(cell(fixed(back.mean, back_d), key(&e.label, "back.mean")));
            row.push(cell(
                format!(
                    "{} to {}",
                    fixed(back.lower, back_d),
                    fixed(back.upper, back_d)
                ),
                key(&e.label, "back.ci"),
            ));
            row.push(cell(fixed(e.mean, d), key(&e.label, "mean")));
            if let Some(c) = letters {
                row.push(cell(c.letters[i].clone(), keys.family(family, "letters")));
            }
            if let Some(c) = dunnett {
                row.push(text(super::means::control_mark(c, i)));
            }
            row
        })
        .collect();
    let scale = short_scale(t);
    let mut columns: Vec<Column> = vec![col(family_subject(o, family), false), col("n", true)];
    if arithmetic(0).is_some() {
        columns.push(col("Arithmetic mean", true));
    }
    columns.extend([
        col(capitalised(t.back_name()), true),
        col(format!("{} CI", confidence_label(o.alpha)), true),
        col(format!("Mean ({scale})"), true),
    ]);
    let mut footnotes = vec![scale_footnote(o, t), se_range(family, d, scale)];
    footnotes.extend(super::precision::precision_note(o, family));
    if let Some(c) = letters {
        columns.push(col("Letters", false));
        footnotes.push(format!(
            "Letters from {} on the {} scale (α = {}), attached to the back-transformed means: levels sharing a letter are not significantly different; the letter a marks the highest mean.{}",
            c.method.title(),
            t.scale(),
            alpha_text(c.alpha),
            if o.presentation.order == Order::Mean { " Rows run from the highest mean." } else { "" }
        ));
    }
    if let Some(c) = dunnett {
        columns.push(col("vs control", false));
        footnotes.push(format!(
            "* differs from the control at α = {} (Dunnett, on the {} scale).",
            alpha_text(c.alpha),
            t.scale()
        ));
    }
    TableView {
        id: match one_factor {
            true => format!("{}-means", o.id),
            false => family_table_id(o, "means", family),
        },
        caption: format!(
            "Table {number}. {} of {} by {}{}, {}.",
            crate::outcome::transform::plural_capitalised(t.back_name()),
            super::data_measure(o),
            family_subject(o, family),
            super::family_slice(o, family),
            scale_phrase(t)
        ),
        number,
        columns,
        rows,
        footnotes,
    }
}

/// The SEs of the means on the analysis scale, in a sentence (the table
/// leaves them out to stay narrow; the results file has each).
fn se_range(family: &Family, d: u32, scale: &str) -> String {
    let ses = family
        .estimates
        .iter()
        .map(|e| e.se)
        .filter(|s| s.is_finite());
    let (lo, hi) = ses.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), s| {
        (a.min(s), b.max(s))
    });
    if fixed(lo, d) == fixed(hi, d) {
        format!("SE of each mean ({scale}): {}.", fixed(lo, d))
    } else {
        format!(
            "SE of the means ({scale}): {} to {}.",
            fixed(lo, d),
            fixed(hi, d)
        )
    }
}

/// The scale's short name for column headers.
pub fn short_scale(t: &Declared) -> &'static str {
    match t.transform {
        Transform::Ln => "ln scale",
        Transform::Log10 => "log10 scale",
        Transform::Sqrt => "root scale",
        Transform::Logit => "logit scale",
        Transform::Arcsine => "arcsine scale",
    }
}

/// The Box-Cox profile: λ̂, its interval, ℓ at the conventional powers and
/// the suggestion, with the cautions that go with it (spec C.2).
pub fn box_cox_table(o: &LinearOutcome, b: &BoxCox, keys: &Keys, number: usize) -> TableView {
    let k = |q: &str| keys.field(&format!("transform.box_cox.{q}"));
    let interval = match (b.lower, b.upper) {
        (Some(l), Some(u)) => format!("{} to {}", fixed(l, 3), fixed(u, 3)),
        (Some(l), None) => format!("above {}", fixed(l, 3)),
        (None, Some(u)) => format!("below {}", fixed(u, 3)),
        (None, None) => "–".into(),
    };
    let mut rows = vec![vec![
        text("Estimate λ̂"),
        cell(fixed(b.lambda, 3), k("lambda")),
        cell(fixed(b.log_likelihood, 3), k("log_likelihood")),
    ]];
    rows.push(vec![
        text(format!("{} interval", confidence_label(1.0 - b.level))),
        cell(interval, k("ci")),
        text(""),
    ]);
    for (i, &(lambda, l)) in b.profile.iter().enumerate() {
        rows.push(vec![
            text(format!("λ = {}{}", power_text(lambda), power_name(lambda))),
            text(""),
            cell(fixed(l, 3), k(&format!("profile.{i}.log_likelihood"))),
        ]);
    }
    let verdict = match (b.at_boundary, b.suggestion) {
        (true, _) => format!(
            "The profile is still rising at λ = {}: no estimate within the range searched.",
            fixed(b.lambda, 1)
        ),
        (false, None) if b.lower.is_none_or(|l| l <= 1.0) && b.upper.is_none_or(|u| u >= 1.0) => {
            "λ = 1 lies inside the interval: no transformation is indicated.".to_string()
        }
        (false, None) => "No conventional power lies inside the interval.".to_string(),
        (false, Some(s)) => format!(
            "λ = 1 lies outside the interval; the conventional power inside it closest to λ̂ is {}{}. This is a suggestion: sheaf never applies it.",
            power_text(s),
            power_name(s)
        ),
    };
    TableView {
        number,
        id: format!("{}-box-cox", o.id),
        caption: format!(
            "Table {number}. Box-Cox profile of {} for the block's model.",
            super::data_measure(o)
        ),
        columns: vec![
            col("", false),
            col("λ", true),
            col("Log-likelihood", true),
        ],
        rows,
        footnotes: vec![
            format!(
                "Profile log-likelihood ℓ(λ) = −(N/2) ln(SSE(λ)/N) + (λ − 1) Σ ln y, with SSE(λ) the residual sum of squares of this block's model fitted to (y^λ − 1)/λ (Box & Cox 1964); the interval holds every λ whose ℓ is within χ²₁/2 of the maximum. {verdict}"
            ),
            "Cautions: the estimate reacts strongly to single outliers and is weak with few replicates; it balances equal variances and normality together; a scientifically natural scale (the log for growth and concentrations) may serve readers better than the optimum.".into(),
        ],
    }
}

/// A conventional power as written: `−0.5`, `2`.
fn power_text(lambda: f64) -> String {
    format!("{lambda}").replace('-', "−")
}

fn power_name(lambda: f64) -> &'static str {
    match lambda {
        -1.0 => " (reciprocal)",
        -0.5 => " (reciprocal square root)",
        0.0 => " (log)",
        0.5 => " (square root)",
        1.0 => " (none)",
        2.0 => " (square)",
        _ => "",
    }
}

/// The ratio columns of a pairs table on a log or logit scale: each
/// difference as a ratio with its interval, the same procedure's limits
/// back-transformed.
pub struct RatioColumns<'a> {
    t: Option<&'a Declared>,
    decimals: u32,
    conf: String,
}

pub fn ratio_columns<'a>(
    o: &'a LinearOutcome,
    c: &crate::outcome::linear::Comparison,
) -> RatioColumns<'a> {
    let t = o.transformation().filter(|t| t.ratio_name().is_some());
    let decimals = ratio_decimals(t, c);
    let conf = format!("{} CI", confidence_label(o.alpha));
    RatioColumns { t, decimals, conf }
}

/// Three decimals, or more until no limit that differs from 1 prints as
/// 1.000: a limit of 0.99990 must not read as touching 1 (spec C.4).
fn ratio_decimals(t: Option<&Declared>, c: &crate::outcome::linear::Comparison) -> u32 {
    let Some(t) = t else { return 3 };
    let limits: Vec<f64> = (c.contrasts.iter())
        .flat_map(|p| [p.lower, p.upper])
        .filter_map(|x| t.ratio(x))
        .filter(|x| x.is_finite() && *x != 1.0)
        .collect();
    (3..=6)
        .find(|&d| limits.iter().all(|&x| fixed(x, d) != fixed(1.0, d)))
        .unwrap_or(6)
}

impl RatioColumns<'_> {
    /// Whether the table gives ratios (and then leaves out the interval of
    /// the difference on the analysis scale, which says the same).
    pub fn shown(&self) -> bool {
        self.t.is_some()
    }

    /// What the ratio columns hold.
    pub fn footnote(&self) -> Option<String> {
        let t = self.t?;
        let what = match t.transform {
            Transform::Logit => "the odds of the first level over those of the second",
            _ => "the first level's geometric mean over the second's",
        };
        Some(format!(
            "Differences and SEs are on the {} scale. A {} is the difference taken back ({what}), and its interval is the procedure's interval taken back the same way.",
            t.scale(),
            t.ratio_name().unwrap_or("ratio")
        ))
    }

    pub fn columns(&self) -> Vec<Column> {
        let Some(t) = self.t else {
            return Vec::new();
        };
        let name = capitalised(t.ratio_name().unwrap_or("ratio"));
        vec![col(name, true), col(self.conf.clone(), true)]
    }

    pub fn cells(
        &self,
        p: &crate::outcome::linear::Contrast,
        k: &dyn Fn(&str) -> String,
    ) -> Vec<crate::render::view::Cell> {
        let Some(t) = self.t else {
            return Vec::new();
        };
        let d = self.decimals;
        let r = |x: f64| t.ratio(x).filter(|v| v.is_finite());
        let limits = match (r(p.lower), r(p.upper)) {
            (Some(l), Some(u)) => format!("{} to {}", fixed(l, d), fixed(u, d)),
            (Some(l), None) => format!("above {}", fixed(l, d)),
            (None, Some(u)) => format!("below {}", fixed(u, d)),
            (None, None) => "–".into(),
        };
        vec![
            cell(
                r(p.estimate).map_or("–".into(), |v| fixed(v, d)),
                k("ratio.estimate"),
            ),
            cell(limits, k("ratio.ci")),
        ]
    }
}
