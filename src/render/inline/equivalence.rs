//! A block's equivalence tests in prose: `equivalence.control`,
//! `margins` (in words), `claim`, `level` (the intervals' coverage),
//! `all_equivalent`, and per level `equivalence.comparisons.<level>` with
//! `difference` (or `ratio`), `lower`, `upper`, `t_lower`, `t_upper`,
//! `p`, `df`, `equivalent`, `conclusion` and a `statement` such as "test
//! was equivalent to reference within ±3 (difference 0.92, 90% CI −0.56
//! to 2.39; TOST p = 0.014)". With a single comparison `statement` is
//! also at `equivalence.statement`.

use crate::format::{confidence_label, fixed, p_phrase};
use crate::outcome::equivalence::{EquivalenceDetail, EquivalenceRow};
use crate::outcome::linear::LinearOutcome;
use serde::Serialize;
use std::collections::BTreeMap;

#[derive(Serialize)]
pub(super) struct ComparisonContext {
    difference: f64,
    #[serde(skip_serializing_if = "Option::is_none")]
    ratio: Option<f64>,
    /// The interval's limits, as ratios with ratio margins.
    lower: f64,
    upper: f64,
    t_lower: f64,
    t_upper: f64,
    p_lower: f64,
    p_upper: f64,
    p: f64,
    df: f64,
    equivalent: bool,
    different: bool,
    conclusion: String,
    statement: String,
}

#[derive(Serialize)]
pub(super) struct EquivalenceContext {
    control: String,
    margins: String,
    claim: &'static str,
    level: f64,
    all_equivalent: bool,
    comparisons: BTreeMap<String, ComparisonContext>,
    #[serde(skip_serializing_if = "Option::is_none")]
    statement: Option<String>,
}

pub(super) fn equivalence_context(o: &LinearOutcome) -> Option<EquivalenceContext> {
    let d = o.equivalence.as_deref()?;
    let comparisons: BTreeMap<String, ComparisonContext> = d
        .rows
        .iter()
        .map(|r| (r.level.clone(), comparison(o, d, r)))
        .collect();
    let statement = match d.rows.as_slice() {
        [one] => Some(statement(o, d, one)),
        _ => None,
    };
    Some(EquivalenceContext {
        control: d.control.clone(),
        margins: d.margin_words(),
        claim: d.claim.key(),
        level: d.level,
        all_equivalent: d.all_equivalent(),
        comparisons,
        statement,
    })
}

fn ratio_of(o: &LinearOutcome, d: &EquivalenceDetail) -> Option<crate::stats::transform::Declared> {
    o.transformation().filter(|_| d.ratio()).copied()
}

fn comparison(o: &LinearOutcome, d: &EquivalenceDetail, r: &EquivalenceRow) -> ComparisonContext {
    let t = ratio_of(o, d);
    let s = r.shown(t.as_ref());
    ComparisonContext {
        difference: r.tost.difference,
        ratio: t.map(|_| s.estimate),
        lower: s.lower,
        upper: s.upper,
        t_lower: r.tost.t_lower,
        t_upper: r.tost.t_upper,
        p_lower: r.tost.p_lower,
        p_upper: r.tost.p_upper,
        p: r.tost.p,
        df: r.tost.df,
        equivalent: r.tost.equivalent,
        different: r.different,
        conclusion: crate::render::tables::equivalence_conclusion(d, r),
        statement: statement(o, d, r),
    }
}

/// "A was equivalent to control within ±2 (difference 0.64, 90% CI −0.49
/// to 1.77; TOST p = 0.026)."
fn statement(o: &LinearOutcome, d: &EquivalenceDetail, r: &EquivalenceRow) -> String {
    let t = ratio_of(o, d);
    let s = r.shown(t.as_ref());
    let decimals = if t.is_some() {
        4
    } else {
        o.presentation.decimals
    };
    let what = if t.is_some() {
        "ratio of geometric means"
    } else {
        "difference"
    };
    let unit = match (&o.presentation.plots.unit, d.margins.kind) {
        (Some(u), crate::doc::block_equivalence::MarginKind::Units) => format!(" {u}"),
        _ => String::new(),
    };
    let verdict = if r.tost.equivalent {
        "was equivalent to"
    } else {
        "was not shown equivalent to"
    };
    format!(
        "{} {verdict} {} within {}{unit} ({what} {}, {} CI {} to {}; TOST {})",
        r.level,
        d.control,
        d.margin_words(),
        fixed(s.estimate, decimals),
        confidence_label(1.0 - d.level),
        fixed(s.lower, decimals),
        fixed(s.upper, decimals),
        p_phrase(r.tost.p)
    )
}
