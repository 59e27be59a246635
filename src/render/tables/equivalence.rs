//! The equivalence table (linear-extensions spec F.5): each level against
//! the control, its difference (or ratio) with the 100(1 − 2α)% interval,
//! the margins, both one-sided t statistics, p_TOST and the conclusion in
//! words; footnotes say why the interval is at that level and which claim
//! is made.

use super::keys::Keys;
use super::{cell, col, text};
use crate::doc::block_equivalence::{Claim, MarginKind};
use crate::format::{alpha_text, confidence_label, df_text, fixed, p_value, significant};
use crate::outcome::equivalence::{EquivalenceDetail, EquivalenceRow, alpha_words};
use crate::outcome::linear::LinearOutcome;
use crate::outcome::transform::Wording;
use crate::render::view::{Cell, TableView};

/// Decimals of ratios: four, enough to tell a limit of 0.9995 from 1.
const RATIO_DECIMALS: u32 = 4;

/// The conclusion of one comparison in words.
pub fn conclusion(d: &EquivalenceDetail, r: &EquivalenceRow) -> String {
    let direction = if r.tost.difference > 0.0 {
        "higher than the control"
    } else {
        "lower than the control"
    };
    match (r.tost.equivalent, r.different) {
        (true, false) => format!("equivalent within {}", d.margin_words()),
        (true, true) => format!("equivalent within {}, though {direction}", d.margin_words()),
        (false, true) => format!("not shown equivalent; {direction}"),
        (false, false) => "not shown equivalent (nor shown different)".to_string(),
    }
}

pub fn equivalence_table(
    o: &LinearOutcome,
    d: &EquivalenceDetail,
    keys: &Keys,
    number: usize,
) -> TableView {
    let ratio = d.ratio().then(|| o.transformation()).flatten();
    let decimals = if ratio.is_some() {
        RATIO_DECIMALS
    } else {
        o.presentation.decimals
    };
    let k = |level: &str, q: &str| keys.field(&format!("equivalence.comparisons.{level}.{q}"));
    let (ml, mu) = d.shown_margins();
    let margin_text = match d.margins.kind {
        MarginKind::Percent => {
            format!("{} to {}", fixed(ml, decimals + 1), fixed(mu, decimals + 1))
        }
        _ => format!("{} to {}", written(d, 0, ml), written(d, 1, mu)),
    };
    let margin_key = match d.margins.kind {
        MarginKind::Percent => keys.field("equivalence.margins.on_analysis_scale.ci"),
        _ => keys.field("equivalence.margins.ci"),
    };
    let rows: Vec<Vec<Cell>> = d
        .rows
        .iter()
        .map(|r| {
            let s = r.shown(ratio);
            let (est, ci) = match ratio {
                Some(_) => ("ratio.estimate", "ratio.ci"),
                None => ("difference", "ci"),
            };
            let sign = if ratio.is_some() { "/" } else { "−" };
            vec![
                text(format!("{} {sign} {}", r.level, d.control)),
                cell(fixed(s.estimate, decimals), k(&r.level, est)),
                cell(
                    format!(
                        "{} to {}",
                        fixed(s.lower, decimals),
                        fixed(s.upper, decimals)
                    ),
                    k(&r.level, ci),
                ),
                cell(margin_text.clone(), margin_key.clone()),
                cell(fixed(r.tost.t_lower, 2), k(&r.level, "t_lower")),
                cell(fixed(r.tost.t_upper, 2), k(&r.level, "t_upper")),
                cell(df_text(r.tost.df), k(&r.level, "df")),
                cell(p_value(r.tost.p), k(&r.level, "p")),
                text(crate::format::typographic_minus(&conclusion(d, r))),
            ]
        })
        .collect();
    let interval = format!("{} CI", confidence_label(2.0 * d.comparison_alpha));
    TableView {
        id: format!("{}-equivalence", o.id),
        caption: caption(o, d, number),
        number,
        columns: vec![
            col(o.presentation.plots.display(&factor(o)).to_string(), false),
            col(
                if ratio.is_some() {
                    "Ratio"
                } else {
                    "Difference"
                },
                true,
            ),
            col(interval, true),
            col("Margins", true),
            col("t (lower)", true),
            col("t (upper)", true),
            col("df", true),
            col("p (TOST)", true),
            col("Conclusion", false),
        ],
        rows,
        footnotes: footnotes(o, d),
    }
}

/// A margin as written, or computed when only one number was written.
fn written(d: &EquivalenceDetail, i: usize, x: f64) -> String {
    match d.margins.written.as_slice() {
        [_, _] => d.margins.written[i].clone(),
        [w] if d.margins.kind == MarginKind::Units => match i {
            0 => format!("-{}", w.trim_start_matches('+')),
            _ => w.clone(),
        },
        _ => significant(x, 4),
    }
}

fn factor(o: &LinearOutcome) -> String {
    o.factors.first().map_or(String::new(), |f| f.name.clone())
}

fn caption(o: &LinearOutcome, d: &EquivalenceDetail, number: usize) -> String {
    let claim = match (d.claim, d.rows.len()) {
        (_, 0 | 1) => "one comparison".to_string(),
        (Claim::Each, m) => format!("a separate claim for each of {m} levels, Bonferroni-adjusted"),
        (Claim::All, _) => "one claim that every level is equivalent".to_string(),
    };
    super::caption(number, &None, || {
        format!(
            "Equivalence of each {} with {} ({}; margins {}): two one-sided tests, {claim}.",
            o.presentation.plots.display(&factor(o)),
            d.control,
            super::data_measure(o),
            d.margin_words()
        )
    })
}

fn footnotes(o: &LinearOutcome, d: &EquivalenceDetail) -> Vec<String> {
    let level = confidence_label(2.0 * d.comparison_alpha);
    let alpha = alpha_text(d.alpha);
    let m = d.rows.len();
    let mut notes = Vec::new();
    notes.push(match (d.claim, m) {
        (Claim::Each, m) if m > 1 => format!(
            "Why {level}: each level is a separate claim, so each pair of one-sided tests runs at α/{m} = {} (Bonferroni over {m} levels), and equivalence at that level is the same as the 100(1 − 2α/{m})% = {level} interval lying inside the margins.",
            alpha_words(d.comparison_alpha)
        ),
        _ => format!(
            "Why {level}: equivalence is shown when both one-sided tests reject at α = {alpha}, which is the same as the 100(1 − 2α)% = {level} interval lying inside the margins; a 95% interval would test at 2.5% on each side."
        ),
    });
    let se = if d.welch {
        "each pair's own variances with Satterthwaite's df (Welch)".to_string()
    } else {
        format!(
            "the ANOVA's residual mean square ({} on {} df)",
            significant(o.residual().ms, 4),
            df_text(o.residual().df)
        )
    };
    notes.push(format!(
        "Two one-sided tests (Schuirmann 1987) with SEs from {se}: t (lower) = (d − θ_L)/SE tests d ≤ θ_L, t (upper) = (d − θ_U)/SE tests d ≥ θ_U, and p (TOST) is the larger one-sided p."
    ));
    if d.claim == Claim::All && m > 1 {
        notes.push(format!(
            "The claim is that every level is equivalent to {}: one intersection-union test (Berger 1982), which needs no adjustment and holds only when each level is shown equivalent. Here it {}.",
            d.control,
            if d.all_equivalent() { "holds" } else { "is not shown" }
        ));
    }
    if let Some(t) = o.transformation().filter(|_| d.ratio()) {
        notes.push(format!(
            "Analysis of {} on the {} scale: each ratio is a level's geometric mean over {}'s, and the margins, estimates and limits are the log-scale values taken back.",
            super::measure(o),
            t.scale(),
            d.control
        ));
    }
    if d.margins.kind == MarginKind::Percent {
        notes.push(format!(
            "The margins are {} ({}), so they are estimated from these data; the tests treat them as fixed.",
            d.margin_words(),
            significant(d.control_mean, 6)
        ));
    }
    notes.push(format!(
        "A level is called higher or lower than the control when the two-sided t test of no difference is significant at α = {}{}. Not shown equivalent is not a difference: with few observations neither may be shown.",
        alpha_words(d.difference_alpha),
        if m > 1 { format!(" (α/{m}, Bonferroni)") } else { String::new() }
    ));
    notes
}
