//! A transformed block in prose: beside each mean (`groups.<level>`,
//! `means.<factor>.<level>`) its `back` (`mean`, `lower`, `upper` on the
//! data's scale) and `arithmetic_mean`; beside each pair its `ratio`
//! (`estimate`, `lower`, `upper`, `percent_change`); and `transform` with
//! the scale's names and the Box-Cox profile (`box_cox.lambda`, `lower`,
//! `upper`, `suggestion`). The numbers are the results file's.

use crate::outcome::linear::{Contrast, Estimate, Family, LinearOutcome};
use crate::outcome::transform::{TransformDetail, Wording};
use serde::Serialize;

#[derive(Serialize)]
pub(super) struct BackContext {
    mean: f64,
    lower: f64,
    upper: f64,
}

#[derive(Serialize)]
pub(super) struct RatioContext {
    estimate: f64,
    lower: f64,
    upper: f64,
    #[serde(skip_serializing_if = "Option::is_none")]
    percent_change: Option<f64>,
}

#[derive(Serialize)]
pub(super) struct BoxCoxContext {
    lambda: f64,
    lower: Option<f64>,
    upper: Option<f64>,
    suggestion: Option<f64>,
}

#[derive(Serialize)]
pub(super) struct TransformContext {
    name: Option<&'static str>,
    scale: Option<&'static str>,
    analysed: Option<String>,
    back_transformed: Option<&'static str>,
    #[serde(skip_serializing_if = "Option::is_none")]
    box_cox: Option<BoxCoxContext>,
}

pub(super) fn back(o: &LinearOutcome, e: &Estimate) -> Option<BackContext> {
    let b = TransformDetail::back(o.transformation()?, e.mean, e.ci_lower, e.ci_upper);
    Some(BackContext {
        mean: b.mean,
        lower: b.lower,
        upper: b.upper,
    })
}

pub(super) fn arithmetic(o: &LinearOutcome, fam: Option<&Family>, i: usize) -> Option<f64> {
    let fam = fam.filter(|f| f.within.is_none())?;
    o.transformation()?;
    o.transform.as_deref()?.arithmetic_mean(&fam.term, i)
}

pub(super) fn ratio(o: &LinearOutcome, p: &Contrast) -> Option<RatioContext> {
    let r = crate::outcome::transform::RatioEstimate::of(o.transformation()?, p)?;
    Some(RatioContext {
        estimate: r.estimate,
        lower: r.lower,
        upper: r.upper,
        percent_change: r.percent_change,
    })
}

pub(super) fn transform_context(o: &LinearOutcome) -> Option<TransformContext> {
    let d = o.transform.as_deref()?;
    let t = d.applied();
    Some(TransformContext {
        name: t.map(|t| t.transform.keyword()),
        scale: t.map(|t| t.scale()),
        analysed: t.map(|t| t.label(&o.response)),
        back_transformed: t.map(|t| t.back_name()),
        box_cox: d.box_cox.as_ref().map(|b| BoxCoxContext {
            lambda: b.lambda,
            lower: b.lower,
            upper: b.upper,
            suggestion: b.suggestion,
        }),
    })
}
