//! Friedman's test in prose (`method: ranks` with `block:`): `friedman`
//! with `statistic`, `df`, `p`, `kendall_w`, `blocks`, `tie_correction`,
//! `statistic_uncorrected`, `agreement` (W in plain words), `statement`
//! ("Friedman χ²(3) = 28.90, p < 0.001; Kendall's W = 0.80") and
//! `levels.<level>` (`blocks`, `rank_sum`, `mean_rank`, `median`,
//! `letters`). The block's own `statement` is this one.

use crate::format::{df_text, fixed, p_phrase};
use crate::outcome::friedman::{FriedmanDetail, agreement_words};
use crate::outcome::linear::LinearOutcome;
use serde::Serialize;
use std::collections::BTreeMap;

#[derive(Serialize)]
pub(super) struct RankedLevelContext {
    blocks: usize,
    rank_sum: f64,
    mean_rank: f64,
    median: f64,
    letters: Option<String>,
}

#[derive(Serialize)]
pub(super) struct FriedmanContext {
    statistic: f64,
    statistic_uncorrected: f64,
    df: f64,
    p: f64,
    kendall_w: f64,
    blocks: usize,
    tie_correction: f64,
    agreement: &'static str,
    statement: String,
    levels: BTreeMap<String, RankedLevelContext>,
}

/// The test as a sentence fragment.
pub(super) fn statement(d: &FriedmanDetail) -> String {
    let f = &d.test;
    format!(
        "Friedman χ²({}) = {}, {}; Kendall's W = {}",
        df_text(f.df),
        fixed(f.chi_sq, 2),
        p_phrase(f.p),
        fixed(f.kendall_w, 2)
    )
}

pub(super) fn friedman_context(o: &LinearOutcome) -> Option<FriedmanContext> {
    let d = o.friedman.as_deref()?;
    let f = &d.test;
    let comparison = o
        .main_family(&o.factors[d.factor].name)
        .and_then(|fam| fam.comparison.as_ref())
        .filter(|c| !c.letters.is_empty());
    Some(FriedmanContext {
        statistic: f.chi_sq,
        statistic_uncorrected: f.chi_sq_uncorrected,
        df: f.df,
        p: f.p,
        kendall_w: f.kendall_w,
        blocks: f.blocks,
        tie_correction: f.tie_correction,
        agreement: agreement_words(f.kendall_w),
        statement: statement(d),
        levels: (d.levels.iter().enumerate())
            .map(|(i, l)| {
                let context = RankedLevelContext {
                    blocks: l.blocks,
                    rank_sum: l.rank_sum,
                    mean_rank: l.mean_rank,
                    median: l.median,
                    letters: comparison.and_then(|c| c.letters.get(i)).cloned(),
                };
                (l.name.clone(), context)
            })
            .collect(),
    })
}
