//! The precision line under a means table: CV%, and the family's SED and
//! LSD (one value under equal replication, else their range).

use crate::format::{alpha_text, df_text, fixed, significant};
use crate::outcome::linear::{Family, LinearOutcome};
use crate::outcome::precision::sed;

/// "CV = 4.2%. SED = 8.10; LSD (α = 0.05) = 16.8 on 23 df." for models
/// with one error; `None` with random terms (their SED table says more).
pub fn precision_note(o: &LinearOutcome, family: &Family) -> Option<String> {
    if o.mixed.is_some() || o.repeated.is_some() {
        return None;
    }
    let d = o.presentation.decimals;
    let unit = match o.transformation() {
        Some(t) => format!(" ({})", super::transform::short_scale(t)),
        None => (o.presentation.plots.unit.as_ref()).map_or(String::new(), |u| format!(" {u}")),
    };
    let cv = o.cv_percent().map(|cv| {
        format!(
            "CV = {}% (residual SD over the grand mean).",
            significant(cv, 3)
        )
    });
    let s = family.comparison.as_ref().and_then(sed).map(|s| {
        let alpha = alpha_text(family.comparison.as_ref().map_or(o.alpha, |c| c.alpha));
        if s.single() {
            format!(
                "SED = {}{unit}; LSD (α = {alpha}) = {}{unit} on {} df.",
                fixed(s.min, d + 1),
                fixed(s.lsd_min, d + 1),
                df_text(s.df)
            )
        } else {
            format!(
                "SED {} to {}{unit} and LSD (α = {alpha}) {} to {}{unit} on {} df, by pair (unequal replication).",
                fixed(s.min, d + 1),
                fixed(s.max, d + 1),
                fixed(s.lsd_min, d + 1),
                fixed(s.lsd_max, d + 1),
                df_text(s.df)
            )
        }
    });
    match (cv, s) {
        (None, None) => None,
        (a, b) => Some([a, b].into_iter().flatten().collect::<Vec<_>>().join(" ")),
    }
}
