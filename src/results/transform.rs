//! The results-file records of a transformed response: the block's
//! `transform` record, and the back-transformed values beside each mean
//! (`back`, `arithmetic_mean`) and each pair (`ratio`).

use super::finite;
use crate::outcome::linear::{Contrast, Estimate, Family, LinearOutcome};
use crate::outcome::transform::{TransformDetail, Wording};
use crate::stats::transform::BoxCox;
use serde::Serialize;

#[derive(Serialize)]
pub struct TransformRecord {
    /// `log`, `log10`, `sqrt`, `logit`, `arcsine`; null when the block
    /// only asked for the Box-Cox profile.
    pub name: Option<&'static str>,
    /// The scale in words (`natural-log`).
    pub scale: Option<&'static str>,
    /// The response as analysed (`ln(dryweight)`).
    pub analysed: Option<String>,
    pub offset: Option<f64>,
    pub percent: bool,
    /// What a back-transformed mean is (`geometric mean`).
    pub back_transformed: Option<&'static str>,
    /// What a back-transformed difference is (`ratio`, `odds ratio`), where
    /// one exists.
    pub difference: Option<&'static str>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub box_cox: Option<BoxCoxRecord>,
}

#[derive(Serialize)]
pub struct BoxCoxRecord {
    pub lambda: Option<f64>,
    pub lower: Option<f64>,
    pub upper: Option<f64>,
    pub level: f64,
    pub log_likelihood: Option<f64>,
    /// The conventional power suggested; null when 1 is inside the interval
    /// (no transformation indicated) or none is inside it.
    pub suggestion: Option<f64>,
    pub no_transformation_indicated: bool,
    pub at_boundary: bool,
    /// ℓ(λ) at the conventional powers.
    pub profile: Vec<ProfileRecord>,
}

#[derive(Serialize)]
pub struct ProfileRecord {
    pub lambda: f64,
    pub log_likelihood: Option<f64>,
}

/// A mean and its interval on the data's scale.
#[derive(Serialize)]
pub struct BackRecord {
    pub mean: Option<f64>,
    pub lower: Option<f64>,
    pub upper: Option<f64>,
}

/// A difference on the analysis scale as a ratio on the data's scale.
#[derive(Serialize)]
pub struct RatioRecord {
    pub estimate: Option<f64>,
    pub lower: Option<f64>,
    pub upper: Option<f64>,
    /// 100 (ratio − 1), for a ratio of geometric means.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub percent_change: Option<f64>,
}

pub fn transform_record(d: &TransformDetail, response: &str) -> TransformRecord {
    let t = d.applied();
    TransformRecord {
        name: t.map(|t| t.transform.keyword()),
        scale: t.map(|t| t.scale()),
        analysed: t.map(|t| t.label(response)),
        offset: t.map(|t| t.offset),
        percent: t.is_some_and(|t| t.percent),
        back_transformed: t.map(|t| t.back_name()),
        difference: t.and_then(|t| t.ratio_name()),
        box_cox: d.box_cox.as_ref().map(box_cox_record),
    }
}

fn box_cox_record(b: &BoxCox) -> BoxCoxRecord {
    BoxCoxRecord {
        lambda: finite(b.lambda),
        lower: b.lower.and_then(finite),
        upper: b.upper.and_then(finite),
        level: b.level,
        log_likelihood: finite(b.log_likelihood),
        suggestion: b.suggestion,
        no_transformation_indicated: b.suggestion.is_none()
            && !b.at_boundary
            && b.lower.is_none_or(|l| l <= 1.0)
            && b.upper.is_none_or(|u| u >= 1.0),
        at_boundary: b.at_boundary,
        profile: b
            .profile
            .iter()
            .map(|&(lambda, l)| ProfileRecord {
                lambda,
                log_likelihood: finite(l),
            })
            .collect(),
    }
}

/// An estimate's mean and limits back on the data's scale.
pub fn back_record(o: &LinearOutcome, e: &Estimate) -> Option<BackRecord> {
    let t = o.transformation()?;
    let b = TransformDetail::back(t, e.mean, e.ci_lower, e.ci_upper);
    Some(BackRecord {
        mean: finite(b.mean),
        lower: finite(b.lower),
        upper: finite(b.upper),
    })
}

/// The arithmetic mean on the data's scale of a main-effect family's
/// estimate `i`.
pub fn arithmetic_record(o: &LinearOutcome, family: &Family, i: usize) -> Option<f64> {
    o.transformation()?;
    if family.within.is_some() {
        return None;
    }
    o.transform
        .as_deref()?
        .arithmetic_mean(&family.term, i)
        .and_then(finite)
}

/// A pair's difference as a ratio, where the transformation gives one.
pub fn ratio_record(o: &LinearOutcome, p: &Contrast) -> Option<RatioRecord> {
    let r = crate::outcome::transform::RatioEstimate::of(o.transformation()?, p)?;
    Some(RatioRecord {
        estimate: finite(r.estimate),
        lower: finite(r.lower),
        upper: finite(r.upper),
        percent_change: r.percent_change.and_then(finite),
    })
}
